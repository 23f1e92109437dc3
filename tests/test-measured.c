/* SPDX-License-Identifier: GPL-3.0-or-later */
/* The measured-data CSV reader: good files in tests/data/measured, one
 * specific message for each bad file tests/data/bad/measured-*.csv,
 * limits, locale independence and the conversion to done points. */
#include "config.h"

#include "mp-error.h"
#include "mp-measured.h"
#include "mp-physics.h"

#include <locale.h>
#include <math.h>
#include <string.h>

typedef struct
{
  const char *file;
  MpErrorCode code;
  const char *message;
} BadCase;

static const BadCase bad_cases[] = {
  { "measured-qe-text.csv", MP_ERROR_INVALID,
    "measured-qe-text.csv:7: column \"qe\": expected a number > 0 and <= 1, found \"n/a\"" },
  { "measured-no-qe-column.csv", MP_ERROR_INVALID,
    "measured-no-qe-column.csv:1: header: expected the columns temperature_K, photon_energy_eV (or wavelength_nm) and qe" },
  { "measured-negative-temperature.csv", MP_ERROR_INVALID,
    "measured-negative-temperature.csv:4: column \"temperature_K\": expected a number > 0 and <= 3000, found \"-45\"" },
  { "measured-short-row.csv", MP_ERROR_INVALID,
    "measured-short-row.csv:5: expected 3 comma-separated columns as in the header, found 2" },
  { "measured-duplicate-column.csv", MP_ERROR_INVALID,
    "measured-duplicate-column.csv:1: header: column \"qe\" appears twice" },
  { "measured-wrong-case.csv", MP_ERROR_INVALID,
    "measured-wrong-case.csv:1: header: column \"Temperature_K\" must be spelled \"temperature_K\"" },
  { "measured-header-only.csv", MP_ERROR_INVALID,
    "measured-header-only.csv: expected at least one data row after the header, found none" },
  { "measured-wavelength-mismatch.csv", MP_ERROR_INVALID,
    "measured-wavelength-mismatch.csv:3: column \"wavelength_nm\": expected the wavelength of 4.52 eV (274.3013 nm), found \"250.0\"" },
  { "measured-qe-above-one.csv", MP_ERROR_INVALID,
    "measured-qe-above-one.csv:2: column \"qe\": expected a number > 0 and <= 1, found \"1.5\"" },
  { "measured-nan.csv", MP_ERROR_INVALID,
    "measured-nan.csv:2: column \"photon_energy_eV\": expected a number from 0.1 to 100, found \"nan\"" },
  { "measured-mte-sigma-alone.csv", MP_ERROR_INVALID,
    "measured-mte-sigma-alone.csv:2: column \"mte_sigma_meV\": expected an empty cell where mte_meV is empty, found \"0.1\"" },
  { "measured-empty-qe.csv", MP_ERROR_INVALID,
    "measured-empty-qe.csv:2: column \"qe\": expected a number > 0 and <= 1, found nothing" },
  { "measured-unit-suffix.csv", MP_ERROR_INVALID,
    "measured-unit-suffix.csv:2: column \"temperature_K\": expected a number > 0 and <= 3000, found \"40 K\"" },
};

static char *
data_path (const char *sub, const char *file)
{
  return g_test_build_filename (G_TEST_DIST, "data", sub, file, NULL);
}

static void
test_good_any_order (void)
{
  g_autofree char *path = data_path ("measured", "cold-sweep.csv");
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (path, &error);
  const MpMeasuredPoint *p;

  g_assert_no_error (error);
  g_assert_cmpuint (data->points->len, ==, 4);
  p = &g_array_index (data->points, MpMeasuredPoint, 0);
  g_assert_cmpint (p->line, ==, 6);
  g_assert_cmpfloat (p->temperature_K, ==, 40.2);
  /* E = hc / lambda with hc = 1239.8419843320025 eV nm (CODATA 2018). */
  g_assert_cmpfloat_with_epsilon (p->photon_energy_eV, 1239.8419843320025 / 275.0, 1e-12);
  g_assert_cmpfloat (p->qe, ==, 2.1e-9);
  g_assert_true (isnan (p->mte_meV));
  g_assert_true (isnan (p->mte_sigma_meV));
  g_assert_true (isnan (p->qe_sigma));
  g_assert_true (isnan (p->electrons));
  g_assert_cmpfloat (p->elapsed_h, ==, 2.10);
  p = &g_array_index (data->points, MpMeasuredPoint, 2);
  g_assert_cmpint (p->line, ==, 9);  /* blank line skipped, numbering kept */
  g_assert_cmpfloat (p->mte_meV, ==, 4.02);
  g_assert_cmpfloat (p->mte_sigma_meV, ==, 0.09);
  g_assert_cmpuint (mp_measured_count_mte (data), ==, 3);
  g_assert_cmpfloat (mp_measured_max_elapsed_h (data), ==, 5.5);
}

