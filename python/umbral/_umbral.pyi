# Type stub of the native module umbral._umbral (built from python/src/ with PyO3). The public,
# documented API is umbral/__init__.py, which calls these.
import os
from typing import Any, Optional, Sequence, Tuple, Union

import numpy as np
import numpy.typing as npt

__version__: str

_Path = Union[str, os.PathLike[str]]
_Settings = Tuple[int, str, float]  # points, solver, tolerance

class Metric:
    """A metric with its parameter values (see umbral.Metric)."""

    def __init__(self, name: str, **params: float) -> None: ...
    @staticmethod
    def from_file(path: _Path, **params: float) -> "Metric": ...
    @staticmethod
    def from_toml(text: str, **params: float) -> "Metric": ...
    def with_parameters(self, **params: float) -> "Metric": ...
    @property
    def name(self) -> str: ...
    @property
    def parameters(self) -> dict[str, float]: ...
    @property
    def assignments(self) -> dict[str, float]: ...
    @property
    def path(self) -> Optional[os.PathLike[str]]: ...
    def outer_horizon(self) -> Optional[float]: ...
    def info(self) -> dict[str, Any]: ...

def metrics_json() -> str: ...
def shadow_json(
    metric: Metric, inclination: float, settings: _Settings, observer_radius: Optional[float], centre: str
) -> str: ...
def scan(
    metric: Metric,
    axes: Sequence[Tuple[str, Sequence[float]]],
    inclination: Optional[float],
    settings: _Settings,
    require_horizon: bool,
    out: Optional[_Path],
    progress: Optional[float],
) -> dict[str, Any]: ...
def bound_json(
    metric: Metric,
    vary: Tuple[str, Tuple[float, float]],
    measurement_path: _Path,
    inclination: Optional[float],
    inclination_range: Optional[Tuple[float, float]],
    nuisance: Sequence[Tuple[str, Tuple[float, float]]],
    size: str,
    levels: Optional[Sequence[float]],
    require_horizon: bool,
    checkpoint: Optional[_Path],
    progress: Optional[float],
    full_extremes: bool,
) -> str: ...
def infer(
    metric: Metric, measurements: Sequence[_Path], options: Any
) -> Tuple[str, list[str], npt.NDArray[np.float64]]: ...
def image(metric: Metric, options: Any) -> npt.NDArray[np.float64]: ...
