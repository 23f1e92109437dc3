/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-axes.h: axes, ticks, frames, markers and text for plots drawn
 * with cairo and Pango. Used by mp-plot.c and the run sheet; free for any
 * other plot (histograms, fits).
 *
 * Coordinates: a plot is drawn into the rectangle (0, 0, width, height) of
 * a cairo context in user units; font sizes are in the same units
 * (1 unit = 1 pt on paper). */
#pragma once

#include <cairo.h>
#include <glib.h>
#include <pango/pangocairo.h>

G_BEGIN_DECLS

typedef struct
{
  double min;          /* data value drawn at pos0 */
  double max;          /* data value drawn at pos1 */
  gboolean log;        /* logarithmic (min, max > 0) */
  double pos0;         /* device position of min */
  double pos1;         /* device position of max */
} MpAxis;

/* A range spanning this ratio or more goes on a log axis. */
#define MP_AXIS_LOG_RATIO 30.0

/* Sets the data range; a log axis needs min > 0. An empty range (min ==
 * max) is widened. Non-finite limits give the range 0..1. */
void mp_axis_init (MpAxis *axis, double min, double max, gboolean log);
/* TRUE when positive data from min to max should use a log axis. */
gboolean mp_axis_wants_log (double min, double max);
/* Widens the range outwards to "nice" tick values (1, 2, 5 x 10^n for
 * linear; for log, whole decades, or 1, 2, 5 x 10^n when the range spans
 * at most 2.5 decades), aiming at about max_ticks labels. */
void mp_axis_nice (MpAxis *axis, int max_ticks);
void mp_axis_set_position (MpAxis *axis, double pos0, double pos1);
double mp_axis_map (const MpAxis *axis, double value);
double mp_axis_unmap (const MpAxis *axis, double pos);
gboolean mp_axis_contains (const MpAxis *axis, double value);

/* Tick values inside the range (double), at most about max_ticks majors.
 * Log axes over at most 2.5 decades have majors at 1, 2, 5 x 10^n.
 * Minor ticks: the other k x 10^n on log axes, subdivisions on linear
 * ones. */
GArray *mp_axis_major_ticks (const MpAxis *axis, int max_ticks);
GArray *mp_axis_minor_ticks (const MpAxis *axis, int max_ticks);
/* Pango markup for a tick label. Linear: as many decimals as the tick
 * step needs; log: plain from 0.01 to 5000, else 10<sup>n</sup> or
 * 2×10<sup>n</sup>. */
char *mp_axis_format_tick (const MpAxis *axis, double value, int max_ticks);

/* Ink. */
typedef struct
{
  gboolean dark;       /* light ink on a dark background */
  gboolean grey;       /* grey scale only (print) */
  double font_size;    /* base font size in user units */
} MpPlotInk;

void mp_plot_ink_init (MpPlotInk *ink, gboolean dark, gboolean grey,
                       double font_size);
/* Foreground blended toward the background: level 1 = full ink,
 * 0 = background. */
void mp_plot_set_ink (cairo_t *cr, const MpPlotInk *ink, double level);
void mp_plot_set_ink_alpha (cairo_t *cr, const MpPlotInk *ink, double level,
                            double alpha);

/* Series n (0, 1, ...): colour (or grey level), dash and marker differ so
 * that series stay apart in grey scale. */
typedef enum
{
  MP_MARKER_CIRCLE,
  MP_MARKER_SQUARE,
  MP_MARKER_TRIANGLE,
  MP_MARKER_DIAMOND,
  MP_MARKER_DOWN_TRIANGLE,
  MP_MARKER_N
} MpMarker;

void mp_plot_set_series_ink (cairo_t *cr, const MpPlotInk *ink, int series);
void mp_plot_set_series_dash (cairo_t *cr, int series, double line_width);
MpMarker mp_plot_series_marker (int series);
void mp_plot_draw_marker (cairo_t *cr, MpMarker marker, double x, double y,
                          double size, gboolean filled);

/* Text. The layout's font metrics do not depend on the surface, so a
 * measurement on one surface holds on another. Layouts come from one
 * Pango context per thread: use them on the thread that made them. size
 * is absolute, in user units. */
PangoLayout *mp_plot_create_layout (cairo_t *cr, const char *family,
                                    double size, PangoWeight weight);
/* Draws markup with its box anchored at (x, y): xalign/yalign 0 = left/top,
 * 0.5 = centre, 1 = right/bottom. angle in radians (0 or -G_PI/2). */
void mp_plot_show_text (cairo_t *cr, const MpPlotInk *ink, const char *markup,
                        double x, double y, double xalign, double yalign,
                        double size, double angle);
void mp_plot_text_size (cairo_t *cr, const char *markup, double size,
                        double *width, double *height);

/* A frame: plot area, axes and their labels. */
typedef struct
{
  double x, y, width, height;  /* plot area inside the axes */
  MpAxis x_axis;
  MpAxis y_axis;
  MpAxis y2_axis;
  gboolean has_y2;
  int x_ticks;                 /* aimed-at number of major ticks */
  int y_ticks;
  const char *x_label;         /* markup, with unit, e.g. "excess energy (eV)" */
  const char *y_label;
  const char *y2_label;
  const char *title;           /* markup or NULL */
} MpPlotFrame;

/* Places the plot area in (0, 0, width, height) leaving room for tick
 * labels, axis titles, an optional title and a second y axis. Call after
 * the axes' ranges are set; this sets their positions. */
void mp_plot_frame_layout (MpPlotFrame *frame, cairo_t *cr,
                           const MpPlotInk *ink, double width, double height);
void mp_plot_frame_draw_grid (cairo_t *cr, const MpPlotFrame *frame,
                              const MpPlotInk *ink);
void mp_plot_frame_draw_axes (cairo_t *cr, const MpPlotFrame *frame,
                              const MpPlotInk *ink);
void mp_plot_frame_clip (cairo_t *cr, const MpPlotFrame *frame);

G_END_DECLS
