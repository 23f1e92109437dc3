/* SPDX-License-Identifier: GPL-3.0-or-later */
/* The scheduler: a worked example computed by hand from the formulas of
 * ../shared/spec/physics.md, and properties over generated plans. */
#include "config.h"

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-schedule.h"

#include <math.h>
#include <string.h>

static void
assert_rel (double got, double want, double rel)
{
  if (want == 0.0)
    g_assert_cmpfloat (fabs (got), <=, rel);
  else if (!(fabs (got / want - 1.0) <= rel))
    {
      g_test_message ("got %.17g, want %.17g (rel %.3g)", got, want, got / want - 1.0);
      g_assert_cmpfloat (fabs (got / want - 1.0), <=, rel);
    }
}

static MpTuningRange *
new_range (const char *label, double switch_s, const double *wl, const double *uJ, int n)
{
  MpTuningRange *r = g_new0 (MpTuningRange, 1);

  r->label = g_strdup (label);
  r->switch_s = switch_s;
  r->points = g_array_new (FALSE, FALSE, sizeof (MpTuningPoint));
  for (int i = 0; i < n; i++)
    {
      MpTuningPoint p = { wl[i], uJ[i] };

      g_array_append_val (r->points, p);
    }
  return r;
}

static void
set_blocks (MpPlan *plan, const MpTemperatureBlock *blocks, int n)
{
  g_array_set_size (plan->temperatures, 0);
  g_array_append_vals (plan->temperatures, blocks, n);
}

/* ---- the worked example ------------------------------------------------ */

/* One 300 K block, three steps, zero bandwidth, no fine band.
 *
 * Constants (CODATA 2018): hc = 1239.8419843320025 eV nm,
 * k_B = 8.617333262145179e-5 eV/K, e = 1.602176634e-19 C,
 * eps0 = 8.8541878128e-12 F/m.
 *
 * Cathode: phi = 4.5 eV, F = 1 MV/m. Schottky: dW = sqrt(e F / (4 pi eps0))
 *   = sqrt(1.602176634e-19 * 1e6 / (4 pi * 8.8541878128e-12))
 *   = 0.037946864795956 eV, so phi_eff = 4.462053135204044 eV.
 * kT = 8.617333262145179e-5 * 300 = 0.025851999786435537 eV.
 * QE reference: QE_ref = 4e-11 at E_ref = 5.0 eV, 300 K:
 *   x_ref = (5.0 - 4.462053135204044) / kT = 20.80871380318574,
 *   Y_ref = kT^2 F_1(x_ref) = 0.14579276670036886 eV^2.
 * Laser: 10 kHz, line width 0, retune 30 s, wavelength step 1 nm, one
 *   range 250 nm 0.2 uJ - 300 nm 0.4 uJ (two points: a straight line,
 *   U = 0.2 + 0.2 (lambda - 250) / 50 uJ).
 * Detector: eta = 0.5, mu_max = 0.1, R_max = 500 /s (so the cap is
 *   min(0.1, 500 / 10000) = 0.05 per pulse), B = 2 /s, E_acc = 150 meV,
 *   sigma_r = 0.5 meV, sigma_sys = 0.1 meV.
 * Scan: excess -0.05 .. 0.15 eV at 0.1 eV (three steps), descending;
 *   target max(0.3 meV, 0.01 MTE); dwell in [15, 150] s.
 * Block: 300 K, settle 10 min, cool-down 2 L, hold 1 L/h; budget 20 L,
 *   reserve 2 L; beam time 10 h.
 *
 * F_j below are -Li_{j+1}(-e^x), evaluated at 30 digits (mpmath polylog).
 *
 * Step 1, excess 0.15: E0 = 4.612053135 eV, lambda0 = hc / E0 =
 *   268.8264745 nm -> 269 nm; E = hc / 269 = 4.609078008669154 eV,
 *   dE = 0.14702487346511 eV, x = dE / kT = 5.687176028148267.
 *   F_1 = 17.81353337135486, F_2 = 40.01606022924410, F_3 = 72.08138022176019.
 *   Y = kT^2 F_1 = 0.011905245597145428; QE = 4e-11 Y / Y_ref
 *   = 3.266347396126425e-12. U = 0.276 uJ; N_ph = U / (E e)
 *   = 3.7375295044064095e11; mu_full = QE N_ph eta = 0.6104034882331781
 *   > 0.05, so mu = 0.05, T = 0.08191303123893629, OD = 1.0866470024523718;
 *   S = 500 /s. MTE = kT F_2/F_1 = 0.05807355334478084 eV,
 *   <eps^2> = 2 kT^2 F_3/F_1 = 0.005408680220602313 eV^2,
 *   V = <eps^2> - MTE^2 + sigma_r^2 = 0.0020363926225132072,
 *   W_b = E_acc^2/3 - MTE E_acc + MTE^2 = 0.00216150459637198,
 *   V + (B/S) W_b = 0.002045038640898695 eV^2.
 *   target = max(0.0003, 0.01 * 0.0580736) = 0.0005807355334478084 eV;
 *   t_req = 0.002045038640898695 / (500 (target^2 - 1e-8)) = 12.49818270746732 s
 *   < 15 s: dwell 15 s (ok), reached sqrt(var / (S 15) + 1e-8)
 *   = 0.531668899585534 meV.
 * Step 2, excess 0.05: lambda0 = 274.7844379 -> 275 nm, E = 4.508516306661827,
 *   x = 1.797275717221783, F_1 = 3.100689218462489, F_2 = 4.086466864627363,
 *   F_3 = 4.821470460719186; QE = 5.685524563705310e-13; U = 0.3 uJ;
 *   N_ph = 4.153146168222736e11; mu_full = 0.1180640727804447 -> mu = 0.05,
 *   T = 0.4234988580563488; S = 500. MTE = 0.03407092200101463 eV, var =
 *   0.0009320729013934140; target = 0.0003407092200101463 (relative);
 *   t_req = 17.57255921107207 s: dwell 17.57255921107207 s (ok), reached =
 *   target.
 * Step 3, excess -0.05: lambda0 = 281.0124779 -> 281 nm, E = 4.412249054562286,
 *   x = -1.926507854448055, F_1 = 0.1406696536324584, F_2 = 0.1431119082194824,
 *   F_3 = 0.1443664747751510; QE = 2.579364504940100e-14; U = 0.324 uJ;
 *   N_ph = 4.583261087753585e11; mu_full = 0.005910950483312374 < 0.05, so
 *   T = 1, OD = 0, S = 59.10950483312374 /s. MTE = 0.02630083266141460 eV,
 *   V = 0.0006802954113422552, W_b = 0.004246608899471543, var =
 *   0.0008239815718492819; target = max(0.0003, 0.000263) = 0.0003;
 *   t_req = 174.2489583899246 s > 150 s: dwell 150 s (short), reached =
 *   sqrt(var / (S 150) + 1e-8) = 0.3208313853225083 meV.
 * Timeline: settle 1/6 h; step times 45, 47.57255921107207 and 180 s;
 *   end of block = 1/6 + 272.5725592110721 / 3600 = 0.2423812664475200 h.
 * Cryogen: 2 L cool-down + 1 L/h * 0.24238126644752 h = 2.24238126644752 L;
 *   left after the last step 20 - 2.24238126644752 = 17.75761873355248 L. */
