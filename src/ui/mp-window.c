/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-window.c: the planning window. */
#include "config.h"

#include <math.h>
#include <unistd.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>

#include "mp-application.h"
#include "mp-fit.h"
#include "mp-measured.h"
#include "mp-plan-editor.h"
#include "mp-plot-view.h"
#include "mp-rehearse-dialog.h"
#include "mp-refit-dialog.h"
#include "mp-schedule-view.h"
#include "mp-sheet.h"
#include "mp-window.h"

#define AUTOSAVE_INTERVAL_S 30

struct _MpWindow
{
  GtkApplicationWindow parent_instance;

  /* Template widgets */
  GtkLabel *title_label;
  GtkLabel *subtitle_label;
  GtkSpinner *spinner;
  GtkInfoBar *error_bar;
  GtkLabel *error_label;
  GtkInfoBar *recover_bar;
  GtkLabel *recover_label;
  GtkPaned *main_paned;
  GtkPaned *result_paned;
  MpPlanEditor *editor;
  GtkStack *plot_stack;
  MpScheduleView *schedule_view;
  GtkImage *status_icon;
  GtkLabel *status_label;
  GtkLabel *sensitivity_label;
  GMenu *recent_menu;

  MpDocument *document;
  GtkWidget *plots[3];
  GtkFileChooserNative *chooser;
  char *autosave_path;
  char *recover_path;
  char *error_text;
  guint autosave_source;
  gboolean autosave_dirty;
  gboolean close_after_save;
  gboolean plots_chosen;
  gboolean closing_confirmed;
};

G_DEFINE_FINAL_TYPE (MpWindow, mp_window, GTK_TYPE_APPLICATION_WINDOW)

static void save_as (MpWindow *self);
static gboolean close_idle_cb (gpointer user_data);

static GSettings *
window_settings (MpWindow *self)
{
  GtkApplication *app = gtk_window_get_application (GTK_WINDOW (self));

  return MP_IS_APPLICATION (app) ? mp_application_get_settings (MP_APPLICATION (app)) : NULL;
}

/* ---- Messages -------------------------------------------------------- */

static void
show_error (MpWindow *self, const char *format, ...) G_GNUC_PRINTF (2, 3);

static void
show_error (MpWindow *self, const char *format, ...)
{
  va_list args;

  va_start (args, format);
  g_free (self->error_text);
  self->error_text = g_strdup_vprintf (format, args);
  va_end (args);
  gtk_label_set_text (self->error_label, self->error_text);
  gtk_info_bar_set_revealed (self->error_bar, TRUE);
  gtk_widget_set_visible (GTK_WIDGET (self->error_bar), TRUE);
}

static void
hide_error (MpWindow *self)
{
  g_clear_pointer (&self->error_text, g_free);
  gtk_info_bar_set_revealed (self->error_bar, FALSE);
}

static void
error_bar_response_cb (GtkInfoBar *bar, int response, MpWindow *self)
{
  hide_error (self);
}

/* ---- Title, status line ---------------------------------------------- */

static void
update_title (MpWindow *self)
{
  g_autofree char *name = mp_document_get_display_name (self->document);
  const char *path = mp_document_get_path (self->document);
  gboolean modified = mp_document_get_modified (self->document);
  g_autofree char *title = g_strdup_printf ("%s%s", modified ? "• " : "", name);
  g_autofree char *window_title = g_strdup_printf ("%s%s — mteplan", modified ? "*" : "", name);
  g_autofree char *dir = path != NULL ? g_path_get_dirname (path) : NULL;
  g_autofree char *subtitle = NULL;

  if (dir != NULL)
    {
      g_autofree char *display = g_filename_display_name (dir);
      subtitle = modified ? g_strdup_printf (_("%s — unsaved changes"), display) : g_strdup (display);
    }
  else
    subtitle = g_strdup (modified ? _("Not saved yet") : _("New plan"));

  gtk_label_set_text (self->title_label, title);
  gtk_label_set_text (self->subtitle_label, subtitle);
  gtk_window_set_title (GTK_WINDOW (self), window_title);
}

static void
set_status_style (MpWindow *self, const char *icon, const char *css)
{
  gtk_image_set_from_icon_name (self->status_icon, icon);
  gtk_widget_remove_css_class (GTK_WIDGET (self->status_label), "status-bad");
  gtk_widget_remove_css_class (GTK_WIDGET (self->status_label), "status-warn");
  gtk_widget_remove_css_class (GTK_WIDGET (self->status_icon), "status-bad");
  gtk_widget_remove_css_class (GTK_WIDGET (self->status_icon), "status-warn");
  if (css != NULL)
    {
      gtk_widget_add_css_class (GTK_WIDGET (self->status_label), css);
      gtk_widget_add_css_class (GTK_WIDGET (self->status_icon), css);
    }
}

static char *
format_sensitivity (const MpSchedule *schedule, const MpPlan *plan)
{
  const MpSensitivity *lo = &schedule->sensitivity_low;
  const MpSensitivity *hi = &schedule->sensitivity_high;

  if (!schedule->has_sensitivity)
    return g_strdup (_("φ ± σ: no uncertainty given"));
  /* Low, then high work function, as in the tooltip. */
  return g_strdup_printf (_("φ−σ / φ+σ: %.1f / %.1f h · %.1f / %.1f L · %d / %d left out"),
                          lo->beam_time_h, hi->beam_time_h, lo->cryogen_L, hi->cryogen_L,
                          lo->n_left_out, hi->n_left_out);
}

static int
count_done (const MpSchedule *schedule)
{
  int n = 0;

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        n += g_array_index (block->steps, MpStep, i).done;
    }
  return n;
}

/* "Re-plan from 3.81 h: 22 steps done, dewar 20.0 L · "
 * for a schedule made from measured data; FALSE (nothing added) for the
 * plain plan. */
static gboolean
append_replan (MpWindow *self, GString *text, const MpSchedule *schedule)
{
  const MpPlan *plan = mp_document_get_schedule_plan (self->document);
  MpScheduleOptions opts;
  int n_done = count_done (schedule);

  mp_document_get_schedule_options (self->document, &opts);
  if (opts.done == NULL && opts.elapsed_h == 0.0)
    return FALSE;
  /* TRANSLATORS: the plan continues from the elapsed beam time */
  g_string_append_printf (text, ngettext ("Re-plan from %.2f h: %d step done",
                                          "Re-plan from %.2f h: %d steps done",
                                          n_done),
                          opts.elapsed_h, n_done);
  if (!isnan (opts.cryogen_left_L))
    g_string_append_printf (text, _(", dewar %.1f L"), opts.cryogen_left_L);
  else if (plan != NULL)
    /* The scheduler then starts from the full budget: say so. */
    g_string_append_printf (text, _(", dewar %.1f L assumed"), plan->cryostat.budget_L);
  g_string_append (text, " · ");
  return TRUE;
}

