/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-schedule.h: from a plan to a timed, budgeted scan
 * (../shared/spec/plan-format.md, "The schedule"). */
#pragma once

#include <glib.h>
#include <json-glib/json-glib.h>

#include "mp-plan.h"

G_BEGIN_DECLS

typedef enum
{
  MP_STEP_OK,
  MP_STEP_SHORT,        /* dwell capped at max_dwell_s */
  MP_STEP_UNREACHABLE   /* systematic floor above target, or no signal */
} MpStepStatus;

typedef enum
{
  MP_STEP_KIND_MTE,
  MP_STEP_KIND_QE_SWEEP
} MpStepKind;

typedef struct
{
  int index;                   /* 1-based, across the whole schedule */
  MpStepKind kind;
  double temperature_K;
  int range_index;             /* laser tuning range used */
  double wavelength_nm;        /* rounded to the laser's wavelength step */
  double photon_energy_eV;     /* exact for the rounded wavelength */
  double excess_energy_eV;     /* photon energy - field-lowered work function */
  double qe;
  double transmission;         /* attenuator, mu / mu_full */
  double optical_density;      /* -log10(transmission) */
  double signal_rate_per_s;
  double mte_meV;              /* predicted, with the extra MTE term */
  double target_sigma_meV;
  double required_dwell_s;     /* before clamping; INFINITY if unreachable */
  double dwell_s;
  double reached_sigma_meV;
  double start_h;              /* from shift start */
  double end_h;
  double cryogen_left_L;       /* absolute dewar level after the step; the JSON and
                                * CSV key cryogen_left_L is this minus the reserve
                                * (plan-format.md), dewar_level_L is this */
  MpStepStatus status;
  int priority;                /* 1 = most important; larger = skip first */
  gboolean done;               /* already measured (re-plan) */
} MpStep;

typedef struct
{
  double temperature_K;
  double start_h;
  double end_h;
  double settle_h;
  double cryogen_L;            /* used by this block (cool-down + hold) */
  double cryogen_start_L;      /* left at block start */
  double cryogen_end_L;        /* left at block end */
  GArray *steps;               /* MpStep */
  GArray *cut_list;            /* int: indices into steps, skip-first order */
  int plan_block_index;        /* in plan->temperatures */
} MpBlock;

typedef struct
{
  double temperature_K;
  double photon_energy_eV;
  double wavelength_nm;
  char *reason;                /* translated, for people */
  char *reason_c;              /* untranslated, for the JSON */
} MpLeftOut;

/* The nominal schedule's steps (same wavelengths) if the work function
 * were off by one sigma: the steps are predicted again and the plan's
 * over-budget policy applied again; n_left_out counts what it then leaves
 * out of them. */
typedef struct
{
  double work_function_eV;
  double beam_time_h;
  double cryogen_L;
  int n_short;
  int n_unreachable;
  int n_left_out;
  gboolean feasible;
} MpSensitivity;

typedef struct
{
  char *plan_title;
  gboolean feasible;
  MpOverBudget policy;
  double stretch_factor;       /* 1 unless policy stretch had to loosen */
  double work_function_eV;     /* bare work function used */
  double effective_work_function_eV;
  double beam_time_h;          /* planned total */
  double beam_time_available_h;
  double cryogen_L;            /* planned total */
  double cryogen_available_L;  /* budget - reserve */
  double cryogen_reserve_L;    /* the plan's reserve */
  GPtrArray *blocks;           /* MpBlock* */
  GArray *left_out;            /* MpLeftOut */
  GPtrArray *warnings;         /* char*, translated, for people */
  gboolean has_sensitivity;
  MpSensitivity sensitivity_low;   /* at phi - sigma */
  MpSensitivity sensitivity_high;  /* at phi + sigma */
  GPtrArray *warnings_c;       /* char*, untranslated with C numbers: the JSON */
} MpSchedule;

typedef struct
{
  double temperature_K;
  double photon_energy_eV;
  double elapsed_h;            /* when it was measured; NAN if unknown */
} MpDonePoint;

typedef struct
{
  double elapsed_h;            /* beam time already spent (re-plan) */
  double cryogen_left_L;       /* NAN: from budget_L */
  const GArray *done;          /* MpDonePoint, or NULL */
  gboolean no_sensitivity;     /* skip the phi +- sigma re-plans */
} MpScheduleOptions;

void mp_schedule_options_init (MpScheduleOptions *opts);

/* Deterministic: the same plan and options give the same schedule.
 * Returns NULL with MP_ERROR_INVALID when the plan fails validation. */
MpSchedule *mp_schedule_compute (const MpPlan *plan,
                                 const MpScheduleOptions *opts,
                                 GError **error);
void mp_schedule_free (MpSchedule *schedule);

int mp_schedule_count_steps (const MpSchedule *schedule);
int mp_schedule_count_status (const MpSchedule *schedule, MpStepStatus status);
const char *mp_step_status_to_string (MpStepStatus status);
const char *mp_step_kind_to_string (MpStepKind kind);

/* The schedule JSON of plan-format.md (keys are a contract). */
JsonNode *mp_schedule_to_json (const MpSchedule *schedule);
char *mp_schedule_to_json_data (const MpSchedule *schedule, gsize *length);
/* One row per step, header with units. */
char *mp_schedule_to_csv (const MpSchedule *schedule);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpSchedule, mp_schedule_free)

G_END_DECLS