static void
test_good_spreadsheet_export (void)
{
  /* Byte-order mark, quoted header cells, CRLF, both energy and
   * wavelength (consistent), spaces around numbers, empty optional cells,
   * upper-case exponent, a note column with a quoted comma and quote. */
  g_autofree char *path = data_path ("measured", "spreadsheet-export.csv");
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (path, &error);
  const MpMeasuredPoint *p;

  g_assert_no_error (error);
  g_assert_cmpuint (data->points->len, ==, 2);
  p = &g_array_index (data->points, MpMeasuredPoint, 0);
  g_assert_cmpfloat (p->photon_energy_eV, ==, 4.70);
  g_assert_cmpfloat (p->qe_sigma, ==, 0.3e-8);
  g_assert_cmpfloat (p->electrons, ==, 120000);
  p = &g_array_index (data->points, MpMeasuredPoint, 1);
  g_assert_cmpfloat (p->photon_energy_eV, ==, 4.75);
  g_assert_cmpfloat (p->qe, ==, 2.5e-7);
  g_assert_true (isnan (p->qe_sigma));
  g_assert_true (isnan (mp_measured_max_elapsed_h (data)));
}

static gboolean
bad_case_listed (const char *name)
{
  for (gsize i = 0; i < G_N_ELEMENTS (bad_cases); i++)
    if (strcmp (bad_cases[i].file, name) == 0)
      return TRUE;
  return FALSE;
}

static void
test_bad_files (void)
{
  g_autofree char *dir_path = g_test_build_filename (G_TEST_DIST, "data", "bad", NULL);
  g_autoptr (GDir) dir = g_dir_open (dir_path, 0, NULL);
  const char *name;

  g_assert_nonnull (dir);
  /* Every measured-*.csv in the folder has its expected message here. */
  while ((name = g_dir_read_name (dir)) != NULL)
    if (g_str_has_prefix (name, "measured-") && g_str_has_suffix (name, ".csv") &&
        !bad_case_listed (name))
      g_error ("tests/data/bad/%s has no expected message in test-measured.c", name);

  for (gsize i = 0; i < G_N_ELEMENTS (bad_cases); i++)
    {
      g_autofree char *path = data_path ("bad", bad_cases[i].file);
      g_autoptr (GError) error = NULL;
      g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (path, &error);

      g_assert_null (data);
      g_assert_error (error, MP_ERROR, (int) bad_cases[i].code);
      if (strstr (error->message, bad_cases[i].message) == NULL)
        g_error ("%s: expected \"%s\", got \"%s\"", bad_cases[i].file,
                 bad_cases[i].message, error->message);
    }
}

static void
test_missing_file (void)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file ("/nonexistent/m.csv", &error);

  g_assert_null (data);
  g_assert_error (error, MP_ERROR, MP_ERROR_IO);
}

static void
test_no_header (void)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_data ("# only a comment\n\n", -1,
                                                                "x.csv", &error);

  g_assert_null (data);
  g_assert_error (error, MP_ERROR, MP_ERROR_INVALID);
  g_assert_nonnull (strstr (error->message, "x.csv: expected a header line"));
}

static void
test_limits (void)
{
  g_autoptr (GString) text = g_string_new ("temperature_K,photon_energy_eV,qe\n");
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = NULL;
  g_autofree char *big = NULL;

  for (int i = 0; i < MP_MEASURED_MAX_ROWS; i++)
    g_string_append (text, "40,4.5,1e-9\n");
  data = mp_measured_load_from_data (text->str, text->len, "rows.csv", &error);
  g_assert_no_error (error);
  g_assert_cmpuint (data->points->len, ==, MP_MEASURED_MAX_ROWS);
  g_clear_pointer (&data, mp_measured_data_free);

  g_string_append (text, "40,4.5,1e-9\n");
  data = mp_measured_load_from_data (text->str, text->len, "rows.csv", &error);
  g_assert_null (data);
  g_assert_error (error, MP_ERROR, MP_ERROR_LIMIT);
  g_assert_nonnull (strstr (error->message, "rows.csv:100002: more than 100000 data rows"));
  g_clear_error (&error);

  big = g_malloc (MP_MEASURED_MAX_BYTES + 2);
  memset (big, '#', MP_MEASURED_MAX_BYTES + 1);
  big[MP_MEASURED_MAX_BYTES + 1] = '\0';
  data = mp_measured_load_from_data (big, -1, "big.csv", &error);
  g_assert_null (data);
  g_assert_error (error, MP_ERROR, MP_ERROR_LIMIT);
}

