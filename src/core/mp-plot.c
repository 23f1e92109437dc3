/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot.c: the plan's plots (placeholder while the real plots land). */
#include "config.h"

#include <glib/gi18n.h>

#include "mp-plot.h"

void
mp_plot_style_init (MpPlotStyle *style)
{
  g_return_if_fail (style != NULL);
  style->selected_step = 0;
  style->dark = FALSE;
  style->grey = FALSE;
  style->font_size_pt = 0;
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
  cairo_save (cr);
  cairo_set_source_rgb (cr, 0, 0, 0);
  cairo_set_line_width (cr, 1);
  cairo_rectangle (cr, 0.5, 0.5, width - 1, height - 1);
  cairo_stroke (cr);
  cairo_restore (cr);
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
  return 0;
}
