/* SPDX-License-Identifier: MIT */
/*
 * oximetry.h - is a pO2 reading consistent with the patient's SpO2?
 *
 * The saturation the curve gives for the reading (37 C, the measured pH and
 * pCO2; oxygen.h) is compared with the pulse oximeter's SpO2, whose error is
 * known. Too low a pO2 for the SpO2 may mean a venous specimen labelled
 * arterial: the reading plus the mean arterial-venous difference should then
 * fit the SpO2. The result is a gap, a z score, a log-likelihood ratio of
 * venous against arterial and a class with documented thresholds
 * (docs/model-mechanisms.md, section Oximetry). A check, not a mechanism: it
 * changes no state.
 *
 * Units: pO2 in mmHg, saturations in % (0-100), temperature in degrees C.
 */
#ifndef SX_OXIMETRY_H
#define SX_OXIMETRY_H

#include "core/status.h"

/*
 * Defaults [ranges] and sources:
 *   oximeter_sd     3 [2, 4] %: bias and SD of pulse oximeters under 3 %
 *                   above SaO2 83 % (Eur Respir J 1991;4:115 [R]); Arms <= 4 %
 *                   over 70-100 % (ISO 80601-2-61 [M])
 *   curve_sd        0.55 [0.3, 1.0] %: Severinghaus' equation's error about
 *                   +-0.0055 (J Appl Physiol 1979 [R])
 *   low_sat         83 %: below it oximeter_sd is doubled (the 1991 figure
 *                   holds above 83 %) [D]
 *   min_sat         70 %: below it no class is given (ISO range 70-100 [M])
 *   av_low, av_mean, av_high  27.2, 36.9, 46.6 mmHg: arterial minus
 *                   peripheral venous pO2, mean and 95 % CI, meta-analysis of
 *                   18 studies (Respirology 2014 [R])
 *   z_limit         2 [J]: a gap beyond 2 SD is called inconsistent
 *   venous_llr      ln 10 = 2.303 [J]: venous must be 10 times as likely
 */
typedef struct sx_oximetry_params {
	double oximeter_sd;
	double curve_sd;
	double low_sat;
	double min_sat;
	double av_low, av_mean, av_high;
	double z_limit;
	double venous_llr;
} sx_oximetry_params;

sx_oximetry_params sx_oximetry_defaults(void);
void sx_oximetry_bounds(sx_oximetry_params *low, sx_oximetry_params *high);

typedef enum sx_oximetry_class {
	SX_OXIMETRY_NOT_ASSESSED = 0, /* SpO2 below min_sat */
	SX_OXIMETRY_CONSISTENT,       /* |z| <= z_limit */
	SX_OXIMETRY_PO2_LOW,          /* pO2 too low for the SpO2 (z > z_limit) */
	SX_OXIMETRY_LOOKS_VENOUS,     /* ... and venous explains it: llr >= venous_llr
	                               * and |venous_z| <= z_limit */
	SX_OXIMETRY_PO2_HIGH,         /* pO2 too high for the SpO2 (z < -z_limit) */
} sx_oximetry_class;

typedef struct sx_oximetry_result {
	double sat;          /* %, the curve's saturation for the reading */
	double gap;          /* SpO2 - sat, % points */
	double sd;           /* combined SD of the gap, % points */
	double z;            /* gap / sd */
	double po2_expected; /* mmHg, the curve's pO2 for the SpO2 (inf at 100 %) */
	double av_fitted;    /* mmHg, the a-v difference (within av_low..av_high)
	                      * that best explains the gap if the specimen is venous */
	double venous_z;     /* (SpO2 - 100 S(po2 + av_fitted)) / sd */
	double llr;          /* ln L(venous) - ln L(arterial) */
	sx_oximetry_class cls;
} sx_oximetry_result;

/* The saturation (%) the curve gives for po2 at 37 C, pH and pCO2. NaN for
 * bad input. */
double sx_oximetry_saturation(double po2, double ph, double pco2);

/*
 * Compare a reading (po2 at 37 C, measured pH and pCO2; 7.40 and 40 when
 * unknown) with spo2 (%). The classes and the formulas are in the header's
 * comment above and in docs. SX_EINVAL for bad input (po2 < 0, spo2 outside
 * 0..100, pco2 <= 0, NaN).
 */
sx_status sx_oximetry_assess(const sx_oximetry_params *p, double po2, double ph, double pco2,
                             double spo2, sx_oximetry_result *out);

/* "not-assessed", "consistent", "po2-low", "looks-venous", "po2-high". */
const char *sx_oximetry_class_name(sx_oximetry_class cls);

#endif
