/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-editor.c: input pages built from field tables. No ranges are
 * known here: a value is accepted when the core accepts the plan that
 * would result (mp_plan_validate), and refused with the core's message. */
#include "config.h"

#include <math.h>
#include <stddef.h>
#include <glib/gi18n.h>

#include "mp-plan-editor.h"
#include "mp-tuning-csv.h"

typedef enum
{
  SCOPE_PLAN,
  SCOPE_BLOCK,
  SCOPE_RANGE,
  SCOPE_POINT
} Scope;

typedef enum
{
  TYPE_DOUBLE,
  TYPE_INT,
  TYPE_STRING,
  TYPE_OPT_STRING,     /* empty text: NULL */
  TYPE_HEADING         /* not a field: a heading in the form */
} FieldType;

typedef struct
{
  const char *key;     /* plan path; rows: a template with one %d */
  const char *label;   /* with a mnemonic */
  const char *unit;
  const char *tooltip;
  Scope scope;
  FieldType type;
  gsize offset;
} FieldDesc;

typedef struct
{
  MpPlanEditor *self;
  const FieldDesc *desc;
  int row;
  char *key;
  GtkWidget *entry;
  GtkWidget *error;
} Field;

typedef struct
{
  const char *key;
  const char *label;
  gsize offset;
  const char *const *choices;
} ChoiceDesc;

struct _MpPlanEditor
{
  GtkWidget parent_instance;

  GtkWidget *paned;
  GtkStack *stack;
  MpDocument *document;
  gulong plan_handler;

  GPtrArray *fields;         /* Field*, scalar fields of the plan */
  GPtrArray *row_fields;     /* Field*, blocks, range and points */
  GPtrArray *choices;        /* GtkDropDown* with "choice-desc" data */
  GHashTable *errors;        /* key -> message shown (for tests) */

  GtkWidget *blocks_grid;
  GtkWidget *blocks_error;
  GtkWidget *range_box;      /* range fields and points, rebuilt */
  GtkWidget *range_dropdown;
  GtkStringList *range_names;
  GtkWidget *points_error;
  int range_index;
  guint n_blocks_shown;
  guint n_points_shown;
  guint n_ranges_shown;

  GtkFileChooserNative *chooser;
  gboolean committing;
  gboolean refreshing;
};

G_DEFINE_FINAL_TYPE (MpPlanEditor, mp_plan_editor, GTK_TYPE_WIDGET)

#define PLAN_FIELD(key, label, unit, tip, member, type) \
  { key, label, unit, tip, SCOPE_PLAN, type, G_STRUCT_OFFSET (MpPlan, member) }

static const FieldDesc cathode_fields[] = {
  PLAN_FIELD ("cathode.label", N_("Sa_mple"), NULL,
              N_("Name of the cathode sample"), cathode.label, TYPE_STRING),
  PLAN_FIELD ("cathode.work_function_eV", N_("_Work function"), "eV",
              N_("Bare work function φ of the surface"), cathode.work_function_eV, TYPE_DOUBLE),
  PLAN_FIELD ("cathode.work_function_sigma_eV", N_("Work function _uncertainty"), "eV",
              N_("Standard uncertainty of φ; the status line shows the plan at φ ± σ"),
              cathode.work_function_sigma_eV, TYPE_DOUBLE),
  PLAN_FIELD ("cathode.field_MV_per_m", N_("Surface _field"), "MV/m",
              N_("Extraction field at the cathode (Schottky lowering)"), cathode.field_MV_per_m, TYPE_DOUBLE),
  { "", N_("QE reference"), NULL, NULL, SCOPE_PLAN, TYPE_HEADING, 0 },
  PLAN_FIELD ("cathode.qe_reference.photon_energy_eV", N_("_Photon energy"), "eV",
              N_("Photon energy at which the reference QE was measured"),
              cathode.qe_ref_photon_energy_eV, TYPE_DOUBLE),
  PLAN_FIELD ("cathode.qe_reference.temperature_K", N_("_Temperature"), "K",
              N_("Cathode temperature of the reference QE"), cathode.qe_ref_temperature_K, TYPE_DOUBLE),
  PLAN_FIELD ("cathode.qe_reference.qe", N_("_QE"), N_("e⁻/photon"),
              N_("Quantum efficiency measured at the reference point"), cathode.qe_ref, TYPE_DOUBLE),
  { "", N_("Model"), NULL, NULL, SCOPE_PLAN, TYPE_HEADING, 0 },
  PLAN_FIELD ("cathode.extra_mte_meV", N_("_Extra MTE"), "meV",
              N_("MTE added to the model (roughness, field non-uniformity)"),
              cathode.extra_mte_meV, TYPE_DOUBLE),
  { NULL }
};

static const FieldDesc laser_fields[] = {
  PLAN_FIELD ("laser.repetition_rate_kHz", N_("_Repetition rate"), "kHz",
              N_("Laser pulse repetition rate"), laser.repetition_rate_kHz, TYPE_DOUBLE),
  PLAN_FIELD ("laser.bandwidth_meV", N_("_Bandwidth"), "meV",
              N_("RMS width of the laser line"), laser.bandwidth_meV, TYPE_DOUBLE),
  PLAN_FIELD ("laser.retune_s", N_("Re_tune time"), "s",
              N_("Time to move to the next wavelength"), laser.retune_s, TYPE_DOUBLE),
  PLAN_FIELD ("laser.wavelength_step_nm", N_("_Wavelength step"), "nm",
              N_("Smallest wavelength increment of the laser"), laser.wavelength_step_nm, TYPE_DOUBLE),
  { NULL }
};

static const FieldDesc detector_fields[] = {
  PLAN_FIELD ("detector.efficiency", N_("_Efficiency"), N_("fraction"),
              N_("Fraction of emitted electrons that are detected"), detector.efficiency, TYPE_DOUBLE),
  PLAN_FIELD ("detector.max_electrons_per_pulse", N_("Max electrons per _pulse"), N_("e⁻/pulse"),
              N_("Highest mean number of electrons per pulse (space charge, pile-up)"),
              detector.max_electrons_per_pulse, TYPE_DOUBLE),
  PLAN_FIELD ("detector.max_rate_per_s", N_("Max _count rate"), "1/s",
              N_("Highest detected count rate"), detector.max_rate_per_s, TYPE_DOUBLE),
  PLAN_FIELD ("detector.dark_rate_per_s", N_("_Dark rate"), "1/s",
              N_("Background counts without light"), detector.dark_rate_per_s, TYPE_DOUBLE),
  PLAN_FIELD ("detector.acceptance_meV", N_("_Acceptance"), "meV",
              N_("Largest transverse energy the detector accepts"), detector.acceptance_meV, TYPE_DOUBLE),
  PLAN_FIELD ("detector.resolution_meV", N_("_Resolution"), "meV",
              N_("Transverse-energy resolution"), detector.resolution_meV, TYPE_DOUBLE),
  PLAN_FIELD ("detector.systematic_meV", N_("S_ystematic floor"), "meV",
              N_("MTE uncertainty that no dwell time removes"), detector.systematic_meV, TYPE_DOUBLE),
  { NULL }
};

static const FieldDesc cryostat_fields[] = {
  PLAN_FIELD ("cryostat.budget_L", N_("Cryogen _budget"), "L",
              N_("Liquid available for the shift"), cryostat.budget_L, TYPE_DOUBLE),
  PLAN_FIELD ("cryostat.reserve_L", N_("_Reserve"), "L",
              N_("Liquid that must remain at the end"), cryostat.reserve_L, TYPE_DOUBLE),
  { NULL }
};

