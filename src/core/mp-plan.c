/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan.c: the plan model: default plan, deep copy, free, boxed type,
 * enum names and the laser tuning curve (Steffen interpolation). Loading
 * and saving live in mp-plan-io.c, checks in mp-plan-validate.c. */
#include "config.h"

#include <math.h>
#include <string.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_interp.h>

#include "mp-plan-private.h"

G_DEFINE_BOXED_TYPE (MpPlan, mp_plan, mp_plan_copy, mp_plan_free)

/* json_node_copy() shares objects and arrays (json-glib 1.6); plans
 * need their own document. */
JsonNode *
mp_json_deep_copy (JsonNode *node)
{
  JsonNode *copy;

  if (node == NULL)
    return NULL;
  if (JSON_NODE_HOLDS_OBJECT (node))
    {
      JsonObject *object = json_object_new ();
      JsonObjectIter iter;
      const char *key;
      JsonNode *child;

      json_object_iter_init_ordered (&iter, json_node_get_object (node));
      while (json_object_iter_next_ordered (&iter, &key, &child))
        json_object_set_member (object, key, mp_json_deep_copy (child));
      copy = json_node_init_object (json_node_alloc (), object);
      json_object_unref (object);
      return copy;
    }
  if (JSON_NODE_HOLDS_ARRAY (node))
    {
      JsonArray *src = json_node_get_array (node);
      guint n = json_array_get_length (src);
      JsonArray *array = json_array_sized_new (n);

      for (guint i = 0; i < n; i++)
        json_array_add_element (array, mp_json_deep_copy (json_array_get_element (src, i)));
      copy = json_node_init_array (json_node_alloc (), array);
      json_array_unref (array);
      return copy;
    }
  return json_node_copy (node);
}

static void
tuning_range_free (gpointer data)
{
  MpTuningRange *range = data;

  if (range == NULL)
    return;
  g_free (range->label);
  g_free (range->csv_path);
  g_clear_pointer (&range->points, g_array_unref);
  g_free (range);
}

static MpTuningRange *
tuning_range_copy (const MpTuningRange *src)
{
  MpTuningRange *range = g_new0 (MpTuningRange, 1);

  range->label = g_strdup (src->label);
  range->switch_s = src->switch_s;
  range->csv_path = g_strdup (src->csv_path);
  range->points = g_array_new (FALSE, FALSE, sizeof (MpTuningPoint));
  if (src->points != NULL && src->points->len > 0)
    g_array_append_vals (range->points, src->points->data, src->points->len);
  return range;
}

/* Creates the empty containers of a plan; every number is 0. */
MpPlan *
mp_plan_new_empty (void)
{
  MpPlan *plan = g_new0 (MpPlan, 1);

  plan->laser.ranges = g_ptr_array_new_with_free_func (tuning_range_free);
  plan->temperatures = g_array_new (FALSE, FALSE, sizeof (MpTemperatureBlock));
  return plan;
}

MpTuningRange *
mp_tuning_range_new (const char *label, double switch_s)
{
  MpTuningRange *range = g_new0 (MpTuningRange, 1);

  range->label = g_strdup (label);
  range->switch_s = switch_s;
  range->points = g_array_new (FALSE, FALSE, sizeof (MpTuningPoint));
  return range;
}

void
mp_tuning_range_free (MpTuningRange *range)
{
  tuning_range_free (range);
}

static void
add_point (MpTuningRange *range, double wavelength_nm, double pulse_energy_uJ)
{
  MpTuningPoint p = { wavelength_nm, pulse_energy_uJ };

  g_array_append_val (range->points, p);
}

static void
add_block (MpPlan *plan, double temperature_K, double settle_min,
           double cooldown_L, double hold_L_per_h)
{
  MpTemperatureBlock b = { temperature_K, settle_min, cooldown_L, hold_L_per_h };

  g_array_append_val (plan->temperatures, b);
}

/* A plain, valid starting plan: a Cu(100) crystal (work function 4.59 eV,
 * from memory of Gartland et al. 1972), a UV OPA range 230-300 nm, liquid
 * helium, three temperature blocks. Illustrative, not a recommendation. */
