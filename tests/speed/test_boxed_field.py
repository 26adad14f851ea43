"""The field at a small iris holds only the iris's box (BoxedField): a study's trial never
makes the window of zeros around it, and where something does read it, it is the box placed
in zeros; its power, its pickled form and the next stage's result are those of that window."""

from __future__ import annotations

import pickle

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.wave.field import BoxedField, Field, support_values, values_made
from benchcheck.wave.grid import Grid
from benchcheck.wave.sampling import edge_energy
from benchcheck.wave.stages import propagate
from tests.speed.conftest import scaled_relay_text

SPEC = '\n[[spec]]\nmetric = "efficiency"\nat = "cam"\nmin = 0.5\n'


def _box_field():
    rng = np.random.default_rng(4)
    box = (rng.standard_normal((9, 7)) + 1j * rng.standard_normal((9, 7))).astype(np.complex64)
    return BoxedField(box, Grid.square(64, 10e-6), 1.064e-6, "iris", (slice(20, 29), slice(30, 37))), box


def test_a_boxed_field_is_its_box_in_zeros():
    # Power by its definition, Σ|E|² times the sample area, on the window made (float32 sums
    # of 63 samples in double precision: 1e-12 relative is far above their rounding).
    field, box = _box_field()
    assert support_values(field) is box and not values_made(field)
    assert field.power == pytest.approx(np.sum(np.abs(field.values.astype(complex)) ** 2) * field.grid.sample_area,
                                        rel=1e-12)
    assert values_made(field)
    window = np.zeros((64, 64), np.complex64)
    window[20:29, 30:37] = box
    assert np.array_equal(field.values, window)
    restored = pickle.loads(pickle.dumps(field))
    assert type(restored) is Field and np.array_equal(restored.values, window) and restored.support == field.support


def test_the_edge_share_from_the_box_is_that_of_the_window():
    # The share of the power in the window's outer 5 % band, from the box alone, for boxes in
    # a corner, inside, along an edge and filling the window; both sum the same float32
    # samples in another order: 1e-6 relative.
    rng = np.random.default_rng(5)
    grid = Grid.square(100, 10e-6)
    for rows, columns in [(slice(0, 10), slice(0, 10)), (slice(40, 60), slice(30, 70)),
                          (slice(90, 100), slice(2, 98)), (slice(3, 97), slice(94, 100)),
                          (slice(0, 100), slice(0, 100))]:
        shape = (rows.stop - rows.start, columns.stop - columns.start)
        box = (rng.standard_normal(shape) + 1j * rng.standard_normal(shape)).astype(np.complex64)
        boxed = BoxedField(box, grid, 1.064e-6, "iris", (rows, columns))
        window = Field(boxed.values.copy(), grid, 1.064e-6, "iris")
        fresh = BoxedField(box, grid, 1.064e-6, "iris", (rows, columns))
        assert edge_energy(fresh) == pytest.approx(edge_energy(window), rel=1e-6, abs=1e-12)
        assert not values_made(fresh)


def test_the_next_stage_gives_the_same_field_from_the_box_as_from_the_window():
    # The same transform from the boxed field and from its window made in full (one Fourier
    # stage, f = 0.2 m) of a round bump in the box: the same arithmetic on the same samples,
    # so equal to float32 rounding (1e-6 of the peak).
    rows, columns = np.mgrid[0:9, 0:7]
    bump = np.exp(-((rows - 4.0) ** 2 + (columns - 3.0) ** 2) / 2.25).astype(np.complex64)
    support = (slice(28, 37), slice(29, 36))
    grid = Grid.square(64, 10e-6)
    fresh = BoxedField(bump, grid, 1.064e-6, "iris", support)
    window = Field(BoxedField(bump, grid, 1.064e-6, "iris", support).values, grid, 1.064e-6, "iris", support=support)
    lens = np.array([[0.0, 0.2, 0.0], [-1 / 0.2, 0.0, 0.0], [0.0, 0.0, 1.0]])
    from_box = propagate(fresh, lens, lens, plane="cam").field.values
    from_window = propagate(window, lens, lens, plane="cam").field.values
    assert not values_made(fresh)  # the stage and its window check read the box alone
    assert np.allclose(from_box, from_window, rtol=0, atol=1e-6 * np.abs(from_window).max())


def test_a_study_trial_does_not_make_the_iris_window(tmp_path):
    # A study's trial and a full evaluation of the same excursion (which makes every plane in
    # full) find the same efficiency at the camera: the same samples, summed alike (1e-6).
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128, SPEC))
    layout = load_layout(path)
    trial = make_evaluator(layout, study=True).evaluate({"slm.x": 2e-6}, wave=True)
    iris = trial.simulation.planes["relay.fourier"]
    assert isinstance(iris.passed, BoxedField) and not values_made(iris.passed)
    full = make_evaluator(layout).evaluate({"slm.x": 2e-6}, wave=True)
    assert trial.metrics["cam.efficiency"] == pytest.approx(full.metrics["cam.efficiency"], rel=1e-6)
