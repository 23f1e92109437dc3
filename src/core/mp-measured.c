/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-measured.c: the measured-data CSV reader (see mp-measured.h). */
#include "config.h"

#include "mp-measured.h"
#include "mp-error.h"
#include "mp-physics.h"

#include <math.h>
#include <string.h>

typedef enum
{
  COL_TEMPERATURE,
  COL_PHOTON_ENERGY,
  COL_WAVELENGTH,
  COL_QE,
  COL_QE_SIGMA,
  COL_MTE,
  COL_MTE_SIGMA,
  COL_ELECTRONS,
  COL_ELAPSED,
  N_COLS
} MeasuredColumn;

typedef struct
{
  const char *name;
  double min;            /* accepted range */
  double max;
  gboolean min_open;     /* min excluded */
  gboolean optional;     /* empty cell allowed */
} ColumnSpec;

static const ColumnSpec column_specs[N_COLS] = {
  [COL_TEMPERATURE] = { "temperature_K", 0.0, 3000.0, TRUE, FALSE },
  [COL_PHOTON_ENERGY] = { "photon_energy_eV", 0.1, 100.0, FALSE, FALSE },
  [COL_WAVELENGTH] = { "wavelength_nm", 10.0, 10000.0, FALSE, FALSE },
  [COL_QE] = { "qe", 0.0, 1.0, TRUE, FALSE },
  [COL_QE_SIGMA] = { "qe_sigma", 0.0, 1.0, TRUE, TRUE },
  [COL_MTE] = { "mte_meV", 0.0, 10000.0, TRUE, TRUE },
  [COL_MTE_SIGMA] = { "mte_sigma_meV", 0.0, 10000.0, TRUE, TRUE },
  [COL_ELECTRONS] = { "electrons", 0.0, 1e18, FALSE, TRUE },
  [COL_ELAPSED] = { "elapsed_h", 0.0, 1000.0, FALSE, TRUE },
};

typedef struct
{
  const char *name;
  int line;
  int index[N_COLS];     /* field index of each known column, -1 if absent */
  int n_fields;          /* fields in the header */
} ReaderState;

static void
describe_range (const ColumnSpec *spec, GString *out)
{
  if (spec->max >= 1e17)
    g_string_append_printf (out, "a number %s %g", spec->min_open ? ">" : ">=", spec->min);
  else if (spec->min_open)
    g_string_append_printf (out, "a number > %g and <= %g", spec->min, spec->max);
  else
    g_string_append_printf (out, "a number from %g to %g", spec->min, spec->max);
}

static gboolean
fail_cell (const ReaderState *st, MeasuredColumn col, const char *found, GError **error)
{
  g_autoptr (GString) expected = g_string_new (NULL);

  describe_range (&column_specs[col], expected);
  if (found == NULL || *found == '\0')
    g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                 "%s:%d: column \"%s\": expected %s, found nothing",
                 st->name, st->line, column_specs[col].name, expected->str);
  else
    g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                 "%s:%d: column \"%s\": expected %s, found \"%s\"",
                 st->name, st->line, column_specs[col].name, expected->str, found);
  return FALSE;
}

/* Splits one line at commas outside double quotes; quotes are removed
 * ("" inside quotes is one quote) and cells are stripped of blanks. */
static char **
split_fields (const char *line)
{
  GPtrArray *fields = g_ptr_array_new ();
  GString *cell = g_string_new (NULL);
  gboolean quoted = FALSE;

  for (const char *c = line;; c++)
    {
      if (*c == '"' && quoted && c[1] == '"')
        g_string_append_c (cell, *c++);
      else if (*c == '"')
        quoted = !quoted;
      else if (*c == '\0' || (*c == ',' && !quoted))
        {
          g_ptr_array_add (fields, g_strdup (g_strstrip (cell->str)));
          g_string_truncate (cell, 0);
          if (*c == '\0')
            break;
        }
      else
        g_string_append_c (cell, *c);
    }
  g_string_free (cell, TRUE);
  g_ptr_array_add (fields, NULL);
  return (char **) g_ptr_array_free (fields, FALSE);
}

