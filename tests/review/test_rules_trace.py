"""Review rules judged from the layout and its paraxial trace, each on a purpose-built bad layout."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special

from tests.review.conftest import bench_text, of_rule, serious

WAVELENGTH = 1.064e-6


def _w(w0: float, z: float, wavelength: float = WAVELENGTH) -> float:
    """Gaussian 1/e² radius z from its waist: w0 √(1 + (z/z_R)²), z_R = π w0²/λ (Kogelnik and Li, 1966)."""
    return w0 * math.hypot(1.0, z * wavelength / (math.pi * w0**2))


def _simple(elements: str, wavelength: str = "1064 nm", waist: str = "0.8 mm", power: str = "") -> str:
    power_line = f'power = "{power}"' if power else ""
    return f"""
format = 1
[bench]
wavelength = "{wavelength}"
{power_line}
[source]
waist = "{waist}"
{elements}
"""


def _one(report, rule):
    found = of_rule(report, rule)
    assert len(found) == 1, [f.to_dict() for f in report.findings]
    return found[0]


# -- clear apertures ------------------------------------------------------------------------------

@pytest.mark.parametrize("aperture, severity", [("2 mm", "warning"), ("1.2 mm", "error")])
def test_clear_aperture_under_pi_w(review_text, aperture, severity):
    text = _simple(f"""
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "500 mm"
clear_aperture = "{aperture}"
""")
    finding = _one(review_text(text), "clear_aperture")
    assert (finding.element, finding.severity) == ("L1", severity)
    w = _w(0.8e-3, 0.1)
    a = float(aperture.split()[0]) * 1e-3 / 2
    # Centred clipping loss exp(−2a²/w²) (Siegman, Lasers, 1986); the trace integrates the same
    # law, so agreement to 1e-9 (far below any sampling: there is none here).
    assert finding.numbers["blocked_share"] == pytest.approx(math.exp(-2 * a**2 / w**2), rel=1e-9)
    assert finding.numbers["needed_diameter_m"] == pytest.approx(math.pi * w, rel=1e-12)  # π w, common practice


def test_pi_w_rule_passes_99_percent_of_a_centred_gaussian():
    # Siegman (Lasers, 1986) via REFERENCES.md: T = 0.9928 at D = π w (4 figures: abs 5e-5).
    from benchcheck_plugins.review_apertures import GAUSSIAN_CLEAR_FACTOR
    from benchcheck_plugins.review_modulator import OVERFILL_LOSS

    assert 1 - math.exp(-2 * (GAUSSIAN_CLEAR_FACTOR / 2) ** 2) == pytest.approx(0.9928, abs=5e-5)
    assert 1 - OVERFILL_LOSS == pytest.approx(0.9928, abs=5e-5)


def test_clear_aperture_on_a_fold_mirror_sees_the_foreshortened_footprint(review_text):
    # At 60° incidence the footprint along the fold is w / cos 60° = 2 w: a 4 mm mirror is under π × 2w.
    text = _simple("""
[[element]]
name = "M1"
type = "mirror"
z = "100 mm"
incidence = "60 deg"
clear_aperture = "4 mm"
""")
    finding = _one(review_text(text), "clear_aperture")
    assert finding.numbers["w_m"] == pytest.approx(2 * _w(0.8e-3, 0.1), rel=1e-9)


# -- modulator ------------------------------------------------------------------------------------

@pytest.mark.parametrize("waist, severity", [("2 mm", "warning"), ("3 mm", "error")])
def test_modulator_overfilled(review_text, waist, severity):
    report = review_text(bench_text(waist=waist))
    finding = _one(report, "modulator_fill")
    assert (finding.element, finding.severity) == ("slm", severity)
    # Centred square panel of half-side a = 2.56 mm: passes erf(√2 a/w)² (separable Gaussian);
    # scipy.special.erf as the reference; the trace's own integral agrees to 1e-9.
    w = _w(float(waist.split()[0]) * 1e-3, 0.2)
    assert finding.numbers["blocked_share"] == pytest.approx(1 - special.erf(math.sqrt(2) * 2.56e-3 / w) ** 2, rel=1e-9)


def test_modulator_underfilled(review_text):
    report = review_text(bench_text(waist="0.6 mm"))
    finding = _one(report, "modulator_fill")
    assert (finding.element, finding.severity) == ("slm", "warning")
    # 2w over the 5.12 mm short side, below our 30 % rule of thumb.
    assert finding.numbers["fill_share"] == pytest.approx(2 * _w(0.6e-3, 0.2) / 5.12e-3, rel=1e-9)
    assert finding.numbers["fill_share"] < 0.30
    assert [f.rule for f in serious(report)] == ["modulator_fill"]


def _modulator(hologram: str, design: str = "") -> str:
    return _simple(f"""
