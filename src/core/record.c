/* SPDX-License-Identifier: MIT */
/*
 * record.c - the data dictionary table and setting fields from feed text.
 *
 * The ranges below are what is physically possible, not what is normal: a
 * value outside them is an input error (a mislabeled unit, a typing slip),
 * never a clinical finding. They are deliberately wide.
 */
#include "core/record.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "core/alloc.h"

static const char *const type_choices[] = {"arterial", "venous", "capillary", "mixed-venous",
					   "cord", "unknown", NULL};
static const char *const container_choices[] = {"plastic-syringe", "glass-syringe", "capillary",
						"other", NULL};
static const char *const anticoag_choices[] = {"dry-heparin", "liquid-heparin", "none", "other",
					       NULL};
static const char *const transport_choices[] = {"hand", "pneumatic-tube", "courier", "other",
						NULL};
static const char *const yesno_choices[] = {"yes", "no", NULL};
static const char *const storage_choices[] = {"room", "iced", "warm", "unknown", NULL};
static const char *const bubble_choices[] = {"none", "small", "large", "froth", "expelled",
					     NULL};

#define TEXT(n, m) [n] = {.kind = SX_KIND_TEXT, .meaning = m}
#define TIME(n, m) [n] = {.kind = SX_KIND_TIME, .meaning = m}
#define CHOICE(n, c, m) [n] = {.kind = SX_KIND_CHOICE, .choices = c, .meaning = m}
#define NUM(n, q, lo, hi, m) [n] = {.kind = SX_KIND_NUMBER, .quantity = q, .min = lo, .max = hi, \
				    .meaning = m}

static sx_field_info table[SX_FIELD_COUNT] = {
	TEXT(SX_F_SPECIMEN_ID, "accession or specimen id"),
	TEXT(SX_F_PATIENT_ID, "patient identifier (no names)"),
	TEXT(SX_F_LOCATION, "ward or unit that sent the specimen"),
	TEXT(SX_F_COLLECTOR, "who collected the specimen"),
	CHOICE(SX_F_SPECIMEN_TYPE, type_choices, "arterial, venous, capillary, ..."),
	TIME(SX_F_COLLECTED_AT, "collection time"),
	TIME(SX_F_RECEIVED_AT, "time the laboratory received the specimen"),
	TIME(SX_F_ANALYSED_AT, "time of analysis"),
	CHOICE(SX_F_CONTAINER, container_choices, "syringe or capillary material"),
	CHOICE(SX_F_ANTICOAGULANT, anticoag_choices, "anticoagulant in the container"),
	NUM(SX_F_FILL_VOLUME_ML, SX_Q_VOLUME_ML, 0, 100, "blood volume drawn, mL"),
	NUM(SX_F_NOMINAL_VOLUME_ML, SX_Q_VOLUME_ML, 0, 100, "syringe's nominal volume, mL"),
	NUM(SX_F_HEPARIN_VOLUME_ML, SX_Q_VOLUME_ML, 0, 20, "liquid heparin left in the syringe, mL"),
	CHOICE(SX_F_TRANSPORT, transport_choices, "how the specimen travelled"),
	TEXT(SX_F_TRANSPORT_NOTE, "free text about transport"),
	CHOICE(SX_F_SEALED_CARRIER, yesno_choices, "pneumatic carrier sealed against pressure"),
	CHOICE(SX_F_STORAGE, storage_choices, "storage until analysis"),
	NUM(SX_F_STORAGE_TEMP_C, SX_Q_TEMPERATURE, -5, 45, "storage temperature, C"),
	NUM(SX_F_ROOM_TEMP_C, SX_Q_TEMPERATURE, -10, 50, "room temperature where it waited, C"),
	CHOICE(SX_F_BUBBLES, bubble_choices, "air seen in the syringe at reception"),
	NUM(SX_F_BUBBLE_VOLUME_UL, SX_Q_VOLUME_UL, 0, 100000, "estimated air volume, uL"),
	[SX_F_AGENTS] = {.kind = SX_KIND_AGENTS, .meaning = "volatile agents / N2O, volume %"},
	NUM(SX_F_WBC, SX_Q_CELL_COUNT, 0, 2000, "leukocyte count, x10^9/L"),
	NUM(SX_F_PLATELETS, SX_Q_CELL_COUNT, 0, 10000, "platelet count, x10^9/L"),
	NUM(SX_F_HB, SX_Q_HAEMOGLOBIN, 0, 30, "haemoglobin, g/dL"),
	NUM(SX_F_FIO2, SX_Q_FRACTION, 0.05, 1.0, "inspired O2 fraction"),
	NUM(SX_F_SPO2, SX_Q_PERCENT, 0, 100, "pulse oximetry at sampling, %"),
	NUM(SX_F_PATIENT_TEMP_C, SX_Q_TEMPERATURE, 10, 46, "patient temperature, C"),
	NUM(SX_F_PATIENT_AGE_YEARS, SX_Q_AGE, 0, 130, "patient age, years"),
	NUM(SX_F_SITE_ALTITUDE_M, SX_Q_ALTITUDE, -500, 6000, "site altitude, m"),
	NUM(SX_F_BAROMETRIC_MMHG, SX_Q_PRESSURE, 300, 850, "barometric pressure, mmHg"),
	NUM(SX_F_PO2, SX_Q_PRESSURE, 0, 3000, "measured pO2, mmHg"),
	NUM(SX_F_PCO2, SX_Q_PRESSURE, 0, 300, "measured pCO2, mmHg"),
	NUM(SX_F_PH, SX_Q_NONE, 6.0, 8.2, "measured pH"),
	NUM(SX_F_SO2, SX_Q_PERCENT, 0, 100, "measured O2 saturation, %"),
	TEXT(SX_F_COMMENTS, "free-text comments"),
};

