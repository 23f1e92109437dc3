/* SPDX-License-Identifier: GPL-3.0-or-later */
/* test-refit-dialog.c: the window's refit from measured data under Xvfb
 * (issue 6, item 5). The fit itself is checked in test-fit.c; here: the
 * action is enabled, a data file is fitted off the main thread, Accept is
 * one undoable edit of the work function, a bad file shows its message
 * and leaves the plan untouched, and the plot renders. */
#include "config.h"

#include <glib/gstdio.h>
#include <gtk/gtk.h>
#include <math.h>
#include <string.h>

#include "mp-fit-plot.h"
#include "mp-physics.h"
#include "mp-refit-dialog.h"
#include "mp-window.h"
#include "mp-ui-test.h"

#define DEMO MP_SOURCE_DIR "/data/examples/cold-copper-shift.mteplan"
#define DATA MP_SOURCE_DIR "/tests/data/measured/cold-copper-first-points.csv"
#define BAD MP_SOURCE_DIR "/tests/data/bad/measured-qe-text.csv"

static void
test_action_enabled (void)
{
  MpWindow *window = mp_ui_test_open_demo ();

  g_assert_true (g_action_group_get_action_enabled (G_ACTION_GROUP (window), "import-measured"));
  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_fit_and_accept (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpRefitDialog *dialog = mp_refit_dialog_new (GTK_WINDOW (window), doc);
  g_autoptr (GFile) file = g_file_new_for_path (DATA);
  double phi_before = mp_document_get_plan (doc)->cathode.work_function_eV;
  const MpFitResult *fit;

  mp_refit_dialog_load_file (dialog, file);
  g_assert_true (mp_refit_dialog_get_busy (dialog));
  mp_ui_test_wait_for_fit (dialog);
  fit = mp_refit_dialog_get_result (dialog);
  g_assert_nonnull (fit);
  g_assert_null (mp_refit_dialog_get_error (dialog));
  /* The file was drawn from the demo model with 4.55 eV. */
  g_assert_cmpfloat (fabs (fit->work_function_eV - 4.55), <, 4.0 * fit->work_function_sigma_eV + 1e-4);
  g_assert_cmpfloat (mp_document_get_plan (doc)->cathode.work_function_eV, ==, phi_before);

  g_assert_true (mp_refit_dialog_accept (dialog));
  g_assert_cmpfloat (mp_document_get_plan (doc)->cathode.work_function_eV, ==, fit->work_function_eV);
  g_assert_cmpfloat (mp_document_get_plan (doc)->cathode.work_function_sigma_eV, ==,
                     fit->work_function_sigma_eV);
  /* One undo step restores the plan's own value. */
  g_assert_true (mp_document_can_undo (doc));
  mp_document_undo (doc);
  g_assert_cmpfloat (mp_document_get_plan (doc)->cathode.work_function_eV, ==, phi_before);

  gtk_window_destroy (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_bad_file (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpRefitDialog *dialog = mp_refit_dialog_new (GTK_WINDOW (window), doc);
  g_autoptr (GFile) file = g_file_new_for_path (BAD);
  g_autofree char *before = mp_plan_to_data (mp_document_get_plan (doc), NULL);
  g_autofree char *after = NULL;

  mp_refit_dialog_load_file (dialog, file);
  mp_ui_test_wait_for_fit (dialog);
  g_assert_null (mp_refit_dialog_get_result (dialog));
  g_assert_nonnull (mp_refit_dialog_get_error (dialog));
  g_assert_nonnull (strstr (mp_refit_dialog_get_error (dialog),
                            "measured-qe-text.csv:7: column \"qe\""));
  g_assert_false (mp_refit_dialog_accept (dialog));
  after = mp_plan_to_data (mp_document_get_plan (doc), NULL);
  g_assert_cmpstr (before, ==, after);
  gtk_window_destroy (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_plot_renders (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpRefitDialog *dialog = mp_refit_dialog_new (GTK_WINDOW (window), mp_window_get_document (window));
  g_autoptr (GFile) file = g_file_new_for_path (DATA);
  cairo_surface_t *surface = cairo_image_surface_create (CAIRO_FORMAT_RGB24, 640, 480);
  cairo_t *cr = cairo_create (surface);
  MpPlotInk ink;
  const unsigned char *px;
  int stride, dark = 0;

  mp_refit_dialog_load_file (dialog, file);
  mp_ui_test_wait_for_fit (dialog);
  g_assert_nonnull (mp_refit_dialog_get_result (dialog));
  cairo_set_source_rgb (cr, 1, 1, 1);
  cairo_paint (cr);
  mp_plot_ink_init (&ink, FALSE, FALSE, 10.0);
  mp_fit_plot_draw (cr, mp_refit_dialog_get_result (dialog), &ink, 640, 480);
  g_assert_cmpint (cairo_status (cr), ==, CAIRO_STATUS_SUCCESS);
  cairo_surface_flush (surface);
  px = cairo_image_surface_get_data (surface);
  stride = cairo_image_surface_get_stride (surface);
  for (int y = 0; y < 480; y++)
    for (int x = 0; x < 640; x++)
      dark += px[y * stride + 4 * x + 1] < 128;
  /* Axes, curve, markers and labels: something was drawn. */
  g_assert_cmpint (dark, >, 2000);
  cairo_destroy (cr);
  cairo_surface_destroy (surface);
  gtk_window_present (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (window));
}

int
main (int argc, char *argv[])
{
  g_autofree char *state_dir = mp_ui_test_init (&argc, &argv, "test-refit");

  if (!g_file_test (DEMO, G_FILE_TEST_EXISTS))
    {
      g_test_skip ("the demo plan is missing");
      return g_test_run ();
    }
  g_test_add_func ("/refit-dialog/action-enabled", test_action_enabled);
  g_test_add_func ("/refit-dialog/fit-and-accept", test_fit_and_accept);
  g_test_add_func ("/refit-dialog/bad-file", test_bad_file);
  g_test_add_func ("/refit-dialog/plot-renders", test_plot_renders);
  return g_test_run ();
}
