#!/usr/bin/env python3
"""Reference Christoffel symbols from sympy, for tests/christoffel_tables.rs and christoffel_catalogue.rs.

The script differentiates metrics symbolically with sympy and tabulates

    Gamma^mu_{alpha beta} = 1/2 g^{mu nu} (d_alpha g_{nu beta} + d_beta g_{nu alpha}
                                           - d_nu g_{alpha beta})

at a fixed set of points. Units G = c = M = 1, signature (-,+,+,+), coordinates
(t, r, theta, phi). The metrics are:

* Kerr-Newman in Boyer-Lindquist coordinates (Newman et al. 1965, J. Math. Phys. 6, 918):
  Sigma = r^2 + a^2 cos^2 theta, Delta = r^2 - 2r + a^2 + q^2,
  g_tt = -(1 - (2r - q^2)/Sigma), g_tphi = -a sin^2 theta (2r - q^2)/Sigma,
  g_rr = Sigma/Delta, g_thth = Sigma,
  g_phph = [r^2 + a^2 + (2r - q^2) a^2 sin^2 theta/Sigma] sin^2 theta.
* A deliberately generic static, spherically symmetric metric
  ds^2 = -A dt^2 + B dr^2 + C dOmega^2 with B != 1/A and C != r^2 (see SPHERICAL_* below).

The "catalogue" list holds the built-in alternative metrics, by their registry names, each at a
few parameter points with non-trivial deviations (see CATALOGUE below; the line elements are
transcribed from the papers named in each builder's docstring, and each is checked to reduce to
Kerr or Schwarzschild at zero deviation before the table is built). For these the parameters
are substituted exactly before differentiation and the contraction is left unsimplified;
evalf's adaptive precision still gives 40 correct digits.

Beside each Gamma the table stores its term scale
kappa^mu_{alpha beta} = 1/2 sum_nu |g^{mu nu}| (|d_alpha g_{nu beta}| + |d_beta g_{nu alpha}|
+ |d_nu g_{alpha beta}|), the size of the largest terms of the contraction, so that a test can
tell genuine errors from double-precision cancellation where |Gamma| << kappa.

Each point is evaluated from exact rational inputs (theta = pi/2 exactly on the equator), with
sympy's adaptive-precision evalf at 40 digits, and every value is written rounded to 17
significant digits, so the output is byte-for-byte deterministic.

Regenerate the committed table (from the crate root):

    python3 tests/generate_christoffel.py --out tests/data/christoffel_tables.json

Check the committed table against a fresh symbolic computation (as CI does):

    python3 tests/generate_christoffel.py --check tests/data/christoffel_tables.json

The check exits non-zero, with a one-line message naming the entry, if any value differs by
more than 1e-13 relative (1e-13 absolute for entries that are exactly zero).
"""

import argparse
import json
import sys
from decimal import Decimal

import sympy as sp

DIGITS = 40
SIGNIFICANT = 17
CHECK_RELATIVE = 1e-13

t, r, th, ph = sp.symbols("t r theta phi", real=True)
a, q = sp.symbols("a q", real=True)
COORDS = (t, r, th, ph)

# Generic spherical metric. A has a simple zero near r = 1.80 (the horizon); B = (1 + 1/(5r))/A
# shares that zero but B != 1/A, and C = r^2 + r/2 != r^2.
SPHERICAL_A = 1 - 2 / r + sp.Rational(3, 10) / r**2 + sp.Rational(1, 10) / r**3
SPHERICAL_B = (1 + sp.Rational(1, 5) / r) / SPHERICAL_A
SPHERICAL_C = r**2 + r / 2

# Fixed evaluation points: exact rationals, theta in radians.
KERR_NEWMAN_PARAMETERS = [
    ("0", "0"),
    ("1/2", "0"),
    ("499/500", "0"),
    ("0", "3/5"),
    ("3/5", "1/2"),
    ("3/10", "9/10"),
]
KERR_NEWMAN_RADII = ["5/2", "15/4", "7", "20"]
THETAS = ["pi/2", "1/3", "6/5", "23/10"]
SPHERICAL_RADII = ["5/2", "15/4", "7", "20"]


def kerr_newman_metric():
    """Covariant Kerr-Newman metric as a 4x4 sympy Matrix."""
    sigma = r**2 + a**2 * sp.cos(th) ** 2
    delta = r**2 - 2 * r + a**2 + q**2
    mass = 2 * r - q**2
    s2 = sp.sin(th) ** 2
    g = sp.zeros(4, 4)
    g[0, 0] = -(1 - mass / sigma)
    g[0, 3] = g[3, 0] = -a * s2 * mass / sigma
    g[1, 1] = sigma / delta
    g[2, 2] = sigma
    g[3, 3] = (r**2 + a**2 + mass * a**2 * s2 / sigma) * s2
    return g


