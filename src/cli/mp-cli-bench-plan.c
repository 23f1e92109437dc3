/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli bench: the planner's sections (sections[] in mp-cli-bench.c).
 * Figures only; a benchmark never fails on them. */
#include "config.h"

#include "mp-cli.h"
#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-schedule.h"

#include <glib/gi18n.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define DEMO_RUNS 21
#define STRESS_RUNS 3

static int
compare_doubles (gconstpointer a, gconstpointer b)
{
  double x = *(const double *) a, y = *(const double *) b;

  return x < y ? -1 : (x > y ? 1 : 0);
}

/* CPU time of this thread, ms: the planner runs on one thread, and CPU
 * time does not count what other processes on a shared machine take. */
static double
thread_cpu_ms (void)
{
  struct timespec ts;

  if (clock_gettime (CLOCK_THREAD_CPUTIME_ID, &ts) != 0)
    return g_get_monotonic_time () * 1e-3;
  return ts.tv_sec * 1e3 + ts.tv_nsec * 1e-6;
}

/* Median CPU time of planning (with the work-function sensitivity). */
static double
median_plan_ms (const MpPlan *plan, int runs)
{
  double *ms = g_new (double, runs);
  double median;

  for (int i = 0; i < runs; i++)
    {
      double t0 = thread_cpu_ms ();
      g_autoptr (MpSchedule) s = mp_schedule_compute (plan, NULL, NULL);

      ms[i] = thread_cpu_ms () - t0;
      if (s == NULL)
        ms[i] = -1.0;
    }
  qsort (ms, runs, sizeof *ms, compare_doubles);
  median = ms[runs / 2];
  g_free (ms);
  return median;
}

static void
add_figure (JsonBuilder *b, const char *key, double value)
{
  json_builder_set_member_name (b, key);
  json_builder_add_double_value (b, value);
}

void
mp_bench_plan_demo (JsonBuilder *b, gboolean human)
{
  g_autofree char *path = g_build_filename (MP_SOURCE_DIR, "data", "examples",
                                            "cold-copper-shift.mteplan", NULL);
  g_autoptr (MpPlan) plan = mp_plan_load_from_file (path, NULL);
  double ms;

  if (plan == NULL)
    plan = mp_plan_new_default ();
  ms = median_plan_ms (plan, DEMO_RUNS);
  add_figure (b, "plan_demo_ms", ms);
  if (human)
    printf ("%-36s %14.3f  (target <= 2)\n", _("planning the demo plan, CPU ms"), ms);
}

/* 20 temperatures from 300 K down to 8 K, 2001 MTE steps each (0.4 meV
 * apart over -0.2 .. +0.6 eV), a 5 meV line, budgets far too small so that
 * the drop policy has to work. */
static MpPlan *
make_stress_plan (void)
{
  MpPlan *plan = mp_plan_new_default ();

  g_array_set_size (plan->temperatures, 0);
  for (int i = 0; i < 20; i++)
    {
      MpTemperatureBlock tb = { 300.0 - i * (292.0 / 19.0), 20, i == 0 ? 0 : 2, 0.2 + 0.08 * i };

      g_array_append_val (plan->temperatures, tb);
    }
  plan->laser.bandwidth_meV = 5;
  plan->laser.wavelength_step_nm = 0.001;
  plan->cathode.work_function_sigma_eV = 0.03;
  plan->scan.excess_min_eV = -0.2;
  plan->scan.excess_max_eV = 0.6;
  plan->scan.step_eV = 0.0004;
  plan->scan.fine_step_eV = 0;
  plan->scan.fine_halfwidth_eV = 0;
  plan->beam_time_h = 72;
  plan->cryostat.budget_L = 60;
  plan->over_budget = MP_OVER_BUDGET_DROP;
  return plan;
}

/* Peak resident memory of this process, MiB (VmHWM), or -1. */
static double
peak_memory_MiB (void)
{
  g_autofree char *status = NULL;
  const char *line;

  if (!g_file_get_contents ("/proc/self/status", &status, NULL, NULL))
    return -1.0;
  line = strstr (status, "VmHWM:");
  if (line == NULL)
    return -1.0;
  return g_ascii_strtod (line + strlen ("VmHWM:"), NULL) / 1024.0;
}

static void
reset_peak_memory (void)
{
  /* "5" resets the peak resident set size (Linux >= 4.0); harmless if
   * refused. */
  FILE *f = fopen ("/proc/self/clear_refs", "w");

  if (f == NULL)
    return;
  fputs ("5", f);
  fclose (f);
}

void
mp_bench_plan_stress (JsonBuilder *b, gboolean human)
{
  g_autoptr (MpPlan) plan = make_stress_plan ();
  double ms, peak;

  reset_peak_memory ();
  ms = median_plan_ms (plan, STRESS_RUNS);
  peak = peak_memory_MiB ();
  add_figure (b, "plan_stress_ms", ms);
  add_figure (b, "plan_stress_peak_MiB", peak);
  if (human)
    {
      printf ("%-36s %14.1f  (target <= 200)\n", _("planning 20 x 2000 steps, CPU ms"), ms);
      printf ("%-36s %14.1f  (target <= 50)\n", _("  peak memory, MiB"), peak);
    }
}
