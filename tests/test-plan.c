/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Plan documents: loading, round trips with unknown keys, validation
 * messages, the bad-input corpus (tests/data/bad/EXPECTED), limits, atomic
 * saving, CSV tuning curves and the Steffen tuning-curve interpolation. */
#include "config.h"

#include <errno.h>
#include <locale.h>
#include <math.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <glib/gstdio.h>
#include <gsl/gsl_interp.h>

#include "mp-atomic.h"
#include "mp-error.h"
#include "mp-plan.h"
#include "mp-tuning-csv.h"

/* ---------------------------------------------------------------- helpers */

static char *
data_path (const char *name)
{
  return g_test_build_filename (G_TEST_DIST, "data", name, NULL);
}

static char *
make_tmpdir (void)
{
  GError *error = NULL;
  char *dir = g_dir_make_tmp ("mteplan-test-plan-XXXXXX", &error);

  g_assert_no_error (error);
  return dir;
}

static void
remove_tree (const char *path)
{
  GDir *dir = g_dir_open (path, 0, NULL);
  const char *name;

  if (dir != NULL)
    {
      while ((name = g_dir_read_name (dir)) != NULL)
        {
          g_autofree char *child = g_build_filename (path, name, NULL);

          g_chmod (child, 0755);
          if (g_file_test (child, G_FILE_TEST_IS_DIR))
            remove_tree (child);
          else
            g_unlink (child);
        }
      g_dir_close (dir);
    }
  g_rmdir (path);
}

static void
write_file (const char *path, const char *text)
{
  GError *error = NULL;

  g_file_set_contents (path, text, -1, &error);
  g_assert_no_error (error);
}

static char *
read_file (const char *path)
{
  GError *error = NULL;
  char *text = NULL;

  g_file_get_contents (path, &text, NULL, &error);
  g_assert_no_error (error);
  return text;
}

static void
assert_ranges_equal (const MpLaser *a, const MpLaser *b)
{
  g_assert_cmpuint (a->ranges->len, ==, b->ranges->len);
  for (guint r = 0; r < a->ranges->len; r++)
    {
      const MpTuningRange *x = g_ptr_array_index (a->ranges, r);
      const MpTuningRange *y = g_ptr_array_index (b->ranges, r);

      g_assert_cmpstr (x->label, ==, y->label);
      g_assert_cmpstr (x->csv_path, ==, y->csv_path);
      g_assert_cmpfloat (x->switch_s, ==, y->switch_s);
      g_assert_cmpuint (x->points->len, ==, y->points->len);
      g_assert_cmpmem (x->points->data, x->points->len * sizeof (MpTuningPoint),
                       y->points->data, y->points->len * sizeof (MpTuningPoint));
    }
}

/* Every model field equal, bit for bit. */
static void
assert_plans_equal (const MpPlan *a, const MpPlan *b)
{
  g_assert_cmpstr (a->title, ==, b->title);
  g_assert_cmpstr (a->cathode.label, ==, b->cathode.label);
  g_assert_cmpstr (a->shift_start, ==, b->shift_start);
  g_assert_cmpmem (&a->cathode.work_function_eV, sizeof (MpCathode) - sizeof (char *),
                   &b->cathode.work_function_eV, sizeof (MpCathode) - sizeof (char *));
  g_assert_cmpfloat (a->laser.repetition_rate_kHz, ==, b->laser.repetition_rate_kHz);
  g_assert_cmpfloat (a->laser.bandwidth_meV, ==, b->laser.bandwidth_meV);
  g_assert_cmpfloat (a->laser.retune_s, ==, b->laser.retune_s);
  g_assert_cmpfloat (a->laser.wavelength_step_nm, ==, b->laser.wavelength_step_nm);
  assert_ranges_equal (&a->laser, &b->laser);
  g_assert_cmpmem (&a->detector, sizeof a->detector, &b->detector, sizeof b->detector);
  g_assert_cmpint (a->cryostat.cryogen, ==, b->cryostat.cryogen);
  g_assert_cmpfloat (a->cryostat.budget_L, ==, b->cryostat.budget_L);
  g_assert_cmpfloat (a->cryostat.reserve_L, ==, b->cryostat.reserve_L);
  g_assert_cmpmem (&a->scan, sizeof a->scan, &b->scan, sizeof b->scan);
  g_assert_cmpuint (a->temperatures->len, ==, b->temperatures->len);
  g_assert_cmpmem (a->temperatures->data, a->temperatures->len * sizeof (MpTemperatureBlock),
                   b->temperatures->data, b->temperatures->len * sizeof (MpTemperatureBlock));
  g_assert_cmpfloat (a->beam_time_h, ==, b->beam_time_h);
  g_assert_cmpint (a->over_budget, ==, b->over_budget);
}

static MpPlan *
reload (const MpPlan *plan)
{
  g_autofree char *data = NULL;
  GError *error = NULL;
  gsize length = 0;
  MpPlan *copy;

  data = mp_plan_to_data (plan, &length);
  copy = mp_plan_load_from_data (data, (gssize) length, NULL, &error);
  g_assert_no_error (error);
  return copy;
}

static void
assert_load_fails (const char *data, gssize length, int code, const char *substring)
{
  g_autoptr(MpPlan) plan = NULL;
  GError *error = NULL;

  plan = mp_plan_load_from_data (data, length, NULL, &error);
  g_assert_null (plan);
  g_assert_error (error, MP_ERROR, code);
  if (strstr (error->message, substring) == NULL)
    g_error ("expected “%s” in “%s”", substring, error->message);
  g_error_free (error);
}

static void
assert_invalid (const MpPlan *plan, const char *message)
{
  GError *error = NULL;

  g_assert_false (mp_plan_validate (plan, &error));
  g_assert_nonnull (error);
  g_assert_cmpstr (error->message, ==, message);
  g_error_free (error);
}

/* ------------------------------------------------------------- the model */

static void
test_default (void)
{
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  g_autoptr(MpPlan) again = NULL;
  GError *error = NULL;

  g_assert_true (mp_plan_validate (plan, &error));
  g_assert_no_error (error);
  g_assert_cmpuint (plan->laser.ranges->len, ==, 1);
  g_assert_cmpuint (plan->temperatures->len, ==, 3);
  /* Cu(100): 4.59 eV (Gartland et al., Phys. Rev. Lett. 28, 738 (1972),
   * from memory of the citation; spec check table). */
  g_assert_cmpfloat (plan->cathode.work_function_eV, ==, 4.59);
  again = reload (plan);
  assert_plans_equal (plan, again);
}