static MpPlan *
make_worked_plan (void)
{
  MpPlan *plan = mp_plan_new_default ();
  static const double wl[] = { 250, 300 }, uJ[] = { 0.2, 0.4 };
  static const MpTemperatureBlock block = { 300, 10, 2, 1.0 };

  plan->cathode.work_function_eV = 4.5;
  plan->cathode.work_function_sigma_eV = 0.0;
  plan->cathode.field_MV_per_m = 1.0;
  plan->cathode.qe_ref_photon_energy_eV = 5.0;
  plan->cathode.qe_ref_temperature_K = 300;
  plan->cathode.qe_ref = 4e-11;
  plan->cathode.extra_mte_meV = 0.0;
  plan->laser.repetition_rate_kHz = 10;
  plan->laser.bandwidth_meV = 0;
  plan->laser.retune_s = 30;
  plan->laser.wavelength_step_nm = 1.0;
  g_ptr_array_set_size (plan->laser.ranges, 0);
  g_ptr_array_add (plan->laser.ranges, new_range ("UV", 0, wl, uJ, 2));
  plan->detector.efficiency = 0.5;
  plan->detector.max_electrons_per_pulse = 0.1;
  plan->detector.max_rate_per_s = 500;
  plan->detector.dark_rate_per_s = 2;
  plan->detector.acceptance_meV = 150;
  plan->detector.resolution_meV = 0.5;
  plan->detector.systematic_meV = 0.1;
  plan->cryostat.budget_L = 20;
  plan->cryostat.reserve_L = 2;
  set_blocks (plan, &block, 1);
  plan->scan.excess_min_eV = -0.05;
  plan->scan.excess_max_eV = 0.15;
  plan->scan.step_eV = 0.1;
  plan->scan.fine_step_eV = 0.0;
  plan->scan.fine_halfwidth_eV = 0.0;
  plan->scan.target_mte_sigma_meV = 0.3;
  plan->scan.target_mte_sigma_rel = 0.01;
  plan->scan.min_dwell_s = 15;
  plan->scan.max_dwell_s = 150;
  plan->scan.order = MP_SCAN_DESCENDING;
  plan->scan.qe_sweep_points = 0;
  plan->beam_time_h = 10;
  plan->over_budget = MP_OVER_BUDGET_DROP;
  return plan;
}

typedef struct
{
  double wavelength_nm, photon_energy_eV, excess_eV, qe, transmission, od;
  double rate, mte_meV, target_meV, required_s, dwell_s, reached_meV, end_h, left_L;
  MpStepStatus status;
} WorkedStep;

