"""`benchcheck mounts LAYOUT`: which mount class each element needs, verified by Monte Carlo."""

from __future__ import annotations

import argparse

from rich.table import Table

from benchcheck.api import load_layout, plan_mounts
from benchcheck.cli.output import layout_argument, print_json, print_notes, show, positive_integer
from benchcheck.tolerance.dofs import DOF_UNITS

__all__ = ["register", "run"]



def _fraction(text: str) -> float:
    """A yield target: 0.95 or 95 %."""
    value = float(text.strip().rstrip("%")) / (100.0 if text.strip().endswith("%") else 1.0)
    if not 0.0 < value <= 1.0:
        raise argparse.ArgumentTypeError(f"a yield target is in (0, 1] (or up to 100 %), got {text}")
    return value


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "mounts", help="choose the coarsest mount class per element that keeps the bench in spec",
        description="Find each mount's failure thresholds, give each element the coarsest mount class "
                    "that keeps its dofs inside a root-sum-square share of them, then verify the yield "
                    "by Monte Carlo and move the worst contributors to finer classes until the yield "
                    "target is met.",
    )
    layout_argument(parser)
    parser.add_argument("--json", action="store_true", help="print JSON in SI units (DESIGN.md section 6)")
    parser.add_argument("--trials", type=positive_integer, help="Monte Carlo trials (default: [tolerancing] trials)")
    parser.add_argument("--seed", type=int, help="seed (default: [tolerancing] seed)")
    parser.add_argument("--yield-target", type=_fraction, metavar="YIELD",
                        help="share of trials that must pass (default: [tolerancing] yield_target)")
    parser.add_argument("--layout-mounts-only", action="store_true",
                        help="choose only among the layout's [mounts] classes, not the default catalogue")
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    layout = load_layout(args.layout)
    plan = plan_mounts(layout, trials=args.trials, seed=args.seed, yield_target=args.yield_target,
                       use_catalogue=not args.layout_mounts_only, plugin_manager=context.plugin_manager())
    if args.json:
        print_json(context.console, plan.to_dict())
        return 0
    length, angle = layout.display.length, layout.display.angle

    def shown(dof_name: str | None, value: float | None) -> str:
        if dof_name is None or value is None:
            return "-"
        kind = DOF_UNITS.get(dof_name.rpartition(".")[2], "length")
        unit = {"length": length, "angle": angle}.get(kind, "")
        return f"{show(value, unit)} {unit}".strip()

    table = Table(title=f"{layout.title or args.layout}: mount plan (coarse to fine by rank)", title_justify="left")
    for heading in ("element", "class", "rank", "layout mount", "limiting dof", "failure threshold",
                    "class holds", "margin"):
        table.add_column(heading, justify="right" if heading in ("rank", "failure threshold", "class holds",
                                                                 "margin") else "left")
    for choice in plan.choices:
        table.add_row(
            choice.element,
            choice.mount_class + ("" if choice.fine_enough else " (not fine enough)"),
            str(choice.rank),
            choice.layout_mount or "-",
            choice.limiting_dof or "none fails",
            shown(choice.limiting_dof, choice.threshold),
            shown(choice.limiting_dof, choice.hold),
            "-" if choice.margin is None else f"{choice.margin:.3g}",
        )
    context.console.print(table)
    if plan.yield_value is None:
        context.console.print("verified yield: no valid trial")
    else:
        low, high = plan.yield_ci95
        verdict = "[green]meets[/]" if plan.met else "[red]misses[/]"
        context.console.print(
            f"verified yield {plan.yield_value:.1%} (95 % Wilson interval {low:.1%} to {high:.1%}, "
            f"{plan.valid_trials} of {plan.trials} trials valid, seed {plan.seed}): {verdict} the target "
            f"{plan.yield_target:.1%}"
        )
    print_notes(context.console, [f"{u.element}: {u.from_class} -> {u.to_class} (through {u.dof}, rank "
                                  f"correlation with failure {u.failure_correlation:.2f})" for u in plan.upgrades],
                "upgrades after the Monte Carlo")
    print_notes(context.console, plan.notes, "notes")
    return 0
