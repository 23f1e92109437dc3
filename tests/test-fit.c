/* SPDX-License-Identifier: GPL-3.0-or-later */
/* The mid-shift refit (issue 6): recovery of known parameters from
 * synthetic data drawn from the model, the coverage of the reported
 * standard errors, Fowler's (1931) yield function, and the refusals. */
#include "config.h"

#include "mp-error.h"
#include "mp-fit.h"
#include "mp-fit-plot.h"
#include "mp-physics.h"
#include "mp-plan.h"

#include <math.h>
#include <string.h>

#define PHI_TRUE 4.52
#define LOG_A_TRUE (-11.0)       /* A in 1/eV^2: QE of about 1e-7 at 0.1 eV */
#define N_TRIALS 200

typedef struct
{
  const double *temperatures_K;
  int n_temperatures;
  double thermal_ratio;          /* true T_eff / T for the MTE (and QE if set) */
  gboolean ratio_in_qe;
  double excess_lo_eV;           /* span of E - phi_eff */
  double excess_hi_eV;
  int n_per_block;
  double qe_noise;               /* rms of ln qe */
  gboolean qe_sigma_column;
  double mte_noise_meV;          /* 0: no MTE column */
  double mte_excess_hi_eV;       /* MTE only at excess <= this */
} Synth;

static double
gaussian (GRand *rng)
{
  /* Box-Muller (textbook). */
  double u1 = g_rand_double (rng), u2 = g_rand_double (rng);

  return sqrt (-2.0 * log (1.0 - u1)) * cos (2.0 * M_PI * u2);
}

static MpPlan *
make_plan (double bandwidth_meV)
{
  MpPlan *plan = mp_plan_new_default ();

  plan->cathode.work_function_eV = PHI_TRUE + 0.04;  /* off by 40 meV */
  plan->cathode.work_function_sigma_eV = 0.05;
  plan->laser.bandwidth_meV = bandwidth_meV;
  return plan;
}

static MpMeasuredData *
synth_data (const MpPlan *plan, const Synth *s, GRand *rng)
{
  MpMeasuredData *data = g_new0 (MpMeasuredData, 1);
  double phi_eff = mp_effective_work_function_eV (PHI_TRUE, plan->cathode.field_MV_per_m);
  double bw = 1e-3 * plan->laser.bandwidth_meV;
  int line = 2;

  data->name = g_strdup ("synthetic");
  data->points = g_array_new (FALSE, TRUE, sizeof (MpMeasuredPoint));
  for (int t = 0; t < s->n_temperatures; t++)
    for (int i = 0; i < s->n_per_block; i++)
      {
        MpMeasuredPoint p = { 0 };
        double excess = s->excess_lo_eV + (s->excess_hi_eV - s->excess_lo_eV) * i
                                          / (s->n_per_block - 1);
        double t_eff = s->temperatures_K[t] * s->thermal_ratio;
        MpEmission em;

        p.temperature_K = s->temperatures_K[t];
        p.photon_energy_eV = phi_eff + excess;
        mp_emission_averaged (excess, s->ratio_in_qe ? t_eff : p.temperature_K, bw, &em);
        p.qe = exp (LOG_A_TRUE + em.log_yield + s->qe_noise * gaussian (rng));
        p.qe_sigma = s->qe_sigma_column ? s->qe_noise * p.qe : NAN;
        p.mte_meV = NAN;
        p.mte_sigma_meV = NAN;
        p.electrons = NAN;
        p.elapsed_h = NAN;
        p.line = line++;
        if (s->mte_noise_meV > 0.0 && excess <= s->mte_excess_hi_eV)
          {
            mp_emission_averaged (excess, t_eff, bw, &em);
            p.mte_meV = 1e3 * em.mte_eV + plan->cathode.extra_mte_meV
                        + s->mte_noise_meV * gaussian (rng);
            p.mte_sigma_meV = s->mte_noise_meV;
          }
        g_array_append_val (data->points, p);
      }
  return data;
}

static const double temps_three[] = { 295.0, 120.0, 40.0 };
static const double temps_cold[] = { 40.0 };

