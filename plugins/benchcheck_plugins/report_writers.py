"""First-party report writers: the entry point ``core_report_writers`` of the ``benchcheck`` group."""

from __future__ import annotations

from benchcheck.hookspecs import hookimpl
from benchcheck.report.html import write_html_report
from benchcheck.report.types import ReportWriter

__all__ = ["benchcheck_register_report_writers"]


@hookimpl
def benchcheck_register_report_writers() -> list[ReportWriter]:
    """The self-contained HTML report (figures embedded, nothing external)."""
    return [ReportWriter(name="html", write=write_html_report, suffix=".html",
                         description="one self-contained HTML file with embedded figures and data")]
