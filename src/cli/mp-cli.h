/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-cli.h: shared pieces of the mteplan-cli subcommands. */
#pragma once

#include <glib.h>
#include <json-glib/json-glib.h>

#include "mp-schedule.h"

G_BEGIN_DECLS

enum
{
  MP_EXIT_OK = 0,
  MP_EXIT_INFEASIBLE = 1,
  MP_EXIT_BAD_INPUT = 2,
};

/* Prints "mteplan-cli: MESSAGE" on stderr and returns MP_EXIT_BAD_INPUT. */
int mp_cli_fail (const char *format, ...) G_GNUC_PRINTF (1, 2);

/* Parses a finite number for OPTION within [min, max]; on failure sets an
 * error naming the option, the accepted range and what was found. */
gboolean mp_cli_parse_double (const char *option,
                              const char *text,
                              double min,
                              double max,
                              double *out,
                              GError **error);

/* Writes text to PATH, or to stdout when PATH is "-". Atomic for files. */
gboolean mp_cli_write_output (const char *path,
                              const char *text,
                              gsize length,
                              GError **error);

char *mp_cli_json_to_string (JsonNode *node);

int mp_cli_model (int argc, char **argv);
int mp_cli_bench (int argc, char **argv);
int mp_cli_plan (int argc, char **argv);
int mp_cli_fit (int argc, char **argv);
/* plan --measured DATA [--use-fit] (mp-cli-fit.c): loads the data, marks
 * the measured points done in options (*done_out holds them; free it after
 * the schedule), takes the elapsed time from the data unless given, and
 * with use_fit replaces the plan's work function, its uncertainty and the
 * reference QE with the fitted values (said on stderr). */
gboolean mp_cli_plan_apply_measured (const char *data_path,
                                     gboolean use_fit,
                                     gboolean elapsed_given,
                                     MpPlan *plan,
                                     MpScheduleOptions *options,
                                     GArray **done_out,
                                     GError **error);
int mp_cli_rehearse (int argc, char **argv);

/* Bench sections added by later features: each appends figures to the
 * builder (inside an open object) and prints a line when human is TRUE. */
typedef void (*MpBenchSection) (JsonBuilder *builder, gboolean human);

/* Refit section (mp-cli-fit.c). */
void mp_bench_fit (JsonBuilder *builder, gboolean human);

/* Planner sections (mp-cli-bench-plan.c). */
void mp_bench_plan_demo (JsonBuilder *builder, gboolean human);
void mp_bench_plan_stress (JsonBuilder *builder, gboolean human);
/* Rehearsal sections (mp-cli-rehearse.c). */
void mp_bench_rehearse_electrons (JsonBuilder *builder, gboolean human);
void mp_bench_rehearse_shift (JsonBuilder *builder, gboolean human);
/* Run sheet and plot sections (mp-cli-bench-sheet.c). */
void mp_bench_sheet_demo (JsonBuilder *builder, gboolean human);
void mp_bench_plot_demo (JsonBuilder *builder, gboolean human);

G_END_DECLS
