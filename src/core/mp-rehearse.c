/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rehearse.c: Monte Carlo rehearsal of a planned shift.
 *
 * Exact sampling of the transverse-energy spectrum
 * ------------------------------------------------
 * In units of kT (t = eps/kT, x = dE/kT) the spectrum of physics.md is
 *   f(t) = F_0(x - t) / F_1(x) = ln(1 + e^(x - t)) / F_1(x),  t >= 0,
 * normalised because d F_1/dx = F_0, so that the integral of F_0(x - t)
 * over t >= 0 is F_1(x).
 *
 * Claim: T = U W, with U uniform on (0, 1) and W >= 0 of density
 *   g(w) = w / (1 + e^(w - x)) / F_1(x)
 * (the integrand of Gamma(2) F_1(x) = F_1(x)), has density f.
 * Proof: the density of U W at t is the integral over w > t of g(w) / w,
 *   (1/F_1(x)) * integral_t^inf dw / (1 + e^(w - x))
 *   = (1/F_1(x)) * ln(1 + e^(x - t)) = f(t).                      QED
 *
 * W by rejection from an envelope h >= w / (1 + e^(w - x)):
 * - x <= 0: h(w) = w e^(x - w), a Gamma(2, 1) shape, drawn as
 *   -ln(U1 U2). The acceptance ratio is 1 / (1 + e^(x - w)), which lies in
 *   [1/(1 + e^x), 1) because w >= 0. Efficiency F_1(x) e^(-x) >= F_1(0) = 0.822.
 * - x > 0: h(w) = w on [0, x] (mass x^2/2, drawn as x sqrt(U)) and
 *   w e^(x - w) beyond (mass x + 1: x + an Exp(1) deviate with weight x,
 *   x + a Gamma(2, 1) deviate with weight 1). The ratios are
 *   1/(1 + e^(w - x)) on [0, x] and 1/(1 + e^(x - w)) beyond, both >= 1/2:
 *   efficiency F_1(x) / (x^2/2 + x + 1) >= 1/2, -> 1 as x grows.
 * Every acceptance ratio has the form 1/(1 + e^(-y)) with y >= 0, and a
 * squeeze from e^y >= 1 + y + y^2/2 spares most exp() calls.
 * Rejection is exact, so the sampled spectrum has exactly the model's
 * moments kT F_2/F_1 and 2 (kT)^2 F_3/F_1 (tests/test-rehearse.c).
 *
 * Laser bandwidth: the model averages the yield and the moments over the
 * 48 Gauss-Hermite nodes of the Gaussian line (physics.md). The sampler
 * draws each electron's excess energy from those nodes with probability
 * proportional to weight x yield (Walker's alias method), then its energy
 * exactly at that node: the sampled moments are then exactly the model's
 * averaged moments. The approximation is the model's own: a 48-node
 * quadrature of the line instead of a continuous Gaussian.
 *
 * The estimator and its variance
 * ------------------------------
 * With N_s ~ Poisson(S t) signal electrons (energies eps + r, r the
 * detector's error, rms sigma_r) and N_b ~ Poisson(B t) dark counts spread
 * evenly over [0, A] (as detected: a dark count has no true energy for the
 * detector's error to blur), the estimator is the ratio
 *   MTE_hat = (sum of all energies - B t A/2) / (N_s + N_b - B t) = X / Y.
 * Compound-Poisson moments: E X = S t m, E Y = S t,
 *   Var X = S t (<eps^2> + sigma_r^2) + B t A^2/3,  Var Y = (S + B) t,
 *   Cov(X, Y) = S t m + B t A/2.
 * Delta method: Var(X/Y) = (Var X - 2 m Cov + m^2 Var Y) / (S t)^2
 *   = [S t (<eps^2> - m^2 + sigma_r^2) + B t (A^2/3 - m A + m^2)] / (S t)^2
 *   = (V + (B/S) W_b) / (S t),
 * the sigma_stat^2 of physics.md ("Counting and dwell time"). The sum of
 * the N_s detector errors is drawn as one Gaussian of variance
 * N_s sigma_r^2 (exact: the estimator uses the sum only).
 *
 * Threads and streams
 * -------------------
 * Work is cut into units of MP_REHEARSE_CHUNK trials (of one step, or of
 * the shift), a cut that does not depend on the thread count. Every trial
 * of every step draws from its own stream (seed, trial, step number), the
 * shift draws of a trial from (seed, trial, 0). Unit results are combined
 * in unit order after all threads are done, so the result is the same for
 * any number of threads. */
#include "config.h"

#include "mp-json.h"
#include "mp-rehearse.h"
#include "mp-error.h"
#include "mp-physics.h"
#include "mp-constants.h"

#include <glib/gi18n.h>
#include <math.h>
#include <string.h>

#define MP_REHEARSE_CHUNK 64
/* Nodes lighter than this share of the line's yield are left out. */
#define MP_NODE_CUTOFF 1e-16

const double mp_rehearse_percentile_levels[MP_REHEARSE_N_PERCENTILES] = {
  0.05, 0.16, 0.50, 0.84, 0.95
};

void
mp_rehearse_options_init (MpRehearseOptions *opts)
{
  g_return_if_fail (opts != NULL);

  opts->seed = 1;
  opts->trials = 1000;
  opts->threads = 1;
  opts->steps = TRUE;
  opts->shift = TRUE;
  opts->qe_scale_sigma = 0.0;
}

/* ---- Sampler ------------------------------------------------------------ */

static void
init_node (MpSamplerNode *node, double excess_eV, double kT_eV)
{
  double x = excess_eV / kT_eV;

  node->kT_eV = kT_eV;
  node->x = x;
  if (x <= 0.0)
    {
      node->p_triangle = 0.0;
      node->p_exp = 0.0;
    }
  else
    {
      double a1 = 0.5 * x * x, a2 = x + 1.0;

      node->p_triangle = a1 / (a1 + a2);
      node->p_exp = x / (x + 1.0);
    }
}

/* Walker's alias table (Vose's construction) for n weights summing to 1. */
static void
build_alias_table (MpEnergySampler *s, const double *p)
{
  int n = s->n_nodes;
  int small[MP_SAMPLER_MAX_NODES], large[MP_SAMPLER_MAX_NODES];
  int n_small = 0, n_large = 0;
  double scaled[MP_SAMPLER_MAX_NODES];

  for (int i = 0; i < n; i++)
    {
      scaled[i] = p[i] * n;
      s->alias[i] = i;
      if (scaled[i] < 1.0)
        small[n_small++] = i;
      else
        large[n_large++] = i;
    }
  while (n_small > 0 && n_large > 0)
    {
      int l = small[--n_small], g = large[--n_large];

      s->alias_prob[l] = scaled[l];
      s->alias[l] = g;
      scaled[g] = (scaled[g] + scaled[l]) - 1.0;
      if (scaled[g] < 1.0)
        small[n_small++] = g;
      else
        large[n_large++] = g;
    }
  /* What is left is 1 up to rounding. */
  while (n_large > 0)
    s->alias_prob[large[--n_large]] = 1.0;
  while (n_small > 0)
    s->alias_prob[small[--n_small]] = 1.0;
}

void
mp_energy_sampler_init (MpEnergySampler *sampler,
                        double excess_eV,
                        double temperature_K,
                        double bandwidth_eV)
{
  double kT, log_w[MP_LINE_NODES], excess[MP_LINE_NODES];
  double p[MP_LINE_NODES], top = -INFINITY, sum = 0.0;
  int n = 0, n_line;

  g_return_if_fail (sampler != NULL);
  g_return_if_fail (temperature_K > 0.0);

  memset (sampler, 0, sizeof *sampler);
  kT = mp_thermal_energy_eV (temperature_K);
  if (!(bandwidth_eV > 0.0))
    {
      sampler->n_nodes = 1;
      init_node (&sampler->node[0], excess_eV, kT);
      sampler->alias_prob[0] = 1.0;
      sampler->alias[0] = 0;
      return;
    }

  /* The model's own line quadrature (mp_emission_averaged). */
  n_line = mp_line_quadrature (excess_eV, temperature_K, bandwidth_eV, excess, log_w);
  for (int i = 0; i < n_line; i++)
    {
      MpEmission em;

      mp_emission_monochromatic (excess[i], temperature_K, &em);
      log_w[i] += em.log_yield;
      top = MAX (top, log_w[i]);
    }
  for (int i = 0; i < n_line; i++)
    sum += exp (log_w[i] - top);
  for (int i = 0; i < n_line; i++)
    {
      double share = exp (log_w[i] - top) / sum;

      if (share < MP_NODE_CUTOFF)
        continue;
      init_node (&sampler->node[n], excess[i], kT);
      p[n++] = share;
    }
  sum = 0.0;
  for (int i = 0; i < n; i++)
    sum += p[i];
  for (int i = 0; i < n; i++)
    p[i] /= sum;
  sampler->n_nodes = n;
  build_alias_table (sampler, p);
}

/* Accept with probability 1 / (1 + e^(-y)), y >= 0, given v uniform.
 * Squeeze: e^y >= 1 + y + y^2/2, so 1/(1 + e^(-y)) >= (1 + q)/(2 + q)
 * with q = y + y^2/2; exp() only runs when v falls between the two. */
static inline gboolean
accept_logistic (double v, double y)
{
  double q = y * (1.0 + 0.5 * y);

  if (v * (2.0 + q) <= 1.0 + q)
    return TRUE;
  return v * (1.0 + exp (-y)) <= 1.0;
}

#define MP_U32 (1.0 / 4294967296.0)

/* W of density proportional to w / (1 + e^(w - x)) (see the top), and
 * with it the uniform u_out for T = U W. 32-bit uniforms serve where a
 * resolution of 2^-32 is harmless (acceptance, component choice, the
 * triangle, U); the logarithms get 53 bits. */
static inline double
draw_w (const MpSamplerNode *nd, MpRng *rng, double *u_out)
{
  double x = nd->x;

  for (;;)
    {
      guint64 r1 = mp_rng_next (rng);
      double v = (r1 >> 32) * MP_U32;
      double w;

      *u_out = (r1 & 0xffffffffu) * MP_U32;
      if (x <= 0.0)
        {
          w = -log (mp_rng_uniform_pos (rng) * mp_rng_uniform_pos (rng));
          if (accept_logistic (v, w - x))
            return w;
          continue;
        }
      else
        {
          guint64 r2 = mp_rng_next (rng);
          double u = (r2 >> 32) * MP_U32;

          if (u < nd->p_triangle)
            {
              /* Density 2 w / x^2 on [0, x]: x sqrt(a), a in (0, 1]. */
              w = x * sqrt (((r2 & 0xffffffffu) + 1.0) * MP_U32);
              if (accept_logistic (v, x - w))
                return w;
              continue;
            }
          /* Given the tail, (u - p_triangle) / (1 - p_triangle) is uniform. */
          u = (u - nd->p_triangle) / (1.0 - nd->p_triangle);
          if (u < nd->p_exp)
            w = x - log (mp_rng_uniform_pos (rng));
          else
            w = x - log (mp_rng_uniform_pos (rng) * mp_rng_uniform_pos (rng));
          if (accept_logistic (v, w - x))
            return w;
        }
    }
}

static inline const MpSamplerNode *
pick_node (const MpEnergySampler *s, MpRng *rng)
{
  double u;
  int i;

  if (s->n_nodes == 1)
    return &s->node[0];
  u = (mp_rng_next (rng) >> 32) * MP_U32 * s->n_nodes;
  i = (int) u;
  if (i >= s->n_nodes)
    i = s->n_nodes - 1;
  return &s->node[(u - i) < s->alias_prob[i] ? i : s->alias[i]];
}

double
mp_energy_sampler_draw (const MpEnergySampler *sampler, MpRng *rng)
{
  const MpSamplerNode *nd = pick_node (sampler, rng);
  double u, w = draw_w (nd, rng, &u);

  return nd->kT_eV * u * w;
}

/* ---- One measurement ---------------------------------------------------- */

double
mp_rehearse_measure_once (const MpStepCounting *step,
                          const MpEnergySampler *sampler,
                          MpRng *rng,
                          gint64 *electrons)
{
  double mu_s, mu_b, sum = 0.0, denom;
  gint64 n_s, n_b;

  g_return_val_if_fail (step != NULL && sampler != NULL && rng != NULL, NAN);

  mu_s = step->signal_rate_per_s * step->dwell_s;
  mu_b = step->background_rate_per_s * step->dwell_s;
  n_s = mp_rng_poisson (rng, mu_s);
  n_b = mp_rng_poisson (rng, mu_b);
  if (sampler->n_nodes == 1)
    {
      const MpSamplerNode *nd = &sampler->node[0];

      for (gint64 i = 0; i < n_s; i++)
        {
          double u, w = draw_w (nd, rng, &u);

          sum += u * w;
        }
      sum *= nd->kT_eV;
    }
  else
    {
      for (gint64 i = 0; i < n_s; i++)
        sum += mp_energy_sampler_draw (sampler, rng);
    }
  if (step->resolution_eV > 0.0 && n_s > 0)
    sum += step->resolution_eV * sqrt ((double) n_s) * mp_rng_gaussian (rng);
  for (gint64 i = 0; i < n_b; i++)
    sum += step->acceptance_eV * mp_rng_uniform (rng);
  if (electrons != NULL)
    *electrons = n_s + n_b;
  denom = (double) (n_s + n_b) - mu_b;
  if (!(denom > 0.0))
    return NAN;
  return (sum - 0.5 * mu_b * step->acceptance_eV) / denom;
}

/* ---- The job: everything taken from plan and schedule ------------------- */

typedef struct
{
  MpStepCounting counting;
  MpEnergySampler sampler;
  double mte_model_eV;
  double target_eV;
  MpRehearseStep meta;
} StepJob;

typedef struct
{
  gboolean fixed;              /* dwell does not depend on phi */
  double photon_energy_eV;
  double temperature_K;
  double photons_times_efficiency;   /* N_ph eta per pulse at full power */
  double target_eV;
  double dwell_planned_s;
  double dwell_nominal_s;      /* recomputed at the plan's phi */
  int block;
} ShiftStep;

typedef struct
{
  int n;
  double mean;
  double m2;
  int within;
  int undefined;
} UnitStats;

typedef struct
{
  /* plan figures */
  char *plan_title;
  double phi_eV, phi_sigma_eV, schottky_eV, bandwidth_eV;
  double qe_ref, qe_ref_photon_energy_eV, qe_ref_temperature_K;
  double rep_rate_per_s, mu_max, rate_max_per_s;
  double background_per_s, acceptance_eV, resolution_eV, systematic_eV;
  double min_dwell_s, max_dwell_s;
  double planned_beam_time_h, beam_time_available_h;
  double planned_cryogen_L, cryogen_available_L;
  MpRehearseOptions opts;

  GArray *steps;               /* StepJob */
  GArray *shift_steps;         /* ShiftStep */
  GArray *block_hold_L_per_h;  /* double, one per schedule block */

  /* work */
  int n_chunks;
  int n_step_units;
  int n_units;
  double *unit_cost;
  double total_cost;
  UnitStats *unit_stats;       /* n_step_units */
  double *trial_time_h;        /* trials */
  double *trial_cryogen_L;     /* trials */

  gint next_unit;              /* atomic */
  gint64 done_cost;            /* atomic, in cost units */
  GCancellable *cancellable;
  GMutex lock;
  GCond cond;
  int workers_left;
} Job;

static void
job_free (Job *job)
{
  if (job == NULL)
    return;
  g_free (job->plan_title);
  g_clear_pointer (&job->steps, g_array_unref);
  g_clear_pointer (&job->shift_steps, g_array_unref);
  g_clear_pointer (&job->block_hold_L_per_h, g_array_unref);
  g_free (job->unit_cost);
  g_free (job->unit_stats);
  g_free (job->trial_time_h);
  g_free (job->trial_cryogen_L);
  g_clear_object (&job->cancellable);
  g_mutex_clear (&job->lock);
  g_cond_clear (&job->cond);
  g_free (job);
}

G_DEFINE_AUTOPTR_CLEANUP_FUNC (Job, job_free)

static gboolean
check_options (const MpRehearseOptions *opts, GError **error)
{
  if (opts->trials < 1 || opts->trials > MP_REHEARSE_MAX_TRIALS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("trials: expected 1 to %d, found %d"),
                   MP_REHEARSE_MAX_TRIALS, opts->trials);
      return FALSE;
    }
  if (opts->threads < 1 || opts->threads > MP_REHEARSE_MAX_THREADS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("threads: expected 1 to %d, found %d"),
                   MP_REHEARSE_MAX_THREADS, opts->threads);
      return FALSE;
    }
  if (!(opts->qe_scale_sigma >= 0.0 && opts->qe_scale_sigma <= 3.0))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("QE scale sigma: expected 0 to 3 (natural log), found %g"),
                   opts->qe_scale_sigma);
      return FALSE;
    }
  return TRUE;
}

