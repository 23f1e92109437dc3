/* SPDX-License-Identifier: GPL-3.0-or-later */
/* Fuzz target: the plan loader, then (for a plan that loads) the
 * scheduler and the saver, which must round-trip. */
#include "config.h"

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-schedule.h"

#include <stddef.h>
#include <stdint.h>

int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

int
LLVMFuzzerTestOneInput (const uint8_t *data, size_t size)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpPlan) again = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autofree char *saved = NULL;
  MpScheduleOptions opts;
  gsize saved_len = 0;

  mp_core_init ();
  plan = mp_plan_load_from_data ((const char *) data, size, NULL, &error);
  if (plan == NULL)
    {
      /* Every refusal carries a message. */
      g_assert_nonnull (error);
      g_assert_true (error->message != NULL && error->message[0] != '\0');
      return 0;
    }
  saved = mp_plan_to_data (plan, &saved_len);
  again = mp_plan_load_from_data (saved, saved_len, NULL, &error);
  g_assert_no_error (error);
  mp_schedule_options_init (&opts);
  opts.no_sensitivity = TRUE;
  schedule = mp_schedule_compute (plan, &opts, NULL);
  return 0;
}
