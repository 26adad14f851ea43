"""The field a Fourier stage carries from a small iris holds its few transformed columns
(RowTransformField): its values are made only when read, and then they are the window's DFT
along x (checked against numpy.fft); its power, edge share and the OAM weight's band follow
from the held columns alone and agree with those of the window."""

from __future__ import annotations

import pickle

import numpy as np
import pytest
import scipy.fft

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.wave.field import Field, RowTransformField, values_made
from benchcheck.wave.grid import Grid
from benchcheck.wave.sampling import edge_energy
from benchcheck_plugins import charge_weight
from benchcheck_plugins.charge_weight import _row_transform_spectrum, field_band
from benchcheck_plugins.spectral_band import power_by_column, reach_index
from tests.speed.conftest import scaled_relay_text

N = 64
FIRST = 20
WAVELENGTH = 1.064e-6


def _factor(curvature: float = 0.0) -> np.ndarray:
    """An output factor as a Fourier stage makes one: a constant times a chirp."""
    m = np.arange(N) - N // 2
    return (0.3 * np.exp(1j * (curvature * m**2 + 0.2 * m))).astype(np.complex64)


def _lines(smooth: bool) -> np.ndarray:
    if smooth:  # a beam that is smooth along y, on 7 columns
        rows, columns = np.mgrid[0:N, 0:7]
        return (np.exp(-((rows - 30.0) / 6.0) ** 2 - ((columns - 3.0) / 1.5) ** 2)
                * np.exp(0.3j * columns)).astype(np.complex64)
    rng = np.random.default_rng(7)
    return (rng.standard_normal((N, 7)) + 1j * rng.standard_normal((N, 7))).astype(np.complex64)


def _pending(lines, sign, factor) -> RowTransformField:
    return RowTransformField(lines, FIRST, sign, factor, Grid.square(N, 10e-6), WAVELENGTH, "cam")


def _reference(lines, sign, factor) -> np.ndarray:
    """numpy.fft's DFT along x of the lines placed in the window (sign −1: the inverse
    transform without its 1/N), times the factor, in double precision."""
    window = np.zeros((N, N), np.complex128)
    window[:, FIRST:FIRST + lines.shape[1]] = lines
    transformed = np.fft.fft(window, axis=1) if sign > 0 else np.fft.ifft(window, axis=1) * N
    return transformed * factor.astype(np.complex128)[np.newaxis, :]


@pytest.mark.parametrize("sign", [1, -1])
def test_the_values_are_the_dft_of_the_held_columns(sign):
    # Made in complex64 against numpy.fft in double: float32 rounding, 1e-5 of the peak. The
    # power by Parseval from the held columns against Σ|E|² of the reference: 1e-6 relative.
    lines, factor = _lines(smooth=False), _factor(0.01)
    field = _pending(lines, sign, factor)
    reference = _reference(lines, sign, factor)
    peak = np.abs(reference).max()
    assert field.power == pytest.approx(np.sum(np.abs(reference) ** 2) * field.grid.sample_area, rel=1e-6)
    assert field.rows_power(slice(5, 9)) == pytest.approx(np.sum(np.abs(reference[5:9]) ** 2), rel=1e-6)
    assert not values_made(field)
    assert np.allclose(field.values, reference, rtol=0, atol=1e-5 * peak)
    restored = pickle.loads(pickle.dumps(field))
    assert type(restored) is Field and np.array_equal(restored.values, field.values)


def test_a_factor_of_two_moduli_is_refused():
    factor = _factor()
    factor[5] *= 2
    with pytest.raises(ValueError, match="one modulus"):
        _pending(_lines(smooth=False), 1, factor)


