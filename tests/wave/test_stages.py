"""Wave stages against published optics: ABCD law, Airy pattern, 4f relay, identities."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.special

from benchcheck.errors import SamplingError
from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.stages import natural_output_grid, propagate

WAVELENGTH = 1.064e-6


def free(distance: float) -> np.ndarray:
    return np.array([[1.0, distance, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])


def lens(focal_length: float) -> np.ndarray:
    return np.array([[1.0, 0.0, 0.0], [-1.0 / focal_length, 1.0, 0.0], [0.0, 0.0, 1.0]])


def misalign(matrix: np.ndarray, shift: float, tilt: float) -> np.ndarray:
    out = matrix.copy()
    out[0, 2], out[1, 2] = shift, tilt
    return out


def waist_q(waist: float) -> complex:
    return 1j * np.pi * waist**2 / WAVELENGTH


def abcd_law(q: complex, matrix: np.ndarray) -> complex:
    """q2 = (A q1 + B)/(C q1 + D): Kogelnik and Li, Appl. Opt. 5, 1550 (1966)."""
    (a, b), (c, d) = matrix[0, :2], matrix[1, :2]
    return (a * q + b) / (c * q + d)


def radius_and_curvature(q: complex) -> tuple[float, float]:
    inverse = 1.0 / q
    return float(np.sqrt(-WAVELENGTH / (np.pi * inverse.imag))), float(inverse.real)


def moments(field: Field) -> tuple[np.ndarray, np.ndarray]:
    """Centroid and D4σ per axis (ISO 11146-1: D4σ = 4 x the intensity standard deviation)."""
    intensity = field.intensity.astype(np.float64)
    centroid, d4sigma = [], []
    for profile, coordinate in ((intensity.sum(axis=0), field.grid.x), (intensity.sum(axis=1), field.grid.y)):
        mean = np.sum(profile * coordinate) / profile.sum()
        centroid.append(mean)
        d4sigma.append(4.0 * np.sqrt(np.sum(profile * (coordinate - mean) ** 2) / profile.sum()))
    return np.array(centroid), np.array(d4sigma)


def fitted_curvature(field: Field) -> float:
    """1/R from a weighted quadratic fit to the unwrapped phase of the centre row."""
    row = field.values[field.grid.ny // 2].astype(np.complex128)
    weight = np.abs(row) ** 2
    keep = weight > 1e-3 * weight.max()
    phase = np.unwrap(np.angle(row[keep]))
    x = field.grid.x[keep]
    coefficients = np.polynomial.polynomial.polyfit(x, phase, 2, w=np.sqrt(weight[keep]))
    # the field carries exp(iπ x²/(λR)) (exp(+ikz), DESIGN.md section 4)
    return coefficients[2] * WAVELENGTH / np.pi


@pytest.mark.parametrize(
    "matrix, branch, input_curvature",
    [
        (lens(0.5) @ free(1.0), "fourier", 0.0),  # free space 1 m, then a lens
        # 4f relay f1 = 200 mm, f2 = 100 mm, image plane 2 mm too far: near imaging
        (free(0.102) @ lens(0.1) @ free(0.3) @ lens(0.2) @ free(0.2), "split", 0.2),
    ],
)
def test_gaussian_follows_the_abcd_law(matrix, branch, input_curvature):
    # Kogelnik and Li, Appl. Opt. 5, 1550 (1966): q2 = (A q1 + B)/(C q1 + D); D4σ = 2w
    # for a TEM00 beam (ISO 11146-1)
    grid = Grid.square(512, 25e-6)
    q_in = 1.0 / (input_curvature + 1.0 / waist_q(1e-3))
    field = gaussian_field(grid, WAVELENGTH, q_in, q_in, dtype=np.complex128)
    result = propagate(field, matrix, matrix)
    assert result.method == branch
    radius, curvature = radius_and_curvature(abcd_law(q_in, matrix))
    _, d4sigma = moments(result.field)
    # 0.5 %: the beam spans >= 12 output samples per radius and the window >= 6 radii,
    # so sampling and truncation errors are far below this
    np.testing.assert_allclose(d4sigma, 2.0 * radius, rtol=5e-3)
    # 1 %: a phase fit over the beam core, where the phase is sampled at < 2 rad per sample
    assert fitted_curvature(result.field) == pytest.approx(curvature, rel=1e-2)


@pytest.mark.parametrize(
    "matrix_x, matrix_y",
    [
        (lens(0.5) @ free(1.0), lens(0.5) @ free(1.0)),
        (free(0.01), free(0.01)),
        (misalign(free(0.3) @ lens(0.2), 2e-4, -1e-3), misalign(free(0.02), -1e-4, 5e-4)),  # astigmatic
    ],
)
def test_lossless_stages_conserve_energy(matrix_x, matrix_y):
    # Parseval's theorem: the natural-grid Fourier and split branches are unitary maps;
    # 1e-6 leaves room only for float64 rounding over ~10^5 samples
    grid = Grid.square(256, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.6e-3), waist_q(0.5e-3), dtype=np.complex128)
    result = propagate(field, matrix_x, matrix_y)
    assert result.field.values.dtype == np.complex128
    assert result.field.power == pytest.approx(field.power, rel=1e-6)


def test_precision_follows_the_input():
    grid = Grid.square(64, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.2e-3))
    assert propagate(field, free(0.5), free(0.5)).field.values.dtype == np.complex64


def test_astigmatic_stage_records_each_axis():
    grid = Grid.square(128, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.3e-3), waist_q(0.3e-3))
    result = propagate(field, lens(0.2) @ free(0.2), free(0.001))
    assert result.method == "x: fourier, y: split"


def test_zero_length_returns_the_input():
    grid = Grid.square(64, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.2e-3), plane="a")
    result = propagate(field, np.eye(3), np.eye(3), plane="a")
    assert result.method == "identity"
    assert result.field.values is field.values


@pytest.mark.parametrize(
    "matrix",
    [
        # general Fourier-branch stage with decenter and tilt (A, B, C, D all non-zero), chosen
        # so that the inverse also takes the Fourier branch
        misalign(np.array([[0.05, 1.2, 0.0], [(0.0025 - 1.0) / 1.2, 0.05, 0.0], [0.0, 0.0, 1.0]]), 1e-4, 2e-4),
        # near-imaging relay, magnification −2, slightly defocused, decentred: split branch
        misalign(np.array([[-2.0, 0.004, 0.0], [0.0, -0.5, 0.0], [0.0, 0.0, 1.0]]), 2e-4, 0.0),
    ],
)
def test_stage_then_inverse_stage_returns_the_input(matrix):
    # identity: the operators of M and M⁻¹ compose to the identity (the Collins integral is
    # a unitary representation of the ray matrices). On natural grids both branches are exact
    # discrete inverses (DFT, or transfer function and its conjugate), so what is left is
    # float64 rounding: 1e-9 of the peak
    grid = Grid.square(256, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.5e-3), waist_q(0.5e-3), offset=(1e-4, -2e-4), dtype=np.complex128)
    there = propagate(field, matrix, matrix)
    inverse = np.linalg.inv(matrix)
    back = propagate(there.field, inverse, inverse, output_grid=grid)
    assert back.method == there.method
    error = np.max(np.abs(back.field.values - field.values)) / np.max(np.abs(field.values))
    assert error < 1e-9


def test_airy_pattern_of_a_circular_aperture():
    # Born and Wolf, Principles of Optics, sect. 8.5: first dark ring at 1.2197 λf/D,
    # encircled energy 1 − J0²(v) − J1²(v), v = π D r/(λ f), 0.8378 inside the first ring
    n, pitch, focal_length = 512, 10e-6, 0.2
    grid = Grid.square(n, pitch)
    x, y = grid.mesh()
    diameter_samples = 200
    disc = (x**2 + y**2 <= (diameter_samples * pitch / 2) ** 2).astype(np.complex128)
    diameter = diameter_samples * pitch
    field = Field(disc, grid, WAVELENGTH)
    stage = free(focal_length) @ lens(focal_length) @ free(focal_length)
    unit = WAVELENGTH * focal_length / diameter
    zoom = Grid.square(256, unit / 32.0)  # 32 samples per λf/D, out to 4 λf/D
    result = propagate(field, stage, stage, output_grid=zoom)
    assert any("chirp-z" in note for note in result.notes)
    row = result.field.intensity[zoom.ny // 2].astype(np.float64)
    centre = zoom.nx // 2
    start = centre + 20  # past the half maximum, before the first ring (39 samples out)
    k = start + int(np.argmin(row[start : centre + 60]))
    # |E|² ∝ (r − r0)² near a zero: a parabola through three samples finds it
    offset = 0.5 * (row[k - 1] - row[k + 1]) / (row[k - 1] - 2 * row[k] + row[k + 1])
    ring = (k + offset - centre) * zoom.pitch[0]
    # 1 %: the disc's edge is staircased at 200 samples across (area error ~1e-3)
    assert ring / unit == pytest.approx(1.2197, rel=1e-2)

    zx, zy = zoom.mesh()
    radius = np.sqrt(zx**2 + zy**2)
    intensity = result.field.intensity.astype(np.float64)
    total = field.power
    inside = intensity[radius <= 1.2197 * unit].sum() * zoom.sample_area / total
    # 0.5 %: the ring is dark, so the circle's staircase on 32 samples per λf/D costs little
    assert inside == pytest.approx(0.8378, abs=5e-3)
    for v_over_pi in (0.5, 0.8, 1.6, 2.2331, 3.0):
        v = np.pi * v_over_pi
        expected = 1.0 - scipy.special.j0(v) ** 2 - scipy.special.j1(v) ** 2
        measured = intensity[radius <= v_over_pi * unit].sum() * zoom.sample_area / total
        # 0.5 % absolute, as above (Born and Wolf sect. 8.5, Bessel functions from scipy.special)
        assert measured == pytest.approx(expected, abs=5e-3)


def test_4f_relay_magnifies_and_inverts():
    # Goodman, Introduction to Fourier Optics, ch. 5: a 4f relay images with magnification
    # −f2/f1; two f-f Fourier stages compose to [[−f2/f1, 0], [0, −f1/f2]]
    f1, f2 = 0.2, 0.1
    grid = Grid.square(256, 20e-6)
    feature = (1.0e-3, 0.5e-3)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.15e-3), waist_q(0.15e-3), offset=feature, dtype=np.complex128)
    first = free(f1) @ lens(f1) @ free(f1)
    second = free(f2) @ lens(f2) @ free(f2)
    fourier_plane = propagate(field, first, first).field
    image = propagate(fourier_plane, second, second).field
    centroid, d4sigma = moments(image)
    centroid_in, d4sigma_in = moments(field)
    # 1e-3 of a 10 µm output sample: centroids of well-sampled Gaussians are exact to rounding
    np.testing.assert_allclose(centroid, -f2 / f1 * centroid_in, atol=1e-8)
    np.testing.assert_allclose(d4sigma, f2 / f1 * d4sigma_in, rtol=1e-6)


@pytest.mark.parametrize("ratio, passes", [(0.9, True), (1.1, False)])
def test_iris_in_the_fourier_plane_cuts_off_spatial_frequencies(ratio, passes):
    # Goodman, ch. 5: an iris of diameter D in the Fourier plane of a 4f relay passes
    # spatial frequencies up to D/(2 λ f1). A grating t = 1 + cos(2πx/Λ) has orders 0 and ±1
    # with power shares 2/3 and 1/6 each (Goodman, Introduction to Fourier Optics, ch. 4,
    # thin sinusoidal amplitude grating)
    f1, f2, iris = 0.2, 0.2, 4e-3
    cutoff = iris / (2 * WAVELENGTH * f1)
    grid = Grid((128, 1024), (10e-6, 50e-6))
    beam = gaussian_field(grid, WAVELENGTH, waist_q(1.5e-3), waist_q(1.5e-3), dtype=np.complex128)
    x, _ = grid.mesh()
    grating = beam.replace(values=beam.values * (1.0 + np.cos(2 * np.pi * ratio * cutoff * x)))
    first = free(f1) @ lens(f1) @ free(f1)
    fourier_plane = propagate(grating, first, first).field
    u, v = fourier_plane.grid.mesh()
    masked = fourier_plane.replace(values=fourier_plane.values * (u**2 + v**2 <= (iris / 2) ** 2))
    second = free(f2) @ lens(f2) @ free(f2)
    image = propagate(masked, second, second).field
    share = image.power / grating.power
    # the first-order spots (radius λf1/(πw) = 45 µm) sit 200 µm, 4.4 radii, inside or
    # outside the iris edge: clipping below 1e-15; 1e-3 covers the window's Gaussian tails
    assert share == pytest.approx(1.0 if passes else 2.0 / 3.0, abs=1e-3)


def test_decenter_shifts_and_tilt_steers():
    # Siegman, Lasers (1986), ch. 15: x2 = A x1 + B θ1 + E, θ2 = C x1 + D θ1 + F
    grid = Grid.square(256, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.4e-3), waist_q(0.4e-3), dtype=np.complex128)
    base = free(0.2) @ lens(0.2) @ free(0.2)
    shift, tilt = 3e-4, 2e-3
    plain = propagate(field, base, base).field
    shifted = propagate(field, misalign(base, shift, 0.0), base).field
    tilted = propagate(field, misalign(base, 0.0, tilt), base).field
    # centroid moves by E (1e-9 m: rounding only, the shift is a relabelling of the grid)
    assert moments(shifted)[0][0] - moments(plain)[0][0] == pytest.approx(shift, abs=1e-9)
    # F multiplies by exp(ik F x): the phase slope of tilted/plain is 2π F/λ
    row = (tilted.values[128] * np.conj(plain.values[128])).astype(np.complex128)
    keep = np.abs(plain.values[128]) ** 2 > 1e-3 * np.max(np.abs(plain.values[128]) ** 2)
    slope = np.polynomial.polynomial.polyfit(plain.grid.x[keep], np.unwrap(np.angle(row[keep])), 1)[1]
    assert slope == pytest.approx(2 * np.pi * tilt / WAVELENGTH, rel=1e-6)
    # and after 50 mm more of free space the tilt has moved the centroid by F · 50 mm
    later = propagate(tilted, free(0.05), free(0.05)).field
    earlier = propagate(plain, free(0.05), free(0.05)).field
    # 1e-3 of a sample: both beams stay well inside the window
    assert moments(later)[0][0] - moments(earlier)[0][0] == pytest.approx(tilt * 0.05, abs=1e-8)


def test_natural_output_grid_matches_propagate():
    grid = Grid.square(128, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.3e-3), waist_q(0.3e-3))
    for matrix in (lens(0.5) @ free(1.0), free(0.001), misalign(free(0.001), 1e-4, 0.0)):
        assert propagate(field, matrix, matrix).field.grid == natural_output_grid(grid, matrix, matrix, WAVELENGTH)
    # Fourier branch pitch λ|B|/(N p) (the DFT's frequency spacing times λB)
    assert natural_output_grid(grid, free(1.0), free(1.0), WAVELENGTH).pitch[0] == pytest.approx(
        WAVELENGTH * 1.0 / (128 * 20e-6)
    )


def test_overfilled_window_is_refused_with_the_plane_named():
    grid = Grid.square(64, 20e-6)
    field = Field(np.ones(grid.shape, np.complex64), grid, WAVELENGTH, "slm")
    with pytest.raises(SamplingError, match="slm"):
        propagate(field, free(0.1), free(0.1), plane="camera")


def test_output_window_outside_the_image_is_refused():
    grid = Grid.square(64, 20e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.1e-3), waist_q(0.1e-3))
    far = Grid.square(64, 20e-6, center=(0.01, 0.0))
    with pytest.raises(SamplingError, match="outside the image"):
        propagate(field, free(0.001), free(0.001), output_grid=far, plane="camera")


@pytest.mark.parametrize(
    "matrix",
    [free(0.2) @ lens(0.2) @ free(0.2), np.array([[-1.0, 5e-4, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, 1.0]])],
)
def test_explicit_output_grid_agrees_with_the_natural_one(matrix):
    # identity: the chirp-z transform evaluates the same discrete sums (Rabiner, Schafer and
    # Rader, Bell Syst. Tech. J. 48, 1249 (1969)) at the shared points; 1e-6 of the peak is
    # its float64 round-off on a few hundred points (measured 1e-13 .. 2e-7)
    grid = Grid.square(128, 8e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.2e-3), offset=(2e-5, 0.0), dtype=np.complex128)
    natural = propagate(field, matrix, matrix).field
    pitch, center = natural.grid.pitch, natural.grid.center
    chosen = Grid((50, 40), (2 * pitch[0], pitch[1]), (center[0] + 3 * pitch[0], center[1] - 2 * pitch[1]))
    result = propagate(field, matrix, matrix, output_grid=chosen)
    ix = [int(np.argmin(np.abs(natural.grid.x - x))) for x in chosen.x]
    iy = [int(np.argmin(np.abs(natural.grid.y - y))) for y in chosen.y]
    reference = natural.values[np.ix_(iy, ix)]
    assert np.max(np.abs(result.field.values - reference)) < 1e-6 * np.max(np.abs(reference))


@pytest.mark.parametrize("workers", [1, 2])
@pytest.mark.parametrize("focal_length", [0.2, -0.2])
def test_the_modulator_rows_go_through_the_x_transform_a_block_at_a_time(monkeypatch, focal_length, workers):
    # exp(iψ) − 1 times the x profile, transformed along x and cut to the iris box's columns a
    # block of rows at a time (blocks of 8 rows here, 37 rows: the last block short; with two
    # threads each takes half the blocks, as on a window too large for one), against
    # scipy.fft on the whole product (fft for B > 0, ifft with norm="forward" for B < 0: the
    # FFT path's DFT). Both are float32 transforms of the same rows: 1e-6 of the largest value.
    import scipy.fft

    import benchcheck.wave.stages as stages
    from benchcheck.wave.axis_transforms import fourier_parts, plan_axes

    monkeypatch.setattr(stages, "_BLOCK_BYTES", 8 * 64 * 8)
    monkeypatch.setattr(stages, "threads_for", lambda nbytes, workers: workers)  # this small window too
    rng = np.random.default_rng(5)
    values = np.exp(1j * rng.uniform(0, 2 * np.pi, (37, 64))).astype(np.complex64) - 1
    row = np.exp(-np.linspace(-2, 2, 64) ** 2).astype(np.complex64)
    fourier = np.array([[0.0, focal_length, 0.0], [-1.0 / focal_length, 0.0, 0.0], [0.0, 0.0, 1.0]])
    x_axis = plan_axes(Grid((37, 64), (8e-6, 8e-6)), (fourier, fourier), WAVELENGTH, None)[0]
    _, _, alpha, fft_path, _ = fourier_parts(x_axis, WAVELENGTH)
    assert fft_path and x_axis.n_out == x_axis.n_in
    columns = slice(20, 31)
    blocked = stages._row_product_transform(values, row, x_axis, alpha, fft_path, workers, columns)
    product = values * row[np.newaxis, :]
    whole = scipy.fft.fft(product, axis=1) if alpha > 0 else scipy.fft.ifft(product, axis=1, norm="forward")
    assert blocked.shape == (37, 11)
    assert np.allclose(blocked, whole[:, columns], rtol=0, atol=1e-6 * np.abs(whole).max())
