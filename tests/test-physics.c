/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Checks of the threshold model against outside values. Each check names
 * its source beside the assertion (see ../shared/spec/physics.md). */
#include "config.h"

#include "mp-constants.h"
#include "mp-physics.h"

#include <gsl/gsl_integration.h>
#include <math.h>

#define assert_rel(a, b, rel) \
  g_assert_cmpfloat_with_epsilon ((a) / (b), 1.0, (rel))

static void
test_constants (void)
{
  /* CODATA 2018: h c = 1239.841984... eV nm, so 1239.8419843320025 nm is
   * exactly 1 eV. */
  assert_rel (mp_photon_energy_eV_from_wavelength_nm (1239.8419843320025), 1.0, 1e-15);
  assert_rel (mp_wavelength_nm_from_photon_energy_eV (4.5), 275.5204409626672, 1e-14);
  /* CODATA 2018: k_B = 8.617333262e-5 eV/K; kT(300 K) = 25.852 meV. */
  assert_rel (mp_thermal_energy_eV (300.0), 0.025851999786435537, 1e-12);
}

static void
test_schottky (void)
{
  /* Derived from CODATA 2018 constants (spec check table):
   * 0.037947 eV at 1 MV/m and 0.119999 eV at 10 MV/m. */
  g_assert_cmpfloat_with_epsilon (mp_schottky_lowering_eV (1.0), 0.037947, 5e-7);
  g_assert_cmpfloat_with_epsilon (mp_schottky_lowering_eV (10.0), 0.119999, 5e-7);
  g_assert_cmpfloat (mp_schottky_lowering_eV (0.0), ==, 0.0);
  assert_rel (mp_effective_work_function_eV (4.5, 1.0), 4.5 - 0.0379469, 1e-7);
}

static void
test_fermi_dirac_at_zero (void)
{
  /* F_j(0) = eta(j+1), the Dirichlet eta function: Abramowitz & Stegun,
   * Handbook of Mathematical Functions, table 23.3 (p. 811). */
  assert_rel (mp_fermi_dirac (1, 0.0), 0.8224670334241132, 1e-13); /* pi^2/12 */
  assert_rel (mp_fermi_dirac (2, 0.0), 0.9015426773696957, 1e-13); /* 3 zeta(3)/4 */
  assert_rel (mp_fermi_dirac (3, 0.0), 0.9470328294972459, 1e-13); /* 7 pi^4/720 */
  /* F_0(0) = ln 2 (elementary). */
  assert_rel (mp_fermi_dirac (0, 0.0), M_LN2, 1e-14);
}

static void
test_fermi_dirac_limits (void)
{
  /* F_j(x) -> e^x far below (Boltzmann limit, every textbook). */
  assert_rel (mp_log_fermi_dirac (1, -800.0), -800.0, 1e-15);
  g_assert_true (isfinite (mp_log_fermi_dirac (3, -1e4)));
  /* Continuity where the series hands over to GSL (x = -30). */
  assert_rel (mp_log_fermi_dirac (2, -30.0 + 1e-9), mp_log_fermi_dirac (2, -30.0 - 1e-9), 1e-9);
  /* F_j(x) -> x^(j+1)/(j+1)! far above (Sommerfeld). */
  assert_rel (mp_fermi_dirac (1, 1e4), 0.5e8 + M_PI * M_PI / 6.0, 1e-12);
}

static void
test_mte_ratio_table (void)
{
  /* MTE/kT = F_2(x)/F_1(x); spec check table, derived from the polylog
   * ratio to 25 digits. */
  static const double x[] = { -10, -3, -1, 0, 1, 3, 10, 40 };
  static const double ratio[] = { 1.0000057, 1.0061199, 1.0410954, 1.0961445,
                                  1.1981300, 1.5558838, 3.5456762, 13.388052 };

  for (gsize i = 0; i < G_N_ELEMENTS (x); i++)
    {
      MpEmission em;
      double kT = mp_thermal_energy_eV (300.0);

      mp_emission_monochromatic (x[i] * kT, 300.0, &em);
      g_assert_cmpfloat_with_epsilon (em.mte_eV / kT, ratio[i], 1e-6 * ratio[i]);
    }
}

