/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-io.c: loading plan documents (../shared/spec/plan-format.md)
 * with json-glib, and writing them back with unknown keys kept.
 *
 * Loading goes in three passes: a byte scan before parsing (size, UTF-8,
 * nesting depth, over-long numbers: json-glib 1.6 parses recursively, and
 * silently turns an integer that overflows 64 bits into -1), json-glib's
 * parser, and a walk of the tree that reads every known key through the
 * field tables of mp-plan-validate.c. */
#include "config.h"

#include <math.h>
#include <string.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>

#include "mp-atomic.h"
#include "mp-error.h"
#include "mp-plan-private.h"
#include "mp-tuning-csv.h"

#define MP_PLAN_FORMAT_NAME "mteplan"
#define MP_PLAN_FORMAT_VERSION 1

/* ------------------------------------------------------------------ */
/* Before parsing                                                      */

static void
position_of (const char *data, gsize offset, guint *line, guint *column)
{
  *line = 1;
  *column = 1;
  for (gsize i = 0; i < offset; i++)
    {
      if (data[i] == '\n')
        {
          (*line)++;
          *column = 1;
        }
      else if (((guchar) data[i] & 0xc0) != 0x80)
        (*column)++;
    }
}

static gboolean
fail_at (GError **error, int code, const char *data, gsize offset,
         const char *format, ...) G_GNUC_PRINTF (5, 6);

static gboolean
fail_at (GError **error, int code, const char *data, gsize offset,
         const char *format, ...)
{
  g_autofree char *what = NULL;
  guint line, column;
  va_list args;

  va_start (args, format);
  what = g_strdup_vprintf (format, args);
  va_end (args);
  position_of (data, offset, &line, &column);
  g_set_error (error, MP_ERROR, code, _("line %u, column %u: %s"), line, column, what);
  return FALSE;
}

/* Scans the raw bytes: nesting depth and length of number literals,
 * tracking strings so that brackets inside them do not count. */
static gboolean
scan_structure (const char *data, gsize length, GError **error)
{
  gboolean in_string = FALSE;
  int depth = 0;

  for (gsize i = 0; i < length; i++)
    {
      char c = data[i];

      if (in_string)
        {
          if (c == '\\')
            i++;
          else if (c == '"')
            in_string = FALSE;
          continue;
        }
      if (c == '"')
        in_string = TRUE;
      else if (c == '[' || c == '{')
        {
          if (++depth > MP_PLAN_MAX_DEPTH)
            return fail_at (error, MP_ERROR_LIMIT, data, i,
                            _("nesting deeper than %d levels"), MP_PLAN_MAX_DEPTH);
        }
      else if (c == ']' || c == '}')
        depth--;
      else if (c == '-' || g_ascii_isdigit (c))
        {
          gsize start = i, digits = 0;
          gboolean integer = TRUE;

          while (i < length && (g_ascii_isdigit (data[i]) || strchr ("+-.eE", data[i]) != NULL))
            {
              if (g_ascii_isdigit (data[i]))
                digits++;
              else if (data[i] != '-' || i != start)
                integer = FALSE;
              i++;
            }
          if (i - start > MP_PLAN_MAX_NUMBER_CHARS)
            return fail_at (error, MP_ERROR_LIMIT, data, start,
                            _("a number written with %zu characters, at most %d"),
                            i - start, MP_PLAN_MAX_NUMBER_CHARS);
          if (integer && digits > 18)
            return fail_at (error, MP_ERROR_INVALID, data, start,
                            _("a whole number of %zu digits, too large (at most 18 digits)"),
                            digits);
          i--;
        }
    }
  return TRUE;
}

static gboolean
check_bytes (const char *data, gsize length, GError **error)
{
  const char *bad = NULL;

  if (length > MP_PLAN_MAX_FILE_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("file too large (%zu bytes), at most %d bytes (16 MiB)"),
                   length, MP_PLAN_MAX_FILE_BYTES);
      return FALSE;
    }
  if (memchr (data, '\0', length) != NULL)
    return fail_at (error, MP_ERROR_INVALID, data,
                    (gsize) ((const char *) memchr (data, '\0', length) - data),
                    _("expected UTF-8 text, found a NUL byte"));
  if (!g_utf8_validate_len (data, length, &bad))
    return fail_at (error, MP_ERROR_INVALID, data, (gsize) (bad - data),
                    _("expected UTF-8 text, found the invalid byte 0x%02x"),
                    (guchar) *bad);
  return scan_structure (data, length, error);
}

/* "<data>:3:17: Parse error: unexpected ..." -> "line 3, column 17: ..." */
static void
set_parse_error (GError **error, const GError *parse_error)
{
  const char *msg = parse_error->message;
  guint line = 0, column = 0;
  const char *rest;

  if (g_str_has_prefix (msg, "<data>:")
      && sscanf (msg + strlen ("<data>:"), "%u:%u", &line, &column) == 2
      && (rest = strstr (msg, ": Parse error: ")) != NULL)
    g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                 _("not valid JSON: line %u, column %u: %s"),
                 line, column, rest + strlen (": Parse error: "));
  else
    g_set_error (error, MP_ERROR, MP_ERROR_INVALID, _("not valid JSON: %s"), msg);
}

/* ------------------------------------------------------------------ */
/* Describing what was found                                           */

