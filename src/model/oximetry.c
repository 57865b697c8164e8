/* SPDX-License-Identifier: MIT */
/*
 * oximetry.c - the reading against the pulse oximeter.
 *
 *   S_a  = 100 S(P; 37 C, pH, pCO2)                   (oxygen.h)
 *   gap  = SpO2 - S_a,  sd = sqrt(ox_sd^2 + curve_sd^2),  z = gap / sd
 *   if venous, the arterial pO2 was P + d, d within the 95 % CI of the mean
 *   a-v difference (36.9, 27.2-46.6 mmHg, Respirology 2014); the d that
 *   brings S(P + d) nearest SpO2 is d* = clamp(P(SpO2) - P, low, high), so
 *   llr = (gap^2 - (SpO2 - 100 S(P + d*))^2) / (2 sd^2)
 * looks venous: z > z_limit (too low for arterial), llr >= venous_llr (venous
 * much likelier) and the venous miss within z_limit SD (venous fits at all).
 *
 * Oximeter error: bias and SD under 3 % above SaO2 83 % (Eur Respir J
 * 1991;4:115); Arms <= 4 % (ISO 80601-2-61, from memory).
 */
#include "model/oximetry.h"

#include <math.h>

#include "model/oxygen.h"

sx_oximetry_params sx_oximetry_defaults(void)
{
	sx_oximetry_params p;

	p.oximeter_sd = 3.0;
	p.curve_sd = 0.55;
	p.low_sat = 83.0;
	p.min_sat = 70.0;
	p.av_low = 27.2;
	p.av_mean = 36.9;
	p.av_high = 46.6;
	p.z_limit = 2.0;
	p.venous_llr = log(10.0);
	return p;
}

void sx_oximetry_bounds(sx_oximetry_params *low, sx_oximetry_params *high)
{
	sx_oximetry_params d = sx_oximetry_defaults();

	if (low) {
		*low = d;
		low->oximeter_sd = 2.0;
		low->curve_sd = 0.3;
	}
	if (high) {
		*high = d;
		high->oximeter_sd = 4.0;
		high->curve_sd = 1.0;
	}
}

static sx_blood_state state_37(double ph, double pco2)
{
	sx_blood_state s = sx_blood_state_standard();

	s.temp_c = 37.0;
	s.ph = ph;
	s.pco2 = pco2;
	return s;
}

double sx_oximetry_saturation(double po2, double ph, double pco2)
{
	sx_blood_state s;

	if (!isfinite(po2) || po2 < 0.0 || !isfinite(ph) || !isfinite(pco2) || !(pco2 > 0.0))
		return NAN;
	s = state_37(ph, pco2);
	return 100.0 * sx_o2_saturation(po2, &s);
}

sx_status sx_oximetry_assess(const sx_oximetry_params *p, double po2, double ph, double pco2,
                             double spo2, sx_oximetry_result *out)
{
	sx_blood_state s;
	double ox_sd, d, miss_v;

	if (!p || !out || !isfinite(po2) || po2 < 0.0 || !isfinite(ph) || !isfinite(pco2) ||
	    !(pco2 > 0.0) || !isfinite(spo2) || spo2 < 0.0 || spo2 > 100.0 ||
	    !(p->av_low <= p->av_high))
		return SX_EINVAL;
	s = state_37(ph, pco2);
	out->sat = 100.0 * sx_o2_saturation(po2, &s);
	out->gap = spo2 - out->sat;
	ox_sd = spo2 < p->low_sat ? 2.0 * p->oximeter_sd : p->oximeter_sd;
	out->sd = sqrt(ox_sd * ox_sd + p->curve_sd * p->curve_sd);
	if (!(out->sd > 0.0))
		return SX_EINVAL;
	out->z = out->gap / out->sd;
	out->po2_expected = sx_o2_po2_from_saturation(spo2 / 100.0, &s);
	d = out->po2_expected - po2;
	out->av_fitted = fmin(fmax(isnan(d) ? p->av_high : d, p->av_low), p->av_high);
	miss_v = spo2 - 100.0 * sx_o2_saturation(po2 + out->av_fitted, &s);
	out->venous_z = miss_v / out->sd;
	out->llr = (out->gap * out->gap - miss_v * miss_v) / (2.0 * out->sd * out->sd);

	if (spo2 < p->min_sat)
		out->cls = SX_OXIMETRY_NOT_ASSESSED;
	else if (out->z > p->z_limit)
		out->cls = out->llr >= p->venous_llr && fabs(out->venous_z) <= p->z_limit
		                   ? SX_OXIMETRY_LOOKS_VENOUS
		                   : SX_OXIMETRY_PO2_LOW;
	else if (out->z < -p->z_limit)
		out->cls = SX_OXIMETRY_PO2_HIGH;
	else
		out->cls = SX_OXIMETRY_CONSISTENT;
	return SX_OK;
}

const char *sx_oximetry_class_name(sx_oximetry_class cls)
{
	switch (cls) {
	case SX_OXIMETRY_NOT_ASSESSED:
		return "not-assessed";
	case SX_OXIMETRY_CONSISTENT:
		return "consistent";
	case SX_OXIMETRY_PO2_LOW:
		return "po2-low";
	case SX_OXIMETRY_LOOKS_VENOUS:
		return "looks-venous";
	case SX_OXIMETRY_PO2_HIGH:
		return "po2-high";
	}
	return "unknown";
}
