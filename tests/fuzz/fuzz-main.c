/* SPDX-License-Identifier: GPL-3.0-or-later */
/* A driver that runs a fuzz target over files and directories given on the
 * command line, so that the fuzz corpus and every regression file run in
 * the normal test suite without libFuzzer. Prints TAP. */
#include <glib.h>
#include <stddef.h>
#include <stdint.h>

int LLVMFuzzerTestOneInput (const uint8_t *data, size_t size);

static int n_run;

static void
run_file (const char *path)
{
  g_autofree char *data = NULL;
  gsize len = 0;
  g_autoptr (GError) error = NULL;

  if (!g_file_get_contents (path, &data, &len, &error))
    {
      g_print ("not ok %d - %s: %s\n", ++n_run, path, error->message);
      return;
    }
  LLVMFuzzerTestOneInput ((const uint8_t *) data, len);
  g_print ("ok %d - %s\n", ++n_run, path);
}

static int
compare_paths (gconstpointer a, gconstpointer b)
{
  return g_strcmp0 (*(char *const *) a, *(char *const *) b);
}

static void
run_path (const char *path)
{
  g_autoptr (GDir) dir = NULL;
  const char *name;
  g_autoptr (GPtrArray) names = g_ptr_array_new_with_free_func (g_free);

  if (!g_file_test (path, G_FILE_TEST_IS_DIR))
    {
      run_file (path);
      return;
    }
  dir = g_dir_open (path, 0, NULL);
  while (dir != NULL && (name = g_dir_read_name (dir)) != NULL)
    g_ptr_array_add (names, g_build_filename (path, name, NULL));
  g_ptr_array_sort (names, compare_paths);
  for (guint i = 0; i < names->len; i++)
    if (g_file_test (names->pdata[i], G_FILE_TEST_IS_REGULAR))
      run_file (names->pdata[i]);
}

int
main (int argc, char **argv)
{
  for (int i = 1; i < argc; i++)
    run_path (argv[i]);
  g_print ("1..%d\n", n_run);
  return n_run > 0 ? 0 : 1;
}