@pytest.mark.parametrize("sign", [1, -1])
def test_the_edge_share_from_the_held_columns_is_that_of_the_window(sign):
    # The outer 5 % band's share of the power from the held columns' Gram matrix (made from
    # the lines: no stage gave one) and Dirichlet sums over the columns, against the same
    # share of the window made in full (float32 sums: 1e-5).
    for lines in (_lines(smooth=False), _lines(smooth=True)):
        fresh = _pending(lines, sign, _factor(0.01))
        window = Field(_pending(lines, sign, _factor(0.01)).values, fresh.grid, WAVELENGTH, "cam")
        assert edge_energy(fresh) == pytest.approx(edge_energy(window), rel=1e-5, abs=1e-12)
        assert not values_made(fresh)


@pytest.mark.parametrize("sign", [1, -1])
@pytest.mark.parametrize("slopes", [(0.0, 0.0), (2e-3, -1e-3)])
def test_the_oam_band_from_the_held_columns_is_the_band_of_the_window(slopes, sign):
    # The x transform of the field (tilt taken out) from the DFT of the factor and the held
    # columns, against scipy.fft of the window made in full: the same band is cut, and its
    # values agree to the window's float32 rounding (1e-5 of the peak). A beam small in the
    # window (Gaussian on 21 held columns next to zero frequency, about 10 samples wide along
    # x, in the window's middle by the phase step π between columns), so that the window's
    # edge leaks nothing into the band.
    n = 128
    rows, columns = np.mgrid[0:n, 0:21]
    lines = (np.exp(-((rows - 64.0) / 8.0) ** 2 - ((columns - 10.0) / 3.0) ** 2) * np.exp(1j * np.pi * columns))
    m = np.arange(n) - n // 2
    factor = 0.3 * np.exp(1j * (5e-4 * m**2 + 2 * np.pi * 3.3 * m / n))

    def pending():
        return RowTransformField(lines.astype(np.complex64), 0, sign, factor.astype(np.complex64),
                                 Grid.square(n, 10e-6), WAVELENGTH, "cam")

    fresh = pending()
    window = Field(pending().values, fresh.grid, WAVELENGTH, "cam")
    from_lines, from_window = field_band(fresh, slopes), field_band(window, slopes)
    assert from_lines is not None and from_window is not None
    assert from_lines.box.shape == from_window.box.shape and np.array_equal(from_lines.disc, from_window.disc)
    peak = np.abs(from_window.box).max()
    assert np.allclose(from_lines.box, from_window.box, rtol=0, atol=1e-5 * peak)
    assert not values_made(fresh)


@pytest.mark.parametrize("sign", [1, -1])
@pytest.mark.parametrize("curvature", [5e-5, 4e-3, 1e-2])
def test_the_x_cut_from_the_near_columns_is_that_of_the_window(curvature, sign, monkeypatch):
    # The x transform's total power (the Wiener–Khinchin sum over the held columns' Gram
    # matrix) and its cut (reach_index), found from the 64 columns either side of zero
    # frequency and twice as many while too much lies beyond: against the column powers of
    # the window's transform made in full (scipy.fft in double of the float32 window). The
    # chirps put the cut at 16-18 (the first columns), 96-98 (one doubling) and 227-228 (the
    # whole row). The totals differ by the window's float32 rounding (4e-8 seen, 1e-6
    # allowed); the cut is the same.
    n = 512
    rows, columns = np.mgrid[0:n, 0:21]
    lines = (np.exp(-((rows - 256.0) / 20.0) ** 2 - ((columns - 10.0) / 3.0) ** 2) * np.exp(1j * np.pi * columns))
    m = np.arange(n) - n // 2
    factor = 0.3 * np.exp(1j * (curvature * m**2 + 2 * np.pi * 3.3 * m / n))
    field = RowTransformField(lines.astype(np.complex64), 0, sign, factor.astype(np.complex64),
                              Grid.square(n, 10e-6), WAVELENGTH, "cam")
    slope = 3e3  # rad/m: a tilt taken out, 2.4 frequency steps
    if curvature < 1e-2:  # the near columns must give the cut: no column powers of the whole row
        monkeypatch.setattr(charge_weight, "reach_index", None)
    total, cut, _ = _row_transform_spectrum(field, slope)
    monkeypatch.undo()
    window = field.values.astype(np.complex128) * np.exp(-1j * slope * field.grid.x)
    power = power_by_column(scipy.fft.fft(window, axis=1))
    assert total == pytest.approx(power.sum(), rel=1e-6)
    assert cut == reach_index(power, n)


