"""Failure thresholds: how far one dof may go, the others nominal, before a spec fails.

Words (DESIGN.md section 3): the *failure threshold* of a dof is the smallest excursion of
either sign at which a spec fails with every other dof nominal; its *margin* is the threshold
divided by the tolerance given for that dof; the dof with the smallest margin *fails first*.

Method: the specs are folded into one continuous signed slack ``g(x)`` (the smallest
normalised distance of any spec's value to its bound; positive passes). On each sign the
excursion is stepped outwards geometrically from a small fraction of the tolerance up to
``search_factor`` times it; the first step that fails brackets the crossing, and
``scipy.optimize.brentq`` (Brent, Algorithms for Minimization without Derivatives, 1973,
ch. 4) finds it. A crossing inside a bracket step that passes again before the step's end
is not seen: the steps are a factor sqrt(2) apart.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from benchcheck.layout.model import Spec
from benchcheck.errors import SamplingError
from benchcheck.tolerance.dofs import Dof

__all__ = [
    "Threshold",
    "SlackProbe",
    "spec_slack",
    "failure_thresholds",
    "fails_first",
    "MISSING_VALUE_SLACK",
    "START_FRACTION",
    "STEPS_PER_DOUBLING",
]

#: Slack given to a spec whose metric has no value (a failed metric fails its spec): a
#: finite negative number so the root finder still sees a sign change.
MISSING_VALUE_SLACK = -1.0
#: The outward search starts at this fraction of the tolerance (our own choice).
START_FRACTION = 1.0 / 8.0
#: Geometric search steps per doubling of the excursion (a factor 2 per step: a failure window
#: narrower than that between two steps could be missed; the Monte Carlo still sees it).
STEPS_PER_DOUBLING = 1
#: Root-finding tolerance, as a share of the dof's tolerance: margins are reported to four
#: digits, and each evaluation of a wave spec is a full simulation.
THRESHOLD_XTOL = 1e-6
#: Errors a trace of a far-out excursion may raise; treated as "no valid bench here".
# A realization the engines cannot evaluate (a singular stage, an overfilled window) counts
# as failing: the bench at that excursion does not deliver a valid beam.
_TRACE_FAULTS = (ValueError, ArithmeticError, SamplingError)
#: Physical quantities that cannot cross zero (the search stops at 90 % of the way there).
_SIGN_KEEPING_DOFS = ("focal_length", "radius", "thickness", "diameter", "pixel_pitch", "wavelength", "waist")


@dataclass(frozen=True)
class Threshold:
    """The failure threshold of one dof.

    Attributes
    ----------
    dof : Dof
        The degree of freedom (its ``limit`` is the tolerance, SI).
    threshold : float or None
        Smallest failing excursion magnitude (SI); None when no spec fails within
        ``search_factor`` times the tolerance on either sign.
    sign : int
        +1 or -1, the sign of the failing excursion; 0 when there is none.
    spec : str or None
        Label of the spec that fails there.
    margin : float or None
        ``threshold / tolerance``.
    note : str
        A sentence for people: why there is no threshold, or that the nominal bench fails.
    """

    dof: Dof
    threshold: float | None
    sign: int
    spec: str | None
    margin: float | None
    note: str = ""

    def to_dict(self) -> dict:
        return {"dof": self.dof.name, "tolerance": self.dof.limit, "threshold": self.threshold,
                "margin": self.margin, "spec": self.spec}


def spec_slack(spec: Spec, value: float | None) -> float:
    """Signed, normalised distance of ``value`` to the bounds of ``spec`` (positive passes).

    Each bound contributes ``(value - min) / scale`` or ``(max - value) / scale`` with
    ``scale`` the bound's magnitude (or the width of the band for a bound at zero, or 1);
    the spec's slack is the smaller. A missing or NaN value gives ``MISSING_VALUE_SLACK``.
    The sign agrees with ``Spec.passes``: slack >= 0 exactly when the spec passes.
    """
    if value is None or value != value:
        return MISSING_VALUE_SLACK
    width = (spec.maximum - spec.minimum) if spec.minimum is not None and spec.maximum is not None else None
    slacks = []
    for bound, direction in ((spec.minimum, 1.0), (spec.maximum, -1.0)):
        if bound is None:
            continue
        scale = abs(bound) or width or 1.0
        slacks.append(direction * (value - bound) / scale)
    return min(slacks) if slacks else math.inf


class SlackProbe:
    """The slack of every usable spec for one perturbation, through one Evaluator.

    A spec is usable when its metric comes from the paraxial trace, or needs the field and
    the Evaluator was given a wave simulation. Only the wave simulation a usable spec needs
    is run (paraxial alone when none needs the field).

    Parameters
    ----------
    evaluator : Evaluator
        Evaluates perturbations of one layout.
    """

    def __init__(self, evaluator) -> None:
        self.evaluator = evaluator
        registry = evaluator.registry
        has_wave = evaluator.simulate is not None
        self.specs: tuple[Spec, ...] = tuple(
            spec for spec in evaluator.layout.specs if has_wave or not registry.get(spec.metric).needs_field
        )
        self.skipped: tuple[Spec, ...] = tuple(spec for spec in evaluator.layout.specs if spec not in self.specs)
        self.wave = has_wave and any(registry.get(spec.metric).needs_field for spec in self.specs)

    def notes(self) -> list[str]:
        """Why some specs were left out, if any were."""
        return [f"spec '{spec.label}' needs the wave simulation, which this run does not have: "
                "it is left out of thresholds and adjustments" for spec in self.skipped]

    def evaluate(self, perturbation: Mapping[str, float]):
        """The Evaluator's TrialResult for ``perturbation`` (wave only when a usable spec needs it)."""
        return self.evaluator.evaluate(perturbation, wave=self.wave)

    def slacks_of(self, result) -> dict[str, float]:
        """Slack per usable spec label of an evaluated trial."""
        by_spec = {id(outcome.spec): outcome.value for outcome in result.specs}
        slacks: dict[str, float] = {}
        for spec in self.specs:
            label = spec.label
            slack = spec_slack(spec, by_spec.get(id(spec)))
            slacks[label] = min(slack, slacks.get(label, math.inf))
        return slacks

    def slacks(self, perturbation: Mapping[str, float]) -> dict[str, float]:
        """Slack per usable spec label; a trace that raises gives one failing entry naming why."""
        try:
            return self.slacks_of(self.evaluate(perturbation))
        except _TRACE_FAULTS as error:
            return {f"no valid bench ({type(error).__name__}: {error})": MISSING_VALUE_SLACK}

    def worst(self, perturbation: Mapping[str, float]) -> tuple[float, str | None]:
        """(smallest slack, label of that spec); (inf, None) with no usable spec."""
        slacks = self.slacks(perturbation)
        if not slacks:
            return math.inf, None
        label = min(slacks, key=slacks.get)
        return slacks[label], label


