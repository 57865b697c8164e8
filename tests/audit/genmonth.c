/* SPDX-License-Identifier: MIT */
/*
 * genmonth.c - writes "a month of demo verdicts": an XML feed of blood-gas
 * specimens at St. Brannoc Regional Hospital, for `syrinx audit` demos and
 * tests. St. Brannoc Regional Hospital is INVENTED, as are its wards, staff
 * codes and every specimen: no real patients, staff or hospital.
 *
 * usage: genmonth [DAYS [SEED]]     (default 30 days from Monday 2 March 2026)
 *
 * Deterministic: the same DAYS and SEED give the same bytes, so the
 * committed fixtures/demo/month.xml can be made again and compared
 * (tests/audit/genmonth.sh). About 40 specimens a day, fewer at weekends.
 *
 * The story the month tells (invented, for the demo): in the first two weeks
 * the emergency department sends many syringes by pneumatic tube in unsealed
 * carriers, and they wait at room temperature; some arrive with air in them.
 * From Monday 16 March it uses sealed carriers and its specimens are analysed
 * sooner, so its rejections fall. Haematology's very high leukocyte counts
 * show the metabolism mechanism; the respiratory ward's porter round shows
 * courier delays; theatres list anaesthetic agents.
 *
 * Times carry the fixed offset +01:00 throughout. Optional fields are left
 * out to keep the file small.
 */
#include <inttypes.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

static uint64_t state;

/* splitmix64 (Sebastiano Vigna, public domain), as in tests/bench/genfeed.c */
static uint64_t next(void)
{
	uint64_t z = (state += 0x9E3779B97F4A7C15ULL);
	z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
	z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
	return z ^ (z >> 31);
}

static double uniform(double lo, double hi)
{
	return lo + (hi - lo) * (double)(next() >> 11) / 9007199254740992.0;
}

static int chance(double p)
{
	return uniform(0, 1) < p;
}

static int between(int lo, int hi)
{
	return lo + (int)(next() % (uint64_t)(hi - lo + 1));
}

/* Days since 1970-01-01 to a civil date (proleptic Gregorian; the
 * days-from-civil algorithm of common practice). */
static void civil(long days, int *y, int *m, int *d)
{
	long z = days + 719468, era = (z >= 0 ? z : z - 146096) / 146097;
	long doe = z - era * 146097;
	long yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
	long doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
	long mp = (5 * doy + 2) / 153;
	*d = (int)(doy - (153 * mp + 2) / 5 + 1);
	*m = (int)(mp < 10 ? mp + 3 : mp - 9);
	*y = (int)(yoe + era * 400 + (*m <= 2));
}

typedef struct ward {
	const char *unit;
	const char *bed; /* the bed's prefix, then its number in `width` digits */
	int width, bed_count;
	const char *collectors[4];
	double share; /* of the day's specimens */
} ward;

static const ward wards[] = {
        {"ICU", "ICU/BED", 2, 12, {"RN-114", "RN-207", "RN-231", "DR-031"}, 0.28},
        {"ED", "ED/MAJORS", 1, 9, {"RN-402", "RN-415", "DR-077", "DR-082"}, 0.26},
        {"THEATRE", "THEATRE/ROOM", 1, 5, {"DR-011", "DR-015", "DR-019", "DR-023"}, 0.14},
        {"WARD7-RESP", "WARD7-RESP/BED", 2, 16, {"RN-520", "RN-533", "DR-044", "RN-541"}, 0.13},
        {"WARD9-HAEM", "WARD9-HAEM/BED", 2, 8, {"RN-610", "RN-618", "DR-052", "RN-627"}, 0.09},
        {"NNU", "NNU/COT", 2, 6, {"RN-705", "RN-711", "DR-061", "RN-719"}, 0.07},
        {"LABOUR-WARD", "LABOUR-WARD/ROOM", 1, 4, {"MW-801", "MW-812", "DR-090", "MW-815"}, 0.03},
};
#define WARD_COUNT (sizeof wards / sizeof wards[0])

