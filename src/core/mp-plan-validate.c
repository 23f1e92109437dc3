/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-validate.c: accepted ranges of every plan field and
 * mp_plan_validate(). The loader reads through the same tables, so a value
 * refused in a file and the same value refused in the window give the same
 * message: "PATH: expected WHAT, found VALUE".
 *
 * Accepted ranges (physical sanity, wide enough for any real set-up; the
 * window uses them for its spin buttons through mp_plan_field_range()):
 *
 * | field                               | accepted            | absent   |
 * |-------------------------------------|---------------------|----------|
 * | cathode.work_function_eV            | 0.5 .. 10           | required |
 * | cathode.work_function_sigma_eV      | 0 .. 1              | 0        |
 * | cathode.field_MV_per_m              | 0 .. 100            | 0        |
 * | cathode.qe_reference.photon_energy_eV | 0.5 .. 20         | required |
 * | cathode.qe_reference.temperature_K  | 0.1 .. 2000         | required |
 * | cathode.qe_reference.qe             | > 0 .. 1            | required |
 * | cathode.extra_mte_meV               | 0 .. 1000           | 0        |
 * | laser.repetition_rate_kHz           | > 0                 | required |
 * | laser.bandwidth_meV                 | 0 .. 500            | 0        |
 * | laser.retune_s                      | 0 .. 86400          | required |
 * | laser.wavelength_step_nm            | > 0 .. 100          | required |
 * | tuning point wavelength_nm          | 50 .. 20000, ascending | required |
 * | tuning point pulse_energy_uJ        | 0 .. 1e6            | required |
 * | tuning_ranges[i].switch_s           | 0 .. 86400          | 0        |
 * | detector.efficiency                 | > 0 .. 1            | required |
 * | detector.max_electrons_per_pulse    | > 0 .. 1000         | required |
 * | detector.max_rate_per_s             | > 0 .. 1e9          | required |
 * | detector.dark_rate_per_s            | 0 .. 1e9            | 0        |
 * | detector.acceptance_meV             | > 0 .. 100000       | required |
 * | detector.resolution_meV             | 0 .. 1000           | 0        |
 * | detector.systematic_meV             | 0 .. 1000           | 0        |
 * | cryostat.budget_L                   | 0 .. 100000         | required |
 * | cryostat.reserve_L                  | 0 .. budget_L       | required |
 * | temperatures[i].temperature_K       | 0.1 .. 2000         | required |
 * | temperatures[i].settle_min          | 0 .. 10080 (a week) | required |
 * | temperatures[i].cooldown_L          | 0 .. 10000          | required |
 * | temperatures[i].hold_L_per_h        | 0 .. 1000           | required |
 * | scan.excess_min_eV                  | -2 .. 5             | required |
 * | scan.excess_max_eV                  | excess_min .. 5     | required |
 * | scan.step_eV                        | > 0 .. 5            | required |
 * | scan.fine_step_eV                   | 0 .. 5 (0 = off)    | 0        |
 * | scan.fine_halfwidth_eV              | 0 .. 5              | 0        |
 * | scan.target_mte_sigma_meV           | 0 .. 1000           | required |
 * | scan.target_mte_sigma_rel           | 0 .. 1              | required |
 * |   (one of the two targets must be > 0)                    |          |
 * | scan.min_dwell_s                    | 0 .. 86400          | required |
 * | scan.max_dwell_s                    | > 0 .. 604800, >= min_dwell_s | required |
 * | scan.qe_sweep_points                | whole, 0 .. 1000    | 0 (off)  |
 * | scan.qe_sweep_dwell_s               | 0 .. 86400          | 0        |
 * | beam_time_h                         | > 0 .. 8760 (a year) | required |
 * | temperature blocks                  | 1 .. 100            |          |
 * | tuning points per range             | 2 .. 10000          |          |
 * | tuning ranges                       | 1 .. 16             |          |
 * | steps per block (span / step)       | at most 10000       |          |
 */
#include "config.h"

#include <math.h>
#include <string.h>
#include <glib/gi18n.h>

#include "mp-error.h"
#include "mp-plan-private.h"

#define P(f) G_STRUCT_OFFSET (MpPlan, f)
#define OPT MP_FIELD_OPTIONAL
#define GT MP_FIELD_MIN_EXCLUSIVE

