/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plot-view.c: draws a plot with the shared cairo code, shows the
 * nearest step's numbers on hover and reports clicks on steps. */
#include "config.h"

#include <glib/gi18n.h>

#include "mp-plot-view.h"
#include "mp-step-item.h"

struct _MpPlotView
{
  GtkWidget parent_instance;

  MpPlotKind kind;
  MpDocument *document;
  gulong schedule_handler;
  int selected_step;
};

G_DEFINE_FINAL_TYPE (MpPlotView, mp_plot_view, GTK_TYPE_WIDGET)

enum
{
  PROP_0,
  PROP_KIND,
  PROP_SELECTED_STEP,
  N_PROPS
};

static GParamSpec *properties[N_PROPS];

enum
{
  STEP_CLICKED,
  N_SIGNALS
};

static guint signals[N_SIGNALS];

static gboolean
is_dark (GtkWidget *widget)
{
  GdkRGBA fg;

  gtk_style_context_get_color (gtk_widget_get_style_context (widget), &fg);
  return 0.299 * fg.red + 0.587 * fg.green + 0.114 * fg.blue > 0.5;
}

static void
draw_message (MpPlotView *self, cairo_t *cr, const char *message, double width, double height)
{
  g_autoptr (PangoLayout) layout = gtk_widget_create_pango_layout (GTK_WIDGET (self), message);
  GdkRGBA fg;
  int w, h;

  gtk_style_context_get_color (gtk_widget_get_style_context (GTK_WIDGET (self)), &fg);
  pango_layout_set_width (layout, (int) (MAX (width - 24, 10) * PANGO_SCALE));
  pango_layout_set_alignment (layout, PANGO_ALIGN_CENTER);
  pango_layout_set_wrap (layout, PANGO_WRAP_WORD_CHAR);
  pango_layout_get_pixel_size (layout, &w, &h);
  cairo_set_source_rgba (cr, fg.red, fg.green, fg.blue, 0.7);
  cairo_move_to (cr, 12, (height - h) / 2.0);
  pango_cairo_show_layout (cr, layout);
}

static void
mp_plot_view_snapshot (GtkWidget *widget, GtkSnapshot *snapshot)
{
  MpPlotView *self = MP_PLOT_VIEW (widget);
  double width = gtk_widget_get_width (widget);
  double height = gtk_widget_get_height (widget);
  const MpSchedule *schedule = NULL;
  const MpPlan *plan = NULL;
  cairo_t *cr;

  if (width < 2 || height < 2)
    return;

  cr = gtk_snapshot_append_cairo (snapshot, &GRAPHENE_RECT_INIT (0, 0, width, height));
  if (self->document != NULL)
    {
      schedule = mp_document_get_schedule (self->document);
      plan = mp_document_get_schedule_plan (self->document);
    }

  if (schedule != NULL && plan != NULL)
    {
      MpPlotStyle style;

      mp_plot_style_init (&style);
      style.dark = is_dark (widget);
      style.selected_step = self->selected_step;
      mp_plot_draw (cr, self->kind, plan, schedule, &style, width, height);
    }
  else if (self->document != NULL && mp_document_get_schedule_error (self->document) != NULL)
    {
      g_autofree char *msg = g_strdup_printf (_("No schedule: %s"),
                                              mp_document_get_schedule_error (self->document));
      draw_message (self, cr, msg, width, height);
    }
  else
    draw_message (self, cr, _("Planning…"), width, height);

  cairo_destroy (cr);
}

static int
hit_test (MpPlotView *self, double x, double y)
{
  const MpSchedule *schedule;
  const MpPlan *plan;

  if (self->document == NULL)
    return 0;
  schedule = mp_document_get_schedule (self->document);
  plan = mp_document_get_schedule_plan (self->document);
  if (schedule == NULL || plan == NULL)
    return 0;
  return mp_plot_hit_test (self->kind, plan, schedule,
                           gtk_widget_get_width (GTK_WIDGET (self)),
                           gtk_widget_get_height (GTK_WIDGET (self)), x, y);
}

static gboolean
query_tooltip_cb (GtkWidget  *widget,
                  int         x,
                  int         y,
                  gboolean    keyboard_mode,
                  GtkTooltip *tooltip,
                  gpointer    user_data)
{
  MpPlotView *self = MP_PLOT_VIEW (widget);
  const MpStep *step;
  int index;
  g_autofree char *text = NULL;

  if (keyboard_mode)
    index = self->selected_step;
  else
    index = hit_test (self, x, y);
  if (index <= 0)
    return FALSE;
  step = mp_schedule_find_step_by_index (mp_document_get_schedule (self->document), index);
  if (step == NULL)
    return FALSE;
  text = mp_step_describe (step);
  gtk_tooltip_set_text (tooltip, text);
  return TRUE;
}

static void
pressed_cb (GtkGestureClick *gesture,
            int              n_press,
            double           x,
            double           y,
            gpointer         user_data)
{
  MpPlotView *self = MP_PLOT_VIEW (user_data);
  int index = hit_test (self, x, y);

  if (index > 0)
    {
      mp_plot_view_set_selected_step (self, index);
      g_signal_emit (self, signals[STEP_CLICKED], 0, index);
    }
}

static void
schedule_changed_cb (MpDocument *document, gpointer user_data)
{
  gtk_widget_queue_draw (GTK_WIDGET (user_data));
}