static char *
describe_node (JsonNode *node)
{
  if (node == NULL || JSON_NODE_HOLDS_NULL (node))
    return g_strdup ("null");
  if (JSON_NODE_HOLDS_OBJECT (node))
    return g_strdup (_("an object"));
  if (JSON_NODE_HOLDS_ARRAY (node))
    return g_strdup (json_array_get_length (json_node_get_array (node)) == 0
                     ? _("an empty array") : _("an array"));
  switch (json_node_get_value_type (node))
    {
    case G_TYPE_BOOLEAN:
      return g_strdup (json_node_get_boolean (node) ? "true" : "false");
    case G_TYPE_INT64:
      return g_strdup_printf ("%" G_GINT64_FORMAT, json_node_get_int (node));
    case G_TYPE_DOUBLE:
      if (!isfinite (json_node_get_double (node)))
        return g_strdup (_("a number too large to represent"));
      return mp_format_double (json_node_get_double (node));
    case G_TYPE_STRING:
      {
        const char *s = json_node_get_string (node);
        gsize n = strlen (s);
        const char *end = s + MIN (n, 40);
        g_autofree char *head = NULL;
        char *stop = NULL;
        double value;

        g_utf8_validate (s, end - s, &end);
        head = g_strndup (s, end - s);
        value = g_ascii_strtod (s, &stop);
        if (n > 0 && *stop == '\0' && !isfinite (value))
          return g_strdup_printf (_("\"%s\" (NaN and infinity are not accepted)"), head);
        if (n > 0 && *stop == '\0' && !g_ascii_isspace (*s))
          return g_strdup_printf (_("\"%s\" (text; write numbers without quotes)"), head);
        return g_strdup_printf ("\"%s%s\"", head, (gsize) (end - s) < n ? "…" : "");
      }
    default:
      return g_strdup (_("an unknown value"));
    }
}

static gboolean
fail_found (GError **error, const char *path, const char *expected, JsonNode *found)
{
  g_autofree char *what = describe_node (found);

  g_set_error (error, MP_ERROR, MP_ERROR_INVALID, _("%s: expected %s, found %s"),
               path, expected, what);
  return FALSE;
}

static gboolean
fail_missing (GError **error, const char *path, const char *expected)
{
  g_set_error (error, MP_ERROR, MP_ERROR_INVALID, _("%s: missing (expected %s)"),
               path, expected);
  return FALSE;
}

/* ------------------------------------------------------------------ */
/* Walking the tree: depth and string lengths                          */

typedef struct Crumb Crumb;
struct Crumb
{
  const Crumb *parent;
  const char *key;       /* or NULL for an array element */
  guint index;
};

static char *
crumb_path (const Crumb *crumb)
{
  g_autoptr(GPtrArray) parts = g_ptr_array_new ();
  GString *path = g_string_new (NULL);

  for (; crumb != NULL; crumb = crumb->parent)
    g_ptr_array_add (parts, (gpointer) crumb);
  for (guint i = parts->len; i-- > 0;)
    {
      const Crumb *c = g_ptr_array_index (parts, i);

      if (c->key == NULL)
        g_string_append_printf (path, "[%u]", c->index);
      else
        g_string_append_printf (path, "%s%s", path->len > 0 ? "." : "", c->key);
    }
  if (path->len == 0)
    g_string_append (path, _("(top level)"));
  return g_string_free (path, FALSE);
}

static gboolean
fail_long_text (GError **error, const Crumb *crumb, gsize n)
{
  g_autofree char *path = crumb_path (crumb);

  g_set_error (error, MP_ERROR, MP_ERROR_LIMIT, _("%s: text too long (%zu bytes), at most %d"),
               path, n, MP_PLAN_MAX_STRING_BYTES);
  return FALSE;
}

static gboolean
walk_node (JsonNode *node, const Crumb *crumb, int depth, GError **error)
{
  if (depth > MP_PLAN_MAX_DEPTH)
    {
      g_autofree char *path = crumb_path (crumb);

      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT, _("%s: nesting deeper than %d levels"),
                   path, MP_PLAN_MAX_DEPTH);
      return FALSE;
    }
  if (JSON_NODE_HOLDS_OBJECT (node))
    {
      JsonObjectIter iter;
      const char *key;
      JsonNode *child;

      json_object_iter_init (&iter, json_node_get_object (node));
      while (json_object_iter_next (&iter, &key, &child))
        {
          Crumb c = { crumb, key, 0 };

          if (strlen (key) > MP_PLAN_MAX_STRING_BYTES)
            return fail_long_text (error, crumb, strlen (key));
          if (!walk_node (child, &c, depth + 1, error))
            return FALSE;
        }
    }
  else if (JSON_NODE_HOLDS_ARRAY (node))
    {
      JsonArray *array = json_node_get_array (node);

      for (guint i = 0; i < json_array_get_length (array); i++)
        {
          Crumb c = { crumb, NULL, i };

          if (!walk_node (json_array_get_element (array, i), &c, depth + 1, error))
            return FALSE;
        }
    }
  else if (JSON_NODE_HOLDS_VALUE (node) && json_node_get_value_type (node) == G_TYPE_STRING)
    {
      gsize n = strlen (json_node_get_string (node));

      if (n > MP_PLAN_MAX_STRING_BYTES)
        return fail_long_text (error, crumb, n);
    }
  else if (JSON_NODE_HOLDS_VALUE (node) && json_node_get_value_type (node) == G_TYPE_DOUBLE
           && !isfinite (json_node_get_double (node)))
    {
      /* Also in keys this build does not know: they must save again. */
      g_autofree char *path = crumb_path (crumb);

      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s: expected a number, found a number too large to represent"), path);
      return FALSE;
    }
  return TRUE;
}

/* ------------------------------------------------------------------ */
/* Reading known keys                                                  */

typedef struct
{
  MpPlan *plan;
  const char *base_dir;
  JsonObject *root;
} Loader;

/* Finds "a.b.c" below obj. Missing or mistyped containers are errors;
 * a missing leaf gives *out = NULL. */