static double
hold_rate_for (const MpPlan *plan, double temperature_K)
{
  for (guint i = 0; plan->temperatures != NULL && i < plan->temperatures->len; i++)
    {
      const MpTemperatureBlock *b = &g_array_index (plan->temperatures,
                                                    MpTemperatureBlock, i);

      if (fabs (b->temperature_K - temperature_K) < 1e-9)
        return b->hold_L_per_h;
    }
  return 0.0;
}

static void
add_step_job (Job *job, const MpStep *st)
{
  StepJob sj = { 0 };
  MpEmission em;
  double v;

  sj.counting.excess_energy_eV = st->excess_energy_eV;
  sj.counting.temperature_K = st->temperature_K;
  sj.counting.bandwidth_eV = job->bandwidth_eV;
  sj.counting.signal_rate_per_s = st->signal_rate_per_s;
  sj.counting.background_rate_per_s = job->background_per_s;
  sj.counting.dwell_s = st->dwell_s;
  sj.counting.acceptance_eV = job->acceptance_eV;
  sj.counting.resolution_eV = job->resolution_eV;
  mp_energy_sampler_init (&sj.sampler, st->excess_energy_eV, st->temperature_K,
                          job->bandwidth_eV);
  mp_emission_averaged (st->excess_energy_eV, st->temperature_K, job->bandwidth_eV, &em);
  sj.mte_model_eV = em.mte_eV;
  sj.target_eV = st->target_sigma_meV * 1e-3;
  v = mp_variance_per_electron_eV2 (&em, job->resolution_eV, st->signal_rate_per_s,
                                    job->background_per_s, job->acceptance_eV);

  sj.meta.index = st->index;
  sj.meta.temperature_K = st->temperature_K;
  sj.meta.photon_energy_eV = st->photon_energy_eV;
  sj.meta.excess_energy_eV = st->excess_energy_eV;
  sj.meta.dwell_s = st->dwell_s;
  sj.meta.signal_rate_per_s = st->signal_rate_per_s;
  sj.meta.mean_signal_electrons = st->signal_rate_per_s * st->dwell_s;
  sj.meta.mte_model_meV = 1e3 * em.mte_eV;
  sj.meta.target_sigma_meV = st->target_sigma_meV;
  sj.meta.predicted_sigma_meV = 1e3 * mp_statistical_sigma_eV (v, st->signal_rate_per_s,
                                                               st->dwell_s);
  g_array_append_val (job->steps, sj);
}

