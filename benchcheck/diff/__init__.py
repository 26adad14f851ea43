"""Comparing two layouts: what changed, and what the change does (``benchcheck diff``)."""

from benchcheck.diff.layout_changes import FieldChange, LayoutChanges, MovedElement, compare_layouts, format_value
from benchcheck.diff.result import DEFAULT_DIFF_TRIALS, LayoutDiff, diff_layouts

__all__ = [
    "DEFAULT_DIFF_TRIALS",
    "FieldChange",
    "LayoutChanges",
    "LayoutDiff",
    "MovedElement",
    "compare_layouts",
    "diff_layouts",
    "format_value",
]
