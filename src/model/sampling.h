/* SPDX-License-Identifier: MIT */
/*
 * sampling.h - deterministic sampling for the uncertainty of the estimate.
 *
 * The same input must give the same output to the last digit on any machine,
 * so nothing here depends on time, addresses or the platform's rand(): a
 * splitmix64 generator from a fixed seed, Latin hypercube strata (each
 * uncertain quantity sampled once in each of n equal-probability strata, in a
 * shuffled order per quantity), and inverse distribution functions that use
 * only arithmetic and sqrt.
 *
 * Ownership: an sx_sampler is a plain struct; no allocation.
 */
#ifndef SX_SAMPLING_H
#define SX_SAMPLING_H

#include <stddef.h>
#include <stdint.h>

#include "model/settings.h"

#define SX_MAX_SAMPLES 256
#define SX_MAX_DIMENSIONS 32

typedef struct sx_sampler {
	size_t samples;                                /* n */
	size_t dimensions;
	uint16_t order[SX_MAX_DIMENSIONS][SX_MAX_SAMPLES]; /* stratum of sample i, per dim */
	uint64_t rng;
} sx_sampler;

/* Prepare n samples (1..SX_MAX_SAMPLES) over dims dimensions (<= SX_MAX_DIMENSIONS)
 * from seed. The same arguments always give the same strata. */
void sx_sampler_init(sx_sampler *s, size_t samples, size_t dims, uint64_t seed);

/* A probability in (0, 1) for sample i in dimension dim: the middle of its stratum
 * (midpoint Latin hypercube, so that no randomness is left at all). */
double sx_sampler_u(const sx_sampler *s, size_t i, size_t dim);

/* Triangular distribution on r (low, mode = nominal, high) at probability u. */
double sx_triangular(sx_range r, double u);

/* For a positive scale parameter whose range spans a factor of 4 or more, the
 * triangular distribution of its logarithm (so that a wide range does not move the
 * median far from the nominal value); otherwise sx_triangular. */
double sx_triangular_scaled(sx_range r, double u);

/* Standard normal quantile at u (Acklam's rational approximation, relative error
 * below 1.2e-9; refined by one Halley step with erfc). */
double sx_normal_quantile(double u);

/* The p-quantile (0..1) of values[0..n-1], linear between order statistics
 * (type 7 of Hyndman & Fan 1996, as numpy.percentile's default). Sorts values. */
double sx_quantile_sorted(const double *sorted, size_t n, double p);
void sx_sort_doubles(double *values, size_t n);

/* splitmix64 step (public domain, S. Vigna). */
uint64_t sx_splitmix64(uint64_t *state);

#endif
