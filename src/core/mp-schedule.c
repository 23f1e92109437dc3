/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-schedule.c: from a plan to a timed, budgeted scan.
 *
 * The numbers follow ../shared/spec/physics.md ("Counting and dwell time",
 * "Time and cryogen"); the steps, the policies and the output follow
 * ../shared/spec/plan-format.md. The work is done in passes over a list of
 * candidate steps per temperature block:
 *
 *   1. generate the steps (QE sweep, coarse and fine grid), round them to
 *      the laser's wavelength step, drop duplicates and steps outside the
 *      tuning ranges;
 *   2. predict each step once (emission, QE, signal, variance), which does
 *      not depend on the target, so the policies below never recompute the
 *      model;
 *   3. set dwells from the targets (times a stretch factor);
 *   4. apply the over-budget policy;
 *   5. lay out the timeline of the kept steps, priorities and cut lists.
 *
 * Drop policy, the value of a step: a step is worth
 *   value = w * min(1, (sigma_target / sigma_reached)^2)
 * where w = 1 + 2 exp(-(dE / w_band)^2 / 2) weighs closeness to threshold
 * (w_band = fine half-width + 2 sigma_phi, at least 3 kT), and the second
 * factor is the share of the wanted information (1/sigma^2) it reaches.
 * Its cost is cost = t / T_all + L / L_all, its hours and litres (hold
 * during its retune and dwell, plus an equal share of its block's settle
 * time and cool-down) relative to what the whole unbudgeted plan needs.
 * Steps are left out in increasing value / cost until the rest fits. The
 * order does not depend on the budgets, and the kept set is the complement
 * of the shortest fitting prefix of that order (common practice, no source:
 * a greedy knapsack by value density). Whole blocks: the candidates "leave
 * out the j blocks with the most demanding settle time and cool-down, then
 * steps as above" for j = 0, 1, ... are compared and the one leaving out
 * the fewest steps wins (ties: smaller j). Each candidate leaves out fewer
 * steps as a budget grows, so their minimum does too: more beam time or
 * more cryogen never leaves out more steps. A block whose settle time or
 * cool-down alone exceeds a budget can never be kept, and its steps say
 * "block cool-down does not fit".
 *
 * Stretch policy: every target times one factor s >= 1, the smallest that
 * fits, by bisection (time falls as s rises).
 *
 * Re-plans (MpScheduleOptions): the clock starts at elapsed_h, which comes
 * off the beam time; cryogen_left_L replaces the budget; a done step takes
 * no time, and a block holding done steps is under way, so its settle time
 * and cool-down are not counted again. */
#include "config.h"

#include "mp-schedule.h"

#include "mp-constants.h"
#include "mp-error.h"
#include "mp-physics.h"

#include <glib/gi18n.h>
#include <gsl/gsl_interp.h>
#include <locale.h>
#include <math.h>
#include <string.h>

/* Largest number of candidate steps in one temperature block. */
#define MP_SCHEDULE_MAX_STEPS_PER_BLOCK 200000
/* Counts a QE sweep step aims for: 1/sqrt(1000) = 3 % on the QE. */
#define MP_QE_SWEEP_COUNTS 1000.0
/* A done point matches a step at the same temperature within this. */
#define MP_DONE_TEMPERATURE_K 0.5
/* Largest stretch factor tried before the policy gives up. */
#define MP_STRETCH_MAX 1e6
/* Emission tables: node spacing in units of max(line width, kT), the
 * largest line width (in kT) where the nominal plan uses them, and how many
 * direct evaluations a table must save (see build_emission_table). */
#define MP_TABLE_SPACING 0.5
#define MP_TABLE_MAX_WIDTH_KT 3.0
#define MP_TABLE_MIN_SAVING 1.5

/* The bandwidth-averaged emission of one temperature on a uniform grid of
 * excess energy, interpolated by cubic splines in ln Y, ln MTE and
 * ln(<eps^2> - MTE^2). Shared by the nominal plan and the phi +- sigma
 * re-plans. */
typedef struct
{
  gboolean accurate;        /* within 2e-5 of mp_emission_averaged */
  double lo_eV;
  double hi_eV;
  guint n;
  double *x;
  double *y[3];
  gsl_interp *interp[3];
} MpEmissionTable;

typedef struct
{
  MpStep s;
  double variance_eV2;      /* V + (B/S) W_b per signal electron */
  double base_target_eV;    /* target sigma before stretching (MTE steps) */
  double weight;            /* closeness to threshold, 1..3 */
  double rank;              /* value per cost: lower is left out first */
  gboolean on_coarse_grid;
  gboolean dropped;         /* left out by the policy */
  int timeline_pos;         /* among the pending steps (drop policy) */
  const char *drop_reason;
} MpWork;

typedef struct
{
  const MpTemperatureBlock *tb;
  GArray *work;             /* MpWork in scan order: QE sweep, then MTE */
  guint index;              /* in plan->temperatures */
  gboolean started;         /* holds done steps: settle and cool-down paid */
  gboolean warming;         /* revisited warmer than the block under way: no cool-down */
  gboolean dropped;         /* whole block left out */
  double band_eV;           /* half-width of the near-threshold band */
} MpBlockWork;

/* Cool-down liquid a block costs; none when it is reached by warming up. */
static double
block_cooldown_L (const MpBlockWork *bw)
{
  return bw->warming ? 0.0 : bw->tb->cooldown_L;
}

typedef struct
{
  const MpPlan *plan;
  const MpScheduleOptions *opts;
  GPtrArray *tables;        /* MpEmissionTable* per block (NULL: direct), or NULL */
  gboolean nominal;         /* the plan itself, not a phi +- sigma re-plan */
  const MpSchedule *planned; /* what-if: re-predict these steps, or NULL */
  double phi_eV;
  double phi_eff_eV;
  MpEmission ref;
  double f_rep_Hz;
  double bandwidth_eV;
  double systematic_eV;
  double resolution_eV;
  double acceptance_eV;
  double level0_L;          /* liquid at the start of the (re-)plan */
  double avail_h;
  double avail_L;
  double stretch;
  gboolean feasible;
  GPtrArray *blocks;        /* MpBlockWork* */
  GArray *left_out;         /* MpLeftOut */
  GPtrArray *warnings;      /* char*, translated */
  GPtrArray *warnings_c;    /* char*, untranslated, C numbers */
  guint n_out_of_range;
} MpPlanner;

void
mp_schedule_options_init (MpScheduleOptions *opts)
{
  g_return_if_fail (opts != NULL);

  memset (opts, 0, sizeof *opts);
  opts->elapsed_h = 0.0;
  opts->cryogen_left_L = NAN;
  opts->done = NULL;
  opts->no_sensitivity = FALSE;
}

const char *
mp_step_status_to_string (MpStepStatus status)
{
  switch (status)
    {
    case MP_STEP_OK:
      return "ok";
    case MP_STEP_SHORT:
      return "short";
    case MP_STEP_UNREACHABLE:
      return "unreachable";
    default:
      return "unknown";
    }
}

const char *
mp_step_kind_to_string (MpStepKind kind)
{
  switch (kind)
    {
    case MP_STEP_KIND_MTE:
      return "mte";
    case MP_STEP_KIND_QE_SWEEP:
      return "qe_sweep";
    default:
      return "unknown";
    }
}

/* ---- planner state ---------------------------------------------------- */

static void
block_work_free (gpointer data)
{
  MpBlockWork *bw = data;

  g_array_unref (bw->work);
  g_free (bw);
}

static void
left_out_clear (gpointer data)
{
  MpLeftOut *lo = data;

  g_free (lo->reason);
  g_free (lo->reason_c);
}

static void
planner_clear (MpPlanner *p)
{
  g_clear_pointer (&p->blocks, g_ptr_array_unref);
  g_clear_pointer (&p->left_out, g_array_unref);
  g_clear_pointer (&p->warnings, g_ptr_array_unref);
  g_clear_pointer (&p->warnings_c, g_ptr_array_unref);
}

/* Messages go out twice: translated with the user's numbers for people
 * (MpSchedule.warnings, MpLeftOut.reason), and untranslated with C numbers
 * for machines (the JSON), so that the JSON is the same in every locale. */
static gpointer
create_c_locale (gpointer data)
{
  return (gpointer) newlocale (LC_ALL_MASK, "C", (locale_t) 0);
}

static char *
format_untranslated (const char *format, va_list args) G_GNUC_PRINTF (1, 0);

static char *
format_untranslated (const char *format, va_list args)
{
  static GOnce once = G_ONCE_INIT;
  locale_t c_locale = (locale_t) g_once (&once, create_c_locale, NULL);
  locale_t old;
  char *text;

  if (c_locale == (locale_t) 0)
    return g_strdup_vprintf (format, args);
  old = uselocale (c_locale);
  text = g_strdup_vprintf (format, args);
  uselocale (old);
  return text;
}

/* reason: untranslated; reason_translated: NULL to translate reason. */
static void
add_left_out (MpPlanner *p, double temperature_K, double photon_energy_eV,
              double wavelength_nm, const char *reason, const char *reason_translated)
{
  MpLeftOut lo = { temperature_K, photon_energy_eV, wavelength_nm, NULL, NULL };

  lo.reason = g_strdup (reason_translated != NULL ? reason_translated : _(reason));
  lo.reason_c = g_strdup (reason);
  g_array_append_val (p->left_out, lo);
}

/* format is an N_() string. */
static void
add_warning (MpPlanner *p, const char *format, ...) G_GNUC_PRINTF (2, 3);

static void
add_warning (MpPlanner *p, const char *format, ...)
{
  va_list args, args2;

  va_start (args, format);
  va_copy (args2, args);
  g_ptr_array_add (p->warnings, g_strdup_vprintf (_(format), args));
  g_ptr_array_add (p->warnings_c, format_untranslated (format, args2));
  va_end (args2);
  va_end (args);
}

