"""End to end: `benchcheck trace` on the shipped layouts and on broken ones."""

from __future__ import annotations

import json

from benchcheck.api import load_layout, trace
from benchcheck.safety import LASER_SAFETY_CAUTION


def test_trace_table_lists_every_plane(run_cli, shipped_layout):
    result = run_cli(["trace", str(shipped_layout)])
    assert result.code == 0, result.output
    layout = load_layout(shipped_layout)
    for element in layout.elements:
        assert element.name in result.output
    # Rule: transmission and clipping are shown with the laser-safety caution.
    assert "laser safety officer" in result.output


def test_trace_json_equals_the_api_result(run_cli, shipped_layout):
    result = run_cli(["trace", str(shipped_layout), "--json"])
    assert result.code == 0, result.output
    data = json.loads(result.output)
    expected = json.loads(json.dumps(trace(shipped_layout).to_dict()).replace("Infinity", "null"))
    assert data["planes"] == expected["planes"]
    assert data["laser_safety"] == LASER_SAFETY_CAUTION


def test_bad_layout_exits_2_with_one_message(run_cli, tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text('format = 1\n[bench]\nwavelength = "1064 nm"\n[source]\nwaist = "1 mm"\n'
                    '[[element]]\nname = "L1"\ntype = "lens"\nz = "10 mm"\nfocal_length = "10 kg"\n')
    result = run_cli(["trace", str(path)])
    assert result.code == 2
    assert "Traceback" not in result.output
    assert f"{path}:10" in result.output
    assert "element 'L1' (#1)" in result.output and "field 'focal_length'" in result.output


def test_missing_file_exits_2(run_cli, tmp_path):
    result = run_cli(["trace", str(tmp_path / "nowhere.toml")])
    assert result.code == 2
    assert "no such file" in result.output


def test_unknown_option_exits_2(run_cli, shipped_layout):
    assert run_cli(["trace", str(shipped_layout), "--no-such-option"]).code == 2
