#!/usr/bin/env python3
"""Reference photon spheres from mpmath, for tests/photon_spheres.rs.

For a static, spherically symmetric metric ds^2 = -A dt^2 + B dr^2 + C dOmega^2 a light ray from
infinity with impact parameter b reaches radius r only where b^2 <= C/A (Synge 1966, Mon. Not.
R. Astron. Soc. 131, 463; Perlick & Tsupko 2022, Phys. Rep. 947, 1). The photon spheres are the
extrema of C/A outside the horizon (minima: unstable orbits), and the shadow of a distant
observer is a circle of radius b_c = sqrt(min C/A).

The script works in mpmath at 40 digits: A and C are transcribed from the papers (G = c = M = 1,
see METRICS), (C/A)' is taken by mpmath's numerical differentiation, its sign changes are
located on a logarithmic grid from r = 1000 inward to just outside the horizon (or the singular
surface, or wherever A or C stops being positive), and each is refined by mpmath.findroot.
Closed forms are asserted where they exist (tidal charge: r = (3 + sqrt(9 - 8 q2))/2 as for
Reissner-Nordstrom; JNW: r = (1 + 2 nu)/nu, Virbhadra, Narasimha & Chitre 1998; Simpson-Visser:
r^2 + l^2 = 9, b_c = 3 sqrt 3). For jnw with nu <= 1/2 it confirms that (C/A)' keeps one sign
outside r = 2/nu (analytically (C/A)' = r (1 - b/r)^(-2 nu) [2 - (1 + 2 nu) b/r], whose root
(1 + 2 nu) b/2 lies at or inside b for nu <= 1/2), and gives the photon spheres of JNW with nu
just above 1/2, within 1e-7 of the singular surface, with their Lyapunov exponents.

Values are written rounded to 17 significant digits, so the output is deterministic.

Regenerate the committed table (from the crate root):

    python3 tests/generate_photon_spheres.py --out tests/data/photon_spheres.json

Check it against a fresh computation (as CI does):

    python3 tests/generate_photon_spheres.py --check tests/data/photon_spheres.json

The check exits non-zero, naming the entry, if a value differs by more than 1e-13 relative.
"""

import argparse
import json
import sys
from decimal import Decimal

import mpmath as mp

mp.mp.dps = 40
SIGNIFICANT = 17
CHECK_RELATIVE = 1e-13
R_FAR = 1000
SCAN_POINTS = 4000
# Relative distance kept from the horizon / inner boundary.
MARGIN = mp.mpf("1e-8")


def q(text):
    """An exact input such as '3/10' as an mpf."""
    if "/" in text:
        num, den = text.split("/")
        return mp.mpf(num) / mp.mpf(den)
    return mp.mpf(text)


# Each metric: A(r, p) and C(r, p) (B does not enter), and its outermost horizon or singular
# surface (or None: scan until A or C stops being positive).
def tidal_charge(p):
    # Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1.
    q2 = p["q2"]
    return (lambda r: 1 - 2 / r + q2 / r**2, lambda r: r**2, 1 + mp.sqrt(1 - q2))


def bardeen(p):
    # Bardeen 1968; Ayon-Beato & Garcia 2000, Phys. Lett. B 493, 149.
    g = p["g"]
    return (lambda r: 1 - 2 * r**2 / (r**2 + g**2) ** mp.mpf(1.5), lambda r: r**2, None)


def hayward(p):
    # Hayward 2006, Phys. Rev. Lett. 96, 031103.
    l = p["l"]
    return (lambda r: 1 - 2 * r**2 / (r**3 + 2 * l**2), lambda r: r**2, None)


def dilaton(p):
    # Garfinkle, Horowitz & Strominger 1991, Phys. Rev. D 43, 3140 (Einstein frame).
    qq = p["q"]
    return (lambda r: 1 - 2 / r, lambda r: r * (r - qq**2), mp.mpf(2))


def simpson_visser(p):
    # Simpson & Visser 2019, JCAP 02, 042.
    l = p["l"]
    return (lambda r: 1 - 2 / mp.sqrt(r**2 + l**2), lambda r: r**2 + l**2, None)


def jnw(p):
    # Janis, Newman & Winicour 1968, Phys. Rev. Lett. 20, 878 (Virbhadra 1997 form).
    nu = p["nu"]
    b = 2 / nu
    return (
        lambda r: (1 - b / r) ** nu,
        lambda r: r**2 * (1 - b / r) ** (1 - nu),
        b,
    )


