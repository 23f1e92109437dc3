/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-fit.c: nonlinear least-squares fit of the threshold model to measured
 * QE and MTE points (see mp-fit.h). */
#include "config.h"

#include "mp-fit.h"
#include "mp-error.h"
#include "mp-physics.h"

#include <math.h>
#include <gsl/gsl_blas.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_matrix.h>
#include <gsl/gsl_multifit_nlinear.h>
#include <gsl/gsl_vector.h>

/* Points with x = (E - phi_eff)/kT above this carry no information on the
 * temperature: the yield is dE^2/2 and the MTE dE/3 to within e^-15
 * (physics.md, limits of F_j). */
#define MP_FIT_FAR_ABOVE_X 15.0
/* Below this x the yield is exp(x) to within e^x/4 (< 0.2 %): work
 * function and QE scale trade off at one temperature. */
#define MP_FIT_FAR_BELOW_X (-5.0)
/* Parameters whose estimates correlate closer than this to +-1 are not
 * separately determined. */
#define MP_FIT_DEGENERATE_1_MINUS_RHO 1e-6
/* Effective temperatures outside this range of the cathode's mean a model
 * that does not describe the data (common practice, no source: electron
 * heating by the laser stays well below tenfold). */
#define MP_FIT_MIN_THERMAL_RATIO 0.1
#define MP_FIT_MAX_THERMAL_RATIO 10.0
/* |ln(T_eff/T)| the model evaluates at most (a factor of 150). */
#define MP_FIT_MAX_U 5.0
/* Grid search for the starting work function: points used at most. */
#define MP_FIT_GRID_MAX_POINTS 400

enum { P_PHI = 0, P_LOG_A = 1, P_FIRST_U = 2 };

typedef struct
{
  MpFitResidualKind kind;
  double photon_energy_eV;
  double temperature_K;
  double y;                    /* ln qe, or mte in meV */
  double data_sigma;           /* ln units or meV; NAN when the data have none */
  double sigma;                /* used in the weight */
  int block;
  int line;
} Observation;

typedef struct
{
  GArray *obs;                 /* Observation */
  GArray *blocks;              /* MpFitBlock */
  int *u_param;                /* per block: parameter index of u_b, or -1 */
  int n_params;
  gboolean t_in_qe;
  double schottky_eV;
  double bandwidth_eV;
  double extra_mte_meV;
} FitProblem;

void
mp_fit_options_init (MpFitOptions *opts)
{
  g_return_if_fail (opts != NULL);

  opts->electron_temperature = FALSE;
  opts->use_mte = TRUE;
  opts->max_iterations = 200;
}

const char *
mp_fit_residual_kind_to_string (MpFitResidualKind kind)
{
  return kind == MP_FIT_RESIDUAL_MTE ? "mte" : "qe";
}

void
mp_fit_result_free (MpFitResult *result)
{
  if (result == NULL)
    return;
  g_clear_pointer (&result->blocks, g_array_unref);
  g_clear_pointer (&result->residuals, g_array_unref);
  g_free (result);
}

/* ---- The model ---------------------------------------------------------- */

static gboolean
obs_uses_u (const FitProblem *fp, const Observation *o)
{
  return fp->u_param[o->block] >= 0 &&
         (o->kind == MP_FIT_RESIDUAL_MTE || fp->t_in_qe);
}

static double
obs_temperature_K (const FitProblem *fp, const Observation *o, const double *x)
{
  if (!obs_uses_u (fp, o))
    return o->temperature_K;
  /* Bounded so that a runaway step stays finite; check_temperatures_plausible
   * refuses results near the bounds. */
  return o->temperature_K * exp (CLAMP (x[fp->u_param[o->block]], -MP_FIT_MAX_U, MP_FIT_MAX_U));
}

/* Model value of one observation, in the units of o->y. */
static double
model_value (const FitProblem *fp, const Observation *o,
             double phi, double log_a, double temperature_K)
{
  MpEmission em;
  double excess = o->photon_energy_eV - (phi - fp->schottky_eV);

  if (!(temperature_K > 0.0) || !isfinite (temperature_K) || !isfinite (excess))
    return NAN;
  mp_emission_averaged (excess, temperature_K, fp->bandwidth_eV, &em);
  if (o->kind == MP_FIT_RESIDUAL_QE)
    return log_a + em.log_yield;
  return 1e3 * em.mte_eV + fp->extra_mte_meV;
}

static double
model_at (const FitProblem *fp, const Observation *o, const double *x)
{
  return model_value (fp, o, x[P_PHI], x[P_LOG_A], obs_temperature_K (fp, o, x));
}

