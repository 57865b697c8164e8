/* SPDX-License-Identifier: MIT */
/*
 * test_syringe_wall.c - unit tests of src/model/syringe_wall.c: the wall's
 * capacity and rate by temperature, the wall-blood equilibrium, the step
 * (conservation, step size), glass, and the published figures the
 * parameters were fitted to (tests/reference/wall_fit.py and its output
 * wall_fit.tsv), each with its source beside the check and tagged as
 * /work/shared/MODEL-SOURCES.md tags it ([R] read in the source, [M] from
 * memory, [D] derived). The last suite compares with
 * tests/reference/mechanisms_scipy.tsv (scipy; directory from $SX_REFDIR).
 */
#include <check.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "model/atmosphere.h"
#include "model/metabolism.h"
#include "model/oxygen.h"
#include "model/syringe_wall.h"

#define ARRAY_SIZE(a) (sizeof(a) / sizeof((a)[0]))

static double rel(double rtol, double want)
{
	double t = rtol * fabs(want);

	return t > 0.0 ? t : rtol;
}

static sx_blood_state blood_at(double temp_c, double hb)
{
	sx_blood_state s = sx_blood_state_standard();

	s.temp_c = temp_c;
	s.hb = hb;
	return s;
}

static double po2_of(const sx_blood_state *b, double content)
{
	double p = -1.0;

	ck_assert_int_eq(sx_o2_po2_from_content(content, b, &p), SX_OK);
	return p;
}

/* Same parameters at every temperature. */
static sx_syringe_wall_params flat(double c, double k)
{
	sx_syringe_wall_params p = {c, c, k, k};

	return p;
}
/* ---- the scipy table (tests/reference/mechanisms_scipy.tsv) ---- */

#define REF_ARGS 8
#define REF_ROWS 256
#include "reftable.h"

static void ref_load(void)
{
	ref_load_named("mechanisms_scipy.tsv");
}

/* ---- the fit's output (tests/reference/wall_fit.tsv) ---- */

#define FIT_ROWS 32

struct fit_row {
	char kind[16], key[32];
	double v[5];
};

static struct fit_row fit_rows[FIT_ROWS];
static int fit_count;
static char fit_error[1200];

static void fit_load(void)
{
	const char *dir = getenv("SX_REFDIR");
	char path[1024], line[1024];
	FILE *f;

	if (!dir || !*dir)
		dir = "tests/reference";
	snprintf(path, sizeof(path), "%s/wall_fit.tsv", dir);
	f = fopen(path, "r");
	if (!f) {
		snprintf(fit_error, sizeof(fit_error), "cannot open %s (set SX_REFDIR)", path);
		return;
	}
	while (fgets(line, sizeof(line), f) && fit_count < FIT_ROWS) {
		struct fit_row *r = &fit_rows[fit_count];
		char *s = line, *end;
		size_t n;
		int i;

		if (line[0] == '#' || line[0] == '\n')
			continue;
		n = strcspn(s, "\t");
		if (n == 0 || n >= sizeof(r->kind) || s[n] != '\t')
			break;
		memcpy(r->kind, s, n);
		r->kind[n] = '\0';
		s += n + 1;
		n = strcspn(s, "\t");
		if (n == 0 || n >= sizeof(r->key) || s[n] != '\t')
			break;
		memcpy(r->key, s, n);
		r->key[n] = '\0';
		s += n;
		for (i = 0; i < 5; i++) {
			r->v[i] = strtod(s, &end);
			if (end == s)
				break;
			s = end;
		}
		if (i < 5)
			break;
		fit_count++;
	}
	if (!feof(f) && fit_error[0] == '\0')
		snprintf(fit_error, sizeof(fit_error), "%s: bad row %d", path, fit_count + 1);
	fclose(f);
}

static const struct fit_row *fit_find(const char *kind, const char *key)
{
	for (int i = 0; i < fit_count; i++)
		if (strcmp(fit_rows[i].kind, kind) == 0 && strcmp(fit_rows[i].key, key) == 0)
			return &fit_rows[i];
	return NULL;
}

/* ---- parameters ---- */