static void
test_worked_example (void)
{
  /* Values from the comment above (30-digit evaluation of the same
   * formulas; physics.md "Counting and dwell time"). */
  static const WorkedStep want[] = {
    { 269, 4.609078008669154, 0.14702487346511031, 3.266347396126425e-12,
      0.08191303123893629, 1.0866470024523718, 500, 58.07355334478084,
      0.5807355334478084, 12.49818270746732, 15, 0.531668899585534,
      0.17916666666666667, 17.820833333333333, MP_STEP_OK },
    { 275, 4.508516306661827, 0.046463171457783305, 5.685524563705310e-13,
      0.4234988580563488, 0.37314775638521052, 500, 34.07092200101463,
      0.3407092200101463, 17.57255921107207, 17.57255921107207, 0.3407092200101463,
      0.19238126644752002, 17.807618733552480, MP_STEP_OK },
    { 281, 4.412249054562286, -0.049804080641757500, 2.579364504940100e-14,
      1.0, 0.0, 59.10950483312374, 26.30083266141460,
      0.3, 174.2489583899246, 150, 0.3208313853225083,
      0.24238126644752002, 17.757618733552480, MP_STEP_SHORT },
  };
  g_autoptr (MpPlan) plan = make_worked_plan ();
  g_autoptr (MpSchedule) s = NULL;
  g_autoptr (GError) error = NULL;
  MpBlock *block;

  s = mp_schedule_compute (plan, NULL, &error);
  g_assert_no_error (error);
  g_assert_nonnull (s);
  assert_rel (s->effective_work_function_eV, 4.462053135204044, 1e-12);
  g_assert_true (s->feasible);
  g_assert_cmpuint (s->blocks->len, ==, 1);
  block = g_ptr_array_index (s->blocks, 0);
  g_assert_cmpuint (block->steps->len, ==, 3);
  assert_rel (block->settle_h, 1.0 / 6.0, 1e-12);
  for (guint i = 0; i < 3; i++)
    {
      const MpStep *st = &g_array_index (block->steps, MpStep, i);
      const WorkedStep *w = &want[i];

      g_test_message ("step %u", i + 1);
      g_assert_cmpint (st->index, ==, (int) i + 1);
      g_assert_cmpint (st->kind, ==, MP_STEP_KIND_MTE);
      assert_rel (st->wavelength_nm, w->wavelength_nm, 1e-12);
      assert_rel (st->photon_energy_eV, w->photon_energy_eV, 1e-12);
      assert_rel (st->excess_energy_eV, w->excess_eV, 1e-9);
      assert_rel (st->qe, w->qe, 1e-9);
      assert_rel (st->transmission, w->transmission, 1e-9);
      g_assert_cmpfloat (fabs (st->optical_density - w->od), <=, 1e-9);
      assert_rel (st->signal_rate_per_s, w->rate, 1e-9);
      assert_rel (st->mte_meV, w->mte_meV, 1e-9);
      assert_rel (st->target_sigma_meV, w->target_meV, 1e-9);
      assert_rel (st->required_dwell_s, w->required_s, 1e-9);
      assert_rel (st->dwell_s, w->dwell_s, 1e-9);
      assert_rel (st->reached_sigma_meV, w->reached_meV, 1e-9);
      assert_rel (st->end_h, w->end_h, 1e-9);
      assert_rel (st->cryogen_left_L, w->left_L, 1e-9);
      g_assert_cmpint (st->status, ==, w->status);
    }
  assert_rel (s->beam_time_h, 0.24238126644752002, 1e-9);
  assert_rel (s->cryogen_L, 2.24238126644752002, 1e-9);
  assert_rel (block->cryogen_L, 2.24238126644752002, 1e-9);
  assert_rel (s->beam_time_available_h, 10.0, 1e-12);
  assert_rel (s->cryogen_available_L, 18.0, 1e-12);
  g_assert_cmpuint (s->left_out->len, ==, 0);
}

/* The same plan with an elapsed time, the liquid measured, and the 275 nm
 * step done: the clock starts at 2 h, the done step takes no time, the
 * block is under way so no settle or cool-down is counted again. */
static void
test_replan_options (void)
{
  g_autoptr (MpPlan) plan = make_worked_plan ();
  g_autoptr (MpSchedule) s = NULL;
  g_autoptr (GArray) done = g_array_new (FALSE, FALSE, sizeof (MpDonePoint));
  MpDonePoint d = { 300.2, 1239.8419843320025 / 275.0 + 1e-4 };
  MpScheduleOptions opts;
  MpBlock *block;
  const MpStep *st;

  g_array_append_val (done, d);
  mp_schedule_options_init (&opts);
  opts.elapsed_h = 2.0;
  opts.cryogen_left_L = 12.0;
  opts.done = done;
  s = mp_schedule_compute (plan, &opts, NULL);
  g_assert_nonnull (s);
  assert_rel (s->beam_time_available_h, 8.0, 1e-12);
  assert_rel (s->cryogen_available_L, 10.0, 1e-12);
  block = g_ptr_array_index (s->blocks, 0);
  assert_rel (block->start_h, 2.0, 1e-12);
  g_assert_cmpfloat (block->settle_h, ==, 0.0);
  st = &g_array_index (block->steps, MpStep, 1);
  g_assert_true (st->done);
  g_assert_cmpfloat (st->end_h, ==, st->start_h);
  /* Remaining: 45 s + 180 s = 0.0625 h, hold 1 L/h, no cool-down. */
  assert_rel (s->beam_time_h, 0.0625, 1e-12);
  assert_rel (s->cryogen_L, 0.0625, 1e-12);
  assert_rel (block->end_h, 2.0625, 1e-12);
  assert_rel (g_array_index (block->steps, MpStep, 2).cryogen_left_L, 12.0 - 0.0625, 1e-12);
}

/* Two tuning ranges: crossing from one to the other costs the new range's
 * switch time once (issue 3, item 1). The worked plan's 269 and 275 nm
 * steps lie in 250-275 nm, the 281 nm step in 275.5-300 nm; descending
 * photon energy crosses once: 0.24238126644752 h + 600 s. */
static MpSchedule *compute_quick (const MpPlan *plan);

static void
test_range_switch (void)
{
  g_autoptr (MpPlan) plan = make_worked_plan ();
  g_autoptr (MpSchedule) s = NULL;
  static const double wa[] = { 250, 275 }, ua[] = { 0.2, 0.3 };
  static const double wb[] = { 275.5, 300 }, ub[] = { 0.302, 0.4 };
  MpBlock *block;

  g_ptr_array_set_size (plan->laser.ranges, 0);
  g_ptr_array_add (plan->laser.ranges, new_range ("A", 300, wa, ua, 2));
  g_ptr_array_add (plan->laser.ranges, new_range ("B", 600, wb, ub, 2));
  s = compute_quick (plan);
  block = g_ptr_array_index (s->blocks, 0);
  g_assert_cmpuint (block->steps->len, ==, 3);
  g_assert_cmpint (g_array_index (block->steps, MpStep, 1).range_index, ==, 0);
  g_assert_cmpint (g_array_index (block->steps, MpStep, 2).range_index, ==, 1);
  /* Same pulse energies as the straight line of the worked example, so the
   * same dwells; only the switch is new. */
  assert_rel (s->beam_time_h, 0.24238126644752002 + 600.0 / 3600.0, 1e-9);
  assert_rel (g_array_index (block->steps, MpStep, 2).end_h
              - g_array_index (block->steps, MpStep, 2).start_h,
              (30.0 + 150.0 + 600.0) / 3600.0, 1e-9);

  /* Ascending order: 281 nm (B) first, then A: again one switch, into A. */
  g_clear_pointer (&s, mp_schedule_free);
  plan->scan.order = MP_SCAN_ASCENDING;
  s = compute_quick (plan);
  assert_rel (s->beam_time_h, 0.24238126644752002 + 300.0 / 3600.0, 1e-9);
}