static const char *const names[SX_FIELD_COUNT] = {
	"specimen_id", "patient_id", "location", "collector", "specimen_type", "collected_at",
	"received_at", "analysed_at", "container", "anticoagulant", "fill_volume_ml",
	"nominal_volume_ml", "heparin_volume_ml", "transport", "transport_note", "sealed_carrier",
	"storage", "storage_temp_c", "room_temp_c", "bubbles", "bubble_volume_ul", "agents", "wbc",
	"platelets", "hb", "fio2", "spo2", "patient_temp_c", "patient_age_years", "site_altitude_m",
	"barometric_mmhg", "po2", "pco2", "ph", "so2", "comments",
};

const sx_field_info *sx_field_get(sx_field field)
{
	if ((unsigned)field >= SX_FIELD_COUNT)
		return NULL;
	if (!table[field].name)
		table[field].name = names[field];
	return &table[field];
}

int sx_field_lookup(const char *name, size_t len)
{
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		if (strlen(names[f]) == len && memcmp(names[f], name, len) == 0)
			return f;
	return -1;
}

int sx_field_choice_lookup(sx_field field, const char *text, size_t len)
{
	const char *const *c = table[field].choices;
	if (!c)
		return 0;
	for (int i = 0; c[i]; i++)
		if (strlen(c[i]) == len && memcmp(c[i], text, len) == 0)
			return i + 1;
	return 0;
}

const char *sx_field_choice_name(sx_field field, int choice)
{
	const char *const *c = table[field].choices;
	if (!c || choice < 1)
		return NULL;
	for (int i = 0; c[i]; i++)
		if (i + 1 == choice)
			return c[i];
	return NULL;
}

void sx_specimen_init(sx_specimen *s)
{
	memset(s, 0, sizeof *s);
}

void sx_specimen_clear(sx_specimen *s)
{
	if (!s)
		return;
	for (int f = 0; f < SX_FIELD_COUNT; f++)
		sx_free(s->text[f]);
	sx_specimen_init(s);
}

/* Copy at most SX_MAX_DIAG_MESSAGE/4 bytes of value for quoting in a message. */
static void quote(char *out, size_t size, const char *value, size_t len)
{
	size_t n = len < size - 1 ? len : size - 1;
	for (size_t i = 0; i < n; i++)
		out[i] = (value[i] >= 0x20 && value[i] != 0x7f) ? value[i] : '?';
	out[n] = '\0';
}

static sx_status set_number(sx_specimen *s, sx_field field, const char *value, size_t len,
			    const char *unit, const sx_where *where, sx_diag_list *diags)
{
	const sx_field_info *info = sx_field_get(field);
	char shown[80];
	double raw, v;
	sx_status st;

	quote(shown, sizeof shown, value, len);
	st = sx_parse_number(value, len, &raw);
	if (st != SX_OK) {
		sx_diag_add(diags, SX_ERROR, st, where, "%s: '%s' is not a number", info->name,
			    shown);
		return st;
	}
	st = sx_unit_convert(info->quantity, raw, unit, &v);
	if (st == SX_EUNIT) {
		sx_diag_add(diags, SX_ERROR, st, where,
			    "%s: unknown unit '%s' for value %s (expected a unit convertible to %s)",
			    info->name, unit ? unit : "", shown, sx_unit_label(info->quantity));
		return st;
	}
	if (st != SX_OK) {
		sx_diag_add(diags, SX_ERROR, st, where, "%s: value %s%s%s is not usable (%s)",
			    info->name, shown, unit && *unit ? " " : "", unit ? unit : "",
			    sx_status_message(st));
		return st;
	}
	st = sx_specimen_set_number(s, field, v);
	if (st != SX_OK) {
		sx_diag_add(diags, SX_ERROR, st, where,
			    "%s: %s%s%s is outside the possible range %g to %g %s", info->name,
			    shown, unit && *unit ? " " : "", unit ? unit : "", info->min, info->max,
			    sx_unit_label(info->quantity));
		return st;
	}
	return SX_OK;
}

