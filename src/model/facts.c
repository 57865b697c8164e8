/* SPDX-License-Identifier: MIT */
/*
 * facts.c - names, units and meanings of the derived facts rules can test.
 */
#include "model/facts.h"

#include <string.h>

static const sx_fact_info facts[SX_FACT_COUNT] = {
	[SX_FACT_DELAY_MIN] = {"delay", SX_Q_DURATION, "collection to analysis"},
	[SX_FACT_TRANSPORT_MIN] = {"transport_time", SX_Q_DURATION, "collection to receipt"},
	[SX_FACT_WAIT_MIN] = {"wait_time", SX_Q_DURATION, "receipt to analysis"},
	[SX_FACT_BAROMETRIC_MMHG] = {"barometric_pressure", SX_Q_PRESSURE,
				     "barometric pressure used by the model"},
	[SX_FACT_ALVEOLAR_PO2_MMHG] = {"alveolar_po2", SX_Q_PRESSURE,
				       "alveolar pO2 from FiO2, pressure and pCO2"},
	[SX_FACT_ALVEOLAR_EXCESS_MMHG] = {"alveolar_excess", SX_Q_PRESSURE,
					  "pO2 reading minus alveolar pO2"},
	[SX_FACT_SAT_FROM_PO2] = {"saturation_from_po2", SX_Q_PERCENT,
				  "saturation the curve gives for the pO2 reading"},
	[SX_FACT_SPO2_GAP] = {"spo2_gap", SX_Q_PERCENT,
			      "SpO2 minus the saturation from the pO2 reading"},
	[SX_FACT_BUBBLE_FRACTION] = {"bubble_fraction", SX_Q_PERCENT,
				     "bubble volume as a share of the blood volume"},
	[SX_FACT_HEPARIN_FRACTION] = {"heparin_fraction", SX_Q_PERCENT,
				      "liquid heparin as a share of the specimen"},
	[SX_FACT_AGENT_HALOTHANE] = {"halothane", SX_Q_PERCENT,
				     "halothane in the breathing gas"},
	[SX_FACT_BIAS_MMHG] = {"bias", SX_Q_PRESSURE, "estimated pO2 bias"},
	[SX_FACT_BIAS_LOW_MMHG] = {"bias_low", SX_Q_PRESSURE, "5th percentile of the bias"},
	[SX_FACT_BIAS_HIGH_MMHG] = {"bias_high", SX_Q_PRESSURE, "95th percentile of the bias"},
	[SX_FACT_BIAS_ABS_MMHG] = {"bias_abs", SX_Q_PRESSURE, "size of the estimated bias"},
	[SX_FACT_BIAS_PERCENT] = {"bias_percent", SX_Q_PERCENT,
				  "size of the bias as a share of the reading"},
};

const sx_fact_info *sx_fact_get(sx_fact fact)
{
	return (unsigned)fact < SX_FACT_COUNT ? &facts[fact] : NULL;
}

int sx_fact_lookup(const char *name, size_t len)
{
	for (int f = 0; f < SX_FACT_COUNT; f++)
		if (strlen(facts[f].name) == len && memcmp(facts[f].name, name, len) == 0)
			return f;
	return -1;
}
