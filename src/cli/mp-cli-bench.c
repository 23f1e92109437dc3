/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli bench: figures for speed targets. A benchmark prints what it
 * measured; it never fails on a figure. */
#include "config.h"

#include "mp-cli.h"
#include "mp-physics.h"

#include <glib/gi18n.h>
#include <stdio.h>

/* Defeats dead-code elimination of the measured loop. */
static volatile double bench_sink;

static void
bench_model (JsonBuilder *b, gboolean human)
{
  const int n = 400000;
  gint64 t0, t1;
  double acc = 0.0, per_s;
  MpEmission em;

  t0 = g_get_monotonic_time ();
  for (int i = 0; i < n; i++)
    {
      /* Excess energies from -0.3 to +0.5 eV at 45 K to 300 K. */
      double excess = -0.3 + 0.8 * (i % 1000) / 1000.0;
      double temperature = 45.0 + (i % 7) * 40.0;

      mp_emission_monochromatic (excess, temperature, &em);
      acc += em.mte_eV + em.eps2_eV2 + em.log_yield;
    }
  t1 = g_get_monotonic_time ();
  bench_sink = acc;
  per_s = n / ((t1 - t0) * 1e-6);
  json_builder_set_member_name (b, "model_evaluations_per_s");
  json_builder_add_double_value (b, per_s);
  if (human)
    printf ("%-36s %14.0f  (target >= 2000000)\n", _("model evaluations per second"), per_s);
}

static const MpBenchSection sections[] = {
  bench_model,
  mp_bench_plan_demo,
  mp_bench_plan_stress,
  mp_bench_fit,
  mp_bench_rehearse_electrons,
  mp_bench_rehearse_shift,
  mp_bench_sheet_demo,
  mp_bench_plot_demo,
};

int
mp_cli_bench (int argc, char **argv)
{
  gboolean json = FALSE;
  g_autoptr (GError) error = NULL;
  g_autoptr (GOptionContext) ctx = NULL;
  g_autoptr (JsonBuilder) b = json_builder_new ();
  GOptionEntry entries[] = {
    { "json", 0, 0, G_OPTION_ARG_NONE, &json, N_("Print one JSON object"), NULL },
    { NULL }
  };

  ctx = g_option_context_new (NULL);
  g_option_context_set_summary (ctx, _("Measure the speed of the model, the planner and the rehearsal on one core."));
  g_option_context_add_main_entries (ctx, entries, GETTEXT_PACKAGE);
  if (!g_option_context_parse (ctx, &argc, &argv, &error))
    return mp_cli_fail ("bench: %s", error->message);

  json_builder_begin_object (b);
  for (gsize i = 0; i < G_N_ELEMENTS (sections); i++)
    sections[i] (b, !json);
  json_builder_end_object (b);
  if (json)
    {
      g_autoptr (JsonNode) root = json_builder_get_root (b);
      g_autofree char *text = mp_cli_json_to_string (root);

      printf ("%s\n", text);
    }
  return MP_EXIT_OK;
}