/* A warning about a count of steps: singular and plural as the language
 * needs them (g_dngettext), English by n for the JSON copy. xgettext finds
 * the two forms by the keyword add_warning_n:3,4 (po/meson.build). */
static void
add_warning_n (MpPlanner *p, gulong n, const char *singular, const char *plural, ...)
  G_GNUC_PRINTF (3, 5) G_GNUC_PRINTF (4, 5);

static void
add_warning_n (MpPlanner *p, gulong n, const char *singular, const char *plural, ...)
{
  va_list args, args2;

  va_start (args, plural);
  va_copy (args2, args);
  g_ptr_array_add (p->warnings,
                   g_strdup_vprintf (g_dngettext (GETTEXT_PACKAGE, singular, plural, n), args));
  g_ptr_array_add (p->warnings_c, format_untranslated (n == 1 ? singular : plural, args2));
  va_end (args2);
  va_end (args);
}

/* ---- step generation -------------------------------------------------- */

typedef struct
{
  double excess_eV;
  gboolean coarse;
} MpGridPoint;

static int
compare_grid_points (gconstpointer a, gconstpointer b)
{
  const MpGridPoint *ga = a, *gb = b;

  if (ga->excess_eV < gb->excess_eV)
    return -1;
  if (ga->excess_eV > gb->excess_eV)
    return 1;
  return (int) gb->coarse - (int) ga->coarse;
}

static double
near_threshold_band_eV (const MpPlan *plan, double temperature_K)
{
  double band = plan->scan.fine_halfwidth_eV + 2.0 * plan->cathode.work_function_sigma_eV;

  return MAX (band, 3.0 * mp_thermal_energy_eV (temperature_K));
}

/* Excess energies of the MTE steps: the coarse grid over the scan range and
 * the fine grid (anchored at threshold) over +-(fine half-width + 2 sigma_phi),
 * clipped to the scan range, sorted, duplicates merged. */
static GArray *
make_excess_grid (const MpPlan *plan, GError **error)
{
  const MpScan *sc = &plan->scan;
  GArray *grid = g_array_new (FALSE, FALSE, sizeof (MpGridPoint));
  double lo = sc->excess_min_eV, hi = sc->excess_max_eV;
  double tol = 1e-9 * MAX (sc->step_eV, 1e-6);
  double n_coarse = sc->step_eV > 0.0 ? floor ((hi - lo) / sc->step_eV + 1e-9) + 1.0 : 1.0;
  double band = sc->fine_halfwidth_eV + 2.0 * plan->cathode.work_function_sigma_eV;
  double n_fine = 0.0;

  if (sc->fine_step_eV > 0.0 && band > 0.0)
    n_fine = 2.0 * floor (band / sc->fine_step_eV + 1e-9) + 1.0;
  if (!(n_coarse + n_fine <= MP_SCHEDULE_MAX_STEPS_PER_BLOCK))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_LIMIT,
                   _("scan: the step sizes give %.0f steps per temperature, more than %d; "
                     "use a larger scan.step_eV or scan.fine_step_eV"),
                   n_coarse + n_fine, MP_SCHEDULE_MAX_STEPS_PER_BLOCK);
      g_array_unref (grid);
      return NULL;
    }
  for (long i = 0; i < (long) n_coarse; i++)
    {
      MpGridPoint g = { lo + i * sc->step_eV, TRUE };

      g_array_append_val (grid, g);
    }
  if (n_fine > 0.0)
    {
      long k_max = (long) ((n_fine - 1.0) / 2.0);

      for (long k = -k_max; k <= k_max; k++)
        {
          MpGridPoint g = { k * sc->fine_step_eV, FALSE };

          if (g.excess_eV >= lo - tol && g.excess_eV <= hi + tol)
            g_array_append_val (grid, g);
        }
    }
  g_array_sort (grid, compare_grid_points);
  /* Merge points closer than the tolerance (a fine point on the coarse
   * grid); the coarse flag survives because it sorts first. */
  {
    guint out = 0;

    for (guint i = 0; i < grid->len; i++)
      {
        MpGridPoint *g = &g_array_index (grid, MpGridPoint, i);

        if (out > 0 && fabs (g->excess_eV - g_array_index (grid, MpGridPoint, out - 1).excess_eV) <= tol)
          continue;
        g_array_index (grid, MpGridPoint, out++) = *g;
      }
    g_array_set_size (grid, out);
  }
  return grid;
}

static char *
describe_tuning_ranges (const MpLaser *laser)
{
  GString *s = g_string_new (NULL);

  for (guint r = 0; laser->ranges != NULL && r < laser->ranges->len; r++)
    {
      const MpTuningRange *range = g_ptr_array_index (laser->ranges, r);
      const MpTuningPoint *pt;
      char a[G_ASCII_DTOSTR_BUF_SIZE], b[G_ASCII_DTOSTR_BUF_SIZE];

      if (range->points == NULL || range->points->len < 2)
        continue;
      pt = (const MpTuningPoint *) range->points->data;
      g_ascii_formatd (a, sizeof a, "%g", pt[0].wavelength_nm);
      g_ascii_formatd (b, sizeof b, "%g", pt[range->points->len - 1].wavelength_nm);
      g_string_append_printf (s, "%s%s-%s nm", s->len > 0 ? ", " : "", a, b);
    }
  return g_string_free (s, FALSE);
}

/* Rounds the photon energy phi_eff + excess to the wavelength grid.
 * Returns the integer wavelength index (wavelength = k * step). */
static gint64
round_to_wavelength_step (const MpPlan *plan, double photon_energy_eV, double *wavelength_nm)
{
  double step = plan->laser.wavelength_step_nm;
  double wl = mp_wavelength_nm_from_photon_energy_eV (photon_energy_eV);
  gint64 k;

  if (!(step > 0.0))
    {
      *wavelength_nm = wl;
      return (gint64) llround (wl * 1e6);
    }
  k = (gint64) llround (wl / step);
  *wavelength_nm = (double) k * step;
  return k;
}

/* Predicts one step: everything of "Counting and dwell time" that does not
 * depend on the target. Returns FALSE when the wavelength is outside every
 * tuning range. */
static void
emission_table_free (gpointer data)
{
  MpEmissionTable *t = data;

  if (t == NULL)
    return;
  for (int k = 0; k < 3; k++)
    {
      g_clear_pointer (&t->interp[k], gsl_interp_free);
      g_free (t->y[k]);
    }
  g_free (t->x);
  g_free (t);
}

/* A table for one block, or NULL where direct evaluation is better: no
 * line width (the monochromatic model is cheap) or fewer direct
 * evaluations saved than MP_TABLE_MIN_SAVING times the nodes. With nodes
 * 0.5 max(sigma_L, kT) apart and sigma_L <= 3 kT the interpolation error is
 * below 2e-5 relative in yield, MTE and variance for 4-300 K and
 * 0.5-20 meV (measured against mp_emission_averaged on a 0.137 meV grid);
 * such a table is "accurate" and serves the nominal plan. For wider lines
 * the 48-node Gauss-Hermite average itself is ragged on the scale of kT
 * (its error against adaptive quadrature reaches 1e-3 at 8 K and 5 meV),
 * the table follows it only to a few 1e-3, and it serves the phi +- sigma
 * re-plans only, whose totals are what-ifs. n_nominal and n_replans are
 * the evaluations each kind of run would make. */
static MpEmissionTable *
build_emission_table (const MpPlan *plan, double temperature_K, double n_nominal,
                      double n_replans)
{
  double sigma_L = plan->laser.bandwidth_meV * 1e-3;
  double kT = mp_thermal_energy_eV (temperature_K);
  double h = MP_TABLE_SPACING * MAX (sigma_L, kT);
  /* The QE sweep spans +-(2 sigma_phi + 3 kT); steps move by up to
   * sigma_phi (re-plans) plus a wavelength step's energy (rounding); and
   * lookups stay two nodes inside the ends. */
  double sweep = plan->scan.qe_sweep_points > 0
                 ? 2.0 * plan->cathode.work_function_sigma_eV + 3.0 * kT : 0.0;
  double e_max = plan->cathode.work_function_eV + plan->cathode.work_function_sigma_eV
                 + MAX (plan->scan.excess_max_eV, sweep);
  double margin = plan->cathode.work_function_sigma_eV
                  + e_max * e_max / MP_HC_EV_NM * plan->laser.wavelength_step_nm + 3.0 * h;
  double lo = MIN (plan->scan.excess_min_eV, -sweep) - margin;
  double hi = MAX (plan->scan.excess_max_eV, sweep) + margin;
  gboolean accurate = sigma_L <= MP_TABLE_MAX_WIDTH_KT * kT;
  double n_evaluations = n_replans + (accurate ? n_nominal : 0.0);
  MpEmissionTable *t;
  double n_nodes;

  if (!(sigma_L > 0.0))
    return NULL;
  n_nodes = ceil ((hi - lo) / h) + 1.0;
  if (!(n_nodes * MP_TABLE_MIN_SAVING <= n_evaluations) || n_nodes > 1e6)
    return NULL;
  t = g_new0 (MpEmissionTable, 1);
  t->accurate = accurate;
  t->n = (guint) n_nodes;
  t->lo_eV = lo;
  t->hi_eV = lo + (t->n - 1) * h;
  t->x = g_new (double, t->n);
  for (int k = 0; k < 3; k++)
    t->y[k] = g_new (double, t->n);
  for (guint i = 0; i < t->n; i++)
    {
      MpEmission em;
      double var;

      t->x[i] = lo + i * h;
      mp_emission_averaged (t->x[i], temperature_K, sigma_L, &em);
      var = em.eps2_eV2 - em.mte_eV * em.mte_eV;
      if (!(var > 0.0) || !(em.mte_eV > 0.0) || !isfinite (em.log_yield))
        {
          emission_table_free (t);
          return NULL;
        }
      t->y[0][i] = em.log_yield;
      t->y[1][i] = log (em.mte_eV);
      t->y[2][i] = log (var);
    }
  for (int k = 0; k < 3; k++)
    {
      t->interp[k] = gsl_interp_alloc (gsl_interp_cspline, t->n);
      gsl_interp_init (t->interp[k], t->x, t->y[k], t->n);
    }
  return t;
}

