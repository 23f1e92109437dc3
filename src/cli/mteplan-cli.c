/* SPDX-License-Identifier: GPL-3.0-or-later */
/* mteplan-cli: the command-line front end over the mteplan core. */
#include "config.h"

#include "mp-cli.h"
#include "mp-physics.h"

#include <glib/gi18n.h>
#include <locale.h>
#include <stdio.h>
#include <string.h>

typedef struct
{
  const char *name;
  const char *summary;
  int (*run) (int argc, char **argv);
} MpCliCommand;

static const MpCliCommand commands[] = {
  { "model", N_("Predict yield, QE shape and MTE at one photon energy"), mp_cli_model },
  { "plan", N_("Schedule a plan within its beam time and cryogen"), mp_cli_plan },
  { "fit", N_("Fit the work function to measured QE and MTE points"), mp_cli_fit },
  { "rehearse", N_("Simulate a planned shift: counting noise and budget risk"), mp_cli_rehearse },
  { "bench", N_("Measure how fast the model and planner run"), mp_cli_bench },
};

static const MpCliCommand *
find_command (const char *name)
{
  for (gsize i = 0; i < G_N_ELEMENTS (commands); i++)
    if (g_strcmp0 (commands[i].name, name) == 0)
      return &commands[i];
  return NULL;
}

static void
print_usage (FILE *out)
{
  fprintf (out, _("Usage: mteplan-cli COMMAND [OPTION…]\n\n"
                  "Plan photocathode MTE and QE measurements within beam time and cryogen.\n\n"
                  "Commands:\n"));
  for (gsize i = 0; i < G_N_ELEMENTS (commands); i++)
    fprintf (out, "  %-10s %s\n", commands[i].name, _(commands[i].summary));
  fprintf (out, "  %-10s %s\n", "help", _("Show help for a command"));
  fprintf (out, _("\nOptions:\n"
                  "  --help     Show this help\n"
                  "  --version  Show the version\n\n"
                  "Run “mteplan-cli help COMMAND” for a command’s options.\n"
                  "The user guide is installed as help:mteplan (open it with yelp).\n"));
}

static int
run_help (int argc, char **argv)
{
  const MpCliCommand *cmd;
  char *help_argv[3];
  g_autofree char *prog = NULL;

  if (argc < 3)
    {
      print_usage (stdout);
      return MP_EXIT_OK;
    }
  cmd = find_command (argv[2]);
  if (cmd == NULL)
    return mp_cli_fail (_("help: unknown command “%s”; run “mteplan-cli --help” for the list"),
                        argv[2]);
  prog = g_strdup_printf ("mteplan-cli %s", cmd->name);
  help_argv[0] = prog;
  help_argv[1] = (char *) "--help";
  help_argv[2] = NULL;
  return cmd->run (2, help_argv);
}

/* MTEPLAN_LOCALEDIR points an uninstalled build at its own catalogues
 * (BUILDDIR/po); the docs tests use it. */
static const char *
locale_dir (void)
{
  const char *dir = g_getenv ("MTEPLAN_LOCALEDIR");

  return dir != NULL && *dir != '\0' ? dir : LOCALEDIR;
}

int
main (int argc, char **argv)
{
  const MpCliCommand *cmd;
  g_autofree char *prog = NULL;

  setlocale (LC_ALL, "");
  bindtextdomain (GETTEXT_PACKAGE, locale_dir ());
  bind_textdomain_codeset (GETTEXT_PACKAGE, "UTF-8");
  textdomain (GETTEXT_PACKAGE);
  mp_core_init ();

  if (argc < 2)
    {
      print_usage (stderr);
      return MP_EXIT_BAD_INPUT;
    }
  if (strcmp (argv[1], "--help") == 0 || strcmp (argv[1], "-h") == 0)
    {
      print_usage (stdout);
      return MP_EXIT_OK;
    }
  if (strcmp (argv[1], "--version") == 0)
    {
      printf ("mteplan-cli %s\n", PACKAGE_VERSION);
      return MP_EXIT_OK;
    }
  if (strcmp (argv[1], "help") == 0)
    return run_help (argc, argv);

  cmd = find_command (argv[1]);
  if (cmd == NULL)
    return mp_cli_fail (_("unknown command “%s”; run “mteplan-cli --help” for the list"),
                        argv[1]);
  /* The subcommand sees "mteplan-cli NAME" as its program name. */
  prog = g_strdup_printf ("mteplan-cli %s", cmd->name);
  argv[1] = prog;
  return cmd->run (argc - 1, argv + 1);
}
