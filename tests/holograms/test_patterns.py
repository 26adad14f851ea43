"""Hologram patterns and their composition (flat top: test_flat_top.py)."""

import numpy as np
import pytest

from benchcheck.errors import LayoutError
from benchcheck.wave.holograms import (
    axicon_phase,
    builtin_patterns,
    compose_hologram,
    grating_phase,
    pixel_coordinates,
    validate_phase_map,
)

WAVELENGTH = 1.064e-6
PITCH = 8.0e-6
COORDS = pixel_coordinates((96, 64), (PITCH, PITCH))


def winding(phase, rows, cols):
    """Net number of 2π turns of the phase around the rectangle rows × cols (pixel indices)."""
    r0, r1 = rows
    c0, c1 = cols
    loop = np.concatenate([
        phase[r0, c0:c1], phase[r0:r1, c1], phase[r1, c1:c0:-1], phase[r1:r0:-1, c0], phase[r0:r0 + 1, c0],
    ])
    return np.sum(np.angle(np.exp(1j * np.diff(loop)))) / (2 * np.pi)


def test_registry_holds_the_layout_patterns():
    # DESIGN.md section 5 lists the pattern names of format 1
    assert set(builtin_patterns()) == {"none", "grating", "vortex", "lg", "hg", "flat_top", "axicon", "lens", "file"}


@pytest.mark.parametrize("period, quarter_turns", [(8, 0), (8, 1), (7, 2), (16, 3), (2, 0)])
def test_whole_pixel_blaze_shows_exactly_n_steps(period, quarter_turns):
    # a blaze of N pixels must show the N phase steps 2πk/N, one per pixel, on every period of
    # a wide panel (DESIGN.md §5; the float x % period trap in REFERENCES.md)
    coords = pixel_coordinates((4099, 4099) if quarter_turns % 2 else (4099, 3), (PITCH, PITCH))
    phase = grating_phase(coords, period, quarter_turns * np.pi / 2)
    levels = (2 * np.pi / period) * np.arange(period)
    np.testing.assert_array_equal(np.unique(phase), levels)
    axis = 1 if quarter_turns % 2 == 0 else 0
    line = phase[0, :] if axis == 1 else phase[:, 0]
    np.testing.assert_array_equal(line[period:], line[:-period])


def test_float_remainder_would_break_the_blaze():
    # why gratings index with integers: x % (N·p) in floating point gives far more than N
    # values over a wide panel (REFERENCES.md, traps)
    x = (np.arange(4096) - 2048) * PITCH
    assert len(np.unique(np.mod(x, 8 * PITCH))) > 8


def test_carrier_alone_equals_the_grating_pattern():
    carrier = {"period_px": 8, "angle": np.pi / 2}
    on_flat = compose_hologram("none", {}, COORDS, WAVELENGTH, carrier=carrier)
    grating = compose_hologram("grating", {"period_px": 8, "angle": np.pi / 2}, COORDS, WAVELENGTH)
    np.testing.assert_array_equal(on_flat, grating)


def test_oblique_grating_has_the_period_along_its_direction():
    # a grating at angle a advances by 2π over N pixels along (cos a, sin a)
    angle = np.deg2rad(30.0)
    phase = grating_phase(COORDS, 10.0, angle)
    step = np.angle(np.exp(1j * (phase[:, 1:] - phase[:, :-1])))
    np.testing.assert_allclose(step, 2 * np.pi * np.cos(angle) / 10.0, atol=1e-9)