def spherical_metric():
    """Covariant generic spherical metric as a 4x4 sympy Matrix."""
    return sp.diag(-SPHERICAL_A, SPHERICAL_B, SPHERICAL_C, SPHERICAL_C * sp.sin(th) ** 2)


def inverse_block(g):
    """Exact inverse of a metric whose only off-diagonal entry is g_{t phi}."""
    inv = sp.zeros(4, 4)
    det_t_phi = g[0, 0] * g[3, 3] - g[0, 3] ** 2
    inv[0, 0] = g[3, 3] / det_t_phi
    inv[3, 3] = g[0, 0] / det_t_phi
    inv[0, 3] = inv[3, 0] = -g[0, 3] / det_t_phi
    inv[1, 1] = 1 / g[1, 1]
    inv[2, 2] = 1 / g[2, 2]
    return inv


def christoffel(g, simplify=True):
    """Symbolic Gamma^mu_{alpha beta}, as nested lists [mu][alpha][beta], each simplified
    (with simplify=False left as the raw contraction, which evalf handles as well)."""
    inv = inverse_block(g)
    dg = [g.diff(x) for x in COORDS]  # dg[lam][mu, nu] = d_lam g_{mu nu}
    gamma = [[[sp.S.Zero] * 4 for _ in range(4)] for _ in range(4)]
    for mu in range(4):
        for alpha in range(4):
            for beta in range(alpha, 4):
                total = sp.S.Zero
                for nu in range(4):
                    if inv[mu, nu] == 0:
                        continue
                    total += inv[mu, nu] * (
                        dg[alpha][nu, beta] + dg[beta][nu, alpha] - dg[nu][alpha, beta]
                    )
                total = sp.cancel(sp.together(total / 2)) if simplify else total / 2
                gamma[mu][alpha][beta] = total
                gamma[mu][beta][alpha] = total
    return {"gamma": gamma, "inverse": inv, "derivatives": dg}


def term_scale(symbolic, subs):
    """kappa^mu_{alpha beta} = 1/2 sum_nu |g^{mu nu}| (|d_alpha g_{nu beta}| + |d_beta g_{nu alpha}|
    + |d_nu g_{alpha beta}|), the size of the largest terms in the contraction.

    |Gamma| <= kappa; where |Gamma| << kappa the sum cancels and a double-precision evaluation
    of the defining formula loses about log10(kappa/|Gamma|) digits, so the Rust test measures
    errors relative to kappa.
    """

    def at(expr):
        exact = sp.sympify(expr).subs(subs)
        return sp.S.Zero if exact == 0 else abs(exact.evalf(DIGITS, strict=True))

    inv = [[at(symbolic["inverse"][m, n]) for n in range(4)] for m in range(4)]
    dg = [[[at(d[m, n]) for n in range(4)] for m in range(4)] for d in symbolic["derivatives"]]
    out = []
    for mu in range(4):
        rows = []
        for alpha in range(4):
            row = []
            for beta in range(4):
                total = sp.S.Zero
                for nu in range(4):
                    if inv[mu][nu] != 0:
                        total += inv[mu][nu] * (
                            dg[alpha][nu][beta] + dg[beta][nu][alpha] + dg[nu][alpha][beta]
                        )
                row.append(format_value(total / 2))
            rows.append(row)
        out.append(rows)
    return out


def number(text):
    """Exact sympy number from a string such as '3/5' or 'pi/2'."""
    return sp.sympify(text, rational=True)


def format_value(value):
    """A sympy number as a JSON number with SIGNIFICANT digits; exact zeros as 0."""
    if value == 0:
        return "0"
    x = Decimal(str(sp.Float(value, DIGITS)))
    if x == 0:
        raise ArithmeticError("value evaluated to zero without being exactly zero")
    return format(x, f".{SIGNIFICANT - 1}e")


def evaluate(symbolic, subs):
    """All 64 components at one point, as formatted strings [mu][alpha][beta]."""
    gamma = symbolic["gamma"]
    out = []
    for mu in range(4):
        rows = []
        for alpha in range(4):
            row = []
            for beta in range(4):
                exact = gamma[mu][alpha][beta].subs(subs)
                value = exact if exact == 0 else exact.evalf(DIGITS, strict=True)
                row.append(format_value(value))
            rows.append(row)
        out.append(rows)
    return out


