/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-measured.h: measured QE and MTE points read from a CSV file, the input
 * of the mid-shift refit (issue 6).
 *
 * The file has a header line naming its columns, in any order:
 *   temperature_K                   required
 *   photon_energy_eV | wavelength_nm  one of them required (both: they must agree)
 *   qe                              required
 *   qe_sigma, mte_meV, mte_sigma_meV, electrons, elapsed_h   optional
 * Lines starting with '#' and blank lines are skipped; other columns are
 * ignored. An empty cell in an optional column means "not measured".
 * Numbers are read locale-independently ('.' as decimal point). */
#pragma once

#include <glib.h>

#include "mp-plan.h"
#include "mp-schedule.h"

G_BEGIN_DECLS

#define MP_MEASURED_MAX_BYTES (16 * 1024 * 1024)
#define MP_MEASURED_MAX_ROWS 100000

typedef struct
{
  double temperature_K;
  double photon_energy_eV;
  double qe;
  double qe_sigma;             /* absolute, NAN if none */
  double mte_meV;              /* NAN if none */
  double mte_sigma_meV;        /* NAN if none */
  double electrons;            /* NAN if none */
  double elapsed_h;            /* NAN if none */
  int line;                    /* line in the file, 1-based */
} MpMeasuredPoint;

typedef struct
{
  char *name;                  /* file name used in messages */
  GArray *points;              /* MpMeasuredPoint, in file order */
} MpMeasuredData;

/* Errors: MP_ERROR_INVALID naming the file, the line and the column, what
 * was expected and what was found, e.g.
 *   data.csv:7: column "qe": expected a number > 0, found "n/a"
 * MP_ERROR_LIMIT over MP_MEASURED_MAX_BYTES or MP_MEASURED_MAX_ROWS;
 * MP_ERROR_IO when the file cannot be read. name is used in messages
 * (NULL: "data"). */
MpMeasuredData *mp_measured_load_from_data (const char *data,
                                            gssize length,
                                            const char *name,
                                            GError **error);
MpMeasuredData *mp_measured_load_from_file (const char *path,
                                            GError **error);
void mp_measured_data_free (MpMeasuredData *data);

guint mp_measured_count_mte (const MpMeasuredData *data);
/* Largest elapsed_h in the data, or NAN when no point has one. */
double mp_measured_max_elapsed_h (const MpMeasuredData *data);

/* The measured points as MpDonePoint for mp_schedule_compute(). With a
 * plan, each temperature is snapped to the nearest plan block when within
 * max(1 K, 2 %) of it, so that small readback differences still match. */
GArray *mp_measured_to_done_points (const MpMeasuredData *data,
                                    const MpPlan *plan);

/* The plan block temperature a measured temperature belongs to (the rule
 * above), or the measured temperature itself when no block matches. */
double mp_measured_match_block_temperature (const MpPlan *plan,
                                            double temperature_K);

G_DEFINE_AUTOPTR_CLEANUP_FUNC (MpMeasuredData, mp_measured_data_free)

G_END_DECLS