static void
test_copy (void)
{
  g_autoptr(MpPlan) plan = NULL;
  g_autoptr(MpPlan) copy = NULL;
  g_autofree char *path = data_path ("spec-example.mteplan");
  g_autofree char *before = NULL;
  g_autofree char *after = NULL;
  g_autofree char *copied = NULL;
  GError *error = NULL;
  MpTuningRange *range;

  plan = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  before = mp_plan_to_data (plan, NULL);
  copy = mp_plan_copy (plan);
  copied = mp_plan_to_data (copy, NULL);
  g_assert_cmpstr (before, ==, copied);
  assert_plans_equal (plan, copy);
  g_assert_true (copy->document != plan->document);

  /* Changing the copy leaves the original alone. */
  range = g_ptr_array_index (copy->laser.ranges, 0);
  g_array_index (range->points, MpTuningPoint, 0).pulse_energy_uJ = 9;
  g_array_index (copy->temperatures, MpTemperatureBlock, 0).temperature_K = 300;
  json_object_set_string_member (json_node_get_object (copy->document), "logbook_page", "X");
  g_free (copy->title);
  copy->title = g_strdup ("changed");
  after = mp_plan_to_data (plan, NULL);
  g_assert_cmpstr (before, ==, after);

  /* Boxed type: copy and free through GType. */
  {
    MpPlan *boxed = g_boxed_copy (MP_TYPE_PLAN, plan);

    assert_plans_equal (plan, boxed);
    g_boxed_free (MP_TYPE_PLAN, boxed);
  }
}

static void
test_enum_names (void)
{
  g_assert_cmpstr (mp_cryogen_to_string (MP_CRYOGEN_HELIUM), ==, "helium");
  g_assert_cmpstr (mp_cryogen_to_string (MP_CRYOGEN_NITROGEN), ==, "nitrogen");
  g_assert_cmpstr (mp_over_budget_to_string (MP_OVER_BUDGET_DROP), ==, "drop");
  g_assert_cmpstr (mp_over_budget_to_string (MP_OVER_BUDGET_STRETCH), ==, "stretch");
  g_assert_cmpstr (mp_scan_order_to_string (MP_SCAN_DESCENDING), ==, "descending");
  g_assert_cmpstr (mp_scan_order_to_string (MP_SCAN_ASCENDING), ==, "ascending");
}

/* ------------------------------------------------------------ round trip */

static void
test_spec_example (void)
{
  g_autofree char *path = data_path ("spec-example.mteplan");
  g_autoptr(MpPlan) plan = NULL;
  g_autoptr(MpPlan) again = NULL;
  GError *error = NULL;
  const MpTuningRange *range;
  const MpTemperatureBlock *b;

  plan = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  g_assert_nonnull (plan);

  /* Every value of the example in ../shared/spec/plan-format.md. */
  g_assert_cmpstr (plan->title, ==, "Ag(111) cool-down series, shift B");
  g_assert_cmpstr (plan->cathode.label, ==, "Ag(111) crystal, sputter-free prep");
  g_assert_cmpfloat (plan->cathode.work_function_eV, ==, 4.74);
  g_assert_cmpfloat (plan->cathode.work_function_sigma_eV, ==, 0.03);
  g_assert_cmpfloat (plan->cathode.field_MV_per_m, ==, 1.0);
  g_assert_cmpfloat (plan->cathode.qe_ref_photon_energy_eV, ==, 5.10);
  g_assert_cmpfloat (plan->cathode.qe_ref_temperature_K, ==, 295);
  g_assert_cmpfloat (plan->cathode.qe_ref, ==, 2.0e-6);
  g_assert_cmpfloat (plan->cathode.extra_mte_meV, ==, 0.0);
  g_assert_cmpfloat (plan->laser.repetition_rate_kHz, ==, 40);
  g_assert_cmpfloat (plan->laser.bandwidth_meV, ==, 8);
  g_assert_cmpfloat (plan->laser.retune_s, ==, 45);
  g_assert_cmpfloat (plan->laser.wavelength_step_nm, ==, 0.1);
  g_assert_cmpuint (plan->laser.ranges->len, ==, 1);
  range = g_ptr_array_index (plan->laser.ranges, 0);
  g_assert_null (range->label);
  g_assert_null (range->csv_path);
  g_assert_cmpuint (range->points->len, ==, 3);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 0).wavelength_nm, ==, 235);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 0).pulse_energy_uJ, ==, 0.05);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 1).wavelength_nm, ==, 250);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 1).pulse_energy_uJ, ==, 0.40);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 2).wavelength_nm, ==, 280);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 2).pulse_energy_uJ, ==, 0.30);
  g_assert_cmpfloat (plan->detector.efficiency, ==, 0.5);
  g_assert_cmpfloat (plan->detector.max_electrons_per_pulse, ==, 0.1);
  g_assert_cmpfloat (plan->detector.max_rate_per_s, ==, 20000);
  g_assert_cmpfloat (plan->detector.dark_rate_per_s, ==, 3);
  g_assert_cmpfloat (plan->detector.acceptance_meV, ==, 150);
  g_assert_cmpfloat (plan->detector.resolution_meV, ==, 0.3);
  g_assert_cmpfloat (plan->detector.systematic_meV, ==, 0.2);
  g_assert_cmpint (plan->cryostat.cryogen, ==, MP_CRYOGEN_HELIUM);
  g_assert_cmpfloat (plan->cryostat.budget_L, ==, 30);
  g_assert_cmpfloat (plan->cryostat.reserve_L, ==, 4);
  g_assert_cmpuint (plan->temperatures->len, ==, 3);
  b = &g_array_index (plan->temperatures, MpTemperatureBlock, 0);
  g_assert_cmpfloat (b[0].temperature_K, ==, 295);
  g_assert_cmpfloat (b[0].settle_min, ==, 10);
  g_assert_cmpfloat (b[0].cooldown_L, ==, 0);
  g_assert_cmpfloat (b[0].hold_L_per_h, ==, 0.0);
  g_assert_cmpfloat (b[1].temperature_K, ==, 140);
  g_assert_cmpfloat (b[1].settle_min, ==, 50);
  g_assert_cmpfloat (b[1].cooldown_L, ==, 6);
  g_assert_cmpfloat (b[1].hold_L_per_h, ==, 0.8);
  g_assert_cmpfloat (b[2].temperature_K, ==, 45);
  g_assert_cmpfloat (b[2].settle_min, ==, 70);
  g_assert_cmpfloat (b[2].cooldown_L, ==, 9);
  g_assert_cmpfloat (b[2].hold_L_per_h, ==, 1.6);
  g_assert_cmpfloat (plan->scan.excess_min_eV, ==, -0.12);
  g_assert_cmpfloat (plan->scan.excess_max_eV, ==, 0.40);
  g_assert_cmpfloat (plan->scan.step_eV, ==, 0.04);
  g_assert_cmpfloat (plan->scan.fine_step_eV, ==, 0.01);
  g_assert_cmpfloat (plan->scan.fine_halfwidth_eV, ==, 0.05);
  g_assert_cmpfloat (plan->scan.target_mte_sigma_meV, ==, 0.5);
  g_assert_cmpfloat (plan->scan.target_mte_sigma_rel, ==, 0.03);
  g_assert_cmpfloat (plan->scan.min_dwell_s, ==, 20);
  g_assert_cmpfloat (plan->scan.max_dwell_s, ==, 1800);
  g_assert_cmpint (plan->scan.order, ==, MP_SCAN_DESCENDING);
  g_assert_cmpint (plan->scan.qe_sweep_points, ==, 0);
  g_assert_cmpfloat (plan->beam_time_h, ==, 12);
  g_assert_cmpint (plan->over_budget, ==, MP_OVER_BUDGET_DROP);
  g_assert_null (plan->shift_start);
  g_assert_true (g_str_has_suffix (plan->path, "spec-example.mteplan"));

  /* Save and load again: every value and the unknown keys survive. */
  again = reload (plan);
  assert_plans_equal (plan, again);
  {
    JsonObject *root = json_node_get_object (again->document);
    JsonObject *cathode = json_object_get_object_member (root, "cathode");
    JsonObject *mount = json_object_get_object_member (cathode, "mount");
    g_autoptr(GList) keys = json_object_get_members (root);
    const char *order[] = { "format", "version", "title", "logbook_page", "cathode",
                            "laser", "detector", "cryostat", "temperatures", "scan",
                            "beam_time_h", "over_budget" };
    guint i = 0;

    g_assert_cmpstr (json_object_get_string_member (root, "logbook_page"), ==, "B-117");
    g_assert_cmpstr (json_object_get_string_member (mount, "holder"), ==, "puck 3");
    g_assert_cmpint (json_object_get_int_member (mount, "torque_cNm"), ==, 12);
    /* Key order of the file is kept. */
    g_assert_cmpuint (g_list_length (keys), ==, G_N_ELEMENTS (order));
    for (GList *l = keys; l != NULL; l = l->next, i++)
      g_assert_cmpstr (l->data, ==, order[i]);
  }
}

