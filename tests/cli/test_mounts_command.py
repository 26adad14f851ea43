"""End to end: `benchcheck mounts` on a small layout and on bad input."""

from __future__ import annotations

import json

from benchcheck.api import plan_mounts

FOLDS = """format = 1
[bench]
title = "two folds"
wavelength = "1064 nm"
[units]
length = "mm"
angle = "mrad"
[source]
waist = 1
[[element]]
name = "M1"
type = "mirror"
z = 100
incidence = "45 deg"
[[element]]
name = "M2"
type = "mirror"
z = 585
incidence = "45 deg"
[[element]]
name = "cam"
type = "camera"
z = 600
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
[[spec]]
metric = "offset"
at = "cam"
max = "0.5 mm"  # spec bounds take no [units] default: a bare number is SI
[tolerancing]
trials = 60
seed = 4
"""


def write(tmp_path, text: str = FOLDS):
    path = tmp_path / "folds.toml"
    path.write_text(text)
    return path


def test_json_equals_the_api_result(run_cli, tmp_path):
    path = write(tmp_path)
    result = run_cli(["mounts", str(path), "--json", "--trials", "40"])
    assert result.code == 0, result.output
    expected = json.loads(json.dumps(plan_mounts(path, trials=40).to_dict()))
    assert json.loads(result.output) == expected
    assert expected["trials"] == 40 and expected["seed"] == 4


def test_table_names_each_element_and_the_verified_yield(run_cli, tmp_path):
    result = run_cli(["mounts", str(write(tmp_path)), "--yield-target", "90 %"])
    assert result.code == 0, result.output
    for name in ("M1", "M2", "cam", "kinematic", "post"):
        assert name in result.output
    assert "verified yield" in result.output and "Wilson" in result.output and "90.0%" in result.output


def test_layout_mounts_only_without_classes_exits_2(run_cli, tmp_path):
    result = run_cli(["mounts", str(write(tmp_path)), "--layout-mounts-only"])
    assert result.code == 2
    assert "no mount classes" in result.output and "Traceback" not in result.output


def test_bad_arguments_exit_2(run_cli, tmp_path):
    assert run_cli(["mounts", str(tmp_path / "nowhere.toml")]).code == 2
    assert run_cli(["mounts", str(write(tmp_path)), "--trials", "0"]).code == 2
    assert run_cli(["mounts", str(write(tmp_path)), "--yield-target", "1.5"]).code == 2
