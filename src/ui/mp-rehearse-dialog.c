/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rehearse-dialog.c: the shift rehearsal in the window. */
#include "config.h"

#include <glib/gi18n.h>
#include <math.h>

#include "mp-plot-histogram.h"
#include "mp-rehearse-dialog.h"

struct _MpRehearseDialog
{
  GtkWindow parent_instance;

  MpDocument *document;
  GCancellable *cancellable;
  MpRehearsal *result;
  MpHistogram *time_histogram;
  MpHistogram *cryogen_histogram;
  gboolean running;
  gboolean disposed;

  GtkSpinButton *trials_spin;
  GtkSpinButton *seed_spin;
  GtkCheckButton *counting_check;
  GtkButton *run_button;
  GtkButton *cancel_button;
  GtkProgressBar *progress_bar;
  GtkLabel *summary_label;
  GtkLabel *steps_label;
  GtkDrawingArea *time_area;
  GtkDrawingArea *cryogen_area;
};

G_DEFINE_FINAL_TYPE (MpRehearseDialog, mp_rehearse_dialog, GTK_TYPE_WINDOW)

enum
{
  PROP_0,
  PROP_DOCUMENT,
  PROP_RUNNING,
  N_PROPS
};

static GParamSpec *properties[N_PROPS];

/* ---- Drawing ------------------------------------------------------------ */

static gboolean
is_dark (GtkWidget *widget)
{
  GdkRGBA fg;

  gtk_style_context_get_color (gtk_widget_get_style_context (widget), &fg);
  return 0.299 * fg.red + 0.587 * fg.green + 0.114 * fg.blue > 0.5;
}

static void
draw_placeholder (GtkWidget *widget, cairo_t *cr, int width, int height, const char *text)
{
  g_autoptr (PangoLayout) layout = gtk_widget_create_pango_layout (widget, text);
  GdkRGBA fg;
  int w, h;

  gtk_style_context_get_color (gtk_widget_get_style_context (widget), &fg);
  pango_layout_set_width (layout, MAX (width - 24, 10) * PANGO_SCALE);
  pango_layout_set_alignment (layout, PANGO_ALIGN_CENTER);
  pango_layout_set_wrap (layout, PANGO_WRAP_WORD_CHAR);
  pango_layout_get_pixel_size (layout, &w, &h);
  cairo_set_source_rgba (cr, fg.red, fg.green, fg.blue, 0.6);
  cairo_move_to (cr, 12, (height - h) / 2.0);
  pango_cairo_show_layout (cr, layout);
}

static void
draw_histogram (MpRehearseDialog *self, GtkDrawingArea *area, cairo_t *cr,
                int width, int height, gboolean time)
{
  const MpHistogram *h = time ? self->time_histogram : self->cryogen_histogram;
  MpHistogramLabels labels = { 0 };
  MpPlotInk ink;

  if (h == NULL || self->result == NULL || !self->result->has_shift)
    {
      draw_placeholder (GTK_WIDGET (area), cr, width, height,
                        time ? _("Total beam time per trial appears here")
                             : _("Total cryogen per trial appears here"));
      return;
    }
  labels.x_label = time ? _("total beam time (h)") : _("total cryogen (L)");
  labels.planned = time ? self->result->planned_beam_time_h : self->result->planned_cryogen_L;
  labels.budget = time ? self->result->beam_time_available_h : self->result->cryogen_available_L;
  mp_plot_ink_init (&ink, is_dark (GTK_WIDGET (area)), FALSE, 10.0);
  mp_plot_histogram (cr, &ink, h, &labels, width, height);
}

static void
draw_time_cb (GtkDrawingArea *area, cairo_t *cr, int width, int height, gpointer user_data)
{
  draw_histogram (MP_REHEARSE_DIALOG (user_data), area, cr, width, height, TRUE);
}

static void
draw_cryogen_cb (GtkDrawingArea *area, cairo_t *cr, int width, int height, gpointer user_data)
{
  draw_histogram (MP_REHEARSE_DIALOG (user_data), area, cr, width, height, FALSE);
}

/* ---- Showing a result --------------------------------------------------- */