static gboolean
lookup (JsonObject *obj, const char *prefix, const char *dotted,
        JsonNode **out, GError **error)
{
  g_auto(GStrv) parts = g_strsplit (dotted, ".", -1);
  GString *path = g_string_new (prefix);
  gboolean ok = TRUE;

  *out = NULL;
  for (guint i = 0; parts[i] != NULL; i++)
    {
      JsonNode *node = json_object_get_member (obj, parts[i]);

      g_string_append (path, parts[i]);
      if (parts[i + 1] == NULL)
        {
          *out = node;
          break;
        }
      if (node == NULL)
        {
          ok = fail_missing (error, path->str, _("an object"));
          break;
        }
      if (!JSON_NODE_HOLDS_OBJECT (node))
        {
          ok = fail_found (error, path->str, _("an object"), node);
          break;
        }
      obj = json_node_get_object (node);
      g_string_append_c (path, '.');
    }
  g_string_free (path, TRUE);
  return ok;
}

static gboolean
node_is_number (JsonNode *node)
{
  GType type;

  if (node == NULL || !JSON_NODE_HOLDS_VALUE (node))
    return FALSE;
  type = json_node_get_value_type (node);
  return type == G_TYPE_INT64 || type == G_TYPE_DOUBLE;
}

static gboolean
read_number_fields (JsonObject *obj, const char *prefix, const MpNumberField *fields,
                    guint n, gpointer base, GError **error)
{
  for (guint i = 0; i < n; i++)
    {
      const MpNumberField *field = &fields[i];
      JsonNode *node;

      if (!lookup (obj, prefix, field->path, &node, error))
        return FALSE;
      if (node == NULL && (field->flags & MP_FIELD_OPTIONAL))
        {
          mp_number_field_set (field, base, field->default_value);
          continue;
        }
      if (node_is_number (node) && mp_number_field_accepts (field, json_node_get_double (node)))
        {
          mp_number_field_set (field, base, json_node_get_double (node));
          continue;
        }
      {
        g_autofree char *path = g_strconcat (prefix, field->path, NULL);
        g_autofree char *expected = mp_number_field_expectation (field);

        if (node == NULL)
          return fail_missing (error, path, expected);
        return fail_found (error, path, expected, node);
      }
    }
  return TRUE;
}

/* A string member; required or not; NULL node leaves *out NULL. */
static gboolean
read_string (JsonObject *obj, const char *prefix, const char *dotted,
             gboolean required, char **out, GError **error)
{
  g_autofree char *path = g_strconcat (prefix, dotted, NULL);
  JsonNode *node;

  if (!lookup (obj, prefix, dotted, &node, error))
    return FALSE;
  if (node == NULL)
    return required ? fail_missing (error, path, _("text")) : TRUE;
  if (!JSON_NODE_HOLDS_VALUE (node) || json_node_get_value_type (node) != G_TYPE_STRING)
    return fail_found (error, path, _("text"), node);
  g_free (*out);
  *out = g_strdup (json_node_get_string (node));
  return TRUE;
}

/* One of names[] (NULL-terminated); absent gives default_index when
 * default_index >= 0, else an error. */
static gboolean
read_choice (JsonObject *obj, const char *dotted, const char *const *names,
             int default_index, int *out, GError **error)
{
  g_autoptr(GString) expected = g_string_new (NULL);
  JsonNode *node;
  const char *value;

  for (guint i = 0; names[i] != NULL; i++)
    g_string_append_printf (expected, "%s\"%s\"",
                            i == 0 ? "" : names[i + 1] == NULL ? _(" or ") : ", ",
                            names[i]);
  if (!lookup (obj, "", dotted, &node, error))
    return FALSE;
  if (node == NULL)
    {
      if (default_index < 0)
        return fail_missing (error, dotted, expected->str);
      *out = default_index;
      return TRUE;
    }
  if (!JSON_NODE_HOLDS_VALUE (node) || json_node_get_value_type (node) != G_TYPE_STRING)
    return fail_found (error, dotted, expected->str, node);
  value = json_node_get_string (node);
  for (guint i = 0; names[i] != NULL; i++)
    if (g_str_equal (value, names[i]))
      {
        *out = (int) i;
        return TRUE;
      }
  return fail_found (error, dotted, expected->str, node);
}

static gboolean
read_format (Loader *ld, GError **error)
{
  JsonNode *format = json_object_get_member (ld->root, "format");
  JsonNode *version = json_object_get_member (ld->root, "version");

  if (format == NULL)
    return fail_missing (error, "format", _("\"mteplan\"; is this a plan file?"));
  if (!JSON_NODE_HOLDS_VALUE (format) || json_node_get_value_type (format) != G_TYPE_STRING
      || !g_str_equal (json_node_get_string (format), MP_PLAN_FORMAT_NAME))
    return fail_found (error, "format", _("\"mteplan\""), format);
  if (version == NULL)
    return fail_missing (error, "version", "1");
  if (!node_is_number (version) || json_node_get_double (version) != MP_PLAN_FORMAT_VERSION)
    {
      if (node_is_number (version) && json_node_get_double (version) > MP_PLAN_FORMAT_VERSION)
        {
          g_autofree char *found = describe_node (version);

          g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                       _("version: expected 1, found %s: the plan was written by a newer "
                         "version of mteplan; this version reads plan format 1 only"),
                       found);
          return FALSE;
        }
      return fail_found (error, "version", "1", version);
    }
  return TRUE;
}

