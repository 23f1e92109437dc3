/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli plan: a plan document in, a timed and budgeted schedule out
 * (a readable summary, JSON, CSV or the run sheet as PDF). */
#include "config.h"

#include "mp-cli.h"
#include "mp-atomic.h"
#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-schedule.h"
#include "mp-sheet.h"

#include <glib/gi18n.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

/* Command-line arguments as given; converted in convert_plan_args. New
 * options add a field here, an entry in plan_entries and a step there. */
typedef struct
{
  char *json_path;
  char *csv_path;
  char *pdf_path;
  char *paper;
  char *elapsed_h;
  char *cryogen_left_L;
  char *measured_path;
  gboolean use_fit;
} PlanArgs;

typedef struct
{
  MpScheduleOptions options;
  MpPaper paper;
} PlanInput;

static void
clear_plan_args (PlanArgs *a)
{
  g_free (a->json_path);
  g_free (a->csv_path);
  g_free (a->pdf_path);
  g_free (a->paper);
  g_free (a->elapsed_h);
  g_free (a->cryogen_left_L);
  g_free (a->measured_path);
}

static gboolean
convert_plan_args (const PlanArgs *a, PlanInput *in, GError **error)
{
  mp_schedule_options_init (&in->options);
  in->paper = MP_PAPER_A4;
  if (a->paper != NULL && !mp_paper_from_string (a->paper, &in->paper))
    {
      g_set_error (error, G_OPTION_ERROR, G_OPTION_ERROR_BAD_VALUE,
                   _("--paper: expected a4 or letter, found \"%s\""), a->paper);
      return FALSE;
    }
  if (a->elapsed_h != NULL
      && !mp_cli_parse_double ("--elapsed-h", a->elapsed_h, 0.0, 1e4,
                               &in->options.elapsed_h, error))
    return FALSE;
  if (a->cryogen_left_L != NULL
      && !mp_cli_parse_double ("--cryogen-left-L", a->cryogen_left_L, 0.0, 1e6,
                               &in->options.cryogen_left_L, error))
    return FALSE;
  return TRUE;
}

/* "-" is standard output; files are replaced atomically. */
static gboolean
write_text (const char *path, const char *text, gsize length, GError **error)
{
  if (g_strcmp0 (path, "-") == 0)
    return mp_cli_write_output (path, text, length, error);
  return mp_atomic_write (path, text, length, FALSE, error);
}

static void
print_step_row (const MpStep *s)
{
  char target[32], reached[32], required[32];

  if (isfinite (s->target_sigma_meV))
    g_snprintf (target, sizeof target, "%8.3f", s->target_sigma_meV);
  else
    g_snprintf (target, sizeof target, "%8s", "-");
  if (isfinite (s->reached_sigma_meV))
    g_snprintf (reached, sizeof reached, "%9.3g", s->reached_sigma_meV);
  else
    g_snprintf (reached, sizeof reached, "%9s", "-");
  if (isfinite (s->required_dwell_s))
    g_snprintf (required, sizeof required, "%9.3g", s->required_dwell_s);
  else
    g_snprintf (required, sizeof required, "%9s", "inf");
  printf ("  %4d %-3s %8.2f %7.4f %+8.4f %9.3g %6.2f %9.4g %8.2f %s %s %7.0f %s %7.2f %8.2f  %-11s %d%s\n",
          s->index, s->kind == MP_STEP_KIND_QE_SWEEP ? "QE" : "MTE",
          s->wavelength_nm, s->photon_energy_eV, s->excess_energy_eV, s->qe,
          s->optical_density, s->signal_rate_per_s, s->mte_meV, target, required,
          s->dwell_s, reached, s->end_h, s->cryogen_left_L,
          mp_step_status_to_string (s->status), s->priority, s->done ? _("  done") : "");
}