static void
test_cv2_table (void)
{
  /* CV^2 = 2 F_3 F_1 / F_2^2 - 1; spec check table (derived). */
  static const double x[] = { -10, 0, 3, 10 };
  static const double cv2[] = { 0.99999, 0.916642, 0.710661, 0.542678 };

  for (gsize i = 0; i < G_N_ELEMENTS (x); i++)
    {
      MpEmission em;
      double kT = mp_thermal_energy_eV (77.0);
      double var;

      mp_emission_monochromatic (x[i] * kT, 77.0, &em);
      var = mp_per_electron_variance_eV2 (&em, 0.0);
      g_assert_cmpfloat_with_epsilon (var / (em.mte_eV * em.mte_eV), cv2[i], 1e-5);
    }
}

static void
test_mte_at_threshold (void)
{
  MpEmission em;

  /* Spec check table: MTE at threshold, 300 K = 28.3375 meV (derived). */
  mp_emission_monochromatic (0.0, 300.0, &em);
  g_assert_cmpfloat_with_epsilon (1e3 * em.mte_eV, 28.3375, 28.3375 * 1e-5);
  /* 0.1 eV below threshold at 300 K: about 25 meV, the room-temperature
   * thermal limit (common practice, no source). */
  mp_emission_monochromatic (-0.1, 300.0, &em);
  g_assert_cmpfloat_with_epsilon (1e3 * em.mte_eV, 25.85, 0.1);
}

static void
test_thermal_limit_cold (void)
{
  MpEmission em;
  double kT = mp_thermal_energy_eV (4.0);

  /* MTE -> kT far below threshold (spec, "Limits"); at 4 K and 0.3 eV
   * below, x = -870: exact to 1e-6 and the log yield stays finite. */
  mp_emission_monochromatic (-0.3, 4.0, &em);
  assert_rel (em.mte_eV, kT, 1e-6);
  assert_rel (em.eps2_eV2, 2.0 * kT * kT, 1e-6);
  g_assert_true (isfinite (em.log_yield));
  g_assert_cmpfloat (em.log_yield, <, -800.0);
}

static void
test_dE_over_3 (void)
{
  MpEmission em;
  double kT = mp_thermal_energy_eV (300.0);

  /* The dE/3 rule (Dowell & Schmerge 2009, PRST-AB 12, 074201): ratio of
   * MTE to dE/3 is 1.01744 at dE = 0.5 eV and 1.00439 at 1 eV, 300 K
   * (spec check table, derived). */
  mp_emission_monochromatic (0.5, 300.0, &em);
  g_assert_cmpfloat_with_epsilon (em.mte_eV / (0.5 / 3.0), 1.01744, 1e-5);
  mp_emission_monochromatic (1.0, 300.0, &em);
  g_assert_cmpfloat_with_epsilon (em.mte_eV / (1.0 / 3.0), 1.00439, 1e-5);
  /* Finite-temperature form dE/3 + (2 pi^2/9)(kT)^2/dE (Feng et al. 2015,
   * from memory), good to the next order at dE = 1 eV. */
  assert_rel (em.mte_eV, 1.0 / 3.0 + 2.0 * M_PI * M_PI / 9.0 * kT * kT / 1.0, 1e-5);
}

static void
test_yield_square_law (void)
{
  MpEmission em;

  /* Fowler 1931: Y -> dE^2 / 2 as T -> 0, the square law; at 1 K the
   * Sommerfeld term pi^2 (kT)^2 / 6 is a 6e-7 correction. */
  mp_emission_monochromatic (0.2, 1.0, &em);
  assert_rel (mp_yield_eV2 (&em), 0.02, 1e-6);
  assert_rel (mp_yield_eV2 (&em),
              0.02 + M_PI * M_PI * pow (mp_thermal_energy_eV (1.0), 2) / 6.0, 1e-12);
  /* Y(0) = (kT)^2 pi^2 / 12 (A&S eta(2)). */
  mp_emission_monochromatic (0.0, 300.0, &em);
  assert_rel (mp_yield_eV2 (&em), pow (mp_thermal_energy_eV (300.0), 2) * M_PI * M_PI / 12.0, 1e-13);
}

