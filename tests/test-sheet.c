/* SPDX-License-Identifier: GPL-3.0-or-later */
/* The run sheet: page sizes, pagination, the text an operator relies on
 * (checked with pdftotext), clock times, re-plans. Also
 * renders every page of the demo sheets to PNG in the build directory
 * (sheet-png/) for people to look at; those are not compared. */
#include "config.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <cairo.h>
#include <glib/gstdio.h>

#include "mp-physics.h"
#include "mp-plan.h"
#include "mp-schedule.h"
#include "mp-sheet.h"

static char *out_dir;

static gboolean
have_poppler (void)
{
  g_autofree char *a = g_find_program_in_path ("pdfinfo");
  g_autofree char *b = g_find_program_in_path ("pdftotext");
  g_autofree char *c = g_find_program_in_path ("pdftoppm");

  return a && b && c;
}

static char *
run (const char *const *argv)
{
  g_autoptr (GError) error = NULL;
  char *out = NULL;
  int status = 0;

  g_spawn_sync (NULL, (char **) argv, NULL, G_SPAWN_SEARCH_PATH, NULL, NULL,
                &out, NULL, &status, &error);
  g_assert_no_error (error);
  g_assert_true (g_spawn_check_wait_status (status, NULL));
  return out;
}

static MpPlan *
load_example (const char *name)
{
  g_autofree char *path = g_test_build_filename (G_TEST_DIST, "..", "data", "examples",
                                                 name, NULL);
  g_autoptr (GError) error = NULL;
  MpPlan *plan;

  if (!g_file_test (path, G_FILE_TEST_EXISTS))
    return NULL;
  plan = mp_plan_load_from_file (path, &error);
  g_assert_no_error (error);
  return plan;
}

/* The demo plan, or the built-in default while the demo is missing. */
static MpPlan *
load_demo (void)
{
  MpPlan *plan = load_example ("cold-copper-shift.mteplan");

  if (plan == NULL)
    {
      g_test_message ("demo plan missing; using the default plan");
      plan = mp_plan_new_default ();
    }
  return plan;
}

static MpSchedule *
schedule_for (const MpPlan *plan)
{
  g_autoptr (GError) error = NULL;
  MpScheduleOptions opts;
  MpSchedule *schedule;

  mp_schedule_options_init (&opts);
  schedule = mp_schedule_compute (plan, &opts, &error);
  g_assert_no_error (error);
  g_assert_nonnull (schedule);
  return schedule;
}

static char *
write_pdf (const MpPlan *plan, const MpSchedule *schedule, MpPaper paper,
           const char *name)
{
  g_autoptr (GError) error = NULL;
  char *path = g_build_filename (out_dir, name, NULL);

  g_assert_true (mp_sheet_write_pdf (plan, schedule, paper, path, &error));
  g_assert_no_error (error);
  return path;
}

static int
pdf_pages (const char *path)
{
  const char *argv[] = { "pdfinfo", path, NULL };
  g_autofree char *info = run (argv);
  const char *p = strstr (info, "Pages:");

  g_assert_nonnull (p);
  return atoi (p + strlen ("Pages:"));
}

static char *
pdf_text (const char *path)
{
  const char *argv[] = { "pdftotext", "-layout", "-enc", "UTF-8", path, "-", NULL };
  g_autofree char *text = run (argv);
  g_autoptr (GString) s = g_string_new (text);

  /* The sheet binds numbers to their units with no-break spaces. */
  g_string_replace (s, "\xc2\xa0", " ", 0);
  return g_string_free (g_steal_pointer (&s), FALSE);
}

static void
render_pngs (const char *pdf, const char *prefix)
{
  g_autofree char *dir = g_build_filename (out_dir, "sheet-png", NULL);
  g_autofree char *root = g_build_filename (dir, prefix, NULL);
  g_autofree char *first = g_strdup_printf ("%s-1.png", root);
  const char *argv[] = { "pdftoppm", "-png", "-r", "80", pdf, root, NULL };
  g_autofree char *out = NULL;

  g_mkdir_with_parents (dir, 0755);
  out = run (argv);
  g_assert_true (g_file_test (first, G_FILE_TEST_EXISTS));
  g_test_message ("pages of %s rendered to %s-N.png", pdf, root);
}