/* A plan edited in memory writes the new values and keeps the rest. */
static void
test_edit_round_trip (void)
{
  g_autofree char *path = data_path ("spec-example.mteplan");
  g_autoptr(MpPlan) plan = NULL;
  g_autoptr(MpPlan) again = NULL;
  GError *error = NULL;
  MpTuningRange *second;
  MpTemperatureBlock cold = { 8, 90, 12, 2.5 };

  plan = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  plan->cathode.work_function_eV = 4.64;
  plan->scan.order = MP_SCAN_ASCENDING;
  plan->over_budget = MP_OVER_BUDGET_STRETCH;
  plan->scan.qe_sweep_points = 7;
  plan->scan.qe_sweep_dwell_s = 12.5;
  plan->detector.max_rate_per_s = 1e9;                   /* a power of ten */
  plan->cathode.qe_ref = 1e-20 * 1e13;                    /* 1e-7, inexact */
  plan->shift_start = g_strdup ("2026-03-14T08:00:00+01:00");
  g_array_append_val (plan->temperatures, cold);
  second = mp_tuning_range_new ("5th harmonic", 240);
  g_array_append_vals (second->points, (MpTuningPoint[]) { { 205, 0.02 }, { 215, 0.05 }, { 228, 0.03 } }, 3);
  g_ptr_array_add (plan->laser.ranges, second);
  ((MpTuningRange *) g_ptr_array_index (plan->laser.ranges, 0))->label = g_strdup ("4th harmonic");

  g_assert_true (mp_plan_validate (plan, &error));
  g_assert_no_error (error);
  again = reload (plan);
  assert_plans_equal (plan, again);
  g_assert_cmpstr (json_object_get_string_member (json_node_get_object (again->document),
                                                  "logbook_page"), ==, "B-117");
  /* Two ranges are written as tuning_ranges, the single curve is gone. */
  {
    JsonObject *laser = json_object_get_object_member (json_node_get_object (again->document),
                                                       "laser");

    g_assert_true (json_object_has_member (laser, "tuning_ranges"));
    g_assert_false (json_object_has_member (laser, "tuning_curve"));
  }
}

static void
test_locale (void)
{
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  g_autoptr(MpPlan) again = NULL;
  g_autofree char *data = NULL;
  g_autofree char *saved_locale = g_strdup (setlocale (LC_NUMERIC, NULL));

  if (setlocale (LC_NUMERIC, "de_DE.UTF-8") == NULL
      && setlocale (LC_NUMERIC, "fr_FR.UTF-8") == NULL)
    {
      g_test_skip ("no locale with a decimal comma installed");
      return;
    }
  {
    g_autofree char *probe = g_strdup_printf ("%.2f", 4.59);

    /* The locale is really active: printf writes a decimal comma. */
    if (strchr (probe, ',') == NULL)
      {
        setlocale (LC_NUMERIC, saved_locale);
        g_test_skip ("the decimal-comma locale does not take effect");
        return;
      }
  }
  plan->cathode.work_function_eV = 4.59;
  data = mp_plan_to_data (plan, NULL);
  g_assert_nonnull (strstr (data, "\"work_function_eV\": 4.59"));
  g_assert_null (strstr (data, "4,59"));
  again = reload (plan);
  setlocale (LC_NUMERIC, saved_locale);
  assert_plans_equal (plan, again);
}

