/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot.c: the plan's three plots (QE and count rate, MTE, timeline),
 * shared by the window and the run sheet, with hit testing. */
#include "config.h"

#include <math.h>

#include <glib/gi18n.h>

#include "mp-physics.h"
#include "mp-plot-axes.h"
#include "mp-plot.h"

#define N_CURVE_POINTS 160
#define HIT_RADIUS 6.0

typedef struct
{
  MpPlotFrame frame;
  double strip_y;        /* timeline: step strip above the frame */
  double strip_h;
  double label_h;        /* timeline: block label row above the strip */
} PlotGeom;

void
mp_plot_style_init (MpPlotStyle *style)
{
  g_return_if_fail (style != NULL);
  style->selected_step = 0;
  style->dark = FALSE;
  style->grey = FALSE;
  style->font_size_pt = 0;
}

char *
mp_plot_format_temperature (double temperature_K)
{
  if (fabs (temperature_K - round (temperature_K)) < 0.05)
    return g_strdup_printf ("%.0f K", temperature_K);
  return g_strdup_printf ("%.1f K", temperature_K);
}

static void
ink_from_style (MpPlotInk *ink, const MpPlotStyle *style)
{
  MpPlotStyle def;

  if (style == NULL)
    {
      mp_plot_style_init (&def);
      style = &def;
    }
  /* 0: a size that reads well on screen, where a unit is a pixel. */
  mp_plot_ink_init (ink, style->dark, style->grey,
                    style->font_size_pt > 0 ? style->font_size_pt : 11);
}

static double
effective_phi (const MpPlan *plan, const MpSchedule *schedule)
{
  if (schedule != NULL && isfinite (schedule->effective_work_function_eV)
      && schedule->effective_work_function_eV > 0)
    return schedule->effective_work_function_eV;
  return mp_effective_work_function_eV (plan->cathode.work_function_eV,
                                        plan->cathode.field_MV_per_m);
}

static int
n_blocks (const MpSchedule *schedule)
{
  return schedule && schedule->blocks ? (int) schedule->blocks->len : 0;
}

static MpBlock *
get_block (const MpSchedule *schedule, int i)
{
  return g_ptr_array_index (schedule->blocks, i);
}

/* Model curves through the core (physics.md, "Yield and mean transverse
 * energy"), with the plan's laser bandwidth. */
static double
model_mte_meV (const MpPlan *plan, double excess_eV, double temperature_K)
{
  MpEmission em;

  mp_emission_averaged (excess_eV, temperature_K,
                        plan->laser.bandwidth_meV / 1000.0, &em);
  return em.mte_eV * 1000.0 + plan->cathode.extra_mte_meV;
}

static double
model_qe (const MpPlan *plan, double phi_eff, double photon_energy_eV,
          double temperature_K)
{
  MpEmission at_ref, at_step;
  double bw = plan->laser.bandwidth_meV / 1000.0;

  mp_emission_averaged (plan->cathode.qe_ref_photon_energy_eV - phi_eff,
                        plan->cathode.qe_ref_temperature_K, bw, &at_ref);
  mp_emission_averaged (photon_energy_eV - phi_eff, temperature_K, bw,
                        &at_step);
  return mp_qe_from_reference (plan->cathode.qe_ref, &at_ref, &at_step);
}

static void
range_add (double *lo, double *hi, double v)
{
  if (!isfinite (v))
    return;
  *lo = MIN (*lo, v);
  *hi = MAX (*hi, v);
}

static void
laser_span_eV (const MpPlan *plan, double *lo_eV, double *hi_eV)
{
  double min_nm = 0, max_nm = 0;

  *lo_eV = INFINITY;
  *hi_eV = -INFINITY;
  if (plan->laser.ranges == NULL || plan->laser.ranges->len == 0)
    return;
  mp_laser_wavelength_span_nm (&plan->laser, &min_nm, &max_nm);
  if (min_nm > 0 && max_nm > 0)
    {
      *lo_eV = mp_photon_energy_eV_from_wavelength_nm (max_nm);
      *hi_eV = mp_photon_energy_eV_from_wavelength_nm (min_nm);
    }
}

/* Geometry */

static void
geom_qe (PlotGeom *g, cairo_t *cr, const MpPlotInk *ink, const MpPlan *plan,
         const MpSchedule *schedule, double width, double height)
{
  double x_lo = INFINITY, x_hi = -INFINITY;
  double q_lo = INFINITY, q_hi = -INFINITY, r_lo = INFINITY, r_hi = -INFINITY;
  double phi_eff = effective_phi (plan, schedule), pad;

  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          range_add (&x_lo, &x_hi, s->photon_energy_eV);
          if (s->qe > 0)
            range_add (&q_lo, &q_hi, s->qe);
          if (s->signal_rate_per_s > 0)
            range_add (&r_lo, &r_hi, s->signal_rate_per_s);
        }
    }
  if (!isfinite (x_lo))
    {
      laser_span_eV (plan, &x_lo, &x_hi);
      if (!isfinite (x_lo))
        {
          x_lo = phi_eff - 0.2;
          x_hi = phi_eff + 0.5;
        }
    }
  {
    double t_lo, t_hi;
    laser_span_eV (plan, &t_lo, &t_hi);
    if (isfinite (t_lo))
      {
        x_lo = MIN (x_lo, MAX (t_lo, x_lo - 0.3));
        x_hi = MAX (x_hi, MIN (t_hi, x_hi + 0.3));
      }
  }
  pad = MAX ((x_hi - x_lo) * 0.03, 0.01);
  x_lo -= pad;
  x_hi += pad;
  /* The model curves at the ends of the x range, so that they fit. */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      double t = get_block (schedule, b)->temperature_K;
      range_add (&q_lo, &q_hi, model_qe (plan, phi_eff, x_hi, t));
    }
  if (!isfinite (q_lo))
    {
      q_lo = plan->cathode.qe_ref / 100;
      q_hi = plan->cathode.qe_ref * 10;
    }
  q_lo = MAX (q_lo / 3, q_hi * 1e-8);
  if (!isfinite (r_lo))
    {
      r_lo = 1;
      r_hi = 1e4;
    }

  g->frame = (MpPlotFrame) { 0 };
  mp_axis_init (&g->frame.x_axis, x_lo, x_hi, FALSE);
  mp_axis_init (&g->frame.y_axis, q_lo, q_hi * 1.5, TRUE);
  mp_axis_nice (&g->frame.y_axis, 8);
  mp_axis_init (&g->frame.y2_axis, r_lo / 2, r_hi * 2, TRUE);
  mp_axis_nice (&g->frame.y2_axis, 8);
  g->frame.has_y2 = TRUE;
  g->frame.x_label = _("photon energy (eV)");
  g->frame.y_label = _("QE (electrons per photon)");
  g->frame.y2_label = _("expected count rate (1/s)");
  mp_plot_frame_layout (&g->frame, cr, ink, width, height);
}