static void
test_gaussian_limit (void)
{
  MpEmission em;
  double var, n = 10000.0, sigma;

  /* Far below threshold the transverse spectrum is exponential (2-D
   * Gaussian momentum), whose mean has relative error 1/sqrt(N)
   * (textbook variance of an exponential: Var = mean^2). With no
   * background and no detector error: sigma/MTE = 1/sqrt(S t). */
  mp_emission_monochromatic (-0.5, 300.0, &em);
  var = mp_variance_per_electron_eV2 (&em, 0.0, 100.0, 0.0, 0.15);
  sigma = mp_statistical_sigma_eV (var, 100.0, n / 100.0);
  assert_rel (sigma / em.mte_eV, 1.0 / sqrt (n), 1e-9);
  /* Required dwell inverts the reached uncertainty. */
  g_assert_cmpfloat_with_epsilon (mp_required_dwell_s (var, 100.0, sigma, 0.0), 100.0, 1e-9);
  g_assert_true (isinf (mp_required_dwell_s (var, 100.0, 1e-4, 2e-4)));
  assert_rel (mp_reached_sigma_eV (var, 100.0, 100.0, sigma), sqrt (2.0) * sigma, 1e-12);
}

static void
test_background_weight (void)
{
  /* W_b = integral over a uniform [0, A] of (eps - MTE)^2 (derived):
   * with MTE = A/2 it is the uniform variance A^2/12. */
  assert_rel (mp_background_weight_eV2 (0.15, 0.075), 0.15 * 0.15 / 12.0, 1e-12);
}

static void
test_cryogen_table (void)
{
  /* University of Wisconsin cryogen data table (latent heat only):
   * 1 W boils 1.387 L/h of liquid helium and 0.02245 L/h of nitrogen. */
  g_assert_cmpfloat_with_epsilon (mp_helium_boiloff_L_per_h_per_W (), 1.387, 5e-4);
  g_assert_cmpfloat_with_epsilon (mp_nitrogen_boiloff_L_per_h_per_W (), 0.02245, 5e-6);
}

static void
test_properties (void)
{
  double temps[] = { 4, 45, 77, 140, 300, 600 };

  /* MTE rises with excess energy and with temperature; MTE >= kT; yield
   * rises with photon energy (properties of the model). */
  for (gsize t = 0; t < G_N_ELEMENTS (temps); t++)
    {
      MpEmission prev, em, hot;
      double kT = mp_thermal_energy_eV (temps[t]);

      mp_emission_monochromatic (-0.4, temps[t], &prev);
      for (double dE = -0.39; dE <= 0.8; dE += 0.01)
        {
          mp_emission_monochromatic (dE, temps[t], &em);
          g_assert_cmpfloat (em.mte_eV, >=, prev.mte_eV * (1 - 1e-12));
          g_assert_cmpfloat (em.log_yield, >, prev.log_yield);
          g_assert_cmpfloat (em.mte_eV, >=, kT * (1 - 1e-9));
          mp_emission_monochromatic (dE, temps[t] * 1.5, &hot);
          g_assert_cmpfloat (hot.mte_eV, >, em.mte_eV);
          prev = em;
        }
    }
}

static void
test_robust (void)
{
  /* x from -1e4 to 1e4 and T from 1 K to 1500 K: finite, no abort. */
  for (double T = 1.0; T <= 1500.0; T *= 1.7)
    {
      double kT = mp_thermal_energy_eV (T);

      for (double x = -1e4; x <= 1e4; x += 37.3)
        {
          MpEmission em;

          mp_emission_averaged (x * kT, T, 0.008, &em);
          g_assert_true (isfinite (em.log_yield));
          g_assert_true (isfinite (em.mte_eV) && em.mte_eV > 0);
          g_assert_true (isfinite (em.eps2_eV2) && em.eps2_eV2 > 0);
          mp_emission_monochromatic (x * kT, T, &em);
          g_assert_true (isfinite (em.log_yield) && isfinite (em.mte_eV));
        }
    }
}

static void
test_bandwidth (void)
{
  MpEmission mono, avg, wide;

  /* A line much narrower than kT changes nothing (limit). */
  mp_emission_monochromatic (0.1, 300.0, &mono);
  mp_emission_averaged (0.1, 300.0, 1e-6, &avg);
  assert_rel (avg.mte_eV, mono.mte_eV, 1e-9);
  assert_rel (avg.log_yield, mono.log_yield, 1e-9);
  /* Far above threshold Y = dE^2/2 + pi^2 (kT)^2 / 6 (Sommerfeld), a
   * quadratic, so its Gaussian average is exactly
   * (dE^2 + sigma^2)/2 + pi^2 (kT)^2 / 6, which the quadrature must hit. */
  mp_emission_averaged (0.3, 1.0, 0.01, &wide);
  assert_rel (exp (wide.log_yield),
              (0.09 + 1e-4) / 2.0 + M_PI * M_PI * pow (mp_thermal_energy_eV (1.0), 2) / 6.0,
              1e-9);
}

