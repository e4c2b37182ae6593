"""umbral from Python, notebook style: shadows, a scan over spin and inclination, a bound and a
posterior, in one figure.

An invented scenario: "Harrow's Reach", the nucleus of a fictional galaxy, whose ring the
demo's measurement file describes (examples/measurement_ring.toml). Nothing here is a real
source or a real observation.

    pip install ./python matplotlib
    python examples/python_quickstart.py [OUT.png]

Each block below is one notebook cell.
"""

import sys
from pathlib import Path

import matplotlib

matplotlib.use("Agg")  # no display needed; in a notebook leave this out
import matplotlib.pyplot as plt
import numpy as np

import umbral

HERE = Path(__file__).resolve().parent
out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("umbral-quickstart.png")

# %% The Kerr family of shadows at 17 degrees: the curve shifts and flattens with spin.
shadows = {a: umbral.shadow(umbral.Metric("kerr", a=a), inclination=17) for a in (0.0, 0.5, 0.9, 0.99)}
for a, s in shadows.items():
    print(f"a = {a:4}: mean radius {s.observables['mean_radius']:.6f} M, "
          f"circularity deviation {s.observables['circularity_deviation']:.2e} ({s.solver} solver)")

# %% A scan over spin and inclination (the inclination is an axis like any parameter).
grid = umbral.scan("kerr", grid={"a": np.linspace(0.0, 0.99, 12), "inclination": np.linspace(0.0, 90.0, 10)})
assert (grid["status"] == "shadow").all()

# %% A bound on the Reissner-Nordström charge from the invented ring.
measurement = HERE / "measurement_ring.toml"
bound = umbral.bound("reissner-nordstrom", vary={"q": (0.0, 1.2)}, measurement=measurement)
for level in bound["levels"]:
    print(f"confidence {level['confidence']}: q allowed in {level['allowed']}")

# %% The posterior of the charge from an invented Gaussian shadow radius, r_sh/M = 5.0 +- 0.2.
radius = Path("umbral-quickstart-radius.toml")
radius.write_text('label = "invented radius"\n[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n')
posterior = umbral.infer("reissner-nordstrom", radius, priors={"q": "uniform:0:1"}, sampler="quadrature", samples=4000)
radius.unlink()
q = posterior.samples["q"]
print(f"q: median {np.median(q):.4f}, 68% interval {np.quantile(q, [0.16, 0.84]).round(4)}")

# %% One figure.
fig, axes = plt.subplots(1, 3, figsize=(14, 4.2))
ax = axes[0]
for a, s in shadows.items():
    ax.plot(np.append(s.alpha, s.alpha[0]), np.append(s.beta, s.beta[0]), label=f"a = {a}")
ax.set(aspect="equal", xlabel=r"$\alpha$ [M]", ylabel=r"$\beta$ [M]", title="Kerr shadows at 17°")
ax.legend(fontsize=8)
ax = axes[1]
mesh = ax.pcolormesh(grid["a"], grid["inclination"], grid["circularity_deviation"], shading="nearest")
fig.colorbar(mesh, ax=ax, label="circularity deviation")
ax.set(xlabel="spin a", ylabel="inclination [deg]", title="Kerr: circularity over the grid")
ax = axes[2]
ax.hist(q, bins=40, density=True, color="0.6")
for level in bound["levels"]:
    for low, high in level["allowed"]:
        ax.axvspan(low, high, alpha=0.15, label=f"bound, {level['confidence']:.0%}")
ax.set(xlabel="charge q", ylabel="posterior density", title="Reissner–Nordström charge")
ax.legend(fontsize=8)
fig.tight_layout()
fig.savefig(out, dpi=90)
print(f"figure written to {out}")
