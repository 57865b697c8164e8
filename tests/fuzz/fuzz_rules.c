/* SPDX-License-Identifier: MIT */
/*
 * fuzz_rules.c - fuzz harness for the rule language (libFuzzer entry point;
 * replayed over tests/fuzz/corpus/rules by `make check`). The input is one
 * rule file loaded from memory (include and base are refused there); when it
 * loads, it is also run over a specimen that has most fields, so the
 * evaluator, the templates and classification are fuzzed too.
 * Build for fuzzing: clang -fsanitize=fuzzer,address -Isrc ... (DEVELOPERS.md).
 */
#include <stdint.h>
#include <string.h>

#include "rules/load.h"
#include "rules/ruleset.h"

static const char *const pairs[] = {
	"specimen_id=FUZZ-1",
	"specimen_type=arterial",
	"collected_at=2026-03-14T07:02+01:00",
	"analysed_at=2026-03-14T07:50+01:00",
	"container=plastic-syringe",
	"transport_note=sent by tube, porter walked it over",
	"comments=frothy, air bubble, glass syringe on ice",
	"location=ICU/BED03",
	"wbc=80",
	"po2=140",
	"fio2=0.21",
	"spo2=97",
	"hb=14",
	NULL,
};

static void run(const sx_ruleset *rs)
{
	sx_specimen s;
	sx_facts f;
	sx_rule_outcome o;
	sx_diag_list d;
	sx_diag_list_init(&d);
	sx_specimen_init(&s);
	for (size_t i = 0; pairs[i]; i++) {
		const char *eq = strchr(pairs[i], '=');
		int field = sx_field_lookup(pairs[i], (size_t)(eq - pairs[i]));
		if (field >= 0)
			sx_specimen_set(&s, (sx_field)field, eq + 1, strlen(eq + 1), NULL, 0, NULL, &d);
	}
	sx_specimen_add_agent(&s, "Fluothane", 9, 1.0);
	sx_specimen_add_agent(&s, "n2o", 3, 66.0);
	memset(&f, 0, sizeof f);
	for (int i = 0; i < SX_FACT_COUNT; i++) {
		f.has[i] = true;
		f.value[i] = 10.0 * (i + 1) - 35.0;
	}
	sx_ruleset_classify(rs, &s, &d);
	sx_rule_outcome_init(&o, rs);
	sx_ruleset_evaluate(rs, SX_PASS_BEFORE_MODEL, &s, &f, &o);
	sx_ruleset_evaluate(rs, SX_PASS_AFTER_MODEL, &s, &f, &o);
	sx_specimen_clear(&s);
	sx_diag_list_clear(&d);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	sx_ruleset *rs = NULL;
	sx_diag_list d;
	sx_diag_list_init(&d);
	if (sx_rules_load_buffer("fuzz.rules", (const char *)data, size, &rs, &d) == SX_OK)
		run(rs);
	sx_ruleset_free(rs);
	sx_diag_list_clear(&d);
	return 0;
}
