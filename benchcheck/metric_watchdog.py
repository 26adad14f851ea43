"""Running a plugin's metric with a time limit, on the main thread and in worker processes.

Python cannot stop a thread, so a metric runs on a helper thread while the caller waits
at most the time limit for it. A metric that has not finished by then is abandoned: the
caller records it as failed and goes on, and the helper thread, still busy with it, is
left behind (a daemon thread, so it never keeps the process from exiting); the next
metric gets a fresh helper. Signals (Ctrl-C) still reach the waiting main thread.

The metrics of one plane go to the helper together (``run_each_with_time_limit``): one
hand-over for all of them rather than one each (a hand-over costs 50-100 µs, as much as a
paraxial metric many times over), each still within its own time limit. A call runs with
the caller's FFT thread count (benchcheck.thread_pools).
"""

from __future__ import annotations

import math
import os
import queue
import threading
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

    def submit_each(self, calls: Sequence[Callable[[], Any]], answers: queue.SimpleQueue,
                    abandoned: threading.Event) -> None:
        """Run ``calls`` in turn, putting (value, None) or (None, error) for each on ``answers``;
        stop once the caller has set ``abandoned`` (it gave up waiting)."""

        def job() -> None:
            for call in calls:
                if abandoned.is_set():
                    return
                answers.put(_answer(call))

        self._jobs.put(job)


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
    results: list[tuple[Any, BaseException | None]] = []
    pending = list(calls)
    while pending:
        answers: queue.SimpleQueue = queue.SimpleQueue()
        abandoned = threading.Event()
        _helper().submit_each([carrying_fft_threads(call) for call in pending], answers, abandoned)
        for index in range(len(pending)):
            try:
                results.append(answers.get(timeout=max(float(time_limit), 0.0)))
            except queue.Empty:
                abandoned.set()  # the helper runs none of the calls after this one
                try:  # finished just now
                    results.append(answers.get_nowait())
                except queue.Empty:
                    _helpers.helper = None  # that thread is busy for good: the rest get a new one
                    results.append((None, MetricTimedOut(time_limit)))
                pending = pending[index + 1:]
                break
        else:
            pending = []
    return results
