#!/usr/bin/env python3
"""Reference Christoffel symbols from sympy, for tests/christoffel_tables.rs.

The script differentiates two metrics symbolically with sympy and tabulates

    Gamma^mu_{alpha beta} = 1/2 g^{mu nu} (d_alpha g_{nu beta} + d_beta g_{nu alpha}
                                           - d_nu g_{alpha beta})

at a fixed set of points. Units G = c = M = 1, signature (-,+,+,+), coordinates
(t, r, theta, phi). The two metrics are:

* Kerr-Newman in Boyer-Lindquist coordinates (Newman et al. 1965, J. Math. Phys. 6, 918):
  Sigma = r^2 + a^2 cos^2 theta, Delta = r^2 - 2r + a^2 + q^2,
  g_tt = -(1 - (2r - q^2)/Sigma), g_tphi = -a sin^2 theta (2r - q^2)/Sigma,
  g_rr = Sigma/Delta, g_thth = Sigma,
  g_phph = [r^2 + a^2 + (2r - q^2) a^2 sin^2 theta/Sigma] sin^2 theta.
* A deliberately generic static, spherically symmetric metric
  ds^2 = -A dt^2 + B dr^2 + C dOmega^2 with B != 1/A and C != r^2 (see SPHERICAL_* below).

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


def christoffel(g):
    """Symbolic Gamma^mu_{alpha beta}, as nested lists [mu][alpha][beta], each simplified."""
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
                total = sp.cancel(sp.together(total / 2))
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