START_TEST(test_fit_table)
{
	ck_assert_msg(fit_error[0] == '\0', "%s", fit_error);
	ck_assert_int_ge(fit_count, 15);
}
END_TEST

START_TEST(test_defaults_are_the_fit)
{
	/* tests/reference/wall_fit.py (scipy least_squares) fit to all figures:
	 * the defaults are its output rounded to 3 digits; the bounds are its
	 * range columns */
	static const char *const names[] = {"capacity_room", "capacity_iced", "rate_room",
	                                    "rate_iced"};
	sx_syringe_wall_params d = sx_syringe_wall_defaults(), lo, hi;
	const double *pd = &d.capacity_room, *pl = &lo.capacity_room, *ph = &hi.capacity_room;
	size_t i;

	sx_syringe_wall_bounds(&lo, &hi);
	for (i = 0; i < ARRAY_SIZE(names); i++) {
		const struct fit_row *r = fit_find("param", names[i]);

		ck_assert_msg(r != NULL, "wall_fit.tsv: no param %s", names[i]);
		ck_assert_double_eq_tol(pd[i], r->v[0], rel(0.005, r->v[0]));
		ck_assert_double_eq_tol(pl[i], r->v[3], rel(0.005, r->v[3]));
		ck_assert_double_eq_tol(ph[i], r->v[4], rel(0.005, r->v[4]));
		ck_assert(pl[i] <= pd[i] && pd[i] <= ph[i]);
		ck_assert(pl[i] > 0.0);
	}
	sx_syringe_wall_bounds(NULL, NULL);
}
END_TEST

START_TEST(test_temperature_law)
{
	/* log-linear between the anchors at 22 and 2 C (syringe_wall.h) */
	sx_syringe_wall_params p = {1e-3, 4e-3, 0.2, 0.02};

	ck_assert_double_eq_tol(sx_syringe_wall_capacity(&p, SX_WALL_PLASTIC, 22.0), 1e-3, 1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_capacity(&p, SX_WALL_PLASTIC, 2.0), 4e-3, 1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_capacity(&p, SX_WALL_PLASTIC, 12.0), 2e-3, 1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_rate(&p, SX_WALL_PLASTIC, 12.0), sqrt(0.004),
	                        1e-15);
	/* outside the measured 2-22 C the law is held at its end values, not extrapolated: a
	 * syringe still warm from the patient is not given an ever faster wall */
	ck_assert_double_eq_tol(sx_syringe_wall_rate(&p, SX_WALL_PLASTIC, 42.0), 0.2, 1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_capacity(&p, SX_WALL_PLASTIC, 37.0), 1e-3, 1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_rate(&p, SX_WALL_PLASTIC, -4.0), 0.02, 1e-15);
	/* glass holds none (Mahoney et al. 1991 [R]: iced glass stable) */
	ck_assert_double_eq_tol(sx_syringe_wall_capacity(&p, SX_WALL_GLASS, 2.0), 0.0, 1e-300);
	ck_assert_double_eq_tol(sx_syringe_wall_rate(&p, SX_WALL_GLASS, 2.0), 0.0, 1e-300);
	ck_assert_double_eq_tol(sx_syringe_wall_start(&p, SX_WALL_GLASS, 22.0, 157.0), 0.0, 1e-300);
	ck_assert_double_eq_tol(sx_syringe_wall_start(&p, SX_WALL_PLASTIC, 22.0, 157.0), 0.157,
	                        1e-15);
	ck_assert_double_eq_tol(sx_syringe_wall_po2(&p, SX_WALL_PLASTIC, 22.0, 0.157), 157.0,
	                        1e-12);
	p.capacity_room = 0.0;
	ck_assert(isnan(sx_syringe_wall_capacity(&p, SX_WALL_PLASTIC, 22.0)));
	ck_assert(isnan(sx_syringe_wall_capacity(NULL, SX_WALL_PLASTIC, 22.0)));
	ck_assert(isnan(sx_syringe_wall_rate(&p, SX_WALL_PLASTIC, NAN)));
}
END_TEST

/* ---- equilibrium and steps ---- */