static void
update_status (MpWindow *self)
{
  const MpSchedule *schedule = mp_document_get_schedule (self->document);
  const char *error = mp_document_get_schedule_error (self->document);
  g_autoptr (GString) text = g_string_new (NULL);
  g_autofree char *sensitivity = NULL;
  int n_short, n_unreachable, n_left_out;

  if (schedule == NULL)
    {
      g_autofree char *msg = g_strdup_printf (_("Cannot plan: %s"),
                                              error != NULL ? error : _("planning…"));
      gtk_label_set_text (self->status_label, msg);
      gtk_widget_set_tooltip_text (GTK_WIDGET (self->status_label), msg);
      gtk_label_set_text (self->sensitivity_label, "");
      set_status_style (self, error != NULL ? "dialog-error-symbolic" : "content-loading-symbolic",
                        error != NULL ? "status-bad" : NULL);
      return;
    }

  n_short = mp_schedule_count_status (schedule, MP_STEP_SHORT);
  n_unreachable = mp_schedule_count_status (schedule, MP_STEP_UNREACHABLE);
  n_left_out = schedule->left_out != NULL ? (int) schedule->left_out->len : 0;

  if (!schedule->feasible)
    g_string_append (text, _("Does not fit: "));
  if (append_replan (self, text, schedule))
    g_string_append_printf (text, _("Beam time %.1f of the %.1f h left · Cryogen %.1f of %.1f L · "
                                    "%d steps to go: %d short, %d unreachable, %d left out"),
                            schedule->beam_time_h, schedule->beam_time_available_h,
                            schedule->cryogen_L, schedule->cryogen_available_L,
                            mp_schedule_count_steps (schedule) - count_done (schedule),
                            n_short, n_unreachable, n_left_out);
  else
    g_string_append_printf (text, _("Beam time %.1f of %.1f h · Cryogen %.1f of %.1f L · "
                                    "%d steps: %d short, %d unreachable, %d left out"),
                            schedule->beam_time_h, schedule->beam_time_available_h,
                            schedule->cryogen_L, schedule->cryogen_available_L,
                            mp_schedule_count_steps (schedule), n_short, n_unreachable,
                            n_left_out);
  if (schedule->stretch_factor > 1.0)
    g_string_append_printf (text, _("  ·  targets loosened ×%.2f"), schedule->stretch_factor);
  gtk_label_set_text (self->status_label, text->str);

  {
    g_autoptr (GString) tip = g_string_new (text->str);

    for (guint i = 0; schedule->warnings != NULL && i < schedule->warnings->len; i++)
      g_string_append_printf (tip, "\n• %s", (const char *) g_ptr_array_index (schedule->warnings, i));
    if (n_left_out > 0)
      g_string_append (tip, _("\nLeft out:"));
    for (int i = 0; i < n_left_out && i < 12; i++)
      {
        const MpLeftOut *left = &g_array_index (schedule->left_out, MpLeftOut, i);

        g_string_append_printf (tip, _("\n  %.0f K, %.4f eV (%.1f nm): %s"), left->temperature_K,
                                left->photon_energy_eV, left->wavelength_nm,
                                left->reason != NULL ? left->reason : "");
      }
    if (n_left_out > 12)
      g_string_append_printf (tip, _("\n  … and %d more"), n_left_out - 12);
    gtk_widget_set_tooltip_text (GTK_WIDGET (self->status_label), tip->str);
  }

  sensitivity = format_sensitivity (schedule, mp_document_get_schedule_plan (self->document));
  gtk_label_set_text (self->sensitivity_label, sensitivity);
  if (schedule->has_sensitivity)
    {
      g_autofree char *tip = g_strdup_printf (_("Work-function sensitivity: the plan re-made at "
                                                "φ − σ = %.3f eV needs %.2f h and %.2f L (%d left out); "
                                                "at φ + σ = %.3f eV, %.2f h and %.2f L (%d left out)."),
                                              schedule->sensitivity_low.work_function_eV,
                                              schedule->sensitivity_low.beam_time_h,
                                              schedule->sensitivity_low.cryogen_L,
                                              schedule->sensitivity_low.n_left_out,
                                              schedule->sensitivity_high.work_function_eV,
                                              schedule->sensitivity_high.beam_time_h,
                                              schedule->sensitivity_high.cryogen_L,
                                              schedule->sensitivity_high.n_left_out);
      gtk_widget_set_tooltip_text (GTK_WIDGET (self->sensitivity_label), tip);
    }
  else
    gtk_widget_set_tooltip_text (GTK_WIDGET (self->sensitivity_label), NULL);

  if (!schedule->feasible || n_unreachable > 0)
    set_status_style (self, "dialog-error-symbolic", "status-bad");
  else if (n_short > 0 || n_left_out > 0 || schedule->stretch_factor > 1.0)
    set_status_style (self, "dialog-warning-symbolic", "status-warn");
  else
    set_status_style (self, "object-select-symbolic", NULL);
}

/* ---- Document signals ------------------------------------------------ */

static void
update_actions (MpWindow *self)
{
  GAction *action;

  action = g_action_map_lookup_action (G_ACTION_MAP (self), "undo");
  g_simple_action_set_enabled (G_SIMPLE_ACTION (action), mp_document_can_undo (self->document));
  action = g_action_map_lookup_action (G_ACTION_MAP (self), "redo");
  g_simple_action_set_enabled (G_SIMPLE_ACTION (action), mp_document_can_redo (self->document));
  for (const char *const *name = (const char *const[]) { "export-pdf", "export-csv", "print", NULL };
       *name != NULL; name++)
    {
      action = g_action_map_lookup_action (G_ACTION_MAP (self), *name);
      g_simple_action_set_enabled (G_SIMPLE_ACTION (action),
                                   mp_document_get_schedule (self->document) != NULL);
    }
  action = g_action_map_lookup_action (G_ACTION_MAP (self), "clear-measured");
  g_simple_action_set_enabled (G_SIMPLE_ACTION (action),
                               mp_document_get_has_measured (self->document));
}

static void
document_state_cb (MpDocument *document, GParamSpec *pspec, MpWindow *self)
{
  update_title (self);
  update_actions (self);
}

static void
busy_cb (MpDocument *document, GParamSpec *pspec, MpWindow *self)
{
  gboolean busy = mp_document_get_busy (document);

  gtk_spinner_set_spinning (self->spinner, busy);
  gtk_widget_set_visible (GTK_WIDGET (self->spinner), busy);
}

static void
plan_changed_cb (MpDocument *document, MpWindow *self)
{
  self->autosave_dirty = TRUE;
}

static void
schedule_changed_cb (MpDocument *document, MpWindow *self)
{
  update_status (self);
  update_actions (self);
}

/* ---- Autosave and recovery ------------------------------------------- */

char *
mp_autosave_dir (void)
{
  return g_build_filename (g_get_user_state_dir (), "mteplan", "autosave", NULL);
}

static void
remove_autosave (MpWindow *self)
{
  g_autofree char *origin = NULL;

  if (self->autosave_path == NULL)
    return;
  origin = g_strconcat (self->autosave_path, ".origin", NULL);
  g_unlink (self->autosave_path);
  g_unlink (origin);
  self->autosave_dirty = TRUE;
}

const char *
mp_window_autosave_now (MpWindow *self)
{
  g_autoptr (GError) error = NULL;
  g_autofree char *dir = mp_autosave_dir ();
  g_autofree char *origin = NULL;
  const char *path;

  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  if (!mp_document_get_modified (self->document))
    return NULL;
  if (g_mkdir_with_parents (dir, 0700) != 0)
    return NULL;
  if (!mp_document_write_copy (self->document, self->autosave_path, &error))
    {
      g_warning ("Autosave to %s failed: %s", self->autosave_path, error->message);
      return NULL;
    }
  path = mp_document_get_path (self->document);
  origin = g_strconcat (self->autosave_path, ".origin", NULL);
  if (path != NULL)
    g_file_set_contents (origin, path, -1, NULL);
  else
    g_unlink (origin);
  self->autosave_dirty = FALSE;
  return self->autosave_path;
}