static void
test_fit_noise_free (void)
{
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (1);
  Synth s = { temps_three, 3, 1.25, FALSE, -0.08, 0.30, 12, 0.0, FALSE, 0.001, 0.0 };
  g_autoptr (MpMeasuredData) data = NULL;
  g_autoptr (MpFitResult) fit = NULL;
  g_autoptr (GError) error = NULL;

  data = synth_data (plan, &s, rng);
  fit = mp_fit_measured (plan, data, NULL, NULL, &error);
  g_assert_no_error (error);
  /* Data drawn from the model itself (no noise on QE): the fit must
   * return the parameters it was drawn with. */
  g_assert_cmpfloat_with_epsilon (fit->work_function_eV, PHI_TRUE, 1e-7);
  g_assert_cmpfloat_with_epsilon (fit->log_qe_scale, LOG_A_TRUE, 1e-5);
  g_assert_cmpint (fit->blocks->len, ==, 3);
  for (guint b = 0; b < fit->blocks->len; b++)
    {
      const MpFitBlock *blk = &g_array_index (fit->blocks, MpFitBlock, b);

      g_assert_true (blk->fitted);
      /* MTE carries 0.001 meV of noise: within 5 reported sigma. */
      g_assert_cmpfloat (fabs (blk->effective_temperature_K - 1.25 * blk->temperature_K), <,
                         5.0 * blk->effective_temperature_sigma_K);
    }
  g_assert_cmpint (fit->dof, ==, fit->n_residuals - fit->n_parameters);
  g_assert_cmpint (fit->n_parameters, ==, 5);
  /* Field-lowered value: Schottky lowering 0.037947 eV at 1 MV/m
   * (physics.md check table, derived from CODATA 2018). */
  g_assert_cmpfloat_with_epsilon (fit->work_function_eV - fit->effective_work_function_eV,
                                  0.037947, 1e-6);
}

/* Fraction of trials whose fitted value lies within its reported
 * standard error of the truth. */
typedef double (*Extract) (const MpFitResult *fit, double *sigma);

static double
extract_phi (const MpFitResult *fit, double *sigma)
{
  *sigma = fit->work_function_sigma_eV;
  return fit->work_function_eV;
}

static double
extract_t_eff (const MpFitResult *fit, double *sigma)
{
  const MpFitBlock *blk = &g_array_index (fit->blocks, MpFitBlock, 0);

  *sigma = blk->effective_temperature_sigma_K;
  return blk->effective_temperature_K;
}

static double
measure_coverage (const Synth *s, double bandwidth_meV, guint32 seed,
                  Extract extract, double truth, const MpFitOptions *opts)
{
  g_autoptr (MpPlan) plan = make_plan (bandwidth_meV);
  g_autoptr (GRand) rng = g_rand_new_with_seed (seed);
  int covered = 0;

  for (int trial = 0; trial < N_TRIALS; trial++)
    {
      g_autoptr (MpMeasuredData) data = synth_data (plan, s, rng);
      g_autoptr (GError) error = NULL;
      g_autoptr (MpFitResult) fit = mp_fit_measured (plan, data, opts, NULL, &error);
      double sigma, value;

      g_assert_no_error (error);
      value = extract (fit, &sigma);
      g_assert_true (sigma > 0.0 && isfinite (sigma));
      covered += fabs (value - truth) <= sigma;
    }
  return (double) covered / N_TRIALS;
}

static void
test_coverage_work_function (void)
{
  /* QE across threshold at three temperatures, 5 % noise on ln qe and no
   * sigma column: the standard error is scaled by the reduced chi-square.
   * A correct standard error covers the truth in 68.3 % of trials (normal
   * distribution; slightly less, 67 %, for a t distribution with ~30
   * degrees of freedom). Binomial 1-sigma for 200 trials:
   * sqrt(0.683 * 0.317 / 200) = 3.3 %, so 60-76 % is about +-2.4 sigma. */
  MpFitOptions opts;
  Synth s = { temps_three, 3, 1.0, FALSE, -0.06, 0.25, 10, 0.05, FALSE, 0.0, 0.0 };
  double cov;

  mp_fit_options_init (&opts);
  opts.use_mte = FALSE;
  cov = measure_coverage (&s, 5.0, 20261201, extract_phi, PHI_TRUE, &opts);
  g_test_message ("work function, QE without sigma: coverage %.1f %% of %d trials",
                  100.0 * cov, N_TRIALS);
  g_assert_cmpfloat (cov, >=, 0.60);
  g_assert_cmpfloat (cov, <=, 0.76);

  /* Same with the noise given as a qe_sigma column (no scaling), and a
   * monochromatic laser (cheaper: no bandwidth average). */
  s.qe_sigma_column = TRUE;
  cov = measure_coverage (&s, 0.0, 777, extract_phi, PHI_TRUE, &opts);
  g_test_message ("work function, QE with sigma: coverage %.1f %% of %d trials",
                  100.0 * cov, N_TRIALS);
  g_assert_cmpfloat (cov, >=, 0.60);
  g_assert_cmpfloat (cov, <=, 0.76);
}

