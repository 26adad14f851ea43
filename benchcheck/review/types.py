"""What a layout review is made of: rules, their findings, and what a rule may look at.

A review rule is an object a plugin gives through ``benchcheck_register_review_rules``. The
core calls each rule's ``check`` in its own guard (``benchcheck.review.runner``), so a rule
that fails is reported by name and the others still run.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from benchcheck.bench.graph import Bench
from benchcheck.evaluate.trial import Evaluator
from benchcheck.layout.model import Element, Layout
from benchcheck.optics.beam_trace import TraceResult

__all__ = ["SEVERITIES", "Finding", "ReviewRule", "ReviewContext", "severity_rank"]

#: Severities, most serious first (the order findings are sorted in).
SEVERITIES = ("error", "warning", "note")


def severity_rank(severity: str) -> int:
    """0 for "error", 1 for "warning", 2 for "note" (ValueError for anything else)."""
    try:
        return SEVERITIES.index(severity)
    except ValueError:
        raise ValueError(f"severity must be one of {', '.join(SEVERITIES)}, got {severity!r}") from None


@dataclass(frozen=True)
class Finding:
    """One thing a rule found in a layout.

    Attributes
    ----------
    rule : str
        Name of the rule that found it.
    severity : str
        ``"error"`` (the bench will not work as laid out), ``"warning"`` (it works worse than
        it could, or a margin is thin) or ``"note"`` (worth knowing).
    element : str
        The element it is about ("" for the layout as a whole); a finding about two
        elements names the first here and both in ``message``.
    message : str
        One or two sentences for people, with the numbers behind the finding.
    basis : str
        Where the criterion comes from: a standard, a published formula, or "common practice".
    numbers : mapping of str to float
        The numbers behind the finding, SI units with the unit in the key (``w_m``).
    """

    rule: str
    severity: str
    element: str
    message: str
    basis: str
    numbers: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))

    def __post_init__(self) -> None:
        severity_rank(self.severity)
        object.__setattr__(self, "numbers", MappingProxyType({key: float(value) for key, value in self.numbers.items()}))

    def to_dict(self) -> dict[str, Any]:
        """The finding as ``benchcheck review --json`` writes it (DESIGN.md section 6), plus ``numbers``."""
        return {
            "rule": self.rule,
            "severity": self.severity,
            "element": self.element,
            "message": self.message,
            "basis": self.basis,
            "numbers": {key: (value if math.isfinite(value) else None) for key, value in self.numbers.items()},
        }


@dataclass(frozen=True)
class ReviewRule:
    """A check of a layout that yields findings.

    Attributes
    ----------
    name : str
        Registered name, unique across plugins.
    check : callable
        ``check(context: ReviewContext) -> Iterable[Finding]``.
    description : str
        One sentence for people (``benchcheck plugins``).
    basis : str
        Where its criteria come from (standards, papers, "common practice").
    plugin : str
        The plugin that registered it; filled in by the registry.
    """

    name: str
    check: Callable[["ReviewContext"], Iterable[Finding]]
    description: str
    basis: str
    plugin: str = ""


class ReviewContext:
    """What a rule may look at: the layout, its bench, its nominal trace, and its simulation.

    The wave simulation of the nominal bench is computed the first time a rule asks for
    ``simulation`` (with camera frames) and then shared; a layout whose rules never ask is
    never simulated.

    Parameters
    ----------
    layout : Layout
        The layout under review (spec units resolved).
    evaluator : Evaluator
        Built for the layout with the loaded plugins; its ``simulate`` runs the wave model.
    """

    def __init__(self, layout: Layout, evaluator: Evaluator) -> None:
        self.layout = layout
        self.evaluator = evaluator
        self._simulation = None
        self._simulation_error: Exception | None = None

    @property
    def bench(self) -> Bench:
        """The bench graph of the layout."""
        return self.evaluator.bench

    @property
    def trace(self) -> TraceResult:
        """The nominal paraxial trace."""
        return self.evaluator.nominal

    @property
    def source_power(self) -> float | None:
        """``[bench] power`` (W), or None when the layout does not give it."""
        return self.layout.power

    @property
    def simulation(self):
        """The nominal wave simulation (``benchcheck.evaluate.simulate.SimulationResult``).

        Computed on first use, with camera frames. Raises whatever the simulation raises
        (``SamplingError`` ...), again for every rule that asks, without running it twice;
        the rule that asked then fails in its own guard.
        """
        if self._simulation is None and self._simulation_error is None:
            simulator = self.evaluator.simulate
            try:
                if simulator is None:
                    raise RuntimeError("this evaluator has no wave simulation")
                simulator.record_frames = True
                self._simulation = simulator(self.evaluator.realization(), self.trace)
            except Exception as error:  # kept, so each rule that asks reports the same failure
                self._simulation_error = error
        if self._simulation_error is not None:
            raise self._simulation_error
        return self._simulation

    @property
    def simulated(self) -> bool:
        """True once the simulation has been computed (for tests and reports)."""
        return self._simulation is not None

    def elements(self, *types: str) -> list[Element]:
        """The layout's elements (of the given types, when any are named), in layout order."""
        return [element for element in self.layout.elements if not types or element.type in types]