static void
geom_mte (PlotGeom *g, cairo_t *cr, const MpPlotInk *ink, const MpPlan *plan,
          const MpSchedule *schedule, double width, double height)
{
  double x_lo = INFINITY, x_hi = -INFINITY, y_lo = INFINITY, y_hi = -INFINITY;
  double pad;

  range_add (&x_lo, &x_hi, plan->scan.excess_min_eV);
  range_add (&x_lo, &x_hi, plan->scan.excess_max_eV);
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      range_add (&y_lo, &y_hi,
                 mp_thermal_energy_eV (block->temperature_K) * 1000);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          if (s->kind != MP_STEP_KIND_MTE)
            continue;
          range_add (&x_lo, &x_hi, s->excess_energy_eV);
          range_add (&y_lo, &y_hi, s->mte_meV + s->target_sigma_meV);
          range_add (&y_lo, &y_hi, MAX (s->mte_meV - s->target_sigma_meV,
                                        s->mte_meV * 0.5));
        }
    }
  if (!isfinite (x_lo) || x_hi <= x_lo)
    {
      x_lo = -0.1;
      x_hi = 0.4;
    }
  pad = (x_hi - x_lo) * 0.03;
  x_lo -= pad;
  x_hi += pad;
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      double t = get_block (schedule, b)->temperature_K;
      range_add (&y_lo, &y_hi, model_mte_meV (plan, x_hi, t));
      range_add (&y_lo, &y_hi, model_mte_meV (plan, x_lo, t));
    }
  if (!isfinite (y_lo))
    {
      y_lo = 1;
      y_hi = 100;
    }

  g->frame = (MpPlotFrame) { 0 };
  mp_axis_init (&g->frame.x_axis, x_lo, x_hi, FALSE);
  /* A log axis as soon as the thermal limits and the high-excess MTE are
   * a decade apart; otherwise the kT lines crowd at the bottom. */
  if (y_lo > 0 && y_hi / y_lo >= 10)
    {
      mp_axis_init (&g->frame.y_axis, y_lo * 0.8, y_hi * 1.25, TRUE);
      mp_axis_nice (&g->frame.y_axis, 6);
    }
  else
    {
      mp_axis_init (&g->frame.y_axis, 0, y_hi * 1.08, FALSE);
      mp_axis_nice (&g->frame.y_axis, 6);
    }
  g->frame.x_label = _("excess energy above the field-lowered work function (eV)");
  g->frame.y_label = _("predicted MTE (meV)");
  mp_plot_frame_layout (&g->frame, cr, ink, width, height);
}

static void
geom_timeline (PlotGeom *g, cairo_t *cr, const MpPlotInk *ink,
               const MpPlan *plan, const MpSchedule *schedule, double width,
               double height)
{
  double t_hi = 0.5, l_hi;
  double fs = ink->font_size;

  for (int b = 0; b < n_blocks (schedule); b++)
    t_hi = MAX (t_hi, get_block (schedule, b)->end_h);
  t_hi = MAX (t_hi, plan->beam_time_h);
  if (schedule != NULL)
    t_hi = MAX (t_hi, schedule->beam_time_available_h);
  l_hi = MAX (plan->cryostat.budget_L, 1);
  for (int b = 0; b < n_blocks (schedule); b++)
    l_hi = MAX (l_hi, get_block (schedule, b)->cryogen_start_L);

  g->frame = (MpPlotFrame) { 0 };
  mp_axis_init (&g->frame.x_axis, 0, t_hi * 1.03, FALSE);
  mp_axis_init (&g->frame.y_axis, 0, l_hi, FALSE);
  mp_axis_nice (&g->frame.y_axis, 5);
  g->frame.x_label = _("time from shift start (h)");
  g->frame.y_label = plan->cryostat.cryogen == MP_CRYOGEN_NITROGEN
                     ? _("liquid nitrogen left (L)")
                     : _("liquid helium left (L)");
  mp_plot_frame_layout (&g->frame, cr, ink, width, height);

  /* Room above the frame: a row of block labels, then the step strip. */
  g->label_h = fs * 1.35;
  g->strip_h = MAX (fs * 1.4, 10);
  {
    double extra = g->label_h + g->strip_h + 3;
    g->frame.y += extra;
    g->frame.height = MAX (10, g->frame.height - extra);
    g->strip_y = g->frame.y - g->strip_h - 2;
    mp_axis_set_position (&g->frame.y_axis, g->frame.y + g->frame.height,
                          g->frame.y);
  }
}

