/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-document.c: an open plan, its undo history and its schedule. */
#include "config.h"

#include <glib/gi18n.h>
#include <math.h>

#include "mp-document.h"
#include "mp-error.h"

#define MAX_UNDO 200

typedef struct
{
  MpPlan *plan;
  guint serial;
} Snapshot;

struct _MpDocument
{
  GObject parent_instance;

  MpPlan *plan;
  guint serial;          /* identifies the current plan state */
  guint next_serial;
  guint saved_serial;
  gboolean forced_modified;
  gboolean pristine;
  char *merge_key;

  GPtrArray *undo;       /* Snapshot*, oldest first */
  GPtrArray *redo;       /* Snapshot*, next redo last */

  MpSchedule *schedule;
  MpPlan *schedule_plan;
  char *schedule_error;
  guint schedule_serial;
  guint replan_source;
  guint replan_generation;
  guint running_generation;
  gboolean running;

  /* Re-plan state (not part of the plan nor of its history). */
  MpMeasuredData *measured;
  double elapsed_h;
  double cryogen_left_L;
  /* The options the landed schedule was computed with. */
  GArray *schedule_done;
  double schedule_elapsed_h;
  double schedule_cryogen_left_L;
};

G_DEFINE_FINAL_TYPE (MpDocument, mp_document, G_TYPE_OBJECT)

enum
{
  PROP_0,
  PROP_MODIFIED,
  PROP_CAN_UNDO,
  PROP_CAN_REDO,
  PROP_BUSY,
  PROP_PATH,
  PROP_HAS_MEASURED,
  N_PROPS
};

static GParamSpec *properties[N_PROPS];

enum
{
  PLAN_CHANGED,
  SCHEDULE_CHANGED,
  N_SIGNALS
};

static guint signals[N_SIGNALS];

/* Everything the re-plan thread reads: copies owned by the task. */
typedef struct
{
  MpPlan *plan;
  GArray *done;          /* MpDonePoint, or NULL */
  double elapsed_h;
  double cryogen_left_L;
} ReplanJob;

typedef struct
{
  MpSchedule *schedule;
  MpPlan *plan;
  char *error;
  GArray *done;          /* the options used, handed back */
  double elapsed_h;
  double cryogen_left_L;
} ReplanResult;

static void
replan_job_free (gpointer data)
{
  ReplanJob *job = data;

  g_clear_pointer (&job->plan, mp_plan_free);
  g_clear_pointer (&job->done, g_array_unref);
  g_free (job);
}

static void
snapshot_free (gpointer data)
{
  Snapshot *snap = data;

  mp_plan_free (snap->plan);
  g_free (snap);
}

static void
replan_result_free (gpointer data)
{
  ReplanResult *result = data;

  g_clear_pointer (&result->schedule, mp_schedule_free);
  g_clear_pointer (&result->plan, mp_plan_free);
  g_clear_pointer (&result->done, g_array_unref);
  g_free (result->error);
  g_free (result);
}

static void
notify_state (MpDocument *self)
{
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_MODIFIED]);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_CAN_UNDO]);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_CAN_REDO]);
}

static void
replan_thread (GTask        *task,
               gpointer      source_object,
               gpointer      task_data,
               GCancellable *cancellable)
{
  const ReplanJob *job = task_data;
  ReplanResult *result = g_new0 (ReplanResult, 1);
  g_autoptr (GError) error = NULL;
  MpScheduleOptions opts;

  mp_schedule_options_init (&opts);
  opts.elapsed_h = job->elapsed_h;
  opts.cryogen_left_L = job->cryogen_left_L;
  opts.done = job->done;
  result->schedule = mp_schedule_compute (job->plan, &opts, &error);
  result->plan = mp_plan_copy (job->plan);
  result->done = job->done != NULL ? g_array_copy (job->done) : NULL;
  result->elapsed_h = job->elapsed_h;
  result->cryogen_left_L = job->cryogen_left_L;
  if (result->schedule == NULL)
    result->error = g_strdup (error != NULL ? error->message
                                            : _("The plan cannot be scheduled"));
  g_task_return_pointer (task, result, replan_result_free);
}

