"""Running a plugin's metric with a time limit, on the main thread and in worker processes.

Python cannot stop a thread, so a metric runs on a helper thread while the caller waits
at most the time limit for it. A metric that has not finished by then is abandoned: the
caller records it as failed and goes on, and the helper thread, still busy with it, is
left behind (a daemon thread, so it never keeps the process from exiting); the next
metric gets a fresh helper. Signals (Ctrl-C) still reach the waiting main thread.
"""

from __future__ import annotations

import concurrent.futures
import math
import os
import queue
import threading
from collections.abc import Callable
from typing import Any

__all__ = ["DEFAULT_METRIC_TIME_LIMIT", "MetricTimedOut", "run_with_time_limit"]

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
            future, call = self._jobs.get()
            if not future.set_running_or_notify_cancel():
                continue
            try:
                future.set_result(call())
            except BaseException as error:  # handed back to the caller, which has the guard
                future.set_exception(error)

    def submit(self, call: Callable[[], Any]) -> concurrent.futures.Future:
        future: concurrent.futures.Future = concurrent.futures.Future()
        self._jobs.put((future, call))
        return future


_helpers = threading.local()


def run_with_time_limit(call: Callable[[], Any], time_limit: float) -> Any:
    """``call()``, or ``MetricTimedOut`` when it takes longer than ``time_limit`` seconds.

    An exception raised by ``call`` is raised here. With ``time_limit`` infinite the call
    runs on the calling thread.
    """
    if math.isinf(time_limit):
        return call()
    helper = getattr(_helpers, "helper", None)
    if helper is None or not helper.usable:
        helper = _helpers.helper = _Helper()
    future = helper.submit(call)
    try:
        return future.result(timeout=max(float(time_limit), 0.0))
    except concurrent.futures.TimeoutError:
        if future.done():  # finished just now, or the metric itself raised TimeoutError
            return future.result()
        _helpers.helper = None  # that thread is busy for good: the next call gets a new one
        raise MetricTimedOut(time_limit) from None