void
mp_plot_view_set_document (MpPlotView *self, MpDocument *document)
{
  g_return_if_fail (MP_IS_PLOT_VIEW (self));

  if (self->document == document)
    return;
  if (self->document != NULL)
    g_clear_signal_handler (&self->schedule_handler, self->document);
  g_set_object (&self->document, document);
  if (document != NULL)
    self->schedule_handler = g_signal_connect (document, "schedule-changed",
                                               G_CALLBACK (schedule_changed_cb), self);
  gtk_widget_queue_draw (GTK_WIDGET (self));
}

static void
mp_plot_view_dispose (GObject *object)
{
  mp_plot_view_set_document (MP_PLOT_VIEW (object), NULL);
  G_OBJECT_CLASS (mp_plot_view_parent_class)->dispose (object);
}

static void
mp_plot_view_css_changed (GtkWidget *widget, GtkCssStyleChange *change)
{
  GTK_WIDGET_CLASS (mp_plot_view_parent_class)->css_changed (widget, change);
  gtk_widget_queue_draw (widget);
}

static void
mp_plot_view_measure (GtkWidget      *widget,
                      GtkOrientation  orientation,
                      int             for_size,
                      int            *minimum,
                      int            *natural,
                      int            *minimum_baseline,
                      int            *natural_baseline)
{
  *minimum = orientation == GTK_ORIENTATION_HORIZONTAL ? 160 : 120;
  *natural = orientation == GTK_ORIENTATION_HORIZONTAL ? 520 : 300;
}

static void
mp_plot_view_get_property (GObject    *object,
                           guint       prop_id,
                           GValue     *value,
                           GParamSpec *pspec)
{
  MpPlotView *self = MP_PLOT_VIEW (object);

  switch (prop_id)
    {
    case PROP_KIND:
      g_value_set_int (value, self->kind);
      break;
    case PROP_SELECTED_STEP:
      g_value_set_int (value, self->selected_step);
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_plot_view_set_property (GObject      *object,
                           guint         prop_id,
                           const GValue *value,
                           GParamSpec   *pspec)
{
  MpPlotView *self = MP_PLOT_VIEW (object);

  switch (prop_id)
    {
    case PROP_KIND:
      self->kind = g_value_get_int (value);
      gtk_widget_queue_draw (GTK_WIDGET (self));
      break;
    case PROP_SELECTED_STEP:
      mp_plot_view_set_selected_step (self, g_value_get_int (value));
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_plot_view_class_init (MpPlotViewClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);

  object_class->dispose = mp_plot_view_dispose;
  object_class->get_property = mp_plot_view_get_property;
  object_class->set_property = mp_plot_view_set_property;
  widget_class->snapshot = mp_plot_view_snapshot;
  widget_class->measure = mp_plot_view_measure;
  widget_class->css_changed = mp_plot_view_css_changed;

  properties[PROP_KIND] =
    g_param_spec_int ("kind", NULL, NULL, MP_PLOT_QE_RATE, MP_PLOT_TIMELINE, MP_PLOT_QE_RATE,
                      G_PARAM_READWRITE | G_PARAM_CONSTRUCT_ONLY | G_PARAM_STATIC_STRINGS);
  properties[PROP_SELECTED_STEP] =
    g_param_spec_int ("selected-step", NULL, NULL, 0, G_MAXINT, 0,
                      G_PARAM_READWRITE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  g_object_class_install_properties (object_class, N_PROPS, properties);

  signals[STEP_CLICKED] =
    g_signal_new ("step-clicked", G_TYPE_FROM_CLASS (klass), G_SIGNAL_RUN_LAST,
                  0, NULL, NULL, NULL, G_TYPE_NONE, 1, G_TYPE_INT);

  gtk_widget_class_set_css_name (widget_class, "plotview");
  gtk_widget_class_set_accessible_role (widget_class, GTK_ACCESSIBLE_ROLE_IMG);
}

static void
mp_plot_view_init (MpPlotView *self)
{
  GtkGesture *click = gtk_gesture_click_new ();

  gtk_widget_set_has_tooltip (GTK_WIDGET (self), TRUE);
  g_signal_connect (self, "query-tooltip", G_CALLBACK (query_tooltip_cb), NULL);
  g_signal_connect (click, "pressed", G_CALLBACK (pressed_cb), self);
  gtk_widget_add_controller (GTK_WIDGET (self), GTK_EVENT_CONTROLLER (click));
  gtk_widget_set_hexpand (GTK_WIDGET (self), TRUE);
  gtk_widget_set_vexpand (GTK_WIDGET (self), TRUE);
}

GtkWidget *
mp_plot_view_new (MpPlotKind kind)
{
  return g_object_new (MP_TYPE_PLOT_VIEW, "kind", kind, NULL);
}

MpPlotKind
mp_plot_view_get_kind (MpPlotView *self)
{
  g_return_val_if_fail (MP_IS_PLOT_VIEW (self), MP_PLOT_QE_RATE);
  return self->kind;
}

void
mp_plot_view_set_selected_step (MpPlotView *self, int index)
{
  g_return_if_fail (MP_IS_PLOT_VIEW (self));

  if (self->selected_step == index)
    return;
  self->selected_step = index;
  gtk_widget_queue_draw (GTK_WIDGET (self));
  g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_SELECTED_STEP]);
}

int
mp_plot_view_get_selected_step (MpPlotView *self)
{
  g_return_val_if_fail (MP_IS_PLOT_VIEW (self), 0);
  return self->selected_step;
}
