/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-sheet.c: the operator's run sheet.
 *
 * The sheet is laid out once into a list of items (paragraphs, the cautions
 * box, table heads and rows, plots, sign-off lines), each with a measured
 * height, and the items are then cut into pages. A page that continues a
 * step table starts with that table's head again. Text is measured with
 * metrics that do not depend on the surface, so the layout made on a
 * scratch surface holds on the PDF and on a printer's page. */
#include "config.h"

#include <math.h>
#include <string.h>

#include <cairo-pdf.h>
#include <glib/gi18n.h>
#include <pango/pangocairo.h>

#include "mp-atomic.h"
#include "mp-error.h"
#include "mp-physics.h"
#include "mp-plot-axes.h"
#include "mp-plot.h"
#include "mp-sheet.h"

#define MM (72.0 / 25.4)
#define MARGIN_SIDE (16 * MM)
#define MARGIN_TOP (15 * MM)
#define MARGIN_BOTTOM (16 * MM)

#define FONT_BODY "DejaVu Sans"
#define FONT_TABLE "DejaVu Sans Condensed"
#define FONT_MONO "DejaVu Sans Mono"

#define SIZE_BODY 10.0
#define SIZE_SMALL 9.0
#define SIZE_TABLE 9.5
#define SIZE_WAVELENGTH 10.5
#define SIZE_TITLE 17.0
#define SIZE_H2 13.0

#define RUNNING_HEAD_H 22.0
#define FOOTER_H 24.0
#define ROW_H 21.0
#define SUBLINE_H 13.0
#define HEAD_H 27.0
#define CONT_H 18.0
#define PLOT_H 205.0
#define PLOT_MIN_H 180.0
#define CHECKSUM_BOX_W 118.0

#define SYM_SHORT "\xe2\x96\xb2"        /* U+25B2 black up-pointing triangle */
#define SYM_UNREACHABLE "\xe2\x9c\x95"  /* U+2715 multiplication x */
#define SYM_DONE "\xe2\x9c\x93"         /* U+2713 check mark */
#define SYM_WARN "\xe2\x9a\xa0"         /* U+26A0 warning sign */
#define MINUS "\xe2\x88\x92"
#define PLUSMINUS "\xc2\xb1"
#define DOT " \xc2\xb7 "

typedef enum
{
  ITEM_PARA,
  ITEM_TITLE,
  ITEM_CAUTIONS,
  ITEM_TABLE_HEAD,
  ITEM_ROW,
  ITEM_PLOT,
  ITEM_SIGNOFF,
} ItemKind;

typedef struct
{
  ItemKind kind;
  double height;
  double space_before;
  gboolean keep_with_next;
  /* ITEM_PARA, ITEM_CAUTIONS */
  char *markup;
  const char *family;
  double size;
  double indent;
  gboolean boxed;
  /* ITEM_TABLE_HEAD, ITEM_ROW */
  int block;
  int row;
  const MpStep *step;
  const char *range_switch;    /* laser range to switch into, or NULL */
  /* ITEM_PLOT */
  MpPlotKind plot;
  /* placement */
  int page;
  double y;
} Item;

typedef struct
{
  int first;
  int last;
  int continued_block;   /* block whose table goes on here, or -1 */
} Page;

typedef enum
{
  COL_STEP,
  COL_WAVELENGTH,
  COL_PHOTON,
  COL_EXCESS,
  COL_OD,
  COL_RATE,
  COL_DWELL,
  COL_TARGET,
  COL_MTE,
  COL_CLOCK,
  COL_PRIORITY,
  COL_CHECK,
  COL_MEASURED,
  COL_NOTES,
  N_COLS
} Column;

typedef struct
{
  const char *name;
  const char *unit;
  double width;          /* pt on a 500 pt wide table; notes take the rest */
  double xalign;
} ColumnInfo;

static const ColumnInfo columns[N_COLS] = {
  [COL_STEP] = { N_("step"), "", 31, 0 },
  [COL_WAVELENGTH] = { N_("\xce\xbb"), N_("nm"), 38, 1 },
  [COL_PHOTON] = { N_("photon"), N_("eV"), 35, 1 },
  [COL_EXCESS] = { N_("excess"), N_("eV"), 37, 1 },
  [COL_OD] = { N_("atten."), N_("OD"), 31, 1 },
  [COL_RATE] = { N_("rate"), N_("1/s"), 36, 1 },
  [COL_DWELL] = { N_("dwell"), N_("m:ss"), 34, 1 },
  [COL_TARGET] = { N_("goal \xcf\x83"), N_("meV"), 34, 1 },
  [COL_MTE] = { N_("MTE"), N_("meV"), 32, 1 },
  [COL_CLOCK] = { N_("start"), "", 34, 1 },
  [COL_PRIORITY] = { N_("prio"), "", 25, 0.5 },
  [COL_CHECK] = { N_("done"), "", 26, 0.5 },
  [COL_MEASURED] = { N_("measured"), N_("rate 1/s"), 48, 0 },
  [COL_NOTES] = { N_("notes"), "", 0, 0 },
};

struct _MpSheet
{
  MpPlan *plan;
  const MpSchedule *schedule;
  double width_pt;
  double height_pt;
  double content_x;
  double content_w;
  double content_top;
  double content_bottom;
  double col_x[N_COLS + 1];
  GDateTime *generated;
  GDateTime *shift_start;     /* NULL: elapsed times */
  char *checksum;
  char *file_name;
  char *title;
  GArray *items;              /* Item */
  GArray *pages;              /* Page */
  int last_range;             /* while laying out: laser range of the last step */
};

/* Formatting */

char *
mp_sheet_format_wavelength_nm (const MpPlan *plan, double wavelength_nm)
{
  double step = plan ? plan->laser.wavelength_step_nm : 0.1;
  int decimals = 1;

  if (step > 0 && isfinite (step))
    decimals = CLAMP ((int) ceil (-log10 (step) - 1e-9), 0, 3);
  if (!isfinite (wavelength_nm))
    return g_strdup ("\xe2\x80\x94");
  return g_strdup_printf ("%.*f", decimals, wavelength_nm);
}

static char *
format_signed (double v, int decimals)
{
  if (!isfinite (v))
    return g_strdup ("\xe2\x80\x94");
  if (fabs (v) < 0.5 * pow (10, -decimals))
    return g_strdup_printf ("%.*f", decimals, 0.0);
  if (v < 0)
    return g_strdup_printf (MINUS "%.*f", decimals, -v);
  return g_strdup_printf ("+%.*f", decimals, v);
}

static char *
format_rate (double rate)
{
  if (!isfinite (rate) || rate <= 0)
    return g_strdup ("0");
  if (rate < 0.01)
    return g_strdup ("&lt;0.01");
  if (rate < 10)
    return g_strdup_printf ("%.2f", rate);
  if (rate < 100)
    return g_strdup_printf ("%.1f", rate);
  if (rate < 1e6)
    return g_strdup_printf ("%.0f", rate);
  return g_strdup_printf ("%.2e", rate);
}

static char *
format_dwell (double s)
{
  long total;

  if (!isfinite (s) || s <= 0)
    return g_strdup ("\xe2\x80\x94");
  total = lround (s);
  if (total >= 3600)
    return g_strdup_printf ("%ld:%02ld:%02ld", total / 3600, (total / 60) % 60,
                            total % 60);
  return g_strdup_printf ("%ld:%02ld", total / 60, total % 60);
}

static char *
format_duration_h (double h)
{
  long min;

  if (!isfinite (h))
    return g_strdup ("\xe2\x80\x94");
  min = lround (h * 60);
  if (min < 60)
    return g_strdup_printf (_("%ld min"), min);
  return g_strdup_printf (_("%ld h %02ld min"), min / 60, min % 60);
}