/* Paper sizes: ISO 216 A4 is 210 x 297 mm = 595.276 x 841.89 pt; US
 * Letter is 8.5 x 11 in = 612 x 792 pt (1 pt = 1/72 in). */
static void
test_paper_sizes (void)
{
  double w, h;
  MpPaper paper;
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autofree char *a4 = NULL, *letter = NULL, *info_a4 = NULL, *info_letter = NULL;

  mp_paper_size_pt (MP_PAPER_A4, &w, &h);
  g_assert_cmpfloat_with_epsilon (w, 595.276, 1e-3);
  g_assert_cmpfloat_with_epsilon (h, 841.890, 1e-3);
  mp_paper_size_pt (MP_PAPER_LETTER, &w, &h);
  g_assert_cmpfloat (w, ==, 612);
  g_assert_cmpfloat (h, ==, 792);
  g_assert_true (mp_paper_from_string ("A4", &paper) && paper == MP_PAPER_A4);
  g_assert_true (mp_paper_from_string ("letter", &paper) && paper == MP_PAPER_LETTER);
  g_assert_false (mp_paper_from_string ("a5", &paper));

  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  plan = load_demo ();
  schedule = schedule_for (plan);
  a4 = write_pdf (plan, schedule, MP_PAPER_A4, "sheet-demo-a4.pdf");
  letter = write_pdf (plan, schedule, MP_PAPER_LETTER, "sheet-demo-letter.pdf");
  {
    const char *argv_a4[] = { "pdfinfo", a4, NULL };
    const char *argv_letter[] = { "pdfinfo", letter, NULL };
    info_a4 = run (argv_a4);
    info_letter = run (argv_letter);
  }
  g_assert_nonnull (strstr (info_a4, "595.276 x 841.89 pts (A4)"));
  g_assert_nonnull (strstr (info_letter, "612 x 792 pts (letter)"));
  render_pngs (a4, "demo-a4");
  render_pngs (letter, "demo-letter");
}

/* More steps, more pages: the step table runs on over pages instead of
 * being cut or squeezed. */
static void
test_pages_grow (void)
{
  g_autoptr (MpPlan) small = NULL;
  g_autoptr (MpPlan) big = NULL;
  g_autoptr (MpSchedule) s_small = NULL;
  g_autoptr (MpSchedule) s_big = NULL;
  g_autofree char *p_small = NULL, *p_big = NULL;
  int n_small, n_big;

  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  small = load_demo ();
  big = mp_plan_copy (small);
  big->scan.step_eV /= 4;
  big->scan.fine_step_eV /= 2;
  big->beam_time_h *= 4;
  big->cryostat.budget_L *= 4;
  big->over_budget = MP_OVER_BUDGET_DROP;
  s_small = schedule_for (small);
  s_big = schedule_for (big);
  g_assert_cmpint (mp_schedule_count_steps (s_big), >, mp_schedule_count_steps (s_small) + 30);

  p_small = write_pdf (small, s_small, MP_PAPER_A4, "sheet-few-steps.pdf");
  p_big = write_pdf (big, s_big, MP_PAPER_A4, "sheet-many-steps.pdf");
  n_small = pdf_pages (p_small);
  n_big = pdf_pages (p_big);
  g_test_message ("%d steps: %d pages; %d steps: %d pages",
                  mp_schedule_count_steps (s_small), n_small,
                  mp_schedule_count_steps (s_big), n_big);
  g_assert_cmpint (n_big, >, n_small);

  /* The layout and the PDF agree on the page count. */
  {
    double w, h;
    g_autoptr (MpSheet) sheet = NULL;
    mp_paper_size_pt (MP_PAPER_A4, &w, &h);
    sheet = mp_sheet_new (big, s_big, w, h, NULL);
    g_assert_cmpint (mp_sheet_get_n_pages (sheet), ==, n_big);
  }
  render_pngs (p_big, "many-steps-a4");
}

