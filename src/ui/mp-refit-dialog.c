/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-refit-dialog.c: the refit from measured data in the window. */
#include "config.h"

#include <glib/gi18n.h>
#include <math.h>

#include "mp-fit-plot.h"
#include "mp-measured.h"
#include "mp-refit-dialog.h"

struct _MpRefitDialog
{
  GtkWindow parent_instance;

  MpDocument *document;
  GFile *file;
  GCancellable *cancellable;
  MpFitResult *result;
  MpMeasuredData *measured;    /* the points of the last fit */
  char *error;
  gboolean busy;

  GtkButton *import_button;
  GtkButton *accept_button;
  GtkSpinner *spinner;
  GtkLabel *file_label;
  GtkCheckButton *mte_check;
  GtkCheckButton *electron_check;
  GtkLabel *error_label;
  GtkLabel *summary_label;
  GtkDrawingArea *plot_area;
  GtkEntry *elapsed_entry;
  GtkLabel *elapsed_error;
  GtkEntry *cryogen_entry;
  GtkLabel *cryogen_error;
};

G_DEFINE_FINAL_TYPE (MpRefitDialog, mp_refit_dialog, GTK_TYPE_WINDOW)

enum
{
  PROP_0,
  PROP_DOCUMENT,
  PROP_BUSY,
  N_PROPS
};

static GParamSpec *properties[N_PROPS];

/* ---- The fit, off the main thread --------------------------------------- */

typedef struct
{
  MpPlan *plan;
  char *path;
  MpFitOptions options;
} FitJob;

static void
fit_job_free (FitJob *job)
{
  mp_plan_free (job->plan);
  g_free (job->path);
  g_free (job);
}

/* What the thread hands back: the fit and the points it was made from. */
typedef struct
{
  MpFitResult *fit;
  MpMeasuredData *measured;
} FitOutcome;

static void
fit_outcome_free (FitOutcome *outcome)
{
  g_clear_pointer (&outcome->fit, mp_fit_result_free);
  g_clear_pointer (&outcome->measured, mp_measured_data_free);
  g_free (outcome);
}

static void
fit_thread (GTask *task, gpointer source, gpointer data, GCancellable *cancellable)
{
  FitJob *job = data;
  g_autoptr (MpMeasuredData) measured = NULL;
  FitOutcome *outcome;
  MpFitResult *fit;
  GError *error = NULL;

  measured = mp_measured_load_from_file (job->path, &error);
  if (measured == NULL)
    {
      g_task_return_error (task, error);
      return;
    }
  fit = mp_fit_measured (job->plan, measured, &job->options, cancellable, &error);
  if (fit == NULL)
    {
      g_task_return_error (task, error);
      return;
    }
  outcome = g_new0 (FitOutcome, 1);
  outcome->fit = fit;
  outcome->measured = g_steal_pointer (&measured);
  g_task_return_pointer (task, outcome, (GDestroyNotify) fit_outcome_free);
}

static void
set_busy (MpRefitDialog *self, gboolean busy)
{
  if (self->busy == busy)
    return;
  self->busy = busy;
  gtk_spinner_set_spinning (self->spinner, busy);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_BUSY]);
}

/* ---- Showing the result ------------------------------------------------- */

static char *
format_blocks (const MpFitResult *fit)
{
  GString *s = g_string_new (NULL);

  for (guint b = 0; b < fit->blocks->len; b++)
    {
      const MpFitBlock *blk = &g_array_index (fit->blocks, MpFitBlock, b);

      if (!blk->fitted)
        continue;
      g_string_append_printf (s, _("\n%g K: effective temperature %.1f ± %.1f K (%.2f × the cathode, %d QE and %d MTE points)"),
                              blk->temperature_K, blk->effective_temperature_K,
                              blk->effective_temperature_sigma_K, blk->thermal_ratio,
                              blk->n_qe, blk->n_mte);
    }
  return g_string_free (s, FALSE);
}

