#!/usr/bin/env python3
"""Reference values for the file-only Ayon-Beato-Garcia metric, for tests/metric_files.rs.

The Ayon-Beato-Garcia regular black hole (Ayon-Beato & Garcia 1998, Phys. Rev. Lett. 80, 5056),
with M = 1 and charge q (the form of A is from memory; the script checks that it reduces to
Schwarzschild for q = 0 and approaches Reissner-Nordstrom, 1 - 2/r + q^2/r^2, at large r, as that
paper states):

    ds^2 = -A dt^2 + dr^2/A + r^2 dOmega^2,
    A(r) = 1 - 2 r^2/(r^2 + q^2)^(3/2) + q^2 r^2/(r^2 + q^2)^2.

For two charges q the script computes with mpmath (general-purpose arbitrary precision):

* the outer horizon: the outermost root of A(r) = 0;
* the photon sphere: the root of d/dr (C/A) = 0 outside the horizon, C = r^2 (Synge 1966,
  Mon. Not. R. Astron. Soc. 131, 463: b^2 <= C/A along the ray);
* the critical impact parameter b_c = sqrt(C/A) at the photon sphere;

and, once, the extremal charge: the q at which the two horizons merge (A = A' = 0), above which
there is no horizon.

Everything is computed at 40 digits and written with 30 significant digits, so the output is
deterministic.

Regenerate the committed table (from the crate root):

    python3 tests/generate_file_metric_reference.py --out tests/data/file_metric_reference.json

Check the committed table against a fresh computation:

    python3 tests/generate_file_metric_reference.py --check tests/data/file_metric_reference.json

The check exits non-zero, naming the entry, if any value differs by more than 1e-13 relative.
"""

import argparse
import json
import sys

import mpmath as mp

mp.mp.dps = 40
SIGNIFICANT = 30
CHARGES = ["0.3", "0.55"]
CHECK_RELATIVE = 1e-13


def a_function(r, q):
    """A(r) = 1 - 2 r^2/(r^2 + q^2)^(3/2) + q^2 r^2/(r^2 + q^2)^2."""
    s = r**2 + q**2
    return 1 - 2 * r**2 / s ** mp.mpf(1.5) + q**2 * r**2 / s**2


def a_prime(r, q):
    """dA/dr by hand: -4r/s^(3/2) + 6r^3/s^(5/2) + 2q^2 r/s^2 - 4q^2 r^3/s^3, s = r^2 + q^2."""
    s = r**2 + q**2
    return (
        -4 * r / s ** mp.mpf(1.5)
        + 6 * r**3 / s ** mp.mpf(2.5)
        + 2 * q**2 * r / s**2
        - 4 * q**2 * r**3 / s**3
    )


def check_form():
    """Sanity checks of the formula: exits non-zero if one fails."""
    tol = mp.mpf(10) ** (-(mp.mp.dps - 5))
    for r in [mp.mpf("0.5"), mp.mpf(2), mp.mpf(7)]:
        # q -> 0: Schwarzschild, A = 1 - 2/r.
        if abs(a_function(r, mp.mpf(0)) - (1 - 2 / r)) > tol:
            sys.exit(f"A(r={r}, q=0) is not Schwarzschild")
        # The hand-written derivative agrees with mpmath's numerical differentiation.
        for q in CHARGES:
            q = mp.mpf(q)
            if abs(a_prime(r, q) - mp.diff(lambda x: a_function(x, q), r)) > tol:
                sys.exit(f"A'(r={r}, q={q}) disagrees with mp.diff")
    # Large r: A = 1 - 2/r + q^2/r^2 + 3 q^2/r^3 + O(r^-4) (Reissner-Nordstrom to O(r^-2)).
    q = mp.mpf("0.55")
    r = mp.mpf(10) ** 8
    excess = (a_function(r, q) - (1 - 2 / r + q**2 / r**2)) * r**3
    if abs(excess - 3 * q**2) > mp.mpf(10) ** -6:
        sys.exit(f"A is not Reissner-Nordstrom at large r: r^3 (A - A_RN) = {excess}")


