/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-fit-plot.c: the Fowler plot of a fit (see mp-fit-plot.h). */
#include "config.h"

#include "mp-fit-plot.h"
#include "mp-physics.h"

#include <glib/gi18n.h>
#include <math.h>

#define N_CURVE_POINTS 240

void
mp_fit_plot_fowler_point (const MpFitResult *fit, const MpFitResidual *r,
                          double *x, double *reduced_yield)
{
  double kT = mp_thermal_energy_eV (r->model_temperature_K);

  *x = r->excess_energy_eV / kT;
  *reduced_yield = r->measured / (fit->qe_scale * kT * kT);
}

static int
block_of (const MpFitResult *fit, const MpFitResidual *r)
{
  int best = 0;
  double best_diff = INFINITY;

  for (guint b = 0; b < fit->blocks->len; b++)
    {
      double d = fabs (g_array_index (fit->blocks, MpFitBlock, b).temperature_K - r->temperature_K);

      if (d < best_diff)
        {
          best_diff = d;
          best = b;
        }
    }
  return best;
}

static void
data_ranges (const MpFitResult *fit, double *x_lo, double *x_hi,
             double *y_lo, double *y_hi, double *r_max)
{
  *x_lo = *y_lo = INFINITY;
  *x_hi = *y_hi = -INFINITY;
  *r_max = 1.0;
  for (guint i = 0; i < fit->residuals->len; i++)
    {
      const MpFitResidual *r = &g_array_index (fit->residuals, MpFitResidual, i);
      double x, y;

      mp_fit_plot_fowler_point (fit, r, &x, &y);
      if (!isfinite (x))
        continue;
      *x_lo = MIN (*x_lo, x);
      *x_hi = MAX (*x_hi, x);
      if (isfinite (r->normalised_residual))
        *r_max = MAX (*r_max, fabs (r->normalised_residual));
      if (r->kind != MP_FIT_RESIDUAL_QE || !(y > 0.0))
        continue;
      *y_lo = MIN (*y_lo, y);
      *y_hi = MAX (*y_hi, y);
    }
  if (!isfinite (*x_lo))
    {
      *x_lo = -5.0;
      *x_hi = 5.0;
    }
  if (!isfinite (*y_lo))
    {
      *y_lo = 1e-3;
      *y_hi = 10.0;
    }
  /* Keep the curve visible over the whole x range. */
  *y_lo = MIN (*y_lo, mp_fermi_dirac (1, *x_lo));
  *y_hi = MAX (*y_hi, mp_fermi_dirac (1, *x_hi));
}

static void
draw_curve (cairo_t *cr, const MpPlotFrame *f, const MpPlotInk *ink)
{
  mp_plot_set_ink (cr, ink, 0.85);
  cairo_set_line_width (cr, 1.4);
  for (int i = 0; i <= N_CURVE_POINTS; i++)
    {
      double x = f->x_axis.min + (f->x_axis.max - f->x_axis.min) * i / N_CURVE_POINTS;
      double px = mp_axis_map (&f->x_axis, x);
      double py = mp_axis_map (&f->y_axis, mp_fermi_dirac (1, x));

      if (i == 0)
        cairo_move_to (cr, px, py);
      else
        cairo_line_to (cr, px, py);
    }
  cairo_stroke (cr);
}

/* With a laser line of finite width the model leaves F_1 where the line
 * is wider than kT: one dashed curve per block, <Y>/(kT)^2. */
static void
draw_block_curves (cairo_t *cr, const MpFitResult *fit, const MpPlotFrame *f,
                   const MpPlotInk *ink)
{
  if (!(fit->bandwidth_meV > 0.0))
    return;
  for (guint b = 0; b < fit->blocks->len; b++)
    {
      double t = NAN, kT;

      for (guint i = 0; i < fit->residuals->len && isnan (t); i++)
        {
          const MpFitResidual *r = &g_array_index (fit->residuals, MpFitResidual, i);

          if (r->kind == MP_FIT_RESIDUAL_QE && block_of (fit, r) == (int) b)
            t = r->model_temperature_K;
        }
      if (isnan (t))
        continue;
      kT = mp_thermal_energy_eV (t);
      mp_plot_set_series_ink (cr, ink, b);
      mp_plot_set_series_dash (cr, b + 1, 1.0);
      for (int i = 0; i <= N_CURVE_POINTS; i++)
        {
          double x = f->x_axis.min + (f->x_axis.max - f->x_axis.min) * i / N_CURVE_POINTS;
          MpEmission em;
          double px = mp_axis_map (&f->x_axis, x);
          double py;

          mp_emission_averaged (x * kT, t, 1e-3 * fit->bandwidth_meV, &em);
          py = mp_axis_map (&f->y_axis, exp (em.log_yield) / (kT * kT));
          if (i == 0)
            cairo_move_to (cr, px, py);
          else
            cairo_line_to (cr, px, py);
        }
      cairo_stroke (cr);
      cairo_set_dash (cr, NULL, 0, 0);
    }
}

