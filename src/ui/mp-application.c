/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mp-application.c: one instance; opens plans given on the command line,
 * offers to recover autosaved work, keeps the recent files. */
#include "config.h"

#include <unistd.h>
#include <glib/gi18n.h>
#include <glib/gstdio.h>

#include "mp-application.h"
#include "mp-physics.h"
#include "mp-window.h"

#define MAX_RECENT 10

struct _MpApplication
{
  GtkApplication parent_instance;

  GSettings *settings;
  gboolean recovery_offered;
};

G_DEFINE_FINAL_TYPE (MpApplication, mp_application, GTK_TYPE_APPLICATION)

static void
quit_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  GtkApplication *app = GTK_APPLICATION (user_data);
  GList *windows = g_list_copy (gtk_application_get_windows (app));

  /* Each window asks about its own unsaved changes. */
  for (GList *l = windows; l != NULL; l = l->next)
    gtk_window_close (GTK_WINDOW (l->data));
  g_list_free (windows);
}

static void
new_window_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  MpWindow *window = mp_window_new (GTK_APPLICATION (user_data));

  gtk_window_present (GTK_WINDOW (window));
}

static void
help_shown_cb (GObject *source, GAsyncResult *result, gpointer user_data)
{
  g_autoptr (GtkWindow) window = user_data;
  g_autoptr (GError) error = NULL;
  GtkWidget *dialog;

  if (gtk_show_uri_full_finish (GTK_WINDOW (source), result, &error))
    return;
  dialog = gtk_message_dialog_new (window, GTK_DIALOG_MODAL | GTK_DIALOG_DESTROY_WITH_PARENT,
                                   GTK_MESSAGE_ERROR, GTK_BUTTONS_CLOSE,
                                   _("The help could not be opened"));
  gtk_message_dialog_format_secondary_text (GTK_MESSAGE_DIALOG (dialog),
                                            _("%s\nA help viewer for “help:” addresses "
                                              "(such as Yelp) is needed."),
                                            error->message);
  g_signal_connect (dialog, "response", G_CALLBACK (gtk_window_destroy), NULL);
  gtk_window_present (GTK_WINDOW (dialog));
}

static void
help_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  GtkWindow *window = gtk_application_get_active_window (GTK_APPLICATION (user_data));

  if (window == NULL)
    return;
  gtk_show_uri_full (window, "help:mteplan", GDK_CURRENT_TIME, NULL,
                     help_shown_cb, g_object_ref (window));
}

static void
about_action (GSimpleAction *action, GVariant *param, gpointer user_data)
{
  GtkWindow *window = gtk_application_get_active_window (GTK_APPLICATION (user_data));
  static const char *authors[] = { N_("The mteplan developers"), NULL };

  gtk_show_about_dialog (window,
                         "program-name", "mteplan",
                         "logo-icon-name", MP_APP_ID,
                         "version", PACKAGE_VERSION,
                         "comments", _("Plan photocathode MTE and QE measurements within beam time and cryogen budgets"),
                         "license-type", GTK_LICENSE_GPL_3_0,
                         "authors", authors,
                         "translator-credits", _("translator-credits"),
                         NULL);
}

static const GActionEntry app_entries[] = {
  { "quit", quit_action },
  { "new-window", new_window_action },
  { "help", help_action },
  { "about", about_action },
};

