/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli fit: learn the work function (and effective temperatures)
 * from measured QE and MTE points, with the plan's field and laser. */
#include "config.h"

#include "mp-json.h"
#include "mp-cli.h"
#include "mp-error.h"
#include "mp-fit.h"
#include "mp-measured.h"
#include "mp-physics.h"
#include "mp-plan.h"

#include <glib/gi18n.h>
#include <math.h>
#include <stdio.h>

typedef struct
{
  gboolean json;
  gboolean electron_temperature;
  gboolean qe_only;
} FitArgs;

static void
add_blocks_json (JsonBuilder *b, const MpFitResult *fit)
{
  json_builder_set_member_name (b, "effective_temperatures");
  json_builder_begin_array (b);
  for (guint i = 0; i < fit->blocks->len; i++)
    {
      const MpFitBlock *blk = &g_array_index (fit->blocks, MpFitBlock, i);

      if (!blk->fitted)
        continue;
      json_builder_begin_object (b);
      mp_json_add_number (b, "temperature_K", blk->temperature_K);
      mp_json_add_number (b, "effective_temperature_K", blk->effective_temperature_K);
      mp_json_add_number (b, "effective_temperature_sigma_K", blk->effective_temperature_sigma_K);
      mp_json_add_number (b, "thermal_ratio", blk->thermal_ratio);
      json_builder_set_member_name (b, "n_qe");
      json_builder_add_int_value (b, blk->n_qe);
      json_builder_set_member_name (b, "n_mte");
      json_builder_add_int_value (b, blk->n_mte);
      json_builder_end_object (b);
    }
  json_builder_end_array (b);
}

static void
add_residuals_json (JsonBuilder *b, const MpFitResult *fit)
{
  json_builder_set_member_name (b, "residuals");
  json_builder_begin_array (b);
  for (guint i = 0; i < fit->residuals->len; i++)
    {
      const MpFitResidual *r = &g_array_index (fit->residuals, MpFitResidual, i);

      json_builder_begin_object (b);
      json_builder_set_member_name (b, "line");
      json_builder_add_int_value (b, r->line);
      json_builder_set_member_name (b, "kind");
      json_builder_add_string_value (b, mp_fit_residual_kind_to_string (r->kind));
      mp_json_add_number (b, "temperature_K", r->temperature_K);
      mp_json_add_number (b, "photon_energy_eV", r->photon_energy_eV);
      mp_json_add_number (b, "excess_energy_eV", r->excess_energy_eV);
      mp_json_add_number (b, "measured", r->measured);
      mp_json_add_number (b, "model", r->model);
      mp_json_add_number (b, "residual", r->residual);
      mp_json_add_number (b, "sigma", r->sigma);
      mp_json_add_number (b, "normalised_residual", r->normalised_residual);
      json_builder_end_object (b);
    }
  json_builder_end_array (b);
}

static JsonNode *
build_fit_json (const MpFitResult *fit)
{
  g_autoptr (JsonBuilder) b = json_builder_new ();

  json_builder_begin_object (b);
  mp_json_add_number (b, "work_function_eV", fit->work_function_eV);
  mp_json_add_number (b, "work_function_sigma_eV", fit->work_function_sigma_eV);
  mp_json_add_number (b, "effective_work_function_eV", fit->effective_work_function_eV);
  mp_json_add_number (b, "field_MV_per_m", fit->field_MV_per_m);
  mp_json_add_number (b, "bandwidth_meV", fit->bandwidth_meV);
  mp_json_add_number (b, "qe_scale", fit->qe_scale);
  mp_json_add_number (b, "log_qe_scale", fit->log_qe_scale);
  mp_json_add_number (b, "log_qe_scale_sigma", fit->log_qe_scale_sigma);
  mp_json_add_number (b, "work_function_scale_correlation", fit->phi_scale_correlation);
  mp_json_add_number (b, "qe_at_reference", fit->qe_at_reference);
  mp_json_add_number (b, "chi_square", fit->chi_square);
  mp_json_add_number (b, "reduced_chi_square", fit->reduced_chi_square);
  json_builder_set_member_name (b, "dof");
  json_builder_add_int_value (b, fit->dof);
  json_builder_set_member_name (b, "n_parameters");
  json_builder_add_int_value (b, fit->n_parameters);
  json_builder_set_member_name (b, "n_values");
  json_builder_add_int_value (b, fit->n_residuals);
  json_builder_set_member_name (b, "iterations");
  json_builder_add_int_value (b, fit->iterations);
  json_builder_set_member_name (b, "qe_sigma_source");
  json_builder_add_string_value (b, fit->qe_sigma_from_data ? "data" : "scatter");
  mp_json_add_number (b, "qe_scatter", fit->qe_scatter);
  json_builder_set_member_name (b, "mte_sigma_source");
  json_builder_add_string_value (b, fit->mte_sigma_from_data ? "data"
                                    : isfinite (fit->mte_scatter_meV) ? "scatter" : "none");
  mp_json_add_number (b, "mte_scatter_meV", fit->mte_scatter_meV);
  add_blocks_json (b, fit);
  add_residuals_json (b, fit);
  json_builder_end_object (b);
  return json_builder_get_root (b);
}

