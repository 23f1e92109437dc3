/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Fuzz target: the measured-data CSV reader, then the refit on the default
 * plan for data it accepts (a refusal must carry a message; a result must
 * be finite). */
#include "config.h"

#include "mp-fit.h"
#include "mp-measured.h"
#include "mp-physics.h"
#include "mp-plan.h"

#include <math.h>
#include <stddef.h>
#include <stdint.h>

int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

int
LLVMFuzzerTestOneInput (const uint8_t *data, size_t size)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) measured = NULL;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpFitResult) fit = NULL;
  MpFitOptions opts;

  mp_core_init ();
  measured = mp_measured_load_from_data ((const char *) data, size, "fuzz.csv", &error);
  if (measured == NULL)
    {
      g_assert_nonnull (error);
      g_assert_true (error->message[0] != '\0');
      return 0;
    }
  /* Keep each fuzz input cheap: the fit is exercised on small files. */
  if (measured->points->len > 64)
    return 0;
  plan = mp_plan_new_default ();
  mp_fit_options_init (&opts);
  opts.max_iterations = 50;
  fit = mp_fit_measured (plan, measured, &opts, NULL, &error);
  if (fit == NULL)
    g_assert_true (error != NULL && error->message[0] != '\0');
  else
    g_assert_true (isfinite (fit->work_function_eV) && isfinite (fit->reduced_chi_square));
  return 0;
}