static const FieldDesc shift_fields[] = {
  PLAN_FIELD ("title", N_("_Title"), NULL, N_("Title of the plan"), title, TYPE_STRING),
  PLAN_FIELD ("beam_time_h", N_("_Beam time"), "h",
              N_("Beam time available for the shift"), beam_time_h, TYPE_DOUBLE),
  PLAN_FIELD ("shift_start", N_("Shift st_art"), N_("ISO 8601"),
              N_("Start of the shift, e.g. 2026-03-14T08:00; empty for elapsed time"),
              shift_start, TYPE_OPT_STRING),
  { NULL }
};

static const FieldDesc scan_fields[] = {
  PLAN_FIELD ("scan.excess_min_eV", N_("_Lowest excess energy"), "eV",
              N_("Lowest photon energy above the effective work function (may be negative)"),
              scan.excess_min_eV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.excess_max_eV", N_("_Highest excess energy"), "eV",
              N_("Highest photon energy above the effective work function"), scan.excess_max_eV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.step_eV", N_("Ste_p"), "eV", N_("Photon energy step"), scan.step_eV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.fine_step_eV", N_("_Fine step"), "eV",
              N_("Step near the threshold; 0 for none"), scan.fine_step_eV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.fine_halfwidth_eV", N_("Fine half-_width"), "eV",
              N_("Half-width of the fine region around the threshold"), scan.fine_halfwidth_eV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.target_mte_sigma_meV", N_("Target _MTE σ"), "meV",
              N_("Absolute target standard error of each MTE"), scan.target_mte_sigma_meV, TYPE_DOUBLE),
  PLAN_FIELD ("scan.target_mte_sigma_rel", N_("Target relative σ"), N_("fraction"),
              N_("Relative target standard error; the larger target applies"), scan.target_mte_sigma_rel, TYPE_DOUBLE),
  PLAN_FIELD ("scan.min_dwell_s", N_("Mi_nimum dwell"), "s", N_("Shortest time at a step"), scan.min_dwell_s, TYPE_DOUBLE),
  PLAN_FIELD ("scan.max_dwell_s", N_("Ma_ximum dwell"), "s",
              N_("Longest time at a step; longer needs make the step short"), scan.max_dwell_s, TYPE_DOUBLE),
  PLAN_FIELD ("scan.qe_sweep_points", N_("_QE sweep points"), N_("points"),
              N_("Cheap QE points at the start of each block; 0 for none"), scan.qe_sweep_points, TYPE_INT),
  PLAN_FIELD ("scan.qe_sweep_dwell_s", N_("QE sweep _dwell"), "s",
              N_("Dwell of each QE sweep point"), scan.qe_sweep_dwell_s, TYPE_DOUBLE),
  { NULL }
};

#define BLOCK_FIELD(key, label, unit, member) \
  { key, label, unit, NULL, SCOPE_BLOCK, TYPE_DOUBLE, G_STRUCT_OFFSET (MpTemperatureBlock, member) }

static const FieldDesc block_fields[] = {
  BLOCK_FIELD ("temperatures[%d].temperature_K", N_("Temperature"), "K", temperature_K),
  BLOCK_FIELD ("temperatures[%d].settle_min", N_("Settle"), "min", settle_min),
  BLOCK_FIELD ("temperatures[%d].cooldown_L", N_("Cool-down"), "L", cooldown_L),
  BLOCK_FIELD ("temperatures[%d].hold_L_per_h", N_("Hold"), "L/h", hold_L_per_h),
  { NULL }
};

static const FieldDesc range_fields[] = {
  { "laser.tuning_ranges[%d].label", N_("Range _name"), NULL, N_("Name of the tuning range"),
    SCOPE_RANGE, TYPE_OPT_STRING, G_STRUCT_OFFSET (MpTuningRange, label) },
  { "laser.tuning_ranges[%d].switch_s", N_("Switc_h time"), "s", N_("Time to switch into this range"),
    SCOPE_RANGE, TYPE_DOUBLE, G_STRUCT_OFFSET (MpTuningRange, switch_s) },
  { NULL }
};

static const FieldDesc point_fields[] = {
  { "laser.tuning_curve[%d].wavelength_nm", N_("Wavelength"), "nm", NULL,
    SCOPE_POINT, TYPE_DOUBLE, G_STRUCT_OFFSET (MpTuningPoint, wavelength_nm) },
  { "laser.tuning_curve[%d].pulse_energy_uJ", N_("Pulse energy"), "µJ", NULL,
    SCOPE_POINT, TYPE_DOUBLE, G_STRUCT_OFFSET (MpTuningPoint, pulse_energy_uJ) },
  { NULL }
};

static const char *const cryogen_choices[] = { N_("Liquid helium"), N_("Liquid nitrogen"), NULL };
static const char *const order_choices[] = { N_("High photon energy first"),
                                             N_("Low photon energy first"), NULL };
static const char *const policy_choices[] = { N_("Leave out the least useful steps"),
                                              N_("Loosen all targets"), NULL };

static const ChoiceDesc cryogen_choice = { "cryostat.cryogen", N_("_Cryogen"),
                                           G_STRUCT_OFFSET (MpPlan, cryostat.cryogen), cryogen_choices };
static const ChoiceDesc order_choice = { "scan.order", N_("Scan o_rder"),
                                         G_STRUCT_OFFSET (MpPlan, scan.order), order_choices };
static const ChoiceDesc policy_choice = { "over_budget", N_("O_ver budget"),
                                          G_STRUCT_OFFSET (MpPlan, over_budget), policy_choices };

static void rebuild_rows (MpPlanEditor *self);

static void
field_free (gpointer data)
{
  Field *field = data;

  g_free (field->key);
  g_free (field);
}

static MpTuningRange *
current_range (MpPlanEditor *self, const MpPlan *plan)
{
  if (plan->laser.ranges == NULL || plan->laser.ranges->len == 0)
    return NULL;
  if (self->range_index < 0 || (guint) self->range_index >= plan->laser.ranges->len)
    self->range_index = 0;
  return g_ptr_array_index (plan->laser.ranges, self->range_index);
}

static gpointer
field_ptr (MpPlanEditor *self, const MpPlan *plan, Field *field)
{
  MpTuningRange *range;

  switch (field->desc->scope)
    {
    case SCOPE_PLAN:
      return (char *) plan + field->desc->offset;
    case SCOPE_BLOCK:
      if ((guint) field->row >= plan->temperatures->len)
        return NULL;
      return (char *) &g_array_index (plan->temperatures, MpTemperatureBlock, field->row)
             + field->desc->offset;
    case SCOPE_RANGE:
      range = current_range (self, plan);
      return range != NULL ? (char *) range + field->desc->offset : NULL;
    case SCOPE_POINT:
      range = current_range (self, plan);
      if (range == NULL || (guint) field->row >= range->points->len)
        return NULL;
      return (char *) &g_array_index (range->points, MpTuningPoint, field->row)
             + field->desc->offset;
    default:
      return NULL;
    }
}

