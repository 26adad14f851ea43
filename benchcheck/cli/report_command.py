"""`benchcheck report LAYOUT --html report.html`: one file a reviewer can read without benchcheck."""

from __future__ import annotations

import argparse
from pathlib import Path

from benchcheck.api import load_layout
from benchcheck.cli.output import layout_argument, print_notes, print_safety
from benchcheck.errors import BenchcheckError
from benchcheck.report.data import build_report_data
from benchcheck.report.figures import render_figures
from benchcheck.report.style import require_matplotlib
from benchcheck.report.writers import collect_report_writers

__all__ = ["register", "run"]


def _trials(text: str) -> int:
    value = int(text)
    if value < 0:
        raise argparse.ArgumentTypeError(f"must be 0 (no study) or more, got {text}")
    return value


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "report", help="write a self-contained HTML report of a layout (figures embedded)",
        description="The layout, the beam along the bench, the nominal shaped beam and camera frame, the "
                    "Monte Carlo histograms and fails-first chart, the mount plan and the review findings, "
                    "in one HTML file with nothing external. Needs matplotlib (pip install 'benchcheck[plot]').",
    )
    layout_argument(parser)
    parser.add_argument("--html", metavar="FILE", help="write the HTML report here")
    parser.add_argument("--png", metavar="DIR", help="also write each figure as a PNG file into DIR")
    parser.add_argument("--trials", type=_trials,
                        help="Monte Carlo trials (default: [tolerancing] trials; 0: no study)")
    parser.add_argument("--seed", type=int, help="seed (default: [tolerancing] seed)")
    parser.add_argument("--no-mounts", action="store_true", help="leave out the mount plan (it is slow)")
    parser.add_argument("--force", action="store_true", help="replace files that already exist")
    parser.set_defaults(handler=run)


def _refuse_overwrite(paths: list[Path], force: bool) -> None:
    existing = [path for path in paths if path.exists()]
    if existing and not force:
        raise BenchcheckError(f"{existing[0]} already exists; use --force to replace it")


def run(args, context) -> int:
    if not args.html and not args.png:
        raise BenchcheckError("say where the report goes: --html FILE and/or --png DIR")
    require_matplotlib()
    plugin_manager = context.plugin_manager()
    writer = None
    if args.html:
        writers = collect_report_writers(plugin_manager)
        if "html" not in writers:
            raise BenchcheckError("no plugin provides the 'html' report writer (are plugins disabled?)")
        writer = writers["html"]
        _refuse_overwrite([Path(args.html)], args.force)
    layout = load_layout(args.layout, plugin_manager)
    data = build_report_data(layout, plugin_manager, trials=args.trials, seed=args.seed,
                             mounts=not args.no_mounts)
    figures = render_figures(data)
    if args.png:
        folder = Path(args.png)
        targets = {figure.name: folder / f"{figure.name}.png" for figure in figures}
        _refuse_overwrite(list(targets.values()), args.force)
        folder.mkdir(parents=True, exist_ok=True)
        for figure in figures:
            targets[figure.name].write_bytes(figure.png)
        context.console.print(f"wrote {len(figures)} figures to {folder}", highlight=False)
    if writer is not None:
        writer.write(data, figures, Path(args.html))
        context.console.print(f"wrote {args.html}", highlight=False)
    print_notes(context.console, data.notes, "notes")
    print_safety(context.console)
    return 0
