#!/usr/bin/python3
# SPDX-License-Identifier: MIT
"""mechanisms_scipy.py - reference values for the specimen-oxygen mechanisms.

The C code (src/model/air_exchange.c, syringe_wall.c, heparin.c, oximetry.c)
solves its equations with hand-written Newton iterations and closed forms.
This script computes the same quantities with general-purpose library
routines, so the unit tests can compare (tests/unit/test_air_exchange.c,
test_syringe_wall.c, test_heparin.c and test_oximetry.c read the table):

  air_eq          bubble-blood equilibrium pO2          scipy.optimize.brentq
  air_course      blood pO2 after t min, first-order    scipy.integrate.solve_ivp
                  approach with time constant tau       (DOP853)
  wall_eq         wall-blood equilibrium pO2            scipy.optimize.brentq
  wall_relax      blood pO2 after t min, the C model's  scipy.integrate.solve_ivp
                  linearised relaxation
  wall_flux       blood pO2 after t min, the flux law   scipy.integrate.solve_ivp
                  dC/dt = k c (Pw - P(C)) integrated    (the C model approximates
                  exactly                               this; the test allows it)
  heparin_mix     pO2 of blood diluted by heparin       scipy.optimize.brentq
  heparin_before  pO2 before dilution from the mixture  scipy.optimize.brentq
  oxi_po2         pO2 the curve gives for an SpO2       scipy.optimize.brentq
  oxi_llr         venous-vs-arterial log-likelihood     closed form on brentq's
                  ratio                                 inverse

The equations are written again below from /work/shared/MODEL-SOURCES.md
and docs/model-mechanisms.md, independently of the C code: Severinghaus'
curve (J Appl Physiol 1979;46:599) with Kelman's virtual pO2 (J Appl Physiol
1966), alpha = 0.0031 exp(0.012 (37 - T)) mL/dL/mmHg, Antoine's water vapour
pressure, air 0.2095 O2; Hufner 1.39 mL/g.

  /usr/bin/python3 tests/reference/mechanisms_scipy.py            write the table
  /usr/bin/python3 tests/reference/mechanisms_scipy.py --check    recompute, compare
The table is tests/reference/mechanisms_scipy.tsv, or
$SX_REFDIR/mechanisms_scipy.tsv when SX_REFDIR is set; -o PATH names another
file. --check exits 0 when every row agrees (relative 1e-9), 1 when not, and
77 (skipped) when scipy is missing.
"""

import math
import os
import platform
import sys

EXIT_SKIP = 77
CHECK_RTOL = 1e-9
TABLE_NAME = "mechanisms_scipy.tsv"
NARGS = 8

try:
    import numpy as np
    import scipy
    from scipy.integrate import solve_ivp
    from scipy.optimize import brentq
except ImportError as exc:  # pragma: no cover - depends on the machine
    print(
        "SKIP: mechanisms_scipy.py needs numpy and scipy (%s); on Debian run it "
        "with /usr/bin/python3 after apt-get install python3-scipy" % exc,
        file=sys.stderr,
    )
    sys.exit(EXIT_SKIP)

HUFNER = 1.39
BRENT = dict(xtol=1e-300, rtol=4.0 * np.finfo(float).eps, maxiter=500)
IVP = dict(method="DOP853", rtol=1e-12, atol=1e-15)

# --- the published equations, written once more ---------------------------


def sev_sat(x):
    f = x ** 3 + 150.0 * x
    return f / (f + 23400.0)


def sev_slope(x):
    return 23400.0 * (3.0 * x * x + 150.0) / (x ** 3 + 150.0 * x + 23400.0) ** 2


def vfac(temp_c, ph, pco2):
    return 10.0 ** (0.024 * (37.0 - temp_c) + 0.40 * (ph - 7.40) + 0.06 * math.log10(40.0 / pco2))


def alpha(temp_c):
    return 0.0031 * math.exp(0.012 * (37.0 - temp_c))


def content(p, temp_c, ph, pco2, hb):
    return HUFNER * hb * sev_sat(p * vfac(temp_c, ph, pco2)) + alpha(temp_c) * p


