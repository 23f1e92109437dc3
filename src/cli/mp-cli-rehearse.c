/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli rehearse: a Monte Carlo rehearsal of a planned shift, and
 * its bench sections. */
#include "config.h"

#include "mp-cli.h"
#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-rehearse.h"
#include "mp-schedule.h"

#include <glib/gi18n.h>
#include <math.h>
#include <stdio.h>
#include <time.h>

/* Seeds up to 2^53 - 1 survive a round trip through any JSON reader. */
#define MP_REHEARSE_MAX_SEED G_GUINT64_CONSTANT (9007199254740991)

typedef struct
{
  char *trials;
  char *seed;
  char *threads;
  char *qe_sigma;
  gboolean no_counting;
  gboolean json;
} RehearseArgs;

static void
clear_rehearse_args (RehearseArgs *a)
{
  g_free (a->trials);
  g_free (a->seed);
  g_free (a->threads);
  g_free (a->qe_sigma);
}

static gboolean
parse_unsigned (const char *option, const char *text, guint64 min, guint64 max,
                guint64 *out, GError **error)
{
  if (text == NULL)
    return TRUE;
  if (!g_ascii_string_to_unsigned (text, 10, min, max, out, NULL))
    {
      g_set_error (error, G_OPTION_ERROR, G_OPTION_ERROR_BAD_VALUE,
                   _("%s: expected a whole number from %llu to %llu, found “%s”"),
                   option, (unsigned long long) min, (unsigned long long) max, text);
      return FALSE;
    }
  return TRUE;
}

static gboolean
convert_rehearse_args (const RehearseArgs *a, MpRehearseOptions *opts, GError **error)
{
  guint64 trials = 1000, threads, seed = 1;

  threads = CLAMP (g_get_num_processors (), 1, MP_REHEARSE_MAX_THREADS);
  if (!parse_unsigned ("--trials", a->trials, 1, MP_REHEARSE_MAX_TRIALS, &trials, error) ||
      !parse_unsigned ("--threads", a->threads, 1, MP_REHEARSE_MAX_THREADS, &threads, error) ||
      !parse_unsigned ("--seed", a->seed, 0, MP_REHEARSE_MAX_SEED, &seed, error))
    return FALSE;
  mp_rehearse_options_init (opts);
  opts->trials = (int) trials;
  opts->threads = (int) threads;
  opts->seed = seed;
  opts->steps = !a->no_counting;
  opts->shift = TRUE;
  if (a->qe_sigma != NULL &&
      !mp_cli_parse_double ("--qe-sigma", a->qe_sigma, 0.0, 3.0, &opts->qe_scale_sigma, error))
    return FALSE;
  return TRUE;
}

static void
print_steps_table (const MpRehearsal *r)
{
  if (r->steps->len == 0)
    return;
  printf (_("Counting noise per step (%d simulated measurements each):\n"), r->trials);
  printf ("%5s %7s %8s %10s %8s %8s %9s %8s %8s %7s\n",
          _("step"), "T/K", "E/eV", _("electrons"), "MTE/meV", _("target"),
          _("predicted"), _("spread"), _("bias"), _("within"));
  for (guint i = 0; i < r->steps->len; i++)
    {
      const MpRehearseStep *s = &g_array_index (r->steps, MpRehearseStep, i);

      printf ("%5d %7.1f %8.4f %10.0f %8.3f %8.3f %9.3f %8.3f %+8.3f %6.1f%%\n",
              s->index, s->temperature_K, s->photon_energy_eV, s->mean_signal_electrons,
              s->mte_model_meV, s->target_sigma_meV, s->predicted_sigma_meV,
              s->mte_spread_meV, s->mte_bias_meV, 100.0 * s->fraction_within_target);
    }
  printf (_("(target, predicted, spread and bias in meV; predicted is the plan's "
            "statistical sigma; within: |MTE estimate - model| <= target)\n\n"));
}

static void
print_percentiles (const char *label, const double *values, const char *unit)
{
  printf ("  %-22s", label);
  for (int p = 0; p < MP_REHEARSE_N_PERCENTILES; p++)
    printf (" %9.2f", values[p]);
  printf (" %s\n", unit);
}