static void
geom_compute (PlotGeom *g, cairo_t *cr, const MpPlotInk *ink, MpPlotKind kind,
              const MpPlan *plan, const MpSchedule *schedule, double width,
              double height)
{
  memset (g, 0, sizeof *g);
  switch (kind)
    {
    case MP_PLOT_QE_RATE:
      geom_qe (g, cr, ink, plan, schedule, width, height);
      break;
    case MP_PLOT_MTE:
      geom_mte (g, cr, ink, plan, schedule, width, height);
      break;
    case MP_PLOT_TIMELINE:
    default:
      geom_timeline (g, cr, ink, plan, schedule, width, height);
      break;
    }
}

/* Drawing helpers */

typedef enum
{
  LEGEND_RATE = 1 << 0,     /* open circles: count rate on the right axis */
  LEGEND_TUNING = 1 << 1,   /* grey swatch: laser tuning range */
  LEGEND_BARS = 1 << 2,     /* error bar: +- goal sigma */
  LEGEND_STATUS = 1 << 3,   /* open marker = short, cross = unreachable */
} LegendExtra;

static int
legend_n_extra (LegendExtra extra)
{
  return !!(extra & LEGEND_RATE) + !!(extra & LEGEND_TUNING) + !!(extra & LEGEND_BARS)
         + !!(extra & LEGEND_STATUS);
}

static void
draw_legend_extra (cairo_t *cr, const MpPlotInk *ink, LegendExtra which,
                   double x, double yy, double fs)
{
  const char *text = "";

  mp_plot_set_ink (cr, ink, 1);
  cairo_set_dash (cr, NULL, 0, 0);
  cairo_set_line_width (cr, 0.9);
  if (which == LEGEND_RATE)
    {
      mp_plot_draw_marker (cr, MP_MARKER_CIRCLE, x + 14, yy, fs * 0.45, FALSE);
      text = _("count rate, right axis");
    }
  else if (which == LEGEND_TUNING)
    {
      mp_plot_set_ink (cr, ink, 0.16);
      cairo_rectangle (cr, x + 4, yy - fs * 0.4, 20, fs * 0.8);
      cairo_fill (cr);
      text = _("laser tuning range");
    }
  else if (which == LEGEND_STATUS)
    {
      mp_plot_draw_marker (cr, MP_MARKER_CIRCLE, x + 8, yy, fs * 0.6, FALSE);
      cairo_move_to (cr, x + 16, yy - fs * 0.3);
      cairo_line_to (cr, x + 22, yy + fs * 0.3);
      cairo_move_to (cr, x + 16, yy + fs * 0.3);
      cairo_line_to (cr, x + 22, yy - fs * 0.3);
      cairo_stroke (cr);
      text = _("open: short; \xc3\x97: unreachable");
    }
  else if (which == LEGEND_BARS)
    {
      cairo_move_to (cr, x + 14, yy - fs * 0.5);
      cairo_line_to (cr, x + 14, yy + fs * 0.5);
      cairo_move_to (cr, x + 11, yy - fs * 0.5);
      cairo_line_to (cr, x + 17, yy - fs * 0.5);
      cairo_move_to (cr, x + 11, yy + fs * 0.5);
      cairo_line_to (cr, x + 17, yy + fs * 0.5);
      cairo_stroke (cr);
      text = _("\xc2\xb1 goal \xcf\x83 of the step");
    }
  mp_plot_show_text (cr, ink, text, x + 30, yy, 0, 0.5, fs, 0);
}

static LegendExtra
status_legend (const MpSchedule *schedule)
{
  if (schedule == NULL)
    return 0;
  return (mp_schedule_count_status (schedule, MP_STEP_SHORT) > 0
          || mp_schedule_count_status (schedule, MP_STEP_UNREACHABLE) > 0)
         ? LEGEND_STATUS : 0;
}