const MpNumberField mp_plan_number_fields[] = {
  { "cathode.work_function_eV", P (cathode.work_function_eV), 0.5, 10, 0, 0 },
  { "cathode.work_function_sigma_eV", P (cathode.work_function_sigma_eV), 0, 1, OPT, 0 },
  { "cathode.field_MV_per_m", P (cathode.field_MV_per_m), 0, 100, OPT, 0 },
  { "cathode.qe_reference.photon_energy_eV", P (cathode.qe_ref_photon_energy_eV), 0.5, 20, 0, 0 },
  { "cathode.qe_reference.temperature_K", P (cathode.qe_ref_temperature_K), 0.1, 2000, 0, 0 },
  { "cathode.qe_reference.qe", P (cathode.qe_ref), 0, 1, GT, 0 },
  { "cathode.extra_mte_meV", P (cathode.extra_mte_meV), 0, 1000, OPT, 0 },
  { "laser.repetition_rate_kHz", P (laser.repetition_rate_kHz), 0, INFINITY, GT, 0 },
  { "laser.bandwidth_meV", P (laser.bandwidth_meV), 0, 500, OPT, 0 },
  { "laser.retune_s", P (laser.retune_s), 0, 86400, 0, 0 },
  { "laser.wavelength_step_nm", P (laser.wavelength_step_nm), 0, 100, GT, 0 },
  { "detector.efficiency", P (detector.efficiency), 0, 1, GT, 0 },
  { "detector.max_electrons_per_pulse", P (detector.max_electrons_per_pulse), 0, 1000, GT, 0 },
  { "detector.max_rate_per_s", P (detector.max_rate_per_s), 0, 1e9, GT, 0 },
  { "detector.dark_rate_per_s", P (detector.dark_rate_per_s), 0, 1e9, OPT, 0 },
  { "detector.acceptance_meV", P (detector.acceptance_meV), 0, 100000, GT, 0 },
  { "detector.resolution_meV", P (detector.resolution_meV), 0, 1000, OPT, 0 },
  { "detector.systematic_meV", P (detector.systematic_meV), 0, 1000, OPT, 0 },
  { "cryostat.budget_L", P (cryostat.budget_L), 0, 100000, 0, 0 },
  { "cryostat.reserve_L", P (cryostat.reserve_L), 0, 100000, 0, 0 },
  { "scan.excess_min_eV", P (scan.excess_min_eV), -2, 5, 0, 0 },
  { "scan.excess_max_eV", P (scan.excess_max_eV), -2, 5, 0, 0 },
  { "scan.step_eV", P (scan.step_eV), 0, 5, GT, 0 },
  { "scan.fine_step_eV", P (scan.fine_step_eV), 0, 5, OPT, 0 },
  { "scan.fine_halfwidth_eV", P (scan.fine_halfwidth_eV), 0, 5, OPT, 0 },
  { "scan.target_mte_sigma_meV", P (scan.target_mte_sigma_meV), 0, 1000, 0, 0 },
  { "scan.target_mte_sigma_rel", P (scan.target_mte_sigma_rel), 0, 1, 0, 0 },
  { "scan.min_dwell_s", P (scan.min_dwell_s), 0, 86400, 0, 0 },
  { "scan.max_dwell_s", P (scan.max_dwell_s), 0, 604800, GT, 0 },
  { "scan.qe_sweep_points", P (scan.qe_sweep_points), 0, 1000, OPT | MP_FIELD_INTEGER, 0 },
  { "scan.qe_sweep_dwell_s", P (scan.qe_sweep_dwell_s), 0, 86400, OPT, 0 },
  { "beam_time_h", P (beam_time_h), 0, 8760, GT, 0 },
};
const guint mp_plan_n_number_fields = G_N_ELEMENTS (mp_plan_number_fields);

#define B(f) G_STRUCT_OFFSET (MpTemperatureBlock, f)
const MpNumberField mp_block_number_fields[] = {
  { "temperature_K", B (temperature_K), 0.1, 2000, 0, 0 },
  { "settle_min", B (settle_min), 0, 10080, 0, 0 },
  { "cooldown_L", B (cooldown_L), 0, 10000, 0, 0 },
  { "hold_L_per_h", B (hold_L_per_h), 0, 1000, 0, 0 },
};
const guint mp_block_n_number_fields = G_N_ELEMENTS (mp_block_number_fields);

#define T(f) G_STRUCT_OFFSET (MpTuningPoint, f)
const MpNumberField mp_point_number_fields[] = {
  { "wavelength_nm", T (wavelength_nm), 50, 20000, 0, 0 },
  { "pulse_energy_uJ", T (pulse_energy_uJ), 0, 1e6, 0, 0 },
};
const guint mp_point_n_number_fields = G_N_ELEMENTS (mp_point_number_fields);