def rezzolla_zhidenko(p):
    # Rezzolla & Zhidenko 2014, Phys. Rev. D 90, 084009, continued fractions cut after a2, b2:
    # N^2 = x A(x), x = 1 - r0/r, r0 = 2/(1 + epsilon),
    # A = 1 - epsilon (1 - x) + (a0 - epsilon)(1 - x)^2 + a1/(1 + a2 x) (1 - x)^3.
    eps, a0, a1, a2 = p["epsilon"], p["a0"], p["a1"], p["a2"]
    r0 = 2 / (1 + eps)

    def n2(r):
        x = 1 - r0 / r
        y = 1 - x
        return x * (1 - eps * y + (a0 - eps) * y**2 + a1 / (1 + a2 * x) * y**3)

    return (n2, lambda r: r**2, r0)


METRICS = [
    ("tidal-charge", tidal_charge, ["q2"], [["-1/2"], ["1/2"]]),
    ("bardeen", bardeen, ["g"], [["3/10"], ["3/5"]]),
    ("hayward", hayward, ["l"], [["3/10"], ["3/5"]]),
    ("dilaton", dilaton, ["q"], [["1/2"], ["1"]]),
    ("simpson-visser", simpson_visser, ["l"], [["1/2"], ["3/2"]]),
    ("jnw", jnw, ["nu"], [["3/5"], ["4/5"]]),
    (
        "rezzolla-zhidenko",
        rezzolla_zhidenko,
        ["epsilon", "a0", "b0", "a1", "a2", "b1", "b2"],
        [
            ["1/10", "1/20", "-1/10", "1/5", "3/10", "1/4", "-1/5"],
            ["-1/20", "-1/10", "1/5", "-3/10", "1/2", "-1/5", "2/5"],
        ],
    ),
]
# Metrics with no photon sphere outside their singular surface.
NO_PHOTON_SPHERE = [("jnw", jnw, ["nu"], [["1/2"], ["2/5"]])]
# Photon spheres right next to the singular surface r = b = 2/nu of JNW with nu just above
# 1/2: (r_ph - b)/b = (2 nu - 1)/2 = 1.4e-3, 1e-5 and 1e-7 (issue 10 item 8). Besides the
# sphere, the Lyapunov exponent of Cardoso et al. 2009 (Phys. Rev. D 79, 064016) in the form
# lambda^2 = (A^2/2B) [(1/A)'' - (C/A) (1/C)''], Omega = sqrt(A/C), gamma = pi lambda/Omega,
# with the derivatives by mpmath.
NEAR_SINGULARITY = [("jnw", jnw, ["nu"], [["2507/5000"], ["50001/100000"], ["5000001/10000000"]])]


def ratio_slope(big_a, big_c, r):
    """(C/A)'(r) by mpmath's numerical differentiation."""
    return mp.diff(lambda s: big_c(s) / big_a(s), r)


def regular(big_a, big_c, r):
    """A and C real, finite and positive at r."""
    try:
        values = [big_a(r), big_c(r)]
    except (ValueError, ZeroDivisionError):
        return False
    return all(mp.im(v) == 0 and mp.isfinite(v) and mp.re(v) > 0 for v in values)


def horizon_of(big_a, big_c, boundary):
    """Outermost zero of A (or the given boundary): scan inward, refine by bisection."""
    if boundary is not None:
        return mp.mpf(boundary)
    r_prev = mp.mpf(R_FAR)
    step = (mp.mpf("1e-4") / R_FAR) ** (mp.mpf(1) / SCAN_POINTS)
    for _ in range(SCAN_POINTS):
        r_next = r_prev * step
        if not regular(big_a, big_c, r_next):
            return mp.findroot(lambda s: big_a(s), (r_next, r_prev), solver="anderson")
        r_prev = r_next
    return mp.mpf(0)


