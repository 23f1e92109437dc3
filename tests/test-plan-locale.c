/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Plans are locale-independent files: a plan written while LC_NUMERIC is
 * German (decimal comma) reads back to the same numbers anywhere, and a plan
 * is read the same under any locale (issue 9). The German locale must exist
 * (build-aux/deps.sh generates de_DE.UTF-8); without it the tests skip. */
#include "config.h"

#include "mp-measured.h"
#include "mp-physics.h"
#include "mp-plan.h"

#include <glib.h>
#include <glib/gstdio.h>
#include <locale.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

static const char *const german_locales[] = {
  "de_DE.UTF-8", "de_DE.utf8", NULL,
};

/* Switches LC_ALL to German and proves that printf now writes a decimal
 * comma, so that the test cannot pass by accident in the C locale. */
static gboolean
enter_german_locale (void)
{
  char text[32];

  for (guint i = 0; german_locales[i] != NULL; i++)
    if (setlocale (LC_ALL, german_locales[i]) != NULL)
      {
        snprintf (text, sizeof text, "%.1f", 0.5);
        if (strcmp (text, "0,5") == 0)
          return TRUE;
      }
  setlocale (LC_ALL, "C.UTF-8");
  return FALSE;
}

static void
leave_german_locale (void)
{
  setlocale (LC_ALL, "C.UTF-8");
}

/* Numbers chosen so that any loss of digits or any comma shows: several
 * have no short decimal form. */
static MpPlan *
make_awkward_plan (void)
{
  MpPlan *plan = mp_plan_new_default ();
  MpTemperatureBlock *block;
  MpTuningRange *range;

  g_free (plan->title);
  plan->title = g_strdup ("Komma-Test 0,5 / 0.5 — Ümlaut");
  plan->cathode.work_function_eV = 4.5912345678901234;
  plan->cathode.work_function_sigma_eV = 0.1 + 0.2;
  plan->cathode.field_MV_per_m = 1.0 / 3.0;
  plan->cathode.qe_ref = 2.0e-6 / 3.0;
  plan->cathode.extra_mte_meV = 0.125;
  plan->laser.bandwidth_meV = 7.25;
  plan->laser.wavelength_step_nm = 0.05;
  range = g_ptr_array_index (plan->laser.ranges, 0);
  g_array_index (range->points, MpTuningPoint, 1).pulse_energy_uJ = 0.3333333333333333;
  plan->detector.dark_rate_per_s = 2.5;
  plan->detector.resolution_meV = 0.35;
  plan->cryostat.budget_L = 37.5;
  block = &g_array_index (plan->temperatures, MpTemperatureBlock, 2);
  block->temperature_K = 4.2;
  block->hold_L_per_h = 1.55;
  plan->scan.excess_min_eV = -0.125;
  plan->scan.target_mte_sigma_rel = 0.025;
  plan->beam_time_h = 11.75;
  return plan;
}

static void
assert_same_number (const char *what, double a, double b)
{
  if (!(a == b || (isnan (a) && isnan (b))))
    g_error ("%s: %.17g became %.17g", what, a, b);
}

