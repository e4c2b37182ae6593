#!/usr/bin/env python3
"""Reference bounds on the Reissner-Nordstrom charge q from intervals on the shadow radius.

Independent of umbral: the critical impact parameter of Reissner-Nordstrom (G = c = M = 1),

    b_c(q) = r^2 / sqrt(r^2 - 2 r + q^2)   at   r = (3 + sqrt(9 - 8 q^2)) / 2

(photon sphere of f = 1 - 2/r + q^2/r^2; e.g. Zakharov et al. 2005, Phys. Rev. D 72, 084020),
decreases from 3 sqrt(3) at q = 0 to 4 at q = 1 (the extremal black hole; |q| > 1 has no
horizon). For each radius interval [L, H] the allowed |q| are those with L <= b_c(q) <= H and
|q| <= 1; the interval ends are found with mpmath.findroot at 40 digits.

Run: python3 tests/generate_rn_bound.py > tests/data/rn_bound.json
"""
import json
import mpmath as mp

mp.mp.dps = 40


def b_c(q):
    q = mp.mpf(q)
    r = (3 + mp.sqrt(9 - 8 * q * q)) / 2
    return r * r / mp.sqrt(r * r - 2 * r + q * q)


B0 = b_c(0)  # 3 sqrt(3)
B1 = b_c(1)  # 4


def invert(b):
    """The q in [0, 1] with b_c(q) = b (b_c is decreasing there)."""
    q = mp.findroot(lambda q: b_c(q) - b, (mp.mpf("1e-30"), mp.mpf(1)), solver="anderson")
    assert 0 <= q <= 1 and abs(b_c(q) - b) < mp.mpf("1e-30"), (b, q)
    return q


def allowed_abs_q(lo, hi):
    """Allowed |q| in [0, 1] as [qa, qb], or None."""
    lo, hi = mp.mpf(lo), mp.mpf(hi)
    if lo > B0 or hi < B1:
        return None
    qa = mp.mpf(0) if hi >= B0 else invert(hi)
    qb = mp.mpf(1) if lo <= B1 else invert(lo)
    return [qa, qb]


def allowed(vary_lo, vary_hi, lo, hi):
    """Allowed q in [vary_lo, vary_hi] (vary_lo <= 0 mirrors the |q| interval)."""
    abs_q = allowed_abs_q(lo, hi)
    if abs_q is None:
        return []
    qa, qb = abs_q
    out = []
    if vary_lo < 0:
        neg = [max(-qb, mp.mpf(vary_lo)), -qa]
        if neg[0] <= neg[1]:
            out.append(neg)
    pos = [max(qa, mp.mpf(vary_lo)), min(qb, mp.mpf(vary_hi))]
    if pos[0] <= pos[1]:
        if out and out[-1][1] == pos[0]:
            out[-1][1] = pos[1]
        else:
            out.append(pos)
    return out


CASES = [
    {"vary": [0.0, 1.2], "intervals": [(0.68, 4.6, 5.2), (0.95, 4.3, 5.5)]},
    {"vary": [0.0, 1.2], "intervals": [(0.68, 4.5, 5.0), (0.95, 4.2, 5.1)]},
    {"vary": [-1.2, 1.2], "intervals": [(0.68, 4.5, 5.0), (0.95, 3.5, 4.2)]},
    {"vary": [0.0, 1.2], "intervals": [(0.68, 3.0, 3.9)]},
]

out = []
for case in CASES:
    levels = []
    for conf, lo, hi in case["intervals"]:
        levels.append(
            {
                "confidence": conf,
                "low": lo,
                "high": hi,
                "allowed": [
                    [float(a), float(b)] for a, b in allowed(case["vary"][0], case["vary"][1], lo, hi)
                ],
            }
        )
    out.append({"vary": case["vary"], "levels": levels})

print(json.dumps({"source": "mpmath inversion of b_c(q), see tests/generate_rn_bound.py",
                  "b_c_q0": float(B0), "b_c_q1": float(B1), "cases": out}, indent=1))