/* Wall-clock "HH:MM" (with "+1d" after midnight) when the plan has a shift
 * start, else the elapsed "h:mm". */
static char *
format_clock (MpSheet *sheet, double h)
{
  long min;

  if (!isfinite (h))
    return g_strdup ("\xe2\x80\x94");
  min = lround (h * 60);
  if (sheet->shift_start != NULL)
    {
      g_autoptr (GDateTime) t = g_date_time_add_minutes (sheet->shift_start, min);
      int days;
      char *hm;

      if (t == NULL)
        return g_strdup ("?");
      days = g_date_time_get_day_of_year (t) - g_date_time_get_day_of_year (sheet->shift_start)
             + 366 * (g_date_time_get_year (t) - g_date_time_get_year (sheet->shift_start));
      if (days > 300)
        days = 1;
      hm = g_date_time_format (t, "%H:%M");
      if (days > 0)
        {
          char *with_day = g_strdup_printf ("%s +%dd", hm, days);
          g_free (hm);
          return with_day;
        }
      return hm;
    }
  return g_strdup_printf ("%ld:%02ld", min / 60, min % 60);
}

static const char *
cryogen_name (const MpPlan *plan)
{
  return plan->cryostat.cryogen == MP_CRYOGEN_NITROGEN ? _("nitrogen")
                                                       : _("helium");
}

/* Items */

static Item *
add_item (MpSheet *sheet, ItemKind kind)
{
  Item item = { 0 };

  item.kind = kind;
  item.block = -1;
  item.family = FONT_BODY;
  item.size = SIZE_BODY;
  g_array_append_val (sheet->items, item);
  return &g_array_index (sheet->items, Item, sheet->items->len - 1);
}

/* "40.0 L" must not break between the number and its unit. */
static char *
bind_units (const char *markup)
{
  static GRegex *regex;

  if (g_once_init_enter (&regex))
    g_once_init_leave (&regex,
                               g_regex_new ("([0-9])(</b>)? (L|h|eV|meV|nm|min|K|kHz|s|MV/m|e/pulse)\\b",
                                            G_REGEX_OPTIMIZE, 0, NULL));
  return g_regex_replace (regex, markup, -1, 0, "\\1\\2\xc2\xa0\\3", 0, NULL);
}

static Item *
add_para (MpSheet *sheet, const char *markup, double size, double space_before)
{
  Item *item = add_item (sheet, ITEM_PARA);

  item->markup = bind_units (markup);
  item->size = size;
  item->space_before = space_before;
  return item;
}

static void
item_clear (gpointer data)
{
  Item *item = data;

  g_free (item->markup);
}

static PangoLayout *
text_layout (cairo_t *cr, const char *family, double size, double width,
             const char *markup)
{
  PangoLayout *layout = mp_plot_create_layout (cr, family, size,
                                               PANGO_WEIGHT_NORMAL);

  if (width > 0)
    {
      pango_layout_set_width (layout, (int) (width * PANGO_SCALE));
      pango_layout_set_wrap (layout, PANGO_WRAP_WORD_CHAR);
    }
  pango_layout_set_markup (layout, markup, -1);
  return layout;
}

static double
layout_height (PangoLayout *layout)
{
  PangoRectangle logical;

  pango_layout_get_extents (layout, NULL, &logical);
  return (double) logical.height / PANGO_SCALE;
}

static double
layout_width (PangoLayout *layout)
{
  PangoRectangle logical;

  pango_layout_get_extents (layout, NULL, &logical);
  return (double) logical.width / PANGO_SCALE;
}

static void
show_layout (cairo_t *cr, PangoLayout *layout, double x, double y)
{
  cairo_move_to (cr, x, y);
  pango_cairo_show_layout (cr, layout);
}

static void
show_text (cairo_t *cr, const char *family, double size, const char *markup,
           double x, double y, double width, double xalign)
{
  PangoLayout *layout = text_layout (cr, family, size, -1, markup);
  double w = layout_width (layout);

  show_layout (cr, layout, x + (width - w) * xalign, y);
  g_object_unref (layout);
}

static gboolean
step_is_marked (const MpStep *s)
{
  return s->status != MP_STEP_OK;
}

/* Header */

/* A re-plan says how much of the shift is behind it, so that the counts
 * above are not read as work still to do. */
static void
add_replan_line (MpSheet *sheet, const MpSchedule *sc)
{
  int n_done = 0, n_all = 0;
  g_autofree char *line = NULL;

  for (guint b = 0; b < sc->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (sc->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          n_done += g_array_index (block->steps, MpStep, i).done;
          n_all++;
        }
    }
  if (n_done == 0)
    return;
  line = g_strdup_printf (ngettext ("<b>Re-plan</b>  %d of these steps is already measured "
                                     "(struck through below); %d still to do.",
                                     "<b>Re-plan</b>  %d of these steps are already measured "
                                     "(struck through below); %d still to do.",
                                     n_done),
                          n_done, n_all - n_done);
  add_para (sheet, line, SIZE_BODY, 4);
}

