"""The exceptions umbral raises.

Every failure of a call is an :class:`UmbralError`. Bad input (an unknown metric or
parameter, a value outside its domain, a bad measurement file, a grid that does not
increase) is an :class:`InputError`, also a :class:`ValueError`; the command line exits
with code 2 on the same input. A computation that failed or did not converge is a
:class:`ComputationError`, also a :class:`RuntimeError`. Messages are the command line's
one-line messages, naming the keyword argument where the command line names its option
(``inclination`` for ``--inclination``); a metric file's syntax error keeps the command
line's lines with the offending line and a caret under it.
"""

from __future__ import annotations

import json
from typing import Any

__all__ = ["UmbralError", "InputError", "ComputationError", "NotConvergedError"]


class UmbralError(Exception):
    """Base class of every error umbral raises."""


class InputError(UmbralError, ValueError):
    """Bad input: the command line would exit with code 2."""


class ComputationError(UmbralError, RuntimeError):
    """A computation failed (the command line's exit code 3), or was stopped."""


class NotConvergedError(ComputationError):
    """A posterior whose sampler did not converge: no intervals are reported.

    Attributes
    ----------
    report : dict
        The run's report as ``umbral infer --json`` prints it (``parameters`` is ``None``),
        with the diagnostics and the assumptions.
    """

    def __init__(self, message: str, report: str | dict[str, Any] = "{}") -> None:
        super().__init__(message)
        self.report: dict[str, Any] = json.loads(report) if isinstance(report, str) else report
