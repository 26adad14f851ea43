"""`benchcheck plugins`: list the plugins, where they come from, and what they add.

Loaded plugins show their distribution, version, hooks and the metrics, hologram patterns,
element types, review rules and report writers they register; plugins that failed to load
are listed with the reason, and disabled ones are marked. ``--json`` prints the same data.
"""

from __future__ import annotations

import argparse
import json
from typing import Any

from rich.markup import escape
from rich.table import Table

from benchcheck.plugin_manager import describe_plugins

__all__ = ["register", "run", "plugins_payload"]


def register(subparsers: Any) -> argparse.ArgumentParser:
    """Add the ``plugins`` sub-command to the command line."""
    parser = subparsers.add_parser(
        "plugins",
        help="list plugins, their versions, hooks and what they add",
        description="List the plugins found in the 'benchcheck' entry-point group: "
        "distribution, version, hooks, and the metrics and hologram patterns each adds. "
        "Plugins that failed to load are listed with the reason.",
    )
    parser.add_argument("--json", action="store_true", help="print the list as JSON")
    parser.set_defaults(handler=run)
    return parser


def plugins_payload(plugin_manager: Any) -> dict[str, Any]:
    """The JSON document: ``{"plugins": [{name, distribution, version, status, ...}]}``."""
    return {"plugins": [info.to_dict() for info in describe_plugins(plugin_manager)]}


def _joined(names: list[str]) -> str:
    return escape(", ".join(names)) if names else "-"


def run(args: argparse.Namespace, context: Any) -> int:
    """List the plugins as a table, or as JSON with ``--json``; exit code 0."""
    payload = plugins_payload(context.plugin_manager())
    if getattr(args, "json", False):
        # console.out writes the text as it is: no wrapping that could split a JSON string.
        context.console.out(json.dumps(payload, indent=2, ensure_ascii=False), highlight=False)
        return 0
    table = Table(title="benchcheck plugins", show_lines=True)
    for column in ("plugin", "distribution", "status", "hooks", "adds"):
        table.add_column(column, overflow="fold")
    for plugin in payload["plugins"]:
        distribution = plugin["distribution"] or "-"
        if plugin["version"]:
            distribution += f" {plugin['version']}"
        added = [
            f"{label}: {_joined(plugin[key])}"
            for key, label in (
                ("metrics", "metrics"),
                ("patterns", "patterns"),
                ("element_types", "element types"),
                ("review_rules", "review rules"),
                ("report_writers", "report writers"),
            )
            if plugin[key]
        ]
        status = plugin["status"]
        if plugin["reason"]:
            status += f": {plugin['reason']}"
        table.add_row(
            escape(plugin["name"]),
            escape(distribution),
            escape(status),
            _joined([hook.removeprefix("benchcheck_") for hook in plugin["hooks"]]),
            "\n".join(added) or "-",
        )
    if not payload["plugins"]:
        context.console.print("No plugins loaded (auto-loading may be off: --no-plugins or BENCHCHECK_NO_PLUGINS=1).")
        return 0
    context.console.print(table)
    return 0