static gboolean
autosave_cb (gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);

  if (self->autosave_dirty && mp_document_get_modified (self->document))
    mp_window_autosave_now (self);
  return G_SOURCE_CONTINUE;
}

void
mp_window_offer_recovery (MpWindow *self, const char *autosave_path)
{
  g_autoptr (GFile) file = NULL;
  g_autoptr (GFileInfo) info = NULL;
  g_autoptr (GDateTime) when = NULL;
  g_autofree char *stamp = NULL;
  g_autofree char *text = NULL;

  g_return_if_fail (MP_IS_WINDOW (self));
  g_return_if_fail (autosave_path != NULL);

  g_free (self->recover_path);
  self->recover_path = g_strdup (autosave_path);
  file = g_file_new_for_path (autosave_path);
  info = g_file_query_info (file, G_FILE_ATTRIBUTE_TIME_MODIFIED, G_FILE_QUERY_INFO_NONE, NULL, NULL);
  when = info != NULL ? g_file_info_get_modification_date_time (info) : NULL;
  if (when != NULL)
    {
      g_autoptr (GDateTime) local = g_date_time_to_local (when);
      stamp = g_date_time_format (local, "%Y-%m-%d %H:%M");
    }
  text = g_strdup_printf (_("Unsaved changes from an earlier session (%s) were kept. "
                            "Recover them into this window?"),
                          stamp != NULL ? stamp : _("unknown time"));
  gtk_label_set_text (self->recover_label, text);
  gtk_info_bar_set_revealed (self->recover_bar, TRUE);
}

static void
recover_bar_response_cb (GtkInfoBar *bar, int response, MpWindow *self)
{
  mp_window_respond_recovery (self, response == GTK_RESPONSE_ACCEPT);
}

void
mp_window_respond_recovery (MpWindow *self, gboolean recover)
{
  g_autofree char *origin_file = NULL;
  g_autofree char *origin = NULL;

  g_return_if_fail (MP_IS_WINDOW (self));
  gtk_info_bar_set_revealed (self->recover_bar, FALSE);
  if (self->recover_path == NULL)
    return;
  origin_file = g_strconcat (self->recover_path, ".origin", NULL);
  if (recover)
    {
      g_autoptr (GError) error = NULL;
      MpPlan *plan = mp_plan_load_from_file (self->recover_path, &error);

      if (plan == NULL)
        {
          show_error (self, _("The kept changes could not be read: %s"), error->message);
          return;
        }
      /* The recovered plan belongs to the file it was edited from (or to
       * none), never to the autosave file. */
      g_file_get_contents (origin_file, &origin, NULL, NULL);
      g_free (plan->path);
      plan->path = g_steal_pointer (&origin);
      mp_document_reset (self->document, plan, NULL);
      mp_document_mark_modified (self->document);
      update_title (self);
    }
  g_unlink (self->recover_path);
  g_unlink (origin_file);
  g_clear_pointer (&self->recover_path, g_free);
}

/* ---- Opening and saving ---------------------------------------------- */

static void
remember_directory (MpWindow *self, GFile *file)
{
  GSettings *settings = window_settings (self);
  g_autoptr (GFile) parent = g_file_get_parent (file);
  g_autofree char *dir = parent != NULL ? g_file_get_path (parent) : NULL;

  if (settings != NULL && dir != NULL)
    g_settings_set_string (settings, "last-directory", dir);
}

static void
add_recent (MpWindow *self, const char *path)
{
  GtkApplication *app = gtk_window_get_application (GTK_WINDOW (self));

  if (MP_IS_APPLICATION (app))
    mp_application_add_recent (MP_APPLICATION (app), path);
}

gboolean
mp_window_open_file (MpWindow *self, GFile *file)
{
  g_autoptr (GError) error = NULL;
  g_autofree char *path = NULL;
  g_autofree char *name = NULL;

  g_return_val_if_fail (MP_IS_WINDOW (self), FALSE);
  g_return_val_if_fail (G_IS_FILE (file), FALSE);

  path = g_file_get_path (file);
  name = g_file_get_parse_name (file);
  if (path == NULL)
    {
      show_error (self, _("Could not open “%s”: only local files can be opened"), name);
      return FALSE;
    }
  if (!mp_document_load (self->document, path, &error))
    {
      show_error (self, _("Could not open “%s”: %s"), name, error->message);
      return FALSE;
    }
  hide_error (self);
  remove_autosave (self);
  remember_directory (self, file);
  add_recent (self, path);
  return TRUE;
}

static void
set_chooser_folder (MpWindow *self, GtkFileChooser *chooser)
{
  GSettings *settings = window_settings (self);
  g_autofree char *dir = settings != NULL ? g_settings_get_string (settings, "last-directory") : NULL;

  if (dir != NULL && *dir != '\0' && g_file_test (dir, G_FILE_TEST_IS_DIR))
    {
      g_autoptr (GFile) folder = g_file_new_for_path (dir);
      gtk_file_chooser_set_current_folder (chooser, folder, NULL);
    }
}

static void
add_filter (GtkFileChooser *chooser, const char *name, const char *mime, const char *suffix)
{
  g_autoptr (GtkFileFilter) filter = gtk_file_filter_new ();

  gtk_file_filter_set_name (filter, name);
  if (mime != NULL)
    gtk_file_filter_add_mime_type (filter, mime);
  gtk_file_filter_add_suffix (filter, suffix);
  gtk_file_chooser_add_filter (chooser, filter);
}

typedef void (*ChooserDone) (MpWindow *self, GFile *file);

static void
chooser_response_cb (GtkNativeDialog *dialog, int response, MpWindow *self)
{
  ChooserDone done = g_object_get_data (G_OBJECT (dialog), "done");
  g_autoptr (GFile) file = NULL;

  if (response == GTK_RESPONSE_ACCEPT)
    file = gtk_file_chooser_get_file (GTK_FILE_CHOOSER (dialog));
  g_clear_object (&self->chooser);
  if (file != NULL)
    done (self, file);
  else
    self->close_after_save = FALSE;
}

static void
run_chooser (MpWindow *self, const char *title, GtkFileChooserAction action,
             const char *accept, const char *suggested, ChooserDone done,
             const char *filter_name, const char *mime, const char *suffix)
{
  if (self->chooser != NULL)
    gtk_native_dialog_destroy (GTK_NATIVE_DIALOG (self->chooser));
  g_clear_object (&self->chooser);
  self->chooser = gtk_file_chooser_native_new (title, GTK_WINDOW (self), action, accept, _("_Cancel"));
  gtk_native_dialog_set_modal (GTK_NATIVE_DIALOG (self->chooser), TRUE);
  add_filter (GTK_FILE_CHOOSER (self->chooser), filter_name, mime, suffix);
  set_chooser_folder (self, GTK_FILE_CHOOSER (self->chooser));
  if (suggested != NULL)
    gtk_file_chooser_set_current_name (GTK_FILE_CHOOSER (self->chooser), suggested);
  g_object_set_data (G_OBJECT (self->chooser), "done", done);
  g_signal_connect (self->chooser, "response", G_CALLBACK (chooser_response_cb), self);
  gtk_native_dialog_show (GTK_NATIVE_DIALOG (self->chooser));
}