/* ---- generated plans ---------------------------------------------------- */

static MpPlan *
random_plan (GRand *rng)
{
  MpPlan *plan = mp_plan_new_default ();
  static const double steps_nm[] = { 0.05, 0.1, 0.2, 0.5 };
  static const double wl1[] = { 215, 240, 262, 285, 300 };
  static const double uJ1[] = { 0.02, 0.2, 0.5, 0.35, 0.1 };
  static const double wl2[] = { 300, 320, 345 };
  static const double uJ2[] = { 1.0, 2.0, 1.5 };
  int n_blocks = g_rand_int_range (rng, 1, 5);

  plan->cathode.work_function_eV = g_rand_double_range (rng, 4.2, 4.9);
  plan->cathode.work_function_sigma_eV = g_rand_double_range (rng, 0.0, 0.05);
  plan->cathode.field_MV_per_m = g_rand_double_range (rng, 0.0, 5.0);
  plan->cathode.qe_ref = pow (10.0, g_rand_double_range (rng, -8, -4));
  plan->cathode.qe_ref_photon_energy_eV = plan->cathode.work_function_eV + 0.4;
  plan->cathode.extra_mte_meV = g_rand_double_range (rng, 0.0, 3.0);
  plan->laser.repetition_rate_kHz = g_rand_double_range (rng, 1, 100);
  plan->laser.bandwidth_meV = g_rand_boolean (rng) ? 0.0 : g_rand_double_range (rng, 0.5, 15);
  plan->laser.retune_s = g_rand_double_range (rng, 5, 60);
  plan->laser.wavelength_step_nm = steps_nm[g_rand_int_range (rng, 0, 4)];
  g_ptr_array_set_size (plan->laser.ranges, 0);
  g_ptr_array_add (plan->laser.ranges, new_range ("UV", 0, wl1, uJ1, 5));
  if (g_rand_boolean (rng))
    g_ptr_array_add (plan->laser.ranges,
                     new_range ("UV2", g_rand_double_range (rng, 0, 600), wl2, uJ2, 3));
  plan->detector.dark_rate_per_s = g_rand_double_range (rng, 0, 20);
  plan->detector.systematic_meV = g_rand_double_range (rng, 0, 0.6);
  g_array_set_size (plan->temperatures, 0);
  for (int b = 0; b < n_blocks; b++)
    {
      MpTemperatureBlock tb = { g_rand_double_range (rng, 8, 300),
                                g_rand_double_range (rng, 0, 90),
                                g_rand_double_range (rng, 0, 10),
                                g_rand_double_range (rng, 0, 2) };

      g_array_append_val (plan->temperatures, tb);
    }
  plan->scan.excess_min_eV = -g_rand_double_range (rng, 0.02, 0.2);
  plan->scan.excess_max_eV = g_rand_double_range (rng, 0.1, 0.6);
  plan->scan.step_eV = g_rand_double_range (rng, 0.02, 0.08);
  plan->scan.fine_step_eV = g_rand_boolean (rng) ? 0.0 : g_rand_double_range (rng, 0.004, 0.02);
  plan->scan.fine_halfwidth_eV = g_rand_double_range (rng, 0.0, 0.08);
  plan->scan.target_mte_sigma_meV = g_rand_double_range (rng, 0.1, 2);
  plan->scan.target_mte_sigma_rel = g_rand_double_range (rng, 0.005, 0.05);
  plan->scan.min_dwell_s = g_rand_double_range (rng, 1, 60);
  plan->scan.max_dwell_s = plan->scan.min_dwell_s + g_rand_double_range (rng, 10, 3600);
  plan->scan.order = g_rand_boolean (rng) ? MP_SCAN_ASCENDING : MP_SCAN_DESCENDING;
  plan->scan.qe_sweep_points = g_rand_int_range (rng, 0, 3) == 0 ? g_rand_int_range (rng, 1, 8) : 0;
  plan->scan.qe_sweep_dwell_s = g_rand_boolean (rng) ? 0.0 : g_rand_double_range (rng, 2, 30);
  plan->cryostat.budget_L = g_rand_double_range (rng, 2, 40);
  plan->cryostat.reserve_L = g_rand_double_range (rng, 0, 2);
  plan->beam_time_h = g_rand_double_range (rng, 0.5, 16);
  plan->over_budget = g_rand_boolean (rng) ? MP_OVER_BUDGET_DROP : MP_OVER_BUDGET_STRETCH;
  return plan;
}

static MpSchedule *
compute_quick (const MpPlan *plan)
{
  MpScheduleOptions opts;
  GError *error = NULL;
  MpSchedule *s;

  mp_schedule_options_init (&opts);
  opts.no_sensitivity = TRUE;
  s = mp_schedule_compute (plan, &opts, &error);
  g_assert_no_error (error);
  g_assert_nonnull (s);
  return s;
}

