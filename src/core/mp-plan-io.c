/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-plan-io.c: loading and saving plan documents (work in progress). */
#include "config.h"

#include <glib/gi18n.h>

#include "mp-error.h"
#include "mp-plan.h"

MpPlan *
mp_plan_load_from_data (const char *data, gssize length,
                        const char *base_dir, GError **error)
{
  g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Loading plans is not implemented yet"));
  return NULL;
}

MpPlan *
mp_plan_load_from_file (const char *path, GError **error)
{
  g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Loading plans is not implemented yet"));
  return NULL;
}

gboolean
mp_plan_validate (const MpPlan *plan, GError **error)
{
  return TRUE;
}

char *
mp_plan_to_data (const MpPlan *plan, gsize *length)
{
  if (length != NULL)
    *length = 2;
  return g_strdup ("{}");
}

gboolean
mp_plan_save_to_file (MpPlan *plan, const char *path, GError **error)
{
  g_set_error (error, MP_ERROR, MP_ERROR_IO, _("Saving plans is not implemented yet"));
  return FALSE;
}

char *
mp_plan_checksum (const MpPlan *plan)
{
  return g_strdup ("00000000");
}
