/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-schedule-view.c: every step column of the run sheet in a
 * GtkColumnView, sortable, with the status as icon and text. */
#include "config.h"

#include <math.h>
#include <glib/gi18n.h>

#include "mp-schedule-view.h"
#include "mp-step-item.h"

typedef enum
{
  COL_TEMPERATURE,
  COL_INDEX,
  COL_KIND,
  COL_WAVELENGTH,
  COL_PHOTON_ENERGY,
  COL_EXCESS,
  COL_TRANSMISSION,
  COL_OD,
  COL_RATE,
  COL_DWELL,
  COL_TARGET,
  COL_REACHED,
  COL_MTE,
  COL_START,
  COL_PRIORITY,
  COL_STATUS,
  N_COLUMNS
} Column;

static const struct
{
  const char *title;
  const char *tooltip;
  int width;
} columns[N_COLUMNS] = {
  { N_("Block T (K)"), N_("Cathode temperature of the block"), 98 },
  { N_("Step"), N_("Step number across the shift"), 50 },
  { N_("Kind"), N_("MTE measurement or QE sweep point"), 76 },
  { N_("λ (nm)"), N_("Laser wavelength"), 68 },
  { N_("hν (eV)"), N_("Photon energy"), 74 },
  { N_("Excess (meV)"), N_("Photon energy above the field-lowered work function"), 112 },
  { N_("Transmission"), N_("Attenuator transmission"), 100 },
  { N_("OD"), N_("Attenuator optical density"), 52 },
  { N_("Rate (1/s)"), N_("Detected signal electrons per second"), 86 },
  { N_("Dwell (s)"), N_("Time spent at this step"), 76 },
  { N_("Target σ (meV)"), N_("Target standard error of the MTE"), 122 },
  { N_("Reached σ (meV)"), N_("Standard error of the MTE reached with this dwell"), 144 },
  { N_("MTE (meV)"), N_("Predicted mean transverse energy"), 96 },
  { N_("Start"), N_("Clock time of the start, or h:mm from the shift start"), 60 },
  { N_("Priority"), N_("1 = most important; larger numbers are left out first"), 66 },
  { N_("Status"), N_("Whether the step reaches its target"), 124 },
};

struct _MpScheduleView
{
  GtkWidget parent_instance;

  GtkWidget *scrolled;
  GtkColumnView *column_view;
  GListStore *store;
  GtkSortListModel *sorted;
  GtkSingleSelection *selection;
  MpDocument *document;
  gulong schedule_handler;
  int selected_step;
  gboolean updating;
  GDateTime *shift_start;    /* NULL: start times from the shift start */
};

G_DEFINE_FINAL_TYPE (MpScheduleView, mp_schedule_view, GTK_TYPE_WIDGET)

enum
{
  PROP_0,
  PROP_SELECTED_STEP,
  N_PROPS
};

static GParamSpec *properties[N_PROPS];

static double
column_value (const MpStep *step, Column column)
{
  switch (column)
    {
    case COL_TEMPERATURE: return step->temperature_K;
    case COL_INDEX: return step->index;
    case COL_KIND: return step->kind;
    case COL_WAVELENGTH: return step->wavelength_nm;
    case COL_PHOTON_ENERGY: return step->photon_energy_eV;
    case COL_EXCESS: return step->excess_energy_eV;
    case COL_TRANSMISSION: return step->transmission;
    case COL_OD: return step->optical_density;
    case COL_RATE: return step->signal_rate_per_s;
    case COL_DWELL: return step->dwell_s;
    case COL_TARGET: return step->target_sigma_meV;
    case COL_REACHED: return step->reached_sigma_meV;
    case COL_MTE: return step->mte_meV;
    case COL_START: return step->start_h;
    case COL_PRIORITY: return step->priority;
    case COL_STATUS: return step->done ? -1.0 : (double) step->status;
    case N_COLUMNS:
    default: return 0;
    }
}

