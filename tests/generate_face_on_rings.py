#!/usr/bin/env python3
"""Face-on Schwarzschild thin disk with emission down to the horizon: reference impact parameters.

Independent of umbral: a photon from a distant face-on observer with impact parameter b moves in
a plane containing the line of sight, on the orbit (du/dphi)^2 = 1/b^2 - u^2 + 2 u^3, u = 1/r
(G = c = M = 1; e.g. Chandrasekhar 1983, The Mathematical Theory of Black Holes, ch. 3, sec. 20;
its derivative form d^2u/dphi^2 = 3u^2 - u). Seen face-on, the equatorial plane lies at swept
angle phi = pi/2 from the observer's direction, and the n-th crossing at phi = pi/2 + n pi.
The swept angle from infinity to u on the ingoing leg is

    phi(u) = integral_0^u du' / sqrt(1/b^2 - u'^2 + 2 u'^3),

and an escaping ray (b > b_c = 3 sqrt(3)) sweeps 2 phi(u_t) in all, u_t the turning point
(the smallest positive root of 1/b^2 - u^2 + 2 u^3).

Written here, with mpmath at 30 digits (quad with tanh-sinh, findroot):
- b_inner: the ray whose first crossing (phi = pi/2) is at r = 2 (u = 1/2): the edge of the
  dark central region (the inner shadow; Chael, Johnson & Lupsasca 2021, ApJ 918, 6);
- b_ring1_low: the captured ray whose second crossing (phi = 3 pi/2) is at r = 2;
- b_ring1_high: the escaping ray whose second crossing is at infinity (total sweep 3 pi/2);
  the n = 1 ring lies between the two;
- b_c = 3 sqrt(3) for reference (Synge 1966).

Run: python3 tests/generate_face_on_rings.py > tests/data/face_on_rings.json
"""
import json
import mpmath as mp

mp.mp.dps = 30


def swept_in(b, u):
    """Swept angle from infinity to u for a captured ray (no turning point below u)."""
    return mp.quad(lambda x: 1 / mp.sqrt(1 / b**2 - x**2 + 2 * x**3), [0, u])


def turning_point(b):
    # Smallest positive root of 2u^3 - u^2 + 1/b^2; it lies below u = 1/3 for b > b_c.
    roots = mp.polyroots([2, -1, 0, 1 / b**2], maxsteps=200, extraprec=60)
    real = sorted(mp.re(r) for r in roots if abs(mp.im(r)) < mp.mpf(10) ** -20 and mp.re(r) > 0)
    return real[0]


def swept_escape(b):
    """Total swept angle of an escaping ray. With P(u) = 2u^3 - u^2 + 1/b^2 = (u - ut) Q(u),
    Q(u) = 2u^2 + (2ut - 1) u + 2ut^2 - ut, and u = ut (1 - s^2), the integrand
    2 ut s / sqrt(P) becomes 2 sqrt(ut) / sqrt(-Q(u)): smooth up to the turning point."""
    ut = turning_point(b)
    q = lambda u: 2 * u**2 + (2 * ut - 1) * u + 2 * ut**2 - ut
    return 2 * mp.quad(lambda s: 2 * mp.sqrt(ut) / mp.sqrt(-q(ut * (1 - s**2))), [0, 1])


b_c = 3 * mp.sqrt(3)
b_inner = mp.findroot(lambda b: swept_in(b, mp.mpf(1) / 2) - mp.pi / 2, (2.0, 3.5), solver="illinois")
b_ring1_low = mp.findroot(
    lambda b: swept_in(b, mp.mpf(1) / 2) - 3 * mp.pi / 2, (5.0, 5.19), solver="illinois"
)
b_ring1_high = mp.findroot(lambda b: swept_escape(b) - 3 * mp.pi / 2, (5.2, 7.0), solver="illinois")

print(
    json.dumps(
        {
            "source": "tests/generate_face_on_rings.py (mpmath, orbit equation of Schwarzschild)",
            "b_c": mp.nstr(b_c, 20),
            "b_inner": mp.nstr(b_inner, 20),
            "b_ring1_low": mp.nstr(b_ring1_low, 20),
            "b_ring1_high": mp.nstr(b_ring1_high, 20),
        },
        indent=2,
    )
)