static int
residual_f (const gsl_vector *xv, void *data, gsl_vector *f)
{
  const FitProblem *fp = data;
  const double *x = gsl_vector_const_ptr (xv, 0);

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double m = model_at (fp, o, x);

      if (!isfinite (m))
        return GSL_EDOM;
      gsl_vector_set (f, i, (m - o->y) / o->sigma);
    }
  return GSL_SUCCESS;
}

/* Jacobian: ln A analytically, phi and u by central differences (each row
 * depends on at most three parameters, so this costs four model values per
 * row whatever the number of blocks). */
static int
residual_df (const gsl_vector *xv, void *data, gsl_matrix *jac)
{
  const FitProblem *fp = data;
  const double *x = gsl_vector_const_ptr (xv, 0);

  gsl_matrix_set_zero (jac);
  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double t = obs_temperature_K (fp, o, x);
      double h = 1e-4 * mp_thermal_energy_eV (t);
      double d;

      d = (model_value (fp, o, x[P_PHI] + h, x[P_LOG_A], t) -
           model_value (fp, o, x[P_PHI] - h, x[P_LOG_A], t)) / (2.0 * h);
      if (!isfinite (d))
        return GSL_EDOM;
      gsl_matrix_set (jac, i, P_PHI, d / o->sigma);
      if (o->kind == MP_FIT_RESIDUAL_QE)
        gsl_matrix_set (jac, i, P_LOG_A, 1.0 / o->sigma);
      if (obs_uses_u (fp, o))
        {
          const double hu = 1e-5;

          d = (model_value (fp, o, x[P_PHI], x[P_LOG_A], t * exp (hu)) -
               model_value (fp, o, x[P_PHI], x[P_LOG_A], t * exp (-hu))) / (2.0 * hu);
          if (!isfinite (d))
            return GSL_EDOM;
          gsl_matrix_set (jac, i, fp->u_param[o->block], d / o->sigma);
        }
    }
  return GSL_SUCCESS;
}

/* ---- Setting up --------------------------------------------------------- */

static int
find_or_add_block (GArray *blocks, const MpPlan *plan, double temperature_K)
{
  double key = mp_measured_match_block_temperature (plan, temperature_K);
  MpFitBlock b = { 0 };

  for (guint i = 0; i < blocks->len; i++)
    {
      double t = g_array_index (blocks, MpFitBlock, i).temperature_K;

      if (fabs (t - key) <= MAX (1.0, 0.02 * t))
        return i;
    }
  b.temperature_K = key;
  b.effective_temperature_K = NAN;
  b.effective_temperature_sigma_K = NAN;
  b.thermal_ratio = NAN;
  g_array_append_val (blocks, b);
  return blocks->len - 1;
}

static int
compare_blocks (gconstpointer a, gconstpointer b)
{
  double ta = ((const MpFitBlock *) a)->temperature_K;
  double tb = ((const MpFitBlock *) b)->temperature_K;

  return (ta > tb) - (ta < tb);
}

static void
add_observation (FitProblem *fp, const MpPlan *plan, const MpMeasuredPoint *p,
                 MpFitResidualKind kind)
{
  Observation o = { 0 };

  o.kind = kind;
  o.photon_energy_eV = p->photon_energy_eV;
  o.temperature_K = p->temperature_K;
  o.line = p->line;
  o.block = find_or_add_block (fp->blocks, plan, p->temperature_K);
  if (kind == MP_FIT_RESIDUAL_QE)
    {
      o.y = log (p->qe);
      o.data_sigma = p->qe_sigma / p->qe;   /* NAN stays NAN */
    }
  else
    {
      o.y = p->mte_meV;
      o.data_sigma = p->mte_sigma_meV;
    }
  g_array_append_val (fp->obs, o);
}

static void
reindex_blocks (FitProblem *fp)
{
  g_autoptr (GArray) sorted = g_array_copy (fp->blocks);
  int map[256];

  g_array_sort (sorted, compare_blocks);
  for (guint i = 0; i < fp->blocks->len; i++)
    for (guint j = 0; j < sorted->len; j++)
      if (g_array_index (sorted, MpFitBlock, j).temperature_K ==
          g_array_index (fp->blocks, MpFitBlock, i).temperature_K)
        map[i] = j;
  for (guint i = 0; i < fp->obs->len; i++)
    {
      Observation *o = &g_array_index (fp->obs, Observation, i);

      o->block = map[o->block];
      if (o->kind == MP_FIT_RESIDUAL_QE)
        g_array_index (sorted, MpFitBlock, o->block).n_qe++;
      else
        g_array_index (sorted, MpFitBlock, o->block).n_mte++;
    }
  g_array_unref (fp->blocks);
  fp->blocks = g_steal_pointer (&sorted);
}