static gboolean
lookup_emission (const MpEmissionTable *t, double excess_eV, MpEmission *out)
{
  double mte, var;

  /* Keep two nodes away from the ends, where the natural spline is weakest. */
  if (t == NULL || excess_eV < t->x[2] || excess_eV > t->x[t->n - 3])
    return FALSE;
  out->log_yield = gsl_interp_eval (t->interp[0], t->x, t->y[0], excess_eV, NULL);
  mte = exp (gsl_interp_eval (t->interp[1], t->x, t->y[1], excess_eV, NULL));
  var = exp (gsl_interp_eval (t->interp[2], t->x, t->y[2], excess_eV, NULL));
  out->mte_eV = mte;
  out->eps2_eV2 = var + mte * mte;
  return TRUE;
}

static GPtrArray *
build_emission_tables (const MpPlan *plan, const MpScheduleOptions *opts)
{
  GPtrArray *tables = g_ptr_array_new_with_free_func (emission_table_free);
  const MpScan *sc = &plan->scan;
  double n_steps = 0.0;

  if (sc->step_eV > 0.0)
    n_steps += floor ((sc->excess_max_eV - sc->excess_min_eV) / sc->step_eV) + 1.0;
  if (sc->fine_step_eV > 0.0)
    n_steps += 2.0 * (sc->fine_halfwidth_eV + 2.0 * plan->cathode.work_function_sigma_eV)
               / sc->fine_step_eV;
  n_steps += MAX (sc->qe_sweep_points, 0);
  for (guint b = 0; b < plan->temperatures->len; b++)
    g_ptr_array_add (tables,
                     build_emission_table (plan, g_array_index (plan->temperatures,
                                                                MpTemperatureBlock, b).temperature_K,
                                           n_steps, opts->no_sensitivity ? 0.0 : 2.0 * n_steps));
  return tables;
}

static gboolean
predict_step (MpPlanner *p, const MpBlockWork *bw, MpWork *w)
{
  double temperature_K = bw->tb->temperature_K;
  const MpEmissionTable *table = p->tables != NULL ? g_ptr_array_index (p->tables, bw->index) : NULL;

  if (table != NULL && p->nominal && !table->accurate)
    table = NULL;
  const MpPlan *plan = p->plan;
  double pulse_uJ, n_ph, mu_full, mu, mu_cap;
  MpEmission em;
  int range = 0;

  if (!mp_laser_pulse_energy_uJ (&plan->laser, w->s.wavelength_nm, &pulse_uJ, &range))
    return FALSE;
  w->s.range_index = range;
  if (!lookup_emission (table, w->s.excess_energy_eV, &em))
    mp_emission_averaged (w->s.excess_energy_eV, temperature_K, p->bandwidth_eV, &em);
  w->s.qe = mp_qe_from_reference (plan->cathode.qe_ref, &p->ref, &em);
  /* N_ph = U / (E e), U in joules. */
  n_ph = pulse_uJ * 1e-6 / (w->s.photon_energy_eV * MP_E_CHARGE_C);
  mu_full = w->s.qe * n_ph * plan->detector.efficiency;
  mu_cap = MIN (plan->detector.max_electrons_per_pulse,
                plan->detector.max_rate_per_s / p->f_rep_Hz);
  mu = MIN (mu_full, mu_cap);
  if (mu_full > 0.0 && isfinite (mu_full))
    {
      w->s.transmission = mu / mu_full;
      w->s.optical_density = -log10 (w->s.transmission);
      if (w->s.optical_density == 0.0)
        w->s.optical_density = 0.0; /* no "-0" */
    }
  else
    {
      w->s.transmission = 1.0;
      w->s.optical_density = 0.0;
    }
  w->s.signal_rate_per_s = mu * p->f_rep_Hz;
  w->s.mte_meV = (em.mte_eV + plan->cathode.extra_mte_meV * 1e-3) * 1e3;
  w->variance_eV2 = mp_variance_per_electron_eV2 (&em, p->resolution_eV,
                                                  w->s.signal_rate_per_s,
                                                  plan->detector.dark_rate_per_s,
                                                  p->acceptance_eV);
  if (w->s.kind == MP_STEP_KIND_MTE)
    w->base_target_eV = MAX (plan->scan.target_mte_sigma_meV * 1e-3,
                             plan->scan.target_mte_sigma_rel * w->s.mte_meV * 1e-3);
  else
    w->base_target_eV = NAN;
  return TRUE;
}

/* Turns excess energies into steps of one kind, in scan order: the grid
 * ascends in excess, so in photon energy, and descending order walks it
 * backwards. Rounding duplicates are neighbours either way. */
static void
add_steps (MpPlanner *p, MpBlockWork *bw, MpStepKind kind, const GArray *grid,
           const char *out_of_range)
{
  const MpPlan *plan = p->plan;
  double temperature_K = bw->tb->temperature_K;
  gboolean descending = plan->scan.order != MP_SCAN_ASCENDING;
  gint64 last_k = G_MININT64, last_added_k = G_MININT64;

  for (guint j = 0; j < grid->len; j++)
    {
      const MpGridPoint *g = &g_array_index (grid, MpGridPoint, descending ? grid->len - 1 - j : j);
      MpWork *w;
      double wavelength_nm;
      gint64 k;

      if (!(p->phi_eff_eV + g->excess_eV > 0.0))
        continue;
      k = round_to_wavelength_step (plan, p->phi_eff_eV + g->excess_eV, &wavelength_nm);
      if (k == last_k)
        {
          if (g->coarse && k == last_added_k)
            g_array_index (bw->work, MpWork, bw->work->len - 1).on_coarse_grid = TRUE;
          continue;
        }
      last_k = k;
      if (!(wavelength_nm > 0.0))
        continue;
      g_array_set_size (bw->work, bw->work->len + 1);
      w = &g_array_index (bw->work, MpWork, bw->work->len - 1);
      w->s.kind = kind;
      w->s.temperature_K = temperature_K;
      w->s.wavelength_nm = wavelength_nm;
      w->on_coarse_grid = g->coarse;
      w->s.photon_energy_eV = mp_photon_energy_eV_from_wavelength_nm (wavelength_nm);
      w->s.excess_energy_eV = w->s.photon_energy_eV - p->phi_eff_eV;
      if (!predict_step (p, bw, w))
        {
          /* The same words twice: for the JSON, and translated. */
          g_autofree char *why = g_strdup_printf ("outside the laser's tuning range (%s)",
                                                  out_of_range);
          g_autofree char *why_translated =
            g_strdup_printf (_("outside the laser's tuning range (%s)"), out_of_range);

          add_left_out (p, temperature_K, w->s.photon_energy_eV, wavelength_nm,
                        why, why_translated);
          p->n_out_of_range++;
          g_array_set_size (bw->work, bw->work->len - 1);
          continue;
        }
      {
        double z = w->s.excess_energy_eV / bw->band_eV;

        w->weight = 1.0 + 2.0 * exp (-0.5 * z * z);
      }
      last_added_k = k;
    }
}

/* The QE sweep: evenly spread over +-(2 sigma_phi + 3 kT) around threshold. */
static GArray *
make_sweep_grid (const MpPlan *plan, double temperature_K)
{
  GArray *grid = g_array_new (FALSE, FALSE, sizeof (MpGridPoint));
  int n = plan->scan.qe_sweep_points;
  double half = 2.0 * plan->cathode.work_function_sigma_eV
                + 3.0 * mp_thermal_energy_eV (temperature_K);

  for (int i = 0; i < n; i++)
    {
      MpGridPoint g = { n == 1 ? 0.0 : -half + 2.0 * half * i / (n - 1), FALSE };

      g_array_append_val (grid, g);
    }
  return grid;
}

/* How far a measured point may sit from a step and still count as that
 * step measured: half the finest grid spacing in use, and never less than
 * half a wavelength step (in energy, dE = E^2 / (hc) * dlambda). */
static double
done_tolerance_eV (const MpPlan *plan, double photon_energy_eV)
{
  const MpScan *sc = &plan->scan;
  double spacing_eV = sc->fine_step_eV > 0.0 && sc->fine_halfwidth_eV > 0.0
                      ? MIN (sc->fine_step_eV, sc->step_eV) : sc->step_eV;
  double step_nm = plan->laser.wavelength_step_nm;
  double rounding_eV = 0.5 * photon_energy_eV * photon_energy_eV / MP_HC_EV_NM
                       * (step_nm > 0.0 ? step_nm : 1e-6);

  return MAX (0.5 * spacing_eV, rounding_eV) * (1.0 + 1e-9);
}

static int
find_nearest_open_step (const MpBlockWork *bw, double photon_energy_eV, double tol_eV)
{
  int best = -1;
  double best_dist = tol_eV;

  for (guint i = 0; i < bw->work->len; i++)
    {
      const MpWork *w = &g_array_index (bw->work, MpWork, i);
      double dist = fabs (w->s.photon_energy_eV - photon_energy_eV);

      if (!w->s.done && dist <= best_dist)
        {
          best = (int) i;
          best_dist = dist;
        }
    }
  return best;
}

/* Where a step at this photon energy belongs in the block's scan order. */
static guint
find_insert_position (const MpPlanner *p, const MpBlockWork *bw, double photon_energy_eV)
{
  gboolean descending = p->plan->scan.order != MP_SCAN_ASCENDING;
  guint i;

  for (i = 0; i < bw->work->len; i++)
    {
      double e = g_array_index (bw->work, MpWork, i).s.photon_energy_eV;

      if (descending ? photon_energy_eV > e : photon_energy_eV < e)
        break;
    }
  return i;
}

