/* SPDX-License-Identifier: GPL-3.0-or-later */
/* test-window.c: the planning window under Xvfb. These tests check the
 * window's own promises (issue 5): edits re-plan and show up in the status
 * line and the table, refused values and bad files leave the document
 * untouched, undo restores, the unsaved state tracks edits, the window
 * renders without a GPU. The physics behind the numbers is tested in the
 * core tests; here only the plumbing is. */
#include "config.h"

#include <string.h>
#include <glib/gstdio.h>
#include <gtk/gtk.h>

#include "mp-physics.h"
#include "mp-plan-editor.h"
#include "mp-schedule-view.h"
#include "mp-sheet.h"
#include "mp-window.h"
#include "mp-ui-test.h"

#define DEMO MP_SOURCE_DIR "/data/examples/cold-copper-shift.mteplan"
#define WAIT_LIMIT_S 30

static char *state_dir;

static GtkEditable *
beam_time_entry (MpWindow *window)
{
  GtkEditable *entry = mp_plan_editor_get_entry (MP_PLAN_EDITOR (mp_window_get_editor (window)),
                                                 "beam_time_h");

  g_assert_nonnull (entry);
  return entry;
}

static guint
n_rows (MpWindow *window)
{
  return g_list_model_get_n_items (mp_schedule_view_get_model (
    MP_SCHEDULE_VIEW (mp_window_get_schedule_view (window))));
}

static void
test_demo_replans (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  g_autofree char *status_before = g_strdup (mp_window_get_status_text (window));
  guint rows_before = n_rows (window);
  guint serial = mp_document_get_schedule_serial (doc);

  /* The table shows every scheduled step. */
  g_assert_cmpuint (rows_before, ==, mp_schedule_count_steps (mp_document_get_schedule (doc)));
  g_assert_cmpuint (rows_before, >, 0);
  g_assert_nonnull (strstr (status_before, "of 12.0 h"));

  /* Typing a shorter beam time re-plans: fewer steps fit into 1 h. */
  gtk_editable_set_text (beam_time_entry (window), "1");
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 1.0);
  mp_ui_test_wait_for_schedule (doc, serial);
  g_assert_cmpfloat (mp_document_get_schedule (doc)->beam_time_available_h, ==, 1.0);
  g_assert_cmpfloat (mp_document_get_schedule (doc)->beam_time_h, <=, 1.0 + 1e-9);
  g_assert_nonnull (strstr (mp_window_get_status_text (window), "of 1.0 h"));
  g_assert_cmpstr (mp_window_get_status_text (window), !=, status_before);
  g_assert_cmpuint (n_rows (window), <, rows_before);
  g_assert_cmpuint (n_rows (window), ==, mp_schedule_count_steps (mp_document_get_schedule (doc)));

  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_refused_value (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpPlanEditor *editor = MP_PLAN_EDITOR (mp_window_get_editor (window));
  g_autofree char *before = mp_plan_checksum (mp_document_get_plan (doc));
  g_autofree char *after = NULL;

  /* Not a number: refused by the entry's parser, with the field named. */
  gtk_editable_set_text (beam_time_entry (window), "twelve");
  g_assert_nonnull (mp_plan_editor_get_error (editor, "beam_time_h"));
  g_assert_nonnull (strstr (mp_plan_editor_get_error (editor, "beam_time_h"), "beam_time_h"));

  /* A number the core rejects: the core's own message is shown. */
  gtk_editable_set_text (beam_time_entry (window), "-3");
  g_assert_nonnull (mp_plan_editor_get_error (editor, "beam_time_h"));
  g_assert_nonnull (strstr (mp_plan_editor_get_error (editor, "beam_time_h"), "beam_time_h"));
  g_assert_true (gtk_widget_has_css_class (GTK_WIDGET (beam_time_entry (window)), "error"));

  after = mp_plan_checksum (mp_document_get_plan (doc));
  g_assert_cmpstr (before, ==, after);
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 12.0);
  g_assert_false (mp_document_get_modified (doc));

  /* A good value clears the message. */
  gtk_editable_set_text (beam_time_entry (window), "10");
  g_assert_null (mp_plan_editor_get_error (editor, "beam_time_h"));
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 10.0);

  gtk_window_destroy (GTK_WINDOW (window));
}

