"""umbral: black-hole shadows for tests of general relativity, from Python.

The same library as the ``umbral`` command line, called directly: metrics, critical curves
("shadows") and their observables, scans over parameter grids, bounds and posteriors from a
measured ring, and images of emission models. Numbers are the command line's to the last bit.

Conventions: G = c = M = 1, screen coordinates (alpha, beta) in M (Bardeen's convention),
angles in degrees.

>>> import umbral
>>> kerr = umbral.Metric("kerr", a=0.9)
>>> s = umbral.shadow(kerr, inclination=60)
>>> s.status, s.alpha.shape
('shadow', (256,))
>>> round(s.observables["mean_radius"], 3)
4.999

Long calls (``scan``, ``bound``, ``infer``, ``image``) release the GIL and stop at Ctrl-C:
the items in progress finish, then ``KeyboardInterrupt`` is raised (a scan written to a file
keeps its finished points, and the same call resumes it).

Errors are :class:`InputError` (a :class:`ValueError`) for bad input and
:class:`ComputationError` (a :class:`RuntimeError`) for failed computations, both
:class:`UmbralError`; see :mod:`umbral.errors`.
"""

from __future__ import annotations

import json
import os
from typing import Any, Iterable, Mapping, Optional, Sequence, Tuple, Union

import numpy as np

from . import _umbral
from .errors import ComputationError, InputError, NotConvergedError, UmbralError

__all__ = [
    "Metric",
    "Shadow",
    "ScanResult",
    "Posterior",
    "metrics",
    "shadow",
    "scan",
    "bound",
    "infer",
    "image",
    "UmbralError",
    "InputError",
    "ComputationError",
    "NotConvergedError",
]

__version__: str = _umbral.__version__

Metric = _umbral.Metric

PathLike = Union[str, "os.PathLike[str]"]
Range = Tuple[float, float]


def _progress(progress: Union[bool, float]) -> Optional[float]:
    """Seconds between progress lines, or None for none."""
    if progress is True:
        return 5.0
    if progress is False or progress is None:
        return None
    return float(progress)


def _metric(metric: Union[Metric, str]) -> Metric:
    """A Metric from a Metric or a built-in name."""
    if isinstance(metric, str):
        return Metric(metric)
    if not isinstance(metric, Metric):
        raise TypeError(f"metric must be an umbral.Metric or a metric name, got {type(metric).__name__}")
    return metric


def metrics() -> list[dict[str, Any]]:
    """Every built-in metric, as ``umbral metrics --json`` lists it.

    Returns
    -------
    list of dict
        One dict per metric: ``name``, ``title``, ``symmetry``, ``separable``,
        ``auto_solver``, ``reference`` and ``parameters`` (each a dict with ``name``,
        ``default``, ``domain`` and ``meaning``), and ``source`` (``"builtin"``).

    >>> [m["name"] for m in umbral.metrics()][:3]
    ['schwarzschild', 'kerr', 'reissner-nordstrom']
    """
    return json.loads(_umbral.metrics_json())


