"""Small helpers the commands share: JSON output, notes, the laser-safety caution."""

from __future__ import annotations

import argparse
import json
import math
from typing import Any

from rich.console import Console
from rich.markup import escape

from benchcheck.safety import LASER_SAFETY_CAUTION
from benchcheck.units import format_quantity

__all__ = ["print_json", "print_notes", "print_safety", "show", "layout_argument", "positive_integer"]


def _clean(value: Any) -> Any:
    """JSON has no inf or NaN: write them as null."""
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {key: _clean(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(item) for item in value]
    return value


def print_json(console: Console, data: dict) -> None:
    """Print ``data`` as JSON (plain text, no colour, so it can be piped)."""
    console.print(json.dumps(_clean(data), indent=2), markup=False, highlight=False, soft_wrap=True)


def print_notes(console: Console, notes, title: str = "notes") -> None:
    if notes:
        console.print(f"[bold]{title}[/]")
        for note in notes:
            console.print(f"  - {escape(str(note))}", highlight=False)


def print_safety(console: Console) -> None:
    console.print(f"[yellow]{escape(LASER_SAFETY_CAUTION)}[/]", highlight=False)


def show(value_si: float | None, unit: str, digits: int = 4) -> str:
    """An SI value in a display unit, for tables."""
    if value_si is None:
        return "-"
    if abs(value_si) < 1e-13:  # rounding residue of a zero (SI metres or radians)
        value_si = 0.0
    return format_quantity(value_si, unit, digits).replace(f" {unit}", "") if unit else f"{value_si:.{digits}g}"


def positive_integer(text: str) -> int:
    """An argparse type: a whole number of at least 1 (trial counts, workers)."""
    value = int(text)
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be at least 1, got {text}")
    return value


def layout_argument(parser) -> None:
    parser.add_argument("layout", help="the layout file (TOML, format 1)")