static gboolean
inside_some_range (const MpPlan *plan, double wl)
{
  for (guint r = 0; r < plan->laser.ranges->len; r++)
    {
      const MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, r);
      const MpTuningPoint *p = (const MpTuningPoint *) range->points->data;

      if (wl >= p[0].wavelength_nm && wl <= p[range->points->len - 1].wavelength_nm)
        return TRUE;
    }
  return FALSE;
}

/* Budgets, wavelength grid, timeline consistency over many plans. */
static void
test_properties_budgets (void)
{
  g_autoptr (GRand) rng = g_rand_new_with_seed (20261201);

  for (int trial = 0; trial < 300; trial++)
    {
      g_autoptr (MpPlan) plan = random_plan (rng);
      g_autoptr (MpSchedule) s = compute_quick (plan);
      double step = plan->laser.wavelength_step_nm;
      double clock = 0.0;

      if (s->feasible || (plan->over_budget == MP_OVER_BUDGET_DROP
                          && s->beam_time_available_h >= 0 && s->cryogen_available_L >= 0))
        {
          g_assert_cmpfloat (s->beam_time_h, <=, s->beam_time_available_h);
          g_assert_cmpfloat (s->cryogen_L, <=, s->cryogen_available_L);
        }
      g_assert_cmpfloat (s->stretch_factor, >=, 1.0);
      for (guint b = 0; b < s->blocks->len; b++)
        {
          MpBlock *block = g_ptr_array_index (s->blocks, b);

          g_assert_cmpfloat (fabs (block->start_h - clock), <=, 1e-9);
          for (guint i = 0; i < block->steps->len; i++)
            {
              const MpStep *st = &g_array_index (block->steps, MpStep, i);
              double k = st->wavelength_nm / step;

              g_assert_cmpfloat (fabs (k - round (k)), <=, 1e-6);
              g_assert_true (inside_some_range (plan, st->wavelength_nm));
              if (st->kind == MP_STEP_KIND_MTE)
                {
                  g_assert_cmpfloat (st->dwell_s, >=, plan->scan.min_dwell_s - 1e-9);
                  g_assert_cmpfloat (st->dwell_s, <=, plan->scan.max_dwell_s + 1e-9);
                }
              g_assert_cmpint (st->priority, >=, 1);
              g_assert_cmpint (st->priority, <=, 3);
              g_assert_true (isfinite (st->photon_energy_eV));
              if (s->feasible)
                g_assert_cmpfloat (st->cryogen_left_L, >=,
                                   plan->cryostat.reserve_L - 1e-9);
            }
          clock = block->end_h;
        }
      g_assert_cmpfloat (fabs (clock - s->beam_time_h), <=, 1e-9);
    }
}

static int
count_left_out_for_budget (const MpSchedule *s)
{
  int n = 0;

  for (guint i = 0; i < s->left_out->len; i++)
    n += !g_str_has_prefix (g_array_index (s->left_out, MpLeftOut, i).reason, "outside");
  return n;
}

/* Giving more beam time (or more cryogen) never leaves out more steps. */
static void
test_properties_monotone_drop (void)
{
  g_autoptr (GRand) rng = g_rand_new_with_seed (7);
  int n_with_drops = 0;

  for (int trial = 0; trial < 60; trial++)
    {
      g_autoptr (MpPlan) plan = random_plan (rng);
      int prev_h = G_MAXINT, prev_L = G_MAXINT;
      double budget_L = plan->cryostat.budget_L;

      plan->over_budget = MP_OVER_BUDGET_DROP;
      for (int k = 1; k <= 12; k++)
        {
          g_autoptr (MpSchedule) s = NULL;
          int n;

          plan->beam_time_h = 0.25 * k * k;
          s = compute_quick (plan);
          n = count_left_out_for_budget (s);
          g_assert_cmpint (n, <=, prev_h);
          n_with_drops += n > 0;
          prev_h = n;
        }
      plan->beam_time_h = 1000;
      for (int k = 1; k <= 12; k++)
        {
          g_autoptr (MpSchedule) s = NULL;
          int n;

          plan->cryostat.budget_L = plan->cryostat.reserve_L + 0.1 * k * k * MAX (budget_L, 1) / 10;
          s = compute_quick (plan);
          n = count_left_out_for_budget (s);
          g_assert_cmpint (n, <=, prev_L);
          prev_L = n;
        }
    }
  /* The trials must exercise the policy. */
  g_assert_cmpint (n_with_drops, >, 50);
}

/* Stretch: factor >= 1, rising as the budget falls; every step kept. */
static void
test_properties_stretch (void)
{
  g_autoptr (GRand) rng = g_rand_new_with_seed (11);
  int n_stretched = 0;

  for (int trial = 0; trial < 40; trial++)
    {
      g_autoptr (MpPlan) plan = random_plan (rng);
      double prev = 1.0;
      int n_steps = -1;

      plan->over_budget = MP_OVER_BUDGET_STRETCH;
      plan->cryostat.budget_L = 5000;
      for (int k = 16; k >= 1; k--)
        {
          g_autoptr (MpSchedule) s = NULL;

          plan->beam_time_h = 0.5 * k;
          s = compute_quick (plan);
          g_assert_cmpfloat (s->stretch_factor, >=, 1.0);
          if (!s->feasible)
            break;
          g_assert_cmpfloat (s->stretch_factor, >=, prev);
          g_assert_cmpfloat (s->beam_time_h, <=, s->beam_time_available_h);
          if (n_steps < 0)
            n_steps = mp_schedule_count_steps (s);
          g_assert_cmpint (mp_schedule_count_steps (s), ==, n_steps);
          n_stretched += s->stretch_factor > 1.0;
          prev = s->stretch_factor;
        }
    }
  g_assert_cmpint (n_stretched, >, 20);
}

/* A higher QE (same steps) never needs a longer dwell: t_req falls as S
 * rises (physics.md, "Counting and dwell time"). */
