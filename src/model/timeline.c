/* SPDX-License-Identifier: MIT */
/*
 * timeline.c - phases from the record's times, storage and transport.
 *
 * Temperatures: room from the record or the site; ice-water slurry about 2 C
 * (common practice); the blood starts at the patient's temperature (37 C when
 * not given) and cools with the time constants of the settings
 * (timeline.cooling_room, timeline.cooling_ice; values from memory, wide).
 */
#include "model/timeline.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/limits.h"

static const char *const agitation_names[SX_AGITATION_COUNT] = {
	[SX_AGITATION_STANDING] = "standing",
	[SX_AGITATION_HAND] = "hand carry",
	[SX_AGITATION_TUBE] = "pneumatic tube",
	[SX_AGITATION_TUBE_SEALED] = "sealed pneumatic carrier",
	[SX_AGITATION_MIXING] = "mixing before analysis",
};

const char *sx_agitation_name(sx_agitation a)
{
	return (unsigned)a < SX_AGITATION_COUNT ? agitation_names[a] : "unknown";
}

static double storage_temp(const sx_specimen *s, const sx_settings *st, sx_verdict *v,
			   bool *iced)
{
	double room = sx_specimen_has(s, SX_F_ROOM_TEMP_C) ? s->number[SX_F_ROOM_TEMP_C]
							    : st->room_temp_c;
	bool given = sx_specimen_has(s, SX_F_STORAGE_TEMP_C);
	double given_c = given ? s->number[SX_F_STORAGE_TEMP_C] : 0;
	*iced = false;
	if (!sx_specimen_has(s, SX_F_STORAGE)) {
		if (given)
			return given_c;
		sx_verdict_add_warning(v, "storage: not given; room temperature (%.0f C) assumed",
				       room);
		return room;
	}
	switch (s->choice[SX_F_STORAGE]) {
	case SX_STORAGE_ICED:
		*iced = true;
		return given ? given_c : st->iced_temp_c;
	case SX_STORAGE_WARM:
		return given ? given_c : st->warm_temp_c;
	case SX_STORAGE_ROOM:
		return given ? given_c : room;
	default:
		if (given)
			return given_c;
		sx_verdict_add_warning(v, "storage: unknown; room temperature (%.0f C) assumed",
				       room);
		return room;
	}
}

static double precision_halfwidth(const sx_time *t)
{
	switch (t->precision) {
	case SX_PREC_FRACTION:
	case SX_PREC_SECOND:
		return 0.5 / 60.0;
	case SX_PREC_MINUTE:
		return 0.5;
	case SX_PREC_HOUR:
		return 30.0;
	default:
		return 720.0;
	}
}

static sx_agitation transport_agitation(const sx_specimen *s)
{
	if (!sx_specimen_has(s, SX_F_TRANSPORT))
		return SX_AGITATION_HAND;
	switch (s->choice[SX_F_TRANSPORT]) {
	case SX_TRANSPORT_PNEUMATIC_TUBE:
		return sx_specimen_has(s, SX_F_SEALED_CARRIER) &&
					       s->choice[SX_F_SEALED_CARRIER] == SX_YES
				       ? SX_AGITATION_TUBE_SEALED
				       : SX_AGITATION_TUBE;
	default: /* hand, courier, other: carried */
		return SX_AGITATION_HAND;
	}
}

static void add_phase(sx_timeline *tl, const char *name, double minutes, double temp, bool iced,
		      sx_agitation a)
{
	sx_phase_plan *p;
	if (tl->count >= SX_MAX_PHASES || !(minutes > 0))
		return;
	p = &tl->phases[tl->count++];
	snprintf(p->name, sizeof p->name, "%s", name);
	p->minutes = minutes;
	p->temp_c = temp;
	p->iced = iced;
	p->agitation = a;
}

void sx_timeline_build(const sx_specimen *s, const sx_settings *st, sx_timeline *tl,
		       sx_verdict *v)
{
	const sx_time *c = &s->time[SX_F_COLLECTED_AT];
	const sx_time *r = &s->time[SX_F_RECEIVED_AT];
	const sx_time *a = &s->time[SX_F_ANALYSED_AT];
	double temp, transport = -1;
	bool iced;
	sx_agitation agitation;

	memset(tl, 0, sizeof *tl);
	tl->transport_min = -1;
	tl->start_temp_c = sx_specimen_has(s, SX_F_PATIENT_TEMP_C)
				   ? s->number[SX_F_PATIENT_TEMP_C]
				   : 37.0;
	if (!sx_specimen_has(s, SX_F_COLLECTED_AT) || !sx_specimen_has(s, SX_F_ANALYSED_AT)) {
		sx_verdict_add_warning(v, "%s: not given; the time before analysis is unknown and "
					  "time-dependent mechanisms are not estimated",
				       sx_specimen_has(s, SX_F_COLLECTED_AT) ? "analysed_at"
									     : "collected_at");
		return;
	}
	tl->total_min = sx_time_minutes_between(c, a);
	if (tl->total_min < 0) {
		sx_verdict_add_warning(v, "analysed_at: %.0f min before collected_at; the times "
					  "cannot both be right and the delay is not estimated",
				       -tl->total_min);
		return;
	}
	if (tl->total_min > SX_MAX_DELAY_MIN) {
		sx_verdict_add_warning(v, "analysed_at: %.1f h after collected_at, beyond the "
					  "model's range of %.0f h; the delay is not estimated",
				       tl->total_min / 60.0, SX_MAX_DELAY_MIN / 60.0);
		return;
	}
	temp = storage_temp(s, st, v, &iced);
	agitation = transport_agitation(s);
	if (sx_specimen_has(s, SX_F_RECEIVED_AT)) {
		transport = sx_time_minutes_between(c, r);
		if (transport < 0 || transport > tl->total_min) {
			sx_verdict_add_warning(v, "received_at: outside collected_at..analysed_at; "
						  "it is ignored");
			transport = -1;
		}
	}
	tl->transport_min = transport;
	if (transport >= 0) {
		if (agitation == SX_AGITATION_TUBE || agitation == SX_AGITATION_TUBE_SEALED) {
			double ride = fmin(transport, st->tube_ride_min);
			add_phase(tl, "tube ride", ride, temp, iced, agitation);
			add_phase(tl, "transport", transport - ride, temp, iced,
				  SX_AGITATION_STANDING);
		} else {
			add_phase(tl, "transport", transport, temp, iced, agitation);
		}
		add_phase(tl, "waiting", tl->total_min - transport, temp, iced,
			  SX_AGITATION_STANDING);
	} else {
		/* No receipt time: the transport's agitation for the ride, then standing. */
		double ride = agitation == SX_AGITATION_STANDING
				      ? 0
				      : fmin(tl->total_min, agitation == SX_AGITATION_HAND
							    ? tl->total_min / 2
							    : st->tube_ride_min);
		add_phase(tl, agitation == SX_AGITATION_HAND ? "transport" : "tube ride", ride, temp,
			  iced, agitation);
		add_phase(tl, "waiting", tl->total_min - ride, temp, iced, SX_AGITATION_STANDING);
	}
	tl->time_halfwidth_min = fmax(precision_halfwidth(c), precision_halfwidth(a));
	if (tl->time_halfwidth_min < st->time_uncertainty_min &&
	    (c->precision <= SX_PREC_MINUTE || a->precision <= SX_PREC_MINUTE))
		tl->time_halfwidth_min = st->time_uncertainty_min;
	tl->known = true;
}