static gboolean
read_points_array (JsonNode *node, const char *path, GArray *points, GError **error)
{
  JsonArray *array;
  guint n;

  if (!JSON_NODE_HOLDS_ARRAY (node))
    return fail_found (error, path, _("an array of points"), node);
  array = json_node_get_array (node);
  n = json_array_get_length (array);
  if (n > MP_PLAN_MAX_POINTS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT, _("%s: too many points (%u), at most %d"),
                   path, n, MP_PLAN_MAX_POINTS);
      return FALSE;
    }
  for (guint i = 0; i < n; i++)
    {
      JsonNode *element = json_array_get_element (array, i);
      g_autofree char *prefix = g_strdup_printf ("%s[%u].", path, i);
      MpTuningPoint p = { 0, 0 };

      if (!JSON_NODE_HOLDS_OBJECT (element))
        {
          g_autofree char *at = g_strdup_printf ("%s[%u]", path, i);

          return fail_found (error, at, _("an object with wavelength_nm and pulse_energy_uJ"),
                             element);
        }
      if (!read_number_fields (json_node_get_object (element), prefix,
                               mp_point_number_fields, mp_point_n_number_fields, &p, error))
        return FALSE;
      g_array_append_val (points, p);
    }
  return mp_tuning_points_check (points, path, error);
}

static gboolean
read_curve_csv (Loader *ld, JsonNode *node, const char *path, MpTuningRange *range,
                GError **error)
{
  g_autofree char *full = NULL;
  GArray *points;
  GError *local = NULL;
  const char *file;

  if (!JSON_NODE_HOLDS_VALUE (node) || json_node_get_value_type (node) != G_TYPE_STRING
      || *json_node_get_string (node) == '\0')
    return fail_found (error, path, _("the name of a CSV file"), node);
  file = json_node_get_string (node);
  if (g_path_is_absolute (file))
    full = g_strdup (file);
  else
    full = g_build_filename (ld->base_dir != NULL ? ld->base_dir : ".", file, NULL);
  points = mp_tuning_csv_load (full, file, &local);
  if (points == NULL)
    {
      g_set_error (error, MP_ERROR, local->code, "%s: %s", path, local->message);
      g_error_free (local);
      return FALSE;
    }
  g_clear_pointer (&range->points, g_array_unref);
  range->points = points;
  range->csv_path = g_strdup (file);
  return TRUE;
}

/* Reads "tuning_curve" or "tuning_curve_csv" of obj (the laser or one
 * range) into range; prefix is the JSON path of obj plus '.'. */
static gboolean
read_curve (Loader *ld, JsonObject *obj, const char *prefix, MpTuningRange *range,
            GError **error)
{
  JsonNode *inline_curve = json_object_get_member (obj, "tuning_curve");
  JsonNode *csv = json_object_get_member (obj, "tuning_curve_csv");
  g_autofree char *curve_path = g_strconcat (prefix, "tuning_curve", NULL);
  g_autofree char *csv_path = g_strconcat (prefix, "tuning_curve_csv", NULL);

  if (inline_curve != NULL && csv != NULL)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("%s: expected either tuning_curve or tuning_curve_csv, found both"),
                   curve_path);
      return FALSE;
    }
  if (csv != NULL)
    return read_curve_csv (ld, csv, csv_path, range, error);
  if (inline_curve == NULL)
    return fail_missing (error, curve_path,
                         _("an array of points, or tuning_curve_csv naming a CSV file"));
  return read_points_array (inline_curve, curve_path, range->points, error);
}

static gboolean
read_ranges (Loader *ld, JsonObject *laser, GError **error)
{
  JsonNode *node = json_object_get_member (laser, "tuning_ranges");
  JsonArray *array;
  guint n;

  if (json_object_has_member (laser, "tuning_curve")
      || json_object_has_member (laser, "tuning_curve_csv"))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("laser.tuning_ranges: expected either tuning_ranges or one "
                     "tuning curve, found both"));
      return FALSE;
    }
  if (!JSON_NODE_HOLDS_ARRAY (node))
    return fail_found (error, "laser.tuning_ranges", _("an array of tuning ranges"), node);
  array = json_node_get_array (node);
  n = json_array_get_length (array);
  if (n == 0)
    return fail_found (error, "laser.tuning_ranges", _("at least one tuning range"), node);
  if (n > MP_PLAN_MAX_RANGES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("laser.tuning_ranges: too many ranges (%u), at most %d"),
                   n, MP_PLAN_MAX_RANGES);
      return FALSE;
    }
  for (guint r = 0; r < n; r++)
    {
      JsonNode *element = json_array_get_element (array, r);
      g_autofree char *prefix = g_strdup_printf ("laser.tuning_ranges[%u].", r);
      MpTuningRange *range;
      JsonObject *obj;

      if (!JSON_NODE_HOLDS_OBJECT (element))
        {
          g_autofree char *at = g_strdup_printf ("laser.tuning_ranges[%u]", r);

          return fail_found (error, at, _("an object with a tuning curve"), element);
        }
      obj = json_node_get_object (element);
      range = mp_tuning_range_new (NULL, 0);
      g_ptr_array_add (ld->plan->laser.ranges, range);
      if (!read_string (obj, prefix, "label", FALSE, &range->label, error)
          || !read_number_fields (obj, prefix, &mp_range_switch_field, 1, range, error)
          || !read_curve (ld, obj, prefix, range, error))
        return FALSE;
    }
  return TRUE;
}

static gboolean
read_laser (Loader *ld, GError **error)
{
  JsonNode *node;
  JsonObject *laser;

  if (!lookup (ld->root, "", "laser", &node, error))
    return FALSE;
  if (node == NULL)
    return fail_missing (error, "laser", _("an object"));
  if (!JSON_NODE_HOLDS_OBJECT (node))
    return fail_found (error, "laser", _("an object"), node);
  laser = json_node_get_object (node);
  if (json_object_has_member (laser, "tuning_ranges"))
    return read_ranges (ld, laser, error);
  g_ptr_array_add (ld->plan->laser.ranges, mp_tuning_range_new (NULL, 0));
  return read_curve (ld, laser, "laser.", g_ptr_array_index (ld->plan->laser.ranges, 0),
                     error);
}