static void
draw_points (cairo_t *cr, const MpFitResult *fit, const MpPlotFrame *f,
             const MpPlotInk *ink, gboolean residuals)
{
  double msize = MAX (5.0, ink->font_size * 0.62);

  for (guint i = 0; i < fit->residuals->len; i++)
    {
      const MpFitResidual *r = &g_array_index (fit->residuals, MpFitResidual, i);
      int b = block_of (fit, r);
      double x, y;

      mp_fit_plot_fowler_point (fit, r, &x, &y);
      if (residuals)
        y = r->normalised_residual;
      else if (r->kind != MP_FIT_RESIDUAL_QE)
        continue;
      if (!isfinite (x) || !isfinite (y) || (!residuals && !(y > 0.0)))
        continue;
      mp_plot_set_series_ink (cr, ink, b);
      cairo_set_line_width (cr, 1.0);
      /* QE filled, MTE open. */
      mp_plot_draw_marker (cr, mp_plot_series_marker (b), mp_axis_map (&f->x_axis, x),
                           mp_axis_map (&f->y_axis, y), msize,
                           r->kind == MP_FIT_RESIDUAL_QE);
    }
}

static void
draw_legend (cairo_t *cr, const MpFitResult *fit, const MpPlotFrame *f,
             const MpPlotInk *ink)
{
  double fs = ink->font_size * 0.9;
  double y = f->y + fs * 0.9;
  double x = f->x + fs * 0.8;

  for (guint b = 0; b < fit->blocks->len; b++)
    {
      g_autofree char *label = g_strdup_printf (_("%g K"),
                                                g_array_index (fit->blocks, MpFitBlock, b).temperature_K);

      mp_plot_set_series_ink (cr, ink, b);
      mp_plot_draw_marker (cr, mp_plot_series_marker (b), x, y, fs * 0.7, TRUE);
      mp_plot_show_text (cr, ink, label, x + fs * 0.8, y, 0, 0.5, fs, 0);
      y += fs * 1.4;
    }
}

static void
draw_fowler (cairo_t *cr, const MpFitResult *fit, const MpPlotInk *ink,
             double width, double height)
{
  MpPlotFrame f = { 0 };
  double x_lo, x_hi, y_lo, y_hi, r_max;

  data_ranges (fit, &x_lo, &x_hi, &y_lo, &y_hi, &r_max);
  mp_axis_init (&f.x_axis, x_lo - 0.5, x_hi + 0.5, FALSE);
  mp_axis_nice (&f.x_axis, 8);
  mp_axis_init (&f.y_axis, y_lo / 2.0, y_hi * 2.0, TRUE);
  mp_axis_nice (&f.y_axis, 8);
  f.x_ticks = 8;
  f.y_ticks = 6;
  f.y_label = _("Y/(kT)² = QE/(A (kT)²)");
  f.title = _("Fowler plot: measured QE on F<sub>1</sub>(x)");
  mp_plot_frame_layout (&f, cr, ink, width, height);
  mp_plot_frame_draw_grid (cr, &f, ink);
  cairo_save (cr);
  mp_plot_frame_clip (cr, &f);
  draw_curve (cr, &f, ink);
  draw_block_curves (cr, fit, &f, ink);
  draw_points (cr, fit, &f, ink, FALSE);
  cairo_restore (cr);
  mp_plot_frame_draw_axes (cr, &f, ink);
  draw_legend (cr, fit, &f, ink);
}

static void
draw_residuals (cairo_t *cr, const MpFitResult *fit, const MpPlotInk *ink,
                double width, double height)
{
  MpPlotFrame f = { 0 };
  double x_lo, x_hi, y_lo, y_hi, r_max;

  data_ranges (fit, &x_lo, &x_hi, &y_lo, &y_hi, &r_max);
  mp_axis_init (&f.x_axis, x_lo - 0.5, x_hi + 0.5, FALSE);
  mp_axis_nice (&f.x_axis, 8);
  mp_axis_init (&f.y_axis, -1.1 * r_max, 1.1 * r_max, FALSE);
  mp_axis_nice (&f.y_axis, 5);
  f.x_ticks = 8;
  f.y_ticks = 4;
  f.x_label = _("x = (E − φ<sub>eff</sub>)/kT");
  f.y_label = _("residual/σ");
  mp_plot_frame_layout (&f, cr, ink, width, height);
  mp_plot_frame_draw_grid (cr, &f, ink);
  cairo_save (cr);
  mp_plot_frame_clip (cr, &f);
  mp_plot_set_ink (cr, ink, 0.7);
  cairo_set_line_width (cr, 1.0);
  cairo_move_to (cr, f.x, mp_axis_map (&f.y_axis, 0.0));
  cairo_line_to (cr, f.x + f.width, mp_axis_map (&f.y_axis, 0.0));
  cairo_stroke (cr);
  draw_points (cr, fit, &f, ink, TRUE);
  cairo_restore (cr);
  mp_plot_frame_draw_axes (cr, &f, ink);
}

void
mp_fit_plot_draw (cairo_t *cr, const MpFitResult *fit, const MpPlotInk *ink,
                  double width, double height)
{
  double top = floor (height * 0.64);

  g_return_if_fail (cr != NULL && fit != NULL && ink != NULL);

  cairo_save (cr);
  draw_fowler (cr, fit, ink, width, top);
  cairo_translate (cr, 0, top);
  draw_residuals (cr, fit, ink, width, height - top);
  cairo_restore (cr);
}
