"""Review rules that read the wave simulation (Fourier plane, iris, cameras, regions, blocked
power), each on a variant of the sound test bench, and the sound bench itself."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special

from tests.review.conftest import bench_text, of_rule, serious

WAVELENGTH = 1.064e-6
# Fourier-plane spot of the relay: λ f/(π w0) with w0 the source waist, exactly, at the back
# focal plane (ABCD law, Kogelnik and Li, Appl. Opt. 5, 1550, 1966; Goodman ch. 5 for λf/(πw)).
SPOT = WAVELENGTH * 0.2 / (math.pi * 0.8e-3)
FIRST_ORDER = 1.33e-3  # λ f/(N p) = 1.064 µm × 200 mm/(8 × 20 µm) (grating equation, Goodman ch. 5)


def _iris(diameter_mm: float, center_mm: float = 1.33) -> str:
    return f'{{ diameter = "{diameter_mm} mm", center = ["{center_mm} mm", "0 mm"] }}'


def _one(report, rule):
    found = of_rule(report, rule)
    assert len(found) == 1, [f.to_dict() for f in report.findings]
    return found[0]


def test_sound_bench_raises_no_warning_or_error(review_text):
    report = review_text(bench_text())
    assert serious(report) == []
    # The only note: the light the iris dumps (zero order and pixel orders), with the caution.
    assert [(f.rule, f.element) for f in report.findings] == [("blocked_power", "relay.fourier")]
    assert "laser safety officer" in report.findings[0].message


# -- Fourier plane --------------------------------------------------------------------------------

def test_zero_order_inside_the_iris(review_text):
    report = review_text(bench_text(iris=_iris(3.2)))
    finding = _one(report, "fourier_orders")
    assert (finding.element, finding.severity) == ("relay.fourier", "error")
    assert finding.numbers["spot_radius_m"] == pytest.approx(SPOT, rel=1e-9)  # ABCD, no sampling involved
    assert finding.numbers["order_separation_m"] == pytest.approx(FIRST_ORDER, rel=1e-9)
    assert finding.numbers["zero_order_outside_m"] == pytest.approx(FIRST_ORDER - 1.6e-3, abs=1e-12)
    assert [f.rule for f in serious(report)] == ["fourier_orders"]


def test_zero_order_grazing_the_iris_edge(review_text):
    # Edge 1.33 − 1.25 = 0.08 mm outside: less than 2 spot radii (0.169 mm).
    report = review_text(bench_text(iris=_iris(2.5)))
    finding = _one(report, "fourier_orders")
    assert (finding.severity, finding.numbers["zero_order_outside_m"]) == ("warning", pytest.approx(0.08e-3, rel=1e-6))
    assert [f.rule for f in serious(report)] == ["fourier_orders"]


def test_first_order_off_the_iris_centre(review_text):
    # 0.3 mm off-centre on a 0.8 mm radius: more than a quarter radius, but 2 spot radii still inside.
    report = review_text(bench_text(iris=_iris(1.6, 1.63)))
    finding = _one(report, "fourier_orders")
    assert (finding.severity, finding.numbers["first_order_decentre_m"]) == ("warning", pytest.approx(0.3e-3, rel=1e-6))


def test_first_order_not_passing_whole(review_text):
    report = review_text(bench_text(iris=_iris(0.3)))
    finding = _one(report, "fourier_orders")
    assert finding.severity == "error"
    assert finding.numbers["iris_radius_m"] < 2 * SPOT  # 0.15 mm against 2 × 0.0847 mm


def test_iris_cutting_the_shaped_spectrum(review_text):
    # The vortex's ring-shaped spectrum is wider than the Gaussian spot: a 0.2 mm radius iris
    # passes the Gaussian's 2 spot radii (0.169 mm) yet cuts the ring.
    report = review_text(bench_text(iris=_iris(0.4)))
    finding = _one(report, "iris_spectrum_cut")
    assert (finding.element, finding.severity) == ("relay.fourier", "warning")
    assert finding.numbers["intended_cut_share"] > 0.01
    assert "laser safety officer" in finding.message
    assert [f.rule for f in serious(report)] == ["iris_spectrum_cut"]


def test_iris_cut_of_a_gaussian_order_matches_centred_clipping(review_text):
    # A plain carrier makes the intended order a Gaussian spot of radius λf/(π w0) at the iris,
    # so the cut share is exp(−2a²/w²) (Siegman, Lasers, 1986) = 0.0614 for a = 0.1 mm.
    # Tolerance 6 %: the simulated share converges with the Fourier-plane pitch λ f/(N p) —
    # +27 % at grid 256 (41.6 µm), +3.4 % at 512 (20.8 µm), +0.9 % at 1024 — against a 0.1 mm radius.
    report = review_text(bench_text(grid=512, iris=_iris(0.2),
                                    hologram='{ pattern = "none", carrier = { period_px = 8 } }'))
    finding = _one(report, "iris_spectrum_cut")
    assert finding.numbers["intended_cut_share"] == pytest.approx(math.exp(-2 * 0.1e-3**2 / SPOT**2), rel=0.06)


# -- cameras and regions --------------------------------------------------------------------------

def test_camera_with_too_few_pixels_across_the_beam(review_text):
    report = review_text(bench_text(cam_pitch="300 um", cam_pixels="[40, 40]"))
    finding = _one(report, "camera_sampling")
    assert (finding.element, finding.severity) == ("cam", "warning")
    # The 1:1 relay images the modulator plane: D4σ = 2w there (ISO 11146-1, TEM00), w from the
    # ABCD law; 2 % for the iris's and the panel's small cut of the spectrum (they widen the image).
    w = 0.8e-3 * math.hypot(1, 0.2 * WAVELENGTH / (math.pi * 0.8e-3**2))
    assert finding.numbers["d4sigma_x_m"] == pytest.approx(2 * w, rel=0.02)
    narrower = min(finding.numbers["d4sigma_x_m"], finding.numbers["d4sigma_y_m"])
    assert finding.numbers["pixels_across"] == pytest.approx(narrower / 300e-6, rel=1e-9)
    assert finding.numbers["pixels_across"] < 10


def test_sensor_smaller_than_three_beam_widths(review_text):
    report = review_text(bench_text(cam_pixels="[400, 400]"))  # 4 mm against 3 × 1.6 mm
    finding = _one(report, "camera_sensor_area")
    assert (finding.element, finding.severity) == ("cam", "note")
    assert finding.numbers["sensor_width_m"] < 3 * finding.numbers["d4sigma_x_m"]  # ISO 11146-1 area
    assert serious(report) == []


def test_beam_wider_than_the_sensor(review_text):
    report = review_text(bench_text(cam_pixels="[150, 150]"))  # 1.5 mm sensor, 1.6 mm beam
    finding = _one(report, "shaped_beam_size")
    assert (finding.element, finding.severity) == ("cam", "warning")
    # Share of a centred Gaussian outside a square of half-side a: 1 − erf(√2 a/w)² (scipy.special);
    # 2 % for the iris's and panel's cut of the spectrum and the mask's one-sample edge ramp.
    w = 0.8e-3 * math.hypot(1, 0.2 * WAVELENGTH / (math.pi * 0.8e-3**2))
    assert finding.numbers["outside_share"] == pytest.approx(1 - special.erf(math.sqrt(2) * 0.75e-3 / w) ** 2, rel=0.02)
    assert of_rule(report, "camera_sensor_area") == []  # not reported twice


def test_beam_wider_than_a_work_plane_region(review_text):
    text = """