/* The writer's numbers: shortest text that reads back the same double,
 * and valid JSON for large exponents (json-glib 1.6's generator writes
 * "1e+20.0"). */
static void
test_number_output (void)
{
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  g_autoptr(MpPlan) again = NULL;
  g_autofree char *data = NULL;
  MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, 0);

  g_array_index (range->points, MpTuningPoint, 4).pulse_energy_uJ = 1e5 * 7.7;
  plan->cathode.qe_ref = 0.1 * 3;       /* 0.30000000000000004 */
  plan->detector.max_rate_per_s = 2.5e8;
  data = mp_plan_to_data (plan, NULL);
  g_assert_nonnull (strstr (data, "\"qe\": 0.30000000000000004"));
  g_assert_nonnull (strstr (data, "\"max_rate_per_s\": 250000000"));
  again = reload (plan);
  assert_plans_equal (plan, again);
}

/* The bundled examples load, validate and survive a save unchanged; a
 * byte-order mark in front of a plan is accepted. */
static void
test_examples (void)
{
  const char *names[] = { "cold-copper-shift.mteplan", "tight-helium-budget.mteplan" };

  for (guint i = 0; i < G_N_ELEMENTS (names); i++)
    {
      g_autofree char *path = g_build_filename (MP_SOURCE_DIR, "data", "examples", names[i], NULL);
      g_autofree char *text = read_file (path);
      g_autofree char *with_bom = g_strconcat ("\xef\xbb\xbf", text, NULL);
      g_autoptr(MpPlan) plan = NULL;
      g_autoptr(MpPlan) again = NULL;
      g_autoptr(MpPlan) bom = NULL;
      GError *error = NULL;

      plan = mp_plan_load_from_file (path, &error);
      g_assert_no_error (error);
      g_assert_true (mp_plan_validate (plan, &error));
      g_assert_no_error (error);
      again = reload (plan);
      assert_plans_equal (plan, again);
      bom = mp_plan_load_from_data (with_bom, -1, NULL, &error);
      g_assert_no_error (error);
      assert_plans_equal (plan, bom);
    }
}

/* ------------------------------------------------------------ validation */

static void
test_validate_messages (void)
{
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, 0);
  double saved;

  g_array_index (plan->temperatures, MpTemperatureBlock, 2).temperature_K = -5;
  assert_invalid (plan, "temperatures[2].temperature_K: expected a number from 0.1 to 2000, found -5");
  g_array_index (plan->temperatures, MpTemperatureBlock, 2).temperature_K = 40;

  plan->laser.repetition_rate_kHz = NAN;
  assert_invalid (plan, "laser.repetition_rate_kHz: expected a number > 0, found NaN");
  plan->laser.repetition_rate_kHz = INFINITY;
  assert_invalid (plan, "laser.repetition_rate_kHz: expected a number > 0, found Infinity");
  plan->laser.repetition_rate_kHz = 50;

  saved = g_array_index (range->points, MpTuningPoint, 2).wavelength_nm;
  g_array_index (range->points, MpTuningPoint, 2).wavelength_nm = 240;
  assert_invalid (plan, "laser.tuning_curve[2].wavelength_nm: expected a number > 245 "
                        "(wavelengths strictly ascending), found 240");
  g_array_index (range->points, MpTuningPoint, 2).wavelength_nm = saved;

  plan->cathode.work_function_eV = 11;
  assert_invalid (plan, "cathode.work_function_eV: expected a number from 0.5 to 10, found 11");
  plan->cathode.work_function_eV = 4.59;

  plan->scan.qe_sweep_points = -1;
  assert_invalid (plan, "scan.qe_sweep_points: expected a whole number from 0 to 1000, found -1");
  plan->scan.qe_sweep_points = 0;

  plan->shift_start = g_strdup ("14.3.2026 8:00");
  assert_invalid (plan, "shift_start: expected an ISO 8601 date and time with time zone such "
                        "as \"2026-03-14T08:00:00+01:00\", found \"14.3.2026 8:00\"");
  g_clear_pointer (&plan->shift_start, g_free);

  g_array_set_size (plan->temperatures, 0);
  assert_invalid (plan, "temperatures: expected 1 to 100 temperature blocks, found none");
}

static void
test_field_range (void)
{
  double min = 0, max = 0;
  gboolean exclusive = TRUE;

  g_assert_true (mp_plan_field_range ("cathode.work_function_eV", &min, &max, &exclusive));
  g_assert_cmpfloat (min, ==, 0.5);
  g_assert_cmpfloat (max, ==, 10);
  g_assert_false (exclusive);
  g_assert_true (mp_plan_field_range ("temperatures[].temperature_K", &min, &max, NULL));
  g_assert_cmpfloat (min, ==, 0.1);
  g_assert_true (mp_plan_field_range ("laser.repetition_rate_kHz", &min, &max, &exclusive));
  g_assert_true (exclusive);
  g_assert_true (isinf (max));
  g_assert_true (mp_plan_field_range ("tuning_curve[].pulse_energy_uJ", &min, NULL, NULL));
  g_assert_false (mp_plan_field_range ("laser.colour", NULL, NULL, NULL));
}

/* --------------------------------------------------------- bad documents */

static void
test_bad_corpus (void)
{
  g_autofree char *dir_path = data_path ("bad");
  g_autofree char *expected_path = g_build_filename (dir_path, "EXPECTED", NULL);
  g_autofree char *text = read_file (expected_path);
  g_auto(GStrv) lines = g_strsplit (text, "\n", -1);
  g_autoptr(GHashTable) table = g_hash_table_new (g_str_hash, g_str_equal);
  g_autoptr(GHashTable) messages = g_hash_table_new_full (g_str_hash, g_str_equal, g_free, NULL);
  GDir *dir;
  const char *name;
  guint checked = 0;

  for (guint i = 0; lines[i] != NULL; i++)
    {
      char *tab = strchr (lines[i], '\t');

      if (lines[i][0] == '#' || tab == NULL)
        continue;
      *tab = '\0';
      g_hash_table_insert (table, lines[i], tab + 1);
    }
  dir = g_dir_open (dir_path, 0, NULL);
  g_assert_nonnull (dir);
  while ((name = g_dir_read_name (dir)) != NULL)
    {
      g_autofree char *path = NULL;
      g_autoptr(MpPlan) plan = NULL;
      const char *expected;
      GError *error = NULL;

      if (!g_str_has_suffix (name, ".mteplan"))
        continue;
      expected = g_hash_table_lookup (table, name);
      if (expected == NULL)
        g_error ("tests/data/bad/%s has no line in tests/data/bad/EXPECTED", name);
      path = g_build_filename (dir_path, name, NULL);
      plan = mp_plan_load_from_file (path, &error);
      if (plan != NULL)
        g_error ("%s loaded without an error", name);
      g_assert_true (error->domain == MP_ERROR);
      if (strstr (error->message, expected) == NULL)
        g_error ("%s: expected “%s” in “%s”", name, expected, error->message);
      /* Each file gets its own message. */
      if (g_hash_table_contains (messages, error->message))
        g_error ("%s: same message as another file: %s", name, error->message);
      g_hash_table_add (messages, g_strdup (error->message));
      g_error_free (error);
      checked++;
    }
  g_dir_close (dir);
  g_assert_cmpuint (checked, ==, g_hash_table_size (table));
  g_assert_cmpuint (checked, >=, 40);
}