def _search_reach(dof: Dof, sign: int, search_factor: float) -> float:
    """How far the search may go on one sign: ``search_factor`` x limit, short of unphysical values."""
    reach = search_factor * dof.limit
    nominal = dof.nominal
    if not math.isfinite(nominal) or nominal == 0:
        return reach
    if dof.dof in _SIGN_KEEPING_DOFS and sign * nominal < 0:
        reach = min(reach, 0.9 * abs(nominal))
    elif dof.dof == "m2" and sign < 0:
        reach = min(reach, max(nominal - 1.0, 0.0))  # M² cannot go below 1
    elif dof.dof == "fill_factor":
        reach = min(reach, (1.0 - nominal) if sign > 0 else 0.9 * nominal)
    return reach


def _steps(dof: Dof, reach: float, search_factor: float) -> np.ndarray:
    start = START_FRACTION * dof.limit
    count = max(int(math.ceil(STEPS_PER_DOUBLING * math.log2(search_factor / START_FRACTION))), 1) + 1
    steps = np.geomspace(start, search_factor * dof.limit, count)
    steps = steps[steps < reach]
    return np.append(steps, reach) if reach > 0 else steps


def _one_sign(probe: SlackProbe, dof: Dof, sign: int, reach: float, search_factor: float,
              nominal_slack: float) -> tuple[float, str] | None:
    """The crossing on one sign within ``reach``, as (magnitude, spec label), or None."""
    def slack(magnitude: float) -> float:
        return probe.worst({dof.name: sign * magnitude})[0]

    inner, inner_slack = 0.0, nominal_slack
    for outer in _steps(dof, reach, search_factor):
        outer_slack = slack(outer)
        if outer_slack < 0:
            if inner_slack == 0:
                crossing = inner
            else:
                crossing = brentq(slack, inner, outer, xtol=THRESHOLD_XTOL * dof.limit, rtol=1e-8)
            # Judge just past the crossing to name the spec that breaks there.
            past = min(crossing + 1e-6 * dof.limit, outer)
            value, label = probe.worst({dof.name: sign * past})
            if value >= 0:
                label = probe.worst({dof.name: sign * outer})[1]
            return crossing, label
        inner, inner_slack = outer, outer_slack
    return None


