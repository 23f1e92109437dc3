/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-tuning-csv.c: reader of tuning-curve CSV files (see mp-tuning-csv.h). */
#include "config.h"

#include <math.h>
#include <string.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>

#include "mp-error.h"
#include "mp-plan-private.h"
#include "mp-tuning-csv.h"

typedef struct
{
  const char *name;
  guint line;
  int columns[2];        /* column index of wavelength_nm, pulse_energy_uJ */
  guint n_columns;
} CsvState;

static char *
clean_cell (const char *cell)
{
  char *s = g_strstrip (g_strdup (cell));
  gsize n = strlen (s);

  if (n >= 2 && s[0] == '"' && s[n - 1] == '"')
    {
      memmove (s, s + 1, n - 2);
      s[n - 2] = '\0';
      g_strstrip (s);
    }
  return s;
}

static gboolean
read_header (CsvState *st, char **cells, GError **error)
{
  st->columns[0] = st->columns[1] = -1;
  st->n_columns = g_strv_length (cells);
  for (guint c = 0; cells[c] != NULL; c++)
    {
      g_autofree char *cell = clean_cell (cells[c]);

      for (guint k = 0; k < 2; k++)
        if (g_ascii_strcasecmp (cell, mp_point_number_fields[k].path) == 0)
          st->columns[k] = (int) c;
    }
  for (guint k = 0; k < 2; k++)
    if (st->columns[k] < 0)
      {
        g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                     _("%s line %u: expected a header line naming the columns "
                       "wavelength_nm,pulse_energy_uJ, found no column %s"),
                     st->name, st->line, mp_point_number_fields[k].path);
        return FALSE;
      }
  return TRUE;
}

static gboolean
read_cell (CsvState *st, char **cells, guint k, double *out, GError **error)
{
  const MpNumberField *field = &mp_point_number_fields[k];
  guint c = (guint) st->columns[k];
  g_autofree char *cell = NULL;
  g_autofree char *expected = mp_number_field_expectation (field);
  char *end = NULL;
  double value;

  if (c >= g_strv_length (cells))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s line %u, column %u (%s): missing (expected %s)"),
                   st->name, st->line, c + 1, field->path, expected);
      return FALSE;
    }
  cell = clean_cell (cells[c]);
  value = g_ascii_strtod (cell, &end);
  if (*cell == '\0' || *end != '\0' || !mp_number_field_accepts (field, value)
      || strlen (cell) > MP_PLAN_MAX_NUMBER_CHARS)
    {
      g_autofree char *shown = g_utf8_make_valid (cell, MIN (strlen (cell), 40));
      const char *why = (*cell != '\0' && *end == '\0' && !isfinite (value))
                        ? _(" (NaN and infinity are not numbers here)") : "";

      if (*cell != '\0' && *end == '\0' && isfinite (value))
        g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                     _("%s line %u, column %u (%s): expected %s, found %s"),
                     st->name, st->line, c + 1, field->path, expected, shown);
      else
        g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                     _("%s line %u, column %u (%s): expected %s, found \"%s%s\"%s"),
                     st->name, st->line, c + 1, field->path, expected, shown,
                     strlen (cell) > 40 ? "…" : "", why);
      return FALSE;
    }
  *out = value;
  return TRUE;
}

static gboolean
read_row (CsvState *st, char **cells, GArray *points, GError **error)
{
  MpTuningPoint p;

  if (!read_cell (st, cells, 0, &p.wavelength_nm, error)
      || !read_cell (st, cells, 1, &p.pulse_energy_uJ, error))
    return FALSE;
  if (points->len > 0)
    {
      const MpTuningPoint *prev = &g_array_index (points, MpTuningPoint, points->len - 1);

      if (!(p.wavelength_nm > prev->wavelength_nm))
        {
          g_autofree char *a = mp_format_double (prev->wavelength_nm);
          g_autofree char *b = mp_format_double (p.wavelength_nm);

          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       _("%s line %u, column %d (wavelength_nm): expected a number > %s "
                         "(wavelengths strictly ascending), found %s"),
                       st->name, st->line, st->columns[0] + 1, a, b);
          return FALSE;
        }
    }
  if (points->len >= MP_PLAN_MAX_POINTS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("%s line %u: too many points, at most %d"),
                   st->name, st->line, MP_PLAN_MAX_POINTS);
      return FALSE;
    }
  g_array_append_val (points, p);
  return TRUE;
}

GArray *
mp_tuning_csv_parse (const char *data, gsize length, const char *display_name,
                     GError **error)
{
  g_autoptr(GArray) points = NULL;
  g_auto(GStrv) lines = NULL;
  g_autofree char *text = NULL;
  const char *bad = NULL;
  CsvState st = { display_name != NULL ? display_name : "CSV", 0, { -1, -1 }, 0 };
  gboolean have_header = FALSE;

  g_return_val_if_fail (data != NULL || length == 0, NULL);

  if (length > MP_PLAN_MAX_FILE_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT, _("%s: file too large (%zu bytes), at most %d"),
                   st.name, length, MP_PLAN_MAX_FILE_BYTES);
      return NULL;
    }
  if (!g_utf8_validate_len (data, length, &bad))
    {
      guint line = 1;

      for (const char *p = data; p < bad; p++)
        line += *p == '\n';
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s line %u: expected UTF-8 text, found the invalid byte 0x%02x"),
                   st.name, line, (guchar) *bad);
      return NULL;
    }
  text = g_strndup (data, length);
  lines = g_strsplit (text, "\n", -1);
  points = g_array_new (FALSE, FALSE, sizeof (MpTuningPoint));
  for (guint i = 0; lines[i] != NULL; i++)
    {
      g_auto(GStrv) cells = NULL;
      char *line = g_strstrip (lines[i]);

      st.line = i + 1;
      if (*line == '\0' || *line == '#')
        continue;
      cells = g_strsplit (line, ",", -1);
      if (!have_header)
        {
          if (!read_header (&st, cells, error))
            return NULL;
          have_header = TRUE;
        }
      else if (!read_row (&st, cells, points, error))
        return NULL;
    }
  if (points->len < MP_PLAN_MIN_POINTS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s: expected at least %d points, found %u"),
                   st.name, MP_PLAN_MIN_POINTS, points->len);
      return NULL;
    }
  return g_steal_pointer (&points);
}

GArray *
mp_tuning_csv_load (const char *path, const char *display_name, GError **error)
{
  g_autofree char *data = NULL;
  gsize length = 0;
  GError *local = NULL;
  GStatBuf st;

  g_return_val_if_fail (path != NULL, NULL);

  if (display_name == NULL)
    display_name = path;
  if (g_stat (path, &st) == 0 && st.st_size > MP_PLAN_MAX_FILE_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT, _("%s: file too large (%lld bytes), at most %d"),
                   display_name, (long long) st.st_size, MP_PLAN_MAX_FILE_BYTES);
      return NULL;
    }
  if (!g_file_get_contents (path, &data, &length, &local))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_IO, _("%s: cannot read: %s"),
                   display_name, local->message);
      g_error_free (local);
      return NULL;
    }
  return mp_tuning_csv_parse (data, length, display_name, error);
}