static char *
format_field (Field *field, gconstpointer ptr)
{
  char buf[G_ASCII_DTOSTR_BUF_SIZE];

  switch (field->desc->type)
    {
    case TYPE_DOUBLE:
      return g_strdup (g_ascii_formatd (buf, sizeof buf, "%.10g", *(const double *) ptr));
    case TYPE_INT:
      return g_strdup_printf ("%d", *(const int *) ptr);
    case TYPE_STRING:
    case TYPE_OPT_STRING:
    default:
      return g_strdup (*(char *const *) ptr != NULL ? *(char *const *) ptr : "");
    }
}

static gboolean
parse_number (const char *text, double *value)
{
  g_autofree char *copy = g_strstrip (g_strdup (text));
  char *end = NULL;

  /* Accept a decimal comma as well as a point. */
  g_strdelimit (copy, ",", '.');
  if (*copy == '\0')
    return FALSE;
  *value = g_ascii_strtod (copy, &end);
  return end != NULL && *end == '\0' && isfinite (*value);
}

/* Stores text into the field of a candidate plan; FALSE with a message when
 * the text is not a value of the field's type at all. */
static gboolean
store_text (Field *field, gpointer ptr, const char *text, char **message)
{
  double value;

  switch (field->desc->type)
    {
    case TYPE_DOUBLE:
      if (!parse_number (text, &value))
        {
          *message = g_strdup_printf (_("%s: enter a number, such as 12.5 or 2e-6"), field->key);
          return FALSE;
        }
      *(double *) ptr = value;
      return TRUE;
    case TYPE_INT:
      if (!parse_number (text, &value) || value != floor (value) || fabs (value) > G_MAXINT)
        {
          *message = g_strdup_printf (_("%s: enter a whole number"), field->key);
          return FALSE;
        }
      *(int *) ptr = (int) value;
      return TRUE;
    case TYPE_OPT_STRING:
      g_free (*(char **) ptr);
      *(char **) ptr = *text != '\0' ? g_strdup (text) : NULL;
      return TRUE;
    case TYPE_STRING:
    default:
      g_free (*(char **) ptr);
      *(char **) ptr = g_strdup (text);
      return TRUE;
    }
}

static void
show_error (MpPlanEditor *self, Field *field, const char *message)
{
  gboolean bad = message != NULL;

  gtk_label_set_text (GTK_LABEL (field->error), bad ? message : "");
  gtk_widget_set_visible (field->error, bad);
  gtk_widget_set_tooltip_text (field->entry, bad ? message
                               : field->desc->tooltip != NULL ? _(field->desc->tooltip) : NULL);
  if (bad)
    {
      gtk_widget_add_css_class (field->entry, "error");
      g_hash_table_insert (self->errors, g_strdup (field->key), g_strdup (message));
    }
  else
    {
      gtk_widget_remove_css_class (field->entry, "error");
      g_hash_table_remove (self->errors, field->key);
    }
  gtk_accessible_update_state (GTK_ACCESSIBLE (field->entry), GTK_ACCESSIBLE_STATE_INVALID,
                               bad ? GTK_ACCESSIBLE_INVALID_TRUE : GTK_ACCESSIBLE_INVALID_FALSE, -1);
  gtk_accessible_update_property (GTK_ACCESSIBLE (field->entry),
                                  GTK_ACCESSIBLE_PROPERTY_DESCRIPTION,
                                  bad ? message : "", -1);
}

static void
show_table_error (GtkWidget *label, const char *message)
{
  gtk_label_set_text (GTK_LABEL (label), message != NULL ? message : "");
  gtk_widget_set_visible (label, message != NULL);
}

/* Commits a candidate that the core accepts; otherwise returns the reason. */
static gboolean
try_commit (MpPlanEditor *self, MpPlan *candidate, const char *merge_key, char **message)
{
  g_autoptr (GError) error = NULL;

  if (!mp_plan_validate (candidate, &error))
    {
      *message = g_strdup (error->message);
      mp_plan_free (candidate);
      return FALSE;
    }
  self->committing = TRUE;
  mp_document_commit (self->document, candidate, merge_key);
  self->committing = FALSE;
  return TRUE;
}

static void
entry_changed_cb (GtkEditable *editable, gpointer user_data)
{
  Field *field = user_data;
  MpPlanEditor *self = field->self;
  g_autofree char *message = NULL;
  g_autofree char *current = NULL;
  MpPlan *candidate;
  gpointer ptr;

  if (self->refreshing || self->document == NULL)
    return;

  ptr = field_ptr (self, mp_document_get_plan (self->document), field);
  if (ptr == NULL)
    return;
  current = format_field (field, ptr);
  if (g_strcmp0 (current, gtk_editable_get_text (editable)) == 0)
    {
      show_error (self, field, NULL);
      return;
    }

  candidate = mp_document_dup_plan (self->document);
  if (!store_text (field, field_ptr (self, candidate, field),
                   gtk_editable_get_text (editable), &message))
    {
      mp_plan_free (candidate);
      show_error (self, field, message);
      return;
    }
  if (!try_commit (self, candidate, field->key, &message))
    {
      show_error (self, field, message);
      return;
    }
  show_error (self, field, NULL);
}

static Field *
field_new (MpPlanEditor *self, const FieldDesc *desc, int row)
{
  Field *field = g_new0 (Field, 1);

  field->self = self;
  field->desc = desc;
  field->row = row;
  if (desc->scope == SCOPE_PLAN)
    field->key = g_strdup (desc->key);
  else
    {
#pragma GCC diagnostic push
#pragma GCC diagnostic ignored "-Wformat-nonliteral"
      field->key = g_strdup_printf (desc->key, row);
#pragma GCC diagnostic pop
    }

  field->entry = gtk_entry_new ();
  gtk_editable_set_width_chars (GTK_EDITABLE (field->entry),
                                desc->type == TYPE_STRING || desc->type == TYPE_OPT_STRING ? 16 : 10);
  /* Ctrl+Z goes to the document's history, which covers every field. */
  gtk_editable_set_enable_undo (GTK_EDITABLE (field->entry), FALSE);
  if (desc->type == TYPE_DOUBLE || desc->type == TYPE_INT)
    gtk_entry_set_input_purpose (GTK_ENTRY (field->entry), GTK_INPUT_PURPOSE_NUMBER);
  if (desc->tooltip != NULL)
    gtk_widget_set_tooltip_text (field->entry, _(desc->tooltip));
  field->error = gtk_label_new (NULL);
  gtk_label_set_xalign (GTK_LABEL (field->error), 0.0);
  gtk_label_set_wrap (GTK_LABEL (field->error), TRUE);
  gtk_label_set_max_width_chars (GTK_LABEL (field->error), 36);
  gtk_widget_add_css_class (field->error, "error");
  gtk_widget_add_css_class (field->error, "caption");
  gtk_widget_set_visible (field->error, FALSE);
  gtk_accessible_update_relation (GTK_ACCESSIBLE (field->entry),
                                  GTK_ACCESSIBLE_RELATION_DESCRIBED_BY, field->error, NULL, -1);
  g_signal_connect (field->entry, "changed", G_CALLBACK (entry_changed_cb), field);
  return field;
}

static GtkWidget *
unit_label (const char *unit)
{
  GtkWidget *label = gtk_label_new (unit != NULL ? _(unit) : "");

  gtk_label_set_xalign (GTK_LABEL (label), 0.0);
  gtk_widget_add_css_class (label, "dim-label");
  return label;
}

