/* SPDX-License-Identifier: MIT */
/*
 * simulate.h - the specimen's oxygen from collection to analysis, forward.
 *
 * One run takes the pO2 at collection and one draw of every uncertain
 * parameter, steps the state (blood O2 content, temperature) through the
 * timeline's phases with each mechanism that is on, and gives what the
 * analyser reads at 37 C. Each mechanism's effect is kept as the O2 content it
 * moved, so the bias can be shared out; a trace for `syrinx explain` is kept
 * on request.
 */
#ifndef SX_SIMULATE_H
#define SX_SIMULATE_H

#include <stdbool.h>

#include "model/mechanism.h"
#include "model/metabolism.h"
#include "model/oxygen.h"
#include "model/timeline.h"

/* What does not change from draw to draw. */
typedef struct sx_sim_input {
	const sx_timeline *timeline;
	sx_blood_state blood;          /* at 37 C, the measured (or assumed) pH and pCO2 */
	double wbc, platelets;         /* < 0: not given */
	bool on[SX_MECH_COUNT];        /* the mechanisms the ruleset switched on */
	bool exchange;                 /* a mechanism whose effect depends on the pO2 is on */
} sx_sim_input;

/* One draw of the uncertain parameters. */
typedef struct sx_draw {
	sx_metabolism_params metabolism;
	double cooling_room_min;
	double cooling_ice_min;
	double hb;                     /* g/dL */
	double total_min;              /* collection to analysis, within its precision */
} sx_draw;

typedef struct sx_phase_trace {
	char name[16];
	double minutes;
	double temp_start_c, temp_end_c;
	double po2_start, po2_end;     /* at 37 C, as the analyser would read */
	double dcontent[SX_MECH_COUNT];/* mL O2/dL moved by each mechanism; + adds O2 */
} sx_phase_trace;

typedef struct sx_sim_trace {
	size_t phase_count;
	sx_phase_trace phases[SX_MAX_PHASES];
	double po2_collection;
	double po2_reading;
} sx_sim_trace;

typedef struct sx_sim_result {
	double reading;                /* pO2 the analyser reads, mmHg */
	double dcontent[SX_MECH_COUNT];/* mL O2/dL moved by each mechanism over the whole run */
} sx_sim_result;

/* Run forward from po2_0 (mmHg at collection). trace may be NULL. */
sx_status sx_simulate(const sx_sim_input *in, const sx_draw *d, double po2_0,
		      sx_sim_result *out, sx_sim_trace *trace);

/* The pO2 at collection that gives reading: the inverse of sx_simulate (which rises
 * with po2_0), by a bracketed secant (Illinois) to 1e-4 mmHg. */
sx_status sx_simulate_invert(const sx_sim_input *in, const sx_draw *d, double reading,
			     double *po2_0, sx_sim_result *out);

#endif