static void
test_binary (void)
{
  static const char text[] = "temperature_K,photon_energy_eV,qe\n40,4.5\0,1e-9\n";
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_data (text, sizeof text - 1,
                                                                "nul.csv", &error);

  g_assert_null (data);
  g_assert_error (error, MP_ERROR, MP_ERROR_INVALID);
}

static void
test_locale_independent (void)
{
  g_autoptr (GError) error = NULL;
  g_autoptr (MpMeasuredData) data = NULL;

  if (setlocale (LC_NUMERIC, "de_DE.UTF-8") == NULL &&
      setlocale (LC_NUMERIC, "de_DE.utf8") == NULL)
    {
      g_test_skip ("de_DE.UTF-8 locale not installed");
      return;
    }
  /* In de_DE the decimal separator is ','; the file still uses '.'. */
  data = mp_measured_load_from_data ("temperature_K,photon_energy_eV,qe\n40.5,4.625,1.5e-9\n",
                                     -1, "de.csv", &error);
  setlocale (LC_NUMERIC, "C");
  g_assert_no_error (error);
  g_assert_cmpfloat (g_array_index (data->points, MpMeasuredPoint, 0).temperature_K, ==, 40.5);
  g_assert_cmpfloat (g_array_index (data->points, MpMeasuredPoint, 0).photon_energy_eV, ==, 4.625);
}

static void
test_done_points (void)
{
  g_autoptr (MpPlan) plan = mp_plan_new_default ();  /* blocks 295, 120, 40 K */
  g_autofree char *path = data_path ("measured", "cold-sweep.csv");
  g_autoptr (MpMeasuredData) data = mp_measured_load_from_file (path, NULL);
  g_autoptr (GArray) done = NULL;

  g_assert_nonnull (data);
  done = mp_measured_to_done_points (data, plan);
  g_assert_cmpuint (done->len, ==, 4);
  /* 40.2 K is within max(1 K, 2 %) of the 40 K block: snapped. */
  g_assert_cmpfloat (g_array_index (done, MpDonePoint, 0).temperature_K, ==, 40.0);
  g_assert_cmpfloat (g_array_index (done, MpDonePoint, 3).temperature_K, ==, 120.0);
  g_assert_cmpfloat (g_array_index (done, MpDonePoint, 1).photon_energy_eV, ==,
                     g_array_index (data->points, MpMeasuredPoint, 1).photon_energy_eV);
  /* Far from any block: kept as measured. */
  g_assert_cmpfloat (mp_measured_match_block_temperature (plan, 77.0), ==, 77.0);
  g_assert_cmpfloat (mp_measured_match_block_temperature (plan, 292.0), ==, 295.0);
  g_clear_pointer (&done, g_array_unref);
  /* Without a plan nothing is snapped. */
  done = mp_measured_to_done_points (data, NULL);
  g_assert_cmpfloat (g_array_index (done, MpDonePoint, 0).temperature_K, ==, 40.2);
}

int
main (int argc, char **argv)
{
  g_test_init (&argc, &argv, NULL);
  mp_core_init ();

  g_test_add_func ("/measured/good/any-order", test_good_any_order);
  g_test_add_func ("/measured/good/spreadsheet-export", test_good_spreadsheet_export);
  g_test_add_func ("/measured/bad/files", test_bad_files);
  g_test_add_func ("/measured/bad/missing-file", test_missing_file);
  g_test_add_func ("/measured/bad/no-header", test_no_header);
  g_test_add_func ("/measured/bad/binary", test_binary);
  g_test_add_func ("/measured/limits", test_limits);
  g_test_add_func ("/measured/locale", test_locale_independent);
  g_test_add_func ("/measured/done-points", test_done_points);
  return g_test_run ();
}
