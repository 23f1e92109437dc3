/* SPDX-License-Identifier: GPL-3.0-or-later */
/* test-replan-window.c: the window's re-plan from measured data under Xvfb
 * (issue 6, items 3 and 5). What a re-plan means is issue 6's own
 * definition: "steps already measured are marked done; the plan continues
 * from the elapsed time and the cryogen actually left". The scheduler's
 * handling of done points is tested in test-schedule.c; here: the document
 * hands the measured points, the elapsed time and the cryogen left to the
 * scheduler (the window's schedule equals the core's for the same inputs),
 * the table and the status line show the done steps, this is not a plan
 * edit, bad values are refused, the refit's Accept passes the data on, and
 * Forget Measured Data goes back to the plain plan. */
#include "config.h"

#include <glib/gstdio.h>
#include <gtk/gtk.h>
#include <math.h>
#include <string.h>

#include "mp-error.h"
#include "mp-measured.h"
#include "mp-physics.h"
#include "mp-refit-dialog.h"
#include "mp-schedule-view.h"
#include "mp-step-item.h"
#include "mp-window.h"
#include "mp-ui-test.h"

#define DEMO MP_SOURCE_DIR "/data/examples/cold-copper-shift.mteplan"
#define DATA MP_SOURCE_DIR "/tests/data/measured/cold-copper-first-points.csv"

static int
count_done (const MpSchedule *schedule)
{
  int n = 0;

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        n += g_array_index (block->steps, MpStep, i).done;
    }
  return n;
}

static int
count_done_rows (MpWindow *window)
{
  GListModel *model = mp_schedule_view_get_model (MP_SCHEDULE_VIEW (mp_window_get_schedule_view (window)));
  int n = 0;

  for (guint i = 0; i < g_list_model_get_n_items (model); i++)
    {
      g_autoptr (MpStepItem) item = g_list_model_get_item (model, i);

      n += mp_step_item_get_step (item)->done;
    }
  return n;
}

/* The earliest start of a step still to measure, in h from shift start. */
static double
first_pending_start_h (const MpSchedule *schedule)
{
  double first = INFINITY;

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *s = &g_array_index (block->steps, MpStep, i);

          if (!s->done)
            first = MIN (first, s->start_h);
        }
    }
  return first;
}

