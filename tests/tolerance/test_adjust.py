"""Adjustments re-optimised per trial: camera focus and a lens centring, against Gaussian-beam
focusing (Self, Appl. Opt. 22, 658 (1983)) and the ABCDEF ray matrices (Siegman, Lasers, 1986)."""

from __future__ import annotations

import math

import pytest

from benchcheck.errors import LayoutError
from benchcheck.evaluate.trial import Evaluator
from benchcheck.layout.loader import parse_layout
from benchcheck.metrics import MetricRegistry
from benchcheck.tolerance.adjust import Adjuster, adjustment_ranges

WAVELENGTH = 1064e-9  # m
WAIST = 1e-3  # m, at the source plane z = 0
LENS_Z = 0.5  # m
FOCAL_LENGTH = 0.2  # m


def self_focus(focal_length: float, distance: float = LENS_Z) -> tuple[float, float]:
    """(waist distance after the lens, waist radius) of a focused Gaussian beam.

    Self, Appl. Opt. 22, 658 (1983), eq. 9 and 10 (M² = 1):
    1/(s + zR²/(s − f)) + 1/s'' = 1/f, w0'' = w0 / sqrt((1 − s/f)² + (zR/f)²).
    """
    rayleigh = math.pi * WAIST**2 / WAVELENGTH
    image = 1.0 / (1.0 / focal_length - 1.0 / (distance + rayleigh**2 / (distance - focal_length)))
    radius = WAIST / math.sqrt((1 - distance / focal_length) ** 2 + (rayleigh / focal_length) ** 2)
    return image, radius


NOMINAL_IMAGE, NOMINAL_RADIUS = self_focus(FOCAL_LENGTH)


def bench(adjust: str, spec_extra: str = "") -> str:
    return f"""format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "L1"
type = "lens"
z = "500 mm"
focal_length = "200 mm"
[[element]]
name = "cam"
type = "camera"
z = "{(LENS_Z + NOMINAL_IMAGE) * 1e3!r} mm"
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
tolerance = {{ z = "2 mm" }}
[[spec]]
metric = "beam_radius"
at = "cam"
max = "{1.1 * NOMINAL_RADIUS * 1e3!r} mm"
{spec_extra}
[tolerancing]
adjust = {adjust}
"""


@pytest.fixture(scope="module")
def registry():
    from benchcheck.plugin_manager import make_plugin_manager

    return MetricRegistry.from_plugin_manager(make_plugin_manager())


def test_worked_example_sits_at_the_focus(registry):
    # Self (1983) worked example in REFERENCES.md: w0 = 1 mm, λ = 1064 nm, f = 200 mm at
    # 500 mm: waist 201.36 mm after the lens, radius 67.39 µm (values quoted to 4-5 digits).
    assert NOMINAL_IMAGE == pytest.approx(0.20136, abs=0.01e-3)
    assert NOMINAL_RADIUS == pytest.approx(67.39e-6, abs=0.01e-6)
    layout = parse_layout(bench('["cam.z"]'))
    result = Evaluator(layout, registry).evaluate({})
    # The trace is the exact ABCD law; 1e-6 relative is float rounding in the TOML position.
    assert result.metrics["cam.beam_radius"] == pytest.approx(NOMINAL_RADIUS, rel=1e-6)


def test_focus_adjustment_recovers_a_defocus(registry):
    layout = parse_layout(bench('["cam.z"]'))
    evaluator = Evaluator(layout, registry)
    perturbation = {"L1.focal_length": 8e-3}  # a lens 4 % long
    # Without the adjustment the camera is ~8 mm (0.6 zR) out of focus: w ≈ 1.16 w0 > 1.1 w0.
    assert not evaluator.evaluate(perturbation).passed
    result, adjusted = Adjuster(evaluator, layout).evaluate(perturbation)
    assert result.passed
    image, radius = self_focus(FOCAL_LENGTH + 8e-3)
    # The best focus is the new waist (Self 1983). The optimiser stops within 1e-5 of the
    # ±20 mm range (0.2 µm); 5 µm is 0.04 % of the 13 mm Rayleigh range of the focus.
    assert adjusted["cam.z"] == pytest.approx(image - NOMINAL_IMAGE, abs=5e-6)
    # At 5 µm from the waist w differs from w0 by (5 µm / zR)²/2 ~ 1e-7: 1e-5 relative.
    assert result.metrics["cam.beam_radius"] == pytest.approx(radius, rel=1e-5)


def test_two_adjustments_recentre_a_tilted_beam(registry):
    layout = parse_layout(bench('["cam.z", "L1.x"]', '[[spec]]\nmetric = "offset"\nat = "cam"\nmax = "5 um"'))
    evaluator = Evaluator(layout, registry)
    tilt = 1e-4  # rad, source tilted about y: moves the beam in x
    perturbation = {"source.tilt_y": tilt}
    # At the focus the offset is f·θ = 20 µm (ray matrices): the 5 µm spec fails.
    assert not evaluator.evaluate(perturbation).passed
    result, adjusted = Adjuster(evaluator, layout).evaluate(perturbation)
    assert result.passed
    # Chief ray through a lens decentred by D (ABCDEF matrices, Siegman, Lasers, 1986,
    # ch. 15): at the lens x = s θ, after it slope θ − (x − D)/f; zero offset a distance d
    # later needs D = x − f (x + d θ) / d. A decentre does not move the focus: d = s''.
    height = LENS_Z * tilt
    distance = NOMINAL_IMAGE + adjusted["cam.z"]
    expected = height - FOCAL_LENGTH * (height + distance * tilt) / distance
    # 2 %: Powell's line searches stop within 1e-5 of the ±5 mm range (50 nm, 0.25 % of
    # the 20 µm correction), with room for early termination on the kinked slack.
    assert adjusted["L1.x"] == pytest.approx(expected, rel=0.02)
    # The lens decentre leaves the focus where it was: the camera stays within 0.1 mm
    # (under 1 % of the 13 mm Rayleigh range).
    assert abs(adjusted["cam.z"]) < 1e-4


def test_ranges_from_the_layout_or_our_default(registry):
    # Our own defaults (not physics): ±10 x the tolerance, else ±5 mm / ±5 mrad.
    layout = parse_layout(bench('["cam.z", "L1.x", "L1.tilt_y"]'))
    assert adjustment_ranges(layout) == pytest.approx({"cam.z": 20e-3, "L1.x": 5e-3, "L1.tilt_y": 5e-3})
    assert any("own default" in note for note in Adjuster(Evaluator(layout, registry), layout).notes)
    given = parse_layout(bench('{ "cam.z" = "15 mm", L1.tilt_y = "2 mrad" }'))
    assert given.tolerancing.adjust == ("cam.z", "L1.tilt_y")
    assert adjustment_ranges(given) == pytest.approx({"cam.z": 15e-3, "L1.tilt_y": 2e-3})
    with pytest.raises(LayoutError, match="source.m2"):
        adjustment_ranges(parse_layout(bench('["source.m2"]')))


def test_no_adjustments_evaluate_as_the_evaluator(registry):
    layout = parse_layout(bench("[]"))
    evaluator = Evaluator(layout, registry)
    result, adjusted = Adjuster(evaluator, layout).evaluate({"L1.x": 1e-4})
    assert adjusted == {}
    assert result.metrics == evaluator.evaluate({"L1.x": 1e-4}).metrics
