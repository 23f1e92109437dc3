/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Fuzz target: the tuning-curve CSV reader. A curve it accepts must be
 * usable: at least two points, strictly ascending, finite. */
#include "config.h"

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-tuning-csv.h"

#include <math.h>
#include <stddef.h>
#include <stdint.h>

int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

int
LLVMFuzzerTestOneInput (const uint8_t *data, size_t size)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (GArray) points = NULL;

  mp_core_init ();
  points = mp_tuning_csv_parse ((const char *) data, size, "fuzz.csv", &error);
  if (points == NULL)
    {
      g_assert_nonnull (error);
      g_assert_true (error->message[0] != '\0');
      return 0;
    }
  g_assert_cmpuint (points->len, >=, 2);
  for (guint i = 0; i < points->len; i++)
    {
      const MpTuningPoint *p = &g_array_index (points, MpTuningPoint, i);

      g_assert_true (isfinite (p->wavelength_nm) && isfinite (p->pulse_energy_uJ));
      if (i > 0)
        g_assert_cmpfloat (p->wavelength_nm, >, (p - 1)->wavelength_nm);
    }
  return 0;
}
