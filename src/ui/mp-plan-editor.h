/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-editor.h: the input pages (cathode, laser, detector, cryostat
 * and temperatures, scan and budget). Every edit is checked with
 * mp_plan_validate() on the candidate plan before it is committed to the
 * document; a refused value stays in its entry with the core's reason. */
#pragma once

#include <gtk/gtk.h>

#include "mp-document.h"

G_BEGIN_DECLS

#define MP_TYPE_PLAN_EDITOR (mp_plan_editor_get_type ())
G_DECLARE_FINAL_TYPE (MpPlanEditor, mp_plan_editor, MP, PLAN_EDITOR, GtkWidget)

GtkWidget *mp_plan_editor_new (void);
void mp_plan_editor_set_document (MpPlanEditor *self, MpDocument *document);
/* Shows a page: "cathode", "laser", "detector", "cryostat" or "scan". */
void mp_plan_editor_show_page (MpPlanEditor *self, const char *name);

/* The entry and the error text of a scalar field by its plan key, such as
 * "beam_time_h" or "laser.repetition_rate_kHz" (for tests). */
GtkEditable *mp_plan_editor_get_entry (MpPlanEditor *self, const char *key);
const char *mp_plan_editor_get_error (MpPlanEditor *self, const char *key);

G_END_DECLS
