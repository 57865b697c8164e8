/* SPDX-License-Identifier: MIT */
/*
 * consistency.h - checks of a measured pO2 against physiology.
 *
 * Alveolar gas: arterial pO2 cannot exceed the alveolar pO2 (the A-a gradient
 * is never negative); a reading above PAO2 by more than the analyser's error
 * points at air in the specimen or a wrong FiO2.
 */
#ifndef SX_CONSISTENCY_H
#define SX_CONSISTENCY_H

#include <stdbool.h>

typedef struct sx_alveolar_check {
	double pao2;         /* alveolar pO2 from the alveolar gas equation, mmHg */
	double limit;        /* pao2 plus the tolerance */
	bool exceeded;       /* measured pO2 above the limit */
} sx_alveolar_check;

/* Compare po2 with the alveolar gas equation (short form). */
sx_alveolar_check sx_consistency_alveolar(double po2, double fio2, double barometric,
					  double pco2, double resp_quotient,
					  double tolerance_mmhg, double tolerance_fraction);

#endif
