"""Peak memory of a study worker against the field size (run by hand; nothing here is a test).

    python3 benchmarks/worker_memory.py [--grids [256 512 1024]] [--trials 100]

For each grid, the 4f example as shipped (its own specs) runs in a fresh worker process set
up as a study sets up its workers (spawned with one BLAS thread, ``initialize_worker``, then
batches through ``run_batch_in_worker``, one FFT thread), twice:

* untraced, for the process's peak resident memory (``getrusage``): the whole of it, the
  part the trials add above the worker as set up (interpreter, libraries, plugins and the
  evaluator, before its first trial), and how much it still grows over the second half of
  the trials (the caches keyed by a band's size class fill over the first trials and are
  bounded; a cache that grew with every trial would end a long study);
* under ``tracemalloc`` from the first trial on, for numpy's and Python's own allocations
  alone: their peak and what stays held between trials (the caches a worker keeps: the
  hologram on its grid, the target, transform tables).

Each is printed in MiB and in field-sized arrays (one complex64 window of the grid), beside
the estimate the memory cap uses for one simulation (``benchcheck.limits``). The workers
inherit ``BENCHCHECK_FFT_BACKEND``: set it to ``pyfftw`` to measure that backend's workers.
"""

from __future__ import annotations

import argparse
import concurrent.futures
import multiprocessing
import sys
import tempfile
import tracemalloc
from pathlib import Path

import numpy as np

from benchcheck.api import load_layout
from benchcheck.limits import FIELD_ARRAYS_AT_PEAK
from benchcheck.tolerance.dofs import resolve_dofs
from benchcheck.tolerance.samplers import Sampler
from benchcheck.tolerance.workers import (PluginOptions, initialize_worker, run_batch_in_worker,
                                          single_threaded_environment)
from trial_speed import _layout_copy  # the example at a grid, as the trial benchmark times it (this folder)

try:
    import resource
except ImportError:  # not on Windows: peak resident memory is then not measured
    resource = None

__all__ = ["main"]

MIB = 2**20


def _peak_resident() -> int:
    """This process's peak resident memory in bytes (Linux reports KiB, macOS bytes)."""
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak if sys.platform == "darwin" else peak * 1024


def _worker_run(path: str, text_hash: str, trials: int, traced: bool) -> dict:
    """In a fresh worker process: set up as a study's worker and run ``trials`` drawn trials
    in batches of a tenth; the peak resident memory once set up, after half the trials and
    at the end, or (``traced``) tracemalloc's peak and what is held after the last trial."""
    initialize_worker(path, text_hash, PluginOptions())
    layout = load_layout(path)
    sampler = Sampler(tuple(resolve_dofs(layout)), layout.tolerancing.sampler, layout.tolerancing.seed)
    perturbations = sampler.perturbations(0, trials)
    result = {"set_up": _peak_resident()}
    if traced:
        tracemalloc.start()
    batch = max(trials // 10, 1)
    for first in range(0, trials, batch):
        run_batch_in_worker([(index, perturbations[index], {}) for index in range(first, min(first + batch, trials))])
        if "half" not in result and first + batch >= trials // 2:
            result["half"] = _peak_resident()
    result["end"] = _peak_resident()
    if traced:
        result["held"], result["traced_peak"] = tracemalloc.get_traced_memory()
        tracemalloc.stop()
    return result


def _in_fresh_worker(path: Path, trials: int, traced: bool) -> dict:
    """``_worker_run`` in a process started as a study starts its workers (spawn, one BLAS thread)."""
    text_hash = load_layout(path).text_hash
    with single_threaded_environment():
        with concurrent.futures.ProcessPoolExecutor(1, mp_context=multiprocessing.get_context("spawn")) as pool:
            return pool.submit(_worker_run, str(path), text_hash, trials, traced).result()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--grids", type=int, nargs="+", default=[256, 512, 1024])
    parser.add_argument("--trials", type=int, default=100, help="drawn trials per worker")
    args = parser.parse_args()
    if args.trials < 2 or min(args.grids) < 16:
        parser.error("--trials must be 2 or more (a first and a second half) and each grid 16 or more")
    if resource is None:
        print("peak resident memory is not measured on this platform (no resource module)")
        return
    print(f"peak memory of a study worker (a fresh process set up as a study's, one FFT thread, "
          f"{args.trials} trials of the 4f example as shipped) against the field size "
          f"(one complex64 window); the memory cap estimates one simulation at {FIELD_ARRAYS_AT_PEAK} fields")
    with tempfile.TemporaryDirectory() as folder:
        for grid in args.grids:
            path = _layout_copy(Path(folder), grid, "example")  # its own specs
            field = grid * grid * np.dtype(np.complex64).itemsize
            resident = _in_fresh_worker(path, args.trials, traced=False)
            traced = _in_fresh_worker(path, args.trials, traced=True)
            above = resident["end"] - resident["set_up"]
            growth = resident["end"] - resident["half"]
            print(f"  grid {grid:5d} (a field {field / MIB:5.1f} MiB): peak resident {resident['end'] / MIB:6.1f} MiB, "
                  f"{above / MIB:6.1f} MiB = {above / field:5.1f} fields above the worker as set up "
                  f"({resident['set_up'] / MIB:.0f} MiB); {growth / MIB:+.1f} MiB over the second half of the trials")
            print(f"  {'':10s}{'':23s} traced allocations: peak {traced['traced_peak'] / MIB:6.1f} MiB = "
                  f"{traced['traced_peak'] / field:5.1f} fields, held between trials "
                  f"{traced['held'] / MIB:6.1f} MiB = {traced['held'] / field:5.1f} fields")


if __name__ == "__main__":
    main()