/* A measured point that no step claims (the grid moved with a refitted work
 * function, or the point was taken off-plan) joins the block as a done step
 * of its own, so that the re-planned schedule still shows it. */
static void
add_done_step (MpPlanner *p, MpBlockWork *bw, const MpDonePoint *d)
{
  MpWork w = { 0 };
  double wavelength_nm;

  round_to_wavelength_step (p->plan, d->photon_energy_eV, &wavelength_nm);
  if (!(wavelength_nm > 0.0))
    return;
  w.s.kind = MP_STEP_KIND_MTE;
  w.s.temperature_K = bw->tb->temperature_K;
  w.s.wavelength_nm = wavelength_nm;
  w.s.photon_energy_eV = mp_photon_energy_eV_from_wavelength_nm (wavelength_nm);
  w.s.excess_energy_eV = w.s.photon_energy_eV - p->phi_eff_eV;
  if (!predict_step (p, bw, &w))
    return;
  w.weight = 1.0;
  w.s.done = TRUE;
  g_array_insert_val (bw->work, find_insert_position (p, bw, w.s.photon_energy_eV), w);
}

static void
mark_done_steps (MpPlanner *p, MpBlockWork *bw)
{
  const GArray *done = p->opts->done;

  for (guint i = 0; done != NULL && i < done->len; i++)
    {
      const MpDonePoint *d = &g_array_index (done, MpDonePoint, i);
      int pos;

      if (fabs (d->temperature_K - bw->tb->temperature_K) > MP_DONE_TEMPERATURE_K)
        continue;
      pos = find_nearest_open_step (bw, d->photon_energy_eV,
                                    done_tolerance_eV (p->plan, d->photon_energy_eV));
      if (pos >= 0)
        g_array_index (bw->work, MpWork, pos).s.done = TRUE;
      else if (p->planned == NULL)
        add_done_step (p, bw, d);
      bw->started = TRUE;
    }
}

/* What-if: the steps the nominal schedule kept for this block, at their
 * wavelengths, predicted again with this planner's work function. */
static void
add_planned_steps (MpPlanner *p, MpBlockWork *bw)
{
  for (guint b = 0; b < p->planned->blocks->len; b++)
    {
      const MpBlock *block = g_ptr_array_index (p->planned->blocks, b);

      if (block->plan_block_index != (int) bw->index)
        continue;
      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *planned = &g_array_index (block->steps, MpStep, i);
          MpWork *w;

          g_array_set_size (bw->work, bw->work->len + 1);
          w = &g_array_index (bw->work, MpWork, bw->work->len - 1);
          w->s.kind = planned->kind;
          w->s.temperature_K = planned->temperature_K;
          w->s.wavelength_nm = planned->wavelength_nm;
          w->s.photon_energy_eV = planned->photon_energy_eV;
          w->s.excess_energy_eV = planned->photon_energy_eV - p->phi_eff_eV;
          if (!predict_step (p, bw, w))
            {
              g_array_set_size (bw->work, bw->work->len - 1);
              continue;
            }
          {
            double z = w->s.excess_energy_eV / bw->band_eV;

            w->weight = 1.0 + 2.0 * exp (-0.5 * z * z);
          }
        }
    }
}

/* The block under way in a re-plan: the one holding the latest measured
 * point (by elapsed time where the data carry it, else the last block in
 * plan order that holds a measured point); -1 when nothing was measured. */
static int
find_block_under_way (const MpPlanner *p)
{
  const GArray *done = p->opts->done;
  int current = -1;
  double latest_h = -INFINITY;

  for (guint b = 0; b < p->blocks->len; b++)
    {
      const MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      for (guint i = 0; done != NULL && i < done->len; i++)
        {
          const MpDonePoint *d = &g_array_index (done, MpDonePoint, i);
          double t_h = isnan (d->elapsed_h) ? -1.0 : d->elapsed_h;

          if (fabs (d->temperature_K - bw->tb->temperature_K) > MP_DONE_TEMPERATURE_K)
            continue;
          if (t_h >= latest_h)
            {
              latest_h = t_h;
              current = (int) b;
            }
        }
    }
  return current;
}

static gboolean
has_open_steps (const MpBlockWork *bw)
{
  for (guint i = 0; i < bw->work->len; i++)
    if (!g_array_index (bw->work, MpWork, i).s.done)
      return TRUE;
  return FALSE;
}

/* A re-plan goes on from the block under way, not back to the start: the
 * blocks before it that are finished stay first (they are history), then
 * the block under way, the blocks after it in plan order, and last the
 * earlier blocks that still have open steps, nearest first. Going back to
 * one of those means settling again; a colder one also pays its cool-down
 * again, a warmer one (reached by warming up) does not. */
static void
order_blocks_for_replan (MpPlanner *p)
{
  int current = find_block_under_way (p);
  g_autoptr (GPtrArray) ordered = NULL;
  g_autoptr (GPtrArray) revisited = NULL;

  if (current < 0)
    return;
  ordered = g_ptr_array_new ();
  revisited = g_ptr_array_new ();
  for (int b = 0; b < current; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      if (!has_open_steps (bw))
        g_ptr_array_add (ordered, bw);
    }
  /* Revisit the nearest first (in a cool-down series: warm up block by
   * block). */
  for (int b = current - 1; b >= 0; b--)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      const MpBlockWork *now = g_ptr_array_index (p->blocks, current);

      if (has_open_steps (bw))
        {
          bw->started = FALSE;
          bw->warming = bw->tb->temperature_K > now->tb->temperature_K;
          g_ptr_array_add (revisited, bw);
        }
    }
  for (guint b = current; b < p->blocks->len; b++)
    g_ptr_array_add (ordered, g_ptr_array_index (p->blocks, b));
  for (guint b = 0; b < revisited->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (revisited, b);

      g_ptr_array_add (ordered, bw);
      if (p->planned == NULL)
        add_warning (p, N_("The %g K block still has open steps: they come after the block under way and pay its settle time again"),
                     bw->tb->temperature_K);
    }
  for (guint b = 0; b < ordered->len; b++)
    p->blocks->pdata[b] = ordered->pdata[b];
}

static gboolean
generate_steps (MpPlanner *p, GError **error)
{
  const MpPlan *plan = p->plan;
  g_autoptr (GArray) grid = make_excess_grid (plan, error);
  g_autofree char *ranges = NULL;

  if (grid == NULL)
    return FALSE;
  ranges = describe_tuning_ranges (&plan->laser);
  for (guint b = 0; b < plan->temperatures->len; b++)
    {
      MpBlockWork *bw = g_new0 (MpBlockWork, 1);

      bw->tb = &g_array_index (plan->temperatures, MpTemperatureBlock, b);
      bw->index = b;
      bw->work = g_array_sized_new (FALSE, TRUE, sizeof (MpWork),
                                    grid->len + MAX (plan->scan.qe_sweep_points, 0));
      bw->band_eV = near_threshold_band_eV (plan, bw->tb->temperature_K);
      g_ptr_array_add (p->blocks, bw);
      if (plan->scan.qe_sweep_points > 0 && p->planned == NULL)
        {
          g_autoptr (GArray) sweep = make_sweep_grid (plan, bw->tb->temperature_K);

          add_steps (p, bw, MP_STEP_KIND_QE_SWEEP, sweep, ranges);
        }
      if (p->planned != NULL)
        add_planned_steps (p, bw);
      else
        add_steps (p, bw, MP_STEP_KIND_MTE, grid, ranges);
      mark_done_steps (p, bw);
    }
  order_blocks_for_replan (p);
  return TRUE;
}

/* ---- dwell from targets ------------------------------------------------ */

static void
set_dwell (MpPlanner *p, MpWork *w, double stretch)
{
  const MpScan *sc = &p->plan->scan;
  double S = w->s.signal_rate_per_s;

  if (w->s.kind == MP_STEP_KIND_QE_SWEEP)
    {
      double t_req = S > 0.0 ? MP_QE_SWEEP_COUNTS / S : INFINITY;

      w->s.target_sigma_meV = NAN;
      w->s.required_dwell_s = t_req;
      if (sc->qe_sweep_dwell_s > 0.0)
        w->s.dwell_s = sc->qe_sweep_dwell_s;
      else
        w->s.dwell_s = CLAMP (t_req, sc->min_dwell_s, sc->max_dwell_s);
      w->s.status = !(S > 0.0) ? MP_STEP_UNREACHABLE
                    : w->s.dwell_s < t_req * (1.0 - 1e-12) ? MP_STEP_SHORT : MP_STEP_OK;
    }
  else
    {
      double target = w->base_target_eV * stretch;
      double t_req = mp_required_dwell_s (w->variance_eV2, S, target, p->systematic_eV);

      w->s.target_sigma_meV = target * 1e3;
      w->s.required_dwell_s = t_req;
      if (!isfinite (t_req))
        {
          w->s.dwell_s = sc->max_dwell_s;
          w->s.status = MP_STEP_UNREACHABLE;
        }
      else if (t_req > sc->max_dwell_s)
        {
          w->s.dwell_s = sc->max_dwell_s;
          w->s.status = MP_STEP_SHORT;
        }
      else
        {
          w->s.dwell_s = MAX (t_req, sc->min_dwell_s);
          w->s.status = MP_STEP_OK;
        }
    }
  w->s.reached_sigma_meV = 1e3 * mp_reached_sigma_eV (w->variance_eV2, S, w->s.dwell_s,
                                                      p->systematic_eV);
}

static void
set_all_dwells (MpPlanner *p, double stretch)
{
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      for (guint i = 0; i < bw->work->len; i++)
        set_dwell (p, &g_array_index (bw->work, MpWork, i), stretch);
    }
}

