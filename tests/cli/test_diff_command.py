"""`benchcheck diff` end to end on the shipped layouts."""

from __future__ import annotations

import json


def test_a_layout_against_itself_has_no_changes(run_cli, shipped_layout):
    run = run_cli(["diff", str(shipped_layout), str(shipped_layout), "--json", "--paraxial-only"])
    assert run.code == 0
    data = json.loads(run.output)
    assert data["elements"] == {"added": [], "removed": [], "moved": [], "changed": []}
    assert data["source"] == [] and data["specs"] == {"added": [], "removed": [], "changed": []}
    assert data["trace"]["planes"] and all(row["a"] == row["b"] for row in data["trace"]["planes"])
    assert data["wave_simulated"] == [False, False]


def test_a_missing_layout_is_one_message_and_exit_2(run_cli, shipped_layout, tmp_path):
    run = run_cli(["diff", str(shipped_layout), str(tmp_path / "missing.toml")])
    assert run.code == 2 and "missing.toml" in run.output


def test_report_needs_somewhere_to_write(run_cli, shipped_layout):
    run = run_cli(["report", str(shipped_layout)])
    assert run.code == 2 and "--html" in run.output