def capacity(p, temp_c, ph, pco2, hb):
    """dC/dP, mL/dL/mmHg."""
    g = vfac(temp_c, ph, pco2)
    return HUFNER * hb * g * sev_slope(p * g) + alpha(temp_c)


def po2_from(c, temp_c, ph, pco2, hb, extra=0.0):
    """Root of C(P) + extra P = c."""
    if c == 0.0:
        return 0.0
    hi = c / (alpha(temp_c) + extra)
    if hb == 0.0:
        return hi
    return brentq(lambda p: content(p, temp_c, ph, pco2, hb) + extra * p - c, 0.0, hi, **BRENT)


def pws(temp_c):
    """Antoine, water, 1-100 C: log10 P(mmHg) = 8.07131 - 1730.63 / (233.426 + T)."""
    return 10.0 ** (8.07131 - 1730.63 / (233.426 + temp_c))


def air_po2(pb, temp_c, rh):
    return 0.2095 * (pb - rh * pws(temp_c))


def bubble_cap(bubble_ul, temp_c):
    """mL STPD per mmHg: V (1/760) (273.15 / T)."""
    return bubble_ul * 1e-3 / 760.0 * 273.15 / (273.15 + temp_c)


# --- air exchange ------------------------------------------------------------


def air_setup(bubble_ul, blood_ml, pb, temp_c, ph, pco2, hb, p0):
    per_dl = blood_ml / 100.0
    cap = bubble_cap(bubble_ul, temp_c)
    n_blood = content(p0, temp_c, ph, pco2, hb) * per_dl
    n_bubble = cap * air_po2(pb, temp_c, 1.0)
    total = n_blood + n_bubble
    return per_dl, cap, n_blood, total


def air_eq(bubble_ul, blood_ml, pb, temp_c, ph, pco2, hb, p0):
    per_dl, cap, _, total = air_setup(bubble_ul, blood_ml, pb, temp_c, ph, pco2, hb, p0)
    return brentq(lambda p: content(p, temp_c, ph, pco2, hb) * per_dl + cap * p - total,
                  0.0, total / (alpha(temp_c) * per_dl + cap), **BRENT)


def air_course(bubble_ul, blood_ml, pb, temp_c, hb, p0, tau, t):
    ph, pco2 = 7.40, 40.0
    per_dl, cap, n_blood, _ = air_setup(bubble_ul, blood_ml, pb, temp_c, ph, pco2, hb, p0)
    p_eq = air_eq(bubble_ul, blood_ml, pb, temp_c, ph, pco2, hb, p0)
    n_eq = content(p_eq, temp_c, ph, pco2, hb) * per_dl
    sol = solve_ivp(lambda _t, y: [(n_eq - y[0]) / tau], (0.0, t), [n_blood], **IVP)
    if not sol.success:
        raise RuntimeError(sol.message)
    return po2_from(sol.y[0, -1] / per_dl, temp_c, ph, pco2, hb)


# --- syringe wall ------------------------------------------------------------


def wall_eq(c, temp_c, hb, p0, pw0):
    ph, pco2 = 7.40, 40.0
    total = content(p0, temp_c, ph, pco2, hb) + c * pw0
    return po2_from(total, temp_c, ph, pco2, hb, extra=c)


def wall_relax(c, k, temp_c, hb, p0, pw0, t):
    ph, pco2 = 7.40, 40.0
    p_eq = wall_eq(c, temp_c, hb, p0, pw0)
    c_eq = content(p_eq, temp_c, ph, pco2, hb)
    lam = k * (1.0 + c / capacity(p_eq, temp_c, ph, pco2, hb))
    c0 = content(p0, temp_c, ph, pco2, hb)
    sol = solve_ivp(lambda _t, y: [lam * (c_eq - y[0])], (0.0, t), [c0], **IVP)
    if not sol.success:
        raise RuntimeError(sol.message)
    return po2_from(sol.y[0, -1], temp_c, ph, pco2, hb)


