/* SPDX-License-Identifier: MIT */
/*
 * metabolism.c - O2 consumption of the specimen's cells.
 *
 *   VO2(T) = [b + kw max(0, WBC - WBCref) + kp max(0, PLT - PLTref)] Q10^((T - 37)/10)
 *
 * b: normal blood about 0.0085 mL O2/dL/min at 37 C (J Appl Physiol 1965).
 * kw: 0.111 umol O2/h per 10^7 leukocytes (Bisset 1959) = 4.1e-4 mL/dL/min
 *     per 10^9/L. Spurious hypoxaemia in leukaemia: Hess et al., NEJM 1979.
 * kp: platelet consumption reported (Eur Respir J 2008); size from memory.
 * Q10: ice brings metabolism to about 10 % of the 37 C rate (review).
 */
#include "model/metabolism.h"

#include <math.h>

double sx_metabolism_rate_37(const sx_metabolism_params *p, double wbc, double platelets)
{
	double rate = p->blood_vo2_37;
	if (wbc > p->wbc_reference)
		rate += p->wbc_vo2_37 * (wbc - p->wbc_reference);
	if (platelets > p->platelet_reference)
		rate += p->platelet_vo2_37 * (platelets - p->platelet_reference);
	return rate;
}

double sx_metabolism_rate(const sx_metabolism_params *p, double wbc, double platelets,
			  double temp_c)
{
	return sx_metabolism_rate_37(p, wbc, platelets) * pow(p->q10, (temp_c - 37.0) / 10.0);
}

double sx_metabolism_consumed(const sx_metabolism_params *p, double wbc, double platelets,
			      const sx_phase *phases, size_t count)
{
	double total = 0.0;
	for (size_t i = 0; i < count; i++)
		if (phases[i].minutes > 0)
			total += sx_metabolism_rate(p, wbc, platelets, phases[i].temp_c) *
				 phases[i].minutes;
	return total;
}
