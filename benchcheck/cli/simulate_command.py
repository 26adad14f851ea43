"""`benchcheck simulate LAYOUT`: the shaped beam at every wave plane of the nominal bench."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from rich.table import Table

from benchcheck.api import load_layout
from benchcheck.cli.output import layout_argument, print_json, print_notes, print_safety, show
from benchcheck.errors import BenchcheckError
from benchcheck.evaluate.nominal import simulate_layout

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "simulate", help="simulate the shaped beam with wave optics (nominal bench)",
        description="Fields at the modulator, the iris and every observation plane; metrics and specs.",
    )
    layout_argument(parser)
    parser.add_argument("--json", action="store_true", help="print JSON in SI units (DESIGN.md section 6)")
    parser.add_argument("--save", metavar="DIR", help="write the fields (.npy) and camera frames to DIR")
    parser.add_argument("--force", action="store_true", help="let --save replace files already in DIR")
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    layout = load_layout(args.layout, context.plugin_manager())
    report = simulate_layout(layout, context.plugin_manager())
    if args.save:
        _save(report, Path(args.save), args.force)
    if args.json:
        print_json(context.console, report.to_dict())
        return 0
    length = layout.display.length
    table = Table(title=f"{layout.title or args.layout}: wave simulation", title_justify="left")
    for heading in ("plane", "power (of source)", f"D4σ x, y ({length})", f"centroid x, y ({length})", "stage"):
        table.add_column(heading, justify="left" if heading in ("plane", "stage") else "right")
    methods = {name: result.method for name, result in report.simulation.planes.items()}
    for row in report.simulation.plane_rows():
        table.add_row(row["name"], f"{row['power']:.4%}",
                      ", ".join(show(v, length) for v in row["d4sigma_m"]),
                      ", ".join(show(v, length) for v in row["centroid_m"]), methods[row["name"]])
    context.console.print(table)
    metrics = Table(title="metrics", title_justify="left")
    for heading in ("plane.metric", "value"):
        metrics.add_column(heading)
    for key, value in report.metric_values().items():
        metrics.add_row(key, "-" if value is None else f"{value:.6g}")
    context.console.print(metrics)
    if report.trial.specs:
        specs = Table(title="specs", title_justify="left")
        for heading in ("spec", "value", "bound", "result"):
            specs.add_column(heading)
        for outcome in report.trial.specs:
            bound = " ".join(part for part in (
                f"min {outcome.spec.minimum:.6g}" if outcome.spec.minimum is not None else "",
                f"max {outcome.spec.maximum:.6g}" if outcome.spec.maximum is not None else "") if part)
            value = "-" if outcome.value is None else f"{outcome.value:.6g}"
            result = "pass" if outcome.passed else f"FAIL{': ' + outcome.error if outcome.error else ''}"
            specs.add_row(outcome.spec.label, value, bound + " (SI)", result)
        context.console.print(specs)
    frames = [f"{name}: exposure scale {result.frame.scale:.4g} counts per W/m², peak "
              f"{int(result.frame.counts.max())} counts, {result.frame.saturated_fraction:.2%} of pixels saturated"
              for name, result in report.simulation.planes.items() if result.frame is not None]
    print_notes(context.console, frames, "camera frames")
    losses = [f"{plane}: blocks {blocked:.3%} of the source power" for plane, blocked in report.simulation.losses]
    print_notes(context.console, losses, "light blocked by irises and stops")
    print_notes(context.console, report.simulation.notes, "sampling notes")
    print_notes(context.console, report.trial.faults, "faults")
    print_safety(context.console)
    return 0


def _save(report, folder: Path, force: bool) -> None:
    """Write each plane's field and each camera frame as .npy; never replace a file without force."""
    outputs = {}
    for name, result in report.simulation.planes.items():
        outputs[f"{name}.field.npy"] = result.field.values
        if result.frame is not None:
            outputs[f"{name}.frame.npy"] = result.frame.counts
    existing = [file for file in outputs if (folder / file).exists()]
    if existing and not force:
        raise BenchcheckError(f"{folder / existing[0]} already exists; use --force to replace the saved fields")
    folder.mkdir(parents=True, exist_ok=True)
    for file, values in outputs.items():
        np.save(folder / file, values, allow_pickle=False)
