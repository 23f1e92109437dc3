/* SPDX-License-Identifier: GPL-3.0-or-later */
/* test-rehearse: the Monte Carlo rehearsal against the model's own
 * published moments and the spec's counting statistics
 * (../shared/spec/physics.md).
 *
 * Statistical tolerances: a check "within k standard errors" fails by
 * chance with probability 2(1 - Phi(k)) for a Gaussian estimate: 2.7e-3 at
 * k = 3, 6.3e-5 at k = 4. Every test uses a fixed seed, so a run is
 * deterministic: the tolerance only decides whether the fixed draw is
 * accepted, and a real error of the size of the tolerance fails. */
#include "config.h"

#include <math.h>
#include <string.h>

#include "mp-physics.h"
#include "mp-plot-histogram.h"
#include "mp-plan.h"
#include "mp-rehearse.h"
#include "mp-rng.h"
#include "mp-schedule.h"

/* ---- Hand-built schedules (the scheduler is not needed here) ---------- */

static MpStep
make_step (const MpPlan *plan, int index, double temperature_K, double excess_eV,
           double signal_rate_per_s, double dwell_s, double target_sigma_meV)
{
  MpStep st = { 0 };
  double phi_eff = mp_effective_work_function_eV (plan->cathode.work_function_eV,
                                                  plan->cathode.field_MV_per_m);

  st.index = index;
  st.kind = MP_STEP_KIND_MTE;
  st.temperature_K = temperature_K;
  st.photon_energy_eV = phi_eff + excess_eV;
  st.wavelength_nm = mp_wavelength_nm_from_photon_energy_eV (st.photon_energy_eV);
  st.excess_energy_eV = excess_eV;
  st.signal_rate_per_s = signal_rate_per_s;
  st.dwell_s = dwell_s;
  st.target_sigma_meV = target_sigma_meV;
  st.status = MP_STEP_OK;
  st.priority = 1;
  return st;
}

static MpSchedule *
make_schedule (const MpStep *steps, int n_steps, double beam_time_h,
               double beam_time_available_h, double cryogen_L,
               double cryogen_available_L)
{
  MpSchedule *s = g_new0 (MpSchedule, 1);
  MpBlock *b = g_new0 (MpBlock, 1);

  b->temperature_K = steps[0].temperature_K;
  b->steps = g_array_new (FALSE, FALSE, sizeof (MpStep));
  g_array_append_vals (b->steps, steps, n_steps);
  s->plan_title = g_strdup ("hand-built schedule");
  s->feasible = TRUE;
  s->beam_time_h = beam_time_h;
  s->beam_time_available_h = beam_time_available_h;
  s->cryogen_L = cryogen_L;
  s->cryogen_available_L = cryogen_available_L;
  s->blocks = g_ptr_array_new ();
  g_ptr_array_add (s->blocks, b);
  return s;
}

static void
free_schedule (MpSchedule *s)
{
  for (guint i = 0; i < s->blocks->len; i++)
    {
      MpBlock *b = g_ptr_array_index (s->blocks, i);

      g_array_unref (b->steps);
      g_free (b);
    }
  g_ptr_array_unref (s->blocks);
  g_free (s->plan_title);
  g_free (s);
}

/* ---- Random numbers ----------------------------------------------------- */

static void
test_rng_streams (void)
{
  MpRng a, b, c;
  gboolean differ = FALSE;

  mp_rng_init_stream (&a, 42, 7, 3);
  mp_rng_init_stream (&b, 42, 7, 3);
  mp_rng_init_stream (&c, 42, 3, 7);
  for (int i = 0; i < 100; i++)
    {
      guint64 x = mp_rng_next (&a);

      g_assert_cmpuint (x, ==, mp_rng_next (&b));
      differ |= x != mp_rng_next (&c);
    }
  g_assert_true (differ);
}

