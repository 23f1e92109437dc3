/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-json.h: small helpers for the JSON the project writes. Numbers that
 * are not finite become null (JSON has no NaN or infinity). */
#pragma once

#include <json-glib/json-glib.h>

G_BEGIN_DECLS

void mp_json_add_number (JsonBuilder *b, const char *key, double value);
void mp_json_add_int (JsonBuilder *b, const char *key, gint64 value);
void mp_json_add_bool (JsonBuilder *b, const char *key, gboolean value);
/* NULL is written as an empty string. */
void mp_json_add_string (JsonBuilder *b, const char *key, const char *value);

G_END_DECLS
