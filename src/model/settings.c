/* SPDX-License-Identifier: MIT */
/*
 * settings.c - default settings and parameters, with their sources.
 * docs/model.md explains each; the default ruleset restates them.
 */
#include "model/settings.h"

#include "model/air_exchange.h"
#include "model/heparin.h"
#include "model/syringe_wall.h"

#include <stddef.h>
#include <string.h>

void sx_settings_defaults(sx_settings *s)
{
	memset(s, 0, sizeof *s);
	s->site_altitude_m = 0.0;
	s->barometric_mmhg = 0.0;
	s->room_temp_c = 22.0;
	s->room_rel_humidity = 0.5;
	s->iced_temp_c = 2.0;
	s->warm_temp_c = 37.0;
	s->utc_offset_min = 0;

	/* Adult haemoglobin spans about 9-17 g/dL in hospital patients [M]. */
	s->default_hb = (sx_range){9.0, 14.0, 17.0};
	s->default_ph = 7.40;
	s->default_pco2 = 40.0;
	s->hufner = 1.39; /* theoretical [R]; 1.368 measured (Dijkhuizen 1977) */

	/* J Appl Physiol 1965 [R]: normal blood about 0.0085 mL O2/dL/min at 37 C. */
	s->blood_vo2_37 = (sx_range){0.0060, 0.0085, 0.0110};
	/* Bisset 1959 [R]: 0.111 umol/h per 10^7 cells = 4.1e-4 mL/dL/min per 10^9/L [D]. */
	s->wbc_vo2_37 = (sx_range){2.0e-4, 4.1e-4, 8.0e-4};
	s->wbc_reference = 7.0;
	/* Platelet consumption is reported (Eur Respir J 2008) but its size per cell is
	 * not in our sources: an order of magnitude from memory [M], wide. */
	s->platelet_vo2_37 = (sx_range){0.0, 1.0e-5, 3.0e-5};
	s->platelet_reference = 250.0;
	/* Q10 2-3 [M]; ice at 10 % of the 37 C rate [R review] implies about 1.9. */
	s->q10 = (sx_range){1.9, 2.0, 3.0};
	s->time_uncertainty_min = 0.5;

	/* A tube ride takes minutes (common practice); cooling time constants of a 1-3 mL
	 * syringe from memory [M], wide. */
	s->tube_ride_min = 3.0;
	s->cooling_room_min = (sx_range){3.0, 8.0, 15.0};
	s->cooling_ice_min = (sx_range){0.5, 1.5, 3.0};
	{
		/* The mechanisms' own defaults and published ranges (docs/model-mechanisms.md). */
		sx_air_params a = sx_air_exchange_defaults(), alo, ahi;
		sx_syringe_wall_params w = sx_syringe_wall_defaults(), wlo, whi;
		sx_heparin_params h = sx_heparin_defaults(), hlo, hhi;
		sx_electrode_params e = sx_electrode_defaults(), elo, ehi;
		sx_air_exchange_bounds(&alo, &ahi);
		sx_syringe_wall_bounds(&wlo, &whi);
		sx_heparin_bounds(&hlo, &hhi);
		sx_electrode_bounds(&elo, &ehi);
#define R3(lo, mid, hi, f) ((sx_range){(lo).f, (mid).f, (hi).f})
		s->air_tau_standing = R3(alo, a, ahi, tau_standing);
		s->air_tau_hand = R3(alo, a, ahi, tau_hand);
		s->air_tau_tube_motion = R3(alo, a, ahi, tau_tube_motion);
		s->air_tau_tube_pressure = R3(alo, a, ahi, tau_tube_pressure);
		s->air_tau_mixing = R3(alo, a, ahi, tau_mixing);
		s->air_tau_floor = R3(alo, a, ahi, tau_floor);
		s->air_froth_factor = R3(alo, a, ahi, froth_factor);
		s->air_small_bubble = R3(alo, a, ahi, small_fraction);
		s->air_large_bubble = R3(alo, a, ahi, large_fraction);
		s->air_froth_bubble = R3(alo, a, ahi, froth_fraction);
		s->wall_capacity_room = R3(wlo, w, whi, capacity_room);
		s->wall_capacity_iced = R3(wlo, w, whi, capacity_iced);
		s->wall_rate_room = R3(wlo, w, whi, rate_room);
		s->wall_rate_iced = R3(wlo, w, whi, rate_iced);
		s->heparin_dead_space_ml = R3(hlo, h, hhi, dead_space_ml);
		s->heparin_solution_humidity = R3(hlo, h, hhi, solution_rh);
		s->heparin_air_pco2 = R3(hlo, h, hhi, air_pco2);
		for (int k = 0; k < SX_AGENT_COUNT; k++)
			s->electrode_sensitivity[k] = R3(elo, e, ehi, sensitivity[k]);
#undef R3
	}
	/* A typical arterial sample of 1-3 mL (common practice). */
	s->default_fill_ml = (sx_range){0.8, 1.5, 3.0};
	/* Maintenance concentrations of volatile agents are around 1 % (from memory). */
	s->default_agent_percent = 1.0;
	s->samples = 64;
	/* Cerveri et al. 1995: PaO2 predicted with SEE 7.5 mmHg [R]. */
	s->prior_sd_mmhg = 7.5;
	s->default_age_years = 50.0;
	/* Pulse oximeters: bias and SD under 3 % above SaO2 83 % (Eur Respir J 1991) [R]. */
	s->spo2_accuracy = 3.0;

	s->resp_quotient = 0.8;
	s->alveolar_tolerance_mmhg = 4.5;     /* 0.6 kPa, analyser performance [R, quoted] */
	s->alveolar_tolerance_fraction = 0.075;

	/* Time limits and the disposition thresholds are the ruleset's (rules/limits). */
}