static void
test_set_and_clear (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (DATA, &error);
  g_autofree char *before = mp_plan_checksum (mp_document_get_plan (doc));
  g_autofree char *after = NULL;
  g_autoptr (GArray) done = NULL;
  g_autoptr (MpSchedule) reference = NULL;
  const MpSchedule *schedule;
  MpScheduleOptions opts;
  double elapsed_h, plain_available_h;
  guint serial;
  int n_done;

  g_assert_no_error (error);
  g_assert_nonnull (data);
  elapsed_h = mp_measured_max_elapsed_h (data);
  /* The file's last row is at 3.809 h (tests/data/measured). */
  g_assert_cmpfloat (fabs (elapsed_h - 3.809), <, 1e-9);
  g_assert_false (mp_document_get_has_measured (doc));
  g_assert_false (g_action_group_get_action_enabled (G_ACTION_GROUP (window), "clear-measured"));
  g_assert_cmpint (count_done (mp_document_get_schedule (doc)), ==, 0);
  plain_available_h = mp_document_get_schedule (doc)->beam_time_available_h;

  /* Elapsed time from the data, cryogen from the budget. */
  serial = mp_document_get_schedule_serial (doc);
  g_assert_true (mp_document_set_measured (doc, data, NAN, NAN, &error));
  g_assert_no_error (error);
  g_assert_true (mp_document_get_has_measured (doc));
  g_assert_true (g_action_group_get_action_enabled (G_ACTION_GROUP (window), "clear-measured"));
  mp_ui_test_wait_for_schedule (doc, serial);
  schedule = mp_document_get_schedule (doc);
  g_assert_nonnull (schedule);

  /* Measured steps are done; the table shows them as such. */
  n_done = count_done (schedule);
  g_assert_cmpint (n_done, >, 0);
  g_assert_cmpint (n_done, <=, (int) data->points->len);
  g_assert_cmpint (count_done_rows (window), ==, n_done);
  /* The plan continues from the elapsed time: what is left starts there,
   * and the beam time left is the beam time less what was spent. */
  g_assert_cmpfloat (first_pending_start_h (schedule), >=, elapsed_h - 1e-9);
  g_assert_cmpfloat (fabs (schedule->beam_time_available_h - (plain_available_h - elapsed_h)), <, 1e-9);
  /* The same inputs straight to the core give the same schedule. */
  done = mp_measured_to_done_points (data, mp_document_get_plan (doc));
  mp_schedule_options_init (&opts);
  opts.elapsed_h = elapsed_h;
  opts.done = done;
  reference = mp_schedule_compute (mp_document_get_plan (doc), &opts, NULL);
  g_assert_nonnull (reference);
  g_assert_cmpint (count_done (reference), ==, n_done);
  g_assert_cmpfloat (reference->beam_time_h, ==, schedule->beam_time_h);
  g_assert_cmpfloat (reference->cryogen_L, ==, schedule->cryogen_L);
  /* What printing recomputes with. */
  mp_document_get_schedule_options (doc, &opts);
  g_assert_cmpfloat (opts.elapsed_h, ==, elapsed_h);
  g_assert_true (isnan (opts.cryogen_left_L));
  g_assert_nonnull (opts.done);
  g_assert_cmpuint (opts.done->len, ==, done->len);

  /* The status line says so. */
  g_assert_nonnull (strstr (mp_window_get_status_text (window), "Re-plan from 3.81 h"));
  {
    g_autofree char *count = g_strdup_printf ("%d steps done", n_done);

    g_assert_nonnull (strstr (mp_window_get_status_text (window), count));
  }
  /* No dewar level given: the status line says what was assumed. */
  {
    g_autofree char *assumed = g_strdup_printf ("dewar %.1f L assumed",
                                                mp_document_get_plan (doc)->cryostat.budget_L);

    g_assert_nonnull (strstr (mp_window_get_status_text (window), assumed));
  }

  /* Not a plan edit. */
  after = mp_plan_checksum (mp_document_get_plan (doc));
  g_assert_cmpstr (before, ==, after);
  g_assert_false (mp_document_get_modified (doc));
  g_assert_false (mp_document_can_undo (doc));

  /* Refused values leave the state as it was. */
  g_assert_false (mp_document_set_measured (doc, data, -1.0, NAN, &error));
  g_assert_error (error, MP_ERROR, MP_ERROR_INVALID);
  g_assert_nonnull (strstr (error->message, "elapsed beam time"));
  g_clear_error (&error);
  g_assert_false (mp_document_set_measured (doc, data, 1.0, INFINITY, &error));
  g_assert_error (error, MP_ERROR, MP_ERROR_INVALID);
  g_assert_nonnull (strstr (error->message, "cryogen left"));
  g_clear_error (&error);
  g_assert_cmpfloat (mp_document_get_elapsed_h (doc), ==, elapsed_h);
  g_assert_true (isnan (mp_document_get_cryogen_left_L (doc)));

  /* The cryogen actually left replaces the budget: less liquid, less to
   * spend (the plan's reserve stays). */
  serial = mp_document_get_schedule_serial (doc);
  g_assert_true (mp_document_set_measured (doc, data, 1.0, 20.0, &error));
  mp_ui_test_wait_for_schedule (doc, serial);
  schedule = mp_document_get_schedule (doc);
  g_assert_cmpfloat (fabs (schedule->cryogen_available_L
                           - (20.0 - mp_document_get_plan (doc)->cryostat.reserve_L)), <, 1e-9);
  g_assert_nonnull (strstr (mp_window_get_status_text (window), "dewar 20.0 L ·"));

  /* Forget Measured Data: back to the plain plan. */
  serial = mp_document_get_schedule_serial (doc);
  g_action_group_activate_action (G_ACTION_GROUP (window), "clear-measured", NULL);
  g_assert_false (mp_document_get_has_measured (doc));
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_cmpint (count_done (mp_document_get_schedule (doc)), ==, 0);
  g_assert_cmpint (count_done_rows (window), ==, 0);
  g_assert_null (strstr (mp_window_get_status_text (window), "done"));
  g_assert_cmpfloat (mp_document_get_schedule (doc)->beam_time_available_h, ==, plain_available_h);
  g_assert_false (g_action_group_get_action_enabled (G_ACTION_GROUP (window), "clear-measured"));

  gtk_window_destroy (GTK_WINDOW (window));
}