MpPlan *
mp_plan_new_default (void)
{
  MpPlan *plan = mp_plan_new_empty ();
  MpTuningRange *range;

  plan->title = g_strdup ("New plan");

  plan->cathode.label = g_strdup ("Cu(100) crystal");
  plan->cathode.work_function_eV = 4.59;
  plan->cathode.work_function_sigma_eV = 0.02;
  plan->cathode.field_MV_per_m = 1.0;
  plan->cathode.qe_ref_photon_energy_eV = 4.96;
  plan->cathode.qe_ref_temperature_K = 295;
  plan->cathode.qe_ref = 1.0e-6;
  plan->cathode.extra_mte_meV = 0.0;

  plan->laser.repetition_rate_kHz = 50;
  plan->laser.bandwidth_meV = 5;
  plan->laser.retune_s = 30;
  plan->laser.wavelength_step_nm = 0.1;
  range = mp_tuning_range_new (NULL, 0);
  add_point (range, 230, 0.05);
  add_point (range, 245, 0.30);
  add_point (range, 265, 0.50);
  add_point (range, 280, 0.40);
  add_point (range, 300, 0.20);
  g_ptr_array_add (plan->laser.ranges, range);

  plan->detector.efficiency = 0.5;
  plan->detector.max_electrons_per_pulse = 0.1;
  plan->detector.max_rate_per_s = 20000;
  plan->detector.dark_rate_per_s = 2;
  plan->detector.acceptance_meV = 150;
  plan->detector.resolution_meV = 0.3;
  plan->detector.systematic_meV = 0.2;

  plan->cryostat.cryogen = MP_CRYOGEN_HELIUM;
  plan->cryostat.budget_L = 40;
  plan->cryostat.reserve_L = 5;

  add_block (plan, 295, 10, 0, 0.0);
  add_block (plan, 120, 45, 6, 0.8);
  add_block (plan, 40, 60, 9, 1.5);

  plan->scan.excess_min_eV = -0.04;
  plan->scan.excess_max_eV = 0.40;
  plan->scan.step_eV = 0.04;
  plan->scan.fine_step_eV = 0.0;
  plan->scan.fine_halfwidth_eV = 0.0;
  plan->scan.target_mte_sigma_meV = 0.5;
  plan->scan.target_mte_sigma_rel = 0.03;
  plan->scan.min_dwell_s = 20;
  plan->scan.max_dwell_s = 1800;
  plan->scan.order = MP_SCAN_DESCENDING;
  plan->scan.qe_sweep_points = 0;
  plan->scan.qe_sweep_dwell_s = 0;

  plan->beam_time_h = 12;
  plan->over_budget = MP_OVER_BUDGET_DROP;
  plan->shift_start = NULL;
  return plan;
}

MpPlan *
mp_plan_copy (const MpPlan *plan)
{
  MpPlan *copy;

  g_return_val_if_fail (plan != NULL, NULL);

  copy = g_new0 (MpPlan, 1);
  *copy = *plan;
  copy->title = g_strdup (plan->title);
  copy->cathode.label = g_strdup (plan->cathode.label);
  copy->shift_start = g_strdup (plan->shift_start);
  copy->path = g_strdup (plan->path);
  copy->document = mp_json_deep_copy (plan->document);

  copy->laser.ranges = g_ptr_array_new_with_free_func (tuning_range_free);
  for (guint i = 0; plan->laser.ranges != NULL && i < plan->laser.ranges->len; i++)
    g_ptr_array_add (copy->laser.ranges,
                     tuning_range_copy (g_ptr_array_index (plan->laser.ranges, i)));

  copy->temperatures = g_array_new (FALSE, FALSE, sizeof (MpTemperatureBlock));
  if (plan->temperatures != NULL && plan->temperatures->len > 0)
    g_array_append_vals (copy->temperatures, plan->temperatures->data,
                         plan->temperatures->len);
  return copy;
}

void
mp_plan_free (MpPlan *plan)
{
  if (plan == NULL)
    return;
  g_free (plan->title);
  g_free (plan->cathode.label);
  g_free (plan->shift_start);
  g_free (plan->path);
  g_clear_pointer (&plan->document, json_node_unref);
  g_clear_pointer (&plan->laser.ranges, g_ptr_array_unref);
  g_clear_pointer (&plan->temperatures, g_array_unref);
  g_free (plan);
}

const char *
mp_cryogen_to_string (MpCryogen cryogen)
{
  switch (cryogen)
    {
    case MP_CRYOGEN_HELIUM:
      return "helium";
    case MP_CRYOGEN_NITROGEN:
      return "nitrogen";
    default:
      return "unknown";
    }
}

const char *
mp_over_budget_to_string (MpOverBudget policy)
{
  switch (policy)
    {
    case MP_OVER_BUDGET_DROP:
      return "drop";
    case MP_OVER_BUDGET_STRETCH:
      return "stretch";
    default:
      return "unknown";
    }
}

const char *
mp_scan_order_to_string (MpScanOrder order)
{
  switch (order)
    {
    case MP_SCAN_DESCENDING:
      return "descending";
    case MP_SCAN_ASCENDING:
      return "ascending";
    default:
      return "unknown";
    }
}