static void
print_block (const MpBlock *block)
{
  printf (_("\n%g K block: %.2f h to %.2f h (settle %.2f h), cryogen %.2f L (%.2f L left at the end)\n"),
          block->temperature_K, block->start_h, block->end_h, block->settle_h,
          block->cryogen_L, block->cryogen_end_L);
  printf ("  %4s %-3s %8s %7s %8s %9s %6s %9s %8s %8s %9s %7s %9s %7s %8s  %-11s %s\n",
          "#", _("for"), "nm", "eV", "excess", "QE", "OD", "rate/s", "MTE meV",
          "tgt meV", "need s", "dwell s", "got meV", "end h", "left L", _("status"), "p");
  for (guint i = 0; i < block->steps->len; i++)
    print_step_row (&g_array_index (block->steps, MpStep, i));
  if (block->cut_list->len > 0)
    {
      printf (_("  skip first:"));
      for (guint i = 0; i < block->cut_list->len && i < 12; i++)
        {
          int pos = g_array_index (block->cut_list, int, i);

          printf (" %d", g_array_index (block->steps, MpStep, pos).index);
        }
      printf ("%s\n", block->cut_list->len > 12 ? " …" : "");
    }
}

static void
print_sensitivity (const char *label, const MpSensitivity *s)
{
  printf (_("  %-5s phi = %.4f eV: %6.2f h, %6.2f L, %d short, %d unreachable, %d left out%s\n"),
          label, s->work_function_eV, s->beam_time_h, s->cryogen_L, s->n_short,
          s->n_unreachable, s->n_left_out, s->feasible ? "" : _(", does not fit"));
}

static void
print_summary (const MpSchedule *schedule)
{
  printf ("%s\n", schedule->plan_title);
  printf (_("Work function %.4f eV, %.4f eV with the field (Schottky)\n"),
          schedule->work_function_eV, schedule->effective_work_function_eV);
  printf (_("Beam time %.2f h of %.2f h, cryogen %.2f L of %.2f L (above the reserve)\n"),
          schedule->beam_time_h, schedule->beam_time_available_h,
          schedule->cryogen_L, schedule->cryogen_available_L);
  printf (_("Policy %s"), mp_over_budget_to_string (schedule->policy));
  if (schedule->stretch_factor != 1.0)
    printf (_(", targets loosened by %.3f"), schedule->stretch_factor);
  printf (": %s\n", schedule->feasible ? _("fits") : _("does NOT fit"));
  for (guint b = 0; b < schedule->blocks->len; b++)
    print_block (g_ptr_array_index (schedule->blocks, b));
  if (schedule->left_out->len > 0)
    {
      printf (_("\nLeft out (%u):\n"), schedule->left_out->len);
      for (guint i = 0; i < schedule->left_out->len; i++)
        {
          const MpLeftOut *lo = &g_array_index (schedule->left_out, MpLeftOut, i);

          printf ("  %6g K %8.2f nm %7.4f eV  %s\n", lo->temperature_K, lo->wavelength_nm,
                  lo->photon_energy_eV, lo->reason);
        }
    }
  if (schedule->warnings->len > 0)
    {
      printf (_("\nWarnings:\n"));
      for (guint i = 0; i < schedule->warnings->len; i++)
        printf ("  - %s\n", (const char *) g_ptr_array_index (schedule->warnings, i));
    }
  if (schedule->has_sensitivity)
    {
      printf (_("\nIf the work function is off by its uncertainty:\n"));
      print_sensitivity (_("low"), &schedule->sensitivity_low);
      print_sensitivity (_("high"), &schedule->sensitivity_high);
    }
}

static gboolean
write_outputs (const PlanArgs *a, const PlanInput *in, const MpPlan *plan,
               const MpSchedule *schedule, GError **error)
{
  if (a->json_path != NULL)
    {
      gsize len;
      g_autofree char *text = mp_schedule_to_json_data (schedule, &len);

      if (!write_text (a->json_path, text, len, error))
        return FALSE;
    }
  if (a->csv_path != NULL)
    {
      g_autofree char *text = mp_schedule_to_csv (schedule);

      if (!write_text (a->csv_path, text, strlen (text), error))
        return FALSE;
    }
  if (a->pdf_path != NULL
      && !mp_sheet_write_pdf (plan, schedule, in->paper, a->pdf_path, error))
    return FALSE;
  return TRUE;
}

static int
report_infeasible (const MpSchedule *schedule)
{
  fprintf (stderr, _("mteplan-cli: the plan does not fit in its budgets even after policy “%s”:\n"),
           mp_over_budget_to_string (schedule->policy));
  for (guint i = 0; i < schedule->warnings->len; i++)
    fprintf (stderr, "  - %s\n", (const char *) g_ptr_array_index (schedule->warnings, i));
  return MP_EXIT_INFEASIBLE;
}