static void
open_done (MpWindow *self, GFile *file)
{
  GtkApplication *app = gtk_window_get_application (GTK_WINDOW (self));

  /* An edited document stays: the file opens in a new window. */
  if (!mp_document_is_pristine (self->document) && app != NULL)
    {
      g_application_open (G_APPLICATION (app), &file, 1, "new-window");
      return;
    }
  mp_window_open_file (self, file);
}

static void
open_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  run_chooser (MP_WINDOW (user_data), _("Open Plan"), GTK_FILE_CHOOSER_ACTION_OPEN,
               _("_Open"), NULL, open_done, _("Plans"), "application/x-mteplan", "mteplan");
}

static void
open_recent_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  g_autoptr (GFile) file = g_file_new_for_path (g_variant_get_string (param, NULL));

  open_done (MP_WINDOW (user_data), file);
}

static gboolean
save_to (MpWindow *self, const char *path)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (GFile) file = g_file_new_for_path (path);

  if (!mp_document_save (self->document, path, &error))
    {
      g_autofree char *name = g_filename_display_name (path);
      show_error (self, _("Could not save “%s”: %s"), name, error->message);
      self->close_after_save = FALSE;
      return FALSE;
    }
  hide_error (self);
  remove_autosave (self);
  remember_directory (self, file);
  add_recent (self, path);
  if (self->close_after_save)
    {
      self->closing_confirmed = TRUE;
      g_idle_add_full (G_PRIORITY_DEFAULT_IDLE, close_idle_cb, g_object_ref (self), g_object_unref);
    }
  return TRUE;
}

static void
save_as_done (MpWindow *self, GFile *file)
{
  g_autofree char *path = g_file_get_path (file);

  if (path == NULL)
    {
      show_error (self, _("Plans can only be saved to local files"));
      return;
    }
  if (!g_str_has_suffix (path, ".mteplan"))
    {
      char *with_suffix = g_strconcat (path, ".mteplan", NULL);
      g_free (path);
      path = with_suffix;
    }
  save_to (self, path);
}

static char *
suggested_name (MpWindow *self, const char *suffix)
{
  const MpPlan *plan = mp_document_get_plan (self->document);
  const char *path = plan->path;
  g_autofree char *base = NULL;

  if (path != NULL)
    {
      char *dot;

      base = g_path_get_basename (path);
      dot = strrchr (base, '.');
      if (dot != NULL && dot != base)
        *dot = '\0';
    }
  else
    base = g_strdup (plan->title != NULL && *plan->title != '\0' ? plan->title : _("plan"));
  g_strdelimit (base, "/\\:", '-');
  return g_strconcat (base, suffix, NULL);
}

static void
save_as (MpWindow *self)
{
  g_autofree char *name = suggested_name (self, ".mteplan");

  run_chooser (self, _("Save Plan"), GTK_FILE_CHOOSER_ACTION_SAVE, _("_Save"), name,
               save_as_done, _("Plans"), "application/x-mteplan", "mteplan");
}

static void
save_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);
  const char *path = mp_document_get_path (self->document);

  if (path == NULL)
    save_as (self);
  else
    save_to (self, path);
}

static void
save_as_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  save_as (MP_WINDOW (user_data));
}

/* ---- Export and print ------------------------------------------------ */

static MpPaper
paper_setting (MpWindow *self)
{
  GSettings *settings = window_settings (self);
  g_autofree char *name = settings != NULL ? g_settings_get_string (settings, "paper-size") : NULL;
  MpPaper paper = MP_PAPER_A4;

  if (name != NULL)
    mp_paper_from_string (name, &paper);
  return paper;
}

gboolean
mp_window_export_pdf (MpWindow *self, const char *path, GError **error)
{
  const MpSchedule *schedule;

  g_return_val_if_fail (MP_IS_WINDOW (self), FALSE);
  g_return_val_if_fail (path != NULL, FALSE);

  schedule = mp_document_get_schedule (self->document);
  if (schedule == NULL)
    {
      g_set_error (error, G_IO_ERROR, G_IO_ERROR_FAILED, _("There is no schedule to export yet"));
      return FALSE;
    }
  return mp_sheet_write_pdf (mp_document_get_schedule_plan (self->document), schedule,
                             paper_setting (self), path, error);
}

static void
export_pdf_done (MpWindow *self, GFile *file)
{
  g_autofree char *path = g_file_get_path (file);
  g_autoptr (GError) error = NULL;

  if (path == NULL)
    return;
  if (!mp_window_export_pdf (self, path, &error))
    show_error (self, _("Could not export the run sheet: %s"), error->message);
  else
    remember_directory (self, file);
}

static void
export_pdf_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);
  g_autofree char *name = suggested_name (self, "-run-sheet.pdf");

  run_chooser (self, _("Export Run Sheet"), GTK_FILE_CHOOSER_ACTION_SAVE, _("_Export"), name,
               export_pdf_done, _("PDF documents"), "application/pdf", "pdf");
}

gboolean
mp_window_export_csv (MpWindow *self, const char *path, GError **error)
{
  const MpSchedule *schedule;
  g_autofree char *csv = NULL;

  g_return_val_if_fail (MP_IS_WINDOW (self), FALSE);
  g_return_val_if_fail (path != NULL, FALSE);

  schedule = mp_document_get_schedule (self->document);
  if (schedule == NULL)
    {
      g_set_error (error, G_IO_ERROR, G_IO_ERROR_FAILED, _("There is no schedule to export yet"));
      return FALSE;
    }
  csv = mp_schedule_to_csv (schedule);
  return g_file_set_contents (path, csv, -1, error);
}

static void
export_csv_done (MpWindow *self, GFile *file)
{
  g_autofree char *path = g_file_get_path (file);
  g_autoptr (GError) error = NULL;

  if (path == NULL)
    return;
  if (!mp_window_export_csv (self, path, &error))
    show_error (self, _("Could not export the schedule: %s"), error->message);
  else
    remember_directory (self, file);
}

static void
export_csv_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);
  g_autofree char *name = suggested_name (self, "-schedule.csv");

  run_chooser (self, _("Export Schedule"), GTK_FILE_CHOOSER_ACTION_SAVE, _("_Export"), name,
               export_csv_done, _("CSV files"), "text/csv", "csv");
}

typedef struct
{
  MpPlan *plan;
  MpSchedule *schedule;
  MpSheet *sheet;
} PrintJob;

static void
print_job_free (gpointer data)
{
  PrintJob *job = data;

  g_clear_pointer (&job->sheet, mp_sheet_free);
  g_clear_pointer (&job->plan, mp_plan_free);
  g_clear_pointer (&job->schedule, mp_schedule_free);
  g_free (job);
}

static void
begin_print_cb (GtkPrintOperation *op, GtkPrintContext *context, PrintJob *job)
{
  g_clear_pointer (&job->sheet, mp_sheet_free);
  job->sheet = mp_sheet_new (job->plan, job->schedule,
                             gtk_print_context_get_width (context),
                             gtk_print_context_get_height (context), NULL);
  gtk_print_operation_set_n_pages (op, MAX (1, mp_sheet_get_n_pages (job->sheet)));
}