static void
test_properties_dwell_falls_with_qe (void)
{
  g_autoptr (GRand) rng = g_rand_new_with_seed (3);

  for (int trial = 0; trial < 40; trial++)
    {
      g_autoptr (MpPlan) plan = random_plan (rng);
      g_autoptr (MpSchedule) lo = NULL;
      g_autoptr (MpSchedule) hi = NULL;

      plan->beam_time_h = 5000;
      plan->cryostat.budget_L = 5000;
      plan->scan.qe_sweep_points = 0;
      lo = compute_quick (plan);
      plan->cathode.qe_ref *= 3.0;
      hi = compute_quick (plan);
      g_assert_cmpuint (lo->blocks->len, ==, hi->blocks->len);
      for (guint b = 0; b < lo->blocks->len; b++)
        {
          MpBlock *bl = g_ptr_array_index (lo->blocks, b);
          MpBlock *bh = g_ptr_array_index (hi->blocks, b);

          g_assert_cmpuint (bl->steps->len, ==, bh->steps->len);
          for (guint i = 0; i < bl->steps->len; i++)
            {
              const MpStep *sl = &g_array_index (bl->steps, MpStep, i);
              const MpStep *sh = &g_array_index (bh->steps, MpStep, i);

              g_assert_cmpfloat (sh->qe, >, sl->qe);
              g_assert_cmpfloat (sh->dwell_s, <=, sl->dwell_s * (1 + 1e-12));
              if (isfinite (sl->required_dwell_s))
                g_assert_cmpfloat (sh->required_dwell_s, <=, sl->required_dwell_s * (1 + 1e-12));
            }
        }
    }
}

static void
test_determinism (void)
{
  g_autoptr (GRand) rng = g_rand_new_with_seed (5);

  for (int trial = 0; trial < 20; trial++)
    {
      g_autoptr (MpPlan) plan = random_plan (rng);
      g_autoptr (MpSchedule) a = mp_schedule_compute (plan, NULL, NULL);
      g_autoptr (MpSchedule) b = mp_schedule_compute (plan, NULL, NULL);
      g_autofree char *ja = mp_schedule_to_json_data (a, NULL);
      g_autofree char *jb = mp_schedule_to_json_data (b, NULL);
      g_autofree char *ca = mp_schedule_to_csv (a);
      g_autofree char *cb = mp_schedule_to_csv (b);

      g_assert_cmpstr (ja, ==, jb);
      g_assert_cmpstr (ca, ==, cb);
      g_assert_null (strstr (ja, "nan"));
      g_assert_null (strstr (ja, "inf"));
    }
}

/* Steps outside the tuning range are left out with the range named. */
static void
test_out_of_range (void)
{
  g_autoptr (MpPlan) plan = make_worked_plan ();
  g_autoptr (MpSchedule) s = NULL;

  /* Excess 0.55 and 0.65 eV: 247 and 243 nm, below the 250 nm end. */
  plan->scan.excess_max_eV = 0.65;
  s = compute_quick (plan);
  g_assert_cmpuint (s->left_out->len, ==, 2);
  g_assert_cmpstr (g_array_index (s->left_out, MpLeftOut, 0).reason, ==,
                   "outside the laser's tuning range (250-300 nm)");
  g_assert_cmpfloat (g_array_index (s->left_out, MpLeftOut, 0).wavelength_nm, <, 250);
}

/* Drop: a block whose cool-down alone exceeds the cryogen goes whole;
 * steps left out for time say "over budget". */
static void
test_drop_reasons (void)
{
  g_autoptr (MpPlan) plan = make_worked_plan ();
  static const MpTemperatureBlock blocks[] = { { 300, 10, 0, 0 }, { 40, 30, 25, 1 } };
  g_autoptr (MpSchedule) s = NULL;
  guint n_cool = 0, n_over = 0;

  set_blocks (plan, blocks, 2);
  s = compute_quick (plan);
  for (guint i = 0; i < s->left_out->len; i++)
    {
      const MpLeftOut *lo = &g_array_index (s->left_out, MpLeftOut, i);

      g_assert_cmpfloat (lo->temperature_K, ==, 40);
      n_cool += g_strcmp0 (lo->reason, "block cool-down does not fit") == 0;
    }
  g_assert_cmpuint (n_cool, ==, 3);
  g_assert_true (s->feasible);
  g_assert_cmpuint (s->blocks->len, ==, 1);

  g_clear_pointer (&s, mp_schedule_free);
  plan->cryostat.budget_L = 100;
  plan->beam_time_h = 0.72; /* settles 1/6 + 1/2 h leave room for a few steps */
  s = compute_quick (plan);
  for (guint i = 0; i < s->left_out->len; i++)
    n_over += g_strcmp0 (g_array_index (s->left_out, MpLeftOut, i).reason, "over budget") == 0;
  g_assert_cmpuint (n_over, >, 0);
  g_assert_true (s->feasible);
  g_assert_cmpfloat (s->beam_time_h, <=, 0.72);
}

/* QE sweep steps come first in each block, marked as such, and count in
 * time. */
