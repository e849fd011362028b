#!/usr/bin/env python3
"""Cross-check the unit conversions of `cavitas npsh` against scipy.constants.

Usage: units_check.py CAVITAS_BINARY

Runs `cavitas npsh ... --json` with inputs in US customary and other non-SI
units and compares the SI values cavitas reports under "stated" (and the
velocity head it derives) with the same conversions done by scipy.constants
(CODATA and the exact definitions of the inch, foot, pound, US gallon, psi,
bar and the degree Fahrenheit). One line per check, then "N passed, M failed".

Exit status: 0 all pass, 1 any fails, 77 if scipy cannot be imported.
"""

import json
import math
import os
import subprocess
import sys
import tempfile

try:
    import scipy
    import scipy.constants as C
except ImportError as exc:  # pragma: no cover - depends on the machine
    print(f"SKIP: scipy cannot be imported by {sys.executable}: {exc}")
    sys.exit(77)

REF = f"scipy.constants {scipy.__version__}"
# The conversion factors are exact decimal definitions; cavitas and scipy may
# round differently in the last bit of a product: 1e-12 relative is far below
# any wrong factor (the smallest plausible mistake, psi vs psf, is 144x).
TOL = 1e-12


def npsh(binary, args):
    with tempfile.TemporaryDirectory() as d:
        out = os.path.join(d, "npsh.json")
        proc = subprocess.run([binary, "npsh", *args, "--json", out], capture_output=True, text=True, check=False)
        if proc.returncode != 0:
            raise RuntimeError(f"cavitas npsh {' '.join(args)} exited {proc.returncode}: {proc.stderr.strip()}")
        with open(out, encoding="utf-8") as f:
            return json.load(f)


def main():
    if len(sys.argv) != 2:
        print(__doc__)
        return 2
    binary = sys.argv[1]
    passed = failed = 0

    def check(name, got, want, tol=TOL):
        nonlocal passed, failed
        err = abs(got - want) / abs(want) if want != 0 else abs(got)
        ok = err <= tol and math.isfinite(got)
        print(f"{'PASS' if ok else 'FAIL'}  {name:<46} cavitas {got:.15g}  {REF} {want:.15g}  rel err {err:.2e} (tol {tol:g})")
        if ok:
            passed += 1
        else:
            failed += 1

    gpm = C.gallon_US / C.minute
    us = npsh(binary, ["--suction-pressure", "5psig", "--temperature", "140F", "--barometric", "14.7psi",
                       "--gauge-height", "2.5ft", "--flow", "500gpm", "--bore", "6in", "--npsh3", "12ft"])
    s = us["stated"]
    check("5 psig -> Pa", s["suction_pressure_pa"], 5 * C.psi)
    check("14.7 psi (barometric) -> Pa", s["barometric_pa"], 14.7 * C.psi)
    check("140 F -> K", s["temperature_k"], C.convert_temperature(140.0, "F", "K"))
    check("2.5 ft -> m", s["gauge_height_m"], 2.5 * C.foot)
    check("500 gpm (US) -> m3/s", s["flow_m3_s"], 500 * gpm)
    check("6 in -> m", s["bore_m"], 6 * C.inch)
    check("12 ft (NPSH3) -> m", s["npsh3_m"], 12 * C.foot)
    # The velocity head with standard gravity: v = Q / (pi d^2 / 4), v^2 / (2 g).
    v = 500 * gpm / (math.pi * (6 * C.inch) ** 2 / 4)
    check("velocity head v^2/(2 g), g = scipy.constants.g", us["velocity_head_m"], v * v / (2 * C.g))
    check("absolute suction = gauge + barometric", us["absolute_suction_pa"], (5 + 14.7) * C.psi)

    metric = npsh(binary, ["--suction-pressure", "-0.25bar", "--temperature", "288.15K", "--barometric", "1013.25hPa",
                           "--gauge-height", "-35cm", "--flow", "33L/s", "--bore", "200mm"])
    s = metric["stated"]
    check("-0.25 bar -> Pa", s["suction_pressure_pa"], -0.25 * C.bar)
    check("1013.25 hPa -> Pa (one atmosphere)", s["barometric_pa"], C.atm)
    check("288.15 K", s["temperature_k"], 288.15)
    check("-35 cm -> m", s["gauge_height_m"], -0.35)
    check("33 L/s -> m3/s", s["flow_m3_s"], 33 * C.liter)

    other = npsh(binary, ["--suction-pressure", "0.35MPa", "--pressure-ref", "absolute", "--vapour-pressure", "40psia",
                          "--density", "34.3lb/ft3", "--flow", "120m3/h", "--bore", "4in"])
    s = other["stated"]
    check("0.35 MPa -> Pa", s["suction_pressure_pa"], 0.35 * C.mega)
    check("40 psia (vapour) -> Pa", s["vapour_pressure_pa"], 40 * C.psi)
    check("34.3 lb/ft3 -> kg/m3", s["density_kg_m3"], 34.3 * C.pound / C.foot ** 3)
    check("120 m3/h -> m3/s", s["flow_m3_s"], 120 / C.hour)

    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
