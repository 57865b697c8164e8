/* SPDX-License-Identifier: MIT */
/*
 * electrode.c - volatile agents read as extra pO2 at the O2 electrode.
 *
 *   reading = true (1 + sum s_i x_i) + sum a_i x_i
 *
 * Halothane is reduced at the polarographic cathode at every polarising
 * voltage tried and membranes do not stop it; 2 % enflurane had no effect
 * (McHugh et al., Anesthesiology 1979;50:47). The size per % depends on the
 * analyser and is a ruleset parameter.
 */
#include "model/electrode.h"

#include <math.h>
#include <string.h>
#include <strings.h>

static const char *const agent_names[SX_AGENT_COUNT] = {
        "halothane", "enflurane", "isoflurane", "sevoflurane", "desflurane", "nitrous oxide",
};

sx_electrode_params sx_electrode_defaults(void)
{
	sx_electrode_params p;

	for (int i = 0; i < SX_AGENT_COUNT; i++) {
		p.sensitivity[i] = 0.0;
		p.additive[i] = 0.0;
	}
	p.sensitivity[SX_AGENT_HALOTHANE] = 0.03;
	return p;
}

void sx_electrode_bounds(sx_electrode_params *low, sx_electrode_params *high)
{
	for (int i = 0; i < SX_AGENT_COUNT; i++) {
		if (low) {
			low->sensitivity[i] = 0.0;
			low->additive[i] = 0.0;
		}
		if (high) {
			high->sensitivity[i] = i == SX_AGENT_HALOTHANE ? 0.10 : 0.005;
			high->additive[i] = 0.0;
		}
	}
}

int sx_electrode_agent_lookup(const char *name, size_t len)
{
	static const struct {
		const char *name;
		sx_agent_kind agent;
	} aliases[] = {
	        {"nitrous-oxide", SX_AGENT_NITROUS_OXIDE},
	        {"nitrous_oxide", SX_AGENT_NITROUS_OXIDE},
	        {"n2o", SX_AGENT_NITROUS_OXIDE},
	};

	if (!name)
		return -1;
	for (int i = 0; i < SX_AGENT_COUNT; i++)
		if (strlen(agent_names[i]) == len && strncasecmp(agent_names[i], name, len) == 0)
			return i;
	for (size_t i = 0; i < sizeof aliases / sizeof aliases[0]; i++)
		if (strlen(aliases[i].name) == len && strncasecmp(aliases[i].name, name, len) == 0)
			return (int)aliases[i].agent;
	return -1;
}

const char *sx_electrode_agent_name(sx_agent_kind agent)
{
	if ((int)agent < 0 || agent >= SX_AGENT_COUNT)
		return NULL;
	return agent_names[agent];
}

/* sum s x and sum a x; 0 when the doses are bad. */
static int sums(const sx_electrode_params *p, const sx_agent_dose *doses, size_t count,
                double *gain, double *offset)
{
	*gain = 0.0;
	*offset = 0.0;
	if (!p || (count > 0 && !doses))
		return 0;
	for (size_t i = 0; i < count; i++) {
		int a = (int)doses[i].agent;

		if (a < 0 || a >= SX_AGENT_COUNT || !isfinite(doses[i].percent) ||
		    doses[i].percent < 0.0)
			return 0;
		*gain += p->sensitivity[a] * doses[i].percent;
		*offset += p->additive[a] * doses[i].percent;
	}
	return isfinite(*gain) && isfinite(*offset) && *gain > -1.0;
}

double sx_electrode_reading(const sx_electrode_params *p, double true_po2,
                            const sx_agent_dose *doses, size_t count)
{
	double gain, offset;

	if (!isfinite(true_po2) || true_po2 < 0.0 || !sums(p, doses, count, &gain, &offset))
		return NAN;
	return true_po2 * (1.0 + gain) + offset;
}

double sx_electrode_true_po2(const sx_electrode_params *p, double reading,
                             const sx_agent_dose *doses, size_t count)
{
	double gain, offset;

	if (!isfinite(reading) || reading < 0.0 || !sums(p, doses, count, &gain, &offset))
		return NAN;
	return (reading - offset) / (1.0 + gain);
}
