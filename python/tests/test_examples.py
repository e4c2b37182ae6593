"""The notebook-style example runs without a display and makes its figure; the image files the
library writes read back with numpy and astropy (tests/python/check_image_files.py)."""

from __future__ import annotations

import os
import subprocess
import sys

from conftest import EXAMPLES, ROOT


def test_the_quickstart_example_makes_its_figure(tmp_path):
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "WAYLAND_DISPLAY", "MPLBACKEND")}
    figure = tmp_path / "quickstart.png"
    run = subprocess.run(
        [sys.executable, str(EXAMPLES / "python_quickstart.py"), str(figure)],
        cwd=tmp_path, env=env, capture_output=True, text=True, timeout=600,
    )
    assert run.returncode == 0, run.stderr
    assert "q allowed in" in run.stdout and "figure written" in run.stdout
    assert figure.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert figure.stat().st_size > 20_000
    assert sorted(p.name for p in tmp_path.iterdir()) == ["quickstart.png"]


def test_image_files_read_back_with_numpy_and_astropy(tmp_path):
    env = dict(os.environ, UMBRAL_IMAGE_FILES_DIR=str(tmp_path))
    cargo = subprocess.run(
        ["cargo", "test", "--release", "--test", "image_products", "sample_files_for_outside_readers"],
        cwd=ROOT, env=env, capture_output=True, text=True,
    )
    assert cargo.returncode == 0, cargo.stderr
    names = ["sample.npy", "sample_screen.fits", "sample_sky.fits", "sample.png"]
    check = subprocess.run(
        [sys.executable, str(ROOT / "tests" / "python" / "check_image_files.py"), *names],
        cwd=tmp_path, capture_output=True, text=True,
    )
    assert check.returncode == 0, check.stdout + check.stderr
    last = check.stdout.strip().splitlines()[-1]
    assert last.endswith(" 0 failed") and not last.startswith("0 passed"), last


def test_the_readme_python_example_runs_and_prints_what_it_says():
    text = (ROOT / "README.md").read_text()
    code = text.split("```python\n", 1)[1].split("```", 1)[0]
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    printed = run.stdout.splitlines()
    said = [line.split("# ", 1)[1] for line in code.splitlines() if "print(" in line]
    assert printed == said
