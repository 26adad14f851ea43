"""All figures of a report, drawn from one ``ReportData`` and rendered to PNG bytes."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

from benchcheck.report.figures_bench import draw_bench_side_view
from benchcheck.report.figures_study import draw_fails_first, draw_metric_histograms
from benchcheck.report.figures_wave import draw_camera_frame, draw_plane_field
from benchcheck.report.style import png_bytes, require_matplotlib

__all__ = ["RenderedFigure", "render_figures"]


@dataclass(frozen=True, eq=False)
class RenderedFigure:
    """One figure: a file-safe name, a caption, the PNG, and the numbers it draws (SI)."""

    name: str
    caption: str
    section: str
    png: bytes = field(repr=False)
    drawn: Any = field(repr=False, default=None)


def _file_safe(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", text)


def render_figures(data) -> list[RenderedFigure]:
    """Draw every figure the data allows, in report order.

    Parameters
    ----------
    data : ReportData

    Returns
    -------
    list of RenderedFigure
        ``bench_side_view``; per observation plane ``field_<plane>`` and, with a camera,
        ``frame_<plane>``; ``metric_histograms`` and ``fails_first`` when a study ran.

    Raises
    ------
    BenchcheckError
        When matplotlib is not installed.
    """
    require_matplotlib()
    length = data.summary["display"]["length"]
    figures = []
    figure, lines = draw_bench_side_view(data)
    figures.append(RenderedFigure("bench_side_view", "The bench from the side: ±1/e² radius along the unfolded "
                                  "path (solid x, dashed y); grey bars are the elements (height: clear aperture).",
                                  "bench", png_bytes(figure), lines))
    for image in data.images:
        figure, drawn = draw_plane_field(image, length)
        figures.append(RenderedFigure(f"field_{_file_safe(image.name)}", f"{image.name}: nominal intensity and "
                                      "phase of the simulated field.", "wave", png_bytes(figure), drawn))
        if image.frame is not None:
            figure, drawn = draw_camera_frame(image, length)
            figures.append(RenderedFigure(f"frame_{_file_safe(image.name)}", f"{image.name}: the camera frame "
                                          "(pixel-integrated and quantised).", "wave", png_bytes(figure), drawn))
    figure, drawn = draw_metric_histograms(data)
    if figure is not None:
        figures.append(RenderedFigure("metric_histograms", "Metric values across the Monte Carlo trials; dashed "
                                      "lines are the spec limits.", "study", png_bytes(figure), drawn))
    figure, drawn = draw_fails_first(data)
    if figure is not None:
        figures.append(RenderedFigure("fails_first", "Margin of each dof, smallest first; bars left of the "
                                      "dotted line (margin 1) fail a spec within their own tolerance.",
                                      "study", png_bytes(figure), drawn))
    return figures
