"""What a report writer is: an output format a plugin gives through
``benchcheck_register_report_writers``.

The core builds one ``ReportData`` (every number the report shows) and its figures, then
hands both to the writer the user chose; a writer only lays them out in its format.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # only for annotations
    from benchcheck.report.data import ReportData
    from benchcheck.report.figures import RenderedFigure

__all__ = ["ReportWriter"]


@dataclass(frozen=True)
class ReportWriter:
    """One output format of ``benchcheck report``.

    Attributes
    ----------
    name : str
        Registered format name (``"html"``), unique across plugins.
    write : callable
        ``write(data: ReportData, figures: Sequence[RenderedFigure], path: Path) -> None``;
        writes one file at ``path`` (the caller has already refused to overwrite a file
        without ``--force``). It must not print.
    description : str
        One sentence for people (``benchcheck plugins``).
    suffix : str
        The file name ending the format usually has (``".html"``).
    plugin : str
        The plugin that registered it; filled in by the registry.
    """

    name: str
    write: Callable[["ReportData", Sequence["RenderedFigure"], Path], None]
    description: str
    suffix: str = ""
    plugin: str = ""