static void
add_header (MpSheet *sheet)
{
  const MpPlan *plan = sheet->plan;
  const MpSchedule *sc = sheet->schedule;
  const MpCathode *c = &plan->cathode;
  const MpLaser *l = &plan->laser;
  const MpDetector *d = &plan->detector;
  g_autofree char *gen = g_date_time_format (sheet->generated, "%Y-%m-%d %H:%M %Z");
  g_autofree char *esc_title = g_markup_escape_text (sheet->title, -1);
  g_autofree char *esc_file = g_markup_escape_text (sheet->file_name, -1);
  g_autofree char *esc_cathode = g_markup_escape_text (c->label ? c->label : _("(unnamed cathode)"), -1);
  g_autofree char *title = NULL, *meta = NULL, *cathode = NULL, *laser = NULL;
  g_autofree char *detector = NULL, *budget = NULL, *clock = NULL;
  g_autofree char *verdict = NULL;
  g_autoptr (GString) ranges = g_string_new (NULL);
  double phi_eff = sc->effective_work_function_eV;
  double lowering = c->work_function_eV - phi_eff;

  title = g_strdup_printf ("<b>%s</b>", esc_title);
  add_item (sheet, ITEM_TITLE)->markup = g_steal_pointer (&title);

  meta = g_strdup_printf (_("Run sheet generated %s · plan file <b>%s</b> · plan checksum <b><tt>%s</tt></b>"),
                          gen, esc_file, sheet->checksum);
  add_para (sheet, meta, SIZE_SMALL, 2);

  cathode = g_strdup_printf (_("<b>Cathode</b>  %s · work function %.3f ± %.3f eV · field-lowered %.3f eV"
                               " (%.1f MV/m, −%.3f eV)"),
                             esc_cathode, c->work_function_eV,
                             c->work_function_sigma_eV, phi_eff,
                             c->field_MV_per_m, lowering);
  add_para (sheet, cathode, SIZE_BODY, 6);

  for (guint r = 0; l->ranges && r < l->ranges->len; r++)
    {
      MpTuningRange *range = g_ptr_array_index (l->ranges, r);
      g_autofree char *esc = NULL;
      if (range->points == NULL || range->points->len == 0)
        continue;
      if (ranges->len > 0)
        g_string_append (ranges, ", ");
      if (range->label)
        {
          esc = g_markup_escape_text (range->label, -1);
          g_string_append_printf (ranges, "%s ", esc);
        }
      g_string_append_printf (ranges, "%.0f\xe2\x80\x93%.0f nm",
                              g_array_index (range->points, MpTuningPoint, 0).wavelength_nm,
                              g_array_index (range->points, MpTuningPoint,
                                             range->points->len - 1).wavelength_nm);
    }
  laser = g_strdup_printf (_("<b>Laser</b>  %s · %.0f kHz · line %.0f meV rms · retune %.0f s · step %g nm"),
                           ranges->str, l->repetition_rate_kHz, l->bandwidth_meV,
                           l->retune_s, l->wavelength_step_nm);
  add_para (sheet, laser, SIZE_BODY, 1);

  detector = g_strdup_printf (_("<b>Detector</b>  efficiency %.2f · at most %g e/pulse"
                                " and %.0f/s · dark %g/s · acceptance %.0f meV · resolution %g meV · systematic %g meV"),
                              d->efficiency, d->max_electrons_per_pulse,
                              d->max_rate_per_s, d->dark_rate_per_s,
                              d->acceptance_meV, d->resolution_meV,
                              d->systematic_meV);
  add_para (sheet, detector, SIZE_BODY, 1);

  budget = g_strdup_printf (_("<b>Budget</b>  beam time <b>%.1f h</b> planned of %.1f h · %s <b>%.1f L</b> planned of %.1f L usable "
                              "(%.1f L budget − %.1f L reserve) · if over: %s"),
                            sc->beam_time_h, sc->beam_time_available_h,
                            cryogen_name (plan), sc->cryogen_L,
                            sc->cryogen_available_L, plan->cryostat.budget_L,
                            plan->cryostat.reserve_L,
                            mp_over_budget_to_string (sc->policy));
  add_para (sheet, budget, SIZE_BODY, 1);

  if (sheet->shift_start)
    {
      g_autofree char *s = g_date_time_format (sheet->shift_start, "%Y-%m-%d %H:%M");
      clock = g_strdup_printf (_("<b>Clock</b>  shift starts %s; the start column "
                                 "shows wall-clock time HH:MM (+1d: next day)."), s);
    }
  else
    clock = g_strdup (_("<b>Clock</b>  no shift start in the plan; the start column "
                        "shows time since the shift began, h:mm."));
  add_para (sheet, clock, SIZE_BODY, 1);

  if (sc->feasible && sc->left_out && sc->left_out->len > 0)
    verdict = g_strdup_printf (_("<b>⚠ Fits the budget only with %d steps left out</b> "
                                 "(listed under \xe2\x80\x9cLeft out of this plan\xe2\x80\x9d). "
                                 "%d steps planned, %d short, %d unreachable."),
                               (int) sc->left_out->len,
                               mp_schedule_count_steps (sc),
                               mp_schedule_count_status (sc, MP_STEP_SHORT),
                               mp_schedule_count_status (sc, MP_STEP_UNREACHABLE));
  else if (sc->feasible && sc->stretch_factor > 1.0001)
    verdict = g_strdup_printf (_("<b>⚠ Fits the budget only with every goal σ loosened "
                                 "by a factor of %.2f</b> (policy stretch; the goal column "
                                 "shows the loosened goals). %d steps, %d short, "
                                 "%d unreachable."),
                               sc->stretch_factor, mp_schedule_count_steps (sc),
                               mp_schedule_count_status (sc, MP_STEP_SHORT),
                               mp_schedule_count_status (sc, MP_STEP_UNREACHABLE));
  else if (sc->feasible)
    verdict = g_strdup_printf (_("<b>The plan fits its budget.</b>  %d steps, %d short, "
                                 "%d unreachable, %d left out."),
                               mp_schedule_count_steps (sc),
                               mp_schedule_count_status (sc, MP_STEP_SHORT),
                               mp_schedule_count_status (sc, MP_STEP_UNREACHABLE),
                               sc->left_out ? (int) sc->left_out->len : 0);
  else
    verdict = g_strdup_printf (_("<b>⚠ OVER BUDGET: this plan does not fit.</b>  "
                                 "%d steps, %d short, %d unreachable, %d left out. "
                                 "Agree on what to drop before the shift."),
                               mp_schedule_count_steps (sc),
                               mp_schedule_count_status (sc, MP_STEP_SHORT),
                               mp_schedule_count_status (sc, MP_STEP_UNREACHABLE),
                               sc->left_out ? (int) sc->left_out->len : 0);
  add_para (sheet, verdict, SIZE_BODY, 4)->boxed =
    !sc->feasible || (sc->left_out && sc->left_out->len > 0) || sc->stretch_factor > 1.0001;
  add_replan_line (sheet, sc);
}

static const char *
plan_cryogen_caution_head (const MpPlan *plan)
{
  return plan->cryostat.cryogen == MP_CRYOGEN_NITROGEN
         ? _("Cryogens (liquid nitrogen).")
         : _("Cryogens (liquid helium, liquid nitrogen).");
}

static void
add_cautions (MpSheet *sheet)
{
  g_autofree char *text = NULL;

  text = g_strdup_printf ("<b>⚠ %s</b>\n"
                          "\xe2\x80\xa2 <b>%s</b> %s\n"
                          "\xe2\x80\xa2 <b>%s</b> %s\n"
                          "\xe2\x80\xa2 <b>%s</b> %s\n"
                          "<b>%s</b>",
                          _("CAUTIONS"),
                          _("Class 4 UV laser."),
                          _("Eye and skin hazard, also from scattered light. Wear the "
                            "eyewear rated for this wavelength; keep beam paths enclosed; "
                            "retune with the shutter closed."),
                          plan_cryogen_caution_head (sheet->plan),
                          _("Asphyxiation risk in closed rooms: watch the oxygen monitor. "
                            "Cold burns: face shield and cryogenic gloves. Pressure: never "
                            "block vents or relief valves of the dewar and cryostat."),
                          _("High voltage."),
                          _("Extraction voltage on the cathode and detector: interlocks on, "
                            "never bypassed; discharge and ground before touching."),
                          _("Follow your facility's rules and safety officers; this "
                            "sheet does not replace them."));
  add_item (sheet, ITEM_CAUTIONS)->markup = g_steal_pointer (&text);
}

/* Blocks */

static double
row_height (const MpStep *s, gboolean range_switch)
{
  return ROW_H + (step_is_marked (s) || range_switch ? SUBLINE_H : 0);
}

static const char *
range_name (const MpPlan *plan, int range_index)
{
  MpTuningRange *range;

  if (plan->laser.ranges == NULL || range_index < 0
      || (guint) range_index >= plan->laser.ranges->len)
    return NULL;
  range = g_ptr_array_index (plan->laser.ranges, range_index);
  return range->label ? range->label : _("the other tuning range");
}

static char *
block_name (const MpSchedule *sc, int b)
{
  MpBlock *block = g_ptr_array_index (sc->blocks, b);
  g_autofree char *t = mp_plot_format_temperature (block->temperature_K);

  return g_strdup_printf (_("Block %d of %d · %s"), b + 1,
                          (int) sc->blocks->len, t);
}

static void
add_cut_list (MpSheet *sheet, MpBlock *block)
{
  g_autoptr (GString) s = g_string_new (NULL);
  g_autofree char *t = mp_plot_format_temperature (block->temperature_K);

  if (block->cut_list == NULL || block->cut_list->len == 0)
    {
      g_string_printf (s, _("<b>Cut-list, %s:</b> none; every step of this block is needed."), t);
    }
  else
    {
      g_string_printf (s, _("<b>Cut-list, %s: if this block runs late, skip in this order:</b> "), t);
      for (guint i = 0; i < block->cut_list->len; i++)
        {
          int k = g_array_index (block->cut_list, int, i);
          const MpStep *st;
          g_autofree char *wl = NULL;

          if (k < 0 || (guint) k >= block->steps->len)
            continue;
          st = &g_array_index (block->steps, MpStep, k);
          wl = mp_sheet_format_wavelength_nm (sheet->plan, st->wavelength_nm);
          g_string_append_printf (s, "%s%s %d (%s nm)", i > 0 ? ", " : "",
                                  _("step"), st->index, wl);
        }
      g_string_append (s, ".");
    }
  add_para (sheet, s->str, SIZE_BODY, 5);
}

