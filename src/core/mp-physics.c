/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-physics.c: the threshold photoemission model and counting statistics.
 *
 * Yield: Fowler (1931), Phys. Rev. 38, 45; DuBridge (1933), Phys. Rev. 43,
 * 727. Transverse-energy moments of a free-electron metal with conserved
 * transverse momentum, as derived in ../shared/spec/physics.md. */
#include "config.h"

#include "mp-physics.h"
#include "mp-constants.h"

#include <math.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_sf_fermi_dirac.h>

/* Below this x the series F_j(x) = sum (-1)^(k+1) e^(kx) / k^(j+1) is exact
 * to double precision with two terms; GSL is used above it. */
#define MP_FD_SERIES_BELOW (-30.0)

/* The laser line (physics.md, "Laser bandwidth"). Where the line is narrow
 * against kT the yield is smooth across it and Gauss-Hermite quadrature
 * converges fast: 12, 24 or 48 nodes by the ratio r = sigma_L / kT, chosen
 * so that ln Y and MTE agree with a 160-node rule to 1e-11 or better from
 * -0.12 to +0.4 eV excess (checked at 4 to 295 K with a 6 meV line). Where
 * the line is wide against kT (r > 2.5: cold blocks), the yield has a kink
 * at threshold narrower than the node spacing and, below threshold, the
 * Gaussian's upper tail dominates, so Gauss-Hermite fails (at 4 K ln Y was
 * off by 12 with 48 nodes); there a composite 4-point Gauss-Legendre rule
 * over the Gaussian in u = (E - E_0) / sigma_L, with panels of width 1/r
 * around threshold, replaces it (tests/test-physics.c checks it against
 * adaptive integration). The line is cut at MP_LINE_CUT_SIGMA below its
 * centre and that far beyond the bulk of the emission above it. */
#define MP_HERMITE_MAX 48
#define MP_LINE_CUT_SIGMA 8.5
#define MP_LINE_MAX_SPAN_SIGMA 64.0
#define MP_LINE_FINE_PANELS 10
#define MP_LINE_NEAR_SIGMA 2.0

typedef struct
{
  int n;
  double node[MP_HERMITE_MAX];
  double log_weight[MP_HERMITE_MAX];
} MpHermiteRule;

static MpHermiteRule hermite_rules[3];

static void
build_hermite_rule (MpHermiteRule *rule, int n)
{
  gsl_integration_fixed_workspace *w;
  const double *nodes, *weights;

  /* Weight exp(-t^2) on the real line: a = 0, b = 1. */
  w = gsl_integration_fixed_alloc (gsl_integration_fixed_hermite, n, 0.0, 1.0, 0.0, 0.0);
  nodes = gsl_integration_fixed_nodes (w);
  weights = gsl_integration_fixed_weights (w);
  rule->n = n;
  for (int i = 0; i < n; i++)
    {
      rule->node[i] = nodes[i];
      rule->log_weight[i] = log (weights[i]) - 0.5 * log (M_PI);
    }
  gsl_integration_fixed_free (w);
}

static gpointer
init_once (gpointer data)
{
  /* GSL's default handler aborts the process on underflow. */
  gsl_set_error_handler_off ();
  build_hermite_rule (&hermite_rules[0], 12);
  build_hermite_rule (&hermite_rules[1], 24);
  build_hermite_rule (&hermite_rules[2], 48);
  return NULL;
}

void
mp_core_init (void)
{
  static GOnce once = G_ONCE_INIT;

  g_once (&once, init_once, NULL);
}

double
mp_photon_energy_eV_from_wavelength_nm (double wavelength_nm)
{
  g_return_val_if_fail (wavelength_nm > 0.0, NAN);

  return MP_HC_EV_NM / wavelength_nm;
}

double
mp_wavelength_nm_from_photon_energy_eV (double photon_energy_eV)
{
  g_return_val_if_fail (photon_energy_eV > 0.0, NAN);

  return MP_HC_EV_NM / photon_energy_eV;
}

