"""Summary statistics of a study: yield with its Wilson interval, per-metric spread, spec failures.

Only valid trials (no numerical or plugin fault) enter the yield and the statistics; faulty
trials are counted apart with their reasons, never averaged in.
"""

from __future__ import annotations

import math
import re
from collections import Counter
from collections.abc import Sequence

import numpy as np
from scipy.stats import binomtest

from benchcheck.tolerance.runfile import TrialRecord

__all__ = [
    "PERCENTILES",
    "yield_with_interval",
    "metric_statistics",
    "spec_failure_share",
    "fault_summary",
    "adjustment_ranges",
    "metric_arrays",
]

#: Percentiles reported per metric (numpy's default "linear" method).
PERCENTILES = (5.0, 50.0, 95.0)


def yield_with_interval(passed: int, valid: int, confidence: float = 0.95) -> tuple[float | None, tuple[float, float] | None]:
    """Yield ``passed / valid`` and its Wilson score interval.

    Parameters
    ----------
    passed : int
        Valid trials that met every spec.
    valid : int
        Trials without a fault.
    confidence : float
        Confidence level of the interval.

    Returns
    -------
    tuple
        (yield, (low, high)); (None, None) when there are no valid trials.

    Notes
    -----
    Wilson, J. Am. Stat. Assoc. 22, 209 (1927), via
    ``scipy.stats.binomtest(k, n).proportion_ci(method="wilson")``.
    """
    if valid <= 0:
        return None, None
    interval = binomtest(int(passed), int(valid)).proportion_ci(confidence_level=confidence, method="wilson")
    return passed / valid, (float(interval.low), float(interval.high))


def metric_arrays(records: Sequence[TrialRecord], names: Sequence[str]) -> dict[str, np.ndarray]:
    """Each metric over the given trials, in their order (NaN where a trial has no value)."""
    arrays = {}
    for name in names:
        values = [record.metrics.get(name) for record in records]
        arrays[name] = np.array([math.nan if value is None else float(value) for value in values], dtype=float)
    return arrays


def metric_statistics(records: Sequence[TrialRecord], names: Sequence[str]) -> dict[str, dict[str, float | None]]:
    """Mean, sample standard deviation and the 5th, 50th and 95th percentiles of each metric.

    Parameters
    ----------
    records : sequence of TrialRecord
        Valid trials, in index order.
    names : sequence of str
        ``<plane>.<metric>`` keys.

    Returns
    -------
    dict
        ``{name: {"mean", "std", "p05", "p50", "p95"}}`` in the metric's SI unit; None where
        no trial has a value. ``std`` uses ``ddof=1`` (0 for a single trial).
    """
    summary = {}
    for name, values in metric_arrays(records, names).items():
        values = values[np.isfinite(values)]
        if values.size == 0:
            summary[name] = {"mean": None, "std": None, "p05": None, "p50": None, "p95": None}
            continue
        low, middle, high = np.percentile(values, PERCENTILES)
        summary[name] = {
            "mean": float(np.mean(values)),
            "std": float(np.std(values, ddof=1)) if values.size > 1 else 0.0,
            "p05": float(low),
            "p50": float(middle),
            "p95": float(high),
        }
    return summary


def spec_failure_share(records: Sequence[TrialRecord], labels: Sequence[str]) -> dict[str, float | None]:
    """Share of valid trials that failed each spec (None with no valid trials)."""
    count = len(records)
    return {
        label: (sum(1 for record in records if not record.specs.get(label, False)) / count if count else None)
        for label in labels
    }


# A number standing alone (not the digit in a name such as "L1").
_NUMBER = re.compile(r"(?<![\w.])[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")


def fault_summary(records: Sequence[TrialRecord]) -> dict:
    """How many trials had a fault, and why (most common first).

    Reasons that differ only in their numbers are grouped (numbers shown as "#"), with the
    first trial's full text as an example.
    """
    reasons: Counter[str] = Counter()
    examples: dict[str, str] = {}
    faulty = 0
    for record in records:
        if record.faults:
            faulty += 1
            kinds = {}
            for fault in record.faults:
                kinds.setdefault(_NUMBER.sub("#", fault), fault)
            reasons.update(kinds.keys())
            for kind, fault in kinds.items():
                examples.setdefault(kind, fault)
    return {"count": faulty, "reasons": [{"reason": reason, "trials": number, "example": examples[reason]}
                                         for reason, number in reasons.most_common()]}


def adjustment_ranges(records: Sequence[TrialRecord]) -> dict[str, dict[str, float | None]]:
    """The range each adjustment needed over valid trials: min, max and 5th/95th percentiles (SI)."""
    names: list[str] = []
    for record in records:
        for name in record.adjusted:
            if name not in names:
                names.append(name)
    ranges: dict[str, dict[str, float | None]] = {}
    for name in names:
        values = np.array([record.adjusted.get(name, math.nan) for record in records], dtype=float)
        values = values[np.isfinite(values)]
        if values.size == 0:
            ranges[name] = {"min": None, "max": None, "p05": None, "p95": None}
            continue
        low, high = np.percentile(values, (5.0, 95.0))
        ranges[name] = {"min": float(values.min()), "max": float(values.max()),
                        "p05": float(low), "p95": float(high)}
    return ranges