/* ---- totals ------------------------------------------------------------ */

static gboolean
is_kept (const MpBlockWork *bw, const MpWork *w)
{
  return w->s.done || (!bw->dropped && !w->dropped);
}

static gboolean
is_pending (const MpBlockWork *bw, const MpWork *w)
{
  return !w->s.done && !bw->dropped && !w->dropped;
}

static double
switch_s (const MpPlan *plan, int range)
{
  const MpTuningRange *r = g_ptr_array_index (plan->laser.ranges, range);

  return r->switch_s;
}

/* Hours and litres of the kept steps; the same walk as lay_out_timeline. */
static void
measure_totals (const MpPlanner *p, double *hours, double *litres)
{
  const MpPlan *plan = p->plan;
  double total_h = 0.0, total_L = 0.0;
  int prev_range = -1;

  for (guint b = 0; b < p->blocks->len; b++)
    {
      const MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      double block_s = 0.0, cool_L = 0.0;
      gboolean any_pending = FALSE;

      for (guint i = 0; i < bw->work->len; i++)
        {
          const MpWork *w = &g_array_index (bw->work, MpWork, i);

          if (!is_pending (bw, w))
            continue;
          any_pending = TRUE;
          if (prev_range >= 0 && w->s.range_index != prev_range)
            block_s += switch_s (plan, w->s.range_index);
          prev_range = w->s.range_index;
          block_s += plan->laser.retune_s + w->s.dwell_s;
        }
      if (!any_pending)
        continue;
      if (!bw->started)
        {
          block_s += bw->tb->settle_min * 60.0;
          cool_L = block_cooldown_L (bw);
        }
      total_h += block_s / 3600.0;
      total_L += cool_L + bw->tb->hold_L_per_h * block_s / 3600.0;
    }
  *hours = total_h;
  *litres = total_L;
}

static gboolean
fits (const MpPlanner *p)
{
  double h, L;

  measure_totals (p, &h, &L);
  return h <= p->avail_h && L <= p->avail_L;
}

/* ---- policies ---------------------------------------------------------- */

static double
information_share (const MpWork *w)
{
  double r;

  if (w->s.kind == MP_STEP_KIND_QE_SWEEP)
    return w->s.status == MP_STEP_UNREACHABLE ? 0.0 : 1.0;
  if (!(w->s.signal_rate_per_s > 0.0) || !isfinite (w->s.reached_sigma_meV))
    return 0.0;
  r = w->s.target_sigma_meV / w->s.reached_sigma_meV;
  return MIN (1.0, r * r);
}

/* Ranks pending steps by value per cost (see the top of the file). */
static void
rank_steps (MpPlanner *p)
{
  const MpPlan *plan = p->plan;
  double all_h, all_L;

  measure_totals (p, &all_h, &all_L);
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      int n_pending = 0;
      double fixed_h, fixed_L;

      for (guint i = 0; i < bw->work->len; i++)
        n_pending += is_pending (bw, &g_array_index (bw->work, MpWork, i));
      if (n_pending == 0)
        continue;
      fixed_h = bw->started ? 0.0 : bw->tb->settle_min / 60.0;
      fixed_L = bw->started ? 0.0 : block_cooldown_L (bw) + bw->tb->hold_L_per_h * fixed_h;
      for (guint i = 0; i < bw->work->len; i++)
        {
          MpWork *w = &g_array_index (bw->work, MpWork, i);
          double t_h, L, cost, value;

          if (!is_pending (bw, w))
            continue;
          t_h = (plan->laser.retune_s + w->s.dwell_s) / 3600.0;
          L = bw->tb->hold_L_per_h * t_h + fixed_L / n_pending;
          t_h += fixed_h / n_pending;
          cost = (all_h > 0.0 ? t_h / all_h : 0.0) + (all_L > 0.0 ? L / all_L : 0.0);
          value = (w->s.kind == MP_STEP_KIND_QE_SWEEP ? 1.5 : w->weight) * information_share (w);
          w->rank = cost > 0.0 ? value / cost : G_MAXDOUBLE;
        }
    }
}

typedef struct
{
  MpWork *w;
  double rank;              /* copy of w->rank, for sorting */
  guint block;
  guint pos;
} MpWorkRef;

static int
compare_refs_by_rank (gconstpointer a, gconstpointer b)
{
  const MpWorkRef *ra = a, *rb = b;

  if (ra->rank < rb->rank)
    return -1;
  if (ra->rank > rb->rank)
    return 1;
  /* Ties: later blocks, then later steps, go first (deterministic). */
  if (ra->block != rb->block)
    return ra->block > rb->block ? -1 : 1;
  return ra->pos > rb->pos ? -1 : (ra->pos < rb->pos ? 1 : 0);
}

/* Settle time and cool-down of a block not yet started. */
static void
block_fixed_cost (const MpBlockWork *bw, double *hours, double *litres)
{
  double settle_h = bw->started ? 0.0 : bw->tb->settle_min / 60.0;

  *hours = settle_h;
  *litres = bw->started ? 0.0 : block_cooldown_L (bw) + bw->tb->hold_L_per_h * settle_h;
}

typedef struct
{
  guint block;
  double demand;
} MpBlockRef;

static int
compare_block_refs (gconstpointer a, gconstpointer b)
{
  const MpBlockRef *ra = a, *rb = b;

  if (ra->demand != rb->demand)
    return ra->demand > rb->demand ? -1 : 1;
  return ra->block > rb->block ? -1 : (ra->block < rb->block ? 1 : 0);
}

/* Blocks that could go whole, the most demanding settle and cool-down
 * first (relative to the whole plan's needs, so independent of budgets). */
static GArray *
order_blocks_by_fixed_cost (const MpPlanner *p)
{
  GArray *order = g_array_new (FALSE, FALSE, sizeof (MpBlockRef));
  double all_h, all_L;

  measure_totals (p, &all_h, &all_L);
  for (guint b = 0; b < p->blocks->len; b++)
    {
      const MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      MpBlockRef ref = { b, 0.0 };
      double h, L;

      if (bw->started)
        continue;
      block_fixed_cost (bw, &h, &L);
      ref.demand = (all_h > 0.0 ? h / all_h : 0.0) + (all_L > 0.0 ? L / all_L : 0.0);
      g_array_append_val (order, ref);
    }
  g_array_sort (order, compare_block_refs);
  return order;
}

/* The drop search without re-walking the plan: the pending steps in time
 * order as a doubly linked list, with each block's time kept up to date as
 * steps are removed (a removal changes the range switches of its
 * neighbours only). */
typedef struct
{
  const MpPlanner *p;
  guint n;
  MpWork **step;            /* pending steps in time order */
  guint *block;             /* their block */
  double *step_s;           /* their retune + dwell */
  int *range;               /* their tuning range */
  double *switch_into_s;    /* per tuning range */
  int *order_pos;           /* timeline position of each step in drop order */
  int *prev, *next;
  double *block_s;          /* per block: settle + retunes + dwells + switches */
  int *block_count;         /* pending steps left per block */
  double total_h, total_L;
} MpDropState;

/* Switch time from timeline position a to b (-1: none). */
static double
switch_between (const MpDropState *st, int a, int b)
{
  if (a < 0 || b < 0 || st->range[a] == st->range[b])
    return 0.0;
  return st->switch_into_s[st->range[b]];
}

static void
drop_state_init (MpDropState *st, const MpPlanner *p)
{
  guint n = 0;

  memset (st, 0, sizeof *st);
  st->p = p;
  for (guint b = 0; b < p->blocks->len; b++)
    {
      const MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      for (guint i = 0; i < bw->work->len; i++)
        n += is_pending (bw, &g_array_index (bw->work, MpWork, i));
    }
  st->step = g_new (MpWork *, MAX (n, 1));
  st->block = g_new (guint, MAX (n, 1));
  st->step_s = g_new (double, MAX (n, 1));
  st->range = g_new (int, MAX (n, 1));
  st->switch_into_s = g_new (double, MAX (p->plan->laser.ranges->len, 1));
  for (guint r = 0; r < p->plan->laser.ranges->len; r++)
    st->switch_into_s[r] = switch_s (p->plan, (int) r);
  st->prev = g_new (int, MAX (n, 1));
  st->next = g_new (int, MAX (n, 1));
  st->block_s = g_new0 (double, MAX (p->blocks->len, 1));
  st->block_count = g_new0 (int, MAX (p->blocks->len, 1));
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      for (guint i = 0; i < bw->work->len; i++)
        {
          MpWork *w = &g_array_index (bw->work, MpWork, i);

          if (!is_pending (bw, w))
            continue;
          w->timeline_pos = (int) st->n;
          st->step[st->n] = w;
          st->block[st->n] = b;
          st->step_s[st->n] = p->plan->laser.retune_s + w->s.dwell_s;
          st->range[st->n] = w->s.range_index;
          st->n++;
        }
    }
}

static void
drop_state_clear (MpDropState *st)
{
  g_free (st->step);
  g_free (st->block);
  g_free (st->step_s);
  g_free (st->range);
  g_free (st->switch_into_s);
  g_free (st->order_pos);
  g_free (st->prev);
  g_free (st->next);
  g_free (st->block_s);
  g_free (st->block_count);
}

static void
drop_state_account (MpDropState *st, guint b, double delta_s)
{
  const MpBlockWork *bw = g_ptr_array_index (st->p->blocks, b);

  st->block_s[b] += delta_s;
  st->total_h += delta_s / 3600.0;
  st->total_L += bw->tb->hold_L_per_h * delta_s / 3600.0;
}