[[element]]
name = "slm"
type = "modulator"
z = "200 mm"
pixel_pitch = "20 um"
pixels = [256, 256]
{design}
hologram = {hologram}
[[element]]
name = "work"
type = "plane"
z = "400 mm"
""")


def test_hologram_lens_term_aliasing(review_text):
    report = review_text(_modulator('{ pattern = "none", lens = "60 mm" }'))
    finding = _one(report, "hologram_aliasing")
    assert (finding.element, finding.severity) == ("slm", "warning")
    # Lens phase πr²/(λf) steps 2π p r/(λ f) per pixel at r = 2w (sampling theorem: > π aliases).
    r = 2 * _w(0.8e-3, 0.2)
    expected = 2 * math.pi * 20e-6 * r / (WAVELENGTH * 0.06)
    assert finding.numbers["lens_step_rad"] == pytest.approx(expected, rel=1e-9)
    assert expected > math.pi


def test_hologram_axicon_aliasing(review_text):
    finding = _one(review_text(_modulator('{ pattern = "axicon", cone_angle = "30 mrad" }')), "hologram_aliasing")
    # Axicon phase 2π r sin α/λ steps 2π p sin α/λ per pixel (McLeod, JOSA 44, 592, 1954 for the axicon).
    assert finding.numbers["axicon_step_rad"] == pytest.approx(2 * math.pi * 20e-6 * math.sin(0.03) / WAVELENGTH,
                                                               rel=1e-9)


def test_carrier_under_two_pixels_is_an_error(review_text):
    finding = _one(review_text(_modulator('{ pattern = "grating", period_px = 1.5 }')), "hologram_aliasing")
    assert (finding.severity, finding.numbers["period_px"]) == ("error", 1.5)


def test_phase_stroke_away_from_the_design_wavelength(review_text):
    report = review_text(_modulator('{ pattern = "grating", period_px = 8 }', 'design_wavelength = "1064 nm"')
                         .replace('wavelength = "1064 nm"\n', 'wavelength = "1030 nm"\n', 1))
    finding = _one(report, "phase_stroke")
    assert (finding.element, finding.severity) == ("slm", "warning")
    alpha = 1064 / 1030
    # Blaze of depth α·2π: order m gets sinc²(m − α) (standard grating theory); REFERENCES.md
    # gives η1 = 0.9964, η0 = 1.017e-3 for this case (4 figures: rel 5e-4).
    assert finding.numbers["depth_ratio"] == pytest.approx(alpha, rel=1e-12)
    assert finding.numbers["zero_order_share"] == pytest.approx((math.sin(math.pi * alpha) / (math.pi * alpha)) ** 2,
                                                                rel=1e-12)
    assert finding.numbers["zero_order_share"] == pytest.approx(1.017e-3, rel=5e-4)
    assert finding.numbers["first_order_share"] == pytest.approx(0.9964, rel=5e-5)


def test_no_phase_stroke_finding_at_the_design_wavelength(review_text):
    report = review_text(_modulator('{ pattern = "grating", period_px = 8 }', 'design_wavelength = "1064 nm"'))
    assert of_rule(report, "phase_stroke") == []


# -- flat top -------------------------------------------------------------------------------------

def _flat_top(size: str, waist: str = "0.8 mm") -> str:
    return _modulator(f'{{ pattern = "flat_top", shape = "round", size = "{size}", waist = "{waist}", '
                      f'focal_length = "200 mm" }}')


@pytest.mark.parametrize("size, severity", [("0.2 mm", "error"), ("1 mm", "warning")])
def test_flat_top_beta(review_text, size, severity):
    finding = _one(review_text(_flat_top(size)), "flat_top_beta")
    assert (finding.element, finding.severity) == ("slm", severity)
    y0 = float(size.split()[0]) * 1e-3 / 2
    # Romero and Dickey, JOSA A 13, 751 (1996): β = 2√(2π) r0 y0/(f λ); thresholds 4 and 32 from memory.
    beta = 2 * math.sqrt(2 * math.pi) * 0.8e-3 * y0 / (0.2 * WAVELENGTH)
    assert finding.numbers["beta"] == pytest.approx(beta, rel=1e-12)
    assert "from memory" in finding.basis


def test_flat_top_with_a_large_beta_passes(review_text):
    # β = 2√(2π)·0.8 mm·3 mm/(200 mm·1.064 µm) = 56.5 > 32 (Romero and Dickey 1996; threshold from memory);
    # its edge phase step 2π p y0/(λ f) = 1.77 rad stays under π.
    report = review_text(_flat_top("6 mm"))
    assert of_rule(report, "flat_top_beta") == []
    assert serious(report) == []


def test_flat_top_designed_for_another_waist(review_text):
    finding = _one(review_text(_flat_top("6 mm", waist="1 mm")), "flat_top_input_beam")
    w = _w(0.8e-3, 0.2)
    assert finding.numbers["mismatch"] == pytest.approx(w / 1e-3 - 1, rel=1e-9)


# -- paraxial validity ----------------------------------------------------------------------------

def test_a_fast_focus_leaves_the_paraxial_model(review_text):
    text = _simple("""
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "5 mm"
[[element]]
name = "work"
type = "plane"
z = "105 mm"
""", waist="1 mm")
    finding = _one(review_text(text), "paraxial_validity")
    assert (finding.element, finding.severity) == ("L1", "warning")
    # Beam NA λ M²/(π w0) of the new waist (Kogelnik and Li, 1966); for a nearly collimated input
    # w0 ≈ λ f/(π w) (Self, Appl. Opt. 22, 658, 1983), so NA ≈ w/f = 0.2 to within (f/z_R)² ~ 1e-6.
    assert finding.numbers["numerical_aperture"] == pytest.approx(1e-3 / 5e-3, rel=1e-3)


def test_a_steep_chief_ray_leaves_the_paraxial_model(review_text):
    text = _simple("""
