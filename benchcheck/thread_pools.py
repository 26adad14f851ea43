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
(``carrying_fft_threads``), and metrics pass ``workers=fft_workers(array.nbytes)`` to their
transforms, which any scipy.fft backend honours. A transform of a small array runs on one
thread whatever the count (``threads_for``): splitting it costs more than it saves. The
modulator stage's row blocks (``stages._row_product_transform``) run on one FFT thread each,
with one helper thread (``helper_thread``) taking half of them where the count allows two and
the window's halves are not small: still one thread per core.
"""

from __future__ import annotations

import concurrent.futures
import functools
import os
import threading
from collections.abc import Callable, Iterator
from contextlib import contextmanager, nullcontext
from typing import Any

import scipy.fft
from threadpoolctl import ThreadpoolController

__all__ = ["SMALL_TRANSFORM_BYTES", "blas_on_one_thread", "fft_threads", "fft_workers", "threads_for",
           "thread_count", "helper_thread", "carrying_fft_threads"]

#: A transform of an array of at most this many bytes runs on one thread. Measured on the
#: 2-core machine (scipy 1.17, one axis, median of 7 x 30): 512 x 43 complex64 took 45 µs on
#: one thread and 104 µs on two, 61 x 120 complex128 15 µs and 63 µs, 512 x 256 complex64
#: (1 MiB) 337 µs and 454 µs; from 2 MiB on (1024 x 128 complex128, 512 x 512 of either)
#: two threads took a third to a half less.
SMALL_TRANSFORM_BYTES = 1 << 20


@functools.cache
def _controller() -> ThreadpoolController:
    return ThreadpoolController()  # looks up the loaded libraries once (about a millisecond)


_BLAS_LIMIT: list = [0, None]  # [blocks of blas_on_one_thread open in this process, their limiter]
_BLAS_LOCK = threading.Lock()


@contextmanager
def blas_on_one_thread() -> Iterator[None]:
    """BLAS on one thread inside the block (about 25 µs to set and restore). The limit is the
    process's: the first block to open sets it and the last to close restores it, so a block
    inside another (a trial's simulation inside the trial) costs nothing, and trials on
    several threads of one process (a dask worker's) keep it until all are done."""
    with _BLAS_LOCK:
        if _BLAS_LIMIT[0] == 0:
            _BLAS_LIMIT[1] = _controller().limit(limits=1, user_api="blas")
        _BLAS_LIMIT[0] += 1
    try:
        yield
    finally:
        with _BLAS_LOCK:
            _BLAS_LIMIT[0] -= 1
            if _BLAS_LIMIT[0] == 0:
                _BLAS_LIMIT[1].restore_original_limits()
                _BLAS_LIMIT[1] = None


def fft_threads(workers: int | None):
    """A context in which scipy.fft's default thread count is ``workers`` (−1: all cores;
    None: unchanged)."""
    return nullcontext() if workers is None else scipy.fft.set_workers(workers)


def fft_workers(nbytes: int | None = None) -> int:
    """The FFT thread count of the trial being evaluated, for a transform of an array of
    ``nbytes`` (one thread where that is small; see ``threads_for``): pass it as ``workers=``."""
    workers = scipy.fft.get_workers()
    return workers if nbytes is None else threads_for(nbytes, workers)


def threads_for(nbytes: int, workers: int) -> int:
    """``workers``, or 1 for a transform of an array of at most ``SMALL_TRANSFORM_BYTES``."""
    return 1 if nbytes <= SMALL_TRANSFORM_BYTES else workers


def thread_count(workers: int) -> int:
    """Threads meant by a ``workers`` argument (−1: all cores)."""
    return (os.cpu_count() or 1) if workers < 0 else workers


_HELPER: list = []  # [(process id, executor)]


def helper_thread() -> concurrent.futures.Executor:
    """One helper thread for splitting a step's work in two (made anew in a forked child)."""
    if not _HELPER or _HELPER[0][0] != os.getpid():
        _HELPER[:] = [(os.getpid(), concurrent.futures.ThreadPoolExecutor(1, thread_name_prefix="benchcheck-helper"))]
    return _HELPER[0][1]


def carrying_fft_threads(call: Callable[[], Any]) -> Callable[[], Any]:
    """``call`` made to run with the caller's FFT thread count on whichever thread runs it."""
    workers = scipy.fft.get_workers()

    def with_callers_threads() -> Any:
        with scipy.fft.set_workers(workers):
            return call()

    return with_callers_threads