static const struct {
	double temp_c, hb, po2;
} samples[] = {
        {22.0, 15.0, 35.0}, {22.0, 15.0, 540.0}, {2.0, 15.0, 10.0},
        {2.0, 15.0, 430.0}, {2.0, 0.0, 67.0},    {22.0, 5.0, 300.0},
        {37.0, 15.0, 90.0}, {37.0, 8.0, 150.0},  {2.0, 15.0, 157.1},
};

static sx_wall_state fresh(const sx_syringe_wall_params *p, const sx_blood_state *b, double po2)
{
	sx_wall_state s;

	s.content = sx_o2_content(po2, b);
	s.wall_o2 =
	        sx_syringe_wall_start(p, SX_WALL_PLASTIC, 22.0, sx_room_air_po2(760.0, 22.0, 0.5));
	return s;
}

START_TEST(test_equilibrium)
{
	/* conserved, one shared pO2, between the two starting pO2s [D] */
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state b = blood_at(samples[_i].temp_c, samples[_i].hb);
	sx_wall_state s = fresh(&p, &b, samples[_i].po2), eq;
	double pe, pw = sx_syringe_wall_po2(&p, SX_WALL_PLASTIC, b.temp_c, s.wall_o2);
	double tot = s.content + s.wall_o2;

	ck_assert_int_eq(sx_syringe_wall_equilibrium(&p, SX_WALL_PLASTIC, &b, &s, &eq, &pe), SX_OK);
	ck_assert_double_eq_tol(eq.content + eq.wall_o2, tot, rel(1e-12, tot));
	ck_assert_double_eq_tol(po2_of(&b, eq.content), pe, rel(1e-9, pe));
	ck_assert_double_eq_tol(sx_syringe_wall_po2(&p, SX_WALL_PLASTIC, b.temp_c, eq.wall_o2), pe,
	                        rel(1e-9, pe));
	ck_assert(pe >= fmin(pw, samples[_i].po2) - 1e-9);
	ck_assert(pe <= fmax(pw, samples[_i].po2) + 1e-9);
}
END_TEST

START_TEST(test_step_conserves_and_splits)
{
	/* O2 conserved to 1e-9; two half steps equal one step (first order with
	 * a fixed equilibrium [D]); a long time reaches the equilibrium */
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state b = blood_at(samples[_i].temp_c, samples[_i].hb);
	sx_wall_state s0 = fresh(&p, &b, samples[_i].po2), one, two, eq, s;
	double tot = s0.content + s0.wall_o2;
	int k;

	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 10.0, &s0, &one), SX_OK);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 5.0, &s0, &two), SX_OK);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 5.0, &two, &two), SX_OK);
	ck_assert_double_eq_tol(one.content + one.wall_o2, tot, rel(1e-9, tot));
	ck_assert_double_eq_tol(two.content, one.content, rel(1e-10, one.content));
	ck_assert_int_eq(sx_syringe_wall_equilibrium(&p, SX_WALL_PLASTIC, &b, &s0, &eq, NULL),
	                 SX_OK);
	s = s0;
	for (k = 0; k < 200; k++) {
		ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 25.0, &s, &s),
		                 SX_OK);
		ck_assert_double_eq_tol(s.content + s.wall_o2, tot, rel(1e-9, tot));
	}
	ck_assert_double_eq_tol(s.content, eq.content, rel(1e-9, eq.content));
}
END_TEST

START_TEST(test_direction)
{
	/* Scott, Horton & Mapleson 1971 [R]: O2 held in the plastic, a high pO2
	 * falls; Mahoney et al. 1991 [R]: a cold sample gains. A sample below the
	 * wall's pO2 gains O2, one above loses it. */
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state b = blood_at(samples[_i].temp_c, samples[_i].hb);
	sx_wall_state s0 = fresh(&p, &b, samples[_i].po2), s;
	double pw = sx_syringe_wall_po2(&p, SX_WALL_PLASTIC, b.temp_c, s0.wall_o2);

	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 30.0, &s0, &s), SX_OK);
	if (samples[_i].po2 < pw - 0.5)
		ck_assert(s.content > s0.content);
	else if (samples[_i].po2 > pw + 0.5)
		ck_assert(s.content < s0.content);
}
END_TEST

