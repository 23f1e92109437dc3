/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli model: the threshold model at one point. */
#include "config.h"

#include "mp-cli.h"
#include "mp-physics.h"

#include <glib/gi18n.h>
#include <math.h>
#include <stdio.h>

typedef struct
{
  double work_function_eV;
  double temperature_K;
  double photon_energy_eV;
  double field_MV_per_m;
  double bandwidth_meV;
} ModelInput;

typedef struct
{
  char *work_function;
  char *temperature;
  char *photon_energy;
  char *wavelength;
  char *field;
  char *bandwidth;
  gboolean json;
} ModelArgs;

static void
clear_model_args (ModelArgs *a)
{
  g_free (a->work_function);
  g_free (a->temperature);
  g_free (a->photon_energy);
  g_free (a->wavelength);
  g_free (a->field);
  g_free (a->bandwidth);
}

static gboolean
require_option (const char *name, const char *value, GError **error)
{
  if (value != NULL)
    return TRUE;
  g_set_error (error, G_OPTION_ERROR, G_OPTION_ERROR_FAILED,
               _("%s is required; run “mteplan-cli help model”"), name);
  return FALSE;
}

static gboolean
convert_model_args (const ModelArgs *a, ModelInput *in, GError **error)
{
  double wavelength_nm;

  if (!require_option ("--work-function", a->work_function, error) ||
      !require_option ("--temperature", a->temperature, error))
    return FALSE;
  if (!mp_cli_parse_double ("--work-function", a->work_function, 0.5, 10.0,
                            &in->work_function_eV, error) ||
      !mp_cli_parse_double ("--temperature", a->temperature, 0.1, 3000.0,
                            &in->temperature_K, error))
    return FALSE;
  if ((a->photon_energy == NULL) == (a->wavelength == NULL))
    {
      g_set_error (error, G_OPTION_ERROR, G_OPTION_ERROR_FAILED,
                   _("give exactly one of --photon-energy (eV) or --wavelength (nm)"));
      return FALSE;
    }
  if (a->photon_energy != NULL &&
      !mp_cli_parse_double ("--photon-energy", a->photon_energy, 0.1, 100.0,
                            &in->photon_energy_eV, error))
    return FALSE;
  if (a->wavelength != NULL)
    {
      if (!mp_cli_parse_double ("--wavelength", a->wavelength, 10.0, 10000.0,
                                &wavelength_nm, error))
        return FALSE;
      in->photon_energy_eV = mp_photon_energy_eV_from_wavelength_nm (wavelength_nm);
    }
  in->field_MV_per_m = 0.0;
  in->bandwidth_meV = 0.0;
  if (a->field != NULL &&
      !mp_cli_parse_double ("--field", a->field, 0.0, 1000.0, &in->field_MV_per_m, error))
    return FALSE;
  if (a->bandwidth != NULL &&
      !mp_cli_parse_double ("--bandwidth", a->bandwidth, 0.0, 1000.0, &in->bandwidth_meV, error))
    return FALSE;
  return TRUE;
}

static JsonNode *
build_model_json (const ModelInput *in, double phi_eff, const MpEmission *em)
{
  g_autoptr (JsonBuilder) b = json_builder_new ();
  double excess = in->photon_energy_eV - phi_eff;
  double mte = em->mte_eV;

  json_builder_begin_object (b);
  json_builder_set_member_name (b, "work_function_eV");
  json_builder_add_double_value (b, in->work_function_eV);
  json_builder_set_member_name (b, "effective_work_function_eV");
  json_builder_add_double_value (b, phi_eff);
  json_builder_set_member_name (b, "temperature_K");
  json_builder_add_double_value (b, in->temperature_K);
  json_builder_set_member_name (b, "field_MV_per_m");
  json_builder_add_double_value (b, in->field_MV_per_m);
  json_builder_set_member_name (b, "bandwidth_meV");
  json_builder_add_double_value (b, in->bandwidth_meV);
  json_builder_set_member_name (b, "photon_energy_eV");
  json_builder_add_double_value (b, in->photon_energy_eV);
  json_builder_set_member_name (b, "wavelength_nm");
  json_builder_add_double_value (b, mp_wavelength_nm_from_photon_energy_eV (in->photon_energy_eV));
  json_builder_set_member_name (b, "excess_energy_eV");
  json_builder_add_double_value (b, excess);
  json_builder_set_member_name (b, "thermal_energy_meV");
  json_builder_add_double_value (b, 1e3 * mp_thermal_energy_eV (in->temperature_K));
  json_builder_set_member_name (b, "yield_eV2");
  json_builder_add_double_value (b, mp_yield_eV2 (em));
  json_builder_set_member_name (b, "log_yield");
  json_builder_add_double_value (b, em->log_yield);
  json_builder_set_member_name (b, "mte_meV");
  json_builder_add_double_value (b, 1e3 * mte);
  json_builder_set_member_name (b, "energy_second_moment_meV2");
  json_builder_add_double_value (b, 1e6 * em->eps2_eV2);
  json_builder_set_member_name (b, "energy_spread_meV");
  json_builder_add_double_value (b, 1e3 * sqrt (mp_per_electron_variance_eV2 (em, 0.0)));
  json_builder_end_object (b);
  return json_builder_get_root (b);
}

