/* SPDX-License-Identifier: GPL-3.0-or-later */
#include "config.h"

#include "mp-ui-test.h"

#include "mp-physics.h"

char *
mp_ui_test_init (int *argc, char ***argv, const char *name)
{
  g_autofree char *pattern = g_strdup_printf ("mteplan-%s-XXXXXX", name);
  g_autofree char *tmp = g_dir_make_tmp (pattern, NULL);
  char *state_dir = g_build_filename (tmp, "state", NULL);

  g_mkdir_with_parents (state_dir, 0700);
  g_setenv ("XDG_STATE_HOME", state_dir, TRUE);
  g_setenv ("GSETTINGS_BACKEND", "memory", TRUE);
  g_setenv ("GSK_RENDERER", "cairo", TRUE);
  g_setenv ("NO_AT_BRIDGE", "1", TRUE);
  gtk_test_init (argc, argv, NULL);
  mp_core_init ();
  return state_dir;
}

static void
iterate_or_fail (gint64 end, const char *what)
{
  if (g_get_monotonic_time () > end)
    g_error ("%s within %d s", what, MP_UI_TEST_WAIT_LIMIT_S);
  if (!g_main_context_iteration (NULL, FALSE))
    g_usleep (2000);
}

void
mp_ui_test_wait_for_schedule (MpDocument *doc, guint after)
{
  gint64 end = g_get_monotonic_time () + MP_UI_TEST_WAIT_LIMIT_S * G_USEC_PER_SEC;

  while (mp_document_get_schedule_serial (doc) <= after || mp_document_get_busy (doc))
    iterate_or_fail (end, "no schedule landed");
}

void
mp_ui_test_wait_for_fit (MpRefitDialog *dialog)
{
  gint64 end = g_get_monotonic_time () + MP_UI_TEST_WAIT_LIMIT_S * G_USEC_PER_SEC;

  while (mp_refit_dialog_get_busy (dialog))
    iterate_or_fail (end, "no fit landed");
}

MpWindow *
mp_ui_test_open_demo (void)
{
  MpWindow *window = mp_window_new (NULL);
  g_autoptr (GFile) file = g_file_new_for_path (MP_UI_TEST_DEMO);
  MpDocument *doc = mp_window_get_document (window);
  guint serial = mp_document_get_schedule_serial (doc);

  g_assert_true (mp_window_open_file (window, file));
  g_assert_null (mp_window_get_error_text (window));
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_nonnull (mp_document_get_schedule (doc));
  return window;
}
