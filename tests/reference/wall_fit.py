#!/usr/bin/python3
# SPDX-License-Identifier: MIT
"""wall_fit.py - fit the syringe-wall parameters to published figures.

The model is the one of src/model/syringe_wall.c, written again here:

  wall O2 W (mL per dL of sample), capacity c(T), wall pO2 Pw = W / c(T)
  c(T) = c22 (c2 / c22)^((22 - T) / 20), rate k(T) the same way
  W before use = c(22 C) x room-air pO2 (157.1 mmHg: Pb 760, 22 C, RH 0.5)
  blood and wall relax to their shared pO2 with rate k (1 + c / beta),
  beta = alpha + k_Hb Hb dS/dP at the shared pO2 (closed form per step)

together with the metabolism of src/model/metabolism.c at the nominal
settings (0.0085 mL O2/dL/min at 37 C, Q10 2.0), split in steps of 0.5 min
(wall, then metabolism), and the oxygen curve of src/model/oxygen.c
(Severinghaus 1979 with Kelman's virtual pO2; alpha 0.0031 exp(0.012 (37 -
T))). pH 7.40 and pCO2 40 throughout; the sample is analysed at 37 C.

Figures (tags as in /work/shared/MODEL-SOURCES.md):
  Mahoney et al., Clin Chem 1991;37:1244 [R]: iced plastic 30 min, blood
    tonometered at 6, 10, 14 % O2: +0.4, +0.8, +8.4 mmHg; plasma +12.6 to
    +20.9 mmHg; plastic at room temperature stable 30 min.
  Pretto & Rochford, Thorax 1994;49:610 [R]: from 650 mmHg, plastic at room
    temperature -1.21 kPa/min, plastic on ice -0.19, glass at room
    temperature -0.49.
  Scott, Horton & Mapleson, BMJ 1971;3:512 [R]: errors up to 6 % in 2 min and
    16 % in 30-60 min at high pO2, O2 held in the plastic.

Assumptions, none from the sources: tonometry at Pb 760 (pO2 = F x 713 mmHg),
Hb 15 g/dL, pH 7.40, pCO2 40; the iced samples at 2 C and the others at 22 C
from the start; Pretto's rates are means over the first 30 min; the wall's
part of Pretto's room figure is plastic minus glass (-0.72 kPa/min); on ice
the glass figure is not given, so the wall's part is taken as -0.12 +- 0.07
kPa/min (between -0.19, no other loss, and -0.05, glass's loss scaled to ice
by the metabolism); Scott's figures are read at 500 mmHg, 22 C, 2 and 45 min;
"stable" is 0 +- 2 mmHg including metabolism; the plasma range is compared
with the mean of the three plasma levels (16.75 +- 4.2).

Weights: each figure's residual is divided by its sigma (in the table).
Three fits: all figures (the defaults), Mahoney's alone, the high-pO2 ones
alone; the ranges are the span of the three, widened by 1.5 both ways.

  /usr/bin/python3 tests/reference/wall_fit.py           write wall_fit.tsv
  /usr/bin/python3 tests/reference/wall_fit.py --check   refit, compare (1e-3)
Exit 77 when scipy is missing. Runs in about half a minute.
"""

import math
import os
import platform
import sys
import tempfile

EXIT_SKIP = 77
TABLE_NAME = "wall_fit.tsv"
CHECK_RTOL = 1e-3

try:
    import scipy
    from scipy.optimize import brentq, least_squares
except ImportError as exc:  # pragma: no cover - depends on the machine
    print("SKIP: wall_fit.py needs scipy (%s)" % exc, file=sys.stderr)
    sys.exit(EXIT_SKIP)

PB = 760.0
T_ROOM = 22.0
T_ICED = 2.0
HB = 15.0
HUFNER = 1.39
KPA = 7.50062  # mmHg per kPa
DT = 0.5       # min, splitting step


def pws(t):
    """Antoine, water, mmHg."""
    return 10.0 ** (8.07131 - 1730.63 / (233.426 + t))


ROOM_AIR = 0.2095 * (PB - 0.5 * pws(T_ROOM))


def sev(x):
    f = x ** 3 + 150.0 * x
    return f / (f + 23400.0)


def gfac(t):
    return 10.0 ** (0.024 * (37.0 - t))  # pH 7.40, pCO2 40


def alpha(t):
    return 0.0031 * math.exp(0.012 * (37.0 - t))


def content(p, t, hb):
    return HUFNER * hb * sev(p * gfac(t)) + alpha(t) * p


def slope(p, t):
    g = gfac(t)
    x = p * g
    return g * 23400.0 * (3.0 * x * x + 150.0) / (x ** 3 + 150.0 * x + 23400.0) ** 2


