"""`benchcheck diff`: each change found, and the side-by-side numbers equal each layout's own trace."""

from __future__ import annotations

import json
import math

import pytest

from benchcheck import api
from tests.cli.conftest import Run

# Values compared here come from the same double-precision trace; 1e-12 relative leaves room
# only for the last bits of a sum of gaps.
SAME_NUMBER = 1e-12


def _trace_row(trace_result, name: str) -> dict:
    data = trace_result.plane(name).to_dict()
    return {key: data[key] for key in ("z_m", "w_m", "waist_m", "waist_z_m", "transmission", "offset_m")}


def test_each_change_is_found(layout_pair, plugin_manager):
    first, second = layout_pair
    result = api.diff(first, second, plugin_manager=plugin_manager)
    changes = result.changes
    assert changes.added == ("W1",)
    assert changes.removed == ("M2",)
    moved = {move.name: (move.z_a, move.z_b) for move in changes.moved}
    # M1 moved 10 mm downstream; the pick-off keeps its path position (120 + 150 + 100 = 130 + 240 mm).
    assert moved["M1"] == pytest.approx((0.47, 0.48), rel=SAME_NUMBER)
    assert "pickoff" not in moved and "E2" not in moved
    focal = [change for change in changes.changed if (change.owner, change.field) == ("E2", "focal_length")]
    assert len(focal) == 1 and focal[0].a == pytest.approx(0.2) and focal[0].b == pytest.approx(0.21)
    assert not changes.source and not changes.specs_changed


def test_side_by_side_trace_equals_each_layouts_trace(layout_pair, plugin_manager):
    first, second = layout_pair
    result = api.diff(first, second, plugin_manager=plugin_manager)
    trace_a = api.trace(first, plugin_manager=plugin_manager)
    trace_b = api.trace(second, plugin_manager=plugin_manager)
    names = [row["name"] for row in result.trace["planes"]]
    assert names == [plane.name for plane in trace_a.planes if plane.name != "M2"]
    assert result.trace["only_a"] == ["M2"] and result.trace["only_b"] == ["W1"]
    for row in result.trace["planes"]:
        assert row["a"] == _trace_row(trace_a, row["name"])
        assert row["b"] == _trace_row(trace_b, row["name"])


def test_new_focal_length_moves_the_waist_as_the_gaussian_lens_law_says(layout_pair, plugin_manager):
    """B's waist after E2 (f = 210 mm) from the diff against Self's lens law for Gaussian beams,
    applied to the beam leaving W1: s'' = 1 / (1/f - 1/(s + z_R²/(s - f))) and
    w0'' = w0 / sqrt((1 - s/f)² + (z_R/f)²) (Self, Appl. Opt. 22, 658 (1983))."""
    first, second = layout_pair
    result = api.diff(first, second, plugin_manager=plugin_manager)
    layout_b = api.load_layout(second, plugin_manager)
    incoming = api.trace(layout_b, plugin_manager=plugin_manager).plane("W1")
    row = next(row["b"] for row in result.trace["planes"] if row["name"] == "E2")
    focal = 0.21
    for axis in (0, 1):
        waist, waist_z = incoming.waist[axis], incoming.waist_z[axis]
        rayleigh = math.pi * waist**2 / (layout_b.source.m2[axis] * layout_b.wavelength)
        s = row["z_m"] - waist_z
        image_distance = 1.0 / (1.0 / focal - 1.0 / (s + rayleigh**2 / (s - focal)))
        new_waist = waist / math.sqrt((1.0 - s / focal) ** 2 + (rayleigh / focal) ** 2)
        # Closed form against the ABCD law in double precision: agreement to 1e-9 relative
        # (the far-field distances here are a few metres, rounding is ~1e-15 of that).
        assert row["waist_z_m"][axis] == pytest.approx(row["z_m"] + image_distance, rel=1e-9)
        assert row["waist_m"][axis] == pytest.approx(new_waist, rel=1e-9)


def test_cli_json_matches_api_and_shows_display_units(layout_pair, plugin_manager):
    first, second = layout_pair
    run = Run(["diff", str(first), str(second), "--json"])
    assert run.code == 0
    data = json.loads(run.output)
    expected = api.diff(first, second, plugin_manager=plugin_manager).to_dict()
    assert data["elements"]["added"] == expected["elements"]["added"] == ["W1"]
    assert data["trace"] == expected["trace"]
    assert data["metrics"] == expected["metrics"]
    assert "laser_safety" in data
    table = Run(["diff", str(first), str(second), "--paraxial-only"])
    assert table.code == 0
    # The layout's [units] say mm: the focal length change reads in mm.
    assert "200 mm" in table.output and "210 mm" in table.output
    assert "Laser safety" in table.output


def test_tolerance_yields_equal_each_layouts_study(layout_pair, plugin_manager):
    first, second = layout_pair
    result = api.diff(first, second, tolerance=True, trials=6, wave=False, plugin_manager=plugin_manager)
    for name, path in (("a", first), ("b", second)):
        study = api.tolerance(path, trials=6, plugin_manager=plugin_manager).to_dict()
        summary = result.tolerance[name]
        assert summary["yield"] == study["yield"]
        assert summary["yield_ci95"] == study["yield_ci95"]
        assert summary["fails_first"] == study["dofs"][:len(summary["fails_first"])]
        margins = [row["margin"] for row in summary["fails_first"] if row["margin"] is not None]
        assert margins == sorted(margins)