static gboolean
build_problem (FitProblem *fp, const MpPlan *plan, const MpMeasuredData *data,
               const MpFitOptions *opts, GError **error)
{
  fp->obs = g_array_new (FALSE, TRUE, sizeof (Observation));
  fp->blocks = g_array_new (FALSE, TRUE, sizeof (MpFitBlock));
  fp->t_in_qe = opts->electron_temperature;
  fp->schottky_eV = mp_schottky_lowering_eV (plan->cathode.field_MV_per_m);
  fp->bandwidth_eV = 1e-3 * plan->laser.bandwidth_meV;
  fp->extra_mte_meV = plan->cathode.extra_mte_meV;

  for (guint i = 0; i < data->points->len; i++)
    {
      const MpMeasuredPoint *p = &g_array_index (data->points, MpMeasuredPoint, i);

      add_observation (fp, plan, p, MP_FIT_RESIDUAL_QE);
      if (fp->blocks->len > 200)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                       "%s: the points spread over more than 200 temperatures; "
                       "group them by the plan's temperature blocks",
                       data->name);
          return FALSE;
        }
    }
  if (opts->use_mte)
    for (guint i = 0; i < data->points->len; i++)
      {
        const MpMeasuredPoint *p = &g_array_index (data->points, MpMeasuredPoint, i);

        if (!isnan (p->mte_meV))
          add_observation (fp, plan, p, MP_FIT_RESIDUAL_MTE);
      }
  reindex_blocks (fp);

  fp->u_param = g_new (int, fp->blocks->len);
  fp->n_params = P_FIRST_U;
  for (guint b = 0; b < fp->blocks->len; b++)
    {
      MpFitBlock *blk = &g_array_index (fp->blocks, MpFitBlock, b);

      blk->fitted = blk->n_mte > 0 || (fp->t_in_qe && blk->n_qe > 0);
      fp->u_param[b] = blk->fitted ? fp->n_params++ : -1;
    }
  return TRUE;
}

static void
clear_problem (FitProblem *fp)
{
  g_clear_pointer (&fp->obs, g_array_unref);
  g_clear_pointer (&fp->blocks, g_array_unref);
  g_clear_pointer (&fp->u_param, g_free);
}

/* ---- Weights: data sigmas, or the scatter of each kind ------------------ */

static gboolean
kind_has_data_sigma (const FitProblem *fp, MpFitResidualKind kind)
{
  gboolean any = FALSE;

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);

      if (o->kind != kind)
        continue;
      if (!(o->data_sigma > 0.0))
        return FALSE;
      any = TRUE;
    }
  return any;
}

static void
set_kind_sigma (FitProblem *fp, MpFitResidualKind kind, double sigma)
{
  for (guint i = 0; i < fp->obs->len; i++)
    {
      Observation *o = &g_array_index (fp->obs, Observation, i);

      if (o->kind == kind)
        o->sigma = isnan (sigma) ? o->data_sigma : sigma;
    }
}

/* Scatter of one kind at x: sqrt(RSS / its share of the degrees of freedom). */
static double
kind_scatter (const FitProblem *fp, MpFitResidualKind kind, const double *x)
{
  double rss = 0.0;
  int n = 0;
  double dof;

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double r;

      if (o->kind != kind)
        continue;
      r = o->y - model_at (fp, o, x);
      rss += r * r;
      n++;
    }
  dof = n - (double) fp->n_params * n / fp->obs->len;
  return sqrt (rss / MAX (dof, 1.0));
}

/* ---- Starting point ----------------------------------------------------- */

/* Best work function on a grid, with ln A at its optimum for each value
 * (a weighted mean), from the QE points at their nominal temperatures. */
static double
grid_start_phi (const FitProblem *fp, double phi_plan, double phi_halfwidth,
                int n_grid)
{
  guint n_qe = 0, stride;
  double best_phi = phi_plan, best_chi2 = INFINITY;

  for (guint i = 0; i < fp->obs->len; i++)
    n_qe += g_array_index (fp->obs, Observation, i).kind == MP_FIT_RESIDUAL_QE;
  stride = MAX (1u, n_qe / MP_FIT_GRID_MAX_POINTS);
  for (int g = 0; g < n_grid; g++)
    {
      double phi = phi_plan + phi_halfwidth * (2.0 * g / (n_grid - 1) - 1.0);
      double sw = 0.0, swr = 0.0, swr2 = 0.0, chi2;
      guint k = 0;

      for (guint i = 0; i < fp->obs->len; i++)
        {
          const Observation *o = &g_array_index (fp->obs, Observation, i);
          double r, w;

          if (o->kind != MP_FIT_RESIDUAL_QE || (k++ % stride) != 0)
            continue;
          r = o->y - model_value (fp, o, phi, 0.0, o->temperature_K);
          w = 1.0 / (o->sigma * o->sigma);
          sw += w;
          swr += w * r;
          swr2 += w * r * r;
        }
      chi2 = swr2 - swr * swr / sw;
      if (chi2 < best_chi2)
        {
          best_chi2 = chi2;
          best_phi = phi;
        }
    }
  return best_phi;
}