/* corner: 0 top left, 1 top right, 2 bottom right, 3 bottom left */
static void
draw_legend (cairo_t *cr, const MpPlotInk *ink, const PlotGeom *g,
             const MpSchedule *schedule, gboolean with_lines, LegendExtra extra,
             int corner)
{
  static const LegendExtra all[] = { LEGEND_BARS, LEGEND_STATUS, LEGEND_RATE,
                                     LEGEND_TUNING };
  const char *extra_text[] = { _("\xc2\xb1 goal \xcf\x83 of the step"),
                               _("open: short; \xc3\x97: unreachable"),
                               _("count rate, right axis"),
                               _("laser tuning range") };
  double fs = ink->font_size * 0.92;
  double row = fs * 1.35, w = 0, h, x, y;
  int n = n_blocks (schedule), k = 0;

  for (int b = 0; b < n; b++)
    {
      g_autofree char *t = mp_plot_format_temperature (get_block (schedule, b)->temperature_K);
      double tw;
      mp_plot_text_size (cr, t, fs, &tw, NULL);
      w = MAX (w, tw);
    }
  for (guint i = 0; i < G_N_ELEMENTS (all); i++)
    if (extra & all[i])
      {
        double tw;
        mp_plot_text_size (cr, extra_text[i], fs, &tw, NULL);
        w = MAX (w, tw);
      }
  w += 36;
  h = row * (n + legend_n_extra (extra)) + 4;
  x = (corner == 0 || corner == 3) ? g->frame.x + 5 : g->frame.x + g->frame.width - w - 5;
  y = corner < 2 ? g->frame.y + 5 : g->frame.y + g->frame.height - h - 5;

  cairo_save (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  mp_plot_set_ink_alpha (cr, ink, 0, 0.92);
  cairo_rectangle (cr, x, y, w, h);
  cairo_fill_preserve (cr);
  mp_plot_set_ink (cr, ink, 0.5);
  cairo_set_line_width (cr, 0.5);
  cairo_stroke (cr);
  for (int b = 0; b < n; b++)
    {
      g_autofree char *t = mp_plot_format_temperature (get_block (schedule, b)->temperature_K);
      double yy = y + 2 + row * (b + 0.5);

      mp_plot_set_series_ink (cr, ink, b);
      if (with_lines)
        {
          mp_plot_set_series_dash (cr, b, 1.3);
          cairo_move_to (cr, x + 3, yy);
          cairo_line_to (cr, x + 25, yy);
          cairo_stroke (cr);
        }
      mp_plot_draw_marker (cr, mp_plot_series_marker (b), x + 14, yy,
                           fs * 0.65, TRUE);
      mp_plot_show_text (cr, ink, t, x + 30, yy, 0, 0.5, fs, 0);
    }
  for (guint i = 0; i < G_N_ELEMENTS (all); i++)
    if (extra & all[i])
      {
        draw_legend_extra (cr, ink, all[i], x, y + 2 + row * (n + k + 0.5), fs);
        k++;
      }
  cairo_restore (cr);
}

static void
draw_step_marker (cairo_t *cr, const MpPlotInk *ink, const MpStep *s,
                  int series, double x, double y, double size)
{
  mp_plot_set_series_ink (cr, ink, series);
  if (s->status == MP_STEP_UNREACHABLE)
    {
      double r = size * 0.55;
      cairo_save (cr);
      cairo_set_dash (cr, NULL, 0, 0);
      cairo_set_line_width (cr, 1.3);
      cairo_move_to (cr, x - r, y - r);
      cairo_line_to (cr, x + r, y + r);
      cairo_move_to (cr, x - r, y + r);
      cairo_line_to (cr, x + r, y - r);
      cairo_stroke (cr);
      cairo_restore (cr);
      return;
    }
  mp_plot_draw_marker (cr, mp_plot_series_marker (series), x, y, size,
                       s->status == MP_STEP_OK);
}

static void
draw_selection_ring (cairo_t *cr, const MpPlotInk *ink, double x, double y,
                     double size)
{
  cairo_save (cr);
  cairo_set_dash (cr, NULL, 0, 0);
  mp_plot_set_ink_alpha (cr, ink, 0, 0.8);
  cairo_set_line_width (cr, 4);
  cairo_arc (cr, x, y, size, 0, 2 * G_PI);
  cairo_stroke (cr);
  mp_plot_set_ink (cr, ink, 1);
  cairo_set_line_width (cr, 2);
  cairo_arc (cr, x, y, size, 0, 2 * G_PI);
  cairo_stroke (cr);
  cairo_restore (cr);
}

/* QE and count rate */

static void
draw_qe (cairo_t *cr, const PlotGeom *g, const MpPlotInk *ink,
         const MpPlan *plan, const MpSchedule *schedule, int selected)
{
  const MpPlotFrame *f = &g->frame;
  double phi_eff = effective_phi (plan, schedule);
  double fs = ink->font_size;
  double msize = MAX (5, fs * 0.62);
  double sel_x = NAN, sel_y = NAN;

  /* Tuning ranges, shaded. */
  cairo_save (cr);
  mp_plot_frame_clip (cr, f);
  if (plan->laser.ranges)
    for (guint r = 0; r < plan->laser.ranges->len; r++)
      {
        MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, r);
        double e1, e2, x1, x2;
        if (range->points == NULL || range->points->len < 2)
          continue;
        e1 = mp_photon_energy_eV_from_wavelength_nm (
          g_array_index (range->points, MpTuningPoint, range->points->len - 1).wavelength_nm);
        e2 = mp_photon_energy_eV_from_wavelength_nm (
          g_array_index (range->points, MpTuningPoint, 0).wavelength_nm);
        x1 = mp_axis_map (&f->x_axis, e1);
        x2 = mp_axis_map (&f->x_axis, e2);
        mp_plot_set_ink (cr, ink, r % 2 ? 0.14 : 0.09);
        cairo_rectangle (cr, x1, f->y, x2 - x1, f->height);
        cairo_fill (cr);
      }
  cairo_restore (cr);
  mp_plot_frame_draw_grid (cr, f, ink);

  cairo_save (cr);
  mp_plot_frame_clip (cr, f);
  /* Threshold. */
  if (mp_axis_contains (&f->x_axis, phi_eff))
    {
      double x = mp_axis_map (&f->x_axis, phi_eff);
      double dash[] = { 2, 2 };
      mp_plot_set_ink (cr, ink, 0.7);
      cairo_set_line_width (cr, 0.8);
      cairo_set_dash (cr, dash, 2, 0);
      cairo_move_to (cr, x, f->y);
      cairo_line_to (cr, x, f->y + f->height);
      cairo_stroke (cr);
      cairo_set_dash (cr, NULL, 0, 0);
      mp_plot_show_text (cr, ink, _("threshold"), x + 2,
                         f->y + f->height - 2, 0, 1, fs * 0.85, 0);
    }
  /* Model curves, one per temperature. */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      double t = get_block (schedule, b)->temperature_K;
      mp_plot_set_series_ink (cr, ink, b);
      mp_plot_set_series_dash (cr, b, 1.4);
      for (int i = 0; i <= N_CURVE_POINTS; i++)
        {
          double e = f->x_axis.min + (f->x_axis.max - f->x_axis.min) * i / N_CURVE_POINTS;
          double q = model_qe (plan, phi_eff, e, t);
          double y = mp_axis_map (&f->y_axis, MAX (q, 1e-300));
          if (i == 0)
            cairo_move_to (cr, mp_axis_map (&f->x_axis, e), y);
          else
            cairo_line_to (cr, mp_axis_map (&f->x_axis, e), y);
        }
      cairo_stroke (cr);
    }
  cairo_set_dash (cr, NULL, 0, 0);
  /* Steps: QE (filled markers on the curves) and count rate (small open
   * circles joined by a thin line, right axis). */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      gboolean first = TRUE;

      mp_plot_set_series_ink (cr, ink, b);
      cairo_set_line_width (cr, 0.6);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          if (!(s->signal_rate_per_s > 0))
            continue;
          double x = mp_axis_map (&f->x_axis, s->photon_energy_eV);
          double y = mp_axis_map (&f->y2_axis, s->signal_rate_per_s);
          if (first)
            cairo_move_to (cr, x, y);
          else
            cairo_line_to (cr, x, y);
          first = FALSE;
        }
      cairo_stroke (cr);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          double x = mp_axis_map (&f->x_axis, s->photon_energy_eV);
          if (s->signal_rate_per_s > 0)
            {
              double y = mp_axis_map (&f->y2_axis, s->signal_rate_per_s);
              mp_plot_set_series_ink (cr, ink, b);
              mp_plot_draw_marker (cr, MP_MARKER_CIRCLE, x, y, msize * 0.6, FALSE);
            }
          if (s->qe > 0)
            {
              double y = mp_axis_map (&f->y_axis, s->qe);
              draw_step_marker (cr, ink, s, b, x, y, msize);
              if (s->index == selected)
                {
                  sel_x = x;
                  sel_y = y;
                }
            }
        }
    }
  if (isfinite (sel_x))
    draw_selection_ring (cr, ink, sel_x, sel_y, msize + 2);
  cairo_restore (cr);

  mp_plot_frame_draw_axes (cr, f, ink);
  draw_legend (cr, ink, g, schedule, TRUE,
               LEGEND_RATE | LEGEND_TUNING | status_legend (schedule), 2);
}

