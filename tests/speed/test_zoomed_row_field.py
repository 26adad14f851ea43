"""A field a Fourier stage carries from a small iris onto a grid off the FFT path holds its
few columns (ZoomedRowField): its values, made when read, are the zoomed DFT of those columns
(checked against the sum written out with numpy in double precision); its power and window
check follow from the columns alone, and its overlap with a fixed target from the target's
truncated SVD (the best approximation of its rank in the Frobenius norm: Eckart and Young,
Psychometrika 1, 211 (1936), from memory), whose error on an overlap the Cauchy–Schwarz
inequality bounds; all within float32 rounding of the window made in full."""

from __future__ import annotations

import pickle
import re

import numpy as np
import pytest

import benchcheck.wave.overlaps as overlaps
from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.plugin_manager import make_plugin_manager
from benchcheck.tolerance.study import run_study
from benchcheck.wave.field import Field, lag_sums, values_made
from benchcheck.wave.grid import Grid
from benchcheck.wave.sampling import edge_energy
from benchcheck.wave.sums import inner_product
from benchcheck.wave.zoomed_rows import ZoomedRowField
from benchcheck_plugins.modal_overlap import normalised_overlap
from tests.speed.conftest import LAYOUT

N = 64
FIRST = 21
ALPHA = 0.93 / N  # a zoom: not the FFT's 1/N
PURITY = '\n[[spec]]\nmetric = "mode_purity"\nat = "cam"\nmin = 0.5\n'


def _field(alpha: float = ALPHA) -> ZoomedRowField:
    rng = np.random.default_rng(3)
    rows, columns = np.mgrid[0:N, 0:9]
    lines = (np.exp(-((rows - 30.0) / 7.0) ** 2 - ((columns - 4.0) / 2.0) ** 2) * np.exp(0.4j * columns)
             + 1e-3 * (rng.standard_normal((N, 9)) + 1j * rng.standard_normal((N, 9)))).astype(np.complex64)
    m = np.arange(N) - N // 2
    factor = (0.7 * np.exp(1j * (0.003 * m**2 + 0.1 * m))).astype(np.complex64)
    return ZoomedRowField(lines, FIRST, alpha, factor, Grid.square(N, 10e-6), 1.064e-6, "cam")


def _reference(field: ZoomedRowField) -> np.ndarray:
    """values[r, m] = factor[m] Σ_j lines[r, j] exp(−2πi α (first + j) m), written out in double."""
    j = np.arange(field.lines.shape[1]) + field.first
    kernel = np.exp(-2j * np.pi * field.alpha * np.multiply.outer(j, np.arange(N)))
    return (field.lines.astype(np.complex128) @ kernel) * field.factor.astype(np.complex128)[np.newaxis, :]


def _relay_with_purity() -> str:
    """The 4f example on a 256-sample window (32 µm pixels, the carrier 4 of them long, the
    iris moved to its first order by the grating equation x = λ f / Λ: half as far), with its
    paraxial specs and mode purity (its OAM spec reads the window itself)."""
    text = LAYOUT.read_text().replace("grid = 1024", "grid = 256")
    text = text.replace('pixel_pitch = "8 um"', 'pixel_pitch = "32 um"')
    text = text.replace("carrier = { period_px = 8,", "carrier = { period_px = 4,")
    text = text.replace('center = ["4.99 mm", "0 mm"]', 'center = ["2.495 mm", "0 mm"]')
    text = re.sub(r'\[\[spec\]\]\nmetric = "(?!beam_radius"|offset")[^\n]*\n(?:[a-z_]+ = [^\n]*\n)*\n?', "", text)
    return text + PURITY


def test_the_values_are_the_zoomed_dft_of_the_held_columns():
    # complex64 product against the sum in double: float32 rounding, 1e-5 of the peak. The
    # power from the Gram matrix and the geometric sums over columns is a double-precision
    # sum of the same products as Σ|E|² of the reference (the factor's one modulus holds to
    # float32 rounding, 6e-8): 1e-6 relative; so are a band of rows and the window's border band.
    field = _field()
    reference = _reference(field)
    assert field.power == pytest.approx(np.sum(np.abs(reference) ** 2) * field.grid.sample_area, rel=1e-6)
    assert field.rows_power(slice(20, 40)) == pytest.approx(np.sum(np.abs(reference[20:40]) ** 2), rel=1e-6)
    border = np.sum(np.abs(reference[3:N - 3][:, np.r_[0:5, N - 5:N]]) ** 2) \
        + np.sum(np.abs(reference[:3]) ** 2) + np.sum(np.abs(reference[N - 3:]) ** 2)
    assert field.border_power(3, 5) == pytest.approx(border, rel=1e-6)
    assert not values_made(field)
    window = Field(field.values, field.grid, field.wavelength, "cam")
    assert np.allclose(field.values, reference, rtol=0, atol=1e-5 * np.abs(reference).max())
    assert edge_energy(_field()) == pytest.approx(edge_energy(window), rel=1e-5)
    restored = pickle.loads(pickle.dumps(field))
    assert type(restored) is Field and np.array_equal(restored.values, field.values)
    scaled = _field().scaled(0.9)
    assert scaled.power == pytest.approx(0.81 * field.power, rel=1e-6) and not values_made(scaled)