double
mp_thermal_energy_eV (double temperature_K)
{
  return MP_K_B_EV_PER_K * temperature_K;
}

double
mp_schottky_lowering_eV (double field_MV_per_m)
{
  double field_V_per_m = field_MV_per_m * 1e6;

  if (!(field_V_per_m > 0.0))
    return 0.0;
  /* sqrt(e F / (4 pi eps0)) in volts, i.e. eV per electron. */
  return sqrt (MP_E_CHARGE_C * field_V_per_m / (4.0 * M_PI * MP_EPSILON0_F_PER_M));
}

double
mp_effective_work_function_eV (double work_function_eV, double field_MV_per_m)
{
  return work_function_eV - mp_schottky_lowering_eV (field_MV_per_m);
}

static double
log_fermi_dirac_series (int j, double x)
{
  double ex = exp (x);
  double sum = -ex / pow (2.0, j + 1) + ex * ex / pow (3.0, j + 1);

  return x + log1p (sum);
}

static int
fermi_dirac_gsl (int j, double x, gsl_sf_result *r)
{
  switch (j)
    {
    case 0:
      return gsl_sf_fermi_dirac_0_e (x, r);
    case 1:
      return gsl_sf_fermi_dirac_1_e (x, r);
    case 2:
      return gsl_sf_fermi_dirac_2_e (x, r);
    default:
      return gsl_sf_fermi_dirac_int_e (j, x, r);
    }
}

double
mp_log_fermi_dirac (int j, double x)
{
  gsl_sf_result r;

  g_return_val_if_fail (j >= 0 && j <= 3, NAN);
  g_return_val_if_fail (!isnan (x), NAN);

  if (x < MP_FD_SERIES_BELOW)
    return log_fermi_dirac_series (j, x);
  if (fermi_dirac_gsl (j, x, &r) == GSL_SUCCESS && r.val > 0.0 && isfinite (r.val))
    return log (r.val);
  /* Far above the Fermi level: F_j(x) -> x^(j+1) / (j+1)!. */
  return (j + 1) * log (x) - lgamma (j + 2.0);
}

double
mp_fermi_dirac (int j, double x)
{
  return exp (mp_log_fermi_dirac (j, x));
}

void
mp_emission_monochromatic (double excess_eV, double temperature_K, MpEmission *out)
{
  double kT, x, l1;

  g_return_if_fail (out != NULL);
  g_return_if_fail (temperature_K > 0.0);

  kT = mp_thermal_energy_eV (temperature_K);
  x = excess_eV / kT;
  l1 = mp_log_fermi_dirac (1, x);
  out->log_yield = 2.0 * log (kT) + l1;
  out->mte_eV = kT * exp (mp_log_fermi_dirac (2, x) - l1);
  out->eps2_eV2 = 2.0 * kT * kT * exp (mp_log_fermi_dirac (3, x) - l1);
}

static int
fill_hermite (const MpHermiteRule *rule, double excess_eV, double bandwidth_eV,
              double *node_excess_eV, double *log_weight)
{
  /* <f> = 1/sqrt(pi) sum w_i f(dE + sqrt(2) sigma t_i). */
  for (int i = 0; i < rule->n; i++)
    {
      node_excess_eV[i] = excess_eV + M_SQRT2 * bandwidth_eV * rule->node[i];
      log_weight[i] = rule->log_weight[i];
    }
  return rule->n;
}

/* Panel edges in u: unit panels far from threshold, quarter panels within
 * MP_LINE_NEAR_SIGMA of the threshold u_th, and panels of width 1/r within
 * MP_LINE_FINE_PANELS of them around it. */
static double
next_line_cut (double u, double hi, double u_th, double r)
{
  double fine = MP_LINE_FINE_PANELS / r, near = MAX (MP_LINE_NEAR_SIGMA, fine);
  const double edges[5] = { u_th - near, u_th - fine, u_th + fine, u_th + near, hi };
  /* The panel [u, next) lies in the region its left edge opens. */
  double d = fabs (u + 1e-12 - u_th);
  double next = u + (d < fine ? 1.0 / r : d < near ? 0.25 : 1.0);

  for (int i = 0; i < 5; i++)
    if (edges[i] > u + 1e-12 && edges[i] < next)
      next = edges[i];
  return MIN (next, hi);
}