def wall_flux(c, k, temp_c, hb, p0, pw0, t):
    ph, pco2 = 7.40, 40.0
    c0 = content(p0, temp_c, ph, pco2, hb)
    total = c0 + c * pw0

    def rhs(_t, y):
        cb = min(max(y[0], 0.0), total)
        return [k * c * ((total - cb) / c - po2_from(cb, temp_c, ph, pco2, hb))]

    sol = solve_ivp(rhs, (0.0, t), [c0], method="DOP853", rtol=1e-11, atol=1e-14)
    if not sol.success:
        raise RuntimeError(sol.message)
    return po2_from(sol.y[0, -1], temp_c, ph, pco2, hb)


# --- heparin -------------------------------------------------------------------


def heparin_mix(f, p0, hb, pco2, temp_c, psol, troom):
    ph = 7.40
    c_mix = (1.0 - f) * content(p0, temp_c, ph, pco2, hb) + f * alpha(troom) * psol
    pco2_mix = (1.0 - f) * pco2 + f * 0.3
    return po2_from(c_mix, temp_c, ph, pco2_mix, (1.0 - f) * hb)


def heparin_before(f, p_mix, hb_mix, pco2_mix, temp_c, psol, troom):
    ph = 7.40
    c_mix = content(p_mix, temp_c, ph, pco2_mix, hb_mix)
    c0 = (c_mix - f * alpha(troom) * psol) / (1.0 - f)
    return po2_from(c0, temp_c, ph, (pco2_mix - f * 0.3) / (1.0 - f), hb_mix / (1.0 - f))


# --- oximetry ------------------------------------------------------------------

OX_SD, CURVE_SD, LOW_SAT, AV = 3.0, 0.55, 83.0, (27.2, 46.6)


def sat37(p, ph, pco2):
    return 100.0 * sev_sat(p * vfac(37.0, ph, pco2))


def oxi_po2(spo2, ph, pco2):
    return brentq(lambda p: sat37(p, ph, pco2) - spo2, 0.0, 1e5, **BRENT)


def oxi_llr(p, ph, pco2, spo2):
    sd_ox = OX_SD * (2.0 if spo2 < LOW_SAT else 1.0)
    sd = math.sqrt(sd_ox ** 2 + CURVE_SD ** 2)
    gap = spo2 - sat37(p, ph, pco2)
    d = min(max(oxi_po2(spo2, ph, pco2) - p, AV[0]), AV[1])
    miss = spo2 - sat37(p + d, ph, pco2)
    return (gap * gap - miss * miss) / (2.0 * sd * sd)


# --- the cases -------------------------------------------------------------------

AIR_EQ = [
    # bubble uL, blood mL, Pb, T, pH, pCO2, Hb, P0
    (10.0, 2.0, 760.0, 22.0, 7.40, 40.0, 15.0, 40.0),
    (10.0, 2.0, 760.0, 22.0, 7.40, 40.0, 15.0, 90.0),
    (10.0, 2.0, 760.0, 22.0, 7.40, 40.0, 15.0, 400.0),
    (100.0, 2.0, 760.0, 22.0, 7.40, 40.0, 15.0, 60.0),
    (100.0, 1.0, 760.0, 37.0, 7.40, 40.0, 15.0, 60.0),
    (100.0, 1.0, 760.0, 37.0, 7.40, 40.0, 15.0, 550.0),
    (200.0, 1.0, 674.0, 22.0, 7.30, 50.0, 8.0, 70.0),
    (50.0, 3.0, 760.0, 2.0, 7.40, 40.0, 15.0, 30.0),
    (50.0, 1.0, 760.0, 37.0, 7.40, 40.0, 0.0, 90.0),
    (500.0, 1.0, 760.0, 37.0, 7.40, 40.0, 15.0, 100.0),
    (1000.0, 1.0, 600.0, 37.0, 7.20, 60.0, 12.0, 250.0),
    (5.0, 1.0, 760.0, 37.0, 7.50, 30.0, 20.0, 25.0),
]

AIR_COURSE = [
    # bubble uL, blood mL, Pb, T, Hb, P0, tau min, t min
    (50.0, 1.0, 760.0, 22.0, 15.0, 60.0, 15.0, 5.0),
    (50.0, 1.0, 760.0, 22.0, 15.0, 60.0, 15.0, 15.0),
    (50.0, 1.0, 760.0, 22.0, 15.0, 60.0, 15.0, 60.0),
    (50.0, 1.0, 760.0, 37.0, 15.0, 500.0, 2.0, 3.0),
    (100.0, 2.0, 760.0, 22.0, 10.0, 90.0, 1.76, 4.0),
    (100.0, 2.0, 760.0, 2.0, 15.0, 90.0, 60.0, 30.0),
]