/* Adds label / entry / unit and the error line below to a form grid. */
static void
add_form_field (MpPlanEditor *self, GtkGrid *grid, int *row, Field *field)
{
  GtkWidget *label = gtk_label_new_with_mnemonic (_(field->desc->label));

  gtk_label_set_xalign (GTK_LABEL (label), 1.0);
  gtk_label_set_mnemonic_widget (GTK_LABEL (label), field->entry);
  gtk_widget_set_hexpand (field->entry, field->desc->type == TYPE_STRING
                                        || field->desc->type == TYPE_OPT_STRING);
  gtk_grid_attach (grid, label, 0, *row, 1, 1);
  if (field->desc->type == TYPE_STRING
      || (field->desc->type == TYPE_OPT_STRING && field->desc->unit == NULL))
    gtk_grid_attach (grid, field->entry, 1, *row, 2, 1);
  else
    {
      gtk_grid_attach (grid, field->entry, 1, *row, 1, 1);
      gtk_grid_attach (grid, unit_label (field->desc->unit), 2, *row, 1, 1);
    }
  gtk_grid_attach (grid, field->error, 1, *row + 1, 2, 1);
  *row += 2;
}

static GtkGrid *
form_grid_new (void)
{
  GtkWidget *grid = gtk_grid_new ();

  gtk_grid_set_row_spacing (GTK_GRID (grid), 4);
  gtk_grid_set_column_spacing (GTK_GRID (grid), 8);
  return GTK_GRID (grid);
}

static GtkWidget *
heading_new (const char *text)
{
  GtkWidget *label = gtk_label_new (text);

  gtk_label_set_xalign (GTK_LABEL (label), 0.0);
  gtk_widget_add_css_class (label, "heading");
  gtk_widget_set_margin_top (label, 12);
  return label;
}

static void
add_fields (MpPlanEditor *self, GtkGrid *grid, int *row, const FieldDesc *descs)
{
  for (const FieldDesc *desc = descs; desc->key != NULL; desc++)
    {
      Field *field;

      if (desc->type == TYPE_HEADING)
        {
          gtk_grid_attach (grid, heading_new (_(desc->label)), 0, *row, 3, 1);
          *row += 1;
          continue;
        }
      field = field_new (self, desc, 0);

      g_ptr_array_add (self->fields, field);
      add_form_field (self, grid, row, field);
    }
}

static void
choice_changed_cb (GtkDropDown *dropdown, GParamSpec *pspec, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  const ChoiceDesc *desc = g_object_get_data (G_OBJECT (dropdown), "choice-desc");
  GtkWidget *error = g_object_get_data (G_OBJECT (dropdown), "choice-error");
  g_autofree char *message = NULL;
  guint selected = gtk_drop_down_get_selected (dropdown);
  MpPlan *candidate;

  if (self->refreshing || self->document == NULL || selected == GTK_INVALID_LIST_POSITION)
    return;
  if (*(const int *) ((const char *) mp_document_get_plan (self->document) + desc->offset)
      == (int) selected)
    return;
  candidate = mp_document_dup_plan (self->document);
  *(int *) ((char *) candidate + desc->offset) = (int) selected;
  if (!try_commit (self, candidate, NULL, &message))
    show_table_error (error, message);
  else
    show_table_error (error, NULL);
}

static void
add_choice (MpPlanEditor *self, GtkGrid *grid, int *row, const ChoiceDesc *desc)
{
  g_autoptr (GtkStringList) list = gtk_string_list_new (NULL);
  GtkWidget *label = gtk_label_new_with_mnemonic (_(desc->label));
  GtkWidget *dropdown;
  GtkWidget *error = gtk_label_new (NULL);

  for (const char *const *c = desc->choices; *c != NULL; c++)
    gtk_string_list_append (list, _(*c));
  dropdown = gtk_drop_down_new (G_LIST_MODEL (g_steal_pointer (&list)), NULL);
  gtk_label_set_xalign (GTK_LABEL (label), 1.0);
  gtk_label_set_mnemonic_widget (GTK_LABEL (label), dropdown);
  gtk_widget_add_css_class (error, "error");
  gtk_widget_add_css_class (error, "caption");
  gtk_label_set_xalign (GTK_LABEL (error), 0.0);
  gtk_label_set_wrap (GTK_LABEL (error), TRUE);
  gtk_widget_set_visible (error, FALSE);
  g_object_set_data (G_OBJECT (dropdown), "choice-desc", (gpointer) desc);
  g_object_set_data (G_OBJECT (dropdown), "choice-error", error);
  g_signal_connect (dropdown, "notify::selected", G_CALLBACK (choice_changed_cb), self);
  g_ptr_array_add (self->choices, dropdown);
  gtk_grid_attach (grid, label, 0, *row, 1, 1);
  gtk_grid_attach (grid, dropdown, 1, *row, 2, 1);
  gtk_grid_attach (grid, error, 1, *row + 1, 2, 1);
  *row += 2;
}

static GtkWidget *
page_new (MpPlanEditor *self, const char *name, const char *title, GtkWidget **box_out)
{
  GtkWidget *scrolled = gtk_scrolled_window_new ();
  GtkWidget *box = gtk_box_new (GTK_ORIENTATION_VERTICAL, 6);

  gtk_scrolled_window_set_policy (GTK_SCROLLED_WINDOW (scrolled),
                                  GTK_POLICY_AUTOMATIC, GTK_POLICY_AUTOMATIC);
  gtk_scrolled_window_set_propagate_natural_width (GTK_SCROLLED_WINDOW (scrolled), TRUE);
  gtk_widget_set_margin_start (box, 12);
  gtk_widget_set_margin_end (box, 12);
  gtk_widget_set_margin_top (box, 6);
  gtk_widget_set_margin_bottom (box, 12);
  gtk_scrolled_window_set_child (GTK_SCROLLED_WINDOW (scrolled), box);
  gtk_stack_add_titled (self->stack, scrolled, name, title);
  *box_out = box;
  return scrolled;
}

static GtkWidget *
icon_button_new (const char *icon, const char *tooltip, GCallback callback, gpointer data)
{
  GtkWidget *button = gtk_button_new_from_icon_name (icon);

  gtk_widget_set_tooltip_text (button, tooltip);
  gtk_accessible_update_property (GTK_ACCESSIBLE (button), GTK_ACCESSIBLE_PROPERTY_LABEL,
                                  tooltip, -1);
  gtk_widget_add_css_class (button, "flat");
  g_signal_connect (button, "clicked", callback, data);
  return button;
}

/* ---- Cathode, detector, scan pages ---------------------------------- */

static void
build_simple_page (MpPlanEditor *self, const char *name, const char *title,
                   const FieldDesc *descs, const char *intro)
{
  GtkWidget *box;
  GtkGrid *grid = form_grid_new ();
  int row = 0;

  page_new (self, name, title, &box);
  if (intro != NULL)
    {
      GtkWidget *label = gtk_label_new (intro);

      gtk_label_set_wrap (GTK_LABEL (label), TRUE);
      gtk_label_set_max_width_chars (GTK_LABEL (label), 34);
      gtk_label_set_xalign (GTK_LABEL (label), 0.0);
      gtk_widget_add_css_class (label, "dim-label");
      gtk_box_append (GTK_BOX (box), label);
    }
  add_fields (self, grid, &row, descs);
  gtk_box_append (GTK_BOX (box), GTK_WIDGET (grid));
}

