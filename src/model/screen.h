/* SPDX-License-Identifier: MIT */
/*
 * screen.h - screening one specimen: from the record to a verdict.
 *
 * Builds the specimen's timeline from its times and storage, runs every
 * mechanism that is built (metabolism for now) and the consistency checks,
 * estimates the bias of the pO2 reading with its interval, and applies the
 * disposition policy of the settings. Input problems that do not stop the
 * verdict become warnings in the verdict.
 */
#ifndef SX_SCREEN_H
#define SX_SCREEN_H

#include "core/record.h"
#include "model/settings.h"
#include "model/simulate.h"
#include "model/timeline.h"
#include "model/verdict.h"

struct sx_ruleset;

/*
 * Screen one specimen with a ruleset (which decides the mechanisms, the
 * reasons and the disposition) or, with rs NULL, the model alone: every
 * mechanism the record gives grounds for is on, and no policy is applied (no
 * reasons; the disposition stays accept). The specimen is completed in place
 * by the ruleset's classification of free text.
 */
sx_status sx_screen_specimen(sx_specimen *specimen, const sx_settings *settings,
			     const struct sx_ruleset *rs, sx_verdict *verdict);

/*
 * A screener holds what screening needs besides the specimen: the settings
 * and, once loaded, the ruleset. It is immutable after creation and may be
 * shared by threads. This is the interface callers outside src/model use.
 *
 * Ownership: sx_screener_free() frees it (NULL is fine); the settings are
 * copied.
 */
typedef struct sx_screener sx_screener;

/* A screener with the model alone (no ruleset): see sx_screen_specimen. */
sx_status sx_screener_new(const sx_settings *settings, sx_screener **out);
/* A screener with the ruleset of folder dir; its errors go to diags and no
 * screener is made (SX_ESYNTAX, SX_EIO). */
sx_status sx_screener_load(const char *dir, sx_screener **out, sx_diag_list *diags);
/* For the HL7 reader's site codes (context: the screener): the field a local
 * observation code maps to, or -1. */
int sx_screener_map_code(void *screener, const char *system, const char *code);
void sx_screener_free(sx_screener *screener);
const sx_settings *sx_screener_settings(const sx_screener *screener);
/* A short text naming the policy in force (the ruleset's version line),
 * for logs and reports. */
const char *sx_screener_version(const sx_screener *screener);
/* Screen one specimen; the specimen may be completed in place (free text
 * classified into fields). */
sx_status sx_screener_run(const sx_screener *screener, sx_specimen *specimen,
			  sx_verdict *verdict);

/* What `syrinx explain` shows: the verdict, the timeline, and the nominal run's
 * trace (each phase, its temperature, what each mechanism did). */
typedef struct sx_explanation {
	sx_verdict verdict;
	sx_timeline timeline;
	bool has_trace;
	sx_sim_trace trace;
	bool on[SX_MECH_COUNT];
} sx_explanation;

sx_status sx_screener_explain(const sx_screener *screener, sx_specimen *specimen,
			      sx_explanation *out);

#endif