/* Signal rate and dwell of one step for a drawn phi_eff and QE scale;
 * log_yield_ref is ln <Y> at the QE reference point for that phi_eff. */
static double
recompute_dwell_s (const Job *job, const ShiftStep *sh, double phi_eff_eV,
                   double log_yield_ref, double qe_scale)
{
  MpEmission em;
  double qe, mu, rate, v, t_req;

  mp_emission_averaged (sh->photon_energy_eV - phi_eff_eV, sh->temperature_K,
                        job->bandwidth_eV, &em);
  qe = job->qe_ref * qe_scale * exp (em.log_yield - log_yield_ref);
  mu = MIN (qe * sh->photons_times_efficiency, job->mu_max);
  mu = MIN (mu, job->rate_max_per_s / job->rep_rate_per_s);
  rate = mu * job->rep_rate_per_s;
  v = mp_variance_per_electron_eV2 (&em, job->resolution_eV, rate,
                                    job->background_per_s, job->acceptance_eV);
  t_req = mp_required_dwell_s (v, rate, sh->target_eV, job->systematic_eV);
  if (isnan (t_req))
    t_req = INFINITY;
  return CLAMP (t_req, job->min_dwell_s, job->max_dwell_s);
}

static double
log_yield_at_reference (const Job *job, double phi_eff_eV)
{
  MpEmission ref;

  mp_emission_averaged (job->qe_ref_photon_energy_eV - phi_eff_eV,
                        job->qe_ref_temperature_K, job->bandwidth_eV, &ref);
  return ref.log_yield;
}