static void
build_scan_page (MpPlanEditor *self)
{
  GtkWidget *box;
  GtkGrid *grid = form_grid_new ();
  GtkGrid *grid2 = form_grid_new ();
  int row = 0;

  page_new (self, "scan", _("Scan & Budget"), &box);
  gtk_box_append (GTK_BOX (box), heading_new (_("Shift")));
  add_fields (self, grid, &row, shift_fields);
  add_choice (self, grid, &row, &policy_choice);
  gtk_box_append (GTK_BOX (box), GTK_WIDGET (grid));
  gtk_box_append (GTK_BOX (box), heading_new (_("Photon energy scan")));
  row = 0;
  add_fields (self, grid2, &row, scan_fields);
  add_choice (self, grid2, &row, &order_choice);
  gtk_box_append (GTK_BOX (box), GTK_WIDGET (grid2));
}

/* ---- Temperature blocks --------------------------------------------- */

/* Commits a table edit (a row added, removed or moved) and shows the
 * core's reason under the table when it refuses. */
static void
commit_table_edit (MpPlanEditor *self, MpPlan *candidate, GtkWidget *error_label)
{
  g_autofree char *message = NULL;

  if (!try_commit (self, candidate, NULL, &message))
    show_table_error (error_label, message);
  else
    {
      show_table_error (error_label, NULL);
      rebuild_rows (self);
    }
}

static void
block_op (MpPlanEditor *self, int row, int op)
{
  MpPlan *candidate = mp_document_dup_plan (self->document);
  GArray *blocks = candidate->temperatures;

  if (op == 0 && row >= 0 && (guint) row < blocks->len)
    g_array_remove_index (blocks, row);
  else if (op != 0 && row + op >= 0 && (guint) (row + op) < blocks->len)
    {
      MpTemperatureBlock tmp = g_array_index (blocks, MpTemperatureBlock, row);

      g_array_index (blocks, MpTemperatureBlock, row) = g_array_index (blocks, MpTemperatureBlock, row + op);
      g_array_index (blocks, MpTemperatureBlock, row + op) = tmp;
    }
  else
    {
      mp_plan_free (candidate);
      return;
    }
  commit_table_edit (self, candidate, self->blocks_error);
}

static void
block_remove_cb (GtkButton *button, gpointer user_data)
{
  block_op (user_data, GPOINTER_TO_INT (g_object_get_data (G_OBJECT (button), "row")), 0);
}

static void
block_up_cb (GtkButton *button, gpointer user_data)
{
  block_op (user_data, GPOINTER_TO_INT (g_object_get_data (G_OBJECT (button), "row")), -1);
}

static void
block_down_cb (GtkButton *button, gpointer user_data)
{
  block_op (user_data, GPOINTER_TO_INT (g_object_get_data (G_OBJECT (button), "row")), 1);
}

static void
block_add_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  MpPlan *candidate = mp_document_dup_plan (self->document);
  MpTemperatureBlock block = { 295, 10, 0, 0 };

  /* A new block repeats the last one, to be edited. */
  if (candidate->temperatures->len > 0)
    block = g_array_index (candidate->temperatures, MpTemperatureBlock,
                           candidate->temperatures->len - 1);
  g_array_append_val (candidate->temperatures, block);
  commit_table_edit (self, candidate, self->blocks_error);
}

static void
set_row_accessible_label (Field *field, const char *what, int row)
{
  g_autofree char *text = g_strdup_printf ("%s %d %s (%s)", what, row + 1, _(field->desc->label),
                                           _(field->desc->unit));

  gtk_accessible_update_property (GTK_ACCESSIBLE (field->entry),
                                  GTK_ACCESSIBLE_PROPERTY_LABEL, text, -1);
}

static void
attach_row_button (GtkGrid *grid, GtkWidget *button, int column, int grid_row, int row)
{
  g_object_set_data (G_OBJECT (button), "row", GINT_TO_POINTER (row));
  gtk_grid_attach (grid, button, column, grid_row, 1, 1);
}

static void
clear_grid (GtkWidget *grid)
{
  GtkWidget *child;

  while ((child = gtk_widget_get_first_child (grid)) != NULL)
    gtk_grid_remove (GTK_GRID (grid), child);
}

static void
add_table_header (GtkGrid *grid, const FieldDesc *descs)
{
  int col = 0;

  for (const FieldDesc *desc = descs; desc->key != NULL; desc++, col++)
    {
      g_autofree char *text = g_strdup_printf ("%s (%s)", _(desc->label), _(desc->unit));
      GtkWidget *label = gtk_label_new (text);

      gtk_label_set_xalign (GTK_LABEL (label), 0.0);
      gtk_label_set_wrap (GTK_LABEL (label), TRUE);
      gtk_label_set_width_chars (GTK_LABEL (label), 6);
      gtk_label_set_max_width_chars (GTK_LABEL (label), 8);
      gtk_widget_add_css_class (label, "dim-label");
      gtk_widget_add_css_class (label, "caption");
      gtk_grid_attach (grid, label, col, 0, 1, 1);
    }
}

static void
fill_blocks_grid (MpPlanEditor *self, const MpPlan *plan)
{
  GtkGrid *grid = GTK_GRID (self->blocks_grid);
  guint n = plan->temperatures->len;

  clear_grid (self->blocks_grid);
  add_table_header (grid, block_fields);
  for (guint r = 0; r < n; r++)
    {
      int grid_row = 1 + 2 * r;
      int col = 0;
      GtkWidget *error = NULL;

      for (const FieldDesc *desc = block_fields; desc->key != NULL; desc++, col++)
        {
          Field *field = field_new (self, desc, r);

          gtk_editable_set_width_chars (GTK_EDITABLE (field->entry), 4);
          set_row_accessible_label (field, _("Block"), r);
          g_ptr_array_add (self->row_fields, field);
          gtk_grid_attach (grid, field->entry, col, grid_row, 1, 1);
          if (error == NULL)
            {
              error = field->error;
              gtk_grid_attach (grid, error, 0, grid_row + 1, 7, 1);
            }
          else
            {
              /* Row fields share the first field's error line. */
              g_object_unref (g_object_ref_sink (field->error));
              field->error = error;
              gtk_accessible_update_relation (GTK_ACCESSIBLE (field->entry),
                                              GTK_ACCESSIBLE_RELATION_DESCRIBED_BY, error, NULL, -1);
            }
        }
      attach_row_button (grid, icon_button_new ("go-up-symbolic", _("Move block up"),
                                                G_CALLBACK (block_up_cb), self), col, grid_row, r);
      attach_row_button (grid, icon_button_new ("go-down-symbolic", _("Move block down"),
                                                G_CALLBACK (block_down_cb), self), col + 1, grid_row, r);
      attach_row_button (grid, icon_button_new ("list-remove-symbolic", _("Remove block"),
                                                G_CALLBACK (block_remove_cb), self), col + 2, grid_row, r);
      if (r == 0)
        gtk_widget_set_sensitive (gtk_grid_get_child_at (grid, col, grid_row), FALSE);
      if (r == n - 1)
        gtk_widget_set_sensitive (gtk_grid_get_child_at (grid, col + 1, grid_row), FALSE);
    }
  self->n_blocks_shown = n;
}