static void
draw_page_cb (GtkPrintOperation *op, GtkPrintContext *context, int page, PrintJob *job)
{
  if (job->sheet != NULL)
    mp_sheet_draw_page (job->sheet, gtk_print_context_get_cairo_context (context), page);
}

static void
print_done_cb (GtkPrintOperation *op, GtkPrintOperationResult result, MpWindow *self)
{
  if (result == GTK_PRINT_OPERATION_RESULT_ERROR)
    {
      g_autoptr (GError) error = NULL;

      gtk_print_operation_get_error (op, &error);
      show_error (self, _("Printing failed: %s"), error != NULL ? error->message : "");
    }
}

/* Recomputes the schedule shown, with the same re-plan options (done
 * steps, elapsed time, cryogen left); the print job owns the copy. */
static MpSchedule *
copy_schedule (MpWindow *self, const MpPlan *plan)
{
  MpScheduleOptions opts;

  mp_document_get_schedule_options (self->document, &opts);
  return mp_schedule_compute (plan, &opts, NULL);
}

GtkPrintOperationResult
mp_window_print (MpWindow *self, const char *export_path, GError **error)
{
  g_autoptr (GtkPrintOperation) op = NULL;
  g_autoptr (GtkPageSetup) setup = gtk_page_setup_new ();
  const MpPlan *plan;
  PrintJob *job;
  GtkPaperSize *paper;

  g_return_val_if_fail (MP_IS_WINDOW (self), GTK_PRINT_OPERATION_RESULT_ERROR);

  plan = mp_document_get_schedule_plan (self->document);
  if (plan == NULL)
    {
      g_set_error (error, G_IO_ERROR, G_IO_ERROR_FAILED, _("There is no schedule to print yet"));
      return GTK_PRINT_OPERATION_RESULT_ERROR;
    }
  job = g_new0 (PrintJob, 1);
  job->plan = mp_plan_copy (plan);
  job->schedule = copy_schedule (self, job->plan);
  if (job->schedule == NULL)
    {
      print_job_free (job);
      g_set_error (error, G_IO_ERROR, G_IO_ERROR_FAILED, _("The plan cannot be scheduled"));
      return GTK_PRINT_OPERATION_RESULT_ERROR;
    }
  op = gtk_print_operation_new ();
  paper = gtk_paper_size_new (paper_setting (self) == MP_PAPER_LETTER
                              ? GTK_PAPER_NAME_LETTER : GTK_PAPER_NAME_A4);
  gtk_page_setup_set_paper_size (setup, paper);
  gtk_paper_size_free (paper);
  gtk_print_operation_set_default_page_setup (op, setup);
  /* The run sheet lays itself out in points from the page's top-left. */
  gtk_print_operation_set_unit (op, GTK_UNIT_POINTS);
  gtk_print_operation_set_use_full_page (op, TRUE);
  gtk_print_operation_set_embed_page_setup (op, TRUE);
  gtk_print_operation_set_job_name (op, plan->title != NULL ? plan->title : "mteplan");
  g_object_set_data_full (G_OBJECT (op), "job", job, print_job_free);
  g_signal_connect (op, "begin-print", G_CALLBACK (begin_print_cb), job);
  g_signal_connect (op, "draw-page", G_CALLBACK (draw_page_cb), job);
  if (export_path != NULL)
    {
      gtk_print_operation_set_export_filename (op, export_path);
      return gtk_print_operation_run (op, GTK_PRINT_OPERATION_ACTION_EXPORT, GTK_WINDOW (self), error);
    }
  g_signal_connect (op, "done", G_CALLBACK (print_done_cb), self);
  gtk_print_operation_set_allow_async (op, TRUE);
  return gtk_print_operation_run (op, GTK_PRINT_OPERATION_ACTION_PRINT_DIALOG, GTK_WINDOW (self), error);
}

static void
print_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);
  g_autoptr (GError) error = NULL;

  if (mp_window_print (self, NULL, &error) == GTK_PRINT_OPERATION_RESULT_ERROR)
    show_error (self, _("Printing failed: %s"), error != NULL ? error->message : "");
}

/* ---- Other actions --------------------------------------------------- */

static void
undo_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  mp_document_undo (MP_WINDOW (user_data)->document);
}

static void
redo_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  mp_document_redo (MP_WINDOW (user_data)->document);
}

static void
close_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  gtk_window_close (GTK_WINDOW (user_data));
}

static void
show_page_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  mp_plan_editor_show_page (MP_WINDOW (user_data)->editor, g_variant_get_string (param, NULL));
}

static void
show_plot_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  mp_window_show_plot (MP_WINDOW (user_data), g_variant_get_string (param, NULL));
}

static void
clear_measured_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  mp_document_clear_measured (MP_WINDOW (user_data)->document);
}

static void
unavailable_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
}

static const GActionEntry win_entries[] = {
  { "open", open_action },
  { "open-recent", open_recent_action, "s" },
  { "save", save_action },
  { "save-as", save_as_action },
  { "export-pdf", export_pdf_action },
  { "export-csv", export_csv_action },
  { "print", print_action },
  { "undo", undo_action },
  { "redo", redo_action },
  { "close", close_action },
  { "show-page", show_page_action, "s" },
  { "show-plot", show_plot_action, "s" },
  { "clear-measured", clear_measured_action },
  /* Filled in by the refit and rehearsal dialogs (mp_window_enable_action). */
  { "import-measured", unavailable_action },
  { "rehearse", unavailable_action },
};

void
mp_window_enable_action (MpWindow *self, const char *name, GCallback activate, gpointer user_data)
{
  GAction *action;

  g_return_if_fail (MP_IS_WINDOW (self));
  action = g_action_map_lookup_action (G_ACTION_MAP (self), name);
  g_return_if_fail (G_IS_SIMPLE_ACTION (action));
  g_signal_connect (action, "activate", activate, user_data);
  g_simple_action_set_enabled (G_SIMPLE_ACTION (action), TRUE);
}

/* ---- Closing ---------------------------------------------------------- */

static gboolean
close_idle_cb (gpointer user_data)
{
  gtk_window_close (GTK_WINDOW (user_data));
  return G_SOURCE_REMOVE;
}

static void
close_dialog_response_cb (GtkDialog *dialog, int response, MpWindow *self)
{
  gtk_window_destroy (GTK_WINDOW (dialog));
  if (response == GTK_RESPONSE_REJECT)
    {
      /* Closed once the dialog is gone (it is transient for this window). */
      self->closing_confirmed = TRUE;
      g_idle_add_full (G_PRIORITY_DEFAULT_IDLE, close_idle_cb, g_object_ref (self), g_object_unref);
    }
  else if (response == GTK_RESPONSE_ACCEPT)
    {
      self->close_after_save = TRUE;
      if (mp_document_get_path (self->document) == NULL)
        save_as (self);
      else
        save_to (self, mp_document_get_path (self->document));
    }
}