static gboolean
plan_has_ranges (const MpPlan *plan)
{
  return plan->laser.ranges != NULL && plan->laser.ranges->len > 1;
}

static void
add_block (MpSheet *sheet, int b)
{
  const MpSchedule *sc = sheet->schedule;
  MpBlock *block = g_ptr_array_index (sc->blocks, b);
  g_autofree char *name = block_name (sc, b);
  g_autofree char *head = g_strdup_printf ("<b>%s</b>", name);
  g_autofree char *start = format_clock (sheet, block->start_h);
  g_autofree char *end = format_clock (sheet, block->end_h);
  g_autofree char *settle = format_duration_h (block->settle_h);
  g_autofree char *info = NULL;
  g_autofree char *t = mp_plot_format_temperature (block->temperature_K);
  Item *item;
  gboolean any_short = FALSE, any_unreach = FALSE, any_qe = FALSE;

  item = add_para (sheet, head, SIZE_H2, 16);
  item->keep_with_next = TRUE;
  info = g_strdup_printf (_("Target temperature <b>%s</b> · settle <b>%s</b> before the "
                            "first step · block %s \xe2\x80\x93 %s · %s left: "
                            "<b>%.1f L</b> at start, <b>%.1f L</b> at end (block uses %.1f L)"),
                          t, settle, start, end, cryogen_name (sheet->plan),
                          block->cryogen_start_L, block->cryogen_end_L,
                          block->cryogen_L);
  item = add_para (sheet, info, SIZE_BODY, 2);
  item->keep_with_next = TRUE;

  for (guint i = 0; i < block->steps->len; i++)
    {
      const MpStep *s = &g_array_index (block->steps, MpStep, i);
      any_short |= s->status == MP_STEP_SHORT;
      any_unreach |= s->status == MP_STEP_UNREACHABLE;
      any_qe |= s->kind == MP_STEP_KIND_QE_SWEEP;
    }
  if (any_short || any_unreach || any_qe)
    {
      g_autoptr (GString) legend = g_string_new (_("Marks: "));
      if (any_short)
        g_string_append (legend, _("▲ short (dwell capped, goal not reached)   "));
      if (any_unreach)
        g_string_append (legend, _("✕ unreachable (goal cannot be met)   "));
      if (any_qe)
        g_string_append (legend, _("Q  QE-sweep step (yield only)"));
      item = add_para (sheet, legend->str, SIZE_SMALL, 2);
      item->keep_with_next = TRUE;
    }

  item = add_item (sheet, ITEM_TABLE_HEAD);
  item->block = b;
  item->height = HEAD_H;
  item->space_before = 4;
  item->keep_with_next = TRUE;
  for (guint i = 0; i < block->steps->len; i++)
    {
      const MpStep *s = &g_array_index (block->steps, MpStep, i);
      gboolean switched = sheet->last_range >= 0 && s->range_index != sheet->last_range
                          && plan_has_ranges (sheet->plan);
      item = add_item (sheet, ITEM_ROW);
      item->block = b;
      item->row = i;
      item->step = s;
      item->range_switch = switched ? range_name (sheet->plan, s->range_index) : NULL;
      item->height = row_height (s, item->range_switch != NULL);
      /* No lone last row on a page; the cut-list stays with the table. */
      item->keep_with_next = i + 2 >= block->steps->len;
      sheet->last_range = s->range_index;
    }
  if (block->steps->len == 0)
    add_para (sheet, _("No steps in this block."), SIZE_BODY, 4);
  add_cut_list (sheet, block);
}

/* After the blocks */

static void
add_left_out (MpSheet *sheet)
{
  const MpSchedule *sc = sheet->schedule;
  g_autoptr (GString) s = g_string_new (NULL);
  Item *item;

  item = add_para (sheet, _("<b>Left out of this plan</b>"), SIZE_H2, 18);
  item->keep_with_next = TRUE;
  if (sc->left_out == NULL || sc->left_out->len == 0)
    g_string_append (s, _("Nothing: every planned step is in the tables above."));
  /* One line per temperature and reason, the wavelengths listed. */
  for (guint i = 0; sc->left_out && i < sc->left_out->len;)
    {
      MpLeftOut *lo = &g_array_index (sc->left_out, MpLeftOut, i);
      g_autofree char *t = mp_plot_format_temperature (lo->temperature_K);
      g_autofree char *why = g_markup_escape_text (lo->reason ? lo->reason : "", -1);
      g_autoptr (GString) wls = g_string_new (NULL);
      guint j = i;

      for (; j < sc->left_out->len; j++)
        {
          MpLeftOut *o = &g_array_index (sc->left_out, MpLeftOut, j);
          g_autofree char *wl = NULL;
          if (o->temperature_K != lo->temperature_K
              || g_strcmp0 (o->reason, lo->reason) != 0)
            break;
          wl = mp_sheet_format_wavelength_nm (sheet->plan, o->wavelength_nm);
          g_string_append_printf (wls, "%s%s", j > i ? ", " : "", wl);
        }
      g_string_printf (s, "\xe2\x80\xa2 <b>%s</b>, %s: %u %s at %s nm", t, why, j - i,
                       j - i == 1 ? _("step") : _("steps"), wls->str);
      add_para (sheet, s->str, SIZE_BODY, 3);
      i = j;
    }
  if (s->len > 0 && (sc->left_out == NULL || sc->left_out->len == 0))
    add_para (sheet, s->str, SIZE_BODY, 3);

  if (sc->warnings && sc->warnings->len > 0)
    {
      item = add_para (sheet, _("<b>Warnings from the planner</b>"), SIZE_BODY, 8);
      item->keep_with_next = TRUE;
      for (guint i = 0; i < sc->warnings->len; i++)
        {
          g_autofree char *esc = g_markup_escape_text (g_ptr_array_index (sc->warnings, i), -1);
          g_autofree char *w = g_strdup_printf (SYM_WARN " %s", esc);
          add_para (sheet, w, SIZE_BODY, 2);
        }
    }
}

static char *
sensitivity_text (const MpSensitivity *s, const char *label, double sigma)
{
  return g_strdup_printf (_("at \xcf\x86 %s \xcf\x83 = %.3f eV: %.1f h, %.1f L, %d short, "
                            "%d unreachable, %d left out, %s"),
                          label, s->work_function_eV, s->beam_time_h, s->cryogen_L,
                          s->n_short, s->n_unreachable, s->n_left_out,
                          s->feasible ? _("fits") : _("<b>does not fit</b>"));
}

static void
add_sensitivity (MpSheet *sheet)
{
  const MpSchedule *sc = sheet->schedule;
  g_autofree char *text = NULL;
  Item *item;

  item = add_para (sheet, _("<b>Work-function sensitivity</b>"), SIZE_BODY, 10);
  item->keep_with_next = TRUE;
  if (sc->has_sensitivity)
    {
      g_autofree char *lo = sensitivity_text (&sc->sensitivity_low, MINUS,
                                              sheet->plan->cathode.work_function_sigma_eV);
      g_autofree char *hi = sensitivity_text (&sc->sensitivity_high, "+",
                                              sheet->plan->cathode.work_function_sigma_eV);
      text = g_strdup_printf (_("Planned here: %.1f h, %.1f L. The same plan re-planned\n"
                                "\xe2\x80\xa2 %s\n\xe2\x80\xa2 %s"),
                              sc->beam_time_h, sc->cryogen_L, lo, hi);
    }
  else
    text = g_strdup (_("Not computed for this sheet."));
  add_para (sheet, text, SIZE_BODY, 2);
}

