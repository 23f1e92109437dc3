/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-document.h: one open plan with its history, its file and its
 * schedule, re-planned off the main thread after every edit.
 *
 * Other parts of the window (and later dialogs such as the refit and the
 * rehearsal) read the plan with mp_document_get_plan() and change it with
 * mp_document_set_plan() / mp_document_commit(), which record undo steps. */
#pragma once

#include <gio/gio.h>

#include "mp-measured.h"
#include "mp-plan.h"
#include "mp-schedule.h"

G_BEGIN_DECLS

#define MP_TYPE_DOCUMENT (mp_document_get_type ())
G_DECLARE_FINAL_TYPE (MpDocument, mp_document, MP, DOCUMENT, GObject)

MpDocument *mp_document_new (void);

const MpPlan *mp_document_get_plan (MpDocument *self);
/* A new copy of the current plan for the caller to edit and commit. */
MpPlan *mp_document_dup_plan (MpDocument *self);
/* Takes ownership of plan; records an undo step. Edits with the same
 * non-NULL merge_key that follow each other are one undo step. */
void mp_document_commit (MpDocument *self, MpPlan *plan, const char *merge_key);
void mp_document_set_plan (MpDocument *self, MpPlan *plan);

/* Replaces the whole document (no undo history, not modified). */
void mp_document_reset (MpDocument *self, MpPlan *plan, const char *path);
/* Leaves the document untouched when loading fails. */
gboolean mp_document_load (MpDocument *self, const char *path, GError **error);
gboolean mp_document_save (MpDocument *self, const char *path, GError **error);

const char *mp_document_get_path (MpDocument *self);
char *mp_document_get_display_name (MpDocument *self);
gboolean mp_document_get_modified (MpDocument *self);
/* A document never edited nor loaded (may be replaced by an opened file). */
gboolean mp_document_is_pristine (MpDocument *self);
void mp_document_mark_modified (MpDocument *self);

gboolean mp_document_can_undo (MpDocument *self);
gboolean mp_document_can_redo (MpDocument *self);
void mp_document_undo (MpDocument *self);
void mp_document_redo (MpDocument *self);

/* The latest schedule for the current plan, or NULL while none has landed
 * or when the plan cannot be scheduled (see get_schedule_error). */
const MpSchedule *mp_document_get_schedule (MpDocument *self);
/* The plan the current schedule was computed from (draw them together). */
const MpPlan *mp_document_get_schedule_plan (MpDocument *self);
const char *mp_document_get_schedule_error (MpDocument *self);
gboolean mp_document_get_busy (MpDocument *self);
/* Number of schedules that have landed so far (for tests). */
guint mp_document_get_schedule_serial (MpDocument *self);
/* Re-plan after delay_ms (0: at the next idle). */
void mp_document_queue_replan (MpDocument *self, guint delay_ms);

/* Re-plan from measured data (issue 6): the measured points mark steps
 * done, the plan continues from elapsed_h of beam time spent and with
 * cryogen_left_L litres in the dewar. This is not a plan edit: the plan,
 * its undo history and its modified state are unchanged; the state stays
 * across plan edits, undo and redo, and is forgotten when another plan is
 * loaded (mp_document_reset). data is copied; elapsed_h NAN means the
 * largest elapsed_h in the data (0 when none has one); cryogen_left_L NAN
 * means the plan's cryogen budget. Refuses (MP_ERROR_INVALID, naming the
 * value and the accepted range) an elapsed time or cryogen level that is
 * negative or not finite, leaving the state as it was. Notifies
 * "has-measured" and re-plans. */
gboolean mp_document_set_measured (MpDocument *self,
                                   const MpMeasuredData *data,
                                   double elapsed_h,
                                   double cryogen_left_L,
                                   GError **error);
void mp_document_clear_measured (MpDocument *self);
gboolean mp_document_get_has_measured (MpDocument *self);
/* The measured data set, or NULL. */
const MpMeasuredData *mp_document_get_measured (MpDocument *self);
/* The re-plan state as set (0 and NAN without measured data). */
double mp_document_get_elapsed_h (MpDocument *self);
double mp_document_get_cryogen_left_L (MpDocument *self);
/* The options the current schedule was computed with, for recomputing it
 * (printing): opts->done points into the document and stays valid until
 * the next "schedule-changed". */
void mp_document_get_schedule_options (MpDocument *self, MpScheduleOptions *opts);

/* Autosave: writes the serialised plan to path (atomically). */
gboolean mp_document_write_copy (MpDocument *self, const char *path, GError **error);

G_END_DECLS