static void
build_cryostat_page (MpPlanEditor *self)
{
  GtkWidget *box, *add, *label;
  GtkGrid *grid = form_grid_new ();
  int row = 0;

  page_new (self, "cryostat", _("Cryostat"), &box);
  add_choice (self, grid, &row, &cryogen_choice);
  add_fields (self, grid, &row, cryostat_fields);
  gtk_box_append (GTK_BOX (box), GTK_WIDGET (grid));

  gtk_box_append (GTK_BOX (box), heading_new (_("Temperature blocks")));
  label = gtk_label_new (_("Measured in this order. Cool-down is the liquid used to reach "
                           "the temperature, hold the liquid used per hour while there."));
  gtk_label_set_wrap (GTK_LABEL (label), TRUE);
  gtk_label_set_max_width_chars (GTK_LABEL (label), 34);
  gtk_label_set_xalign (GTK_LABEL (label), 0.0);
  gtk_widget_add_css_class (label, "dim-label");
  gtk_box_append (GTK_BOX (box), label);
  self->blocks_grid = gtk_grid_new ();
  gtk_grid_set_row_spacing (GTK_GRID (self->blocks_grid), 2);
  gtk_grid_set_column_spacing (GTK_GRID (self->blocks_grid), 4);
  gtk_accessible_update_property (GTK_ACCESSIBLE (self->blocks_grid),
                                  GTK_ACCESSIBLE_PROPERTY_LABEL, _("Temperature blocks"), -1);
  gtk_box_append (GTK_BOX (box), self->blocks_grid);
  self->blocks_error = gtk_label_new (NULL);
  gtk_widget_add_css_class (self->blocks_error, "error");
  gtk_label_set_wrap (GTK_LABEL (self->blocks_error), TRUE);
  gtk_label_set_xalign (GTK_LABEL (self->blocks_error), 0.0);
  gtk_widget_set_visible (self->blocks_error, FALSE);
  gtk_box_append (GTK_BOX (box), self->blocks_error);
  add = gtk_button_new_with_mnemonic (_("_Add Temperature Block"));
  gtk_widget_set_halign (add, GTK_ALIGN_START);
  g_signal_connect (add, "clicked", G_CALLBACK (block_add_cb), self);
  gtk_box_append (GTK_BOX (box), add);
}

/* ---- Laser tuning ranges and points --------------------------------- */

static void
point_remove_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  int row = GPOINTER_TO_INT (g_object_get_data (G_OBJECT (button), "row"));
  MpPlan *candidate = mp_document_dup_plan (self->document);
  MpTuningRange *range = current_range (self, candidate);

  if (range == NULL || (guint) row >= range->points->len)
    {
      mp_plan_free (candidate);
      return;
    }
  g_array_remove_index (range->points, row);
  g_clear_pointer (&range->csv_path, g_free);
  commit_table_edit (self, candidate, self->points_error);
}

static void
point_add_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  MpPlan *candidate = mp_document_dup_plan (self->document);
  MpTuningRange *range = current_range (self, candidate);
  MpTuningPoint point = { 250, 0.1 };

  if (range == NULL)
    {
      mp_plan_free (candidate);
      return;
    }
  /* A new point 5 nm beyond the last one with the same pulse energy. */
  if (range->points->len > 0)
    {
      point = g_array_index (range->points, MpTuningPoint, range->points->len - 1);
      point.wavelength_nm += 5;
    }
  g_array_append_val (range->points, point);
  g_clear_pointer (&range->csv_path, g_free);
  commit_table_edit (self, candidate, self->points_error);
}

static void
import_response_cb (GtkNativeDialog *dialog, int response, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  g_autoptr (GFile) file = NULL;
  g_autofree char *path = NULL;
  g_autofree char *name = NULL;
  g_autoptr (GError) error = NULL;
  g_autoptr (GArray) points = NULL;
  MpPlan *candidate;
  MpTuningRange *range;

  if (response != GTK_RESPONSE_ACCEPT)
    goto out;
  file = gtk_file_chooser_get_file (GTK_FILE_CHOOSER (dialog));
  path = g_file_get_path (file);
  name = g_file_get_basename (file);
  points = path != NULL ? mp_tuning_csv_load (path, name, &error) : NULL;
  if (points == NULL)
    {
      show_table_error (self->points_error, error != NULL ? error->message
                                                          : _("Only local files can be imported"));
      goto out;
    }
  candidate = mp_document_dup_plan (self->document);
  range = current_range (self, candidate);
  if (range == NULL)
    {
      mp_plan_free (candidate);
      goto out;
    }
  g_array_set_size (range->points, 0);
  g_array_append_vals (range->points, points->data, points->len);
  /* The points now live in the plan itself. */
  g_clear_pointer (&range->csv_path, g_free);
  commit_table_edit (self, candidate, self->points_error);

out:
  g_clear_object (&self->chooser);
}

static void
import_csv_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  GtkRoot *root = gtk_widget_get_root (GTK_WIDGET (self));
  g_autoptr (GtkFileFilter) filter = gtk_file_filter_new ();

  if (self->chooser != NULL)
    return;
  self->chooser = gtk_file_chooser_native_new (_("Import Tuning Curve"),
                                               GTK_IS_WINDOW (root) ? GTK_WINDOW (root) : NULL,
                                               GTK_FILE_CHOOSER_ACTION_OPEN,
                                               _("_Import"), _("_Cancel"));
  gtk_file_filter_set_name (filter, _("CSV files (wavelength_nm, pulse_energy_uJ)"));
  gtk_file_filter_add_suffix (filter, "csv");
  gtk_file_filter_add_suffix (filter, "txt");
  gtk_file_chooser_add_filter (GTK_FILE_CHOOSER (self->chooser), filter);
  g_signal_connect (self->chooser, "response", G_CALLBACK (import_response_cb), self);
  gtk_native_dialog_show (GTK_NATIVE_DIALOG (self->chooser));
}

static void
range_selected_cb (GtkDropDown *dropdown, GParamSpec *pspec, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  guint selected = gtk_drop_down_get_selected (dropdown);

  if (self->refreshing || selected == GTK_INVALID_LIST_POSITION
      || (int) selected == self->range_index)
    return;
  self->range_index = selected;
  rebuild_rows (self);
}

static void
range_add_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  MpPlan *candidate = mp_document_dup_plan (self->document);
  g_autofree char *label = g_strdup_printf (_("Range %u"), candidate->laser.ranges->len + 1);
  MpTuningRange *range = mp_tuning_range_new (label, 60);
  double min_nm = 0, max_nm = 0;
  MpTuningPoint a, b;

  /* Starts just beyond the current span, to be edited. */
  mp_laser_wavelength_span_nm (&candidate->laser, &min_nm, &max_nm);
  a.wavelength_nm = max_nm + 10;
  a.pulse_energy_uJ = 0.1;
  b.wavelength_nm = max_nm + 40;
  b.pulse_energy_uJ = 0.1;
  g_array_append_val (range->points, a);
  g_array_append_val (range->points, b);
  g_ptr_array_add (candidate->laser.ranges, range);
  self->range_index = candidate->laser.ranges->len - 1;
  commit_table_edit (self, candidate, self->points_error);
}

static void
range_remove_cb (GtkButton *button, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);
  MpPlan *candidate = mp_document_dup_plan (self->document);

  if (current_range (self, candidate) == NULL)
    {
      mp_plan_free (candidate);
      return;
    }
  g_ptr_array_remove_index (candidate->laser.ranges, self->range_index);
  self->range_index = MAX (0, self->range_index - 1);
  commit_table_edit (self, candidate, self->points_error);
}