[[element]]
name = "M1"
type = "mirror"
z = "100 mm"
tilt_y = "60 mrad"
[[element]]
name = "work"
type = "plane"
z = "150 mm"
""")
    finding = _one(review_text(text), "paraxial_validity")
    # A mirror tilted by α turns the reflected beam by 2α (law of reflection).
    assert (finding.element, finding.numbers["angle_rad"]) == ("M1", pytest.approx(0.12, rel=1e-12))


# -- mounts ---------------------------------------------------------------------------------------

def test_mounts_closer_than_their_thickness(review_text):
    mirror = '[[element]]\nname = "M1"\ntype = "mirror"\nafter = "slm"\ngap = "5 mm"\nclear_aperture = "25.4 mm"'
    report = review_text(bench_text(before_relay=mirror))
    finding = _one(report, "mount_spacing")
    assert (finding.element, finding.severity) == ("slm", "warning")
    assert "'M1'" in finding.message and "path-length" in finding.message
    # Default mount thickness 12.7 mm (common practice, from memory); half of each on either side.
    assert finding.numbers["gap_m"] == pytest.approx(5e-3, rel=1e-12)
    assert finding.numbers["needed_gap_m"] == pytest.approx(12.7e-3, rel=1e-12)
    assert [f.rule for f in serious(report)] == ["mount_spacing"]


def test_tolerance_tighter_than_the_mount_holds(review_text):
    report = review_text(bench_text(slm_tolerance='{ tilt_x = "1 mrad" }'))
    finding = _one(report, "mount_holds")
    assert (finding.element, finding.severity) == ("slm", "warning")
    assert finding.numbers == {"tilt_x_tolerance_rad": pytest.approx(1e-3), "tilt_x_mount_holds_rad": pytest.approx(5e-3)}
    assert [f.rule for f in serious(report)] == ["mount_holds"]


# -- damage threshold -----------------------------------------------------------------------------

@pytest.mark.parametrize("threshold, severity", [("1.5e5 W/m^2", "error"), ("3e5 W/m^2", "warning")])
def test_irradiance_against_the_damage_threshold(review_text, threshold, severity):
    report = review_text(bench_text(slm_extra=f'damage_threshold = "{threshold}"'))
    finding = _one(report, "damage_threshold")
    assert (finding.element, finding.severity) == ("slm", severity)
    # Peak irradiance of a Gaussian 2P/(π w²) (Siegman, Lasers, 1986), w at the modulator from
    # the ABCD law; the whole 0.2 W arrives (nothing clips before it).
    w = _w(0.8e-3, 0.2)
    assert finding.numbers["irradiance_w_per_m2"] == pytest.approx(2 * 0.2 / (np.pi * w**2), rel=1e-9)
    assert "laser safety officer" in finding.message


def test_damage_threshold_without_power_is_a_note(review_text):
    text = _simple("""
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "500 mm"
damage_threshold = "1e6 W/m^2"
""")
    finding = _one(review_text(text), "damage_threshold")
    assert finding.severity == "note" and "laser safety officer" in finding.message
