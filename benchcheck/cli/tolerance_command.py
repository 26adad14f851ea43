"""`benchcheck tolerance LAYOUT`: a Monte Carlo tolerance study and its summary."""

from __future__ import annotations

import argparse
import shlex
import signal
import threading
from contextlib import contextmanager

from rich.markup import escape
from rich.progress import BarColumn, MofNCompleteColumn, Progress, ProgressColumn, TextColumn, TimeRemainingColumn
from rich.table import Table
from rich.text import Text

from benchcheck.api import load_layout, tolerance
from benchcheck.cli.output import layout_argument, print_json, print_notes, print_safety, show, positive_integer
from benchcheck.errors import BenchcheckError
from benchcheck.tolerance.dofs import DOF_UNITS, resolve_dofs
from benchcheck.tolerance.samplers import SAMPLERS
from benchcheck.tolerance.study import StopRequested, StudyInterrupted
from benchcheck.tolerance.workers import PluginOptions

__all__ = ["register", "run"]

EXIT_INTERRUPTED = 130
EXIT_TERMINATED = 143


def _fraction(text: str) -> float:
    """A yield bound: 0.95 or 95 %."""
    value = float(text.strip().rstrip("%")) / (100.0 if text.strip().endswith("%") else 1.0)
    if not 0.0 <= value <= 1.0:
        raise argparse.ArgumentTypeError(f"a yield is between 0 and 1 (or 0 % and 100 %), got {text}")
    return value



def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "tolerance", help="Monte Carlo tolerance study: yield, failure thresholds, what fails first",
        description="Draw mounting and device errors within their tolerances, evaluate the bench for "
                    "each trial, and summarise the yield, the metric spread and what fails first.",
    )
    layout_argument(parser)
    parser.add_argument("--trials", type=positive_integer, help="number of trials (default: [tolerancing] trials)")
    parser.add_argument("--seed", type=int, help="seed of the study (default: [tolerancing] seed)")
    parser.add_argument("--sampler", choices=SAMPLERS, help="pseudo-random or scrambled Sobol points")
    parser.add_argument("--workers", type=positive_integer, default=1, help="worker processes (results do not depend on it)")
    parser.add_argument("--executor", choices=("processes", "dask"), default="processes",
                        help="where trials run: here or in local worker processes, or on a dask cluster")
    parser.add_argument("--scheduler", metavar="ADDRESS",
                        help="dask scheduler address for --executor dask (for example tcp://10.0.0.5:8786)")
    parser.add_argument("--json", action="store_true", help="print JSON in SI units (DESIGN.md section 6)")
    parser.add_argument("--out", metavar="RUN_FILE", help="stream every finished trial to this JSON-lines file")
    parser.add_argument("--resume", action="store_true", help="continue the run file given with --out")
    parser.add_argument("--force", action="store_true", help="overwrite an existing run file")
    parser.add_argument("--fail-under", type=_fraction, metavar="YIELD",
                        help="exit with status 1 when the yield is below this (0.95 or 95%%)")
    parser.add_argument("--list-dofs", action="store_true", help="list the degrees of freedom and stop")
    parser.set_defaults(handler=run)


class _RateColumn(ProgressColumn):
    """Trials per second."""

    def render(self, task) -> Text:
        return Text(f"{task.speed:,.0f} trials/s" if task.speed else "- trials/s")


@contextmanager
def _progress_bar(console, enabled: bool):
    if not enabled:
        yield None
        return
    with Progress(TextColumn("trials"), BarColumn(), MofNCompleteColumn(), _RateColumn(), TimeRemainingColumn(),
                  console=console, transient=True) as bar:
        task = bar.add_task("trials", total=None)

        def update(completed: int, total: int) -> None:
            bar.update(task, completed=completed, total=total)

        yield update