const MpNumberField mp_range_switch_field =
  { "switch_s", G_STRUCT_OFFSET (MpTuningRange, switch_s), 0, 86400, OPT, 0 };

char *
mp_format_double (double value)
{
  char buf[G_ASCII_DTOSTR_BUF_SIZE];

  if (isnan (value))
    return g_strdup ("NaN");
  if (isinf (value))
    return g_strdup (value > 0 ? "Infinity" : "-Infinity");
  if (value == 0)
    return g_strdup ("0");      /* also -0, which reads back as 0 */
  for (int digits = 6; digits <= 17; digits++)
    {
      char format[8];

      g_snprintf (format, sizeof format, "%%.%dg", digits);
      g_ascii_formatd (buf, sizeof buf, format, value);
      if (g_ascii_strtod (buf, NULL) == value)
        break;
    }
  return g_strdup (buf);
}

char *
mp_number_field_expectation (const MpNumberField *field)
{
  g_autofree char *min = mp_format_double (field->min);
  g_autofree char *max = mp_format_double (field->max);
  const char *kind = (field->flags & MP_FIELD_INTEGER) ? _("a whole number") : _("a number");

  if (!(field->flags & MP_FIELD_MIN_EXCLUSIVE))
    {
      if (isinf (field->max))
        return g_strdup_printf (_("%s >= %s"), kind, min);
      return g_strdup_printf (_("%s from %s to %s"), kind, min, max);
    }
  if (isinf (field->max))
    return g_strdup_printf (_("%s > %s"), kind, min);
  return g_strdup_printf (_("%s > %s and <= %s"), kind, min, max);
}

gboolean
mp_number_field_accepts (const MpNumberField *field, double value)
{
  if (!isfinite (value))
    return FALSE;
  if ((field->flags & MP_FIELD_INTEGER) && value != floor (value))
    return FALSE;
  if (field->flags & MP_FIELD_MIN_EXCLUSIVE ? value <= field->min : value < field->min)
    return FALSE;
  return value <= field->max;
}

double
mp_number_field_get (const MpNumberField *field, gconstpointer base)
{
  const char *p = (const char *) base + field->offset;

  if (field->flags & MP_FIELD_INTEGER)
    return *(const int *) p;
  return *(const double *) p;
}

void
mp_number_field_set (const MpNumberField *field, gpointer base, double value)
{
  char *p = (char *) base + field->offset;

  if (field->flags & MP_FIELD_INTEGER)
    *(int *) p = (int) value;
  else
    *(double *) p = value;
}

gboolean
mp_plan_uses_single_curve (const MpPlan *plan)
{
  const MpTuningRange *range;
  JsonNode *laser = NULL;

  if (plan->laser.ranges == NULL || plan->laser.ranges->len != 1)
    return FALSE;
  range = g_ptr_array_index (plan->laser.ranges, 0);
  if (range->label != NULL || range->switch_s != 0)
    return FALSE;
  if (plan->document != NULL && JSON_NODE_HOLDS_OBJECT (plan->document))
    laser = json_object_get_member (json_node_get_object (plan->document), "laser");
  if (laser != NULL && JSON_NODE_HOLDS_OBJECT (laser)
      && json_object_has_member (json_node_get_object (laser), "tuning_ranges"))
    return FALSE;
  return TRUE;
}

char *
mp_plan_range_path (const MpPlan *plan, guint r)
{
  if (mp_plan_uses_single_curve (plan))
    return g_strdup ("laser.tuning_curve");
  return g_strdup_printf ("laser.tuning_ranges[%u].tuning_curve", r);
}

static gboolean
fail_number (GError **error, const char *path, const MpNumberField *field, double value)
{
  g_autofree char *expected = mp_number_field_expectation (field);
  g_autofree char *found = mp_format_double (value);

  g_set_error (error, MP_ERROR, MP_ERROR_INVALID, _("%s: expected %s, found %s"),
               path, expected, found);
  return FALSE;
}

static gboolean
check_fields (const MpNumberField *fields, guint n, gconstpointer base,
              const char *prefix, GError **error)
{
  for (guint i = 0; i < n; i++)
    {
      double value = mp_number_field_get (&fields[i], base);

      if (!mp_number_field_accepts (&fields[i], value))
        {
          g_autofree char *path = g_strconcat (prefix, fields[i].path, NULL);

          return fail_number (error, path, &fields[i], value);
        }
    }
  return TRUE;
}