def float_text(text):
    """An exact input written as a 17-digit JSON number."""
    return format_value(number(text).evalf(DIGITS))


# ---------------------------------------------------------------------------------------------
# The catalogue of alternative metrics. Each is transcribed from its paper's published form
# (G = c = M = 1); `params` maps parameter names to exact sympy numbers. All are stationary and
# axisymmetric with g_{t phi} the only off-diagonal component, as inverse_block assumes.
# ---------------------------------------------------------------------------------------------


def static_spherical(a_fn, b_fn, c_fn):
    """ds^2 = -A dt^2 + B dr^2 + C dOmega^2 as a 4x4 Matrix."""
    return sp.diag(-a_fn, b_fn, c_fn, c_fn * sp.sin(th) ** 2)


def tidal_charge_metric(p):
    """Dadhich, Maartens, Papadopoulos & Rezania 2000 (Phys. Lett. B 487, 1):
    A = 1/B = 1 - 2/r + q2/r^2, C = r^2."""
    f = 1 - 2 / r + p["q2"] / r**2
    return static_spherical(f, 1 / f, r**2)


def bardeen_metric(p):
    """Bardeen 1968 regular black hole (Ayon-Beato & Garcia 2000 form):
    A = 1/B = 1 - 2 r^2/(r^2 + g^2)^(3/2), C = r^2."""
    f = 1 - 2 * r**2 / (r**2 + p["g"] ** 2) ** sp.Rational(3, 2)
    return static_spherical(f, 1 / f, r**2)


def hayward_metric(p):
    """Hayward 2006 (Phys. Rev. Lett. 96, 031103): A = 1/B = 1 - 2 r^2/(r^3 + 2 l^2), C = r^2."""
    f = 1 - 2 * r**2 / (r**3 + 2 * p["l"] ** 2)
    return static_spherical(f, 1 / f, r**2)


def dilaton_metric(p):
    """Garfinkle, Horowitz & Strominger 1991 (Phys. Rev. D 43, 3140), Einstein frame:
    A = 1/B = 1 - 2/r, C = r (r - q^2)."""
    f = 1 - 2 / r
    return static_spherical(f, 1 / f, r * (r - p["q"] ** 2))


def simpson_visser_metric(p):
    """Simpson & Visser 2019 (JCAP 02, 042): A = 1/B = 1 - 2/sqrt(r^2 + l^2), C = r^2 + l^2."""
    f = 1 - 2 / sp.sqrt(r**2 + p["l"] ** 2)
    return static_spherical(f, 1 / f, r**2 + p["l"] ** 2)


def jnw_metric(p):
    """Janis, Newman & Winicour 1968 (Phys. Rev. Lett. 20, 878), Virbhadra 1997 form:
    A = 1/B = (1 - b/r)^nu, C = r^2 (1 - b/r)^(1 - nu), b = 2/nu."""
    nu = p["nu"]
    w = 1 - (2 / nu) / r
    return static_spherical(w**nu, w ** (-nu), r**2 * w ** (1 - nu))


def rezzolla_zhidenko_metric(p):
    """Rezzolla & Zhidenko 2014 (Phys. Rev. D 90, 084009), continued fractions cut after a2, b2:
    x = 1 - r0/r, r0 = 2/(1 + epsilon), N^2 = x A(x),
    A = 1 - epsilon (1 - x) + (a0 - epsilon)(1 - x)^2 + a1/(1 + a2 x) (1 - x)^3,
    B = 1 + b0 (1 - x) + b1/(1 + b2 x) (1 - x)^2; ds^2 = -N^2 dt^2 + B^2/N^2 dr^2 + r^2 dOmega^2.
    """
    eps = p["epsilon"]
    r0 = 2 / (1 + eps)
    x = 1 - r0 / r
    big_a = (
        1
        - eps * (1 - x)
        + (p["a0"] - eps) * (1 - x) ** 2
        + p["a1"] / (1 + p["a2"] * x) * (1 - x) ** 3
    )
    big_b = 1 + p["b0"] * (1 - x) + p["b1"] / (1 + p["b2"] * x) * (1 - x) ** 2
    n2 = x * big_a
    return static_spherical(n2, big_b**2 / n2, r**2)