static char *
spec_example_text (void)
{
  g_autofree char *path = data_path ("spec-example.mteplan");

  return read_file (path);
}

/* Huge inputs are made here, not stored. */
static void
test_generated_limits (void)
{
  g_autofree char *example = spec_example_text ();
  GString *s;
  char *huge;

  /* A 17 MiB file: refused by size before parsing. */
  {
    g_autofree char *dir = make_tmpdir ();
    g_autofree char *path = g_build_filename (dir, "huge.mteplan", NULL);
    gsize n = 17 * 1024 * 1024;
    g_autoptr(MpPlan) plan = NULL;
    GError *error = NULL;

    huge = g_malloc (n);
    memset (huge, ' ', n);
    memcpy (huge, example, strlen (example));
    g_file_set_contents (path, huge, (gssize) n, &error);
    g_assert_no_error (error);
    plan = mp_plan_load_from_file (path, &error);
    g_assert_null (plan);
    g_assert_error (error, MP_ERROR, MP_ERROR_LIMIT);
    g_assert_nonnull (strstr (error->message, "file too large (17825792 bytes), at most 16777216"));
    g_clear_error (&error);
    assert_load_fails (huge, (gssize) n, MP_ERROR_LIMIT, "file too large");
    g_free (huge);
    remove_tree (dir);
  }

  /* A number literal of 5 million digits. */
  s = g_string_new ("{ \"format\": \"mteplan\", \"version\": 1, \"beam_time_h\": 1");
  for (int i = 0; i < 5000000; i++)
    g_string_append_c (s, '0');
  g_string_append (s, " }");
  assert_load_fails (s->str, (gssize) s->len, MP_ERROR_LIMIT,
                     "line 1, column 53: a number written with 5000001 characters, at most 64");
  g_string_free (s, TRUE);

  /* The same digits as a string value, in place of a number. */
  s = g_string_new ("{ \"format\": \"mteplan\", \"version\": 1, \"title\": \"1");
  for (int i = 0; i < 5000000; i++)
    g_string_append_c (s, '0');
  g_string_append (s, "\" }");
  assert_load_fails (s->str, (gssize) s->len, MP_ERROR_LIMIT,
                     "title: text too long (5000001 bytes), at most 4096");
  g_string_free (s, TRUE);

  /* Nesting a million levels deep: refused before json-glib recurses. */
  s = g_string_new ("{ \"x\": ");
  for (int i = 0; i < 1000000; i++)
    g_string_append_c (s, '[');
  assert_load_fails (s->str, (gssize) s->len, MP_ERROR_LIMIT, "nesting deeper than 64 levels");
  g_string_free (s, TRUE);

  /* Exactly 64 levels are fine as far as depth goes (then the plan is
   * incomplete). */
  s = g_string_new ("{ \"format\": \"mteplan\", \"version\": 1, \"x\": ");
  for (int i = 0; i < 63; i++)
    g_string_append_c (s, '[');
  for (int i = 0; i < 63; i++)
    g_string_append_c (s, ']');
  g_string_append (s, " }");
  assert_load_fails (s->str, (gssize) s->len, MP_ERROR_INVALID, "title: missing (expected text)");
  g_string_free (s, TRUE);

  /* 10001 tuning points. */
  {
    g_autofree char *head = NULL;
    const char *at = strstr (example, "\"tuning_curve\": [");
    const char *end = strstr (at, "]");

    g_assert_nonnull (at);
    head = g_strndup (example, (gsize) (at - example));
    s = g_string_new (head);
    g_string_append (s, "\"tuning_curve\": [");
    for (int i = 0; i < 10001; i++)
      g_string_append_printf (s, "%s{ \"wavelength_nm\": %d.%02d, \"pulse_energy_uJ\": 0.1 }",
                              i == 0 ? "" : ",", 200 + i / 100, i % 100);
    g_string_append (s, end);
    assert_load_fails (s->str, (gssize) s->len, MP_ERROR_LIMIT,
                       "laser.tuning_curve: too many points (10001), at most 10000");
    g_string_free (s, TRUE);
  }
}

/* --------------------------------------------------------- atomic saving */