static void
ask_before_closing (MpWindow *self)
{
  g_autofree char *name = mp_document_get_display_name (self->document);
  GtkWidget *dialog;

  dialog = gtk_message_dialog_new (GTK_WINDOW (self), GTK_DIALOG_MODAL | GTK_DIALOG_DESTROY_WITH_PARENT,
                                   GTK_MESSAGE_QUESTION, GTK_BUTTONS_NONE,
                                   _("Save changes to “%s” before closing?"), name);
  gtk_message_dialog_format_secondary_text (GTK_MESSAGE_DIALOG (dialog),
                                            _("If you close without saving, your changes are lost."));
  gtk_dialog_add_buttons (GTK_DIALOG (dialog),
                          _("Close _without Saving"), GTK_RESPONSE_REJECT,
                          _("_Cancel"), GTK_RESPONSE_CANCEL,
                          _("_Save"), GTK_RESPONSE_ACCEPT,
                          NULL);
  gtk_dialog_set_default_response (GTK_DIALOG (dialog), GTK_RESPONSE_ACCEPT);
  gtk_widget_add_css_class (gtk_dialog_get_widget_for_response (GTK_DIALOG (dialog),
                                                                GTK_RESPONSE_REJECT),
                            "destructive-action");
  gtk_widget_add_css_class (gtk_dialog_get_widget_for_response (GTK_DIALOG (dialog),
                                                                GTK_RESPONSE_ACCEPT),
                            "suggested-action");
  g_signal_connect (dialog, "response", G_CALLBACK (close_dialog_response_cb), self);
  gtk_window_present (GTK_WINDOW (dialog));
}

static void
save_window_size (MpWindow *self)
{
  GSettings *settings = window_settings (self);
  int width, height;

  if (settings == NULL)
    return;
  gtk_window_get_default_size (GTK_WINDOW (self), &width, &height);
  g_settings_set_boolean (settings, "window-maximized", gtk_window_is_maximized (GTK_WINDOW (self)));
  if (!gtk_window_is_maximized (GTK_WINDOW (self)) && width > 0 && height > 0)
    {
      g_settings_set_int (settings, "window-width", width);
      g_settings_set_int (settings, "window-height", height);
    }
}

static gboolean
mp_window_close_request (GtkWindow *window)
{
  MpWindow *self = MP_WINDOW (window);

  if (mp_document_get_modified (self->document) && !self->closing_confirmed)
    {
      ask_before_closing (self);
      return TRUE;
    }
  save_window_size (self);
  remove_autosave (self);
  return GTK_WINDOW_CLASS (mp_window_parent_class)->close_request (window);
}

/* ---- Drag and drop ---------------------------------------------------- */

static gboolean
drop_cb (GtkDropTarget *target, const GValue *value, double x, double y, MpWindow *self)
{
  GSList *files;

  if (!G_VALUE_HOLDS (value, GDK_TYPE_FILE_LIST))
    return FALSE;
  files = g_value_get_boxed (value);
  for (GSList *l = files; l != NULL; l = l->next)
    open_done (self, l->data);
  return files != NULL;
}

/* ---- Layout ------------------------------------------------------------ */

/* Until the user drags a pane, the input pages get about 540 px (at most
 * half the window) and the plots 55 % of the height on the right. */
static void
apply_split (MpWindow *self, GtkPaned *paned)
{
  int max = 0;
  int position;

  g_object_get (paned, "max-position", &max, NULL);
  if (max < 200)
    return;
  if (paned == self->main_paned)
    {
      int min_size, natural;

      gtk_widget_measure (GTK_WIDGET (self->editor), GTK_ORIENTATION_HORIZONTAL, -1,
                          &min_size, &natural, NULL, NULL);
      position = MAX (min_size, MIN (540, gtk_widget_get_width (GTK_WIDGET (paned)) / 2));
      /* A large window shows all plots at once from the start. */
      if (!self->plots_chosen && gtk_widget_get_width (GTK_WIDGET (paned)) >= 1400)
        gtk_stack_set_visible_child_name (self->plot_stack, "all");
      self->plots_chosen = TRUE;
    }
  else
    position = (int) (gtk_widget_get_height (GTK_WIDGET (paned)) * 0.55);
  gtk_paned_set_position (paned, MIN (position, max));
}

static void
pane_max_position_cb (GtkPaned *paned, GParamSpec *pspec, MpWindow *self)
{
  if (g_object_get_data (G_OBJECT (paned), "user-moved") == NULL)
    apply_split (self, paned);
}

/* A press on the pane's handle means the user places it from now on. */
static void
pane_pressed_cb (GtkGestureClick *gesture, int n_press, double x, double y, gpointer user_data)
{
  GtkPaned *paned = GTK_PANED (gtk_event_controller_get_widget (GTK_EVENT_CONTROLLER (gesture)));
  double along = gtk_orientable_get_orientation (GTK_ORIENTABLE (paned)) == GTK_ORIENTATION_HORIZONTAL
                 ? x : y;
  int position = gtk_paned_get_position (paned);

  if (along >= position - 8 && along <= position + 12)
    g_object_set_data (G_OBJECT (paned), "user-moved", GINT_TO_POINTER (1));
}

static void
watch_pane (MpWindow *self, GtkPaned *paned)
{
  GtkGesture *click = gtk_gesture_click_new ();

  gtk_event_controller_set_propagation_phase (GTK_EVENT_CONTROLLER (click), GTK_PHASE_CAPTURE);
  g_signal_connect (click, "pressed", G_CALLBACK (pane_pressed_cb), NULL);
  gtk_widget_add_controller (GTK_WIDGET (paned), GTK_EVENT_CONTROLLER (click));
  g_signal_connect (paned, "notify::max-position", G_CALLBACK (pane_max_position_cb), self);
}

/* ---- Selection between table and plots -------------------------------- */

static void
plot_step_clicked_cb (MpPlotView *view, int index, MpWindow *self)
{
  mp_schedule_view_set_selected_step (self->schedule_view, index);
}

static const struct
{
  MpPlotKind kind;
  const char *name;
  const char *title;
  const char *description;
} plot_pages[] = {
  { MP_PLOT_QE_RATE, "qe", N_("QE & Rate"),
    N_("Quantum efficiency and count rate against photon energy, one curve per temperature") },
  { MP_PLOT_MTE, "mte", N_("MTE"),
    N_("Predicted mean transverse energy against excess energy with target bars") },
  { MP_PLOT_TIMELINE, "timeline", N_("Timeline"),
    N_("Blocks and steps in time with the cryogen level, budget and reserve") },
};

static GtkWidget *
plot_view_new (MpWindow *self, guint i)
{
  GtkWidget *view = mp_plot_view_new (plot_pages[i].kind);

  mp_plot_view_set_document (MP_PLOT_VIEW (view), self->document);
  gtk_accessible_update_property (GTK_ACCESSIBLE (view),
                                  GTK_ACCESSIBLE_PROPERTY_LABEL, _(plot_pages[i].title),
                                  GTK_ACCESSIBLE_PROPERTY_DESCRIPTION, _(plot_pages[i].description),
                                  -1);
  g_signal_connect (view, "step-clicked", G_CALLBACK (plot_step_clicked_cb), self);
  g_object_bind_property (self->schedule_view, "selected-step", view, "selected-step",
                          G_BINDING_DEFAULT);
  return view;
}

