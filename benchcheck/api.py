"""The public Python API for notebooks and scripts (re-exported from the package root).

Each result has ``to_dict()``, equal to the JSON the matching command prints.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

from benchcheck.bench.graph import build_bench
from benchcheck.bench.realization import Realization
from benchcheck.layout.loader import load_layout as _load_layout
from benchcheck.layout.model import Layout
from benchcheck.optics.beam_trace import TraceResult, trace_realization

__all__ = ["load_layout", "trace"]


def load_layout(path: str | Path) -> Layout:
    """Read and validate a layout file (raises ``LayoutError`` naming file, line, element, field)."""
    return _load_layout(path)


def trace(layout: Layout | str | Path, perturbation: Mapping[str, float] | None = None) -> TraceResult:
    """Paraxial trace of a layout (a ``Layout`` or a path), optionally perturbed.

    Parameters
    ----------
    layout : Layout or path
        The bench to trace.
    perturbation : mapping of str to float, optional
        Excursions in SI units by degree-of-freedom name, such as ``{"L1.z": 1e-3}``.
    """
    if not isinstance(layout, Layout):
        layout = _load_layout(layout)
    return trace_realization(Realization(build_bench(layout), dict(perturbation or {})))