static void
test_atomic_save (void)
{
  g_autofree char *dir = make_tmpdir ();
  g_autofree char *path = g_build_filename (dir, "plan.mteplan", NULL);
  g_autofree char *backup = g_strconcat (path, "~", NULL);
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  g_autoptr(MpPlan) loaded = NULL;
  g_autofree char *first = NULL;
  g_autofree char *second = NULL;
  g_autofree char *now = NULL;
  GError *error = NULL;

  g_assert_true (mp_plan_save_to_file (plan, path, &error));
  g_assert_no_error (error);
  g_assert_false (g_file_test (backup, G_FILE_TEST_EXISTS));
  g_assert_cmpstr (plan->path, ==, path);
  first = read_file (path);

  plan->beam_time_h = 20;
  g_assert_true (mp_plan_save_to_file (plan, path, &error));
  g_assert_no_error (error);
  second = read_file (path);
  now = read_file (backup);
  g_assert_cmpstr (now, ==, first);
  g_assert_cmpstr (second, !=, first);
  loaded = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  g_assert_cmpfloat (loaded->beam_time_h, ==, 20);

  /* The folder holds only the plan and its backup: no temporary left. */
  {
    GDir *d = g_dir_open (dir, 0, NULL);
    guint n = 0;

    while (g_dir_read_name (d) != NULL)
      n++;
    g_dir_close (d);
    g_assert_cmpuint (n, ==, 2);
  }

  /* A save that cannot happen, even as root: the backup's place is taken
   * by a non-empty folder. The original stays as it was. */
  {
    g_autofree char *inside = g_build_filename (backup, "keep", NULL);

    g_unlink (backup);
    g_assert_cmpint (g_mkdir (backup, 0755), ==, 0);
    write_file (inside, "x");
    plan->beam_time_h = 30;
    g_assert_false (mp_plan_save_to_file (plan, path, &error));
    g_assert_error (error, MP_ERROR, MP_ERROR_IO);
    g_assert_nonnull (strstr (error->message, path));
    g_clear_error (&error);
    g_free (now);
    now = read_file (path);
    g_assert_cmpstr (now, ==, second);
    g_unlink (inside);
    g_rmdir (backup);
  }

  /* A folder that does not exist, and a "folder" that is a file. */
  {
    g_autofree char *missing = g_build_filename (dir, "no-such-folder", "plan.mteplan", NULL);
    g_autofree char *under_file = g_build_filename (path, "plan.mteplan", NULL);

    g_assert_false (mp_plan_save_to_file (plan, missing, &error));
    g_assert_error (error, MP_ERROR, MP_ERROR_IO);
    g_assert_nonnull (strstr (error->message, missing));
    g_assert_nonnull (strstr (error->message, g_strerror (ENOENT)));
    g_clear_error (&error);
    g_assert_false (mp_plan_save_to_file (plan, under_file, &error));
    g_assert_error (error, MP_ERROR, MP_ERROR_IO);
    g_assert_nonnull (strstr (error->message, g_strerror (ENOTDIR)));
    g_clear_error (&error);
    g_free (now);
    now = read_file (path);
    g_assert_cmpstr (now, ==, second);
  }

  /* A read-only folder (only meaningful when not root). */
  if (geteuid () != 0)
    {
      g_assert_cmpint (g_chmod (dir, 0555), ==, 0);
      g_assert_false (mp_plan_save_to_file (plan, path, &error));
      g_assert_error (error, MP_ERROR, MP_ERROR_IO);
      g_assert_nonnull (strstr (error->message, g_strerror (EACCES)));
      g_clear_error (&error);
      g_chmod (dir, 0755);
      g_free (now);
      now = read_file (path);
      g_assert_cmpstr (now, ==, second);
    }
  remove_tree (dir);
}

static void
test_atomic_write_keeps_mode (void)
{
  g_autofree char *dir = make_tmpdir ();
  g_autofree char *path = g_build_filename (dir, "out.csv", NULL);
  g_autofree char *backup = mp_atomic_backup_path (path);
  GError *error = NULL;
  GStatBuf st;

  write_file (path, "old");
  g_chmod (path, 0640);
  g_assert_true (mp_atomic_write (path, "new", 3, FALSE, &error));
  g_assert_no_error (error);
  g_assert_cmpint (g_stat (path, &st), ==, 0);
  g_assert_cmpint (st.st_mode & 0777, ==, 0640);
  g_assert_true (g_str_has_prefix (backup, path) && g_str_equal (backup + strlen (path), "~"));
  g_assert_false (g_file_test (backup, G_FILE_TEST_EXISTS));

  /* Through a symbolic link: the target is replaced, the link stays. */
  {
    g_autofree char *link_path = g_build_filename (dir, "link.csv", NULL);
    g_autofree char *text = NULL;

    g_assert_cmpint (symlink ("out.csv", link_path), ==, 0);
    g_assert_true (mp_atomic_write (link_path, "newer", 5, FALSE, &error));
    g_assert_no_error (error);
    g_assert_true (g_file_test (link_path, G_FILE_TEST_IS_SYMLINK));
    text = read_file (path);
    g_assert_cmpstr (text, ==, "newer");
  }
  remove_tree (dir);
}

static void
test_checksum (void)
{
  g_autoptr(MpPlan) plan = mp_plan_new_default ();
  g_autoptr(MpPlan) copy = mp_plan_copy (plan);
  g_autofree char *a = mp_plan_checksum (plan);
  g_autofree char *b = mp_plan_checksum (copy);
  g_autofree char *c = NULL;

  g_assert_cmpuint (strlen (a), ==, 8);
  for (const char *p = a; *p != '\0'; p++)
    g_assert_true (g_ascii_isxdigit (*p));
  g_assert_cmpstr (a, ==, b);
  copy->cathode.work_function_eV += 0.01;
  c = mp_plan_checksum (copy);
  g_assert_cmpstr (a, !=, c);
}

/* ----------------------------------------------------- CSV tuning curves */

static const char *csv_curve =
  "# OPA fourth harmonic, invented figures\n"
  "wavelength_nm,pulse_energy_uJ\n"
  "230,0.02\r\n"
  "\n"
  "245,0.30\n"
  "# a comment between rows\n"
  "265,0.50\n"
  "300,0.20\n";

