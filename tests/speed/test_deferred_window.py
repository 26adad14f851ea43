"""The modulator's window is made only when something reads it (DeferredField): a study's
trial does not make it; read, it is the beam's profiles times the modulation, as the pixel
model the next stage uses says; and a NaN in it still marks the trial."""

from __future__ import annotations

import math

import numpy as np

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.wave.field import DeferredField, RowTransformField, values_made
from tests.speed.conftest import scaled_relay_text

SPEC = '\n[[spec]]\nmetric = "efficiency"\nat = "cam"\nmin = 0.5\n'


def _evaluator(tmp_path, study):
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128, SPEC))
    return make_evaluator(load_layout(path), study=study)


def test_a_trial_does_not_make_the_window_no_spec_reads(tmp_path):
    trial = _evaluator(tmp_path, study=True).evaluate({"slm.x": 2e-6}, wave=True)
    window = trial.simulation.planes["slm"].field
    assert isinstance(window, DeferredField) and not values_made(window)
    assert math.isfinite(trial.metrics["cam.efficiency"])


def test_the_window_read_is_the_profiles_times_the_modulation(tmp_path):
    # The pixel model of the next stage holds the beam's separable profiles and exp(iψ) − 1;
    # the window's values must be their product with exp(iψ), sample for sample (float32
    # rounding of one product: 2 ulp of the largest sample, 3e-7 relative, covers it).
    evaluator = _evaluator(tmp_path, study=False)
    simulator = evaluator.simulate
    realization, trace = evaluator.realization(), evaluator.nominal
    window, cells = simulator._first_field(realization, trace, "slm", ["slm", "relay.fourier", "cam"], {})
    expected = np.multiply.outer(cells.background.profile_y, cells.background.profile_x) \
        * (cells.modulation_less_one + 1)
    assert not values_made(window)
    assert np.max(np.abs(window.values - expected)) <= 3e-7 * np.max(np.abs(expected))
    assert values_made(window)


def test_a_nan_in_the_window_still_marks_the_trial(tmp_path, monkeypatch):
    # The window's values are not summed for the NaN check while no one reads them: a NaN in
    # the modulation reaches every plane after it through the transforms, and those are checked,
    # the camera's too, whose window is never made either (its held columns are summed).
    from benchcheck.evaluate import panel_hologram

    evaluator = _evaluator(tmp_path, study=True)
    modulation = panel_hologram.PanelHologram.modulation

    def with_a_nan(self, *args, **kwargs):
        made, less_one = modulation(self, *args, **kwargs)
        made, less_one = made.copy(), less_one.copy()
        made[3, 3] = less_one[3, 3] = np.nan
        return made, less_one

    monkeypatch.setattr(panel_hologram.PanelHologram, "modulation", with_a_nan)
    trial = evaluator.evaluate({"slm.x": 3e-6}, wave=True)
    assert any("NaN or Inf" in fault for fault in trial.simulation.faults)
    camera = trial.simulation.planes["cam"].field
    assert isinstance(camera, RowTransformField) and not values_made(camera)
    assert "cam: the field holds NaN or Inf" in trial.simulation.faults