/* MTE */

static void
draw_mte (cairo_t *cr, const PlotGeom *g, const MpPlotInk *ink,
          const MpPlan *plan, const MpSchedule *schedule, int selected)
{
  const MpPlotFrame *f = &g->frame;
  double fs = ink->font_size;
  double msize = MAX (5, fs * 0.62);
  double sel_x = NAN, sel_y = NAN;

  mp_plot_frame_draw_grid (cr, f, ink);
  cairo_save (cr);
  mp_plot_frame_clip (cr, f);

  /* kT lines: the thermal limit per temperature. Labels are spread so
   * that close temperatures do not print over each other. */
  double label_y[64];
  int n_labels = 0;
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      double t = get_block (schedule, b)->temperature_K;
      double kt = mp_thermal_energy_eV (t) * 1000;
      double y = mp_axis_map (&f->y_axis, kt);
      double dash[] = { 1.5, 2.5 };
      g_autofree char *ts = mp_plot_format_temperature (t);
      g_autofree char *label = g_strdup_printf (_("kT at %s = %.1f meV"), ts, kt);

      if (!mp_axis_contains (&f->y_axis, kt))
        continue;
      mp_plot_set_series_ink (cr, ink, b);
      cairo_set_line_width (cr, 0.8);
      cairo_set_dash (cr, dash, 2, 0);
      cairo_move_to (cr, f->x, y);
      cairo_line_to (cr, f->x + f->width, y);
      cairo_stroke (cr);
      cairo_set_dash (cr, NULL, 0, 0);
      {
        double ly = y - 1, step = fs * 0.95;
        gboolean moved = TRUE;
        while (moved)
          {
            moved = FALSE;
            for (int k = 0; k < n_labels; k++)
              if (fabs (label_y[k] - ly) < step)
                {
                  ly = label_y[k] - step;
                  moved = TRUE;
                }
          }
        if (n_labels < (int) G_N_ELEMENTS (label_y))
          label_y[n_labels++] = ly;
        mp_plot_show_text (cr, ink, label, f->x + f->width - 3, ly, 1, 1,
                           fs * 0.85, 0);
      }
    }
  /* Model curves. */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      double t = get_block (schedule, b)->temperature_K;
      mp_plot_set_series_ink (cr, ink, b);
      mp_plot_set_series_dash (cr, b, 1.3);
      for (int i = 0; i <= N_CURVE_POINTS; i++)
        {
          double x = f->x_axis.min + (f->x_axis.max - f->x_axis.min) * i / N_CURVE_POINTS;
          double y = mp_axis_map (&f->y_axis, model_mte_meV (plan, x, t));
          if (i == 0)
            cairo_move_to (cr, mp_axis_map (&f->x_axis, x), y);
          else
            cairo_line_to (cr, mp_axis_map (&f->x_axis, x), y);
        }
      cairo_stroke (cr);
    }
  cairo_set_dash (cr, NULL, 0, 0);
  /* Steps with their target bars (+- target sigma). */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          double x, y, y1, y2, cap = msize * 0.5;

          if (s->kind != MP_STEP_KIND_MTE)
            continue;
          x = mp_axis_map (&f->x_axis, s->excess_energy_eV);
          y = mp_axis_map (&f->y_axis, s->mte_meV);
          y1 = mp_axis_map (&f->y_axis, MAX (s->mte_meV - s->target_sigma_meV, 1e-6));
          y2 = mp_axis_map (&f->y_axis, s->mte_meV + s->target_sigma_meV);
          mp_plot_set_series_ink (cr, ink, b);
          cairo_set_line_width (cr, 0.9);
          cairo_move_to (cr, x, y1);
          cairo_line_to (cr, x, y2);
          cairo_move_to (cr, x - cap, y1);
          cairo_line_to (cr, x + cap, y1);
          cairo_move_to (cr, x - cap, y2);
          cairo_line_to (cr, x + cap, y2);
          cairo_stroke (cr);
          draw_step_marker (cr, ink, s, b, x, y, msize);
          if (s->index == selected)
            {
              sel_x = x;
              sel_y = y;
            }
        }
    }
  if (isfinite (sel_x))
    draw_selection_ring (cr, ink, sel_x, sel_y, msize + 2);
  cairo_restore (cr);
  mp_plot_frame_draw_axes (cr, f, ink);
  draw_legend (cr, ink, g, schedule, TRUE, LEGEND_BARS | status_legend (schedule), 0);
}

