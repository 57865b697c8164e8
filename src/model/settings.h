/* SPDX-License-Identifier: MIT */
/*
 * settings.h - the site's settings and the model's parameters.
 *
 * One struct holds every number the model and the disposition policy use.
 * sx_settings_defaults() fills it with the values documented in docs/model.md
 * (each with its source); the ruleset overrides them. A parameter with a
 * published range carries it as {low, nominal, high}: the estimate uses the
 * nominal value and the interval uses the range.
 */
#ifndef SX_SETTINGS_H
#define SX_SETTINGS_H

#include <stddef.h>

#include "core/status.h"
#include "core/units.h"
#include "model/electrode.h"

typedef struct sx_range {
	double low, nominal, high;
} sx_range;

typedef struct sx_settings {
	/* site */
	double site_altitude_m;        /* used when the record has neither field */
	double barometric_mmhg;        /* > 0 overrides the altitude */
	double room_temp_c;            /* where specimens wait */
	double room_rel_humidity;      /* fraction */
	double iced_temp_c;            /* ice-water slurry */
	double warm_temp_c;            /* kept warm / body temperature */
	int utc_offset_min;            /* assumed for times without offset */

	/* blood defaults when the record lacks them */
	sx_range default_hb;           /* g/dL: a population range when not given */
	double default_ph;
	double default_pco2;           /* mmHg */
	double hufner;                 /* mL O2 per g Hb */

	/* metabolism */
	sx_range blood_vo2_37;         /* mL O2/dL/min at 37 C, normal blood */
	sx_range wbc_vo2_37;           /* mL O2/dL/min per 10^9/L leukocytes at 37 C */
	double wbc_reference;          /* 10^9/L already counted in blood_vo2_37 */
	sx_range platelet_vo2_37;      /* mL O2/dL/min per 10^9/L platelets at 37 C */
	double platelet_reference;     /* 10^9/L already counted in blood_vo2_37 */
	sx_range q10;                  /* temperature factor per 10 C */
	double time_uncertainty_min;   /* half-width when times are to the minute */

	/* timeline */
	double tube_ride_min;          /* how long a pneumatic-tube ride shakes the specimen */
	sx_range cooling_room_min;     /* time constant of cooling in room air */
	sx_range cooling_ice_min;      /* time constant of cooling in ice water */

	/* air exchange (model/air_exchange.h; docs/model-mechanisms.md) */
	sx_range air_tau_standing, air_tau_hand, air_tau_tube_motion, air_tau_tube_pressure,
		air_tau_mixing, air_tau_floor, air_froth_factor;
	sx_range air_small_bubble, air_large_bubble, air_froth_bubble; /* fraction of blood */

	/* syringe wall */
	sx_range wall_capacity_room, wall_capacity_iced, wall_rate_room, wall_rate_iced;

	/* liquid heparin */
	sx_range heparin_dead_space_ml, heparin_solution_humidity, heparin_air_pco2;

	/* electrode interference: fraction of the reading per volume % of each agent */
	sx_range electrode_sensitivity[SX_AGENT_COUNT];

	/* the specimen when the record does not say */
	sx_range default_fill_ml;
	double default_agent_percent;

	/* estimate */
	double samples;                /* Latin hypercube samples for the interval */
	double prior_sd_mmhg;          /* spread of the expected pO2 without a reading */
	double default_age_years;      /* for the A-a gradient when the age is not given */
	double spo2_accuracy;          /* pulse oximeter accuracy, % points (1 SD) */

	/* consistency */
	double resp_quotient;
	double alveolar_tolerance_mmhg;     /* pO2 may exceed PAO2 by this much ... */
	double alveolar_tolerance_fraction; /* ... or this fraction of PAO2 */

} sx_settings;

void sx_settings_defaults(sx_settings *settings);

/*
 * The parameter registry: every setting by its dotted name as a ruleset
 * writes it ("site.altitude", "metabolism.q10", "policy.allowable_error"),
 * with its quantity (for units), its possible range and its meaning. A
 * parameter of kind SX_PARAM_RANGE holds {low, nominal, high}.
 */
typedef enum sx_param_kind {
	SX_PARAM_SCALAR,
	SX_PARAM_RANGE,
	SX_PARAM_OFFSET,   /* a UTC offset in minutes, written +01:00 */
} sx_param_kind;

typedef struct sx_param_info {
	const char *name;
	sx_param_kind kind;
	sx_quantity quantity;   /* SX_Q_NONE: bare number, or unit_label literally */
	const char *unit_label; /* the internal unit as docs write it */
	size_t offset;          /* into sx_settings */
	double min, max;        /* possible values, internal unit */
	const char *meaning;
} sx_param_info;

size_t sx_param_count(void);
const sx_param_info *sx_param_at(size_t index);
const sx_param_info *sx_param_lookup(const char *name, size_t len);
/* Set a scalar (or the nominal of a range) in internal units; SX_ERANGE outside. */
sx_status sx_param_set(sx_settings *settings, const sx_param_info *param, double value);
/* Set a range; needs low <= nominal <= high, all within min..max. */
sx_status sx_param_set_range(sx_settings *settings, const sx_param_info *param, sx_range r);
sx_range sx_param_get(const sx_settings *settings, const sx_param_info *param);

#endif