static gboolean
read_temperatures (Loader *ld, GError **error)
{
  JsonNode *node = json_object_get_member (ld->root, "temperatures");
  g_autofree char *expected = g_strdup_printf (_("an array of 1 to %d temperature blocks"),
                                               MP_PLAN_MAX_BLOCKS);
  JsonArray *array;
  guint n;

  if (node == NULL)
    return fail_missing (error, "temperatures", expected);
  if (!JSON_NODE_HOLDS_ARRAY (node))
    return fail_found (error, "temperatures", expected, node);
  array = json_node_get_array (node);
  n = json_array_get_length (array);
  if (n == 0)
    return fail_found (error, "temperatures", expected, node);
  if (n > MP_PLAN_MAX_BLOCKS)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("temperatures: too many temperature blocks (%u), at most %d"),
                   n, MP_PLAN_MAX_BLOCKS);
      return FALSE;
    }
  for (guint i = 0; i < n; i++)
    {
      JsonNode *element = json_array_get_element (array, i);
      g_autofree char *prefix = g_strdup_printf ("temperatures[%u].", i);
      MpTemperatureBlock block = { 0 };

      if (!JSON_NODE_HOLDS_OBJECT (element))
        {
          g_autofree char *at = g_strdup_printf ("temperatures[%u]", i);

          return fail_found (error, at, _("an object (one temperature block)"), element);
        }
      if (!read_number_fields (json_node_get_object (element), prefix,
                               mp_block_number_fields, mp_block_n_number_fields,
                               &block, error))
        return FALSE;
      g_array_append_val (ld->plan->temperatures, block);
    }
  return TRUE;
}

static const char *const cryogen_names[] = { "helium", "nitrogen", NULL };
static const char *const order_names[] = { "descending", "ascending", NULL };
static const char *const policy_names[] = { "drop", "stretch", NULL };

static gboolean
read_shift_start (Loader *ld, GError **error)
{
  MpPlan *plan = ld->plan;

  if (!read_string (ld->root, "", "shift_start", FALSE, &plan->shift_start, error))
    return FALSE;
  if (plan->shift_start != NULL)
    {
      g_autoptr(GDateTime) dt = g_date_time_new_from_iso8601 (plan->shift_start, NULL);

      if (dt == NULL)
        return fail_found (error, "shift_start",
                           _("an ISO 8601 date and time with time zone such as "
                             "\"2026-03-14T08:00:00+01:00\""),
                           json_object_get_member (ld->root, "shift_start"));
    }
  return TRUE;
}

static gboolean
read_plan (Loader *ld, GError **error)
{
  MpPlan *plan = ld->plan;
  int cryogen = 0, order = 0, policy = 0;

  if (!read_format (ld, error)
      || !read_string (ld->root, "", "title", TRUE, &plan->title, error))
    return FALSE;
  if (!read_string (ld->root, "", "cathode.label", TRUE, &plan->cathode.label, error))
    return FALSE;
  /* The laser's curve is read after its numbers so that a wrong number
   * in the laser is reported before the curve. */
  if (!read_number_fields (ld->root, "", mp_plan_number_fields,
                           mp_plan_n_number_fields, plan, error))
    return FALSE;
  if (!read_laser (ld, error)
      || !read_choice (ld->root, "cryostat.cryogen", cryogen_names, -1, &cryogen, error)
      || !read_temperatures (ld, error)
      || !read_choice (ld->root, "scan.order", order_names, MP_SCAN_DESCENDING, &order, error)
      || !read_choice (ld->root, "over_budget", policy_names, MP_OVER_BUDGET_DROP, &policy, error)
      || !read_shift_start (ld, error))
    return FALSE;
  plan->cryostat.cryogen = cryogen;
  plan->scan.order = order;
  plan->over_budget = policy;
  return mp_plan_validate (plan, error);
}

MpPlan *
mp_plan_load_from_data (const char *data, gssize length,
                        const char *base_dir, GError **error)
{
  g_autoptr(JsonParser) parser = NULL;
  g_autoptr(MpPlan) plan = NULL;
  g_autoptr(JsonNode) root = NULL;
  GError *local = NULL;
  Loader ld = { 0 };

  g_return_val_if_fail (data != NULL || length == 0, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  if (length < 0)
    length = (gssize) strlen (data);
  /* A byte-order mark, as some editors on Windows write. */
  if (length >= 3 && memcmp (data, "\xef\xbb\xbf", 3) == 0)
    {
      data += 3;
      length -= 3;
    }
  if (!check_bytes (data, (gsize) length, error))
    return NULL;
  parser = json_parser_new ();
  if (!json_parser_load_from_data (parser, data, length, &local))
    {
      set_parse_error (error, local);
      g_error_free (local);
      return NULL;
    }
  root = json_parser_steal_root (parser);
  if (root == NULL)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("the file is empty (expected a plan: a JSON object)"));
      return NULL;
    }
  if (!JSON_NODE_HOLDS_OBJECT (root))
    {
      fail_found (error, _("(top level)"), _("a JSON object"), root);
      return NULL;
    }
  if (!walk_node (root, NULL, 1, error))
    return NULL;

  plan = mp_plan_new_empty ();
  ld.plan = plan;
  ld.base_dir = base_dir;
  ld.root = json_node_get_object (root);
  if (!read_plan (&ld, error))
    return NULL;
  plan->document = g_steal_pointer (&root);
  return g_steal_pointer (&plan);
}

