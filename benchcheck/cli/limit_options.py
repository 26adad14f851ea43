"""Global options that raise the resource caps or allow reading outside a layout's folder."""

from __future__ import annotations

import argparse
from pathlib import Path

from benchcheck.limits import (
    DEFAULT_MAX_GRID,
    DEFAULT_MAX_TRIALS,
    GRID_CEILING,
    TRIALS_CEILING,
    Limits,
    format_size,
    parse_size,
)

__all__ = ["add_limit_options", "limits_from_arguments"]


def _size(text: str) -> int:
    try:
        return parse_size(text)
    except ValueError as error:
        raise argparse.ArgumentTypeError(str(error)) from None


def _bounded(ceiling: int):
    def read(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected a whole number, got '{text}'") from None
        if not 1 <= value <= ceiling:
            raise argparse.ArgumentTypeError(f"must be between 1 and {ceiling}, got {value}")
        return value

    return read


def _folder(text: str) -> Path:
    path = Path(text)
    if not path.is_dir():
        raise argparse.ArgumentTypeError(f"'{text}' is not a folder")
    return path.resolve()


def add_limit_options(parser: argparse.ArgumentParser) -> None:
    """Add ``--max-memory``, ``--max-grid``, ``--max-trials`` and ``--allow-path`` to the global parser."""
    default_memory = format_size(Limits().max_memory)
    parser.add_argument("--max-memory", type=_size, metavar="SIZE",
                        help=f"largest estimated memory of one wave simulation, e.g. 8GiB "
                             f"(default: a quarter of physical memory, at most 4 GiB; here {default_memory})")
    parser.add_argument("--max-grid", type=_bounded(GRID_CEILING), metavar="N",
                        help=f"largest wave grid, samples per side (default {DEFAULT_MAX_GRID}, at most {GRID_CEILING})")
    parser.add_argument("--max-trials", type=_bounded(TRIALS_CEILING), metavar="N",
                        help=f"most trials in one study (default {DEFAULT_MAX_TRIALS:,}, at most {TRIALS_CEILING:,})")
    parser.add_argument("--allow-path", type=_folder, action="append", default=[], metavar="DIR",
                        help="let layouts read files (phase maps) from this folder too (repeatable)")


def limits_from_arguments(args: argparse.Namespace) -> Limits:
    """The Limits of this run: the defaults, raised where an option says so."""
    defaults = Limits()
    limits = Limits(max_grid=getattr(args, "max_grid", None) or defaults.max_grid,
                    max_memory=getattr(args, "max_memory", None) or defaults.max_memory,
                    max_trials=getattr(args, "max_trials", None) or defaults.max_trials)
    return limits.allowing(getattr(args, "allow_path", None) or [])