/* Every number and choice of the plan must come back exactly. */
static void
assert_same_plan (const MpPlan *a, const MpPlan *b)
{
  g_assert_cmpstr (a->title, ==, b->title);
  g_assert_cmpstr (a->cathode.label, ==, b->cathode.label);
  assert_same_number ("work_function_eV", a->cathode.work_function_eV, b->cathode.work_function_eV);
  assert_same_number ("work_function_sigma_eV", a->cathode.work_function_sigma_eV,
                      b->cathode.work_function_sigma_eV);
  assert_same_number ("field_MV_per_m", a->cathode.field_MV_per_m, b->cathode.field_MV_per_m);
  assert_same_number ("qe_reference.photon_energy_eV", a->cathode.qe_ref_photon_energy_eV,
                      b->cathode.qe_ref_photon_energy_eV);
  assert_same_number ("qe_reference.temperature_K", a->cathode.qe_ref_temperature_K,
                      b->cathode.qe_ref_temperature_K);
  assert_same_number ("qe_reference.qe", a->cathode.qe_ref, b->cathode.qe_ref);
  assert_same_number ("extra_mte_meV", a->cathode.extra_mte_meV, b->cathode.extra_mte_meV);

  assert_same_number ("repetition_rate_kHz", a->laser.repetition_rate_kHz,
                      b->laser.repetition_rate_kHz);
  assert_same_number ("bandwidth_meV", a->laser.bandwidth_meV, b->laser.bandwidth_meV);
  assert_same_number ("retune_s", a->laser.retune_s, b->laser.retune_s);
  assert_same_number ("wavelength_step_nm", a->laser.wavelength_step_nm,
                      b->laser.wavelength_step_nm);
  g_assert_cmpuint (a->laser.ranges->len, ==, b->laser.ranges->len);
  for (guint r = 0; r < a->laser.ranges->len; r++)
    {
      const MpTuningRange *ra = g_ptr_array_index (a->laser.ranges, r);
      const MpTuningRange *rb = g_ptr_array_index (b->laser.ranges, r);

      assert_same_number ("switch_s", ra->switch_s, rb->switch_s);
      g_assert_cmpuint (ra->points->len, ==, rb->points->len);
      for (guint i = 0; i < ra->points->len; i++)
        {
          const MpTuningPoint *pa = &g_array_index (ra->points, MpTuningPoint, i);
          const MpTuningPoint *pb = &g_array_index (rb->points, MpTuningPoint, i);

          assert_same_number ("wavelength_nm", pa->wavelength_nm, pb->wavelength_nm);
          assert_same_number ("pulse_energy_uJ", pa->pulse_energy_uJ, pb->pulse_energy_uJ);
        }
    }

  assert_same_number ("efficiency", a->detector.efficiency, b->detector.efficiency);
  assert_same_number ("max_electrons_per_pulse", a->detector.max_electrons_per_pulse,
                      b->detector.max_electrons_per_pulse);
  assert_same_number ("max_rate_per_s", a->detector.max_rate_per_s, b->detector.max_rate_per_s);
  assert_same_number ("dark_rate_per_s", a->detector.dark_rate_per_s, b->detector.dark_rate_per_s);
  assert_same_number ("acceptance_meV", a->detector.acceptance_meV, b->detector.acceptance_meV);
  assert_same_number ("resolution_meV", a->detector.resolution_meV, b->detector.resolution_meV);
  assert_same_number ("systematic_meV", a->detector.systematic_meV, b->detector.systematic_meV);

  g_assert_cmpint (a->cryostat.cryogen, ==, b->cryostat.cryogen);
  assert_same_number ("budget_L", a->cryostat.budget_L, b->cryostat.budget_L);
  assert_same_number ("reserve_L", a->cryostat.reserve_L, b->cryostat.reserve_L);

  g_assert_cmpuint (a->temperatures->len, ==, b->temperatures->len);
  for (guint i = 0; i < a->temperatures->len; i++)
    {
      const MpTemperatureBlock *ba = &g_array_index (a->temperatures, MpTemperatureBlock, i);
      const MpTemperatureBlock *bb = &g_array_index (b->temperatures, MpTemperatureBlock, i);

      assert_same_number ("temperature_K", ba->temperature_K, bb->temperature_K);
      assert_same_number ("settle_min", ba->settle_min, bb->settle_min);
      assert_same_number ("cooldown_L", ba->cooldown_L, bb->cooldown_L);
      assert_same_number ("hold_L_per_h", ba->hold_L_per_h, bb->hold_L_per_h);
    }

  assert_same_number ("excess_min_eV", a->scan.excess_min_eV, b->scan.excess_min_eV);
  assert_same_number ("excess_max_eV", a->scan.excess_max_eV, b->scan.excess_max_eV);
  assert_same_number ("step_eV", a->scan.step_eV, b->scan.step_eV);
  assert_same_number ("fine_step_eV", a->scan.fine_step_eV, b->scan.fine_step_eV);
  assert_same_number ("fine_halfwidth_eV", a->scan.fine_halfwidth_eV, b->scan.fine_halfwidth_eV);
  assert_same_number ("target_mte_sigma_meV", a->scan.target_mte_sigma_meV,
                      b->scan.target_mte_sigma_meV);
  assert_same_number ("target_mte_sigma_rel", a->scan.target_mte_sigma_rel,
                      b->scan.target_mte_sigma_rel);
  assert_same_number ("min_dwell_s", a->scan.min_dwell_s, b->scan.min_dwell_s);
  assert_same_number ("max_dwell_s", a->scan.max_dwell_s, b->scan.max_dwell_s);
  g_assert_cmpint (a->scan.order, ==, b->scan.order);
  assert_same_number ("beam_time_h", a->beam_time_h, b->beam_time_h);
  g_assert_cmpint (a->over_budget, ==, b->over_budget);
}