MpPlan *
mp_plan_load_from_file (const char *path, GError **error)
{
  g_autofree char *data = NULL;
  g_autofree char *dir = NULL;
  GError *local = NULL;
  MpPlan *plan;
  GStatBuf st;
  gsize length = 0;

  g_return_val_if_fail (path != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  if (g_stat (path, &st) == 0 && st.st_size > MP_PLAN_MAX_FILE_BYTES)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("%s: file too large (%lld bytes), at most %d bytes (16 MiB)"),
                   path, (long long) st.st_size, MP_PLAN_MAX_FILE_BYTES);
      return NULL;
    }
  if (!g_file_get_contents (path, &data, &length, &local))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_IO, "%s", local->message);
      g_error_free (local);
      return NULL;
    }
  dir = g_path_get_dirname (path);
  plan = mp_plan_load_from_data (data, (gssize) length, dir, error);
  if (plan != NULL)
    plan->path = g_strdup (path);
  return plan;
}

/* ------------------------------------------------------------------ */
/* Writing: known keys into (a copy of) the kept document              */

static void
set_number (JsonObject *obj, const char *key, double value)
{
  JsonNode *old = json_object_get_member (obj, key);

  if (node_is_number (old) && json_node_get_double (old) == value)
    return;                     /* keep the file's own spelling */
  if (isfinite (value) && value == floor (value) && fabs (value) < 1e15)
    json_object_set_int_member (obj, key, (gint64) value);
  else if (isfinite (value))
    json_object_set_double_member (obj, key, value);
  else
    json_object_set_null_member (obj, key);
}

static JsonObject *
ensure_object (JsonObject *parent, const char *key)
{
  JsonNode *node = json_object_get_member (parent, key);

  if (node == NULL || !JSON_NODE_HOLDS_OBJECT (node))
    json_object_set_object_member (parent, key, json_object_new ());
  return json_object_get_object_member (parent, key);
}

/* Object at "a.b" (creating it) for the leaf of a dotted path. */
static JsonObject *
container_of (JsonObject *root, const char *dotted, const char **leaf)
{
  g_auto(GStrv) parts = g_strsplit (dotted, ".", -1);
  guint n = g_strv_length (parts);

  for (guint i = 0; i + 1 < n; i++)
    root = ensure_object (root, parts[i]);
  *leaf = strrchr (dotted, '.') != NULL ? strrchr (dotted, '.') + 1 : dotted;
  return root;
}

static void
write_number_fields (JsonObject *obj, const MpNumberField *fields, guint n,
                     gconstpointer base, gboolean fresh)
{
  for (guint i = 0; i < n; i++)
    {
      const char *leaf;
      JsonObject *parent = container_of (obj, fields[i].path, &leaf);
      double value = mp_number_field_get (&fields[i], base);

      /* An optional key the file did not have stays out while it holds
       * its default. */
      if (!fresh && (fields[i].flags & MP_FIELD_OPTIONAL)
          && !json_object_has_member (parent, leaf) && value == fields[i].default_value)
        continue;
      set_number (parent, leaf, value);
    }
}

static JsonObject *
element_object (JsonArray *old, guint i)
{
  JsonNode *node = old != NULL && i < json_array_get_length (old)
                   ? json_array_get_element (old, i) : NULL;

  if (node != NULL && JSON_NODE_HOLDS_OBJECT (node))
    return json_object_ref (json_node_get_object (node));
  return json_object_new ();
}

static JsonArray *
array_member (JsonObject *obj, const char *key)
{
  JsonNode *node = json_object_get_member (obj, key);

  return node != NULL && JSON_NODE_HOLDS_ARRAY (node) ? json_node_get_array (node) : NULL;
}

static void
write_curve (JsonObject *obj, const MpTuningRange *range, const char *csv_path)
{
  if (csv_path != NULL)
    {
      json_object_remove_member (obj, "tuning_curve");
      json_object_set_string_member (obj, "tuning_curve_csv", csv_path);
      return;
    }
  {
    JsonArray *old = array_member (obj, "tuning_curve");
    JsonArray *array = json_array_new ();

    for (guint i = 0; i < range->points->len; i++)
      {
        JsonObject *p = element_object (old, i);

        write_number_fields (p, mp_point_number_fields, mp_point_n_number_fields,
                             &g_array_index (range->points, MpTuningPoint, i), TRUE);
        json_array_add_object_element (array, p);
      }
    json_object_remove_member (obj, "tuning_curve_csv");
    json_object_set_array_member (obj, "tuning_curve", array);
  }
}

/* A relative CSV path, rebased when the plan is saved elsewhere. */
static char *
csv_path_for (const MpTuningRange *range, const char *old_dir, const char *new_dir)
{
  if (range->csv_path == NULL)
    return NULL;
  if (g_path_is_absolute (range->csv_path) || old_dir == NULL || new_dir == NULL)
    return g_strdup (range->csv_path);
  {
    g_autofree char *a = g_canonicalize_filename (old_dir, NULL);
    g_autofree char *b = g_canonicalize_filename (new_dir, NULL);

    if (g_str_equal (a, b))
      return g_strdup (range->csv_path);
    return g_canonicalize_filename (range->csv_path, a);
  }
}

