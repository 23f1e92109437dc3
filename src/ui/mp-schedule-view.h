/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-schedule-view.h: the schedule as a sortable table of steps. */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"

G_BEGIN_DECLS

#define MP_TYPE_SCHEDULE_VIEW (mp_schedule_view_get_type ())
G_DECLARE_FINAL_TYPE (MpScheduleView, mp_schedule_view, MP, SCHEDULE_VIEW, GtkWidget)

GtkWidget *mp_schedule_view_new (void);
void mp_schedule_view_set_document (MpScheduleView *self, MpDocument *document);
/* Selects (and scrolls to) the step with this schedule-wide index; 0 clears. */
void mp_schedule_view_set_selected_step (MpScheduleView *self, int index);
int mp_schedule_view_get_selected_step (MpScheduleView *self);
/* The rows as shown (sorted), MpStepItem. */
GListModel *mp_schedule_view_get_model (MpScheduleView *self);

G_END_DECLS