static void
fill_range_box (MpPlanEditor *self, const MpPlan *plan)
{
  MpTuningRange *range = current_range (self, plan);
  GtkGrid *form = form_grid_new ();
  GtkWidget *points, *buttons, *button;
  GtkWidget *child;
  int row = 0;

  while ((child = gtk_widget_get_first_child (self->range_box)) != NULL)
    gtk_box_remove (GTK_BOX (self->range_box), child);
  if (range == NULL)
    return;

  for (const FieldDesc *desc = range_fields; desc->key != NULL; desc++)
    {
      Field *field = field_new (self, desc, self->range_index);

      g_ptr_array_add (self->row_fields, field);
      add_form_field (self, form, &row, field);
    }
  gtk_box_append (GTK_BOX (self->range_box), GTK_WIDGET (form));
  if (range->csv_path != NULL)
    {
      g_autofree char *text = g_strdup_printf (_("Points read from %s; editing them stores them in the plan."),
                                               range->csv_path);
      GtkWidget *note = gtk_label_new (text);

      gtk_label_set_wrap (GTK_LABEL (note), TRUE);
      gtk_label_set_xalign (GTK_LABEL (note), 0.0);
      gtk_widget_add_css_class (note, "dim-label");
      gtk_box_append (GTK_BOX (self->range_box), note);
    }

  points = gtk_grid_new ();
  gtk_grid_set_row_spacing (GTK_GRID (points), 2);
  gtk_grid_set_column_spacing (GTK_GRID (points), 4);
  gtk_accessible_update_property (GTK_ACCESSIBLE (points), GTK_ACCESSIBLE_PROPERTY_LABEL,
                                  _("Tuning curve points"), -1);
  add_table_header (GTK_GRID (points), point_fields);
  for (guint r = 0; r < range->points->len; r++)
    {
      int grid_row = 1 + 2 * r;
      int col = 0;
      GtkWidget *error = NULL;

      for (const FieldDesc *desc = point_fields; desc->key != NULL; desc++, col++)
        {
          Field *field = field_new (self, desc, r);

          gtk_editable_set_width_chars (GTK_EDITABLE (field->entry), 9);
          set_row_accessible_label (field, _("Point"), r);
          g_ptr_array_add (self->row_fields, field);
          gtk_grid_attach (GTK_GRID (points), field->entry, col, grid_row, 1, 1);
          if (error == NULL)
            {
              error = field->error;
              gtk_grid_attach (GTK_GRID (points), error, 0, grid_row + 1, 3, 1);
            }
          else
            {
              g_object_unref (g_object_ref_sink (field->error));
              field->error = error;
            }
        }
      attach_row_button (GTK_GRID (points),
                         icon_button_new ("list-remove-symbolic", _("Remove point"),
                                          G_CALLBACK (point_remove_cb), self),
                         col, grid_row, r);
    }
  gtk_box_append (GTK_BOX (self->range_box), points);
  self->points_error = gtk_label_new (NULL);
  gtk_widget_add_css_class (self->points_error, "error");
  gtk_label_set_wrap (GTK_LABEL (self->points_error), TRUE);
  gtk_label_set_xalign (GTK_LABEL (self->points_error), 0.0);
  gtk_widget_set_visible (self->points_error, FALSE);
  gtk_box_append (GTK_BOX (self->range_box), self->points_error);

  buttons = gtk_box_new (GTK_ORIENTATION_HORIZONTAL, 6);
  button = gtk_button_new_with_mnemonic (_("Add _Point"));
  g_signal_connect (button, "clicked", G_CALLBACK (point_add_cb), self);
  gtk_box_append (GTK_BOX (buttons), button);
  button = gtk_button_new_with_mnemonic (_("_Import CSV…"));
  gtk_widget_set_tooltip_text (button, _("Replace the points with a CSV file of "
                                         "wavelength_nm and pulse_energy_uJ columns"));
  g_signal_connect (button, "clicked", G_CALLBACK (import_csv_cb), self);
  gtk_box_append (GTK_BOX (buttons), button);
  gtk_box_append (GTK_BOX (self->range_box), buttons);
  self->n_points_shown = range->points->len;
}

static void
fill_range_names (MpPlanEditor *self, const MpPlan *plan)
{
  guint n = plan->laser.ranges->len;
  g_autoptr (GPtrArray) names = g_ptr_array_new_with_free_func (g_free);

  for (guint i = 0; i < n; i++)
    {
      const MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, i);

      g_ptr_array_add (names, range->label != NULL && *range->label != '\0'
                              ? g_strdup (range->label)
                              : g_strdup_printf (_("Range %u"), i + 1));
    }
  g_ptr_array_add (names, NULL);
  gtk_string_list_splice (self->range_names, 0,
                          g_list_model_get_n_items (G_LIST_MODEL (self->range_names)),
                          (const char *const *) names->pdata);
  gtk_drop_down_set_selected (GTK_DROP_DOWN (self->range_dropdown), self->range_index);
  self->n_ranges_shown = n;
}

static void
build_laser_page (MpPlanEditor *self)
{
  GtkWidget *box, *bar, *label, *button;
  GtkGrid *grid = form_grid_new ();
  int row = 0;

  page_new (self, "laser", _("Laser"), &box);
  add_fields (self, grid, &row, laser_fields);
  gtk_box_append (GTK_BOX (box), GTK_WIDGET (grid));
  gtk_box_append (GTK_BOX (box), heading_new (_("Tuning curve")));

  bar = gtk_box_new (GTK_ORIENTATION_HORIZONTAL, 6);
  label = gtk_label_new_with_mnemonic (_("Tuning ran_ge"));
  self->range_names = gtk_string_list_new (NULL);
  self->range_dropdown = gtk_drop_down_new (G_LIST_MODEL (g_object_ref (self->range_names)), NULL);
  gtk_label_set_mnemonic_widget (GTK_LABEL (label), self->range_dropdown);
  g_signal_connect (self->range_dropdown, "notify::selected", G_CALLBACK (range_selected_cb), self);
  gtk_box_append (GTK_BOX (bar), label);
  gtk_box_append (GTK_BOX (bar), self->range_dropdown);
  button = icon_button_new ("list-add-symbolic", _("Add tuning range"), G_CALLBACK (range_add_cb), self);
  gtk_box_append (GTK_BOX (bar), button);
  button = icon_button_new ("list-remove-symbolic", _("Remove tuning range"),
                            G_CALLBACK (range_remove_cb), self);
  gtk_box_append (GTK_BOX (bar), button);
  gtk_box_append (GTK_BOX (box), bar);

  self->range_box = gtk_box_new (GTK_ORIENTATION_VERTICAL, 6);
  gtk_box_append (GTK_BOX (box), self->range_box);
}

/* ---- Refresh from the document -------------------------------------- */

static void
set_field_text (MpPlanEditor *self, const MpPlan *plan, Field *field)
{
  gpointer ptr = field_ptr (self, plan, field);
  g_autofree char *text = NULL;

  if (ptr == NULL)
    return;
  text = format_field (field, ptr);
  if (g_strcmp0 (text, gtk_editable_get_text (GTK_EDITABLE (field->entry))) != 0)
    gtk_editable_set_text (GTK_EDITABLE (field->entry), text);
  show_error (self, field, NULL);
}