static const ward *pick_ward(void)
{
	double u = uniform(0, 1), sum = 0;
	for (size_t i = 0; i < WARD_COUNT; i++) {
		sum += wards[i].share;
		if (u < sum)
			return &wards[i];
	}
	return &wards[0];
}

/* Local clock time of a minute of the day, on the given day. */
static void stamp(const char *name, long day, int minute)
{
	int y, m, d;
	civil(day + minute / 1440, &y, &m, &d);
	minute %= 1440;
	printf("    <%s>%04d-%02d-%02dT%02d:%02d+01:00</%s>\n", name, y, m, d, minute / 60,
	       minute % 60, name);
}

/* One specimen: what the ward does, then the numbers that follow from it. */
static void specimen(long day, int week, int seq, int minute)
{
	const ward *w = pick_ward();
	int unit = (int)(w - wards);
	int y, mo, d;
	double fio2 = 0.21, po2, pco2 = uniform(34, 46), ph = uniform(7.34, 7.45);
	double wbc = uniform(4.5, 13.0), hb = uniform(9.0, 15.5);
	const char *type = "arterial", *transport = "hand", *storage = "room";
	const char *bubbles = "none", *container = "plastic-syringe", *sealed = NULL;
	const char *agent = NULL;
	int transit = between(1, 4), wait = between(2, 9), air = 0;
	double agent_pct = 0;

	switch (unit) {
	case 0: /* intensive care: own analyser, quick, ventilated */
		fio2 = uniform(0.3, 0.8);
		if (chance(0.04))
			wait = between(31, 55); /* a busy night */
		break;
	case 1: /* emergency department: the trend */
		if (week < 2) {
			if (chance(0.55)) {
				transport = "pneumatic-tube";
				sealed = "no";
				transit = between(2, 6);
				if (chance(0.3)) {
					bubbles = chance(0.5) ? "large" : "small";
					air = 1;
				}
			}
			if (chance(0.35))
				wait = between(32, 95);
			else
				wait = between(6, 25);
		} else {
			if (chance(0.6)) {
				transport = "pneumatic-tube";
				sealed = "yes";
				transit = between(2, 5);
			}
			wait = chance(0.06) ? between(32, 70) : between(4, 18);
			if (chance(0.03)) {
				bubbles = "small";
				air = 1;
			}
		}
		if (chance(0.2))
			fio2 = uniform(0.28, 0.5);
		break;
	case 2: /* theatres: agents in the breathing gas */
		fio2 = uniform(0.4, 0.6);
		if (chance(0.5)) {
			agent = chance(0.9) ? "sevoflurane" : "isoflurane";
			agent_pct = uniform(1.0, 2.4);
		} else if (chance(0.05)) {
			agent = "halothane";
			agent_pct = uniform(0.8, 1.5);
		}
		break;
	case 3: /* respiratory ward: the porter round */
		transport = "courier";
		fio2 = chance(0.5) ? 0.21 : uniform(0.24, 0.4);
		transit = between(8, 25);
		wait = transit + between(3, 30);
		if (chance(0.3)) {
			storage = "iced";
			container = "glass-syringe";
			wait = transit + between(10, 50);
		}
		break;
	case 4: /* haematology: very high counts */
		transport = "pneumatic-tube";
		sealed = "yes";
		transit = between(3, 8);
		wait = transit + between(5, 40);
		if (chance(0.35))
			wbc = exp(uniform(log(30), log(300)));
		if (chance(0.4))
			storage = "iced";
		break;
	case 5: /* neonatal unit: capillary, small and quick */
		type = chance(0.7) ? "capillary" : "arterial";
		container = type[0] == 'c' ? "capillary" : "plastic-syringe";
		fio2 = uniform(0.21, 0.4);
		wbc = uniform(8, 25);
		break;
	default: /* labour ward: cord blood */
		type = "cord";
		wbc = uniform(9, 28);
		fio2 = 0;
		break;
	}
	if (wait < transit)
		wait = transit + 1;

	/* pO2 from the alveolar gas equation less a gradient (pB 758, water 47) */
	if (fio2 > 0) {
		double pao2 = fio2 * (758 - 47) - pco2 / 0.8;
		po2 = pao2 - uniform(8, fio2 > 0.3 ? 150 * fio2 : 35);
		if (po2 < 45)
			po2 = uniform(45, 60);
		if (air && fio2 < 0.3)
			po2 = pao2 + uniform(8, 40); /* room air pulled it up */
	} else {
		po2 = uniform(12, 30); /* cord arterial */
	}

	civil(day, &y, &mo, &d);
	printf("  <specimen>\n    <specimen_id>BG-%02d%02d%02d-%04d</specimen_id>\n", y % 100, mo,
	       d, seq);
	printf("    <location>%s%0*d</location>\n", w->bed, w->width, between(1, w->bed_count));
	printf("    <collector>%s</collector>\n", w->collectors[next() % 4]);
	printf("    <specimen_type>%s</specimen_type>\n", type);
	stamp("collected_at", day, minute);
	stamp("received_at", day, minute + transit);
	stamp("analysed_at", day, minute + wait);
	printf("    <container>%s</container>\n    <transport>%s</transport>\n", container,
	       transport);
	if (sealed)
		printf("    <sealed_carrier>%s</sealed_carrier>\n", sealed);
	printf("    <storage>%s</storage>\n    <bubbles>%s</bubbles>\n", storage, bubbles);
	if (agent)
		printf("    <agent name=\"%s\" percent=\"%.1f\"/>\n", agent, agent_pct);
	printf("    <wbc>%.1f</wbc>\n    <hb>%.1f</hb>\n", wbc, hb);
	if (fio2 > 0)
		printf("    <fio2>%.2f</fio2>\n", fio2);
	printf("    <po2>%.0f</po2>\n    <pco2>%.0f</pco2>\n    <ph>%.2f</ph>\n  </specimen>\n",
	       po2, pco2, ph);
}