static void
write_laser (JsonObject *root, const MpPlan *plan, const char *old_dir, const char *new_dir)
{
  JsonObject *laser = ensure_object (root, "laser");

  if (mp_plan_uses_single_curve (plan))
    {
      g_autofree char *csv = csv_path_for (g_ptr_array_index (plan->laser.ranges, 0),
                                           old_dir, new_dir);

      json_object_remove_member (laser, "tuning_ranges");
      write_curve (laser, g_ptr_array_index (plan->laser.ranges, 0), csv);
      return;
    }
  {
    JsonArray *old = array_member (laser, "tuning_ranges");
    JsonArray *array = json_array_new ();

    for (guint r = 0; r < plan->laser.ranges->len; r++)
      {
        const MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, r);
        g_autofree char *csv = csv_path_for (range, old_dir, new_dir);
        JsonObject *obj = element_object (old, r);

        if (range->label != NULL)
          json_object_set_string_member (obj, "label", range->label);
        else
          json_object_remove_member (obj, "label");
        set_number (obj, "switch_s", range->switch_s);
        write_curve (obj, range, csv);
        json_array_add_object_element (array, obj);
      }
    json_object_remove_member (laser, "tuning_curve");
    json_object_remove_member (laser, "tuning_curve_csv");
    json_object_set_array_member (laser, "tuning_ranges", array);
  }
}

static void
write_temperatures (JsonObject *root, const MpPlan *plan)
{
  JsonArray *old = array_member (root, "temperatures");
  JsonArray *array = json_array_new ();

  for (guint i = 0; i < plan->temperatures->len; i++)
    {
      JsonObject *obj = element_object (old, i);

      write_number_fields (obj, mp_block_number_fields, mp_block_n_number_fields,
                           &g_array_index (plan->temperatures, MpTemperatureBlock, i), TRUE);
      json_array_add_object_element (array, obj);
    }
  json_object_set_array_member (root, "temperatures", array);
}

static void
set_string_or_remove (JsonObject *obj, const char *key, const char *value)
{
  if (value != NULL)
    json_object_set_string_member (obj, key, value);
  else
    json_object_remove_member (obj, key);
}

static JsonNode *
build_document (const MpPlan *plan, const char *old_dir, const char *new_dir)
{
  gboolean fresh = plan->document == NULL || !JSON_NODE_HOLDS_OBJECT (plan->document);
  JsonNode *doc = fresh ? json_node_init_object (json_node_alloc (), json_object_new ())
                        : mp_json_deep_copy (plan->document);
  JsonObject *root = json_node_get_object (doc);

  json_object_set_string_member (root, "format", MP_PLAN_FORMAT_NAME);
  json_object_set_int_member (root, "version", MP_PLAN_FORMAT_VERSION);
  json_object_set_string_member (root, "title", plan->title != NULL ? plan->title : "");
  json_object_set_string_member (ensure_object (root, "cathode"), "label",
                                 plan->cathode.label != NULL ? plan->cathode.label : "");
  /* Containers in the order of the spec for a new document. */
  ensure_object (root, "laser");
  ensure_object (root, "detector");
  json_object_set_string_member (ensure_object (root, "cryostat"), "cryogen",
                                 mp_cryogen_to_string (plan->cryostat.cryogen));
  if (!json_object_has_member (root, "temperatures"))
    json_object_set_null_member (root, "temperatures");
  ensure_object (root, "scan");

  write_number_fields (root, mp_plan_number_fields, mp_plan_n_number_fields, plan, fresh);
  write_laser (root, plan, old_dir, new_dir);
  write_temperatures (root, plan);
  if (fresh || json_object_has_member (json_object_get_object_member (root, "scan"), "order")
      || plan->scan.order != MP_SCAN_DESCENDING)
    json_object_set_string_member (json_object_get_object_member (root, "scan"), "order",
                                   mp_scan_order_to_string (plan->scan.order));
  if (fresh || json_object_has_member (root, "over_budget")
      || plan->over_budget != MP_OVER_BUDGET_DROP)
    json_object_set_string_member (root, "over_budget",
                                   mp_over_budget_to_string (plan->over_budget));
  set_string_or_remove (root, "shift_start", plan->shift_start);
  return doc;
}

/* ------------------------------------------------------------------ */
/* Text output: json-glib 1.6's generator writes doubles with %.17g
 * ("0.10000000000000001") and appends ".0" to an exponent form, giving
 * invalid JSON for 1e+20 ("1e+20.0"), so the document is written here:
 * shortest round-trip numbers, two-space indent, small scalar-only
 * objects and arrays on one line. */

static void write_node (GString *out, JsonNode *node, int indent);

static void
write_string (GString *out, const char *s)
{
  g_string_append_c (out, '"');
  for (; *s != '\0'; s++)
    {
      guchar c = (guchar) *s;

      switch (c)
        {
        case '"': g_string_append (out, "\\\""); break;
        case '\\': g_string_append (out, "\\\\"); break;
        case '\n': g_string_append (out, "\\n"); break;
        case '\r': g_string_append (out, "\\r"); break;
        case '\t': g_string_append (out, "\\t"); break;
        case '\b': g_string_append (out, "\\b"); break;
        case '\f': g_string_append (out, "\\f"); break;
        default:
          if (c < 0x20)
            g_string_append_printf (out, "\\u%04x", c);
          else
            g_string_append_c (out, (char) c);
        }
    }
  g_string_append_c (out, '"');
}

static void
write_scalar (GString *out, JsonNode *node)
{
  if (JSON_NODE_HOLDS_NULL (node))
    {
      g_string_append (out, "null");
      return;
    }
  switch (json_node_get_value_type (node))
    {
    case G_TYPE_BOOLEAN:
      g_string_append (out, json_node_get_boolean (node) ? "true" : "false");
      break;
    case G_TYPE_INT64:
      g_string_append_printf (out, "%" G_GINT64_FORMAT, json_node_get_int (node));
      break;
    case G_TYPE_DOUBLE:
      if (isfinite (json_node_get_double (node)))
        {
          g_autofree char *text = mp_format_double (json_node_get_double (node));

          g_string_append (out, text);
        }
      else
        g_string_append (out, "null");
      break;
    case G_TYPE_STRING:
      write_string (out, json_node_get_string (node));
      break;
    default:
      g_string_append (out, "null");
    }
}