static void
replan_done_cb (GObject      *source,
                GAsyncResult *res,
                gpointer      user_data)
{
  MpDocument *self = MP_DOCUMENT (source);
  guint generation = GPOINTER_TO_UINT (user_data);
  ReplanResult *result = g_task_propagate_pointer (G_TASK (res), NULL);
  gboolean was_busy = mp_document_get_busy (self);

  if (generation == self->running_generation)
    self->running = FALSE;

  if (result == NULL || generation != self->replan_generation)
    {
      /* A newer edit has been made: this schedule is stale. */
      if (result != NULL)
        replan_result_free (result);
      if (was_busy != mp_document_get_busy (self))
        g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_BUSY]);
      return;
    }

  g_clear_pointer (&self->schedule, mp_schedule_free);
  g_clear_pointer (&self->schedule_plan, mp_plan_free);
  g_clear_pointer (&self->schedule_error, g_free);
  self->schedule = g_steal_pointer (&result->schedule);
  self->schedule_plan = g_steal_pointer (&result->plan);
  self->schedule_error = g_steal_pointer (&result->error);
  g_clear_pointer (&self->schedule_done, g_array_unref);
  self->schedule_done = g_steal_pointer (&result->done);
  self->schedule_elapsed_h = result->elapsed_h;
  self->schedule_cryogen_left_L = result->cryogen_left_L;
  replan_result_free (result);
  self->schedule_serial++;

  g_signal_emit (self, signals[SCHEDULE_CHANGED], 0);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_BUSY]);
}

static gboolean
replan_timeout_cb (gpointer user_data)
{
  MpDocument *self = MP_DOCUMENT (user_data);
  g_autoptr (GTask) task = NULL;
  ReplanJob *job;
  guint generation;

  self->replan_source = 0;
  generation = ++self->replan_generation;
  self->running_generation = generation;
  self->running = TRUE;

  task = g_task_new (self, NULL, replan_done_cb, GUINT_TO_POINTER (generation));
  g_task_set_source_tag (task, replan_timeout_cb);
  job = g_new0 (ReplanJob, 1);
  job->plan = mp_plan_copy (self->plan);
  /* Matched against this plan's blocks, which a refit may have moved. */
  if (self->measured != NULL)
    job->done = mp_measured_to_done_points (self->measured, self->plan);
  job->elapsed_h = self->elapsed_h;
  job->cryogen_left_L = self->cryogen_left_L;
  g_task_set_task_data (task, job, replan_job_free);
  g_task_run_in_thread (task, replan_thread);
  return G_SOURCE_REMOVE;
}

void
mp_document_queue_replan (MpDocument *self, guint delay_ms)
{
  gboolean was_busy;

  g_return_if_fail (MP_IS_DOCUMENT (self));

  was_busy = mp_document_get_busy (self);
  g_clear_handle_id (&self->replan_source, g_source_remove);
  /* Results of runs started before this edit are stale from now on. */
  self->replan_generation++;
  self->replan_source = g_timeout_add (delay_ms, replan_timeout_cb, self);
  if (!was_busy)
    g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_BUSY]);
}

/* Returns whether there was anything to forget. */
static gboolean
forget_measured (MpDocument *self)
{
  gboolean had = self->measured != NULL;

  g_clear_pointer (&self->measured, mp_measured_data_free);
  self->elapsed_h = 0.0;
  self->cryogen_left_L = NAN;
  return had;
}

static void
install_plan (MpDocument *self, MpPlan *plan, guint serial)
{
  if (self->plan != plan)
    g_clear_pointer (&self->plan, mp_plan_free);
  self->plan = plan;
  self->serial = serial;
  g_signal_emit (self, signals[PLAN_CHANGED], 0);
  notify_state (self);
  mp_document_queue_replan (self, 150);
}

