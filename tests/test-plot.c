/* SPDX-License-Identifier: GPL-3.0-or-later */
/* The shared plot code: axes and ticks, hit testing, and a render of each
 * plot to PNG in the build directory (sheet-png/) for people to look at. */
#include "config.h"

#include <math.h>
#include <string.h>

#include <cairo.h>
#include <glib/gstdio.h>

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-plot-axes.h"
#include "mp-plot.h"
#include "mp-schedule.h"

static char *out_dir;

/* The demo plan, or the built-in default while the demo is missing. */
static MpPlan *
load_demo (void)
{
  g_autofree char *path = g_test_build_filename (G_TEST_DIST, "..", "data", "examples",
                                                 "cold-copper-shift.mteplan", NULL);
  g_autoptr (GError) error = NULL;
  MpPlan *plan;

  if (!g_file_test (path, G_FILE_TEST_EXISTS))
    {
      g_test_message ("demo plan missing; using the default plan");
      return mp_plan_new_default ();
    }
  plan = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  return plan;
}

static MpSchedule *
schedule_for (const MpPlan *plan)
{
  g_autoptr (GError) error = NULL;
  MpScheduleOptions opts;
  MpSchedule *schedule;

  mp_schedule_options_init (&opts);
  schedule = mp_schedule_compute (plan, &opts, &error);
  g_assert_no_error (error);
  g_assert_nonnull (schedule);
  return schedule;
}

/* Axes: 1-2-5 steps for linear ticks and whole decades for log ticks
 * (common practice, no source). */
static void
test_axes (void)
{
  MpAxis axis;
  g_autoptr (GArray) ticks = NULL;
  g_autoptr (GArray) minor = NULL;
  g_autofree char *label = NULL, *neg = NULL, *one = NULL;

  mp_axis_init (&axis, 0.03, 0.97, FALSE);
  mp_axis_nice (&axis, 5);
  g_assert_cmpfloat (axis.min, ==, 0);
  g_assert_cmpfloat_with_epsilon (axis.max, 1.0, 1e-12);
  ticks = mp_axis_major_ticks (&axis, 5);
  g_assert_cmpuint (ticks->len, ==, 6);
  g_assert_cmpfloat_with_epsilon (g_array_index (ticks, double, 1), 0.2, 1e-12);
  label = mp_axis_format_tick (&axis, 0.4, 5);
  g_assert_cmpstr (label, ==, "0.4");

  mp_axis_init (&axis, -0.12, 0.4, FALSE);
  neg = mp_axis_format_tick (&axis, -0.1, 5);
  g_assert_cmpstr (neg, ==, "\xe2\x88\x92" "0.1");

  g_assert_true (mp_axis_wants_log (2e-7, 3e-5));
  g_assert_false (mp_axis_wants_log (20, 140));
  g_assert_false (mp_axis_wants_log (0, 140));
  /* Many decades: whole decades. */
  mp_axis_init (&axis, 3e-12, 2e-6, TRUE);
  mp_axis_nice (&axis, 8);
  g_assert_cmpfloat_with_epsilon (log10 (axis.min), -12, 1e-9);
  g_assert_cmpfloat_with_epsilon (log10 (axis.max), -5, 1e-9);
  mp_axis_set_position (&axis, 70, 0);
  g_assert_cmpfloat_with_epsilon (mp_axis_map (&axis, 1e-12), 70, 1e-9);
  g_assert_cmpfloat_with_epsilon (mp_axis_map (&axis, 1e-10), 50, 1e-9);
  g_assert_cmpfloat_with_epsilon (mp_axis_unmap (&axis, 0), 1e-5, 1e-18);
  g_clear_pointer (&ticks, g_array_unref);
  ticks = mp_axis_major_ticks (&axis, 8);
  g_assert_cmpuint (ticks->len, ==, 8);
  minor = mp_axis_minor_ticks (&axis, 8);
  g_assert_cmpuint (minor->len, ==, 7 * 8);   /* 2..9 in each of 7 decades */
  g_clear_pointer (&label, g_free);
  label = mp_axis_format_tick (&axis, 1e-6, 8);
  g_assert_cmpstr (label, ==, "10<sup>\xe2\x88\x92" "6</sup>");

  /* Under 2.5 decades: 1, 2, 5 x 10^n, plain numbers. */
  mp_axis_init (&axis, 3.4, 156, TRUE);
  mp_axis_nice (&axis, 6);
  g_assert_cmpfloat_with_epsilon (axis.min, 2, 1e-12);
  g_assert_cmpfloat_with_epsilon (axis.max, 200, 1e-12);
  g_clear_pointer (&ticks, g_array_unref);
  ticks = mp_axis_major_ticks (&axis, 6);
  g_assert_cmpuint (ticks->len, ==, 7);       /* 2 5 10 20 50 100 200 */
  g_assert_cmpfloat_with_epsilon (g_array_index (ticks, double, 1), 5, 1e-12);
  one = mp_axis_format_tick (&axis, 100, 6);
  g_assert_cmpstr (one, ==, "100");
  g_clear_pointer (&label, g_free);
  label = mp_axis_format_tick (&axis, 2e-6, 6);
  g_assert_cmpstr (label, ==, "2\xc3\x97" "10<sup>\xe2\x88\x92" "6</sup>");
}

