"""Writing layout files for the loader tests, and finding the line a test expects an error on.

A layout text marks the line an error must point at with a trailing ``#!`` comment
(TOML ignores comments, so the mark changes nothing the loader reads).
"""

from __future__ import annotations

import textwrap
from collections.abc import Callable
from pathlib import Path

import pytest

__all__ = ["LINE_MARK", "compose", "marked_line"]

LINE_MARK = "#!"


def compose(*blocks: str) -> str:
    """Join dedented blocks of TOML into one layout text."""
    return "\n".join(textwrap.dedent(block).strip("\n") + "\n" for block in blocks)


def marked_line(text: str) -> int | None:
    """1-based number of the line carrying the ``#!`` mark, or None when there is none."""
    marked = [number for number, line in enumerate(text.splitlines(), start=1) if line.rstrip().endswith(LINE_MARK)]
    assert len(marked) <= 1, "a test layout marks at most one line"
    return marked[0] if marked else None


@pytest.fixture
def write_layout(tmp_path: Path) -> Callable[..., Path]:
    """Write layout text to a file under ``tmp_path`` and return its path."""

    def write(text: str, name: str = "bench.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return write