WALL_C, WALL_K, WALL_K_ICED = 1.04e-3, 0.227, 0.0264  # the C defaults
WALL_CASES = [
    # c, k, T, Hb, P0 (at T), Pw0, t
    (WALL_C, WALL_K, 22.0, 15.0, 40.0, 157.1, 30.0),
    (WALL_C, WALL_K, 22.0, 15.0, 540.0, 157.1, 2.0),
    (WALL_C, WALL_K, 22.0, 15.0, 540.0, 157.1, 30.0),
    (WALL_C, WALL_K_ICED, 2.0, 15.0, 12.0, 157.1, 30.0),
    (WALL_C, WALL_K_ICED, 2.0, 0.0, 67.0, 157.1, 30.0),
    (WALL_C, WALL_K_ICED, 2.0, 15.0, 436.0, 157.1, 30.0),
    (WALL_C, WALL_K, 22.0, 5.0, 300.0, 157.1, 10.0),
    (5.3e-3, 4.6e-3, 22.0, 15.0, 90.0, 157.1, 60.0),
    (WALL_C, WALL_K, 22.0, 0.0, 100.0, 157.1, 10.0),
]

HEPARIN_MIX = [
    # f, P0, Hb, pCO2, T, Psol, T room
    (0.05, 90.0, 15.0, 40.0, 37.0, 155.08, 22.0),
    (0.15, 90.0, 15.0, 40.0, 37.0, 155.08, 22.0),
    (0.15, 40.0, 15.0, 40.0, 37.0, 155.08, 22.0),
    (0.15, 400.0, 15.0, 40.0, 37.0, 155.08, 22.0),
    (0.30, 70.0, 8.0, 55.0, 37.0, 150.0, 25.0),
    (0.50, 100.0, 15.0, 40.0, 37.0, 155.08, 22.0),
    (0.10, 120.0, 0.0, 40.0, 37.0, 155.08, 22.0),
    (0.0241, 95.0, 14.0, 38.0, 37.0, 155.08, 22.0),
]

HEPARIN_BEFORE = [
    # f, P mixed, Hb mixed, pCO2 mixed, T, Psol, T room
    (0.15, 91.5, 12.75, 34.0, 37.0, 155.08, 22.0),
    (0.05, 60.0, 14.0, 38.0, 37.0, 155.08, 22.0),
    (0.30, 160.0, 7.0, 28.0, 37.0, 155.08, 22.0),
    (0.15, 368.0, 12.75, 34.0, 37.0, 155.08, 22.0),
]

OXI_PO2 = [(s, ph, pco2) for s in (75.0, 85.0, 90.0, 95.0, 97.0, 99.0)
           for ph, pco2 in ((7.40, 40.0), (7.30, 55.0))]

OXI_LLR = [
    # po2, pH, pCO2, SpO2
    (90.0, 7.40, 40.0, 97.0),
    (50.0, 7.40, 40.0, 97.0),
    (40.0, 7.35, 46.0, 96.0),
    (60.0, 7.40, 40.0, 80.0),
    (120.0, 7.45, 35.0, 99.0),
    (30.0, 7.40, 40.0, 93.0),
]


def rows():
    out = []

    def add(kind, args, value):
        args = tuple(float(a) for a in args) + (0.0,) * (NARGS - len(args))
        out.append((kind, args, float(value)))

    for case in AIR_EQ:
        add("air_eq", case, air_eq(*case))
    for case in AIR_COURSE:
        add("air_course", case, air_course(*case))
    for case in WALL_CASES:
        add("wall_eq", case[:1] + case[2:6], wall_eq(case[0], *case[2:6]))
    for case in WALL_CASES:
        add("wall_relax", case, wall_relax(*case))
    for case in WALL_CASES:
        add("wall_flux", case, wall_flux(*case))
    for case in HEPARIN_MIX:
        add("heparin_mix", case, heparin_mix(*case))
    for case in HEPARIN_BEFORE:
        add("heparin_before", case, heparin_before(*case))
    for case in OXI_PO2:
        add("oxi_po2", case, oxi_po2(*case))
    for case in OXI_LLR:
        add("oxi_llr", case, oxi_llr(*case))
    return out