/* Timeline */

static void
draw_cryogen_line (cairo_t *cr, const MpPlotFrame *f, const MpSchedule *schedule)
{
  gboolean first = TRUE;

  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      double x = mp_axis_map (&f->x_axis, block->start_h);
      double y = mp_axis_map (&f->y_axis, block->cryogen_start_L);

      if (first)
        cairo_move_to (cr, x, y);
      else
        cairo_line_to (cr, x, y);
      first = FALSE;
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          if (!isfinite (s->cryogen_left_L))
            continue;
          cairo_line_to (cr, mp_axis_map (&f->x_axis, s->end_h),
                         mp_axis_map (&f->y_axis, s->cryogen_left_L));
        }
      cairo_line_to (cr, mp_axis_map (&f->x_axis, block->end_h),
                     mp_axis_map (&f->y_axis, block->cryogen_end_L));
    }
}

static void
draw_timeline_blocks (cairo_t *cr, const PlotGeom *g, const MpPlotInk *ink,
                      const MpSchedule *schedule, int selected)
{
  const MpPlotFrame *f = &g->frame;
  double fs = ink->font_size;
  double label_y = g->strip_y - g->label_h;
  double label_end = -INFINITY, tw;

  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      double x1 = mp_axis_map (&f->x_axis, block->start_h);
      double x2 = mp_axis_map (&f->x_axis, block->end_h);
      double xs = mp_axis_map (&f->x_axis, block->start_h + block->settle_h);

      /* Block band over the frame, alternating shades. */
      mp_plot_set_ink (cr, ink, b % 2 ? 0.10 : 0.05);
      cairo_rectangle (cr, x1, f->y, x2 - x1, f->height);
      cairo_fill (cr);
      /* Block separators. */
      mp_plot_set_ink (cr, ink, 0.55);
      cairo_set_line_width (cr, 0.7);
      cairo_move_to (cr, floor (x1) + 0.5, label_y);
      cairo_line_to (cr, floor (x1) + 0.5, f->y + f->height);
      cairo_stroke (cr);
      /* Settle time: hatched in the strip. */
      cairo_save (cr);
      cairo_rectangle (cr, x1, g->strip_y, xs - x1, g->strip_h);
      cairo_clip_preserve (cr);
      mp_plot_set_ink (cr, ink, 0.6);
      cairo_set_line_width (cr, 0.5);
      cairo_stroke (cr);
      for (double hx = x1 - g->strip_h; hx < xs; hx += 3)
        {
          cairo_move_to (cr, hx, g->strip_y + g->strip_h);
          cairo_line_to (cr, hx + g->strip_h, g->strip_y);
        }
      cairo_stroke (cr);
      cairo_restore (cr);
    }

  /* Block labels: centred on their block, pushed right where a short
   * block's label would run into the one before; a tick then points at
   * the block. */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      double x1 = mp_axis_map (&f->x_axis, block->start_h);
      double x2 = mp_axis_map (&f->x_axis, block->end_h);
      double xc = (x1 + x2) / 2, lx;
      g_autofree char *t = mp_plot_format_temperature (block->temperature_K);

      mp_plot_text_size (cr, t, fs, &tw, NULL);
      lx = MAX (xc - tw / 2, label_end + 5);
      lx = MAX (lx, f->x - 2);
      mp_plot_show_text (cr, ink, t, lx, label_y + g->label_h / 2 - 1, 0, 0.5,
                         fs, 0);
      if (xc < lx || xc > lx + tw)
        {
          mp_plot_set_ink (cr, ink, 1);
          cairo_set_line_width (cr, 0.7);
          cairo_move_to (cr, lx + 2, label_y + g->label_h - 1);
          cairo_line_to (cr, xc, g->strip_y);
          cairo_stroke (cr);
        }
      label_end = lx + tw;
    }

  /* Steps in the strip: filled = ok, hatched-light = short, outlined with
   * a cross = unreachable. */
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          double x1 = mp_axis_map (&f->x_axis, s->start_h);
          double x2 = mp_axis_map (&f->x_axis, s->end_h);
          double w = MAX (x2 - x1 - 0.6, 0.6);
          double level = s->status == MP_STEP_OK ? 0.75 : 0.35;

          if (s->done)
            level = 0.2;
          mp_plot_set_ink (cr, ink, level);
          cairo_rectangle (cr, x1, g->strip_y + 1, w, g->strip_h - 2);
          cairo_fill (cr);
          if (s->status == MP_STEP_UNREACHABLE)
            {
              mp_plot_set_ink (cr, ink, 1);
              cairo_set_line_width (cr, 0.8);
              cairo_move_to (cr, x1, g->strip_y + 1);
              cairo_line_to (cr, x1 + w, g->strip_y + g->strip_h - 1);
              cairo_stroke (cr);
            }
        }
    }
  mp_plot_set_ink (cr, ink, 0.8);
  cairo_set_line_width (cr, 0.6);
  cairo_rectangle (cr, f->x, g->strip_y, f->width, g->strip_h);
  cairo_stroke (cr);
  mp_plot_show_text (cr, ink, _("steps"), f->x - 3, g->strip_y + g->strip_h / 2,
                     1, 0.5, fs * 0.85, 0);

  /* Selected step: heavy outline in the strip and a line down the frame. */
  for (int b = 0; b < n_blocks (schedule) && selected > 0; b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          double x1, x2;
          if (s->index != selected)
            continue;
          x1 = mp_axis_map (&f->x_axis, s->start_h);
          x2 = mp_axis_map (&f->x_axis, s->end_h);
          mp_plot_set_ink (cr, ink, 1);
          cairo_set_line_width (cr, 2);
          cairo_rectangle (cr, x1 - 1.5, g->strip_y - 1.5,
                           MAX (x2 - x1, 1) + 3, g->strip_h + 3);
          cairo_stroke (cr);
          cairo_set_line_width (cr, 1);
          cairo_move_to (cr, (x1 + x2) / 2, g->strip_y + g->strip_h);
          cairo_line_to (cr, (x1 + x2) / 2, f->y + f->height);
          cairo_stroke (cr);
        }
    }
}

