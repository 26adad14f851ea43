"""Tests of benchcheck/tolerance/statistics.py: yield interval, metric spread, faults apart."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.stats import norm

from benchcheck.tolerance.runfile import TrialRecord
from benchcheck.tolerance.statistics import (
    adjustment_ranges,
    fault_summary,
    metric_statistics,
    spec_failure_share,
    yield_with_interval,
)


def _wilson(passed: int, count: int, level: float = 0.95) -> tuple[float, float]:
    """Wilson score interval written out (Wilson, J. Am. Stat. Assoc. 22, 209 (1927))."""
    z = norm.ppf(0.5 + level / 2)
    share = passed / count
    centre = share + z**2 / (2 * count)
    half = z * math.sqrt(share * (1 - share) / count + z**2 / (4 * count**2))
    return (centre - half) / (1 + z**2 / count), (centre + half) / (1 + z**2 / count)


@pytest.mark.parametrize("passed, count", [(81, 300), (0, 20), (20, 20), (7, 10)])
def test_yield_interval_is_wilsons(passed, count):
    share, (low, high) = yield_with_interval(passed, count)
    assert share == passed / count
    # Both sides are closed forms in double precision: agreement to rounding.
    assert (low, high) == pytest.approx(_wilson(passed, count), abs=1e-12)


def test_yield_interval_worked_example():
    # Newcombe, Stat. Med. 17, 857 (1998), Table I, 81 of 263: Wilson 0.2553 to 0.3662
    # (values from memory; the paper prints four decimals, hence the 5e-5 tolerance).
    _, (low, high) = yield_with_interval(81, 263)
    assert low == pytest.approx(0.2553, abs=5e-5)
    assert high == pytest.approx(0.3662, abs=5e-5)


def test_no_valid_trial_has_no_yield():
    assert yield_with_interval(0, 0) == (None, None)


def _record(index, value, passed=True, faults=(), adjusted=None):
    return TrialRecord(index=index, seed={}, perturbation={}, adjusted=adjusted or {},
                       metrics={"p.m": value}, specs={"p.m": passed}, passed=passed, faults=faults)


def test_metric_statistics_use_numpy_definitions_and_skip_missing_values():
    values = [0.3, 0.1, None, 0.7, 0.2]
    records = [_record(i, v) for i, v in enumerate(values)]
    stats = metric_statistics(records, ["p.m"])["p.m"]
    finite = np.array([0.3, 0.1, 0.7, 0.2])
    # numpy.percentile default ("linear") method, sample std (ddof=1): same arithmetic.
    assert stats["mean"] == np.mean(finite)
    assert stats["std"] == np.std(finite, ddof=1)
    assert [stats["p05"], stats["p50"], stats["p95"]] == list(np.percentile(finite, [5, 50, 95]))


def test_faults_are_counted_apart_with_their_reasons():
    records = [_record(0, 1.0), _record(1, None, False, ("ValueError: waist must be positive, got -1e-05",)),
               _record(2, None, False, ("ValueError: waist must be positive, got -2.5e-04",)),
               _record(3, None, False, ("SamplingError: grid too coarse",))]
    summary = fault_summary(records)
    assert summary["count"] == 3
    # Reasons that differ only in their numbers are one reason.
    assert summary["reasons"][0] == {"reason": "ValueError: waist must be positive, got #", "trials": 2,
                                     "example": "ValueError: waist must be positive, got -1e-05"}
    assert summary["reasons"][1]["trials"] == 1


def test_spec_failure_share_and_adjustment_ranges():
    records = [_record(0, 1.0, True, adjusted={"cam.z": 1e-3}), _record(1, 2.0, False, adjusted={"cam.z": -2e-3}),
               _record(2, 3.0, False, adjusted={"cam.z": 0.0}), _record(3, 4.0, True, adjusted={"cam.z": 5e-4})]
    assert spec_failure_share(records, ["p.m"]) == {"p.m": 0.5}
    ranges = adjustment_ranges(records)["cam.z"]
    assert (ranges["min"], ranges["max"]) == (-2e-3, 1e-3)