static void
add_shift_step (Job *job, const MpPlan *plan, const MpStep *st, int block)
{
  ShiftStep sh = { 0 };
  double pulse_uJ;

  sh.photon_energy_eV = st->photon_energy_eV;
  sh.temperature_K = st->temperature_K;
  sh.target_eV = st->target_sigma_meV * 1e-3;
  sh.dwell_planned_s = st->dwell_s;
  sh.block = block;
  sh.fixed = st->kind != MP_STEP_KIND_MTE || st->done
             || st->status == MP_STEP_UNREACHABLE
             || !(sh.target_eV > 0.0)
             || !mp_laser_pulse_energy_uJ (&plan->laser, st->wavelength_nm, &pulse_uJ, NULL);
  if (!sh.fixed)
    {
      /* physics.md: N_ph = U / (E e); detected at full power: QE N_ph eta. */
      sh.photons_times_efficiency = pulse_uJ * 1e-6 / (st->photon_energy_eV * MP_E_CHARGE_C)
                                    * plan->detector.efficiency;
      sh.dwell_nominal_s = recompute_dwell_s (job, &sh, job->phi_eV - job->schottky_eV,
                                              log_yield_at_reference (job, job->phi_eV - job->schottky_eV),
                                              1.0);
    }
  g_array_append_val (job->shift_steps, sh);
}

static double
unit_cost_for_steps (const StepJob *sj, int n_trials)
{
  return n_trials * (sj->meta.mean_signal_electrons
                     + sj->counting.background_rate_per_s * sj->counting.dwell_s + 100.0);
}

