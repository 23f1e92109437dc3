/* SPDX-License-Identifier: GPL-3.0-or-later */
#pragma once

#include <glib.h>

G_BEGIN_DECLS

#define MP_ERROR (mp_error_quark ())

typedef enum
{
  MP_ERROR_INVALID,     /* bad input: a field, its accepted range, what was found */
  MP_ERROR_LIMIT,       /* input over a size or count limit */
  MP_ERROR_IO,          /* reading or writing a file failed */
  MP_ERROR_UNDETERMINED /* a fit cannot determine a parameter */
} MpErrorCode;

GQuark mp_error_quark (void);

G_END_DECLS