/* Measured data belong to the shift of the plan they were taken for. */
static void
test_forgotten_on_open (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (DATA, NULL);
  g_autoptr (GFile) file = g_file_new_for_path (DEMO);
  guint serial;

  g_assert_nonnull (data);
  g_assert_true (mp_document_set_measured (doc, data, NAN, NAN, NULL));
  serial = mp_document_get_schedule_serial (doc);
  g_assert_true (mp_window_open_file (window, file));
  g_assert_false (mp_document_get_has_measured (doc));
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_cmpint (count_done (mp_document_get_schedule (doc)), ==, 0);
  gtk_window_destroy (GTK_WINDOW (window));
}

/* The refit's Accept: the work function edit (undoable) and the re-plan. */
static void
test_refit_accept (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpRefitDialog *dialog = mp_refit_dialog_new (GTK_WINDOW (window), doc);
  g_autoptr (GFile) file = g_file_new_for_path (DATA);
  g_autofree char *before = mp_plan_checksum (mp_document_get_plan (doc));
  g_autofree char *after = NULL;
  GtkEditable *elapsed = mp_refit_dialog_get_entry (dialog, "elapsed_h");
  GtkEditable *cryogen = mp_refit_dialog_get_entry (dialog, "cryogen_left_L");
  guint serial;

  g_assert_nonnull (elapsed);
  g_assert_nonnull (cryogen);
  mp_refit_dialog_load_file (dialog, file);
  mp_ui_test_wait_for_fit (dialog);
  g_assert_nonnull (mp_refit_dialog_get_result (dialog));

  /* Refused: the message names the field, nothing changes. */
  gtk_editable_set_text (elapsed, "-2");
  g_assert_nonnull (mp_refit_dialog_get_field_error (dialog, "elapsed_h"));
  g_assert_nonnull (strstr (mp_refit_dialog_get_field_error (dialog, "elapsed_h"), "elapsed beam time"));
  g_assert_false (mp_refit_dialog_accept (dialog));
  gtk_editable_set_text (cryogen, "lots");
  g_assert_nonnull (strstr (mp_refit_dialog_get_field_error (dialog, "cryogen_left_L"), "cryogen left"));
  after = mp_plan_checksum (mp_document_get_plan (doc));
  g_assert_cmpstr (before, ==, after);
  g_assert_false (mp_document_get_has_measured (doc));

  /* A decimal comma is a decimal point. */
  gtk_editable_set_text (elapsed, "4,5");
  gtk_editable_set_text (cryogen, "");
  g_assert_null (mp_refit_dialog_get_field_error (dialog, "elapsed_h"));
  g_assert_null (mp_refit_dialog_get_field_error (dialog, "cryogen_left_L"));
  serial = mp_document_get_schedule_serial (doc);
  g_assert_true (mp_refit_dialog_accept (dialog));
  g_assert_true (mp_document_get_has_measured (doc));
  g_assert_cmpfloat (mp_document_get_elapsed_h (doc), ==, 4.5);
  g_assert_true (isnan (mp_document_get_cryogen_left_L (doc)));
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_cmpint (count_done (mp_document_get_schedule (doc)), >, 0);
  g_assert_cmpfloat (first_pending_start_h (mp_document_get_schedule (doc)), >=, 4.5 - 1e-9);

  /* Undo takes back the work function only; the points stay done. */
  serial = mp_document_get_schedule_serial (doc);
  mp_document_undo (doc);
  g_free (after);
  after = mp_plan_checksum (mp_document_get_plan (doc));
  g_assert_cmpstr (before, ==, after);
  g_assert_true (mp_document_get_has_measured (doc));
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_cmpint (count_done (mp_document_get_schedule (doc)), >, 0);

  gtk_window_destroy (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (window));
}

int
main (int argc, char *argv[])
{
  g_autofree char *state_dir = mp_ui_test_init (&argc, &argv, "test-replan");

  if (!g_file_test (DEMO, G_FILE_TEST_EXISTS))
    {
      g_test_skip ("the demo plan is missing");
      return g_test_run ();
    }
  g_test_add_func ("/replan-window/set-and-clear", test_set_and_clear);
  g_test_add_func ("/replan-window/forgotten-on-open", test_forgotten_on_open);
  g_test_add_func ("/replan-window/refit-accept", test_refit_accept);
  return g_test_run ();
}