/* Step index -> wavelength as mp_schedule_to_csv writes it. */
static GHashTable *
schedule_csv_wavelengths (const MpSchedule *schedule)
{
  g_autofree char *csv = mp_schedule_to_csv (schedule);
  g_auto (GStrv) lines = g_strsplit (csv, "\n", -1);
  g_auto (GStrv) head = NULL;
  GHashTable *map = g_hash_table_new_full (NULL, NULL, NULL, g_free);
  int col_index = -1, col_wl = -1;

  g_assert_nonnull (lines[0]);
  head = g_strsplit (lines[0], ",", -1);
  for (int c = 0; head[c]; c++)
    {
      if (g_str_equal (head[c], "index"))
        col_index = c;
      if (g_str_equal (head[c], "wavelength_nm"))
        col_wl = c;
    }
  g_assert_cmpint (col_index, >=, 0);
  g_assert_cmpint (col_wl, >=, 0);
  for (int i = 1; lines[i] && *lines[i]; i++)
    {
      g_auto (GStrv) f = g_strsplit (lines[i], ",", -1);
      if ((int) g_strv_length (f) <= MAX (col_index, col_wl))
        continue;
      g_hash_table_insert (map, GINT_TO_POINTER (atoi (f[col_index])), g_strdup (f[col_wl]));
    }
  return map;
}

static gboolean
contains (const char *text, const char *needle)
{
  if (strstr (text, needle) != NULL)
    return TRUE;
  g_test_message ("not found in the sheet: \"%s\"", needle);
  return FALSE;
}

/* What the operator reads: every step's wavelength as the schedule has it,
 * the totals, the cautions, the checksum, "page k of n" on every page. */
static void
test_text (void)
{
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autofree char *pdf = NULL, *text = NULL, *sum = NULL, *totals = NULL;
  g_autofree char *cryo = NULL;
  g_autoptr (GHashTable) csv_wavelengths = NULL;
  int n_pages;

  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  plan = load_demo ();
  schedule = schedule_for (plan);
  pdf = write_pdf (plan, schedule, MP_PAPER_A4, "sheet-text.pdf");
  text = pdf_text (pdf);
  csv_wavelengths = schedule_csv_wavelengths (schedule);

  for (guint b = 0; b < schedule->blocks->len; b++)
    {
      MpBlock *block = g_ptr_array_index (schedule->blocks, b);
      for (guint i = 0; i < block->steps->len; i++)
        {
          MpStep *s = &g_array_index (block->steps, MpStep, i);
          g_autofree char *wl = mp_sheet_format_wavelength_nm (plan, s->wavelength_nm);
          g_autofree char *row = NULL;

          const char *csv = g_hash_table_lookup (csv_wavelengths, GINT_TO_POINTER (s->index));

          /* The printed number is the schedule's wavelength itself (it is
           * a multiple of the laser's step), not a re-rounded value, and
           * it reads as the schedule's CSV writes it; a whole number gets
           * the step's decimals ("250" in the CSV is "250.0" here). */
          g_assert_cmpfloat_with_epsilon (g_ascii_strtod (wl, NULL), s->wavelength_nm, 1e-9);
          g_assert_nonnull (csv);
          if (strchr (csv, '.') != NULL)
            g_assert_cmpstr (wl, ==, csv);
          else
            g_assert_true (g_str_has_prefix (wl, csv) && wl[strlen (csv)] == '.');
          /* Step number and wavelength on one line of the table. */
          row = g_strdup_printf ("%d", s->index);
          g_assert_true (contains (text, wl));
          {
            g_autofree char *pattern = g_strdup_printf ("(?m)^\\s*%d\\b.*\\b%s\\b",
                                                        s->index, wl);
            g_autoptr (GRegex) re = g_regex_new (pattern, 0, 0, NULL);
            if (!g_regex_match (re, text, 0, NULL))
              g_test_message ("row %s: %s nm not on the step's line", row, wl);
            g_assert_true (g_regex_match (re, text, 0, NULL));
          }
        }
    }

  totals = g_strdup_printf ("beam time %.1f h planned of %.1f h", schedule->beam_time_h,
                            schedule->beam_time_available_h);
  cryo = g_strdup_printf ("%.1f L planned of %.1f L usable", schedule->cryogen_L,
                          schedule->cryogen_available_L);
  g_assert_true (contains (text, totals));
  g_assert_true (contains (text, cryo));

  /* Cautions (issue 4): UV class-4 laser, cryogens, high voltage, and the
   * facility's rules. */
  g_assert_true (contains (text, "Class 4 UV laser"));
  g_assert_true (contains (text, "Asphyxiation"));
  g_assert_true (contains (text, "Cold burns"));
  g_assert_true (contains (text, "relief valves"));
  g_assert_true (contains (text, "High voltage"));
  g_assert_true (contains (text, "Follow your facility's rules and safety officers"));

  sum = mp_plan_checksum (plan);
  g_assert_cmpuint (strlen (sum), ==, 8);
  g_assert_true (contains (text, sum));

  n_pages = pdf_pages (pdf);
  for (int k = 1; k <= n_pages; k++)
    {
      g_autofree char *pk = g_strdup_printf ("page %d of %d", k, n_pages);
      g_assert_true (contains (text, pk));
    }
  g_assert_true (contains (text, "Sign-off"));
  g_assert_true (contains (text, "Work-function sensitivity"));
}

