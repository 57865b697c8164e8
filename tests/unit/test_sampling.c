/* SPDX-License-Identifier: MIT */
/*
 * test_sampling.c - deterministic sampling: strata, distributions, quantiles.
 * Reference values computed with scipy 1.10 / numpy 1.24 (Debian bookworm) at the
 * time of writing, as named beside each table.
 */
#include <check.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "model/sampling.h"

/* scipy.stats.norm.ppf (scipy 1.10) */
static const struct {
	double u, z;
} normal[] = {
	{1e-06, -4.7534243088228987}, {0.001, -3.0902323061678132}, {0.02, -2.053748910631823},
	{0.05, -1.6448536269514729},  {0.3, -0.52440051270804089},  {0.5, 0},
	{0.7, 0.52440051270804067},   {0.95, 1.6448536269514722},   {0.99, 2.3263478740408408},
	{0.999999, 4.7534243088170873},
};

START_TEST(normal_quantile_matches_scipy)
{
	ck_assert_double_eq_tol(sx_normal_quantile(normal[_i].u), normal[_i].z, 1e-9);
}
END_TEST

/* scipy.stats.triang.ppf(u, (c-a)/(b-a), loc=a, scale=b-a) (scipy 1.10) */
static const struct {
	sx_range r;
	double u, x;
} triangular[] = {
	{{0, 1, 4}, 0.1, 0.63245553203367588},     {{0, 1, 4}, 0.25, 1},
	{{0, 1, 4}, 0.9, 2.9045548849896679},      {{1.9, 2.0, 3.0}, 0.5, 2.2583801512904338},
	{{2, 2, 5}, 0.3, 2.4900199203977733},      {{0, 5, 5}, 0.3, 2.7386127875258302},
	{{3, 3, 3}, 0.7, 3},
};

START_TEST(triangular_matches_scipy)
{
	ck_assert_double_eq_tol(sx_triangular(triangular[_i].r, triangular[_i].u),
				triangular[_i].x, 1e-12);
}
END_TEST

/* numpy.percentile(v, 100 p), default linear method (numpy 1.24) */
static const struct {
	double p, q;
} quantiles[] = {
	{0.05, 1.1499999999999999}, {0.5, 3}, {0.95, 7.7999999999999972},
	{0.0, 1},                   {1.0, 9}, {0.33, 2.5779999999999998},
};

START_TEST(quantile_matches_numpy)
{
	double v[] = {3.0, 1.0, 4.0, 1.5, 9.0, 2.6, 5.0};
	sx_sort_doubles(v, 7);
	ck_assert_double_eq_tol(sx_quantile_sorted(v, 7, quantiles[_i].p), quantiles[_i].q, 1e-12);
}
END_TEST

START_TEST(each_stratum_once_per_dimension)
{
	static sx_sampler s;
	static const size_t sizes[] = {1, 2, 7, 64, SX_MAX_SAMPLES};
	for (size_t k = 0; k < sizeof sizes / sizeof sizes[0]; k++) {
		size_t n = sizes[k];
		sx_sampler_init(&s, n, 5, 42);
		for (size_t d = 0; d < 5; d++) {
			int seen[SX_MAX_SAMPLES] = {0};
			for (size_t i = 0; i < n; i++) {
				double u = sx_sampler_u(&s, i, d);
				size_t stratum = (size_t)(u * (double)n);
				ck_assert(u > 0 && u < 1);
				ck_assert_uint_lt(stratum, n);
				seen[stratum]++;
			}
			for (size_t i = 0; i < n; i++)
				ck_assert_int_eq(seen[i], 1);
		}
	}
}
END_TEST

START_TEST(same_seed_same_samples)
{
	static sx_sampler a, b;
	sx_sampler_init(&a, 64, 8, 7);
	sx_sampler_init(&b, 64, 8, 7);
	ck_assert_int_eq(memcmp(a.order, b.order, sizeof a.order), 0);
	sx_sampler_init(&b, 64, 8, 8);
	ck_assert_int_ne(memcmp(a.order, b.order, sizeof a.order), 0);
}
END_TEST

START_TEST(sorting_orders_everything)
{
	double v[SX_MAX_SAMPLES];
	uint64_t st = 1;
	for (size_t i = 0; i < SX_MAX_SAMPLES; i++)
		v[i] = (double)(sx_splitmix64(&st) % 1000) - 500.0;
	sx_sort_doubles(v, SX_MAX_SAMPLES);
	for (size_t i = 1; i < SX_MAX_SAMPLES; i++)
		ck_assert(v[i - 1] <= v[i]);
}
END_TEST

int main(void)
{
	Suite *s = suite_create("sampling");
	TCase *tc = tcase_create("core");
	SRunner *sr;
	int failed;
	tcase_add_loop_test(tc, normal_quantile_matches_scipy, 0, sizeof normal / sizeof normal[0]);
	tcase_add_loop_test(tc, triangular_matches_scipy, 0,
			    sizeof triangular / sizeof triangular[0]);
	tcase_add_loop_test(tc, quantile_matches_numpy, 0, sizeof quantiles / sizeof quantiles[0]);
	tcase_add_test(tc, each_stratum_once_per_dimension);
	tcase_add_test(tc, same_seed_same_samples);
	tcase_add_test(tc, sorting_orders_everything);
	suite_add_tcase(s, tc);
	sr = srunner_create(s);
	srunner_run_all(sr, CK_NORMAL);
	failed = srunner_ntests_failed(sr);
	srunner_free(sr);
	return failed ? EXIT_FAILURE : EXIT_SUCCESS;
}