def po2(c, t, hb, extra=0.0):
    a = alpha(t) + extra
    if c <= 0.0:
        return 0.0
    if hb == 0.0:
        return c / a
    return brentq(lambda p: HUFNER * hb * sev(p * gfac(t)) + a * p - c, 0.0, c / a,
                  xtol=1e-13, rtol=1e-13)


def vo2(t):
    return 0.0085 * 2.0 ** ((t - 37.0) / 10.0)


def between(room, iced, t):
    return room * (iced / room) ** ((T_ROOM - t) / (T_ROOM - T_ICED))


def scenario(par, p37, hb, minutes, t, plastic=True, metab=True):
    """pO2 change at 37 C after `minutes` at t, mmHg."""
    c22, c2, k22, k2 = par
    cb = content(p37, 37.0, hb)
    w = c22 * ROOM_AIR
    cw, kw = between(c22, c2, t), between(k22, k2, t)
    n = max(1, int(round(minutes / DT)))
    h = minutes / n
    for _ in range(n):
        if plastic:
            tot = cb + w
            pe = po2(tot, t, hb, cw)
            ce = min(content(pe, t, hb), tot)
            beta = alpha(t) + HUFNER * hb * slope(pe, t)
            lam = kw * (1.0 + cw / beta)
            cb = ce + (cb - ce) * math.exp(-lam * h)
            w = tot - cb
        if metab:
            cb = max(cb - vo2(t) * h, 0.0)
    return po2(cb, 37.0, hb) - p37


def wall_part(par, p37, hb, minutes, t):
    return scenario(par, p37, hb, minutes, t) - scenario(par, p37, hb, minutes, t, plastic=False)


# (group, key, description, published, sigma, model function)
FIGURES = [
    ("M", "mahoney_iced_6", "Mahoney 1991: iced plastic 30 min, blood at 6 % O2, mmHg",
     0.4, 1.0, lambda q: scenario(q, 0.06 * 713.0, HB, 30.0, T_ICED)),
    ("M", "mahoney_iced_10", "Mahoney 1991: iced plastic 30 min, blood at 10 % O2, mmHg",
     0.8, 1.0, lambda q: scenario(q, 0.10 * 713.0, HB, 30.0, T_ICED)),
    ("M", "mahoney_iced_14", "Mahoney 1991: iced plastic 30 min, blood at 14 % O2, mmHg",
     8.4, 2.1, lambda q: scenario(q, 0.14 * 713.0, HB, 30.0, T_ICED)),
    ("M", "mahoney_plasma", "Mahoney 1991: iced plastic 30 min, plasma, mean of 6/10/14 %, mmHg",
     16.75, 4.2, lambda q: sum(scenario(q, f * 713.0, 0.0, 30.0, T_ICED, metab=False)
                               for f in (0.06, 0.10, 0.14)) / 3.0),
    ("M", "mahoney_room_6", "Mahoney 1991: plastic 22 C 30 min stable, 6 % O2, mmHg",
     0.0, 2.0, lambda q: scenario(q, 0.06 * 713.0, HB, 30.0, T_ROOM)),
    ("M", "mahoney_room_10", "Mahoney 1991: plastic 22 C 30 min stable, 10 % O2, mmHg",
     0.0, 2.0, lambda q: scenario(q, 0.10 * 713.0, HB, 30.0, T_ROOM)),
    ("M", "mahoney_room_14", "Mahoney 1991: plastic 22 C 30 min stable, 14 % O2, mmHg",
     0.0, 2.0, lambda q: scenario(q, 0.14 * 713.0, HB, 30.0, T_ROOM)),
    ("H", "pretto_room", "Pretto 1994: wall part at 22 C from 650 mmHg, kPa/min",
     -0.72, 0.25, lambda q: wall_part(q, 650.0, HB, 30.0, T_ROOM) / 30.0 / KPA),
    ("H", "pretto_iced", "Pretto 1994: wall part iced from 650 mmHg, kPa/min",
     -0.12, 0.07, lambda q: wall_part(q, 650.0, HB, 30.0, T_ICED) / 30.0 / KPA),
    ("H", "scott_2min", "Scott 1971: wall part at 500 mmHg, 2 min, fraction",
     -0.06, 0.024, lambda q: wall_part(q, 500.0, HB, 2.0, T_ROOM) / 500.0),
    ("H", "scott_45min", "Scott 1971: wall part at 500 mmHg, 45 min, fraction",
     -0.16, 0.064, lambda q: wall_part(q, 500.0, HB, 45.0, T_ROOM) / 500.0),
]

STARTS = [
    (1e-3, 0.0, 0.3, 0.03),
    (3e-3, 0.5, 0.05, 0.02),
    (5e-3, 0.5, 0.005, 0.005),
    (2e-3, 0.3, 0.1, 0.004),
]