static void
check_bad_file (MpWindow *window, const char *path)
{
  MpDocument *doc = mp_window_get_document (window);
  g_autofree char *before = mp_plan_checksum (mp_document_get_plan (doc));
  g_autofree char *path_before = g_strdup (mp_document_get_path (doc));
  g_autofree char *after = NULL;
  g_autoptr (GFile) file = g_file_new_for_path (path);
  g_autoptr (GError) error = NULL;
  MpPlan *plan = mp_plan_load_from_file (path, &error);

  g_assert_null (plan);
  g_assert_nonnull (error);
  g_assert_false (mp_window_open_file (window, file));
  /* The loader's message is shown as it is. */
  g_assert_nonnull (mp_window_get_error_text (window));
  g_assert_nonnull (strstr (mp_window_get_error_text (window), error->message));
  after = mp_plan_checksum (mp_document_get_plan (doc));
  g_assert_cmpstr (before, ==, after);
  g_assert_cmpstr (path_before, ==, mp_document_get_path (doc));
}

static void
test_bad_file (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  g_autofree char *bad = g_build_filename (state_dir, "broken.mteplan", NULL);
  g_autofree char *bad_dir = g_test_build_filename (G_TEST_DIST, "data", "bad", NULL);
  g_autoptr (GDir) dir = g_dir_open (bad_dir, 0, NULL);
  const char *name;
  int n_checked = 0;

  g_assert_true (g_file_set_contents (bad, "{ \"format\": \"mteplan\", \"version\": 1,", -1, NULL));
  check_bad_file (window, bad);

  /* Every bad plan of the loader's tests (when present). */
  while (dir != NULL && (name = g_dir_read_name (dir)) != NULL)
    if (g_str_has_suffix (name, ".mteplan"))
      {
        g_autofree char *path = g_build_filename (bad_dir, name, NULL);

        check_bad_file (window, path);
        n_checked++;
      }
  g_test_message ("checked %d bad plans from tests/data/bad", n_checked);
  g_assert_false (mp_document_get_modified (mp_window_get_document (window)));

  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_undo_redo (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  GtkEditable *entry = beam_time_entry (window);

  g_assert_false (mp_document_can_undo (doc));
  gtk_editable_set_text (entry, "7");
  gtk_editable_set_text (entry, "7.5");  /* one typing run: one undo step */
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 7.5);
  g_assert_true (mp_document_can_undo (doc));

  g_assert_true (g_action_group_has_action (G_ACTION_GROUP (window), "undo"));
  g_action_group_activate_action (G_ACTION_GROUP (window), "undo", NULL);
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 12.0);
  g_assert_cmpstr (gtk_editable_get_text (entry), ==, "12");
  g_assert_true (mp_document_can_redo (doc));

  g_action_group_activate_action (G_ACTION_GROUP (window), "redo", NULL);
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 7.5);
  g_assert_cmpstr (gtk_editable_get_text (entry), ==, "7.5");

  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_modified_state (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  g_autofree char *copy = g_build_filename (state_dir, "saved.mteplan", NULL);
  g_autoptr (GError) error = NULL;
  const char *autosave;

  g_assert_false (mp_document_get_modified (doc));
  g_assert_false (g_str_has_prefix (gtk_window_get_title (GTK_WINDOW (window)), "*"));

  gtk_editable_set_text (beam_time_entry (window), "8");
  g_assert_true (mp_document_get_modified (doc));
  g_assert_true (g_str_has_prefix (gtk_window_get_title (GTK_WINDOW (window)), "*"));

  /* Autosave lands in the XDG state directory and reads back. */
  autosave = mp_window_autosave_now (window);
  g_assert_nonnull (autosave);
  g_assert_true (g_str_has_prefix (autosave, state_dir));
  {
    g_autoptr (GError) load_error = NULL;
    MpPlan *plan = mp_plan_load_from_file (autosave, &load_error);

    g_assert_no_error (load_error);
    g_assert_cmpfloat (plan->beam_time_h, ==, 8.0);
    mp_plan_free (plan);
  }

  /* Undo back to the loaded state: unmodified again. */
  mp_document_undo (doc);
  g_assert_false (mp_document_get_modified (doc));
  mp_document_redo (doc);
  g_assert_true (mp_document_get_modified (doc));

  /* A save makes it clean (and removes the autosave file). */
  g_assert_true (mp_document_save (doc, copy, &error));
  g_assert_no_error (error);
  g_assert_false (mp_document_get_modified (doc));
  g_assert_cmpstr (mp_document_get_path (doc), ==, copy);

  gtk_editable_set_text (beam_time_entry (window), "9");
  g_assert_true (mp_document_get_modified (doc));

  gtk_window_destroy (GTK_WINDOW (window));
}