static char *
format_value (const MpStep *step, Column column)
{
  double v = column_value (step, column);

  switch (column)
    {
    case COL_TEMPERATURE: return g_strdup_printf ("%.0f", v);
    case COL_INDEX: return g_strdup_printf ("%d", step->index);
    case COL_KIND:
      return g_strdup (step->kind == MP_STEP_KIND_QE_SWEEP ? _("QE sweep") : _("MTE"));
    case COL_WAVELENGTH: return g_strdup_printf ("%.1f", v);
    case COL_PHOTON_ENERGY: return g_strdup_printf ("%.4f", v);
    case COL_EXCESS: return g_strdup_printf ("%+.1f", v * 1000.0);
    case COL_TRANSMISSION: return g_strdup_printf ("%.3g", v);
    case COL_OD: return g_strdup_printf ("%.2f", v);
    case COL_RATE:
      return v >= 1.0 && v < 1e6 ? g_strdup_printf ("%.0f", v) : g_strdup_printf ("%.3g", v);
    case COL_DWELL: return g_strdup_printf ("%.0f", v);
    case COL_TARGET:
    case COL_REACHED:
      return isfinite (v) ? g_strdup_printf ("%.2f", v) : g_strdup ("–");
    case COL_MTE: return g_strdup_printf ("%.1f", v);
    case COL_START:
      {
        int minutes = (int) lround (v * 60.0);
        return g_strdup_printf ("%d:%02d", minutes / 60, minutes % 60);
      }
    case COL_PRIORITY: return g_strdup_printf ("%d", step->priority);
    case COL_STATUS:
      if (step->done)
        return g_strdup (_("Done"));
      switch (step->status)
        {
        case MP_STEP_OK: return g_strdup (_("On target"));
        case MP_STEP_SHORT: return g_strdup (_("Short"));
        case MP_STEP_UNREACHABLE: return g_strdup (_("Unreachable"));
        default: return g_strdup ("?");
        }
    case N_COLUMNS:
    default:
      return g_strdup ("");
    }
}

static const char *
status_icon (const MpStep *step)
{
  if (step->done)
    return "checkbox-checked-symbolic";
  switch (step->status)
    {
    case MP_STEP_OK: return "object-select-symbolic";
    case MP_STEP_SHORT: return "dialog-warning-symbolic";
    case MP_STEP_UNREACHABLE: return "dialog-error-symbolic";
    default: return "dialog-question-symbolic";
    }
}

static void
setup_cb (GtkSignalListItemFactory *factory, GtkListItem *item, gpointer user_data)
{
  Column column = GPOINTER_TO_INT (user_data);
  GtkWidget *label = gtk_label_new (NULL);

  if (column == COL_STATUS)
    {
      GtkWidget *box = gtk_box_new (GTK_ORIENTATION_HORIZONTAL, 6);

      gtk_box_append (GTK_BOX (box), gtk_image_new ());
      gtk_label_set_xalign (GTK_LABEL (label), 0.0);
      gtk_box_append (GTK_BOX (box), label);
      gtk_list_item_set_child (item, box);
      return;
    }
  gtk_label_set_xalign (GTK_LABEL (label), column == COL_KIND ? 0.0 : 1.0);
  gtk_widget_add_css_class (label, "numeric");
  gtk_list_item_set_child (item, label);
}

