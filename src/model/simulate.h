/* SPDX-License-Identifier: MIT */
/*
 * simulate.h - the specimen's oxygen from collection to analysis, forward.
 *
 * One run takes the pO2 at collection and one draw of every uncertain
 * parameter, and follows the specimen: liquid heparin mixes in at sampling;
 * through each phase of the timeline the cells consume O2, a bubble and the
 * blood exchange O2, the plastic wall gives or takes O2, all while the syringe
 * cools; at analysis the sample is read at 37 C and volatile agents add to the
 * electrode's reading. pO2 is always derived from the O2 content through the
 * curve. Each mechanism's part of the bias is kept (in mmHg), and a trace for
 * `syrinx explain` on request.
 */
#ifndef SX_SIMULATE_H
#define SX_SIMULATE_H

#include <stdbool.h>

#include "core/limits.h"
#include "model/air_exchange.h"
#include "model/electrode.h"
#include "model/heparin.h"
#include "model/mechanism.h"
#include "model/metabolism.h"
#include "model/oxygen.h"
#include "model/syringe_wall.h"
#include "model/timeline.h"

/* What does not change from draw to draw. */
typedef struct sx_sim_input {
	const sx_timeline *timeline;
	sx_blood_state blood;          /* at 37 C as measured: pH, pCO2 (Hb comes per draw) */
	double wbc, platelets;         /* < 0: not given */
	bool on[SX_MECH_COUNT];        /* the mechanisms the ruleset switched on */
	bool exchange;                 /* a mechanism whose effect depends on the pO2 is on */
	double barometric_mmhg;
	double room_temp_c;
	double room_air_po2;           /* where the syringe waited before use */
	sx_wall_material wall;
	bool froth;
	sx_agent_dose doses[SX_MAX_AGENTS];
	size_t dose_count;
	double slope_hint;             /* d reading / d po2_0 seen last (0: unknown) and */
	double offset_hint;            /* the last answer minus its closed form without
					* exchange: updated by sx_simulate_invert, so the draws
					* of one specimen start their secant close by */
} sx_sim_input;

/* The inverse is solved to this many mmHg: far below the 0.1 mmHg reported. */
#define SX_INVERT_TOLERANCE 0.01
/* ... and a correction predicted from a known slope is trusted below this many mmHg. */
#define SX_INVERT_TRUST 0.5

/* One draw of the uncertain parameters. */
typedef struct sx_draw {
	sx_metabolism_params metabolism;
	sx_air_params air;
	sx_syringe_wall_params wall;
	sx_heparin_params heparin;
	sx_electrode_params electrode;
	double cooling_room_min;
	double cooling_ice_min;
	double hb;                     /* g/dL, as measured in the syringe */
	double total_min;              /* collection to analysis, within its precision */
	double bubble_ul;              /* air in the syringe */
	double blood_ml;               /* blood drawn */
	double heparin_fraction;       /* share of liquid heparin in the mixture */
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
	double po2_collection;         /* in the patient */
	double po2_after_mixing;       /* after liquid heparin mixed in, at 37 C */
	double po2_true_reading;       /* the sample at analysis, at 37 C */
	double po2_reading;            /* what the electrode reads */
} sx_sim_trace;

typedef struct sx_sim_result {
	double reading;                /* pO2 the analyser reads, mmHg */
	double dcontent[SX_MECH_COUNT];/* mL O2/dL moved by each mechanism over the whole run */
	double dpo2[SX_MECH_COUNT];    /* each mechanism's part of reading - po2_0, mmHg */
} sx_sim_result;

/* Run forward from po2_0 (mmHg at collection). trace may be NULL. */
sx_status sx_simulate(const sx_sim_input *in, const sx_draw *d, double po2_0,
		      sx_sim_result *out, sx_sim_trace *trace);

/* The pO2 at collection that gives reading: the inverse of sx_simulate (which rises
 * with po2_0). In closed form when no pO2-dependent mechanism is on; otherwise by a
 * bracketed secant (Illinois) from the closed-form guess, to SX_INVERT_TOLERANCE. */
sx_status sx_simulate_invert(sx_sim_input *in, const sx_draw *d, double reading,
			     double *po2_0, sx_sim_result *out);

/* The blood state at temperature temp_c, from its state at 37 C: pH rises 0.0147 per C
 * of cooling (Rosenthal) and log10 pCO2 falls 0.019 per C (values from memory). */
sx_blood_state sx_blood_at(const sx_blood_state *at37, double temp_c);

#endif
