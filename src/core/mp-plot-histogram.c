/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-histogram.c: binning and drawing of histograms. */
#include "config.h"

#include "mp-plot-histogram.h"

#include <glib/gi18n.h>
#include <math.h>

MpHistogram *
mp_histogram_new (const double *values, guint n, int n_bins)
{
  MpHistogram *h = g_new0 (MpHistogram, 1);
  double lo = INFINITY, hi = -INFINITY;
  guint finite = 0;
  MpAxis axis;
  GArray *ticks;
  double step;

  g_return_val_if_fail (values != NULL || n == 0, h);

  for (guint i = 0; i < n; i++)
    if (isfinite (values[i]))
      {
        lo = MIN (lo, values[i]);
        hi = MAX (hi, values[i]);
        finite++;
      }
  if (finite == 0)
    {
      lo = 0.0;
      hi = 1.0;
    }
  if (n_bins <= 0)
    n_bins = CLAMP ((int) sqrt ((double) finite), 8, 60);
  /* Bin edges on nice values: a nice axis with n_bins "ticks". */
  mp_axis_init (&axis, lo, hi, FALSE);
  mp_axis_nice (&axis, n_bins);
  ticks = mp_axis_major_ticks (&axis, n_bins);
  step = ticks->len >= 2 ? g_array_index (ticks, double, 1) - g_array_index (ticks, double, 0)
                         : (axis.max - axis.min) / n_bins;
  g_array_unref (ticks);
  if (!(step > 0.0))
    step = 1.0;
  h->min = floor (axis.min / step) * step;
  h->width = step;
  h->n_bins = MAX (1, (int) ceil ((axis.max - h->min) / step - 1e-9));
  /* The largest value belongs to the last bin, not past it. */
  while (h->min + h->n_bins * step <= hi)
    h->n_bins++;
  h->counts = g_new0 (guint, h->n_bins);
  for (guint i = 0; i < n; i++)
    {
      int k;

      if (!isfinite (values[i]))
        continue;
      k = (int) floor ((values[i] - h->min) / step);
      h->counts[CLAMP (k, 0, h->n_bins - 1)]++;
      h->total++;
    }
  return h;
}

void
mp_histogram_free (MpHistogram *histogram)
{
  if (histogram == NULL)
    return;
  g_free (histogram->counts);
  g_free (histogram);
}

static void
draw_marker_line (cairo_t *cr, const MpPlotFrame *f, const MpPlotInk *ink,
                  double value, gboolean dashed, const char *label)
{
  double x;

  if (!isfinite (value) || !mp_axis_contains (&f->x_axis, value))
    return;
  x = round (mp_axis_map (&f->x_axis, value)) + 0.5;
  cairo_save (cr);
  mp_plot_set_series_ink (cr, ink, dashed ? 1 : 2);
  cairo_set_line_width (cr, 1.5);
  if (dashed)
    {
      double dash[] = { 4.0, 3.0 };

      cairo_set_dash (cr, dash, 2, 0.0);
    }
  cairo_move_to (cr, x, f->y);
  cairo_line_to (cr, x, f->y + f->height);
  cairo_stroke (cr);
  cairo_restore (cr);
  mp_plot_show_text (cr, ink, label, x + 3, f->y + 2, 0.0, 0.0,
                     ink->font_size * 0.85, 0.0);
}

void
mp_plot_histogram (cairo_t *cr,
                   const MpPlotInk *ink,
                   const MpHistogram *h,
                   const MpHistogramLabels *labels,
                   double width,
                   double height)
{
  MpPlotFrame f = { 0 };
  double top = 0.0, x_lo, x_hi;

  g_return_if_fail (cr != NULL && ink != NULL && h != NULL && labels != NULL);
  if (width < 40 || height < 40)
    return;

  for (int k = 0; k < h->n_bins; k++)
    top = MAX (top, h->total > 0 ? (double) h->counts[k] / h->total : 0.0);
  x_lo = h->min;
  x_hi = h->min + h->n_bins * h->width;
  if (isfinite (labels->budget))
    {
      x_lo = MIN (x_lo, labels->budget);
      x_hi = MAX (x_hi, labels->budget);
    }
  if (isfinite (labels->planned))
    {
      x_lo = MIN (x_lo, labels->planned);
      x_hi = MAX (x_hi, labels->planned);
    }
  mp_axis_init (&f.x_axis, x_lo, x_hi + 0.02 * (x_hi - x_lo), FALSE);
  mp_axis_nice (&f.x_axis, 6);
  mp_axis_init (&f.y_axis, 0.0, top > 0.0 ? top * 1.1 : 1.0, FALSE);
  mp_axis_nice (&f.y_axis, 5);
  f.x_ticks = 6;
  f.y_ticks = 5;
  f.x_label = labels->x_label;
  f.y_label = _("share of trials");
  f.title = labels->title;
  mp_plot_frame_layout (&f, cr, ink, width, height);

  cairo_save (cr);
  mp_plot_frame_draw_grid (cr, &f, ink);
  cairo_save (cr);
  mp_plot_frame_clip (cr, &f);
  for (int k = 0; k < h->n_bins; k++)
    {
      double share = h->total > 0 ? (double) h->counts[k] / h->total : 0.0;
      double x0 = mp_axis_map (&f.x_axis, h->min + k * h->width);
      double x1 = mp_axis_map (&f.x_axis, h->min + (k + 1) * h->width);
      double y0 = mp_axis_map (&f.y_axis, 0.0);
      double y1 = mp_axis_map (&f.y_axis, share);

      if (h->counts[k] == 0)
        continue;
      cairo_rectangle (cr, x0, y1, x1 - x0, y0 - y1);
      mp_plot_set_series_ink (cr, ink, 0);
      cairo_fill_preserve (cr);
      mp_plot_set_ink (cr, ink, 1.0);
      cairo_set_line_width (cr, 0.75);
      cairo_stroke (cr);
    }
  cairo_restore (cr);
  draw_marker_line (cr, &f, ink, labels->planned, TRUE, _("planned"));
  draw_marker_line (cr, &f, ink, labels->budget, FALSE, _("budget"));
  mp_plot_frame_draw_axes (cr, &f, ink);
  cairo_restore (cr);
}
