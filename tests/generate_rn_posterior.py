#!/usr/bin/env python3
"""Reference posterior of the Reissner-Nordstrom charge q from a Gaussian shadow radius.

Independent of umbral: with a uniform prior on q in [0, 1] and the likelihood
N(b_c(q); mu, sigma) of a measured shadow radius r_sh/M = mu +- sigma, the posterior density is

    p(q) = exp(-(b_c(q) - mu)^2 / (2 sigma^2)) / Z   on [0, 1],

where b_c(q) = r^2 / sqrt(r^2 - 2 r + q^2) at r = (3 + sqrt(9 - 8 q^2)) / 2 is the critical
impact parameter of Reissner-Nordstrom (photon sphere of f = 1 - 2/r + q^2/r^2; e.g. Zakharov
et al. 2005, Phys. Rev. D 72, 084020). Its mean and the quantiles at 0.16, 0.5 and 0.84 are
computed here by mpmath quadrature (tanh-sinh) of the density and root finding on the
cumulative distribution, at 30 digits; so is the evidence Z = integral of L(q) dq (the prior
density is 1) and the likelihood at q = 0 (the evidence of the Schwarzschild model).

The boundary cases take a prior uniform on [0, 1.2], past the extremal charge. For q > 1 there
is no horizon: f = 1 - 2/r + q^2/r^2 > 0 for every r > 0 and r^2/f -> 0 as r -> 0, so by the
radial equation of null geodesics, (dr/dlambda)^2 = E^2 - L^2 f/r^2 (e.g. Wald 1984, "General
Relativity", section 6.3), every ray with L != 0 turns back before the centre: nothing is
captured, there is no shadow, and the likelihood is zero. The posterior is the one on [0, 1]
and Z = (1/1.2) integral_0^1 L(q) dq.

    python3 tests/generate_rn_posterior.py --out tests/data/rn_posterior.json
    python3 tests/generate_rn_posterior.py --check tests/data/rn_posterior.json
"""

import json
import sys

import mpmath as mp

# The --out/--check command line and its tolerant comparison (1e-13 relative), shared.
from generate_photon_spheres import run_cli

mp.mp.dps = 30

CASES = [
    {"mu": 5.0, "sigma": 0.2},
    # A measurement centred on the Schwarzschild value 3 sqrt(3) (consistent with GR).
    {"mu": 5.196, "sigma": 0.1},
]
# A measurement below b_c(1) = 4: the posterior is largest at the boundary q = 1.
BOUNDARY_CASES = [{"mu": 3.9, "sigma": 0.2, "high": 1.2}]
PROBABILITIES = ["0.16", "0.5", "0.84"]


def b_c(q):
    r = (3 + mp.sqrt(9 - 8 * q * q)) / 2
    return r * r / mp.sqrt(r * r - 2 * r + q * q)


def posterior(mu, sigma, high=1):
    """The posterior under a uniform prior on [0, high], high >= 1, zero likelihood above 1."""
    mu, sigma, high = mp.mpf(mu), mp.mpf(sigma), mp.mpf(high)

    def density(q):
        return mp.exp(-((b_c(q) - mu) ** 2) / (2 * sigma**2))

    z = mp.quad(density, [0, mp.mpf("0.5"), 1])
    # The evidence: the uniform prior has density 1 on [0, 1] and the likelihood is normalised.
    log_evidence = mp.log(z / (sigma * mp.sqrt(2 * mp.pi)) / high)
    log_likelihood_at_zero = mp.log(density(mp.mpf(0)) / (sigma * mp.sqrt(2 * mp.pi)))

    def cdf(q):
        return mp.quad(density, [0, q]) / z

    mean = mp.quad(lambda q: q * density(q), [0, mp.mpf("0.5"), 1]) / z
    quantiles = {}
    for p in PROBABILITIES:
        quantiles[p] = mp.findroot(lambda q: cdf(q) - mp.mpf(p), (mp.mpf("1e-9"), 1), solver="anderson")
        assert abs(cdf(quantiles[p]) - mp.mpf(p)) < mp.mpf("1e-20")
    return mean, quantiles, log_evidence, log_likelihood_at_zero


def number(x):
    return float(mp.nstr(x, 17))


def build_table():
    # b_c(0) = 3 sqrt(3) (Synge 1966) and b_c(1) = 4 (the extremal black hole).
    assert abs(b_c(mp.mpf(0)) - 3 * mp.sqrt(3)) < mp.mpf("1e-25")
    assert abs(b_c(mp.mpf(1)) - 4) < mp.mpf("1e-25")
    cases = []
    for case in CASES:
        mean, quantiles, log_z, log_l0 = posterior(case["mu"], case["sigma"])
        cases.append(
            {
                "mu": case["mu"],
                "sigma": case["sigma"],
                "mean": number(mean),
                "quantiles": {p: number(q) for p, q in quantiles.items()},
                "log_evidence": number(log_z),
                "log_likelihood_at_q0": number(log_l0),
            }
        )
    boundary_cases = []
    for case in BOUNDARY_CASES:
        mean, quantiles, log_z, _ = posterior(case["mu"], case["sigma"], case["high"])
        boundary_cases.append(
            {
                "mu": case["mu"],
                "sigma": case["sigma"],
                "prior": f"uniform:0:{case['high']}",
                "mean": number(mean),
                "quantiles": {p: number(q) for p, q in quantiles.items()},
                "log_evidence": number(log_z),
            }
        )
    return {
        "source": "mpmath quadrature of the posterior density in q, see tests/generate_rn_posterior.py",
        "prior": "uniform:0:1",
        "cases": cases,
        "boundary_cases": boundary_cases,
    }


def main():
    return run_cli(
        __doc__.splitlines()[0], lambda: json.dumps(build_table(), indent=1) + "\n", "RN posterior"
    )


if __name__ == "__main__":
    sys.exit(main())
