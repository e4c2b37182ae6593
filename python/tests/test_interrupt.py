"""Ctrl-C stops a long call and leaves Python usable; the call releases the GIL meanwhile.

Each check runs in a child Python process that sends itself SIGINT from a timer thread, so
that a KeyboardInterrupt can never reach the test runner itself.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap


CHILD = textwrap.dedent(
    """
    import json, os, signal, sys, threading, time
    import numpy as np
    import umbral

    out = sys.argv[1]
    ticks = 0
    running = True

    def count():
        global ticks
        while running:
            ticks += 1
            time.sleep(0.01)

    counter = threading.Thread(target=count)
    counter.start()
    threading.Timer(1.5, lambda: os.kill(os.getpid(), signal.SIGINT)).start()
    start = time.monotonic()
    try:
        # Minutes of ray tracing on two cores: 400 points, about half a second each.
        umbral.scan("kerr", grid={"a": np.linspace(0, 0.9, 20), "inclination": np.linspace(5, 85, 20)},
                    solver="raytrace", points=64, out=out)
        outcome = "completed"
    except KeyboardInterrupt:
        outcome = "KeyboardInterrupt"
    stopped = time.monotonic() - start
    running = False
    counter.join()
    after = umbral.shadow("schwarzschild", 30).observables["mean_radius"]
    print(json.dumps({"outcome": outcome, "seconds": stopped, "ticks": ticks, "after": after}))
    """
)


def test_ctrl_c_stops_a_scan_keeps_its_points_and_python_goes_on(tmp_path):
    out = tmp_path / "scan.jsonl"
    child = subprocess.run([sys.executable, "-c", CHILD, str(out)], capture_output=True, text=True, timeout=300)
    assert child.returncode == 0, child.stderr
    result = json.loads(child.stdout.strip().splitlines()[-1])
    assert result["outcome"] == "KeyboardInterrupt"
    # The signal came at 1.5 s; the points in progress (a quarter second each) finish first.
    assert 1.5 <= result["seconds"] < 6.0, result
    # Another Python thread ran while the scan did (the GIL was released): ~150 ticks of 10 ms.
    assert result["ticks"] > 50, result
    assert abs(result["after"] - 27 ** 0.5) < 1e-8
    # The finished points are in the file (the same call would resume from them).
    lines = out.read_text().splitlines()
    kept = len(lines) - 1
    assert 0 < kept < 400
    header = json.loads(lines[0])
    assert header["inclination_deg"] is None and [a["name"] for a in header["axes"]] == ["a", "inclination"]
    assert all(json.loads(line)["status"] == "shadow" for line in lines[1:])