/* One page per plot, and a page with all three for large screens. */
static void
add_plots (MpWindow *self)
{
  GtkWidget *grid = gtk_grid_new ();

  for (guint i = 0; i < G_N_ELEMENTS (plot_pages); i++)
    {
      GtkWidget *view = plot_view_new (self, i);

      gtk_stack_add_titled (self->plot_stack, view, plot_pages[i].name, _(plot_pages[i].title));
      self->plots[i] = view;
    }
  gtk_grid_set_row_homogeneous (GTK_GRID (grid), TRUE);
  gtk_grid_set_column_homogeneous (GTK_GRID (grid), TRUE);
  gtk_grid_attach (GTK_GRID (grid), plot_view_new (self, 0), 0, 0, 1, 1);
  gtk_grid_attach (GTK_GRID (grid), plot_view_new (self, 1), 1, 0, 1, 1);
  gtk_grid_attach (GTK_GRID (grid), plot_view_new (self, 2), 0, 1, 2, 1);
  gtk_stack_add_titled (self->plot_stack, grid, "all", _("All Plots"));
}

/* ---- Screenshots (MTEPLAN_SCREENSHOT=file.png) ------------------------ */

static void
select_screenshot_step_cb (MpDocument *document, MpWindow *self)
{
  int step = GPOINTER_TO_INT (g_object_get_data (G_OBJECT (self), "screenshot-step"));

  if (step > 0)
    mp_schedule_view_set_selected_step (self->schedule_view, step);
}

static void
apply_screenshot_measured (MpWindow *self, const char *path)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (path, &error);
  g_autoptr (MpFitResult) fit = NULL;
  MpPlan *plan;

  if (data == NULL)
    {
      show_error (self, "%s", error->message);
      return;
    }
  fit = mp_fit_measured (mp_document_get_plan (self->document), data, NULL, NULL, &error);
  if (fit != NULL)
    {
      plan = mp_document_dup_plan (self->document);
      mp_fit_apply_to_plan (fit, plan);
      mp_document_commit (self->document, plan, NULL);
    }
  g_clear_error (&error);
  if (!mp_document_set_measured (self->document, data, NAN, NAN, &error))
    show_error (self, "%s", error->message);
}

static gboolean
screenshot_cb (gpointer user_data)
{
  MpWindow *self = MP_WINDOW (user_data);
  const char *path = g_getenv ("MTEPLAN_SCREENSHOT");
  GtkNative *native = GTK_NATIVE (self);
  GskRenderer *renderer = gtk_native_get_renderer (native);
  g_autoptr (GdkPaintable) paintable = gtk_widget_paintable_new (GTK_WIDGET (self));
  g_autoptr (GtkSnapshot) snapshot = gtk_snapshot_new ();
  g_autoptr (GskRenderNode) node = NULL;
  g_autoptr (GdkTexture) texture = NULL;
  int width = gtk_widget_get_width (GTK_WIDGET (self));
  int height = gtk_widget_get_height (GTK_WIDGET (self));

  static int tries;

  if ((mp_document_get_busy (self->document) || mp_document_get_schedule_serial (self->document) == 0)
      && tries++ < 40)
    return G_SOURCE_CONTINUE;
  if (g_object_get_data (G_OBJECT (self), "screenshot-measured") != NULL)
    {
      /* As the refit's Accept does: fitted work function, then re-plan. */
      apply_screenshot_measured (self, g_object_get_data (G_OBJECT (self), "screenshot-measured"));
      g_object_set_data (G_OBJECT (self), "screenshot-measured", NULL);
      return G_SOURCE_CONTINUE;
    }
  if (g_object_get_data (G_OBJECT (self), "screenshot-type") != NULL)
    {
      /* KEY=TEXT: typed into a field, to show how a value is refused. */
      g_auto (GStrv) parts = g_strsplit (g_object_get_data (G_OBJECT (self), "screenshot-type"), "=", 2);
      GtkEditable *entry = parts[0] != NULL ? mp_plan_editor_get_entry (self->editor, parts[0]) : NULL;

      if (entry != NULL && parts[1] != NULL)
        gtk_editable_set_text (entry, parts[1]);
      g_object_set_data (G_OBJECT (self), "screenshot-type", NULL);
      return G_SOURCE_CONTINUE;
    }
  if (g_object_get_data (G_OBJECT (self), "screenshot-step") != NULL)
    {
      /* Select the step now that the table is on screen, shoot next tick. */
      select_screenshot_step_cb (self->document, self);
      g_object_set_data (G_OBJECT (self), "screenshot-step", NULL);
      return G_SOURCE_CONTINUE;
    }
  gdk_paintable_snapshot (paintable, GDK_SNAPSHOT (snapshot), width, height);
  node = gtk_snapshot_free_to_node (g_steal_pointer (&snapshot));
  /* Not drawn yet: try again at the next tick. */
  if (node == NULL && tries++ < 40)
    return G_SOURCE_CONTINUE;
  if (node != NULL && renderer != NULL)
    texture = gsk_renderer_render_texture (renderer, node,
                                           &GRAPHENE_RECT_INIT (0, 0, width, height));
  if (texture == NULL || !gdk_texture_save_to_png (texture, path))
    g_printerr ("mteplan: could not write the screenshot %s (%s)\n", path,
                node == NULL ? "nothing drawn" : texture == NULL ? "no texture" : "write failed");
  else
    g_print ("mteplan: wrote %s (%dx%d)\n", path, width, height);
  if (g_getenv ("MTEPLAN_SCREENSHOT_KEEP") == NULL)
    {
      self->closing_confirmed = TRUE;
      g_application_quit (G_APPLICATION (gtk_window_get_application (GTK_WINDOW (self))));
    }
  return G_SOURCE_REMOVE;
}

static void
setup_screenshot (MpWindow *self)
{
  const char *page = g_getenv ("MTEPLAN_SCREENSHOT_PAGE");
  const char *plot = g_getenv ("MTEPLAN_SCREENSHOT_PLOT");
  const char *size = g_getenv ("MTEPLAN_SCREENSHOT_SIZE");
  const char *step = g_getenv ("MTEPLAN_SCREENSHOT_STEP");
  int width, height;

  if (g_getenv ("MTEPLAN_SCREENSHOT") == NULL)
    return;
  if (page != NULL)
    mp_plan_editor_show_page (self->editor, page);
  if (plot != NULL)
    {
      mp_window_show_plot (self, plot);
      self->plots_chosen = TRUE;
    }
  if (size != NULL && sscanf (size, "%dx%d", &width, &height) == 2)
    gtk_window_set_default_size (GTK_WINDOW (self), width, height);
  if (step != NULL)
    g_object_set_data (G_OBJECT (self), "screenshot-step", GINT_TO_POINTER (atoi (step)));
  g_object_set_data_full (G_OBJECT (self), "screenshot-type",
                          g_strdup (g_getenv ("MTEPLAN_SCREENSHOT_TYPE")), g_free);
  g_object_set_data_full (G_OBJECT (self), "screenshot-measured",
                          g_strdup (g_getenv ("MTEPLAN_SCREENSHOT_MEASURED")), g_free);
  g_timeout_add (1500, screenshot_cb, self);
}

/* ---- Recent menu ------------------------------------------------------ */

static void
update_recent_menu (MpWindow *self)
{
  GtkApplication *app = gtk_window_get_application (GTK_WINDOW (self));
  g_auto (GStrv) recent = NULL;

  g_menu_remove_all (self->recent_menu);
  if (!MP_IS_APPLICATION (app))
    return;
  recent = mp_application_dup_recent (MP_APPLICATION (app));
  for (guint i = 0; recent != NULL && recent[i] != NULL && i < 10; i++)
    {
      g_autofree char *label = g_filename_display_basename (recent[i]);
      g_autoptr (GMenuItem) item = g_menu_item_new (label, NULL);

      g_menu_item_set_action_and_target (item, "win.open-recent", "s", recent[i]);
      g_menu_append_item (self->recent_menu, item);
    }
  if (recent == NULL || recent[0] == NULL)
    {
      g_autoptr (GMenuItem) item = g_menu_item_new (_("No recent plans"), "win.no-recent");
      g_menu_append_item (self->recent_menu, item);
    }
}