static void
draw_timeline (cairo_t *cr, const PlotGeom *g, const MpPlotInk *ink,
               const MpPlan *plan, const MpSchedule *schedule, int selected)
{
  const MpPlotFrame *f = &g->frame;
  double fs = ink->font_size;
  double dash[] = { 5, 3 };
  g_autofree char *reserve = NULL;
  g_autofree char *budget = NULL;

  draw_timeline_blocks (cr, g, ink, schedule, selected);
  mp_plot_frame_draw_grid (cr, f, ink);

  cairo_save (cr);
  mp_plot_frame_clip (cr, f);
  /* Reserve: below this line the plan must not go. */
  if (plan->cryostat.reserve_L > 0)
    {
      double y = mp_axis_map (&f->y_axis, plan->cryostat.reserve_L);
      mp_plot_set_ink_alpha (cr, ink, 0.5, 0.35);
      cairo_rectangle (cr, f->x, y, f->width, f->y + f->height - y);
      cairo_fill (cr);
      mp_plot_set_ink (cr, ink, 1);
      cairo_set_line_width (cr, 1.4);
      cairo_set_dash (cr, dash, 2, 0);
      cairo_move_to (cr, f->x, y);
      cairo_line_to (cr, f->x + f->width, y);
      cairo_stroke (cr);
      cairo_set_dash (cr, NULL, 0, 0);
      reserve = g_strdup_printf (_("reserve %.1f L: do not use"),
                                 plan->cryostat.reserve_L);
      mp_plot_show_text (cr, ink, reserve, f->x + 3, y + 1, 0, 0, fs * 0.85, 0);
    }
  /* Beam time available. */
  if (schedule != NULL && schedule->beam_time_available_h > 0)
    {
      double x = mp_axis_map (&f->x_axis, schedule->beam_time_available_h);
      g_autofree char *t = g_strdup_printf (_("beam time ends (%.1f h)"),
                                            schedule->beam_time_available_h);
      mp_plot_set_ink (cr, ink, 1);
      cairo_set_line_width (cr, 1.6);
      cairo_move_to (cr, x, f->y);
      cairo_line_to (cr, x, f->y + f->height);
      cairo_stroke (cr);
      mp_plot_show_text (cr, ink, t, x - 3, f->y + fs * 2.4, 1, 0, fs * 0.85, 0);
    }
  /* Cryogen level. */
  mp_plot_set_ink_alpha (cr, ink, 0, 0.85);
  cairo_set_line_width (cr, 4.5);
  draw_cryogen_line (cr, f, schedule);
  cairo_stroke (cr);
  mp_plot_set_series_ink (cr, ink, 0);
  cairo_set_line_width (cr, 2.2);
  draw_cryogen_line (cr, f, schedule);
  cairo_stroke (cr);
  cairo_restore (cr);

  mp_plot_frame_draw_axes (cr, f, ink);
  budget = g_strdup_printf (_("budget %.1f L"), plan->cryostat.budget_L);
  {
    double y = mp_axis_map (&f->y_axis, plan->cryostat.budget_L);
    double dash2[] = { 1, 2 };
    cairo_save (cr);
    mp_plot_set_ink (cr, ink, 0.7);
    cairo_set_line_width (cr, 0.8);
    cairo_set_dash (cr, dash2, 2, 0);
    cairo_move_to (cr, f->x, y);
    cairo_line_to (cr, f->x + f->width, y);
    cairo_stroke (cr);
    cairo_restore (cr);
    mp_plot_show_text (cr, ink, budget, f->x + f->width * 0.55, y + 1.5, 0.5, 0,
                       fs * 0.85, 0);
  }
}

void
mp_plot_draw_full (cairo_t *cr,
                   MpPlotKind kind,
                   const MpPlan *plan,
                   const MpSchedule *schedule,
                   const MpPlotStyle *style,
                   double width,
                   double height)
{
  MpPlotInk ink;
  PlotGeom g;
  int selected = style ? style->selected_step : 0;

  ink_from_style (&ink, style);
  cairo_save (cr);
  cairo_set_line_cap (cr, CAIRO_LINE_CAP_BUTT);
  cairo_set_line_join (cr, CAIRO_LINE_JOIN_ROUND);
  geom_compute (&g, cr, &ink, kind, plan, schedule, width, height);
  switch (kind)
    {
    case MP_PLOT_QE_RATE:
      draw_qe (cr, &g, &ink, plan, schedule, selected);
      break;
    case MP_PLOT_MTE:
      draw_mte (cr, &g, &ink, plan, schedule, selected);
      break;
    case MP_PLOT_TIMELINE:
    default:
      draw_timeline (cr, &g, &ink, plan, schedule, selected);
      break;
    }
  cairo_restore (cr);
}

