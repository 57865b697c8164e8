/* SPDX-License-Identifier: MIT */
/*
 * syringe_wall.c - O2 exchange between the specimen and a plastic wall.
 *
 *   wall O2 W (mL/dL of sample), capacity c(T), wall pO2 Pw = W / c(T)
 *   flux into the blood  J = k(T) c(T) (Pw - P)            [mL/dL/min]
 *   c(T) = c22 (c2 / c22)^((22 - T) / 20), k(T) likewise
 *   W before use = c(T_storage) x room-air pO2
 *
 * Sources: O2 held in the plastic, errors up to 6 % in 2 min and 16 % in
 * 30-60 min at high pO2 (Scott, Horton & Mapleson, BMJ 1971;3:512); iced
 * plastic gains O2, plasma much more, glass stable (Mahoney et al., Clin Chem
 * 1991;37:1244); plastic loses O2 from 650 mmHg faster at room temperature
 * than on ice (Pretto & Rochford, Thorax 1994;49:610); deoxygenated Hb
 * buffers hypoxaemic samples (Schmidt & Muller-Plathe 1992). Fit:
 * tests/reference/wall_fit.py.
 */
#include "model/syringe_wall.h"

#include <math.h>
#include <stddef.h>

#include "model/air_exchange.h"

/* tests/reference/wall_fit.tsv, rounded to 3 digits */
#define FIT_CAPACITY_ROOM 1.04e-3
#define FIT_CAPACITY_ICED 1.04e-3
#define FIT_RATE_ROOM     0.227
#define FIT_RATE_ICED     0.0264

sx_syringe_wall_params sx_syringe_wall_defaults(void)
{
	sx_syringe_wall_params p;

	p.capacity_room = FIT_CAPACITY_ROOM;
	p.capacity_iced = FIT_CAPACITY_ICED;
	p.rate_room = FIT_RATE_ROOM;
	p.rate_iced = FIT_RATE_ICED;
	return p;
}

void sx_syringe_wall_bounds(sx_syringe_wall_params *low, sx_syringe_wall_params *high)
{
	/* tests/reference/wall_fit.tsv, range columns, rounded to 3 digits */
	if (low) {
		low->capacity_room = 6.92e-4;
		low->capacity_iced = 6.92e-4;
		low->rate_room = 3.04e-3;
		low->rate_iced = 2.66e-3;
	}
	if (high) {
		high->capacity_room = 7.99e-3;
		high->capacity_iced = 1.34e-2;
		high->rate_room = 0.341;
		high->rate_iced = 0.0396;
	}
}

static double between(double room, double iced, double temp_c)
{
	if (!(room > 0.0) || !(iced > 0.0) || !isfinite(room) || !isfinite(iced) ||
	    !isfinite(temp_c))
		return NAN;
	/* Measured only between ice and room temperature: held at the end values outside
	 * (a warm syringe is not extrapolated into an ever faster wall). */
	if (temp_c > SX_WALL_ROOM_C)
		temp_c = SX_WALL_ROOM_C;
	if (temp_c < SX_WALL_ICED_C)
		temp_c = SX_WALL_ICED_C;
	return room *
	       pow(iced / room, (SX_WALL_ROOM_C - temp_c) / (SX_WALL_ROOM_C - SX_WALL_ICED_C));
}

double sx_syringe_wall_capacity(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c)
{
	if (!p || !isfinite(temp_c))
		return NAN;
	if (m == SX_WALL_GLASS)
		return 0.0;
	return between(p->capacity_room, p->capacity_iced, temp_c);
}

double sx_syringe_wall_rate(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c)
{
	if (!p || !isfinite(temp_c))
		return NAN;
	if (m == SX_WALL_GLASS)
		return 0.0;
	return between(p->rate_room, p->rate_iced, temp_c);
}

double sx_syringe_wall_start(const sx_syringe_wall_params *p, sx_wall_material m,
                             double storage_temp_c, double room_air_po2)
{
	if (!(room_air_po2 >= 0.0) || !isfinite(room_air_po2))
		return NAN;
	return sx_syringe_wall_capacity(p, m, storage_temp_c) * room_air_po2;
}

double sx_syringe_wall_po2(const sx_syringe_wall_params *p, sx_wall_material m, double temp_c,
                           double wall_o2)
{
	double c = sx_syringe_wall_capacity(p, m, temp_c);

	if (isnan(c) || !(wall_o2 >= 0.0) || !isfinite(wall_o2))
		return NAN;
	return c > 0.0 ? wall_o2 / c : 0.0;
}

static int wall_state_valid(const sx_wall_state *s)
{
	return s && isfinite(s->content) && s->content >= 0.0 && isfinite(s->wall_o2) &&
	       s->wall_o2 >= 0.0;
}

sx_status sx_syringe_wall_equilibrium(const sx_syringe_wall_params *p, sx_wall_material m,
                                      const sx_blood_state *blood, const sx_wall_state *state,
                                      sx_wall_state *eq, double *po2)
{
	double c, total, pe, content;
	sx_status status;

	if (!eq || !p || !blood || !wall_state_valid(state))
		return SX_EINVAL;
	c = sx_syringe_wall_capacity(p, m, blood->temp_c);
	if (isnan(c))
		return SX_EINVAL;
	total = state->content + state->wall_o2;
	if (c == 0.0) {
		/* glass: nothing to share with */
		status = sx_o2_po2_from_content(state->content, blood, &pe);
		if (status != SX_OK)
			return status;
		*eq = *state;
	} else {
		status = sx_air_exchange_shared_po2(total, c, blood, &pe, NULL);
		if (status != SX_OK)
			return status;
		content = fmin(sx_o2_content(pe, blood), total);
		eq->content = content;
		eq->wall_o2 = total - content;
	}
	if (po2)
		*po2 = pe;
	return SX_OK;
}

sx_status sx_syringe_wall_step(const sx_syringe_wall_params *p, sx_wall_material m,
                               const sx_blood_state *blood, double dt_min, const sx_wall_state *in,
                               sx_wall_state *out)
{
	sx_wall_state eq;
	double c, k, beta, lambda, total, content, pe;
	sx_status status;

	if (!out || !p || !blood || !wall_state_valid(in) || !isfinite(dt_min) || dt_min < 0.0)
		return SX_EINVAL;
	c = sx_syringe_wall_capacity(p, m, blood->temp_c);
	k = sx_syringe_wall_rate(p, m, blood->temp_c);
	if (isnan(c) || isnan(k))
		return SX_EINVAL;
	if (c == 0.0 || k == 0.0 || dt_min == 0.0) {
		*out = *in;
		return SX_OK;
	}
	status = sx_syringe_wall_equilibrium(p, m, blood, in, &eq, &pe);
	if (status != SX_OK)
		return status;
	beta = sx_o2_solubility(blood->temp_c) +
	       blood->hufner * blood->hb * sx_o2_sat_slope(pe, blood);
	lambda = k * (1.0 + c / beta);
	total = in->content + in->wall_o2;
	content = eq.content + (in->content - eq.content) * exp(-lambda * dt_min);
	content = fmin(fmax(content, 0.0), total);
	out->content = content;
	out->wall_o2 = total - content;
	return SX_OK;
}