static int
find_column (const char *name)
{
  for (int c = 0; c < N_COLS; c++)
    if (strcmp (column_specs[c].name, name) == 0)
      return c;
  return -1;
}

static int
find_column_ignoring_case (const char *name)
{
  for (int c = 0; c < N_COLS; c++)
    if (g_ascii_strcasecmp (column_specs[c].name, name) == 0)
      return c;
  return -1;
}

static gboolean
read_header (ReaderState *st, const char *line, GError **error)
{
  g_auto (GStrv) fields = split_fields (line);

  for (int c = 0; c < N_COLS; c++)
    st->index[c] = -1;
  st->n_fields = g_strv_length (fields);
  for (int i = 0; i < st->n_fields; i++)
    {
      int c = find_column (fields[i]);

      if (c < 0 && find_column_ignoring_case (fields[i]) >= 0)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       "%s:%d: header: column \"%s\" must be spelled \"%s\" (units are case-sensitive)",
                       st->name, st->line, fields[i],
                       column_specs[find_column_ignoring_case (fields[i])].name);
          return FALSE;
        }
      if (c < 0)
        continue;  /* other columns are the user's own */
      if (st->index[c] >= 0)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       "%s:%d: header: column \"%s\" appears twice",
                       st->name, st->line, fields[i]);
          return FALSE;
        }
      st->index[c] = i;
    }
  if (st->index[COL_TEMPERATURE] < 0 || st->index[COL_QE] < 0 ||
      (st->index[COL_PHOTON_ENERGY] < 0 && st->index[COL_WAVELENGTH] < 0))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s:%d: header: expected the columns temperature_K, "
                   "photon_energy_eV (or wavelength_nm) and qe, found \"%s\"",
                   st->name, st->line, line);
      return FALSE;
    }
  return TRUE;
}

/* Reads one cell; an absent column or an empty optional cell gives NAN. */
static gboolean
read_cell (const ReaderState *st, char **fields, MeasuredColumn col,
           double *out, GError **error)
{
  const ColumnSpec *spec = &column_specs[col];
  const char *text;
  char *end = NULL;
  double v;

  *out = NAN;
  if (st->index[col] < 0)
    return TRUE;
  text = fields[st->index[col]];
  if (*text == '\0' && spec->optional)
    return TRUE;
  v = g_ascii_strtod (text, &end);
  if (*text == '\0' || end == text || *end != '\0' || !isfinite (v))
    return fail_cell (st, col, text, error);
  if (v > spec->max || v < spec->min || (spec->min_open && v == spec->min))
    return fail_cell (st, col, text, error);
  *out = v;
  return TRUE;
}

static gboolean
resolve_photon_energy (const ReaderState *st, char **fields,
                       MpMeasuredPoint *p, GError **error)
{
  double energy = NAN, wavelength = NAN;
  int ie = st->index[COL_PHOTON_ENERGY], iw = st->index[COL_WAVELENGTH];

  /* With both columns, one of the two cells may be empty. */
  if (ie >= 0 && !(iw >= 0 && *fields[ie] == '\0') &&
      !read_cell (st, fields, COL_PHOTON_ENERGY, &energy, error))
    return FALSE;
  if (iw >= 0 && !(ie >= 0 && *fields[iw] == '\0') &&
      !read_cell (st, fields, COL_WAVELENGTH, &wavelength, error))
    return FALSE;
  if (isnan (energy) && isnan (wavelength))
    return fail_cell (st, COL_PHOTON_ENERGY, "", error);
  if (isnan (energy))
    energy = mp_photon_energy_eV_from_wavelength_nm (wavelength);
  else if (!isnan (wavelength) &&
           fabs (mp_photon_energy_eV_from_wavelength_nm (wavelength) / energy - 1.0) > 1e-4)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s:%d: column \"wavelength_nm\": expected the wavelength of "
                   "%g eV (%.4f nm), found \"%s\"",
                   st->name, st->line, energy,
                   mp_wavelength_nm_from_photon_energy_eV (energy),
                   fields[st->index[COL_WAVELENGTH]]);
      return FALSE;
    }
  p->photon_energy_eV = energy;
  return TRUE;
}