gboolean
mp_tuning_points_check (const GArray *points, const char *path, GError **error)
{
  const MpTuningPoint *p;

  if (points == NULL || points->len < MP_PLAN_MIN_POINTS)
    {
      guint n = points != NULL ? points->len : 0;

      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s: expected at least %d points, found %u"),
                   path, MP_PLAN_MIN_POINTS, n);
      return FALSE;
    }
  if (points->len > MP_PLAN_MAX_POINTS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("%s: too many points (%u), at most %d"),
                   path, points->len, MP_PLAN_MAX_POINTS);
      return FALSE;
    }
  p = (const MpTuningPoint *) points->data;
  for (guint i = 0; i < points->len; i++)
    {
      g_autofree char *prefix = g_strdup_printf ("%s[%u].", path, i);

      if (!check_fields (mp_point_number_fields, mp_point_n_number_fields,
                         &p[i], prefix, error))
        return FALSE;
      if (i > 0 && !(p[i].wavelength_nm > p[i - 1].wavelength_nm))
        {
          g_autofree char *prev = mp_format_double (p[i - 1].wavelength_nm);
          g_autofree char *found = mp_format_double (p[i].wavelength_nm);

          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       _("%s[%u].wavelength_nm: expected a number > %s "
                         "(wavelengths strictly ascending), found %s"),
                       path, i, prev, found);
          return FALSE;
        }
    }
  return TRUE;
}

static gboolean
check_laser (const MpPlan *plan, GError **error)
{
  const GPtrArray *ranges = plan->laser.ranges;

  if (ranges == NULL || ranges->len == 0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("laser.tuning_ranges: expected at least one tuning range, found none"));
      return FALSE;
    }
  if (ranges->len > MP_PLAN_MAX_RANGES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("laser.tuning_ranges: too many ranges (%u), at most %d"),
                   ranges->len, MP_PLAN_MAX_RANGES);
      return FALSE;
    }
  for (guint r = 0; r < ranges->len; r++)
    {
      const MpTuningRange *range = g_ptr_array_index (ranges, r);
      g_autofree char *path = mp_plan_range_path (plan, r);
      g_autofree char *prefix = g_strdup_printf ("laser.tuning_ranges[%u].", r);

      if (!check_fields (&mp_range_switch_field, 1, range, prefix, error))
        return FALSE;
      if (!mp_tuning_points_check (range->points, path, error))
        return FALSE;
    }
  return TRUE;
}

static gboolean
check_blocks (const MpPlan *plan, GError **error)
{
  const GArray *blocks = plan->temperatures;

  if (blocks == NULL || blocks->len == 0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("temperatures: expected 1 to %d temperature blocks, found none"),
                   MP_PLAN_MAX_BLOCKS);
      return FALSE;
    }
  if (blocks->len > MP_PLAN_MAX_BLOCKS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("temperatures: too many temperature blocks (%u), at most %d"),
                   blocks->len, MP_PLAN_MAX_BLOCKS);
      return FALSE;
    }
  for (guint i = 0; i < blocks->len; i++)
    {
      g_autofree char *prefix = g_strdup_printf ("temperatures[%u].", i);

      if (!check_fields (mp_block_number_fields, mp_block_n_number_fields,
                         &g_array_index (blocks, MpTemperatureBlock, i), prefix, error))
        return FALSE;
    }
  return TRUE;
}

static gboolean
fail_not_below (GError **error, const char *path, const char *other_path,
                double other, double value)
{
  g_autofree char *o = mp_format_double (other);
  g_autofree char *v = mp_format_double (value);

  g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
               _("%s: expected a number >= %s (%s), found %s"), path, other_path, o, v);
  return FALSE;
}

static gboolean
check_step_count (GError **error, const char *path, double span, double step)
{
  if (step > 0 && span / step > MP_PLAN_MAX_STEPS)
    {
      g_autofree char *s = mp_format_double (step);

      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("%s: a step of %s eV makes more than %d steps per block; "
                     "use a larger step"), path, s, MP_PLAN_MAX_STEPS);
      return FALSE;
    }
  return TRUE;
}