START_TEST(test_hb_buffers)
{
	/* Schmidt & Muller-Plathe 1992 [R] in MODEL-SOURCES: deoxygenated Hb
	 * buffers hypoxaemic samples. The same O2 gain moves a cold hypoxaemic
	 * sample's pO2 less than a plasma sample's, and the wall gives the
	 * hypoxaemic blood more O2 (its pO2 stays low). */
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state blood = blood_at(2.0, 15.0), plasma = blood_at(2.0, 0.0);
	sx_wall_state sb = fresh(&p, &blood, 10.0), sp = fresh(&p, &plasma, 10.0), ob, op;

	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &blood, 30.0, &sb, &ob), SX_OK);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &plasma, 30.0, &sp, &op), SX_OK);
	ck_assert(ob.content - sb.content > op.content - sp.content);
	ck_assert(po2_of(&blood, ob.content) - 10.0 < 0.1 * (po2_of(&plasma, op.content) - 10.0));
}
END_TEST

START_TEST(test_glass)
{
	/* Mahoney et al., Clin Chem 1991 [R]: iced glass stable 60 min; glass
	 * holds no O2, the step changes nothing */
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state b = blood_at(2.0, 15.0);
	sx_wall_state s0 = {sx_o2_content(12.0, &b), 0.0}, s, eq;
	double pe;

	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_GLASS, &b, 60.0, &s0, &s), SX_OK);
	ck_assert_double_eq_tol(s.content, s0.content, 1e-300);
	ck_assert_double_eq_tol(s.wall_o2, 0.0, 1e-300);
	ck_assert_int_eq(sx_syringe_wall_equilibrium(&p, SX_WALL_GLASS, &b, &s0, &eq, &pe), SX_OK);
	ck_assert_double_eq_tol(pe, 12.0, 1e-9);
}
END_TEST

START_TEST(test_invalid)
{
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_blood_state b = blood_at(22.0, 15.0);
	sx_wall_state s0 = fresh(&p, &b, 50.0), s, bad = s0;

	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, -1.0, &s0, &s), SX_EINVAL);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, NAN, &s0, &s), SX_EINVAL);
	ck_assert_int_eq(sx_syringe_wall_step(NULL, SX_WALL_PLASTIC, &b, 1.0, &s0, &s), SX_EINVAL);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, NULL, 1.0, &s0, &s), SX_EINVAL);
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 1.0, &s0, NULL), SX_EINVAL);
	bad.wall_o2 = -1.0;
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 1.0, &bad, &s), SX_EINVAL);
	ck_assert_int_eq(sx_syringe_wall_equilibrium(&p, SX_WALL_PLASTIC, &b, &bad, &s, NULL),
	                 SX_EINVAL);
	p.rate_iced = -1.0;
	ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, 1.0, &s0, &s), SX_EINVAL);
	ck_assert(isnan(sx_syringe_wall_start(&p, SX_WALL_PLASTIC, 22.0, -1.0)));
}
END_TEST

/* ---- the published figures ---- */

/* Metabolism at the nominal settings (src/model/settings.c): J Appl Physiol
 * 1965 [R] 0.0085 mL/dL/min at 37 C, Q10 2.0 [M]. */
static sx_metabolism_params metabolism_nominal(void)
{
	sx_metabolism_params m = {0.0085, 4.1e-4, 7.0, 1.0e-5, 250.0, 2.0};

	return m;
}

/*
 * The scenario of wall_fit.py: blood at p37 (37 C) put into a syringe from
 * the room (wall at room-air pO2, 760 mmHg, 22 C, RH 0.5), kept `minutes` at
 * temp_c, wall then metabolism in steps of 0.5 min, analysed at 37 C.
 * Returns the change of pO2 at 37 C, mmHg.
 */
