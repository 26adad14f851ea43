"""Reviewing a layout: rules from plugins, findings with their numbers and basis."""

from benchcheck.review.registry import collect_review_rules
from benchcheck.review.runner import ReviewReport, review, run_rules
from benchcheck.review.types import SEVERITIES, Finding, ReviewContext, ReviewRule, severity_rank

__all__ = [
    "SEVERITIES",
    "Finding",
    "ReviewContext",
    "ReviewReport",
    "ReviewRule",
    "collect_review_rules",
    "review",
    "run_rules",
    "severity_rank",
]
