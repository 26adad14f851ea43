"""The mount plan: the coarsest mount class per element that keeps the bench in spec.

1. Failure thresholds of every pose dof (``z``, ``x``, ``y``, ``tilt_x``, ``tilt_y``) of
   every mounted element, and of the layout's other dofs (source, device tolerances).
2. Root-sum-square allocation: each dof may use ``threshold / sqrt(n)``, n the number of
   dofs with a finite threshold (independent errors add in quadrature; common practice).
3. Each element gets the coarsest class whose limits keep all its dofs inside their shares.
4. A Monte Carlo with those limits as tolerances (uniform on ± the class's limit; the
   layout's other dofs keep their own tolerances) verifies the yield, with its Wilson
   interval (Wilson, J. Am. Stat. Assoc. 22, 209 (1927)).
5. While the yield is below the target, the element of the dof whose excursion size is most
   rank-correlated with failure (graded: how far the trial's worst spec is past its bound)
   is moved to the next finer class that holds that dof more
   tightly, and the Monte Carlo is run again with the same draws. A correlation counts only
   when it stands out from sampling noise: its p-value below ``SIGNIFICANCE`` divided by the
   number of dofs ranked (Bonferroni correction, so that among many dofs that do nothing one
   is not upgraded by chance).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace

import numpy as np

from benchcheck.errors import LayoutError, SamplingError
from benchcheck.layout.model import Layout, MountClass
from benchcheck.tolerance.adjust import Adjuster
from benchcheck.tolerance.dofs import DOF_UNITS, Dof, nominal_value, resolve_dofs
from benchcheck.tolerance.mount_catalogue import CATALOGUE_BASIS, mount_classes
from benchcheck.tolerance.ranking import rank_correlation_test
from benchcheck.tolerance.samplers import Sampler
from benchcheck.tolerance.statistics import yield_with_interval
from benchcheck.tolerance.thresholds import SlackProbe, Threshold, failure_thresholds

__all__ = ["MountChoice", "Upgrade", "MountPlan", "plan_mount_classes", "PLANNED_DOFS", "UNMOUNTED_TYPES",
           "SIGNIFICANCE"]

#: The dofs a mount holds.
PLANNED_DOFS = ("z", "x", "y", "tilt_x", "tilt_y")
#: Element types with no mount of their own (an observation plane is where the beam is judged).
UNMOUNTED_TYPES = ("plane",)
#: Family-wise level at which a rank correlation with failure counts as a contributor (common practice).
SIGNIFICANCE = 0.05
#: Faults a far-out trial may raise (trace or wave sampling); such a trial is left out of the yield.
_TRIAL_FAULTS = (ValueError, ArithmeticError, SamplingError)


@dataclass(frozen=True)
class MountChoice:
    """The class chosen for one element and the dof that limits it."""

    element: str
    mount_class: str
    rank: int
    origin: str
    layout_mount: str | None
    limiting_dof: str | None
    threshold: float | None
    hold: float | None
    margin: float | None
    fine_enough: bool

    def to_dict(self) -> dict:
        return {"element": self.element, "class": self.mount_class, "rank": self.rank, "origin": self.origin,
                "layout_mount": self.layout_mount, "limiting_dof": self.limiting_dof,
                "threshold": self.threshold, "hold": self.hold, "margin": self.margin,
                "fine_enough": self.fine_enough}


@dataclass(frozen=True)
class Upgrade:
    """One step of the verification loop: an element moved to a finer class."""

    element: str
    from_class: str
    to_class: str
    dof: str
    failure_correlation: float
    yield_before: float | None

    def to_dict(self) -> dict:
        return {"element": self.element, "from": self.from_class, "to": self.to_class, "dof": self.dof,
                "failure_correlation": self.failure_correlation, "yield_before": self.yield_before}


@dataclass(frozen=True)
class MountPlan:
    """A mount class for each element, with the yield it was verified to give."""

    choices: tuple[MountChoice, ...]
    yield_value: float | None
    yield_ci95: tuple[float, float] | None
    valid_trials: int
    trials: int
    seed: int
    sampler: str
    yield_target: float
    upgrades: tuple[Upgrade, ...]
    classes: tuple[tuple[MountClass, str], ...]
    thresholds: tuple[Threshold, ...]
    notes: tuple[str, ...]

    @property
    def met(self) -> bool:
        """True when the verified yield reaches the target."""
        return self.yield_value is not None and self.yield_value >= self.yield_target

    def to_dict(self) -> dict:
        return {
            "trials": self.trials,
            "valid_trials": self.valid_trials,
            "seed": self.seed,
            "sampler": self.sampler,
            "yield_target": self.yield_target,
            "yield": self.yield_value,
            "yield_ci95": list(self.yield_ci95) if self.yield_ci95 is not None else None,
            "met": self.met,
            "elements": [choice.to_dict() for choice in self.choices],
            "upgrades": [upgrade.to_dict() for upgrade in self.upgrades],
            "classes": [{"name": mount.name, "rank": mount.rank, "origin": origin,
                         "description": mount.description, "holds": dict(mount.holds)}
                        for mount, origin in self.classes],
            "dofs": [threshold.to_dict() for threshold in self.thresholds],
            "notes": list(self.notes),
        }


@dataclass
class _Verification:
    yield_value: float | None
    interval: tuple[float, float] | None
    valid: int
    dof_names: list[str]
    excursions: np.ndarray
    slacks: dict[str, np.ndarray]  # per spec label, one slack per valid trial

    def shortfall(self) -> np.ndarray:
        """Minus the smallest slack of the specs that fail in some trial: how badly each trial fails.

        Specs that never fail are left out, so that a spec merely close to its bound in the
        passing trials does not hide which dofs drive the failures.
        """
        failing = [values for values in self.slacks.values() if np.any(values < 0)] or list(self.slacks.values())
        if not failing:
            return np.zeros(self.excursions.shape[0])
        return -np.min(np.vstack(failing), axis=0)


def _limit(mount: MountClass, dof: Dof) -> float:
    """What ``mount`` holds ``dof`` to; the dof's own probe limit when the class does not say."""
    return float(mount.holds.get(dof.dof, dof.limit))


