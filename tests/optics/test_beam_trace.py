"""The paraxial trace of whole layouts against published formulas.

Each layout is written inline so the expected value can be computed independently:
by Self's focusing formula, by the ABCD law written out in the test, or by the clipping
and plate formulas in ../shared/REFERENCES.md.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck.api import trace
from benchcheck.layout import parse_layout

WAVELENGTH = 1064e-9


def layout(elements: str, source: str = 'waist = "1 mm"', extra: str = "") -> object:
    text = f"""
format = 1
[bench]
wavelength = "1064 nm"
[source]
{source}
{elements}
{extra}
"""
    return parse_layout(text, "inline.toml")


def self_focus(w0, distance, focal_length, wavelength, m2=1.0):
    """S. A. Self, Appl. Opt. 22, 658 (1983): image distance and waist of a thin lens.

    Written out independently of benchcheck: s'' = f + (s - f) f² / ((s - f)² + zR²),
    w0'' = w0 f / sqrt((s - f)² + zR²), zR = π w0² / (M² λ).
    """
    rayleigh = math.pi * w0**2 / (m2 * wavelength)
    denominator = (distance - focal_length) ** 2 + rayleigh**2
    return (
        focal_length + (distance - focal_length) * focal_length**2 / denominator,
        w0 * focal_length / math.sqrt(denominator),
    )


@pytest.mark.parametrize("m2", [1.0, 1.3])
def test_lens_focus_matches_self_formula(m2):
    # Self (1983) worked case from REFERENCES.md: w0 = 1 mm, f = 200 mm, 500 mm from the waist.
    bench = layout(
        '[[element]]\nname = "L"\ntype = "lens"\nz = "500 mm"\nfocal_length = "200 mm"\n'
        '[[element]]\nname = "cam"\ntype = "camera"\nz = "800 mm"\npixel_pitch = "5 um"\npixels = 100\n',
        source=f'waist = "1 mm"\nm2 = {m2}',
    )
    result = trace(bench).plane("L")
    image_distance, new_waist = self_focus(1e-3, 0.5, 0.2, WAVELENGTH, m2)
    # Both are closed forms of the same law; 1e-9 relative is float rounding with margin.
    assert result.waist_z[0] - 0.5 == pytest.approx(image_distance, rel=1e-9)
    assert result.waist[0] == pytest.approx(new_waist, rel=1e-9)
    if m2 == 1.0:
        # REFERENCES.md: 201.36 mm and 67.39 µm (values rounded to the digits quoted).
        assert image_distance == pytest.approx(0.20136, abs=5e-6)
        assert new_waist == pytest.approx(67.39e-6, abs=5e-9)


def test_relay_images_with_magnification_and_inversion():
    # 4f relay: magnification -f2/f1 at the output plane (Goodman, Introduction to Fourier Optics, ch. 5).
    f1, f2 = 0.3, 0.15
    bench = layout(
        '[[element]]\nname = "R"\ntype = "relay"\nz = "100 mm"\nfocal_lengths = ["300 mm", "150 mm"]\n'
        '[[element]]\nname = "cam"\ntype = "camera"\nafter = "R"\ngap = 0\npixel_pitch = "5 um"\npixels = 100\n',
        source='waist = "1 mm"\nx = "0.4 mm"\ntilt_x = "0.1 mrad"',
    )
    result = trace(bench)
    cam = result.plane("cam")
    at_input_y = -1e-4 * 0.1  # the y slope is -tilt_x (right-handed), carried 100 mm
    # 1e-12 m: the magnification is exact in the matrices; float rounding only.
    assert cam.offset[0] == pytest.approx(-f2 / f1 * 0.4e-3, abs=1e-12)
    assert cam.offset[1] == pytest.approx(-f2 / f1 * at_input_y, abs=1e-12)
    assert cam.z == pytest.approx(0.1 + 2 * f1 + 2 * f2)
    # Beam size: ABCD law (Kogelnik and Li 1966) written out with the imaging matrix.
    q_input = complex(0.1, math.pi * 1e-3**2 / WAVELENGTH)
    a, b, c, d = -f2 / f1, 0.0, 0.0, -f1 / f2
    q_output = (a * q_input + b) / (c * q_input + d)
    w_expected = math.sqrt(-WAVELENGTH / (math.pi * (1 / q_output).imag))
    assert cam.w[0] == pytest.approx(w_expected, rel=1e-9)


def test_decentred_lens_deviates_by_decenter_over_f():
    # A lens decentred by d bends an axial ray by d/f towards its centre (Siegman, Lasers, ch. 15).
    bench = layout('[[element]]\nname = "L"\ntype = "lens"\nz = "100 mm"\nfocal_length = "250 mm"\n')
    nominal = trace(bench).plane("L").angle[0]
    moved = trace(bench, {"L.x": 0.2e-3}).plane("L").angle[0]
    # 1e-15 rad: a single multiplication in the matrix.
    assert moved - nominal == pytest.approx(0.2e-3 / 0.25, abs=1e-15)


def test_mirror_tilt_turns_beam_by_twice_the_tilt():
    # Law of reflection: a mirror turned by α turns the reflected beam by 2α.
    bench = layout('[[element]]\nname = "M"\ntype = "mirror"\nz = "100 mm"\nincidence = "45 deg"\n')
    result = trace(bench, {"M.tilt_y": 0.3e-3, "M.tilt_x": 0.1e-3}).plane("M")
    assert result.angle[0] == pytest.approx(0.6e-3, abs=1e-15)
    assert result.angle[1] == pytest.approx(-0.2e-3, abs=1e-15)


def test_centred_circular_aperture_passes_siegman_fraction():
    # T = 1 - exp(-2a²/w²) (Siegman, Lasers, 1986); a = w gives 0.8647.
    bench = layout('[[element]]\nname = "iris"\ntype = "aperture"\nz = 0\ndiameter = "2 mm"\n')
    result = trace(bench).plane("iris")
    assert result.transmission == pytest.approx(1 - math.exp(-2), rel=1e-12)


def test_transmission_is_cumulative_and_decentred():
    # Two apertures: the product of their passed shares; the second is decentred, so its
    # share is the non-central chi-square law (scipy.stats.ncx2), evaluated here directly.
    from scipy import stats

    bench = layout(
        '[[element]]\nname = "A1"\ntype = "aperture"\nz = 0\ndiameter = "3 mm"\n'
        '[[element]]\nname = "A2"\ntype = "aperture"\nz = "1 mm"\ndiameter = "2.4 mm"\ncenter = ["0.3 mm", 0]\n',
        extra="",
        source='waist = "1 mm"',
    )
    result = trace(bench)
    first = 1 - math.exp(-2 * 1.5**2)
    w = result.plane("A2").w[0]  # 1 mm of propagation changes w by ~1e-9 relative
    second = stats.ncx2.cdf((2 * 1.2e-3 / w) ** 2, 2, (2 * 0.3e-3 / w) ** 2)
    assert result.plane("A2").transmission == pytest.approx(first * second, rel=1e-9)


def test_tilted_plate_shifts_beam_laterally():
    # Δ = t sin θ [1 - cos θ / sqrt(n² - sin² θ)]: t = 3 mm, n = 1.5, 5° -> 87.53 µm (Snell's law).
    bench = layout('[[element]]\nname = "P"\ntype = "plate"\nz = "50 mm"\nthickness = "3 mm"\nindex = 1.5\ntilt_y = "5 deg"\n')
    result = trace(bench).plane("P")
    theta = math.radians(5)
    expected = 3e-3 * math.sin(theta) * (1 - math.cos(theta) / math.sqrt(1.5**2 - math.sin(theta) ** 2))
    assert result.offset[0] == pytest.approx(expected, rel=1e-9)
    assert expected == pytest.approx(87.53e-6, abs=0.01e-6)


def test_plate_moves_the_focus_by_t_times_one_minus_one_over_n():
    # A plate at normal incidence in a converging beam moves the focus by t(1 - 1/n) (common practice;
    # Smith, Modern Optical Engineering, from memory).
    lens = '[[element]]\nname = "L"\ntype = "lens"\nz = "10 mm"\nfocal_length = "100 mm"\n'
    plate = '[[element]]\nname = "P"\ntype = "plate"\nz = "50 mm"\nthickness = "6 mm"\nindex = 1.5\n'
    without = trace(layout(lens + '[[element]]\nname = "P"\ntype = "plane"\nz = "50 mm"\n'), None).plane("P")
    with_plate = trace(layout(lens + plate)).plane("P")
    shift = with_plate.waist_z[0] - without.waist_z[0]
    assert shift == pytest.approx(6e-3 * (1 - 1 / 1.5), rel=1e-9)


def test_moving_one_element_changes_both_gaps():
    # DESIGN.md section 4: perturbing L1.z moves L1 alone; compare with a layout written that way.
    base = ('[[element]]\nname = "L1"\ntype = "lens"\nz = "{z}"\nfocal_length = "100 mm"\n'
            '[[element]]\nname = "cam"\ntype = "plane"\nz = "400 mm"\n')
    perturbed = trace(layout(base.format(z="150 mm")), {"L1.z": 2e-3}).plane("cam")
    rewritten = trace(layout(base.format(z="152 mm"))).plane("cam")
    # Identical arithmetic up to the order of one addition.
    assert perturbed.w[0] == pytest.approx(rewritten.w[0], rel=1e-12)
    assert perturbed.waist_z[0] == pytest.approx(rewritten.waist_z[0], rel=1e-12)


def test_splitter_arms_share_the_power_and_follow_their_branch():
    bench = layout(
        '[[element]]\nname = "bs"\ntype = "splitter"\nz = "100 mm"\nratio = 0.1\narms = ["monitor"]\n'
        'incidence = "45 deg"\n'
        '[[element]]\nname = "mon"\ntype = "camera"\narm = "monitor"\nz = "200 mm"\npixel_pitch = "5 um"\npixels = 100\n'
        '[[element]]\nname = "work"\ntype = "plane"\nz = "300 mm"\n'
    )
    result = trace(bench)
    assert result.plane("mon").transmission == pytest.approx(0.1, rel=1e-12)
    assert result.plane("work").transmission == pytest.approx(0.9, rel=1e-12)
    assert result.plane("mon").arm == "monitor"
    # A splitter tilt turns the reflected arm by twice the tilt and leaves the thin transmitted beam.
    tilted = trace(bench, {"bs.tilt_y": 1e-4})
    assert tilted.plane("mon").angle[0] == pytest.approx(2e-4, abs=1e-15)
    assert tilted.plane("work").angle[0] == pytest.approx(0.0, abs=1e-15)


def test_tilted_lens_is_astigmatic_by_the_coddington_equations():
    # Coddington (REFERENCES.md): f = 200 mm, n = 1.5, tilt 5° -> f_t 197.977 mm, f_s 199.493 mm.
    # A collimated beam (large waist) focuses at f behind the lens: x is tangential for tilt_y.
    bench = layout(
        '[[element]]\nname = "L"\ntype = "lens"\nz = 0\nfocal_length = "200 mm"\ntilt_y = "5 deg"\n',
        source='waist = "20 mm"',
    )
    leaving = trace(bench).plane("L")
    # With z_R = 1.2 km the waist sits within 1e-7 relative of the focal point.
    assert leaving.waist_z[0] == pytest.approx(0.197977, abs=2e-6)
    assert leaving.waist_z[1] == pytest.approx(0.199493, abs=2e-6)


def test_trace_to_dict_follows_the_output_contract():
    bench = layout('[[element]]\nname = "M"\ntype = "mirror"\nz = "10 mm"\n')
    data = trace(bench).to_dict()
    keys = {"name", "arm", "z_m", "w_m", "radius_m", "waist_m", "waist_z_m", "offset_m", "angle_rad", "transmission"}
    assert [set(plane) for plane in data["planes"]] == [keys, keys]
    assert data["planes"][0]["radius_m"] == [None, None]  # flat at the waist
    assert np.isfinite(data["planes"][1]["w_m"]).all()