static char *
format_shift_summary (const MpRehearsal *r)
{
  return g_strdup_printf (_("Beam time: within the %.2f h available in %.1f %% of %d trials "
                            "(planned %.2f h; 5–95 %%: %.2f–%.2f h; median %.2f h).\n"
                            "Cryogen: within the %.2f L available in %.1f %% of trials "
                            "(planned %.2f L; 5–95 %%: %.2f–%.2f L; median %.2f L).\n"
                            "Both budgets kept in %.1f %% of trials. "
                            "Work function %.3f ± %.3f eV, seed %llu."),
                          r->beam_time_available_h, 100.0 * r->probability_within_beam_time,
                          r->trials, r->planned_beam_time_h,
                          r->beam_time_h_percentiles[0], r->beam_time_h_percentiles[4],
                          r->beam_time_h_percentiles[2],
                          r->cryogen_available_L, 100.0 * r->probability_within_cryogen,
                          r->planned_cryogen_L,
                          r->cryogen_L_percentiles[0], r->cryogen_L_percentiles[4],
                          r->cryogen_L_percentiles[2],
                          100.0 * r->probability_within_both,
                          r->work_function_eV, r->work_function_sigma_eV,
                          (unsigned long long) r->seed);
}

static char *
format_steps_summary (const MpRehearsal *r)
{
  const MpRehearseStep *worst = NULL;
  int wide = 0;

  if (r->steps->len == 0)
    return g_strdup ("");
  for (guint i = 0; i < r->steps->len; i++)
    {
      const MpRehearseStep *s = &g_array_index (r->steps, MpRehearseStep, i);

      if (worst == NULL || s->fraction_within_target < worst->fraction_within_target)
        worst = s;
      if (isfinite (s->mte_spread_meV) && s->mte_spread_meV > 1.1 * s->predicted_sigma_meV)
        wide++;
    }
  return g_strdup_printf (_("Counting noise: %u steps simulated. The lowest share of MTE "
                            "estimates within target is %.1f %% (step %d, %.1f K, %.4f eV). "
                            "Steps whose simulated spread exceeds the predicted sigma by more "
                            "than 10 %%: %d."),
                          r->steps->len, 100.0 * worst->fraction_within_target,
                          worst->index, worst->temperature_K, worst->photon_energy_eV, wide);
}

static void
show_result (MpRehearseDialog *self, MpRehearsal *r)
{
  g_autofree char *summary = NULL;
  g_autofree char *steps = NULL;

  g_clear_pointer (&self->result, mp_rehearsal_free);
  g_clear_pointer (&self->time_histogram, mp_histogram_free);
  g_clear_pointer (&self->cryogen_histogram, mp_histogram_free);
  self->result = r;
  if (r->has_shift)
    {
      self->time_histogram = mp_histogram_new ((const double *) r->beam_time_h->data,
                                               r->beam_time_h->len, 0);
      self->cryogen_histogram = mp_histogram_new ((const double *) r->cryogen_L->data,
                                                  r->cryogen_L->len, 0);
      summary = format_shift_summary (r);
    }
  steps = format_steps_summary (r);
  gtk_label_set_text (self->summary_label, summary != NULL ? summary : "");
  gtk_label_set_text (self->steps_label, steps);
  gtk_widget_queue_draw (GTK_WIDGET (self->time_area));
  gtk_widget_queue_draw (GTK_WIDGET (self->cryogen_area));
}

/* ---- Running ------------------------------------------------------------ */

static void
set_running (MpRehearseDialog *self, gboolean running)
{
  if (self->running == running)
    return;
  self->running = running;
  gtk_widget_set_sensitive (GTK_WIDGET (self->run_button), !running);
  gtk_widget_set_sensitive (GTK_WIDGET (self->cancel_button), running);
  gtk_widget_set_sensitive (GTK_WIDGET (self->trials_spin), !running);
  gtk_widget_set_sensitive (GTK_WIDGET (self->seed_spin), !running);
  gtk_widget_set_sensitive (GTK_WIDGET (self->counting_check), !running);
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_RUNNING]);
}

/* What a running rehearsal knows of its dialog: a weak reference, so that
 * closing the dialog disposes it at once, which cancels the work. The
 * progress messages of a run reach the main context before its result
 * (both are idle sources of the same priority, dispatched in order), so
 * the context is freed last, in run_done_cb. */
typedef struct
{
  GWeakRef dialog;
} RunContext;

static void
progress_cb (double fraction, gpointer user_data)
{
  RunContext *ctx = user_data;
  g_autoptr (MpRehearseDialog) self = g_weak_ref_get (&ctx->dialog);

  if (self == NULL || !self->running || self->disposed)
    return;
  gtk_progress_bar_set_fraction (self->progress_bar, fraction);
}