static void
test_coverage_effective_temperature (void)
{
  /* MTE below threshold at 40 K (MTE -> kT_eff there, physics.md) with a
   * true effective temperature of 1.3 x 40 K = 52 K and 0.15 meV noise
   * given as mte_sigma_meV; QE across threshold with 5 % noise. Same
   * binomial bounds as above. */
  Synth s = { temps_cold, 1, 1.3, FALSE, -0.06, 0.20, 14, 0.05, FALSE, 0.15, 0.01 };
  double cov;

  cov = measure_coverage (&s, 0.0, 4242, extract_t_eff, 52.0, NULL);
  g_test_message ("effective temperature from MTE below threshold: coverage %.1f %% of %d trials",
                  100.0 * cov, N_TRIALS);
  g_assert_cmpfloat (cov, >=, 0.60);
  g_assert_cmpfloat (cov, <=, 0.76);
}

/* Fowler's function (Fowler 1931, Phys. Rev. 38, 45, eq. for f(mu), series
 * written from memory): for mu <= 0, f = e^mu - e^2mu/2^2 + e^3mu/3^2 - ...;
 * for mu >= 0, f = pi^2/6 + mu^2/2 - (e^-mu - e^-2mu/2^2 + e^-3mu/3^2 - ...). */
static double
fowler_f (double mu)
{
  double e = exp (-fabs (mu)), ek = 1.0, sum = 0.0, previous = 0.0;

  /* Alternating series: the mean of two successive partial sums is
   * accurate to O(1/k^3) even at mu = 0. */
  for (int k = 1; k <= 100000; k++)
    {
      ek *= e;
      previous = sum;
      sum += ((k % 2) ? 1.0 : -1.0) * ek / ((double) k * k);
      if (ek < 1e-18)
        break;
    }
  if (ek >= 1e-18)
    sum = 0.5 * (sum + previous);  /* not converged: mu near 0 */
  if (mu <= 0.0)
    return sum;
  return M_PI * M_PI / 6.0 + 0.5 * mu * mu - sum;
}

static void
test_fowler_function (void)
{
  /* At fixed temperature ln(Y/(kT)^2) = ln f((E - phi)/kT): the Fowler
   * plot. Monochromatic model, many points from 20 kT below to 40 kT
   * above threshold at 45 K and 300 K. */
  const double temps[] = { 45.0, 300.0 };

  for (gsize t = 0; t < G_N_ELEMENTS (temps); t++)
    for (double x = -20.0; x <= 40.0; x += 0.25)
      {
        double kT = mp_thermal_energy_eV (temps[t]);
        MpEmission em;

        mp_emission_monochromatic (x * kT, temps[t], &em);
        g_assert_cmpfloat_with_epsilon (em.log_yield - 2.0 * log (kT),
                                        log (fowler_f (x)), 1e-9);
      }
  /* Fowler's reflection f(mu) + f(-mu) = pi^2/6 + mu^2/2 (from the two
   * series above) checks the series itself. */
  g_assert_cmpfloat_with_epsilon (fowler_f (2.0) + fowler_f (-2.0),
                                  M_PI * M_PI / 6.0 + 2.0, 1e-12);
}

