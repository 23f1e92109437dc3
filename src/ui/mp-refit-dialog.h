/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-refit-dialog.h: the window's refit from measured data (issue 6):
 * import a CSV of measured points, fit the work function (and effective
 * temperatures) off the main thread, show the result with a Fowler plot
 * and residuals, and accept the fitted work function as one undoable
 * edit. The work is mp_measured_load_from_file() and mp_fit_measured()
 * in the core. */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"
#include "mp-fit.h"
#include "mp-window.h"

G_BEGIN_DECLS

#define MP_TYPE_REFIT_DIALOG (mp_refit_dialog_get_type ())
G_DECLARE_FINAL_TYPE (MpRefitDialog, mp_refit_dialog, MP, REFIT_DIALOG, GtkWindow)

MpRefitDialog *mp_refit_dialog_new (GtkWindow *parent, MpDocument *document);

/* Reads and fits the file in a worker thread; "busy" is TRUE meanwhile. */
void mp_refit_dialog_load_file (MpRefitDialog *self, GFile *file);
gboolean mp_refit_dialog_get_busy (MpRefitDialog *self);
/* The last fit, or NULL (then get_error says why, or nothing was loaded). */
const MpFitResult *mp_refit_dialog_get_result (MpRefitDialog *self);
const char *mp_refit_dialog_get_error (MpRefitDialog *self);
/* Sets the document's work function, its uncertainty and reference QE to
 * the fitted values (one undo step), then hands the measured points to the
 * document (mp_document_set_measured) so the re-plan marks them done and
 * continues from the elapsed beam time and cryogen left typed (empty: the
 * data's largest elapsed_h; the plan's budget). FALSE when there is no fit
 * or a field is refused (its message is shown next to it). */
gboolean mp_refit_dialog_accept (MpRefitDialog *self);
/* The re-plan fields: "elapsed_h" and "cryogen_left_L" (NULL otherwise),
 * and the message shown next to one, or NULL when it is accepted. */
GtkEditable *mp_refit_dialog_get_entry (MpRefitDialog *self, const char *key);
const char *mp_refit_dialog_get_field_error (MpRefitDialog *self, const char *key);

/* Enables the window's "win.import-measured" action to open this dialog. */
void mp_refit_dialog_install (MpWindow *window);

G_END_DECLS
