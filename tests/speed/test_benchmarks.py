"""Smoke runs of the benchmark scripts with tiny sizes: they run and print their ratios.

Nothing here is about time (timings on a shared machine are not a test): each script must
exit 0 and print the lines it is for.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

BENCHMARKS = Path(__file__).resolve().parents[2] / "benchmarks"


def _run(script: str, *arguments: str) -> str:
    completed = subprocess.run([sys.executable, str(BENCHMARKS / script), *arguments], capture_output=True,
                               text=True, timeout=600, cwd=BENCHMARKS.parent, check=False)
    assert completed.returncode == 0, completed.stderr[-2000:]
    return completed.stdout


@pytest.mark.slow
def test_trial_speed_prints_its_ratios():
    output = _run("trial_speed.py", "--grids", "128", "--trials", "1", "--study-grid", "128",
                  "--study-trials", "4", "--reference-grid", "128", "--fixed-trials", "2")
    assert "ratio" in output and "fft2" in output
    assert "from the second core" in output and "projected 10,000 trials" in output
    assert "the 2-worker study" in output and "a worker's trial (one FFT thread)" in output
    assert "example spec" in output and "mode purity" in output and "step-by-step reference" in output
    assert "targets in this run:" in output and "from the second core >= 1.8:" in output
    assert "does not grow with the grid" in output and "example spec" in output


@pytest.mark.slow
def test_worker_memory_prints_each_grid():
    output = _run("worker_memory.py", "--grids", "128", "--trials", "4")
    assert "peak memory of a study worker" in output and "grid   128" in output
    assert "fields above the worker as set up" in output and "held between trials" in output


@pytest.mark.slow
def test_tolerance_speed_prints_its_ratios():
    output = _run("tolerance_speed.py", "--trials", "64")
    assert "ratio 2 workers / 1" in output and "vectorised" in output


@pytest.mark.slow
def test_simulate_speed_prints_its_ratios():
    output = _run("simulate_speed.py", "--grid", "256", "--repeat", "1")
    assert "ratio to the FFT floor" in output
