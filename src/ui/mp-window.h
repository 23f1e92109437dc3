/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-window.h: the planning window: input pages, plots, schedule table and
 * status line over one MpDocument.
 *
 * Dialogs written elsewhere (refit from measured data, rehearsal) reach the
 * plan through mp_window_get_document() or mp_window_get_plan() /
 * mp_window_set_plan(), and hook into the disabled actions
 * "win.import-measured" and "win.rehearse" with mp_window_enable_action(). */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"

G_BEGIN_DECLS

#define MP_TYPE_WINDOW (mp_window_get_type ())
G_DECLARE_FINAL_TYPE (MpWindow, mp_window, MP, WINDOW, GtkApplicationWindow)

MpWindow *mp_window_new (GtkApplication *application);

MpDocument *mp_window_get_document (MpWindow *self);
const MpPlan *mp_window_get_plan (MpWindow *self);
/* Takes ownership; one undoable step. */
void mp_window_set_plan (MpWindow *self, MpPlan *plan);

/* Opens a file into this window; on failure shows the loader's message and
 * leaves the document untouched. */
gboolean mp_window_open_file (MpWindow *self, GFile *file);
void mp_window_offer_recovery (MpWindow *self, const char *autosave_path);
/* What the Recover / Discard buttons do; both remove the autosave file. */
void mp_window_respond_recovery (MpWindow *self, gboolean recover);
void mp_window_enable_action (MpWindow *self, const char *name,
                              GCallback activate, gpointer user_data);

/* What the Export and Print commands do. mp_window_print() shows the
 * print dialog, or with export_path writes the printed pages to a PDF
 * through GtkPrintOperation (no dialog). */
gboolean mp_window_export_pdf (MpWindow *self, const char *path, GError **error);
gboolean mp_window_export_csv (MpWindow *self, const char *path, GError **error);
GtkPrintOperationResult mp_window_print (MpWindow *self, const char *export_path, GError **error);

/* For tests and screenshots. */
GtkWidget *mp_window_get_editor (MpWindow *self);
GtkWidget *mp_window_get_schedule_view (MpWindow *self);
const char *mp_window_get_status_text (MpWindow *self);
/* The message shown in the error bar, or NULL when none is shown. */
const char *mp_window_get_error_text (MpWindow *self);
void mp_window_show_plot (MpWindow *self, const char *name);
/* Writes the autosave file now when modified; returns its path or NULL. */
const char *mp_window_autosave_now (MpWindow *self);
/* Directory of autosave files. */
char *mp_autosave_dir (void);

G_END_DECLS
