#!/usr/bin/env python3
"""Reference strong-deflection coefficients and areal radii from mpmath, for
tests/shadow_spherical.rs.

For a static, spherically symmetric metric ds^2 = -A dt^2 + B dr^2 + C dOmega^2 a light ray of
impact parameter b turns at r0 with C(r0)/A(r0) = b^2 and is deflected by

    alpha(b) = 2 int_{r0}^inf sqrt(B/C) / sqrt(C/(A b^2) - 1) dr - pi.

Close to the critical impact parameter b_c = sqrt(C/A) at the photon sphere the deflection
diverges logarithmically, alpha = -abar ln(b/b_c - 1) + bbar + O((b - b_c) ln(b - b_c)) (Bozza
2002, Phys. Rev. D 66, 103001). This script measures abar directly from that divergence: it
computes alpha by mpmath quadrature (tanh-sinh, 40 digits, with r = r0 + t^2 to remove the
turning point's inverse square root) at b = b_c (1 + eps) for eps = 1e-8 and 1e-10 and takes
abar = (alpha(1e-10) - alpha(1e-8)) / ln(100); the neglected term changes abar by about 1e-7
relative. No formula for abar enters, so the check of umbral's abar (from the photon-ring
exponent) is independent. For these metrics B = 1/A.

It also gives the areal radii sqrt(C) of the photon sphere and of the horizon, for the metrics
whose C differs from r^2.

The metrics come from tests/generate_photon_spheres.py (same transcriptions).

Regenerate the committed table (from the crate root):

    python3 tests/generate_strong_deflection.py --out tests/data/strong_deflection.json

Check it against a fresh computation (as CI does):

    python3 tests/generate_strong_deflection.py --check tests/data/strong_deflection.json
"""

import argparse
import json
import os
import sys

import mpmath as mp

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import generate_photon_spheres as ps  # noqa: E402

mp.mp.dps = 40
CHECK_RELATIVE = 1e-12
EPS = (mp.mpf("1e-8"), mp.mpf("1e-10"))


def schwarzschild(_p):
    # Schwarzschild 1916; A = 1 - 2/r, C = r^2.
    return (lambda r: 1 - 2 / r, lambda r: r**2, mp.mpf(2))


def reissner_nordstrom(p):
    # Reissner 1916, Nordstrom 1918: A = 1 - 2/r + q^2/r^2, C = r^2.
    qq = p["q"]
    return (lambda r: 1 - 2 / r + qq**2 / r**2, lambda r: r**2, 1 + mp.sqrt(1 - qq**2))


CASES = [
    ("schwarzschild", schwarzschild, [], []),
    ("reissner-nordstrom", reissner_nordstrom, ["q"], ["1/2"]),
    ("dilaton", ps.dilaton, ["q"], ["1/2"]),
    ("jnw", ps.jnw, ["nu"], ["4/5"]),
    ("simpson-visser", ps.simpson_visser, ["l"], ["1/2"]),
]


def deflection(big_a, big_c, b):
    """alpha(b) for B = 1/A, by quadrature in t with r = r0 + t^2. With F = C/A, the root
    sqrt(F(r)/b^2 - 1) is taken as sqrt((F(r) - F(r0))/b^2) at 80 digits, and below t^2 = 1e-30
    by F's Taylor series at r0 (first and second derivative), so that it never cancels."""
    big_f = lambda r: big_c(r) / big_a(r)  # noqa: E731
    r0 = mp.findroot(lambda r: big_f(r) - b**2, photon_radius[0] * (1 + mp.mpf("1e-3")))
    f0 = big_f(r0)
    f1 = mp.diff(big_f, r0)
    f2 = mp.diff(big_f, r0, 2)

    def integrand(t):
        t2 = t * t
        with mp.workdps(80):
            if t2 < mp.mpf("1e-30"):
                rise = f1 * t2 + f2 * t2 * t2 / 2
            else:
                rise = big_f(r0 + t2) - f0
            r = r0 + t2
            # dphi/dr = sqrt(B/C) / sqrt(F/b^2 - 1) = 1/sqrt(A C) / sqrt(rise/b^2); dr = 2 t dt.
            return +(2 * t / mp.sqrt(big_a(r) * big_c(r)) / mp.sqrt(rise / b**2))

    pieces = [0, mp.mpf("1e-6"), mp.mpf("1e-4"), mp.mpf("1e-3"), mp.mpf("1e-2"), mp.mpf("0.1"), 1, 10, mp.inf]
    return 2 * mp.quad(integrand, pieces) - mp.pi


photon_radius = [None]


def case(builder, names, values):
    params = {n: ps.q(v) for n, v in zip(names, values)}
    big_a, big_c, horizon = builder(params)
    spheres, inner = ps.photon_spheres(builder, params) if names else ([], None)
    if names:
        r_m = spheres[0]["radius"]
    else:
        r_m = mp.mpf(3)
    photon_radius[0] = r_m
    b_c = mp.sqrt(big_c(r_m) / big_a(r_m))
    alphas = [deflection(big_a, big_c, b_c * (1 + e)) for e in EPS]
    abar = (alphas[1] - alphas[0]) / mp.log(EPS[0] / EPS[1])
    out = {
        "photon_sphere": r_m,
        "critical_impact_parameter": b_c,
        "abar": abar,
        "areal_photon_sphere": mp.sqrt(big_c(r_m)),
    }
    if horizon is not None and big_c(horizon) > 0:
        out["areal_horizon"] = mp.sqrt(big_c(horizon))
    return params, out


def table():
    rows = []
    for name, builder, names, values in CASES:
        params, out = case(builder, names, values)
        rows.append(
            {
                "metric": name,
                "parameters": {n: float(params[n]) for n in names},
                **{k: float(mp.nstr(v, 17)) for k, v in out.items()},
            }
        )
    return {
        "generator": "tests/generate_strong_deflection.py (mpmath "
        + mp.__version__
        + ", 40 digits)",
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
            if isinstance(value, float):
                ref = old.get(key)
                if ref is None or abs(value - ref) > CHECK_RELATIVE * max(1.0, abs(ref)):
                    print(f"{new['metric']}: {key} = {value} differs from {ref}")
                    bad += 1
    if len(fresh["cases"]) != len(committed["cases"]):
        print("the number of cases differs")
        bad += 1
    print(f"{len(fresh['cases'])} cases checked, {bad} differences")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
