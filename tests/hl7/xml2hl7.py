#!/usr/bin/env python3
# SPDX-License-Identifier: MIT
"""Write an XML feed (docs/schema/feed.xsd) as an HL7 v2 batch file.

    python3 tests/hl7/xml2hl7.py fixtures/demo/morning.xml > fixtures/demo/morning.hl7

The result holds the SAME specimens, so that `syrinx check` gives the same
verdicts for both files (tests/hl7/demo.sh compares them). It is written the
way the invented St. Brannoc Regional Hospital's systems would send it
(fixtures/demo/README.md; everything there is invented):

  - a batch file: FHS, BHS, one message per specimen, BTS, FTS; segments end
    with CR, as HL7 v2 requires;
  - the blood-gas analysers send ORU^R01 v2.5.1 (order first: PID, PV1, OBR,
    NTE, OBX..., SPM);
  - the respiratory laboratory (kPa results) sends OUL^R22 v2.7 with the
    five-character MSH-2 ^~\\&# (specimen first: SPM with the observations
    about the specimen, then OBR with the results);
  - results by LOINC code, the preanalytical observations by syrinx's local
    codes (SX-..., coding system 99SYX), as docs/hl7.md describes;
  - SPM-17 collection, SPM-18 receipt, OBX-19 of the pO2 analysis time,
    SPM-12 the volume drawn, OBR-10 the collector's id, PV1-3 the location.

Deterministic: the same XML gives the same bytes.
"""
import sys
import xml.etree.ElementTree as ET
from datetime import datetime, timedelta

FS, CS, RS, ES, SS = "|", "^", "~", "\\", "&"

# LOINC codes for the measured results (docs/hl7.md lists the sources).
LOINC = {
    "po2": ("2703-7", "Oxygen [Partial pressure] in Arterial blood"),
    "pco2": ("2019-8", "Carbon dioxide [Partial pressure] in Arterial blood"),
    "ph": ("2744-1", "pH of Arterial blood"),
    "so2": ("2708-6", "Oxygen saturation in Arterial blood"),
    "spo2": ("59408-5", "Oxygen saturation in Arterial blood by Pulse oximetry"),
    "fio2": ("3150-0", "Inhaled oxygen concentration"),
    "patient_temp_c": ("8310-5", "Body temperature"),
    "wbc": ("6690-2", "Leukocytes [#/volume] in Blood"),
    "platelets": ("777-3", "Platelets [#/volume] in Blood"),
    "hb": ("718-7", "Hemoglobin [Mass/volume] in Blood"),
    "patient_age_years": ("30525-0", "Age"),
}
VENOUS = {"po2": ("2705-2", "Oxygen [Partial pressure] in Venous blood"),
          "pco2": ("2021-4", "Carbon dioxide [Partial pressure] in Venous blood")}

# internal unit of each number field (UCUM), when the XML gives none
UNITS = {
    "po2": "mm[Hg]", "pco2": "mm[Hg]", "ph": "[pH]", "so2": "%", "spo2": "%",
    "patient_temp_c": "Cel", "wbc": "10*9/L", "platelets": "10*9/L", "hb": "g/dL",
    "patient_age_years": "a", "barometric_mmhg": "mm[Hg]", "site_altitude_m": "m",
    "nominal_volume_ml": "mL", "heparin_volume_ml": "mL", "storage_temp_c": "Cel",
    "room_temp_c": "Cel", "bubble_volume_ul": "uL",
}
CHOICES = ["container", "anticoagulant", "transport", "sealed_carrier", "storage", "bubbles"]
LOCAL_NUMBERS = ["nominal_volume_ml", "heparin_volume_ml", "storage_temp_c", "room_temp_c",
                 "bubble_volume_ul", "barometric_mmhg", "site_altitude_m"]
SPECIMEN_TYPE = {
    "arterial": "BLDA^Blood arterial^HL70487",
    "venous": "BLDV^Blood venous^HL70487",
    "capillary": "122554006^Capillary blood specimen^SCT",
    "cord": "BLDCO^Blood cord^HL70487",
    "mixed-venous": "mixed-venous^Mixed venous blood^99SYX",
}


def esc(text, trunc=None):
    """Escape text for a field (HL7 v2.5.1 section 2.7): the escape
    character first, then the delimiters."""
    out = []
    for ch in text:
        if ch == ES:
            out.append("\\E\\")
        elif ch == FS:
            out.append("\\F\\")
        elif ch == CS:
            out.append("\\S\\")
        elif ch == SS:
            out.append("\\T\\")
        elif ch == RS:
            out.append("\\R\\")
        elif trunc and ch == trunc:
            out.append("\\P\\")
        elif ch in "\r\n":
            out.append("\\.br\\")
        else:
            out.append(ch)
    return "".join(out)


