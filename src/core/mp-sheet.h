/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-sheet.h: the operator's run sheet, drawn with cairo and Pango onto
 * any cairo surface (PDF here, GtkPrintOperation pages in the window). */
#pragma once

#include <cairo.h>
#include <glib.h>

#include "mp-plan.h"
#include "mp-schedule.h"

G_BEGIN_DECLS

typedef enum
{
  MP_PAPER_A4,
  MP_PAPER_LETTER
} MpPaper;

typedef struct _MpSheet MpSheet;

/* Lays the sheet out for a page of width x height points (1/72 inch).
 * generated may be NULL (now). The plan's path and checksum go into the
 * header. The sheet keeps a copy of the plan but only a pointer to the
 * schedule: keep the schedule alive until the sheet is freed (for
 * example until a GtkPrintOperation is done). Text is measured without
 * hinting, so the layout holds on any surface and at any scale; draw on
 * the thread that made the sheet. */
MpSheet *mp_sheet_new (const MpPlan *plan,
                       const MpSchedule *schedule,
                       double page_width_pt,
                       double page_height_pt,
                       GDateTime *generated);
void mp_sheet_free (MpSheet *sheet);
int mp_sheet_get_n_pages (MpSheet *sheet);
/* Draws page (0-based) with the origin at the page's top-left corner. */
void mp_sheet_draw_page (MpSheet *sheet, cairo_t *cr, int page);

void mp_paper_size_pt (MpPaper paper, double *width_pt, double *height_pt);
gboolean mp_paper_from_string (const char *name, MpPaper *paper);

/* Writes the whole sheet as a PDF, atomically. */
gboolean mp_sheet_write_pdf (const MpPlan *plan,
                             const MpSchedule *schedule,
                             MpPaper paper,
                             const char *path,
                             GError **error);

/* The whole sheet as PDF bytes; generated may be NULL (now). */
GBytes *mp_sheet_render_pdf (const MpPlan *plan,
                             const MpSchedule *schedule,
                             MpPaper paper,
                             GDateTime *generated,
                             GError **error);

/* A wavelength as the sheet prints it: as many decimals as the laser's
 * wavelength step needs (0.1 nm -> "243.2"). */
char *mp_sheet_format_wavelength_nm (const MpPlan *plan, double wavelength_nm);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpSheet, mp_sheet_free)

G_END_DECLS