def photon_spheres(builder, params):
    """All extrema of C/A outside the horizon, outermost first, and the inner boundary."""
    big_a, big_c, boundary = builder(params)
    inner = horizon_of(big_a, big_c, boundary)
    r_stop = max(inner * (1 + MARGIN), mp.mpf("1e-4"))
    step = (r_stop / R_FAR) ** (mp.mpf(1) / (SCAN_POINTS - 1))
    found = []
    r_prev = mp.mpf(R_FAR)
    s_prev = ratio_slope(big_a, big_c, r_prev)
    for i in range(1, SCAN_POINTS):
        r_next = r_stop if i == SCAN_POINTS - 1 else R_FAR * step**i
        s_next = ratio_slope(big_a, big_c, r_next)
        if mp.sign(s_next) != mp.sign(s_prev):
            root = mp.findroot(
                lambda s: ratio_slope(big_a, big_c, s), (r_next, r_prev), solver="anderson"
            )
            curvature = mp.diff(lambda s: big_c(s) / big_a(s), root, 2)
            found.append(
                {
                    "radius": root,
                    "impact_parameter": mp.sqrt(big_c(root) / big_a(root)),
                    "unstable": bool(curvature > 0),
                }
            )
        r_prev, s_prev = r_next, s_next
    return found, inner


def format_value(x):
    x = Decimal(mp.nstr(x, 30, min_fixed=1, max_fixed=0))
    return NumberText("0" if x == 0 else format(x, f".{SIGNIFICANT - 1}e"))


class NumberText(str):
    """A string holding a JSON number literal."""


def closed_form_checks(name, params, spheres):
    """Assert the closed forms known for some of the metrics."""
    expect = None
    if name == "tidal-charge":
        expect = (3 + mp.sqrt(9 - 8 * params["q2"])) / 2, None
    elif name == "jnw":
        expect = (1 + 2 * params["nu"]) / params["nu"], None
    elif name == "simpson-visser":
        expect = mp.sqrt(9 - params["l"] ** 2), 3 * mp.sqrt(3)
    elif name == "dilaton":
        # C/A = r^2 (r - q^2)/(r - 2): (C/A)' = 0 at 2r^2 - (6 + q^2) r + 4 q^2 = 0 (outer root).
        qq = params["q"] ** 2
        expect = ((6 + qq) + mp.sqrt((6 + qq) ** 2 - 32 * qq)) / 4, None
    if expect is None:
        return
    unstable = [s for s in spheres if s["unstable"]]
    if len(unstable) != 1 or abs(unstable[0]["radius"] - expect[0]) > mp.mpf("1e-30"):
        raise ArithmeticError(f"{name} {params}: photon sphere {spheres} != closed form {expect}")
    if expect[1] is not None and abs(unstable[0]["impact_parameter"] - expect[1]) > 1e-30:
        raise ArithmeticError(f"{name} {params}: b_c differs from the closed form")


def build_table():
    entries = []
    for name, builder, names, points in METRICS:
        for values in points:
            params = {k: q(v) for k, v in zip(names, values)}
            spheres, inner = photon_spheres(builder, params)
            closed_form_checks(name, params, spheres)
            unstable = [s for s in spheres if s["unstable"]]
            if not unstable:
                raise ArithmeticError(f"{name} {values}: no unstable photon sphere")
            b_c = min(s["impact_parameter"] for s in unstable)
            entries.append(
                {
                    "metric": name,
                    "exact": ", ".join(f"{k}={v}" for k, v in zip(names, values)),
                    "parameters": {k: format_value(v) for k, v in params.items()},
                    "inner_boundary": format_value(inner),
                    "photon_spheres": [
                        {
                            "radius": format_value(s["radius"]),
                            "impact_parameter": format_value(s["impact_parameter"]),
                            "unstable": s["unstable"],
                        }
                        for s in spheres
                    ],
                    "critical_impact_parameter": format_value(b_c),
                }
            )
    none = []
    for name, builder, names, points in NO_PHOTON_SPHERE:
        for values in points:
            params = {k: q(v) for k, v in zip(names, values)}
            spheres, inner = photon_spheres(builder, params)
            if spheres:
                raise ArithmeticError(f"{name} {values}: unexpected photon sphere {spheres}")
            none.append(
                {
                    "metric": name,
                    "exact": ", ".join(f"{k}={v}" for k, v in zip(names, values)),
                    "parameters": {k: format_value(v) for k, v in params.items()},
                    "inner_boundary": format_value(inner),
                }
            )
    near = []
    for name, builder, names, points in NEAR_SINGULARITY:
        for values in points:
            params = {k: q(v) for k, v in zip(names, values)}
            spheres, inner = photon_spheres(builder, params)
            closed_form_checks(name, params, spheres)
            (sphere,) = spheres
            big_a, big_c, _ = builder(params)
            r = sphere["radius"]
            inv_a2 = mp.diff(lambda s: 1 / big_a(s), r, 2)
            inv_c2 = mp.diff(lambda s: 1 / big_c(s), r, 2)
            # B = 1/A for JNW.
            lyapunov = mp.sqrt(big_a(r) ** 3 / 2 * (inv_a2 - big_c(r) / big_a(r) * inv_c2))
            gamma = mp.pi * lyapunov / mp.sqrt(big_a(r) / big_c(r))
            near.append(
                {
                    "metric": name,
                    "exact": ", ".join(f"{k}={v}" for k, v in zip(names, values)),
                    "parameters": {k: format_value(v) for k, v in params.items()},
                    "inner_boundary": format_value(inner),
                    "radius": format_value(r),
                    "impact_parameter": format_value(sphere["impact_parameter"]),
                    "lyapunov": format_value(lyapunov),
                    "gamma": format_value(gamma),
                }
            )
    return {
        "description": "Photon spheres (extrema of C/A outside the horizon or singular surface, "
        "outermost first; unstable = minimum) and b_c = sqrt(min C/A) of static spherical "
        "metrics, from mpmath at 40 digits (tests/generate_photon_spheres.py); G = c = M = 1",
        "entries": entries,
        "no_photon_sphere": none,
        "near_singularity": near,
    }


