/* SPDX-License-Identifier: GPL-3.0-or-later */
/* test-rehearse-dialog.c: the shift rehearsal in the window, under Xvfb.
 * Only the plumbing is tested here (the action opens the dialog, a run
 * shows the same odds as the core, the window stays responsive, Cancel
 * and closing stop the work); the statistics are in test-rehearse.c. */
#include "config.h"

#include <string.h>
#include <gtk/gtk.h>

#include "mp-physics.h"
#include "mp-rehearse-dialog.h"
#include "mp-window.h"
#include "mp-ui-test.h"

#define DEMO MP_SOURCE_DIR "/data/examples/cold-copper-shift.mteplan"
#define WAIT_LIMIT_S 120

/* Iterates the main loop until the rehearsal stops; counts the main-loop
 * iterations meanwhile (the window must keep running). */
static guint
wait_until_stopped (MpRehearseDialog *dialog)
{
  gint64 end = g_get_monotonic_time () + WAIT_LIMIT_S * G_USEC_PER_SEC;
  guint iterations = 0;

  while (mp_rehearse_dialog_get_running (dialog))
    {
      if (g_get_monotonic_time () > end)
        g_error ("the rehearsal did not stop within %d s", WAIT_LIMIT_S);
      if (!g_main_context_iteration (NULL, FALSE))
        g_usleep (1000);
      iterations++;
    }
  return iterations;
}

/* The nth widget of a type inside root, depth first. */
static void
collect_widgets (GtkWidget *w, GType type, GPtrArray *out)
{
  if (G_TYPE_CHECK_INSTANCE_TYPE (w, type))
    g_ptr_array_add (out, w);
  for (GtkWidget *c = gtk_widget_get_first_child (w); c != NULL; c = gtk_widget_get_next_sibling (c))
    collect_widgets (c, type, out);
}

static gpointer
find_widget (GtkWidget *root, GType type, guint nth)
{
  g_autoptr (GPtrArray) found = g_ptr_array_new ();

  collect_widgets (root, type, found);
  return nth < found->len ? g_ptr_array_index (found, nth) : NULL;
}

static GtkSpinButton *
find_spin (GtkWidget *root, int nth)
{
  return find_widget (root, GTK_TYPE_SPIN_BUTTON, nth);
}

static void
test_action_enabled (void)
{
  MpWindow *window = mp_window_new (NULL);

  g_assert_true (g_action_group_get_action_enabled (G_ACTION_GROUP (window), "rehearse"));
  g_action_group_activate_action (G_ACTION_GROUP (window), "rehearse", NULL);
  while (g_main_context_iteration (NULL, FALSE))
    ;
  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_run_matches_core (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpRehearseDialog *dialog = mp_rehearse_dialog_new (GTK_WINDOW (window), doc);
  g_autoptr (MpRehearsal) direct = NULL;
  g_autoptr (GError) error = NULL;
  const MpRehearsal *shown;
  MpRehearseOptions opts;
  GtkSpinButton *trials = find_spin (GTK_WIDGET (dialog), 0);

  g_assert_nonnull (trials);
  gtk_spin_button_set_value (trials, 300);
  /* Not presented: the logic does not need a mapped window (a mapped
   * spin button warns about focus when destroyed under Xvfb). */
  g_assert_true (mp_rehearse_dialog_run (dialog));
  g_assert_true (mp_rehearse_dialog_get_running (dialog));
  wait_until_stopped (dialog);
  shown = mp_rehearse_dialog_get_result (dialog);
  g_assert_nonnull (shown);
  g_assert_true (shown->has_shift);
  g_assert_cmpint (shown->trials, ==, 300);
  g_assert_nonnull (strstr (mp_rehearse_dialog_get_summary (dialog), "Beam time"));

  /* The dialog shows what the core computes for the same seed. */
  mp_rehearse_options_init (&opts);
  opts.trials = 300;
  opts.steps = FALSE;
  direct = mp_rehearse_run (mp_document_get_schedule_plan (doc), mp_document_get_schedule (doc),
                            &opts, NULL, NULL, NULL, &error);
  g_assert_no_error (error);
  g_assert_cmpfloat (shown->probability_within_beam_time, ==, direct->probability_within_beam_time);
  g_assert_cmpfloat (shown->beam_time_h_percentiles[2], ==, direct->beam_time_h_percentiles[2]);

  gtk_window_destroy (GTK_WINDOW (dialog));
  gtk_window_destroy (GTK_WINDOW (window));
}

/* A long run (counting on, many trials) stops on Cancel, and closing the
 * dialog while it runs stops it too, without crashing. */
static void
test_cancel_and_close (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpRehearseDialog *dialog = mp_rehearse_dialog_new (GTK_WINDOW (window), doc);
  GtkSpinButton *trials = find_spin (GTK_WIDGET (dialog), 0);
  GtkCheckButton *counting = find_widget (GTK_WIDGET (dialog), GTK_TYPE_CHECK_BUTTON, 0);

  g_assert_nonnull (counting);
  gtk_check_button_set_active (counting, TRUE);
  gtk_spin_button_set_value (trials, 1000000);
  /* Not presented: the logic does not need a mapped window (a mapped
   * spin button warns about focus when destroyed under Xvfb). */

  g_assert_true (mp_rehearse_dialog_run (dialog));
  for (int i = 0; i < 20; i++)
    g_main_context_iteration (NULL, FALSE);
  mp_rehearse_dialog_cancel (dialog);
  wait_until_stopped (dialog);
  g_assert_null (mp_rehearse_dialog_get_result (dialog));

  /* Destroyed while running (as with its parent window): the dialog goes
   * at once (the run holds no reference to it), which cancels the run, and
   * the run's result arriving later finds no dialog. */
  g_assert_true (mp_rehearse_dialog_run (dialog));
  g_object_add_weak_pointer (G_OBJECT (dialog), (gpointer *) &dialog);
  gtk_window_destroy (GTK_WINDOW (dialog));
  g_assert_null (dialog);
  for (int i = 0; i < 200; i++)
    {
      g_main_context_iteration (NULL, FALSE);
      g_usleep (1000);
    }
  gtk_window_destroy (GTK_WINDOW (window));
}

int
main (int argc, char *argv[])
{
  g_autofree char *state_dir = mp_ui_test_init (&argc, &argv, "test-rehearse-dialog");

  if (!g_file_test (DEMO, G_FILE_TEST_EXISTS))
    {
      g_test_skip ("the demo plan is missing");
      return g_test_run ();
    }
  g_test_add_func ("/rehearse-dialog/action-enabled", test_action_enabled);
  g_test_add_func ("/rehearse-dialog/run-matches-core", test_run_matches_core);
  g_test_add_func ("/rehearse-dialog/cancel-and-close", test_cancel_and_close);
  return g_test_run ();
}
