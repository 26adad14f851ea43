"""The wave simulation of whole layouts against published results.

Layouts are written inline so each expected value is computed independently in the test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck.api import simulate, trace
from benchcheck.layout import parse_layout
from benchcheck.wave.moments import beam_moments

WAVELENGTH = 1064e-9


def bench(elements: str, source: str = 'waist = "1 mm"', simulation: str = "") -> object:
    return parse_layout(f"""
format = 1
[bench]
wavelength = "1064 nm"
[source]
{source}
{elements}
{simulation}
""", "inline.toml")


def second_moment_radius(field, axis=(0.0, 0.0)) -> float:
    """Radius from the second moments: w = 2σ per axis for a round beam (ISO 11146-1)."""
    moments = beam_moments(field)
    return 2 * math.sqrt((moments.variance_x + moments.variance_y) / 2)


def test_gaussian_widths_follow_the_abcd_law_through_lenses_and_apertures():
    # D4σ = 2w for a TEM00 beam (ISO 11146-1); w from the ABCD law (Kogelnik and Li 1966) by
    # the paraxial trace. An aperture makes the wave start there; a large one clips nothing.
    layout = bench(
        '[[element]]\nname = "A"\ntype = "aperture"\nz = "50 mm"\ndiameter = "20 mm"\n'
        '[[element]]\nname = "L"\ntype = "lens"\nz = "300 mm"\nfocal_length = "200 mm"\n'
        '[[element]]\nname = "near"\ntype = "plane"\nz = "480 mm"\n'
        '[[element]]\nname = "far"\ntype = "plane"\nz = "700 mm"\n',
        simulation="[simulation]\ngrid = 512\nprecision = \"double\"",
    )
    report = simulate(layout)
    traced = trace(layout)
    for plane in ("near", "far"):
        field = report.simulation.planes[plane].field
        widths = beam_moments(field).widths
        # 0.5 %: the bound; a 512-sample window holding ±3 w loses < 1e-8 of the power.
        assert widths[0] == pytest.approx(2 * traced.plane(plane).w[0], rel=5e-3)
        assert widths[1] == pytest.approx(2 * traced.plane(plane).w[1], rel=5e-3)


def test_relay_images_an_offset_beam_inverted_and_scaled():
    # 4f relay: magnification -f2/f1 (Goodman, Introduction to Fourier Optics, ch. 5).
    layout = bench(
        '[[element]]\nname = "A"\ntype = "aperture"\nz = "0 mm"\ndiameter = "30 mm"\n'
        '[[element]]\nname = "R"\ntype = "relay"\nz = "100 mm"\nfocal_lengths = ["200 mm", "100 mm"]\n'
        '[[element]]\nname = "img"\ntype = "plane"\nafter = "R"\ngap = 0\n',
        source='waist = "1 mm"\nx = "1.5 mm"',
        simulation="[simulation]\ngrid = 512\nprecision = \"double\"",
    )
    field = simulate(layout).simulation.planes["img"].field
    moments = beam_moments(field)
    # Centroid within 1 % of the image offset: the grid pitch is ~0.1 w and the centroid of a
    # well-sampled Gaussian is exact to far better than that.
    assert moments.centroid_x == pytest.approx(-0.5 * 1.5e-3, rel=1e-2)
    assert moments.widths[0] == pytest.approx(2 * 0.5e-3 * _abcd_radius_ratio(0.1), rel=5e-3)


def _abcd_radius_ratio(distance: float) -> float:
    """w(z)/w0 of a 1 mm waist after `distance` (Kogelnik and Li 1966): the relay images the
    input plane, 100 mm after the waist, so the image keeps that plane's size, scaled."""
    rayleigh = math.pi * 1e-3**2 / WAVELENGTH
    return math.sqrt(1 + (distance / rayleigh) ** 2)


@pytest.mark.parametrize("levels", [2, 4, 8])
def test_blazed_grating_first_order_efficiency_through_an_iris(levels):
    # N-level blaze, one step per pixel, fill factor 1: first order sinc²(1/N)
    # (Swanson, MIT Lincoln Laboratory Technical Report 854, 1989): 0.4053, 0.8106, 0.9496.
    f1 = 0.2
    pitch = 8e-6
    order_position = WAVELENGTH * f1 / (levels * pitch)
    layout = bench(
        f'[[element]]\nname = "slm"\ntype = "modulator"\nz = "50 mm"\npixel_pitch = "8 um"\npixels = [512, 512]\n'
        f'phase_levels = {levels}\nhologram = {{ pattern = "grating", period_px = {levels} }}\n'
        f'[[element]]\nname = "R"\ntype = "relay"\nafter = "slm"\ngap = 0\nfocal_lengths = ["200 mm", "200 mm"]\n'
        f'iris = {{ diameter = "{order_position * 0.9 * 1e3:.6f} mm", center = ["{order_position * 1e3:.6f} mm", 0] }}\n'
        f'[[element]]\nname = "img"\ntype = "plane"\nafter = "R"\ngap = 0\n',
        source='waist = "0.6 mm"',
        simulation="[simulation]\ngrid = 512",
    )
    report = simulate(layout)
    efficiency = report.simulation.planes["img"].field.power / report.simulation.incident_power
    expected = np.sinc(1 / levels) ** 2
    # 0.5 % absolute (the bound). The iris (0.9 of the order spacing) passes the
    # whole first-order spot (radius λf/(πw) ≈ 0.11 mm, far inside) and no other order.
    assert efficiency == pytest.approx(expected, abs=5e-3)