/* A Poisson variable has mean and variance mu (textbook). */
static void
test_rng_poisson (void)
{
  const double mus[] = { 0.7, 3.5, 9.99, 10.0, 50.0, 2.0e5 };
  const int n = 200000;

  for (gsize k = 0; k < G_N_ELEMENTS (mus); k++)
    {
      MpRng rng;
      double mu = mus[k], sum = 0.0, sum2 = 0.0, mean, var;

      mp_rng_init_stream (&rng, 5, k, 0);
      for (int i = 0; i < n; i++)
        {
          double x = (double) mp_rng_poisson (&rng, mu);

          sum += x;
          sum2 += x * x;
        }
      mean = sum / n;
      var = sum2 / n - mean * mean;
      /* SE of the mean: sqrt(mu/n); SE of the variance: about
       * mu sqrt(2/n) (Gaussian approximation, from memory). 4 SE. */
      g_assert_cmpfloat (fabs (mean - mu), <, 4.0 * sqrt (mu / n));
      g_assert_cmpfloat (fabs (var - mu), <, 4.0 * (mu * sqrt (2.0 / n) + sqrt (mu / n)));
    }
}

/* ---- The transverse-energy sampler -------------------------------------- */

/* Spec check table ("derived (polylog ratio, 25 digits)"): MTE/kT and
 * CV^2 = 2 F_3 F_1 / F_2^2 - 1 at x = -10, 0, 3, 10. */
static const struct
{
  double x, mte_over_kT, cv2;
} spec_moments[] = {
  { -10.0, 1.0000057, 0.99999 },
  { 0.0, 1.0961445, 0.916642 },
  { 3.0, 1.5558838, 0.710661 },
  { 10.0, 3.5456762, 0.542678 },
};

static void
sample_moments (const MpEnergySampler *s, guint64 stream, int n,
                double *mean, double *mean_se, double *second, double *second_se)
{
  MpRng rng;
  double s1 = 0.0, s2 = 0.0, s4 = 0.0;

  mp_rng_init_stream (&rng, 2026, stream, 99);
  for (int i = 0; i < n; i++)
    {
      double e = mp_energy_sampler_draw (s, &rng);

      s1 += e;
      s2 += e * e;
      s4 += e * e * e * e;
    }
  *mean = s1 / n;
  *second = s2 / n;
  *mean_se = sqrt ((*second - *mean * *mean) / n);
  *second_se = sqrt ((s4 / n - *second * *second) / n);
}

static void
test_sampler_moments (void)
{
  const double temperature_K = 300.0;
  const double kT = mp_thermal_energy_eV (temperature_K);
  const int n = 1000000;

  for (gsize k = 0; k < G_N_ELEMENTS (spec_moments); k++)
    {
      double x = spec_moments[k].x;
      double mte = kT * mp_fermi_dirac (2, x) / mp_fermi_dirac (1, x);
      double eps2 = 2.0 * kT * kT * mp_fermi_dirac (3, x) / mp_fermi_dirac (1, x);
      double mean, mean_se, second, second_se;
      MpEnergySampler s;

      /* The exact moments: kT F_2/F_1 and 2 (kT)^2 F_3/F_1 (physics.md,
       * derived), here checked against the spec's table first. */
      g_assert_cmpfloat (fabs (mte / kT / spec_moments[k].mte_over_kT - 1.0), <, 1e-6);
      g_assert_cmpfloat (fabs (eps2 / (mte * mte) - 1.0 - spec_moments[k].cv2), <, 1e-5);

      mp_energy_sampler_init (&s, x * kT, temperature_K, 0.0);
      sample_moments (&s, k, n, &mean, &mean_se, &second, &second_se);
      g_test_message ("x = %g: mean %.6g (exact %.6g, SE %.2g), <eps^2> %.6g (exact %.6g, SE %.2g)",
                      x, mean, mte, mean_se, second, eps2, second_se);
      /* Within 4 standard errors of a 10^6-sample mean. */
      g_assert_cmpfloat (fabs (mean - mte), <, 4.0 * mean_se);
      g_assert_cmpfloat (fabs (second - eps2), <, 4.0 * second_se);
      /* And the errors are small in absolute terms: the SE of the mean
       * is about sqrt(CV^2 / n) = 1e-3 of the MTE. */
      g_assert_cmpfloat (mean_se / mte, <, 1.5e-3);
    }
}

