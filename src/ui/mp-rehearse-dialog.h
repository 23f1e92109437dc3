/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-rehearse-dialog.h: the window's shift rehearsal: settings, a progress
 * bar with Cancel, a summary of the odds, and histograms of the total beam
 * time and cryogen. The work is mp_rehearse_run_async() in the core. */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"
#include "mp-rehearse.h"
#include "mp-window.h"

G_BEGIN_DECLS

#define MP_TYPE_REHEARSE_DIALOG (mp_rehearse_dialog_get_type ())
G_DECLARE_FINAL_TYPE (MpRehearseDialog, mp_rehearse_dialog, MP, REHEARSE_DIALOG, GtkWindow)

MpRehearseDialog *mp_rehearse_dialog_new (GtkWindow *parent, MpDocument *document);

/* Starts a rehearsal of the document's current schedule, as the Run
 * button does; FALSE (with the reason shown) when there is none. */
gboolean mp_rehearse_dialog_run (MpRehearseDialog *self);
void mp_rehearse_dialog_cancel (MpRehearseDialog *self);
gboolean mp_rehearse_dialog_get_running (MpRehearseDialog *self);
/* The last result, or NULL. */
const MpRehearsal *mp_rehearse_dialog_get_result (MpRehearseDialog *self);
const char *mp_rehearse_dialog_get_summary (MpRehearseDialog *self);

/* Enables the window's "win.rehearse" action to open this dialog. */
void mp_rehearse_dialog_install (MpWindow *window);

G_END_DECLS