static sx_status set_time(sx_specimen *s, sx_field field, const char *value, size_t len,
			  int default_offset_min, const sx_where *where, sx_diag_list *diags)
{
	const sx_field_info *info = sx_field_get(field);
	char shown[80];
	unsigned col = 0;
	sx_time t;
	sx_status st;

	quote(shown, sizeof shown, value, len);
	st = sx_time_parse(value, len, default_offset_min, &t, &col);
	if (st != SX_OK) {
		sx_diag_add(diags, SX_ERROR, st, where,
			    "%s: '%s' is not a valid date/time (problem at character %u)",
			    info->name, shown, col);
		return st;
	}
	if (!t.has_offset) {
		char off[16];
		int m = default_offset_min < 0 ? -default_offset_min : default_offset_min;
		snprintf(off, sizeof off, "%c%02d:%02d", default_offset_min < 0 ? '-' : '+', m / 60,
			 m % 60);
		sx_diag_add(diags, SX_WARNING, SX_OK, where,
			    "%s: '%s' has no UTC offset; the site's offset %s was assumed",
			    info->name, shown, off);
	}
	s->time[field] = t;
	s->present[field] = true;
	return SX_OK;
}

sx_status sx_specimen_set(sx_specimen *s, sx_field field, const char *value, size_t len,
			  const char *unit, int default_offset_min, const sx_where *where,
			  sx_diag_list *diags)
{
	const sx_field_info *info = sx_field_get(field);
	char shown[80];

	if (!info)
		return SX_EINVAL;
	quote(shown, sizeof shown, value, len);
	switch (info->kind) {
	case SX_KIND_TEXT: {
		char *copy;
		if (len > SX_MAX_TEXT) {
			sx_diag_add(diags, SX_ERROR, SX_ELIMIT, where,
				    "%s: text of %zu bytes is longer than the limit of %d",
				    info->name, len, SX_MAX_TEXT);
			return SX_ELIMIT;
		}
		copy = sx_strndup(value, len);
		if (!copy)
			return SX_ENOMEM;
		sx_free(s->text[field]);
		s->text[field] = copy;
		s->present[field] = true;
		return SX_OK;
	}
	case SX_KIND_NUMBER:
		return set_number(s, field, value, len, unit, where, diags);
	case SX_KIND_TIME:
		return set_time(s, field, value, len, default_offset_min, where, diags);
	case SX_KIND_CHOICE: {
		int c = sx_field_choice_lookup(field, value, len);
		if (!c) {
			char allowed[256] = "";
			size_t used = 0;
			for (int i = 0; info->choices[i]; i++) {
				int n = snprintf(allowed + used, sizeof allowed - used, "%s%s",
						 i ? ", " : "", info->choices[i]);
				if (n < 0 || (size_t)n >= sizeof allowed - used)
					break;
				used += (size_t)n;
			}
			sx_diag_add(diags, SX_ERROR, SX_EINVAL, where,
				    "%s: '%s' is not one of: %s", info->name, shown, allowed);
			return SX_EINVAL;
		}
		s->choice[field] = c;
		s->present[field] = true;
		return SX_OK;
	}
	case SX_KIND_AGENTS:
		return sx_specimen_add_agent(s, value, len, -1.0);
	}
	return SX_EINVAL;
}

sx_status sx_specimen_set_number(sx_specimen *s, sx_field field, double value)
{
	const sx_field_info *info = sx_field_get(field);
	if (!info || info->kind != SX_KIND_NUMBER)
		return SX_EINVAL;
	if (!isfinite(value) || value < info->min || value > info->max)
		return SX_ERANGE;
	s->number[field] = value;
	s->present[field] = true;
	return SX_OK;
}

sx_status sx_specimen_add_agent(sx_specimen *s, const char *name, size_t len, double percent)
{
	sx_agent *a;
	if (s->agent_count >= SX_MAX_AGENTS)
		return SX_ELIMIT;
	if (len == 0 || len >= SX_MAX_AGENT_NAME)
		return SX_EINVAL;
	if (percent > 100.0 || (percent < 0 && percent != -1.0) || isnan(percent))
		return SX_ERANGE;
	a = &s->agents[s->agent_count++];
	for (size_t i = 0; i < len; i++) {
		char c = name[i];
		a->name[i] = (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
	}
	a->name[len] = '\0';
	a->percent = percent;
	s->present[SX_F_AGENTS] = true;
	return SX_OK;
}
