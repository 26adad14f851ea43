"""One thread pool at a time: BLAS on one thread while a simulation's transforms use the cores.

OpenBLAS threads keep spinning for a while after each call. Beside scipy.fft's own threads on
a 2-core machine they took the cores from it: three 1024 x 1024 transforms right after a
trial's matrix products took 47 ms with BLAS on two threads and 24 ms with BLAS on one
(benchmarks/trial_speed.py; the trap is named in DEVELOPERS.md). The matrix products a trial
makes (zoomed DFTs of a few dozen inputs, sums, small matrices) gain little from threads, so
while benchcheck evaluates, BLAS runs on one thread (threadpoolctl, which finds the BLAS
libraries numpy and scipy load and sets their thread counts, restored afterwards).
"""

from __future__ import annotations

import functools
from collections.abc import Iterator
from contextlib import contextmanager

from threadpoolctl import ThreadpoolController

__all__ = ["blas_on_one_thread"]


@functools.cache
def _controller() -> ThreadpoolController:
    return ThreadpoolController()  # looks up the loaded libraries once (about a millisecond)


@contextmanager
def blas_on_one_thread() -> Iterator[None]:
    """BLAS on one thread inside the block (about 25 µs to enter and leave)."""
    with _controller().limit(limits=1, user_api="blas"):
        yield