static void
print_shift (const MpRehearsal *r)
{
  printf (_("Shift risk (work function %.3f ± %.3f eV drawn per trial"),
          r->work_function_eV, r->work_function_sigma_eV);
  if (r->qe_scale_sigma > 0.0)
    printf (_(", QE scale log-normal sigma %.2f"), r->qe_scale_sigma);
  printf ("):\n");
  printf (_("  beam time: planned %.2f h of %.2f h; within budget in %.1f%% of trials\n"),
          r->planned_beam_time_h, r->beam_time_available_h,
          100.0 * r->probability_within_beam_time);
  printf (_("  cryogen:   planned %.2f L of %.2f L; within budget in %.1f%% of trials\n"),
          r->planned_cryogen_L, r->cryogen_available_L,
          100.0 * r->probability_within_cryogen);
  printf (_("  both budgets kept in %.1f%% of trials\n"), 100.0 * r->probability_within_both);
  printf ("  %-22s %9s %9s %9s %9s %9s\n", _("percentiles"), "5%", "16%", "50%", "84%", "95%");
  print_percentiles (_("total beam time"), r->beam_time_h_percentiles, "h");
  print_percentiles (_("total cryogen"), r->cryogen_L_percentiles, "L");
}

static void
print_table (const MpRehearsal *r)
{
  printf (_("Rehearsal of “%s”: %d trials, seed %llu\n\n"),
          r->plan_title, r->trials, (unsigned long long) r->seed);
  print_steps_table (r);
  if (r->has_shift)
    print_shift (r);
}

int
mp_cli_rehearse (int argc, char **argv)
{
  RehearseArgs a = { NULL };
  MpRehearseOptions opts;
  MpScheduleOptions sopts;
  g_autoptr (GError) error = NULL;
  g_autoptr (GOptionContext) ctx = NULL;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  GOptionEntry entries[] = {
    { "trials", 0, 0, G_OPTION_ARG_STRING, &a.trials, N_("Simulated shifts, 1 to 1000000 (default 1000)"), N_("N") },
    { "seed", 0, 0, G_OPTION_ARG_STRING, &a.seed, N_("Seed of the random streams, 0 to 2^53-1 (default 1)"), N_("S") },
    { "threads", 0, 0, G_OPTION_ARG_STRING, &a.threads, N_("Worker threads, 1 to 64 (default: all cores); results do not depend on it"), N_("K") },
    { "qe-sigma", 0, 0, G_OPTION_ARG_STRING, &a.qe_sigma, N_("Also draw a QE scale, log-normal with this sigma of ln QE, 0 to 3 (default 0)"), N_("SIGMA") },
    { "no-counting", 0, 0, G_OPTION_ARG_NONE, &a.no_counting, N_("Only the shift risk: skip the per-step counting simulation"), NULL },
    { "json", 0, 0, G_OPTION_ARG_NONE, &a.json, N_("Print one JSON object"), NULL },
    { NULL }
  };

  ctx = g_option_context_new (_("PLAN"));
  g_option_context_set_summary (ctx, _("Rehearse a plan by Monte Carlo before the shift: the counting "
                                       "noise of every step's MTE estimate, and the odds that the shift "
                                       "keeps its beam time and cryogen when the work function is off "
                                       "by its uncertainty. The same seed gives the same output."));
  g_option_context_add_main_entries (ctx, entries, GETTEXT_PACKAGE);
  if (!g_option_context_parse (ctx, &argc, &argv, &error))
    {
      clear_rehearse_args (&a);
      return mp_cli_fail ("rehearse: %s", error->message);
    }
  if (argc != 2)
    {
      clear_rehearse_args (&a);
      return mp_cli_fail (_("rehearse: expected one PLAN file, found %d arguments; "
                            "run “mteplan-cli help rehearse”"), argc - 1);
    }
  if (!convert_rehearse_args (&a, &opts, &error))
    {
      clear_rehearse_args (&a);
      return mp_cli_fail ("rehearse: %s", error->message);
    }
  clear_rehearse_args (&a);

  plan = mp_plan_load_from_file (argv[1], &error);
  if (plan == NULL)
    return mp_cli_fail ("%s: %s", argv[1], error->message);
  mp_schedule_options_init (&sopts);
  sopts.no_sensitivity = TRUE;
  schedule = mp_schedule_compute (plan, &sopts, &error);
  if (schedule == NULL)
    return mp_cli_fail ("%s: %s", argv[1], error->message);
  r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, &error);
  if (r == NULL)
    return mp_cli_fail ("rehearse: %s", error->message);

  if (a.json)
    {
      g_autoptr (JsonNode) root = mp_rehearsal_to_json (r);
      g_autofree char *text = mp_cli_json_to_string (root);

      printf ("%s\n", text);
    }
  else
    print_table (r);
  return MP_EXIT_OK;
}