/* With a laser line the sampled moments are the model's averaged ones
 * (physics.md, "Laser bandwidth"). */
static void
test_sampler_bandwidth (void)
{
  const double temperature_K = 40.0, excess_eV = 0.01, bandwidth_eV = 0.008;
  double mean, mean_se, second, second_se;
  MpEnergySampler s;
  MpEmission em;

  mp_energy_sampler_init (&s, excess_eV, temperature_K, bandwidth_eV);
  g_assert_cmpint (s.n_nodes, >, 1);
  mp_emission_averaged (excess_eV, temperature_K, bandwidth_eV, &em);
  sample_moments (&s, 77, 1000000, &mean, &mean_se, &second, &second_se);
  g_test_message ("bandwidth: mean %.6g (model %.6g, SE %.2g)", mean, em.mte_eV, mean_se);
  g_assert_cmpfloat (fabs (mean - em.mte_eV), <, 4.0 * mean_se);
  g_assert_cmpfloat (fabs (second - em.eps2_eV2), <, 4.0 * second_se);
  /* The line matters here: the monochromatic MTE is far off. */
  {
    MpEmission mono;

    mp_emission_monochromatic (excess_eV, temperature_K, &mono);
    g_assert_cmpfloat (fabs (mono.mte_eV - em.mte_eV), >, 20.0 * mean_se);
  }
}

/* ---- Counting statistics of one step ------------------------------------ */

typedef struct
{
  const char *name;
  double temperature_K;
  double excess_eV;
  double bandwidth_meV;
  double signal_rate_per_s;
  double dark_rate_per_s;
  double dwell_s;
  gboolean background_dominated;
} CountingCase;

static void
check_counting_case (gconstpointer data)
{
  const CountingCase *c = data;
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (GError) error = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  MpRehearseOptions opts;
  const MpRehearseStep *rs;
  MpSchedule *schedule;
  MpStep step;
  MpEmission em;
  double v, wb_term, sigma, rel_spread;

  plan->laser.bandwidth_meV = c->bandwidth_meV;
  plan->detector.dark_rate_per_s = c->dark_rate_per_s;
  step = make_step (plan, 1, c->temperature_K, c->excess_eV, c->signal_rate_per_s,
                    c->dwell_s, 1.0);
  schedule = make_schedule (&step, 1, 1.0, 2.0, 1.0, 2.0);

  mp_rehearse_options_init (&opts);
  opts.trials = 4000;
  opts.threads = 2;
  opts.shift = FALSE;
  opts.seed = 11;
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  g_assert_no_error (error);
  g_assert_cmpuint (r->steps->len, ==, 1);
  rs = &g_array_index (r->steps, MpRehearseStep, 0);

  /* The spec's sigma_stat with mp_variance_per_electron_eV2. */
  mp_emission_averaged (c->excess_eV, c->temperature_K, c->bandwidth_meV * 1e-3, &em);
  v = mp_variance_per_electron_eV2 (&em, plan->detector.resolution_meV * 1e-3,
                                    c->signal_rate_per_s, c->dark_rate_per_s,
                                    plan->detector.acceptance_meV * 1e-3);
  sigma = 1e3 * mp_statistical_sigma_eV (v, c->signal_rate_per_s, c->dwell_s);
  wb_term = v - mp_per_electron_variance_eV2 (&em, plan->detector.resolution_meV * 1e-3);
  g_test_message ("%s: spread %.5g meV, predicted %.5g meV; bias %.3g +- %.2g meV; "
                  "background share of the variance %.3f; within target %.3f",
                  c->name, rs->mte_spread_meV, sigma, rs->mte_bias_meV,
                  rs->mte_bias_standard_error_meV, wb_term / v, rs->fraction_within_target);

  /* The regime is the one claimed. */
  if (c->background_dominated)
    g_assert_cmpfloat (wb_term / v, >, 0.9);
  else
    g_assert_cmpfloat (wb_term / v, <, 0.05);
  g_assert_cmpfloat (fabs (rs->predicted_sigma_meV / sigma - 1.0), <, 1e-12);
  g_assert_cmpint (rs->undefined_trials, ==, 0);

  /* Spread: the standard error of a standard deviation estimated from
   * n = 4000 nearly Gaussian samples is sigma / sqrt(2 n) = 1.1 % (textbook
   * large-sample result); 5 % is 4.5 of those, and the delta-method
   * formula itself is exact to O(1/N) = 0.05 % at these counts. */
  rel_spread = rs->mte_spread_meV / sigma - 1.0;
  g_assert_cmpfloat (fabs (rel_spread), <, 0.05);

  /* Bias: the ratio estimator is unbiased to first order; its second-
   * order bias, B t (MTE - A/2) / (S t)^2, is below one standard error
   * of the 4000-trial mean here. 3 standard errors bound the chance of
   * a false alarm at 0.3 %, while a bias of a tenth of sigma_stat (for
   * example a missing A/2 in the subtraction) would be 6 SE and fail. */
  g_assert_cmpfloat (fabs (rs->mte_bias_meV), <, 3.0 * rs->mte_bias_standard_error_meV);
  g_assert_cmpfloat (fabs (rs->mte_bias_standard_error_meV * sqrt (4000.0) / rs->mte_spread_meV - 1.0),
                     <, 1e-9);

  free_schedule (schedule);
}