class Shadow:
    """A critical curve and its observables (what :func:`shadow` returns).

    Attributes
    ----------
    alpha, beta : numpy.ndarray
        The curve's screen coordinates in M (float64, empty without a shadow).
    observables : dict
        The observables by name (``mean_radius``, ``area_radius``,
        ``circularity_deviation``, ...), empty without a shadow.
    status : str
        ``"shadow"`` or ``"no_shadow"``.
    reason : str or None
        Why there is no shadow.
    solver : str
        The solver that ran.
    parameters : dict[str, float]
        The metric's parameters.
    inclination : float
        Degrees.
    observer_radius : float or None
        In M; ``None`` for a distant observer.
    exponents : dict or None
        Photon-ring exponents (Lyapunov exponent, demagnification).
    photon_spheres : list of dict
    diagnostics : dict
    celestial : tuple of numpy.ndarray or None
        For an observer at finite radius, the curve's celestial angles (Theta, Psi) in radians.
    report : dict
        Everything, as ``umbral shadow --json`` prints it.
    """

    def __init__(self, report: dict[str, Any]) -> None:
        self.report = report
        curve = report.get("curve") or {"alpha": [], "beta": []}
        self.alpha = np.asarray(curve["alpha"], dtype=np.float64)
        self.beta = np.asarray(curve["beta"], dtype=np.float64)
        self.observables: dict[str, Any] = report.get("observables") or {}
        self.status: str = report["status"]
        self.reason: Optional[str] = report.get("reason")
        self.solver: str = report["solver"]
        self.parameters: dict[str, float] = report["parameters"]
        self.inclination: float = report["inclination_deg"]
        self.observer_radius: Optional[float] = report["observer_radius"]
        self.exponents: Optional[dict[str, Any]] = report.get("exponents")
        self.photon_spheres: list[dict[str, Any]] = report.get("photon_spheres", [])
        self.diagnostics: dict[str, Any] = report.get("diagnostics", {})
        celestial = report.get("celestial")
        self.celestial = (
            None
            if celestial is None
            else (np.asarray(celestial["theta"], dtype=np.float64), np.asarray(celestial["psi"], dtype=np.float64))
        )

    def __repr__(self) -> str:
        if self.status == "shadow":
            return f"<Shadow {self.report['metric']} at {self.inclination} deg: mean radius {self.observables['mean_radius']:.6g} M, {self.solver} solver>"
        return f"<Shadow {self.report['metric']} at {self.inclination} deg: no shadow ({self.reason})>"


def shadow(
    metric: Union[Metric, str],
    inclination: float,
    points: int = 256,
    solver: str = "auto",
    observer_radius: Optional[float] = None,
    tolerance: float = 1e-8,
    centre: str = "centroid",
) -> Shadow:
    """The critical curve ("shadow") of a metric and its observables (``umbral shadow``).

    Parameters
    ----------
    metric : Metric or str
        The metric, or a built-in name with its default parameters.
    inclination : float
        The observer's inclination from the spin axis, in degrees (0 to 180).
    points : int
        Curve points, uniform in screen polar angle.
    solver : str
        ``"auto"`` (the first that applies), ``"spherical"``, ``"separable"``, ``"raytrace"``
        or a registered solver.
    observer_radius : float, optional
        The observer's radius in M; by default a distant observer.
    tolerance : float
        Boundary tolerance in M (1e-12 to 1e-3).
    centre : str
        ``"centroid"`` or ``"midpoint"``: the centre radii are measured about.

    Returns
    -------
    Shadow

    Raises
    ------
    InputError
        Bad arguments, or a solver that does not apply or fails (the command line's exit 2).
    """
    text = _umbral.shadow_json(
        _metric(metric), float(inclination), (int(points), str(solver), float(tolerance)),
        None if observer_radius is None else float(observer_radius), str(centre),
    )
    return Shadow(json.loads(text))


class ScanResult(dict):
    """The result of :func:`scan`: a dict of numpy arrays shaped like the grid.

    Keys: every axis name (the coordinate of each point, as :func:`numpy.meshgrid` with
    ``indexing="ij"`` gives), every observable (float64, NaN where a point has no value),
    ``status`` (str: ``shadow``, ``no_shadow``, ``no_horizon`` or ``failed``), ``reason``
    (str, empty where there is none), ``solver`` (str) and ``horizonless`` (bool).

    Attributes
    ----------
    axes : dict[str, numpy.ndarray]
        Each axis's values, in grid order.
    shape : tuple of int
        The grid's shape.
    computed, reused : int
        Points computed by this call, and kept from an earlier run of a scan file.
    """

    axes: dict[str, np.ndarray]
    shape: Tuple[int, ...]
    computed: int
    reused: int