def kerr_form(mass, spin, rho2, radial2):
    """Kerr-like Boyer-Lindquist form with r^2 -> radial2 and M r -> mass (a function of r):
    g_tt = -(1 - 2 mass/rho2), g_tphi = -2 a mass sin^2/rho2, g_rr = rho2/Delta, g_thth = rho2,
    g_phph = [radial2 + a^2 + 2 mass a^2 sin^2/rho2] sin^2, Delta = radial2 - 2 mass + a^2."""
    s2 = sp.sin(th) ** 2
    delta = radial2 - 2 * mass + spin**2
    g = sp.zeros(4, 4)
    g[0, 0] = -(1 - 2 * mass / rho2)
    g[0, 3] = g[3, 0] = -2 * spin * mass * s2 / rho2
    g[1, 1] = rho2 / delta
    g[2, 2] = rho2
    g[3, 3] = (radial2 + spin**2 + 2 * mass * spin**2 * s2 / rho2) * s2
    return g


def kerr_sen_metric(p):
    """Sen 1992 (Phys. Rev. Lett. 69, 1006), Einstein frame: Kerr with r^2 -> r (r + 2b),
    rho^2 = r (r + 2b) + a^2 cos^2 theta, the mass term 2 M r unchanged."""
    a_, b_ = p["a"], p["b"]
    radial2 = r * (r + 2 * b_)
    return kerr_form(r, a_, radial2 + a_**2 * sp.cos(th) ** 2, radial2)


def rotating_bardeen_metric(p):
    """Bambi & Modesto 2013 (Phys. Lett. B 721, 329): Kerr with M -> m(r) = r^3/(r^2 + g^2)^(3/2)."""
    a_ = p["a"]
    m = r**3 / (r**2 + p["g"] ** 2) ** sp.Rational(3, 2)
    return kerr_form(m * r, a_, r**2 + a_**2 * sp.cos(th) ** 2, r**2)


def rotating_hayward_metric(p):
    """Bambi & Modesto 2013 (Phys. Lett. B 721, 329): Kerr with M -> m(r) = r^3/(r^3 + 2 l^2)."""
    a_ = p["a"]
    m = r**3 / (r**3 + 2 * p["l"] ** 2)
    return kerr_form(m * r, a_, r**2 + a_**2 * sp.cos(th) ** 2, r**2)


def johannsen_psaltis_metric(p):
    """Johannsen & Psaltis 2011 (Phys. Rev. D 83, 124015), lowest free term h = eps3 r/Sigma^2:
    g_tt = -(1 + h)(1 - 2r/Sigma), g_tphi = -2 a r sin^2 (1 + h)/Sigma,
    g_rr = Sigma (1 + h)/(Delta + a^2 h sin^2), g_thth = Sigma,
    g_phph = sin^2 [r^2 + a^2 + 2 a^2 r sin^2/Sigma] + h a^2 (Sigma + 2r) sin^4/Sigma."""
    a_ = p["a"]
    s2 = sp.sin(th) ** 2
    sigma = r**2 + a_**2 * sp.cos(th) ** 2
    delta = r**2 - 2 * r + a_**2
    h = p["eps3"] * r / sigma**2
    g = sp.zeros(4, 4)
    g[0, 0] = -(1 + h) * (1 - 2 * r / sigma)
    g[0, 3] = g[3, 0] = -2 * a_ * r * s2 * (1 + h) / sigma
    g[1, 1] = sigma * (1 + h) / (delta + a_**2 * h * s2)
    g[2, 2] = sigma
    g[3, 3] = s2 * (r**2 + a_**2 + 2 * a_**2 * r * s2 / sigma) + h * a_**2 * (
        sigma + 2 * r
    ) * s2**2 / sigma
    return g