static void
print_parameters (const MpFitResult *fit, const MpPlan *plan)
{
  printf (_("Fit of the Fowler-DuBridge model (field %g MV/m, laser bandwidth %g meV rms)\n\n"),
          fit->field_MV_per_m, fit->bandwidth_meV);
  printf ("%-34s %9.4f ± %.4f eV   (%s %.4f ± %.4f eV)\n", _("Work function (bare)"),
          fit->work_function_eV, fit->work_function_sigma_eV, _("plan"),
          plan->cathode.work_function_eV, plan->cathode.work_function_sigma_eV);
  printf ("%-34s %9.4f eV\n", _("Field-lowered work function"),
          fit->effective_work_function_eV);
  printf ("%-34s %9.3f ± %.3f   (A = %.4g per eV²)\n", _("QE scale ln A"),
          fit->log_qe_scale, fit->log_qe_scale_sigma, fit->qe_scale);
  printf ("%-34s %9.3g   (%s %.3g at %.4g eV, %g K)\n", _("QE at the plan's reference"),
          fit->qe_at_reference, _("plan"), plan->cathode.qe_ref,
          plan->cathode.qe_ref_photon_energy_eV, plan->cathode.qe_ref_temperature_K);
  printf ("%-34s %9.3f   (%d %s, %d %s)\n", _("Reduced chi-square"),
          fit->reduced_chi_square, fit->dof, _("degrees of freedom"),
          fit->iterations, _("iterations"));
  if (fit->qe_sigma_from_data)
    printf ("%-34s %s\n", _("QE weights"), _("from qe_sigma"));
  else
    printf ("%-34s %s (%.2f %%)\n", _("QE weights"), _("from the scatter"), 100.0 * fit->qe_scatter);
  if (isfinite (fit->mte_scatter_meV))
    printf ("%-34s %s (%.3f meV)\n", _("MTE weights"), _("from the scatter"), fit->mte_scatter_meV);
}

static void
print_blocks (const MpFitResult *fit)
{
  gboolean any = FALSE;

  for (guint i = 0; i < fit->blocks->len; i++)
    any = any || g_array_index (fit->blocks, MpFitBlock, i).fitted;
  if (!any)
    return;
  printf (_("\nEffective electron temperature per block (1 = at the thermal limit):\n"));
  printf ("  %8s %5s %5s %12s %9s %8s\n", "T K", "QE", "MTE", "T_eff K", "± K", "T_eff/T");
  for (guint i = 0; i < fit->blocks->len; i++)
    {
      const MpFitBlock *blk = &g_array_index (fit->blocks, MpFitBlock, i);

      if (blk->fitted)
        printf ("  %8g %5d %5d %12.2f %9.2f %8.3f\n", blk->temperature_K, blk->n_qe,
                blk->n_mte, blk->effective_temperature_K, blk->effective_temperature_sigma_K,
                blk->thermal_ratio);
    }
}

static void
print_residuals (const MpFitResult *fit)
{
  printf (_("\nResiduals (QE: ln measured - ln model; MTE: meV):\n"));
  printf ("  %5s %-4s %8s %8s %9s %11s %11s %10s %7s\n", _("line"), _("kind"), "T K", "E eV",
          "excess eV", _("measured"), _("model"), _("residual"), "/sigma");
  for (guint i = 0; i < fit->residuals->len; i++)
    {
      const MpFitResidual *r = &g_array_index (fit->residuals, MpFitResidual, i);

      printf ("  %5d %-4s %8g %8.4f %+9.4f %11.4g %11.4g %+10.4f %+7.2f\n", r->line,
              r->kind == MP_FIT_RESIDUAL_QE ? "QE" : "MTE", r->temperature_K,
              r->photon_energy_eV, r->excess_energy_eV, r->measured, r->model,
              r->residual, r->normalised_residual);
    }
}