/* Index i of the interval [x_i, x_i+1] holding x (x inside the curve). */
static guint
find_interval (const MpTuningPoint *p, guint n, double x)
{
  guint lo = 0, hi = n - 1;

  while (hi - lo > 1)
    {
      guint mid = lo + (hi - lo) / 2;

      if (p[mid].wavelength_nm <= x)
        lo = mid;
      else
        hi = mid;
    }
  return lo;
}

/* Steffen's interpolant on [x_i, x_i+1] only depends on the points
 * i-1 .. i+2 (the node slopes are local), so evaluating on that window of
 * at most four points gives exactly the value on the whole curve, at
 * O(log n) per call. Two points: the straight line (also monotone). */
static double
interpolate_range (const MpTuningRange *range, double x)
{
  const MpTuningPoint *p = (const MpTuningPoint *) range->points->data;
  guint n = range->points->len;
  guint i, first, last, m;
  double xa[4], ya[4];
  gsl_interp *interp;
  double y;

  if (x == p[n - 1].wavelength_nm)
    return p[n - 1].pulse_energy_uJ;
  i = find_interval (p, n, x);
  if (x == p[i].wavelength_nm)
    return p[i].pulse_energy_uJ;
  if (n == 2)
    {
      double t = (x - p[0].wavelength_nm) / (p[1].wavelength_nm - p[0].wavelength_nm);
      return p[0].pulse_energy_uJ + t * (p[1].pulse_energy_uJ - p[0].pulse_energy_uJ);
    }

  first = i > 0 ? i - 1 : 0;
  last = MIN (i + 2, n - 1);
  if (last - first + 1 < 3)
    {
      if (first > 0)
        first--;
      else
        last++;
    }
  m = last - first + 1;
  for (guint k = 0; k < m; k++)
    {
      xa[k] = p[first + k].wavelength_nm;
      ya[k] = p[first + k].pulse_energy_uJ;
    }
  interp = gsl_interp_alloc (gsl_interp_steffen, m);
  gsl_interp_init (interp, xa, ya, m);
  y = gsl_interp_eval (interp, xa, ya, x, NULL);
  gsl_interp_free (interp);
  /* Steffen never overshoots the data, so y >= 0 on >= 0 data; guard
   * against rounding at zero anyway. */
  return MAX (y, 0.0);
}

static gboolean
range_covers (const MpTuningRange *range, double wavelength_nm)
{
  const MpTuningPoint *p;
  guint n;

  if (range == NULL || range->points == NULL || range->points->len < 2)
    return FALSE;
  p = (const MpTuningPoint *) range->points->data;
  n = range->points->len;
  return wavelength_nm >= p[0].wavelength_nm && wavelength_nm <= p[n - 1].wavelength_nm;
}

/* When ranges overlap, the first range (in file order) covering the
 * wavelength is used, so that a schedule does not switch needlessly. */
gboolean
mp_laser_pulse_energy_uJ (const MpLaser *laser, double wavelength_nm,
                          double *pulse_energy_uJ, int *range_index)
{
  g_return_val_if_fail (laser != NULL, FALSE);

  if (!isfinite (wavelength_nm) || laser->ranges == NULL)
    return FALSE;
  for (guint r = 0; r < laser->ranges->len; r++)
    {
      const MpTuningRange *range = g_ptr_array_index (laser->ranges, r);

      if (!range_covers (range, wavelength_nm))
        continue;
      if (pulse_energy_uJ != NULL)
        *pulse_energy_uJ = interpolate_range (range, wavelength_nm);
      if (range_index != NULL)
        *range_index = (int) r;
      return TRUE;
    }
  return FALSE;
}

/* Smallest and largest wavelength covered by any range; NAN when the
 * laser has no usable range. */
void
mp_laser_wavelength_span_nm (const MpLaser *laser, double *min_nm, double *max_nm)
{
  double lo = INFINITY, hi = -INFINITY;

  g_return_if_fail (laser != NULL);

  for (guint r = 0; laser->ranges != NULL && r < laser->ranges->len; r++)
    {
      const MpTuningRange *range = g_ptr_array_index (laser->ranges, r);
      const MpTuningPoint *p;

      if (range == NULL || range->points == NULL || range->points->len < 2)
        continue;
      p = (const MpTuningPoint *) range->points->data;
      lo = MIN (lo, p[0].wavelength_nm);
      hi = MAX (hi, p[range->points->len - 1].wavelength_nm);
    }
  if (lo > hi)
    lo = hi = NAN;
  if (min_nm != NULL)
    *min_nm = lo;
  if (max_nm != NULL)
    *max_nm = hi;
}
