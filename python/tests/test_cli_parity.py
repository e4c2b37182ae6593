"""The Python package's numbers equal the command line's to the last bit.

Every comparison below is exact: the command line's JSON is read with Python's correctly
rounded float parser from the shortest round-trip text umbral writes, so equal dicts mean
equal bits; arrays are compared with numpy.array_equal on float64.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

import umbral
from conftest import EXAMPLES, ROOT, timeless


def shadow_json(cli_json, *args):
    """`umbral shadow --json` prints a list, one report per parameter value: the one report."""
    reports = cli_json("shadow", *args)
    assert isinstance(reports, list) and len(reports) == 1
    return reports[0]


def test_kerr_shadow_equals_the_cli(cli_json):
    want = shadow_json(cli_json, "--metric", "kerr", "--set", "a=0.9", "--inclination", "60")
    got = umbral.shadow(umbral.Metric("kerr", a=0.9), inclination=60)
    assert timeless(got.report) == timeless(want)
    assert np.array_equal(got.alpha, np.array(want["curve"]["alpha"]))
    assert np.array_equal(got.beta, np.array(want["curve"]["beta"]))
    assert got.observables["mean_radius"] == want["observables"]["mean_radius"]
    assert (got.status, got.solver) == ("shadow", "separable")


def test_shadow_with_options_and_a_metric_file_equals_the_cli(cli_json):
    path = ROOT / "metrics" / "kerr-newman.toml"
    want = shadow_json(
        cli_json, "--metric-file", path, "--set", "a=0.5", "--set", "q=0.3", "--inclination", "35",
        "--observer-radius", "500", "--points", "128", "--solver", "raytrace", "--tolerance", "1e-7",
        "--centre", "midpoint",
    )
    metric = umbral.Metric.from_file(path, a=0.5, q=0.3)
    got = umbral.shadow(metric, 35, points=128, solver="raytrace", observer_radius=500, tolerance=1e-7, centre="midpoint")
    assert timeless(got.report) == timeless(want)
    theta, psi = got.celestial
    assert np.array_equal(theta, np.array(want["celestial"]["theta"]))
    assert got.alpha.shape == (128,)


def test_no_shadow_equals_the_cli(cli_json):
    want = shadow_json(cli_json, "--metric", "reissner-nordstrom", "--set", "q=1.1", "--inclination", "30")
    got = umbral.shadow(umbral.Metric("reissner-nordstrom", q=1.1), 30)
    assert timeless(got.report) == timeless(want)
    assert got.status == "no_shadow" and got.reason == want["reason"]
    assert got.observables == {} and got.alpha.shape == (0,)


def test_scan_points_equal_the_cli_file(cli, tmp_path):
    out = tmp_path / "scan.jsonl"
    code, _, err = cli(
        "scan", "--metric", "kerr-newman", "--set", "q=0.2", "--grid", "a=0:0.9:4",
        "--grid", "inclination=0:90:3", "--out", out,
    )
    assert code == 0, err
    lines = [json.loads(line) for line in out.read_text().splitlines()[1:]]
    got = umbral.scan(
        umbral.Metric("kerr-newman", q=0.2),
        grid={"a": np.linspace(0, 0.9, 4), "inclination": np.linspace(0, 90, 3)},
    )
    assert got.shape == (4, 3) and len(lines) == 12
    for line in lines:
        i, j = line["index"]
        assert got["status"][i, j] == line["status"]
        assert got["a"][i, j] == line["parameters"]["a"]
        assert got["inclination"][i, j] == line["inclination_deg"]
        for key, value in line["observables"].items():
            if isinstance(value, float):
                assert got[key][i, j] == value, (key, i, j)


def test_scan_file_from_python_is_the_cli_file(cli, tmp_path):
    """Evenly spaced values are the command line's grid: the same file, byte for byte."""
    a, b = tmp_path / "cli.jsonl", tmp_path / "py.jsonl"
    code, _, err = cli("scan", "--metric", "reissner-nordstrom", "--grid", "q=0:1.2:5", "--inclination", "17", "--out", a)
    assert code == 0, err
    umbral.scan("reissner-nordstrom", grid={"q": np.linspace(0, 1.2, 5)}, inclination=17, out=b)
    assert a.read_bytes() == b.read_bytes()


def test_bound_equals_the_cli(cli_json):
    measurement = EXAMPLES / "measurement_radius.toml"
    want = cli_json(
        "bound", "--metric", "kerr-newman", "--vary", "q=0:1", "--nuisance", "a=0:0.9",
        "--inclination", "30", "--measurement", measurement, "--no-checkpoint",
    )
    got = umbral.bound("kerr-newman", vary={"q": (0, 1)}, nuisance={"a": (0, 0.9)}, inclination=30, measurement=measurement)
    assert got == want


def test_bound_with_full_extremes_equals_the_cli(cli_json):
    measurement = EXAMPLES / "measurement_radius.toml"
    args = ("bound", "--metric", "kerr-newman", "--vary", "q=0:1", "--nuisance", "a=0:0.9",
            "--inclination", "30", "--measurement", measurement, "--no-checkpoint")
    want = cli_json(*args, "--full-extremes")
    got = umbral.bound("kerr-newman", vary={"q": (0, 1)}, nuisance={"a": (0, 0.9)}, inclination=30,
                       measurement=measurement, full_extremes=True)
    assert got == want
    # Every value searched in full, and the same allowed ranges as the default's witnesses.
    assert not any(p["witnessed"] for p in got["predicted"])
    decided = cli_json(*args)
    assert any(p["witnessed"] and p["size_min"] is None for p in decided["predicted"])
    assert [lv["allowed"] for lv in decided["levels"]] == [lv["allowed"] for lv in got["levels"]]