def johannsen_metric(p):
    """Johannsen 2013 (Phys. Rev. D 88, 044002), lowest-order deviations:
    Sigma~ = Sigma + eps3/r, A1 = 1 + alpha13/r^3, A2 = 1 + alpha22/r^2, A5 = 1 + alpha52/r^2,
    D = [(r^2 + a^2) A1 - a^2 A2 sin^2]^2, g_tt = -Sigma~ [Delta - a^2 A2^2 sin^2]/D,
    g_tphi = -a [(r^2 + a^2) A1 A2 - Delta] Sigma~ sin^2/D, g_rr = Sigma~/(Delta A5),
    g_thth = Sigma~, g_phph = Sigma~ sin^2 [(r^2 + a^2)^2 A1^2 - a^2 Delta sin^2]/D."""
    a_ = p["a"]
    s2 = sp.sin(th) ** 2
    sigma = r**2 + a_**2 * sp.cos(th) ** 2
    delta = r**2 - 2 * r + a_**2
    sig_t = sigma + p["eps3"] / r
    a1 = 1 + p["alpha13"] / r**3
    a2 = 1 + p["alpha22"] / r**2
    a5 = 1 + p["alpha52"] / r**2
    d = ((r**2 + a_**2) * a1 - a_**2 * a2 * s2) ** 2
    g = sp.zeros(4, 4)
    g[0, 0] = -sig_t * (delta - a_**2 * a2**2 * s2) / d
    g[0, 3] = g[3, 0] = -a_ * ((r**2 + a_**2) * a1 * a2 - delta) * sig_t * s2 / d
    g[1, 1] = sig_t / (delta * a5)
    g[2, 2] = sig_t
    g[3, 3] = sig_t * s2 * ((r**2 + a_**2) ** 2 * a1**2 - a_**2 * delta * s2) / d
    return g


def krz_metric(p):
    """Konoplya, Rezzolla & Zhidenko 2016 (Phys. Rev. D 93, 064015), lowest-order delta form of
    Ni, Jiang & Bambi 2016 (JCAP 09, 014); y = cos theta, r0 = 1 + sqrt(1 - a^2):
    ds^2 = -(N^2 - W^2 sin^2)/K^2 dt^2 - 2 W r sin^2 dt dphi + K^2 r^2 sin^2 dphi^2
           + Sigma_K (B^2/N^2 dr^2 + r^2 dtheta^2), Sigma_K = 1 + a^2 y^2/r^2,
    N^2 = (1 - r0/r)[1 - e0 r0/r + (k00 - e0) r0^2/r^2 + d1 r0^3/r^3]
          + [a20 r0^3/r^3 + a21 r0^4/r^4 + k21 L r0^3/r^3] y^2,
    B = 1 + d4 r0^2/r^2 + d5 r0^2 y^2/r^2, W = [w00 r0^2/r^2 + d2 r0^3/r^3 + d3 r0^3 y^2/r^3]/Sigma_K,
    K^2 = 1 + a W/r + [k00 r0^2/r^2 + k21 L r0^3 y^2/r^3]/Sigma_K,
    L = 1/[1 + k22 (1 - r0/r)/(1 + k23 (1 - r0/r))], e0 = (2 - r0)/r0, k00 = a^2/r0^2,
    a20 = 2a^2/r0^3, a21 = -a^4/r0^4 + d6, k21 = a^4/r0^4 - 2a^2/r0^3 - d6, k22 = -a^2/r0^2,
    k23 = a^2/r0^2, w00 = 2a/r0^2."""
    a_ = p["a"]
    d1, d2, d3, d4, d5, d6 = (p[f"delta{i}"] for i in range(1, 7))
    y = sp.cos(th)
    s2 = sp.sin(th) ** 2
    # The constants are numbers: simplify them so that evalf sees exact zeros as zeros
    # (k00 - e0 vanishes identically, since r0 is the root of r^2 - 2r + a^2).
    r0 = 1 + sp.sqrt(1 - a_**2)
    e0 = sp.simplify((2 - r0) / r0)
    k00 = sp.simplify(a_**2 / r0**2)
    k00_minus_e0 = sp.simplify(k00 - e0)
    a20 = sp.simplify(2 * a_**2 / r0**3)
    a21 = sp.simplify(-(a_**4) / r0**4 + d6)
    k21 = sp.simplify(a_**4 / r0**4 - 2 * a_**2 / r0**3 - d6)
    k22 = sp.simplify(-(a_**2) / r0**2)
    k23 = sp.simplify(a_**2 / r0**2)
    w00 = sp.simplify(2 * a_ / r0**2)
    u = r0 / r
    big_l = 1 / (1 + k22 * (1 - u) / (1 + k23 * (1 - u)))
    sigma_k = 1 + a_**2 * y**2 / r**2
    n2 = (1 - u) * (1 - e0 * u + k00_minus_e0 * u**2 + d1 * u**3) + (
        a20 * u**3 + a21 * u**4 + k21 * big_l * u**3
    ) * y**2
    big_b = 1 + d4 * u**2 + d5 * u**2 * y**2
    w = (w00 * u**2 + d2 * u**3 + d3 * u**3 * y**2) / sigma_k
    k2 = 1 + a_ * w / r + (k00 * u**2 + k21 * big_l * u**3 * y**2) / sigma_k
    g = sp.zeros(4, 4)
    g[0, 0] = -(n2 - w**2 * s2) / k2
    g[0, 3] = g[3, 0] = -w * r * s2
    g[1, 1] = sigma_k * big_b**2 / n2
    g[2, 2] = sigma_k * r**2
    g[3, 3] = k2 * r**2 * s2
    return g