static double
optimal_log_a (const FitProblem *fp, double phi)
{
  double sw = 0.0, swr = 0.0;

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double w;

      if (o->kind != MP_FIT_RESIDUAL_QE)
        continue;
      w = 1.0 / (o->sigma * o->sigma);
      sw += w;
      swr += w * (o->y - model_value (fp, o, phi, 0.0, o->temperature_K));
    }
  return swr / sw;
}

/* ln(T_eff/T) from the ratio of measured to nominal-model MTE (MTE is
 * nearly proportional to T near and below threshold). */
static double
start_u (const FitProblem *fp, int block, double phi)
{
  double sum_meas = 0.0, sum_model = 0.0;

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);

      if (o->block != block || o->kind != MP_FIT_RESIDUAL_MTE)
        continue;
      sum_meas += o->y;
      sum_model += model_value (fp, o, phi, 0.0, o->temperature_K);
    }
  if (!(sum_meas > 0.0 && sum_model > 0.0))
    return 0.0;
  return CLAMP (log (sum_meas / sum_model), -2.0, 2.0);
}

static void
start_point (const FitProblem *fp, const MpPlan *plan, gsl_vector *x)
{
  double halfwidth = MAX (0.5, 5.0 * plan->cathode.work_function_sigma_eV);
  FitProblem mono = *fp;
  double phi;

  /* The grid only finds a start: a monochromatic laser is close enough
   * and some fifty times cheaper than the bandwidth average. */
  mono.bandwidth_eV = 0.0;
  phi = grid_start_phi (&mono, plan->cathode.work_function_eV, halfwidth, 101);
  /* Refine around the best grid value, one coarse step either side. */
  phi = grid_start_phi (&mono, phi, 2.0 * halfwidth / 100.0, 21);
  gsl_vector_set (x, P_PHI, phi);
  gsl_vector_set (x, P_LOG_A, optimal_log_a (fp, phi));
  for (guint b = 0; b < fp->blocks->len; b++)
    if (fp->u_param[b] >= 0)
      gsl_vector_set (x, fp->u_param[b], start_u (fp, b, phi));
}

/* ---- Refusals ------------------------------------------------------------ */

static gboolean
check_enough_points (const FitProblem *fp, GError **error)
{
  if ((int) fp->obs->len >= fp->n_params + 1)
    return TRUE;
  g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
               "too few points: %u measured values for %d parameters "
               "(work function, QE scale%s); need at least %d",
               fp->obs->len, fp->n_params,
               fp->n_params > P_FIRST_U ? ", effective temperatures" : "",
               fp->n_params + 1);
  return FALSE;
}

/* Every point of a block with a temperature parameter far above threshold:
 * the model no longer depends on the temperature there. */
static gboolean
check_blocks_pin_temperature (const FitProblem *fp, const double *x, GError **error)
{
  for (guint b = 0; b < fp->blocks->len; b++)
    {
      const MpFitBlock *blk = &g_array_index (fp->blocks, MpFitBlock, b);
      double lowest_x = INFINITY;

      if (fp->u_param[b] < 0)
        continue;
      for (guint i = 0; i < fp->obs->len; i++)
        {
          const Observation *o = &g_array_index (fp->obs, Observation, i);
          double kT = mp_thermal_energy_eV (obs_temperature_K (fp, o, x));

          if (o->block != (int) b || !obs_uses_u (fp, o))
            continue;
          lowest_x = MIN (lowest_x, (o->photon_energy_eV - (x[P_PHI] - fp->schottky_eV)) / kT);
        }
      if (lowest_x > MP_FIT_FAR_ABOVE_X)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                       "%g K: every point is more than %g kT above threshold "
                       "(closest at %.1f kT), where yield and MTE no longer depend on "
                       "the temperature, so the data cannot pin the effective "
                       "temperature; add points within a few kT of threshold, or %s",
                       blk->temperature_K, MP_FIT_FAR_ABOVE_X, lowest_x,
                       blk->n_mte > 0 ? "leave the MTE points out of the fit"
                                      : "do not fit the electron temperature");
          return FALSE;
        }
    }
  return TRUE;
}

