"""Contribution ranking by Spearman's rank correlation, on synthetic Monte Carlo samples."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.stats import rankdata

from benchcheck.tolerance.ranking import contribution_ranking, rank_correlation


def pearson_of_ranks(first, second) -> float:
    """Spearman's rho by its definition: Pearson's correlation of the ranks (Spearman,
    Am. J. Psychol. 15, 72 (1904)), computed independently of scipy.stats.spearmanr."""
    return float(np.corrcoef(rankdata(first), rankdata(second))[0, 1])


@pytest.fixture
def samples():
    rng = np.random.default_rng(20240)
    excursions = rng.uniform(-1.0, 1.0, size=(400, 3))
    # Monotone in the first dof; the second adds a little; the third does nothing.
    metric = np.exp(2.0 * excursions[:, 0]) + 0.3 * excursions[:, 1]
    return excursions, metric


def test_the_driving_dof_ranks_first(samples):
    excursions, metric = samples
    passed = metric < np.exp(1.0)  # fails for large positive first excursions
    ranking = contribution_ranking(["drive", "helper", "idle"], excursions, passed, {"cam.offset": metric})
    assert [entry["dof"] for entry in ranking][0] == "drive"
    drive = ranking[0]
    # Against the definition (ranks, then Pearson): only float rounding differs.
    assert drive["spearman"]["cam.offset"] == pytest.approx(pearson_of_ranks(excursions[:, 0], metric), abs=1e-12)
    # The metric is nearly a monotone function of the first dof: rho close to 1.
    assert drive["spearman"]["cam.offset"] > 0.95
    assert drive["max_abs_spearman"] >= abs(drive["spearman"]["cam.offset"])
    # Failures come with large excursions of the first dof only.
    by_name = {entry["dof"]: entry for entry in ranking}
    assert drive["fail_correlation"] > 0.3
    assert abs(by_name["idle"]["fail_correlation"]) < drive["fail_correlation"] / 2
    assert drive["fail_p_value"] < 1e-6
    sizes = [entry["max_abs_spearman"] for entry in ranking]
    assert sizes == sorted(sizes, reverse=True)


def test_an_even_effect_shows_in_the_magnitude_correlation():
    # A metric even in the excursion (a beam radius against focus): the signed rank
    # correlation is near zero, the size |x| ranks it perfectly (monotone in |x|).
    x = np.random.default_rng(7).uniform(-1.0, 1.0, size=(201, 1))  # no ties in |x|
    radius = np.sqrt(1.0 + (x[:, 0] / 0.3) ** 2)
    entry = contribution_ranking(["cam.z"], x, np.ones(201, dtype=bool), {"cam.beam_radius": radius})[0]
    assert abs(entry["spearman"]["cam.beam_radius"]) < 0.05
    assert entry["spearman_magnitude"]["cam.beam_radius"] == pytest.approx(1.0, abs=1e-12)
    assert entry["fail_correlation"] is None  # nothing failed: no correlation with failure


def test_missing_values_and_constant_samples():
    assert rank_correlation([1.0, 2.0, 3.0, 4.0], [5.0, 5.0, 5.0, 5.0]) is None
    # NaN pairs are left out; what is left is perfectly monotone.
    assert rank_correlation([1.0, 2.0, np.nan, 4.0, 5.0], [2.0, 4.0, 1.0, 8.0, 10.0]) == pytest.approx(1.0)
    entry = contribution_ranking(["a"], [[0.1], [0.2], [0.3], [0.4]], [True] * 4,
                                 {"cam.power": [None, 1.0, 2.0, 3.0]})[0]
    assert entry["spearman"]["cam.power"] == pytest.approx(1.0)
    with pytest.raises(ValueError):
        contribution_ranking(["a", "b"], [[0.1], [0.2]], [True, True], {})