/* A number written with a decimal comma looks like `"key": 4,59`. */
static void
assert_no_decimal_comma (const char *text)
{
  g_autoptr (GRegex) re = g_regex_new ("\":\\s*-?[0-9]+,[0-9]", 0, 0, NULL);
  g_autoptr (GMatchInfo) match = NULL;

  if (g_regex_match (re, text, 0, &match))
    {
      g_autofree char *found = g_match_info_fetch (match, 0);

      g_error ("plan text has a decimal comma: %s", found);
    }
}

static void
test_text_round_trip (void)
{
  g_autoptr (MpPlan) plan = make_awkward_plan ();
  g_autoptr (MpPlan) back_de = NULL;
  g_autoptr (MpPlan) back_c = NULL;
  g_autoptr (GError) error = NULL;
  g_autofree char *text_de = NULL;
  g_autofree char *text_c = NULL;
  gsize length = 0;

  if (!enter_german_locale ())
    {
      g_test_skip ("the locale de_DE.UTF-8 is not available");
      return;
    }
  text_de = mp_plan_to_data (plan, &length);
  g_assert_nonnull (text_de);
  g_assert_cmpuint (length, ==, strlen (text_de));
  assert_no_decimal_comma (text_de);
  /* The title keeps its comma: it is text, not a number. */
  g_assert_nonnull (strstr (text_de, "Komma-Test 0,5 / 0.5"));

  /* Read back while still German. */
  back_de = mp_plan_load_from_data (text_de, -1, NULL, &error);
  g_assert_no_error (error);
  assert_same_plan (plan, back_de);
  leave_german_locale ();

  /* Read back in the C locale: the same plan. */
  back_c = mp_plan_load_from_data (text_de, -1, NULL, &error);
  g_assert_no_error (error);
  assert_same_plan (plan, back_c);

  /* Written in the C locale: the same bytes. */
  text_c = mp_plan_to_data (plan, NULL);
  g_assert_cmpstr (text_c, ==, text_de);
}

static void
test_file_round_trip (void)
{
  g_autoptr (MpPlan) plan = make_awkward_plan ();
  g_autoptr (MpPlan) back = NULL;
  g_autoptr (GError) error = NULL;
  g_autofree char *dir = g_dir_make_tmp ("mteplan-locale-XXXXXX", &error);
  g_autofree char *path = NULL;
  g_autofree char *backup = NULL;
  g_autofree char *contents = NULL;

  g_assert_no_error (error);
  path = g_build_filename (dir, "german.mteplan", NULL);
  backup = g_strconcat (path, "~", NULL);
  if (!enter_german_locale ())
    {
      g_test_skip ("the locale de_DE.UTF-8 is not available");
      g_rmdir (dir);
      return;
    }
  g_assert_true (mp_plan_save_to_file (plan, path, &error));
  g_assert_no_error (error);
  /* Saved twice: the second save goes through the backup path. */
  g_assert_true (mp_plan_save_to_file (plan, path, &error));
  g_assert_no_error (error);
  leave_german_locale ();

  g_assert_true (g_file_get_contents (path, &contents, NULL, &error));
  g_assert_no_error (error);
  assert_no_decimal_comma (contents);
  back = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  assert_same_plan (plan, back);

  g_unlink (backup);
  g_unlink (path);
  g_rmdir (dir);
}