static void
test_csv_relative (void)
{
  g_autofree char *dir = make_tmpdir ();
  g_autofree char *sub = g_build_filename (dir, "curves", NULL);
  g_autofree char *csv = g_build_filename (sub, "uv.csv", NULL);
  g_autofree char *plan_path = g_build_filename (dir, "plan.mteplan", NULL);
  g_autofree char *other_dir = g_build_filename (dir, "elsewhere", NULL);
  g_autofree char *other_path = g_build_filename (other_dir, "plan.mteplan", NULL);
  g_autofree char *example = spec_example_text ();
  g_autoptr(GString) text = g_string_new (example);
  g_autoptr(MpPlan) plan = NULL;
  g_autoptr(MpPlan) moved = NULL;
  g_autoptr(MpPlan) from_data = NULL;
  GError *error = NULL;
  const MpTuningRange *range;
  const char *at = strstr (example, "\"tuning_curve\": [");
  const char *end = strstr (at, "]") + 1;

  g_mkdir (sub, 0755);
  g_mkdir (other_dir, 0755);
  write_file (csv, csv_curve);
  g_string_erase (text, at - example, end - at);
  g_string_insert (text, at - example, "\"tuning_curve_csv\": \"curves/uv.csv\"");
  write_file (plan_path, text->str);

  plan = mp_plan_load_from_file (plan_path, &error);
  g_assert_no_error (error);
  range = g_ptr_array_index (plan->laser.ranges, 0);
  g_assert_cmpstr (range->csv_path, ==, "curves/uv.csv");
  g_assert_cmpuint (range->points->len, ==, 4);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 3).wavelength_nm, ==, 300);
  g_assert_cmpfloat (g_array_index (range->points, MpTuningPoint, 1).pulse_energy_uJ, ==, 0.30);

  /* From data, base_dir resolves the path. */
  from_data = mp_plan_load_from_data (text->str, -1, dir, &error);
  g_assert_no_error (error);
  assert_ranges_equal (&plan->laser, &from_data->laser);
  g_clear_pointer (&from_data, mp_plan_free);
  from_data = mp_plan_load_from_data (text->str, -1, other_dir, &error);
  g_assert_null (from_data);
  g_assert_error (error, MP_ERROR, MP_ERROR_IO);
  g_assert_nonnull (strstr (error->message, "laser.tuning_curve_csv: curves/uv.csv: cannot read"));
  g_clear_error (&error);

  /* Saved in place: still a reference to the CSV, not inlined. */
  g_assert_true (mp_plan_save_to_file (plan, plan_path, &error));
  g_assert_no_error (error);
  {
    g_autofree char *saved = read_file (plan_path);

    g_assert_nonnull (strstr (saved, "\"tuning_curve_csv\": \"curves/uv.csv\""));
  }
  /* Saved elsewhere: the path is rebased so the copy still loads. */
  g_assert_true (mp_plan_save_to_file (plan, other_path, &error));
  g_assert_no_error (error);
  moved = mp_plan_load_from_file (other_path, &error);
  g_assert_no_error (error);
  range = g_ptr_array_index (moved->laser.ranges, 0);
  g_assert_true (g_path_is_absolute (range->csv_path));
  g_assert_cmpuint (range->points->len, ==, 4);
  remove_tree (dir);
}

static void
test_csv_errors (void)
{
  struct { const char *text; const char *message; } cases[] = {
    { "wavelength_nm,pulse_energy_uJ\n230,0.1\n240,abc\n",
      "c.csv line 3, column 2 (pulse_energy_uJ): expected a number from 0 to 1e+06, found \"abc\"" },
    { "pulse_energy_uJ,wavelength_nm\n0.1,230\n0.2,\n",
      "c.csv line 3, column 2 (wavelength_nm): expected a number from 50 to 20000, found \"\"" },
    { "wavelength_nm,pulse_energy_uJ\n230,0.1\n240\n",
      "c.csv line 3, column 2 (pulse_energy_uJ): missing (expected a number from 0 to 1e+06)" },
    { "wavelength_nm,pulse_energy_uJ\n230,0.1\n220,0.2\n",
      "c.csv line 3, column 1 (wavelength_nm): expected a number > 230 (wavelengths strictly ascending), found 220" },
    { "wavelength_nm,pulse_energy_uJ\n230,nan\n",
      "c.csv line 2, column 2 (pulse_energy_uJ): expected a number from 0 to 1e+06, found \"nan\" (NaN and infinity are not numbers here)" },
    { "# only a comment\nwavelength_nm,pulse_energy_uJ\n230,0.1\n",
      "c.csv: expected at least 2 points, found 1" },
    { "lambda,energy\n230,0.1\n",
      "c.csv line 1: expected a header line naming the columns wavelength_nm,pulse_energy_uJ, found no column wavelength_nm" },
    { "wavelength_nm,pulse_energy_uJ\n230,0.1\n240,0.\xfe\n",
      "c.csv line 3: expected UTF-8 text, found the invalid byte 0xfe" },
  };

  for (guint i = 0; i < G_N_ELEMENTS (cases); i++)
    {
      GError *error = NULL;
      GArray *points = mp_tuning_csv_parse (cases[i].text, strlen (cases[i].text), "c.csv", &error);

      g_assert_null (points);
      g_assert_nonnull (error);
      g_assert_cmpstr (error->message, ==, cases[i].message);
      g_error_free (error);
    }
  /* Quoted cells and extra columns are accepted. */
  {
    const char *text = "\"wavelength_nm\",\"pulse_energy_uJ\",note\n\"230\",\"0.1\",a\n240,0.2,b\n";
    GError *error = NULL;
    g_autoptr(GArray) points = mp_tuning_csv_parse (text, strlen (text), "c.csv", &error);

    g_assert_no_error (error);
    g_assert_cmpuint (points->len, ==, 2);
    g_assert_cmpfloat (g_array_index (points, MpTuningPoint, 1).pulse_energy_uJ, ==, 0.2);
  }
}

/* ------------------------------------------------ Steffen interpolation */

static MpLaser *
laser_with (const MpTuningPoint *points, guint n)
{
  MpLaser *laser = g_new0 (MpLaser, 1);
  MpTuningRange *range = mp_tuning_range_new (NULL, 0);

  laser->ranges = g_ptr_array_new_with_free_func ((GDestroyNotify) mp_tuning_range_free);
  g_array_append_vals (range->points, points, n);
  g_ptr_array_add (laser->ranges, range);
  return laser;
}

static void
laser_free (MpLaser *laser)
{
  g_ptr_array_unref (laser->ranges);
  g_free (laser);
}

/* Reference: GSL's Steffen interpolant over the whole table. */
static double
steffen_reference (const MpTuningPoint *p, guint n, double x)
{
  double xa[64], ya[64];
  gsl_interp *interp = gsl_interp_alloc (gsl_interp_steffen, n);
  double y;

  g_assert_cmpuint (n, <=, 64);
  for (guint i = 0; i < n; i++)
    {
      xa[i] = p[i].wavelength_nm;
      ya[i] = p[i].pulse_energy_uJ;
    }
  gsl_interp_init (interp, xa, ya, n);
  y = gsl_interp_eval (interp, xa, ya, x, NULL);
  gsl_interp_free (interp);
  return y;
}

