/* SPDX-License-Identifier: MIT */
/*
 * mechanism.h - the mechanisms the ruleset can switch on, by name.
 *
 * A mechanism acts on the specimen's oxygen (metabolism, air exchange, ...);
 * a check compares a reading with physiology and yields facts the rules can
 * test (alveolar gas, oximetry). The ruleset switches each on for a specimen
 * with `apply NAME`; the model runs only what is on.
 */
#ifndef SX_MECHANISM_H
#define SX_MECHANISM_H

#include <stddef.h>

typedef enum sx_mechanism {
	SX_MECH_METABOLISM = 0,
	SX_MECH_AIR_EXCHANGE,
	SX_MECH_SYRINGE_WALL,
	SX_MECH_HEPARIN_DILUTION,
	SX_MECH_ELECTRODE,
	SX_MECH_COUNT
} sx_mechanism;

/* "metabolism", "air-exchange", "syringe-wall", "heparin-dilution",
 * "electrode-interference". */
const char *sx_mechanism_name(sx_mechanism m);
/* The mechanism of that name, or -1. */
int sx_mechanism_lookup(const char *name, size_t len);
/* Whether this build models it (a mechanism not built yet can be named in a
 * ruleset, which the linter warns about, but never appears in a verdict). */
int sx_mechanism_built(sx_mechanism m);

#endif