static gboolean
read_row (const ReaderState *st, const char *line, MpMeasuredPoint *p, GError **error)
{
  g_auto (GStrv) fields = split_fields (line);
  int n = g_strv_length (fields);

  if (n != st->n_fields)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s:%d: expected %d comma-separated columns as in the header, found %d",
                   st->name, st->line, st->n_fields, n);
      return FALSE;
    }
  p->line = st->line;
  if (!read_cell (st, fields, COL_TEMPERATURE, &p->temperature_K, error) ||
      !resolve_photon_energy (st, fields, p, error) ||
      !read_cell (st, fields, COL_QE, &p->qe, error) ||
      !read_cell (st, fields, COL_QE_SIGMA, &p->qe_sigma, error) ||
      !read_cell (st, fields, COL_MTE, &p->mte_meV, error) ||
      !read_cell (st, fields, COL_MTE_SIGMA, &p->mte_sigma_meV, error) ||
      !read_cell (st, fields, COL_ELECTRONS, &p->electrons, error) ||
      !read_cell (st, fields, COL_ELAPSED, &p->elapsed_h, error))
    return FALSE;
  if (!isnan (p->mte_sigma_meV) && isnan (p->mte_meV))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s:%d: column \"mte_sigma_meV\": expected an empty cell where "
                   "mte_meV is empty, found \"%s\"",
                   st->name, st->line, fields[st->index[COL_MTE_SIGMA]]);
      return FALSE;
    }
  return TRUE;
}

static gboolean
is_skipped_line (const char *line)
{
  while (*line == ' ' || *line == '\t')
    line++;
  return *line == '\0' || *line == '#';
}

static gboolean
read_lines (ReaderState *st, char **lines, GArray *points, GError **error)
{
  gboolean have_header = FALSE;

  for (int i = 0; lines[i] != NULL; i++)
    {
      char *line = lines[i];
      gsize n = strlen (line);
      MpMeasuredPoint p = { 0 };

      st->line = i + 1;
      if (n > 0 && line[n - 1] == '\r')
        line[n - 1] = '\0';
      if (is_skipped_line (line))
        continue;
      if (!have_header)
        {
          if (!read_header (st, line, error))
            return FALSE;
          have_header = TRUE;
          continue;
        }
      if (points->len >= MP_MEASURED_MAX_ROWS)
        {
          g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                       "%s:%d: more than %d data rows; split the file",
                       st->name, st->line, MP_MEASURED_MAX_ROWS);
          return FALSE;
        }
      if (!read_row (st, line, &p, error))
        return FALSE;
      g_array_append_val (points, p);
    }
  if (!have_header)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected a header line naming the columns "
                   "(temperature_K, photon_energy_eV or wavelength_nm, qe), found none",
                   st->name);
      return FALSE;
    }
  if (points->len == 0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected at least one data row after the header, found none",
                   st->name);
      return FALSE;
    }
  return TRUE;
}

MpMeasuredData *
mp_measured_load_from_data (const char *data, gssize length,
                            const char *name, GError **error)
{
  ReaderState st = { 0 };
  g_autofree char *copy = NULL;
  g_auto (GStrv) lines = NULL;
  g_autoptr (GArray) points = NULL;
  MpMeasuredData *result;
  const char *text;

  g_return_val_if_fail (data != NULL || length == 0, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  st.name = name != NULL ? name : "data";
  if (length < 0)
    length = strlen (data);
  if ((gsize) length > MP_MEASURED_MAX_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   "%s: the file is larger than %d MiB",
                   st.name, MP_MEASURED_MAX_BYTES / (1024 * 1024));
      return NULL;
    }
  if (!g_utf8_validate (data, length, NULL) || memchr (data, '\0', length) != NULL)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   "%s: expected UTF-8 text, found binary data", st.name);
      return NULL;
    }
  copy = g_strndup (data, length);
  text = copy;
  if (g_str_has_prefix (text, "\xEF\xBB\xBF"))
    text += 3;  /* byte-order mark written by some spreadsheets */
  lines = g_strsplit (text, "\n", -1);
  points = g_array_new (FALSE, TRUE, sizeof (MpMeasuredPoint));
  if (!read_lines (&st, lines, points, error))
    return NULL;

  result = g_new0 (MpMeasuredData, 1);
  result->name = g_strdup (st.name);
  result->points = g_steal_pointer (&points);
  return result;
}

