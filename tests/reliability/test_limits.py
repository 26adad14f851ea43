"""Resource caps: refused before allocation, with the estimate and the option that raises the cap."""

from __future__ import annotations

import tracemalloc

import numpy as np
import pytest

from benchcheck.api import load_layout, simulate
from benchcheck.limits import (
    FIELD_ARRAYS_AT_PEAK,
    LimitError,
    Limits,
    check_trials,
    check_wave_grid,
    estimate_wave_memory,
    parse_size,
    use_limits,
)
from benchcheck.tolerance.study import run_study
from tests.reliability.conftest import write_mirror_bench, write_modulator_bench


@pytest.mark.parametrize("text, size", [("8GiB", 8 * 2**30), ("500 MB", 500 * 10**6), ("1.5GB", 1_500_000_000),
                                        ("2048", 2048), ("3 KiB", 3072)])
def test_memory_sizes_read_as_bytes(text, size):
    # IEC 80000-13 binary prefixes (Ki = 2^10, Gi = 2^30) and SI decimal ones (M = 10^6).
    assert parse_size(text) == size


@pytest.mark.parametrize("text", ["8 parsec", "-1GB", "GB", "", "0.1"])
def test_bad_memory_sizes_are_refused(text):
    with pytest.raises(ValueError):
        parse_size(text)


def test_memory_estimate_counts_field_sized_arrays():
    # complex64 is 8 bytes a sample, complex128 16 (IEEE 754 single and double pairs).
    assert estimate_wave_memory((1024, 1024), np.complex64) == FIELD_ARRAYS_AT_PEAK * 1024**2 * 8
    assert estimate_wave_memory((512, 512), np.complex128, expansion=3) == FIELD_ARRAYS_AT_PEAK * (3 * 512) ** 2 * 16


def test_grid_above_the_cap_names_estimate_and_option():
    with pytest.raises(LimitError) as info:
        check_wave_grid(8192, np.complex64, "slm", limits=Limits(max_grid=4096, max_memory=2**40))
    message = str(info.value)
    assert "8192 x 8192" in message and "--max-grid 8192" in message
    assert "estimated peak memory 16.0 GiB" in message  # 32 arrays x 8192² x 8 bytes
    assert check_wave_grid(4096, np.complex64, "slm", limits=Limits(max_grid=4096, max_memory=2**40)) == 4096


def test_memory_above_the_cap_names_option():
    with pytest.raises(LimitError) as info:
        check_wave_grid(2048, np.complex128, "slm", limits=Limits(max_memory=2**30))
    assert "--max-memory 2GiB" in str(info.value) and "above the cap of 1.0 GiB" in str(info.value)


def test_trials_above_the_cap():
    with pytest.raises(LimitError) as info:
        check_trials(2_000_000, Limits())
    assert "--max-trials 2000000" in str(info.value) and "estimated memory" in str(info.value)
    assert check_trials(1_000_000, Limits()) == 1_000_000


def test_simulation_refuses_before_allocating(tmp_path):
    # A 64-pixel panel with a [simulation] grid of 4096: refused under a cap of 1024
    # before any field exists, so the traced peak stays far below one 4096² field (128 MiB).
    layout = load_layout(write_modulator_bench(tmp_path, simulation="[simulation]\ngrid = 4096"))
    tracemalloc.start()
    try:
        with use_limits(Limits(max_grid=1024)), pytest.raises(LimitError, match="--max-grid 4096"):
            simulate(layout)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak < 4096**2 * 8 / 4


def test_study_refuses_too_many_trials_before_making_the_run_file(tmp_path, plugin_manager):
    layout = load_layout(write_mirror_bench(tmp_path))
    run_file = tmp_path / "run.jsonl"
    with use_limits(Limits(max_trials=10)), pytest.raises(LimitError, match="--max-trials 20"):
        run_study(layout, plugin_manager, trials=20, run_file=run_file)
    assert not run_file.exists()


def test_cli_options_raise_and_lower_the_caps(run_cli, tmp_path):
    path = write_modulator_bench(tmp_path, simulation="[simulation]\ngrid = 128")
    refused = run_cli(["--max-grid", "64", "simulate", str(path), "--json"])
    assert refused.code == 2 and "--max-grid 128" in refused.output
    refused = run_cli(["--max-memory", "1MiB", "simulate", str(path), "--json"])
    assert refused.code == 2 and "--max-memory" in refused.output and "estimated peak memory" in refused.output
    assert run_cli(["--max-grid", "128", "simulate", str(path), "--json"]).code == 0
    trials = run_cli(["--max-trials", "5", "tolerance", str(write_mirror_bench(tmp_path)), "--json"])
    assert trials.code == 2 and "--max-trials 40" in trials.output
    assert run_cli(["--max-memory", "8 parsec", "simulate", str(path)]).code == 2
