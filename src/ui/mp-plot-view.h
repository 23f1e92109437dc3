/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-view.h: one of the plan's plots (mp_plot_draw) as a widget. */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"
#include "mp-plot.h"

G_BEGIN_DECLS

#define MP_TYPE_PLOT_VIEW (mp_plot_view_get_type ())
G_DECLARE_FINAL_TYPE (MpPlotView, mp_plot_view, MP, PLOT_VIEW, GtkWidget)

GtkWidget *mp_plot_view_new (MpPlotKind kind);
void mp_plot_view_set_document (MpPlotView *self, MpDocument *document);
MpPlotKind mp_plot_view_get_kind (MpPlotView *self);
void mp_plot_view_set_selected_step (MpPlotView *self, int index);
int mp_plot_view_get_selected_step (MpPlotView *self);

G_END_DECLS
