"""Tests of benchcheck/tolerance/samplers.py: per-trial seeding, Sobol points, distributions."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import ndtr
from scipy.stats import kstest, qmc, uniform

from benchcheck.errors import LayoutError
from benchcheck.tolerance.dofs import Dof
from benchcheck.tolerance.samplers import Sampler, excursions_from_unit, trial_seed, unit_points


def _dof(distribution: str, limit: float = 2e-3, name: str = "L1.z") -> Dof:
    return Dof(name=name, limit=limit, distribution=distribution, nominal=0.1)


def test_random_trial_is_the_spawned_child_of_the_study_seed():
    # numpy's documented SeedSequence.spawn: child i has spawn_key (i,); trial i must draw
    # from exactly that child, whatever block it is drawn in.
    children = np.random.SeedSequence(11).spawn(8)
    expected = np.array([np.random.default_rng(child).random(3) for child in children])
    assert np.array_equal(unit_points("random", 11, 0, 8, 3), expected)
    assert np.array_equal(unit_points("random", 11, 5, 8, 3), expected[5:])
    assert trial_seed(11, 5, "random") == {"entropy": 11, "spawn_key": [5]}


def test_sobol_points_are_the_scrambled_sequence_in_any_block():
    # Reference: scipy.stats.qmc.Sobol drawn in one go; a block starting anywhere must give
    # the same points (what resuming a study relies on).
    reference = qmc.Sobol(4, scramble=True, seed=9).random(64)
    assert np.array_equal(unit_points("sobol", 9, 0, 64, 4), reference)
    assert np.array_equal(unit_points("sobol", 9, 37, 50, 4), reference[37:50])


def test_uniform_excursions_follow_the_uniform_law():
    # Kolmogorov-Smirnov test (scipy.stats.kstest) against U(-L, L): with 2000 pseudo-random
    # draws a correct sampler gives p > 0.01 except in 1 % of seeds; the seed is fixed.
    limit = 2e-3
    values = Sampler((_dof("uniform", limit),), "random", 4).excursions(0, 2000)[:, 0]
    assert kstest(values, uniform(loc=-limit, scale=2 * limit).cdf).pvalue > 0.01
    assert np.all(np.abs(values) <= limit)


def test_normal_excursions_have_the_truncated_normal_spread():
    # A normal truncated at ±β σ has variance σ² [1 − 2β φ(β) / (2Φ(β) − 1)] (Johnson, Kotz
    # and Balakrishnan, Continuous Univariate Distributions, vol. 1, 2nd ed. (1994), ch. 13);
    # here σ = L/3, β = 3 (DESIGN.md section 5). φ and Φ from scipy.special.ndtr.
    limit = 3e-3
    sigma, beta = limit / 3, 3.0
    density = np.exp(-beta**2 / 2) / np.sqrt(2 * np.pi)
    expected_std = sigma * np.sqrt(1 - 2 * beta * density / (2 * ndtr(beta) - 1))
    values = Sampler((_dof("normal", limit),), "sobol", 2).excursions(0, 4096)[:, 0]
    # 4096 scrambled Sobol points pin a smooth 1-D moment to ~1e-4 relative; 2e-3 leaves room.
    assert np.std(values) == pytest.approx(expected_std, rel=2e-3)
    assert abs(np.mean(values)) < 1e-3 * sigma
    assert np.all(np.abs(values) <= limit)


def test_fixed_excursions_sit_at_the_limit():
    values = Sampler((_dof("fixed", 5e-4),), "random", 0).excursions(0, 10)
    assert np.all(values == 5e-4)


def test_columns_map_independently():
    dofs = (_dof("uniform", 1.0, "A.x"), _dof("fixed", 2.0, "B.x"))
    points = np.array([[0.0, 0.3], [0.75, 0.9]])
    assert np.array_equal(excursions_from_unit(dofs, points), np.array([[-1.0, 2.0], [0.5, 2.0]]))


def test_unknown_sampler_and_distribution_are_refused():
    with pytest.raises(LayoutError, match="sampler"):
        unit_points("lattice", 0, 0, 4, 2)
    with pytest.raises(LayoutError, match="distribution"):
        excursions_from_unit((_dof("triangle"),), np.zeros((1, 1)))


def test_no_dofs_gives_empty_perturbations():
    sampler = Sampler((), "sobol", 0)
    assert sampler.perturbations(0, 3) == [{}, {}, {}]
