/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-step-item.h: one schedule step as a list item for the table. */
#pragma once

#include <glib-object.h>

#include "mp-schedule.h"

G_BEGIN_DECLS

#define MP_TYPE_STEP_ITEM (mp_step_item_get_type ())
G_DECLARE_FINAL_TYPE (MpStepItem, mp_step_item, MP, STEP_ITEM, GObject)

MpStepItem *mp_step_item_new (const MpStep *step);
const MpStep *mp_step_item_get_step (MpStepItem *self);
int mp_step_item_get_index (MpStepItem *self);

G_END_DECLS

G_BEGIN_DECLS
/* Finds a step by its schedule-wide index, or NULL. */
const MpStep *mp_schedule_find_step_by_index (const MpSchedule *schedule, int index);
/* A few lines describing the step, for tooltips. */
char *mp_step_describe (const MpStep *step);
G_END_DECLS
