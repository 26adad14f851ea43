"""Running a plugin's metric with a time limit, on the main thread and in worker processes.

Python cannot stop a thread, so a metric runs on a helper thread while the caller waits
at most the time limit for it. A metric that has not finished by then is abandoned: the
caller records it as failed and goes on, and the helper thread, still busy with it, is
left behind (a daemon thread, so it never keeps the process from exiting); the next
metric gets a fresh helper. Signals (Ctrl-C) still reach the waiting main thread.

The metrics of one plane go to the helper together (``run_each_with_time_limit``): one
hand-over for all of them rather than one each (a hand-over costs 50-100 µs, as much as a
paraxial metric many times over), each still within its own time limit. The caller is woken
once, when all have finished (or when one overruns), not at each answer, which would take
the interpreter lock from the helper while it works: five calls of 0.1 ms took 0.70-0.73 ms
with a wake-up per answer, 0.58-0.69 ms with one, 0.48 ms on the caller. A call runs with
the caller's FFT thread count (benchcheck.thread_pools).
"""

from __future__ import annotations

import math
import os
import queue
import threading
import time
from collections.abc import Callable, Sequence
from typing import Any

from benchcheck.thread_pools import carrying_fft_threads

__all__ = ["DEFAULT_METRIC_TIME_LIMIT", "MetricTimedOut", "run_with_time_limit", "run_each_with_time_limit"]

#: Seconds a metric may take at one plane of one trial unless the caller says otherwise.
DEFAULT_METRIC_TIME_LIMIT = 60.0


class MetricTimedOut(Exception):
    """A metric did not finish within its time limit and was abandoned."""


class _Helper:
    """One daemon thread that runs calls handed to it, one at a time."""

    def __init__(self) -> None:
        self.process = os.getpid()
        self._jobs: queue.SimpleQueue = queue.SimpleQueue()
        self._thread = threading.Thread(target=self._serve, name="benchcheck-metric", daemon=True)
        self._thread.start()

    @property
    def usable(self) -> bool:
        # A forked child has the object but not the thread.
        return self.process == os.getpid() and self._thread.is_alive()

    def _serve(self) -> None:
        while True:
            self._jobs.get()()

    def submit_each(self, calls: Sequence[Callable[[], Any]], progress: "_Progress") -> None:
        """Run ``calls`` in turn, recording each answer, (value, None) or (None, error), in
        ``progress``; stop once the caller has abandoned it (it gave up waiting)."""

        def job() -> None:
            for call in calls:
                answer = _answer(call)
                if not progress.record(answer):
                    return
            progress.done.set()

        self._jobs.put(job)


class _Progress:
    """The answers of one hand-over so far, and when the last came, shared by the helper and
    the waiting caller under one lock (so that an answer is either taken or abandoned)."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self.answers: list[tuple[Any, BaseException | None]] = []
        self.last_at = time.monotonic()
        self.done = threading.Event()
        self._abandoned = False

    def record(self, answer: tuple[Any, BaseException | None]) -> bool:
        """Keep an answer; False when the caller has abandoned the hand-over."""
        with self._lock:
            if self._abandoned:
                return False
            self.answers.append(answer)
            self.last_at = time.monotonic()
            return True

    def abandon_if_overrun(self, time_limit: float) -> int | None:
        """The number of answers kept, abandoning the hand-over, when the call running now
        has taken ``time_limit`` or more; None while it is within it."""
        with self._lock:
            if time.monotonic() - self.last_at < time_limit:
                return None
            self._abandoned = True
            return len(self.answers)


def _answer(call: Callable[[], Any]) -> tuple[Any, BaseException | None]:
    try:
        return call(), None
    except BaseException as error:  # handed back to the caller, which has the guard
        return None, error


_helpers = threading.local()


def _helper() -> _Helper:
    helper = getattr(_helpers, "helper", None)
    if helper is None or not helper.usable:
        helper = _helpers.helper = _Helper()
    return helper


def run_with_time_limit(call: Callable[[], Any], time_limit: float) -> Any:
    """``call()``, or ``MetricTimedOut`` when it takes longer than ``time_limit`` seconds.

    An exception raised by ``call`` is raised here. With ``time_limit`` infinite the call
    runs on the calling thread.
    """
    value, error = run_each_with_time_limit([call], time_limit)[0]
    if error is not None:
        raise error
    return value


def run_each_with_time_limit(calls: Sequence[Callable[[], Any]],
                             time_limit: float) -> list[tuple[Any, BaseException | None]]:
    """(value, None) or (None, error) for each call in turn, each within ``time_limit``
    seconds of the one before finishing (error ``MetricTimedOut`` past it).

    The calls run one after another on one helper thread, handed over together. One that
    overruns is abandoned with its helper, and the calls after it go to a fresh helper.
    With ``time_limit`` infinite the calls run on the calling thread.
    """
    if math.isinf(time_limit):
        return [_answer(call) for call in calls]
    time_limit = max(float(time_limit), 0.0)
    results: list[tuple[Any, BaseException | None]] = []
    pending = list(calls)
    while pending:
        progress = _Progress()
        _helper().submit_each([carrying_fft_threads(call) for call in pending], progress)
        # woken once at the end; on a time-out only if the running call has overrun
        while not progress.done.wait(timeout=max(progress.last_at + time_limit - time.monotonic(), 0.0)):
            kept = progress.abandon_if_overrun(time_limit)
            if kept is not None:
                _helpers.helper = None  # that thread is busy for good: the rest get a new one
                results.extend(progress.answers[:kept])
                results.append((None, MetricTimedOut(time_limit)))
                pending = pending[kept + 1:]
                break
        else:
            results.extend(progress.answers)
            pending = []
    return results