void
mp_plot_draw (cairo_t *cr,
              MpPlotKind kind,
              const MpPlan *plan,
              const MpSchedule *schedule,
              const MpPlotStyle *style,
              double width,
              double height)
{
  g_return_if_fail (cr != NULL);
  g_return_if_fail (plan != NULL);

  if (width < 20 || height < 20)
    return;
  mp_plot_draw_full (cr, kind, plan, schedule, style, width, height);
}

/* Hit testing */

static gboolean
hit_point (double px, double py, double x, double y, double *best_d2)
{
  double d2 = (px - x) * (px - x) + (py - y) * (py - y);

  if (d2 <= HIT_RADIUS * HIT_RADIUS * 2.25 && d2 < *best_d2)
    {
      *best_d2 = d2;
      return TRUE;
    }
  return FALSE;
}

static int
hit_steps (const PlotGeom *g, MpPlotKind kind, const MpSchedule *schedule,
           double x, double y)
{
  const MpPlotFrame *f = &g->frame;
  double best = INFINITY;
  int found = 0;

  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);

          if (kind == MP_PLOT_MTE && s->kind == MP_STEP_KIND_MTE)
            {
              if (hit_point (x, y, mp_axis_map (&f->x_axis, s->excess_energy_eV),
                             mp_axis_map (&f->y_axis, s->mte_meV), &best))
                found = s->index;
            }
          else if (kind == MP_PLOT_QE_RATE)
            {
              double sx = mp_axis_map (&f->x_axis, s->photon_energy_eV);
              if (s->qe > 0
                  && hit_point (x, y, sx, mp_axis_map (&f->y_axis, s->qe), &best))
                found = s->index;
              if (s->signal_rate_per_s > 0
                  && hit_point (x, y, sx, mp_axis_map (&f->y2_axis,
                                                       s->signal_rate_per_s),
                                &best))
                found = s->index;
            }
          else if (kind == MP_PLOT_TIMELINE)
            {
              double x1 = mp_axis_map (&f->x_axis, s->start_h);
              double x2 = mp_axis_map (&f->x_axis, s->end_h);
              double d;

              if (y < g->strip_y - 2 || y > f->y + f->height)
                continue;
              d = x < x1 ? x1 - x : (x > x2 ? x - x2 : 0);
              if (d <= HIT_RADIUS * 0.5 && d < best)
                {
                  best = d;
                  found = s->index;
                }
            }
        }
    }
  return found;
}

int
mp_plot_hit_test_full (MpPlotKind kind,
                       const MpPlan *plan,
                       const MpSchedule *schedule,
                       const MpPlotStyle *style,
                       double width,
                       double height,
                       double x,
                       double y)
{
  cairo_surface_t *surface;
  cairo_t *cr;
  MpPlotInk ink;
  PlotGeom g;
  int found;

  g_return_val_if_fail (plan != NULL, 0);
  if (schedule == NULL || width < 20 || height < 20)
    return 0;

  surface = cairo_image_surface_create (CAIRO_FORMAT_ARGB32, 1, 1);
  cr = cairo_create (surface);
  ink_from_style (&ink, style);
  geom_compute (&g, cr, &ink, kind, plan, schedule, width, height);
  found = hit_steps (&g, kind, schedule, x, y);
  cairo_destroy (cr);
  cairo_surface_destroy (surface);
  return found;
}

int
mp_plot_hit_test (MpPlotKind kind,
                  const MpPlan *plan,
                  const MpSchedule *schedule,
                  double width,
                  double height,
                  double x,
                  double y)
{
  return mp_plot_hit_test_full (kind, plan, schedule, NULL, width, height, x, y);
}

/* Hover text */

static const MpStep *
find_step (const MpSchedule *schedule, int index, const MpBlock **block_out)
{
  for (int b = 0; b < n_blocks (schedule); b++)
    {
      MpBlock *block = get_block (schedule, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *s = &g_array_index (block->steps, MpStep, i);
          if (s->index == index)
            {
              if (block_out)
                *block_out = block;
              return s;
            }
        }
    }
  return NULL;
}

char *
mp_plot_step_tooltip (const MpSchedule *schedule, int step_index)
{
  const MpStep *s;
  g_autofree char *t = NULL;
  const char *status;

  g_return_val_if_fail (schedule != NULL, NULL);

  s = find_step (schedule, step_index, NULL);
  if (s == NULL)
    return NULL;
  t = mp_plot_format_temperature (s->temperature_K);
  status = s->done ? _("already measured")
           : s->status == MP_STEP_SHORT ? _("short: dwell capped")
           : s->status == MP_STEP_UNREACHABLE ? _("unreachable")
           : _("ok");
  return g_strdup_printf (_("Step %d%s, %s\n"
                            "%.4g nm, photon %.4f eV, excess %+.4f eV\n"
                            "QE %.3g, rate %.4g /s, attenuator OD %.2f\n"
                            "MTE %.2f meV, goal \xcf\x83 %.3f meV, reaches %.3f meV\n"
                            "dwell %.0f s, starts at %.2f h\n"
                            "status: %s"),
                          s->index, s->kind == MP_STEP_KIND_QE_SWEEP ? _(" (QE sweep)") : "",
                          t, s->wavelength_nm, s->photon_energy_eV, s->excess_energy_eV,
                          s->qe, s->signal_rate_per_s, s->optical_density, s->mte_meV,
                          s->target_sigma_meV, s->reached_sigma_meV, s->dwell_s, s->start_h,
                          status);
}
