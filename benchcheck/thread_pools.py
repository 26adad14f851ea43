"""One thread pool at a time: BLAS on one thread while a simulation's transforms use the cores.

OpenBLAS threads keep spinning for a while after each call. Beside scipy.fft's own threads on
a 2-core machine they took the cores from it: three 1024 x 1024 transforms right after a
trial's matrix products took 47 ms with BLAS on two threads and 24 ms with BLAS on one
(benchmarks/trial_speed.py; the trap is named in DEVELOPERS.md). The matrix products a trial
makes (zoomed DFTs of a few dozen inputs, sums, small matrices) gain little from threads, so
while benchcheck evaluates, BLAS runs on one thread (threadpoolctl, which finds the BLAS
libraries numpy and scipy load and sets their thread counts, restored afterwards).

The FFT thread count of a trial (all cores in one process, one in a worker process, where
the parallelism is across trials) is scipy.fft's default for the block (``fft_threads``).
That default is per thread, so a call handed to a helper thread takes it along
(``carrying_fft_threads``), and metrics pass ``workers=fft_workers()`` to their transforms,
which any scipy.fft backend honours.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Iterator
from contextlib import contextmanager, nullcontext
from typing import Any

import scipy.fft
from threadpoolctl import ThreadpoolController

__all__ = ["blas_on_one_thread", "fft_threads", "fft_workers", "carrying_fft_threads"]


@functools.cache
def _controller() -> ThreadpoolController:
    return ThreadpoolController()  # looks up the loaded libraries once (about a millisecond)


@contextmanager
def blas_on_one_thread() -> Iterator[None]:
    """BLAS on one thread inside the block (about 25 µs to enter and leave)."""
    with _controller().limit(limits=1, user_api="blas"):
        yield


def fft_threads(workers: int | None):
    """A context in which scipy.fft's default thread count is ``workers`` (−1: all cores;
    None: unchanged)."""
    return nullcontext() if workers is None else scipy.fft.set_workers(workers)


def fft_workers() -> int:
    """The FFT thread count of the trial being evaluated: pass it as ``workers=``."""
    return scipy.fft.get_workers()


def carrying_fft_threads(call: Callable[[], Any]) -> Callable[[], Any]:
    """``call`` made to run with the caller's FFT thread count on whichever thread runs it."""
    workers = scipy.fft.get_workers()

    def with_callers_threads() -> Any:
        with scipy.fft.set_workers(workers):
            return call()

    return with_callers_threads
