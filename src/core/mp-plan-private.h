/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-private.h: the table of plan fields and their accepted ranges,
 * shared by the loader (mp-plan-io.c) and mp_plan_validate
 * (mp-plan-validate.c). Not installed, not for front ends: they use
 * mp_plan_field_range() from mp-plan.h. */
#pragma once

#include "mp-plan.h"

G_BEGIN_DECLS

typedef enum
{
  MP_FIELD_MIN_EXCLUSIVE = 1 << 0,  /* value > min (else >= min) */
  MP_FIELD_OPTIONAL      = 1 << 1,  /* absent: default_value */
  MP_FIELD_INTEGER       = 1 << 2,  /* stored as int, whole numbers only */
} MpFieldFlags;

typedef struct
{
  const char *path;      /* JSON path below its container, dotted */
  gsize offset;          /* of the double (or int) in its struct */
  double min;
  double max;            /* INFINITY: no upper bound */
  MpFieldFlags flags;
  double default_value;
} MpNumberField;

/* Top-level numbers (offsets into MpPlan), per temperature block
 * (MpTemperatureBlock), per tuning point (MpTuningPoint). */
extern const MpNumberField mp_plan_number_fields[];
extern const guint mp_plan_n_number_fields;
extern const MpNumberField mp_block_number_fields[];
extern const guint mp_block_n_number_fields;
extern const MpNumberField mp_point_number_fields[];
extern const guint mp_point_n_number_fields;
extern const MpNumberField mp_range_switch_field;

/* Limits (issue 8). */
#define MP_PLAN_MAX_FILE_BYTES    (16 * 1024 * 1024)
#define MP_PLAN_MAX_DEPTH         64
#define MP_PLAN_MAX_BLOCKS        100
#define MP_PLAN_MAX_POINTS        10000
#define MP_PLAN_MAX_RANGES        16
#define MP_PLAN_MAX_STRING_BYTES  4096
#define MP_PLAN_MAX_NUMBER_CHARS  64
#define MP_PLAN_MAX_STEPS         10000   /* per block, per grid */
#define MP_PLAN_MIN_POINTS        2

/* "a number from 0.5 to 10", "a number > 0", "a whole number from 0 to 1000" */
char *mp_number_field_expectation (const MpNumberField *field);
gboolean mp_number_field_accepts (const MpNumberField *field, double value);
double mp_number_field_get (const MpNumberField *field, gconstpointer base);
void mp_number_field_set (const MpNumberField *field, gpointer base, double value);

/* Formats a double for messages and files: shortest text that reads back
 * to the same double, locale-independent ("0.1", "-5", "2e-06"). */
char *mp_format_double (double value);

/* TRUE when the laser is written as a single "tuning_curve" (or
 * "tuning_curve_csv") rather than "tuning_ranges". */
gboolean mp_plan_uses_single_curve (const MpPlan *plan);
/* JSON path of the points of range r: "laser.tuning_curve" or
 * "laser.tuning_ranges[1].tuning_curve". */
char *mp_plan_range_path (const MpPlan *plan, guint r);

/* Checks one tuning point list (count, ascending, ranges); path is the
 * JSON path of the array. */
gboolean mp_tuning_points_check (const GArray *points, const char *path,
                                 GError **error);

/* A copy sharing nothing with node (json_node_copy() shares containers). */
JsonNode *mp_json_deep_copy (JsonNode *node);

G_END_DECLS
