/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-schedule-output.c: the schedule as JSON (the keys of plan-format.md,
 * "The schedule (output)", plus the additions listed in mp-schedule.h) and
 * as CSV. Numbers never come out as NaN or infinity: JSON gets null, CSV an
 * empty field. Both are locale-independent. */
#include "config.h"

#include "mp-json.h"
#include "mp-schedule.h"

#include <math.h>
#include <string.h>

static void
add_step (JsonBuilder *b, const MpStep *s, double reserve_L)
{
  json_builder_begin_object (b);
  mp_json_add_int (b, "index", s->index);
  mp_json_add_string (b, "kind", mp_step_kind_to_string (s->kind));
  mp_json_add_number (b, "wavelength_nm", s->wavelength_nm);
  mp_json_add_number (b, "photon_energy_eV", s->photon_energy_eV);
  mp_json_add_number (b, "excess_energy_eV", s->excess_energy_eV);
  mp_json_add_number (b, "qe", s->qe);
  mp_json_add_number (b, "transmission", s->transmission);
  mp_json_add_number (b, "optical_density", s->optical_density);
  mp_json_add_number (b, "signal_rate_per_s", s->signal_rate_per_s);
  mp_json_add_number (b, "mte_meV", s->mte_meV);
  mp_json_add_number (b, "target_sigma_meV", s->target_sigma_meV);
  mp_json_add_number (b, "required_dwell_s", s->required_dwell_s);
  mp_json_add_number (b, "dwell_s", s->dwell_s);
  mp_json_add_number (b, "reached_sigma_meV", s->reached_sigma_meV);
  mp_json_add_number (b, "start_h", s->start_h);
  mp_json_add_number (b, "end_h", s->end_h);
  /* plan-format.md: litres left above the reserve, so that it counts down
   * to 0 from cryogen_available_L; dewar_level_L is the gauge reading. */
  mp_json_add_number (b, "cryogen_left_L", s->cryogen_left_L - reserve_L);
  mp_json_add_number (b, "dewar_level_L", s->cryogen_left_L);
  mp_json_add_string (b, "status", mp_step_status_to_string (s->status));
  mp_json_add_int (b, "priority", s->priority);
  mp_json_add_bool (b, "done", s->done);
  json_builder_end_object (b);
}

static void
add_block (JsonBuilder *b, const MpBlock *block, double reserve_L)
{
  json_builder_begin_object (b);
  mp_json_add_number (b, "temperature_K", block->temperature_K);
  mp_json_add_number (b, "start_h", block->start_h);
  mp_json_add_number (b, "end_h", block->end_h);
  mp_json_add_number (b, "settle_h", block->settle_h);
  mp_json_add_number (b, "cryogen_L", block->cryogen_L);
  mp_json_add_number (b, "cryogen_start_L", block->cryogen_start_L);
  mp_json_add_number (b, "cryogen_end_L", block->cryogen_end_L);
  json_builder_set_member_name (b, "cut_list");
  json_builder_begin_array (b);
  for (guint i = 0; i < block->cut_list->len; i++)
    {
      int pos = g_array_index (block->cut_list, int, i);

      json_builder_add_int_value (b, g_array_index (block->steps, MpStep, pos).index);
    }
  json_builder_end_array (b);
  json_builder_set_member_name (b, "steps");
  json_builder_begin_array (b);
  for (guint i = 0; i < block->steps->len; i++)
    add_step (b, &g_array_index (block->steps, MpStep, i), reserve_L);
  json_builder_end_array (b);
  json_builder_end_object (b);
}

static void
add_sensitivity (JsonBuilder *b, const char *key, const MpSensitivity *s)
{
  json_builder_set_member_name (b, key);
  json_builder_begin_object (b);
  mp_json_add_number (b, "work_function_eV", s->work_function_eV);
  mp_json_add_number (b, "beam_time_h", s->beam_time_h);
  mp_json_add_number (b, "cryogen_L", s->cryogen_L);
  mp_json_add_int (b, "n_short", s->n_short);
  mp_json_add_int (b, "n_unreachable", s->n_unreachable);
  mp_json_add_int (b, "n_left_out", s->n_left_out);
  mp_json_add_bool (b, "feasible", s->feasible);
  json_builder_end_object (b);
}

