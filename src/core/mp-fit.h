/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-fit.h: learn the work function (and the effective electron
 * temperature) from measured QE and MTE points (issue 6).
 *
 * Model, with the plan's extraction field and laser bandwidth
 * (../shared/spec/physics.md):
 *   qe_i  = A * <Y>(E_i - phi_eff, T_i')          fitted as ln qe
 *   mte_i = <eps>(E_i - phi_eff, T_eff,b) + extra_mte
 * phi_eff = phi - Schottky lowering; phi (bare) and ln A are shared by all
 * points; T_eff,b = T_i * exp(u_b) is one effective temperature per block
 * (points grouped by plan block temperature). T_i' is T_i, or T_eff,b when
 * electron_temperature is set. Nonlinear least squares with GSL's
 * trust-region Levenberg-Marquardt. */
#pragma once

#include <gio/gio.h>

#include "mp-measured.h"
#include "mp-plan.h"

G_BEGIN_DECLS

typedef struct
{
  gboolean electron_temperature;  /* T_eff per block in the QE model too (default off) */
  gboolean use_mte;               /* fit MTE data where present (default on) */
  int max_iterations;             /* default 200 */
} MpFitOptions;

void mp_fit_options_init (MpFitOptions *opts);

typedef enum
{
  MP_FIT_RESIDUAL_QE,             /* residual = ln qe - ln model */
  MP_FIT_RESIDUAL_MTE             /* residual = mte - model, meV */
} MpFitResidualKind;

typedef struct
{
  MpFitResidualKind kind;
  double temperature_K;
  double model_temperature_K;     /* used by the model: T, or T_eff of its block */
  double photon_energy_eV;
  double excess_energy_eV;        /* E - fitted phi_eff */
  double measured;                /* qe, or mte in meV */
  double model;                   /* qe, or mte in meV */
  double residual;
  double sigma;                   /* used for the weight: data, or estimated scatter */
  double normalised_residual;     /* residual / sigma */
  int line;                       /* line in the data file */
} MpFitResidual;

typedef struct
{
  double temperature_K;           /* plan block (or measured) temperature */
  int n_qe;
  int n_mte;
  gboolean fitted;                /* has an effective temperature parameter */
  double effective_temperature_K;
  double effective_temperature_sigma_K;
  double thermal_ratio;           /* T_eff / T: 1 at the thermal limit */
} MpFitBlock;

typedef struct
{
  double work_function_eV;        /* bare, field-free */
  double work_function_sigma_eV;
  double effective_work_function_eV;
  double field_MV_per_m;
  double bandwidth_meV;
  double log_qe_scale;            /* ln A, A in 1/eV^2 */
  double log_qe_scale_sigma;
  double qe_scale;                /* A */
  double qe_at_reference;         /* model QE at the plan's QE reference point */
  double phi_scale_correlation;   /* correlation of phi and ln A */
  double chi_square;
  double reduced_chi_square;
  int dof;
  int n_parameters;
  int n_residuals;
  int iterations;
  gboolean qe_sigma_from_data;    /* FALSE: QE weights from the scatter */
  gboolean mte_sigma_from_data;   /* FALSE: MTE weights from the scatter */
  double qe_scatter;              /* estimated relative scatter of QE, or NAN */
  double mte_scatter_meV;         /* estimated scatter of MTE, or NAN */
  GArray *blocks;                 /* MpFitBlock, ascending temperature */
  GArray *residuals;              /* MpFitResidual, data order (QE, then MTE) */
} MpFitResult;

/* Fits the data with the plan's cathode field, extra MTE and laser
 * bandwidth, starting from its work function. Errors:
 * MP_ERROR_UNDETERMINED with the reason when the data cannot determine a
 * parameter (too few points, every point of a block far above threshold
 * for its temperature, work function and scale degenerate far below
 * threshold, no convergence); MP_ERROR_INVALID for a bad plan;
 * G_IO_ERROR_CANCELLED when cancelled. */
MpFitResult *mp_fit_measured (const MpPlan *plan,
                              const MpMeasuredData *data,
                              const MpFitOptions *opts,
                              GCancellable *cancellable,
                              GError **error);
void mp_fit_result_free (MpFitResult *result);

const char *mp_fit_residual_kind_to_string (MpFitResidualKind kind);

/* Sets the plan's work function and its uncertainty to the fitted values
 * and its reference QE to the fitted model at the same reference point. */
void mp_fit_apply_to_plan (const MpFitResult *result, MpPlan *plan);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpFitResult, mp_fit_result_free)

G_END_DECLS