static const CountingCase signal_case = {
  "signal-dominated, 300 K, 0.1 eV above threshold, 5 meV line",
  300.0, 0.10, 5.0, 2000.0, 0.5, 1.0, FALSE
};

static const CountingCase background_case = {
  "background-dominated, 40 K, at threshold, dark rate half the signal",
  40.0, 0.0, 0.0, 40.0, 20.0, 100.0, TRUE
};

/* ---- Shift risk and threads --------------------------------------------- */

static char *
rehearse_to_json (const MpPlan *plan, const MpSchedule *schedule, int threads)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  g_autoptr (JsonGenerator) gen = json_generator_new ();
  g_autoptr (JsonNode) root = NULL;
  MpRehearseOptions opts;

  mp_rehearse_options_init (&opts);
  opts.trials = 300;             /* not a multiple of the 64-trial chunk */
  opts.threads = threads;
  opts.seed = 987654321;
  opts.qe_scale_sigma = 0.2;
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  g_assert_no_error (error);
  root = mp_rehearsal_to_json (r);
  json_generator_set_root (gen, root);
  json_generator_set_pretty (gen, TRUE);
  return json_generator_to_data (gen, NULL);
}

static MpSchedule *
make_two_step_schedule (MpPlan *plan)
{
  MpStep steps[2];

  /* Small counts (15000 and 5000 electrons per trial) keep the test short;
   * the shift part recomputes the rates from the plan's laser anyway. */
  steps[0] = make_step (plan, 1, 295.0, 0.12, 500.0, 30.0, 1.5);
  steps[1] = make_step (plan, 2, 295.0, -0.04, 50.0, 100.0, 0.4);
  return make_schedule (steps, 2, 3.0, 3.1, 2.0, 2.05);
}

static void
test_threads_identical (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  MpSchedule *schedule;
  g_autofree char *one = NULL, *two = NULL, *four = NULL;

  plan->cathode.work_function_sigma_eV = 0.03;
  schedule = make_two_step_schedule (plan);
  one = rehearse_to_json (plan, schedule, 1);
  two = rehearse_to_json (plan, schedule, 2);
  four = rehearse_to_json (plan, schedule, 4);
  g_assert_cmpstr (one, ==, two);
  g_assert_cmpstr (one, ==, four);
  g_assert_nonnull (strstr (one, "\"probability_within_beam_time\""));
  g_assert_null (strstr (one, "nan"));
  free_schedule (schedule);
}