JsonNode *
mp_schedule_to_json (const MpSchedule *schedule)
{
  g_autoptr (JsonBuilder) b = json_builder_new ();

  g_return_val_if_fail (schedule != NULL, NULL);

  json_builder_begin_object (b);
  mp_json_add_string (b, "plan_title", schedule->plan_title);
  mp_json_add_bool (b, "feasible", schedule->feasible);
  mp_json_add_string (b, "policy", mp_over_budget_to_string (schedule->policy));
  mp_json_add_number (b, "stretch_factor", schedule->stretch_factor);
  mp_json_add_number (b, "work_function_eV", schedule->work_function_eV);
  mp_json_add_number (b, "effective_work_function_eV", schedule->effective_work_function_eV);

  json_builder_set_member_name (b, "totals");
  json_builder_begin_object (b);
  mp_json_add_number (b, "beam_time_h", schedule->beam_time_h);
  mp_json_add_number (b, "beam_time_available_h", schedule->beam_time_available_h);
  mp_json_add_number (b, "cryogen_L", schedule->cryogen_L);
  mp_json_add_number (b, "cryogen_available_L", schedule->cryogen_available_L);
  json_builder_end_object (b);

  json_builder_set_member_name (b, "blocks");
  json_builder_begin_array (b);
  for (guint i = 0; i < schedule->blocks->len; i++)
    add_block (b, g_ptr_array_index (schedule->blocks, i), schedule->cryogen_reserve_L);
  json_builder_end_array (b);

  json_builder_set_member_name (b, "left_out");
  json_builder_begin_array (b);
  for (guint i = 0; i < schedule->left_out->len; i++)
    {
      const MpLeftOut *lo = &g_array_index (schedule->left_out, MpLeftOut, i);

      json_builder_begin_object (b);
      mp_json_add_number (b, "temperature_K", lo->temperature_K);
      mp_json_add_number (b, "photon_energy_eV", lo->photon_energy_eV);
      mp_json_add_number (b, "wavelength_nm", lo->wavelength_nm);
      mp_json_add_string (b, "reason", lo->reason_c != NULL ? lo->reason_c : lo->reason);
      json_builder_end_object (b);
    }
  json_builder_end_array (b);

  /* Untranslated, so that the JSON is the same in every language. */
  json_builder_set_member_name (b, "warnings");
  json_builder_begin_array (b);
  {
    const GPtrArray *w = schedule->warnings_c != NULL ? schedule->warnings_c : schedule->warnings;

    for (guint i = 0; i < w->len; i++)
      json_builder_add_string_value (b, g_ptr_array_index (w, i));
  }
  json_builder_end_array (b);

  json_builder_set_member_name (b, "sensitivity");
  if (schedule->has_sensitivity)
    {
      json_builder_begin_object (b);
      add_sensitivity (b, "low", &schedule->sensitivity_low);
      add_sensitivity (b, "high", &schedule->sensitivity_high);
      json_builder_end_object (b);
    }
  else
    json_builder_add_null_value (b);
  json_builder_end_object (b);
  return json_builder_get_root (b);
}

char *
mp_schedule_to_json_data (const MpSchedule *schedule, gsize *length)
{
  g_autoptr (JsonNode) root = NULL;
  g_autoptr (JsonGenerator) gen = json_generator_new ();
  char *text;
  gsize len;

  g_return_val_if_fail (schedule != NULL, NULL);

  root = mp_schedule_to_json (schedule);
  json_generator_set_pretty (gen, TRUE);
  json_generator_set_indent (gen, 2);
  json_generator_set_root (gen, root);
  text = json_generator_to_data (gen, &len);
  /* End with a newline like any text file. */
  text = g_realloc (text, len + 2);
  text[len++] = '\n';
  text[len] = '\0';
  if (length != NULL)
    *length = len;
  return text;
}

static void
csv_number (GString *out, double value)
{
  char buf[G_ASCII_DTOSTR_BUF_SIZE];

  g_string_append_c (out, ',');
  if (isfinite (value))
    g_string_append (out, g_ascii_formatd (buf, sizeof buf, "%.10g", value));
}

static void
csv_text (GString *out, const char *text)
{
  g_string_append_c (out, ',');
  g_string_append (out, text);
}

char *
mp_schedule_to_csv (const MpSchedule *schedule)
{
  GString *out;

  g_return_val_if_fail (schedule != NULL, NULL);

  out = g_string_new ("block_temperature_K,index,kind,wavelength_nm,photon_energy_eV,"
                      "excess_energy_eV,qe,transmission,optical_density,signal_rate_per_s,"
                      "mte_meV,target_sigma_meV,required_dwell_s,dwell_s,reached_sigma_meV,"
                      "start_h,end_h,cryogen_left_L,dewar_level_L,status,priority,done\n");
  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *s = &g_array_index (block->steps, MpStep, i);
          char buf[G_ASCII_DTOSTR_BUF_SIZE];

          g_string_append (out, g_ascii_formatd (buf, sizeof buf, "%.10g", block->temperature_K));
          g_string_append_printf (out, ",%d", s->index);
          csv_text (out, mp_step_kind_to_string (s->kind));
          csv_number (out, s->wavelength_nm);
          csv_number (out, s->photon_energy_eV);
          csv_number (out, s->excess_energy_eV);
          csv_number (out, s->qe);
          csv_number (out, s->transmission);
          csv_number (out, s->optical_density);
          csv_number (out, s->signal_rate_per_s);
          csv_number (out, s->mte_meV);
          csv_number (out, s->target_sigma_meV);
          csv_number (out, s->required_dwell_s);
          csv_number (out, s->dwell_s);
          csv_number (out, s->reached_sigma_meV);
          csv_number (out, s->start_h);
          csv_number (out, s->end_h);
          csv_number (out, s->cryogen_left_L - schedule->cryogen_reserve_L);
          csv_number (out, s->cryogen_left_L);
          csv_text (out, mp_step_status_to_string (s->status));
          g_string_append_printf (out, ",%d", s->priority);
          csv_text (out, s->done ? "true" : "false");
          g_string_append_c (out, '\n');
        }
    }
  return g_string_free (out, FALSE);
}