static int
make_line_panels (double r, double u_th, double *cut)
{
  double lo = -MP_LINE_CUT_SIGMA;
  double hi = MAX (MP_LINE_CUT_SIGMA, MIN (r, u_th) + MP_LINE_CUT_SIGMA);
  double u = lo;
  int n = 0;

  hi = MIN (hi, lo + MP_LINE_MAX_SPAN_SIGMA);
  cut[n++] = u;
  while (u < hi && n < MP_LINE_NODES / 4 + 1)
    {
      u = next_line_cut (u, hi, u_th, r);
      cut[n++] = u;
    }
  return n - 1;
}

static int
fill_composite (double excess_eV, double bandwidth_eV, double kT_eV,
                double *node_excess_eV, double *log_weight)
{
  /* 4-point Gauss-Legendre on [-1, 1] (Abramowitz & Stegun, table 25.4). */
  static const double x[4] = { -0.8611363115940526, -0.3399810435848563,
                               0.3399810435848563, 0.8611363115940526 };
  static const double w[4] = { 0.3478548451374538, 0.6521451548625461,
                               0.6521451548625461, 0.3478548451374538 };
  double cut[MP_LINE_NODES / 4 + 1];
  int panels = make_line_panels (bandwidth_eV / kT_eV, -excess_eV / bandwidth_eV, cut);
  int n = 0;

  for (int k = 0; k < panels; k++)
    {
      double mid = 0.5 * (cut[k] + cut[k + 1]), half = 0.5 * (cut[k + 1] - cut[k]);

      for (int i = 0; i < 4; i++)
        {
          double u = mid + half * x[i];

          node_excess_eV[n] = excess_eV + bandwidth_eV * u;
          /* Standard normal density times the panel's weight. */
          log_weight[n] = log (w[i] * half) - 0.5 * u * u - 0.5 * log (2.0 * M_PI);
          n++;
        }
    }
  return n;
}

int
mp_line_quadrature (double excess_eV,
                    double temperature_K,
                    double bandwidth_eV,
                    double *node_excess_eV,
                    double *log_weight)
{
  double r;

  g_return_val_if_fail (node_excess_eV != NULL && log_weight != NULL, 0);
  g_return_val_if_fail (temperature_K > 0.0 && bandwidth_eV > 0.0, 0);

  mp_core_init ();
  r = bandwidth_eV / mp_thermal_energy_eV (temperature_K);
  if (r <= 0.6)
    return fill_hermite (&hermite_rules[0], excess_eV, bandwidth_eV, node_excess_eV, log_weight);
  if (r <= 1.2)
    return fill_hermite (&hermite_rules[1], excess_eV, bandwidth_eV, node_excess_eV, log_weight);
  if (r <= 2.5)
    return fill_hermite (&hermite_rules[2], excess_eV, bandwidth_eV, node_excess_eV, log_weight);
  return fill_composite (excess_eV, bandwidth_eV, mp_thermal_energy_eV (temperature_K),
                         node_excess_eV, log_weight);
}

void
mp_emission_averaged (double excess_eV,
                      double temperature_K,
                      double bandwidth_eV,
                      MpEmission *out)
{
  MpEmission at[MP_LINE_NODES];
  double node_eV[MP_LINE_NODES], log_w[MP_LINE_NODES];
  double top = -INFINITY, sum = 0.0, sum_mte = 0.0, sum_eps2 = 0.0;
  int n;

  g_return_if_fail (out != NULL);

  if (!(bandwidth_eV > 0.0))
    {
      mp_emission_monochromatic (excess_eV, temperature_K, out);
      return;
    }
  /* In log space, so that yields of 1e-300 and below still average. */
  n = mp_line_quadrature (excess_eV, temperature_K, bandwidth_eV, node_eV, log_w);
  for (int i = 0; i < n; i++)
    {
      mp_emission_monochromatic (node_eV[i], temperature_K, &at[i]);
      log_w[i] += at[i].log_yield;
      top = MAX (top, log_w[i]);
    }
  for (int i = 0; i < n; i++)
    {
      double w = exp (log_w[i] - top);

      sum += w;
      sum_mte += w * at[i].mte_eV;
      sum_eps2 += w * at[i].eps2_eV2;
    }
  out->log_yield = top + log (sum);
  out->mte_eV = sum_mte / sum;
  out->eps2_eV2 = sum_eps2 / sum;
}