/* Without uncertainty every trial is the plan itself. */
static void
test_shift_no_uncertainty (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (GError) error = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  MpRehearseOptions opts;
  MpSchedule *schedule;

  plan->cathode.work_function_sigma_eV = 0.0;
  schedule = make_two_step_schedule (plan);
  mp_rehearse_options_init (&opts);
  opts.trials = 100;
  opts.steps = FALSE;
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  g_assert_no_error (error);
  g_assert_true (r->has_shift);
  g_assert_cmpuint (r->steps->len, ==, 0);
  for (int p = 0; p < MP_REHEARSE_N_PERCENTILES; p++)
    {
      g_assert_cmpfloat (r->beam_time_h_percentiles[p], ==, 3.0);
      g_assert_cmpfloat (r->cryogen_L_percentiles[p], ==, 2.0);
    }
  g_assert_cmpfloat (r->probability_within_beam_time, ==, 1.0);
  g_assert_cmpfloat (r->probability_within_cryogen, ==, 1.0);
  free_schedule (schedule);
}

/* One step whose dwell is an increasing function of the drawn work
 * function (rate at the detector's cap, so a smaller excess energy means
 * a smaller MTE variance and a shorter dwell: about 660 s, unclamped by
 * the plan's 20 s .. 1800 s, with the cap at 100 electrons/s, no
 * systematic floor and a 0.1 meV target) with the budget
 * exactly at the planned time: the shift fits when phi_drawn >= phi, an
 * event of probability 1/2 for a symmetric draw. Binomial standard error
 * sqrt(0.25 / 4000) = 0.0079; 4 SE. */
static void
test_shift_median (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (GError) error = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  MpRehearseOptions opts;
  MpSchedule *schedule;
  MpStep step;
  guint below = 0;

  plan->cathode.work_function_sigma_eV = 0.03;
  plan->detector.max_electrons_per_pulse = 0.002;
  plan->detector.systematic_meV = 0.0;
  step = make_step (plan, 1, 295.0, -0.05, 100.0, 660.0, 0.1);
  schedule = make_schedule (&step, 1, 1.0, 1.0, 0.5, 0.5);
  mp_rehearse_options_init (&opts);
  opts.trials = 4000;
  opts.threads = 2;
  opts.steps = FALSE;
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  g_assert_no_error (error);
  g_test_message ("P(within beam time) = %.4f, time percentiles %.4f %.4f %.4f %.4f %.4f h",
                  r->probability_within_beam_time,
                  r->beam_time_h_percentiles[0], r->beam_time_h_percentiles[1],
                  r->beam_time_h_percentiles[2], r->beam_time_h_percentiles[3],
                  r->beam_time_h_percentiles[4]);
  g_assert_cmpfloat (fabs (r->probability_within_beam_time - 0.5), <, 4.0 * 0.0079);
  /* The spread is real (not clamped away) and the median is the plan. */
  g_assert_cmpfloat (r->beam_time_h_percentiles[4] - r->beam_time_h_percentiles[0], >, 0.01);
  g_assert_cmpfloat (fabs (r->beam_time_h_percentiles[2] - 1.0), <,
                     0.1 * (r->beam_time_h_percentiles[3] - r->beam_time_h_percentiles[1]));
  /* Per-trial values come in trial order and agree with the percentiles. */
  g_assert_cmpuint (r->beam_time_h->len, ==, 4000);
  for (guint i = 0; i < r->beam_time_h->len; i++)
    below += g_array_index (r->beam_time_h, double, i) <= r->beam_time_h_percentiles[2];
  g_assert_cmpuint (below, >=, 2000);
  g_assert_cmpuint (below, <=, 2001);
  free_schedule (schedule);
}

static void
count_progress_cb (double fraction, gpointer user_data)
{
  double *last = user_data;

  g_assert_cmpfloat (fraction, >=, *last);
  g_assert_cmpfloat (fraction, <=, 1.0);
  *last = fraction;
}