static double scenario(sx_wall_material m, double p37, double hb, double minutes, double temp_c,
                       int metab)
{
	sx_syringe_wall_params p = sx_syringe_wall_defaults();
	sx_metabolism_params mp = metabolism_nominal();
	sx_blood_state warm = blood_at(37.0, hb), here = blood_at(temp_c, hb);
	sx_wall_state s;
	int n = (int)lround(minutes / 0.5), i;
	double h;

	if (n < 1)
		n = 1;
	h = minutes / n;
	s.content = sx_o2_content(p37, &warm);
	s.wall_o2 = sx_syringe_wall_start(&p, m, 22.0, sx_room_air_po2(760.0, 22.0, 0.5));
	for (i = 0; i < n; i++) {
		ck_assert_int_eq(sx_syringe_wall_step(&p, m, &here, h, &s, &s), SX_OK);
		if (metab)
			s.content =
			        fmax(s.content - sx_metabolism_rate(&mp, -1, -1, temp_c) * h, 0.0);
	}
	return po2_of(&warm, s.content) - p37;
}

static double wall_part(double p37, double minutes, double temp_c)
{
	return scenario(SX_WALL_PLASTIC, p37, 15.0, minutes, temp_c, 1) -
	       scenario(SX_WALL_GLASS, p37, 15.0, minutes, temp_c, 1);
}

#define KPA 7.50062

static double figure_value(const char *key)
{
	if (strcmp(key, "mahoney_iced_6") == 0)
		return scenario(SX_WALL_PLASTIC, 0.06 * 713.0, 15.0, 30.0, 2.0, 1);
	if (strcmp(key, "mahoney_iced_10") == 0)
		return scenario(SX_WALL_PLASTIC, 0.10 * 713.0, 15.0, 30.0, 2.0, 1);
	if (strcmp(key, "mahoney_iced_14") == 0)
		return scenario(SX_WALL_PLASTIC, 0.14 * 713.0, 15.0, 30.0, 2.0, 1);
	if (strcmp(key, "mahoney_plasma") == 0)
		return (scenario(SX_WALL_PLASTIC, 0.06 * 713.0, 0.0, 30.0, 2.0, 0) +
		        scenario(SX_WALL_PLASTIC, 0.10 * 713.0, 0.0, 30.0, 2.0, 0) +
		        scenario(SX_WALL_PLASTIC, 0.14 * 713.0, 0.0, 30.0, 2.0, 0)) /
		       3.0;
	if (strcmp(key, "mahoney_room_6") == 0)
		return scenario(SX_WALL_PLASTIC, 0.06 * 713.0, 15.0, 30.0, 22.0, 1);
	if (strcmp(key, "mahoney_room_10") == 0)
		return scenario(SX_WALL_PLASTIC, 0.10 * 713.0, 15.0, 30.0, 22.0, 1);
	if (strcmp(key, "mahoney_room_14") == 0)
		return scenario(SX_WALL_PLASTIC, 0.14 * 713.0, 15.0, 30.0, 22.0, 1);
	if (strcmp(key, "pretto_room") == 0)
		return wall_part(650.0, 30.0, 22.0) / 30.0 / KPA;
	if (strcmp(key, "pretto_iced") == 0)
		return wall_part(650.0, 30.0, 2.0) / 30.0 / KPA;
	if (strcmp(key, "scott_2min") == 0)
		return wall_part(500.0, 2.0, 22.0) / 500.0;
	if (strcmp(key, "scott_45min") == 0)
		return wall_part(500.0, 45.0, 22.0) / 500.0;
	ck_abort_msg("unknown figure %s", key);
	return NAN;
}

/*
 * Each published figure, what the model gives with the defaults (measured,
 * also in wall_fit.tsv) and the band it is checked against: the direction
 * and the order of magnitude, not the number (the figures come from
 * different syringes and cannot all be met by one wall; docs).
 */
