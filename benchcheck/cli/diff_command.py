"""`benchcheck diff A.toml B.toml`: what changed between two layouts, and what it does."""

from __future__ import annotations


from rich.table import Table

from benchcheck.api import diff, load_layout
from benchcheck.cli.output import print_json, print_notes, print_safety, show, positive_integer
from benchcheck.diff import DEFAULT_DIFF_TRIALS, format_value
from benchcheck.tolerance.dofs import DOF_UNITS

__all__ = ["register", "run"]



def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "diff", help="compare two layouts: what changed and what it does to the beam",
        description="Elements added, removed, moved or changed between layout A and layout B; the "
                    "paraxial trace and nominal metrics side by side; with --tolerance, both yields.",
    )
    parser.add_argument("layout_a", metavar="A", help="the reference layout (TOML, format 1)")
    parser.add_argument("layout_b", metavar="B", help="the layout compared with it")
    parser.add_argument("--json", action="store_true", help="print JSON in SI units")
    parser.add_argument("--tolerance", action="store_true", help="also run a Monte Carlo study of each layout")
    parser.add_argument("--trials", type=positive_integer, default=DEFAULT_DIFF_TRIALS,
                        help=f"trials per study with --tolerance (default {DEFAULT_DIFF_TRIALS})")
    parser.add_argument("--seed", type=int, help="one seed for both studies (default: each layout's own)")
    parser.add_argument("--paraxial-only", action="store_true",
                        help="judge the nominal specs on the paraxial trace; skip the wave simulation")
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    plugin_manager = context.plugin_manager()
    a = load_layout(args.layout_a, plugin_manager)
    b = load_layout(args.layout_b, plugin_manager)
    result = diff(a, b, tolerance=args.tolerance, trials=args.trials, seed=args.seed,
                  wave=not args.paraxial_only, plugin_manager=plugin_manager)
    if args.json:
        print_json(context.console, result.to_dict())
        return 0
    console = context.console
    length, angle = a.display.length, a.display.angle
    console.print(f"[bold]A[/] {a.path}: {a.title}\n[bold]B[/] {b.path}: {b.title}", highlight=False)
    _print_changes(console, result, a.display, b.display)
    _print_trace(console, result.trace, length)
    _print_metrics(console, result)
    if result.tolerance is not None:
        _print_tolerance(console, result.tolerance, length, angle)
    print_notes(console, result.notes, "notes")
    print_safety(console)
    return 0


def _print_changes(console, result, display_a, display_b) -> None:
    changes = result.changes
    if changes.empty:
        console.print("The two layouts describe the same bench.")
        return
    table = Table(title="what changed (A -> B)", title_justify="left")
    for heading in ("element", "change", "A", "B"):
        table.add_column(heading)
    for name in changes.added:
        element = result.b.element(name)
        table.add_row(name, f"added ({element.type})", "-", f"z = {format_value(element.z, 'length', display_b)}")
    for name in changes.removed:
        element = result.a.element(name)
        table.add_row(name, f"removed ({element.type})", f"z = {format_value(element.z, 'length', display_a)}", "-")
    for moved in changes.moved:
        table.add_row(moved.name, "moved (z)", format_value(moved.z_a, "length", display_a),
                      format_value(moved.z_b, "length", display_b))
    for change in (*changes.bench, *changes.source, *changes.changed):
        table.add_row(change.owner, change.field, format_value(change.a, change.kind, display_a),
                      format_value(change.b, change.kind, display_b))
    for label in changes.specs_added:
        table.add_row(label, "spec added", "-", "")
    for label in changes.specs_removed:
        table.add_row(label, "spec removed", "", "-")
    for change in changes.specs_changed:
        table.add_row(change.owner, f"spec {change.field}", format_value(change.a, change.kind, display_a),
                      format_value(change.b, change.kind, display_b))
    console.print(table)


def _pair(values, unit: str) -> str:
    shown = [show(value, unit) for value in values]
    return shown[0] if shown[0] == shown[1] else f"{shown[0]}, {shown[1]}"


def _print_trace(console, trace: dict, length: str) -> None:
    table = Table(title=f"paraxial trace, A | B (planes in both; lengths in {length}; x, y where they differ)",
                  title_justify="left")
    for heading in ("plane", "z", "w", "waist at", "transmission", "offset"):
        table.add_column(heading, justify="left" if heading == "plane" else "right")
    for row in trace["planes"]:
        a, b = row["a"], row["b"]
        table.add_row(
            row["name"],
            f"{show(a['z_m'], length)} | {show(b['z_m'], length)}",
            f"{_pair(a['w_m'], length)} | {_pair(b['w_m'], length)}",
            f"{_pair(a['waist_z_m'], length)} | {_pair(b['waist_z_m'], length)}",
            f"{a['transmission']:.4%} | {b['transmission']:.4%}",
            f"{_pair(a['offset_m'], length)} | {_pair(b['offset_m'], length)}",
        )
    console.print(table)
    print_notes(console, [f"only in A: {', '.join(trace['only_a'])}"] if trace["only_a"] else [], "")
    print_notes(console, [f"only in B: {', '.join(trace['only_b'])}"] if trace["only_b"] else [], "")


def _number(value) -> str:
    return "-" if value is None else f"{value:.6g}"


def _print_metrics(console, result) -> None:
    simulated = {True: "wave simulation", False: "paraxial trace"}
    table = Table(title=f"nominal metrics (SI): A from the {simulated[result.wave[0]]}, "
                        f"B from the {simulated[result.wave[1]]}", title_justify="left")
    for heading in ("plane.metric", "A", "B"):
        table.add_column(heading, justify="left" if heading == "plane.metric" else "right")
    for row in result.metrics:
        table.add_row(row["key"], _number(row["a"]), _number(row["b"]))
    console.print(table)
    if result.specs:
        specs = Table(title="specs", title_justify="left")
        for heading in ("spec", "A", "B"):
            specs.add_column(heading)
        for row in result.specs:
            cells = ["-" if cell is None else f"{_number(cell['value'])} {'pass' if cell['pass'] else 'FAIL'}"
                     for cell in (row["a"], row["b"])]
            specs.add_row(row["spec"], *cells)
        console.print(specs)


def _print_tolerance(console, studies: dict, length: str, angle: str) -> None:
    for name in ("a", "b"):
        study = studies[name]
        interval = study["yield_ci95"]
        verdict = "no valid trial" if study["yield"] is None else (
            f"yield {study['yield']:.1%} (95 % interval {interval[0]:.1%} to {interval[1]:.1%})")
        table = Table(title=f"{name.upper()}: {study['trials']} trials, seed {study['seed']}: {verdict}; "
                            "fails first", title_justify="left")
        for heading in ("dof", "tolerance", "failure threshold", "margin", "spec"):
            table.add_column(heading, justify="left" if heading in ("dof", "spec") else "right")
        for row in study["fails_first"]:
            kind = DOF_UNITS.get(row["dof"].rpartition(".")[2], "length")
            unit = {"length": length, "angle": angle}.get(kind, "")
            table.add_row(row["dof"], f"{show(row['tolerance'], unit)} {unit}".strip(),
                          f"{show(row['threshold'], unit)} {unit}".strip(),
                          _number(row["margin"]), row.get("spec") or "-")
        console.print(table)
