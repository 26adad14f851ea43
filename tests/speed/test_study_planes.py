"""A study makes the field at a small aperture no spec reads only on the aperture's box.

A consistency check (no physics here): the next stage reads only the samples the aperture
passes, and the light it blocks is counted from the power that left the plane before, so a
study's trial must give the camera field and the losses of a full simulation, up to float32
rounding in the changed order of the sums (about 1e-7 of the peak per sample; 1e-5 covers
the log2 N growth of FFT rounding), and metrics read from it to 1e-6.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from tests.speed.conftest import scaled_relay_text

@pytest.fixture(scope="module")
def layout(tmp_path_factory):
    path = tmp_path_factory.mktemp("study") / "relay.toml"
    path.write_text(scaled_relay_text(512))
    return load_layout(path)


@pytest.mark.parametrize("perturbation", [{}, {"relay.lens1.focal_length": 2e-3, "source.tilt_x": 1e-4,
                                              "relay.fourier.x": 3e-5, "cam.z": 5e-4}])
def test_a_study_trial_equals_the_full_simulation(layout, perturbation):
    full = make_evaluator(layout).evaluate(perturbation, wave=True)
    study = make_evaluator(layout, study=True).evaluate(perturbation, wave=True)
    iris = study.simulation.planes["relay.fourier"]
    assert iris.partial and iris.field.support is not None
    assert study.simulation.context_for("relay.fourier") == {}  # no metric may read a partial field
    assert not full.simulation.planes["relay.fourier"].partial
    camera, expected = study.simulation.planes["cam"].field.values, full.simulation.planes["cam"].field.values
    assert np.abs(camera - expected).max() < 1e-5 * np.abs(expected).max()
    for (plane, blocked), (plane_full, blocked_full) in zip(study.simulation.losses, full.simulation.losses):
        assert plane == plane_full and blocked == pytest.approx(blocked_full, rel=1e-6)
    for key, value in full.metrics.items():
        assert study.metrics[key] == pytest.approx(value, abs=1e-6), key


def test_a_target_plane_gets_the_trial_on_the_nominal_grid(layout, tmp_path):
    # Where a spec reads the target, a study's trial lands on the nominal grid (where the
    # target is made once) instead of carrying the target onto the trial's own grid. Both
    # grids sample the same band-limited camera field well (about 190 samples per beam
    # radius), so the metrics are the same quadratures of the same integrals: they agree to
    # float32 rounding (2.4e-7 measured; 1e-6 asked).
    path = tmp_path / "purity.toml"
    path.write_text(Path(layout.path).read_text() + '\n[[spec]]\nmetric = "mode_purity"\nat = "cam"\nmin = 0.5\n')
    purity_layout = load_layout(path)
    perturbation = {"relay.lens2.focal_length": -1.5e-3, "slm.pixel_pitch": 3e-8, "source.x": 5e-5}
    full = make_evaluator(purity_layout).evaluate(perturbation, wave=True)
    study_evaluator = make_evaluator(purity_layout, study=True)
    study = study_evaluator.evaluate(perturbation, wave=True)
    nominal_grid = study_evaluator.evaluate(wave=True).simulation.planes["cam"].field.grid
    assert study.simulation.planes["cam"].field.grid == nominal_grid
    assert full.simulation.planes["cam"].field.grid != nominal_grid  # the focal length moved it
    for key, value in full.metrics.items():
        assert study.metrics[key] == pytest.approx(value, abs=1e-6), key