@contextmanager
def _stop_on_sigterm():
    """Turn SIGTERM into StopRequested so finished trials are kept (main thread only)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def stop(signum, frame):
        raise StopRequested(EXIT_TERMINATED)

    previous = signal.signal(signal.SIGTERM, stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


def _unit_for(kind: str, layout) -> str:
    return {"length": layout.display.length, "angle": layout.display.angle}.get(kind, "")


def _metric_unit(si_unit: str, layout) -> str:
    return {"m": layout.display.length, "rad": layout.display.angle}.get(si_unit, "")


def _list_dofs(args, context, layout) -> int:
    dofs = resolve_dofs(layout)
    if args.json:
        print_json(context.console, {"dofs": [dof.to_dict() for dof in dofs]})
        return 0
    table = Table(title=f"{layout.title or args.layout}: degrees of freedom", title_justify="left")
    for heading in ("dof", "± limit", "unit", "distribution", "given as"):
        table.add_column(heading, justify="right" if heading in ("± limit",) else "left")
    for dof in dofs:
        unit = _unit_for(dof.kind, layout)
        given = f"{100 * dof.limit / abs(dof.nominal):.3g} % of nominal" if dof.relative and dof.nominal else "absolute"
        table.add_row(dof.name, show(dof.limit, unit), unit or "-", dof.distribution, given)
    context.console.print(table)
    return 0


def _resume_hint(args, interrupted: StudyInterrupted) -> str:
    if interrupted.run_file is None:
        return "no run file was written; run again with --out RUN_FILE to be able to resume"
    words = ["benchcheck", "tolerance", args.layout, "--out", interrupted.run_file, "--resume"]
    for option, value in (("--trials", args.trials), ("--seed", args.seed), ("--sampler", args.sampler),
                          ("--workers", args.workers if args.workers != 1 else None),
                          ("--executor", args.executor if args.executor != "processes" else None),
                          ("--scheduler", args.scheduler)):
        if value is not None:
            words += [option, str(value)]
    return f"finished trials are in {interrupted.run_file}; resume with: {shlex.join(words)}"


def run(args, context) -> int:
    layout = load_layout(args.layout)
    if args.list_dofs:
        return _list_dofs(args, context, layout)
    if args.resume and not args.out:
        raise BenchcheckError("--resume needs --out RUN_FILE (the run file to continue)")
    if args.resume and args.force:
        raise BenchcheckError("--resume and --force contradict each other: choose one")
    options = PluginOptions(disabled=context.disabled_plugins, autoload=context.autoload_plugins)
    show_bar = context.error_console.is_terminal
    try:
        with _stop_on_sigterm(), _progress_bar(context.error_console, show_bar) as update:
            result = tolerance(layout, trials=args.trials, seed=args.seed, sampler=args.sampler,
                               workers=args.workers, run_file=args.out, resume=args.resume, force=args.force,
                               executor=args.executor, scheduler=args.scheduler,
                               progress=update, plugin_manager=context.plugin_manager(), plugin_options=options)
    except StudyInterrupted as interrupted:
        context.error_console.print(f"stopped after {interrupted.completed} of {interrupted.total} trials; "
                                    f"{escape(_resume_hint(args, interrupted))}", highlight=False)
        return interrupted.exit_code
    data = result.to_dict()
    if args.json:
        print_json(context.console, data)
    else:
        _print_summary(context, layout, result, data)
    if args.fail_under is not None and (data["yield"] is None or data["yield"] < args.fail_under):
        if not args.json:
            context.console.print(f"[bold red]yield below --fail-under {args.fail_under:.1%}[/]")
        return 1
    return 0


def _number(value, unit: str = "") -> str:
    if value is None:
        return "-"
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return escape(str(value))
    return show(float(value), unit) if unit else f"{value:.4g}"


def _print_summary(context, layout, result, data) -> None:
    console = context.console
    title = escape(layout.title or result.layout.path)
    console.print(f"[bold]{title}[/]: {data['trials']} trials, {data['sampler']} sampler, seed {data['seed']}"
                  + (f" ({result.resumed_trials} from the run file)" if result.resumed_trials else ""),
                  highlight=False)
    if data["yield"] is None:
        console.print("[bold red]no valid trial: no yield[/]")
    else:
        low, high = data["yield_ci95"]
        target = data["yield_target"]
        verdict = "[green]met[/]" if data["yield"] >= target else "[red]missed[/]"
        console.print(f"yield [bold]{data['yield']:.1%}[/] (Wilson 95 % interval {low:.1%} to {high:.1%}): "
                      f"{data['passed_trials']} of {data['valid_trials']} valid trials passed; "
                      f"target {target:.0%} {verdict}", highlight=False)
    faults = data["faults"]
    if faults["count"]:
        console.print(f"[yellow]{faults['count']} trials had a numerical fault and are counted apart:[/]")
        for item in faults["reasons"][:5]:
            console.print(f"  - {item['trials']} x {escape(item['reason'])}", highlight=False)
    registry = _registry(context)
    specs = Table(title="specs", title_justify="left")
    for heading in ("spec", "bound", "unit", "failing trials"):
        specs.add_column(heading, justify="left" if heading in ("spec", "unit") else "right")
    for spec in layout.specs:
        unit = _metric_unit(getattr(registry.get(spec.metric), "unit", ""), layout) if registry else ""
        bound = " to ".join(_number(v, unit) for v in (spec.minimum, spec.maximum) if v is not None)
        share = data["spec_failure_share"].get(spec.label)
        specs.add_row(escape(spec.label), bound, unit or "-", "-" if share is None else f"{share:.1%}")
    console.print(specs)
    metrics = Table(title="metrics over valid trials", title_justify="left")
    for heading in ("metric", "unit", "mean", "std", "p05", "p50", "p95"):
        metrics.add_column(heading, justify="left" if heading in ("metric", "unit") else "right")
    for name, stats in data["metrics"].items():
        metric = name.rpartition(".")[2]
        unit = _metric_unit(registry.get(metric).unit, layout) if registry and metric in registry else ""
        metrics.add_row(escape(name), unit or "-", *(_number(stats[key], unit) for key in ("mean", "std", "p05", "p50", "p95")))
    console.print(metrics)
    _print_thresholds(console, layout, result)
    _print_records(console, "contribution ranking", data["ranking"])
    if data["adjustments"]:
        adjustments = Table(title="range each adjustment needed (valid trials)", title_justify="left")
        for heading in ("adjustment", "unit", "min", "p05", "p95", "max"):
            adjustments.add_column(heading, justify="left" if heading in ("adjustment", "unit") else "right")
        for name, span in data["adjustments"].items():
            unit = _unit_for(DOF_UNITS.get(name.rpartition(".")[2], "length"), layout)
            adjustments.add_row(escape(name), unit or "-", *(_number(span[key], unit) for key in ("min", "p05", "p95", "max")))
        console.print(adjustments)
    print_notes(console, data["notes"])
    print_safety(console)


def _registry(context):
    from benchcheck.metrics import MetricRegistry

    try:
        return MetricRegistry.from_plugin_manager(context.plugin_manager())
    except BenchcheckError:
        return None


def _print_thresholds(console, layout, result) -> None:
    table = Table(title="failure thresholds, others nominal (smallest margin first)", title_justify="left")
    for heading in ("dof", "unit", "tolerance", "threshold", "margin", "spec"):
        table.add_column(heading, justify="left" if heading in ("dof", "unit", "spec") else "right")
    first = result.fails_first
    rows = result.thresholds or ()
    for threshold in rows:
        unit = _unit_for(threshold.dof.kind, layout)
        mark = "[bold]" if first is not None and threshold.dof.name == first.dof.name else ""
        table.add_row(f"{mark}{escape(threshold.dof.name)}", unit or "-", _number(threshold.dof.limit, unit),
                      _number(threshold.threshold, unit),
                      "-" if threshold.margin is None else f"{threshold.margin:.3g}",
                      escape(threshold.spec or getattr(threshold, "note", "") or "-"))
    if rows:
        console.print(table)
    if first is not None:
        console.print(f"fails first: [bold]{escape(first.dof.name)}[/] (margin {first.margin:.3g}, spec "
                      f"{escape(str(first.spec))})", highlight=False)


def _print_records(console, title: str, rows, limit: int = 10) -> None:
    """A table of plain records: the scalar fields of the first ``limit`` rows (--json has all)."""
    if not rows:
        return
    columns = [key for key, value in rows[0].items() if not isinstance(value, (dict, list))]
    table = Table(title=f"{title} (first {min(limit, len(rows))} of {len(rows)}; --json has all)", title_justify="left")
    for column in columns:
        table.add_column(escape(str(column)), justify="left" if isinstance(rows[0][column], str) else "right")
    for row in rows[:limit]:
        table.add_row(*(escape(row[c]) if isinstance(row.get(c), str) else _number(row.get(c)) for c in columns))
    console.print(table)