static void
bind_cb (GtkSignalListItemFactory *factory, GtkListItem *item, gpointer user_data)
{
  Column column = GPOINTER_TO_INT (user_data);
  MpStepItem *step_item = gtk_list_item_get_item (item);
  const MpStep *step = mp_step_item_get_step (step_item);
  GtkWidget *child = gtk_list_item_get_child (item);
  char *text = format_value (step, column);
  GtkWidget *label = child;

  if (column == COL_STATUS)
    {
      GtkWidget *image = gtk_widget_get_first_child (child);

      label = gtk_widget_get_next_sibling (image);
      gtk_image_set_from_icon_name (GTK_IMAGE (image), status_icon (step));
      gtk_widget_remove_css_class (image, "warning");
      gtk_widget_remove_css_class (image, "error");
      gtk_widget_remove_css_class (image, "success");
      /* A done step's prediction no longer matters: no colour. */
      if (!step->done)
        gtk_widget_add_css_class (image, step->status == MP_STEP_OK ? "success"
                                  : step->status == MP_STEP_SHORT ? "warning" : "error");
    }
  if (column == COL_START)
    {
      MpScheduleView *self = g_object_get_data (G_OBJECT (factory), "view");

      if (self != NULL && self->shift_start != NULL)
        {
          g_autoptr (GDateTime) at = g_date_time_add_seconds (self->shift_start, step->start_h * 3600.0);

          g_free (text);
          text = g_date_time_format (at, "%H:%M");
        }
    }
  gtk_label_set_text (GTK_LABEL (label), text);
  g_free (text);
  /* Done steps greyed, their values struck through as on the run sheet;
   * the status says "Done". */
  if (step->done)
    {
      gtk_widget_add_css_class (child, "dim-label");
      if (column != COL_STATUS)
        gtk_widget_add_css_class (child, "step-done");
    }
  else
    {
      gtk_widget_remove_css_class (child, "dim-label");
      gtk_widget_remove_css_class (child, "step-done");
    }
}

static int
compare_cb (gconstpointer a, gconstpointer b, gpointer user_data)
{
  Column column = GPOINTER_TO_INT (user_data);
  const MpStep *sa = mp_step_item_get_step ((MpStepItem *) a);
  const MpStep *sb = mp_step_item_get_step ((MpStepItem *) b);
  double va = column_value (sa, column);
  double vb = column_value (sb, column);

  if (va < vb)
    return GTK_ORDERING_SMALLER;
  if (va > vb)
    return GTK_ORDERING_LARGER;
  return sa->index < sb->index ? GTK_ORDERING_SMALLER
         : sa->index > sb->index ? GTK_ORDERING_LARGER : GTK_ORDERING_EQUAL;
}

/* The order shown: what the operator needs first on the left. */
static const Column column_order[N_COLUMNS] = {
  COL_INDEX, COL_TEMPERATURE, COL_KIND, COL_STATUS, COL_WAVELENGTH, COL_PHOTON_ENERGY,
  COL_EXCESS, COL_MTE, COL_TARGET, COL_REACHED, COL_DWELL, COL_START, COL_RATE,
  COL_TRANSMISSION, COL_OD, COL_PRIORITY,
};

static void
add_columns (MpScheduleView *self)
{
  for (int i = 0; i < N_COLUMNS; i++)
    {
      Column c = column_order[i];
      GtkListItemFactory *factory = gtk_signal_list_item_factory_new ();
      GtkColumnViewColumn *column;
      GtkSorter *sorter;

      g_signal_connect (factory, "setup", G_CALLBACK (setup_cb), GINT_TO_POINTER (c));
      g_signal_connect (factory, "bind", G_CALLBACK (bind_cb), GINT_TO_POINTER (c));
      g_object_set_data (G_OBJECT (factory), "view", self);
      column = gtk_column_view_column_new (_(columns[c].title), factory);
      sorter = GTK_SORTER (gtk_custom_sorter_new (compare_cb, GINT_TO_POINTER (c), NULL));
      gtk_column_view_column_set_sorter (column, sorter);
      gtk_column_view_column_set_resizable (column, TRUE);
      gtk_column_view_column_set_fixed_width (column, columns[c].width);
      gtk_column_view_append_column (self->column_view, column);
      g_object_unref (sorter);
      g_object_unref (column);
    }
}

static guint
find_position (MpScheduleView *self, int index)
{
  GListModel *model = G_LIST_MODEL (self->sorted);
  guint n = g_list_model_get_n_items (model);

  for (guint i = 0; i < n; i++)
    {
      g_autoptr (MpStepItem) item = g_list_model_get_item (model, i);

      if (mp_step_item_get_index (item) == index)
        return i;
    }
  return GTK_INVALID_LIST_POSITION;
}