def test_lens_bends_rays_by_minus_x_over_f():
    # thin lens: slope change −x/f (ray matrix C = −1/f; Kogelnik and Li, Appl. Opt. 5, 1550,
    # 1966); the local slope is (λ/2π) dφ/dx. The central difference of a quadratic is exact at
    # the midpoint, so only rounding remains (1e-9 relative).
    focal_length = 0.5
    phase = compose_hologram("lens", {"focal_length": focal_length}, COORDS, WAVELENGTH)
    row = phase[COORDS.shape[0] // 2]
    slope = WAVELENGTH / (2 * np.pi) * np.angle(np.exp(1j * np.diff(row))) / PITCH
    midpoints = 0.5 * (COORDS.x[0, 1:] + COORDS.x[0, :-1])
    np.testing.assert_allclose(slope, -midpoints / focal_length, rtol=1e-9, atol=1e-15)


def test_axicon_deflects_by_the_cone_angle():
    # axicon: a ray at radius r is turned toward the axis by the cone angle (McLeod, JOSA 44,
    # 592, 1954): (λ/2π) dφ/dx = −sin(α) for x > 0, exact away from the apex
    cone_angle = 2e-3
    phase = axicon_phase(COORDS, cone_angle, WAVELENGTH)[COORDS.shape[0] // 2]
    slope = WAVELENGTH / (2 * np.pi) * np.diff(phase) / PITCH
    positive = COORDS.x[0, :-1] > 0
    np.testing.assert_allclose(slope[positive], -np.sin(cone_angle), rtol=1e-9)


@pytest.mark.parametrize("charge", [-3, -1, 1, 2, 5])
def test_vortex_winds_charge_times(charge):
    # topological charge = net 2π turns of the phase around the singularity (Nye and Berry,
    # Proc. R. Soc. A 336, 165, 1974)
    phase = compose_hologram("vortex", {"charge": charge}, COORDS, WAVELENGTH)
    assert winding(phase, (10, 50), (20, 80)) == pytest.approx(charge, abs=1e-9)


def test_shift_moves_the_pattern_centre():
    shift_px = 12
    coords = pixel_coordinates((96, 64), (PITCH, PITCH), shift=(shift_px * PITCH, 0.0))
    phase = compose_hologram("vortex", {"charge": 2}, coords, WAVELENGTH)
    centre_col = 48 + shift_px
    assert winding(phase, (28, 36), (centre_col - 4, centre_col + 4)) == pytest.approx(2, abs=1e-9)
    assert winding(phase, (28, 36), (44, 52)) == pytest.approx(0, abs=1e-9)


@pytest.mark.parametrize("name, params", [
    ("lg", {"p": 1, "l": 2, "waist": 150e-6}),
    ("hg", {"m": 2, "n": 1, "waist": 120e-6}),
])
def test_mode_patterns_are_amplitudes_within_the_unit_disc(name, params):
    output = builtin_patterns()[name].build(COORDS, {**builtin_patterns()[name].defaults, **params}, WAVELENGTH)
    assert output.phase is None
    modulus = np.abs(output.amplitude)
    assert modulus.max() <= 1.0
    # the panel samples the peak to within the 8 µm pitch of a 120-150 µm mode, so its largest
    # value is within a few percent of 1 (quadratic peak: (p/W)² ~ 0.3 %)
    assert modulus.max() > 0.95


def test_lg_pattern_carries_its_charge_through_the_encodings():
    for encoding in ("phase", "complex"):
        phase = compose_hologram("lg", {"l": 3, "waist": 200e-6}, COORDS, WAVELENGTH, encoding=encoding)
        # without a carrier the encoded phase still winds l times around the mode centre,
        # on a loop where |a| is well above zero (radius ~ waist)
        assert winding(phase, (12, 52), (28, 68)) == pytest.approx(3, abs=1e-9)


def test_all_patterns_wrap_into_zero_two_pi():
    params = {"period_px": 6, "charge": 2, "l": 1, "waist": 150e-6, "m": 1, "n": 0, "size": 1e-3,
              "focal_length": 0.3, "cone_angle": 1e-3, "path": "map.npy", "phase_map": np.full((64, 96), -7.0)}
    for name in builtin_patterns():
        for encoding in ("phase", "arrizon3", "bolduc", "davis"):
            phase = compose_hologram(name, params, COORDS, WAVELENGTH, encoding=encoding,
                                     carrier={"period_px": 8, "angle": 0.0}, lens=0.5)
            assert phase.shape == (64, 96)
            assert phase.min() >= 0.0 and phase.max() < 2 * np.pi


def test_file_pattern_uses_the_loaded_map():
    phase_map = np.linspace(0, 4 * np.pi, 96 * 64).reshape(64, 96)
    shown = compose_hologram("file", {"path": "m.npy", "phase_map": phase_map}, COORDS, WAVELENGTH)
    np.testing.assert_allclose(np.exp(1j * shown), np.exp(1j * phase_map), atol=1e-12)


def test_validate_phase_map_refuses_bad_maps():
    good = np.zeros((64, 96), dtype=np.float32)
    assert validate_phase_map(good, (96, 64)).dtype == np.float64
    with pytest.raises(LayoutError, match="shape"):
        validate_phase_map(np.zeros((96, 64)), (96, 64))
    with pytest.raises(LayoutError, match="non-finite"):
        validate_phase_map(np.where(np.eye(64, 96) > 0, np.nan, 0.0), (96, 64))
    with pytest.raises(LayoutError, match="real numbers"):
        validate_phase_map(np.zeros((64, 96), dtype=complex), (96, 64))


def test_bad_hologram_input_names_the_field():
    with pytest.raises(LayoutError) as unknown:
        compose_hologram("spiral", {}, COORDS, WAVELENGTH)
    assert unknown.value.field == "pattern" and "vortex" in str(unknown.value)
    with pytest.raises(LayoutError) as missing:
        compose_hologram("grating", {}, COORDS, WAVELENGTH)
    assert missing.value.field == "period_px"
    with pytest.raises(LayoutError) as fractional:
        compose_hologram("vortex", {"charge": 1.5}, COORDS, WAVELENGTH)
    assert fractional.value.field == "charge"
    with pytest.raises(LayoutError) as encoding:
        compose_hologram("lg", {"l": 1, "waist": 1e-4}, COORDS, WAVELENGTH, encoding="mystery")
    assert encoding.value.field == "encoding"