/* Everything pending kept except the steps of excluded blocks. */
static void
drop_state_reset (MpDropState *st, const gboolean *excluded)
{
  int last = -1;

  st->total_h = st->total_L = 0.0;
  for (guint b = 0; b < st->p->blocks->len; b++)
    {
      st->block_s[b] = 0.0;
      st->block_count[b] = 0;
    }
  for (guint t = 0; t < st->n; t++)
    {
      guint b = st->block[t];

      st->prev[t] = st->next[t] = -1;
      if (excluded[b])
        continue;
      if (st->block_count[b] == 0)
        {
          const MpBlockWork *bw = g_ptr_array_index (st->p->blocks, b);
          double h, L;

          block_fixed_cost (bw, &h, &L);
          st->block_s[b] = h * 3600.0;
          st->total_h += h;
          st->total_L += L;
        }
      st->block_count[b]++;
      st->prev[t] = last;
      if (last >= 0)
        st->next[last] = (int) t;
      drop_state_account (st, b, st->step_s[t] + switch_between (st, last, (int) t));
      last = (int) t;
    }
}

static void
drop_state_remove (MpDropState *st, int t)
{
  int pv = st->prev[t], nx = st->next[t];
  guint b = st->block[t];

  drop_state_account (st, b, -(st->step_s[t] + switch_between (st, pv, t)));
  if (nx >= 0)
    {
      double delta = switch_between (st, pv, nx) - switch_between (st, t, nx);

      if (delta != 0.0)
        drop_state_account (st, st->block[nx], delta);
    }
  if (pv >= 0)
    st->next[pv] = nx;
  if (nx >= 0)
    st->prev[nx] = pv;
  if (--st->block_count[b] == 0)
    {
      const MpBlockWork *bw = g_ptr_array_index (st->p->blocks, b);

      /* What is left is the settle time (and cool-down) of the block. */
      st->total_h -= st->block_s[b] / 3600.0;
      st->total_L -= bw->tb->hold_L_per_h * st->block_s[b] / 3600.0;
      if (!bw->started)
        st->total_L -= block_cooldown_L (bw);
      st->block_s[b] = 0.0;
    }
}

static gboolean
drop_state_fits (const MpDropState *st)
{
  /* A hair of slack for the running sums; the result is checked exactly. */
  return st->total_h <= st->p->avail_h + 1e-9 && st->total_L <= st->p->avail_L + 1e-9;
}

/* Shortest prefix of order (skipping excluded blocks) whose removal fits,
 * by one pass; -1 when even removing all does not fit. */
static int
drop_state_search (MpDropState *st, const GArray *order, const gboolean *excluded)
{
  int k = 0;

  if (st->order_pos == NULL)
    {
      st->order_pos = g_new (int, MAX (order->len, 1));
      for (guint i = 0; i < order->len; i++)
        st->order_pos[i] = g_array_index (order, MpWorkRef, i).w->timeline_pos;
    }
  drop_state_reset (st, excluded);
  if (drop_state_fits (st))
    return 0;
  for (guint i = 0; i < order->len; i++)
    {
      int t = st->order_pos[i];

      if (excluded[st->block[t]])
        continue;
      drop_state_remove (st, t);
      k++;
      if (drop_state_fits (st))
        return k;
    }
  return -1;
}

/* Marks the plan: excluded blocks whole, then the first k steps of order
 * among the others. */
static void
mark_drop (MpPlanner *p, const GArray *order, const gboolean *excluded, int k)
{
  int taken = 0;

  for (guint b = 0; b < p->blocks->len; b++)
    ((MpBlockWork *) g_ptr_array_index (p->blocks, b))->dropped = excluded[b];
  for (guint i = 0; i < order->len; i++)
    {
      const MpWorkRef *ref = &g_array_index (order, MpWorkRef, i);

      ref->w->dropped = FALSE;
      if (!excluded[ref->block] && taken < k)
        {
          ref->w->dropped = TRUE;
          taken++;
        }
    }
}

/* The number of steps left out when the first n_blocks of block_order go
 * whole, then the shortest fitting prefix of order; -1 if nothing fits.
 * With mark, leaves the plan marked, checked exactly against
 * measure_totals. */
static int
try_drop (MpPlanner *p, MpDropState *st, const GArray *order, const GArray *block_order,
          guint n_blocks, gboolean *excluded, int give_up_at, gboolean mark)
{
  int n_left = 0, k;
  int n_rest = 0;

  memset (excluded, 0, sizeof (gboolean) * MAX (p->blocks->len, 1));
  for (guint j = 0; j < n_blocks; j++)
    excluded[g_array_index (block_order, MpBlockRef, j).block] = TRUE;
  for (guint t = 0; t < st->n; t++)
    {
      if (excluded[st->block[t]])
        n_left++;
      else
        n_rest++;
    }
  if (give_up_at >= 0 && n_left >= give_up_at)
    return -1;
  k = drop_state_search (st, order, excluded);
  if (!mark)
    return k < 0 ? -1 : n_left + k;
  if (k < 0)
    k = n_rest;
  /* Exact check around the running-sum answer. */
  mark_drop (p, order, excluded, k);
  while (k < n_rest && !fits (p))
    mark_drop (p, order, excluded, ++k);
  if (!fits (p))
    return -1;
  while (k > 0)
    {
      mark_drop (p, order, excluded, k - 1);
      if (!fits (p))
        {
          mark_drop (p, order, excluded, k);
          break;
        }
      k--;
    }
  return n_left + k;
}

/* Drop: among "leave out the j most demanding blocks whole, then the
 * least valuable steps" for j = 0, 1, ..., the candidate leaving out the
 * fewest steps wins (ties: the smaller j). Each candidate leaves out fewer
 * steps as a budget grows, so their minimum does too. A block whose settle
 * time or cool-down alone exceeds a budget can never fit and always goes. */
static void
apply_drop (MpPlanner *p)
{
  g_autoptr (GArray) order = g_array_new (FALSE, FALSE, sizeof (MpWorkRef));
  g_autoptr (GArray) block_order = NULL;
  g_autofree gboolean *excluded = g_new0 (gboolean, MAX (p->blocks->len, 1));
  MpDropState st;
  int best = -1;
  guint best_j = 0, n_pending = 0;

  rank_steps (p);
  block_order = order_blocks_by_fixed_cost (p);
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);

      for (guint i = 0; i < bw->work->len; i++)
        {
          MpWork *w = &g_array_index (bw->work, MpWork, i);
          MpWorkRef ref = { w, w->rank, b, i };

          if (is_pending (bw, w))
            g_array_append_val (order, ref);
        }
    }
  n_pending = order->len;
  g_array_sort (order, compare_refs_by_rank);
  drop_state_init (&st, p);
  for (guint j = 0; j <= block_order->len; j++)
    {
      /* Candidates only leave out more whole blocks as j grows: once those
       * alone leave out as many steps as the best, stop. */
      int n = try_drop (p, &st, order, block_order, j, excluded, best, FALSE);

      if (n >= 0 && (best < 0 || n < best))
        {
          best = n;
          best_j = j;
        }
    }
  if (best >= 0)
    best = try_drop (p, &st, order, block_order, best_j, excluded, -1, TRUE);
  drop_state_clear (&st);
  if (best < 0 || (n_pending > 0 && best == (int) n_pending))
    p->feasible = FALSE;
  if (best < 0)
    {
      memset (excluded, 0, sizeof (gboolean) * MAX (p->blocks->len, 1));
      mark_drop (p, order, excluded, 0);
      add_warning (p, N_("Even leaving out every remaining step, the plan does not fit: "
                        "%.3g h of beam time and %.3g L of cryogen are available"),
                   p->avail_h, p->avail_L);
      return;
    }
  if (best == (int) n_pending && n_pending > 0)
    add_warning (p, N_("No step fits: %.3g h of beam time and %.3g L of cryogen are available"),
                 p->avail_h, p->avail_L);
  else if (best > 0)
    add_warning_n (p, best, "Over budget: %d step left out to fit %.3g h and %.3g L",
                   "Over budget: %d steps left out to fit %.3g h and %.3g L",
                   best, p->avail_h, p->avail_L);
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      gboolean kept_any = FALSE, alone_too_big;
      double h, L;

      block_fixed_cost (bw, &h, &L);
      alone_too_big = h > p->avail_h || L > p->avail_L;
      for (guint i = 0; i < bw->work->len; i++)
        kept_any |= is_pending (bw, &g_array_index (bw->work, MpWork, i));
      if (!kept_any && alone_too_big && !bw->started)
        add_warning (p, N_("The %g K block is left out: its settle time and cool-down alone "
                          "do not fit"), bw->tb->temperature_K);
      else if (bw->dropped)
        add_warning (p, N_("The %g K block is left out whole: that leaves out fewer steps "
                          "than thinning the blocks"), bw->tb->temperature_K);
      for (guint i = 0; i < bw->work->len; i++)
        {
          MpWork *w = &g_array_index (bw->work, MpWork, i);

          if (w->s.done || is_pending (bw, w))
            continue;
          w->drop_reason = !kept_any && alone_too_big ? N_("block cool-down does not fit")
                                                      : N_("over budget");
        }
    }
}

static void
apply_stretch (MpPlanner *p)
{
  double lo = 1.0, hi = 2.0;

  set_all_dwells (p, MP_STRETCH_MAX);
  if (!fits (p))
    {
      double h, L;

      measure_totals (p, &h, &L);
      p->feasible = FALSE;
      set_all_dwells (p, 1.0);
      add_warning (p, N_("Even with every target loosened without limit, settle times, "
                        "cool-downs, retunes and minimum dwells need %.3g h and %.3g L, "
                        "but %.3g h and %.3g L are available"),
                   h, L, p->avail_h, p->avail_L);
      return;
    }
  set_all_dwells (p, hi);
  while (!fits (p) && hi < MP_STRETCH_MAX)
    {
      lo = hi;
      hi = MIN (hi * 2.0, MP_STRETCH_MAX);
      set_all_dwells (p, hi);
    }
  /* Bisect to 1e-9 relative; hi always fits. */
  for (int it = 0; it < 200 && hi - lo > 1e-9 * hi; it++)
    {
      double mid = 0.5 * (lo + hi);

      set_all_dwells (p, mid);
      if (fits (p))
        hi = mid;
      else
        lo = mid;
    }
  p->stretch = hi;
  set_all_dwells (p, hi);
  add_warning (p, N_("Over budget: every target loosened by a factor %.3f to fit %.3g h and %.3g L"),
               hi, p->avail_h, p->avail_L);
}