static void
scroll_to (MpScheduleView *self, guint position)
{
  /* GTK 4.8 has no gtk_column_view_scroll_to(): use the inner list's action. */
  for (GtkWidget *child = gtk_widget_get_first_child (GTK_WIDGET (self->column_view));
       child != NULL; child = gtk_widget_get_next_sibling (child))
    if (GTK_IS_LIST_VIEW (child))
      gtk_widget_activate_action (child, "list.scroll-to-item", "u", position);
}

void
mp_schedule_view_set_selected_step (MpScheduleView *self, int index)
{
  guint position;

  g_return_if_fail (MP_IS_SCHEDULE_VIEW (self));

  position = index > 0 ? find_position (self, index) : GTK_INVALID_LIST_POSITION;
  self->updating = TRUE;
  gtk_single_selection_set_selected (self->selection, position);
  self->updating = FALSE;
  if (position != GTK_INVALID_LIST_POSITION)
    scroll_to (self, position);
  if (self->selected_step != index)
    {
      self->selected_step = index;
      g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_SELECTED_STEP]);
    }
}

int
mp_schedule_view_get_selected_step (MpScheduleView *self)
{
  g_return_val_if_fail (MP_IS_SCHEDULE_VIEW (self), 0);
  return self->selected_step;
}

static void
selection_changed_cb (GtkSingleSelection *selection, GParamSpec *pspec, gpointer user_data)
{
  MpScheduleView *self = MP_SCHEDULE_VIEW (user_data);
  MpStepItem *item;
  int index;

  if (self->updating)
    return;
  item = gtk_single_selection_get_selected_item (selection);
  index = item != NULL ? mp_step_item_get_index (item) : 0;
  if (index != self->selected_step)
    {
      self->selected_step = index;
      g_object_notify_by_pspec (G_OBJECT (self), properties[PROP_SELECTED_STEP]);
    }
}

static void
fill_store (MpScheduleView *self)
{
  const MpSchedule *schedule = self->document != NULL
                               ? mp_document_get_schedule (self->document) : NULL;
  g_autoptr (GPtrArray) items = g_ptr_array_new_with_free_func (g_object_unref);
  int keep = self->selected_step;
  const MpPlan *plan = self->document != NULL ? mp_document_get_schedule_plan (self->document) : NULL;

  g_clear_pointer (&self->shift_start, g_date_time_unref);
  if (plan != NULL && plan->shift_start != NULL)
    self->shift_start = g_date_time_new_from_iso8601 (plan->shift_start, NULL);

  if (schedule != NULL)
    for (guint b = 0; b < schedule->blocks->len; b++)
      {
        const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

        for (guint i = 0; i < block->steps->len; i++)
          g_ptr_array_add (items, mp_step_item_new (&g_array_index (block->steps, MpStep, i)));
      }

  self->updating = TRUE;
  g_list_store_splice (self->store, 0, g_list_model_get_n_items (G_LIST_MODEL (self->store)),
                       items->pdata, items->len);
  self->updating = FALSE;
  mp_schedule_view_set_selected_step (self, keep > 0 && find_position (self, keep) != GTK_INVALID_LIST_POSITION ? keep : 0);
}

static void
schedule_changed_cb (MpDocument *document, gpointer user_data)
{
  fill_store (MP_SCHEDULE_VIEW (user_data));
}

void
mp_schedule_view_set_document (MpScheduleView *self, MpDocument *document)
{
  g_return_if_fail (MP_IS_SCHEDULE_VIEW (self));

  if (self->document == document)
    return;
  if (self->document != NULL)
    g_clear_signal_handler (&self->schedule_handler, self->document);
  g_set_object (&self->document, document);
  if (document != NULL)
    self->schedule_handler = g_signal_connect (document, "schedule-changed",
                                               G_CALLBACK (schedule_changed_cb), self);
  fill_store (self);
}

GListModel *
mp_schedule_view_get_model (MpScheduleView *self)
{
  g_return_val_if_fail (MP_IS_SCHEDULE_VIEW (self), NULL);
  return G_LIST_MODEL (self->sorted);
}