/* ---- Bench sections ------------------------------------------------------ */

static volatile double bench_sink;

/* CPU time of the calling thread, s: a per-core figure that a busy
 * machine does not distort. */
static double
thread_cpu_s (void)
{
  struct timespec ts;

  clock_gettime (CLOCK_THREAD_CPUTIME_ID, &ts);
  return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

/* Simulated electrons per CPU second of one core: measurements at 300 K
 * and 40 K, above and below threshold, with and without a 5 meV line. */
void
mp_bench_rehearse_electrons (JsonBuilder *b, gboolean human)
{
  const double excess_eV[] = { -0.05, 0.0, 0.1, 0.3 };
  const double temperature_K[] = { 300.0, 40.0 };
  const double bandwidth_eV[] = { 0.0, 0.005 };
  gint64 electrons = 0;
  double acc = 0.0, per_s, t0, t1;

  t0 = thread_cpu_s ();
  for (gsize i = 0; i < G_N_ELEMENTS (excess_eV); i++)
    for (gsize j = 0; j < G_N_ELEMENTS (temperature_K); j++)
      for (gsize k = 0; k < G_N_ELEMENTS (bandwidth_eV); k++)
        {
          MpStepCounting step = { excess_eV[i], temperature_K[j], bandwidth_eV[k],
                                  5000.0, 2.0, 200.0, 0.15, 3e-4 };
          MpEnergySampler sampler;

          mp_energy_sampler_init (&sampler, step.excess_energy_eV, step.temperature_K,
                                  step.bandwidth_eV);
          for (int trial = 0; trial < 4; trial++)
            {
              MpRng rng;
              gint64 n;

              mp_rng_init_stream (&rng, 1, trial, (i * 2 + j) * 2 + k);
              acc += mp_rehearse_measure_once (&step, &sampler, &rng, &n);
              electrons += n;
            }
        }
  t1 = thread_cpu_s ();
  bench_sink = acc;
  per_s = electrons / (t1 - t0);
  json_builder_set_member_name (b, "rehearse_electrons_per_s");
  json_builder_add_double_value (b, per_s);
  if (human)
    printf ("%-36s %14.0f  (target >= 20000000)\n", _("rehearsal electrons per CPU second"), per_s);
}

/* 1000-trial shift risk (no counting) of the first example on 2 threads. */
void
mp_bench_rehearse_shift (JsonBuilder *b, gboolean human)
{
  g_autofree char *path = g_build_filename (MP_SOURCE_DIR, "data", "examples",
                                            "cold-copper-shift.mteplan", NULL);
  g_autoptr (MpPlan) plan = mp_plan_load_from_file (path, NULL);
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (MpRehearsal) r = NULL;
  MpScheduleOptions sopts;
  MpRehearseOptions opts;
  gint64 t0;
  clock_t c0;
  double seconds = NAN, cpu_s = NAN;

  if (plan == NULL)
    plan = mp_plan_new_default ();
  if (!(plan->cathode.work_function_sigma_eV > 0.0))
    plan->cathode.work_function_sigma_eV = 0.03;
  mp_schedule_options_init (&sopts);
  sopts.no_sensitivity = TRUE;
  schedule = mp_schedule_compute (plan, &sopts, NULL);
  mp_rehearse_options_init (&opts);
  opts.trials = 1000;
  opts.threads = 2;
  opts.steps = FALSE;
  t0 = g_get_monotonic_time ();
  c0 = clock ();
  if (schedule != NULL)
    r = mp_rehearse_run (plan, schedule, &opts, NULL, NULL, NULL, NULL);
  if (r != NULL)
    {
      seconds = (g_get_monotonic_time () - t0) * 1e-6;
      cpu_s = (double) (clock () - c0) / CLOCKS_PER_SEC;
    }
  json_builder_set_member_name (b, "rehearse_shift_1000_trials_s");
  json_builder_add_double_value (b, isfinite (seconds) ? seconds : -1.0);
  /* CPU time of all threads: on an idle machine the wall time is about
   * this divided by the 2 threads. */
  json_builder_set_member_name (b, "rehearse_shift_1000_trials_cpu_s");
  json_builder_add_double_value (b, isfinite (cpu_s) ? cpu_s : -1.0);
  if (human)
    {
      printf ("%-36s %14.3f  (target < 2)\n", _("1000-trial shift risk, 2 threads, s"), seconds);
      printf ("%-36s %14.3f\n", _("  the same, CPU time of both threads"), cpu_s);
    }
}
