"""A bench with a known failure threshold, for tolerance-study tests.

A flat mirror at normal incidence tilted by α turns the reflected beam by 2α (law of
reflection), so a plane a distance d behind it sees the chief ray offset by 2·α·d
(paraxial ABCDEF ray matrices: Siegman, Lasers (1986), ch. 15). With the tilt uniform on
±L and a spec offset <= s, a trial passes exactly when |α| <= s / (2d): the pass fraction
is s / (2 d L). Here d = 500 mm, s = 0.3 mm, L = 1 mrad: threshold 0.3 mrad, yield 0.3.
"""

from __future__ import annotations

import pytest

from benchcheck.api import load_layout
from benchcheck.plugin_manager import make_plugin_manager

TILT_LIMIT = 1e-3  # rad
DISTANCE = 0.5  # m
# 0.3 is not a dyadic fraction, so Sobol points do not hit the pass interval exactly.
OFFSET_BOUND = 0.3e-3  # m
EXACT_YIELD = OFFSET_BOUND / (2 * DISTANCE * TILT_LIMIT)

TILTED_MIRROR = """format = 1
[bench]
title = "tilted mirror"
wavelength = "1064 nm"
[units]
length = "mm"
angle = "mrad"
[source]
waist = "1 mm"
{source_tolerance}
[[element]]
name = "M1"
type = "mirror"
z = 100
tolerance = {{ tilt_x = 1 }}
[[element]]
name = "screen"
type = "plane"
after = "M1"
gap = 500
[[spec]]
metric = "offset"
at = "screen"
max = "0.3 mm"
[tolerancing]
trials = {trials}
seed = {seed}
"""


def write_layout(folder, trials: int = 64, seed: int = 1, source_tolerance: str = "", name: str = "tilt.toml"):
    path = folder / name
    path.write_text(TILTED_MIRROR.format(trials=trials, seed=seed, source_tolerance=source_tolerance))
    return path


@pytest.fixture
def tilted_mirror(tmp_path):
    """Path of the tilted-mirror layout (64 trials, seed 1)."""
    return write_layout(tmp_path)


@pytest.fixture(scope="session")
def plugin_manager():
    return make_plugin_manager()


@pytest.fixture
def tilted_layout(tilted_mirror):
    return load_layout(tilted_mirror)
