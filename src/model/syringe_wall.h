/* SPDX-License-Identifier: MIT */
/*
 * syringe_wall.h - O2 exchange between the specimen and a plastic syringe's
 * wall.
 *
 * The wall (barrel and plunger seal) is a reservoir of dissolved O2 that was
 * in equilibrium with room air before use. It exchanges O2 with the blood in
 * proportion to the pO2 difference, so it gives O2 to a sample whose pO2 is
 * below its own (a cold sample above all: cooling lowers the blood's pO2) and
 * takes O2 from a hyperoxic one. Glass holds none. The blood's buffering by
 * haemoglobin follows from the content-based curve: a hypoxaemic sample
 * takes up O2 with hardly a change of pO2. Equations, parameters and the fit
 * to published figures: docs/model-mechanisms.md, section Syringe wall, and
 * tests/reference/wall_fit.py.
 *
 * Units: pO2 in mmHg, content and wall O2 in mL O2 per dL of sample,
 * capacity in mL O2 per dL of sample per mmHg (the unit of alpha in
 * oxygen.h), rates per minute, time in minutes, temperature in degrees C.
 */
#ifndef SX_SYRINGE_WALL_H
#define SX_SYRINGE_WALL_H

#include "core/status.h"
#include "model/oxygen.h"

typedef enum sx_wall_material {
	SX_WALL_PLASTIC = 0,
	SX_WALL_GLASS, /* holds no O2: the mechanism does nothing */
} sx_wall_material;

/* The anchor temperatures of the parameters (those of the fit; the values in
 * between and beyond follow a log-linear law in temperature). */
#define SX_WALL_ROOM_C 22.0
#define SX_WALL_ICED_C 2.0

/*
 * Fitted to Mahoney et al., Clin Chem 1991;37:1244, Pretto & Rochford,
 * Thorax 1994;49:610 and Scott, Horton & Mapleson, BMJ 1971;3:512 by
 * tests/reference/wall_fit.py (output wall_fit.tsv). Ranges: the span of the
 * fits to Mahoney's figures alone and to the high-pO2 figures alone, widened
 * by 1.5 both ways (plastic syringes differ a lot [R, MODEL-SOURCES]).
 */
typedef struct sx_syringe_wall_params {
	double capacity_room; /* mL O2/dL/mmHg at 22 C */
	double capacity_iced; /* mL O2/dL/mmHg at 2 C */
	double rate_room;     /* 1/min at 22 C */
	double rate_iced;     /* 1/min at 2 C */
} sx_syringe_wall_params;

sx_syringe_wall_params sx_syringe_wall_defaults(void);
void sx_syringe_wall_bounds(sx_syringe_wall_params *low, sx_syringe_wall_params *high);

typedef struct sx_wall_state {
	double content; /* blood O2 content, mL O2/dL */
	double wall_o2; /* O2 in the wall, mL O2 per dL of sample */
} sx_wall_state;

/* Capacity at temp_c: capacity_room (capacity_iced / capacity_room)^((22 -
 * T) / 20); 0 for glass; NaN for bad parameters (<= 0) or temperature. */
double sx_syringe_wall_capacity(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c);

/* Rate constant at temp_c, the same law between rate_room and rate_iced;
 * 0 for glass. */
double sx_syringe_wall_rate(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c);

/* Wall O2 before use: capacity at the storage temperature x the room-air
 * pO2 (sx_room_air_po2). 0 for glass. */
double sx_syringe_wall_start(const sx_syringe_wall_params *p, sx_wall_material m,
                             double storage_temp_c, double room_air_po2);

/* pO2 of the wall at temp_c: wall O2 / capacity (0 for glass). */
double sx_syringe_wall_po2(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c,
                           double wall_o2);

/* Blood and wall at one pO2, O2 conserved (temperature from blood->temp_c).
 * *po2 (if not NULL) receives the shared pO2. Glass: *eq = *state and the
 * blood's own pO2. */
sx_status sx_syringe_wall_equilibrium(const sx_syringe_wall_params *p, sx_wall_material m,
                                      const sx_blood_state *blood, const sx_wall_state *state,
                                      sx_wall_state *eq, double *po2);

/*
 * Advance by dt_min at the blood's temperature. The flux into the blood is
 * k c (Pw - P); linearised about the equilibrium it relaxes with rate
 *   lambda = k (1 + c / beta),  beta = alpha + hufner Hb dS/dP at P_eq,
 * and the step is taken in closed form:
 *   C(t + dt) = C_eq + (C(t) - C_eq) exp(-lambda dt),  wall = total - C.
 * O2 is conserved to rounding; two steps of dt/2 equal one of dt. The
 * linearisation is exact for plasma and for blood on the flat part of the
 * curve; against the flux law integrated exactly (scipy solve_ivp) it
 * differs by under 0.05 % of the pO2 change with the default parameters and
 * by 3.3 % for a slow, large wall at 90 mmHg (measured; docs). *out may be
 * in.
 */
sx_status sx_syringe_wall_step(const sx_syringe_wall_params *p, sx_wall_material m,
                               const sx_blood_state *blood, double dt_min, const sx_wall_state *in,
                               sx_wall_state *out);

#endif