static const struct {
	const char *key;
	double low, high;
} figures[] = {
        /* Mahoney et al., Clin Chem 1991 [R]: iced plastic 30 min, blood
         * tonometered at 6 % O2: +0.4 mmHg; model +0.27 */
        {"mahoney_iced_6", 0.0, 1.0},
        /* ... at 10 %: +0.8 mmHg; model +1.22 */
        {"mahoney_iced_10", 0.2, 2.0},
        /* ... at 14 %: +8.4 mmHg; model +3.5 (0.42 of it) */
        {"mahoney_iced_14", 2.0, 12.0},
        /* ... plasma +12.6 to +20.9 mmHg; model 18.8 (mean of the three
         * levels; 15.6-22.0 each) */
        {"mahoney_plasma", 8.0, 30.0},
        /* ... plastic at room temperature stable 30 min; model +0.2, +0.8, +1.3
         * (with metabolism) */
        {"mahoney_room_6", -2.0, 2.0},
        {"mahoney_room_10", -2.0, 2.0},
        {"mahoney_room_14", -2.0, 2.0},
        /* Pretto & Rochford, Thorax 1994 [R]: from 650 mmHg plastic at room
         * temperature -1.21 kPa/min, glass -0.49: the wall's part -0.72;
         * model -0.42 */
        {"pretto_room", -1.2, -0.25},
        /* ... plastic on ice -0.19 kPa/min, the wall's part -0.05 to -0.19
         * (docs); model -0.20 */
        {"pretto_iced", -0.4, -0.03},
        /* Scott, Horton & Mapleson, BMJ 1971 [R]: errors up to 6 % in 2 min
         * at high pO2; model -5.9 % at 500 mmHg */
        {"scott_2min", -0.09, -0.02},
        /* ... up to 16 % in 30-60 min; model -11.7 % at 45 min */
        {"scott_45min", -0.24, -0.05},
};

START_TEST(test_published_figure)
{
	const struct fit_row *r = fit_find("figure", figures[_i].key);
	double v = figure_value(figures[_i].key);

	ck_assert_msg(r != NULL, "wall_fit.tsv: no figure %s", figures[_i].key);
	/* the C model gives what wall_fit.py's model gave with the fitted
	 * parameters (the defaults are rounded to 3 digits) */
	ck_assert_double_eq_tol(v, r->v[2], 0.01 * fabs(r->v[2]) + 1e-3);
	ck_assert_msg(v >= figures[_i].low && v <= figures[_i].high,
	              "%s: model %g outside [%g, %g] (published %g)", figures[_i].key, v,
	              figures[_i].low, figures[_i].high, r->v[0]);
}
END_TEST

START_TEST(test_mahoney_order)
{
	/* Mahoney et al. 1991 [R]: +0.4, +0.8, +8.4 mmHg at 6, 10, 14 % O2, plasma
	 * much more: the change grows with the pO2 and plasma changes most */
	double a = figure_value("mahoney_iced_6"), b = figure_value("mahoney_iced_10");
	double c = figure_value("mahoney_iced_14"), pl = figure_value("mahoney_plasma");

	ck_assert(0.0 < a && a < b && b < c);
	ck_assert(pl > 2.0 * c);
}
END_TEST

START_TEST(test_pretto_order)
{
	/* Pretto & Rochford 1994 [R]: from 650 mmHg plastic loses O2 faster at
	 * room temperature than on ice */
	ck_assert(figure_value("pretto_room") < figure_value("pretto_iced"));
	ck_assert(figure_value("pretto_iced") < 0.0);
}
END_TEST

START_TEST(test_iced_glass_stable)
{
	/* Mahoney et al. 1991 [R]: iced glass stable 60 min. Glass has no wall;
	 * with the nominal metabolism on ice (J Appl Physiol 1965 [R], Q10 2
	 * [M]) the 14 % sample falls 2.6 mmHg (measured) */
	double v = scenario(SX_WALL_GLASS, 0.14 * 713.0, 15.0, 60.0, 2.0, 1);

	ck_assert_double_eq_tol(scenario(SX_WALL_GLASS, 0.14 * 713.0, 15.0, 60.0, 2.0, 0), 0.0,
	                        1e-9);
	ck_assert(v < 0.0 && v > -3.0);
}
END_TEST

START_TEST(test_scipy_table)
{
	ck_assert_msg(ref_error[0] == '\0', "%s", ref_error);
	ck_assert_msg(ref_count_kind("wall_eq") >= 5, "%s: wall_eq rows", ref_path);
	ck_assert_msg(ref_count_kind("wall_relax") >= 5, "%s: wall_relax rows", ref_path);
	ck_assert_msg(ref_count_kind("wall_flux") >= 5, "%s: wall_flux rows", ref_path);
}
END_TEST