typedef struct
{
  double excess_eV, temperature_K, bandwidth_eV, log_scale;
  gboolean first_moment;
} LineIntegrand;

static double
line_integrand (double u, void *data)
{
  const LineIntegrand *p = data;
  MpEmission em;
  double v;

  mp_emission_monochromatic (p->excess_eV + p->bandwidth_eV * u, p->temperature_K, &em);
  v = exp (em.log_yield - p->log_scale - 0.5 * u * u) / sqrt (2.0 * M_PI);
  return p->first_moment ? v * em.mte_eV : v;
}

static void
test_bandwidth_against_adaptive (void)
{
  /* The line average is defined in physics.md ("Laser bandwidth") as the
   * Gaussian average of Y and Y<eps>. Reference: the same integral done
   * adaptively (GSL QAGP, breakpoint at threshold, 1e-10 relative), for
   * lines narrow and wide against kT, from 4 K (helium) to 295 K. */
  static const double temps[] = { 4, 8, 20, 40, 77, 295 };
  static const double widths[] = { 0.003, 0.006, 0.012 };
  gsl_integration_workspace *w = gsl_integration_workspace_alloc (2000);

  for (gsize t = 0; t < G_N_ELEMENTS (temps); t++)
    for (gsize k = 0; k < G_N_ELEMENTS (widths); k++)
      for (double dE = -0.06; dE <= 0.3; dE += 0.0137)
        {
          MpEmission avg;
          LineIntegrand p;
          gsl_function f = { line_integrand, &p };
          double pts[3], y, ym, err;

          mp_emission_averaged (dE, temps[t], widths[k], &avg);
          p = (LineIntegrand) { dE, temps[t], widths[k], avg.log_yield, FALSE };
          pts[0] = -40.0;
          pts[1] = CLAMP (-dE / widths[k], -39.0, 79.0);
          pts[2] = 80.0;
          gsl_integration_qagp (&f, pts, 3, 0.0, 1e-10, 2000, w, &y, &err);
          p.first_moment = TRUE;
          gsl_integration_qagp (&f, pts, 3, 0.0, 1e-10, 2000, w, &ym, &err);
          g_assert_cmpfloat_with_epsilon (log (y), 0.0, 1e-6);
          g_assert_cmpfloat_with_epsilon (ym / y / avg.mte_eV, 1.0, 1e-6);
        }
  gsl_integration_workspace_free (w);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();

  g_test_add_func ("/physics/constants", test_constants);
  g_test_add_func ("/physics/schottky", test_schottky);
  g_test_add_func ("/physics/fermi-dirac/zero", test_fermi_dirac_at_zero);
  g_test_add_func ("/physics/fermi-dirac/limits", test_fermi_dirac_limits);
  g_test_add_func ("/physics/mte/ratio-table", test_mte_ratio_table);
  g_test_add_func ("/physics/mte/cv2-table", test_cv2_table);
  g_test_add_func ("/physics/mte/threshold", test_mte_at_threshold);
  g_test_add_func ("/physics/mte/thermal-limit", test_thermal_limit_cold);
  g_test_add_func ("/physics/mte/dE-over-3", test_dE_over_3);
  g_test_add_func ("/physics/yield/square-law", test_yield_square_law);
  g_test_add_func ("/physics/stats/gaussian-limit", test_gaussian_limit);
  g_test_add_func ("/physics/stats/background-weight", test_background_weight);
  g_test_add_func ("/physics/cryogen", test_cryogen_table);
  g_test_add_func ("/physics/properties", test_properties);
  g_test_add_func ("/physics/robust", test_robust);
  g_test_add_func ("/physics/bandwidth", test_bandwidth);
  g_test_add_func ("/physics/bandwidth/adaptive", test_bandwidth_against_adaptive);
  return g_test_run ();
}