static void
rebuild_rows (MpPlanEditor *self)
{
  const MpPlan *plan;

  if (self->document == NULL)
    return;
  plan = mp_document_get_plan (self->document);
  self->refreshing = TRUE;
  for (guint i = 0; i < self->row_fields->len; i++)
    g_hash_table_remove (self->errors, ((Field *) g_ptr_array_index (self->row_fields, i))->key);
  g_ptr_array_set_size (self->row_fields, 0);
  fill_blocks_grid (self, plan);
  fill_range_names (self, plan);
  fill_range_box (self, plan);
  for (guint i = 0; i < self->row_fields->len; i++)
    set_field_text (self, plan, g_ptr_array_index (self->row_fields, i));
  self->refreshing = FALSE;
}

static gboolean
rows_match (MpPlanEditor *self, const MpPlan *plan)
{
  MpTuningRange *range = current_range (self, plan);

  return self->n_blocks_shown == plan->temperatures->len
         && self->n_ranges_shown == plan->laser.ranges->len
         && range != NULL && self->n_points_shown == range->points->len;
}

static void
refresh (MpPlanEditor *self)
{
  const MpPlan *plan = mp_document_get_plan (self->document);

  if (!rows_match (self, plan))
    rebuild_rows (self);

  self->refreshing = TRUE;
  for (guint i = 0; i < self->fields->len; i++)
    set_field_text (self, plan, g_ptr_array_index (self->fields, i));
  for (guint i = 0; i < self->row_fields->len; i++)
    set_field_text (self, plan, g_ptr_array_index (self->row_fields, i));
  for (guint i = 0; i < self->choices->len; i++)
    {
      GtkDropDown *dropdown = g_ptr_array_index (self->choices, i);
      const ChoiceDesc *desc = g_object_get_data (G_OBJECT (dropdown), "choice-desc");

      gtk_drop_down_set_selected (dropdown, *(const int *) ((const char *) plan + desc->offset));
      show_table_error (g_object_get_data (G_OBJECT (dropdown), "choice-error"), NULL);
    }
  fill_range_names (self, plan);
  self->refreshing = FALSE;
}

static void
plan_changed_cb (MpDocument *document, gpointer user_data)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (user_data);

  if (self->committing)
    return;
  refresh (self);
}

void
mp_plan_editor_set_document (MpPlanEditor *self, MpDocument *document)
{
  g_return_if_fail (MP_IS_PLAN_EDITOR (self));

  if (self->document == document)
    return;
  if (self->document != NULL)
    g_clear_signal_handler (&self->plan_handler, self->document);
  g_set_object (&self->document, document);
  if (document == NULL)
    return;
  self->plan_handler = g_signal_connect (document, "plan-changed",
                                         G_CALLBACK (plan_changed_cb), self);
  self->range_index = 0;
  rebuild_rows (self);
  refresh (self);
}

void
mp_plan_editor_show_page (MpPlanEditor *self, const char *name)
{
  g_return_if_fail (MP_IS_PLAN_EDITOR (self));
  gtk_stack_set_visible_child_name (self->stack, name);
}

static Field *
find_field (MpPlanEditor *self, const char *key)
{
  for (guint i = 0; i < self->fields->len; i++)
    {
      Field *field = g_ptr_array_index (self->fields, i);

      if (g_str_equal (field->key, key))
        return field;
    }
  for (guint i = 0; i < self->row_fields->len; i++)
    {
      Field *field = g_ptr_array_index (self->row_fields, i);

      if (g_str_equal (field->key, key))
        return field;
    }
  return NULL;
}

GtkEditable *
mp_plan_editor_get_entry (MpPlanEditor *self, const char *key)
{
  Field *field;

  g_return_val_if_fail (MP_IS_PLAN_EDITOR (self), NULL);
  field = find_field (self, key);
  return field != NULL ? GTK_EDITABLE (field->entry) : NULL;
}

const char *
mp_plan_editor_get_error (MpPlanEditor *self, const char *key)
{
  g_return_val_if_fail (MP_IS_PLAN_EDITOR (self), NULL);
  return g_hash_table_lookup (self->errors, key);
}

static void
mp_plan_editor_dispose (GObject *object)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (object);

  mp_plan_editor_set_document (self, NULL);
  if (self->chooser != NULL)
    gtk_native_dialog_destroy (GTK_NATIVE_DIALOG (self->chooser));
  g_clear_object (&self->chooser);
  g_clear_pointer (&self->paned, gtk_widget_unparent);
  g_clear_object (&self->range_names);
  G_OBJECT_CLASS (mp_plan_editor_parent_class)->dispose (object);
}

static void
mp_plan_editor_finalize (GObject *object)
{
  MpPlanEditor *self = MP_PLAN_EDITOR (object);

  g_clear_pointer (&self->fields, g_ptr_array_unref);
  g_clear_pointer (&self->row_fields, g_ptr_array_unref);
  g_clear_pointer (&self->choices, g_ptr_array_unref);
  g_clear_pointer (&self->errors, g_hash_table_unref);
  G_OBJECT_CLASS (mp_plan_editor_parent_class)->finalize (object);
}

static void
mp_plan_editor_class_init (MpPlanEditorClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GtkWidgetClass *widget_class = GTK_WIDGET_CLASS (klass);

  object_class->dispose = mp_plan_editor_dispose;
  object_class->finalize = mp_plan_editor_finalize;
  gtk_widget_class_set_layout_manager_type (widget_class, GTK_TYPE_BIN_LAYOUT);
  gtk_widget_class_set_css_name (widget_class, "planeditor");
}

static void
mp_plan_editor_init (MpPlanEditor *self)
{
  GtkWidget *sidebar;

  self->fields = g_ptr_array_new_with_free_func (field_free);
  self->row_fields = g_ptr_array_new_with_free_func (field_free);
  self->choices = g_ptr_array_new ();
  self->errors = g_hash_table_new_full (g_str_hash, g_str_equal, g_free, g_free);

  self->paned = gtk_box_new (GTK_ORIENTATION_HORIZONTAL, 0);
  self->stack = GTK_STACK (gtk_stack_new ());
  gtk_stack_set_transition_type (self->stack, GTK_STACK_TRANSITION_TYPE_NONE);
  gtk_widget_set_hexpand (GTK_WIDGET (self->stack), TRUE);
  sidebar = gtk_stack_sidebar_new ();
  gtk_stack_sidebar_set_stack (GTK_STACK_SIDEBAR (sidebar), self->stack);
  gtk_widget_set_size_request (sidebar, 130, -1);
  gtk_accessible_update_property (GTK_ACCESSIBLE (sidebar), GTK_ACCESSIBLE_PROPERTY_LABEL,
                                  _("Input pages"), -1);
  gtk_box_append (GTK_BOX (self->paned), sidebar);
  gtk_box_append (GTK_BOX (self->paned), gtk_separator_new (GTK_ORIENTATION_VERTICAL));
  gtk_box_append (GTK_BOX (self->paned), GTK_WIDGET (self->stack));
  gtk_widget_set_parent (self->paned, GTK_WIDGET (self));

  build_simple_page (self, "cathode", _("Cathode"), cathode_fields,
                     _("The photocathode and its emission model (Fowler–DuBridge "
                       "with Schottky lowering)."));
  build_laser_page (self);
  build_simple_page (self, "detector", _("Detector"), detector_fields, NULL);
  build_cryostat_page (self);
  build_scan_page (self);
}

GtkWidget *
mp_plan_editor_new (void)
{
  return g_object_new (MP_TYPE_PLAN_EDITOR, NULL);
}
