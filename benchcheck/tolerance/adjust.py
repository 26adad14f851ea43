"""Adjustments: dofs the user re-optimises after assembly (camera focus, iris centring,
hologram shift), re-optimised on every trial before it is judged.

Each trial maximises the spec slack (``benchcheck.tolerance.thresholds.spec_slack``: the
smallest normalised distance of any spec to its bound) over the adjustments inside their
± ranges, with ``scipy.optimize.minimize_scalar(method="bounded")`` for one adjustment
(Brent, Algorithms for Minimization without Derivatives, 1973, ch. 5) and
``scipy.optimize.minimize(method="Powell", bounds=...)`` for several (Powell, Comput. J. 7,
155 (1964)). The adjusted values are recorded so the user sees the range each adjustment
needs. The adjusted value replaces any drawn excursion of that dof: the user sets it anew.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
from scipy.optimize import minimize, minimize_scalar

from benchcheck.errors import LayoutError
from benchcheck.layout.model import Layout
from benchcheck.tolerance.dofs import DOF_UNITS, resolve_dofs
from benchcheck.tolerance.thresholds import SlackProbe

__all__ = [
    "Adjuster",
    "adjustment_ranges",
    "DEFAULT_RANGE_FACTOR",
    "DEFAULT_LENGTH_RANGE",
    "DEFAULT_ANGLE_RANGE",
    "DEFAULT_RANGE_NOTE",
    "TIE_BREAK_WEIGHT",
]

#: Default ± range of an adjustment with a tolerance: this many times the tolerance (our own default).
DEFAULT_RANGE_FACTOR = 10.0
#: Default ± range of an adjustment without a tolerance: lengths (m) and angles (rad) (our own default).
DEFAULT_LENGTH_RANGE = 5e-3
DEFAULT_ANGLE_RANGE = 5e-3
DEFAULT_RANGE_NOTE = (
    "adjustment ranges not given in the layout are benchcheck's own default, not a published "
    "value: ±10 x the dof's tolerance where it has one, else ±5 mm for lengths and ±5 mrad for angles"
)
#: Weight of the sum of all spec slacks added to the smallest one, so that an adjustment
#: that does not move the worst spec still improves the others (otherwise the objective is
#: flat along it and the optimiser leaves it anywhere).
TIE_BREAK_WEIGHT = 1e-3
#: Optimiser tolerance on the adjustment, as a fraction of its ± range.
_RANGE_FRACTION_TOLERANCE = 1e-5


def adjustment_ranges(layout: Layout) -> dict[str, float]:
    """The ± range (SI) of each adjustment of ``layout``, in the order the layout names them.

    A range given in ``[tolerancing] adjust`` wins; otherwise ``DEFAULT_RANGE_FACTOR`` times
    the dof's tolerance, else ``DEFAULT_LENGTH_RANGE`` / ``DEFAULT_ANGLE_RANGE``.

    Raises
    ------
    LayoutError
        For an adjustment of a dimensionless dof with neither a range nor a tolerance.
    """
    given = layout.tolerancing.adjust_ranges
    limits = {dof.name: dof.limit for dof in resolve_dofs(layout)}
    ranges = {}
    for name in layout.tolerancing.adjust:
        if name in given:
            ranges[name] = float(given[name])
        elif name in limits:
            ranges[name] = DEFAULT_RANGE_FACTOR * limits[name]
        else:
            kind = DOF_UNITS.get(name.rpartition(".")[2], "length")
            if kind == "ratio":
                raise LayoutError(f"the adjustment '{name}' has no range and no tolerance to take one from",
                                  file=layout.path, field="tolerancing.adjust",
                                  hint=f'give one: adjust = {{ "{name}" = 0.1 }}')
            ranges[name] = DEFAULT_ANGLE_RANGE if kind == "angle" else DEFAULT_LENGTH_RANGE
    return ranges


class Adjuster:
    """Evaluates trials with the layout's adjustments re-optimised first.

    Parameters
    ----------
    evaluator : Evaluator
        Evaluates perturbations of ``layout``.
    layout : Layout
        Names the adjustments and their ranges (``[tolerancing] adjust``).

    Attributes
    ----------
    ranges : dict of str to float
        ± range (SI) of each adjustment around its nominal value.
    notes : list of str
        What people should know: default ranges used, specs left out.
    """

    def __init__(self, evaluator, layout: Layout) -> None:
        self.evaluator = evaluator
        self.layout = layout
        self.ranges = adjustment_ranges(layout)
        self.probe = SlackProbe(evaluator)
        self.notes: list[str] = []
        if any(name not in layout.tolerancing.adjust_ranges for name in self.ranges):
            self.notes.append(DEFAULT_RANGE_NOTE)
        if self.ranges:
            self.notes.extend(self.probe.notes())

    def _perturbation(self, perturbation: Mapping[str, float], scaled: np.ndarray) -> dict[str, float]:
        adjusted = dict(perturbation)
        for (name, limit), unit in zip(self.ranges.items(), np.atleast_1d(scaled)):
            adjusted[name] = float(unit) * limit
        return adjusted

    def _cost(self, perturbation: Mapping[str, float], scaled) -> float:
        slacks = list(self.probe.slacks(self._perturbation(perturbation, np.asarray(scaled, dtype=float))).values())
        if not slacks:
            return 0.0
        finite = [min(slack, 1e6) for slack in slacks]
        return -(min(finite) + TIE_BREAK_WEIGHT * math.fsum(finite))

    def best_setting(self, perturbation: Mapping[str, float]) -> dict[str, float]:
        """The adjustment values (SI excursions from nominal) that maximise the spec slack."""
        count = len(self.ranges)
        if count == 0:
            return {}
        start = np.zeros(count)
        if count == 1:
            found = minimize_scalar(lambda unit: self._cost(perturbation, [unit]), bounds=(-1.0, 1.0),
                                    method="bounded", options={"xatol": _RANGE_FRACTION_TOLERANCE})
            candidate = np.array([found.x])
        else:
            found = minimize(lambda units: self._cost(perturbation, units), start, method="Powell",
                             bounds=[(-1.0, 1.0)] * count,
                             options={"xtol": _RANGE_FRACTION_TOLERANCE, "ftol": 1e-10})
            candidate = np.clip(np.asarray(found.x, dtype=float), -1.0, 1.0)
        # A local search can end on a plateau worse than leaving the adjustments nominal.
        if self._cost(perturbation, start) < self._cost(perturbation, candidate):
            candidate = start
        return {name: float(unit) * limit for (name, limit), unit in zip(self.ranges.items(), candidate)}

    def evaluate(self, perturbation: Mapping[str, float] | None = None):
        """Re-optimise the adjustments for ``perturbation``, then evaluate the trial.

        Returns
        -------
        tuple
            (TrialResult of the adjusted realization, {adjustment name: adjusted excursion (SI)}).
        """
        perturbation = dict(perturbation or {})
        setting = self.best_setting(perturbation)
        return self.evaluator.evaluate(perturbation | setting), setting