@pytest.mark.parametrize("alpha", [ALPHA, 1.0 - 1e-5, 0.5 / 3])
def test_the_sums_over_columns_are_the_geometric_series(alpha):
    # Σ_m exp(−2πi α d m) in closed form against the terms added up, also where α d comes
    # close to an integer (the quotient's denominator vanishes: added term by term there).
    # Double-precision sums of at most 64 unit terms: 1e-12.
    sums = lag_sums(alpha, 9, 5, 47)
    lags = np.arange(-8, 9)
    direct = np.exp(-2j * np.pi * alpha * np.multiply.outer(lags, np.arange(5, 47))).sum(axis=1)
    assert np.allclose(sums, direct, rtol=0, atol=1e-12)


def test_a_study_trial_landing_on_the_target_grid_keeps_its_columns_and_its_purity(tmp_path):
    # A study's trial lands on the nominal camera grid, where its target is: where the second
    # lens's focal length is off, the natural pitch is too (p f₂/f₁), so x is a zoomed DFT.
    # Its camera field is held as columns and never made, and mode purity through the
    # target's truncated SVD equals the normalised overlap of the two windows made in full:
    # the SVD leaves out 1e-13 of the target's energy (at most 6.3e-7 on a purity, by
    # Cauchy–Schwarz), the rest is float32 rounding (1e-6). The value does not depend on the
    # trials evaluated before (a fresh evaluator gives the same number to the last bit), so
    # studies agree whatever their number of workers.
    path = tmp_path / "relay.toml"
    path.write_text(_relay_with_purity())
    study = make_evaluator(load_layout(path), study=True)
    excursions = ({"relay.lens2.focal_length": 2e-3}, {"slm.x": 2e-6, "relay.lens2.focal_length": -1e-3})
    for excursion in excursions:
        trial = study.evaluate(excursion, wave=True)
        camera = trial.simulation.planes["cam"].field
        assert isinstance(camera, ZoomedRowField) and not values_made(camera)
        target = trial.simulation.context_for("cam")["target"]
        expected = normalised_overlap(camera.values, target.values)
        assert expected > 0.5  # a purity worth comparing
        assert trial.metrics["cam.mode_purity"] == pytest.approx(expected, rel=1e-6)
    fresh = make_evaluator(load_layout(path), study=True).evaluate(excursions[-1], wave=True)
    assert fresh.metrics["cam.mode_purity"] == trial.metrics["cam.mode_purity"]


def test_the_gram_matrix_a_stage_gives_from_the_box_is_that_of_the_held_columns(tmp_path):
    # Landing on the nominal grid with the second lens's focal length off, y too is a zoomed
    # DFT (off the FFT path): the sum of its output rows is the box's rows weighted by the
    # geometric series S(k − k'), a Toeplitz matrix, not the FFT's orthogonal columns. Against
    # Σ_r g[r, j] conj(g[r, j']) over the complex64 columns themselves: float32 rounding of
    # the transform, 1e-6 of the largest entry.
    path = tmp_path / "relay.toml"
    path.write_text(_relay_with_purity())
    study = make_evaluator(load_layout(path), study=True)
    camera = study.evaluate({"relay.lens2.focal_length": 2e-3}, wave=True).simulation.planes["cam"].field
    assert isinstance(camera, ZoomedRowField) and camera.gram_from is not None
    lines = camera.lines.astype(np.complex128)
    direct = lines.T @ lines.conj()
    assert np.allclose(camera.gram, direct, rtol=0, atol=1e-6 * np.abs(direct).max())


def test_only_a_target_marked_as_reused_is_factored():
    # A target that meets one trial (carried onto that trial's grid) goes the windows' way;
    # one marked as a study's fixed target through its SVD. Both equal the inner product of
    # the windows in double precision (the target here has rank 2, so the SVD leaves nothing
    # out): float32 rounding of the window, 1e-6 of the product's scale.
    x = np.arange(N) - N / 2
    target = Field((np.outer(np.exp(-(x / 9) ** 2), np.exp(-(x / 7) ** 2) * (1 + 0.2j * x))
                    + np.outer(x / 30, np.ones(N))).astype(np.complex64), Grid.square(N, 10e-6), 1.064e-6, "cam")
    exact = inner_product(target.values.astype(np.complex128), _reference(_field()))
    scale = np.sqrt(target.power * _field().power) / target.grid.sample_area
    once = _field()
    assert abs(overlaps.overlap(target, once) - exact) <= 1e-6 * scale and values_made(once)
    overlaps.mark_reused(target)
    reused = _field()
    assert abs(overlaps.overlap(target, reused) - exact) <= 1e-6 * scale and not values_made(reused)


def test_a_mode_purity_study_gives_the_same_records_with_two_workers(tmp_path):
    # Each worker process factors the target at its own first overlap; which way an overlap
    # goes depends on the trial alone, so the records equal one worker's to the last bit
    # (a study promises the same numbers whatever its workers: the README, "Large studies").
    path = tmp_path / "relay.toml"
    path.write_text(_relay_with_purity())
    plugins = make_plugin_manager()
    one = run_study(load_layout(path, plugins), plugins, trials=12, workers=1)
    two = run_study(load_layout(path, plugins), plugins, trials=12, workers=2)
    assert [record.metrics for record in one.records] == [record.metrics for record in two.records]
    assert all(record.metrics.get("cam.mode_purity") is not None for record in one.records)