def _planned_dofs(layout: Layout, classes: Mapping[str, tuple[MountClass, str]],
                  tolerances: Mapping[str, Dof]) -> dict[str, list[Dof]]:
    """Pose dofs per mounted element, each with a probe limit: the layout's tolerance, else
    the coarsest class's hold. Adjustments are left out: the user sets them after assembly."""
    adjusted = set(layout.tolerancing.adjust)
    planned: dict[str, list[Dof]] = {}
    for element in layout.elements:
        if element.type in UNMOUNTED_TYPES:
            continue
        dofs = []
        for short in PLANNED_DOFS:
            name = f"{element.name}.{short}"
            holds = [mount.holds[short] for mount, _ in classes.values() if short in mount.holds]
            if name in adjusted or not (name in tolerances or holds):
                continue
            limit = tolerances[name].limit if name in tolerances else holds[0]
            if limit > 0:
                dofs.append(Dof(name, limit, "uniform", nominal_value(element, short),
                                kind=DOF_UNITS.get(short, "length")))
        planned[element.name] = dofs
    return planned


def _choose(dofs: Sequence[Dof], shares: Mapping[str, float],
            classes: Mapping[str, tuple[MountClass, str]]) -> tuple[str, bool]:
    """The coarsest class keeping every dof with a share inside it; the finest when none does."""
    for name, (mount, _) in classes.items():
        if all(_limit(mount, dof) <= shares[dof.name] for dof in dofs if dof.name in shares):
            return name, True
    return next(reversed(classes)), False


class _Verifier:
    """Runs the verifying Monte Carlo for one assignment of classes."""

    def __init__(self, evaluator, layout: Layout, planned: Sequence[Dof], others: Sequence[Dof],
                 trials: int, seed: int) -> None:
        self.probe = SlackProbe(evaluator)
        self.adjuster = Adjuster(evaluator, layout) if layout.tolerancing.adjust else None
        self.planned = list(planned)
        self.others = list(others)
        self.trials, self.seed, self.sampler = trials, seed, layout.tolerancing.sampler

    def run(self, limits: Mapping[str, float]) -> _Verification:
        dofs = [replace(dof, limit=limits[dof.name], distribution="uniform") for dof in self.planned] + self.others
        excursions = Sampler(tuple(dofs), self.sampler, self.seed).excursions(0, self.trials)
        names = [dof.name for dof in dofs]
        slacks = {spec.label: np.full(self.trials, np.nan) for spec in self.probe.specs}
        valid = np.zeros(self.trials, dtype=bool)
        for index, row in enumerate(excursions):
            perturbation = dict(zip(names, (float(value) for value in row)))
            try:
                result = (self.adjuster.evaluate(perturbation)[0] if self.adjuster is not None
                          else self.probe.evaluate(perturbation))
            except _TRIAL_FAULTS:
                continue
            valid[index] = True
            for label, slack in self.probe.slacks_of(result).items():
                slacks[label][index] = slack
        slacks = {label: values[valid] for label, values in slacks.items()}
        passed = np.all(np.vstack([np.zeros(int(valid.sum()))] + list(slacks.values())) >= 0, axis=0)
        yield_value, interval = yield_with_interval(int(passed.sum()), int(valid.sum()))
        return _Verification(yield_value, interval, int(valid.sum()), names, excursions[valid], slacks)