static void
mp_document_finalize (GObject *object)
{
  MpDocument *self = MP_DOCUMENT (object);

  g_clear_handle_id (&self->replan_source, g_source_remove);
  g_clear_pointer (&self->plan, mp_plan_free);
  g_clear_pointer (&self->undo, g_ptr_array_unref);
  g_clear_pointer (&self->redo, g_ptr_array_unref);
  g_clear_pointer (&self->schedule, mp_schedule_free);
  g_clear_pointer (&self->schedule_plan, mp_plan_free);
  g_clear_pointer (&self->schedule_error, g_free);
  g_clear_pointer (&self->merge_key, g_free);
  g_clear_pointer (&self->measured, mp_measured_data_free);
  g_clear_pointer (&self->schedule_done, g_array_unref);

  G_OBJECT_CLASS (mp_document_parent_class)->finalize (object);
}

static void
mp_document_get_property (GObject    *object,
                          guint       prop_id,
                          GValue     *value,
                          GParamSpec *pspec)
{
  MpDocument *self = MP_DOCUMENT (object);

  switch (prop_id)
    {
    case PROP_MODIFIED:
      g_value_set_boolean (value, mp_document_get_modified (self));
      break;
    case PROP_CAN_UNDO:
      g_value_set_boolean (value, mp_document_can_undo (self));
      break;
    case PROP_CAN_REDO:
      g_value_set_boolean (value, mp_document_can_redo (self));
      break;
    case PROP_BUSY:
      g_value_set_boolean (value, mp_document_get_busy (self));
      break;
    case PROP_PATH:
      g_value_set_string (value, mp_document_get_path (self));
      break;
    case PROP_HAS_MEASURED:
      g_value_set_boolean (value, mp_document_get_has_measured (self));
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_document_class_init (MpDocumentClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);

  object_class->finalize = mp_document_finalize;
  object_class->get_property = mp_document_get_property;

  properties[PROP_MODIFIED] =
    g_param_spec_boolean ("modified", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  properties[PROP_CAN_UNDO] =
    g_param_spec_boolean ("can-undo", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  properties[PROP_CAN_REDO] =
    g_param_spec_boolean ("can-redo", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  properties[PROP_BUSY] =
    g_param_spec_boolean ("busy", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  properties[PROP_PATH] =
    g_param_spec_string ("path", NULL, NULL, NULL,
                         G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  /* Measured data mark done steps in the schedule (set_measured). */
  properties[PROP_HAS_MEASURED] =
    g_param_spec_boolean ("has-measured", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  g_object_class_install_properties (object_class, N_PROPS, properties);

  /* The plan was replaced (edit, undo, redo, load). */
  signals[PLAN_CHANGED] =
    g_signal_new ("plan-changed", G_TYPE_FROM_CLASS (klass), G_SIGNAL_RUN_LAST,
                  0, NULL, NULL, NULL, G_TYPE_NONE, 0);
  /* A new schedule (or schedule error) for the current plan landed. */
  signals[SCHEDULE_CHANGED] =
    g_signal_new ("schedule-changed", G_TYPE_FROM_CLASS (klass), G_SIGNAL_RUN_LAST,
                  0, NULL, NULL, NULL, G_TYPE_NONE, 0);
}

static void
mp_document_init (MpDocument *self)
{
  self->plan = mp_plan_new_default ();
  self->undo = g_ptr_array_new_with_free_func (snapshot_free);
  self->redo = g_ptr_array_new_with_free_func (snapshot_free);
  self->next_serial = 1;
  self->serial = self->saved_serial = 0;
  self->pristine = TRUE;
  self->cryogen_left_L = NAN;
  self->schedule_cryogen_left_L = NAN;
  mp_document_queue_replan (self, 0);
}

MpDocument *
mp_document_new (void)
{
  return g_object_new (MP_TYPE_DOCUMENT, NULL);
}

const MpPlan *
mp_document_get_plan (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->plan;
}

MpPlan *
mp_document_dup_plan (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return mp_plan_copy (self->plan);
}

static Snapshot *
snapshot_new (MpPlan *plan, guint serial)
{
  Snapshot *snap = g_new0 (Snapshot, 1);

  snap->plan = plan;
  snap->serial = serial;
  return snap;
}

void
mp_document_commit (MpDocument *self, MpPlan *plan, const char *merge_key)
{
  gboolean merge;

  g_return_if_fail (MP_IS_DOCUMENT (self));
  g_return_if_fail (plan != NULL);

  merge = merge_key != NULL && self->merge_key != NULL
          && g_str_equal (merge_key, self->merge_key) && self->undo->len > 0;
  if (!merge)
    {
      g_ptr_array_add (self->undo, snapshot_new (self->plan, self->serial));
      self->plan = NULL;
      if (self->undo->len > MAX_UNDO)
        g_ptr_array_remove_index (self->undo, 0);
    }
  g_ptr_array_set_size (self->redo, 0);
  g_free (self->merge_key);
  self->merge_key = g_strdup (merge_key);
  self->pristine = FALSE;
  install_plan (self, plan, self->next_serial++);
}

void
mp_document_set_plan (MpDocument *self, MpPlan *plan)
{
  mp_document_commit (self, plan, NULL);
}

void
mp_document_reset (MpDocument *self, MpPlan *plan, const char *path)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));
  g_return_if_fail (plan != NULL);

  g_ptr_array_set_size (self->undo, 0);
  g_ptr_array_set_size (self->redo, 0);
  g_clear_pointer (&self->merge_key, g_free);
  /* Measured points belong to the shift of the plan they were taken for. */
  if (forget_measured (self))
    g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_HAS_MEASURED]);
  if (path != NULL && g_strcmp0 (plan->path, path) != 0)
    {
      g_free (plan->path);
      plan->path = g_strdup (path);
    }
  self->pristine = FALSE;
  self->forced_modified = FALSE;
  self->saved_serial = self->next_serial;
  install_plan (self, plan, self->next_serial++);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_PATH]);
}