/* A fitted temperature far from the cathode's means the model cannot
 * describe the data at all (wrong units, a wrong column, MTE below dE/3
 * far above threshold), not that the electrons are that hot or cold. */
static gboolean
check_temperatures_plausible (const FitProblem *fp, const double *x, GError **error)
{
  for (guint b = 0; b < fp->blocks->len; b++)
    {
      const MpFitBlock *blk = &g_array_index (fp->blocks, MpFitBlock, b);
      double ratio;

      if (fp->u_param[b] < 0)
        continue;
      ratio = exp (CLAMP (x[fp->u_param[b]], -MP_FIT_MAX_U, MP_FIT_MAX_U));
      if (ratio < MP_FIT_MIN_THERMAL_RATIO || ratio > MP_FIT_MAX_THERMAL_RATIO)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                       "%g K: the model describes these data only with an effective "
                       "temperature of %.3g K, outside %g to %g times the cathode's; "
                       "check the units of the MTE and QE columns and the plan's work "
                       "function and field",
                       blk->temperature_K, blk->temperature_K * ratio,
                       MP_FIT_MIN_THERMAL_RATIO, MP_FIT_MAX_THERMAL_RATIO);
          return FALSE;
        }
    }
  return TRUE;
}

/* One temperature, every QE point far below threshold: the yield is
 * exp((E - phi)/kT) there, so phi and ln A enter only as ln A - phi/kT.
 * (At several temperatures the Boltzmann slopes differ and separate them,
 * unless each block has its own fitted temperature.) */
static gboolean
check_not_all_far_below (const FitProblem *fp, const double *x, GError **error)
{
  double t0 = NAN, highest_x = -INFINITY;
  gboolean one_temperature = TRUE;

  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double kT = mp_thermal_energy_eV (obs_temperature_K (fp, o, x));

      if (o->kind != MP_FIT_RESIDUAL_QE)
        continue;
      if (isnan (t0))
        t0 = o->temperature_K;
      else if (fabs (o->temperature_K - t0) > 1e-6 * t0)
        one_temperature = FALSE;
      highest_x = MAX (highest_x,
                       (o->photon_energy_eV - (x[P_PHI] - fp->schottky_eV)) / kT);
    }
  if ((one_temperature || fp->t_in_qe) && highest_x < MP_FIT_FAR_BELOW_X)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                   "every QE point lies far below threshold (the highest at %.1f kT), "
                   "where the yield is exp((E - phi)/kT) and the work function trades "
                   "off exactly against the QE scale; add points at and above threshold",
                   highest_x);
      return FALSE;
    }
  return TRUE;
}

static const char *
parameter_name (const FitProblem *fp, int k, char *buf, gsize len)
{
  if (k == P_PHI)
    return "the work function";
  if (k == P_LOG_A)
    return "the QE scale";
  for (guint b = 0; b < fp->blocks->len; b++)
    if (fp->u_param[b] == k)
      {
        g_snprintf (buf, len, "the effective temperature at %g K",
                    g_array_index (fp->blocks, MpFitBlock, b).temperature_K);
        return buf;
      }
  return "a parameter";
}

/* The parameter whose Jacobian column is most nearly parallel to column k. */
static int
most_collinear (const gsl_matrix *jac, int k)
{
  gsl_vector_const_view ck = gsl_matrix_const_column (jac, k);
  double nk = gsl_blas_dnrm2 (&ck.vector), best = -1.0;
  int partner = -1;

  for (size_t l = 0; l < jac->size2; l++)
    {
      gsl_vector_const_view cl = gsl_matrix_const_column (jac, l);
      double dot, nl = gsl_blas_dnrm2 (&cl.vector), c;

      if ((int) l == k || !(nl > 0.0) || !(nk > 0.0))
        continue;
      gsl_blas_ddot (&ck.vector, &cl.vector, &dot);
      c = fabs (dot) / (nk * nl);
      if (c > best)
        {
          best = c;
          partner = l;
        }
    }
  return partner;
}

