/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-document.c: an open plan, its undo history and its schedule. */
#include "config.h"

#include <glib/gi18n.h>

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

typedef struct
{
  MpSchedule *schedule;
  MpPlan *plan;
  char *error;
} ReplanResult;

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
  const MpPlan *plan = task_data;
  ReplanResult *result = g_new0 (ReplanResult, 1);
  g_autoptr (GError) error = NULL;
  MpScheduleOptions opts;

  mp_schedule_options_init (&opts);
  result->schedule = mp_schedule_compute (plan, &opts, &error);
  result->plan = mp_plan_copy (plan);
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
  guint generation;

  self->replan_source = 0;
  generation = ++self->replan_generation;
  self->running_generation = generation;
  self->running = TRUE;

  task = g_task_new (self, NULL, replan_done_cb, GUINT_TO_POINTER (generation));
  g_task_set_source_tag (task, replan_timeout_cb);
  g_task_set_task_data (task, mp_plan_copy (self->plan), (GDestroyNotify) mp_plan_free);
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
