"""`benchcheck review LAYOUT`: the JSON contract, --fail-on exit codes, the table and the caution."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from benchcheck.safety import LASER_SAFETY_CAUTION
from tests.cli.conftest import Run
from tests.review.conftest import bench_text

SHIPPED = Path(__file__).resolve().parents[2] / "layouts"


def test_json_contract(write_layout):
    path = write_layout(bench_text(iris='{ diameter = "2.5 mm", center = ["1.33 mm", "0 mm"] }'))
    run = Run(["review", str(path), "--json"])
    assert run.code == 0
    data = json.loads(run.output)
    assert set(data) == {"findings", "laser_safety"}
    assert data["laser_safety"] == LASER_SAFETY_CAUTION
    order = {"error": 0, "warning": 1, "note": 2}
    keys = [(order[f["severity"]], f["element"]) for f in data["findings"]]
    assert keys == sorted(keys)  # by severity, then element
    for finding in data["findings"]:
        assert set(finding) == {"rule", "severity", "element", "message", "basis", "numbers"}
        assert all(isinstance(value, float) for value in finding["numbers"].values())
    assert ("fourier_orders", "warning", "relay.fourier") in {
        (f["rule"], f["severity"], f["element"]) for f in data["findings"]}


@pytest.mark.parametrize("changes, fail_on, code", [
    ({}, "warning", 0),  # sound: notes only
    ({"iris": '{ diameter = "2.5 mm", center = ["1.33 mm", "0 mm"] }'}, "error", 0),  # a warning only
    ({"iris": '{ diameter = "2.5 mm", center = ["1.33 mm", "0 mm"] }'}, "warning", 1),
    ({"iris": '{ diameter = "3.2 mm", center = ["1.33 mm", "0 mm"] }'}, "error", 1),  # zero order passes
])
def test_fail_on_exit_codes(write_layout, changes, fail_on, code):
    path = write_layout(bench_text(**changes))
    assert Run(["review", str(path), "--fail-on", fail_on]).code == code
    assert Run(["review", str(path), "--json", "--fail-on", fail_on]).code == code
    assert Run(["review", str(path)]).code == 0  # without --fail-on findings do not change the exit code


def test_table_shows_findings_and_the_safety_caution(write_layout):
    run = Run(["review", str(write_layout(bench_text(bit_depth=6)))])
    assert run.code == 0
    for heading in ("severity", "element", "rule", "message", "basis"):
        assert heading in run.output
    assert "camera_bit_depth" in run.output and "blocked_power" in run.output
    assert "laser safety officer" in " ".join(run.output.split())


def test_bad_input_is_exit_code_2(tmp_path):
    run = Run(["review", str(tmp_path / "missing.toml")])
    assert run.code == 2 and "error" in run.output


def test_shipped_layouts_review_without_rule_failures():
    for path in sorted(SHIPPED.glob("*.toml")):
        run = Run(["review", str(path), "--json"])
        assert run.code == 0, path
        failures = [f for f in json.loads(run.output)["findings"] if "failed:" in f["message"]]
        assert failures == [], (path, failures)