/* Rules between fields. */
static gboolean
check_relations (const MpPlan *plan, GError **error)
{
  const MpScan *scan = &plan->scan;

  if (plan->cryostat.reserve_L > plan->cryostat.budget_L)
    {
      g_autofree char *o = mp_format_double (plan->cryostat.budget_L);
      g_autofree char *v = mp_format_double (plan->cryostat.reserve_L);

      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("cryostat.reserve_L: expected a number from 0 to cryostat.budget_L (%s), found %s"),
                   o, v);
      return FALSE;
    }
  if (scan->excess_max_eV < scan->excess_min_eV)
    return fail_not_below (error, "scan.excess_max_eV", "scan.excess_min_eV",
                           scan->excess_min_eV, scan->excess_max_eV);
  if (scan->max_dwell_s < scan->min_dwell_s)
    return fail_not_below (error, "scan.max_dwell_s", "scan.min_dwell_s",
                           scan->min_dwell_s, scan->max_dwell_s);
  if (scan->target_mte_sigma_meV <= 0 && scan->target_mte_sigma_rel <= 0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("scan.target_mte_sigma_meV: expected a number > 0 when "
                     "scan.target_mte_sigma_rel is 0, found 0"));
      return FALSE;
    }
  if (!check_step_count (error, "scan.step_eV",
                         scan->excess_max_eV - scan->excess_min_eV, scan->step_eV))
    return FALSE;
  if (scan->fine_step_eV > 0
      && !check_step_count (error, "scan.fine_step_eV",
                            2 * (scan->fine_halfwidth_eV + 2 * plan->cathode.work_function_sigma_eV),
                            scan->fine_step_eV))
    return FALSE;
  return TRUE;
}

static gboolean
check_strings (const MpPlan *plan, GError **error)
{
  struct { const char *path; const char *value; } strings[] = {
    { "title", plan->title },
    { "cathode.label", plan->cathode.label },
    { "shift_start", plan->shift_start },
  };

  for (guint i = 0; i < G_N_ELEMENTS (strings); i++)
    {
      if (strings[i].value == NULL)
        continue;
      if (!g_utf8_validate (strings[i].value, -1, NULL))
        {
          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       _("%s: expected UTF-8 text, found invalid bytes"), strings[i].path);
          return FALSE;
        }
      if (strlen (strings[i].value) > MP_PLAN_MAX_STRING_BYTES)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                       _("%s: text too long (%zu bytes), at most %d"),
                       strings[i].path, strlen (strings[i].value), MP_PLAN_MAX_STRING_BYTES);
          return FALSE;
        }
    }
  if (plan->shift_start != NULL)
    {
      g_autoptr(GDateTime) dt = g_date_time_new_from_iso8601 (plan->shift_start, NULL);

      if (dt == NULL)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       _("shift_start: expected an ISO 8601 date and time with "
                         "time zone such as \"2026-03-14T08:00:00+01:00\", found \"%s\""),
                       plan->shift_start);
          return FALSE;
        }
    }
  return TRUE;
}

gboolean
mp_plan_validate (const MpPlan *plan, GError **error)
{
  g_return_val_if_fail (plan != NULL, FALSE);
  g_return_val_if_fail (error == NULL || *error == NULL, FALSE);

  if (!check_strings (plan, error))
    return FALSE;
  if (!check_fields (mp_plan_number_fields, mp_plan_n_number_fields, plan, "", error))
    return FALSE;
  if (!check_laser (plan, error) || !check_blocks (plan, error))
    return FALSE;
  return check_relations (plan, error);
}

static const MpNumberField *
find_field (const MpNumberField *fields, guint n, const char *path)
{
  for (guint i = 0; i < n; i++)
    if (g_str_equal (fields[i].path, path))
      return &fields[i];
  return NULL;
}

gboolean
mp_plan_field_range (const char *path, double *min, double *max,
                     gboolean *min_exclusive)
{
  const MpNumberField *field = NULL;

  g_return_val_if_fail (path != NULL, FALSE);

  if (g_str_has_prefix (path, "temperatures[]."))
    field = find_field (mp_block_number_fields, mp_block_n_number_fields,
                        path + strlen ("temperatures[]."));
  else if (g_str_has_prefix (path, "tuning_curve[]."))
    field = find_field (mp_point_number_fields, mp_point_n_number_fields,
                        path + strlen ("tuning_curve[]."));
  else if (g_str_equal (path, "tuning_ranges[].switch_s"))
    field = &mp_range_switch_field;
  else
    field = find_field (mp_plan_number_fields, mp_plan_n_number_fields, path);
  if (field == NULL)
    return FALSE;
  if (min != NULL)
    *min = field->min;
  if (max != NULL)
    *max = field->max;
  if (min_exclusive != NULL)
    *min_exclusive = (field->flags & MP_FIELD_MIN_EXCLUSIVE) != 0;
  return TRUE;
}
