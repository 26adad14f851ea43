"""Phase maps named by a layout: inside the layout's folder (or an allowed one), no pickle,
header checked before the data are read."""

from __future__ import annotations

import os

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.errors import LayoutError
from benchcheck.evaluate.modulator_plane import load_phase_map
from benchcheck.limits import Limits
from tests.reliability.conftest import write_modulator_bench

PIXELS = (48, 32)


def _bench(folder, path_text: str):
    path = write_modulator_bench(folder, hologram=f'{{ pattern = "file", path = "{path_text}" }}', pixels=PIXELS,
                                 simulation="[simulation]\ngrid = 64")
    layout = load_layout(path)
    return path, layout, layout.element("slm")


def _ramp() -> np.ndarray:
    # A linear phase ramp of 2π across the panel: any real-valued map will do.
    return np.tile(np.linspace(0, 2 * np.pi, PIXELS[0], endpoint=False), (PIXELS[1], 1))


def test_a_map_beside_the_layout_loads(tmp_path):
    np.save(tmp_path / "map.npy", _ramp())
    _, layout, slm = _bench(tmp_path, "map.npy")
    assert np.array_equal(load_phase_map("map.npy", layout, slm), _ramp())


@pytest.mark.parametrize("path_text", ["../outside/map.npy", "OUTSIDE_ABSOLUTE"])
def test_a_map_outside_the_folder_needs_allow_path(tmp_path, path_text):
    outside = tmp_path / "outside"
    outside.mkdir()
    np.save(outside / "map.npy", _ramp())
    bench = tmp_path / "bench"
    bench.mkdir()
    path_text = str(outside / "map.npy") if path_text == "OUTSIDE_ABSOLUTE" else path_text
    _, layout, slm = _bench(bench, path_text)
    with pytest.raises(LayoutError) as info:
        load_phase_map(path_text, layout, slm, Limits())
    assert "outside the layout's folder" in info.value.message and info.value.field == "hologram.path"
    assert f"--allow-path {outside}" in str(info.value)
    loaded = load_phase_map(path_text, layout, slm, Limits().allowing([outside]))
    assert loaded.shape == (PIXELS[1], PIXELS[0])


def test_a_link_out_of_the_folder_is_refused(tmp_path):
    outside = tmp_path / "outside"
    outside.mkdir()
    np.save(outside / "map.npy", _ramp())
    bench = tmp_path / "bench"
    bench.mkdir()
    os.symlink(outside / "map.npy", bench / "map.npy")
    _, layout, slm = _bench(bench, "map.npy")
    with pytest.raises(LayoutError, match="outside the layout's folder"):
        load_phase_map("map.npy", layout, slm, Limits())


def test_a_pickled_map_is_refused_from_its_header(tmp_path):
    # An object array is stored as a pickle; reading it could run code, so the header's
    # dtype alone must refuse it.
    np.save(tmp_path / "map.npy", np.array([{"a": 1}] * 4, dtype=object), allow_pickle=True)
    _, layout, slm = _bench(tmp_path, "map.npy")
    with pytest.raises(LayoutError, match="not real numbers"):
        load_phase_map("map.npy", layout, slm)


def test_a_complex_map_is_refused(tmp_path):
    np.save(tmp_path / "map.npy", _ramp().astype(complex))
    _, layout, slm = _bench(tmp_path, "map.npy")
    with pytest.raises(LayoutError, match="complex128, not real numbers"):
        load_phase_map("map.npy", layout, slm)


def test_an_oversized_map_is_refused_before_its_data_are_read(tmp_path):
    # Only the header of a 100000 x 100000 float64 map (80 GB) is written: the header
    # check must refuse it, since reading the data would fail differently (file too short).
    path = tmp_path / "map.npy"
    with path.open("wb") as stream:
        np.lib.format.write_array_header_1_0(stream, {"descr": "<f8", "fortran_order": False,
                                                      "shape": (100_000, 100_000)})
    _, layout, slm = _bench(tmp_path, "map.npy")
    with pytest.raises(LayoutError, match=r"more values than the modulator's 48 x 32 pixels"):
        load_phase_map("map.npy", layout, slm)


def test_a_file_that_is_not_npy_is_refused(tmp_path):
    (tmp_path / "map.npy").write_text("not an array")
    _, layout, slm = _bench(tmp_path, "map.npy")
    with pytest.raises(LayoutError, match="as a .npy file"):
        load_phase_map("map.npy", layout, slm)


def test_allow_path_reaches_the_simulation_from_the_command_line(run_cli, tmp_path):
    outside = tmp_path / "maps"
    outside.mkdir()
    np.save(outside / "map.npy", _ramp())
    bench = tmp_path / "bench"
    bench.mkdir()
    path, _, _ = _bench(bench, "../maps/map.npy")
    refused = run_cli(["simulate", str(path), "--json"])
    assert refused.code == 2 and "--allow-path" in refused.output
    assert run_cli(["--allow-path", str(outside), "simulate", str(path), "--json"]).code == 0