static gboolean
check_covariance (const FitProblem *fp, const gsl_matrix *jac,
                  const gsl_matrix *covar, GError **error)
{
  char b1[64], b2[64];
  int p = fp->n_params;

  for (int k = 0; k < p; k++)
    {
      double v = gsl_matrix_get (covar, k, k);
      int partner;

      if (v > 0.0 && isfinite (v))
        continue;
      partner = most_collinear (jac, k);
      if (partner >= 0)
        g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                     "the data cannot determine %s separately from %s (singular "
                     "fit: they change the model in the same way); add points that "
                     "change them differently, e.g. at other photon energies",
                     parameter_name (fp, k, b1, sizeof b1),
                     parameter_name (fp, partner, b2, sizeof b2));
      else
        g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                     "the data cannot determine %s (the model does not depend on it "
                     "at these points)", parameter_name (fp, k, b1, sizeof b1));
      return FALSE;
    }
  for (int k = 0; k < p; k++)
    for (int l = k + 1; l < p; l++)
      {
        double rho = gsl_matrix_get (covar, k, l)
                     / sqrt (gsl_matrix_get (covar, k, k) * gsl_matrix_get (covar, l, l));

        if (1.0 - fabs (rho) < MP_FIT_DEGENERATE_1_MINUS_RHO)
          {
            g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                         "the data cannot separate %s from %s (their estimates are "
                         "correlated at %.8f); add points that change them differently, "
                         "e.g. at and above threshold",
                         parameter_name (fp, k, b1, sizeof b1),
                         parameter_name (fp, l, b2, sizeof b2), rho);
            return FALSE;
          }
      }
  return TRUE;
}

/* ---- The solver ---------------------------------------------------------- */

static gboolean
solve (FitProblem *fp, gsl_vector *x, int max_iterations, GCancellable *cancellable,
       int *iterations, GError **error)
{
  gsl_multifit_nlinear_parameters params = gsl_multifit_nlinear_default_parameters ();
  gsl_multifit_nlinear_fdf fdf = { 0 };
  gsl_multifit_nlinear_workspace *w;
  int status, info = 0, iter;
  gboolean ok = FALSE;

  params.trs = gsl_multifit_nlinear_trs_lm;
  params.scale = gsl_multifit_nlinear_scale_more;
  fdf.f = residual_f;
  fdf.df = residual_df;
  fdf.n = fp->obs->len;
  fdf.p = fp->n_params;
  fdf.params = fp;
  w = gsl_multifit_nlinear_alloc (gsl_multifit_nlinear_trust, &params, fdf.n, fdf.p);
  status = gsl_multifit_nlinear_init (x, &fdf, w);
  for (iter = 0; status == GSL_SUCCESS && iter < max_iterations; iter++)
    {
      if (g_cancellable_set_error_if_cancelled (cancellable, error))
        {
          gsl_multifit_nlinear_free (w);
          return FALSE;
        }
      status = gsl_multifit_nlinear_iterate (w);
      if (status == GSL_ENOPROG)
        {
          /* No step lowers chi-square any more: at the minimum to machine
           * precision. */
          status = GSL_SUCCESS;
          ok = TRUE;
          break;
        }
      if (status != GSL_SUCCESS)
        break;
      if (gsl_multifit_nlinear_test (1e-10, 1e-10, 0.0, &info, w) == GSL_SUCCESS)
        {
          ok = TRUE;
          break;
        }
    }
  *iterations += iter + 1;
  if (status == GSL_SUCCESS || ok)
    gsl_vector_memcpy (x, gsl_multifit_nlinear_position (w));
  gsl_multifit_nlinear_free (w);
  if (status != GSL_SUCCESS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                   "the fit failed: the model gave a value that is not a number "
                   "or the step could not be improved (%s)", gsl_strerror (status));
      return FALSE;
    }
  if (!ok)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                   "the fit did not converge in %d iterations", max_iterations);
      return FALSE;
    }
  for (int k = 0; k < fp->n_params; k++)
    if (!isfinite (gsl_vector_get (x, k)))
      {
        g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                     "the fit ended at a value that is not a number");
        return FALSE;
      }
  return TRUE;
}

static gboolean
kinds_mixed (const FitProblem *fp)
{
  for (guint i = 0; i < fp->obs->len; i++)
    if (g_array_index (fp->obs, Observation, i).kind == MP_FIT_RESIDUAL_MTE)
      return TRUE;
  return FALSE;
}

/* Fits with weights from the data where every point of a kind has a sigma
 * and otherwise from the scatter of that kind, re-estimated until stable
 * (for one kind this is the usual scaling by the reduced chi-square). */
