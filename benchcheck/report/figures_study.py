"""The Monte Carlo in pictures: metric histograms with the spec limits, and margins per dof."""

from __future__ import annotations

import math

import numpy as np

from benchcheck.report.style import FAIL_COLOUR, LINE_COLOURS, PASS_COLOUR, SPEC_COLOUR, new_figure
from benchcheck.units import si_per_unit

__all__ = ["draw_metric_histograms", "draw_fails_first", "display_unit", "MAX_HISTOGRAMS", "MAX_MARGIN_ROWS"]

#: Histograms drawn at most (specs' metrics come first).
MAX_HISTOGRAMS = 8
#: Dofs drawn at most in the fails-first chart (smallest margins).
MAX_MARGIN_ROWS = 20


def display_unit(si_unit: str, display: dict) -> tuple[str, float]:
    """(unit shown, factor from SI) for a metric's SI unit: lengths and angles in display units."""
    unit = {"m": display["length"], "rad": display["angle"]}.get(si_unit)
    return (unit, 1.0 / si_per_unit(unit)) if unit else (si_unit, 1.0)


def draw_metric_histograms(data) -> tuple[object | None, list[dict]]:
    """One histogram per metric across the valid trials, spec limits as vertical lines.

    Parameters
    ----------
    data : ReportData
        Its ``trial_metrics``, ``specs``, ``metric_units`` and display units are drawn.

    Returns
    -------
    (matplotlib.figure.Figure or None, list of dict)
        The figure (None when there is nothing to draw) and per metric ``{"key", "counts",
        "edges_m"}`` (bin edges in SI), the numbers the bars show.
    """
    from matplotlib.ticker import MaxNLocator

    keys = [key for key, values in data.trial_metrics.items() if any(v is not None for v in values)]
    keys = keys[:MAX_HISTOGRAMS]
    if not keys:
        return None, []
    columns = min(3, len(keys))
    rows = math.ceil(len(keys) / columns)
    figure = new_figure(3.4 * columns, 2.7 * rows)
    grid = figure.subplots(rows, columns, squeeze=False)
    drawn = []
    for index, key in enumerate(keys):
        axes = grid[index // columns][index % columns]
        values = np.array([value for value in data.trial_metrics[key] if value is not None], dtype=float)
        values = values[np.isfinite(values)]
        counts, edges = np.histogram(values, bins="auto")
        unit, scale = display_unit(data.metric_units.get(key.rpartition(".")[2], ""), data.summary["display"])
        axes.stairs(counts, edges * scale, fill=True, color=LINE_COLOURS[0], alpha=0.85)
        for spec in data.specs:
            if spec["key"] != key:
                continue
            for bound, label in ((spec["min"], "min"), (spec["max"], "max")):
                if bound is not None:
                    axes.axvline(bound * scale, color=SPEC_COLOUR, linestyle="--", linewidth=1.4,
                                 label=f"spec {label}")
        if axes.get_legend_handles_labels()[0]:
            axes.legend(fontsize=7)
        axes.set_title(key, fontsize=9)
        axes.set_xlabel(f"{key.rpartition('.')[2]}" + (f" ({unit})" if unit else ""), fontsize=8)
        axes.set_ylabel("trials", fontsize=8)
        axes.yaxis.set_major_locator(MaxNLocator(integer=True))
        drawn.append({"key": key, "counts": counts, "edges_m": edges})
    for index in range(len(keys), rows * columns):
        grid[index // columns][index % columns].set_visible(False)
    figure.suptitle(f"Metrics across {len(next(iter(data.trial_metrics.values())))} valid Monte Carlo trials",
                    fontsize=10)
    return figure, drawn


def draw_fails_first(data) -> tuple[object | None, list[dict]]:
    """Margins (failure threshold / tolerance) per dof, smallest first; 1 is the break-even line.

    Returns
    -------
    (matplotlib.figure.Figure or None, list of dict)
        The figure (None without finite margins) and the drawn ``{"dof", "margin", "spec"}`` rows
        in drawing order (smallest margin at the top).
    """
    rows = [row for row in (data.study or {}).get("dofs", [])
            if row.get("margin") is not None and math.isfinite(row["margin"])]
    rows = sorted(rows, key=lambda row: row["margin"])[:MAX_MARGIN_ROWS]
    if not rows:
        return None, []
    figure = new_figure(8.0, 1.0 + 0.28 * len(rows))
    axes = figure.add_subplot()
    positions = np.arange(len(rows))[::-1]
    margins = np.array([row["margin"] for row in rows])
    colours = [FAIL_COLOUR if margin < 1.0 else PASS_COLOUR for margin in margins]
    axes.barh(positions, margins, color=colours, height=0.7)
    axes.set_yticks(positions, labels=[f"{row['dof']} ({row.get('spec') or '-'})" for row in rows], fontsize=7)
    axes.axvline(1.0, color="#000000", linewidth=1.0, linestyle=":")
    axes.set_xlabel("margin = failure threshold / tolerance (below 1: the tolerance alone can fail a spec)")
    axes.set_title("Which tolerance fails first (one dof at a time, the others nominal)", fontsize=10)
    return figure, [{"dof": row["dof"], "margin": row["margin"], "spec": row.get("spec")} for row in rows]