static const struct
{
  const char *action;
  const char *accels[3];
} accels[] = {
  { "app.quit", { "<Control>q", NULL } },
  { "app.new-window", { "<Control>n", NULL } },
  { "app.help", { "F1", NULL } },
  { "win.open", { "<Control>o", NULL } },
  { "win.save", { "<Control>s", NULL } },
  { "win.save-as", { "<Control><Shift>s", NULL } },
  { "win.print", { "<Control>p", NULL } },
  { "win.export-pdf", { "<Control>e", NULL } },
  { "win.export-csv", { "<Control><Shift>e", NULL } },
  { "win.undo", { "<Control>z", NULL } },
  { "win.redo", { "<Control><Shift>z", "<Control>y", NULL } },
  { "win.close", { "<Control>w", NULL } },
  { "win.show-help-overlay", { "<Control>question", NULL } },
  { "win.show-page('cathode')", { "<Alt>1", NULL } },
  { "win.show-page('laser')", { "<Alt>2", NULL } },
  { "win.show-page('detector')", { "<Alt>3", NULL } },
  { "win.show-page('cryostat')", { "<Alt>4", NULL } },
  { "win.show-page('scan')", { "<Alt>5", NULL } },
  { "win.show-plot('qe')", { "<Control>1", NULL } },
  { "win.show-plot('mte')", { "<Control>2", NULL } },
  { "win.show-plot('timeline')", { "<Control>3", NULL } },
  { "win.show-plot('all')", { "<Control>4", NULL } },
};

static void
load_settings (MpApplication *self)
{
  GSettingsSchemaSource *source = g_settings_schema_source_get_default ();
  g_autoptr (GSettingsSchema) schema = NULL;

  if (source != NULL)
    schema = g_settings_schema_source_lookup (source, MP_APP_ID, TRUE);
  if (schema == NULL)
    {
      /* Running from the build tree: the schema compiled beside it. */
      g_autoptr (GSettingsSchemaSource) build =
        g_settings_schema_source_new_from_directory (MP_BUILD_DIR "/data", source, FALSE, NULL);

      if (build != NULL)
        schema = g_settings_schema_source_lookup (build, MP_APP_ID, FALSE);
    }
  if (schema != NULL)
    self->settings = g_settings_new_full (schema, NULL, NULL);
  else
    g_debug ("Settings schema %s not installed: settings are not kept", MP_APP_ID);
}

static void
mp_application_startup (GApplication *application)
{
  MpApplication *self = MP_APPLICATION (application);
  g_autoptr (GtkCssProvider) css = gtk_css_provider_new ();

  G_APPLICATION_CLASS (mp_application_parent_class)->startup (application);

  mp_core_init ();
  g_set_application_name ("mteplan");
  gtk_window_set_default_icon_name (MP_APP_ID);
  load_settings (self);
  g_action_map_add_action_entries (G_ACTION_MAP (self), app_entries,
                                   G_N_ELEMENTS (app_entries), self);
  if (self->settings != NULL)
    {
      g_autoptr (GAction) paper = g_settings_create_action (self->settings, "paper-size");

      g_action_map_add_action (G_ACTION_MAP (self), paper);
    }
  for (guint i = 0; i < G_N_ELEMENTS (accels); i++)
    gtk_application_set_accels_for_action (GTK_APPLICATION (self), accels[i].action,
                                           accels[i].accels);
  gtk_css_provider_load_from_resource (css, "/org/mteplan/Planner/style.css");
  gtk_style_context_add_provider_for_display (gdk_display_get_default (),
                                              GTK_STYLE_PROVIDER (css),
                                              GTK_STYLE_PROVIDER_PRIORITY_APPLICATION);
}

/* The newest autosave file left by another (ended) process, or NULL. */
static char *
find_autosave (void)
{
  g_autofree char *dir = mp_autosave_dir ();
  g_autoptr (GDir) handle = g_dir_open (dir, 0, NULL);
  g_autofree char *own = g_strdup_printf ("autosave-%d-", (int) getpid ());
  char *best = NULL;
  gint64 best_time = 0;
  const char *name;

  if (handle == NULL)
    return NULL;
  while ((name = g_dir_read_name (handle)) != NULL)
    {
      g_autofree char *path = NULL;
      GStatBuf st;

      if (!g_str_has_suffix (name, ".mteplan") || g_str_has_prefix (name, own))
        continue;
      path = g_build_filename (dir, name, NULL);
      if (g_stat (path, &st) != 0 || st.st_mtime < best_time)
        continue;
      best_time = st.st_mtime;
      g_free (best);
      best = g_steal_pointer (&path);
    }
  return best;
}