int
mp_cli_fit (int argc, char **argv)
{
  FitArgs a = { FALSE, FALSE, FALSE };
  MpFitOptions opts;
  g_autoptr (GError) error = NULL;
  g_autoptr (GOptionContext) ctx = NULL;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpMeasuredData) data = NULL;
  g_autoptr (MpFitResult) fit = NULL;
  GOptionEntry entries[] = {
    { "json", 0, 0, G_OPTION_ARG_NONE, &a.json, N_("Print one JSON object"), NULL },
    { "electron-temperature", 0, 0, G_OPTION_ARG_NONE, &a.electron_temperature,
      N_("Fit an effective electron temperature per block in the QE model too"), NULL },
    { "qe-only", 0, 0, G_OPTION_ARG_NONE, &a.qe_only,
      N_("Leave the MTE columns out of the fit"), NULL },
    { NULL }
  };

  ctx = g_option_context_new (_("PLAN DATA.csv"));
  g_option_context_set_summary (ctx, _("Fit the work function, the QE scale and the effective "
                                       "electron temperatures to measured points, with the "
                                       "plan's field and laser bandwidth. DATA.csv has a header "
                                       "with temperature_K, photon_energy_eV or wavelength_nm, "
                                       "qe and optionally qe_sigma, mte_meV, mte_sigma_meV, "
                                       "electrons, elapsed_h. Exit status 2 on bad input or "
                                       "when the data cannot determine the fit."));
  g_option_context_add_main_entries (ctx, entries, GETTEXT_PACKAGE);
  if (!g_option_context_parse (ctx, &argc, &argv, &error))
    return mp_cli_fail ("fit: %s", error->message);
  if (argc != 3)
    return mp_cli_fail (_("fit: expected a PLAN file and a DATA.csv file, found %d arguments; "
                          "run “mteplan-cli help fit”"), argc - 1);

  plan = mp_plan_load_from_file (argv[1], &error);
  if (plan == NULL)
    return mp_cli_fail ("%s: %s", argv[1], error->message);
  data = mp_measured_load_from_file (argv[2], &error);
  if (data == NULL)
    return mp_cli_fail ("%s", error->message);
  mp_fit_options_init (&opts);
  opts.electron_temperature = a.electron_temperature;
  opts.use_mte = !a.qe_only;
  fit = mp_fit_measured (plan, data, &opts, NULL, &error);
  if (fit == NULL)
    return mp_cli_fail (_("%s: cannot fit: %s"), argv[2], error->message);

  if (a.json)
    {
      g_autoptr (JsonNode) node = build_fit_json (fit);
      g_autofree char *text = mp_cli_json_to_string (node);

      printf ("%s\n", text);
    }
  else
    {
      print_parameters (fit, plan);
      print_blocks (fit);
      print_residuals (fit);
    }
  return MP_EXIT_OK;
}

gboolean
mp_cli_plan_apply_measured (const char *data_path,
                            gboolean use_fit,
                            gboolean elapsed_given,
                            MpPlan *plan,
                            MpScheduleOptions *options,
                            GArray **done_out,
                            GError **error)
{
  g_autoptr (MpMeasuredData) data = NULL;
  double elapsed_h;

  g_return_val_if_fail (data_path != NULL && plan != NULL, FALSE);
  g_return_val_if_fail (options != NULL && done_out != NULL, FALSE);

  data = mp_measured_load_from_file (data_path, error);
  if (data == NULL)
    return FALSE;
  if (use_fit)
    {
      g_autoptr (MpFitResult) fit = NULL;
      g_autoptr (GError) local = NULL;
      double old_phi = plan->cathode.work_function_eV;
      double old_sigma = plan->cathode.work_function_sigma_eV;
      double old_qe = plan->cathode.qe_ref;

      fit = mp_fit_measured (plan, data, NULL, NULL, &local);
      if (fit == NULL)
        {
          g_set_error (error, MP_ERROR, local->code, _("%s: cannot fit: %s"),
                       data_path, local->message);
          return FALSE;
        }
      mp_fit_apply_to_plan (fit, plan);
      fprintf (stderr, _("mteplan-cli: using the fitted work function %.4f ± %.4f eV "
                         "(plan: %.4f ± %.4f eV) and reference QE %.3g (plan: %.3g), "
                         "reduced chi-square %.2f\n"),
               plan->cathode.work_function_eV, plan->cathode.work_function_sigma_eV,
               old_phi, old_sigma, plan->cathode.qe_ref, old_qe, fit->reduced_chi_square);
    }
  *done_out = mp_measured_to_done_points (data, plan);
  options->done = *done_out;
  elapsed_h = mp_measured_max_elapsed_h (data);
  if (!elapsed_given && isfinite (elapsed_h))
    {
      options->elapsed_h = elapsed_h;
      fprintf (stderr, _("mteplan-cli: %u measured points; %.2f h of beam time spent "
                         "(largest elapsed_h in the data)\n"),
               data->points->len, elapsed_h);
    }
  else
    fprintf (stderr, _("mteplan-cli: %u measured points\n"), data->points->len);
  return TRUE;
}