MpMeasuredData *
mp_measured_load_from_file (const char *path, GError **error)
{
  g_autofree char *contents = NULL;
  g_autoptr (GError) local = NULL;
  g_autoptr (GFile) file = NULL;
  g_autoptr (GFileInfo) info = NULL;
  gsize length = 0;

  g_return_val_if_fail (path != NULL, NULL);

  file = g_file_new_for_path (path);
  info = g_file_query_info (file, G_FILE_ATTRIBUTE_STANDARD_SIZE,
                            G_FILE_QUERY_INFO_NONE, NULL, NULL);
  if (info != NULL && g_file_info_get_size (info) > MP_MEASURED_MAX_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   "%s: the file is larger than %d MiB",
                   path, MP_MEASURED_MAX_BYTES / (1024 * 1024));
      return NULL;
    }
  if (!g_file_get_contents (path, &contents, &length, &local))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_IO, "%s", local->message);
      return NULL;
    }
  return mp_measured_load_from_data (contents, length, path, error);
}

void
mp_measured_data_free (MpMeasuredData *data)
{
  if (data == NULL)
    return;
  g_free (data->name);
  g_clear_pointer (&data->points, g_array_unref);
  g_free (data);
}

guint
mp_measured_count_mte (const MpMeasuredData *data)
{
  guint n = 0;

  g_return_val_if_fail (data != NULL, 0);

  for (guint i = 0; i < data->points->len; i++)
    if (!isnan (g_array_index (data->points, MpMeasuredPoint, i).mte_meV))
      n++;
  return n;
}

double
mp_measured_max_elapsed_h (const MpMeasuredData *data)
{
  double max = NAN;

  g_return_val_if_fail (data != NULL, NAN);

  for (guint i = 0; i < data->points->len; i++)
    {
      double e = g_array_index (data->points, MpMeasuredPoint, i).elapsed_h;

      if (!isnan (e) && (isnan (max) || e > max))
        max = e;
    }
  return max;
}

double
mp_measured_match_block_temperature (const MpPlan *plan, double temperature_K)
{
  double best = temperature_K, best_diff = INFINITY;

  if (plan == NULL || plan->temperatures == NULL)
    return temperature_K;
  for (guint i = 0; i < plan->temperatures->len; i++)
    {
      double t = g_array_index (plan->temperatures, MpTemperatureBlock, i).temperature_K;
      double diff = fabs (t - temperature_K);

      if (diff <= MAX (1.0, 0.02 * t) && diff < best_diff)
        {
          best = t;
          best_diff = diff;
        }
    }
  return best;
}

GArray *
mp_measured_to_done_points (const MpMeasuredData *data, const MpPlan *plan)
{
  GArray *done;

  g_return_val_if_fail (data != NULL, NULL);

  done = g_array_sized_new (FALSE, TRUE, sizeof (MpDonePoint), data->points->len);
  for (guint i = 0; i < data->points->len; i++)
    {
      const MpMeasuredPoint *p = &g_array_index (data->points, MpMeasuredPoint, i);
      MpDonePoint d;

      d.temperature_K = mp_measured_match_block_temperature (plan, p->temperature_K);
      d.photon_energy_eV = p->photon_energy_eV;
      d.elapsed_h = p->elapsed_h;
      g_array_append_val (done, d);
    }
  return done;
}
