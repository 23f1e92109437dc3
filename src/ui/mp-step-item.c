/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-step-item.c: a copy of one MpStep in a GObject. */
#include "config.h"

#include <glib/gi18n.h>

#include "mp-step-item.h"

struct _MpStepItem
{
  GObject parent_instance;
  MpStep step;
};

G_DEFINE_FINAL_TYPE (MpStepItem, mp_step_item, G_TYPE_OBJECT)

static void
mp_step_item_class_init (MpStepItemClass *klass)
{
}

static void
mp_step_item_init (MpStepItem *self)
{
}

MpStepItem *
mp_step_item_new (const MpStep *step)
{
  MpStepItem *self;

  g_return_val_if_fail (step != NULL, NULL);
  self = g_object_new (MP_TYPE_STEP_ITEM, NULL);
  self->step = *step;
  return self;
}

const MpStep *
mp_step_item_get_step (MpStepItem *self)
{
  g_return_val_if_fail (MP_IS_STEP_ITEM (self), NULL);
  return &self->step;
}

int
mp_step_item_get_index (MpStepItem *self)
{
  g_return_val_if_fail (MP_IS_STEP_ITEM (self), 0);
  return self->step.index;
}

const MpStep *
mp_schedule_find_step_by_index (const MpSchedule *schedule, int index)
{
  g_return_val_if_fail (schedule != NULL, NULL);

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *step = &g_array_index (block->steps, MpStep, i);

          if (step->index == index)
            return step;
        }
    }
  return NULL;
}

static const char *
status_label (MpStepStatus status)
{
  switch (status)
    {
    case MP_STEP_OK:
      return _("on target");
    case MP_STEP_SHORT:
      return _("short (dwell capped)");
    case MP_STEP_UNREACHABLE:
      return _("unreachable");
    default:
      return "?";
    }
}

char *
mp_step_describe (const MpStep *step)
{
  g_return_val_if_fail (step != NULL, NULL);

  return g_strdup_printf (_("Step %d at %.0f K (%s)\n"
                            "%.1f nm, %.4f eV, excess %+.0f meV\n"
                            "QE %.3g, rate %.3g /s, transmission %.3g\n"
                            "MTE %.1f meV, σ target %.2f meV, reached %.2f meV\n"
                            "Dwell %.0f s, from %.2f h to %.2f h\n"
                            "Status: %s"),
                          step->index, step->temperature_K,
                          step->kind == MP_STEP_KIND_QE_SWEEP ? _("QE sweep") : _("MTE"),
                          step->wavelength_nm, step->photon_energy_eV,
                          step->excess_energy_eV * 1000.0,
                          step->qe, step->signal_rate_per_s, step->transmission,
                          step->mte_meV, step->target_sigma_meV, step->reached_sigma_meV,
                          step->dwell_s, step->start_h, step->end_h,
                          step->done ? _("done (already measured)")
                                     : status_label (step->status));
}
