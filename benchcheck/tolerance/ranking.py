"""Which dofs drive the spec metrics across a Monte Carlo: rank correlations.

A dof can be safe alone (a large failure threshold) and still harmful in combination with
others, so the Monte Carlo's own trials are ranked too: Spearman's rank correlation
(Spearman, Am. J. Psychol. 15, 72 (1904); ``scipy.stats.spearmanr``) of each dof's
excursions with each spec metric, and of the size of each excursion with failure.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

import numpy as np
from scipy.stats import spearmanr

__all__ = ["contribution_ranking", "rank_correlation", "rank_correlation_test"]


def rank_correlation_test(first: Sequence[float], second: Sequence[float]) -> tuple[float | None, float | None]:
    """Spearman's rho of two samples and its two-sided p-value, leaving out pairs with a NaN.

    Returns (None, None) when undefined: fewer than three complete pairs, or one sample
    constant (no ranks to correlate). The p-value is scipy's (t distribution with n - 2
    degrees of freedom), a guide for telling a contributor from sampling noise.
    """
    a = np.asarray(first, dtype=float)
    b = np.asarray(second, dtype=float)
    keep = np.isfinite(a) & np.isfinite(b)
    a, b = a[keep], b[keep]
    if a.size < 3 or np.ptp(a) == 0 or np.ptp(b) == 0:
        return None, None
    result = spearmanr(a, b)
    rho, p_value = float(result.statistic), float(result.pvalue)
    if not math.isfinite(rho):
        return None, None
    return rho, (p_value if math.isfinite(p_value) else None)


def rank_correlation(first: Sequence[float], second: Sequence[float]) -> float | None:
    """Spearman's rho of two samples, leaving out pairs with a NaN; None when undefined."""
    return rank_correlation_test(first, second)[0]


def _as_float(values: Sequence[float | None]) -> np.ndarray:
    return np.array([math.nan if value is None else float(value) for value in values], dtype=float)


def contribution_ranking(
    dof_names: Sequence[str],
    excursions: np.ndarray | Sequence[Sequence[float]],
    passed: Sequence[bool],
    metrics: Mapping[str, Sequence[float | None]],
) -> list[dict]:
    """Rank the dofs of a Monte Carlo by how strongly they drive the spec metrics.

    Parameters
    ----------
    dof_names : sequence of str
        One name per column of ``excursions``.
    excursions : array, shape (trials, dofs)
        Each trial's excursion of each dof (SI).
    passed : sequence of bool, length trials
        Whether each trial met every spec.
    metrics : mapping of str to sequence
        ``"<plane>.<metric>"`` -> one value per trial (None or NaN where a metric had no value).

    Returns
    -------
    list of dict
        One per dof, sorted by ``max_abs_spearman`` descending (ties by name):
        ``"dof"``; ``"spearman"``: metric key -> rho of the signed excursion with the metric
        (None when undefined); ``"spearman_magnitude"``: the same for the excursion's size
        ``|x|``, which is what a metric even in the excursion (a beam radius against focus,
        a radial offset) responds to; ``"max_abs_spearman"``: the largest ``|rho|`` of the
        two; ``"fail_correlation"``: rho of ``|x|`` with failure (1 failed, 0 passed), None
        when every trial passed or every trial failed; ``"fail_p_value"``: its two-sided
        p-value (how likely so strong a rho is from sampling noise alone).
    """
    table = np.asarray(excursions, dtype=float)
    if table.ndim != 2 or table.shape[1] != len(dof_names):
        raise ValueError(f"excursions must have shape (trials, {len(dof_names)}), got {table.shape}")
    failed = 1.0 - np.asarray(passed, dtype=float)
    if failed.shape[0] != table.shape[0]:
        raise ValueError(f"passed has {failed.shape[0]} entries for {table.shape[0]} trials")
    metric_values = {key: _as_float(values) for key, values in metrics.items()}
    ranking = []
    for column, name in enumerate(dof_names):
        signed = table[:, column]
        size = np.abs(signed)
        spearman = {key: rank_correlation(signed, values) for key, values in metric_values.items()}
        magnitude = {key: rank_correlation(size, values) for key, values in metric_values.items()}
        strengths = [abs(rho) for rho in (*spearman.values(), *magnitude.values()) if rho is not None]
        fail_rho, fail_p_value = rank_correlation_test(size, failed)
        ranking.append({
            "dof": name,
            "spearman": spearman,
            "spearman_magnitude": magnitude,
            "max_abs_spearman": max(strengths) if strengths else 0.0,
            "fail_correlation": fail_rho,
            "fail_p_value": fail_p_value,
        })
    ranking.sort(key=lambda entry: (-entry["max_abs_spearman"], entry["dof"]))
    return ranking