int main(int argc, char **argv)
{
	long days = argc > 1 ? strtol(argv[1], NULL, 10) : 30;
	/* Monday 2 March 2026: 20514 days after 1970-01-01 */
	const long first = 20514;
	if (days <= 0 || days > 3660) {
		fputs("usage: genmonth [DAYS [SEED]]   (DAYS 1..3660)\n", stderr);
		return 2;
	}
	state = argc > 2 ? strtoull(argv[2], NULL, 10) : 20260302;
	puts("<?xml version=\"1.0\" encoding=\"UTF-8\"?>");
	puts("<!--\n  INVENTED DEMO DATA, made by tests/audit/genmonth.c. St. Brannoc Regional "
	     "Hospital\n  does not exist; its wards, staff codes and specimens are made up for "
	     "demonstrating\n  and testing syrinx audit. Not real patients, not real staff, not "
	     "a real hospital.\n-->");
	puts("<specimens source=\"St. Brannoc Regional Hospital LIS (invented)\" version=\"1\">");
	for (long day = first; day < first + days; day++) {
		int weekday = (int)((day + 3) % 7); /* 0 = Monday: 1970-01-01 was a Thursday */
		int week = (int)((day - first) / 7);
		int count = weekday >= 5 ? between(30, 35) : between(40, 47);
		int minutes[64];
		/* collection times, sorted: busier by day than by night */
		for (int i = 0; i < count; i++)
			minutes[i] = chance(0.75) ? between(7 * 60, 20 * 60) : between(0, 1439);
		for (int i = 1; i < count; i++)
			for (int j = i; j > 0 && minutes[j - 1] > minutes[j]; j--) {
				int t = minutes[j];
				minutes[j] = minutes[j - 1];
				minutes[j - 1] = t;
			}
		for (int i = 0; i < count; i++)
			specimen(day, week, i + 1, minutes[i]);
	}
	puts("</specimens>");
	return 0;
}