def scan(
    metric: Union[Metric, str],
    grid: Mapping[str, Union[Sequence[float], np.ndarray]],
    inclination: Optional[float] = None,
    points: int = 64,
    solver: str = "auto",
    tolerance: float = 1e-8,
    require_horizon: bool = False,
    out: Optional[PathLike] = None,
    progress: Union[bool, float] = False,
) -> ScanResult:
    """Observables on a grid of one or two axes (``umbral scan``).

    Parameters
    ----------
    metric : Metric or str
        The metric; the values it was given are held fixed.
    grid : dict
        One or two axes, each a parameter name (or ``"inclination"``, the observer's
        inclination in degrees) and its increasing values, e.g.
        ``{"a": np.linspace(0, 0.9, 10), "inclination": [17, 60, 90]}``. The points are at
        exactly these values.
    inclination : float, optional
        The observer's inclination in degrees, unless it is an axis.
    points : int
        Curve points to start each curve from, a multiple of 4, at least 64: doubled, up to
        1024, while the sampling error of any observable (estimated from every second and
        fourth point) exceeds the tolerance. Each point's count is in the scan file.
    solver, tolerance
        As in :func:`shadow`.
    require_horizon : bool
        Record every horizonless point as ``no_horizon`` (by default a horizonless object
        whose photon sphere bounds capture by its centre is evaluated, marked horizonless).
    out : path, optional
        Also write the points to this JSON-lines scan file, resumable: a call stopped by
        Ctrl-C keeps its finished points there and the same call continues.
    progress : bool or float
        Print a progress line on standard error every 5 seconds (or every so many seconds),
        and a last one at the end of a run that printed any.

    Returns
    -------
    ScanResult
        A dict of grid-shaped numpy arrays (see :class:`ScanResult`).
    """
    if not isinstance(grid, Mapping):
        raise TypeError("grid must be a dict of axis name -> values")
    axes = [(str(name), np.asarray(values, dtype=np.float64).ravel()) for name, values in grid.items()]
    raw = _umbral.scan(
        _metric(metric), [(n, v.tolist()) for n, v in axes],
        None if inclination is None else float(inclination),
        (int(points), str(solver), float(tolerance)), bool(require_horizon),
        None if out is None else os.fspath(out), _progress(progress),
    )
    shape = tuple(len(v) for _, v in axes)
    result = ScanResult()
    for name, values in axes:
        result[name] = None
    coordinates = np.meshgrid(*[v for _, v in axes], indexing="ij")
    for (name, _), c in zip(axes, coordinates):
        result[name] = c
    for key, values in raw["observables"].items():
        if key not in result:
            result[key] = np.asarray(values, dtype=np.float64).reshape(shape)
    result["status"] = np.array(raw["status"], dtype=str).reshape(shape)
    result["reason"] = np.array(raw["reason"], dtype=str).reshape(shape)
    result["solver"] = np.array(raw["solver"], dtype=str).reshape(shape)
    result["horizonless"] = np.array(raw["horizonless"], dtype=bool).reshape(shape)
    result.axes = {name: values for name, values in axes}
    result.shape = shape
    result.computed = raw["computed"]
    result.reused = raw["reused"]
    return result


