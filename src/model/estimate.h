/* SPDX-License-Identifier: MIT */
/*
 * estimate.h - the bias with its interval, from the simulation.
 *
 * Every uncertain quantity (the parameters with published ranges, the times
 * within their precision, haemoglobin when not given, the pO2 at collection
 * when there is no reading, the ruleset's empirical terms) gets a
 * distribution. A midpoint Latin hypercube of n draws (estimate.samples)
 * covers them; for each draw the model is inverted (with a reading) or run
 * forwards (from the prior). The estimate is the median, the interval the 5th
 * to 95th percentile. The mechanisms' shares come from one run at the nominal
 * values. No randomness is left: the same input gives the same numbers.
 */
#ifndef SX_ESTIMATE_H
#define SX_ESTIMATE_H

#include <stdbool.h>

#include "core/record.h"
#include "model/settings.h"
#include "model/simulate.h"
#include "model/timeline.h"
#include "model/verdict.h"

#define SX_MAX_EMPIRICAL 8

typedef struct sx_estimate_input {
	const sx_specimen *specimen;
	const sx_settings *settings;
	const sx_timeline *timeline;
	bool on[SX_MECH_COUNT];
	double barometric_mmhg;
	/* empirical bias terms from the ruleset (local knowledge) */
	size_t term_count;
	sx_range terms[SX_MAX_EMPIRICAL];
	const char *term_labels[SX_MAX_EMPIRICAL];
} sx_estimate_input;

typedef struct sx_estimate_result {
	sx_estimate bias;                  /* mmHg */
	bool has_before;
	sx_estimate before;                /* pO2 at collection, with a reading */
	double prior_po2;                  /* the expected pO2 without a reading */
	double share[SX_MECH_COUNT];       /* at the nominal values, mmHg */
	double term_share[SX_MAX_EMPIRICAL];
	size_t samples;
	double po2_ceiling;                /* the highest pO2 physiology allows at collection */
	size_t excluded;                   /* draws that needed more than the ceiling */
	bool implausible;                  /* most draws did: the reading is hard to explain */
} sx_estimate_result;

/* Run the estimate; trace (may be NULL) receives the nominal run's timeline. */
sx_status sx_estimate_run(const sx_estimate_input *in, sx_estimate_result *out,
			  sx_sim_trace *trace);

#endif
