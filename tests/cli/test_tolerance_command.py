"""End to end: `benchcheck tolerance` (benchcheck/cli/tolerance_command.py) through main(argv)."""

from __future__ import annotations

import json

import pytest

import benchcheck.cli.tolerance_command as tolerance_command
from benchcheck.api import tolerance
from benchcheck.safety import LASER_SAFETY_CAUTION
from benchcheck.tolerance.runfile import read_run_file
from benchcheck.tolerance.study import StopRequested

from tests.tolerance.conftest import EXACT_YIELD, write_layout

CONTRACT_KEYS = {"trials", "seed", "yield", "yield_ci95", "fails_first", "dofs", "metrics"}


@pytest.fixture
def layout_path(tmp_path):
    return write_layout(tmp_path, trials=80, seed=2)


def test_json_follows_the_contract_and_equals_the_api(run_cli, layout_path):
    result = run_cli(["tolerance", str(layout_path), "--json"])
    assert result.code == 0, result.output
    data = json.loads(result.output)
    assert CONTRACT_KEYS <= set(data)  # DESIGN.md section 6
    assert {"spec_failure_share", "ranking", "faults", "adjustments"} <= set(data)
    assert data == json.loads(json.dumps(tolerance(layout_path).to_dict()))
    assert data["trials"] == 80 and data["seed"] == 2
    assert set(data["fails_first"]) == {"dof", "tolerance", "threshold", "margin", "spec"}
    assert set(data["metrics"]["screen.offset"]) == {"mean", "std", "p05", "p50", "p95"}
    assert data["laser_safety"] == LASER_SAFETY_CAUTION


def test_summary_shows_yield_fails_first_and_the_safety_caution(run_cli, layout_path):
    result = run_cli(["tolerance", str(layout_path), "--trials", "40", "--sampler", "sobol"])
    assert result.code == 0, result.output
    assert "Wilson 95 % interval" in result.output
    assert "fails first: M1.tilt_x" in result.output
    assert "laser safety officer" in result.output


def test_fail_under_sets_the_exit_code(run_cli, layout_path):
    # The exact yield (tests/tolerance/conftest.py) is far below 0.9 and far above 0.05;
    # 80 trials put the estimate within ~0.1 of it.
    assert 0.05 + 0.1 < EXACT_YIELD < 0.9 - 0.1
    assert run_cli(["tolerance", str(layout_path), "--json", "--fail-under", "0.9"]).code == 1
    assert run_cli(["tolerance", str(layout_path), "--json", "--fail-under", "5%"]).code == 0


def test_list_dofs_in_layout_units(run_cli, layout_path):
    result = run_cli(["tolerance", str(layout_path), "--list-dofs"])
    assert result.code == 0
    assert "M1.tilt_x" in result.output and "mrad" in result.output and "uniform" in result.output


def test_existing_run_file_is_kept_without_force(run_cli, layout_path, tmp_path):
    run_file = tmp_path / "run.jsonl"
    run_file.write_text("notes\n")
    result = run_cli(["tolerance", str(layout_path), "--out", str(run_file), "--json"])
    assert result.code == 2 and "--force" in result.output and "Traceback" not in result.output
    assert run_file.read_text() == "notes\n"
    assert run_cli(["tolerance", str(layout_path), "--out", str(run_file), "--json", "--force"]).code == 0
    assert len(read_run_file(run_file).records) == 80


def test_resume_refuses_another_seed(run_cli, layout_path, tmp_path):
    run_file = tmp_path / "run.jsonl"
    assert run_cli(["tolerance", str(layout_path), "--trials", "10", "--out", str(run_file), "--json"]).code == 0
    result = run_cli(["tolerance", str(layout_path), "--seed", "5", "--out", str(run_file), "--resume"])
    assert result.code == 2 and "cannot resume" in result.output
    assert run_cli(["tolerance", str(layout_path), "--resume"]).code == 2


@pytest.mark.parametrize("stop, code", [(KeyboardInterrupt, 130), (lambda: StopRequested(143), 143)])
def test_interrupt_keeps_trials_and_resume_finishes_the_same_study(run_cli, layout_path, tmp_path, monkeypatch,
                                                                    stop, code):
    run_file = tmp_path / "run.jsonl"

    def stopping(*args, **kwargs):
        def progress(completed, total):
            if completed >= 7:
                raise stop()

        return tolerance(*args, **kwargs | {"progress": progress})

    monkeypatch.setattr(tolerance_command, "tolerance", stopping)
    result = run_cli(["tolerance", str(layout_path), "--out", str(run_file), "--json"])
    assert result.code == code
    assert "--resume" in result.output and "stopped after 7 of 80" in result.output
    monkeypatch.undo()
    resumed = run_cli(["tolerance", str(layout_path), "--out", str(run_file), "--resume", "--json"])
    whole = run_cli(["tolerance", str(layout_path), "--json"])
    assert resumed.code == 0 and json.loads(resumed.output) == json.loads(whole.output)


@pytest.mark.slow
def test_shipped_layout_runs(run_cli, shipped_layout):
    result = run_cli(["tolerance", str(shipped_layout), "--trials", "8", "--json"])
    assert result.code == 0, result.output
    data = json.loads(result.output)
    assert data["trials"] == 8 and data["valid_trials"] + data["faults"]["count"] == 8