static char *
format_summary (const MpFitResult *fit, const MpPlan *plan)
{
  g_autofree char *blocks = format_blocks (fit);
  g_autofree char *weights = NULL;

  if (fit->qe_sigma_from_data)
    weights = g_strdup (_("QE weights from qe_sigma"));
  else
    weights = g_strdup_printf (_("QE weights from the scatter (%.1f %%)"), 100.0 * fit->qe_scatter);
  return g_markup_printf_escaped (_("<b>Work function %.4f ± %.4f eV</b> (plan: %.4f ± %.4f eV), "
                                    "%.4f eV with the field\n"
                                    "QE at the plan's reference point %.3g (plan: %.3g)\n"
                                    "Reduced chi-square %.2f with %d degrees of freedom; %s%s"),
                                  fit->work_function_eV, fit->work_function_sigma_eV,
                                  plan->cathode.work_function_eV,
                                  plan->cathode.work_function_sigma_eV,
                                  fit->effective_work_function_eV, fit->qe_at_reference,
                                  plan->cathode.qe_ref, fit->reduced_chi_square, fit->dof,
                                  weights, blocks);
}

static void
show_error (MpRefitDialog *self, const char *message)
{
  g_free (self->error);
  self->error = g_strdup (message);
  gtk_label_set_text (self->error_label, message != NULL ? message : "");
  gtk_widget_set_visible (GTK_WIDGET (self->error_label), message != NULL);
}

/* ---- Re-plan fields ---------------------------------------------------- */

/* Empty text: *value stays (the default). A decimal comma is accepted. */
static gboolean
parse_field (GtkEntry *entry, GtkLabel *error_label, const char *what,
             const char *unit, double *value)
{
  g_autofree char *text = g_strstrip (g_strdup (gtk_editable_get_text (GTK_EDITABLE (entry))));
  g_autofree char *message = NULL;
  char *end = NULL;
  double v;

  g_strdelimit (text, ",", '.');
  if (*text != '\0')
    {
      v = g_ascii_strtod (text, &end);
      if (end == NULL || *end != '\0' || !isfinite (v) || v < 0.0)
        /* TRANSLATORS: "elapsed beam time: enter a number >= 0 h, or leave it empty" */
        message = g_strdup_printf (_("%s: enter a number >= 0 %s, or leave it empty"), what, unit);
      else
        *value = v;
    }
  gtk_label_set_text (error_label, message != NULL ? message : "");
  gtk_widget_set_visible (GTK_WIDGET (error_label), message != NULL);
  if (message != NULL)
    gtk_widget_add_css_class (GTK_WIDGET (entry), "error");
  else
    gtk_widget_remove_css_class (GTK_WIDGET (entry), "error");
  return message == NULL;
}

/* The elapsed beam time and the cryogen left typed, NAN for the defaults
 * (the data's largest elapsed_h; the plan's budget). */
static gboolean
read_replan_fields (MpRefitDialog *self, double *elapsed_h, double *cryogen_left_L)
{
  gboolean ok;

  *elapsed_h = NAN;
  *cryogen_left_L = NAN;
  ok = parse_field (self->elapsed_entry, self->elapsed_error, _("elapsed beam time"), "h", elapsed_h);
  ok &= parse_field (self->cryogen_entry, self->cryogen_error, _("cryogen left"), "L", cryogen_left_L);
  return ok;
}

static void
update_accept (MpRefitDialog *self)
{
  double elapsed_h, cryogen_left_L;
  gboolean fields_ok = read_replan_fields (self, &elapsed_h, &cryogen_left_L);

  gtk_widget_set_sensitive (GTK_WIDGET (self->accept_button), self->result != NULL && fields_ok);
}

static void
update_placeholders (MpRefitDialog *self)
{
  double elapsed_h = self->measured != NULL ? mp_measured_max_elapsed_h (self->measured) : NAN;
  g_autofree char *text = NULL;

  if (isfinite (elapsed_h))
    text = g_strdup_printf (_("%.2f (from the data)"), elapsed_h);
  else
    text = g_strdup (_("0 (the data have no elapsed_h)"));
  gtk_entry_set_placeholder_text (self->elapsed_entry, text);
}

