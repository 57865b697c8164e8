/* SPDX-License-Identifier: MIT */
/*
 * electrode.h - interference of volatile anaesthetic agents with the
 * polarographic O2 electrode.
 *
 * Halothane is reduced at the cathode and reads as extra pO2 (McHugh et al.,
 * Anesthesiology 1979;50:47 [R]: direction; size low confidence [M]). The
 * reading is modelled as
 *
 *   reading = true (1 + sum_i s_i x_i) + sum_i a_i x_i
 *
 * with x_i the agent's percent in the breathing gas (vol %), s_i the
 * fraction of the reading per vol % and a_i an additive mmHg per vol % (0 by
 * default: the reduction current of an agent does not depend on the O2
 * present, so an analyser's figure may come in that form). Both depend on
 * the analyser: ruleset parameters. Section Electrode interference of
 * docs/model-mechanisms.md.
 */
#ifndef SX_ELECTRODE_H
#define SX_ELECTRODE_H

#include <stddef.h>

typedef enum sx_agent_kind {
	SX_AGENT_HALOTHANE = 0,
	SX_AGENT_ENFLURANE,
	SX_AGENT_ISOFLURANE,
	SX_AGENT_SEVOFLURANE,
	SX_AGENT_DESFLURANE,
	SX_AGENT_NITROUS_OXIDE,
	SX_AGENT_COUNT
} sx_agent_kind;

/*
 * Defaults and ranges:
 *   halothane   s 0.03 [0, 0.10] per vol %: direction McHugh et al. 1979 [R],
 *               size "a few up to about 10 % of the reading" [M, low
 *               confidence]
 *   enflurane   s 0 [0, 0.005]: 2 % had no effect (McHugh et al. 1979 [R])
 *   isoflurane, sevoflurane, desflurane  s 0 [0, 0.005]: none known [M]
 *   nitrous oxide  s 0 [0, 0.005]: negligible at the usual polarising
 *               voltage [M]
 *   a (every agent)  0 [0, 0] mmHg per vol %: no source gives one; an
 *               analyser's own figure may be set here
 */
typedef struct sx_electrode_params {
	double sensitivity[SX_AGENT_COUNT]; /* fraction of the reading per vol % */
	double additive[SX_AGENT_COUNT];    /* mmHg per vol % */
} sx_electrode_params;

sx_electrode_params sx_electrode_defaults(void);
void sx_electrode_bounds(sx_electrode_params *low, sx_electrode_params *high);

/* An agent in the breathing gas. */
typedef struct sx_agent_dose {
	sx_agent_kind agent;
	double percent; /* vol %, >= 0 */
} sx_agent_dose;

/* The agent for a name, case-insensitive: "halothane", "enflurane",
 * "isoflurane", "sevoflurane", "desflurane", "nitrous oxide" (also
 * "nitrous-oxide", "nitrous_oxide", "n2o"). -1 when not known. */
int sx_electrode_agent_lookup(const char *name, size_t len);
/* The canonical name; NULL out of range. */
const char *sx_electrode_agent_name(sx_agent_kind agent);

/* The reading for a true pO2. NaN for bad input (NULL, true_po2 < 0, a
 * negative percent, an unknown agent). */
double sx_electrode_reading(const sx_electrode_params *p, double true_po2,
                            const sx_agent_dose *doses, size_t count);

/* The inverse: the true pO2 behind a reading, (reading - sum a x) / (1 +
 * sum s x); may be negative when the additive part exceeds the reading
 * (then the reading cannot be explained). NaN for bad input. */
double sx_electrode_true_po2(const sx_electrode_params *p, double reading,
                             const sx_agent_dose *doses, size_t count);

#endif
