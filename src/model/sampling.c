/* SPDX-License-Identifier: MIT */
/*
 * sampling.c - deterministic Latin hypercube sampling, distributions, quantiles.
 */
#include "model/sampling.h"

#include <math.h>
#include <string.h>

uint64_t sx_splitmix64(uint64_t *state)
{
	uint64_t z = (*state += 0x9E3779B97F4A7C15ULL);
	z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
	z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
	return z ^ (z >> 31);
}

void sx_sampler_init(sx_sampler *s, size_t samples, size_t dims, uint64_t seed)
{
	if (samples < 1)
		samples = 1;
	if (samples > SX_MAX_SAMPLES)
		samples = SX_MAX_SAMPLES;
	if (dims > SX_MAX_DIMENSIONS)
		dims = SX_MAX_DIMENSIONS;
	s->samples = samples;
	s->dimensions = dims;
	s->rng = seed;
	for (size_t d = 0; d < dims; d++) {
		uint16_t *o = s->order[d];
		for (size_t i = 0; i < samples; i++)
			o[i] = (uint16_t)i;
		/* Fisher-Yates with an unbiased bounded draw (Lemire's multiply-shift is not
		 * needed at these sizes: rejection keeps it exact). */
		for (size_t i = samples - 1; i > 0; i--) {
			uint64_t bound = (uint64_t)i + 1, limit = UINT64_MAX - UINT64_MAX % bound, r;
			uint16_t t;
			do
				r = sx_splitmix64(&s->rng);
			while (r >= limit);
			r %= bound;
			t = o[i];
			o[i] = o[r];
			o[r] = t;
		}
	}
}

double sx_sampler_u(const sx_sampler *s, size_t i, size_t dim)
{
	if (dim >= s->dimensions || i >= s->samples)
		return 0.5;
	return ((double)s->order[dim][i] + 0.5) / (double)s->samples;
}

double sx_triangular(sx_range r, double u)
{
	double a = r.low, c = r.nominal, b = r.high;
	double f;
	if (!(b > a))
		return c;
	f = (c - a) / (b - a);
	if (u < f)
		return a + sqrt(u * (b - a) * (c - a));
	return b - sqrt((1 - u) * (b - a) * (b - c));
}

double sx_triangular_scaled(sx_range r, double u)
{
	if (r.low > 0 && r.nominal > 0 && r.high >= 4 * r.low)
		return exp(sx_triangular((sx_range){log(r.low), log(r.nominal), log(r.high)}, u));
	return sx_triangular(r, u);
}

double sx_normal_quantile(double u)
{
	/* Acklam's coefficients (public domain). */
	static const double a[] = {-3.969683028665376e+01, 2.209460984245205e+02,
				   -2.759285104469687e+02, 1.383577518672690e+02,
				   -3.066479806614716e+01, 2.506628277459239e+00};
	static const double b[] = {-5.447609879822406e+01, 1.615858368580409e+02,
				   -1.556989798598866e+02, 6.680131188771972e+01,
				   -1.328068155288572e+01};
	static const double c[] = {-7.784894002430293e-03, -3.223964580411365e-01,
				   -2.400758277161838e+00, -2.549732539343734e+00,
				   4.374664141464968e+00,  2.938163982698783e+00};
	static const double d[] = {7.784695709041462e-03, 3.224671290700398e-01,
				   2.445134137142996e+00, 3.754408661907416e+00};
	const double plow = 0.02425;
	double q, r, x, e;
	if (u <= 0)
		return -INFINITY;
	if (u >= 1)
		return INFINITY;
	if (u < plow) {
		q = sqrt(-2 * log(u));
		x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
		    ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
	} else if (u <= 1 - plow) {
		q = u - 0.5;
		r = q * q;
		x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
		    (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
	} else {
		q = sqrt(-2 * log(1 - u));
		x = -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
		    ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
	}
	/* one Halley step */
	e = 0.5 * erfc(-x / sqrt(2)) - u;
	r = e * sqrt(2 * M_PI) * exp(x * x / 2);
	return x - r / (1 + x * r / 2);
}

static void insertion_sort(double *v, size_t n)
{
	for (size_t i = 1; i < n; i++) {
		double x = v[i];
		size_t j = i;
		while (j > 0 && v[j - 1] > x) {
			v[j] = v[j - 1];
			j--;
		}
		v[j] = x;
	}
}

void sx_sort_doubles(double *values, size_t n)
{
	/* n <= SX_MAX_SAMPLES: a shell sort with Ciura's gaps, then insertion. */
	static const size_t gaps[] = {132, 57, 23, 10, 4};
	for (size_t g = 0; g < sizeof gaps / sizeof gaps[0]; g++) {
		size_t gap = gaps[g];
		for (size_t i = gap; i < n; i++) {
			double x = values[i];
			size_t j = i;
			while (j >= gap && values[j - gap] > x) {
				values[j] = values[j - gap];
				j -= gap;
			}
			values[j] = x;
		}
	}
	insertion_sort(values, n);
}

double sx_quantile_sorted(const double *v, size_t n, double p)
{
	double h, lo;
	size_t i;
	if (n == 0)
		return NAN;
	if (p <= 0)
		return v[0];
	if (p >= 1)
		return v[n - 1];
	h = (double)(n - 1) * p;
	lo = floor(h);
	i = (size_t)lo;
	if (i + 1 >= n)
		return v[n - 1];
	return v[i] + (h - lo) * (v[i + 1] - v[i]);
}