def bound(
    metric: Union[Metric, str],
    vary: Mapping[str, Range],
    measurement: PathLike,
    inclination: Union[float, Range, None] = None,
    nuisance: Optional[Mapping[str, Range]] = None,
    size_measure: str = "mean",
    levels: Optional[Sequence[float]] = None,
    require_horizon: bool = False,
    checkpoint: Optional[PathLike] = None,
    progress: Union[bool, float] = False,
    full_extremes: bool = False,
) -> dict[str, Any]:
    """Allowed ranges of a parameter from a measured shadow or ring (``umbral bound``).

    Parameters
    ----------
    metric : Metric or str
        The metric; the values it was given are held fixed.
    vary : dict
        The parameter to bound and its range, ``{"q": (0.0, 1.2)}``.
    measurement : path
        A measurement file (TOML).
    inclination : float or (float, float), optional
        Degrees, or a nuisance range; may be left out for a spherically symmetric metric.
    nuisance : dict, optional
        Parameters treated as nuisance over a range, ``{"a": (0.0, 0.95)}``.
    size_measure : str
        ``"mean"`` or ``"area"``.
    levels : sequence of float, optional
        Confidence levels (default: the file's, or 0.68 and 0.95).
    require_horizon : bool
        Evaluate only values with a horizon.
    checkpoint : path, optional
        Keep every nuisance evaluation in this JSON-lines file and resume from it.
    progress : bool or float
        As in :func:`scan`.
    full_extremes : bool
        Search the predicted size's min and max over the nuisance box at every value (the
        band in ``predicted``), as ``umbral bound --full-extremes``. By default a value is
        decided as soon as the nuisance points evaluated allow it at every level (its
        ``predicted`` entry then has ``witnessed`` true and only ``witnessed_sizes``); every
        value is decided alike, but only the full search looks for a narrow excluded sliver
        between two allowed grid values.

    Returns
    -------
    dict
        The result as ``umbral bound --json`` prints it: ``levels`` (each with its
        ``allowed`` intervals), ``no_horizon``, ``no_shadow``, ``failures`` (each with
        ``evaluated_below`` and ``evaluated_above``, the nearest values whose evaluation did
        not fail: nothing between them and the failure is allowed or excluded),
        ``assumptions``...
    """
    if not isinstance(vary, Mapping) or len(vary) != 1:
        raise InputError("vary: give one parameter and its range, e.g. {'q': (0.0, 1.2)}")
    (name, (low, high)), = vary.items()
    fixed_inclination = None
    inclination_range = None
    if isinstance(inclination, (tuple, list)):
        lo, hi = inclination
        inclination_range = (float(lo), float(hi))
    elif inclination is not None:
        fixed_inclination = float(inclination)
    text = _umbral.bound_json(
        _metric(metric), (str(name), (float(low), float(high))), os.fspath(measurement),
        fixed_inclination, inclination_range,
        [(str(n), (float(lo), float(hi))) for n, (lo, hi) in (nuisance or {}).items()],
        str(size_measure), None if levels is None else [float(x) for x in levels],
        bool(require_horizon), None if checkpoint is None else os.fspath(checkpoint), _progress(progress),
        bool(full_extremes),
    )
    return json.loads(text)


class Posterior:
    """A converged posterior (what :func:`infer` returns).

    Attributes
    ----------
    samples : numpy.ndarray
        Equally weighted samples, a structured array with one float64 field per sampled
        parameter (``q``, ``a@1``, ``inclination@1_deg`` in degrees, ...).
    report : dict
        Everything, as ``umbral infer --json`` prints it.
    parameters : dict
        Each sampled parameter's median, mean and credible intervals.
    evidence : dict or None
        ln Z and the Bayes factor against GR (nested sampling and quadrature).
    diagnostics : dict
        R-hat, effective sample sizes, evaluations, solver failures.
    assumptions : list of str
    """

    def __init__(self, report: dict[str, Any], names: list[str], samples: np.ndarray) -> None:
        self.report = report
        dtype = np.dtype([(n, np.float64) for n in names])
        self.samples = np.ascontiguousarray(samples, dtype=np.float64).view(dtype).reshape(-1)
        self.parameters: dict[str, Any] = report["parameters"]
        self.evidence: Optional[dict[str, float]] = report.get("evidence")
        self.diagnostics: dict[str, Any] = report["diagnostics"]
        self.assumptions: list[str] = report["assumptions"]

    def __repr__(self) -> str:
        return f"<Posterior of {self.report['metric']}: {len(self.samples)} samples of {', '.join(self.samples.dtype.names or ())}>"