static void
run_done_cb (GObject *source, GAsyncResult *result, gpointer user_data)
{
  RunContext *ctx = user_data;
  g_autoptr (MpRehearseDialog) self = g_weak_ref_get (&ctx->dialog);
  g_autoptr (GError) error = NULL;
  MpRehearsal *r = mp_rehearse_run_finish (result, &error);

  g_weak_ref_clear (&ctx->dialog);
  g_free (ctx);
  if (self == NULL || self->disposed)
    {
      /* Closed while running: nothing left to show. */
      g_clear_pointer (&r, mp_rehearsal_free);
      return;
    }
  set_running (self, FALSE);
  g_clear_object (&self->cancellable);
  if (r != NULL)
    {
      gtk_progress_bar_set_fraction (self->progress_bar, 1.0);
      gtk_progress_bar_set_text (self->progress_bar, _("Done"));
      show_result (self, r);
    }
  else if (g_error_matches (error, G_IO_ERROR, G_IO_ERROR_CANCELLED))
    {
      gtk_progress_bar_set_text (self->progress_bar, _("Cancelled"));
    }
  else
    {
      gtk_progress_bar_set_text (self->progress_bar, _("Failed"));
      gtk_label_set_text (self->summary_label, error->message);
    }
}

gboolean
mp_rehearse_dialog_run (MpRehearseDialog *self)
{
  const MpSchedule *schedule;
  const MpPlan *plan;
  MpRehearseOptions opts;
  RunContext *ctx;

  g_return_val_if_fail (MP_IS_REHEARSE_DIALOG (self), FALSE);

  if (self->running)
    return FALSE;
  schedule = mp_document_get_schedule (self->document);
  plan = mp_document_get_schedule_plan (self->document);
  if (schedule == NULL || plan == NULL)
    {
      const char *why = mp_document_get_schedule_error (self->document);

      gtk_label_set_text (self->summary_label,
                          why != NULL ? why : _("There is no schedule to rehearse yet: "
                                                "wait for the plan to be scheduled."));
      return FALSE;
    }
  mp_rehearse_options_init (&opts);
  opts.trials = gtk_spin_button_get_value_as_int (self->trials_spin);
  opts.seed = (guint64) gtk_spin_button_get_value_as_int (self->seed_spin);
  opts.threads = CLAMP ((int) g_get_num_processors (), 1, MP_REHEARSE_MAX_THREADS);
  opts.steps = gtk_check_button_get_active (self->counting_check);
  opts.shift = TRUE;

  self->cancellable = g_cancellable_new ();
  gtk_progress_bar_set_fraction (self->progress_bar, 0.0);
  gtk_progress_bar_set_text (self->progress_bar, _("Rehearsing…"));
  set_running (self, TRUE);
  ctx = g_new0 (RunContext, 1);
  g_weak_ref_init (&ctx->dialog, self);
  mp_rehearse_run_async (plan, schedule, &opts, progress_cb, ctx, self->cancellable,
                         run_done_cb, ctx);
  return TRUE;
}

void
mp_rehearse_dialog_cancel (MpRehearseDialog *self)
{
  g_return_if_fail (MP_IS_REHEARSE_DIALOG (self));

  if (self->cancellable != NULL)
    g_cancellable_cancel (self->cancellable);
}

static void
run_clicked_cb (MpRehearseDialog *self, GtkButton *button)
{
  mp_rehearse_dialog_run (self);
}

static void
cancel_clicked_cb (MpRehearseDialog *self, GtkButton *button)
{
  mp_rehearse_dialog_cancel (self);
}

gboolean
mp_rehearse_dialog_get_running (MpRehearseDialog *self)
{
  g_return_val_if_fail (MP_IS_REHEARSE_DIALOG (self), FALSE);

  return self->running;
}

const MpRehearsal *
mp_rehearse_dialog_get_result (MpRehearseDialog *self)
{
  g_return_val_if_fail (MP_IS_REHEARSE_DIALOG (self), NULL);

  return self->result;
}

const char *
mp_rehearse_dialog_get_summary (MpRehearseDialog *self)
{
  g_return_val_if_fail (MP_IS_REHEARSE_DIALOG (self), NULL);

  return gtk_label_get_text (self->summary_label);
}

/* ---- Object ------------------------------------------------------------- */

static gboolean
mp_rehearse_dialog_close_request (GtkWindow *window)
{
  mp_rehearse_dialog_cancel (MP_REHEARSE_DIALOG (window));
  return GTK_WINDOW_CLASS (mp_rehearse_dialog_parent_class)->close_request (window);
}

