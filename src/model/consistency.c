/* SPDX-License-Identifier: MIT */
/*
 * consistency.c - measured pO2 against the alveolar gas equation.
 * PAO2 = FiO2 (Pb - 47) - PaCO2 / R (clinical references; MODEL-SOURCES).
 * Tolerance: the analyser's allowable error, the larger of 0.6 kPa and 7.5 %.
 */
#include "model/consistency.h"

#include <math.h>

#include "model/atmosphere.h"

sx_alveolar_check sx_consistency_alveolar(double po2, double fio2, double barometric,
					  double pco2, double resp_quotient,
					  double tolerance_mmhg, double tolerance_fraction)
{
	sx_alveolar_check c;
	c.pao2 = sx_alveolar_po2(fio2, barometric, pco2, resp_quotient);
	c.limit = c.pao2 + fmax(tolerance_mmhg, tolerance_fraction * c.pao2);
	c.exceeded = po2 > c.limit;
	return c;
}
