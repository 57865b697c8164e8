/* SPDX-License-Identifier: MIT */
/*
 * cli.h - what the sub-commands share: printing diagnostics, finding the
 * shipped data files, exit statuses.
 */
#ifndef SX_CLI_H
#define SX_CLI_H

#include <stdio.h>

#include "core/diag.h"

/* Exit statuses of every sub-command (documented in syrinx(1)). */
enum {
	SX_EXIT_OK = 0,
	SX_EXIT_INPUT = 1,     /* some input could not be read or screened */
	SX_EXIT_USAGE = 2,     /* the command line is wrong */
	SX_EXIT_FAIL_ON = 3,   /* --fail-on: a disposition at or above the level was seen */
	SX_EXIT_SOFTWARE = 4,  /* out of memory or an internal error */
};

/* Print one diagnostic as file:line[:col]: severity: [specimen ID: ]message. */
void sx_cli_print_diag(FILE *out, const sx_diag *d);
void sx_cli_print_diags(FILE *out, const sx_diag_list *list);

/* Find a shipped data file (relative path as in the source tree, such as
 * "docs/schema/feed.xsd"): $SYRINX_DATADIR, then beside the executable (build
 * tree), then the installed data directory. Returns a malloc'd path or NULL. */
char *sx_cli_find_data(const char *relative);

/* Print a diagnostic and, when it points into a readable file with a line, that
 * line and a caret under the column (rule files). */
void sx_cli_print_diag_source(FILE *out, const sx_diag *d);

struct sx_screener;
/* Load the screener of ruleset folder dir (NULL: the shipped default, found as
 * sx_cli_find_data says). Every error and warning is printed with its source
 * line; a ruleset with an error is refused. Returns an exit status (0: ok). */
int sx_cli_load_screener(const char *command, const char *dir, struct sx_screener **out);

int sx_cmd_check(int argc, char **argv);
int sx_cmd_audit(int argc, char **argv);
int sx_cmd_rules(int argc, char **argv);
int sx_cmd_explain(int argc, char **argv);
int sx_cmd_serve(int argc, char **argv);

#endif
