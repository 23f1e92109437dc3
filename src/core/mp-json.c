/* SPDX-License-Identifier: GPL-3.0-or-later */
#include "config.h"

#include "mp-json.h"

#include <math.h>

void
mp_json_add_number (JsonBuilder *b, const char *key, double value)
{
  g_return_if_fail (JSON_IS_BUILDER (b) && key != NULL);

  json_builder_set_member_name (b, key);
  if (isfinite (value))
    json_builder_add_double_value (b, value);
  else
    json_builder_add_null_value (b);
}

void
mp_json_add_int (JsonBuilder *b, const char *key, gint64 value)
{
  g_return_if_fail (JSON_IS_BUILDER (b) && key != NULL);

  json_builder_set_member_name (b, key);
  json_builder_add_int_value (b, value);
}

void
mp_json_add_bool (JsonBuilder *b, const char *key, gboolean value)
{
  g_return_if_fail (JSON_IS_BUILDER (b) && key != NULL);

  json_builder_set_member_name (b, key);
  json_builder_add_boolean_value (b, value);
}

void
mp_json_add_string (JsonBuilder *b, const char *key, const char *value)
{
  g_return_if_fail (JSON_IS_BUILDER (b) && key != NULL);

  json_builder_set_member_name (b, key);
  json_builder_add_string_value (b, value != NULL ? value : "");
}