static void
plan_units (Job *job)
{
  int trials = job->opts.trials;
  int n_shift_units;

  job->n_chunks = (trials + MP_REHEARSE_CHUNK - 1) / MP_REHEARSE_CHUNK;
  job->n_step_units = job->opts.steps ? (int) job->steps->len * job->n_chunks : 0;
  n_shift_units = job->opts.shift ? job->n_chunks : 0;
  job->n_units = job->n_step_units + n_shift_units;
  job->unit_cost = g_new0 (double, MAX (job->n_units, 1));
  job->unit_stats = g_new0 (UnitStats, MAX (job->n_step_units, 1));
  if (job->opts.shift)
    {
      job->trial_time_h = g_new0 (double, trials);
      job->trial_cryogen_L = g_new0 (double, trials);
    }
  job->total_cost = 0.0;
  for (int u = 0; u < job->n_units; u++)
    {
      int chunk = u % job->n_chunks;
      int n = MIN (MP_REHEARSE_CHUNK, trials - chunk * MP_REHEARSE_CHUNK);

      if (u < job->n_step_units)
        job->unit_cost[u] = unit_cost_for_steps (&g_array_index (job->steps, StepJob,
                                                                 u / job->n_chunks), n);
      else
        job->unit_cost[u] = n * (100.0 + 5000.0 * job->shift_steps->len);
      job->total_cost += job->unit_cost[u];
    }
}

static Job *
prepare_job (const MpPlan *plan, const MpSchedule *schedule,
             const MpRehearseOptions *opts, GCancellable *cancellable,
             GError **error)
{
  g_autoptr (Job) job = g_new0 (Job, 1);

  g_mutex_init (&job->lock);
  g_cond_init (&job->cond);
  if (!check_options (opts, error))
    return NULL;
  mp_core_init ();

  job->opts = *opts;
  job->cancellable = cancellable != NULL ? g_object_ref (cancellable) : NULL;
  job->plan_title = g_strdup (schedule->plan_title != NULL ? schedule->plan_title
                                                           : plan->title);
  job->phi_eV = plan->cathode.work_function_eV;
  job->phi_sigma_eV = plan->cathode.work_function_sigma_eV;
  job->schottky_eV = mp_schottky_lowering_eV (plan->cathode.field_MV_per_m);
  job->bandwidth_eV = plan->laser.bandwidth_meV * 1e-3;
  job->qe_ref = plan->cathode.qe_ref;
  job->qe_ref_photon_energy_eV = plan->cathode.qe_ref_photon_energy_eV;
  job->qe_ref_temperature_K = plan->cathode.qe_ref_temperature_K;
  job->rep_rate_per_s = plan->laser.repetition_rate_kHz * 1e3;
  job->mu_max = plan->detector.max_electrons_per_pulse;
  job->rate_max_per_s = plan->detector.max_rate_per_s;
  job->background_per_s = plan->detector.dark_rate_per_s;
  job->acceptance_eV = plan->detector.acceptance_meV * 1e-3;
  job->resolution_eV = plan->detector.resolution_meV * 1e-3;
  job->systematic_eV = plan->detector.systematic_meV * 1e-3;
  job->min_dwell_s = plan->scan.min_dwell_s;
  job->max_dwell_s = plan->scan.max_dwell_s;
  job->planned_beam_time_h = schedule->beam_time_h;
  job->beam_time_available_h = schedule->beam_time_available_h;
  job->planned_cryogen_L = schedule->cryogen_L;
  job->cryogen_available_L = schedule->cryogen_available_L;

  if (!(job->rep_rate_per_s > 0.0) || !(job->qe_ref_temperature_K > 0.0))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("laser.repetition_rate_kHz and the QE reference temperature must be > 0"));
      return NULL;
    }

  job->steps = g_array_new (FALSE, FALSE, sizeof (StepJob));
  job->shift_steps = g_array_new (FALSE, FALSE, sizeof (ShiftStep));
  job->block_hold_L_per_h = g_array_new (FALSE, FALSE, sizeof (double));
  for (guint b = 0; schedule->blocks != NULL && b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);
      double hold = hold_rate_for (plan, block->temperature_K);

      g_array_append_val (job->block_hold_L_per_h, hold);
      for (guint i = 0; block->steps != NULL && i < block->steps->len; i++)
        {
          const MpStep *st = &g_array_index (block->steps, MpStep, i);

          if (st->kind == MP_STEP_KIND_MTE && st->status != MP_STEP_UNREACHABLE
              && !st->done && st->dwell_s > 0.0 && st->signal_rate_per_s > 0.0
              && st->temperature_K > 0.0)
            add_step_job (job, st);
          if (opts->shift)
            add_shift_step (job, plan, st, (int) b);
        }
    }
  plan_units (job);
  return g_steal_pointer (&job);
}

/* ---- Work units --------------------------------------------------------- */

static gboolean
job_cancelled (Job *job)
{
  return job->cancellable != NULL && g_cancellable_is_cancelled (job->cancellable);
}

static void
run_step_unit (Job *job, int u)
{
  const StepJob *sj = &g_array_index (job->steps, StepJob, u / job->n_chunks);
  int step_number = u / job->n_chunks + 1;
  int first = (u % job->n_chunks) * MP_REHEARSE_CHUNK;
  int last = MIN (first + MP_REHEARSE_CHUNK, job->opts.trials);
  UnitStats *st = &job->unit_stats[u];

  memset (st, 0, sizeof *st);
  for (int trial = first; trial < last; trial++)
    {
      MpRng rng;
      double est, d, delta;

      if (job_cancelled (job))
        return;
      mp_rng_init_stream (&rng, job->opts.seed, (guint64) trial, (guint64) step_number);
      est = mp_rehearse_measure_once (&sj->counting, &sj->sampler, &rng, NULL);
      if (isnan (est))
        {
          st->undefined++;
          continue;
        }
      d = est - sj->mte_model_eV;
      /* Welford's running mean and sum of squared deviations. */
      st->n++;
      delta = d - st->mean;
      st->mean += delta / st->n;
      st->m2 += delta * (d - st->mean);
      if (fabs (d) <= sj->target_eV)
        st->within++;
    }
}