# (registry name, builder, source, parameter names, exact parameter points, radii, thetas).
# The radii lie outside every horizon, singular surface (jnw: r = 2/nu) and zero of C.
ROTATING_RADII = ["5/2", "15/4", "7"]
STATIC_RADII = ["5/2", "4", "9"]
STATIC_THETAS = ["pi/2", "6/5"]
CATALOGUE = [
    (
        "tidal-charge",
        tidal_charge_metric,
        "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1",
        ["q2"],
        [["-1/2"], ["1/2"]],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "bardeen",
        bardeen_metric,
        "Bardeen 1968; Ayon-Beato & Garcia 2000, Phys. Lett. B 493, 149",
        ["g"],
        [["3/10"], ["3/5"]],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "hayward",
        hayward_metric,
        "Hayward 2006, Phys. Rev. Lett. 96, 031103",
        ["l"],
        [["3/10"], ["3/5"]],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "dilaton",
        dilaton_metric,
        "Garfinkle, Horowitz & Strominger 1991, Phys. Rev. D 43, 3140",
        ["q"],
        [["1/2"], ["1"]],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "simpson-visser",
        simpson_visser_metric,
        "Simpson & Visser 2019, JCAP 02, 042",
        ["l"],
        [["1/2"], ["3/2"], ["5/2"]],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "jnw",
        jnw_metric,
        "Janis, Newman & Winicour 1968, Phys. Rev. Lett. 20, 878; Virbhadra 1997, "
        "Int. J. Mod. Phys. A 12, 4831",
        ["nu"],
        [["3/5"], ["4/5"]],
        ["4", "11/2", "9"],
        STATIC_THETAS,
    ),
    (
        "rezzolla-zhidenko",
        rezzolla_zhidenko_metric,
        "Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009",
        ["epsilon", "a0", "b0", "a1", "a2", "b1", "b2"],
        [
            ["1/10", "1/20", "-1/10", "1/5", "3/10", "1/4", "-1/5"],
            ["-1/20", "-1/10", "1/5", "-3/10", "1/2", "-1/5", "2/5"],
        ],
        STATIC_RADII,
        STATIC_THETAS,
    ),
    (
        "johannsen-psaltis",
        johannsen_psaltis_metric,
        "Johannsen & Psaltis 2011, Phys. Rev. D 83, 124015",
        ["a", "eps3"],
        [["1/2", "1"], ["9/10", "-1/2"]],
        ROTATING_RADII,
        THETAS,
    ),
    (
        "johannsen",
        johannsen_metric,
        "Johannsen 2013, Phys. Rev. D 88, 044002",
        ["a", "alpha13", "alpha22", "alpha52", "eps3"],
        [["1/2", "1", "1/2", "-1/2", "1"], ["9/10", "-1/2", "1/4", "1/2", "-1/4"]],
        ROTATING_RADII,
        THETAS,
    ),
    (
        "krz",
        krz_metric,
        "Konoplya, Rezzolla & Zhidenko 2016, Phys. Rev. D 93, 064015; Ni, Jiang & Bambi 2016, "
        "JCAP 09, 014",
        ["a", "delta1", "delta2", "delta3", "delta4", "delta5", "delta6"],
        [
            # Spins with rational sqrt(1 - a^2), so that r0 is rational (9/5 and 18/13).
            ["3/5", "1/10", "-1/20", "1/20", "1/10", "-1/10", "1/20"],
            ["12/13", "-1/20", "1/10", "-1/10", "1/20", "1/10", "-1/20"],
        ],
        ROTATING_RADII,
        THETAS,
    ),
    (
        "kerr-sen",
        kerr_sen_metric,
        "Sen 1992, Phys. Rev. Lett. 69, 1006",
        ["a", "b"],
        [["1/2", "1/4"], ["3/10", "1/2"]],
        ROTATING_RADII,
        THETAS,
    ),
    (
        "rotating-bardeen",
        rotating_bardeen_metric,
        "Bambi & Modesto 2013, Phys. Lett. B 721, 329",
        ["a", "g"],
        [["1/2", "3/10"], ["4/5", "1/5"]],
        ROTATING_RADII,
        THETAS,
    ),
    (
        "rotating-hayward",
        rotating_hayward_metric,
        "Bambi & Modesto 2013, Phys. Lett. B 721, 329",
        ["a", "l"],
        [["1/2", "3/10"], ["4/5", "2/5"]],
        ROTATING_RADII,
        THETAS,
    ),
]