static void
replan_field_changed_cb (MpRefitDialog *self)
{
  update_accept (self);
}

static void
show_result (MpRefitDialog *self)
{
  g_autofree char *summary = NULL;

  if (self->result != NULL)
    summary = format_summary (self->result, mp_document_get_plan (self->document));
  gtk_label_set_markup (self->summary_label, summary != NULL ? summary : "");
  update_placeholders (self);
  update_accept (self);
  gtk_widget_queue_draw (GTK_WIDGET (self->plot_area));
}

static void
fit_done_cb (GObject *source, GAsyncResult *res, gpointer user_data)
{
  g_autoptr (MpRefitDialog) self = user_data;
  g_autoptr (GError) error = NULL;
  FitOutcome *outcome = g_task_propagate_pointer (G_TASK (res), &error);

  if (g_error_matches (error, G_IO_ERROR, G_IO_ERROR_CANCELLED))
    return;  /* a newer fit or the closing dialog took over */
  set_busy (self, FALSE);
  g_clear_pointer (&self->result, mp_fit_result_free);
  g_clear_pointer (&self->measured, mp_measured_data_free);
  if (outcome != NULL)
    {
      self->result = g_steal_pointer (&outcome->fit);
      self->measured = g_steal_pointer (&outcome->measured);
      fit_outcome_free (outcome);
    }
  show_error (self, error != NULL ? error->message : NULL);
  show_result (self);
}

static void
start_fit (MpRefitDialog *self)
{
  FitJob *job;
  g_autoptr (GTask) task = NULL;

  if (self->file == NULL)
    return;
  g_cancellable_cancel (self->cancellable);
  g_clear_object (&self->cancellable);
  self->cancellable = g_cancellable_new ();

  job = g_new0 (FitJob, 1);
  job->plan = mp_document_dup_plan (self->document);
  job->path = g_file_get_path (self->file);
  mp_fit_options_init (&job->options);
  job->options.use_mte = gtk_check_button_get_active (self->mte_check);
  job->options.electron_temperature = gtk_check_button_get_active (self->electron_check);

  task = g_task_new (NULL, self->cancellable, fit_done_cb, g_object_ref (self));
  g_task_set_task_data (task, job, (GDestroyNotify) fit_job_free);
  g_task_set_return_on_cancel (task, TRUE);
  set_busy (self, TRUE);
  g_task_run_in_thread (task, fit_thread);
}

/* ---- Drawing ------------------------------------------------------------ */

static gboolean
is_dark (GtkWidget *widget)
{
  GdkRGBA fg;

  gtk_style_context_get_color (gtk_widget_get_style_context (widget), &fg);
  return 0.299 * fg.red + 0.587 * fg.green + 0.114 * fg.blue > 0.5;
}

static void
draw_plot_cb (GtkDrawingArea *area, cairo_t *cr, int width, int height, gpointer user_data)
{
  MpRefitDialog *self = user_data;
  MpPlotInk ink;

  if (self->result == NULL)
    return;
  mp_plot_ink_init (&ink, is_dark (GTK_WIDGET (area)), FALSE, 10.0);
  mp_fit_plot_draw (cr, self->result, &ink, width, height);
}

/* ---- Actions ------------------------------------------------------------- */

static void
file_chosen_cb (GtkNativeDialog *chooser, int response, gpointer user_data)
{
  MpRefitDialog *self = user_data;

  if (response == GTK_RESPONSE_ACCEPT)
    {
      g_autoptr (GFile) file = gtk_file_chooser_get_file (GTK_FILE_CHOOSER (chooser));

      mp_refit_dialog_load_file (self, file);
    }
  gtk_native_dialog_destroy (chooser);
  g_object_unref (chooser);
}