int
mp_cli_plan (int argc, char **argv)
{
  PlanArgs a = { NULL };
  PlanInput in;
  g_autoptr (GError) error = NULL;
  g_autoptr (GOptionContext) ctx = NULL;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (GArray) done = NULL;
  gboolean to_stdout;
  int status;
  GOptionEntry plan_entries[] = {
    { "json", 0, 0, G_OPTION_ARG_FILENAME, &a.json_path, N_("Write the schedule as JSON (- for standard output)"), N_("FILE") },
    { "csv", 0, 0, G_OPTION_ARG_FILENAME, &a.csv_path, N_("Write one CSV row per step (- for standard output)"), N_("FILE") },
    { "pdf", 0, 0, G_OPTION_ARG_FILENAME, &a.pdf_path, N_("Write the operator's run sheet as PDF"), N_("FILE") },
    { "paper", 0, 0, G_OPTION_ARG_STRING, &a.paper, N_("Paper size of the run sheet: a4 or letter"), N_("SIZE") },
    { "elapsed-h", 0, 0, G_OPTION_ARG_STRING, &a.elapsed_h, N_("Beam time already spent, h (re-plan)"), N_("H") },
    { "cryogen-left-L", 0, 0, G_OPTION_ARG_STRING, &a.cryogen_left_L, N_("Liquid left in the dewar now, L (re-plan)"), N_("L") },
    { "measured", 0, 0, G_OPTION_ARG_FILENAME, &a.measured_path, N_("Measured points (CSV): mark them done, take the elapsed time from them (re-plan)"), N_("DATA.csv") },
    { "use-fit", 0, 0, G_OPTION_ARG_NONE, &a.use_fit, N_("With --measured: use the work function and QE fitted to the data"), NULL },
    { NULL }
  };

  ctx = g_option_context_new (_("PLAN"));
  g_option_context_set_summary (ctx, _("Schedule the steps of a plan within its beam time and cryogen. "
                                       "Exit status: 0 fits, 1 does not fit even after the plan's "
                                       "over-budget policy, 2 bad input."));
  g_option_context_add_main_entries (ctx, plan_entries, GETTEXT_PACKAGE);
  if (!g_option_context_parse (ctx, &argc, &argv, &error))
    {
      clear_plan_args (&a);
      return mp_cli_fail ("plan: %s", error->message);
    }
  if (argc != 2)
    {
      clear_plan_args (&a);
      return mp_cli_fail (_("plan: expected one PLAN file, found %d arguments; "
                            "run “mteplan-cli help plan”"), argc - 1);
    }
  if (!convert_plan_args (&a, &in, &error))
    {
      clear_plan_args (&a);
      return mp_cli_fail ("plan: %s", error->message);
    }
  plan = mp_plan_load_from_file (argv[1], &error);
  if (plan == NULL)
    {
      clear_plan_args (&a);
      return mp_cli_fail ("%s: %s", argv[1], error->message);
    }
  if (a.use_fit && a.measured_path == NULL)
    {
      clear_plan_args (&a);
      return mp_cli_fail (_("plan: --use-fit needs --measured DATA.csv"));
    }
  if (a.measured_path != NULL
      && !mp_cli_plan_apply_measured (a.measured_path, a.use_fit, a.elapsed_h != NULL,
                                      plan, &in.options, &done, &error))
    {
      clear_plan_args (&a);
      return mp_cli_fail ("%s", error->message);
    }
  schedule = mp_schedule_compute (plan, &in.options, &error);
  if (schedule == NULL)
    {
      clear_plan_args (&a);
      return mp_cli_fail ("%s: %s", argv[1], error->message);
    }
  if (!write_outputs (&a, &in, plan, schedule, &error))
    {
      clear_plan_args (&a);
      fprintf (stderr, "mteplan-cli: %s\n", error->message);
      return MP_EXIT_BAD_INPUT;
    }
  to_stdout = g_strcmp0 (a.json_path, "-") == 0 || g_strcmp0 (a.csv_path, "-") == 0;
  if (!to_stdout)
    print_summary (schedule);
  status = schedule->feasible ? MP_EXIT_OK : report_infeasible (schedule);
  clear_plan_args (&a);
  return status;
}
