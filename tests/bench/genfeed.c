/* SPDX-License-Identifier: MIT */
/*
 * genfeed.c - writes a varied XML feed of N invented specimens to stdout, for
 * the benchmarks (deterministic: the same N gives the same bytes).
 *
 * usage: genfeed N [SEED]
 *
 * The mix follows the demo morning: most specimens clean and quick, some with
 * bubbles, tube transport, long waits, ice, high leukocyte counts, liquid
 * heparin, volatile agents, units other than the internal ones.
 */
#include <inttypes.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

static uint64_t state;

/* splitmix64 (public domain, Sebastiano Vigna) */
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

static const char *pick(const char *const *v, size_t n)
{
	return v[next() % n];
}

int main(int argc, char **argv)
{
	static const char *const wards[] = {"ICU", "ED", "THEATRE", "RESP", "NNU", "HAEM", "CCU"};
	static const char *const bubbles[] = {"none", "none", "none", "small", "large", "froth"};
	static const char *const agents[] = {"halothane", "sevoflurane", "isoflurane",
					     "nitrous-oxide", "desflurane"};
	long n;
	if (argc < 2 || (n = strtol(argv[1], NULL, 10)) <= 0) {
		fputs("usage: genfeed N [SEED]\n", stderr);
		return 2;
	}
	state = argc > 2 ? strtoull(argv[2], NULL, 10) : 20260314;
	puts("<?xml version=\"1.0\" encoding=\"UTF-8\"?>");
	puts("<!-- invented benchmark feed: no real patients -->");
	puts("<specimens source=\"genfeed\" version=\"1\">");
	for (long i = 0; i < n; i++) {
		int day = 1 + (int)(i / 2000) % 28, minute = (int)(i % 600);
		int wait = chance(0.8) ? (int)uniform(2, 20) : (int)uniform(20, 150);
		int transit = wait > 3 ? (int)uniform(1, 3) : 1;
		int tube = chance(0.3), iced = chance(0.15);
		double fio2 = chance(0.6) ? 0.21 : uniform(0.3, 1.0);
		double po2 = fio2 * 500 + uniform(-40, 40);
		if (po2 < 35)
			po2 = 35 + uniform(0, 20);
		printf("  <specimen>\n    <specimen_id>BN-%08ld</specimen_id>\n", i + 1);
		printf("    <patient_id>BNP-%06" PRIu64 "</patient_id>\n", next() % 400000);
		printf("    <location>%s/BED%02d</location>\n", pick(wards, 7), (int)(next() % 20));
		printf("    <specimen_type>%s</specimen_type>\n", chance(0.9) ? "arterial" : "venous");
		printf("    <collected_at>2026-02-%02dT%02d:%02d+01:00</collected_at>\n", day,
		       6 + minute / 60, minute % 60);
		printf("    <received_at>2026-02-%02dT%02d:%02d+01:00</received_at>\n", day,
		       6 + (minute + transit) / 60, (minute + transit) % 60);
		printf("    <analysed_at>2026-02-%02dT%02d:%02d+01:00</analysed_at>\n", day,
		       6 + (minute + wait) / 60, (minute + wait) % 60);
		printf("    <container>%s</container>\n",
		       chance(0.9) ? "plastic-syringe" : "glass-syringe");
		printf("    <anticoagulant>%s</anticoagulant>\n",
		       chance(0.1) ? "liquid-heparin" : "dry-heparin");
		printf("    <fill_volume_ml>%.1f</fill_volume_ml>\n", uniform(0.8, 2.5));
		printf("    <transport>%s</transport>\n", tube ? "pneumatic-tube" : "hand");
		if (tube)
			printf("    <sealed_carrier>%s</sealed_carrier>\n", chance(0.5) ? "yes" : "no");
		printf("    <storage>%s</storage>\n", iced ? "iced" : "room");
		printf("    <bubbles>%s</bubbles>\n", pick(bubbles, 6));
		if (chance(0.05))
			printf("    <agent name=\"%s\" percent=\"%.1f\"/>\n", pick(agents, 5),
			       uniform(0.5, 2.0));
		printf("    <wbc>%.1f</wbc>\n", chance(0.05) ? uniform(50, 400) : uniform(4, 15));
		printf("    <platelets>%.0f</platelets>\n", uniform(100, 450));
		if (chance(0.2))
			printf("    <hb unit=\"g/L\">%.0f</hb>\n", uniform(70, 170));
		else
			printf("    <hb>%.1f</hb>\n", uniform(7, 17));
		printf("    <fio2>%.2f</fio2>\n    <spo2>%.0f</spo2>\n", fio2, uniform(88, 100));
		if (chance(0.3))
			printf("    <po2 unit=\"kPa\">%.2f</po2>\n", po2 / 7.50062);
		else
			printf("    <po2>%.1f</po2>\n", po2);
		printf("    <pco2>%.1f</pco2>\n    <ph>%.2f</ph>\n  </specimen>\n",
		       uniform(30, 55), uniform(7.25, 7.50));
	}
	puts("</specimens>");
	return 0;
}
