"""The Python API: types, shapes and dtypes, metrics, scans with arbitrary axis values, errors."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest

import umbral
from conftest import ROOT, timeless

SCHWARZSCHILD = math.sqrt(27.0)  # the shadow radius 3√3 M (Synge 1966)


def test_metrics_lists_the_builtins_with_their_parameters():
    listing = umbral.metrics()
    names = [m["name"] for m in listing]
    assert names[:2] == ["schwarzschild", "kerr"]
    kerr = listing[1]
    assert kerr["auto_solver"] == "separable" and kerr["source"] == "builtin"
    assert kerr["parameters"][0]["name"] == "a"
    assert umbral.Metric("kerr").info()["name"] == "kerr"


def test_metric_values_copies_and_files():
    m = umbral.Metric("kerr-newman", q=0.3)
    assert m.parameters == {"a": 0.0, "q": 0.3}
    assert m.assignments == {"q": 0.3}
    spun = m.with_parameters(a=0.5)
    assert spun.parameters == {"a": 0.5, "q": 0.3} and m.parameters["a"] == 0.0
    assert repr(spun) == 'Metric("kerr-newman", a=0.5, q=0.3)'
    # Boyer & Lindquist 1967: r+ = 1 + sqrt(1 - a^2 - q^2).
    assert spun.outer_horizon() == pytest.approx(1 + math.sqrt(1 - 0.25 - 0.09), abs=1e-12)
    path = ROOT / "metrics" / "reissner-nordstrom.toml"
    from_file = umbral.Metric.from_file(path, q=0.5)
    from_text = umbral.Metric.from_toml(path.read_text(), q=0.5)
    assert from_file.path == path and from_text.path is None
    a, b = umbral.shadow(from_file, 10), umbral.shadow(from_text, 10)
    assert timeless(a.report) == timeless(b.report)


def test_metric_file_errors_keep_the_place():
    with pytest.raises(umbral.InputError) as raised:
        umbral.Metric.from_toml('name = "bad"\n[metric]\nA = "1 - 2/r +"\n')
    assert "^" in str(raised.value)


def test_shadow_arrays_are_float64_curves():
    s = umbral.shadow("schwarzschild", inclination=45, points=64)
    assert s.alpha.dtype == s.beta.dtype == np.float64 and s.alpha.shape == s.beta.shape == (64,)
    assert np.allclose(np.hypot(s.alpha, s.beta), SCHWARZSCHILD, atol=1e-8)
    assert s.observables["mean_radius"] == pytest.approx(SCHWARZSCHILD, abs=1e-8)
    assert s.reason is None and s.celestial is None and s.observer_radius is None


def test_scan_arrays_are_grid_shaped_with_nan_where_there_is_no_value():
    q = np.array([0.0, 0.4, 0.8, 1.1])
    r = umbral.scan("reissner-nordstrom", grid={"q": q}, inclination=30)
    assert r.shape == (4,) and r.axes["q"].tolist() == q.tolist()
    assert r["mean_radius"].dtype == np.float64 and r["mean_radius"].shape == (4,)
    assert r["status"].dtype.kind == "U" and r["status"].tolist() == ["shadow", "shadow", "shadow", "no_horizon"]
    assert np.isnan(r["mean_radius"][3]) and np.isfinite(r["mean_radius"][:3]).all()
    assert r["mean_radius"][0] == pytest.approx(SCHWARZSCHILD, abs=1e-8)
    assert r["horizonless"].dtype == np.bool_ and (r.computed, r.reused) == (4, 0)


def test_scan_points_are_at_exactly_the_given_values():
    """Values that are not evenly spaced: each point is the shadow at that very value."""
    a = np.array([0.0, 0.1, 0.35, 0.9])
    incl = np.array([17.0, 63.5])
    r = umbral.scan("kerr", grid={"a": a, "inclination": incl})
    assert r.shape == (4, 2)
    assert np.array_equal(r["a"], np.repeat(a, 2).reshape(4, 2))
    assert np.array_equal(r["inclination"], np.tile(incl, (4, 1)))
    # The scan starts each curve from 64 points, and they resolve this one (no doubling).
    one = umbral.shadow(umbral.Metric("kerr", a=0.35), inclination=63.5, points=64)
    assert r["mean_radius"][2, 1] == one.observables["mean_radius"]
    assert r["circularity_deviation"][2, 1] == one.observables["circularity_deviation"]


def test_scan_refuses_values_that_do_not_increase():
    with pytest.raises(umbral.InputError, match="grid axis a: the values must increase, got 0.5 then 0.2"):
        umbral.scan("kerr", grid={"a": [0.0, 0.5, 0.2]}, inclination=30)
    with pytest.raises(umbral.InputError, match="give an inclination, or an 'inclination' grid axis"):
        umbral.scan("kerr", grid={"a": [0.0, 0.5]})


def test_scan_to_a_file_resumes():
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as d:
        out = Path(d) / "s.jsonl"
        first = umbral.scan("kerr", grid={"a": [0.0, 0.5, 0.9]}, inclination=40, out=out)
        again = umbral.scan("kerr", grid={"a": [0.0, 0.5, 0.9]}, inclination=40, out=out)
        assert (first.computed, again.computed, again.reused) == (3, 0, 3)
        assert np.array_equal(first["mean_radius"], again["mean_radius"])
        with pytest.raises(umbral.InputError, match="different arguments"):
            umbral.scan("kerr", grid={"a": [0.0, 0.5, 0.9]}, inclination=41, out=out)


def test_posterior_samples_are_a_structured_array(gaussian_radius):
    p = umbral.infer("reissner-nordstrom", gaussian_radius, priors={"q": "uniform:0:1"}, sampler="quadrature", samples=500)
    assert p.samples.dtype.names == ("q",) and p.samples.dtype["q"] == np.float64
    assert p.samples.shape == (500,)
    assert ((p.samples["q"] >= 0) & (p.samples["q"] <= 1)).all()
    assert p.diagnostics["converged"] is True and p.evidence is not None
    assert p.parameters["q"]["median"] == pytest.approx(np.median(p.samples["q"]), abs=0.05)


def test_inclination_columns_are_in_degrees(gaussian_radius):
    p = umbral.infer(
        umbral.Metric("kerr"), gaussian_radius, priors={"a": "uniform:0:0.5", "inclination@1": "isotropic:10:60"},
        sampler="quadrature", samples=400, max_panels=16,
    )
    assert p.samples.dtype.names == ("a@1", "inclination@1_deg")
    incl = p.samples["inclination@1_deg"]
    assert incl.min() >= 10 and incl.max() <= 60


def test_an_unconverged_posterior_raises_with_its_report(gaussian_radius):
    with pytest.raises(umbral.NotConvergedError) as raised:
        umbral.infer("reissner-nordstrom", gaussian_radius, priors={"q": "uniform:0:1"}, steps=10, max_steps=10)
    e = raised.value
    assert isinstance(e, umbral.ComputationError) and isinstance(e, RuntimeError)
    assert str(e).startswith("NOT CONVERGED: split R-hat")
    assert e.report["parameters"] is None and e.report["diagnostics"]["converged"] is False


def test_image_is_a_square_float64_array_with_row_zero_on_top():
    img = umbral.image("kerr", inclination=80, pixels=32, emission="disk-isco")
    assert img.dtype == np.float64 and img.shape == (32, 32) and img.flags["C_CONTIGUOUS"]
    # Seen from above the equator (beta > 0 at the top), the far side of the disk is lensed
    # over the top of the shadow; the picture is not symmetric top to bottom.
    assert not np.allclose(img, img[::-1])
    with pytest.raises(umbral.InputError, match="order 1 needs a thin-disk model"):
        umbral.image("kerr", inclination=80, pixels=8, emission="infall", order=1)
    with pytest.raises(umbral.InputError, match="blur_uas needs theta_g_uas"):
        umbral.image("kerr", inclination=80, pixels=8, blur_uas=20)


def test_the_error_classes():
    assert issubclass(umbral.InputError, ValueError) and issubclass(umbral.InputError, umbral.UmbralError)
    assert issubclass(umbral.ComputationError, RuntimeError)
    with pytest.raises(ValueError):
        umbral.shadow("kerr", inclination=30, points=2)
    with pytest.raises(umbral.InputError, match="solver: unknown solver 'fast'"):
        umbral.shadow("kerr", inclination=30, solver="fast")


def test_the_docstring_examples_run():
    result = doctest.testmod(umbral, extraglobs={"umbral": umbral}, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert result.attempted >= 3 and result.failed == 0


def test_progress_lines_go_to_standard_error():
    import subprocess
    import sys

    code = "import umbral; umbral.scan('kerr', grid={'a': [0.0, 0.5]}, inclination=30, progress=0)"
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert run.returncode == 0 and run.stdout == ""
    assert run.stderr.splitlines()[-1].startswith("scan: 2/2 points (100%)"), run.stderr
