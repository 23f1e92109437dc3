/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-atomic.h: replace a file so that a reader (or a crash) sees either
 * the old or the new content, never a mix. Used for plans, PDFs, CSVs and
 * autosaves. */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

/* Writes data to a temporary file beside path, flushes it to disk, keeps
 * the previous file as "PATH~" when keep_backup is TRUE, and renames the
 * temporary file over path. The new file keeps the old one's permissions.
 * On failure path is untouched and the error (MP_ERROR_IO) names the path
 * and the system's reason. */
gboolean mp_atomic_write (const char *path, const char *data, gsize len,
                          gboolean keep_backup, GError **error);

/* "PATH~" */
char *mp_atomic_backup_path (const char *path);

G_END_DECLS