static void
test_steffen (void)
{
  /* Monotone but very uneven data, where a cubic spline overshoots. */
  const MpTuningPoint rising[] = {
    { 230, 0.01 }, { 232, 0.011 }, { 240, 0.02 }, { 250, 0.50 }, { 251, 0.52 },
    { 262, 0.53 }, { 270, 1.00 }, { 300, 1.00 },
  };
  /* Rises then falls, like an OPA's output over its range. */
  const MpTuningPoint hump[] = {
    { 230, 0.05 }, { 245, 0.30 }, { 250, 0.45 }, { 265, 0.50 }, { 280, 0.40 },
    { 290, 0.05 }, { 300, 0.0 },
  };
  MpLaser *laser = laser_with (rising, G_N_ELEMENTS (rising));
  double prev = -1;
  double y;
  int index = -1;

  /* Exact at the nodes. */
  for (guint i = 0; i < G_N_ELEMENTS (rising); i++)
    {
      g_assert_true (mp_laser_pulse_energy_uJ (laser, rising[i].wavelength_nm, &y, &index));
      g_assert_cmpfloat (y, ==, rising[i].pulse_energy_uJ);
      g_assert_cmpint (index, ==, 0);
    }
  /* Steffen (1990), Astron. Astrophys. 239, 443: on monotone data the
   * interpolant is monotone, so on this rising table it never decreases;
   * it also equals GSL's interpolant over the whole table (the code only
   * evaluates on the four points around the interval). */
  for (double x = 230; x <= 300; x += 0.01)
    {
      g_assert_true (mp_laser_pulse_energy_uJ (laser, x, &y, NULL));
      g_assert_cmpfloat (y, >=, prev);
      g_assert_cmpfloat_with_epsilon (y, steffen_reference (rising, G_N_ELEMENTS (rising), x), 1e-12);
      prev = y;
    }
  laser_free (laser);

  /* Steffen (1990): no extremum between nodes, so every value stays
   * within the two neighbouring data values (no overshoot, never < 0). */
  laser = laser_with (hump, G_N_ELEMENTS (hump));
  for (guint i = 0; i + 1 < G_N_ELEMENTS (hump); i++)
    for (int k = 1; k < 100; k++)
      {
        double x = hump[i].wavelength_nm
                   + k * (hump[i + 1].wavelength_nm - hump[i].wavelength_nm) / 100.0;
        double lo = MIN (hump[i].pulse_energy_uJ, hump[i + 1].pulse_energy_uJ);
        double hi = MAX (hump[i].pulse_energy_uJ, hump[i + 1].pulse_energy_uJ);

        g_assert_true (mp_laser_pulse_energy_uJ (laser, x, &y, NULL));
        g_assert_cmpfloat (y, >=, lo - 1e-15);
        g_assert_cmpfloat (y, <=, hi + 1e-15);
        g_assert_cmpfloat_with_epsilon (y, steffen_reference (hump, G_N_ELEMENTS (hump), x), 1e-12);
      }
  laser_free (laser);
}

static void
test_two_points (void)
{
  const MpTuningPoint line[] = { { 250, 0.1 }, { 260, 0.3 } };
  MpLaser *laser = laser_with (line, 2);
  double y;

  /* Two points: the straight line, the only monotone interpolant with
   * the data's slope. */
  g_assert_true (mp_laser_pulse_energy_uJ (laser, 255, &y, NULL));
  g_assert_cmpfloat_with_epsilon (y, 0.2, 1e-15);
  laser_free (laser);
}

static void
test_outside_range (void)
{
  const MpTuningPoint fourth[] = { { 230, 0.1 }, { 250, 0.5 }, { 280, 0.3 } };
  const MpTuningPoint fifth[] = { { 200, 0.02 }, { 210, 0.05 }, { 220, 0.04 } };
  MpLaser *laser = laser_with (fourth, 3);
  MpTuningRange *range = mp_tuning_range_new ("5th harmonic", 300);
  double y = -1, lo, hi;
  int index = -1;

  g_array_append_vals (range->points, fifth, 3);
  g_ptr_array_add (laser->ranges, range);

  /* Outside every range: FALSE, never an extrapolation. */
  g_assert_false (mp_laser_pulse_energy_uJ (laser, 199.99, &y, &index));
  g_assert_false (mp_laser_pulse_energy_uJ (laser, 225, &y, &index));   /* the gap */
  g_assert_false (mp_laser_pulse_energy_uJ (laser, 280.0001, &y, &index));
  g_assert_false (mp_laser_pulse_energy_uJ (laser, NAN, &y, &index));
  g_assert_cmpfloat (y, ==, -1);
  g_assert_cmpint (index, ==, -1);

  g_assert_true (mp_laser_pulse_energy_uJ (laser, 215, &y, &index));
  g_assert_cmpint (index, ==, 1);
  g_assert_true (y >= 0.04 && y <= 0.05);
  g_assert_true (mp_laser_pulse_energy_uJ (laser, 280, &y, &index));
  g_assert_cmpint (index, ==, 0);
  g_assert_cmpfloat (y, ==, 0.3);

  mp_laser_wavelength_span_nm (laser, &lo, &hi);
  g_assert_cmpfloat (lo, ==, 200);
  g_assert_cmpfloat (hi, ==, 280);
  laser_free (laser);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);

  g_test_add_func ("/plan/default", test_default);
  g_test_add_func ("/plan/copy", test_copy);
  g_test_add_func ("/plan/enum-names", test_enum_names);
  g_test_add_func ("/plan/spec-example", test_spec_example);
  g_test_add_func ("/plan/edit-round-trip", test_edit_round_trip);
  g_test_add_func ("/plan/locale", test_locale);
  g_test_add_func ("/plan/number-output", test_number_output);
  g_test_add_func ("/plan/examples", test_examples);
  g_test_add_func ("/plan/validate/messages", test_validate_messages);
  g_test_add_func ("/plan/validate/field-range", test_field_range);
  g_test_add_func ("/plan/bad/corpus", test_bad_corpus);
  g_test_add_func ("/plan/bad/generated-limits", test_generated_limits);
  g_test_add_func ("/plan/save/atomic", test_atomic_save);
  g_test_add_func ("/plan/save/keeps-mode", test_atomic_write_keeps_mode);
  g_test_add_func ("/plan/checksum", test_checksum);
  g_test_add_func ("/plan/csv/relative", test_csv_relative);
  g_test_add_func ("/plan/csv/errors", test_csv_errors);
  g_test_add_func ("/plan/tuning/steffen", test_steffen);
  g_test_add_func ("/plan/tuning/two-points", test_two_points);
  g_test_add_func ("/plan/tuning/outside", test_outside_range);

  return g_test_run ();
}
