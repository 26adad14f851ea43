"""Tests of benchcheck/tolerance/study.py (and workers.py): yield against a known threshold,
Sobol against pseudo-random, determinism, workers, interruption and resume.

The bench (conftest.py): a flat mirror tilted by α, uniform on ±1 mrad, turns the beam by
2α; 500 mm on, the spec offset <= 0.3 mm passes exactly when |α| <= 0.3 mrad, so the
exact yield is 0.3 (law of reflection; ABCDEF matrices, Siegman, Lasers (1986), ch. 15).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.tolerance.runfile import RunFileError, read_run_file
from benchcheck.tolerance.study import StudyInterrupted, run_study

from tests.tolerance.conftest import DISTANCE, EXACT_YIELD, OFFSET_BOUND, write_layout


def test_single_trial_offset_is_twice_tilt_times_distance(tilted_layout, plugin_manager):
    # Law of reflection, paraxial: offset = 2 α d. Exact up to double rounding.
    result = run_study(tilted_layout, plugin_manager, trials=5)
    for record in result.records:
        tilt = record.perturbation["M1.tilt_x"]
        assert record.metrics["screen.offset"] == pytest.approx(2 * abs(tilt) * DISTANCE, rel=1e-12)
        assert record.passed == (2 * abs(tilt) * DISTANCE <= OFFSET_BOUND)


def test_monte_carlo_yield_agrees_with_the_exact_yield(tilted_layout, plugin_manager):
    # The exact yield must lie inside the 95 % Wilson interval of the Monte Carlo estimate
    # (Wilson, J. Am. Stat. Assoc. 22, 209 (1927)); 400 trials give a half-width of ~0.04.
    data = run_study(tilted_layout, plugin_manager, trials=400, seed=5).to_dict()
    low, high = data["yield_ci95"]
    assert low <= EXACT_YIELD <= high
    assert data["valid_trials"] == 400 and data["faults"]["count"] == 0


def test_sobol_error_is_smaller_than_pseudo_random_error(tilted_layout, plugin_manager):
    # Fair comparison: the same bench, the same number of trials, the same six seeds and the
    # same exact answer; both estimators are unbiased (a scrambled Sobol point is uniform,
    # Owen, 1995), so the mean absolute error over seeds compares their spread alone. For an
    # interval in one dimension Sobol's error falls like 1/N, pseudo-random like N^(-1/2):
    # at N = 128, ~0.003 against ~0.03 (Niederreiter, Random Number Generation and
    # Quasi-Monte Carlo Methods, SIAM (1992), ch. 3).
    trials, seeds = 128, range(6)
    errors = {}
    for sampler in ("random", "sobol"):
        yields = [run_study(tilted_layout, plugin_manager, trials=trials, seed=seed, sampler=sampler).yield_fraction
                  for seed in seeds]
        errors[sampler] = float(np.mean(np.abs(np.array(yields) - EXACT_YIELD)))
    assert errors["sobol"] < errors["random"]
    assert errors["sobol"] <= 2.0 / trials  # a 1-D interval: at most ~1/N per end point


def test_same_seed_same_summary_bit_for_bit(tilted_layout, plugin_manager):
    first = run_study(tilted_layout, plugin_manager, trials=50, seed=7).to_dict()
    again = run_study(tilted_layout, plugin_manager, trials=50, seed=7).to_dict()
    other = run_study(tilted_layout, plugin_manager, trials=50, seed=8).to_dict()
    assert json.dumps(first) == json.dumps(again)
    assert first["metrics"] != other["metrics"]


@pytest.mark.slow
def test_two_workers_give_the_result_of_one(tilted_layout, plugin_manager):
    # Worker start-up (a fresh interpreter importing benchcheck) is most of this test's time.
    # Sobol blocks drawn anywhere equal the whole sequence (test_samplers.py), so the
    # pseudo-random sampler is the case to check here.
    one = run_study(tilted_layout, plugin_manager, trials=60, workers=1)
    two = run_study(tilted_layout, plugin_manager, trials=60, workers=2)
    assert json.dumps(one.to_dict()) == json.dumps(two.to_dict())
    assert one.records == two.records


def _stop_after(count: int):
    def progress(completed: int, total: int) -> None:
        if completed >= count:
            raise KeyboardInterrupt

    return progress


@pytest.mark.parametrize("sampler", ["random", "sobol"])
def test_interrupted_then_resumed_equals_uninterrupted(tilted_layout, plugin_manager, tmp_path, sampler):
    whole = run_study(tilted_layout, plugin_manager, trials=40, sampler=sampler).to_dict()
    run_file = tmp_path / "run.jsonl"
    with pytest.raises(StudyInterrupted) as stopped:
        run_study(tilted_layout, plugin_manager, trials=40, sampler=sampler, run_file=run_file,
                  progress=_stop_after(13))
    assert stopped.value.completed == 13 and stopped.value.exit_code == 130
    assert sorted(read_run_file(run_file).records) == list(range(13))
    resumed = run_study(tilted_layout, plugin_manager, sampler=sampler, run_file=run_file, resume=True)
    assert resumed.resumed_trials == 13
    assert json.dumps(resumed.to_dict()) == json.dumps(whole)


def test_resume_after_a_torn_last_line(tilted_layout, plugin_manager, tmp_path):
    whole = run_study(tilted_layout, plugin_manager, trials=30).to_dict()
    run_file = tmp_path / "run.jsonl"
    run_study(tilted_layout, plugin_manager, trials=30, run_file=run_file)
    text = run_file.read_bytes()
    cut = text.index(b"\n", len(text) // 2) + 25  # 25 bytes into a trial line
    run_file.write_bytes(text[:cut])
    resumed = run_study(tilted_layout, plugin_manager, run_file=run_file, resume=True)
    assert any("torn" in note for note in resumed.notes)
    assert resumed.to_dict() | {"notes": []} == whole | {"notes": []}
    assert len(read_run_file(run_file).records) == 30


def test_resume_refuses_a_changed_layout_or_seed(tilted_mirror, plugin_manager, tmp_path):
    run_file = tmp_path / "run.jsonl"
    run_study(load_layout(tilted_mirror), plugin_manager, trials=10, run_file=run_file)
    with pytest.raises(RunFileError, match="seed is 9"):
        run_study(load_layout(tilted_mirror), plugin_manager, seed=9, run_file=run_file, resume=True)
    tilted_mirror.write_text(tilted_mirror.read_text().replace('gap = 500', 'gap = 501'))
    with pytest.raises(RunFileError, match="layout file changed"):
        run_study(load_layout(tilted_mirror), plugin_manager, run_file=run_file, resume=True)


def test_existing_run_file_needs_force(tilted_layout, plugin_manager, tmp_path):
    run_file = tmp_path / "run.jsonl"
    run_file.write_text("someone's notes\n")
    with pytest.raises(RunFileError, match="--force"):
        run_study(tilted_layout, plugin_manager, trials=5, run_file=run_file)
    assert run_file.read_text() == "someone's notes\n"
    run_study(tilted_layout, plugin_manager, trials=5, run_file=run_file, force=True)
    assert len(read_run_file(run_file).records) == 5


def test_numerical_faults_are_counted_apart(tmp_path, plugin_manager):
    # A source waist of 1 mm ± 2 mm: a draw at or below -1 mm makes the waist non-positive,
    # which the Gaussian beam cannot have (Kogelnik and Li, Appl. Opt. 5, 1550 (1966)):
    # exactly those trials must be faulty, and the yield counts only the others.
    path = write_layout(tmp_path, source_tolerance='tolerance = { waist = "2 mm" }', name="waist.toml")
    result = run_study(load_layout(path), plugin_manager, trials=60)
    expected_faulty = [r.index for r in result.records if 1e-3 + r.perturbation["source.waist"] <= 0]
    assert [r.index for r in result.records if r.faults] == expected_faulty and expected_faulty
    data = result.to_dict()
    assert data["faults"]["count"] == len(expected_faulty)
    assert data["valid_trials"] == 60 - len(expected_faulty)
    assert data["yield"] == data["passed_trials"] / data["valid_trials"]
    assert "positive" in data["faults"]["reasons"][0]["reason"]
