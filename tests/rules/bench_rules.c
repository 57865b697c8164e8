/* SPDX-License-Identifier: MIT */
/*
 * bench_rules.c - how fast a compiled ruleset runs: loads a ruleset (default:
 * rulesets/default), reads the specimens of a feed (default: the demo
 * morning), and times classification and both passes of the rules over them
 * many times. Facts are worked out simply here (the times, the alveolar gas
 * equation, a fixed bias), which is enough to make every rule test its
 * condition. Built by `make check`, run by hand:
 *   tests/rules/bench_rules [RULESET [FEED [SECONDS]]]
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "core/alloc.h"
#include "feed/feed.h"
#include "model/atmosphere.h"
#include "rules/ruleset.h"

#define MAX_SPECIMENS 4096

static double now(void)
{
	struct timespec t;
	clock_gettime(CLOCK_MONOTONIC, &t);
	return t.tv_sec + t.tv_nsec * 1e-9;
}

static void facts_of(const sx_specimen *s, sx_facts *f)
{
	memset(f, 0, sizeof *f);
	if (sx_specimen_has(s, SX_F_COLLECTED_AT) && sx_specimen_has(s, SX_F_ANALYSED_AT)) {
		f->has[SX_FACT_DELAY_MIN] = true;
		f->value[SX_FACT_DELAY_MIN] =
			sx_time_minutes_between(&s->time[SX_F_COLLECTED_AT], &s->time[SX_F_ANALYSED_AT]);
	}
	if (sx_specimen_has(s, SX_F_FIO2) && sx_specimen_has(s, SX_F_PO2)) {
		double pb = sx_specimen_has(s, SX_F_BAROMETRIC_MMHG) ? s->number[SX_F_BAROMETRIC_MMHG]
								     : 760.0;
		double pco2 = sx_specimen_has(s, SX_F_PCO2) ? s->number[SX_F_PCO2] : 40.0;
		double pao2 = sx_alveolar_po2(s->number[SX_F_FIO2], pb, pco2, 0.8);
		f->has[SX_FACT_ALVEOLAR_PO2_MMHG] = f->has[SX_FACT_ALVEOLAR_EXCESS_MMHG] = true;
		f->value[SX_FACT_ALVEOLAR_PO2_MMHG] = pao2;
		f->value[SX_FACT_ALVEOLAR_EXCESS_MMHG] = s->number[SX_F_PO2] - pao2;
	}
	f->has[SX_FACT_BIAS_MMHG] = f->has[SX_FACT_BIAS_ABS_MMHG] = true;
	f->has[SX_FACT_BIAS_PERCENT] = true;
	f->value[SX_FACT_BIAS_MMHG] = -6.0;
	f->value[SX_FACT_BIAS_ABS_MMHG] = 6.0;
	f->value[SX_FACT_BIAS_PERCENT] = 8.0;
}

int main(int argc, char **argv)
{
	const char *dir = argc > 1 ? argv[1] : "rulesets/default";
	const char *feedname = argc > 2 ? argv[2] : "fixtures/demo/morning.xml";
	double seconds = argc > 3 ? atof(argv[3]) : 2.0;
	static sx_specimen specimens[MAX_SPECIMENS];
	static sx_facts facts[MAX_SPECIMENS];
	size_t n = 0, rules_run = 0, rounds = 0;
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_ruleset_stats st;
	sx_feed_options fo = {SX_FEED_AUTO, 0, NULL, NULL};
	sx_feed *feed = NULL;
	sx_feed_item item;
	bool got = true;
	FILE *fp;
	double t0, t1, sink = 0;

	sx_diag_list_init(&d);
	if (sx_ruleset_load(dir, &rs, &d) != SX_OK) {
		fprintf(stderr, "bench_rules: %s does not load (syrinx rules %s)\n", dir, dir);
		return 1;
	}
	sx_diag_list_clear(&d);
	sx_ruleset_stats_get(rs, &st);
	fp = fopen(feedname, "rb");
	if (!fp || sx_feed_open(fp, feedname, &fo, &feed, &d) != SX_OK) {
		fprintf(stderr, "bench_rules: cannot read %s\n", feedname);
		return 1;
	}
	while (got && n < MAX_SPECIMENS) {
		sx_specimen_init(&specimens[n]);
		sx_feed_next(feed, &specimens[n], &item, &got, &d);
		sx_diag_list_clear(&d);
		if (got)
			n++;
	}
	sx_feed_close(feed);
	fclose(fp);
	for (size_t i = 0; i < n; i++)
		facts_of(&specimens[i], &facts[i]);

	/* classification: on a copy, so every round classifies the same text */
	t0 = now();
	do {
		for (size_t i = 0; i < n; i++) {
			sx_specimen copy = specimens[i];
			sx_ruleset_classify(rs, &copy, NULL);
			sink += copy.choice[SX_F_TRANSPORT];
		}
		rounds++;
	} while ((t1 = now()) - t0 < seconds / 2);
	printf("classify: %.0f specimens/s (%zu patterns; fields the feed gave are skipped)\n",
	       rounds * n / (t1 - t0), st.patterns);

	/* the same with every choice field emptied, so that each pattern is tried
	 * on the text (the slow case: notes and comments only) */
	rounds = 0;
	t0 = now();
	do {
		for (size_t i = 0; i < n; i++) {
			sx_specimen copy = specimens[i];
			for (int f = 0; f < SX_FIELD_COUNT; f++)
				if (sx_field_get((sx_field)f)->kind == SX_KIND_CHOICE)
					copy.present[f] = false;
			sx_ruleset_classify(rs, &copy, NULL);
			sink += copy.choice[SX_F_TRANSPORT];
		}
		rounds++;
	} while ((t1 = now()) - t0 < seconds / 2);
	printf("classify, no choice given: %.0f specimens/s\n", rounds * n / (t1 - t0));

	rounds = 0;
	t0 = now();
	do {
		for (size_t i = 0; i < n; i++) {
			sx_rule_outcome o;
			sx_rule_outcome_init(&o, rs);
			sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &specimens[i], &facts[i], &o);
			sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &specimens[i], &facts[i], &o);
			sink += o.reason_count;
		}
		rounds++;
		rules_run += n * st.rules;
	} while ((t1 = now()) - t0 < seconds / 2);
	printf("evaluate: %.0f specimens/s, %.0f rules/s (%zu rules, both passes, outcome "
	       "included)\n",
	       rounds * n / (t1 - t0), rules_run / (t1 - t0), st.rules);
	printf("(%zu specimens from %s; %s; checksum %.0f)\n", n, feedname,
	       sx_ruleset_version(rs), sink);
	for (size_t i = 0; i < n; i++)
		sx_specimen_clear(&specimens[i]);
	sx_ruleset_free(rs);
	return 0;
}
