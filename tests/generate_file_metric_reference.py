#!/usr/bin/env python3
"""Reference values for the file-only Bardeen metric, for tests/metric_files.rs.

The Bardeen regular black hole (Bardeen 1968, Proc. GR5, Tbilisi, 174), in the form written
by Ayon-Beato & Garcia 2000 (Phys. Lett. B 493, 149), with M = 1:

    ds^2 = -A dt^2 + dr^2/A + r^2 dOmega^2,   A(r) = 1 - 2 r^2 / (r^2 + g^2)^(3/2).

For two charges g the script computes with mpmath (general-purpose arbitrary precision):

* the outer horizon: the largest root of A(r) = 0;
* the photon sphere: the root of d/dr (C/A) = 0 outside the horizon, C = r^2 (Synge 1966,
  Mon. Not. R. Astron. Soc. 131, 463: b^2 <= C/A along the ray);
* the critical impact parameter b_c = sqrt(C/A) at the photon sphere.

Everything is computed at 60 digits and written with 30 significant digits, so the output is
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

mp.mp.dps = 60
SIGNIFICANT = 30
CHARGES = ["0.3", "0.6"]
CHECK_RELATIVE = 1e-13


def a_function(r, g):
    """A(r) = 1 - 2 r^2 / (r^2 + g^2)^(3/2)."""
    return 1 - 2 * r**2 / (r**2 + g**2) ** mp.mpf(1.5)


def a_prime(r, g):
    """dA/dr, differentiated by hand: -4r/(r^2+g^2)^(3/2) + 6 r^3/(r^2+g^2)^(5/2)."""
    s = r**2 + g**2
    return -4 * r / s ** mp.mpf(1.5) + 6 * r**3 / s ** mp.mpf(2.5)


def reference(g_text):
    g = mp.mpf(g_text)
    # Outer horizon: A changes sign between r = 1 (inside) and r = 2 (A(2) > 0 for g > 0).
    horizon = mp.findroot(lambda r: a_function(r, g), (mp.mpf(1), mp.mpf(2)), solver="anderson")
    # (C/A)' = (2r A - r^2 A')/A^2 = 0  <=>  2A - r A' = 0.
    photon = mp.findroot(
        lambda r: 2 * a_function(r, g) - r * a_prime(r, g),
        (horizon + mp.mpf("0.01"), mp.mpf(4)),
        solver="anderson",
    )
    b_c = mp.sqrt(photon**2 / a_function(photon, g))
    text = lambda x: mp.nstr(x, SIGNIFICANT, min_fixed=-5, max_fixed=5)
    return {
        "g": g_text,
        "outer_horizon": text(horizon),
        "photon_sphere_radius": text(photon),
        "critical_impact_parameter": text(b_c),
    }


def table():
    return {
        "metric": "bardeen (tests/data/bardeen.toml)",
        "source": "mpmath, from A = 1 - 2 r^2/(r^2 + g^2)^(3/2) (Ayon-Beato & Garcia 2000)",
        "entries": [reference(g) for g in CHARGES],
    }


def check(path):
    with open(path) as f:
        committed = json.load(f)
    fresh = table()
    for old, new in zip(committed["entries"], fresh["entries"], strict=True):
        for key, value in new.items():
            if key == "g":
                if old[key] != value:
                    sys.exit(f"{path}: charge {old[key]} != {value}")
                continue
            a, b = mp.mpf(old[key]), mp.mpf(value)
            if abs(a - b) > CHECK_RELATIVE * abs(b):
                sys.exit(f"{path}: g = {new['g']}, {key}: committed {old[key]}, fresh {value}")
    print(f"{path}: {len(fresh['entries'])} entries agree to {CHECK_RELATIVE} relative")


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