static void
mp_schedule_view_dispose (GObject *object)
{
  MpScheduleView *self = MP_SCHEDULE_VIEW (object);

  mp_schedule_view_set_document (self, NULL);
  g_clear_pointer (&self->scrolled, gtk_widget_unparent);
  g_clear_object (&self->store);
  g_clear_pointer (&self->shift_start, g_date_time_unref);
  G_OBJECT_CLASS (mp_schedule_view_parent_class)->dispose (object);
}

static void
mp_schedule_view_get_property (GObject    *object,
                               guint       prop_id,
                               GValue     *value,
                               GParamSpec *pspec)
{
  MpScheduleView *self = MP_SCHEDULE_VIEW (object);

  switch (prop_id)
    {
    case PROP_SELECTED_STEP:
      g_value_set_int (value, self->selected_step);
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_schedule_view_set_property (GObject      *object,
                               guint         prop_id,
                               const GValue *value,
                               GParamSpec   *pspec)
{
  MpScheduleView *self = MP_SCHEDULE_VIEW (object);

  switch (prop_id)
    {
    case PROP_SELECTED_STEP:
      mp_schedule_view_set_selected_step (self, g_value_get_int (value));
      break;
    default:
      G_OBJECT_WARN_INVALID_PROPERTY_ID (object, prop_id, pspec);
    }
}

static void
mp_schedule_view_class_init (MpScheduleViewClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);

  object_class->dispose = mp_schedule_view_dispose;
  object_class->get_property = mp_schedule_view_get_property;
  object_class->set_property = mp_schedule_view_set_property;

  properties[PROP_SELECTED_STEP] =
    g_param_spec_int ("selected-step", NULL, NULL, 0, G_MAXINT, 0,
                      G_PARAM_READWRITE | G_PARAM_EXPLICIT_NOTIFY | G_PARAM_STATIC_STRINGS);
  g_object_class_install_properties (object_class, N_PROPS, properties);

  gtk_widget_class_set_layout_manager_type (widget_class, GTK_TYPE_BIN_LAYOUT);
}

static void
mp_schedule_view_init (MpScheduleView *self)
{
  GtkSorter *sorter;

  self->store = g_list_store_new (MP_TYPE_STEP_ITEM);
  self->column_view = GTK_COLUMN_VIEW (gtk_column_view_new (NULL));
  add_columns (self);
  sorter = gtk_column_view_get_sorter (self->column_view);
  self->sorted = gtk_sort_list_model_new (G_LIST_MODEL (g_object_ref (self->store)),
                                          g_object_ref (sorter));
  self->selection = gtk_single_selection_new (G_LIST_MODEL (self->sorted));
  gtk_single_selection_set_autoselect (self->selection, FALSE);
  gtk_single_selection_set_can_unselect (self->selection, TRUE);
  g_signal_connect (self->selection, "notify::selected",
                    G_CALLBACK (selection_changed_cb), self);
  gtk_column_view_set_model (self->column_view, GTK_SELECTION_MODEL (self->selection));
  g_object_unref (self->selection);
  gtk_column_view_set_show_column_separators (self->column_view, TRUE);
  gtk_widget_add_css_class (GTK_WIDGET (self->column_view), "data-table");
  gtk_accessible_update_property (GTK_ACCESSIBLE (self->column_view),
                                  GTK_ACCESSIBLE_PROPERTY_LABEL, _("Schedule steps"), -1);

  self->scrolled = gtk_scrolled_window_new ();
  gtk_scrolled_window_set_child (GTK_SCROLLED_WINDOW (self->scrolled),
                                 GTK_WIDGET (self->column_view));
  gtk_widget_set_parent (self->scrolled, GTK_WIDGET (self));
  gtk_widget_set_hexpand (GTK_WIDGET (self), TRUE);
  gtk_widget_set_vexpand (GTK_WIDGET (self), TRUE);
}

GtkWidget *
mp_schedule_view_new (void)
{
  return g_object_new (MP_TYPE_SCHEDULE_VIEW, NULL);
}
