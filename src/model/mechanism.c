/* SPDX-License-Identifier: MIT */
/*
 * mechanism.c - mechanism names and which of them this build models.
 */
#include <stddef.h>
#include <string.h>

#include "model/mechanism.h"

static const char *const names[SX_MECH_COUNT] = {
	[SX_MECH_METABOLISM] = "metabolism",
	[SX_MECH_AIR_EXCHANGE] = "air-exchange",
	[SX_MECH_SYRINGE_WALL] = "syringe-wall",
	[SX_MECH_HEPARIN_DILUTION] = "heparin-dilution",
	[SX_MECH_ELECTRODE] = "electrode-interference",
};

static const int built[SX_MECH_COUNT] = {
	[SX_MECH_METABOLISM] = 1,       [SX_MECH_AIR_EXCHANGE] = 1, [SX_MECH_SYRINGE_WALL] = 1,
	[SX_MECH_HEPARIN_DILUTION] = 1, [SX_MECH_ELECTRODE] = 1,
};

const char *sx_mechanism_name(sx_mechanism m)
{
	return (unsigned)m < SX_MECH_COUNT ? names[m] : "unknown";
}

int sx_mechanism_lookup(const char *name, size_t len)
{
	for (int m = 0; m < SX_MECH_COUNT; m++)
		if (strlen(names[m]) == len && memcmp(names[m], name, len) == 0)
			return m;
	return -1;
}

int sx_mechanism_built(sx_mechanism m)
{
	return (unsigned)m < SX_MECH_COUNT && built[m];
}