def test_a_study_trial_does_not_transform_the_camera_window(tmp_path):
    # The example's own specs (OAM purity about the beam, efficiency, pointing) in a study's
    # trial and in a full evaluation of the same excursion, which makes every window: the same
    # samples in another order of sums (float32 rounding: 1e-6).
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128))
    layout = load_layout(path)
    excursion = {"slm.x": 2e-6, "cam.z": 4e-4}
    trial = make_evaluator(layout, study=True).evaluate(excursion, wave=True)
    camera = trial.simulation.planes["cam"].field
    assert isinstance(camera, RowTransformField) and not values_made(camera)
    full = make_evaluator(layout).evaluate(excursion, wave=True)
    for metric in ("cam.oam_purity", "cam.efficiency"):
        assert trial.metrics[metric] == pytest.approx(full.metrics[metric], rel=1e-6)


def test_the_gram_matrix_a_stage_gives_from_the_box_is_that_of_the_held_columns(tmp_path):
    # On the FFT path along y the columns of the DFT are orthogonal, each of squared norm
    # N |c|² (Parseval), so the stage takes the Gram matrix of the held columns from the iris
    # box alone: against Σ_r g[r, j] conj(g[r, j']) over the complex64 columns themselves,
    # float32 rounding of the transform (1e-6 of the largest entry). A transmission scales it
    # by the amplitude squared.
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128))
    trial = make_evaluator(load_layout(path), study=True).evaluate({"slm.x": 2e-6, "cam.z": 4e-4}, wave=True)
    camera = trial.simulation.planes["cam"].field
    assert isinstance(camera, RowTransformField) and camera.gram_from is not None
    lines = camera.lines.astype(np.complex128)
    direct = lines.T @ lines.conj()
    scale = np.abs(direct).max()
    assert np.allclose(camera.gram, direct, rtol=0, atol=1e-6 * scale)
    assert np.allclose(camera.scaled(0.8).gram, 0.64 * direct, rtol=0, atol=1e-6 * scale)
    # The window check's border band (4 rows at top and bottom, side strips of the rows
    # between) by this Gram matrix and Dirichlet sums, against the band of the window made in
    # full. The band holds 6e-7 to 1e-5 of the power; the window's float32 transform leaves
    # every sample a rounding error of about 6e-8 of the field's rms, which on so faint a
    # band is up to ~1e-4 of its power.
    window = camera.values.astype(np.complex128)
    ny, nx = window.shape
    total = camera.power / camera.grid.sample_area
    for width in (4, 40):
        strips = window[4:ny - 4][:, np.r_[0:width, nx - width:nx]]
        made = np.vdot(strips, strips).real + np.vdot(window[:4], window[:4]).real \
            + np.vdot(window[ny - 4:], window[ny - 4:]).real
        assert made > 1e-7 * total  # light to measure
        assert camera.border_power(4, width) == pytest.approx(made, rel=1e-4)


def test_a_scaled_row_transform_field_is_its_window_scaled():
    # A stage's transmission scales the held columns, the window is still not made; the
    # window made afterwards is the original's times the amplitude (float32 rounding: 1e-6).
    field = _pending(_lines(smooth=False), 1, _factor(0.01))
    scaled = field.scaled(0.9)
    assert isinstance(scaled, RowTransformField) and not values_made(scaled)
    assert scaled.power == pytest.approx(0.81 * field.power, rel=1e-6)
    peak = np.abs(field.values).max()
    assert np.allclose(scaled.values, 0.9 * field.values, rtol=0, atol=1e-6 * peak)
