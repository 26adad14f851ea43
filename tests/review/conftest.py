"""Layouts for the review tests: one sound bench and variants with one thing wrong each.

The sound bench: a 0.8 mm Gaussian at 1064 nm on a 256 x 256 modulator of 20 µm pixels
(5.12 mm side, ±3.2 w), a blazed carrier of 8 pixels, a 1:1 4f relay (f = 200 mm) with an
iris on the first order, and a camera in the image plane. Small grids ([simulation] grid =
256) keep each simulation well under a second.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from benchcheck.api import load_layout, review
from benchcheck.plugin_manager import make_plugin_manager

SOUND = dict(
    power="0.2 W",
    wavelength="1064 nm",
    waist="0.8 mm",
    design_wavelength="1064 nm",
    hologram='{ pattern = "vortex", charge = 1, carrier = { period_px = 8, angle = "0 deg" } }',
    slm_extra="",
    slm_tolerance='{ tilt_x = "5 mrad" }',
    before_relay="",
    relay_aperture="25.4 mm",
    # First order in the Fourier plane: λ f / (N p) = 1.064 µm × 200 mm / (8 × 20 µm) = 1.33 mm.
    iris='{ diameter = "1.6 mm", center = ["1.33 mm", "0 mm"] }',
    cam_pitch="10 um",
    cam_pixels="[800, 800]",
    bit_depth=12,
    exposure="auto",
    grid=256,
)

TEMPLATE = """
format = 1

[bench]
title = "review test bench"
wavelength = "{wavelength}"
power = "{power}"

[source]
waist = "{waist}"

[mounts.post]
rank = 0
z = "0.5 mm"
x = "0.2 mm"
y = "0.2 mm"
tilt = "5 mrad"

[[element]]
name = "slm"
type = "modulator"
z = "200 mm"
pixel_pitch = "20 um"
pixels = [256, 256]
design_wavelength = "{design_wavelength}"
hologram = {hologram}
mount = "post"
tolerance = {slm_tolerance}
{slm_extra}

{before_relay}

[[element]]
name = "relay"
type = "relay"
after = "slm"
gap = "0 mm"
focal_lengths = ["200 mm", "200 mm"]
clear_aperture = "{relay_aperture}"
iris = {iris}
mount = "post"

[[element]]
name = "cam"
type = "camera"
after = "relay"
gap = "0 mm"
pixel_pitch = "{cam_pitch}"
pixels = {cam_pixels}
bit_depth = {bit_depth}
exposure = "{exposure}"

[simulation]
grid = {grid}
"""


def bench_text(**changes) -> str:
    """The sound bench's TOML with some of its fields changed."""
    unknown = set(changes) - set(SOUND)
    assert not unknown, f"not a field of the test bench: {unknown}"
    return TEMPLATE.format(**{**SOUND, **changes})


@pytest.fixture(scope="session")
def plugin_manager():
    return make_plugin_manager()


@pytest.fixture
def write_layout(tmp_path):
    """Write TOML text to a layout file and return its path."""
    def write(text: str, name: str = "bench.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return write


@pytest.fixture
def review_text(write_layout, plugin_manager):
    """Review TOML text with the installed plugins; returns the ReviewReport."""
    def run(text: str):
        return review(load_layout(write_layout(text), plugin_manager), plugin_manager)

    return run


def of_rule(report, rule: str) -> list:
    """The findings of one rule."""
    return [finding for finding in report.findings if finding.rule == rule]


def serious(report) -> list:
    """Warnings and errors."""
    return [finding for finding in report.findings if finding.severity in ("warning", "error")]
