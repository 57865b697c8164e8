/* SPDX-License-Identifier: MIT */
/*
 * air_exchange.h - O2 exchange between an air bubble and the blood in a
 * closed syringe.
 *
 * Mass balance [D in MODEL-SOURCES]: the O2 in the blood (content x volume)
 * plus the O2 in the bubble (an ideal gas) is conserved; at equilibrium both
 * share one pO2. The approach to equilibrium is first order with a time
 * constant set by agitation (standing, hand carry, pneumatic tube with or
 * without a sealed carrier, mixing before analysis); froth is a large
 * interface and equilibrates faster. The equations, every parameter and its
 * source: docs/model-mechanisms.md, section Air exchange.
 *
 * Units: pO2 in mmHg, content in mL O2 per dL of blood, O2 in the bubble in
 * mL at STPD (0 C, 760 mmHg, dry), bubble volume in uL, blood volume in mL,
 * time in minutes, temperature in degrees Celsius. Nothing allocates.
 */
#ifndef SX_AIR_EXCHANGE_H
#define SX_AIR_EXCHANGE_H

#include "core/status.h"
#include "model/oxygen.h"

/* How the syringe is moved during a phase. */
typedef enum sx_agitation {
	SX_AGITATION_STANDING = 0, /* at rest: rack, bench, ice bath */
	SX_AGITATION_HAND,         /* hand carry, courier */
	SX_AGITATION_TUBE,         /* pneumatic tube, carrier not sealed */
	SX_AGITATION_TUBE_SEALED,  /* pneumatic tube, pressure-sealed carrier */
	SX_AGITATION_MIXING,       /* rolled or inverted before analysis */
	SX_AGITATION_COUNT
} sx_agitation;

/* What reception reported; the volume per class is a parameter. */
typedef enum sx_air_bubble_class {
	SX_AIR_BUBBLE_NONE = 0, /* none seen, or expelled */
	SX_AIR_BUBBLE_SMALL,
	SX_AIR_BUBBLE_LARGE,
	SX_AIR_BUBBLE_FROTH,
	SX_AIR_BUBBLE_CLASS_COUNT
} sx_air_bubble_class;

/*
 * Parameters. Defaults (sx_air_exchange_defaults) and ranges
 * (sx_air_exchange_bounds) with their sources; [R] read in the source, [M]
 * from memory, [D] derived here, [J] a judgement with no source (a ruleset
 * parameter to be set by the site).
 */
typedef struct sx_air_params {
	/* time constants of the approach to equilibrium, min */
	double tau_standing;      /* 60 [15, 480] [J]: no measured value for a resting
	                           * syringe was found (MODEL-SOURCES) */
	double tau_hand;          /* 15 [5, 60] [J] */
	double tau_tube_motion;   /* 15 [5, 60] [J]: tube ride without pressure swings,
	                           * i.e. in a sealed carrier; a sealed carrier removed
	                           * the tube effect (Collinson et al., J Clin Pathol
	                           * 2002;55:105 [R]), so like a hand carry */
	double tau_tube_pressure; /* 2 [1, 10] [J]: the pressure-driven part, in
	                           * parallel with motion when the carrier is not
	                           * sealed; vigorous mixing with trapped air (clinical
	                           * review [R]) */
	double tau_mixing;        /* 2 [1, 10] [J]: rolling before analysis (common
	                           * practice) */
	double tau_floor;         /* 0.97 [0.97, 4.7]: no agitation is faster than
	                           * forced bubbling, 95 % in 2.9 to 14 min [R]:
	                           * tau = t95 / ln 20 [D] */
	double froth_factor;      /* 10 [3, 30] [J]: froth divides tau by this (a large
	                           * interface), never below tau_floor */
	/* bubble volume per reported class, fraction of the blood volume */
	double small_fraction; /* 0.005 [0.001, 0.01]: 0.5-1 % of the sample changes
	                        * pO2 measurably (Am J Clin Pathol 1976;65:242 [R]) */
	double large_fraction; /* 0.03 [0.01, 0.10] [J] */
	double froth_fraction; /* 0.05 [0.02, 0.20] [J] */
} sx_air_params;

sx_air_params sx_air_exchange_defaults(void);
/* The lower and upper ends of every parameter's range. */
void sx_air_exchange_bounds(sx_air_params *low, sx_air_params *high);

