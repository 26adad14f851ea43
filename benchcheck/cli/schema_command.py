"""`benchcheck schema`: the JSON Schema of layout format 1, for editors."""

from __future__ import annotations

from benchcheck.cli.output import print_json
from benchcheck.layout.schema import layout_schema

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "schema", help="print the JSON Schema of layout format 1 (for editor completion)",
        description="Print a JSON Schema of the layout format; TOML language servers use it in editors.",
    )
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    print_json(context.console, layout_schema())
    return 0