def outer_horizon(q):
    """The outermost sign change of A, found by scanning down from r = 3 and refined."""
    step = mp.mpf("0.01")
    r = mp.mpf(3)
    if a_function(r, q) <= 0:
        sys.exit(f"q = {q}: A(3) <= 0, the scan would miss the horizon")
    while a_function(r - step, q) > 0:
        r -= step
        if r < step:
            sys.exit(f"q = {q}: no horizon")
    return mp.findroot(lambda x: a_function(x, q), (r - step, r), solver="anderson")


def extremal_charge():
    """The q at which A(r) = A'(r) = 0 (degenerate horizon), from a start near r = 1, q = 0.63."""
    r, q = mp.findroot(
        [lambda r, q: a_function(r, q), lambda r, q: a_prime(r, q)],
        (mp.mpf("1.0"), mp.mpf("0.63")),
    )
    return q


def text(x):
    return mp.nstr(x, SIGNIFICANT, min_fixed=-5, max_fixed=5)


def reference(q_text):
    q = mp.mpf(q_text)
    horizon = outer_horizon(q)
    # (C/A)' = (2r A - r^2 A')/A^2 = 0  <=>  2A - r A' = 0.
    photon = mp.findroot(
        lambda r: 2 * a_function(r, q) - r * a_prime(r, q),
        (horizon + mp.mpf("0.01"), mp.mpf(4)),
        solver="anderson",
    )
    if not horizon < photon < 4:
        sys.exit(f"q = {q_text}: photon sphere {photon} outside (horizon, 4)")
    b_c = mp.sqrt(photon**2 / a_function(photon, q))
    return {
        "q": q_text,
        "outer_horizon": text(horizon),
        "photon_sphere_radius": text(photon),
        "critical_impact_parameter": text(b_c),
    }


def table():
    check_form()
    return {
        "metric": "ayon-beato-garcia (tests/data/ayon-beato-garcia.toml)",
        "source": "mpmath, from A = 1 - 2 r^2/(r^2 + q^2)^(3/2) + q^2 r^2/(r^2 + q^2)^2 "
        "(Ayon-Beato & Garcia 1998, Phys. Rev. Lett. 80, 5056)",
        "extremal_charge": text(extremal_charge()),
        "entries": [reference(q) for q in CHARGES],
    }


def differs(old, new):
    a, b = mp.mpf(old), mp.mpf(new)
    return abs(a - b) > CHECK_RELATIVE * abs(b)


def check(path):
    with open(path) as f:
        committed = json.load(f)
    fresh = table()
    for key in ["metric", "source"]:
        if committed[key] != fresh[key]:
            sys.exit(f"{path}: {key}: committed {committed[key]!r}, fresh {fresh[key]!r}")
    if differs(committed["extremal_charge"], fresh["extremal_charge"]):
        sys.exit(
            f"{path}: extremal_charge: committed {committed['extremal_charge']}, "
            f"fresh {fresh['extremal_charge']}"
        )
    for old, new in zip(committed["entries"], fresh["entries"], strict=True):
        for key, value in new.items():
            if key == "q":
                if old[key] != value:
                    sys.exit(f"{path}: charge {old[key]} != {value}")
                continue
            if differs(old[key], value):
                sys.exit(f"{path}: q = {new['q']}, {key}: committed {old[key]}, fresh {value}")
    print(f"{path}: {len(fresh['entries'])} entries and the extremal charge agree to "
          f"{CHECK_RELATIVE} relative")


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    group = parser.add_mutually_exclusive_group(required=True)
    group.add_argument("--out", help="write the table to this file")
    group.add_argument("--check", help="compare this committed table with a fresh one")
    args = parser.parse_args()
    if args.out:
        with open(args.out, "w") as f:
            json.dump(table(), f, indent=2)
            f.write("\n")
    else:
        check(args.check)


if __name__ == "__main__":
    main()
