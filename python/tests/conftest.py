"""Shared fixtures: the repository's folders and the command-line binary the Python package is
compared with (built with cargo if it is not there yet)."""

from __future__ import annotations

import json
import os
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"


@pytest.fixture(scope="session")
def umbral_bin() -> Path:
    """The release binary of this checkout, as `cargo test --release` builds it (a no-op after
    that command; the image-file test runs one of its tests)."""
    build = ["cargo", "test", "--release", "--no-run", "--test", "image_products"]
    subprocess.run(build, cwd=ROOT, check=True, capture_output=True)
    return ROOT / "target" / "release" / "umbral"


@pytest.fixture(scope="session")
def cli(umbral_bin):
    """Run the command line: `cli("shadow", ...)` gives (exit code, stdout, stderr)."""

    def run(*args: str, cwd: os.PathLike | None = None):
        out = subprocess.run([str(umbral_bin), *map(str, args)], capture_output=True, text=True, cwd=cwd)
        return out.returncode, out.stdout, out.stderr

    return run


@pytest.fixture(scope="session")
def cli_json(cli):
    """Run the command line with --json and parse its output (exit code 0 required)."""

    def run(*args: str):
        code, out, err = cli(*args, "--json")
        assert code == 0, err
        return json.loads(out)

    return run


@pytest.fixture
def gaussian_radius(tmp_path) -> Path:
    """An invented measurement: a shadow radius r_sh/M = 5.0 +- 0.2."""
    path = tmp_path / "radius.toml"
    path.write_text('label = "invented radius"\n[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n')
    return path


TIMINGS = {"wall_seconds", "seconds", "rays_per_second"}


def timeless(value):
    """A report without its wall-clock timings (the only numbers two runs do not share)."""
    if isinstance(value, dict):
        return {k: timeless(v) for k, v in value.items() if k not in TIMINGS}
    if isinstance(value, list):
        return [timeless(v) for v in value]
    return value