static gboolean
solve_reweighted (FitProblem *fp, gsl_vector *x, const MpFitOptions *opts,
                  GCancellable *cancellable, MpFitResult *r, GError **error)
{
  double s[2] = { r->qe_scatter, r->mte_scatter_meV };

  for (int pass = 0; pass < 6; pass++)
    {
      double change = 0.0;

      set_kind_sigma (fp, MP_FIT_RESIDUAL_QE, s[MP_FIT_RESIDUAL_QE]);
      set_kind_sigma (fp, MP_FIT_RESIDUAL_MTE, s[MP_FIT_RESIDUAL_MTE]);
      if (!solve (fp, x, opts->max_iterations, cancellable, &r->iterations, error))
        return FALSE;
      for (int k = 0; k < 2; k++)
        if (!isnan (s[k]))
          {
            double s_new = kind_scatter (fp, k, gsl_vector_const_ptr (x, 0));

            s_new = MAX (s_new, 1e-12);
            change = MAX (change, fabs (s_new / s[k] - 1.0));
            s[k] = s_new;
          }
      /* With one kind of data a common weight does not move the minimum:
       * the new scatter only rescales the covariance. */
      if (change < 1e-4 || !kinds_mixed (fp))
        break;
    }
  set_kind_sigma (fp, MP_FIT_RESIDUAL_QE, s[MP_FIT_RESIDUAL_QE]);
  set_kind_sigma (fp, MP_FIT_RESIDUAL_MTE, s[MP_FIT_RESIDUAL_MTE]);
  r->qe_scatter = s[MP_FIT_RESIDUAL_QE];
  r->mte_scatter_meV = s[MP_FIT_RESIDUAL_MTE];
  return TRUE;
}

/* ---- Results -------------------------------------------------------------- */

static void
init_weights (FitProblem *fp, MpFitResult *r)
{
  r->qe_sigma_from_data = kind_has_data_sigma (fp, MP_FIT_RESIDUAL_QE);
  r->mte_sigma_from_data = kind_has_data_sigma (fp, MP_FIT_RESIDUAL_MTE);
  /* Provisional scatter where the data carry no sigma: 5 % in QE, 1 meV
   * in MTE; re-estimated from the residuals by solve_reweighted(). */
  r->qe_scatter = r->qe_sigma_from_data ? NAN : 0.05;
  r->mte_scatter_meV = r->mte_sigma_from_data || !kinds_mixed (fp) ? NAN : 1.0;
  set_kind_sigma (fp, MP_FIT_RESIDUAL_QE, r->qe_scatter);
  set_kind_sigma (fp, MP_FIT_RESIDUAL_MTE, r->mte_scatter_meV);
}

static gboolean
compute_covariance (FitProblem *fp, const gsl_vector *x, gsl_matrix *covar,
                    GError **error)
{
  gsl_matrix *jac = gsl_matrix_alloc (fp->obs->len, fp->n_params);
  gboolean ok;
  int status;

  status = residual_df (x, fp, jac);
  if (status == GSL_SUCCESS)
    status = gsl_multifit_nlinear_covar (jac, 1e-12, covar);
  if (status != GSL_SUCCESS)
    {
      gsl_matrix_free (jac);
      g_set_error (error, MP_ERROR, MP_ERROR_UNDETERMINED,
                   "the fit's covariance could not be computed (%s)",
                   gsl_strerror (status));
      return FALSE;
    }
  ok = check_covariance (fp, jac, covar, error);
  gsl_matrix_free (jac);
  return ok;
}

static void
fill_residuals (const FitProblem *fp, const double *x, MpFitResult *r)
{
  r->residuals = g_array_sized_new (FALSE, TRUE, sizeof (MpFitResidual), fp->obs->len);
  r->chi_square = 0.0;
  for (guint i = 0; i < fp->obs->len; i++)
    {
      const Observation *o = &g_array_index (fp->obs, Observation, i);
      double m = model_at (fp, o, x);
      MpFitResidual res = { 0 };

      res.kind = o->kind;
      res.temperature_K = o->temperature_K;
      res.model_temperature_K = obs_temperature_K (fp, o, x);
      res.photon_energy_eV = o->photon_energy_eV;
      res.excess_energy_eV = o->photon_energy_eV - (x[P_PHI] - fp->schottky_eV);
      res.residual = o->y - m;
      res.sigma = o->sigma;
      res.normalised_residual = res.residual / o->sigma;
      res.line = o->line;
      if (o->kind == MP_FIT_RESIDUAL_QE)
        {
          res.measured = exp (o->y);
          res.model = exp (m);
        }
      else
        {
          res.measured = o->y;
          res.model = m;
        }
      r->chi_square += res.normalised_residual * res.normalised_residual;
      g_array_append_val (r->residuals, res);
    }
}

