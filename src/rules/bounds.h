/* SPDX-License-Identifier: MIT */
/*
 * bounds.h - every bound of the rule language in one place, in the manner of
 * core/limits.h. Past a bound the loader reports an error that names the
 * bound (with file:line:column where there is one) and loads nothing.
 */
#ifndef SX_RULES_BOUNDS_H
#define SX_RULES_BOUNDS_H

#define SX_RULES_MAX_FILE_BYTES (1u << 20) /* one rule file */
#define SX_RULES_MAX_FILES 64              /* files of a ruleset, includes and bases too */
#define SX_RULES_MAX_INCLUDE_DEPTH 8       /* include inside include ... */
#define SX_RULES_MAX_BASE_DEPTH 4          /* a base of a base ... */
#define SX_RULES_MAX_PATH 1024             /* bytes in a file name */
#define SX_RULES_MAX_RULES 1000            /* rules of a ruleset */
#define SX_RULES_MAX_ACTIONS 32            /* actions of one rule */
#define SX_RULES_MAX_OVERRIDES 16          /* parameters of one apply */
#define SX_RULES_MAX_LIMITS 256            /* named limits */
#define SX_RULES_MAX_REASONS 256           /* reason codes */
#define SX_RULES_MAX_PATTERNS 1000         /* classify patterns, all blocks */
#define SX_RULES_MAX_SOURCES 4             /* text fields one classify block reads */
#define SX_RULES_MAX_CODES 1000            /* HL7 code mappings */
#define SX_RULES_MAX_AGENT_NAMES 64        /* canonical agent names */
#define SX_RULES_MAX_NAME 64               /* bytes in a name, code or label */
#define SX_RULES_MAX_STRING 1024           /* bytes in a string (message template) */
#define SX_RULES_MAX_REGEX 1024            /* bytes in one regular expression */
#define SX_RULES_MAX_SET 32                /* members of one { } set */
#define SX_RULES_MAX_NESTING 32            /* brackets and not inside a condition */
#define SX_RULES_MAX_NODES 256             /* tests and operators in one condition */
#define SX_RULES_MAX_ERRORS 100            /* errors from one file before it is given up */
#define SX_RULES_MAX_ALTERNATIVES 64       /* reachability check: and/or expansion */
#define SX_RULES_MATCH_LIMIT 100000        /* PCRE2 match limit (backtracking steps) */
#define SX_RULES_DEPTH_LIMIT 1000          /* PCRE2 backtracking depth */
#define SX_RULES_HEAP_LIMIT 1024           /* PCRE2 heap for one match, KiB */

#endif
