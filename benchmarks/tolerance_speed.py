"""Speed of tolerance trials, measured side by side (run by hand; nothing here is a test).

    python benchmarks/tolerance_speed.py [LAYOUT] [--trials N]

Prints paraxial-only trials per second for: the paraxial trace alone, one full trial
(trace + metrics + specs) in this process, the vectorised batch trace and batched trials
(``benchcheck.tolerance.paraxial_batch``), and the study with 1 and 2 worker processes,
with the ratios between them. Timings cover the trials only (not the failure-threshold
search that follows them); the 2-worker figure is also given with its start-up included.
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

from benchcheck.api import load_layout
from benchcheck.bench.realization import Realization
from benchcheck.optics.batch_trace import trace_batch
from benchcheck.optics.beam_trace import trace_realization
from benchcheck.plugin_manager import make_plugin_manager
from benchcheck.tolerance.dofs import resolve_dofs
from benchcheck.tolerance.samplers import Sampler
from benchcheck.tolerance.study import run_study
from benchcheck.tolerance.workers import build_runner

__all__ = ["main"]

_DEFAULT_LAYOUT = Path(__file__).resolve().parents[1] / "layouts" / "expander_folds_monitor.toml"


def _rate(count: int, seconds: float) -> float:
    return count / seconds if seconds > 0 else float("inf")


def _study_rate(layout, plugin_manager, trials: int, workers: int) -> tuple[float, float]:
    """(trials/s from the first finished trial to the last, trials/s including start-up)."""
    marks: dict[str, float] = {}

    def progress(completed: int, total: int) -> None:
        now = time.perf_counter()
        if completed == 0:
            marks["start"] = now
        elif completed == 1:
            marks["first"] = now
        if completed == total:
            marks["end"] = now

    run_study(layout, plugin_manager, trials=trials, workers=workers, progress=progress)
    steady = _rate(trials - 1, marks["end"] - marks["first"])
    overall = _rate(trials, marks["end"] - marks["start"])
    return steady, overall


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("layout", nargs="?", default=str(_DEFAULT_LAYOUT))
    parser.add_argument("--trials", type=int, default=2000)
    args = parser.parse_args()
    layout = load_layout(args.layout)
    plugin_manager = make_plugin_manager()
    runner = build_runner(layout, plugin_manager)
    sampler = Sampler(tuple(resolve_dofs(layout)), "random", layout.tolerancing.seed)
    perturbations = sampler.perturbations(0, args.trials)

    start = time.perf_counter()
    for perturbation in perturbations:
        trace_realization(Realization(runner.evaluator.bench, perturbation))
    trace_rate = _rate(args.trials, time.perf_counter() - start)

    start = time.perf_counter()
    for index, perturbation in enumerate(perturbations):
        runner.run(index, perturbation, {})
    trial_rate = _rate(args.trials, time.perf_counter() - start)

    start = time.perf_counter()
    trace_batch(runner.evaluator.bench, perturbations)
    batch_trace_rate = _rate(args.trials, time.perf_counter() - start)
    batched = runner.paraxial_batch is not None
    start = time.perf_counter()
    if batched:
        runner.run_batch([(index, perturbation, {}) for index, perturbation in enumerate(perturbations)])
    batch_trial_rate = _rate(args.trials, time.perf_counter() - start)

    one, _ = _study_rate(layout, plugin_manager, args.trials, 1)
    two, two_overall = _study_rate(layout, plugin_manager, args.trials, 2)
    print(f"layout: {args.layout} ({len(sampler.dofs)} dofs, {args.trials} trials)")
    print(f"paraxial trace alone     : {trace_rate:10.0f} trials/s ({1e3 / trace_rate:.3f} ms each)")
    print(f"full paraxial trial      : {trial_rate:10.0f} trials/s (trace share {trial_rate / trace_rate:.2f})")
    print(f"vectorised trace         : {batch_trace_rate:10.0f} trials/s (ratio to the trace alone "
          f"{batch_trace_rate / trace_rate:.1f})")
    if batched:
        print(f"vectorised full trials   : {batch_trial_rate:10.0f} trials/s (ratio to one by one "
              f"{batch_trial_rate / trial_rate:.1f})")
    else:
        print("vectorised full trials   : not used for this layout (a spec or element needs the trial-by-trial path)")
    print(f"study, 1 worker          : {one:10.0f} trials/s")
    print(f"study, 2 workers         : {two:10.0f} trials/s (with start-up {two_overall:.0f} trials/s)")
    print(f"ratio 2 workers / 1      : {two / one:10.2f} (with start-up {two_overall / one:.2f})")
    print(f"target 10,000 trials/s   : {'met' if one >= 10_000 else f'{10_000 / one:.0f}x short'} (1 worker)")


if __name__ == "__main__":
    main()