static void
apply_policy (MpPlanner *p)
{
  set_all_dwells (p, 1.0);
  if (!fits (p))
    {
      if (p->plan->over_budget == MP_OVER_BUDGET_STRETCH)
        apply_stretch (p);
      else
        apply_drop (p);
    }
  /* Value per cost of the kept steps, for priorities and cut lists. */
  rank_steps (p);
}

/* ---- the planner as a whole ------------------------------------------- */

static gboolean
run_planner (MpPlanner *p, const MpPlan *plan, const MpScheduleOptions *opts,
             GPtrArray *tables, const MpSchedule *planned, double work_function_eV,
             GError **error)
{
  double ref_excess;

  memset (p, 0, sizeof *p);
  p->plan = plan;
  p->opts = opts;
  p->tables = tables;
  p->nominal = planned == NULL;
  p->planned = planned;
  p->phi_eV = work_function_eV;
  p->phi_eff_eV = mp_effective_work_function_eV (work_function_eV, plan->cathode.field_MV_per_m);
  p->f_rep_Hz = plan->laser.repetition_rate_kHz * 1e3;
  p->bandwidth_eV = plan->laser.bandwidth_meV * 1e-3;
  p->systematic_eV = plan->detector.systematic_meV * 1e-3;
  p->resolution_eV = plan->detector.resolution_meV * 1e-3;
  p->acceptance_eV = plan->detector.acceptance_meV * 1e-3;
  p->level0_L = isnan (opts->cryogen_left_L) ? plan->cryostat.budget_L : opts->cryogen_left_L;
  p->avail_h = plan->beam_time_h - opts->elapsed_h;
  p->avail_L = p->level0_L - plan->cryostat.reserve_L;
  p->stretch = 1.0;
  p->feasible = TRUE;
  p->blocks = g_ptr_array_new_with_free_func (block_work_free);
  p->left_out = g_array_new (FALSE, FALSE, sizeof (MpLeftOut));
  g_array_set_clear_func (p->left_out, left_out_clear);
  p->warnings = g_ptr_array_new_with_free_func (g_free);
  p->warnings_c = g_ptr_array_new_with_free_func (g_free);

  /* The reference point, with the same field and laser line. */
  ref_excess = plan->cathode.qe_ref_photon_energy_eV - p->phi_eff_eV;
  mp_emission_averaged (ref_excess, plan->cathode.qe_ref_temperature_K, p->bandwidth_eV, &p->ref);

  /* Below threshold the reference QE measures the thermal tail, which the
   * field, the surface and the temperature scale move most: every QE of
   * the plan then rests on it (common practice, no source). */
  if (ref_excess < -3.0 * mp_thermal_energy_eV (plan->cathode.qe_ref_temperature_K))
    add_warning (p, N_("The QE reference point lies %.0f meV below threshold: every predicted "
                       "QE and dwell rests on the thermal tail there"),
                 -ref_excess * 1e3);
  if (p->avail_h < 0.0)
    add_warning (p, N_("The elapsed time %.3g h is more than the beam time %.3g h"),
                 opts->elapsed_h, plan->beam_time_h);
  if (p->avail_L < 0.0)
    add_warning (p, N_("The cryogen left, %.3g L, is below the reserve of %.3g L"),
                 p->level0_L, plan->cryostat.reserve_L);
  if (!generate_steps (p, error))
    return FALSE;
  apply_policy (p);
  return TRUE;
}

/* ---- building the schedule -------------------------------------------- */

static void
mp_block_free (gpointer data)
{
  MpBlock *block = data;

  g_clear_pointer (&block->steps, g_array_unref);
  g_clear_pointer (&block->cut_list, g_array_unref);
  g_free (block);
}

void
mp_schedule_free (MpSchedule *schedule)
{
  if (schedule == NULL)
    return;
  g_free (schedule->plan_title);
  g_clear_pointer (&schedule->blocks, g_ptr_array_unref);
  g_clear_pointer (&schedule->left_out, g_array_unref);
  g_clear_pointer (&schedule->warnings, g_ptr_array_unref);
  g_clear_pointer (&schedule->warnings_c, g_ptr_array_unref);
  g_free (schedule);
}

typedef struct
{
  guint pos;
  int priority;
  double rank;
} MpCutRef;

static int
compare_cut_refs (gconstpointer a, gconstpointer b)
{
  const MpCutRef *ca = a, *cb = b;

  if (ca->priority != cb->priority)
    return ca->priority > cb->priority ? -1 : 1;
  if (ca->rank != cb->rank)
    return ca->rank < cb->rank ? -1 : 1;
  return ca->pos > cb->pos ? -1 : (ca->pos < cb->pos ? 1 : 0);
}

/* An MTE step that reaches less than a hundredth of the information its
 * target asks for (sigma more than 10 times the target): deep below
 * threshold, swamped by dark counts. */
static gboolean
is_hopeless (const MpStep *s)
{
  double r;

  if (s->kind != MP_STEP_KIND_MTE)
    return FALSE;
  if (!(s->signal_rate_per_s > 0.0) || !isfinite (s->reached_sigma_meV))
    return TRUE;
  r = s->target_sigma_meV / s->reached_sigma_meV;
  return r * r < 0.01;
}

/* Priority 1: QE sweep steps, the steps within the near-threshold band
 * (2 sigma_phi + 2 kT, at least half a coarse step, so that the steps on
 * either side of threshold are in it), the step nearest threshold and the
 * two end anchors (highest and lowest excess), among the steps that are
 * not hopeless. The others: the better half by value per cost 2, the rest
 * 3; hopeless steps are always 3 and come first in the cut list (they have
 * the least value). */
static void
set_priorities (const MpPlanner *p, const MpBlockWork *bw, MpBlock *block, GArray *ranks)
{
  guint n = block->steps->len;
  int lo_i = -1, hi_i = -1, near_i = -1;
  g_autoptr (GArray) rest = g_array_new (FALSE, FALSE, sizeof (MpCutRef));
  double inner = MAX (2.0 * p->plan->cathode.work_function_sigma_eV
                      + 2.0 * mp_thermal_energy_eV (bw->tb->temperature_K),
                      0.5 * p->plan->scan.step_eV * (1.0 + 1e-9));

  for (guint i = 0; i < n; i++)
    {
      MpStep *s = &g_array_index (block->steps, MpStep, i);

      if (s->kind != MP_STEP_KIND_MTE || is_hopeless (s))
        continue;
      if (lo_i < 0 || s->excess_energy_eV < g_array_index (block->steps, MpStep, lo_i).excess_energy_eV)
        lo_i = i;
      if (hi_i < 0 || s->excess_energy_eV > g_array_index (block->steps, MpStep, hi_i).excess_energy_eV)
        hi_i = i;
      if (near_i < 0 || fabs (s->excess_energy_eV)
                        < fabs (g_array_index (block->steps, MpStep, near_i).excess_energy_eV))
        near_i = i;
    }
  for (guint i = 0; i < n; i++)
    {
      MpStep *s = &g_array_index (block->steps, MpStep, i);

      if (!is_hopeless (s)
          && (s->kind == MP_STEP_KIND_QE_SWEEP || (int) i == lo_i || (int) i == hi_i
              || (int) i == near_i || fabs (s->excess_energy_eV) <= inner))
        s->priority = 1;
      else
        {
          MpCutRef c = { i, 3, g_array_index (ranks, double, i) };

          g_array_append_val (rest, c);
        }
    }
  /* Best value per cost first, to hand out priority 2 to the better half. */
  g_array_sort (rest, compare_cut_refs);
  for (guint j = 0; j < rest->len; j++)
    {
      MpCutRef *c = &g_array_index (rest, MpCutRef, j);
      MpStep *s = &g_array_index (block->steps, MpStep, c->pos);

      /* rest is sorted worst first: the last half is the better half. */
      c->priority = s->priority = j < (rest->len + 1) / 2 || is_hopeless (s) ? 3 : 2;
    }
  g_array_sort (rest, compare_cut_refs);
  for (guint j = 0; j < rest->len; j++)
    {
      const MpCutRef *c = &g_array_index (rest, MpCutRef, j);
      MpStep *s = &g_array_index (block->steps, MpStep, c->pos);
      int pos = (int) c->pos;

      if (!s->done)
        g_array_append_val (block->cut_list, pos);
    }
}

/* Lays out the kept steps in time and cryogen; the same walk as
 * measure_totals. */