static void
run_shift_trial (Job *job, int trial, double *block_delta_s)
{
  MpRng rng;
  double z_phi, z_qe, phi_eff, log_ref, scale, total_s = 0.0, cryo = 0.0;
  guint n_blocks = job->block_hold_L_per_h->len;

  mp_rng_init_stream (&rng, job->opts.seed, (guint64) trial, 0);
  z_phi = mp_rng_gaussian (&rng);
  z_qe = mp_rng_gaussian (&rng);
  phi_eff = job->phi_eV + job->phi_sigma_eV * z_phi - job->schottky_eV;
  /* Log-normal QE scale with median 1: the planned QE is the best guess
   * of ln QE. */
  scale = exp (job->opts.qe_scale_sigma * z_qe);
  log_ref = log_yield_at_reference (job, phi_eff);
  memset (block_delta_s, 0, n_blocks * sizeof (double));
  for (guint k = 0; k < job->shift_steps->len; k++)
    {
      const ShiftStep *sh = &g_array_index (job->shift_steps, ShiftStep, k);
      double delta;

      if (sh->fixed)
        continue;
      delta = recompute_dwell_s (job, sh, phi_eff, log_ref, scale) - sh->dwell_nominal_s;
      block_delta_s[sh->block] += delta;
      total_s += delta;
    }
  for (guint b = 0; b < n_blocks; b++)
    cryo += g_array_index (job->block_hold_L_per_h, double, b) * block_delta_s[b] / 3600.0;
  job->trial_time_h[trial] = job->planned_beam_time_h + total_s / 3600.0;
  job->trial_cryogen_L[trial] = job->planned_cryogen_L + cryo;
}

static void
run_shift_unit (Job *job, int u)
{
  int chunk = u - job->n_step_units;
  int first = chunk * MP_REHEARSE_CHUNK;
  int last = MIN (first + MP_REHEARSE_CHUNK, job->opts.trials);
  g_autofree double *block_delta_s = g_new0 (double, MAX (job->block_hold_L_per_h->len, 1));

  for (int trial = first; trial < last; trial++)
    {
      if (job_cancelled (job))
        return;
      run_shift_trial (job, trial, block_delta_s);
    }
}

static void
worker_func (gpointer data, gpointer user_data)
{
  Job *job = user_data;

  for (;;)
    {
      int u = g_atomic_int_add (&job->next_unit, 1);

      if (u >= job->n_units || job_cancelled (job))
        break;
      if (u < job->n_step_units)
        run_step_unit (job, u);
      else
        run_shift_unit (job, u);
      g_mutex_lock (&job->lock);
      job->done_cost += (gint64) job->unit_cost[u];
      g_cond_signal (&job->cond);
      g_mutex_unlock (&job->lock);
    }
  g_mutex_lock (&job->lock);
  job->workers_left--;
  g_cond_signal (&job->cond);
  g_mutex_unlock (&job->lock);
}

static gboolean
run_workers (Job *job, MpRehearseProgress progress, gpointer progress_data,
             GError **error)
{
  GThreadPool *pool;
  int n_workers = MIN (job->opts.threads, MAX (job->n_units, 1));
  gint64 last_report = 0;

  job->workers_left = n_workers;
  pool = g_thread_pool_new (worker_func, job, n_workers, FALSE, error);
  if (pool == NULL)
    return FALSE;
  for (int i = 0; i < n_workers; i++)
    g_thread_pool_push (pool, GINT_TO_POINTER (i + 1), NULL);

  g_mutex_lock (&job->lock);
  while (job->workers_left > 0)
    {
      gint64 now = g_get_monotonic_time ();

      g_cond_wait_until (&job->cond, &job->lock, now + 100 * G_TIME_SPAN_MILLISECOND);
      if (progress != NULL && g_get_monotonic_time () - last_report > 50 * G_TIME_SPAN_MILLISECOND)
        {
          double fraction = job->total_cost > 0.0 ? job->done_cost / job->total_cost : 1.0;

          last_report = g_get_monotonic_time ();
          g_mutex_unlock (&job->lock);
          progress (MIN (fraction, 1.0), progress_data);
          g_mutex_lock (&job->lock);
        }
    }
  g_mutex_unlock (&job->lock);
  g_thread_pool_free (pool, FALSE, TRUE);

  if (g_cancellable_set_error_if_cancelled (job->cancellable, error))
    return FALSE;
  if (progress != NULL)
    progress (1.0, progress_data);
  return TRUE;
}

/* ---- Combining ---------------------------------------------------------- */

static void
combine_step (const Job *job, int s, MpRehearseStep *out)
{
  int n = 0, within = 0, undefined = 0;
  double mean = 0.0, m2 = 0.0;

  for (int c = 0; c < job->n_chunks; c++)
    {
      const UnitStats *st = &job->unit_stats[s * job->n_chunks + c];
      int n_ab = n + st->n;
      double delta;

      undefined += st->undefined;
      within += st->within;
      if (st->n == 0)
        continue;
      /* Chan, Golub & LeVeque's pairwise update of mean and M2. */
      delta = st->mean - mean;
      mean += delta * st->n / n_ab;
      m2 += st->m2 + delta * delta * ((double) n * st->n / n_ab);
      n = n_ab;
    }
  out->mte_bias_meV = n > 0 ? 1e3 * mean : NAN;
  out->mte_spread_meV = n > 1 ? 1e3 * sqrt (m2 / (n - 1)) : NAN;
  out->mte_bias_standard_error_meV = n > 1 ? out->mte_spread_meV / sqrt (n) : NAN;
  out->fraction_within_target = (double) within / job->opts.trials;
  out->undefined_trials = undefined;
}

static int
compare_doubles (gconstpointer a, gconstpointer b)
{
  double x = *(const double *) a, y = *(const double *) b;

  return (x > y) - (x < y);
}

/* Percentile by linear interpolation between order statistics
 * (Hyndman & Fan 1996, definition 7). */
static double
percentile_sorted (const double *sorted, int n, double level)
{
  double h = (n - 1) * level;
  int lo = (int) floor (h);

  if (lo >= n - 1)
    return sorted[n - 1];
  return sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]);
}

