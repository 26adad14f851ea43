"""Camera frames: pixel integration, exposure, quantisation, saturation."""

import numpy as np
import pytest

from benchcheck.errors import LayoutError
from benchcheck.wave.camera import CameraDevice, camera_frame
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

WAVELENGTH = 1.064e-6


def gaussian_field(waist, pitch, n, center=(0.0, 0.0)):
    grid = Grid((n, n), (pitch, pitch))
    x, y = grid.mesh()
    values = np.exp(-((x - center[0]) ** 2 + (y - center[1]) ** 2) / waist**2).astype(np.complex128)
    return Field(values, grid, WAVELENGTH, "camera")


def d4sigma(frame_values, grid):
    """D4σ along x and y: 4 × the standard deviation of the distribution (ISO 11146-1)."""
    x, y = grid.mesh()
    total = frame_values.sum()
    cx, cy = (frame_values * x).sum() / total, (frame_values * y).sum() / total
    return (4 * np.sqrt((frame_values * (x - cx) ** 2).sum() / total),
            4 * np.sqrt((frame_values * (y - cy) ** 2).sum() / total))


def test_energy_is_conserved_when_the_sensor_covers_the_field():
    # integration over pixels only redistributes power; with the whole field window on the
    # sensor (pitches not commensurate, sensor off-centre) the sum matches to float rounding of
    # the running sums (~n·eps ~ 1e-13 relative)
    field = gaussian_field(40e-6, 1.3e-6, 300, center=(5e-6, -3e-6))
    camera = CameraDevice((5.5e-6, 4.7e-6), (90, 100), 12, center=(2.1e-6, -1.7e-6))
    frame = camera_frame(field, camera)
    assert frame.pixel_power.sum() == pytest.approx(field.power, rel=1e-12)


def test_uniform_field_gives_a_uniform_frame():
    # a constant |E|² integrates to |E|² × area on every pixel, wherever the edges fall
    grid = Grid((200, 240), (1.1e-6, 0.9e-6))
    field = Field(np.full(grid.shape, 0.5 + 0.5j), grid, WAVELENGTH)
    frame = camera_frame(field, CameraDevice((3.3e-6, 2.9e-6), (50, 40), 10, center=(0.4e-6, 0.2e-6)))
    np.testing.assert_allclose(frame.irradiance, 0.5, rtol=1e-12)
    assert np.unique(frame.counts).size == 1


def test_integration_is_exact_for_a_piecewise_constant_field():
    # on a common refinement (0.25 of the field pitch, which the camera edges fall on) the
    # camera pixel is a plain sum of refined cells: identity to rounding (1e-12 relative)
    rng = np.random.default_rng(1)
    grid = Grid((30, 40), (1e-6, 1e-6))
    values = rng.normal(size=grid.shape) + 1j * rng.normal(size=grid.shape)
    camera = CameraDevice((3.5e-6, 2.5e-6), (7, 5), 16, center=(0.25e-6, -0.5e-6))
    frame = camera_frame(Field(values, grid, WAVELENGTH), camera)
    refined = np.repeat(np.repeat(np.abs(values) ** 2, 4, axis=0), 4, axis=1) * (0.25e-6) ** 2
    x_fine = grid.x[0] - 0.5e-6 + 0.125e-6 + 0.25e-6 * np.arange(160)
    y_fine = grid.y[0] - 0.5e-6 + 0.125e-6 + 0.25e-6 * np.arange(120)
    for row, cy in enumerate(frame.grid.y):
        for col, cx in enumerate(frame.grid.x):
            in_x = np.abs(x_fine - cx) < 1.75e-6
            in_y = np.abs(y_fine - cy) < 1.25e-6
            expected = refined[np.ix_(in_y, in_x)].sum()
            assert frame.pixel_power[row, col] == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("camera_pitch, offset", [(6.5e-6, (1.3e-6, -2.2e-6)), (6.0e-6, (0.0, 0.0)), (5.37e-6, (0.4e-6, 0.9e-6))])
