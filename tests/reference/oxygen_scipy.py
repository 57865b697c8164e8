#!/usr/bin/python3
# SPDX-License-Identifier: MIT
"""oxygen_scipy.py - reference values for the oxygen model, computed with scipy.

The C code in src/model/oxygen.c solves its equations with closed forms and
hand-written iterations. This script computes the same quantities a different
way, with general-purpose library routines, so the unit test can compare the
two (tests/unit/test_oxygen.c reads the table this script writes):

  po2_standard         inverse of Severinghaus' curve      scipy.optimize.brentq
  cubic_root           real root of P^3 + 150 P - K = 0     numpy.roots
  sat_slope            dS/dP under a blood state           complex-step derivative
  po2_from_content     pO2 whose O2 content is given       scipy.optimize.brentq
  temperature_correct  Severinghaus' d lnP/dT integrated   scipy.integrate.solve_ivp
                       from 37 C to 20 C and to 4 C        (DOP853)

The equations (Severinghaus, J Appl Physiol 1979;46:599; Kelman's virtual pO2,
J Appl Physiol 1966; solubility 0.0031 mL/dL/mmHg at 37 C with -d ln(alpha)/dT
0.012 per K, Siggaard-Andersen) are written again below from
/work/shared/MODEL-SOURCES.md, independently of the C code.

Run with Debian's interpreter (python3-scipy):
  /usr/bin/python3 tests/reference/oxygen_scipy.py            write the table
  /usr/bin/python3 tests/reference/oxygen_scipy.py --check    recompute, compare
The table is tests/reference/oxygen_scipy.tsv, or $SX_REFDIR/oxygen_scipy.tsv
when SX_REFDIR is set; -o PATH names another file. --check exits 0 when every
row agrees (relative 1e-9), 1 when not, and 77 (skipped) when scipy is missing.
"""

import math
import os
import platform
import sys

EXIT_SKIP = 77
CHECK_RTOL = 1e-9
TABLE_NAME = "oxygen_scipy.tsv"
NARGS = 6

try:
    import numpy as np
    import scipy
    from scipy.integrate import solve_ivp
    from scipy.optimize import brentq
except ImportError as exc:  # pragma: no cover - depends on the machine
    print(
        "SKIP: oxygen_scipy.py needs numpy and scipy (%s); on Debian run it "
        "with /usr/bin/python3 after apt-get install python3-scipy" % exc,
        file=sys.stderr,
    )
    sys.exit(EXIT_SKIP)

# --- the published equations, written once more -------------------------


def sev_sat(p):
    """Severinghaus 1979: S = 1 / (23400 / (P^3 + 150 P) + 1), as f / (f + 23400)."""
    f = p ** 3 + 150.0 * p
    return f / (f + 23400.0)


def virtual_factor(temp_c, ph, pco2):
    """Kelman 1966: x = P 10^(0.024 (37-T) + 0.40 (pH-7.40) + 0.06 log10(40/pCO2))."""
    return 10.0 ** (
        0.024 * (37.0 - temp_c) + 0.40 * (ph - 7.40) + 0.06 * math.log10(40.0 / pco2)
    )


def solubility(temp_c):
    """0.0031 mL/dL/mmHg at 37 C, -d ln(alpha)/dT = 0.012 per K."""
    return 0.0031 * math.exp(0.012 * (37.0 - temp_c))


def content(p, temp_c, ph, pco2, hb, hufner):
    """mL O2/dL: hufner Hb S(x) + alpha P."""
    return hufner * hb * sev_sat(p * virtual_factor(temp_c, ph, pco2)) + solubility(temp_c) * p


def dlnp_dt(p):
    """Severinghaus 1979: d lnP/dT = 0.058 / ((0.243 P/100)^3.88 + 1) + 0.013."""
    return 0.058 / ((0.243 * p / 100.0) ** 3.88 + 1.0) + 0.013


# --- the reference computations ------------------------------------------

BRENT = dict(xtol=1e-300, rtol=4.0 * np.finfo(float).eps, maxiter=500)

SATS = [0.01, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.97,
        0.98, 0.985, 0.99, 0.995, 0.998, 0.999]


def po2_standard(sat):
    return brentq(lambda p: sev_sat(p) - sat, 1e-6, 1e4, **BRENT)


def cubic_root(sat):
    k = 23400.0 * sat / (1.0 - sat)
    roots = np.roots([1.0, 0.0, 150.0, -k])
    real = min(roots, key=lambda r: abs(r.imag))
    return float(real.real)


SLOPE_CASES = [
    # P, T, pH, pCO2
    (5.0, 37.0, 7.40, 40.0),
    (26.8, 37.0, 7.40, 40.0),
    (40.0, 37.0, 7.40, 40.0),
    (100.0, 37.0, 7.40, 40.0),
    (600.0, 37.0, 7.40, 40.0),
    (40.0, 20.0, 7.40, 40.0),
    (40.0, 4.0, 7.65, 20.0),
    (60.0, 41.0, 7.10, 80.0),
]