def test_lg_mode_made_on_the_modulator_has_the_lg_second_moment_radius():
    # LG(p, l) second-moment radius w sqrt(2p + |l| + 1) (Phillips and Andrews, Appl. Opt. 22,
    # 643, 1983), made with a complex-amplitude encoding on a carrier (the hologram divides by
    # the incident beam), filtered by the iris, imaged 1:1 by the relay onto the plane.
    waist = 0.4e-3
    f1 = 0.2
    carrier = WAVELENGTH * f1 / (8 * 8e-6)
    layout = bench(
        f'[[element]]\nname = "slm"\ntype = "modulator"\nz = "50 mm"\npixel_pitch = "8 um"\npixels = [512, 512]\n'
        f'hologram = {{ pattern = "lg", p = 1, l = 2, waist = "0.4 mm", encoding = "complex", '
        f'carrier = {{ period_px = 8 }}, compensate_input = true }}\n'
        f'[[element]]\nname = "R"\ntype = "relay"\nafter = "slm"\ngap = 0\nfocal_lengths = ["200 mm", "200 mm"]\n'
        f'iris = {{ diameter = "{carrier * 1e3:.6f} mm", center = ["{carrier * 1e3:.6f} mm", 0] }}\n'
        f'[[element]]\nname = "img"\ntype = "plane"\nafter = "R"\ngap = 0\n',
        source='waist = "1.2 mm"',
        simulation="[simulation]\ngrid = 512",
    )
    report = simulate(layout)
    result = report.simulation.planes["img"]
    moments = beam_moments(result.field)
    radius = 2 * math.sqrt((moments.variance_x + moments.variance_y) / 2)
    # 3 %: the encoded mode carries a small halo from the encoding and the iris cuts the
    # spectrum's far wings; both move second moments by a few percent at most.
    assert radius == pytest.approx(waist * math.sqrt(2 * 1 + 2 + 1), rel=3e-2)
    assert report.metric_values()["img.mode_purity"] > 0.95
    assert report.metric_values()["img.oam_purity"] > 0.95


def test_simulate_json_follows_the_output_contract():
    layout = bench('[[element]]\nname = "A"\ntype = "aperture"\nz = 0\ndiameter = "1.5 mm"\n'
                   '[[element]]\nname = "p"\ntype = "plane"\nz = "10 mm"\n'
                   '[[spec]]\nmetric = "power"\nat = "p"\nmin = 0.5\n',
                   simulation="[simulation]\ngrid = 256")
    data = simulate(layout).to_dict()
    assert {"planes", "metrics", "specs"} <= set(data)
    assert set(data["planes"][0]) == {"name", "power", "d4sigma_m", "centroid_m"}
    assert data["specs"][0]["pass"] is True
    # A centred circular aperture passes 1 - exp(-2a²/w²) (Siegman): a = 0.75 w -> 0.6753;
    # 1e-3: the aperture edge is area-weighted over one sample of a 256-sample window.
    assert data["planes"][0]["power"] == pytest.approx(1 - math.exp(-2 * 0.75**2), abs=1e-3)
    assert "laser safety officer" in data["laser_safety"]


def test_aliasing_hologram_terms_are_flagged():
    # A lens term steps 2π p r/(λ f) per pixel; above π it aliases (Nyquist; common practice).
    # Here at r = 2w = 2 mm, p = 8 µm, f = 20 mm: 2π·8 µm·2 mm/(1.064 µm·20 mm) ≈ 4.7 rad: flagged.
    layout = bench(
        '[[element]]\nname = "slm"\ntype = "modulator"\nz = "50 mm"\npixel_pitch = "8 um"\npixels = [512, 512]\n'
        'hologram = { pattern = "lens", focal_length = "20 mm", carrier = { period_px = 1.5 } }\n'
        '[[element]]\nname = "p"\ntype = "plane"\nz = "100 mm"\n',
        simulation="[simulation]\ngrid = 512",
    )
    notes = " ".join(simulate(layout).simulation.notes)
    assert "lens term" in notes and "aliases" in notes
    assert "carrier period 1.5 px is under 2 pixels" in notes
