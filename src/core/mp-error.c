/* SPDX-License-Identifier: GPL-3.0-or-later */
#include "mp-error.h"

G_DEFINE_QUARK (mp-error-quark, mp_error)