static void
test_progress_and_cancel (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();
  g_autoptr (GCancellable) cancellable = g_cancellable_new ();
  g_autoptr (GError) error = NULL;
  MpRehearsal *r;
  MpRehearseOptions opts;
  MpSchedule *schedule;
  double last = 0.0;

  schedule = make_two_step_schedule (plan);
  mp_rehearse_options_init (&opts);
  opts.trials = 200;
  r = mp_rehearse_run (plan, schedule, &opts, count_progress_cb, &last, NULL, &error);
  g_assert_no_error (error);
  g_assert_cmpfloat (last, ==, 1.0);
  mp_rehearsal_free (r);

  g_cancellable_cancel (cancellable);
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, cancellable, &error);
  g_assert_null (r);
  g_assert_error (error, G_IO_ERROR, G_IO_ERROR_CANCELLED);
  g_clear_error (&error);

  opts.trials = 0;
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  g_assert_null (r);
  g_assert_nonnull (strstr (error->message, "trials"));
  free_schedule (schedule);
}

/* Histogram of the shift totals: every value lands in the bin whose
 * edges hold it, and the plot draws ink. */
static void
test_histogram (void)
{
  double values[1000];
  g_autoptr (MpHistogram) h = NULL;
  MpHistogramLabels labels = { "total beam time (h)", NULL, 3.3, 3.6 };
  MpPlotInk ink;
  cairo_surface_t *surface;
  cairo_t *cr;
  guint sum = 0, inked = 0;
  const guint32 *pixels;

  for (int i = 0; i < 1000; i++)
    values[i] = 3.0 + 0.5 * sin (i * 0.7) * sin (i * 0.13);
  values[17] = NAN;
  h = mp_histogram_new (values, 1000, 0);
  g_assert_cmpint (h->n_bins, >=, 8);
  for (int k = 0; k < h->n_bins; k++)
    sum += h->counts[k];
  g_assert_cmpuint (sum, ==, 999);
  g_assert_cmpuint (h->total, ==, 999);
  for (int i = 0; i < 1000; i++)
    {
      int k;

      if (!isfinite (values[i]))
        continue;
      k = (int) floor ((values[i] - h->min) / h->width);
      g_assert_cmpint (k, >=, 0);
      g_assert_cmpint (k, <, h->n_bins);
    }

  surface = cairo_image_surface_create (CAIRO_FORMAT_ARGB32, 400, 260);
  cr = cairo_create (surface);
  mp_plot_ink_init (&ink, FALSE, FALSE, 10.0);
  mp_plot_histogram (cr, &ink, h, &labels, 400, 260);
  cairo_surface_flush (surface);
  pixels = (const guint32 *) cairo_image_surface_get_data (surface);
  for (int i = 0; i < 400 * 260; i++)
    inked += pixels[i] != 0;
  g_assert_cmpuint (inked, >, 2000);
  cairo_destroy (cr);
  cairo_surface_destroy (surface);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();

  g_test_add_func ("/rehearse/rng/streams", test_rng_streams);
  g_test_add_func ("/rehearse/rng/poisson", test_rng_poisson);
  g_test_add_func ("/rehearse/sampler/moments", test_sampler_moments);
  g_test_add_func ("/rehearse/sampler/bandwidth", test_sampler_bandwidth);
  g_test_add_data_func ("/rehearse/counting/signal-dominated", &signal_case,
                        check_counting_case);
  g_test_add_data_func ("/rehearse/counting/background-dominated", &background_case,
                        check_counting_case);
  g_test_add_func ("/rehearse/threads/identical", test_threads_identical);
  g_test_add_func ("/rehearse/shift/no-uncertainty", test_shift_no_uncertainty);
  g_test_add_func ("/rehearse/shift/median", test_shift_median);
  g_test_add_func ("/rehearse/progress-and-cancel", test_progress_and_cancel);
  g_test_add_func ("/rehearse/histogram", test_histogram);
  return g_test_run ();
}