gboolean
mp_document_load (MpDocument *self, const char *path, GError **error)
{
  MpPlan *plan;

  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  g_return_val_if_fail (path != NULL, FALSE);

  plan = mp_plan_load_from_file (path, error);
  if (plan == NULL)
    return FALSE;
  mp_document_reset (self, plan, path);
  return TRUE;
}

gboolean
mp_document_save (MpDocument *self, const char *path, GError **error)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);

  if (path == NULL)
    path = self->plan->path;
  g_return_val_if_fail (path != NULL, FALSE);

  if (!mp_plan_save_to_file (self->plan, path, error))
    return FALSE;
  if (g_strcmp0 (self->plan->path, path) != 0)
    {
      g_free (self->plan->path);
      self->plan->path = g_strdup (path);
      g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_PATH]);
    }
  self->saved_serial = self->serial;
  self->forced_modified = FALSE;
  self->pristine = FALSE;
  g_clear_pointer (&self->merge_key, g_free);
  notify_state (self);
  return TRUE;
}

gboolean
mp_document_write_copy (MpDocument *self, const char *path, GError **error)
{
  g_autofree char *data = NULL;
  gsize length = 0;

  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  data = mp_plan_to_data (self->plan, &length);
  return g_file_set_contents (path, data, length, error);
}

const char *
mp_document_get_path (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->plan->path;
}

char *
mp_document_get_display_name (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  if (self->plan->path == NULL)
    return g_strdup (_("Unsaved Plan"));
  return g_filename_display_basename (self->plan->path);
}

gboolean
mp_document_get_modified (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->forced_modified || self->serial != self->saved_serial;
}

gboolean
mp_document_is_pristine (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->pristine;
}

void
mp_document_mark_modified (MpDocument *self)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));
  self->forced_modified = TRUE;
  self->pristine = FALSE;
  notify_state (self);
}

gboolean
mp_document_can_undo (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->undo->len > 0;
}

