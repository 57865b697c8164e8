/* SPDX-License-Identifier: MIT */
/*
 * load.h - loading a ruleset from memory: one file's bytes under a name,
 * for the fuzz harness and the unit tests. `include` and `base` are refused
 * (there is no folder to read them from). Otherwise exactly as
 * sx_ruleset_load(): all-or-nothing, every diagnostic in diags.
 */
#ifndef SX_RULES_LOAD_H
#define SX_RULES_LOAD_H

#include <stddef.h>

#include "rules/ruleset.h"

sx_status sx_rules_load_buffer(const char *name, const char *bytes, size_t len,
			       sx_ruleset **out, sx_diag_list *diags);

#endif