static void
combine_shift (const Job *job, MpRehearsal *r)
{
  int trials = job->opts.trials;
  int in_time = 0, in_cryo = 0, in_both = 0;
  g_autofree double *sorted = g_new (double, trials);
  /* A plan exactly at its budget should not count as over it by rounding. */
  double time_limit = job->beam_time_available_h * (1.0 + 1e-12);
  double cryo_limit = job->cryogen_available_L * (1.0 + 1e-12) + 1e-12;

  r->has_shift = TRUE;
  r->work_function_eV = job->phi_eV;
  r->work_function_sigma_eV = job->phi_sigma_eV;
  r->planned_beam_time_h = job->planned_beam_time_h;
  r->beam_time_available_h = job->beam_time_available_h;
  r->planned_cryogen_L = job->planned_cryogen_L;
  r->cryogen_available_L = job->cryogen_available_L;
  g_array_append_vals (r->beam_time_h, job->trial_time_h, trials);
  g_array_append_vals (r->cryogen_L, job->trial_cryogen_L, trials);
  for (int i = 0; i < trials; i++)
    {
      gboolean t_ok = job->trial_time_h[i] <= time_limit;
      gboolean c_ok = job->trial_cryogen_L[i] <= cryo_limit;

      in_time += t_ok;
      in_cryo += c_ok;
      in_both += t_ok && c_ok;
    }
  r->probability_within_beam_time = (double) in_time / trials;
  r->probability_within_cryogen = (double) in_cryo / trials;
  r->probability_within_both = (double) in_both / trials;

  memcpy (sorted, job->trial_time_h, trials * sizeof (double));
  qsort (sorted, trials, sizeof (double), compare_doubles);
  for (int p = 0; p < MP_REHEARSE_N_PERCENTILES; p++)
    r->beam_time_h_percentiles[p] = percentile_sorted (sorted, trials,
                                                       mp_rehearse_percentile_levels[p]);
  memcpy (sorted, job->trial_cryogen_L, trials * sizeof (double));
  qsort (sorted, trials, sizeof (double), compare_doubles);
  for (int p = 0; p < MP_REHEARSE_N_PERCENTILES; p++)
    r->cryogen_L_percentiles[p] = percentile_sorted (sorted, trials,
                                                     mp_rehearse_percentile_levels[p]);
}

static MpRehearsal *
combine_results (const Job *job)
{
  MpRehearsal *r = g_new0 (MpRehearsal, 1);

  r->plan_title = g_strdup (job->plan_title);
  r->seed = job->opts.seed;
  r->trials = job->opts.trials;
  r->qe_scale_sigma = job->opts.qe_scale_sigma;
  r->steps = g_array_new (FALSE, FALSE, sizeof (MpRehearseStep));
  r->beam_time_h = g_array_new (FALSE, FALSE, sizeof (double));
  r->cryogen_L = g_array_new (FALSE, FALSE, sizeof (double));
  if (job->opts.steps)
    for (guint s = 0; s < job->steps->len; s++)
      {
        MpRehearseStep out = g_array_index (job->steps, StepJob, s).meta;

        combine_step (job, (int) s, &out);
        g_array_append_val (r->steps, out);
      }
  if (job->opts.shift)
    combine_shift (job, r);
  return r;
}

static MpRehearsal *
run_job (Job *job, MpRehearseProgress progress, gpointer progress_data, GError **error)
{
  if (!run_workers (job, progress, progress_data, error))
    return NULL;
  return combine_results (job);
}