# Zero-deviation limits that must reproduce Kerr (a, q = 0 of kerr_newman_metric) or
# Schwarzschild: a transcription check run before the table is built.
KERR_LIMITS = [
    ("johannsen-psaltis", {"a": "3/5", "eps3": "0"}),
    ("johannsen", {"a": "3/5", "alpha13": "0", "alpha22": "0", "alpha52": "0", "eps3": "0"}),
    ("krz", {"a": "3/5", **{f"delta{i}": "0" for i in range(1, 7)}}),
    ("kerr-sen", {"a": "3/5", "b": "0"}),
    ("rotating-bardeen", {"a": "3/5", "g": "0"}),
    ("rotating-hayward", {"a": "3/5", "l": "0"}),
    ("tidal-charge", {"q2": "0"}),
    ("bardeen", {"g": "0"}),
    ("hayward", {"l": "0"}),
    ("dilaton", {"q": "0"}),
    ("simpson-visser", {"l": "0"}),
    ("jnw", {"nu": "1"}),
    ("rezzolla-zhidenko", {k: "0" for k in ["epsilon", "a0", "b0", "a1", "a2", "b1", "b2"]}),
]


def catalogue_builder(name):
    for entry in CATALOGUE:
        if entry[0] == name:
            return entry[1]
    raise KeyError(name)


def check_kerr_limits():
    """Each catalogue metric with zero deviation equals Kerr (or Schwarzschild) at a point."""
    point = {r: sp.Rational(17, 4), th: sp.Rational(9, 10)}
    for name, params in KERR_LIMITS:
        spin = number(params.get("a", "0"))
        kerr = kerr_newman_metric().subs({a: spin, q: 0})
        g = catalogue_builder(name)({k: number(v) for k, v in params.items()})
        for i in range(4):
            for j in range(4):
                diff = (g[i, j] - kerr[i, j]).subs(point).evalf(DIGITS)
                if abs(diff) > sp.Float(10) ** (10 - DIGITS):
                    raise ArithmeticError(f"{name}: zero-deviation g[{i}][{j}] differs from Kerr")


def catalogue_entries():
    """Flat list of catalogue table entries, in CATALOGUE order."""
    check_kerr_limits()
    out = []
    for name, builder, source, names, points, radii, thetas in CATALOGUE:
        for values in points:
            params = {k: number(v) for k, v in zip(names, values)}
            symbolic = christoffel(builder(params), simplify=False)
            label = ", ".join(f"{k}={v}" for k, v in zip(names, values))
            for r_text in radii:
                for th_text in thetas:
                    subs = {r: number(r_text), th: number(th_text)}
                    out.append(
                        {
                            "metric": name,
                            "source": source,
                            "exact": f"{label}, r={r_text}, theta={th_text}",
                            "parameters": {k: float_text(v) for k, v in zip(names, values)},
                            "r": float_text(r_text),
                            "theta": float_text(th_text),
                            "gamma": evaluate(symbolic, subs),
                            "scale": term_scale(symbolic, subs),
                        }
                    )
    return out


def build_table():
    """The whole table as an ordered list of (key, value) structures with string numbers."""
    kerr_newman_symbolic = christoffel(kerr_newman_metric())
    spherical_symbolic = christoffel(spherical_metric())
    kerr_newman = []
    for a_text, q_text in KERR_NEWMAN_PARAMETERS:
        for r_text in KERR_NEWMAN_RADII:
            for th_text in THETAS:
                subs = {
                    a: number(a_text),
                    q: number(q_text),
                    r: number(r_text),
                    th: number(th_text),
                }
                kerr_newman.append(
                    {
                        "exact": f"a={a_text}, q={q_text}, r={r_text}, theta={th_text}",
                        "a": float_text(a_text),
                        "q": float_text(q_text),
                        "r": float_text(r_text),
                        "theta": float_text(th_text),
                        "gamma": evaluate(kerr_newman_symbolic, subs),
                        "scale": term_scale(kerr_newman_symbolic, subs),
                    }
                )
    spherical = []
    for r_text in SPHERICAL_RADII:
        for th_text in THETAS:
            subs = {r: number(r_text), th: number(th_text)}
            spherical.append(
                {
                    "exact": f"r={r_text}, theta={th_text}",
                    "r": float_text(r_text),
                    "theta": float_text(th_text),
                    "gamma": evaluate(spherical_symbolic, subs),
                    "scale": term_scale(spherical_symbolic, subs),
                }
            )
    return {
        "description": "Christoffel symbols Gamma^mu_{alpha beta} from sympy symbolic "
        "differentiation (tests/generate_christoffel.py); index order [mu][alpha][beta], "
        "coordinates (t, r, theta, phi), G = c = M = 1; scale[mu][alpha][beta] = "
        "1/2 sum_nu |g^{mu nu}| (|d_alpha g_{nu beta}| + |d_beta g_{nu alpha}| + "
        "|d_nu g_{alpha beta}|)",
        "kerr_newman_metric": "Newman et al. 1965, J. Math. Phys. 6, 918, Boyer-Lindquist",
        "spherical_metric": {
            "A": str(SPHERICAL_A),
            "B": str(SPHERICAL_B),
            "C": str(SPHERICAL_C),
        },
        "kerr_newman": kerr_newman,
        "spherical": spherical,
        "catalogue": catalogue_entries(),
    }


