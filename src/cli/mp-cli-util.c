/* SPDX-License-Identifier: GPL-3.0-or-later */
#include "config.h"

#include "mp-cli.h"
#include "mp-error.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>

int
mp_cli_fail (const char *format, ...)
{
  va_list args;
  g_autofree char *message = NULL;

  va_start (args, format);
  message = g_strdup_vprintf (format, args);
  va_end (args);
  fprintf (stderr, "mteplan-cli: %s\n", message);
  return MP_EXIT_BAD_INPUT;
}

gboolean
mp_cli_parse_double (const char *option,
                     const char *text,
                     double min,
                     double max,
                     double *out,
                     GError **error)
{
  char *end = NULL;
  double value;

  g_return_val_if_fail (option != NULL, FALSE);
  g_return_val_if_fail (out != NULL, FALSE);

  if (text == NULL || *text == '\0')
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected a number from %g to %g, found nothing",
                   option, min, max);
      return FALSE;
    }
  errno = 0;
  value = g_ascii_strtod (text, &end);
  if (end == text || *end != '\0' || !isfinite (value))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected a number from %g to %g, found \"%s\"",
                   option, min, max, text);
      return FALSE;
    }
  if (value < min || value > max)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected a number from %g to %g, found %s",
                   option, min, max, text);
      return FALSE;
    }
  *out = value;
  return TRUE;
}

gboolean
mp_cli_write_output (const char *path, const char *text, gsize length, GError **error)
{
  if (g_strcmp0 (path, "-") == 0)
    {
      if (fwrite (text, 1, length, stdout) != length || fflush (stdout) != 0)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_IO, "could not write to standard output");
          return FALSE;
        }
      return TRUE;
    }
  return g_file_set_contents (path, text, length, error);
}

char *
mp_cli_json_to_string (JsonNode *node)
{
  g_autoptr (JsonGenerator) gen = json_generator_new ();

  json_generator_set_pretty (gen, TRUE);
  json_generator_set_indent (gen, 2);
  json_generator_set_root (gen, node);
  return json_generator_to_data (gen, NULL);
}
