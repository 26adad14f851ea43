"""The `benchcheck` command: argument parsing, dispatch, and turning errors into messages.

Each sub-command lives in its own module with ``register(subparsers)`` (which sets
``handler=run`` on its parser) and ``run(args, context) -> int``. Errors that benchcheck
raises on purpose are printed once, here, as one message with exit code 2.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from rich.console import Console
from rich.markup import escape

from benchcheck import __version__
from benchcheck.cli.limit_options import add_limit_options, limits_from_arguments
from benchcheck.errors import BenchcheckError
from benchcheck.limits import use_limits

__all__ = ["main", "run", "CommandContext", "EXIT_OK", "EXIT_BOUND_MISSED", "EXIT_BAD_INPUT"]

EXIT_OK = 0
EXIT_BOUND_MISSED = 1
EXIT_BAD_INPUT = 2

# Sub-command modules, in the order `benchcheck --help` lists them. A module that is not
# there yet (work in progress) is skipped, so the command line always starts.
_COMMAND_MODULES = (
    "benchcheck.cli.trace_command",
    "benchcheck.cli.simulate_command",
    "benchcheck.cli.tolerance_command",
    "benchcheck.cli.mounts_command",
    "benchcheck.cli.review_command",
    "benchcheck.cli.diff_command",
    "benchcheck.cli.report_command",
    "benchcheck.cli.schema_command",
    "benchcheck.cli.plugins_command",
)


@dataclass
class CommandContext:
    """What every sub-command receives besides its arguments."""

    console: Console
    error_console: Console
    disabled_plugins: tuple[str, ...] = ()
    autoload_plugins: bool = True
    _plugin_manager: Any = field(default=None, repr=False)

    def plugin_manager(self):
        """The plugin manager for this run, made on first use with the global plugin options."""
        if self._plugin_manager is None:
            from benchcheck.plugin_manager import make_plugin_manager

            self._plugin_manager = make_plugin_manager(
                disabled=self.disabled_plugins, autoload=self.autoload_plugins
            )
        return self._plugin_manager


def _build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="benchcheck",
        description="Plan and tolerance a laser beam-shaping bench from its TOML layout.",
    )
    parser.add_argument("--version", action="version", version=f"benchcheck {__version__}")
    parser.add_argument(
        "--disable-plugin",
        action="append",
        default=[],
        metavar="NAME",
        help="do not load this plugin (repeatable)",
    )
    parser.add_argument(
        "--no-plugins",
        action="store_true",
        help="load no plugins from entry points (also: BENCHCHECK_NO_PLUGINS=1)",
    )
    add_limit_options(parser)
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    for module_name in _COMMAND_MODULES:
        try:
            module = importlib.import_module(module_name)
        except ModuleNotFoundError as error:
            if error.name == module_name:
                continue
            raise
        module.register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None, console: Console | None = None) -> int:
    """Run benchcheck with the given arguments and return the exit code.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments without the program name; ``sys.argv[1:]`` when omitted.
    console : rich.console.Console, optional
        Where results go (tests pass one that records).
    """
    parser = _build_parser()
    try:
        args = parser.parse_args(list(argv) if argv is not None else None)
    except SystemExit as exit_request:
        return int(exit_request.code or 0) if exit_request.code in (0, None) else EXIT_BAD_INPUT
    # Piped output gets a wide page so tables are not squeezed to 80 columns.
    out = console or Console(soft_wrap=True, width=None if sys.stdout.isatty() else 160)
    context = CommandContext(
        console=out,
        error_console=Console(stderr=True, soft_wrap=True) if console is None else out,
        disabled_plugins=tuple(args.disable_plugin),
        autoload_plugins=not (args.no_plugins or os.environ.get("BENCHCHECK_NO_PLUGINS") == "1"),
    )
    handler = getattr(args, "handler", None)
    if handler is None:
        parser.print_help()
        return EXIT_OK
    try:
        with use_limits(limits_from_arguments(args)):
            return int(handler(args, context))
    except BenchcheckError as error:
        context.error_console.print(f"[bold red]error:[/] {escape(str(error))}", highlight=False)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        context.error_console.print("interrupted")
        return 130


def run() -> None:
    """Console-script entry point."""
    sys.exit(main())