static void
add_plots (MpSheet *sheet)
{
  Item *item;
  g_autofree char *tl = g_strdup_printf (_("<b>Timeline</b>: blocks, steps (hatched: settling) "
                                           "and %s left, with the reserve line"),
                                         cryogen_name (sheet->plan));

  item = add_para (sheet, _("<b>Predicted MTE vs excess energy</b>: one curve per "
                            "temperature, bars ± the goal \xcf\x83, "
                            "dotted: kT"), SIZE_BODY, 16);
  item->keep_with_next = TRUE;
  item = add_item (sheet, ITEM_PLOT);
  item->plot = MP_PLOT_MTE;
  item->height = PLOT_H;
  item->space_before = 4;

  item = add_para (sheet, tl, SIZE_BODY, 14);
  item->keep_with_next = TRUE;
  item = add_item (sheet, ITEM_PLOT);
  item->plot = MP_PLOT_TIMELINE;
  item->height = PLOT_H * 0.95;
  item->space_before = 4;
}

static void
add_signoff (MpSheet *sheet)
{
  Item *item;

  item = add_para (sheet, _("<b>Sign-off</b>"), SIZE_H2, 18);
  item->keep_with_next = TRUE;
  item = add_item (sheet, ITEM_SIGNOFF);
  item->height = 3 * 34;
  item->space_before = 4;
}

/* Measuring and pagination */

static void
measure_items (MpSheet *sheet)
{
  cairo_surface_t *surface = cairo_image_surface_create (CAIRO_FORMAT_ARGB32, 1, 1);
  cairo_t *cr = cairo_create (surface);

  for (guint i = 0; i < sheet->items->len; i++)
    {
      Item *item = &g_array_index (sheet->items, Item, i);
      PangoLayout *layout;

      switch (item->kind)
        {
        case ITEM_TITLE:
          layout = text_layout (cr, FONT_BODY, SIZE_TITLE, sheet->content_w - CHECKSUM_BOX_W,
                                item->markup);
          item->height = MAX (layout_height (layout), 34);
          g_object_unref (layout);
          break;
        case ITEM_PARA:
          layout = text_layout (cr, item->family, item->size,
                                sheet->content_w - item->indent - (item->boxed ? 14 : 0),
                                item->markup);
          item->height = layout_height (layout) + (item->boxed ? 10 : 0);
          g_object_unref (layout);
          break;
        case ITEM_CAUTIONS:
          layout = text_layout (cr, FONT_BODY, SIZE_BODY, sheet->content_w - 20,
                                item->markup);
          item->height = layout_height (layout) + 16;
          item->space_before = 10;
          g_object_unref (layout);
          break;
        default:
          break;
        }
    }
  cairo_destroy (cr);
  cairo_surface_destroy (surface);
}

static double
page_top (MpSheet *sheet)
{
  return sheet->content_top + RUNNING_HEAD_H;
}

static double
page_bottom (MpSheet *sheet)
{
  return sheet->content_bottom - FOOTER_H;
}

static void
paginate (MpSheet *sheet)
{
  Page page = { 0, -1, -1 };
  double y = page_top (sheet);
  gboolean fresh = TRUE;
  int n = sheet->items->len;

  for (int i = 0; i < n; i++)
    {
      Item *item = &g_array_index (sheet->items, Item, i);
      double chain = item->space_before + item->height;

      for (int j = i; j + 1 < n && g_array_index (sheet->items, Item, j).keep_with_next; j++)
        {
          Item *next = &g_array_index (sheet->items, Item, j + 1);
          chain += next->space_before + next->height;
        }
      if (!fresh && y + chain > page_bottom (sheet))
        {
          page.last = i - 1;
          g_array_append_val (sheet->pages, page);
          page.first = i;
          page.last = -1;
          page.continued_block = -1;
          y = page_top (sheet);
          if (item->kind == ITEM_ROW)
            {
              page.continued_block = item->block;
              y += CONT_H + HEAD_H;
            }
          fresh = TRUE;
        }
      if (!fresh)
        y += item->space_before;
      item->y = y;
      item->page = sheet->pages->len;
      y += item->height;
      fresh = FALSE;
    }
  page.last = n - 1;
  g_array_append_val (sheet->pages, page);
}

/* When only the sign-off spills onto a last page, shrink the plots (to no
 * less than PLOT_MIN_H) so that it fits under them. */
static void
avoid_lone_signoff (MpSheet *sheet)
{
  Page *last;
  Item *first, *end;
  double need, spare, shrink, room;
  int n_plots = 0;

  if (sheet->pages->len < 2)
    return;
  last = &g_array_index (sheet->pages, Page, sheet->pages->len - 1);
  first = &g_array_index (sheet->items, Item, last->first);
  if (last->first + 1 != last->last
      || g_array_index (sheet->items, Item, last->last).kind != ITEM_SIGNOFF)
    return;
  end = &g_array_index (sheet->items, Item, last->first - 1);
  if (end->page != (int) sheet->pages->len - 2)
    return;
  need = first->space_before + first->height
         + g_array_index (sheet->items, Item, last->last).space_before
         + g_array_index (sheet->items, Item, last->last).height;
  spare = page_bottom (sheet) - (end->y + end->height);
  shrink = need - spare + 2;
  room = 0;
  for (guint i = 0; i < sheet->items->len; i++)
    {
      Item *item = &g_array_index (sheet->items, Item, i);
      if (item->kind == ITEM_PLOT && item->page == end->page)
        {
          room += MAX (0, item->height - PLOT_MIN_H);
          n_plots++;
        }
    }
  if (n_plots == 0 || shrink > room)
    return;
  for (guint i = 0; i < sheet->items->len; i++)
    {
      Item *item = &g_array_index (sheet->items, Item, i);
      if (item->kind == ITEM_PLOT && item->page == end->page)
        item->height -= MAX (0, item->height - PLOT_MIN_H) * shrink / room;
    }
  g_array_set_size (sheet->pages, 0);
  paginate (sheet);
}

static void
layout_columns (MpSheet *sheet)
{
  double fixed = 0, scale, x = sheet->content_x;

  for (int c = 0; c < N_COLS; c++)
    fixed += columns[c].width;
  /* Keep the columns at their size; the notes column takes the rest (at
   * least 50 pt). Narrow pages shrink the fixed columns a little. */
  scale = MIN (1.0, (sheet->content_w - 50) / fixed);
  for (int c = 0; c < N_COLS; c++)
    {
      sheet->col_x[c] = x;
      x += columns[c].width * scale;
    }
  sheet->col_x[N_COLS] = sheet->content_x + sheet->content_w;
}

static GDateTime *
parse_shift_start (const char *text)
{
  GDateTime *t;
  g_autoptr (GTimeZone) local = NULL;

  if (text == NULL || *text == '\0')
    return NULL;
  local = g_time_zone_new_local ();
  t = g_date_time_new_from_iso8601 (text, local);
  return t;
}

MpSheet *
mp_sheet_new (const MpPlan *plan,
              const MpSchedule *schedule,
              double page_width_pt,
              double page_height_pt,
              GDateTime *generated)
{
  MpSheet *sheet;
  const char *title;

  g_return_val_if_fail (plan != NULL, NULL);
  g_return_val_if_fail (schedule != NULL, NULL);
  g_return_val_if_fail (page_width_pt > 200 && page_height_pt > 300, NULL);

  sheet = g_new0 (MpSheet, 1);
  sheet->plan = mp_plan_copy (plan);
  sheet->schedule = schedule;
  sheet->width_pt = page_width_pt;
  sheet->height_pt = page_height_pt;
  sheet->content_x = MARGIN_SIDE;
  sheet->content_w = page_width_pt - 2 * MARGIN_SIDE;
  sheet->content_top = MARGIN_TOP;
  sheet->content_bottom = page_height_pt - MARGIN_BOTTOM;
  sheet->generated = generated ? g_date_time_ref (generated) : g_date_time_new_now_local ();
  sheet->shift_start = parse_shift_start (plan->shift_start);
  sheet->checksum = mp_plan_checksum (plan);
  if (sheet->checksum == NULL)
    sheet->checksum = g_strdup ("????????");
  sheet->file_name = plan->path ? g_path_get_basename (plan->path)
                                : g_strdup (_("(plan not saved)"));
  title = plan->title && *plan->title ? plan->title
          : schedule->plan_title && *schedule->plan_title ? schedule->plan_title
          : _("Untitled plan");
  sheet->title = g_strdup (title);
  sheet->items = g_array_new (FALSE, FALSE, sizeof (Item));
  g_array_set_clear_func (sheet->items, item_clear);
  sheet->pages = g_array_new (FALSE, FALSE, sizeof (Page));

  layout_columns (sheet);
  sheet->last_range = -1;
  add_header (sheet);
  add_cautions (sheet);
  for (guint b = 0; schedule->blocks && b < schedule->blocks->len; b++)
    add_block (sheet, b);
  add_left_out (sheet);
  add_sensitivity (sheet);
  add_plots (sheet);
  add_signoff (sheet);
  measure_items (sheet);
  paginate (sheet);
  avoid_lone_signoff (sheet);
  return sheet;
}

