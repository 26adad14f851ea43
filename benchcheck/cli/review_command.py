"""`benchcheck review LAYOUT`: every registered review rule on one layout."""

from __future__ import annotations

from rich.markup import escape
from rich.table import Table

from benchcheck.api import load_layout, review
from benchcheck.cli.output import layout_argument, print_json, print_notes, print_safety
from benchcheck.review.types import SEVERITIES
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = ["register", "run"]

_STYLES = {"error": "bold red", "warning": "yellow", "note": "cyan"}


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "review", help="review a layout: apertures, modulator, Fourier plane, cameras, mounts, power",
        description="Check a layout against published formulas, standards and common practice; each finding "
                    "says the numbers behind it and its basis.",
    )
    layout_argument(parser)
    parser.add_argument("--json", action="store_true", help="print JSON in SI units (DESIGN.md section 6)")
    parser.add_argument("--fail-on", choices=("warning", "error"), default=None,
                        help="exit 1 when a finding at or above this severity exists")
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    plugin_manager = context.plugin_manager()
    layout = load_layout(args.layout, plugin_manager)
    report = review(layout, plugin_manager)
    failed = args.fail_on is not None and report.has_at_least(args.fail_on)
    if args.json:
        data = report.to_dict()
        data["laser_safety"] = LASER_SAFETY_CAUTION
        print_json(context.console, data)
        return 1 if failed else 0
    counts = ", ".join(f"{report.count(severity)} {severity}(s)" for severity in SEVERITIES)
    table = Table(title=f"{layout.title or args.layout}: review ({counts})", title_justify="left")
    for heading in ("severity", "element", "rule", "message", "basis"):
        table.add_column(heading, justify="left", overflow="fold")
    for finding in report.findings:
        style = _STYLES[finding.severity]
        table.add_row(f"[{style}]{finding.severity}[/]", escape(finding.element or "-"), escape(finding.rule),
                      escape(finding.message), escape(finding.basis))
    if report.findings:
        context.console.print(table)
    else:
        context.console.print(f"{escape(layout.title or args.layout)}: review found nothing "
                              f"({len(report.rules)} rules ran).", highlight=False)
    print_notes(context.console, layout.warnings, "warnings")
    print_safety(context.console)
    return 1 if failed else 0