/* Reading a plan file while the locale is German gives the same plan as
 * reading it in the C locale, also for a tuning curve kept in a CSV file. */
static void
test_load_under_german_locale (void)
{
  const char *plan_text =
    "{\n"
    "  \"format\": \"mteplan\", \"version\": 1, \"title\": \"CSV curve\",\n"
    "  \"cathode\": { \"label\": \"test\", \"work_function_eV\": 4.59,\n"
    "    \"work_function_sigma_eV\": 0.03, \"field_MV_per_m\": 1.5,\n"
    "    \"qe_reference\": { \"photon_energy_eV\": 4.96, \"temperature_K\": 295.5, \"qe\": 1.5e-6 },\n"
    "    \"extra_mte_meV\": 0.5 },\n"
    "  \"laser\": { \"repetition_rate_kHz\": 40.5, \"bandwidth_meV\": 8.5, \"retune_s\": 45,\n"
    "    \"wavelength_step_nm\": 0.1, \"tuning_curve_csv\": \"curve.csv\" },\n"
    "  \"detector\": { \"efficiency\": 0.5, \"max_electrons_per_pulse\": 0.1,\n"
    "    \"max_rate_per_s\": 20000, \"dark_rate_per_s\": 2.5, \"acceptance_meV\": 150,\n"
    "    \"resolution_meV\": 0.3, \"systematic_meV\": 0.2 },\n"
    "  \"cryostat\": { \"cryogen\": \"helium\", \"budget_L\": 30.5, \"reserve_L\": 4.5 },\n"
    "  \"temperatures\": [\n"
    "    { \"temperature_K\": 295, \"settle_min\": 10, \"cooldown_L\": 0, \"hold_L_per_h\": 0 },\n"
    "    { \"temperature_K\": 44.5, \"settle_min\": 70.5, \"cooldown_L\": 9.5, \"hold_L_per_h\": 1.6 } ],\n"
    "  \"scan\": { \"excess_min_eV\": -0.12, \"excess_max_eV\": 0.4, \"step_eV\": 0.04,\n"
    "    \"fine_step_eV\": 0.01, \"fine_halfwidth_eV\": 0.05, \"target_mte_sigma_meV\": 0.5,\n"
    "    \"target_mte_sigma_rel\": 0.03, \"min_dwell_s\": 20, \"max_dwell_s\": 1800,\n"
    "    \"order\": \"descending\" },\n"
    "  \"beam_time_h\": 12.5, \"over_budget\": \"drop\"\n"
    "}\n";
  const char *csv_text =
    "wavelength_nm,pulse_energy_uJ\n"
    "# measured at the cathode\n"
    "235.5,0.05\n"
    "250.25,0.4\n"
    "280.75,0.3\n";
  g_autoptr (GError) error = NULL;
  g_autofree char *dir = g_dir_make_tmp ("mteplan-locale-XXXXXX", &error);
  g_autofree char *plan_path = NULL;
  g_autofree char *csv_path = NULL;
  g_autoptr (MpPlan) in_c = NULL;
  g_autoptr (MpPlan) in_de = NULL;
  const MpTuningRange *range;

  g_assert_no_error (error);
  plan_path = g_build_filename (dir, "csv-curve.mteplan", NULL);
  csv_path = g_build_filename (dir, "curve.csv", NULL);
  g_assert_true (g_file_set_contents (plan_path, plan_text, -1, &error));
  g_assert_true (g_file_set_contents (csv_path, csv_text, -1, &error));

  leave_german_locale ();
  in_c = mp_plan_load_from_file (plan_path, &error);
  g_assert_no_error (error);
  range = g_ptr_array_index (in_c->laser.ranges, 0);
  g_assert_cmpuint (range->points->len, ==, 3);
  assert_same_number ("csv wavelength_nm",
                      g_array_index (range->points, MpTuningPoint, 1).wavelength_nm, 250.25);
  assert_same_number ("temperature_K",
                      g_array_index (in_c->temperatures, MpTemperatureBlock, 1).temperature_K,
                      44.5);

  if (!enter_german_locale ())
    g_test_skip ("the locale de_DE.UTF-8 is not available");
  else
    {
      in_de = mp_plan_load_from_file (plan_path, &error);
      leave_german_locale ();
      g_assert_no_error (error);
      assert_same_plan (in_c, in_de);
    }

  g_unlink (csv_path);
  g_unlink (plan_path);
  g_rmdir (dir);
}