void
mp_sheet_free (MpSheet *sheet)
{
  if (sheet == NULL)
    return;
  g_clear_pointer (&sheet->plan, mp_plan_free);
  g_clear_pointer (&sheet->generated, g_date_time_unref);
  g_clear_pointer (&sheet->shift_start, g_date_time_unref);
  g_free (sheet->checksum);
  g_free (sheet->file_name);
  g_free (sheet->title);
  g_clear_pointer (&sheet->items, g_array_unref);
  g_clear_pointer (&sheet->pages, g_array_unref);
  g_free (sheet);
}

int
mp_sheet_get_n_pages (MpSheet *sheet)
{
  g_return_val_if_fail (sheet != NULL, 0);
  return sheet->pages->len;
}

/* Drawing */

static void
set_grey (cairo_t *cr, double v)
{
  cairo_set_source_rgb (cr, v, v, v);
}

static void
draw_running_head (MpSheet *sheet, cairo_t *cr, int page)
{
  g_autofree char *esc = g_markup_escape_text (sheet->title, -1);
  g_autofree char *left = g_strdup_printf ("<b>%s</b>", esc);
  g_autofree char *right = g_strdup_printf (_("<b>page %d of %d</b>"), page + 1,
                                            (int) sheet->pages->len);
  g_autofree char *foot_l = g_strdup_printf (_("plan file %s · checksum %s"),
                                             sheet->file_name, sheet->checksum);
  g_autofree char *gen = g_date_time_format (sheet->generated, "%Y-%m-%d %H:%M");
  g_autofree char *foot_r = g_strdup_printf (_("generated %s · page %d of %d"),
                                             gen, page + 1, (int) sheet->pages->len);
  g_autofree char *esc_foot_l = g_markup_escape_text (foot_l, -1);
  PangoLayout *layout;
  double rw, y;

  set_grey (cr, 0);
  layout = text_layout (cr, FONT_BODY, 11, -1, right);
  rw = layout_width (layout);
  show_layout (cr, layout, sheet->content_x + sheet->content_w - rw, sheet->content_top);
  g_object_unref (layout);

  layout = text_layout (cr, FONT_BODY, 10, sheet->content_w - rw - 20, left);
  pango_layout_set_ellipsize (layout, PANGO_ELLIPSIZE_END);
  pango_layout_set_height (layout, 0);
  show_layout (cr, layout, sheet->content_x, sheet->content_top + 1);
  g_object_unref (layout);

  cairo_set_line_width (cr, 0.8);
  y = sheet->content_top + RUNNING_HEAD_H - 6.5;
  cairo_move_to (cr, sheet->content_x, y);
  cairo_line_to (cr, sheet->content_x + sheet->content_w, y);
  cairo_stroke (cr);

  y = sheet->content_bottom - 10;
  cairo_set_line_width (cr, 0.5);
  cairo_move_to (cr, sheet->content_x, y - 3);
  cairo_line_to (cr, sheet->content_x + sheet->content_w, y - 3);
  cairo_stroke (cr);
  show_text (cr, FONT_BODY, 8.5, esc_foot_l, sheet->content_x, y, 0, 0);
  layout = text_layout (cr, FONT_BODY, 8.5, -1, foot_r);
  show_layout (cr, layout, sheet->content_x + sheet->content_w - layout_width (layout), y);
  g_object_unref (layout);
}

static void
draw_table_head (MpSheet *sheet, cairo_t *cr, double y)
{
  double x0 = sheet->col_x[0], x1 = sheet->col_x[N_COLS];

  set_grey (cr, 0.84);
  cairo_rectangle (cr, x0, y, x1 - x0, HEAD_H);
  cairo_fill (cr);
  set_grey (cr, 0);
  for (int c = 0; c < N_COLS; c++)
    {
      double cx = sheet->col_x[c] + 2.5, cw = sheet->col_x[c + 1] - sheet->col_x[c] - 5;
      const char *unit = columns[c].unit;
      g_autofree char *name = g_strdup_printf ("<b>%s</b>", _(columns[c].name));

      if (c == COL_CLOCK)
        unit = sheet->shift_start ? _("HH:MM") : _("h:mm");
      show_text (cr, FONT_TABLE, SIZE_SMALL, name, cx, y + 2, cw, columns[c].xalign);
      if (unit && *unit)
        show_text (cr, FONT_TABLE, SIZE_SMALL, _(unit), cx, y + 2 + SIZE_SMALL * 1.3, cw,
                   columns[c].xalign);
    }
  /* White separators keep neighbouring labels apart. */
  set_grey (cr, 1);
  cairo_set_line_width (cr, 1.2);
  for (int c = 1; c < N_COLS; c++)
    {
      cairo_move_to (cr, sheet->col_x[c], y);
      cairo_line_to (cr, sheet->col_x[c], y + HEAD_H);
    }
  cairo_stroke (cr);
  set_grey (cr, 0);
  cairo_set_line_width (cr, 1.4);
  cairo_move_to (cr, x0, y + HEAD_H);
  cairo_line_to (cr, x1, y + HEAD_H);
  cairo_stroke (cr);
}

static void
step_cells (MpSheet *sheet, const MpStep *s, char *cells[N_COLS])
{
  const char *mark = s->status == MP_STEP_SHORT ? " " SYM_SHORT
                     : s->status == MP_STEP_UNREACHABLE ? " " SYM_UNREACHABLE : "";
  g_autofree char *wl = mp_sheet_format_wavelength_nm (sheet->plan, s->wavelength_nm);

  memset (cells, 0, sizeof (char *) * N_COLS);
  cells[COL_STEP] = g_strdup_printf ("<b>%d</b>%s%s", s->index, mark,
                                     s->kind == MP_STEP_KIND_QE_SWEEP ? " <b>Q</b>" : "");
  cells[COL_WAVELENGTH] = g_strdup_printf ("<b>%s</b>", wl);
  cells[COL_PHOTON] = g_strdup_printf ("%.3f", s->photon_energy_eV);
  cells[COL_EXCESS] = format_signed (s->excess_energy_eV, 3);
  cells[COL_OD] = isfinite (s->optical_density)
                  ? g_strdup_printf ("%.2f", MAX (s->optical_density, 0.0))
                  : g_strdup ("\xe2\x80\x94");
  cells[COL_RATE] = format_rate (s->signal_rate_per_s);
  cells[COL_DWELL] = format_dwell (s->dwell_s);
  cells[COL_TARGET] = s->kind == MP_STEP_KIND_QE_SWEEP ? g_strdup (_("QE"))
                      : g_strdup_printf ("%.2f", s->target_sigma_meV);
  cells[COL_MTE] = g_strdup_printf ("%.1f", s->mte_meV);
  cells[COL_CLOCK] = format_clock (sheet, s->start_h);
  cells[COL_PRIORITY] = g_strdup_printf ("%d", s->priority);
}