static GtkWidget *
find_button (GtkWidget *widget, const char *label)
{
  if (GTK_IS_BUTTON (widget) && g_strcmp0 (gtk_button_get_label (GTK_BUTTON (widget)), label) == 0)
    return widget;
  for (GtkWidget *child = gtk_widget_get_first_child (widget); child != NULL;
       child = gtk_widget_get_next_sibling (child))
    {
      GtkWidget *found = find_button (child, label);

      if (found != NULL)
        return found;
    }
  return NULL;
}

static void
test_temperature_blocks (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  MpPlanEditor *editor = MP_PLAN_EDITOR (mp_window_get_editor (window));
  guint n = mp_document_get_plan (doc)->temperatures->len;
  GtkWidget *add = find_button (GTK_WIDGET (editor), "_Add Temperature Block");
  GtkEditable *entry;
  const char *message;

  /* A row value the core rejects shows the core's message for that row. */
  entry = mp_plan_editor_get_entry (editor, "temperatures[1].temperature_K");
  g_assert_nonnull (entry);
  gtk_editable_set_text (entry, "-5");
  message = mp_plan_editor_get_error (editor, "temperatures[1].temperature_K");
  g_assert_nonnull (message);
  g_assert_nonnull (strstr (message, "temperatures[1].temperature_K"));
  g_assert_cmpfloat (g_array_index (mp_document_get_plan (doc)->temperatures,
                                    MpTemperatureBlock, 1).temperature_K, >, 0);

  /* Add a block; the new row has entries; undo removes it again. */
  g_assert_nonnull (add);
  g_signal_emit_by_name (add, "clicked");
  g_assert_cmpuint (mp_document_get_plan (doc)->temperatures->len, ==, n + 1);
  {
    g_autofree char *key = g_strdup_printf ("temperatures[%u].settle_min", n);
    g_assert_nonnull (mp_plan_editor_get_entry (editor, key));
  }
  mp_document_undo (doc);
  g_assert_cmpuint (mp_document_get_plan (doc)->temperatures->len, ==, n);
  {
    g_autofree char *key = g_strdup_printf ("temperatures[%u].settle_min", n);
    g_assert_null (mp_plan_editor_get_entry (editor, key));
  }

  gtk_window_destroy (GTK_WINDOW (window));
}

static guint
count_substrings (const char *haystack, gsize length, const char *needle)
{
  gsize n = strlen (needle);
  guint count = 0;

  for (gsize i = 0; i + n <= length; i++)
    if (memcmp (haystack + i, needle, n) == 0 && (i + n == length || haystack[i + n] != 's'))
      count++;
  return count;
}

static void
test_export_and_print (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  const MpSchedule *schedule = mp_document_get_schedule (doc);
  g_autofree char *csv_path = g_build_filename (state_dir, "out.csv", NULL);
  g_autofree char *pdf_path = g_build_filename (state_dir, "out.pdf", NULL);
  g_autofree char *print_path = g_build_filename (state_dir, "printed.pdf", NULL);
  g_autofree char *csv = NULL;
  g_autofree char *pdf = NULL;
  g_auto (GStrv) lines = NULL;
  g_autoptr (GError) error = NULL;
  g_autoptr (MpSheet) sheet = NULL;
  gsize length = 0;
  guint n_lines = 0;

  /* CSV: a header and one row per step. */
  g_assert_true (mp_window_export_csv (window, csv_path, &error));
  g_assert_no_error (error);
  g_assert_true (g_file_get_contents (csv_path, &csv, NULL, NULL));
  lines = g_strsplit (csv, "\n", -1);
  for (guint i = 0; lines[i] != NULL; i++)
    if (*lines[i] != '\0' && *lines[i] != '#')
      n_lines++;
  g_assert_cmpuint (n_lines, ==, (guint) mp_schedule_count_steps (schedule) + 1);

  /* The exported run sheet is a PDF. */
  g_assert_true (mp_window_export_pdf (window, pdf_path, &error));
  g_assert_no_error (error);
  g_assert_true (g_file_get_contents (pdf_path, &pdf, &length, NULL));
  g_assert_true (length > 4 && memcmp (pdf, "%PDF", 4) == 0);
  g_clear_pointer (&pdf, g_free);

  /* Printing goes through GtkPrintOperation page by page: exported to a
   * file it has as many pages as the sheet laid out on A4. */
  g_assert_cmpint (mp_window_print (window, print_path, &error), ==, GTK_PRINT_OPERATION_RESULT_APPLY);
  g_assert_no_error (error);
  g_assert_true (g_file_get_contents (print_path, &pdf, &length, NULL));
  g_assert_true (length > 4 && memcmp (pdf, "%PDF", 4) == 0);
  sheet = mp_sheet_new (mp_document_get_schedule_plan (doc), schedule, 595.276, 841.89, NULL);
  g_assert_cmpuint (count_substrings (pdf, length, "/Type /Page"), ==, (guint) mp_sheet_get_n_pages (sheet));

  gtk_window_destroy (GTK_WINDOW (window));
}