static void
test_fowler_plot_of_fit (void)
{
  /* Fit noisy QE at 45 K with a monochromatic laser, then put the measured
   * points on the Fowler plot with the fitted phi and A: they must lie on
   * ln f(x) within the noise (2 % here: |r| < 4 sigma, rms near 2 %). */
  const double t45[] = { 45.0 };
  g_autoptr (MpPlan) plan = make_plan (0.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (45);
  Synth s = { t45, 1, 1.0, FALSE, -0.02, 0.15, 40, 0.02, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  g_autoptr (GError) error = NULL;
  g_autoptr (MpFitResult) fit = mp_fit_measured (plan, data, NULL, NULL, &error);
  double kT = mp_thermal_energy_eV (45.0), sum2 = 0.0;

  g_assert_no_error (error);
  g_assert_cmpfloat (fabs (fit->work_function_eV - PHI_TRUE), <, 4.0 * fit->work_function_sigma_eV);
  for (guint i = 0; i < data->points->len; i++)
    {
      const MpMeasuredPoint *p = &g_array_index (data->points, MpMeasuredPoint, i);
      double x = (p->photon_energy_eV - fit->effective_work_function_eV) / kT;
      double r = log (p->qe / fit->qe_scale / (kT * kT)) - log (fowler_f (x));
      const MpFitResidual *res = &g_array_index (fit->residuals, MpFitResidual, i);

      g_assert_cmpfloat (fabs (r), <, 4.0 * 0.02);
      double px, py;

      /* The fit's own residual is the same number. */
      g_assert_cmpfloat_with_epsilon (res->residual, r, 1e-8);
      /* And the window's Fowler plot puts the point at the same place. */
      mp_fit_plot_fowler_point (fit, res, &px, &py);
      g_assert_cmpfloat_with_epsilon (px, x, 1e-9);
      g_assert_cmpfloat_with_epsilon (log (py) - log (fowler_f (px)), r, 1e-8);
      sum2 += r * r;
    }
  g_assert_cmpfloat (sqrt (sum2 / data->points->len), <, 1.5 * 0.02);
  g_assert_cmpfloat (sqrt (sum2 / data->points->len), >, 0.5 * 0.02);
}

static void
assert_undetermined (const MpPlan *plan, const MpMeasuredData *data,
                     const MpFitOptions *opts, const char *expect)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpFitResult) fit = mp_fit_measured (plan, data, opts, NULL, &error);

  g_assert_null (fit);
  g_assert_error (error, MP_ERROR, MP_ERROR_UNDETERMINED);
  if (strstr (error->message, expect) == NULL)
    g_error ("expected \"%s\" in \"%s\"", expect, error->message);
}

