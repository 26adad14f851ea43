"""Small layouts for the reliability tests (invented benches, paraxial unless they say so)."""

from __future__ import annotations

from pathlib import Path

import pytest

from benchcheck.plugin_manager import make_plugin_manager

#: A flat mirror tilted within ±1 mrad and a screen 500 mm behind it: a trial passes when
#: the chief ray lands within 0.3 mm, i.e. |tilt| <= 0.3 mrad (law of reflection; the
#: chief ray turns by twice the tilt; paraxial ABCDEF matrices, Siegman, Lasers (1986),
#: ch. 15). The lens adds a focal-length dof; paraxial only, so a trial takes about a
#: millisecond and a subprocess study of a few thousand trials runs in seconds.
MIRROR_BENCH = """format = 1
[bench]
title = "reliability bench"
wavelength = "1064 nm"
[units]
length = "mm"
angle = "mrad"
[source]
waist = "1 mm"
tolerance = {{ waist = "2 %", tilt_x = 0.05 }}
[[element]]
name = "L1"
type = "lens"
z = 50
focal_length = 400
tolerance = {{ focal_length = "{focal_tolerance}", z = 1 }}
[[element]]
name = "M1"
type = "mirror"
z = 100
tolerance = {{ tilt_x = 1, tilt_y = 1 }}
[[element]]
name = "screen"
type = "plane"
after = "M1"
gap = 500
[[spec]]
metric = "offset"
at = "screen"
max = "0.3 mm"
{extra_spec}
[tolerancing]
trials = {trials}
seed = {seed}
"""

#: A modulator bench for the wave-side checks: a vortex on a small panel imaged to a plane.
MODULATOR_BENCH = """format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "slm"
type = "modulator"
z = "100 mm"
pixel_pitch = "20 um"
pixels = [{columns}, {rows}]
hologram = {hologram}
[[element]]
name = "work"
type = "plane"
z = "300 mm"
{simulation}
"""


def write_mirror_bench(folder: Path, trials: int = 40, seed: int = 7, focal_tolerance: str = "1 %",
                       extra_spec: str = "", name: str = "bench.toml") -> Path:
    path = folder / name
    path.write_text(MIRROR_BENCH.format(trials=trials, seed=seed, focal_tolerance=focal_tolerance,
                                        extra_spec=extra_spec), encoding="utf-8")
    return path


def write_modulator_bench(folder: Path, hologram: str = '{ pattern = "vortex", charge = 1 }',
                          pixels: tuple[int, int] = (64, 64), simulation: str = "",
                          name: str = "slm.toml") -> Path:
    path = folder / name
    path.write_text(MODULATOR_BENCH.format(hologram=hologram, columns=pixels[0], rows=pixels[1],
                                           simulation=simulation), encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def plugin_manager():
    return make_plugin_manager()


@pytest.fixture
def run_cli():
    from tests.cli.conftest import Run

    return Run