def failure_thresholds(evaluator, dofs: Sequence[Dof], search_factor: float = 10.0) -> list[Threshold]:
    """The failure threshold, margin and breaking spec of each dof, the others nominal.

    Parameters
    ----------
    evaluator : Evaluator
        Evaluates perturbations of the layout (paraxial; wave when it has a simulation and
        a spec needs the field).
    dofs : sequence of Dof
        The dofs, each with its tolerance ``limit`` (SI).
    search_factor : float
        How far to look, in multiples of each dof's tolerance.

    Returns
    -------
    list of Threshold
        Sorted by margin, smallest first (margins within the search's resolution,
        ``THRESHOLD_XTOL``, by dof name); dofs that never fail within ``search_factor`` x
        their tolerance come last with ``threshold`` None and a note saying so. When the
        nominal bench already fails a spec, every dof gets threshold 0, margin 0, that spec,
        and a note saying the nominal bench fails.
    """
    if not search_factor > 0:
        raise ValueError(f"search_factor must be positive, got {search_factor}")
    probe = SlackProbe(evaluator)
    nominal_slack, nominal_label = probe.worst({})
    if nominal_slack < 0:
        note = f"the nominal bench already fails spec '{nominal_label}'"
        return sorted((Threshold(dof, 0.0, 0, nominal_label, 0.0, note) for dof in dofs),
                      key=lambda item: item.dof.name)
    results = []
    for dof in dofs:
        best: tuple[float, str, int] | None = None
        for sign in (+1, -1):
            reach = _search_reach(dof, sign, search_factor)
            if best is not None:
                reach = min(reach, best[0])  # only a smaller crossing on this sign matters
            found = _one_sign(probe, dof, sign, reach, search_factor, nominal_slack)
            if found is not None and (best is None or found[0] < best[0]):
                best = (found[0], found[1], sign)
        if best is None:
            note = f"no spec fails within ±{search_factor:g} x its tolerance"
            if not probe.specs:
                note = "no spec can be judged in this run"
            results.append(Threshold(dof, None, 0, None, None, note))
        else:
            threshold, label, sign = best
            results.append(Threshold(dof, threshold, sign, label, threshold / dof.limit))
    return sorted(results, key=_margin_order)


def _margin_order(item: Threshold) -> tuple:
    # Margins closer than the search's resolution (THRESHOLD_XTOL of the tolerance) are a
    # tie, ordered by name: otherwise the last bits of the search (a float32 sum in another
    # order) decide which of two equally sensitive dofs fails first.
    if item.margin is None:
        return (True, 0, item.dof.name)
    return (False, round(item.margin / THRESHOLD_XTOL), item.dof.name)


def fails_first(thresholds: Sequence[Threshold]) -> Threshold | None:
    """The threshold with the smallest margin (the dof that fails first), or None if none fails."""
    failing = [item for item in thresholds if item.margin is not None]
    return min(failing, key=_margin_order) if failing else None