def unpack(x):
    c22 = math.exp(x[0])
    return (c22, c22 * math.exp(x[1]), math.exp(x[2]), math.exp(x[3]))


def fit(groups):
    def resid(x):
        q = unpack(x)
        return [(f(q) - pub) / sig for g, _, _, pub, sig, f in FIGURES if g in groups]

    best = None
    for c22, d, k22, k2 in STARTS:
        x0 = [math.log(c22), d, math.log(k22), math.log(k2)]
        sol = least_squares(resid, x0, bounds=([-12.0, 0.0, -8.0, -10.0], [-3.0, 3.0, 3.0, 3.0]),
                            xtol=1e-12, ftol=1e-12, gtol=1e-12)
        if best is None or sol.cost < best.cost:
            best = sol
    return unpack(best.x), best.cost


NAMES = ("capacity_room", "capacity_iced", "rate_room", "rate_iced")
WIDEN = 1.5


def compute():
    fits = {}
    for label, groups in (("all", "MH"), ("mahoney", "M"), ("high_po2", "H")):
        fits[label] = fit(groups)
    low = [min(fits[k][0][i] for k in fits) / WIDEN for i in range(4)]
    high = [max(fits[k][0][i] for k in fits) * WIDEN for i in range(4)]
    table = []
    for g, key, desc, pub, sig, f in FIGURES:
        table.append((key, pub, sig, [f(fits[k][0]) for k in ("all", "mahoney", "high_po2")], desc))
    return fits, low, high, table


def write(path):
    fits, low, high, table = compute()
    with open(path, "w", encoding="ascii") as out:
        out.write("# wall_fit.tsv - syringe-wall parameters fitted by tests/reference/wall_fit.py\n")
        out.write("# scipy %s least_squares, Python %s; do not edit, rerun the script.\n"
                  % (scipy.__version__, platform.python_version()))
        out.write("# param rows: name, fit to all figures (the default), fit to Mahoney alone,\n")
        out.write("# fit to the high-pO2 figures alone, range low, range high.\n")
        out.write("# figure rows: key, published, sigma, model with each of the three fits,\n")
        out.write("# description. Units: mL O2/dL/mmHg, 1/min, mmHg, kPa/min, fraction.\n")
        for label in ("all", "mahoney", "high_po2"):
            out.write("# cost (half the weighted sum of squares) %s: %.6g\n" % (label, fits[label][1]))
        for i, name in enumerate(NAMES):
            out.write("param\t%s\t%.6g\t%.6g\t%.6g\t%.6g\t%.6g\n" % (
                name, fits["all"][0][i], fits["mahoney"][0][i], fits["high_po2"][0][i],
                low[i], high[i]))
        for key, pub, sig, vals, desc in table:
            out.write("figure\t%s\t%.6g\t%.6g\t%.6g\t%.6g\t%.6g\t%s\n" % (
                key, pub, sig, vals[0], vals[1], vals[2], desc))
    return 0


def read(path):
    rows = {}
    with open(path, encoding="ascii") as f:
        for line in f:
            if line.startswith("#") or not line.strip():
                continue
            fields = line.rstrip("\n").split("\t")
            rows[(fields[0], fields[1])] = [float(v) for v in fields[2:7]]
    return rows


def check(path):
    try:
        stored = read(path)
    except (OSError, ValueError, IndexError) as exc:
        print("FAIL: cannot read %s: %s" % (path, exc), file=sys.stderr)
        return 1
    fd, tmp = tempfile.mkstemp(suffix=".tsv")
    os.close(fd)
    try:
        write(tmp)
        fresh = read(tmp)
    finally:
        os.unlink(tmp)
    bad = 0
    if set(stored) != set(fresh):
        print("FAIL: %s rows differ from a fresh fit" % path, file=sys.stderr)
        return 1
    for k in fresh:
        for a, b in zip(stored[k], fresh[k]):
            if not math.isclose(a, b, rel_tol=CHECK_RTOL, abs_tol=1e-9):
                print("FAIL: %s %s: stored %r, refitted %r" % (k[0], k[1], a, b), file=sys.stderr)
                bad += 1
    if bad:
        return 1
    print("ok: %s agrees with a fresh fit to %g" % (path, CHECK_RTOL))
    return 0


def main(argv):
    refdir = os.environ.get("SX_REFDIR") or os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(refdir, TABLE_NAME)
    if len(argv) == 2 and argv[1] == "--check":
        return check(path)
    if len(argv) != 1:
        print("usage: %s [--check]" % argv[0], file=sys.stderr)
        return 2
    write(path)
    print("wrote %s" % path)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