static void
fill_result (const FitProblem *fp, const MpPlan *plan, const gsl_vector *xv,
             const gsl_matrix *covar, MpFitResult *r)
{
  const double *x = gsl_vector_const_ptr (xv, 0);
  MpEmission em;

  r->work_function_eV = x[P_PHI];
  r->work_function_sigma_eV = sqrt (gsl_matrix_get (covar, P_PHI, P_PHI));
  r->effective_work_function_eV = x[P_PHI] - fp->schottky_eV;
  r->field_MV_per_m = plan->cathode.field_MV_per_m;
  r->bandwidth_meV = plan->laser.bandwidth_meV;
  r->log_qe_scale = x[P_LOG_A];
  r->log_qe_scale_sigma = sqrt (gsl_matrix_get (covar, P_LOG_A, P_LOG_A));
  r->qe_scale = exp (x[P_LOG_A]);
  r->phi_scale_correlation = gsl_matrix_get (covar, P_PHI, P_LOG_A)
                             / (r->work_function_sigma_eV * r->log_qe_scale_sigma);
  mp_emission_averaged (plan->cathode.qe_ref_photon_energy_eV - r->effective_work_function_eV,
                        plan->cathode.qe_ref_temperature_K, fp->bandwidth_eV, &em);
  r->qe_at_reference = exp (x[P_LOG_A] + em.log_yield);
  r->n_parameters = fp->n_params;
  r->n_residuals = fp->obs->len;
  r->dof = r->n_residuals - r->n_parameters;
  fill_residuals (fp, x, r);
  r->reduced_chi_square = r->chi_square / r->dof;

  r->blocks = g_array_copy (fp->blocks);
  for (guint b = 0; b < r->blocks->len; b++)
    {
      MpFitBlock *blk = &g_array_index (r->blocks, MpFitBlock, b);
      int k = fp->u_param[b];

      if (k < 0)
        continue;
      blk->thermal_ratio = exp (x[k]);
      blk->effective_temperature_K = blk->temperature_K * blk->thermal_ratio;
      /* Delta method: T_eff = T exp(u). */
      blk->effective_temperature_sigma_K = blk->effective_temperature_K
                                           * sqrt (gsl_matrix_get (covar, k, k));
    }
}

/* Before the fit: coverage of the data at the nominal temperatures. */
static gboolean
check_data_cover (const FitProblem *fp, const gsl_vector *start, GError **error)
{
  g_autofree double *x = g_new0 (double, fp->n_params);

  x[P_PHI] = gsl_vector_get (start, P_PHI);
  x[P_LOG_A] = gsl_vector_get (start, P_LOG_A);
  return check_blocks_pin_temperature (fp, x, error) &&
         check_not_all_far_below (fp, x, error);
}

MpFitResult *
mp_fit_measured (const MpPlan *plan,
                 const MpMeasuredData *data,
                 const MpFitOptions *opts,
                 GCancellable *cancellable,
                 GError **error)
{
  FitProblem fp = { 0 };
  MpFitOptions defaults;
  g_autoptr (MpFitResult) r = NULL;
  gsl_vector *x = NULL;
  gsl_matrix *covar = NULL;
  gboolean ok;

  g_return_val_if_fail (plan != NULL, NULL);
  g_return_val_if_fail (data != NULL && data->points != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  mp_core_init ();
  if (opts == NULL)
    {
      mp_fit_options_init (&defaults);
      opts = &defaults;
    }
  if (!mp_plan_validate (plan, error))
    return NULL;
  r = g_new0 (MpFitResult, 1);
  ok = build_problem (&fp, plan, data, opts, error) &&
       check_enough_points (&fp, error);
  if (ok)
    {
      x = gsl_vector_alloc (fp.n_params);
      covar = gsl_matrix_alloc (fp.n_params, fp.n_params);
      init_weights (&fp, r);
      start_point (&fp, plan, x);
      ok = check_data_cover (&fp, x, error) &&
           solve_reweighted (&fp, x, opts, cancellable, r, error) &&
           check_temperatures_plausible (&fp, x->data, error) &&
           check_blocks_pin_temperature (&fp, x->data, error) &&
           check_not_all_far_below (&fp, x->data, error) &&
           compute_covariance (&fp, x, covar, error);
    }
  if (ok)
    fill_result (&fp, plan, x, covar, r);
  if (x != NULL)
    gsl_vector_free (x);
  if (covar != NULL)
    gsl_matrix_free (covar);
  clear_problem (&fp);
  return ok ? g_steal_pointer (&r) : NULL;
}

void
mp_fit_apply_to_plan (const MpFitResult *result, MpPlan *plan)
{
  g_return_if_fail (result != NULL);
  g_return_if_fail (plan != NULL);

  plan->cathode.work_function_eV = result->work_function_eV;
  plan->cathode.work_function_sigma_eV = result->work_function_sigma_eV;
  if (result->qe_at_reference > 0.0 && result->qe_at_reference <= 1.0)
    plan->cathode.qe_ref = result->qe_at_reference;
}