def sat_slope(p, temp_c, ph, pco2):
    """Complex-step derivative: Im S(P + ih) / h, exact to rounding."""
    h = 1e-20
    g = virtual_factor(temp_c, ph, pco2)
    z = complex(p, h) * g
    s = 1.0 / (23400.0 / (z ** 3 + 150.0 * z) + 1.0)
    return s.imag / h


CONTENT_CASES = [
    # content mL/dL, T, pH, pCO2, Hb g/dL, Huefner mL/g
    (20.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (15.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (10.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (2.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (0.01, 37.0, 7.40, 40.0, 15.0, 1.39),
    (21.5, 37.0, 7.40, 40.0, 15.0, 1.39),
    (22.5, 37.0, 7.40, 40.0, 15.0, 1.39),
    (23.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (24.0, 37.0, 7.40, 40.0, 15.0, 1.39),
    (20.0, 37.0, 7.40, 40.0, 15.0, 1.34),
    (20.0, 37.0, 7.40, 40.0, 15.0, 1.368),
    (14.0, 37.0, 7.40, 40.0, 10.0, 1.39),
    (1.0, 37.0, 7.40, 40.0, 0.5, 1.39),
    (0.6, 37.0, 7.40, 40.0, 0.5, 1.39),
    (2.5, 37.0, 7.40, 40.0, 0.5, 1.39),
    (0.3, 37.0, 7.40, 40.0, 0.0, 1.39),
    (2.0, 4.0, 7.40, 40.0, 0.0, 1.39),
    (20.0, 0.0, 7.40, 40.0, 15.0, 1.39),
    (20.0, 4.0, 7.40, 40.0, 15.0, 1.39),
    (21.2, 4.0, 7.40, 40.0, 15.0, 1.39),
    (20.0, 20.0, 7.40, 40.0, 15.0, 1.39),
    (20.0, 22.0, 7.40, 40.0, 15.0, 1.39),
    (20.0, 45.0, 7.40, 40.0, 15.0, 1.39),
    (22.0, 45.0, 7.40, 40.0, 15.0, 1.39),
    (18.0, 37.0, 7.00, 40.0, 15.0, 1.39),
    (18.0, 37.0, 7.60, 40.0, 15.0, 1.39),
    (18.0, 37.0, 7.40, 20.0, 15.0, 1.39),
    (18.0, 37.0, 7.40, 80.0, 15.0, 1.39),
    (20.0, 20.0, 7.65, 19.0, 15.0, 1.39),
]


def po2_from_content(c, temp_c, ph, pco2, hb, hufner):
    hi = c / solubility(temp_c)
    return brentq(lambda p: content(p, temp_c, ph, pco2, hb, hufner) - c, 0.0, hi, **BRENT)


TEMP_STARTS = [20.0, 40.0, 60.0, 80.0, 90.0, 100.0, 150.0, 300.0, 600.0]
TEMP_TARGETS = [20.0, 4.0]


def temperature_correct(p, t_from, t_to):
    sol = solve_ivp(
        lambda t, y: [dlnp_dt(math.exp(y[0]))],
        (t_from, t_to),
        [math.log(p)],
        method="DOP853",
        rtol=1e-13,
        atol=1e-15,
    )
    if not sol.success:
        raise RuntimeError("solve_ivp failed: %s" % sol.message)
    return math.exp(sol.y[0, -1])


def rows():
    """Every reference row as (kind, (a1..a6), value)."""
    out = []

    def add(kind, args, value):
        args = tuple(float(a) for a in args) + (0.0,) * (NARGS - len(args))
        out.append((kind, args, float(value)))

    for s in SATS:
        add("po2_standard", (s,), po2_standard(s))
    for s in SATS:
        add("cubic_root", (s,), cubic_root(s))
    for case in SLOPE_CASES:
        add("sat_slope", case, sat_slope(*case))
    for case in CONTENT_CASES:
        add("po2_from_content", case, po2_from_content(*case))
    for t_to in TEMP_TARGETS:
        for p in TEMP_STARTS:
            add("temperature_correct", (p, 37.0, t_to), temperature_correct(p, 37.0, t_to))
    return out


# --- the table -------------------------------------------------------------


def header():
    return [
        "# oxygen_scipy.tsv - reference values for tests/unit/test_oxygen.c.",
        "# Generated by tests/reference/oxygen_scipy.py with scipy %s (brentq, solve_ivp "
        "DOP853), numpy %s (roots), Python %s; do not edit, rerun the script."
        % (scipy.__version__, np.__version__, platform.python_version()),
        "# Arguments by kind (unused ones are 0): po2_standard and cubic_root: S;",
        "# sat_slope: P, T, pH, pCO2; po2_from_content: content, T, pH, pCO2, Hb, Huefner;",
        "# temperature_correct: P, T from, T to. Units: mmHg, C, g/dL, mL/dL, mL/g.",
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
        elif not math.isclose(v1, v2, rel_tol=CHECK_RTOL, abs_tol=0.0):
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
