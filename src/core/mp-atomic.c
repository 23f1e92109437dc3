/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-atomic.c: atomic file replacement with a backup (see mp-atomic.h). */
#include "config.h"

#include <errno.h>
#include <stdlib.h>
#include <fcntl.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>

#include "mp-atomic.h"
#include "mp-error.h"

char *
mp_atomic_backup_path (const char *path)
{
  g_return_val_if_fail (path != NULL, NULL);

  return g_strconcat (path, "~", NULL);
}

static gboolean
fail_errno (GError **error, const char *path, const char *what, int saved_errno)
{
  g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Could not save “%s”: %s: %s"),
               path, what, g_strerror (saved_errno));
  return FALSE;
}

static gboolean
write_all (int fd, const char *data, gsize len)
{
  while (len > 0)
    {
      ssize_t n = write (fd, data, len);

      if (n < 0 && errno == EINTR)
        continue;
      if (n <= 0)
        return FALSE;
      data += n;
      len -= (gsize) n;
    }
  return TRUE;
}

/* Keeps the current file as PATH~: a hard link when the file system has
 * them (no copy, and the old content stays intact), else a copy. */
static gboolean
make_backup (const char *path, GError **error)
{
  g_autofree char *backup = mp_atomic_backup_path (path);
  g_autofree char *contents = NULL;
  gsize length = 0;
  GError *local = NULL;

  if (g_unlink (backup) != 0 && errno != ENOENT)
    return fail_errno (error, path, _("cannot replace the backup"), errno);
  if (link (path, backup) == 0)
    return TRUE;
  if (errno == ENOENT)
    return TRUE;                /* nothing to back up */
  if (!g_file_get_contents (path, &contents, &length, &local)
      || !g_file_set_contents (backup, contents, (gssize) length, &local))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Could not save “%s”: cannot keep a backup: %s"),
                   path, local->message);
      g_error_free (local);
      return FALSE;
    }
  return TRUE;
}

static void
sync_directory (const char *dir)
{
  int fd = open (dir, O_RDONLY | O_DIRECTORY | O_CLOEXEC);

  if (fd >= 0)
    {
      fsync (fd);
      close (fd);
    }
}

gboolean
mp_atomic_write (const char *path, const char *data, gsize len,
                 gboolean keep_backup, GError **error)
{
  g_autofree char *dir = NULL;
  g_autofree char *base = NULL;
  g_autofree char *tmp = NULL;
  struct stat st;
  int fd;

  g_return_val_if_fail (path != NULL, FALSE);
  g_return_val_if_fail (data != NULL || len == 0, FALSE);
  g_return_val_if_fail (error == NULL || *error == NULL, FALSE);

  /* Replace the file a symbolic link points to, not the link. */
  if (g_file_test (path, G_FILE_TEST_IS_SYMLINK))
    {
      char *target = realpath (path, NULL);

      if (target != NULL)
        {
          g_autofree char *resolved = g_strdup (target);

          free (target);
          return mp_atomic_write (resolved, data, len, keep_backup, error);
        }
    }
  dir = g_path_get_dirname (path);
  base = g_path_get_basename (path);
  tmp = g_strdup_printf ("%s%c.%s.XXXXXX", dir, G_DIR_SEPARATOR, base);
  fd = g_mkstemp_full (tmp, O_RDWR | O_CLOEXEC, 0666);
  if (fd < 0)
    return fail_errno (error, path, _("cannot create a file in its folder"), errno);
  if (stat (path, &st) == 0)
    fchmod (fd, st.st_mode & 07777);
  if (!write_all (fd, data, len) || fsync (fd) != 0)
    {
      int saved = errno;

      close (fd);
      g_unlink (tmp);
      return fail_errno (error, path, _("cannot write"), saved);
    }
  if (close (fd) != 0)
    {
      int saved = errno;

      g_unlink (tmp);
      return fail_errno (error, path, _("cannot write"), saved);
    }
  if (keep_backup && !make_backup (path, error))
    {
      g_unlink (tmp);
      return FALSE;
    }
  if (g_rename (tmp, path) != 0)
    {
      int saved = errno;

      g_unlink (tmp);
      return fail_errno (error, path, _("cannot replace the file"), saved);
    }
  sync_directory (dir);
  return TRUE;
}