static void
test_qe_sweep (void)
{
  g_autoptr (MpPlan) plan = make_worked_plan ();
  g_autoptr (MpSchedule) s = NULL;
  g_autoptr (MpSchedule) s0 = NULL;
  g_autofree char *json = NULL;
  MpBlock *block;

  s0 = compute_quick (plan);
  plan->laser.wavelength_step_nm = 0.1;
  plan->scan.qe_sweep_points = 3;
  plan->scan.qe_sweep_dwell_s = 5;
  s = compute_quick (plan);
  block = g_ptr_array_index (s->blocks, 0);
  g_assert_cmpuint (block->steps->len, ==, 3 + 3);
  for (guint i = 0; i < 3; i++)
    {
      const MpStep *st = &g_array_index (block->steps, MpStep, i);

      g_assert_cmpint (st->kind, ==, MP_STEP_KIND_QE_SWEEP);
      g_assert_cmpfloat (st->dwell_s, ==, 5);
      /* +-(3 kT) around threshold at 300 K, sigma_phi = 0. */
      g_assert_cmpfloat (fabs (st->excess_energy_eV), <=, 3 * 0.0258520 + 0.001);
    }
  g_assert_cmpint (g_array_index (block->steps, MpStep, 3).kind, ==, MP_STEP_KIND_MTE);
  g_assert_cmpfloat (s->beam_time_h, >, s0->beam_time_h + 3 * 35 / 3600.0 - 1e-3);
  json = mp_schedule_to_json_data (s, NULL);
  g_assert_nonnull (strstr (json, "\"kind\" : \"qe_sweep\""));
  g_assert_nonnull (strstr (json, "\"kind\" : \"mte\""));
}

/* The JSON carries every key of plan-format.md, "The schedule (output)". */
static void
test_json_contract (void)
{
  static const char *top[] = { "plan_title", "feasible", "policy", "stretch_factor",
                               "totals", "blocks", "left_out", "warnings", "sensitivity",
                               "work_function_eV", "effective_work_function_eV" };
  static const char *totals[] = { "beam_time_h", "beam_time_available_h", "cryogen_L",
                                  "cryogen_available_L" };
  static const char *block_keys[] = { "temperature_K", "start_h", "end_h", "cryogen_L",
                                      "steps", "settle_h", "cryogen_start_L",
                                      "cryogen_end_L", "cut_list" };
  static const char *step_keys[] = { "index", "wavelength_nm", "photon_energy_eV",
                                     "excess_energy_eV", "qe", "transmission",
                                     "signal_rate_per_s", "mte_meV", "target_sigma_meV",
                                     "dwell_s", "reached_sigma_meV", "start_h",
                                     "cryogen_left_L", "status", "kind", "priority",
                                     "optical_density", "required_dwell_s", "done", "end_h" };
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (MpSchedule) s = mp_schedule_compute (plan, NULL, NULL);
  g_autoptr (JsonNode) root = mp_schedule_to_json (s);
  JsonObject *o = json_node_get_object (root), *b, *st;
  g_autofree char *csv = mp_schedule_to_csv (s);
  g_auto (GStrv) rows = g_strsplit (csv, "\n", -1);

  for (guint i = 0; i < G_N_ELEMENTS (top); i++)
    g_assert_true (json_object_has_member (o, top[i]));
  for (guint i = 0; i < G_N_ELEMENTS (totals); i++)
    g_assert_true (json_object_has_member (json_object_get_object_member (o, "totals"), totals[i]));
  b = json_array_get_object_element (json_object_get_array_member (o, "blocks"), 0);
  for (guint i = 0; i < G_N_ELEMENTS (block_keys); i++)
    g_assert_true (json_object_has_member (b, block_keys[i]));
  st = json_array_get_object_element (json_object_get_array_member (b, "steps"), 0);
  for (guint i = 0; i < G_N_ELEMENTS (step_keys); i++)
    g_assert_true (json_object_has_member (st, step_keys[i]));
  g_assert_true (json_object_has_member (json_object_get_object_member (o, "sensitivity"), "low"));
  g_assert_true (g_str_has_prefix (csv, "block_temperature_K,index,kind,wavelength_nm,"));
  g_assert_cmpuint (g_strv_length (rows), >, 2);
}

/* Dense scans use interpolated tables of the bandwidth-averaged emission
 * (shared with the phi +- sigma re-plans); the nominal steps stay within
 * 2e-5 of mp_emission_averaged at every step (the documented table error;
 * tolerance here 5e-5 on QE, MTE and required dwell). */
static void
test_dense_scan_matches_direct_model (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (MpSchedule) s = NULL;
  MpEmission ref;
  double phi_eff;

  plan->laser.bandwidth_meV = 5;
  plan->laser.wavelength_step_nm = 0.001;
  plan->cathode.work_function_sigma_eV = 0.03;
  plan->scan.step_eV = 0.001;
  plan->beam_time_h = 5000;
  plan->cryostat.budget_L = 5000;
  s = mp_schedule_compute (plan, NULL, NULL);
  g_assert_nonnull (s);
  g_assert_true (s->has_sensitivity);
  phi_eff = s->effective_work_function_eV;
  mp_emission_averaged (plan->cathode.qe_ref_photon_energy_eV - phi_eff,
                        plan->cathode.qe_ref_temperature_K, 5e-3, &ref);
  g_assert_cmpint (mp_schedule_count_steps (s), >, 1000);
  for (guint b = 0; b < s->blocks->len; b++)
    {
      MpBlock *block = g_ptr_array_index (s->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *st = &g_array_index (block->steps, MpStep, i);
          MpEmission em;
          double qe;

          mp_emission_averaged (st->excess_energy_eV, block->temperature_K, 5e-3, &em);
          qe = mp_qe_from_reference (plan->cathode.qe_ref, &ref, &em);
          assert_rel (st->qe, qe, 5e-5);
          assert_rel (st->mte_meV, em.mte_eV * 1e3 + plan->cathode.extra_mte_meV, 5e-5);
        }
    }
  /* The what-ifs ran at phi -+ sigma on the same wavelengths. Every step
   * lies below the QE reference energy (4.96 eV), so a higher work
   * function lowers every QE (the Fowler yield's log-derivative falls with
   * excess energy) and the MTE, hence the relative target: dwell, and so
   * beam time, can only grow; a lower one can only shrink it. */
  assert_rel (s->sensitivity_low.work_function_eV, 4.59 - 0.03, 1e-12);
  assert_rel (s->sensitivity_high.work_function_eV, 4.59 + 0.03, 1e-12);
  g_assert_cmpfloat (s->sensitivity_high.beam_time_h, >, s->beam_time_h);
  g_assert_cmpfloat (s->sensitivity_low.beam_time_h, <, s->beam_time_h);
  g_assert_cmpint (s->sensitivity_high.n_left_out, ==, 0);
}

