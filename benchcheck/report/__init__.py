"""Reports: one ``ReportData`` per layout, its figures, and writers (plugins) that lay them out."""

from benchcheck.report.data import PlaneImage, ReportData, build_report_data, envelope_segments
from benchcheck.report.figures import RenderedFigure, render_figures
from benchcheck.report.types import ReportWriter
from benchcheck.report.writers import collect_report_writers

__all__ = [
    "PlaneImage",
    "RenderedFigure",
    "ReportData",
    "ReportWriter",
    "build_report_data",
    "collect_report_writers",
    "envelope_segments",
    "render_figures",
]