/* With a shift start the times are wall-clock, and past midnight they say
 * so; without, they are elapsed h:mm. */
static void
test_clock (void)
{
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autofree char *pdf = NULL, *text = NULL;

  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  plan = load_demo ();
  g_free (plan->shift_start);
  plan->shift_start = g_strdup ("2026-12-02T22:30:00Z");
  schedule = schedule_for (plan);
  g_assert_cmpfloat (schedule->beam_time_h, >, 1.6);  /* so that it passes midnight */
  pdf = write_pdf (plan, schedule, MP_PAPER_LETTER, "sheet-clock.pdf");
  text = pdf_text (pdf);
  g_assert_true (contains (text, "HH:MM"));
  g_assert_true (contains (text, "+1d"));
  g_assert_false (strstr (text, "h:mm") != NULL);
}

/* Re-plan: steps already measured are struck and say so. */
static void
test_done_steps (void)
{
  g_autoptr (MpPlan) plan = NULL;
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (GError) error = NULL;
  g_autofree char *pdf = NULL, *text = NULL;
  MpScheduleOptions opts;
  MpSchedule *first;
  g_autoptr (GArray) done = g_array_new (FALSE, FALSE, sizeof (MpDonePoint));

  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  plan = load_demo ();
  first = schedule_for (plan);
  {
    MpBlock *block = g_ptr_array_index (first->blocks, 0);
    MpStep *s = &g_array_index (block->steps, MpStep, 0);
    MpDonePoint p = { s->temperature_K, s->photon_energy_eV };
    g_array_append_val (done, p);
  }
  mp_schedule_free (first);
  mp_schedule_options_init (&opts);
  opts.done = done;
  opts.elapsed_h = 0.5;
  schedule = mp_schedule_compute (plan, &opts, &error);
  g_assert_no_error (error);
  pdf = write_pdf (plan, schedule, MP_PAPER_A4, "sheet-replan.pdf");
  text = pdf_text (pdf);
  {
    gboolean any_done = FALSE;
    for (guint b = 0; b < schedule->blocks->len; b++)
      {
        MpBlock *block = g_ptr_array_index (schedule->blocks, b);
        for (guint i = 0; i < block->steps->len; i++)
          any_done |= g_array_index (block->steps, MpStep, i).done;
      }
    if (any_done)
      g_assert_true (contains (text, "already measured"));
    else
      g_test_message ("the scheduler keeps no done steps in the schedule");
  }
  render_pngs (pdf, "replan-a4");
}