def local_code(field):
    return "SX-" + field.upper().replace("_", "-")


def dtm(text):
    """An XML time (ISO 8601 or HL7 DTM) as HL7 DTM, to the same precision."""
    if "T" not in text and "-" not in text[:5]:
        return text  # already HL7 DTM
    date, time = text.split("T")
    offset = ""
    if time.endswith("Z"):
        time, offset = time[:-1], "+0000"
    else:
        for sign in "+-":
            if sign in time:
                time, off = time.split(sign)
                offset = sign + off.replace(":", "")
    return date.replace("-", "") + time.replace(":", "") + offset


def plus_minutes(hl7, minutes):
    """HL7 DTM (minute or second precision, with offset) plus minutes."""
    base, off = hl7[:-5], hl7[-5:]
    fmt = "%Y%m%d%H%M%S" if len(base) == 14 else "%Y%m%d%H%M"
    t = datetime.strptime(base, fmt)
    t = t + timedelta(minutes=minutes)
    return t.strftime("%Y%m%d%H%M") + off


class Specimen:
    def __init__(self, element):
        self.f = {}
        self.units = {}
        self.agents = []
        for child in element:
            if child.tag == "agent":
                self.agents.append((child.get("name"), child.get("percent")))
                continue
            self.f[child.tag] = (child.text or "").strip() if child.tag != "comments" \
                else (child.text or "")
            if child.get("unit") is not None:
                self.units[child.tag] = child.get("unit")

    def unit(self, field):
        return self.units.get(field, UNITS.get(field, ""))


def obx_number(seq, code, name, system, value, unit, subid="", analysed=""):
    fields = ["OBX", str(seq), "NM", CS.join([code, esc(name), system]), subid, value,
              CS.join([esc(unit), esc(unit), "UCUM"]) if unit else "", "", "", "", "", "F"]
    if analysed:
        fields += ["", "", "", "", "", "", "", analysed]
    return FS.join(fields)


def obx_coded(seq, code, name, value, text, system, subid=""):
    return FS.join(["OBX", str(seq), "CWE", CS.join([code, esc(name), "99SYX"]), subid,
                    CS.join([esc(value), esc(text), system]), "", "", "", "", "", "F"])


def obx_text(seq, code, name, value):
    return FS.join(["OBX", str(seq), "ST", CS.join([code, esc(name), "99SYX"]), "",
                    esc(value), "", "", "", "", "", "F"])


def observations(sp, results, seq):
    """OBX segments: results (LOINC) when results is true, else the
    preanalytical observations (local codes)."""
    out = []
    venous = sp.f.get("specimen_type") == "venous"
    if results:
        for field in ["po2", "pco2", "ph", "so2", "spo2", "fio2", "patient_temp_c", "wbc",
                      "platelets", "hb", "patient_age_years"]:
            if field not in sp.f:
                continue
            code, name = (VENOUS.get(field) if venous and field in VENOUS else LOINC[field])
            value, unit = sp.f[field], sp.unit(field)
            if field == "fio2" and field not in sp.units:
                # LOINC 3150-0 is reported in percent
                value, unit = "%g" % round(float(value) * 100, 6), "%"
            analysed = dtm(sp.f["analysed_at"]) if field == "po2" else ""
            seq += 1
            out.append(obx_number(seq, code, name, "LN", value, unit, analysed=analysed))
        return out, seq
    for field in CHOICES:
        if field in sp.f:
            value = sp.f[field]
            seq += 1
            if field == "sealed_carrier":
                yn = "Y" if value == "yes" else "N"
                out.append(FS.join(["OBX", str(seq), "CWE",
                                    CS.join([local_code(field), "Sealed carrier", "99SYX"]),
                                    "", CS.join([yn, "Yes" if yn == "Y" else "No", "HL70136"]),
                                    "", "", "", "", "", "F"]))
            else:
                out.append(obx_coded(seq, local_code(field), field.replace("_", " "),
                                     value, value.replace("-", " "), "99SYX"))
    for field in LOCAL_NUMBERS:
        if field in sp.f:
            seq += 1
            out.append(obx_number(seq, local_code(field), field.replace("_", " "), "99SYX",
                                  sp.f[field], sp.unit(field)))
    if "transport_note" in sp.f:
        seq += 1
        out.append(obx_text(seq, local_code("transport_note"), "transport note",
                            sp.f["transport_note"]))
    for i, (name, percent) in enumerate(sp.agents, 1):
        seq += 1
        out.append(obx_coded(seq, "SX-AGENTS", "anaesthetic agent", name, name, "99SYX",
                             subid=str(i)))
        if percent is not None:
            seq += 1
            out.append(obx_number(seq, "SX-AGENT-PERCENT", "agent concentration", "99SYX",
                                  percent, "%", subid=str(i)))
    return out, seq