def _next_upgrade(verification: _Verification, planned: Sequence[Dof], owner: Mapping[str, str],
                  assignment: Mapping[str, str], classes: Mapping[str, tuple[MountClass, str]],
                  ) -> tuple[Upgrade | None, list[str]]:
    """Move the worst contributor's element one class finer (in the dof it contributes through).

    The worst contributor is the dof most rank-correlated with how badly the trials fail
    (the shortfall, minus the smallest spec slack): graded rather than pass/fail, so every
    trial informs it, not only the few that failed. Both the excursion's size ``|x|`` (for
    effects even in x, such as a radial offset) and the signed excursion (for one-sided
    effects, either sign of rho) are tried; the stronger counts.
    Returns the upgrade (None when no contributor can move) and the contributors, worst
    first, that no mount holds (source and device dofs).
    """
    level = SIGNIFICANCE / max(len(verification.dof_names), 1)
    shortfall = verification.shortfall()
    contributors = []
    for column, name in enumerate(verification.dof_names):
        excursion = verification.excursions[:, column]
        size_rho, size_p = rank_correlation_test(np.abs(excursion), shortfall)
        signed_rho, signed_p = rank_correlation_test(excursion, shortfall)
        tests = [(size_rho, size_p)] if size_rho is not None and size_rho > 0 else []
        if signed_rho is not None:
            tests.append((abs(signed_rho), signed_p))
        if tests:
            rho, p_value = max(tests, key=lambda test: test[0])
            if p_value is not None and p_value < level:
                contributors.append((rho, name))
    contributors.sort(key=lambda item: (-item[0], item[1]))
    by_name = {dof.name: dof for dof in planned}
    unmounted = [name for _, name in contributors if name not in by_name]
    order = list(classes)
    for rho, name in contributors:
        dof = by_name.get(name)
        if dof is None:
            continue
        element = owner[dof.name]
        current = assignment[element]
        held = _limit(classes[current][0], dof)
        for finer in order[order.index(current) + 1:]:
            if _limit(classes[finer][0], dof) < held:
                return Upgrade(element, current, finer, dof.name, rho, verification.yield_value), unmounted
    return None, unmounted


def _choice(element, name: str, dofs: Sequence[Dof], thresholds: Mapping[str, Threshold],
            classes: Mapping[str, tuple[MountClass, str]], fine_enough: bool) -> MountChoice:
    mount, origin = classes[name]
    limiting = None
    for dof in dofs:
        threshold = thresholds[dof.name].threshold
        if threshold is None:
            continue
        hold = _limit(mount, dof)
        margin = threshold / hold if hold > 0 else math.inf
        if limiting is None or margin < limiting[3]:
            limiting = (dof.name, threshold, hold, margin)
    if limiting is None:
        return MountChoice(element.name, name, mount.rank, origin, element.mount, None, None, None, None, fine_enough)
    return MountChoice(element.name, name, mount.rank, origin, element.mount, *limiting, fine_enough)