double
mp_yield_eV2 (const MpEmission *em)
{
  g_return_val_if_fail (em != NULL, NAN);

  return exp (em->log_yield);
}

double
mp_qe_from_reference (double qe_ref, const MpEmission *at_ref, const MpEmission *at_step)
{
  g_return_val_if_fail (at_ref != NULL && at_step != NULL, NAN);

  return qe_ref * exp (at_step->log_yield - at_ref->log_yield);
}

double
mp_per_electron_variance_eV2 (const MpEmission *em, double resolution_eV)
{
  double v;

  g_return_val_if_fail (em != NULL, NAN);

  v = em->eps2_eV2 - em->mte_eV * em->mte_eV;
  return MAX (v, 0.0) + resolution_eV * resolution_eV;
}

double
mp_background_weight_eV2 (double acceptance_eV, double mte_eV)
{
  return acceptance_eV * acceptance_eV / 3.0 - mte_eV * acceptance_eV + mte_eV * mte_eV;
}

double
mp_variance_per_electron_eV2 (const MpEmission *em,
                              double resolution_eV,
                              double signal_rate_per_s,
                              double background_rate_per_s,
                              double acceptance_eV)
{
  double v = mp_per_electron_variance_eV2 (em, resolution_eV);

  if (!(signal_rate_per_s > 0.0))
    return INFINITY;
  return v + background_rate_per_s / signal_rate_per_s
             * mp_background_weight_eV2 (acceptance_eV, em->mte_eV);
}

double
mp_statistical_sigma_eV (double variance_per_electron_eV2,
                         double signal_rate_per_s,
                         double dwell_s)
{
  if (!(signal_rate_per_s > 0.0) || !(dwell_s > 0.0))
    return INFINITY;
  return sqrt (variance_per_electron_eV2 / (signal_rate_per_s * dwell_s));
}

double
mp_required_dwell_s (double variance_per_electron_eV2,
                     double signal_rate_per_s,
                     double target_sigma_eV,
                     double systematic_eV)
{
  double share = target_sigma_eV * target_sigma_eV - systematic_eV * systematic_eV;

  if (!(share > 0.0) || !(signal_rate_per_s > 0.0))
    return INFINITY;
  return variance_per_electron_eV2 / (signal_rate_per_s * share);
}

double
mp_reached_sigma_eV (double variance_per_electron_eV2,
                     double signal_rate_per_s,
                     double dwell_s,
                     double systematic_eV)
{
  double stat = mp_statistical_sigma_eV (variance_per_electron_eV2,
                                         signal_rate_per_s, dwell_s);

  return hypot (stat, systematic_eV);
}

static double
boiloff_L_per_h_per_W (double density_kg_per_m3, double latent_J_per_g)
{
  double grams_per_h = 3600.0 / latent_J_per_g;

  return grams_per_h / density_kg_per_m3; /* g / (kg/m^3) = L */
}

double
mp_helium_boiloff_L_per_h_per_W (void)
{
  return boiloff_L_per_h_per_W (MP_HELIUM_DENSITY_KG_PER_M3, MP_HELIUM_LATENT_J_PER_G);
}

double
mp_nitrogen_boiloff_L_per_h_per_W (void)
{
  return boiloff_L_per_h_per_W (MP_NITROGEN_DENSITY_KG_PER_M3, MP_NITROGEN_LATENT_J_PER_G);
}