/* ---- bench sections ------------------------------------------------------ */

static double
time_fit_ms (const MpPlan *plan, const MpMeasuredData *data, int runs)
{
  double best = INFINITY;

  for (int i = 0; i < runs; i++)
    {
      gint64 t0 = g_get_monotonic_time ();
      g_autoptr (MpFitResult) fit = mp_fit_measured (plan, data, NULL, NULL, NULL);

      if (fit == NULL)
        return NAN;
      best = MIN (best, (g_get_monotonic_time () - t0) * 1e-3);
    }
  return best;
}

/* n QE points over -0.05 .. +0.35 eV at 295, 120 and 40 K, drawn from the
 * plan's model with a 2 % wobble. */
static MpMeasuredData *
make_bench_data (const MpPlan *plan, int n)
{
  MpMeasuredData *data = g_new0 (MpMeasuredData, 1);
  double phi_eff = mp_effective_work_function_eV (plan->cathode.work_function_eV,
                                                  plan->cathode.field_MV_per_m);
  static const double temps[] = { 295.0, 120.0, 40.0 };

  data->name = g_strdup ("bench");
  data->points = g_array_new (FALSE, TRUE, sizeof (MpMeasuredPoint));
  for (int i = 0; i < n; i++)
    {
      MpMeasuredPoint p = { 0 };
      MpEmission em;
      double excess = -0.05 + 0.40 * i / MAX (n - 1, 1);

      p.temperature_K = temps[i % 3];
      p.photon_energy_eV = phi_eff + excess;
      mp_emission_averaged (excess, p.temperature_K, 1e-3 * plan->laser.bandwidth_meV, &em);
      p.qe = 1e-4 * exp (em.log_yield + 0.02 * sin (7.0 * i));
      p.qe_sigma = p.mte_meV = p.mte_sigma_meV = p.electrons = p.elapsed_h = NAN;
      p.line = i + 2;
      g_array_append_val (data->points, p);
    }
  return data;
}

void
mp_bench_fit (JsonBuilder *b, gboolean human)
{
  g_autofree char *plan_path = g_build_filename (MP_SOURCE_DIR, "data", "examples",
                                                 "cold-copper-shift.mteplan", NULL);
  g_autofree char *data_path = g_build_filename (MP_SOURCE_DIR, "tests", "data", "measured",
                                                 "cold-copper-first-points.csv", NULL);
  g_autoptr (MpPlan) plan = mp_plan_load_from_file (plan_path, NULL);
  g_autoptr (MpMeasuredData) demo = mp_measured_load_from_file (data_path, NULL);
  g_autoptr (MpMeasuredData) many = NULL;
  double demo_ms = NAN, many_ms;

  if (plan == NULL)
    plan = mp_plan_new_default ();
  if (demo != NULL)
    demo_ms = time_fit_ms (plan, demo, 5);
  many = make_bench_data (plan, 3000);
  many_ms = time_fit_ms (plan, many, 1);
  json_builder_set_member_name (b, "fit_demo_ms");
  json_builder_add_double_value (b, isfinite (demo_ms) ? demo_ms : -1.0);
  json_builder_set_member_name (b, "fit_3000_points_ms");
  json_builder_add_double_value (b, isfinite (many_ms) ? many_ms : -1.0);
  if (human)
    {
      printf ("%-36s %14.1f\n", _("fit of the demo data (25 values), ms"), demo_ms);
      printf ("%-36s %14.1f\n", _("fit of 3000 QE points, ms"), many_ms);
    }
}