gboolean
mp_document_can_redo (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->redo->len > 0;
}

static void
move_snapshot (MpDocument *self, GPtrArray *from, GPtrArray *to)
{
  Snapshot *snap;
  char *path;

  if (from->len == 0)
    return;
  snap = g_ptr_array_steal_index (from, from->len - 1);
  /* The file name is not part of the history. */
  path = g_strdup (self->plan->path);
  g_ptr_array_add (to, snapshot_new (self->plan, self->serial));
  self->plan = NULL;
  g_free (snap->plan->path);
  snap->plan->path = path;
  g_clear_pointer (&self->merge_key, g_free);
  install_plan (self, snap->plan, snap->serial);
  g_free (snap);
}

void
mp_document_undo (MpDocument *self)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));
  move_snapshot (self, self->undo, self->redo);
}

void
mp_document_redo (MpDocument *self)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));
  move_snapshot (self, self->redo, self->undo);
}

const MpSchedule *
mp_document_get_schedule (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->schedule;
}

const MpPlan *
mp_document_get_schedule_plan (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->schedule_plan;
}

const char *
mp_document_get_schedule_error (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->schedule_error;
}

gboolean
mp_document_get_busy (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->replan_source != 0
         || (self->running && self->running_generation == self->replan_generation);
}

guint
mp_document_get_schedule_serial (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), 0);
  return self->schedule_serial;
}

static MpMeasuredData *
copy_measured (const MpMeasuredData *data)
{
  MpMeasuredData *copy = g_new0 (MpMeasuredData, 1);

  copy->name = g_strdup (data->name);
  copy->points = g_array_copy (data->points);
  return copy;
}

gboolean
mp_document_set_measured (MpDocument           *self,
                          const MpMeasuredData *data,
                          double                elapsed_h,
                          double                cryogen_left_L,
                          GError              **error)
{
  gboolean had;

  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  g_return_val_if_fail (data != NULL && data->points != NULL, FALSE);
  g_return_val_if_fail (error == NULL || *error == NULL, FALSE);

  if (isnan (elapsed_h))
    {
      elapsed_h = mp_measured_max_elapsed_h (data);
      if (isnan (elapsed_h))
        elapsed_h = 0.0;
    }
  if (!isfinite (elapsed_h) || elapsed_h < 0.0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("elapsed beam time: expected a number >= 0 h, found %g"), elapsed_h);
      return FALSE;
    }
  if (!isnan (cryogen_left_L) && !(isfinite (cryogen_left_L) && cryogen_left_L >= 0.0))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("cryogen left: expected a number >= 0 L, found %g"), cryogen_left_L);
      return FALSE;
    }

  had = forget_measured (self);
  self->measured = copy_measured (data);
  self->elapsed_h = elapsed_h;
  self->cryogen_left_L = cryogen_left_L;
  if (!had)
    g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_HAS_MEASURED]);
  mp_document_queue_replan (self, 0);
  return TRUE;
}

void
mp_document_clear_measured (MpDocument *self)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));

  if (!forget_measured (self))
    return;
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_HAS_MEASURED]);
  mp_document_queue_replan (self, 0);
}

gboolean
mp_document_get_has_measured (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), FALSE);
  return self->measured != NULL;
}

const MpMeasuredData *
mp_document_get_measured (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NULL);
  return self->measured;
}

double
mp_document_get_elapsed_h (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), 0.0);
  return self->elapsed_h;
}

double
mp_document_get_cryogen_left_L (MpDocument *self)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (self), NAN);
  return self->cryogen_left_L;
}

void
mp_document_get_schedule_options (MpDocument *self, MpScheduleOptions *opts)
{
  g_return_if_fail (MP_IS_DOCUMENT (self));
  g_return_if_fail (opts != NULL);

  mp_schedule_options_init (opts);
  opts->elapsed_h = self->schedule_elapsed_h;
  opts->cryogen_left_L = self->schedule_cryogen_left_L;
  opts->done = self->schedule_done;
}
