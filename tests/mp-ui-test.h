/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-ui-test.h: set-up and bounded waits shared by the window tests. */
#pragma once

#include <gtk/gtk.h>

#include "mp-refit-dialog.h"
#include "mp-window.h"

G_BEGIN_DECLS

#define MP_UI_TEST_DEMO MP_SOURCE_DIR "/data/examples/cold-copper-shift.mteplan"
#define MP_UI_TEST_WAIT_LIMIT_S 60

/* A private XDG state directory (autosaves), settings in memory, the cairo
 * renderer (no GPU), then gtk_test_init and the core. Returns the state
 * directory (free it). */
char *mp_ui_test_init (int *argc, char ***argv, const char *name);

/* Iterates the main context until a schedule newer than `after` has landed
 * and nothing is pending; fails the test after MP_UI_TEST_WAIT_LIMIT_S. */
void mp_ui_test_wait_for_schedule (MpDocument *doc, guint after);
/* Likewise until the refit dialog's fit has finished. */
void mp_ui_test_wait_for_fit (MpRefitDialog *dialog);
/* A new window on the demo plan, with its first schedule landed. */
MpWindow *mp_ui_test_open_demo (void);

G_END_DECLS
