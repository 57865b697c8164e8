/* SPDX-License-Identifier: MIT */
/*
 * facts.h - quantities derived from a specimen that rules can test beside the
 * data-dictionary fields: delays from the times, alveolar pO2 from FiO2, and,
 * after the model has run, the bias estimate.
 *
 * Facts of the SX_FACTS_AFTER_MODEL group exist only after the model; a rule
 * that tests one is evaluated in the second pass (see rules/ruleset.h).
 */
#ifndef SX_FACTS_H
#define SX_FACTS_H

#include <stdbool.h>
#include <stddef.h>

#include "core/units.h"

typedef enum sx_fact {
	/* before the model: from the record */
	SX_FACT_DELAY_MIN = 0,     /* collected_at to analysed_at, min */
	SX_FACT_TRANSPORT_MIN,     /* collected_at to received_at, min */
	SX_FACT_WAIT_MIN,          /* received_at to analysed_at, min */
	SX_FACT_BAROMETRIC_MMHG,   /* the pressure used: record, altitude or site */
	SX_FACT_ALVEOLAR_PO2_MMHG, /* alveolar gas equation with FiO2 and pCO2 */
	SX_FACT_ALVEOLAR_EXCESS_MMHG, /* po2 - alveolar pO2 (positive: impossible) */
	SX_FACT_SAT_FROM_PO2,      /* % saturation the curve gives for the reading */
	SX_FACT_SPO2_GAP,          /* spo2 - saturation from pO2, % points */
	SX_FACT_BUBBLE_FRACTION,   /* bubble volume / fill volume, % */
	SX_FACT_HEPARIN_FRACTION,  /* heparin volume / (fill + heparin), % */
	SX_FACT_AGENT_HALOTHANE,   /* % halothane in the breathing gas */
	/* after the model */
	SX_FACT_BIAS_MMHG,         /* estimate, reading minus pO2 at collection */
	SX_FACT_BIAS_LOW_MMHG,
	SX_FACT_BIAS_HIGH_MMHG,
	SX_FACT_BIAS_ABS_MMHG,     /* |estimate| */
	SX_FACT_BIAS_PERCENT,      /* |estimate| / reading x 100 */
	SX_FACT_COUNT
} sx_fact;

#define SX_FACTS_AFTER_MODEL SX_FACT_BIAS_MMHG

typedef struct sx_fact_info {
	const char *name;          /* as rules write it: "delay", "bias_abs", ... */
	sx_quantity quantity;      /* for units in comparisons */
	const char *meaning;
} sx_fact_info;

typedef struct sx_facts {
	bool has[SX_FACT_COUNT];
	double value[SX_FACT_COUNT];
} sx_facts;

const sx_fact_info *sx_fact_get(sx_fact fact);
int sx_fact_lookup(const char *name, size_t len);

#endif