static GtkWindow *
find_dialog (MpWindow *window)
{
  GListModel *toplevels = gtk_window_get_toplevels ();

  for (guint i = 0; i < g_list_model_get_n_items (toplevels); i++)
    {
      g_autoptr (GtkWindow) w = g_list_model_get_item (toplevels, i);

      if (GTK_IS_MESSAGE_DIALOG (w) && gtk_window_get_transient_for (w) == GTK_WINDOW (window))
        return w;
    }
  return NULL;
}

static void
test_close_prompt (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  GtkWindow *dialog;
  gpointer weak = window;

  g_object_add_weak_pointer (G_OBJECT (window), &weak);
  gtk_window_present (GTK_WINDOW (window));

  /* Unmodified: closes at once. An edited plan asks first. */
  gtk_editable_set_text (beam_time_entry (window), "6");
  gtk_window_close (GTK_WINDOW (window));
  g_assert_nonnull (weak);
  dialog = find_dialog (window);
  g_assert_nonnull (dialog);

  /* Cancel keeps the window and the edit. */
  gtk_dialog_response (GTK_DIALOG (dialog), GTK_RESPONSE_CANCEL);
  g_assert_nonnull (weak);
  g_assert_cmpfloat (mp_document_get_plan (mp_window_get_document (window))->beam_time_h, ==, 6.0);

  /* Close without saving closes it. */
  gtk_window_close (GTK_WINDOW (window));
  dialog = find_dialog (window);
  g_assert_nonnull (dialog);
  gtk_dialog_response (GTK_DIALOG (dialog), GTK_RESPONSE_REJECT);
  for (int i = 0; i < 100 && weak != NULL; i++)
    g_main_context_iteration (NULL, FALSE);
  g_assert_null (weak);
}

static void
test_recovery (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  MpDocument *doc = mp_window_get_document (window);
  g_autofree char *dir = mp_autosave_dir ();
  g_autofree char *kept = g_build_filename (dir, "autosave-1-1.mteplan", NULL);
  MpPlan *plan = mp_document_dup_plan (doc);
  g_autofree char *data = NULL;

  /* A file left by an earlier session (process 1 never runs mteplan). */
  plan->beam_time_h = 5.5;
  data = mp_plan_to_data (plan, NULL);
  mp_plan_free (plan);
  g_assert_cmpint (g_mkdir_with_parents (dir, 0700), ==, 0);
  g_assert_true (g_file_set_contents (kept, data, -1, NULL));

  mp_window_offer_recovery (window, kept);
  mp_window_respond_recovery (window, TRUE);
  g_assert_cmpfloat (mp_document_get_plan (doc)->beam_time_h, ==, 5.5);
  g_assert_true (mp_document_get_modified (doc));
  /* No origin was kept: the recovered plan is untitled, not the autosave. */
  g_assert_null (mp_document_get_path (doc));
  g_assert_false (g_file_test (kept, G_FILE_TEST_EXISTS));

  gtk_window_destroy (GTK_WINDOW (window));
}

static void
test_shortcuts_window (void)
{
  g_autoptr (GtkBuilder) builder =
    gtk_builder_new_from_resource ("/org/mteplan/Planner/gtk/help-overlay.ui");
  GObject *overlay = gtk_builder_get_object (builder, "help_overlay");

  /* GtkApplication loads this resource for win.show-help-overlay. */
  g_assert_true (GTK_IS_SHORTCUTS_WINDOW (overlay));
  /* Not presented: GTK 4.8's shortcuts window warns about a label's
   * negative width under Xvfb, whatever the content. */
  gtk_window_destroy (GTK_WINDOW (overlay));
}

