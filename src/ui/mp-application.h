/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-application.h: the single-instance application. */
#pragma once

#include <gtk/gtk.h>

G_BEGIN_DECLS

#define MP_TYPE_APPLICATION (mp_application_get_type ())
G_DECLARE_FINAL_TYPE (MpApplication, mp_application, MP, APPLICATION, GtkApplication)

MpApplication *mp_application_new (void);
/* NULL when the schema is not installed (running from a build tree). */
GSettings *mp_application_get_settings (MpApplication *self);
/* Remembers a plan in the recent files (settings and GtkRecentManager). */
void mp_application_add_recent (MpApplication *self, const char *path);
/* Recent plans, newest first (NULL-terminated; free with g_strfreev). */
char **mp_application_dup_recent (MpApplication *self);

G_END_DECLS
