"""Smoke runs of the benchmark scripts with tiny sizes: they run and print their ratios.

Nothing here is about time (timings on a shared machine are not a test): each script must
exit 0 and print the lines it is for.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
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
    assert "grid   128 hand-written three-stage trial:" in output


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


def test_the_hand_written_trial_keeps_the_power_its_iris_passes():
    """The yardstick trial of ``trial_speed.py`` does a real trial's work: with its iris opened
    past the window, each unimodular chirp and each unnormalised 2-D DFT keep Σ|u|² (times N²
    a transform: Parseval's relation for the DFT, Oppenheim and Schafer, Discrete-Time Signal
    Processing, ch. 8; from memory), so all the power reaches the camera; and the
    nominal trial's field is its target (mode purity 1, Cauchy–Schwarz equality)."""
    sys.path.insert(0, str(BENCHMARKS))
    try:
        from three_stage_trial import ThreeStageTrial
    finally:
        sys.path.remove(str(BENCHMARKS))
    trial = ThreeStageTrial(64, workers=1)
    # float32 fields: sums over 64² samples after three transforms round to ~1e-6 relative
    assert trial.run(np.zeros(10))[1] == pytest.approx(1.0, rel=1e-5)
    closed_down = trial.run(trial.draws(1)[0])[0]
    trial.iris_radius = 1.0  # m: the whole Fourier plane
    assert trial.run(trial.draws(1)[0])[0] == pytest.approx(1.0, rel=1e-5)
    assert closed_down < 0.999  # the iris as drawn does cut the vortex's spectrum
