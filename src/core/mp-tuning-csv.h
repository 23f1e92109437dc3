/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-tuning-csv.h: the laser tuning curve as a CSV file:
 *
 *   # comment lines start with '#'
 *   wavelength_nm,pulse_energy_uJ
 *   235,0.05
 *   250,0.40
 *
 * A header line names the columns (in any order; other columns are
 * ignored), blank lines are skipped, wavelengths are strictly ascending.
 * Errors (MP_ERROR_INVALID / MP_ERROR_LIMIT / MP_ERROR_IO) name the file,
 * the line and the column. */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

/* Returns an array of MpTuningPoint (mp-plan.h). display_name names the
 * file in messages. */
GArray *mp_tuning_csv_parse (const char *data, gsize length,
                             const char *display_name, GError **error);
GArray *mp_tuning_csv_load (const char *path, const char *display_name,
                            GError **error);

G_END_DECLS