static char *
step_subline (MpSheet *sheet, const MpStep *s, const char *range_switch)
{
  const MpDetector *d = &sheet->plan->detector;

  if (range_switch != NULL && s->status == MP_STEP_OK)
    {
      g_autofree char *esc = g_markup_escape_text (range_switch, -1);
      return g_strdup_printf (_("<b>\xe2\x87\x84 LASER RANGE</b>: switch to %s before this step."),
                              esc);
    }

  if (s->status == MP_STEP_SHORT)
    {
      g_autofree char *dw = format_dwell (s->dwell_s);
      if (!isfinite (s->reached_sigma_meV) || s->reached_sigma_meV > 100 * s->target_sigma_meV)
        return g_strdup_printf (_("<b>▲ SHORT</b>: dwell capped at %s; signal "
                                  "too weak for the %.2f meV goal."),
                                dw, s->target_sigma_meV);
      return g_strdup_printf (_("<b>▲ SHORT</b>: dwell capped at %s; reaches "
                                "\xcf\x83 %.2f meV, goal was %.2f meV."),
                              dw, s->reached_sigma_meV, s->target_sigma_meV);
    }
  if (s->status == MP_STEP_UNREACHABLE)
    {
      if (!(s->signal_rate_per_s > 0))
        return g_strdup (_("<b>✕ UNREACHABLE</b>: no signal expected here. "
                           "Measure only if time is left over."));
      return g_strdup_printf (_("<b>✕ UNREACHABLE</b>: systematic floor "
                                "%.2f meV is above the goal %.2f meV. Measure only if time "
                                "is left over."), d->systematic_meV, s->target_sigma_meV);
    }
  return NULL;
}

static void
draw_row (MpSheet *sheet, cairo_t *cr, const Item *item)
{
  const MpStep *s = item->step;
  double x0 = sheet->col_x[0], x1 = sheet->col_x[N_COLS];
  double y = item->y, ink = s->done ? 0.5 : 0;
  char *cells[N_COLS];
  double text_y = y + (ROW_H - SIZE_TABLE * 1.25) / 2;

  if (item->row % 2 == 1)
    {
      set_grey (cr, 0.92);
      cairo_rectangle (cr, x0, y, sheet->col_x[COL_CHECK] - x0, item->height);
      cairo_fill (cr);
    }
  if (step_is_marked (s))
    {
      set_grey (cr, 0);
      cairo_rectangle (cr, x0, y + 1, 3, item->height - 2);
      cairo_fill (cr);
    }

  step_cells (sheet, s, cells);
  set_grey (cr, ink);
  for (int c = 0; c < N_COLS; c++)
    {
      double cx = sheet->col_x[c] + 2.5 + (c == COL_STEP ? 3 : 0);
      double cw = sheet->col_x[c + 1] - cx - 2.5;
      if (cells[c] == NULL)
        continue;
      if (c == COL_WAVELENGTH)
        show_text (cr, FONT_TABLE, SIZE_WAVELENGTH, cells[c], cx,
                   text_y - (SIZE_WAVELENGTH - SIZE_TABLE) * 0.6, cw, columns[c].xalign);
      else
        show_text (cr, FONT_TABLE, SIZE_TABLE, cells[c], cx, text_y, cw, columns[c].xalign);
      g_free (cells[c]);
    }

  /* Check box. */
  {
    double bx = (sheet->col_x[COL_CHECK] + sheet->col_x[COL_CHECK + 1]) / 2 - 5.5;
    double by = y + (ROW_H - 11) / 2;
    set_grey (cr, 0);
    cairo_set_line_width (cr, 1.1);
    cairo_rectangle (cr, bx, by, 11, 11);
    cairo_stroke (cr);
    if (s->done)
      {
        cairo_set_line_width (cr, 1.6);
        cairo_move_to (cr, bx + 2, by + 6);
        cairo_line_to (cr, bx + 4.5, by + 9);
        cairo_line_to (cr, bx + 9.5, by + 2);
        cairo_stroke (cr);
      }
  }
  if (s->done)
    {
      double sy = text_y + SIZE_TABLE * 0.62;
      set_grey (cr, 0.35);
      cairo_set_line_width (cr, 0.9);
      cairo_move_to (cr, sheet->col_x[COL_STEP] + 3, sy);
      cairo_line_to (cr, sheet->col_x[COL_CHECK] - 2, sy);
      cairo_stroke (cr);
      set_grey (cr, 0.3);
      show_text (cr, FONT_TABLE, SIZE_TABLE, _("<i>already measured</i>"),
                 sheet->col_x[COL_MEASURED] + 3, text_y,
                 sheet->col_x[N_COLS] - sheet->col_x[COL_MEASURED] - 6, 0);
    }
  {
    g_autofree char *sub = step_subline (sheet, s, item->range_switch);
    if (sub)
      {
        PangoLayout *layout;
        set_grey (cr, ink);
        layout = text_layout (cr, FONT_TABLE, SIZE_SMALL,
                              sheet->col_x[COL_CHECK] - sheet->col_x[COL_STEP] - 10, sub);
        pango_layout_set_ellipsize (layout, PANGO_ELLIPSIZE_END);
        pango_layout_set_height (layout, 0);
        show_layout (cr, layout, sheet->col_x[COL_STEP] + 8, y + ROW_H - 3);
        g_object_unref (layout);
      }
  }

  /* Writing area: separators for the hand-written columns, a rule below. */
  set_grey (cr, 0.45);
  cairo_set_line_width (cr, 0.5);
  for (int c = COL_CHECK; c <= COL_NOTES; c++)
    {
      double lx = floor (sheet->col_x[c]) + 0.25;
      cairo_move_to (cr, lx, y);
      cairo_line_to (cr, lx, y + item->height);
    }
  cairo_move_to (cr, x1, y);
  cairo_line_to (cr, x1, y + item->height);
  cairo_stroke (cr);
  set_grey (cr, 0.55);
  cairo_set_line_width (cr, 0.5);
  cairo_move_to (cr, x0, y + item->height);
  cairo_line_to (cr, x1, y + item->height);
  cairo_stroke (cr);
}

static void
draw_para (MpSheet *sheet, cairo_t *cr, const Item *item, double size)
{
  PangoLayout *layout;
  double pad = item->boxed ? 7 : 0;

  layout = text_layout (cr, item->family, size,
                        sheet->content_w - item->indent - 2 * pad, item->markup);
  if (item->boxed)
    {
      set_grey (cr, 0);
      cairo_set_line_width (cr, 2);
      cairo_rectangle (cr, sheet->content_x + 1, item->y + 1, sheet->content_w - 2,
                       item->height - 2);
      cairo_stroke (cr);
    }
  set_grey (cr, 0);
  show_layout (cr, layout, sheet->content_x + item->indent + pad, item->y + pad * 0.7);
  g_object_unref (layout);
}

static void
draw_cautions (MpSheet *sheet, cairo_t *cr, const Item *item)
{
  PangoLayout *layout = text_layout (cr, FONT_BODY, SIZE_BODY, sheet->content_w - 20,
                                     item->markup);

  set_grey (cr, 0.93);
  cairo_rectangle (cr, sheet->content_x, item->y, sheet->content_w, item->height);
  cairo_fill (cr);
  set_grey (cr, 0);
  cairo_set_line_width (cr, 2.2);
  cairo_rectangle (cr, sheet->content_x + 1.1, item->y + 1.1, sheet->content_w - 2.2,
                   item->height - 2.2);
  cairo_stroke (cr);
  show_layout (cr, layout, sheet->content_x + 10, item->y + 8);
  g_object_unref (layout);
}