def plan_mount_classes(
    evaluator,
    layout: Layout,
    trials: int | None = None,
    seed: int | None = None,
    yield_target: float | None = None,
    use_catalogue: bool = True,
    search_factor: float = 10.0,
) -> MountPlan:
    """Choose a mount class for every mounted element and verify the yield by Monte Carlo.

    Parameters
    ----------
    evaluator : Evaluator
        Evaluates perturbations of ``layout``.
    layout : Layout
        The bench; its ``[mounts.<class>]`` tables extend or override the catalogue.
    trials, seed : int, optional
        Monte Carlo size and seed; ``[tolerancing]`` values when omitted.
    yield_target : float, optional
        Share of trials that must pass; ``[tolerancing] yield_target`` (0.95 by default).
    use_catalogue : bool
        False: choose only among the layout's own classes.
    search_factor : float
        How far each failure threshold is searched, in multiples of the dof's probe limit.

    Returns
    -------
    MountPlan

    Raises
    ------
    LayoutError
        When there is no mount class to choose from.
    """
    classes = mount_classes(layout, use_catalogue)
    if not classes:
        raise LayoutError("there are no mount classes to plan with", file=layout.path, field="mounts",
                          hint="add [mounts.<class>] tables or use the default catalogue")
    tolerancing = layout.tolerancing
    trials = tolerancing.trials if trials is None else int(trials)
    seed = tolerancing.seed if seed is None else int(seed)
    target = tolerancing.yield_target if yield_target is None else float(yield_target)
    if trials < 1 or not 0 < target <= 1:
        raise LayoutError(f"need at least one trial and a yield target in (0, 1]; got {trials}, {target}",
                          file=layout.path, field="tolerancing")
    tolerances = {dof.name: dof for dof in resolve_dofs(layout)}
    planned_by_element = _planned_dofs(layout, classes, tolerances)
    planned = [dof for dofs in planned_by_element.values() for dof in dofs]
    owner = {dof.name: element for element, dofs in planned_by_element.items() for dof in dofs}
    others = [dof for name, dof in tolerances.items() if name not in owner]

    found = failure_thresholds(evaluator, planned + others, search_factor)
    thresholds = {item.dof.name: item for item in found}
    finite = [item for item in found if item.threshold is not None]
    shares = {item.dof.name: item.threshold / math.sqrt(len(finite)) for item in finite}
    notes: list[str] = []
    if found and found[0].note.startswith("the nominal bench"):
        notes.append(found[0].note + ": no mount can fix that")
    assignment, fine_enough = {}, {}
    for element, dofs in planned_by_element.items():
        assignment[element], fine_enough[element] = _choose(dofs, shares, classes)

    verifier = _Verifier(evaluator, layout, planned, others, trials, seed)
    notes.extend(verifier.probe.notes())
    if verifier.adjuster is not None:
        notes.extend(note for note in verifier.adjuster.notes if note not in notes)
    upgrades: list[Upgrade] = []
    while True:
        limits = {dof.name: _limit(classes[assignment[owner[dof.name]]][0], dof) for dof in planned}
        verification = verifier.run(limits)
        if verification.yield_value is not None and verification.yield_value >= target:
            break
        upgrade, unmounted = _next_upgrade(verification, planned, owner, assignment, classes)
        if upgrade is None:
            notes.append("the yield target is not met, and no mount dof whose excursions clearly correlate "
                         "with failure can move to a finer class (more trials may separate a contributor "
                         "from noise)")
            if unmounted:
                notes.append("failures follow dofs no mount holds (tighten their tolerances): "
                             + ", ".join(unmounted))
            break
        upgrades.append(upgrade)
        assignment[upgrade.element] = upgrade.to_class

    elements = {element.name: element for element in layout.elements}
    choices = tuple(_choice(elements[name], assignment[name], dofs, thresholds, classes, fine_enough[name])
                    for name, dofs in planned_by_element.items())
    for choice in choices:
        if not choice.fine_enough:
            notes.append(f"'{choice.element}': no class keeps every dof inside its share of the failure "
                         f"threshold; the finest, '{choice.mount_class}', was taken")
    if any(origin == "catalogue" for _, origin in classes.values()):
        notes.append(CATALOGUE_BASIS)
    notes.append("source and device dofs (focal length, pixel pitch, ...) keep the layout's tolerances; "
                 "mount limits are drawn uniformly within ± the class's limit")
    return MountPlan(
        choices=choices, yield_value=verification.yield_value, yield_ci95=verification.interval,
        valid_trials=verification.valid, trials=trials, seed=seed, sampler=tolerancing.sampler,
        yield_target=target, upgrades=tuple(upgrades), classes=tuple(classes.values()),
        thresholds=tuple(item for item in found if item.dof.name in owner), notes=tuple(notes),
    )