/* The syringe: what does not change during a phase. */
typedef struct sx_air_system {
	double bubble_ul;  /* bubble volume at the specimen's temperature, uL, >= 0 */
	double blood_ml;   /* blood volume, mL, > 0 */
	double barometric; /* mmHg, > 0 (site: sx_barometric_from_altitude) */
} sx_air_system;

/* The state the timeline carries. */
typedef struct sx_air_state {
	double content;      /* blood O2 content, mL O2/dL */
	double bubble_o2_ml; /* O2 in the bubble, mL STPD */
} sx_air_state;

/* Bubble volume for a reported class, uL: fraction x blood volume. NONE
 * gives 0; an unknown class or blood_ml <= 0 gives NaN. */
double sx_air_exchange_bubble_volume(const sx_air_params *p, sx_air_bubble_class cls,
                                     double blood_ml);

/* Time constant for a phase, min: the agitation's tau (a tube without a
 * sealed carrier adds its pressure-driven rate to the motion's rate), divided
 * by froth_factor for froth, never below tau_floor. NaN for an unknown
 * agitation. */
double sx_air_exchange_tau(const sx_air_params *p, sx_agitation agitation, int froth);

/* O2 the bubble holds per mmHg of its pO2, mL STPD/mmHg, at constant volume:
 * V (1/760) (273.15 / (273.15 + T)), V in mL. */
double sx_air_exchange_bubble_capacity(double bubble_ul, double temp_c);

/* pO2 of air saturated with water vapour at the specimen's temperature:
 * 0.2095 (Pb - pH2O(T)). The trapped air takes up water from the blood, so
 * the room's humidity and temperature do not enter. */
double sx_air_exchange_start_po2(double barometric, double temp_c);

/* The state at collection: the blood's content and a bubble of air at
 * sx_air_exchange_start_po2. SX_EINVAL for a bad system or content < 0. */
sx_status sx_air_exchange_start(const sx_air_system *sys, double temp_c, double content,
                                sx_air_state *out);

/* pO2 in the bubble: bubble O2 / capacity at the blood's temperature. 0 for
 * an empty bubble. */
double sx_air_exchange_bubble_po2(const sx_air_system *sys, double temp_c,
                                  const sx_air_state *state);

/*
 * The pO2 at which blood and a linear O2 reservoir (anything that holds O2 in
 * proportion to pO2: a bubble at constant volume, a syringe wall, a liquid)
 * hold a given total between them, per dL of blood:
 *   hufner Hb S(P) + (alpha(T) + extra) P = total.
 * extra >= 0 is the reservoir's capacity per dL of blood (mL O2/dL/mmHg).
 * The left side is strictly increasing, so the root is unique; safeguarded
 * Newton inside [0, total / (alpha + extra)] from the pO2 at which Hb alone
 * would hold the total, to 1e-13 relative. *evals (if not NULL) receives
 * the number of evaluations of S and dS/dP: 3.7 on average, 12 at most over
 * pO2 0.5-3000 mmHg, Hb 0-25 g/dL, 0-41 C (measured; docs). SX_EINVAL for
 * a bad state, total < 0, extra < 0 or non-finite input; SX_EMODEL if it
 * did not converge (not seen).
 */
sx_status sx_air_exchange_shared_po2(double total, double extra, const sx_blood_state *blood,
                                     double *po2, int *evals);

/* Equilibrium of blood and bubble at the blood's state (temperature from
 * blood->temp_c), O2 conserved: *eq receives the shared state, *po2 (if not
 * NULL) the shared pO2. */
sx_status sx_air_exchange_equilibrium(const sx_air_system *sys, const sx_blood_state *blood,
                                      const sx_air_state *state, sx_air_state *eq, double *po2);

/*
 * Advance the state by dt_min at one temperature and one agitation:
 *   O2_blood(t + dt) = O2_blood,eq + (O2_blood(t) - O2_blood,eq) exp(-dt / tau)
 * and the bubble holds the rest, so O2 is conserved exactly (to rounding) and
 * stepping is independent of the step size. tau_min = 0 jumps to
 * equilibrium; tau_min = +inf or an empty bubble changes nothing. *out may
 * be in. SX_EINVAL for bad input.
 */
sx_status sx_air_exchange_step(const sx_air_system *sys, const sx_blood_state *blood,
                               double tau_min, double dt_min, const sx_air_state *in,
                               sx_air_state *out);

#endif