static void
lay_out_timeline (const MpPlanner *p, MpSchedule *schedule)
{
  const MpPlan *plan = p->plan;
  double clock_h = p->opts->elapsed_h;
  double level_L = p->level0_L;
  int prev_range = -1, index = 1;
  static const char *over_budget = N_("over budget");

  for (guint b = 0; b < p->blocks->len; b++)
    {
      const MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      MpBlock *block;
      g_autoptr (GArray) ranks = NULL;
      gboolean any_pending = FALSE, any_kept = FALSE;
      double hold = bw->tb->hold_L_per_h;

      for (guint i = 0; i < bw->work->len; i++)
        {
          const MpWork *w = &g_array_index (bw->work, MpWork, i);

          any_kept |= is_kept (bw, w);
          any_pending |= is_pending (bw, w);
        }
      for (guint i = 0; i < bw->work->len; i++)
        {
          const MpWork *w = &g_array_index (bw->work, MpWork, i);

          if (!is_kept (bw, w))
            add_left_out ((MpPlanner *) p, w->s.temperature_K, w->s.photon_energy_eV,
                          w->s.wavelength_nm,
                          w->drop_reason != NULL ? w->drop_reason : over_budget, NULL);
        }
      if (!any_kept)
        continue;
      block = g_new0 (MpBlock, 1);
      block->temperature_K = bw->tb->temperature_K;
      block->plan_block_index = (int) bw->index;
      block->steps = g_array_new (FALSE, FALSE, sizeof (MpStep));
      block->cut_list = g_array_new (FALSE, FALSE, sizeof (int));
      ranks = g_array_new (FALSE, FALSE, sizeof (double));
      block->start_h = clock_h;
      block->cryogen_start_L = level_L;
      if (any_pending && !bw->started)
        {
          block->settle_h = bw->tb->settle_min / 60.0;
          level_L -= block_cooldown_L (bw) + hold * block->settle_h;
          clock_h += block->settle_h;
        }
      for (guint i = 0; i < bw->work->len; i++)
        {
          const MpWork *w = &g_array_index (bw->work, MpWork, i);
          MpStep s;

          if (!is_kept (bw, w))
            continue;
          s = w->s;
          s.index = index++;
          s.start_h = clock_h;
          if (!s.done)
            {
              double t_s = plan->laser.retune_s + s.dwell_s;

              if (prev_range >= 0 && s.range_index != prev_range)
                t_s += switch_s (plan, s.range_index);
              prev_range = s.range_index;
              clock_h += t_s / 3600.0;
              level_L -= hold * t_s / 3600.0;
            }
          s.end_h = clock_h;
          s.cryogen_left_L = level_L;
          g_array_append_val (block->steps, s);
          g_array_append_val (ranks, w->rank);
        }
      block->end_h = clock_h;
      block->cryogen_end_L = level_L;
      block->cryogen_L = block->cryogen_start_L - block->cryogen_end_L;
      set_priorities (p, bw, block, ranks);
      g_ptr_array_add (schedule->blocks, block);
    }
  schedule->beam_time_h = clock_h - p->opts->elapsed_h;
  schedule->cryogen_L = p->level0_L - level_L;
}

static void
warn_about_steps (MpPlanner *p)
{
  const MpPlan *plan = p->plan;

  if (p->n_out_of_range > 0)
    add_warning_n (p, p->n_out_of_range,
                   "%u step is outside the laser's tuning range and left out",
                   "%u steps are outside the laser's tuning range and left out",
                   p->n_out_of_range);
  for (guint b = 0; b < p->blocks->len; b++)
    {
      MpBlockWork *bw = g_ptr_array_index (p->blocks, b);
      int n_short = 0, n_floor = 0, n_dark = 0, n_hopeless = 0;

      for (guint i = 0; i < bw->work->len; i++)
        {
          const MpWork *w = &g_array_index (bw->work, MpWork, i);

          if (!is_pending (bw, w) || w->s.kind != MP_STEP_KIND_MTE)
            continue;
          n_hopeless += w->s.status == MP_STEP_SHORT && is_hopeless (&w->s);
          if (w->s.status == MP_STEP_SHORT)
            n_short++;
          else if (w->s.status == MP_STEP_UNREACHABLE && w->s.signal_rate_per_s > 0.0)
            n_floor++;
          else if (w->s.status == MP_STEP_UNREACHABLE)
            n_dark++;
        }
      if (n_short > 0)
        add_warning_n (p, n_short,
                       "%g K: %d step needs more than the longest dwell (%g s) and falls "
                          "short of its target",
                       "%g K: %d steps need more than the longest dwell (%g s) and fall "
                          "short of their target",
                       bw->tb->temperature_K, n_short, plan->scan.max_dwell_s);
      if (n_hopeless > 0)
        add_warning (p, N_("%g K: %d of them reach less than a tenth of the target precision "
                           "(too little signal); they head the cut list"),
                     bw->tb->temperature_K, n_hopeless);
      if (n_floor > 0)
        add_warning_n (p, n_floor,
                       "%g K: %d step cannot reach its target at any dwell: the "
                          "systematic floor of %g meV is above it",
                       "%g K: %d steps cannot reach their target at any dwell: the "
                          "systematic floor of %g meV is above it",
                       bw->tb->temperature_K, n_floor, plan->detector.systematic_meV);
      if (n_dark > 0)
        add_warning_n (p, n_dark, "%g K: %d step has no predicted signal",
                       "%g K: %d steps have no predicted signal",
                       bw->tb->temperature_K, n_dark);
    }
}

static MpSchedule *
schedule_from_planner (MpPlanner *p)
{
  MpSchedule *schedule = g_new0 (MpSchedule, 1);

  schedule->plan_title = g_strdup (p->plan->title != NULL ? p->plan->title : "");
  schedule->policy = p->plan->over_budget;
  schedule->stretch_factor = p->stretch;
  schedule->work_function_eV = p->phi_eV;
  schedule->effective_work_function_eV = p->phi_eff_eV;
  schedule->beam_time_available_h = p->avail_h;
  schedule->cryogen_available_L = p->avail_L;
  schedule->cryogen_reserve_L = p->plan->cryostat.reserve_L;
  schedule->blocks = g_ptr_array_new_with_free_func (mp_block_free);
  warn_about_steps (p);
  lay_out_timeline (p, schedule);
  schedule->feasible = p->feasible
                       && schedule->beam_time_h <= p->avail_h
                       && schedule->cryogen_L <= p->avail_L;
  schedule->left_out = g_steal_pointer (&p->left_out);
  schedule->warnings = g_steal_pointer (&p->warnings);
  schedule->warnings_c = g_steal_pointer (&p->warnings_c);
  return schedule;
}

static void
sensitivity_from_schedule (const MpSchedule *s, MpSensitivity *out)
{
  out->work_function_eV = s->work_function_eV;
  out->beam_time_h = s->beam_time_h;
  out->cryogen_L = s->cryogen_L;
  out->n_short = mp_schedule_count_status (s, MP_STEP_SHORT);
  out->n_unreachable = mp_schedule_count_status (s, MP_STEP_UNREACHABLE);
  out->n_left_out = (int) s->left_out->len;
  out->feasible = s->feasible;
}

static MpSchedule *
compute_at (const MpPlan *plan, const MpScheduleOptions *opts, GPtrArray *tables,
            const MpSchedule *planned, double work_function_eV, GError **error)
{
  MpPlanner p;
  MpSchedule *schedule;

  if (!run_planner (&p, plan, opts, tables, planned, work_function_eV, error))
    {
      planner_clear (&p);
      return NULL;
    }
  schedule = schedule_from_planner (&p);
  planner_clear (&p);
  return schedule;
}

MpSchedule *
mp_schedule_compute (const MpPlan *plan, const MpScheduleOptions *opts, GError **error)
{
  MpScheduleOptions defaults;
  MpSchedule *schedule;
  g_autoptr (GPtrArray) tables = NULL;

  g_return_val_if_fail (plan != NULL, NULL);
  g_return_val_if_fail (error == NULL || *error == NULL, NULL);

  mp_core_init ();
  if (opts == NULL)
    {
      mp_schedule_options_init (&defaults);
      opts = &defaults;
    }
  if (!mp_plan_validate (plan, error))
    return NULL;
  if (plan->temperatures == NULL || plan->laser.ranges == NULL
      || plan->laser.ranges->len == 0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("laser: expected at least one tuning range, found none"));
      return NULL;
    }
  if (!isfinite (opts->elapsed_h) || opts->elapsed_h < 0.0)
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("elapsed time: expected a number >= 0 h, found %g"), opts->elapsed_h);
      return NULL;
    }
  if (!isnan (opts->cryogen_left_L) && !(isfinite (opts->cryogen_left_L) && opts->cryogen_left_L >= 0.0))
    {
      g_set_error (error, MP_ERROR, MP_ERROR_INVALID,
                   _("cryogen left: expected a number >= 0 L, found %g"), opts->cryogen_left_L);
      return NULL;
    }

  tables = build_emission_tables (plan, opts);
  schedule = compute_at (plan, opts, tables, NULL, plan->cathode.work_function_eV, error);
  if (schedule == NULL || opts->no_sensitivity)
    return schedule;

  {
    MpScheduleOptions sub = *opts;
    double phi = plan->cathode.work_function_eV;
    double sigma = plan->cathode.work_function_sigma_eV;
    g_autoptr (MpSchedule) low = NULL;
    g_autoptr (MpSchedule) high = NULL;

    sub.no_sensitivity = TRUE;
    low = compute_at (plan, &sub, tables, schedule, phi - sigma, NULL);
    high = compute_at (plan, &sub, tables, schedule, phi + sigma, NULL);
    if (low != NULL && high != NULL)
      {
        sensitivity_from_schedule (low, &schedule->sensitivity_low);
        sensitivity_from_schedule (high, &schedule->sensitivity_high);
        schedule->has_sensitivity = TRUE;
      }
  }
  return schedule;
}

int
mp_schedule_count_steps (const MpSchedule *schedule)
{
  int n = 0;

  g_return_val_if_fail (schedule != NULL, 0);

  for (guint b = 0; b < schedule->blocks->len; b++)
    n += ((MpBlock *) g_ptr_array_index (schedule->blocks, b))->steps->len;
  return n;
}

/* Counts MTE steps still to measure with the given status. */
int
mp_schedule_count_status (const MpSchedule *schedule, MpStepStatus status)
{
  int n = 0;

  g_return_val_if_fail (schedule != NULL, 0);

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      MpBlock *block = g_ptr_array_index (schedule->blocks, b);

      for (guint i = 0; i < block->steps->len; i++)
        {
          const MpStep *s = &g_array_index (block->steps, MpStep, i);

          n += s->kind == MP_STEP_KIND_MTE && !s->done && s->status == status;
        }
    }
  return n;
}