format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "0.8 mm"
[[element]]
name = "work"
type = "plane"
z = "100 mm"
size = ["1 mm", "1 mm"]
[simulation]
grid = 256
"""
    finding = _one(review_text(text), "shaped_beam_size")
    assert finding.element == "work"
    # TEM00: D4σ = 2w exactly (ISO 11146-1); the ±3w window leaves erfc(3√2) ≈ 2e-9 out, so 1e-4 is ample.
    w = 0.8e-3 * math.hypot(1, 0.1 * WAVELENGTH / (math.pi * 0.8e-3**2))
    assert finding.numbers["d4sigma_x_m"] == pytest.approx(2 * w, rel=1e-4)
    # Outside a 1 mm square: 1 − erf(√2 a/w)², a = 0.5 mm (scipy.special); the mask's edge ramp
    # over one sample (pitch 6w/256 ≈ 19 µm) moves it by well under 1 %.
    assert finding.numbers["outside_share"] == pytest.approx(1 - special.erf(math.sqrt(2) * 0.5e-3 / w) ** 2, rel=0.01)


def test_low_bit_depth_is_a_note(review_text):
    report = review_text(bench_text(bit_depth=6))
    finding = _one(report, "camera_bit_depth")
    assert (finding.element, finding.severity, finding.numbers["bit_depth"]) == ("cam", "note", 6)
    assert serious(report) == []


def test_saturated_camera_at_a_fixed_exposure(review_text):
    # Peak irradiance ~2P/(π w²) ≈ 2e5 W/m² at 1 count per W/m² is far above 4095 counts.
    report = review_text(bench_text(exposure="1"))
    finding = _one(report, "camera_saturation")
    assert (finding.element, finding.severity) == ("cam", "warning")
    assert 0 < finding.numbers["saturated_share"] < 1
    assert [f.rule for f in serious(report)] == ["camera_saturation"]


# -- blocked power --------------------------------------------------------------------------------

def test_blocked_power_above_the_class_3b_limit(review_text):
    # A blazed grating of 8 phase steps sends sinc²(1/8) = 0.9496 into the first order (Swanson,
    # MIT Lincoln Laboratory TR-854, 1989); the iris passes that order alone, so 5.04 % of 20 W
    # (1.0 W) is dumped there. 1 % for the finite panel, whose edges spread a little of the
    # first order beyond the iris, and for sampling.
    report = review_text(bench_text(power="20 W", hologram='{ pattern = "grating", period_px = 8 }'))
    finding = _one(report, "blocked_power")
    assert (finding.element, finding.severity) == ("relay.fourier", "warning")
    expected = 1 - np.sinc(1 / 8) ** 2
    assert finding.numbers["blocked_share_of_source"] == pytest.approx(expected, rel=0.01)
    assert finding.numbers["blocked_power_w"] == pytest.approx(20 * finding.numbers["blocked_share_of_source"])
    assert "laser safety officer" in finding.message