MpRehearsal *
mp_rehearse_run (const MpPlan *plan,
                 const MpSchedule *schedule,
                 const MpRehearseOptions *opts,
                 MpRehearseProgress progress,
                 gpointer progress_data,
                 GCancellable *cancellable,
                 GError **error)
{
  g_autoptr (Job) job = NULL;

  g_return_val_if_fail (plan != NULL, NULL);
  g_return_val_if_fail (schedule != NULL, NULL);
  g_return_val_if_fail (opts != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  job = prepare_job (plan, schedule, opts, cancellable, error);
  if (job == NULL)
    return NULL;
  return run_job (job, progress, progress_data, error);
}

/* ---- Asynchronous variant ----------------------------------------------- */

typedef struct
{
  Job *job;
  MpRehearseProgress progress;
  gpointer progress_data;
  GMainContext *context;
} AsyncData;

typedef struct
{
  MpRehearseProgress progress;
  gpointer progress_data;
  double fraction;
} ProgressMessage;

static void
async_data_free (gpointer data)
{
  AsyncData *ad = data;

  job_free (ad->job);
  if (ad->context != NULL)
    g_main_context_unref (ad->context);
  g_free (ad);
}

static gboolean
deliver_progress_cb (gpointer data)
{
  ProgressMessage *msg = data;

  msg->progress (msg->fraction, msg->progress_data);
  return G_SOURCE_REMOVE;
}

static void
forward_progress_cb (double fraction, gpointer user_data)
{
  AsyncData *ad = user_data;
  ProgressMessage *msg = g_new (ProgressMessage, 1);

  msg->progress = ad->progress;
  msg->progress_data = ad->progress_data;
  msg->fraction = fraction;
  g_main_context_invoke_full (ad->context, G_PRIORITY_DEFAULT, deliver_progress_cb,
                              msg, g_free);
}

static void
rehearse_thread (GTask *task, gpointer source, gpointer task_data,
                 GCancellable *cancellable)
{
  AsyncData *ad = task_data;
  GError *error = NULL;
  MpRehearsal *r;

  r = run_job (ad->job, ad->progress != NULL ? forward_progress_cb : NULL, ad, &error);
  if (r == NULL)
    g_task_return_error (task, error);
  else
    g_task_return_pointer (task, r, (GDestroyNotify) mp_rehearsal_free);
}

void
mp_rehearse_run_async (const MpPlan *plan,
                       const MpSchedule *schedule,
                       const MpRehearseOptions *opts,
                       MpRehearseProgress progress,
                       gpointer progress_data,
                       GCancellable *cancellable,
                       GAsyncReadyCallback callback,
                       gpointer user_data)
{
  g_autoptr (GTask) task = NULL;
  GError *error = NULL;
  AsyncData *ad;
  Job *job;

  g_return_if_fail (plan != NULL && schedule != NULL && opts != NULL);

  task = g_task_new (NULL, cancellable, callback, user_data);
  g_task_set_source_tag (task, mp_rehearse_run_async);
  g_task_set_return_on_cancel (task, FALSE);
  job = prepare_job (plan, schedule, opts, cancellable, &error);
  if (job == NULL)
    {
      g_task_return_error (task, error);
      return;
    }
  ad = g_new0 (AsyncData, 1);
  ad->job = job;
  ad->progress = progress;
  ad->progress_data = progress_data;
  ad->context = g_main_context_ref_thread_default ();
  g_task_set_task_data (task, ad, async_data_free);
  g_task_run_in_thread (task, rehearse_thread);
}

MpRehearsal *
mp_rehearse_run_finish (GAsyncResult *result, GError **error)
{
  g_return_val_if_fail (g_task_is_valid (result, NULL), NULL);

  return g_task_propagate_pointer (G_TASK (result), error);
}

void
mp_rehearsal_free (MpRehearsal *rehearsal)
{
  if (rehearsal == NULL)
    return;
  g_free (rehearsal->plan_title);
  g_clear_pointer (&rehearsal->steps, g_array_unref);
  g_clear_pointer (&rehearsal->beam_time_h, g_array_unref);
  g_clear_pointer (&rehearsal->cryogen_L, g_array_unref);
  g_free (rehearsal);
}

/* ---- JSON --------------------------------------------------------------- */

static void
add_step_json (JsonBuilder *b, const MpRehearseStep *s)
{
  json_builder_begin_object (b);
  mp_json_add_int (b, "index", s->index);
  mp_json_add_number (b, "temperature_K", s->temperature_K);
  mp_json_add_number (b, "photon_energy_eV", s->photon_energy_eV);
  mp_json_add_number (b, "excess_energy_eV", s->excess_energy_eV);
  mp_json_add_number (b, "dwell_s", s->dwell_s);
  mp_json_add_number (b, "mean_signal_electrons", s->mean_signal_electrons);
  mp_json_add_number (b, "mte_model_meV", s->mte_model_meV);
  mp_json_add_number (b, "target_sigma_meV", s->target_sigma_meV);
  mp_json_add_number (b, "predicted_sigma_meV", s->predicted_sigma_meV);
  mp_json_add_number (b, "mte_bias_meV", s->mte_bias_meV);
  mp_json_add_number (b, "mte_bias_standard_error_meV", s->mte_bias_standard_error_meV);
  mp_json_add_number (b, "mte_spread_meV", s->mte_spread_meV);
  mp_json_add_number (b, "fraction_within_target", s->fraction_within_target);
  mp_json_add_int (b, "undefined_trials", s->undefined_trials);
  json_builder_end_object (b);
}

static void
add_percentiles (JsonBuilder *b, const char *name, const double *values)
{
  json_builder_set_member_name (b, name);
  json_builder_begin_object (b);
  for (int p = 0; p < MP_REHEARSE_N_PERCENTILES; p++)
    {
      char key[8];

      g_snprintf (key, sizeof key, "p%d",
                  (int) lround (100.0 * mp_rehearse_percentile_levels[p]));
      mp_json_add_number (b, key, values[p]);
    }
  json_builder_end_object (b);
}

static void
add_shift_json (JsonBuilder *b, const MpRehearsal *r)
{
  json_builder_set_member_name (b, "shift");
  json_builder_begin_object (b);
  mp_json_add_number (b, "work_function_eV", r->work_function_eV);
  mp_json_add_number (b, "work_function_sigma_eV", r->work_function_sigma_eV);
  mp_json_add_number (b, "planned_beam_time_h", r->planned_beam_time_h);
  mp_json_add_number (b, "beam_time_available_h", r->beam_time_available_h);
  mp_json_add_number (b, "planned_cryogen_L", r->planned_cryogen_L);
  mp_json_add_number (b, "cryogen_available_L", r->cryogen_available_L);
  mp_json_add_number (b, "probability_within_beam_time", r->probability_within_beam_time);
  mp_json_add_number (b, "probability_within_cryogen", r->probability_within_cryogen);
  mp_json_add_number (b, "probability_within_both", r->probability_within_both);
  add_percentiles (b, "beam_time_h_percentiles", r->beam_time_h_percentiles);
  add_percentiles (b, "cryogen_L_percentiles", r->cryogen_L_percentiles);
  json_builder_end_object (b);
}

JsonNode *
mp_rehearsal_to_json (const MpRehearsal *r)
{
  g_autoptr (JsonBuilder) b = json_builder_new ();

  g_return_val_if_fail (r != NULL, NULL);

  json_builder_begin_object (b);
  json_builder_set_member_name (b, "plan_title");
  json_builder_add_string_value (b, r->plan_title != NULL ? r->plan_title : "");
  mp_json_add_int (b, "seed", (gint64) r->seed);
  mp_json_add_int (b, "trials", r->trials);
  mp_json_add_number (b, "qe_scale_sigma", r->qe_scale_sigma);
  json_builder_set_member_name (b, "steps");
  json_builder_begin_array (b);
  for (guint i = 0; i < r->steps->len; i++)
    add_step_json (b, &g_array_index (r->steps, MpRehearseStep, i));
  json_builder_end_array (b);
  if (r->has_shift)
    add_shift_json (b, r);
  json_builder_end_object (b);
  return json_builder_get_root (b);
}