def test_d4sigma_of_a_gaussian_frame_is_twice_the_waist(camera_pitch, offset):
    # ISO 11146-1: D4σ of a TEM00 beam is 2w, so σ² = w²/4. Pixel integration adds the variance
    # p²/12 per axis (Sheppard's correction, exact to ~exp(−2π²σ²/p²) for a smooth beam). The
    # field is piecewise constant on cells of pitch p_f; by Poisson summation that structure
    # aliases into the camera's pixel grid with a term of order p·p_f/12 (largest when the
    # pitches are commensurate). Bound p·p_f/12: ~2e-4 of σ², 6 times below the p²/12 checked.
    waist, field_pitch = 100e-6, 1.0e-6
    field = gaussian_field(waist, field_pitch, 1024)
    camera = CameraDevice((camera_pitch, camera_pitch), (130, 130), 16, center=offset)
    frame = camera_frame(field, camera)
    expected_variance = waist**2 / 4 + camera_pitch**2 / 12
    for width in d4sigma(frame.irradiance, frame.grid):
        assert abs((width / 4) ** 2 - expected_variance) <= camera_pitch * field_pitch / 12
        # uncorrected: D4σ is 2w to within (p² + p·p_f)/(6 w²) <= 0.07 %
        assert abs(width / (2 * waist) - 1) <= (camera_pitch**2 + camera_pitch * field_pitch) / (6 * waist**2)
    # from the 16-bit counts: rounding to ±0.5 count of ~59 000 at the peak moves the variance
    # by well under 1e-4 relative
    for width in d4sigma(frame.counts.astype(float), frame.grid):
        assert (width / 4) ** 2 == pytest.approx(expected_variance, rel=1e-4)


def test_auto_exposure_and_quantisation_levels():
    grid = Grid((8, 2048), (1e-6, 1e-6))
    ramp = np.sqrt(np.linspace(0.0, 1.0, 2048))[np.newaxis, :].repeat(8, axis=0)  # intensity ramp
    field = Field(ramp.astype(complex), grid, WAVELENGTH)
    camera = CameraDevice((1e-6, 1e-6), (2048, 8), 8)
    auto = camera_frame(field, camera)
    # "auto" puts the brightest pixel at 90 % of full scale: round(0.9 × 255) = 230
    assert auto.counts.max() == 230 and auto.saturated_fraction == 0.0
    assert auto.counts.dtype == np.uint16
    # a brighter exposure (0.2 count per pixel step) hits every one of the 2⁸ levels, the top
    # one by clipping
    bright = camera_frame(field, CameraDevice((1e-6, 1e-6), (2048, 8), 8, exposure=400.0))
    np.testing.assert_array_equal(np.unique(bright.counts), np.arange(256))


def test_saturation_is_counted():
    # left half at irradiance 1, right half at 4; 100 counts per unit irradiance on 8 bits:
    # 100 counts on the left, 400 clipped to 255 on the right: half the pixels saturated
    grid = Grid((40, 80), (2e-6, 2e-6))
    values = np.where(np.arange(80) < 40, 1.0, 2.0)[np.newaxis, :].repeat(40, axis=0)
    field = Field(values.astype(complex), grid, WAVELENGTH)
    frame = camera_frame(field, CameraDevice((2e-6, 2e-6), (80, 40), 8, exposure=100.0))
    assert frame.saturated_fraction == 0.5
    assert set(np.unique(frame.counts)) == {100, 255}


def test_bad_cameras_are_refused():
    with pytest.raises(LayoutError):
        CameraDevice((5e-6, 5e-6), (10, 10), bit_depth=20)
    with pytest.raises(LayoutError):
        CameraDevice((5e-6, 5e-6), (10, 10), exposure="bright")
    with pytest.raises(LayoutError):
        CameraDevice((0.0, 5e-6), (10, 10))