def render(node, indent=0):
    """Deterministic JSON text; strings that are numbers are written as bare numbers."""
    pad = "  " * indent
    if isinstance(node, dict):
        items = [
            f'{pad}  {json.dumps(k)}: {render(v, indent + 1).lstrip()}' for k, v in node.items()
        ]
        return pad + "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(node, list):
        if all(isinstance(x, NumberText) for x in node):
            return pad + "[" + ", ".join(node) + "]"
        return pad + "[\n" + ",\n".join(render(x, indent + 1) for x in node) + "\n" + pad + "]"
    if isinstance(node, NumberText):
        return pad + str(node)
    return pad + json.dumps(node)


class NumberText(str):
    """A string holding a JSON number literal."""


def mark_numbers(node, key=None):
    """Wrap the numeric strings (inputs and gamma entries) in NumberText."""
    if isinstance(node, dict):
        if key == "parameters":
            return {k: NumberText(v) for k, v in node.items()}
        return {k: mark_numbers(v, k) for k, v in node.items()}
    if isinstance(node, list):
        return [mark_numbers(x, key) for x in node]
    if isinstance(node, str) and key in ("a", "q", "r", "theta", "gamma", "scale"):
        return NumberText(node)
    return node


def table_text():
    return render(mark_numbers(build_table())) + "\n"


def close(committed, fresh):
    if fresh == 0.0:
        return abs(committed) <= CHECK_RELATIVE
    return abs(committed - fresh) <= CHECK_RELATIVE * max(abs(fresh), 1e-300)


def compare(committed, fresh, where="table"):
    """None if the structures agree within tolerance, else a one-line description."""
    if isinstance(fresh, dict):
        if not isinstance(committed, dict) or set(committed) != set(fresh):
            return f"{where}: keys differ"
        for k in fresh:
            problem = compare(committed[k], fresh[k], f"{where}.{k}")
            if problem:
                return problem
        return None
    if isinstance(fresh, list):
        if not isinstance(committed, list) or len(committed) != len(fresh):
            return f"{where}: length differs"
        for i, (c, f) in enumerate(zip(committed, fresh)):
            label = f"{where}[{i}]"
            if isinstance(f, dict) and "exact" in f:
                label += f" ({f['exact']})"
            problem = compare(c, f, label)
            if problem:
                return problem
        return None
    if isinstance(fresh, (int, float)) and not isinstance(fresh, bool):
        if not isinstance(committed, (int, float)) or not close(float(committed), float(fresh)):
            return f"{where}: committed {committed!r}, regenerated {fresh!r}"
        return None
    if committed != fresh:
        return f"{where}: committed {committed!r}, regenerated {fresh!r}"
    return None


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    mode = parser.add_mutually_exclusive_group(required=True)
    mode.add_argument("--out", help="write the table to this path")
    mode.add_argument("--check", help="compare this committed table with a fresh computation")
    args = parser.parse_args()
    text = table_text()
    if args.out:
        with open(args.out, "w", encoding="utf-8", newline="\n") as f:
            f.write(text)
        return 0
    with open(args.check, encoding="utf-8") as f:
        committed = json.load(f)
    problem = compare(committed, json.loads(text))
    if problem:
        print(f"christoffel table mismatch: {problem}", file=sys.stderr)
        return 1
    print(f"christoffel table {args.check} matches the symbolic computation")
    return 0


if __name__ == "__main__":
    sys.exit(main())