START_TEST(test_scipy_row)
{
	const struct ref_row *r = &ref_rows[_i];
	const double *a = r->a;

	if (_i >= ref_count)
		return;
	if (strcmp(r->kind, "wall_eq") == 0) {
		/* scipy 1.10 brentq on C(P) + c P = C0 + c Pw0 */
		sx_syringe_wall_params p = flat(a[0], 0.1);
		sx_blood_state b = blood_at(a[1], a[2]);
		sx_wall_state s = {sx_o2_content(a[3], &b), a[0] * a[4]}, eq;
		double pe;

		ck_assert_int_eq(sx_syringe_wall_equilibrium(&p, SX_WALL_PLASTIC, &b, &s, &eq, &pe),
		                 SX_OK);
		ck_assert_double_eq_tol(pe, r->value, rel(1e-9, r->value));
	} else if (strcmp(r->kind, "wall_relax") == 0 || strcmp(r->kind, "wall_flux") == 0) {
		sx_syringe_wall_params p = flat(a[0], a[1]);
		sx_blood_state b = blood_at(a[2], a[3]);
		sx_wall_state s = {sx_o2_content(a[4], &b), a[0] * a[5]};
		double got;

		ck_assert_int_eq(sx_syringe_wall_step(&p, SX_WALL_PLASTIC, &b, a[6], &s, &s),
		                 SX_OK);
		got = po2_of(&b, s.content);
		if (r->kind[5] == 'r') {
			/* scipy 1.10 solve_ivp (DOP853) of the same linearised
			 * relaxation */
			ck_assert_double_eq_tol(got, r->value, rel(1e-9, r->value));
		} else {
			/* scipy 1.10 solve_ivp of the flux law dC/dt = k c (Pw -
			 * P(C)): the linearisation differs by at most 3.3 % of the
			 * change (measured; the slow, large wall at 90 mmHg), under
			 * 0.1 % elsewhere */
			double change = fabs(r->value - a[4]);

			ck_assert_double_eq_tol(got, r->value, 0.05 * change + 1e-3);
		}
	}
}
END_TEST

static Suite *syringe_wall_suite(void)
{
	Suite *suite = suite_create("syringe_wall");
	TCase *tc;

	tc = tcase_create("parameters");
	tcase_add_test(tc, test_fit_table);
	tcase_add_test(tc, test_defaults_are_the_fit);
	tcase_add_test(tc, test_temperature_law);
	suite_add_tcase(suite, tc);

	tc = tcase_create("exchange");
	tcase_add_loop_test(tc, test_equilibrium, 0, ARRAY_SIZE(samples));
	tcase_add_loop_test(tc, test_step_conserves_and_splits, 0, ARRAY_SIZE(samples));
	tcase_add_loop_test(tc, test_direction, 0, ARRAY_SIZE(samples));
	tcase_add_test(tc, test_hb_buffers);
	tcase_add_test(tc, test_glass);
	tcase_add_test(tc, test_invalid);
	suite_add_tcase(suite, tc);

	tc = tcase_create("published figures");
	tcase_add_loop_test(tc, test_published_figure, 0, ARRAY_SIZE(figures));
	tcase_add_test(tc, test_mahoney_order);
	tcase_add_test(tc, test_pretto_order);
	tcase_add_test(tc, test_iced_glass_stable);
	tcase_set_timeout(tc, 60);
	suite_add_tcase(suite, tc);

	tc = tcase_create("scipy");
	tcase_add_test(tc, test_scipy_table);
	tcase_add_loop_test(tc, test_scipy_row, 0, ref_count > 0 ? ref_count : 1);
	suite_add_tcase(suite, tc);
	return suite;
}

int main(void)
{
	SRunner *runner;
	int failed;

	ref_load();
	fit_load();
	runner = srunner_create(syringe_wall_suite());
	srunner_run_all(runner, CK_NORMAL);
	failed = srunner_ntests_failed(runner);
	srunner_free(runner);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