def render(node, indent=0):
    """Deterministic JSON text; NumberText strings are written as bare numbers."""
    pad = "  " * indent
    if isinstance(node, dict):
        items = [f"{pad}  {json.dumps(k)}: {render(v, indent + 1).lstrip()}" for k, v in node.items()]
        return pad + "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(node, list):
        if not node:
            return pad + "[]"
        return pad + "[\n" + ",\n".join(render(x, indent + 1) for x in node) + "\n" + pad + "]"
    if isinstance(node, NumberText):
        return pad + str(node)
    return pad + json.dumps(node)


def table_text():
    return render(build_table()) + "\n"


def compare(committed, fresh, where="table"):
    """None if the structures agree within tolerance, else a one-line description."""
    if isinstance(fresh, dict):
        if not isinstance(committed, dict) or set(committed) != set(fresh):
            return f"{where}: keys differ"
        label = f"{where} ({fresh['exact']})" if "exact" in fresh else where
        for k in fresh:
            problem = compare(committed[k], fresh[k], f"{label}.{k}")
            if problem:
                return problem
        return None
    if isinstance(fresh, list):
        if not isinstance(committed, list) or len(committed) != len(fresh):
            return f"{where}: length differs"
        for i, (c, f) in enumerate(zip(committed, fresh)):
            problem = compare(c, f, f"{where}[{i}]")
            if problem:
                return problem
        return None
    if isinstance(fresh, float) or (isinstance(fresh, int) and not isinstance(fresh, bool)):
        ok = isinstance(committed, (int, float)) and not isinstance(committed, bool)
        if ok and fresh == 0:
            ok = abs(committed) <= CHECK_RELATIVE
        elif ok:
            ok = abs(committed - fresh) <= CHECK_RELATIVE * abs(fresh)
        return None if ok else f"{where}: committed {committed!r}, regenerated {fresh!r}"
    if committed != fresh:
        return f"{where}: committed {committed!r}, regenerated {fresh!r}"
    return None


def run_cli(description, text_of_table, what):
    """The --out / --check command line of a reference-table generator: write the text made
    by `text_of_table()`, or compare a committed table with it (exit 1 naming the entry)."""
    parser = argparse.ArgumentParser(description=description)
    mode = parser.add_mutually_exclusive_group(required=True)
    mode.add_argument("--out", help="write the table to this path")
    mode.add_argument("--check", help="compare this committed table with a fresh computation")
    args = parser.parse_args()
    text = text_of_table()
    if args.out:
        with open(args.out, "w", encoding="utf-8", newline="\n") as f:
            f.write(text)
        return 0
    with open(args.check, encoding="utf-8") as f:
        committed = json.load(f)
    problem = compare(committed, json.loads(text))
    if problem:
        print(f"{what} table mismatch: {problem}", file=sys.stderr)
        return 1
    print(f"{what} table {args.check} matches the mpmath computation")
    return 0


def main():
    return run_cli(__doc__.splitlines()[0], table_text, "photon-sphere")


if __name__ == "__main__":
    sys.exit(main())
