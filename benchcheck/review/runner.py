"""Running a review: every registered rule on one layout, each in its own guard."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass

from benchcheck.errors import PluginError
from benchcheck.layout.model import Layout
from benchcheck.review.registry import collect_review_rules
from benchcheck.review.types import Finding, ReviewContext, ReviewRule, severity_rank

__all__ = ["ReviewReport", "review", "run_rules", "RULE_FAILURE_BASIS"]

#: Basis of the finding that stands for a rule that failed.
RULE_FAILURE_BASIS = "benchcheck: a review rule that fails is reported and the other rules run"


@dataclass(frozen=True)
class ReviewReport:
    """The findings of a review, most serious first, then by element and rule.

    Attributes
    ----------
    layout : Layout
        The layout reviewed.
    findings : tuple of Finding
        Sorted by severity (error, warning, note), then element, then rule.
    rules : tuple of str
        Names of the rules that ran.
    """

    layout: Layout
    findings: tuple[Finding, ...]
    rules: tuple[str, ...] = ()

    def count(self, severity: str) -> int:
        """How many findings have this severity."""
        return sum(1 for finding in self.findings if finding.severity == severity)

    def has_at_least(self, severity: str) -> bool:
        """True when a finding at or above ``severity`` exists ("warning" counts errors too)."""
        limit = severity_rank(severity)
        return any(severity_rank(finding.severity) <= limit for finding in self.findings)

    def to_dict(self) -> dict:
        """``{"findings": [...]}``, as DESIGN.md section 6 writes ``benchcheck review --json``."""
        return {"findings": [finding.to_dict() for finding in self.findings]}


def _sort_key(finding: Finding) -> tuple:
    return severity_rank(finding.severity), finding.element, finding.rule


def _guarded(rule: ReviewRule, context: ReviewContext) -> list[Finding]:
    """Run one rule; a rule that raises or returns something else becomes one error finding."""
    try:
        findings = list(rule.check(context) or ())
        strays = [item for item in findings if not isinstance(item, Finding)]
        if strays:
            raise TypeError(f"returned {strays[0]!r}, not a Finding")
        return findings
    except Exception as error:  # one failing rule is named; the others go on
        owner = f"plugin '{rule.plugin}'" if rule.plugin else "no plugin"
        return [Finding(
            rule=rule.name,
            severity="error",
            element="",
            message=f"review rule '{rule.name}' ({owner}) failed: {type(error).__name__}: {error}; "
                    "its checks were not made, the other rules ran",
            basis=RULE_FAILURE_BASIS,
        )]


def run_rules(rules: Iterable[ReviewRule], context: ReviewContext) -> ReviewReport:
    """Run ``rules`` on the layout of ``context``, each in its own guard, and sort the findings."""
    rules = list(rules)
    findings = [finding for rule in rules for finding in _guarded(rule, context)]
    return ReviewReport(context.layout, tuple(sorted(findings, key=_sort_key)), tuple(rule.name for rule in rules))


def review(layout: Layout, plugin_manager=None, rules: Mapping[str, ReviewRule] | None = None) -> ReviewReport:
    """Review a layout with every registered rule (``benchcheck review``).

    Parameters
    ----------
    layout : Layout
        The bench to review.
    plugin_manager : pluggy.PluginManager, optional
        Where rules, metrics, element types and patterns come from (the plugins of the
        ``benchcheck`` entry points when omitted).
    rules : mapping of str to ReviewRule, optional
        Run these instead of the registered rules.

    Returns
    -------
    ReviewReport
        ``to_dict()`` equals ``benchcheck review LAYOUT --json`` without ``laser_safety``.

    Raises
    ------
    PluginError
        A plugin's review-rule hook fails or registers a duplicate name.
    LayoutError
        The layout cannot be evaluated (a spec naming an unknown metric ...).
    """
    from benchcheck.evaluate.factory import make_evaluator

    if plugin_manager is None:
        from benchcheck.plugin_manager import make_plugin_manager

        plugin_manager = make_plugin_manager()
    if rules is None:
        rules = collect_review_rules(plugin_manager)
    if not all(isinstance(rule, ReviewRule) for rule in rules.values()):
        raise PluginError("review() takes ReviewRule objects")
    evaluator = make_evaluator(layout, plugin_manager)
    context = ReviewContext(evaluator.layout, evaluator)
    return run_rules(rules.values(), context)
