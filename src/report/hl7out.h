/* SPDX-License-Identifier: MIT */
/*
 * hl7out.h - a verdict as an HL7 v2.5.1 result message (ORU^R01), for
 * `syrinx check --format hl7` and for forwarding from the daemon.
 *
 * The message is syrinx's own design within the ORU^R01 structure of HL7
 * v2.5.1 chapter 7; docs/hl7.md shows a full example. In short:
 *   MSH  ORU^R01^ORU_R01, UNICODE UTF-8
 *   PID  PID-3 = patient_id (no names are known, so none are sent)
 *   OBR  OBR-3 = specimen_id, OBR-4 SX-SCREEN^Preanalytical pO2 screen^99SYX,
 *        OBR-7 collected_at, OBR-14 received_at, OBR-25 F (X: not screened)
 *   NTE  the caution (SX_CAUTION)
 *   OBX  SX-PO2-BIAS, -LOW, -HIGH in mm[Hg] (OBX-4 sub-id 1) and in kPa
 *        (sub-id 2); SX-PO2-BEFORE-ERROR, -LOW, -HIGH likewise (3, 4) when a
 *        reading was given; SX-MECHANISM-BIAS per mechanism (sub-id = its
 *        name); SX-DISPOSITION (CWE: accept, comment, reject)
 *   NTE  after the disposition: one per reason, then one per warning (or per
 *        input error when the specimen was not screened)
 *   SPM  SPM-2 = ^specimen_id, SPM-4 the specimen type
 * Segments end with CR; every text is escaped (feed/hl7.h).
 */
#ifndef SX_HL7OUT_H
#define SX_HL7OUT_H

#include "core/strbuf.h"
#include "core/sxtime.h"
#include "feed/hl7parse.h"
#include "report/report.h"

typedef struct sx_hl7_result_options {
	const char *control_id;            /* MSH-10; NULL: "SX-" and the specimen id */
	const sx_time *now;                /* MSH-7 and OBR-22; NULL: left empty */
	const char *application;           /* MSH-3; NULL: "SYRINX" */
	const char *facility;              /* MSH-4; may be NULL */
	const char *receiving_application; /* MSH-5; may be NULL */
	const char *receiving_facility;    /* MSH-6; may be NULL */
	const sx_hl7_delims *delims;       /* NULL: | ^ ~ \ & */
} sx_hl7_result_options;

/* One result message for one specimen (options may be NULL). */
void sx_report_hl7(sx_strbuf *out, const sx_report_item *item,
                   const sx_hl7_result_options *options);

#endif