def test_bound_over_an_inclination_range_equals_the_cli(cli_json):
    measurement = EXAMPLES / "measurement_ring.toml"
    want = cli_json(
        "bound", "--metric", "kerr", "--vary", "a=0:0.99", "--inclination-range", "10:60",
        "--measurement", measurement, "--no-checkpoint",
    )
    got = umbral.bound(umbral.Metric("kerr"), vary={"a": (0, 0.99)}, inclination=(10, 60), measurement=measurement)
    assert got == want


def test_quadrature_posterior_equals_the_cli(cli, cli_json, gaussian_radius, tmp_path):
    want = cli_json(
        "infer", "--metric", "reissner-nordstrom", "--prior", "q=uniform:0:1", "--measurement", gaussian_radius,
        "--sampler", "quadrature", "--samples", "2000", "--seed", "7", "--out", tmp_path,
    )
    got = umbral.infer(
        "reissner-nordstrom", gaussian_radius, priors={"q": "uniform:0:1"}, sampler="quadrature", samples=2000, seed=7
    )
    assert timeless(got.report) == timeless(want)
    rows = [line.split(",") for line in (tmp_path / "samples.csv").read_text().splitlines() if not line.startswith("#")]
    assert got.samples.dtype.names == tuple(rows[0]) == ("q",)
    assert np.array_equal(got.samples["q"], np.array([float(r[0]) for r in rows[1:]]))


def test_image_equals_the_cli_npy(cli, tmp_path):
    out = tmp_path / "disk.npy"
    code, _, err = cli(
        "image", "--metric", "kerr", "--set", "a=0.6", "--inclination", "60", "--pixels", "24",
        "--emission", "disk-horizon", "--blur-m", "1.5", "--out", out,
    )
    assert code == 0, err
    got = umbral.image(umbral.Metric("kerr", a=0.6), 60, pixels=24, emission="disk-horizon", blur_m=1.5)
    want = np.load(out)
    assert got.dtype == want.dtype == np.float64 and got.shape == want.shape == (24, 24)
    assert np.array_equal(got, want)


@pytest.mark.parametrize(
    "call, args",
    [
        (lambda: umbral.Metric("kerr-banana"), ["shadow", "--metric", "kerr-banana", "--inclination", "30"]),
        (lambda: umbral.Metric("hayward", l=-0.5), ["shadow", "--metric", "hayward", "--set", "l=-0.5", "--inclination", "30"]),
        (lambda: umbral.Metric("kerr", spin=0.5), ["shadow", "--metric", "kerr", "--set", "spin=0.5", "--inclination", "30"]),
        (
            lambda: umbral.scan("kerr", grid={"a": [0.0, 0.5]}, inclination=200),
            ["scan", "--metric", "kerr", "--grid", "a=0:0.5:2", "--inclination", "200", "--out", "unused.jsonl"],
        ),
        (
            lambda: umbral.bound("kerr", vary={"a": (0, 0.9)}, inclination=30, measurement=EXAMPLES / "no-such-file.toml"),
            ["bound", "--metric", "kerr", "--vary", "a=0:0.9", "--inclination", "30", "--measurement", EXAMPLES / "no-such-file.toml"],
        ),
    ],
    ids=["unknown metric", "outside the domain", "unknown parameter", "inclination off range", "missing measurement"],
)
def test_errors_carry_the_cli_message(cli, tmp_path, call, args):
    code, _, err = cli(*args, cwd=tmp_path)
    assert code == 2
    with pytest.raises(umbral.InputError) as raised:
        call()
    assert str(raised.value) == err.strip().removeprefix("error: ")


@pytest.mark.parametrize(
    "call, args",
    [
        (lambda: umbral.shadow("kerr", inclination=200), ["shadow", "--metric", "kerr", "--inclination", "200"]),
        (
            lambda: umbral.bound("kerr", vary={"a": (0.9, 0.0)}, inclination=30, measurement=EXAMPLES / "measurement_radius.toml"),
            ["bound", "--metric", "kerr", "--vary", "a=0.9:0", "--inclination", "30", "--measurement", EXAMPLES / "measurement_radius.toml"],
        ),
        (
            lambda: umbral.infer("reissner-nordstrom", EXAMPLES / "infer_source_alder.toml", priors={"q": "uniform:0:1"}, samples=5),
            ["infer", "--metric", "reissner-nordstrom", "--prior", "q=uniform:0:1", "--measurement", EXAMPLES / "infer_source_alder.toml", "--samples", "5"],
        ),
    ],
    ids=["shadow inclination", "bound range", "infer samples"],
)
def test_errors_about_an_option_name_the_keyword(cli, call, args):
    """Where the command line names its option (`--inclination`), Python names the keyword."""
    code, _, err = cli(*args)
    assert code == 2
    with pytest.raises(umbral.InputError) as raised:
        call()
    assert str(raised.value) == err.strip().removeprefix("error: --")
