"""Running a plugin's metric with a time limit, on the main thread and in worker processes.

On the main thread (a study in one process, and each worker process of a study) a metric
runs on the caller, with a timer signal (SIGALRM, ``signal.setitimer``) armed for its
limit: past it, the signal's handler raises in the metric, which stops where it is (a
Python loop, a sleep or a wait on a lock alike; a call inside compiled code stops when it
returns) and is recorded as failed. Arming and disarming cost a few microseconds, where the
hand-over to another thread below cost a study's trial of the 4f example 0.65 ms at 512 and
0.9 ms at 1024 (waking the idle core; measured side by side). The handler, once installed,
stays; a SIGALRM that comes while no metric runs is ignored (a program that relied on the
default action, ending the process, should install its own handler first, which is then
left alone).

Where no timer signal is to be had (a thread other than the main one, as a dask worker's;
a platform without SIGALRM; a handler for it that is not ours), a metric runs on a helper
thread while the caller waits at most the time limit for it. Python cannot stop a thread,
so a metric that has not finished by then is abandoned: the caller records it as failed
and goes on, and the helper thread, still busy with it, is left behind (a daemon thread, so
it never keeps the process from exiting); the next metric gets a fresh helper. Signals
(Ctrl-C) still reach the waiting main thread. The metrics of one plane go to the helper
together (``run_each_with_time_limit``): one hand-over for all of them rather than one each
(a hand-over costs 50-100 µs, as much as a paraxial metric many times over), each still
within its own time limit. The caller is woken once, when all have finished (or when one
overruns), not at each answer, which would take the interpreter lock from the helper while
it works: five calls of 0.1 ms took 0.70-0.73 ms with a wake-up per answer, 0.58-0.69 ms
with one, 0.48 ms on the caller. A call runs with the caller's FFT thread count
(benchcheck.thread_pools).
"""

from __future__ import annotations

import math
import os
import queue
import signal
import threading
import time
from collections.abc import Callable, Sequence
from typing import Any

from benchcheck.thread_pools import carrying_fft_threads

__all__ = ["DEFAULT_METRIC_TIME_LIMIT", "MetricTimedOut", "run_with_time_limit", "run_each_with_time_limit"]

#: Seconds a metric may take at one plane of one trial unless the caller says otherwise.
DEFAULT_METRIC_TIME_LIMIT = 60.0


class MetricTimedOut(Exception):
    """A metric did not finish within its time limit: stopped by the timer signal
    (``stopped``), or abandoned on its helper thread."""

    def __init__(self, time_limit: float, stopped: bool = False) -> None:
        super().__init__(time_limit)
        self.stopped = stopped


class _Overran(BaseException):
    """Raised in the running metric by the timer signal (a BaseException, so that a
    plugin's ``except Exception`` does not swallow it)."""


_TIMER_SIGNAL = getattr(signal, "SIGALRM", None)
# After the first signal the timer fires again at this interval until the call returns: a
# metric that swallowed the first (a bare except) is stopped by a later one.
_REFIRE_S = 0.5
# The longest the timer is armed for (a platform's time_t overflows near 1e10 s); a limit
# beyond it is as good as none.
_LONGEST_TIMER_S = 1e8


class _TimerState:
    armed = False  # a metric is running under the timer (main thread only)
    fired = False  # the timer has gone off during it


def _on_timer(signum, frame) -> None:
    if _TimerState.armed:
        _TimerState.fired = True
        raise _Overran
    # a signal left over from a call already disarmed: nothing is running under the timer


def _timer_available() -> bool:
    """Whether metrics here can run under the timer signal: on the main thread, where the
    platform has SIGALRM and no one else handles it (installs our handler the first time)."""
    if _TIMER_SIGNAL is None or _TimerState.armed or threading.current_thread() is not threading.main_thread():
        return False
    handler = signal.getsignal(_TIMER_SIGNAL)
    if handler is _on_timer:
        return True
    if handler is not signal.SIG_DFL or signal.getitimer(signal.ITIMER_REAL) != (0.0, 0.0):
        return False  # someone else's timer: leave it alone
    signal.signal(_TIMER_SIGNAL, _on_timer)
    return True


def _disarm() -> None:
    _TimerState.armed = False  # first: a signal still on its way now finds nothing running
    signal.setitimer(signal.ITIMER_REAL, 0.0)


def _answer_under_timer(call: Callable[[], Any], time_limit: float) -> tuple[Any, BaseException | None]:
    """(value, None) or (None, error) of ``call()`` run here, stopped past ``time_limit``
    seconds. What is not an Exception (Ctrl-C, a stop requested by a signal, SystemExit) is
    not the metric's to lose: it goes on up, as from the helper."""
    _TimerState.fired = False
    _TimerState.armed = True
    try:
        try:
            signal.setitimer(signal.ITIMER_REAL, min(max(time_limit, 1e-6), _LONGEST_TIMER_S), _REFIRE_S)
            value = call()
            answer = (value, None)
        except _Overran:
            answer = (None, None)
        except Exception as error:  # a plugin's own failure, as on the helper
            answer = (None, error)
        finally:
            _disarm()
    except _Overran:  # the signal came as the call ended, before the disarming
        _disarm()
        answer = (None, None)
    if _TimerState.fired:
        return None, MetricTimedOut(time_limit, stopped=True)
    return answer


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

    On the main thread the calls run here, each under the timer signal; one that overruns
    is stopped. Elsewhere they run one after another on one helper thread, handed over
    together; one that overruns is abandoned with its helper, and the calls after it go to
    a fresh helper. With ``time_limit`` infinite the calls run on the calling thread.
    """
    if math.isinf(time_limit):
        return [_answer(call) for call in calls]
    time_limit = max(float(time_limit), 0.0)
    if _timer_available():
        return [_answer_under_timer(call, time_limit) for call in calls]
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
