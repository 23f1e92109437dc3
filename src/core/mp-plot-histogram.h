/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-histogram.h: histograms of Monte Carlo results (the rehearsal's
 * total beam time and cryogen) drawn with the shared axes of
 * mp-plot-axes.h. No GTK: the window and any exporter draw the same. */
#pragma once

#include <cairo.h>
#include <glib.h>

#include "mp-plot-axes.h"

G_BEGIN_DECLS

typedef struct
{
  double min;            /* left edge of the first bin */
  double width;          /* bin width */
  int n_bins;
  guint *counts;         /* n_bins */
  guint total;
} MpHistogram;

/* Bins values into about n_bins bins on a nice range (n_bins <= 0: the
 * square root of the count, 8 to 60). Non-finite values are skipped. */
MpHistogram *mp_histogram_new (const double *values, guint n, int n_bins);
void mp_histogram_free (MpHistogram *histogram);

typedef struct
{
  const char *x_label;   /* markup with unit, e.g. "total beam time (h)" */
  const char *title;     /* markup or NULL */
  double planned;        /* dashed marker, NAN for none */
  double budget;         /* solid marker with a "budget" label, NAN for none */
} MpHistogramLabels;

/* Draws the bars (share of trials per bin) into (0, 0, width, height). */
void mp_plot_histogram (cairo_t *cr,
                        const MpPlotInk *ink,
                        const MpHistogram *histogram,
                        const MpHistogramLabels *labels,
                        double width,
                        double height);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpHistogram, mp_histogram_free)

G_END_DECLS
