/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-sheet.c: the operator's run sheet (placeholder while the layout lands). */
#include "config.h"

#include <errno.h>
#include <unistd.h>

#include <cairo-pdf.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>
#include <pango/pangocairo.h>

#include "mp-error.h"
#include "mp-sheet.h"

struct _MpSheet
{
  double width_pt;
  double height_pt;
  char *title;
};

MpSheet *
mp_sheet_new (const MpPlan *plan,
              const MpSchedule *schedule,
              double page_width_pt,
              double page_height_pt,
              GDateTime *generated)
{
  MpSheet *sheet;

  g_return_val_if_fail (plan != NULL, NULL);
  sheet = g_new0 (MpSheet, 1);
  sheet->width_pt = page_width_pt;
  sheet->height_pt = page_height_pt;
  sheet->title = g_strdup (plan->title ? plan->title : "");
  return sheet;
}

void
mp_sheet_free (MpSheet *sheet)
{
  if (sheet == NULL)
    return;
  g_free (sheet->title);
  g_free (sheet);
}

int
mp_sheet_get_n_pages (MpSheet *sheet)
{
  g_return_val_if_fail (sheet != NULL, 0);
  return 1;
}

void
mp_sheet_draw_page (MpSheet *sheet, cairo_t *cr, int page)
{
  PangoLayout *layout;

  g_return_if_fail (sheet != NULL && cr != NULL);
  layout = pango_cairo_create_layout (cr);
  pango_layout_set_text (layout, sheet->title, -1);
  cairo_move_to (cr, 50, 50);
  pango_cairo_show_layout (cr, layout);
  g_object_unref (layout);
}

void
mp_paper_size_pt (MpPaper paper, double *width_pt, double *height_pt)
{
  if (paper == MP_PAPER_LETTER)
    {
      *width_pt = 612;
      *height_pt = 792;
    }
  else
    {
      *width_pt = 595.2756;
      *height_pt = 841.8898;
    }
}

gboolean
mp_paper_from_string (const char *name, MpPaper *paper)
{
  g_return_val_if_fail (name != NULL && paper != NULL, FALSE);
  if (g_ascii_strcasecmp (name, "a4") == 0)
    *paper = MP_PAPER_A4;
  else if (g_ascii_strcasecmp (name, "letter") == 0)
    *paper = MP_PAPER_LETTER;
  else
    return FALSE;
  return TRUE;
}

gboolean
mp_sheet_write_pdf (const MpPlan *plan,
                    const MpSchedule *schedule,
                    MpPaper paper,
                    const char *path,
                    GError **error)
{
  double w, h;
  g_autofree char *tmp = NULL;
  cairo_surface_t *surface;
  cairo_t *cr;
  cairo_status_t status;
  g_autoptr (MpSheet) sheet = NULL;

  g_return_val_if_fail (plan != NULL && path != NULL, FALSE);
  mp_paper_size_pt (paper, &w, &h);
  tmp = g_strdup_printf ("%s.tmp-%d", path, (int) getpid ());
  surface = cairo_pdf_surface_create (tmp, w, h);
  cr = cairo_create (surface);
  sheet = mp_sheet_new (plan, schedule, w, h, NULL);
  for (int i = 0; i < mp_sheet_get_n_pages (sheet); i++)
    {
      mp_sheet_draw_page (sheet, cr, i);
      cairo_show_page (cr);
    }
  cairo_destroy (cr);
  cairo_surface_finish (surface);
  status = cairo_surface_status (surface);
  cairo_surface_destroy (surface);
  if (status != CAIRO_STATUS_SUCCESS)
    {
      g_unlink (tmp);
      g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Could not write “%s”: %s"),
                   path, cairo_status_to_string (status));
      return FALSE;
    }
  if (g_rename (tmp, path) != 0)
    {
      int errsv = errno;
      g_unlink (tmp);
      g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Could not write “%s”: %s"),
                   path, g_strerror (errsv));
      return FALSE;
    }
  return TRUE;
}