static gboolean
is_scalar (JsonNode *node)
{
  return JSON_NODE_HOLDS_VALUE (node) || JSON_NODE_HOLDS_NULL (node);
}

/* One line "{ "a": 1, "b": 2 }" when every child is a scalar and the
 * line stays short; else FALSE. */
static gboolean
write_inline (GString *out, JsonNode *node)
{
  g_autoptr(GString) line = g_string_new (NULL);

  if (JSON_NODE_HOLDS_OBJECT (node))
    {
      JsonObjectIter iter;
      const char *key;
      JsonNode *child;
      gboolean first = TRUE;

      json_object_iter_init_ordered (&iter, json_node_get_object (node));
      g_string_append (line, "{ ");
      while (json_object_iter_next_ordered (&iter, &key, &child))
        {
          if (!is_scalar (child))
            return FALSE;
          g_string_append (line, first ? "" : ", ");
          write_string (line, key);
          g_string_append (line, ": ");
          write_scalar (line, child);
          first = FALSE;
        }
      g_string_append (line, first ? "}" : " }");
    }
  else
    {
      JsonArray *array = json_node_get_array (node);

      g_string_append_c (line, '[');
      for (guint i = 0; i < json_array_get_length (array); i++)
        {
          if (!is_scalar (json_array_get_element (array, i)))
            return FALSE;
          g_string_append (line, i == 0 ? "" : ", ");
          write_scalar (line, json_array_get_element (array, i));
        }
      g_string_append_c (line, ']');
    }
  if (line->len > 96)
    return FALSE;
  g_string_append_len (out, line->str, line->len);
  return TRUE;
}

static void
write_indent (GString *out, int indent)
{
  g_string_append_c (out, '\n');
  for (int i = 0; i < indent; i++)
    g_string_append (out, "  ");
}

static void
write_object (GString *out, JsonObject *object, int indent)
{
  JsonObjectIter iter;
  const char *key;
  JsonNode *child;
  gboolean first = TRUE;

  g_string_append_c (out, '{');
  json_object_iter_init_ordered (&iter, object);
  while (json_object_iter_next_ordered (&iter, &key, &child))
    {
      g_string_append (out, first ? "" : ",");
      write_indent (out, indent + 1);
      write_string (out, key);
      g_string_append (out, ": ");
      write_node (out, child, indent + 1);
      first = FALSE;
    }
  if (!first)
    write_indent (out, indent);
  g_string_append_c (out, '}');
}

static void
write_array (GString *out, JsonArray *array, int indent)
{
  guint n = json_array_get_length (array);

  g_string_append_c (out, '[');
  for (guint i = 0; i < n; i++)
    {
      g_string_append (out, i == 0 ? "" : ",");
      write_indent (out, indent + 1);
      write_node (out, json_array_get_element (array, i), indent + 1);
    }
  if (n > 0)
    write_indent (out, indent);
  g_string_append_c (out, ']');
}

static void
write_node (GString *out, JsonNode *node, int indent)
{
  if (is_scalar (node))
    write_scalar (out, node);
  else if (indent > 0 && write_inline (out, node))
    return;
  else if (JSON_NODE_HOLDS_OBJECT (node))
    write_object (out, json_node_get_object (node), indent);
  else
    write_array (out, json_node_get_array (node), indent);
}

static char *
serialize (JsonNode *doc, gsize *length)
{
  GString *out = g_string_new (NULL);

  write_node (out, doc, 0);
  g_string_append_c (out, '\n');
  if (length != NULL)
    *length = out->len;
  return g_string_free (out, FALSE);
}

char *
mp_plan_to_data (const MpPlan *plan, gsize *length)
{
  g_autoptr(JsonNode) doc = NULL;

  g_return_val_if_fail (plan != NULL, NULL);

  doc = build_document (plan, NULL, NULL);
  return serialize (doc, length);
}

gboolean
mp_plan_save_to_file (MpPlan *plan, const char *path, GError **error)
{
  g_autoptr(JsonNode) doc = NULL;
  g_autofree char *data = NULL;
  g_autofree char *old_dir = NULL;
  g_autofree char *new_dir = NULL;
  gsize length = 0;

  g_return_val_if_fail (plan != NULL, FALSE);
  g_return_val_if_fail (path != NULL, FALSE);
  g_return_val_if_fail (error == NULL || *error == NULL, FALSE);

  old_dir = plan->path != NULL ? g_path_get_dirname (plan->path) : g_get_current_dir ();
  new_dir = g_path_get_dirname (path);
  doc = build_document (plan, old_dir, new_dir);
  data = serialize (doc, &length);
  if (!mp_atomic_write (path, data, length, TRUE, error))
    return FALSE;

  /* The saved file is now the plan's home: CSV paths were rebased. */
  for (guint r = 0; r < plan->laser.ranges->len; r++)
    {
      MpTuningRange *range = g_ptr_array_index (plan->laser.ranges, r);
      char *csv = csv_path_for (range, old_dir, new_dir);

      g_free (range->csv_path);
      range->csv_path = csv;
    }
  g_clear_pointer (&plan->document, json_node_unref);
  plan->document = g_steal_pointer (&doc);
  g_free (plan->path);
  plan->path = g_strdup (path);
  return TRUE;
}

char *
mp_plan_checksum (const MpPlan *plan)
{
  g_autofree char *data = NULL;
  g_autofree char *sum = NULL;
  gsize length = 0;

  g_return_val_if_fail (plan != NULL, NULL);

  data = mp_plan_to_data (plan, &length);
  sum = g_compute_checksum_for_data (G_CHECKSUM_SHA256, (const guchar *) data, length);
  return g_strndup (sum, 8);
}
