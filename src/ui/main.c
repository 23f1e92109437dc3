/* SPDX-License-Identifier: GPL-3.0-or-later */
/* main.c: the mteplan window. */
#include "config.h"

#include <locale.h>
#include <glib/gi18n.h>

#include "mp-application.h"

/* MTEPLAN_LOCALEDIR points an uninstalled build at its own catalogues
 * (BUILDDIR/po), as for mteplan-cli. */
static const char *
locale_dir (void)
{
  const char *dir = g_getenv ("MTEPLAN_LOCALEDIR");

  return dir != NULL && *dir != '\0' ? dir : LOCALEDIR;
}

int
main (int argc, char *argv[])
{
  g_autoptr (MpApplication) app = NULL;

  setlocale (LC_ALL, "");
  bindtextdomain (GETTEXT_PACKAGE, locale_dir ());
  bind_textdomain_codeset (GETTEXT_PACKAGE, "UTF-8");
  textdomain (GETTEXT_PACKAGE);

  app = mp_application_new ();
  return g_application_run (G_APPLICATION (app), argc, argv);
}
