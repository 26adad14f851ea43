"""Layouts for the diff and report tests: copies of a shipped layout edited in tmp_path."""

from __future__ import annotations

from pathlib import Path

import pytest

from benchcheck.plugin_manager import make_plugin_manager

SHIPPED = Path(__file__).resolve().parents[2] / "layouts" / "expander_folds_monitor.toml"

# The window W1 added between E1 and E2 in version B; E2 keeps its own path position.
_ADDED_WINDOW = """
[[element]]
name = "W1"
type = "plate"
after = "E1"
gap = 100
thickness = "3 mm"
index = 1.5
clear_aperture = 25.4
"""


def edited_copy(text: str, replacements: list[tuple[str, str]]) -> str:
    """``text`` with each (old, new) replaced exactly once (a test edit that misses is a bug)."""
    for old, new in replacements:
        assert text.count(old) == 1, f"edit target not unique: {old!r}"
        text = text.replace(old, new)
    return text


@pytest.fixture(scope="session")
def plugin_manager():
    return make_plugin_manager()


@pytest.fixture
def layout_pair(tmp_path) -> tuple[Path, Path]:
    """Version A (the shipped expander layout) and version B: E2 focal length 200 -> 210 mm,
    M1 moved 10 mm downstream, W1 added, M2 removed (the pick-off keeps its position)."""
    text = SHIPPED.read_text()
    first = tmp_path / "a.toml"
    first.write_text(text)
    second_text = edited_copy(text, [
        ("gap = 250                       # f1 + f2: a 4x Keplerian expander\nfocal_length = 200",
         "gap = 250\nfocal_length = 210"),
        ('after = "E2"\ngap = 120', 'after = "E2"\ngap = 130'),
        ('[[element]]\nname = "M2"\ntype = "mirror"\nafter = "M1"\ngap = 150\nincidence = "45 deg"\n'
         'incidence_plane = "yz"\nclear_aperture = 25.4\nmount = "kinematic"\ntolerance = { tilt_x = 0.05, '
         'tilt_y = 0.05 }\n\n', ""),
        ('after = "M2"\ngap = 100', 'after = "M1"\ngap = 240'),
        ('[[element]]\nname = "E2"', _ADDED_WINDOW.lstrip() + '\n[[element]]\nname = "E2"'),
    ])
    second = tmp_path / "b.toml"
    second.write_text(second_text)
    return first, second


@pytest.fixture
def report_layout(tmp_path) -> Path:
    """The shipped expander layout in tmp_path with a small Monte Carlo by default."""
    path = tmp_path / "bench.toml"
    path.write_text(edited_copy(SHIPPED.read_text(), [("trials = 500", "trials = 8")]))
    return path