/* Measured data read while the locale is German: the same numbers. */
static void
test_measured_under_german_locale (void)
{
  const char *csv =
    "temperature_K,wavelength_nm,qe,mte_meV,mte_sigma_meV,elapsed_h\n"
    "40.5,270.25,1.25e-7,12.5,0.75,0.5\n"
    "40.5,271.75,6.5e-8,,,0.625\n";
  g_autoptr (MpMeasuredData) in_c = NULL;
  g_autoptr (MpMeasuredData) in_de = NULL;
  g_autoptr (GError) error = NULL;

  leave_german_locale ();
  in_c = mp_measured_load_from_data (csv, -1, "locale.csv", &error);
  g_assert_no_error (error);
  g_assert_cmpuint (in_c->points->len, ==, 2);
  assert_same_number ("temperature_K",
                      g_array_index (in_c->points, MpMeasuredPoint, 0).temperature_K, 40.5);
  assert_same_number ("mte_meV", g_array_index (in_c->points, MpMeasuredPoint, 0).mte_meV, 12.5);
  assert_same_number ("qe", g_array_index (in_c->points, MpMeasuredPoint, 1).qe, 6.5e-8);

  if (!enter_german_locale ())
    {
      g_test_skip ("the locale de_DE.UTF-8 is not available");
      return;
    }
  in_de = mp_measured_load_from_data (csv, -1, "locale.csv", &error);
  leave_german_locale ();
  g_assert_no_error (error);
  g_assert_cmpuint (in_de->points->len, ==, in_c->points->len);
  for (guint i = 0; i < in_c->points->len; i++)
    {
      const MpMeasuredPoint *a = &g_array_index (in_c->points, MpMeasuredPoint, i);
      const MpMeasuredPoint *b = &g_array_index (in_de->points, MpMeasuredPoint, i);

      assert_same_number ("temperature_K", a->temperature_K, b->temperature_K);
      assert_same_number ("photon_energy_eV", a->photon_energy_eV, b->photon_energy_eV);
      assert_same_number ("qe", a->qe, b->qe);
      assert_same_number ("mte_meV", a->mte_meV, b->mte_meV);
      assert_same_number ("mte_sigma_meV", a->mte_sigma_meV, b->mte_sigma_meV);
      assert_same_number ("elapsed_h", a->elapsed_h, b->elapsed_h);
    }
}

int
main (int argc, char **argv)
{
  setlocale (LC_ALL, "C.UTF-8");
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();

  g_test_add_func ("/plan-locale/text-round-trip", test_text_round_trip);
  g_test_add_func ("/plan-locale/file-round-trip", test_file_round_trip);
  g_test_add_func ("/plan-locale/load-under-german-locale", test_load_under_german_locale);
  g_test_add_func ("/plan-locale/measured-under-german-locale", test_measured_under_german_locale);
  return g_test_run ();
}