static void
mp_rehearse_dialog_dispose (GObject *object)
{
  MpRehearseDialog *self = MP_REHEARSE_DIALOG (object);

  self->disposed = TRUE;
  if (self->cancellable != NULL)
    g_cancellable_cancel (self->cancellable);
  g_clear_object (&self->cancellable);
  g_clear_object (&self->document);
  g_clear_pointer (&self->result, mp_rehearsal_free);
  g_clear_pointer (&self->time_histogram, mp_histogram_free);
  g_clear_pointer (&self->cryogen_histogram, mp_histogram_free);
  gtk_widget_dispose_template (GTK_WIDGET (self), MP_TYPE_REHEARSE_DIALOG);
  G_OBJECT_CLASS (mp_rehearse_dialog_parent_class)->dispose (object);
}

static void
mp_rehearse_dialog_get_property (GObject *object, guint prop_id, GValue *value, GParamSpec *pspec)
{
  MpRehearseDialog *self = MP_REHEARSE_DIALOG (object);

  switch (prop_id)
    {
    case PROP_DOCUMENT:
      g_value_set_object (value, self->document);
      break;
    case PROP_RUNNING:
      g_value_set_boolean (value, self->running);
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_rehearse_dialog_set_property (GObject *object, guint prop_id, const GValue *value,
                                 GParamSpec *pspec)
{
  MpRehearseDialog *self = MP_REHEARSE_DIALOG (object);

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
mp_rehearse_dialog_class_init (MpRehearseDialogClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);
  GtkWindowClass *window_class = GTK_WINDOW_CLASS (klass);

  object_class->dispose = mp_rehearse_dialog_dispose;
  object_class->get_property = mp_rehearse_dialog_get_property;
  object_class->set_property = mp_rehearse_dialog_set_property;
  window_class->close_request = mp_rehearse_dialog_close_request;

  properties[PROP_DOCUMENT] =
    g_param_spec_object ("document", NULL, NULL, MP_TYPE_DOCUMENT,
                         G_PARAM_READWRITE | G_PARAM_CONSTRUCT_ONLY | G_PARAM_STATIC_STRINGS);
  properties[PROP_RUNNING] =
    g_param_spec_boolean ("running", NULL, NULL, FALSE,
                          G_PARAM_READABLE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  g_object_class_install_properties (object_class, N_PROPS, properties);

  gtk_widget_class_set_template_from_resource (widget_class,
                                               "/org/mteplan/Planner/mp-rehearse-dialog.ui");
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, trials_spin);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, seed_spin);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, counting_check);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, run_button);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, cancel_button);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, progress_bar);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, summary_label);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, steps_label);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, time_area);
  gtk_widget_class_bind_template_child (widget_class, MpRehearseDialog, cryogen_area);
  gtk_widget_class_bind_template_callback (widget_class, run_clicked_cb);
  gtk_widget_class_bind_template_callback (widget_class, cancel_clicked_cb);
}

static void
mp_rehearse_dialog_init (MpRehearseDialog *self)
{
  gtk_widget_init_template (GTK_WIDGET (self));
  gtk_drawing_area_set_draw_func (self->time_area, draw_time_cb, self, NULL);
  gtk_drawing_area_set_draw_func (self->cryogen_area, draw_cryogen_cb, self, NULL);
  gtk_progress_bar_set_text (self->progress_bar, _("Not run yet"));
}

MpRehearseDialog *
mp_rehearse_dialog_new (GtkWindow *parent, MpDocument *document)
{
  g_return_val_if_fail (MP_IS_DOCUMENT (document), NULL);

  return g_object_new (MP_TYPE_REHEARSE_DIALOG,
                       "document", document,
                       "transient-for", parent,
                       "destroy-with-parent", TRUE,
                       NULL);
}

static void
rehearse_activate_cb (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *window = MP_WINDOW (user_data);
  MpRehearseDialog *dialog = mp_rehearse_dialog_new (GTK_WINDOW (window),
                                                     mp_window_get_document (window));

  gtk_window_present (GTK_WINDOW (dialog));
}

void
mp_rehearse_dialog_install (MpWindow *window)
{
  g_return_if_fail (MP_IS_WINDOW (window));

  mp_window_enable_action (window, "rehearse", G_CALLBACK (rehearse_activate_cb), window);
}
