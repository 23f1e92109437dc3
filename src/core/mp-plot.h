/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot.h: the plan's plots, drawn with cairo. The run sheet and the
 * window draw them with the same code. */
#pragma once

#include <cairo.h>
#include <glib.h>

#include "mp-plan.h"
#include "mp-schedule.h"

G_BEGIN_DECLS

typedef enum
{
  MP_PLOT_QE_RATE,     /* QE and count rate vs photon energy, log scale */
  MP_PLOT_MTE,         /* predicted MTE vs excess energy, target bars, kT lines */
  MP_PLOT_TIMELINE     /* blocks and steps in time, cryogen level, reserve */
} MpPlotKind;

typedef struct
{
  int selected_step;   /* schedule-wide step index (1-based), 0 = none */
  gboolean dark;       /* light ink on a dark background */
  gboolean grey;       /* grey scale, for print */
  double font_size_pt; /* base font size; 0 = default */
} MpPlotStyle;

void mp_plot_style_init (MpPlotStyle *style);

/* Draws the plot into the rectangle (0, 0, width, height) of cr. */
void mp_plot_draw (cairo_t *cr,
                   MpPlotKind kind,
                   const MpPlan *plan,
                   const MpSchedule *schedule,
                   const MpPlotStyle *style,
                   double width,
                   double height);

/* The schedule-wide index of the step drawn nearest to (x, y), within a
 * few points, or 0. */
int mp_plot_hit_test (MpPlotKind kind,
                      const MpPlan *plan,
                      const MpSchedule *schedule,
                      double width,
                      double height,
                      double x,
                      double y);

/* As mp_plot_hit_test, for a plot drawn with a style whose font size is
 * not the default (the layout depends on it); style may be NULL. */
int mp_plot_hit_test_full (MpPlotKind kind,
                           const MpPlan *plan,
                           const MpSchedule *schedule,
                           const MpPlotStyle *style,
                           double width,
                           double height,
                           double x,
                           double y);

/* As mp_plot_draw without the size check. */
void mp_plot_draw_full (cairo_t *cr,
                        MpPlotKind kind,
                        const MpPlan *plan,
                        const MpSchedule *schedule,
                        const MpPlotStyle *style,
                        double width,
                        double height);

/* Plain text with the numbers of one step (schedule-wide index), for a
 * tooltip on hover; NULL when there is no such step. */
char *mp_plot_step_tooltip (const MpSchedule *schedule, int step_index);

/* "295 K", "4.2 K". */
char *mp_plot_format_temperature (double temperature_K);

G_END_DECLS