/* Hit testing finds steps where they are drawn and nothing in the margin;
 * each kind of plot also renders to PNG (colour and grey) for review. */
static void
test_plots (void)
{
  g_autoptr (MpPlan) plan = load_demo ();
  g_autoptr (MpSchedule) schedule = schedule_for (plan);
  const double w = 640, h = 400;
  int n_steps = mp_schedule_count_steps (schedule);
  g_autofree char *tip = mp_plot_step_tooltip (schedule, 1);
  g_autofree char *no_tip = mp_plot_step_tooltip (schedule, n_steps + 1);

  /* The hover text names the step and its status. */
  g_assert_nonnull (tip);
  g_assert_true (g_str_has_prefix (tip, "Step 1"));
  g_assert_nonnull (strstr (tip, "status: "));
  g_assert_null (no_tip);

  for (int kind = MP_PLOT_QE_RATE; kind <= MP_PLOT_TIMELINE; kind++)
    {
      g_autoptr (GHashTable) found = g_hash_table_new (NULL, NULL);
      g_autofree char *dir = g_build_filename (out_dir, "sheet-png", NULL);
      g_autofree char *png = g_strdup_printf ("%s/plot-%d.png", dir, kind);
      cairo_surface_t *surface;
      cairo_t *cr;
      MpPlotStyle style;

      /* A coarse grid (one call costs about a millisecond); along x the
       * timeline needs finer steps, its steps being narrow. */
      double dx = kind == MP_PLOT_TIMELINE ? 2 : 8;
      double dy = kind == MP_PLOT_TIMELINE ? 10 : 8;

      for (double y = 0; y < h; y += dy)
        for (double x = 0; x < w; x += dx)
          {
            int k = mp_plot_hit_test (kind, plan, schedule, w, h, x, y);
            g_assert_cmpint (k, >=, 0);
            g_assert_cmpint (k, <=, n_steps);
            if (k > 0)
              g_hash_table_add (found, GINT_TO_POINTER (k));
          }
      g_test_message ("plot %d: %u of %d steps can be hit", kind,
                      g_hash_table_size (found), n_steps);
      /* Markers may overlap (equal MTE at high excess) and a coarse grid
       * misses some, but most steps must be reachable by the pointer. */
      g_assert_cmpuint (g_hash_table_size (found), >=, (guint) (n_steps / 3));
      g_assert_cmpint (mp_plot_hit_test (kind, plan, schedule, w, h, 1, h - 1), ==, 0);
      g_assert_cmpint (mp_plot_hit_test (kind, plan, NULL, w, h, w / 2, h / 2), ==, 0);

      g_mkdir_with_parents (dir, 0755);
      surface = cairo_image_surface_create (CAIRO_FORMAT_RGB24, (int) w, (int) h);
      cr = cairo_create (surface);
      cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_paint (cr);
      mp_plot_style_init (&style);
      style.selected_step = 3;
      /* No schedule yet (the window before the first plan): axes only. */
      mp_plot_draw (cr, kind, plan, NULL, &style, w, h);
      g_assert_cmpint (cairo_status (cr), ==, CAIRO_STATUS_SUCCESS);
      cairo_set_source_rgb (cr, 1, 1, 1);
      cairo_paint (cr);
      mp_plot_draw (cr, kind, plan, schedule, &style, w, h);
      g_assert_cmpint (cairo_status (cr), ==, CAIRO_STATUS_SUCCESS);
      g_assert_cmpint (cairo_surface_write_to_png (surface, png), ==, CAIRO_STATUS_SUCCESS);
      cairo_destroy (cr);
      cairo_surface_destroy (surface);
    }
}

int
main (int argc, char **argv)
{
  int status;

  g_test_init (&argc, &argv, NULL);
  mp_core_init ();
  out_dir = g_strdup (g_getenv ("G_TEST_BUILDDIR") ? g_getenv ("G_TEST_BUILDDIR") : ".");

  g_test_add_func ("/plot/axes", test_axes);
  g_test_add_func ("/plot/hit-and-render", test_plots);
  status = g_test_run ();
  g_free (out_dir);
  return status;
}