/* Pads by characters, not bytes, so translated labels line up too. */
static void
print_row (const char *label, const char *format, ...) G_GNUC_PRINTF (2, 3);

static void
print_row (const char *label, const char *format, ...)
{
  va_list args;
  glong pad = 32 - g_utf8_strlen (label, -1);

  fputs (label, stdout);
  for (glong i = 0; i <= pad; i++)
    fputc (' ', stdout);
  va_start (args, format);
  vprintf (format, args);
  va_end (args);
  fputc ('\n', stdout);
}

static void
print_model_table (const ModelInput *in, double phi_eff, const MpEmission *em)
{
  print_row (_("Work function"), "%14.6f eV", in->work_function_eV);
  print_row (_("Field-lowered work function"), "%14.6f eV", phi_eff);
  print_row (_("Photon energy"), "%14.6f eV", in->photon_energy_eV);
  print_row (_("Wavelength"), "%14.4f nm", mp_wavelength_nm_from_photon_energy_eV (in->photon_energy_eV));
  print_row (_("Excess energy"), "%14.6f eV", in->photon_energy_eV - phi_eff);
  print_row (_("Thermal energy kT"), "%14.4f meV", 1e3 * mp_thermal_energy_eV (in->temperature_K));
  print_row (_("Yield (Fowler-DuBridge)"), "%14.6g eV²", mp_yield_eV2 (em));
  print_row (_("ln yield"), "%14.6f", em->log_yield);
  print_row (_("MTE"), "%14.4f meV", 1e3 * em->mte_eV);
  print_row (_("Second moment <ε²>"), "%14.4f meV²", 1e6 * em->eps2_eV2);
}

int
mp_cli_model (int argc, char **argv)
{
  ModelArgs a = { 0 };
  ModelInput in;
  MpEmission em;
  double phi_eff;
  g_autoptr (GError) error = NULL;
  g_autoptr (GOptionContext) ctx = NULL;
  GOptionEntry entries[] = {
    { "work-function", 0, 0, G_OPTION_ARG_STRING, &a.work_function, N_("Work function, 0.5 to 10"), N_("EV") },
    { "temperature", 0, 0, G_OPTION_ARG_STRING, &a.temperature, N_("Cathode temperature, 0.1 to 3000"), N_("K") },
    { "photon-energy", 0, 0, G_OPTION_ARG_STRING, &a.photon_energy, N_("Photon energy"), N_("EV") },
    { "wavelength", 0, 0, G_OPTION_ARG_STRING, &a.wavelength, N_("Vacuum wavelength instead of photon energy"), N_("NM") },
    { "field", 0, 0, G_OPTION_ARG_STRING, &a.field, N_("Extraction field for Schottky lowering (default 0)"), N_("MV_PER_M") },
    { "bandwidth", 0, 0, G_OPTION_ARG_STRING, &a.bandwidth, N_("RMS laser bandwidth (default 0)"), N_("MEV") },
    { "json", 0, 0, G_OPTION_ARG_NONE, &a.json, N_("Print one JSON object"), NULL },
    { NULL }
  };

  ctx = g_option_context_new (NULL);
  g_option_context_set_summary (ctx, _("Predict the Fowler-DuBridge yield and the MTE at one photon energy."));
  g_option_context_add_main_entries (ctx, entries, GETTEXT_PACKAGE);
  if (!g_option_context_parse (ctx, &argc, &argv, &error) ||
      !convert_model_args (&a, &in, &error))
    {
      clear_model_args (&a);
      return mp_cli_fail ("model: %s", error->message);
    }
  if (argc > 1)
    {
      clear_model_args (&a);
      return mp_cli_fail (_("model: unexpected argument “%s”"), argv[1]);
    }

  phi_eff = mp_effective_work_function_eV (in.work_function_eV, in.field_MV_per_m);
  mp_emission_averaged (in.photon_energy_eV - phi_eff, in.temperature_K,
                        1e-3 * in.bandwidth_meV, &em);
  if (a.json)
    {
      g_autoptr (JsonNode) node = build_model_json (&in, phi_eff, &em);
      g_autofree char *text = mp_cli_json_to_string (node);

      printf ("%s\n", text);
    }
  else
    print_model_table (&in, phi_eff, &em);
  clear_model_args (&a);
  return MP_EXIT_OK;
}
