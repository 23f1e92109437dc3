/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli bench: the run sheet and the plots (sections[] in
 * mp-cli-bench.c). Figures only; a benchmark never fails on them. */
#include "config.h"

#include "mp-cli.h"
#include "mp-plan.h"
#include "mp-plot.h"
#include "mp-schedule.h"
#include "mp-sheet.h"

#include <cairo.h>
#include <glib/gi18n.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

#define SHEET_RUNS 5
#define HIT_CALLS 200

static double
thread_cpu_ms (void)
{
  struct timespec ts;

  if (clock_gettime (CLOCK_THREAD_CPUTIME_ID, &ts) != 0)
    return g_get_monotonic_time () * 1e-3;
  return ts.tv_sec * 1e3 + ts.tv_nsec * 1e-6;
}

static int
compare_doubles (gconstpointer a, gconstpointer b)
{
  double x = *(const double *) a, y = *(const double *) b;

  return x < y ? -1 : (x > y ? 1 : 0);
}

static MpPlan *
load_demo (void)
{
  g_autofree char *path = g_build_filename (MP_SOURCE_DIR, "data", "examples",
                                            "cold-copper-shift.mteplan", NULL);
  MpPlan *plan = mp_plan_load_from_file (path, NULL);

  return plan != NULL ? plan : mp_plan_new_default ();
}

static void
add_figure (JsonBuilder *b, const char *key, double value)
{
  json_builder_set_member_name (b, key);
  json_builder_add_double_value (b, value);
}

/* The demo's whole run sheet as A4 PDF in memory, median CPU time. */
void
mp_bench_sheet_demo (JsonBuilder *b, gboolean human)
{
  g_autoptr (MpPlan) plan = load_demo ();
  g_autoptr (MpSchedule) schedule = mp_schedule_compute (plan, NULL, NULL);
  double ms[SHEET_RUNS];

  if (schedule == NULL)
    return;
  for (int i = 0; i < SHEET_RUNS; i++)
    {
      double t0 = thread_cpu_ms ();
      g_autoptr (GBytes) pdf = mp_sheet_render_pdf (plan, schedule, MP_PAPER_A4,
                                                    NULL, NULL);
      ms[i] = pdf != NULL ? thread_cpu_ms () - t0 : -1;
    }
  qsort (ms, SHEET_RUNS, sizeof ms[0], compare_doubles);
  add_figure (b, "sheet_demo_pdf_ms", ms[SHEET_RUNS / 2]);
  if (human)
    printf ("%-36s %14.1f\n", _("demo run sheet as PDF (ms)"), ms[SHEET_RUNS / 2]);
}

/* One redraw of each plot at window size, and one hit test (a pointer
 * motion): what the window pays per frame and per hover. */
void
mp_bench_plot_demo (JsonBuilder *b, gboolean human)
{
  g_autoptr (MpPlan) plan = load_demo ();
  g_autoptr (MpSchedule) schedule = mp_schedule_compute (plan, NULL, NULL);
  cairo_surface_t *surface;
  double draw_ms = 0, hit_ms, t0;

  if (schedule == NULL)
    return;
  surface = cairo_image_surface_create (CAIRO_FORMAT_ARGB32, 900, 520);
  for (int kind = MP_PLOT_QE_RATE; kind <= MP_PLOT_TIMELINE; kind++)
    {
      cairo_t *cr = cairo_create (surface);
      t0 = thread_cpu_ms ();
      mp_plot_draw (cr, kind, plan, schedule, NULL, 900, 520);
      draw_ms = MAX (draw_ms, thread_cpu_ms () - t0);
      cairo_destroy (cr);
    }
  cairo_surface_destroy (surface);

  t0 = thread_cpu_ms ();
  for (int i = 0; i < HIT_CALLS; i++)
    mp_plot_hit_test (i % 3, plan, schedule, 900, 520, 100 + i * 3, 200);
  hit_ms = (thread_cpu_ms () - t0) / HIT_CALLS;

  add_figure (b, "plot_draw_slowest_ms", draw_ms);
  add_figure (b, "plot_hit_test_ms", hit_ms);
  if (human)
    {
      printf ("%-36s %14.2f\n", _("slowest plot redraw (ms)"), draw_ms);
      printf ("%-36s %14.3f\n", _("plot hit test (ms)"), hit_ms);
    }
}
