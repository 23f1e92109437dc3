/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan.h: the plan document (../shared/spec/plan-format.md).
 *
 * A plan is a plain, copyable struct; front ends keep snapshots of it for
 * undo. Loading keeps the whole JSON document so that keys this build does
 * not know survive a save. */
#pragma once

#include <glib.h>
#include <json-glib/json-glib.h>

G_BEGIN_DECLS

typedef struct
{
  double wavelength_nm;
  double pulse_energy_uJ;
} MpTuningPoint;

/* One tuning range of the laser (for example one harmonic of the OPA). */
typedef struct
{
  char *label;           /* may be NULL */
  double switch_s;       /* time to switch into this range from another */
  char *csv_path;        /* "tuning_curve_csv" as written in the file, or NULL */
  GArray *points;        /* MpTuningPoint, strictly ascending wavelength */
} MpTuningRange;

typedef struct
{
  double temperature_K;
  double settle_min;
  double cooldown_L;
  double hold_L_per_h;
} MpTemperatureBlock;

typedef enum
{
  MP_SCAN_DESCENDING,    /* high photon energy first */
  MP_SCAN_ASCENDING
} MpScanOrder;

typedef enum
{
  MP_OVER_BUDGET_DROP,
  MP_OVER_BUDGET_STRETCH
} MpOverBudget;

typedef enum
{
  MP_CRYOGEN_HELIUM,
  MP_CRYOGEN_NITROGEN
} MpCryogen;

typedef struct
{
  char *label;
  double work_function_eV;
  double work_function_sigma_eV;
  double field_MV_per_m;
  double qe_ref_photon_energy_eV;
  double qe_ref_temperature_K;
  double qe_ref;
  double extra_mte_meV;
} MpCathode;

typedef struct
{
  double repetition_rate_kHz;
  double bandwidth_meV;          /* rms width of the laser line */
  double retune_s;
  double wavelength_step_nm;
  GPtrArray *ranges;             /* MpTuningRange*, at least one */
} MpLaser;

typedef struct
{
  double efficiency;
  double max_electrons_per_pulse;
  double max_rate_per_s;
  double dark_rate_per_s;
  double acceptance_meV;
  double resolution_meV;
  double systematic_meV;
} MpDetector;

typedef struct
{
  MpCryogen cryogen;
  double budget_L;
  double reserve_L;
} MpCryostat;

typedef struct
{
  double excess_min_eV;
  double excess_max_eV;
  double step_eV;
  double fine_step_eV;
  double fine_halfwidth_eV;
  double target_mte_sigma_meV;
  double target_mte_sigma_rel;
  double min_dwell_s;
  double max_dwell_s;
  MpScanOrder order;
  /* Optional QE sweep at the start of each block (issue 6): 0 points = off. */
  int qe_sweep_points;
  double qe_sweep_dwell_s;
} MpScan;

typedef struct
{
  char *title;
  MpCathode cathode;
  MpLaser laser;
  MpDetector detector;
  MpCryostat cryostat;
  GArray *temperatures;          /* MpTemperatureBlock */
  MpScan scan;
  double beam_time_h;
  MpOverBudget over_budget;
  char *shift_start;             /* ISO 8601, or NULL for elapsed time */

  /* Not part of the model: */
  char *path;                    /* file the plan came from, or NULL */
  JsonNode *document;            /* the JSON as loaded (unknown keys), or NULL */
} MpPlan;

#define MP_TYPE_PLAN (mp_plan_get_type ())
GType mp_plan_get_type (void) G_GNUC_CONST;

MpPlan *mp_plan_new_default (void);
MpPlan *mp_plan_copy (const MpPlan *plan);
void mp_plan_free (MpPlan *plan);

/* Load a plan; errors are MP_ERROR_INVALID / MP_ERROR_LIMIT / MP_ERROR_IO
 * with a message such as
 * "laser.repetition_rate_kHz: expected a number > 0, found \"fast\"".
 * base_dir resolves a relative tuning_curve_csv (NULL: current dir). */
MpPlan *mp_plan_load_from_data (const char *data, gssize length,
                                const char *base_dir, GError **error);
MpPlan *mp_plan_load_from_file (const char *path, GError **error);

/* Check every field against its accepted range; the message names the
 * first offending field as in the loader. */
gboolean mp_plan_validate (const MpPlan *plan, GError **error);

/* Serialise (known keys updated in the kept document, unknown kept).
 * Numbers are written locale-independently. */
char *mp_plan_to_data (const MpPlan *plan, gsize *length);
/* Atomic save: write beside, keep a backup "PATH~" of the old file, rename. */
gboolean mp_plan_save_to_file (MpPlan *plan, const char *path, GError **error);

/* Short content checksum of the plan as it would be saved (hex, 8 chars). */
char *mp_plan_checksum (const MpPlan *plan);

/* Pulse energy at full power from the tuning range covering the wavelength
 * (Steffen monotone interpolation). Returns FALSE when no range covers it.
 * range_index receives the range used (may be NULL). */
gboolean mp_laser_pulse_energy_uJ (const MpLaser *laser, double wavelength_nm,
                                   double *pulse_energy_uJ, int *range_index);
void mp_laser_wavelength_span_nm (const MpLaser *laser, double *min_nm, double *max_nm);

const char *mp_cryogen_to_string (MpCryogen cryogen);
const char *mp_over_budget_to_string (MpOverBudget policy);
const char *mp_scan_order_to_string (MpScanOrder order);

/* Accepted range of a numeric field, by JSON path: "cathode.work_function_eV",
 * "temperatures[].temperature_K", "tuning_curve[].wavelength_nm",
 * "tuning_ranges[].switch_s". max is INFINITY when unbounded. The same
 * ranges are enforced by the loader and mp_plan_validate(). */
gboolean mp_plan_field_range (const char *path, double *min, double *max,
                              gboolean *min_exclusive);

/* A plan with empty containers and every number 0 (the loader fills it). */
MpPlan *mp_plan_new_empty (void);
MpTuningRange *mp_tuning_range_new (const char *label, double switch_s);
void mp_tuning_range_free (MpTuningRange *range);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpPlan, mp_plan_free)

G_END_DECLS