static int
count_steps (const MpSchedule *schedule, gboolean done_only)
{
  int n = 0;

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        n += !done_only || g_array_index (block->steps, MpStep, i).done;
    }
  return n;
}

/* Measured points off the step grid (a refit moved it) still show as done:
 * claimed by the nearest step within half the finest spacing, otherwise
 * kept as done steps of their own. */
static void
test_done_points_off_grid (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (MpSchedule) before = NULL;
  g_autoptr (MpSchedule) after = NULL;
  g_autoptr (GArray) done = g_array_new (FALSE, FALSE, sizeof (MpDonePoint));
  MpScheduleOptions opts;
  const MpBlock *block;
  const MpStep *first;
  MpDonePoint near, far;
  double spacing_eV;

  mp_schedule_options_init (&opts);
  opts.no_sensitivity = TRUE;
  before = mp_schedule_compute (plan, &opts, NULL);
  g_assert_nonnull (before);
  block = g_ptr_array_index (before->blocks, 0);
  first = &g_array_index (block->steps, MpStep, 0);
  spacing_eV = plan->scan.step_eV;
  /* The first (coarse, far above threshold) step, missed by a fifth of the
   * coarse spacing: claimed. Half-way to the next coarse step and a bit
   * more above the first: not claimed, so added as its own done step. */
  near = (MpDonePoint) { block->temperature_K, first->photon_energy_eV - 0.2 * plan->scan.fine_step_eV };
  far = (MpDonePoint) { block->temperature_K, first->photon_energy_eV + 0.7 * spacing_eV };
  g_array_append_val (done, near);
  g_array_append_val (done, far);
  opts.done = done;
  after = mp_schedule_compute (plan, &opts, NULL);
  g_assert_nonnull (after);
  g_assert_cmpint (count_steps (after, TRUE), ==, 2);
  g_assert_cmpint (count_steps (after, FALSE), ==, count_steps (before, FALSE) + 1);
}

/* A re-plan goes on from the block under way (the latest measured point),
 * then the later blocks, then the earlier blocks with open steps, nearest
 * first; a warmer block reached by warming up pays no cool-down. */
static void
test_replan_block_order (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (GArray) done = g_array_new (FALSE, FALSE, sizeof (MpDonePoint));
  MpScheduleOptions opts;
  MpDonePoint warm, cold;
  const MpTemperatureBlock *tb;
  const MpBlock *revisited;
  guint n = plan->temperatures->len;

  g_assert_cmpuint (n, >=, 3);
  tb = &g_array_index (plan->temperatures, MpTemperatureBlock, 0);
  warm = (MpDonePoint) { tb->temperature_K, 4.80, 0.2 };
  tb = &g_array_index (plan->temperatures, MpTemperatureBlock, n - 1);
  cold = (MpDonePoint) { tb->temperature_K, 4.80, 2.5 };
  g_array_append_val (done, warm);
  g_array_append_val (done, cold);
  mp_schedule_options_init (&opts);
  opts.no_sensitivity = TRUE;
  opts.done = done;
  opts.elapsed_h = 2.5;
  schedule = mp_schedule_compute (plan, &opts, NULL);
  g_assert_nonnull (schedule);
  g_assert_cmpuint (schedule->blocks->len, ==, n);
  for (guint b = 0; b < n; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      /* Last block first, then backwards through the plan. */
      g_assert_cmpint (block->plan_block_index, ==, (int) (n - 1 - b));
    }
  revisited = g_ptr_array_index (schedule->blocks, 1);
  tb = &g_array_index (plan->temperatures, MpTemperatureBlock, n - 2);
  g_assert_cmpfloat (tb->cooldown_L, >, 0.0);
  g_assert_cmpfloat_with_epsilon (revisited->cryogen_L,
                                  tb->hold_L_per_h * (revisited->end_h - revisited->start_h),
                                  1e-9);
  g_assert_cmpuint (schedule->warnings->len, >=, 2);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();
  g_test_add_func ("/schedule/worked-example", test_worked_example);
  g_test_add_func ("/schedule/replan-options", test_replan_options);
  g_test_add_func ("/schedule/done-points-off-grid", test_done_points_off_grid);
  g_test_add_func ("/schedule/replan-block-order", test_replan_block_order);
  g_test_add_func ("/schedule/out-of-range", test_out_of_range);
  g_test_add_func ("/schedule/range-switch", test_range_switch);
  g_test_add_func ("/schedule/drop-reasons", test_drop_reasons);
  g_test_add_func ("/schedule/qe-sweep", test_qe_sweep);
  g_test_add_func ("/schedule/json-contract", test_json_contract);
  g_test_add_func ("/schedule/dense-scan-matches-direct-model", test_dense_scan_matches_direct_model);
  g_test_add_func ("/schedule/properties/budgets", test_properties_budgets);
  g_test_add_func ("/schedule/properties/monotone-drop", test_properties_monotone_drop);
  g_test_add_func ("/schedule/properties/stretch", test_properties_stretch);
  g_test_add_func ("/schedule/properties/dwell-falls-with-qe", test_properties_dwell_falls_with_qe);
  g_test_add_func ("/schedule/properties/determinism", test_determinism);
  return g_test_run ();
}
