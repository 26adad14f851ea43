"""Drawing perturbations: trial i's excursions depend only on (seed, sampler, i).

Two samplers give points in the unit cube, one coordinate per degree of freedom; each
coordinate is then mapped through its dof's inverse cumulative distribution:

- ``random``: one ``numpy.random.SeedSequence(seed)`` per study and, for trial i, its
  i-th spawned child (``SeedSequence(seed, spawn_key=(i,))`` is that child), which seeds
  a PCG64 generator. The draw never depends on worker count or order.
- ``sobol``: the scrambled Sobol sequence of ``scipy.stats.qmc.Sobol(d, scramble=True,
  seed=seed)`` (Sobol, USSR Comput. Math. Math. Phys. 7, 86 (1967); Owen scrambling,
  Owen, in Monte Carlo and Quasi-Monte Carlo Methods (1995)); trial i is point i, reached
  with ``fast_forward`` so a resumed study draws exactly the same points.

Distributions (DESIGN.md section 5): ``uniform`` on ±limit; ``normal`` with σ = limit/3
truncated at ±limit (``scipy.stats.truncnorm``); ``fixed`` at +limit.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.stats import qmc, truncnorm

from benchcheck.errors import LayoutError
from benchcheck.tolerance.dofs import Dof

__all__ = [
    "SAMPLERS",
    "DISTRIBUTIONS",
    "NORMAL_SIGMAS",
    "Sampler",
    "trial_seed",
    "unit_points",
    "excursions_from_unit",
]

SAMPLERS = ("random", "sobol")
DISTRIBUTIONS = ("uniform", "normal", "fixed")

#: A ± limit read as 3σ of a normal distribution, truncated at the limit (common practice).
NORMAL_SIGMAS = 3.0


def trial_seed(seed: int, index: int, sampler: str) -> dict:
    """What fixes trial ``index``'s draw, as recorded in a run file."""
    if sampler == "random":
        return {"entropy": int(seed), "spawn_key": [int(index)]}
    return {"scramble_seed": int(seed), "sequence_index": int(index)}


def _random_points(seed: int, start: int, stop: int, dimension: int) -> np.ndarray:
    rows = np.empty((stop - start, dimension))
    for row, index in enumerate(range(start, stop)):
        child = np.random.SeedSequence(entropy=int(seed), spawn_key=(index,))
        rows[row] = np.random.Generator(np.random.PCG64(child)).random(dimension)
    return rows


def _sobol_points(seed: int, start: int, stop: int, dimension: int) -> np.ndarray:
    engine = qmc.Sobol(dimension, scramble=True, seed=int(seed))
    if start:
        engine.fast_forward(start)
    with warnings.catch_warnings():
        # scipy warns when a block is not a power of two long; the points are still the
        # sequence's points start..stop-1, which is all a trial needs.
        warnings.simplefilter("ignore", UserWarning)
        return engine.random(stop - start)


def unit_points(sampler: str, seed: int, start: int, stop: int, dimension: int) -> np.ndarray:
    """Points ``start`` .. ``stop - 1`` of a sampler in the unit cube, shape (stop - start, dimension).

    Parameters
    ----------
    sampler : {"random", "sobol"}
        Pseudo-random (one spawned SeedSequence child per trial) or scrambled Sobol.
    seed : int
        The study's seed.
    start, stop : int
        Trial indices, ``0 <= start <= stop``.
    dimension : int
        Number of degrees of freedom.

    Returns
    -------
    numpy.ndarray
        Values in [0, 1); row k belongs to trial ``start + k`` and depends only on
        (sampler, seed, start + k, dimension).
    """
    if sampler not in SAMPLERS:
        raise LayoutError(f"unknown sampler '{sampler}'", field="sampler",
                          hint=f"one of {', '.join(SAMPLERS)}")
    if not 0 <= start <= stop:
        raise ValueError(f"trial range {start}..{stop} is empty or negative")
    if dimension == 0 or stop == start:
        return np.empty((stop - start, dimension))
    if sampler == "random":
        return _random_points(seed, start, stop, dimension)
    return _sobol_points(seed, start, stop, dimension)


def excursions_from_unit(dofs: Sequence[Dof], points: np.ndarray) -> np.ndarray:
    """Map unit-cube points to excursions (SI) through each dof's inverse CDF.

    Parameters
    ----------
    dofs : sequence of Dof
        One per column of ``points``; ``limit`` in SI units, ``distribution`` one of
        ``uniform``, ``normal``, ``fixed``.
    points : numpy.ndarray
        Shape (trials, len(dofs)), values in [0, 1).

    Returns
    -------
    numpy.ndarray
        Excursions of the same shape: uniform ``limit (2u − 1)``; normal
        ``truncnorm.ppf(u, −3, 3, scale=limit/3)``; fixed ``+limit``.
    """
    excursions = np.empty_like(points, dtype=float)
    for column, dof in enumerate(dofs):
        unit = points[:, column]
        if dof.distribution == "uniform":
            excursions[:, column] = dof.limit * (2.0 * unit - 1.0)
        elif dof.distribution == "normal":
            excursions[:, column] = truncnorm.ppf(unit, -NORMAL_SIGMAS, NORMAL_SIGMAS,
                                                  scale=dof.limit / NORMAL_SIGMAS)
        elif dof.distribution == "fixed":
            excursions[:, column] = dof.limit
        else:
            raise LayoutError(f"unknown distribution '{dof.distribution}' on '{dof.name}'",
                              field=dof.name, hint=f"one of {', '.join(DISTRIBUTIONS)}")
    return excursions


@dataclass(frozen=True)
class Sampler:
    """The perturbations of one study: which dofs, which sampler, which seed.

    Attributes
    ----------
    dofs : tuple of Dof
        The degrees of freedom, one column each.
    kind : {"random", "sobol"}
        The sampler.
    seed : int
        The study's seed.
    """

    dofs: tuple[Dof, ...]
    kind: str
    seed: int

    @property
    def dof_names(self) -> tuple[str, ...]:
        return tuple(dof.name for dof in self.dofs)

    def excursions(self, start: int, stop: int) -> np.ndarray:
        """Excursions (SI) of trials ``start`` .. ``stop - 1``, shape (trials, dofs)."""
        return excursions_from_unit(self.dofs, unit_points(self.kind, self.seed, start, stop, len(self.dofs)))

    def perturbations(self, start: int, stop: int) -> list[dict[str, float]]:
        """The same as ``excursions`` as one ``{dof name: excursion}`` mapping per trial."""
        names = self.dof_names
        return [dict(zip(names, (float(value) for value in row))) for row in self.excursions(start, stop)]