static void
recent_changed_cb (GSettings *settings, const char *key, MpWindow *self)
{
  update_recent_menu (self);
}

/* ---- Object ----------------------------------------------------------- */

static void
mp_window_constructed (GObject *object)
{
  MpWindow *self = MP_WINDOW (object);
  GSettings *settings;

  G_OBJECT_CLASS (mp_window_parent_class)->constructed (object);

  settings = window_settings (self);
  if (settings != NULL)
    {
      gtk_window_set_default_size (GTK_WINDOW (self),
                                   g_settings_get_int (settings, "window-width"),
                                   g_settings_get_int (settings, "window-height"));
      if (g_settings_get_boolean (settings, "window-maximized"))
        gtk_window_maximize (GTK_WINDOW (self));
      g_signal_connect_object (settings, "changed::recent-files",
                               G_CALLBACK (recent_changed_cb), self, 0);
    }
  update_recent_menu (self);
  setup_screenshot (self);
}

static void
mp_window_dispose (GObject *object)
{
  MpWindow *self = MP_WINDOW (object);

  g_clear_handle_id (&self->autosave_source, g_source_remove);
  if (self->chooser != NULL)
    gtk_native_dialog_destroy (GTK_NATIVE_DIALOG (self->chooser));
  g_clear_object (&self->chooser);
  if (self->document != NULL)
    g_signal_handlers_disconnect_by_data (self->document, self);
  gtk_widget_dispose_template (GTK_WIDGET (self), MP_TYPE_WINDOW);
  G_OBJECT_CLASS (mp_window_parent_class)->dispose (object);
}

static void
mp_window_finalize (GObject *object)
{
  MpWindow *self = MP_WINDOW (object);

  g_clear_object (&self->document);
  g_free (self->autosave_path);
  g_free (self->recover_path);
  g_free (self->error_text);
  G_OBJECT_CLASS (mp_window_parent_class)->finalize (object);
}

static void
mp_window_class_init (MpWindowClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);
  GtkWindowClass *window_class = GTK_WINDOW_CLASS (klass);

  object_class->constructed = mp_window_constructed;
  object_class->dispose = mp_window_dispose;
  object_class->finalize = mp_window_finalize;
  window_class->close_request = mp_window_close_request;

  g_type_ensure (MP_TYPE_PLAN_EDITOR);
  g_type_ensure (MP_TYPE_SCHEDULE_VIEW);
  g_type_ensure (MP_TYPE_PLOT_VIEW);

  gtk_widget_class_set_template_from_resource (widget_class, "/org/mteplan/Planner/mp-window.ui");
  gtk_widget_class_bind_template_child (widget_class, MpWindow, title_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, subtitle_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, spinner);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, error_bar);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, error_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, recover_bar);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, recover_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, main_paned);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, result_paned);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, editor);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, plot_stack);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, schedule_view);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, status_icon);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, status_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, sensitivity_label);
  gtk_widget_class_bind_template_child (widget_class, MpWindow, recent_menu);
  gtk_widget_class_bind_template_callback (widget_class, error_bar_response_cb);
  gtk_widget_class_bind_template_callback (widget_class, recover_bar_response_cb);
}

static void
mp_window_init (MpWindow *self)
{
  static guint counter;
  g_autofree char *dir = mp_autosave_dir ();
  g_autofree char *name = NULL;
  GtkDropTarget *drop;

  gtk_widget_init_template (GTK_WIDGET (self));
  g_action_map_add_action_entries (G_ACTION_MAP (self), win_entries,
                                   G_N_ELEMENTS (win_entries), self);
  g_simple_action_set_enabled (G_SIMPLE_ACTION (g_action_map_lookup_action (G_ACTION_MAP (self),
                                                                            "import-measured")), FALSE);
  g_simple_action_set_enabled (G_SIMPLE_ACTION (g_action_map_lookup_action (G_ACTION_MAP (self),
                                                                            "rehearse")), FALSE);
  mp_rehearse_dialog_install (self);
  mp_refit_dialog_install (self);

  self->document = mp_document_new ();
  g_signal_connect (self->document, "notify::modified", G_CALLBACK (document_state_cb), self);
  g_signal_connect (self->document, "notify::can-undo", G_CALLBACK (document_state_cb), self);
  g_signal_connect (self->document, "notify::can-redo", G_CALLBACK (document_state_cb), self);
  g_signal_connect (self->document, "notify::path", G_CALLBACK (document_state_cb), self);
  g_signal_connect (self->document, "notify::has-measured", G_CALLBACK (document_state_cb), self);
  g_signal_connect (self->document, "notify::busy", G_CALLBACK (busy_cb), self);
  g_signal_connect (self->document, "plan-changed", G_CALLBACK (plan_changed_cb), self);
  g_signal_connect (self->document, "schedule-changed", G_CALLBACK (schedule_changed_cb), self);

  mp_plan_editor_set_document (self->editor, self->document);
  mp_schedule_view_set_document (self->schedule_view, self->document);
  add_plots (self);
  watch_pane (self, self->main_paned);
  watch_pane (self, self->result_paned);

  name = g_strdup_printf ("autosave-%d-%u.mteplan", (int) getpid (), ++counter);
  self->autosave_path = g_build_filename (dir, name, NULL);
  self->autosave_source = g_timeout_add_seconds (AUTOSAVE_INTERVAL_S, autosave_cb, self);

  drop = gtk_drop_target_new (GDK_TYPE_FILE_LIST, GDK_ACTION_COPY);
  g_signal_connect (drop, "drop", G_CALLBACK (drop_cb), self);
  gtk_widget_add_controller (GTK_WIDGET (self), GTK_EVENT_CONTROLLER (drop));

  gtk_widget_set_visible (GTK_WIDGET (self->spinner), FALSE);
  update_title (self);
  update_status (self);
  update_actions (self);
}

MpWindow *
mp_window_new (GtkApplication *application)
{
  return g_object_new (MP_TYPE_WINDOW, "application", application, NULL);
}

MpDocument *
mp_window_get_document (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return self->document;
}

const MpPlan *
mp_window_get_plan (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return mp_document_get_plan (self->document);
}

void
mp_window_set_plan (MpWindow *self, MpPlan *plan)
{
  g_return_if_fail (MP_IS_WINDOW (self));
  mp_document_set_plan (self->document, plan);
}

GtkWidget *
mp_window_get_editor (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return GTK_WIDGET (self->editor);
}

GtkWidget *
mp_window_get_schedule_view (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return GTK_WIDGET (self->schedule_view);
}

const char *
mp_window_get_status_text (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return gtk_label_get_text (self->status_label);
}

const char *
mp_window_get_error_text (MpWindow *self)
{
  g_return_val_if_fail (MP_IS_WINDOW (self), NULL);
  return self->error_text;
}

void
mp_window_show_plot (MpWindow *self, const char *name)
{
  g_return_if_fail (MP_IS_WINDOW (self));
  gtk_stack_set_visible_child_name (self->plot_stack, name);
}