static void
import_clicked_cb (MpRefitDialog *self)
{
  GtkFileChooserNative *chooser;
  g_autoptr (GtkFileFilter) csv = gtk_file_filter_new ();
  g_autoptr (GtkFileFilter) all = gtk_file_filter_new ();

  chooser = gtk_file_chooser_native_new (_("Import Measured Points"), GTK_WINDOW (self),
                                         GTK_FILE_CHOOSER_ACTION_OPEN, _("_Import"),
                                         _("_Cancel"));
  gtk_file_filter_set_name (csv, _("CSV files"));
  gtk_file_filter_add_suffix (csv, "csv");
  gtk_file_filter_add_mime_type (csv, "text/csv");
  gtk_file_filter_set_name (all, _("All files"));
  gtk_file_filter_add_pattern (all, "*");
  gtk_file_chooser_add_filter (GTK_FILE_CHOOSER (chooser), csv);
  gtk_file_chooser_add_filter (GTK_FILE_CHOOSER (chooser), all);
  gtk_native_dialog_set_modal (GTK_NATIVE_DIALOG (chooser), TRUE);
  g_signal_connect (chooser, "response", G_CALLBACK (file_chosen_cb), self);
  gtk_native_dialog_show (GTK_NATIVE_DIALOG (chooser));
}

static void
option_toggled_cb (MpRefitDialog *self)
{
  start_fit (self);
}

static void
accept_clicked_cb (MpRefitDialog *self)
{
  if (mp_refit_dialog_accept (self))
    gtk_window_close (GTK_WINDOW (self));
}

/* ---- Public API ---------------------------------------------------------- */

void
mp_refit_dialog_load_file (MpRefitDialog *self, GFile *file)
{
  g_autofree char *name = NULL;
  g_autofree char *text = NULL;

  g_return_if_fail (MP_IS_REFIT_DIALOG (self));
  g_return_if_fail (G_IS_FILE (file));

  g_set_object (&self->file, file);
  name = g_file_get_parse_name (file);
  text = g_strdup_printf (_("Measured points from %s"), name);
  gtk_label_set_text (self->file_label, text);
  start_fit (self);
}

gboolean
mp_refit_dialog_get_busy (MpRefitDialog *self)
{
  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), FALSE);

  return self->busy;
}

const MpFitResult *
mp_refit_dialog_get_result (MpRefitDialog *self)
{
  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), NULL);

  return self->result;
}

const char *
mp_refit_dialog_get_error (MpRefitDialog *self)
{
  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), NULL);

  return self->error;
}

gboolean
mp_refit_dialog_accept (MpRefitDialog *self)
{
  g_autoptr (GError) error = NULL;
  double elapsed_h, cryogen_left_L;
  MpPlan *plan;

  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), FALSE);

  if (self->result == NULL || self->measured == NULL || self->busy)
    return FALSE;
  if (!read_replan_fields (self, &elapsed_h, &cryogen_left_L))
    return FALSE;
  plan = mp_document_dup_plan (self->document);
  mp_fit_apply_to_plan (self->result, plan);
  mp_document_commit (self->document, plan, NULL);
  /* Not a plan edit: the re-plan marks the measured steps done. The
   * values were checked above, so this cannot refuse them. */
  if (!mp_document_set_measured (self->document, self->measured, elapsed_h,
                                 cryogen_left_L, &error))
    g_warning ("%s", error->message);
  return TRUE;
}

GtkEditable *
mp_refit_dialog_get_entry (MpRefitDialog *self, const char *key)
{
  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), NULL);
  g_return_val_if_fail (key != NULL, NULL);

  if (g_str_equal (key, "elapsed_h"))
    return GTK_EDITABLE (self->elapsed_entry);
  if (g_str_equal (key, "cryogen_left_L"))
    return GTK_EDITABLE (self->cryogen_entry);
  return NULL;
}

const char *
mp_refit_dialog_get_field_error (MpRefitDialog *self, const char *key)
{
  GtkLabel *label = NULL;

  g_return_val_if_fail (MP_IS_REFIT_DIALOG (self), NULL);
  g_return_val_if_fail (key != NULL, NULL);

  if (g_str_equal (key, "elapsed_h"))
    label = self->elapsed_error;
  else if (g_str_equal (key, "cryogen_left_L"))
    label = self->cryogen_error;
  if (label == NULL || !gtk_widget_get_visible (GTK_WIDGET (label)))
    return NULL;
  return gtk_label_get_text (label);
}

