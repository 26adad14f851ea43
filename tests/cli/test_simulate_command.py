"""End to end: `benchcheck simulate` on the shipped layouts."""

from __future__ import annotations

import json

import pytest


@pytest.mark.slow
def test_simulate_json_on_shipped_layouts(run_cli, shipped_layout):
    result = run_cli(["simulate", str(shipped_layout), "--json"])
    assert result.code == 0, result.output
    data = json.loads(result.output)
    assert data["planes"], "at least one wave plane"
    for plane in data["planes"]:
        # Power is a share of the source power: energy conservation says at most 1
        # (1e-6: single-precision sums over a million samples).
        assert 0 <= plane["power"] <= 1 + 1e-6
    assert all(spec["pass"] in (True, False) for spec in data["specs"])
    assert "laser safety officer" in data["laser_safety"]


def test_simulate_table_and_save_never_overwrites(run_cli, tmp_path):
    layout = tmp_path / "small.toml"
    layout.write_text('format = 1\n[bench]\nwavelength = "633 nm"\npower = "1 mW"\n[source]\nwaist = "0.5 mm"\n'
                      '[[element]]\nname = "iris"\ntype = "aperture"\nz = "10 mm"\ndiameter = "0.8 mm"\n'
                      '[[element]]\nname = "cam"\ntype = "camera"\nz = "50 mm"\npixel_pitch = "5 um"\npixels = 256\n'
                      '[simulation]\ngrid = 256\n')
    first = run_cli(["simulate", str(layout), "--save", str(tmp_path / "out")])
    assert first.code == 0, first.output
    assert (tmp_path / "out" / "cam.field.npy").exists() and (tmp_path / "out" / "cam.frame.npy").exists()
    assert "iris: blocks" in first.output and "laser safety officer" in first.output
    again = run_cli(["simulate", str(layout), "--save", str(tmp_path / "out")])
    assert again.code == 2 and "--force" in again.output
    assert run_cli(["simulate", str(layout), "--save", str(tmp_path / "out"), "--force"]).code == 0
