/* SPDX-License-Identifier: MIT */
/*
 * limits.h - every bound of libsyrinx in one place. Past a bound the library
 * returns SX_ELIMIT with a diagnostic that names the bound; it never grows
 * without limit and never truncates silently.
 */
#ifndef SX_LIMITS_H
#define SX_LIMITS_H

#define SX_MAX_TEXT 4096            /* bytes in one text field of a specimen */
#define SX_MAX_AGENTS 8             /* agents listed for one specimen */
#define SX_MAX_AGENT_NAME 64        /* bytes in one agent name */
#define SX_MAX_DIAGS 10000          /* diagnostics kept in one list; more are counted */
#define SX_MAX_DIAG_MESSAGE 512     /* bytes in one diagnostic message */
#define SX_MAX_XML_DEPTH 16         /* element nesting in the XML feed */
#define SX_MAX_INPUT_BYTES (1ULL << 32) /* one input file */
#define SX_MAX_REASONS 32           /* reasons in one verdict */
#define SX_MAX_MECHANISMS 16        /* mechanisms in one verdict */
#define SX_MAX_WARNINGS 32          /* warnings in one verdict */
#define SX_MAX_DELAY_MIN (24.0 * 60.0) /* the model's time range; longer is flagged */

#endif