def infer(
    metric: Union[Metric, str],
    measurements: Union[PathLike, Sequence[PathLike]],
    priors: Optional[Mapping[str, str]] = None,
    sampler: str = "ensemble",
    seed: int = 1,
    samples: int = 20000,
    steps: Optional[int] = None,
    max_steps: Optional[int] = None,
    live_points: int = 400,
    max_panels: int = 64,
    levels: Sequence[float] = (0.68, 0.95),
    size_measure: str = "mean",
    require_horizon: bool = False,
    tabulate: bool = False,
    table_nodes: int = 9,
    table_dir: PathLike = ".",
    progress: Union[bool, float] = False,
) -> Posterior:
    """The posterior of a metric's parameters from measured sources (``umbral infer``).

    Parameters
    ----------
    metric : Metric or str
        The metric; values it was given are held fixed (a ``fixed:V`` prior).
    measurements : path or list of paths
        One measurement file (TOML) per source.
    priors : dict, optional
        Priors by name, ``{"q": "uniform:0:1", "inclination@1": "isotropic:0:90"}``
        (``uniform:LO:HI``, ``log-uniform:LO:HI``, ``normal:MU:SIGMA``, ``isotropic:LO:HI``,
        ``fixed:V``; inclinations in degrees). Parameters without one keep their defaults;
        inclinations default to ``isotropic:0:90``.
    sampler : str
        ``"ensemble"``, ``"nested"`` or ``"quadrature"`` (one or two sampled parameters).
    seed : int
        The seed of every random number: the same seed gives the same samples.
    samples, steps, max_steps, live_points, max_panels, levels, size_measure,
    require_horizon, tabulate, table_nodes
        As the command line's options of the same names.
    table_dir : path
        Folder of the interpolation tables (ray-traced metrics, or ``tabulate``).
    progress : bool or float
        As in :func:`scan`.

    Returns
    -------
    Posterior

    Raises
    ------
    NotConvergedError
        The sampler did not converge (its ``report`` has the diagnostics).
    """
    if isinstance(measurements, (str, os.PathLike)):
        measurements = [measurements]
    options = {
        "priors": [(str(k), str(v)) for k, v in (priors or {}).items()],
        "sampler": str(sampler),
        "seed": int(seed),
        "samples": int(samples),
        "steps": None if steps is None else int(steps),
        "max_steps": None if max_steps is None else int(max_steps),
        "live_points": int(live_points),
        "max_panels": int(max_panels),
        "levels": [float(x) for x in levels],
        "size_measure": str(size_measure),
        "require_horizon": bool(require_horizon),
        "tabulate": bool(tabulate),
        "table_nodes": int(table_nodes),
        "table_dir": os.fspath(table_dir),
        "progress": _progress(progress),
    }
    report, names, rows = _umbral.infer(_metric(metric), [os.fspath(m) for m in measurements], _Options(options))
    return Posterior(json.loads(report), names, rows)


class _Options:
    """Keyword options as attributes, for the native module."""

    def __init__(self, options: Mapping[str, Any]) -> None:
        self.__dict__.update(options)


def image(
    metric: Union[Metric, str],
    inclination: float,
    emission: str = "disk-isco",
    models: Optional[PathLike] = None,
    pixels: int = 128,
    field: float = 24.0,
    observer_radius: Optional[float] = None,
    blur_uas: Optional[float] = None,
    blur_m: Optional[float] = None,
    theta_g_uas: Optional[float] = None,
    order: Union[str, int] = "all",
    progress: Union[bool, float] = False,
) -> np.ndarray:
    """An image of an emission model around a metric (``umbral image``).

    Parameters
    ----------
    metric : Metric or str
    inclination : float
        Degrees from the spin axis (0 is face-on).
    emission : str
        ``"disk-isco"``, ``"disk-horizon"``, ``"infall"``, or a model of ``models``.
    models : path, optional
        A model list (TOML).
    pixels : int
        Pixels per side.
    field : float
        Field of view in M.
    observer_radius : float, optional
        In M; by default a distant observer.
    blur_uas, theta_g_uas : float, optional
        Blur to this FWHM in micro-arcseconds (needs ``theta_g_uas``, GM/(c^2 D) in
        micro-arcseconds).
    blur_m : float, optional
        Blur to this FWHM in M instead.
    order : str or int
        ``"all"``, or the light crossing the equator 0, 1 or 2 (and more) times.
    progress : bool or float
        As in :func:`scan`.

    Returns
    -------
    numpy.ndarray
        float64 of shape (pixels, pixels), row 0 at the top (largest beta), column 0 at the
        left (smallest alpha): the array ``umbral image --out FILE.npy`` writes.

    Raises
    ------
    ComputationError
        Rays failed (their pixels would be NaN).
    """
    options = {
        "inclination": float(inclination),
        "emission": str(emission),
        "models": None if models is None else os.fspath(models),
        "pixels": int(pixels),
        "field": float(field),
        "observer_radius": None if observer_radius is None else float(observer_radius),
        "blur_uas": None if blur_uas is None else float(blur_uas),
        "blur_m": None if blur_m is None else float(blur_m),
        "theta_g_uas": None if theta_g_uas is None else float(theta_g_uas),
        "order": str(order),
        "progress": _progress(progress),
    }
    return _umbral.image(_metric(metric), _Options(options))
