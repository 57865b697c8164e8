/* SPDX-License-Identifier: MIT */
/*
 * reftable.h - reading a reference table of tests/reference/ (computed with
 * scipy: each row a kind, REF_ARGS arguments and the expected value,
 * tab-separated) into a test program. Define REF_ARGS and REF_ROWS before
 * including it; the directory comes from $SX_REFDIR. One copy of this reader
 * for every suite that checks against such a table.
 */
#ifndef SX_TEST_REFTABLE_H
#define SX_TEST_REFTABLE_H

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#ifndef REF_ARGS
#error "define REF_ARGS (arguments per row) before including reftable.h"
#endif
#ifndef REF_ROWS
#error "define REF_ROWS (rows at most) before including reftable.h"
#endif


struct ref_row {
	char kind[32];
	double a[REF_ARGS];
	double value;
};

static struct ref_row ref_rows[REF_ROWS];
static int ref_count;
static char ref_path[1024];
static char ref_error[1200];

/* Read the table `file` once, before the runner forks; rows of other kinds are
 * kept too (they are skipped by the row test). Errors are kept for the test
 * that checks the table is there. */
static inline void ref_load_named(const char *file)
{
	const char *dir = getenv("SX_REFDIR");
	char line[1024];
	FILE *f;

	if (!dir || !*dir)
		dir = "tests/reference";
	snprintf(ref_path, sizeof(ref_path), "%s/%s", dir, file);
	f = fopen(ref_path, "r");
	if (!f) {
		snprintf(ref_error, sizeof(ref_error), "cannot open %s (set SX_REFDIR)", ref_path);
		return;
	}
	while (fgets(line, sizeof(line), f)) {
		struct ref_row *r;
		size_t n = strcspn(line, "\t");
		char *s, *end;
		int i;

		if (line[0] == '#' || line[0] == '\n' || strncmp(line, "kind\t", 5) == 0)
			continue;
		if (ref_count == REF_ROWS || n == 0 || n >= sizeof(r->kind) || line[n] != '\t') {
			snprintf(ref_error, sizeof(ref_error), "%s: bad row %d", ref_path,
			         ref_count + 1);
			break;
		}
		r = &ref_rows[ref_count];
		memcpy(r->kind, line, n);
		r->kind[n] = '\0';
		s = line + n;
		for (i = 0; i <= REF_ARGS; i++) {
			double v = strtod(s, &end);

			if (end == s)
				break;
			if (i < REF_ARGS)
				r->a[i] = v;
			else
				r->value = v;
			s = end;
		}
		if (i <= REF_ARGS) {
			snprintf(ref_error, sizeof(ref_error), "%s: short row %d", ref_path,
			         ref_count + 1);
			break;
		}
		ref_count++;
	}
	fclose(f);
}

static inline int ref_count_kind(const char *kind)
{
	int i, n = 0;

	for (i = 0; i < ref_count; i++)
		n += strcmp(ref_rows[i].kind, kind) == 0;
	return n;
}

#endif