/* The over-budget example: the verdict is on the sheet; pages to PNG. */
static void
test_over_budget (void)
{
  g_autoptr (MpPlan) plan = load_example ("tight-helium-budget.mteplan");
  g_autoptr (MpSchedule) schedule = NULL;
  g_autofree char *a4 = NULL, *letter = NULL, *text = NULL;

  if (plan == NULL)
    {
      g_test_skip ("data/examples/tight-helium-budget.mteplan not there yet");
      return;
    }
  if (!have_poppler ())
    {
      g_test_skip ("poppler-utils not installed");
      return;
    }
  schedule = schedule_for (plan);
  a4 = write_pdf (plan, schedule, MP_PAPER_A4, "sheet-tight-a4.pdf");
  letter = write_pdf (plan, schedule, MP_PAPER_LETTER, "sheet-tight-letter.pdf");
  text = pdf_text (a4);
  if (schedule->left_out && schedule->left_out->len > 0)
    {
      MpLeftOut *lo = &g_array_index (schedule->left_out, MpLeftOut, 0);
      g_autofree char *wl = mp_sheet_format_wavelength_nm (plan, lo->wavelength_nm);
      g_assert_true (contains (text, "Left out of this plan"));
      g_assert_true (contains (text, wl));
    }
  if (!schedule->feasible)
    g_assert_true (contains (text, "OVER BUDGET"));
  render_pngs (a4, "tight-a4");
  render_pngs (letter, "tight-letter");

  /* The same plan under the stretch policy says by how much the goals
   * were loosened. */
  plan->over_budget = MP_OVER_BUDGET_STRETCH;
  {
    g_autoptr (MpSchedule) stretched = schedule_for (plan);
    g_autofree char *pdf = write_pdf (plan, stretched, MP_PAPER_A4, "sheet-tight-stretch.pdf");
    g_autofree char *stext = pdf_text (pdf);
    if (stretched->stretch_factor > 1.0001)
      {
        g_autofree char *factor = g_strdup_printf ("loosened by a factor of %.2f",
                                                   stretched->stretch_factor);
        g_assert_true (contains (stext, factor));
      }
  }
}

/* Odd but valid input: a title with markup characters and no file, a
 * budget so small that little or nothing is left; the sheet still lays
 * out, every page draws without a cairo error, and the text is escaped. */
static void
test_edge_cases (void)
{
  g_autoptr (MpPlan) plan = load_demo ();
  g_autoptr (MpSchedule) schedule = NULL;
  g_autoptr (GError) error = NULL;
  g_autoptr (MpSheet) sheet = NULL;
  MpScheduleOptions opts;
  cairo_surface_t *surface;
  cairo_t *cr;
  double w, h;

  g_free (plan->title);
  plan->title = g_strdup ("Cu <100> & \"friends\": a very long title that has to wrap "
                          "over more than one line of the page, and then some more");
  g_clear_pointer (&plan->path, g_free);
  plan->beam_time_h = 0.2;
  mp_schedule_options_init (&opts);
  schedule = mp_schedule_compute (plan, &opts, &error);
  g_assert_no_error (error);

  mp_paper_size_pt (MP_PAPER_LETTER, &w, &h);
  sheet = mp_sheet_new (plan, schedule, w, h, NULL);
  g_assert_cmpint (mp_sheet_get_n_pages (sheet), >=, 1);
  surface = cairo_image_surface_create (CAIRO_FORMAT_RGB24, (int) w, (int) h);
  cr = cairo_create (surface);
  for (int i = 0; i < mp_sheet_get_n_pages (sheet); i++)
    mp_sheet_draw_page (sheet, cr, i);
  g_assert_cmpint (cairo_status (cr), ==, CAIRO_STATUS_SUCCESS);
  cairo_destroy (cr);
  cairo_surface_destroy (surface);

  if (have_poppler ())
    {
      g_autofree char *pdf = write_pdf (plan, schedule, MP_PAPER_A4, "sheet-edge.pdf");
      g_autofree char *text = pdf_text (pdf);
      g_assert_true (contains (text, "Cu <100> & \"friends\""));
      g_assert_true (contains (text, "(plan not saved)"));
      render_pngs (pdf, "edge-a4");
    }
}

int
main (int argc, char **argv)
{
  int status;

  g_test_init (&argc, &argv, NULL);
  mp_core_init ();
  out_dir = g_strdup (g_getenv ("G_TEST_BUILDDIR") ? g_getenv ("G_TEST_BUILDDIR") : ".");

  g_test_add_func ("/sheet/paper-sizes", test_paper_sizes);
  g_test_add_func ("/sheet/pages-grow", test_pages_grow);
  g_test_add_func ("/sheet/text", test_text);
  g_test_add_func ("/sheet/clock", test_clock);
  g_test_add_func ("/sheet/done-steps", test_done_steps);
  g_test_add_func ("/sheet/over-budget", test_over_budget);
  g_test_add_func ("/sheet/edge-cases", test_edge_cases);
  status = g_test_run ();
  g_free (out_dir);
  return status;
}