/* ---- the parameter registry ------------------------------------------------ */

#define SCALAR(n, q, u, field, lo, hi, m) \
	{n, SX_PARAM_SCALAR, q, u, offsetof(sx_settings, field), lo, hi, m}
#define RANGE(n, q, u, field, lo, hi, m) \
	{n, SX_PARAM_RANGE, q, u, offsetof(sx_settings, field), lo, hi, m}

static const sx_param_info params[] = {
	SCALAR("site.altitude", SX_Q_ALTITUDE, "m", site_altitude_m, -500, 6000,
	       "altitude of the laboratory; gives the barometric pressure"),
	SCALAR("site.barometric_pressure", SX_Q_PRESSURE, "mmHg", barometric_mmhg, 0, 850,
	       "barometric pressure; 0 = from the altitude"),
	SCALAR("site.room_temperature", SX_Q_TEMPERATURE, "Cel", room_temp_c, -10, 50,
	       "temperature where specimens wait"),
	SCALAR("site.room_humidity", SX_Q_FRACTION, "1", room_rel_humidity, 0, 1,
	       "relative humidity of the room air"),
	SCALAR("site.iced_temperature", SX_Q_TEMPERATURE, "Cel", iced_temp_c, -5, 15,
	       "temperature of specimens on ice"),
	SCALAR("site.warm_temperature", SX_Q_TEMPERATURE, "Cel", warm_temp_c, 15, 45,
	       "temperature of specimens kept warm"),
	{"site.utc_offset", SX_PARAM_OFFSET, SX_Q_NONE, "+HH:MM", offsetof(sx_settings, utc_offset_min),
	 -14 * 60, 14 * 60, "offset assumed for times sent without one"},
	RANGE("blood.default_hb", SX_Q_HAEMOGLOBIN, "g/dL", default_hb, 1, 25,
	      "haemoglobin assumed when not given (a range)"),
	SCALAR("blood.default_ph", SX_Q_NONE, "1", default_ph, 6.5, 8.0,
	       "pH assumed when not given"),
	SCALAR("blood.default_pco2", SX_Q_PRESSURE, "mmHg", default_pco2, 5, 150,
	       "pCO2 assumed when not given"),
	SCALAR("blood.hufner", SX_Q_NONE, "mL/g", hufner, 1.30, 1.40,
	       "O2 bound per gram of haemoglobin"),
	RANGE("metabolism.blood_rate", SX_Q_NONE, "mL/dL/min", blood_vo2_37, 0, 0.1,
	      "O2 consumption of normal blood at 37 C"),
	RANGE("metabolism.leukocyte_rate", SX_Q_NONE, "mL/dL/min", wbc_vo2_37, 0, 0.01,
	      "O2 consumption per 10^9/L leukocytes at 37 C"),
	SCALAR("metabolism.leukocyte_reference", SX_Q_CELL_COUNT, "10*9/L", wbc_reference, 0, 50,
	       "leukocyte count already in the normal-blood rate"),
	RANGE("metabolism.platelet_rate", SX_Q_NONE, "mL/dL/min", platelet_vo2_37, 0, 0.001,
	      "O2 consumption per 10^9/L platelets at 37 C"),
	SCALAR("metabolism.platelet_reference", SX_Q_CELL_COUNT, "10*9/L", platelet_reference, 0,
	       1000, "platelet count already in the normal-blood rate"),
	RANGE("metabolism.q10", SX_Q_NONE, "1", q10, 1.0, 5.0,
	      "factor of the rate per 10 C of temperature"),
	SCALAR("timing.uncertainty", SX_Q_DURATION, "min", time_uncertainty_min, 0, 60,
	       "half-width of the time uncertainty for times to the minute"),
	SCALAR("timeline.tube_ride", SX_Q_DURATION, "min", tube_ride_min, 0, 60,
	       "how long a pneumatic-tube ride shakes the specimen"),
	RANGE("timeline.cooling_room", SX_Q_DURATION, "min", cooling_room_min, 0.1, 60,
	      "time constant of a syringe cooling in room air"),
	RANGE("timeline.cooling_ice", SX_Q_DURATION, "min", cooling_ice_min, 0.1, 30,
	      "time constant of a syringe cooling in ice water"),
	RANGE("air.tau_standing", SX_Q_DURATION, "min", air_tau_standing, 0.1, 10000,
	      "air-blood exchange time constant at rest"),
	RANGE("air.tau_hand", SX_Q_DURATION, "min", air_tau_hand, 0.1, 10000,
	      "... when carried by hand or courier"),
	RANGE("air.tau_tube_motion", SX_Q_DURATION, "min", air_tau_tube_motion, 0.1, 10000,
	      "... from the motion of a tube ride"),
	RANGE("air.tau_tube_pressure", SX_Q_DURATION, "min", air_tau_tube_pressure, 0.1, 10000,
	      "... from the pressure swings of a tube ride (an unsealed carrier)"),
	RANGE("air.tau_mixing", SX_Q_DURATION, "min", air_tau_mixing, 0.1, 10000,
	      "... when rolled or inverted before analysis"),
	RANGE("air.tau_floor", SX_Q_DURATION, "min", air_tau_floor, 0.1, 100,
	      "no agitation exchanges faster than this"),
	RANGE("air.froth_factor", SX_Q_NONE, "1", air_froth_factor, 1, 1000,
	      "froth divides the time constant by this"),
	RANGE("air.small_bubble", SX_Q_FRACTION, "1", air_small_bubble, 0, 1,
	      "air volume of a small bubble, fraction of the blood"),
	RANGE("air.large_bubble", SX_Q_FRACTION, "1", air_large_bubble, 0, 1,
	      "air volume of a large bubble, fraction of the blood"),
	RANGE("air.froth_bubble", SX_Q_FRACTION, "1", air_froth_bubble, 0, 1,
	      "air volume in froth, fraction of the blood"),
	RANGE("wall.capacity_room", SX_Q_NONE, "mL/dL/mmHg", wall_capacity_room, 0, 1,
	      "O2 a plastic wall holds per mmHg at room temperature"),
	RANGE("wall.capacity_iced", SX_Q_NONE, "mL/dL/mmHg", wall_capacity_iced, 0, 1,
	      "... on ice"),
	RANGE("wall.rate_room", SX_Q_NONE, "1/min", wall_rate_room, 0, 100,
	      "exchange rate between wall and blood at room temperature"),
	RANGE("wall.rate_iced", SX_Q_NONE, "1/min", wall_rate_iced, 0, 100, "... on ice"),
	RANGE("heparin.dead_space", SX_Q_VOLUME_ML, "mL", heparin_dead_space_ml, 0, 5,
	      "liquid heparin left in a syringe after expelling it"),
	RANGE("heparin.solution_humidity", SX_Q_FRACTION, "1", heparin_solution_humidity, 0, 1,
	      "humidity of the air the heparin solution equilibrated with"),
	RANGE("heparin.air_pco2", SX_Q_PRESSURE, "mmHg", heparin_air_pco2, 0, 5,
	      "pCO2 of the air the solution equilibrated with"),
	RANGE("electrode.halothane", SX_Q_NONE, "1/%", electrode_sensitivity[SX_AGENT_HALOTHANE],
	      0, 1, "extra reading per volume % halothane, fraction of the reading"),
	RANGE("electrode.enflurane", SX_Q_NONE, "1/%", electrode_sensitivity[SX_AGENT_ENFLURANE],
	      0, 1, "... enflurane"),
	RANGE("electrode.isoflurane", SX_Q_NONE, "1/%",
	      electrode_sensitivity[SX_AGENT_ISOFLURANE], 0, 1, "... isoflurane"),
	RANGE("electrode.sevoflurane", SX_Q_NONE, "1/%",
	      electrode_sensitivity[SX_AGENT_SEVOFLURANE], 0, 1, "... sevoflurane"),
	RANGE("electrode.desflurane", SX_Q_NONE, "1/%",
	      electrode_sensitivity[SX_AGENT_DESFLURANE], 0, 1, "... desflurane"),
	RANGE("electrode.nitrous_oxide", SX_Q_NONE, "1/%",
	      electrode_sensitivity[SX_AGENT_NITROUS_OXIDE], 0, 1, "... nitrous oxide"),
	RANGE("specimen.default_fill", SX_Q_VOLUME_ML, "mL", default_fill_ml, 0.05, 100,
	      "blood volume assumed when not given"),
	SCALAR("specimen.default_agent_percent", SX_Q_PERCENT, "%", default_agent_percent, 0, 100,
	       "concentration assumed for an agent given without one"),
	SCALAR("estimate.samples", SX_Q_NONE, "1", samples, 1, 256,
	       "Latin hypercube samples for the interval"),
	SCALAR("estimate.prior_spread", SX_Q_PRESSURE, "mmHg", prior_sd_mmhg, 0.1, 100,
	       "standard deviation of the expected pO2 when there is no reading"),
	SCALAR("estimate.default_age", SX_Q_AGE, "a", default_age_years, 0, 130,
	       "age assumed for the A-a gradient when not given"),
	SCALAR("estimate.spo2_accuracy", SX_Q_PERCENT, "%", spo2_accuracy, 0.1, 20,
	       "pulse oximeter accuracy (1 SD), % points"),
	SCALAR("alveolar.respiratory_quotient", SX_Q_NONE, "1", resp_quotient, 0.6, 1.2,
	       "respiratory exchange ratio R of the alveolar gas equation"),
	SCALAR("alveolar.tolerance", SX_Q_PRESSURE, "mmHg", alveolar_tolerance_mmhg, 0, 100,
	       "pO2 may exceed the alveolar pO2 by this much (analyser error)"),
	SCALAR("alveolar.tolerance_fraction", SX_Q_FRACTION, "1", alveolar_tolerance_fraction, 0,
	       1, "... or by this fraction of the alveolar pO2"),
};

