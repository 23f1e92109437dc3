/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rehearse.h: a Monte Carlo rehearsal of a planned shift.
 *
 * Two questions, answered by simulation before the shift:
 * - counting noise: for each planned MTE step, draw the electrons the step
 *   would really record (Poisson signal and dark counts, each signal
 *   electron's transverse energy from the model spectrum, the detector's
 *   error) and apply the background-subtracted MTE estimator; report its
 *   bias, spread and how often it lands within the target;
 * - work-function risk: draw the work function (and optionally a QE scale)
 *   and recompute the dwell every planned step would need for its planned
 *   target; report the odds of finishing within beam time and cryogen.
 *
 * Results depend only on the plan, the schedule, the seed and the number
 * of trials: never on the number of threads. */
#pragma once

#include <gio/gio.h>

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-rng.h"
#include "mp-schedule.h"

G_BEGIN_DECLS

#define MP_REHEARSE_MAX_TRIALS 1000000
#define MP_REHEARSE_MAX_THREADS 64
#define MP_REHEARSE_N_PERCENTILES 5

/* The percentiles reported for the shift totals: 5, 16, 50, 84, 95. */
extern const double mp_rehearse_percentile_levels[MP_REHEARSE_N_PERCENTILES];

typedef struct
{
  guint64 seed;
  int trials;                  /* 1 .. MP_REHEARSE_MAX_TRIALS */
  int threads;                 /* 1 .. MP_REHEARSE_MAX_THREADS */
  gboolean steps;              /* simulate the counting of every step */
  gboolean shift;              /* simulate the work-function risk */
  double qe_scale_sigma;       /* sigma of ln(QE scale); 0 = QE as planned */
} MpRehearseOptions;

void mp_rehearse_options_init (MpRehearseOptions *opts);

/* ---- Sampling the transverse-energy spectrum ---------------------------
 * n(eps) proportional to F_0((dE - eps)/kT) on eps >= 0, exactly (see
 * mp-rehearse.c for the construction and the proof). With a laser
 * bandwidth the excess energy of each electron is drawn from the
 * yield-weighted Gauss-Hermite nodes the model averages over, so the
 * sampled moments are the model's averaged moments. */

#define MP_SAMPLER_MAX_NODES MP_LINE_NODES

typedef struct
{
  double kT_eV;
  double x;                    /* excess / kT */
  double p_triangle;           /* x > 0: weight of the part w <= x */
  double p_exp;                /* x > 0: weight of the exponential tail */
} MpSamplerNode;

typedef struct
{
  int n_nodes;
  MpSamplerNode node[MP_SAMPLER_MAX_NODES];
  double alias_prob[MP_SAMPLER_MAX_NODES];   /* Walker alias table */
  int alias[MP_SAMPLER_MAX_NODES];
} MpEnergySampler;

void mp_energy_sampler_init (MpEnergySampler *sampler,
                             double excess_eV,
                             double temperature_K,
                             double bandwidth_eV);
/* One transverse energy, eV. */
double mp_energy_sampler_draw (const MpEnergySampler *sampler, MpRng *rng);

/* ---- One step ---------------------------------------------------------- */

typedef struct
{
  double excess_energy_eV;
  double temperature_K;
  double bandwidth_eV;
  double signal_rate_per_s;
  double background_rate_per_s;
  double dwell_s;
  double acceptance_eV;
  double resolution_eV;
} MpStepCounting;

/* One simulated measurement: MTE_hat in eV, NAN when the background
 * subtraction leaves no signal (N_total <= B t). electrons receives the
 * number of electrons drawn (may be NULL). */
double mp_rehearse_measure_once (const MpStepCounting *step,
                                 const MpEnergySampler *sampler,
                                 MpRng *rng,
                                 gint64 *electrons);

/* ---- Results ----------------------------------------------------------- */

typedef struct
{
  int index;                   /* the schedule's step index */
  double temperature_K;
  double photon_energy_eV;
  double excess_energy_eV;
  double dwell_s;
  double signal_rate_per_s;
  double mean_signal_electrons;        /* S t */
  double mte_model_meV;                /* model <eps>, no extra term */
  double target_sigma_meV;
  double predicted_sigma_meV;          /* spec sigma_stat */
  double mte_bias_meV;                 /* mean of MTE_hat - MTE_model */
  double mte_bias_standard_error_meV;
  double mte_spread_meV;               /* standard deviation of MTE_hat */
  double fraction_within_target;       /* |MTE_hat - MTE_model| <= target */
  int undefined_trials;                /* no signal left after subtraction */
} MpRehearseStep;

typedef struct
{
  char *plan_title;
  guint64 seed;
  int trials;
  double qe_scale_sigma;

  GArray *steps;               /* MpRehearseStep; empty without steps */

  gboolean has_shift;
  double work_function_eV;
  double work_function_sigma_eV;
  double planned_beam_time_h;
  double beam_time_available_h;
  double planned_cryogen_L;
  double cryogen_available_L;
  double probability_within_beam_time;
  double probability_within_cryogen;
  double probability_within_both;
  double beam_time_h_percentiles[MP_REHEARSE_N_PERCENTILES];
  double cryogen_L_percentiles[MP_REHEARSE_N_PERCENTILES];
  GArray *beam_time_h;         /* double, one per trial, trial order */
  GArray *cryogen_L;           /* double, one per trial, trial order */
} MpRehearsal;

/* fraction in [0, 1]; called from the thread that runs the rehearsal. */
typedef void (*MpRehearseProgress) (double fraction, gpointer user_data);

/* Runs the rehearsal of schedule (computed from plan) on opts->threads
 * worker threads and waits for it. Errors: MP_ERROR_INVALID for bad
 * options, G_IO_ERROR_CANCELLED when cancelled. */
MpRehearsal *mp_rehearse_run (const MpPlan *plan,
                              const MpSchedule *schedule,
                              const MpRehearseOptions *opts,
                              MpRehearseProgress progress,
                              gpointer progress_data,
                              GCancellable *cancellable,
                              GError **error);

/* The same in a GTask thread; progress is called in the thread-default
 * main context of the caller. Everything needed is taken from plan and
 * schedule before this returns: the caller may free them at once. */
void mp_rehearse_run_async (const MpPlan *plan,
                            const MpSchedule *schedule,
                            const MpRehearseOptions *opts,
                            MpRehearseProgress progress,
                            gpointer progress_data,
                            GCancellable *cancellable,
                            GAsyncReadyCallback callback,
                            gpointer user_data);
MpRehearsal *mp_rehearse_run_finish (GAsyncResult *result, GError **error);

void mp_rehearsal_free (MpRehearsal *rehearsal);

/* The rehearsal JSON (keys are a contract; no wall-clock figures). */
JsonNode *mp_rehearsal_to_json (const MpRehearsal *rehearsal);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpRehearsal, mp_rehearsal_free)

G_END_DECLS