static void
test_refuse_too_few (void)
{
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (3);
  Synth s = { temps_cold, 1, 1.0, FALSE, -0.02, 0.1, 2, 0.05, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  MpFitOptions opts;

  /* Two QE points, two parameters: need three. */
  assert_undetermined (plan, data, NULL, "too few points: 2 measured values for 2 parameters");
  /* Three QE points but a temperature parameter too: need four. */
  g_array_set_size (data->points, 1);
  g_array_index (data->points, MpMeasuredPoint, 0).mte_meV = 3.5;
  mp_fit_options_init (&opts);
  assert_undetermined (plan, data, &opts, "too few points");
}

static void
test_refuse_far_above (void)
{
  /* 40 K (kT = 3.4 meV): points 0.1-0.4 eV above threshold are 29-116 kT
   * above, where yield and MTE follow the T = 0 limits (dE^2/2, dE/3). */
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (4);
  Synth s = { temps_cold, 1, 1.0, FALSE, 0.10, 0.40, 12, 0.03, FALSE, 0.5, 1.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  g_autoptr (GError) error = NULL;
  g_autoptr (MpFitResult) fit = NULL;
  MpFitOptions opts;

  assert_undetermined (plan, data, NULL, "cannot pin the effective temperature");
  mp_fit_options_init (&opts);
  opts.use_mte = FALSE;
  opts.electron_temperature = TRUE;
  assert_undetermined (plan, data, &opts, "cannot pin the effective temperature");
  /* The QE alone still pins the work function there (square law). */
  opts.electron_temperature = FALSE;
  fit = mp_fit_measured (plan, data, &opts, NULL, &error);
  g_assert_no_error (error);
  g_assert_cmpfloat (fabs (fit->work_function_eV - PHI_TRUE), <, 5.0 * fit->work_function_sigma_eV);
}

static void
test_refuse_far_below (void)
{
  /* 295 K: 0.30 to 0.15 eV below threshold is -11.6 to -5.8 kT; the yield
   * is exp(x) and phi trades off against ln A. */
  const double t295[] = { 295.0 };
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (5);
  Synth s = { t295, 1, 1.0, FALSE, -0.30, -0.15, 12, 0.05, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);

  assert_undetermined (plan, data, NULL, "far below threshold");
}

static void
test_refuse_degenerate (void)
{
  /* Every point at the same photon energy and temperature: one value of
   * the yield cannot give both the work function and the scale (a
   * singular Jacobian, caught from the covariance). */
  const double t295[] = { 295.0 };
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (9);
  Synth s = { t295, 1, 1.0, FALSE, 0.05, 0.05, 6, 0.02, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);

  assert_undetermined (plan, data, NULL, "the data cannot determine the QE scale separately from the work function");
}

static void
test_refuse_implausible_temperature (void)
{
  /* MTE written in the wrong unit (x 30): no plausible effective
   * temperature describes it; the fit says so instead of reporting
   * 1500 K electrons on a 40 K cathode. */
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (10);
  Synth s = { temps_cold, 1, 1.0, FALSE, -0.06, 0.20, 14, 0.05, FALSE, 0.1, 0.01 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);

  for (guint i = 0; i < data->points->len; i++)
    g_array_index (data->points, MpMeasuredPoint, i).mte_meV *= 30.0;
  assert_undetermined (plan, data, NULL, "check the units");
}

static void
test_refuse_not_converged (void)
{
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (6);
  Synth s = { temps_three, 3, 1.1, FALSE, -0.06, 0.25, 10, 0.05, FALSE, 0.2, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  MpFitOptions opts;

  mp_fit_options_init (&opts);
  opts.max_iterations = 1;
  assert_undetermined (plan, data, &opts, "did not converge");
}

static void
test_cancelled (void)
{
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (7);
  Synth s = { temps_three, 3, 1.0, FALSE, -0.06, 0.25, 10, 0.05, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  g_autoptr (GCancellable) cancellable = g_cancellable_new ();
  g_autoptr (GError) error = NULL;
  g_autoptr (MpFitResult) fit = NULL;

  g_cancellable_cancel (cancellable);
  fit = mp_fit_measured (plan, data, NULL, cancellable, &error);
  g_assert_null (fit);
  g_assert_error (error, G_IO_ERROR, G_IO_ERROR_CANCELLED);
}

static void
test_apply_to_plan (void)
{
  g_autoptr (MpPlan) plan = make_plan (5.0);
  g_autoptr (GRand) rng = g_rand_new_with_seed (8);
  Synth s = { temps_three, 3, 1.0, FALSE, -0.06, 0.25, 10, 0.0, FALSE, 0.0, 0.0 };
  g_autoptr (MpMeasuredData) data = synth_data (plan, &s, rng);
  g_autoptr (GError) error = NULL;
  g_autoptr (MpFitResult) fit = mp_fit_measured (plan, data, NULL, NULL, &error);
  MpEmission at_ref, at_point;
  const MpMeasuredPoint *p;
  double phi_eff;

  g_assert_no_error (error);
  mp_fit_apply_to_plan (fit, plan);
  g_assert_cmpfloat (plan->cathode.work_function_eV, ==, fit->work_function_eV);
  g_assert_cmpfloat (plan->cathode.work_function_sigma_eV, ==, fit->work_function_sigma_eV);
  g_assert_true (mp_plan_validate (plan, NULL));
  /* The planner's QE from the new reference reproduces a measured point:
   * QE(E, T) = QE_ref <Y>(E, T) / <Y>(E_ref, T_ref) (physics.md). */
  p = &g_array_index (data->points, MpMeasuredPoint, 5);
  phi_eff = mp_effective_work_function_eV (plan->cathode.work_function_eV,
                                           plan->cathode.field_MV_per_m);
  mp_emission_averaged (plan->cathode.qe_ref_photon_energy_eV - phi_eff,
                        plan->cathode.qe_ref_temperature_K, 5e-3, &at_ref);
  mp_emission_averaged (p->photon_energy_eV - phi_eff, p->temperature_K, 5e-3, &at_point);
  g_assert_cmpfloat_with_epsilon (mp_qe_from_reference (plan->cathode.qe_ref, &at_ref, &at_point)
                                  / p->qe, 1.0, 1e-6);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();

  g_test_add_func ("/fit/noise-free", test_fit_noise_free);
  g_test_add_func ("/fit/coverage/work-function", test_coverage_work_function);
  g_test_add_func ("/fit/coverage/effective-temperature", test_coverage_effective_temperature);
  g_test_add_func ("/fit/fowler/function", test_fowler_function);
  g_test_add_func ("/fit/fowler/plot-of-fit", test_fowler_plot_of_fit);
  g_test_add_func ("/fit/refuse/too-few", test_refuse_too_few);
  g_test_add_func ("/fit/refuse/far-above", test_refuse_far_above);
  g_test_add_func ("/fit/refuse/far-below", test_refuse_far_below);
  g_test_add_func ("/fit/refuse/degenerate", test_refuse_degenerate);
  g_test_add_func ("/fit/refuse/implausible-temperature", test_refuse_implausible_temperature);
  g_test_add_func ("/fit/refuse/not-converged", test_refuse_not_converged);
  g_test_add_func ("/fit/cancelled", test_cancelled);
  g_test_add_func ("/fit/apply-to-plan", test_apply_to_plan);
  return g_test_run ();
}
