#!/usr/bin/env python3
"""Reference swept angles of Schwarzschild light rays from the start radius D to their radial
turning point, from mpmath, for the ray tracer's winding of rays that end at their turning
point (src/shadow/raytrace/tests.rs).

A ray of impact parameter b in the Schwarzschild metric (M = 1) obeys
(du/dphi)^2 = 1/b^2 - u^2 + 2 u^3 with u = 1/r (Chandrasekhar 1983, The Mathematical Theory
of Black Holes, ch. 3, the null geodesics of the Schwarzschild metric; section from memory). It turns at r0, the largest root of
r^3 - b^2 (r - 2) = 0, and sweeps

    phi(b; D) = int_{1/D}^{1/r0} du / sqrt(1/b^2 - u^2 + 2 u^3)

between the radius D and the turning point. The quadrature (tanh-sinh, 40 digits) substitutes
u = u0 - t^2 to remove the turning point's inverse square root. D = 30000, the ray tracer's
default start radius.

Regenerate the committed table (from the crate root):

    python3 tests/generate_turning_windings.py --out tests/data/turning_windings.json

Check it against a fresh computation (as CI does):

    python3 tests/generate_turning_windings.py --check tests/data/turning_windings.json
"""

import argparse
import json
import sys

import mpmath as mp

mp.mp.dps = 40
CHECK_RELATIVE = 1e-12
START_RADIUS = mp.mpf(30000)
IMPACT_PARAMETERS = ["5.3", "5.5", "6", "8", "12", "30", "80"]


def swept_angle(b):
    b = mp.mpf(b)
    # The largest root of r^3 - b^2 (r - 2) = 0 lies beyond the photon sphere r = 3.
    r0 = mp.findroot(lambda r: r**3 - b**2 * (r - 2), b)
    u0 = 1 / r0
    g = lambda u: 1 / b**2 - u**2 + 2 * u**3  # noqa: E731
    # g(u0) = 0; with u = u0 - t^2, g = t^2 h(t) and du = -2 t dt.
    g1 = mp.diff(g, u0)

    def integrand(t):
        t2 = t * t
        with mp.workdps(80):
            if t2 < mp.mpf("1e-30"):
                ratio = -g1
            else:
                ratio = g(u0 - t2) / t2
        return 2 / mp.sqrt(ratio)

    t_max = mp.sqrt(u0 - 1 / START_RADIUS)
    pieces = [0, t_max / 100, t_max / 10, t_max / 2, t_max]
    return r0, mp.quad(integrand, pieces)


def table():
    rows = []
    for b in IMPACT_PARAMETERS:
        r0, phi = swept_angle(b)
        rows.append(
            {
                "impact_parameter": float(mp.mpf(b)),
                "turning_radius": float(mp.nstr(r0, 17)),
                "swept_angle": float(mp.nstr(phi, 17)),
            }
        )
    return {
        "generator": "tests/generate_turning_windings.py (mpmath "
        + mp.__version__
        + ", 40 digits)",
        "start_radius": float(START_RADIUS),
        "cases": rows,
    }


def main():
    parser = argparse.ArgumentParser()
    group = parser.add_mutually_exclusive_group(required=True)
    group.add_argument("--out")
    group.add_argument("--check")
    args = parser.parse_args()
    fresh = table()
    if args.out:
        with open(args.out, "w") as f:
            json.dump(fresh, f, indent=1)
            f.write("\n")
        return 0
    with open(args.check) as f:
        committed = json.load(f)
    bad = 0
    for new, old in zip(fresh["cases"], committed["cases"]):
        for key, value in new.items():
            ref = old.get(key)
            if ref is None or abs(value - ref) > CHECK_RELATIVE * max(1.0, abs(ref)):
                print(f"b = {new['impact_parameter']}: {key} = {value} differs from {ref}")
                bad += 1
    if len(fresh["cases"]) != len(committed["cases"]):
        print("the number of cases differs")
        bad += 1
    print(f"{len(fresh['cases'])} cases checked, {bad} differences")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