def location(text):
    parts = text.split("/")
    if len(parts) == 1:
        return esc(parts[0])
    if parts[1].startswith("ROOM"):
        return CS.join([esc(parts[0]), esc(parts[1])])
    return CS.join([esc(parts[0]), "", esc(parts[1])])


def spm(sp):
    fields = ["SPM", "1", CS + esc(sp.f["specimen_id"]) + SS + "SBRLAB", "",
              SPECIMEN_TYPE[sp.f["specimen_type"]]]
    fields += [""] * 7  # SPM-5 to SPM-11
    volume = sp.f.get("fill_volume_ml")
    fields.append(CS.join([volume, SS.join(["mL", "milliliter", "UCUM"])]) if volume else "")
    fields += [""] * 4  # SPM-13 to SPM-16
    fields.append(dtm(sp.f["collected_at"]))  # SPM-17 (range start)
    fields.append(dtm(sp.f["received_at"]))  # SPM-18
    return FS.join(fields)


def message(sp, number):
    """One specimen, one message."""
    resp = "kPa" in (sp.units.get("po2", ""), sp.units.get("pco2", ""))
    sent = plus_minutes(dtm(sp.f["analysed_at"]), 1)
    control = "SBR%05d" % number
    ward = sp.f["location"].split("/")[0]
    if resp:
        header = FS.join(["MSH", "^~\\&#", "RESP-LAB", "SBR", "SYRINX", "SBRLAB", sent, "",
                          "OUL^R22^OUL_R22", control, "P", "2.7", "", "", "AL", "NE", "", "",
                          "UNICODE UTF-8"])
    else:
        header = FS.join(["MSH", "^~\\&", "BG-ANALYSER", "SBR", "SYRINX", "SBRLAB", sent, "",
                          "ORU^R01^ORU_R01", control, "P", "2.5.1", "", "", "AL", "NE"])
    segs = [header]
    segs.append(FS.join(["PID", "1", "", esc(sp.f["patient_id"]) + "^^^SBR^MR"]))
    segs.append(FS.join(["PV1", "1", "E" if ward == "ED" else "I", location(sp.f["location"])]))
    obr = ["OBR", "1", "P" + sp.f["specimen_id"][3:], sp.f["specimen_id"],
           "BG^Blood gas panel^99SBR", "", "", dtm(sp.f["collected_at"]), "", "",
           esc(sp.f["collector"])]
    notes = []
    if "comments" in sp.f:
        notes.append(FS.join(["NTE", "1", "L", esc(sp.f["comments"])]))
    if resp:
        pre, seq = observations(sp, False, 0)
        res, seq = observations(sp, True, seq)
        segs += [spm(sp)] + pre + [FS.join(obr), "ORC|RE"] + notes + res
    else:
        pre, seq = observations(sp, False, 0)
        res, seq = observations(sp, True, seq)
        segs += ["ORC|RE", FS.join(obr)] + notes + pre + res + [spm(sp)]
    return "\r".join(segs) + "\r"


def main():
    tree = ET.parse(sys.argv[1])
    specimens = [Specimen(e) for e in tree.getroot() if e.tag == "specimen"]
    first = dtm(specimens[0].f["received_at"])
    notice = ("INVENTED DEMO DATA: St. Brannoc Regional Hospital does not exist; "
              "see fixtures/demo/README.md")
    out = [FS.join(["FHS", "^~\\&", "SBR-LIS", "SBR", "SYRINX", "SBRLAB", first, "", "",
                    esc(notice)]) + "\r",
           FS.join(["BHS", "^~\\&", "SBR-LIS", "SBR", "SYRINX", "SBRLAB", first, "", "",
                    esc(notice)]) + "\r"]
    for n, sp in enumerate(specimens, 1):
        out.append(message(sp, n))
    out.append(FS.join(["BTS", str(len(specimens))]) + "\r")
    out.append(FS.join(["FTS", "1"]) + "\r")
    sys.stdout.buffer.write("".join(out).encode("utf-8"))


if __name__ == "__main__":
    main()