size_t sx_param_count(void)
{
	return sizeof params / sizeof params[0];
}

const sx_param_info *sx_param_at(size_t index)
{
	return index < sx_param_count() ? &params[index] : NULL;
}

const sx_param_info *sx_param_lookup(const char *name, size_t len)
{
	for (size_t i = 0; i < sx_param_count(); i++)
		if (strlen(params[i].name) == len && memcmp(params[i].name, name, len) == 0)
			return &params[i];
	return NULL;
}

sx_status sx_param_set(sx_settings *s, const sx_param_info *p, double value)
{
	char *base = (char *)s + p->offset;
	if (!(value >= p->min && value <= p->max))
		return SX_ERANGE;
	switch (p->kind) {
	case SX_PARAM_SCALAR:
		*(double *)base = value;
		return SX_OK;
	case SX_PARAM_OFFSET:
		*(int *)base = (int)value;
		return SX_OK;
	case SX_PARAM_RANGE: {
		sx_range *r = (sx_range *)base;
		if (value < r->low || value > r->high)
			*r = (sx_range){value, value, value};
		else
			r->nominal = value;
		return SX_OK;
	}
	}
	return SX_EINVAL;
}

sx_status sx_param_set_range(sx_settings *s, const sx_param_info *p, sx_range r)
{
	if (p->kind != SX_PARAM_RANGE)
		return SX_EINVAL;
	if (!(r.low <= r.nominal && r.nominal <= r.high && r.low >= p->min && r.high <= p->max))
		return SX_ERANGE;
	*(sx_range *)((char *)s + p->offset) = r;
	return SX_OK;
}

sx_range sx_param_get(const sx_settings *s, const sx_param_info *p)
{
	const char *base = (const char *)s + p->offset;
	double v;
	switch (p->kind) {
	case SX_PARAM_RANGE:
		return *(const sx_range *)base;
	case SX_PARAM_OFFSET:
		v = *(const int *)base;
		return (sx_range){v, v, v};
	case SX_PARAM_SCALAR:
	default:
		v = *(const double *)base;
		return (sx_range){v, v, v};
	}
}