/* Counts distinct colours in a region of an RGBA texture. */
static guint
count_colours (GdkTexture *texture, int x0, int y0, int w, int h)
{
  int width = gdk_texture_get_width (texture);
  int height = gdk_texture_get_height (texture);
  g_autofree guchar *data = g_malloc ((gsize) width * height * 4);
  g_autoptr (GHashTable) seen = g_hash_table_new (g_direct_hash, g_direct_equal);

  gdk_texture_download (texture, data, (gsize) width * 4);
  for (int y = y0; y < MIN (height, y0 + h); y++)
    for (int x = x0; x < MIN (width, x0 + w); x++)
      {
        guint32 pixel;

        memcpy (&pixel, data + ((gsize) y * width + x) * 4, 4);
        g_hash_table_add (seen, GUINT_TO_POINTER (pixel));
      }
  return g_hash_table_size (seen);
}

static void
test_renders_without_gpu (void)
{
  MpWindow *window = mp_ui_test_open_demo ();
  g_autoptr (GskRenderer) renderer = gsk_cairo_renderer_new ();
  g_autoptr (GdkPaintable) paintable = NULL;
  g_autoptr (GtkSnapshot) snapshot = gtk_snapshot_new ();
  g_autoptr (GskRenderNode) node = NULL;
  g_autoptr (GdkTexture) texture = NULL;
  g_autoptr (GError) error = NULL;
  gint64 end = g_get_monotonic_time () + WAIT_LIMIT_S * G_USEC_PER_SEC;
  int width, height;

  gtk_window_set_default_size (GTK_WINDOW (window), 1024, 700);
  gtk_window_present (GTK_WINDOW (window));
  while (gtk_widget_get_width (GTK_WIDGET (window)) < 100 && g_get_monotonic_time () < end)
    g_main_context_iteration (NULL, TRUE);
  for (int i = 0; i < 50; i++)
    g_main_context_iteration (NULL, FALSE);
  width = gtk_widget_get_width (GTK_WIDGET (window));
  height = gtk_widget_get_height (GTK_WIDGET (window));
  g_assert_cmpint (width, >=, 100);

  g_assert_true (gsk_renderer_realize (renderer, NULL, &error));
  paintable = gtk_widget_paintable_new (GTK_WIDGET (window));
  gdk_paintable_snapshot (paintable, GDK_SNAPSHOT (snapshot), width, height);
  node = gtk_snapshot_free_to_node (g_steal_pointer (&snapshot));
  g_assert_nonnull (node);
  texture = gsk_renderer_render_texture (renderer, node, &GRAPHENE_RECT_INIT (0, 0, width, height));
  g_assert_nonnull (texture);
  /* The right half holds plots and the table: far more than a blank fill. */
  g_assert_cmpuint (count_colours (texture, width / 2, 60, width / 2, height / 2), >, 20);
  gsk_renderer_unrealize (renderer);

  gtk_window_destroy (GTK_WINDOW (window));
}

int
main (int argc, char *argv[])
{
  state_dir = mp_ui_test_init (&argc, &argv, "test-window");

  if (!g_file_test (DEMO, G_FILE_TEST_EXISTS))
    {
      g_test_skip ("the demo plan is missing");
      return g_test_run ();
    }
  g_test_add_func ("/window/demo-replans", test_demo_replans);
  g_test_add_func ("/window/refused-value", test_refused_value);
  g_test_add_func ("/window/bad-file", test_bad_file);
  g_test_add_func ("/window/undo-redo", test_undo_redo);
  g_test_add_func ("/window/export-and-print", test_export_and_print);
  g_test_add_func ("/window/temperature-blocks", test_temperature_blocks);
  g_test_add_func ("/window/modified-state", test_modified_state);
  g_test_add_func ("/window/close-prompt", test_close_prompt);
  g_test_add_func ("/window/shortcuts-window", test_shortcuts_window);
  g_test_add_func ("/window/recovery", test_recovery);
  g_test_add_func ("/window/renders-without-gpu", test_renders_without_gpu);
  return g_test_run ();
}
