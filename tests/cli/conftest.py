"""Helpers for end-to-end tests that call main(argv) the way a user runs the command."""

from __future__ import annotations

import io
from pathlib import Path

import pytest
from rich.console import Console

from benchcheck.cli.main import main

LAYOUTS = sorted((Path(__file__).resolve().parents[2] / "layouts").glob("*.toml"))


class Run:
    def __init__(self, argv):
        self.buffer = io.StringIO()
        console = Console(file=self.buffer, width=200, color_system=None)
        self.code = main(argv, console=console)
        self.output = self.buffer.getvalue()


@pytest.fixture
def run_cli():
    return Run


@pytest.fixture(params=LAYOUTS, ids=[path.stem for path in LAYOUTS])
def shipped_layout(request) -> Path:
    return request.param