static void
draw_plot (MpSheet *sheet, cairo_t *cr, const Item *item)
{
  MpPlotStyle style;

  mp_plot_style_init (&style);
  style.grey = TRUE;
  style.font_size_pt = 9;
  cairo_save (cr);
  cairo_translate (cr, sheet->content_x, item->y);
  mp_plot_draw_full (cr, item->plot, sheet->plan, sheet->schedule, &style,
                     sheet->content_w, item->height);
  cairo_restore (cr);
}

static void
draw_signoff (MpSheet *sheet, cairo_t *cr, const Item *item)
{
  const char *who[] = { N_("Planned by"), N_("Checked by"), N_("Operator") };
  const char *what[] = { N_("name"), N_("signature"), N_("date and time") };
  double x = sheet->content_x, w = sheet->content_w;
  double lx[] = { x + 80, x + 80 + (w - 80) * 0.40, x + 80 + (w - 80) * 0.72, x + w };

  for (int r = 0; r < 3; r++)
    {
      double y = item->y + r * 34 + 18;
      g_autofree char *label = g_strdup_printf ("<b>%s</b>", _(who[r]));

      set_grey (cr, 0);
      show_text (cr, FONT_BODY, SIZE_BODY, label, x, y - 12, 0, 0);
      cairo_set_line_width (cr, 0.8);
      for (int k = 0; k < 3; k++)
        {
          cairo_move_to (cr, lx[k], y);
          cairo_line_to (cr, lx[k + 1] - 12, y);
          cairo_stroke (cr);
          set_grey (cr, 0.3);
          show_text (cr, FONT_BODY, 8, _(what[k]), lx[k], y + 1.5, 0, 0);
          set_grey (cr, 0);
        }
    }
}

/* The title, and the plan's checksum boxed at the right so that the
 * operator can compare it with the file's. */
static void
draw_title (MpSheet *sheet, cairo_t *cr, const Item *item)
{
  PangoLayout *layout = text_layout (cr, FONT_BODY, SIZE_TITLE,
                                     sheet->content_w - CHECKSUM_BOX_W, item->markup);
  g_autofree char *sum = g_strdup_printf ("<b>%s</b>", sheet->checksum);
  double bx = sheet->content_x + sheet->content_w - CHECKSUM_BOX_W + 10;
  double bw = CHECKSUM_BOX_W - 10;

  set_grey (cr, 0);
  show_layout (cr, layout, sheet->content_x, item->y);
  g_object_unref (layout);

  cairo_set_line_width (cr, 1.2);
  cairo_rectangle (cr, bx, item->y, bw, 34);
  cairo_stroke (cr);
  show_text (cr, FONT_BODY, 7.5, _("PLAN CHECKSUM"), bx, item->y + 3, bw, 0.5);
  show_text (cr, FONT_MONO, 13, sum, bx, item->y + 14, bw, 0.5);
}

void
mp_sheet_draw_page (MpSheet *sheet, cairo_t *cr, int page)
{
  const Page *p;

  g_return_if_fail (sheet != NULL && cr != NULL);
  g_return_if_fail (page >= 0 && (guint) page < sheet->pages->len);

  p = &g_array_index (sheet->pages, Page, page);
  cairo_save (cr);
  cairo_set_line_cap (cr, CAIRO_LINE_CAP_BUTT);
  draw_running_head (sheet, cr, page);
  if (p->continued_block >= 0)
    {
      g_autofree char *name = block_name (sheet->schedule, p->continued_block);
      g_autofree char *cont = g_strdup_printf (_("<b>%s</b> (continued)"), name);
      set_grey (cr, 0);
      show_text (cr, FONT_BODY, SIZE_BODY + 1, cont, sheet->content_x, page_top (sheet), 0, 0);
      draw_table_head (sheet, cr, page_top (sheet) + CONT_H);
    }
  for (int i = p->first; i <= p->last; i++)
    {
      const Item *item = &g_array_index (sheet->items, Item, i);

      switch (item->kind)
        {
        case ITEM_TITLE:
          draw_title (sheet, cr, item);
          break;
        case ITEM_PARA:
          draw_para (sheet, cr, item, item->size);
          break;
        case ITEM_CAUTIONS:
          draw_cautions (sheet, cr, item);
          break;
        case ITEM_TABLE_HEAD:
          draw_table_head (sheet, cr, item->y);
          break;
        case ITEM_ROW:
          draw_row (sheet, cr, item);
          break;
        case ITEM_PLOT:
          draw_plot (sheet, cr, item);
          break;
        case ITEM_SIGNOFF:
          draw_signoff (sheet, cr, item);
          break;
        default:
          break;
        }
    }
  cairo_restore (cr);
}

/* Paper and PDF */

void
mp_paper_size_pt (MpPaper paper, double *width_pt, double *height_pt)
{
  g_return_if_fail (width_pt != NULL && height_pt != NULL);
  if (paper == MP_PAPER_LETTER)
    {
      /* 8.5 x 11 in */
      *width_pt = 612;
      *height_pt = 792;
    }
  else
    {
      /* ISO 216: 210 x 297 mm */
      *width_pt = 210 * MM;
      *height_pt = 297 * MM;
    }
}

gboolean
mp_paper_from_string (const char *name, MpPaper *paper)
{
  g_return_val_if_fail (name != NULL && paper != NULL, FALSE);
  if (g_ascii_strcasecmp (name, "a4") == 0)
    *paper = MP_PAPER_A4;
  else if (g_ascii_strcasecmp (name, "letter") == 0
           || g_ascii_strcasecmp (name, "us-letter") == 0)
    *paper = MP_PAPER_LETTER;
  else
    return FALSE;
  return TRUE;
}

static cairo_status_t
append_to_bytes_cb (void *closure, const unsigned char *data, unsigned int length)
{
  g_byte_array_append (closure, data, length);
  return CAIRO_STATUS_SUCCESS;
}

GBytes *
mp_sheet_render_pdf (const MpPlan *plan,
                     const MpSchedule *schedule,
                     MpPaper paper,
                     GDateTime *generated,
                     GError **error)
{
  double w, h;
  GByteArray *bytes;
  cairo_surface_t *surface;
  cairo_t *cr;
  cairo_status_t status;
  g_autoptr (MpSheet) sheet = NULL;

  g_return_val_if_fail (plan != NULL && schedule != NULL, NULL);

  mp_paper_size_pt (paper, &w, &h);
  sheet = mp_sheet_new (plan, schedule, w, h, generated);
  bytes = g_byte_array_new ();
  surface = cairo_pdf_surface_create_for_stream (append_to_bytes_cb, bytes, w, h);
  cairo_pdf_surface_set_metadata (surface, CAIRO_PDF_METADATA_TITLE, sheet->title);
  cairo_pdf_surface_set_metadata (surface, CAIRO_PDF_METADATA_CREATOR, "mteplan");
  cr = cairo_create (surface);
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
      g_byte_array_unref (bytes);
      g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Could not draw the run sheet: %s"),
                   cairo_status_to_string (status));
      return NULL;
    }
  return g_byte_array_free_to_bytes (bytes);
}

gboolean
mp_sheet_write_pdf (const MpPlan *plan,
                    const MpSchedule *schedule,
                    MpPaper paper,
                    const char *path,
                    GError **error)
{
  g_autoptr (GBytes) pdf = NULL;
  gsize len;
  const char *data;

  g_return_val_if_fail (plan != NULL && schedule != NULL && path != NULL, FALSE);

  pdf = mp_sheet_render_pdf (plan, schedule, paper, NULL, error);
  if (pdf == NULL)
    return FALSE;
  data = g_bytes_get_data (pdf, &len);
  /* Temporary file beside the target, then rename: a printer or viewer
   * never sees half a sheet, and a failed write leaves the old one. */
  return mp_atomic_write (path, data, len, FALSE, error);
}