static void
offer_recovery (MpApplication *self, MpWindow *window)
{
  g_autofree char *path = NULL;

  if (self->recovery_offered)
    return;
  self->recovery_offered = TRUE;
  path = find_autosave ();
  if (path != NULL)
    mp_window_offer_recovery (window, path);
}

static void
mp_application_activate (GApplication *application)
{
  GtkWindow *window = gtk_application_get_active_window (GTK_APPLICATION (application));

  if (window == NULL)
    window = GTK_WINDOW (mp_window_new (GTK_APPLICATION (application)));
  offer_recovery (MP_APPLICATION (application), MP_WINDOW (window));
  gtk_window_present (window);
}

static void
mp_application_open (GApplication  *application,
                     GFile        **files,
                     int            n_files,
                     const char    *hint)
{
  for (int i = 0; i < n_files; i++)
    {
      GtkWindow *active = gtk_application_get_active_window (GTK_APPLICATION (application));
      MpWindow *window = NULL;

      /* Reuse a window that holds nothing yet. */
      if (g_strcmp0 (hint, "new-window") != 0 && MP_IS_WINDOW (active)
          && mp_document_is_pristine (mp_window_get_document (MP_WINDOW (active))))
        window = MP_WINDOW (active);
      if (window == NULL)
        window = mp_window_new (GTK_APPLICATION (application));
      mp_window_open_file (window, files[i]);
      offer_recovery (MP_APPLICATION (application), window);
      gtk_window_present (GTK_WINDOW (window));
    }
}

static void
mp_application_dispose (GObject *object)
{
  MpApplication *self = MP_APPLICATION (object);

  g_clear_object (&self->settings);
  G_OBJECT_CLASS (mp_application_parent_class)->dispose (object);
}

static void
mp_application_class_init (MpApplicationClass *klass)
{
  GObjectClass *object_class = G_OBJECT_CLASS (klass);
  GApplicationClass *app_class = G_APPLICATION_CLASS (klass);

  object_class->dispose = mp_application_dispose;
  app_class->startup = mp_application_startup;
  app_class->activate = mp_application_activate;
  app_class->open = mp_application_open;
}

static void
mp_application_init (MpApplication *self)
{
}

MpApplication *
mp_application_new (void)
{
  return g_object_new (MP_TYPE_APPLICATION,
                       "application-id", MP_APP_ID,
                       "flags", G_APPLICATION_HANDLES_OPEN,
                       "resource-base-path", "/org/mteplan/Planner",
                       NULL);
}

GSettings *
mp_application_get_settings (MpApplication *self)
{
  g_return_val_if_fail (MP_IS_APPLICATION (self), NULL);
  return self->settings;
}

void
mp_application_add_recent (MpApplication *self, const char *path)
{
  g_autofree char *uri = NULL;
  g_auto (GStrv) old = NULL;
  g_autoptr (GStrvBuilder) builder = NULL;
  g_auto (GStrv) recent = NULL;
  guint n = 1;

  g_return_if_fail (MP_IS_APPLICATION (self));
  g_return_if_fail (path != NULL);

  uri = g_filename_to_uri (path, NULL, NULL);
  if (uri != NULL)
    gtk_recent_manager_add_item (gtk_recent_manager_get_default (), uri);
  if (self->settings == NULL)
    return;

  old = g_settings_get_strv (self->settings, "recent-files");
  builder = g_strv_builder_new ();
  g_strv_builder_add (builder, path);
  for (guint i = 0; old[i] != NULL && n < MAX_RECENT; i++)
    if (g_strcmp0 (old[i], path) != 0)
      {
        g_strv_builder_add (builder, old[i]);
        n++;
      }
  recent = g_strv_builder_end (builder);
  g_settings_set_strv (self->settings, "recent-files", (const char *const *) recent);
}

char **
mp_application_dup_recent (MpApplication *self)
{
  g_return_val_if_fail (MP_IS_APPLICATION (self), NULL);
  if (self->settings == NULL)
    return g_new0 (char *, 1);
  return g_settings_get_strv (self->settings, "recent-files");
}