# --- the table -------------------------------------------------------------------


def header():
    return [
        "# mechanisms_scipy.tsv - reference values for the mechanism unit tests.",
        "# Generated by tests/reference/mechanisms_scipy.py with scipy %s (brentq, solve_ivp "
        "DOP853), numpy %s, Python %s; do not edit, rerun the script."
        % (scipy.__version__, np.__version__, platform.python_version()),
        "# Arguments by kind (unused ones are 0):",
        "# air_eq: bubble uL, blood mL, Pb, T, pH, pCO2, Hb, P0 -> equilibrium pO2",
        "# air_course: bubble uL, blood mL, Pb, T, Hb, P0, tau, t -> blood pO2 at t",
        "# wall_eq: c, T, Hb, P0, Pw0 -> equilibrium pO2",
        "# wall_relax, wall_flux: c, k, T, Hb, P0, Pw0, t -> blood pO2 at t",
        "# heparin_mix: f, P0, Hb, pCO2, T, Psol, T room -> pO2 of the mixture",
        "# heparin_before: f, P mix, Hb mix, pCO2 mix, T, Psol, T room -> pO2 before",
        "# oxi_po2: SpO2, pH, pCO2 -> pO2; oxi_llr: pO2, pH, pCO2, SpO2 -> llr",
        "# Units: mmHg, C, g/dL, mL, uL, min, mL O2/dL/mmHg, 1/min, %.",
        "kind\t" + "\t".join("a%d" % (i + 1) for i in range(NARGS)) + "\tvalue",
    ]


def fmt(x):
    return repr(float(x))


def write_table(path):
    with open(path, "w", encoding="ascii") as f:
        for line in header():
            f.write(line + "\n")
        for kind, args, value in rows():
            f.write("\t".join([kind] + [fmt(a) for a in args] + [fmt(value)]) + "\n")


def read_table(path):
    table = []
    with open(path, encoding="ascii") as f:
        for line in f:
            line = line.rstrip("\n")
            if not line or line.startswith("#") or line.startswith("kind\t"):
                continue
            fields = line.split("\t")
            if len(fields) != NARGS + 2:
                raise ValueError("%s: malformed row: %r" % (path, line))
            table.append((fields[0], tuple(float(a) for a in fields[1:-1]), float(fields[-1])))
    return table


def check_table(path):
    try:
        stored = read_table(path)
    except (OSError, ValueError) as exc:
        print("FAIL: cannot read %s: %s" % (path, exc), file=sys.stderr)
        return 1
    fresh = rows()
    bad = 0
    if len(stored) != len(fresh):
        print("FAIL: %s has %d rows, recomputed %d" % (path, len(stored), len(fresh)),
              file=sys.stderr)
        bad += 1
    for (k1, a1, v1), (k2, a2, v2) in zip(stored, fresh):
        if k1 != k2 or a1 != a2:
            print("FAIL: row %s %r differs from recomputed %s %r" % (k1, a1, k2, a2),
                  file=sys.stderr)
            bad += 1
        elif not math.isclose(v1, v2, rel_tol=CHECK_RTOL, abs_tol=1e-12):
            print("FAIL: %s %r: stored %r, recomputed %r" % (k1, a1, v1, v2), file=sys.stderr)
            bad += 1
    if bad:
        return 1
    print("ok: %d rows of %s agree with scipy %s to %g" %
          (len(fresh), path, scipy.__version__, CHECK_RTOL))
    return 0


def main(argv):
    refdir = os.environ.get("SX_REFDIR") or os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(refdir, TABLE_NAME)
    check = False
    i = 1
    while i < len(argv):
        if argv[i] == "--check":
            check = True
        elif argv[i] == "-o" and i + 1 < len(argv):
            i += 1
            path = argv[i]
        else:
            print("usage: %s [--check] [-o TABLE]" % argv[0], file=sys.stderr)
            return 2
        i += 1
    if check:
        return check_table(path)
    write_table(path)
    print("wrote %s" % path)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