/* ---- GObject ---------------------------------------------------------------- */

static void
mp_refit_dialog_dispose (GObject *object)
{
  MpRefitDialog *self = MP_REFIT_DIALOG (object);

  g_cancellable_cancel (self->cancellable);
  g_clear_object (&self->cancellable);
  g_clear_object (&self->document);
  g_clear_object (&self->file);
  g_clear_pointer (&self->result, mp_fit_result_free);
  g_clear_pointer (&self->measured, mp_measured_data_free);
  g_clear_pointer (&self->error, g_free);
  gtk_widget_dispose_template (GTK_WIDGET (self), MP_TYPE_REFIT_DIALOG);
  G_OBJECT_CLASS (mp_refit_dialog_parent_class)->dispose (object);
}

static void
mp_refit_dialog_get_property (GObject *object, guint prop_id, GValue *value, GParamSpec *pspec)
{
  MpRefitDialog *self = MP_REFIT_DIALOG (object);

  switch (prop_id)
    {
    case PROP_DOCUMENT:
      g_value_set_object (value, self->document);
      break;
    case PROP_BUSY:
      g_value_set_boolean (value, self->busy);
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_refit_dialog_set_property (GObject *object, guint prop_id, const GValue *value, GParamSpec *pspec)
{
  MpRefitDialog *self = MP_REFIT_DIALOG (object);

  switch (prop_id)
    {
    case PROP_DOCUMENT:
      g_set_object (&self->document, g_value_get_object (value));
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_refit_dialog_class_init (MpRefitDialogClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);

  object_class->dispose = mp_refit_dialog_dispose;
  object_class->get_property = mp_refit_dialog_get_property;
  object_class->set_property = mp_refit_dialog_set_property;

  properties[PROP_DOCUMENT] =
    g_param_spec_object ("document", NULL, NULL, MP_TYPE_DOCUMENT,
                         G_PARAM_READWRITE | G_PARAM_CONSTRUCT_ONLY | G_PARAM_STATIC_STRINGS);
  properties[PROP_BUSY] =
    g_param_spec_boolean ("busy", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  g_object_class_install_properties (object_class, N_PROPS, properties);

  gtk_widget_class_set_template_from_resource (widget_class,
                                               "/org/mteplan/Planner/mp-refit-dialog.ui");
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, import_button);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, accept_button);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, spinner);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, file_label);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, mte_check);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, electron_check);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, error_label);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, summary_label);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, plot_area);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, elapsed_entry);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, elapsed_error);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, cryogen_entry);
  gtk_widget_class_bind_template_child (widget_class, MpRefitDialog, cryogen_error);
  gtk_widget_class_bind_template_callback (widget_class, import_clicked_cb);
  gtk_widget_class_bind_template_callback (widget_class, accept_clicked_cb);
  gtk_widget_class_bind_template_callback (widget_class, option_toggled_cb);
  gtk_widget_class_bind_template_callback (widget_class, replan_field_changed_cb);
}

static void
mp_refit_dialog_init (MpRefitDialog *self)
{
  gtk_widget_init_template (GTK_WIDGET (self));
  gtk_drawing_area_set_draw_func (self->plot_area, draw_plot_cb, self, NULL);
  update_placeholders (self);
}

MpRefitDialog *
mp_refit_dialog_new (GtkWindow *parent, MpDocument *document)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (document), NULL);

  return g_object_new (MP_TYPE_REFIT_DIALOG,
                       "document", document,
                       "transient-for", parent,
                       NULL);
}

static void
import_measured_activate_cb (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *window = user_data;
  MpRefitDialog *dialog = mp_refit_dialog_new (GTK_WINDOW (window),
                                               mp_window_get_document (window));

  gtk_window_present (GTK_WINDOW (dialog));
  import_clicked_cb (dialog);
}

void
mp_refit_dialog_install (MpWindow *window)
{
  g_return_if_fail (MP_IS_WINDOW (window));

  mp_window_enable_action (window, "import-measured",
                           G_CALLBACK (import_measured_activate_cb), window);
}
