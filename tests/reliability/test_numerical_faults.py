"""Faulty trials are marked with their reason and counted apart; plugins that raise, return
NaN or hang are named, and the study finishes."""

from __future__ import annotations

import signal
import threading
import time

import pytest

from benchcheck import hookimpl
from benchcheck.api import load_layout
from benchcheck.errors import SamplingError
from benchcheck.metrics import Metric, MetricContext, MetricRegistry, evaluate_metrics
from benchcheck.plugin_manager import make_plugin_manager
from benchcheck.tolerance.study import run_study
from benchcheck.tolerance.workers import build_runner
from tests.reliability.conftest import write_mirror_bench

RELEASE = threading.Event()  # lets an abandoned, sleeping metric finish when the test ends


def _tilted_up(context: MetricContext) -> bool:
    # The mirror's tilt about x moves the chief ray in y (DESIGN.md section 4).
    return context.beam.offset[1] > 0


class FaultyPlugin:
    """Metrics that misbehave on the trials whose beam lands above the axis."""

    @hookimpl
    def benchcheck_register_metrics(self):
        def nan_above(context):
            return float("nan") if _tilted_up(context) else 1.0

        def raise_above(context):
            if _tilted_up(context):
                raise RuntimeError("cannot handle this beam")
            return 1.0

        def hang_above(context):
            if _tilted_up(context):
                RELEASE.wait(30)
            return 1.0

        common = dict(needs_field=False, unit="", description="test metric", source="none (a test fixture)")
        return [Metric("nan_above", nan_above, **common), Metric("raise_above", raise_above, **common),
                Metric("hang_above", hang_above, **common)]


@pytest.fixture(scope="module")
def faulty_plugins():
    return make_plugin_manager(extra_plugins=[("faulty_metrics", FaultyPlugin())])


@pytest.fixture(autouse=True, scope="module")
def release_sleepers():
    yield
    RELEASE.set()


def test_a_focal_length_driven_through_zero_is_a_fault_not_a_crash(tmp_path, plugin_manager):
    # f + Δf = 0 has no thin-lens ray matrix (C = -1/f; Siegman, Lasers (1986), ch. 15).
    runner = build_runner(load_layout(write_mirror_bench(tmp_path)), plugin_manager)
    record = runner.run(0, {"L1.focal_length": -0.4}, {})
    assert not record.valid and not record.passed and "non-zero focal length" in record.faults[0]
    assert runner.run(1, {"L1.focal_length": -0.8}, {}).valid  # a negative lens is fine


@pytest.mark.parametrize("metric, says", [
    ("nan_above", "from plugin 'faulty_metrics' gave a non-finite value (nan)"),
    ("raise_above", "from plugin 'faulty_metrics' failed at plane 'screen': RuntimeError: cannot handle this beam"),
])
def test_a_metric_that_fails_on_some_trials_is_counted_apart(tmp_path, faulty_plugins, metric, says):
    extra = f'[[spec]]\nmetric = "{metric}"\nat = "screen"\nmax = 2'
    result = run_study(load_layout(write_mirror_bench(tmp_path, trials=30, extra_spec=extra), faulty_plugins),
                       faulty_plugins)
    faulty = [r.index for r in result.records if r.faults]
    assert faulty and len(faulty) < 30
    data = result.to_dict()
    assert data["faults"]["count"] == len(faulty) and data["valid_trials"] == 30 - len(faulty)
    assert says in data["faults"]["reasons"][0]["example"]
    # Faulty trials never reach the statistics: every averaged value comes from a valid trial.
    assert data["yield"] == data["passed_trials"] / data["valid_trials"]
    valid_offsets = [r.metrics["screen.offset"] for r in result.records if r.valid]
    assert data["metrics"]["screen.offset"]["mean"] == pytest.approx(sum(valid_offsets) / len(valid_offsets),
                                                                      rel=1e-12)  # float summation order only


def test_a_hanging_metric_is_abandoned_after_its_time_limit(tmp_path, faulty_plugins):
    # The [[spec]] option metric_time_limit sets the limit at that plane: 0.2 s here.
    extra = '[[spec]]\nmetric = "hang_above"\nat = "screen"\nmax = 2\nmetric_time_limit = "0.2 s"'
    result = run_study(load_layout(write_mirror_bench(tmp_path, trials=6, extra_spec=extra), faulty_plugins),
                       faulty_plugins)
    faults = [fault for record in result.records for fault in record.faults]
    assert faults and len(result.records) == 6
    assert all("'hang_above' from plugin 'faulty_metrics' did not finish within 0.2 s" in fault for fault in faults)
    assert result.to_dict()["faults"]["count"] == len(faults)


def test_time_limit_argument_and_a_metric_that_raises_timeout_itself():
    def slow(context):
        time.sleep(0.5)
        return 1.0

    def raises_timeout(context):
        raise TimeoutError("the metric's own time-out")

    registry = MetricRegistry()
    common = dict(needs_field=False, unit="", description="test", source="none (a test fixture)")
    registry.add(Metric("slow", slow, **common), "slow_plugin")
    registry.add(Metric("own_timeout", raises_timeout, **common), "other_plugin")
    slow_outcome, own = evaluate_metrics(registry, ["slow", "own_timeout"], MetricContext("p", 1e-6), time_limit=0.05)
    assert "did not finish within 0.05 s" in slow_outcome.error and "slow_plugin" in slow_outcome.error
    assert "TimeoutError: the metric's own time-out" in own.error  # not mistaken for the limit
    fast = evaluate_metrics(registry, ["slow"], MetricContext("p", 1e-6), time_limit=5)
    assert fast[0].value == 1.0
    # a limit past what the platform's timer takes (time_t) is as good as none
    assert evaluate_metrics(registry, ["slow"], MetricContext("p", 1e-6), time_limit=1e12)[0].value == 1.0


def _recording_registry(ran: dict, release: threading.Event) -> MetricRegistry:
    """Metrics "before", "hangs" (waits for ``release``) and "after", each noting the thread
    it ran on in ``ran``."""
    def recording(name, value, wait=False):
        def compute(context):
            ran.setdefault(name, []).append(threading.current_thread())
            if wait:
                release.wait(5)
            return value
        return compute

    registry = MetricRegistry()
    common = dict(needs_field=False, unit="", description="test", source="none (a test fixture)")
    registry.add(Metric("before", recording("before", 1.0), **common), "test_plugin")
    registry.add(Metric("hangs", recording("hangs", 0.0, wait=True), **common), "test_plugin")
    registry.add(Metric("after", recording("after", 2.0), **common), "test_plugin")
    return registry


def test_off_the_main_thread_the_metrics_share_one_helper_and_one_that_hangs_leaves_the_rest():
    # Off the main thread (a dask worker's thread) there is no timer signal: the metrics of
    # one plane go to the helper thread in one hand-over, each within its own limit (common
    # practice for a watchdog). One that hangs is abandoned: the metric after it runs on a
    # fresh helper, and the abandoned helper, once free, runs nothing more.
    release = threading.Event()
    ran: dict[str, list] = {}
    registry = _recording_registry(ran, release)
    result = {}

    def caller():
        result["outcomes"] = evaluate_metrics(registry, ["before", "hangs", "after"], MetricContext("p", 1e-6),
                                              time_limit=0.2)

    thread = threading.Thread(target=caller)
    thread.start()
    thread.join(10)
    outcomes = result["outcomes"]
    assert [outcome.value for outcome in outcomes] == [1.0, None, 2.0]
    assert "'hangs' from plugin 'test_plugin' did not finish within 0.2 s" in outcomes[1].error
    release.set()
    time.sleep(0.1)  # the abandoned call returns; its helper must then stop, not run "after" again
    assert {name: len(threads) for name, threads in ran.items()} == {"before": 1, "hangs": 1, "after": 1}
    assert ran["before"][0] is ran["hangs"][0] is not thread
    assert ran["after"][0] is not ran["hangs"][0]


def test_on_the_main_thread_a_metric_that_hangs_is_stopped_by_the_timer_signal():
    # On the main thread each metric runs on the caller under SIGALRM (signal.setitimer):
    # past its limit the signal stops it where it waits, and no thread is left behind.
    release = threading.Event()
    ran: dict[str, list] = {}
    registry = _recording_registry(ran, release)
    threads_before = threading.active_count()
    started = time.monotonic()
    outcomes = evaluate_metrics(registry, ["before", "hangs", "after"], MetricContext("p", 1e-6), time_limit=0.2)
    assert time.monotonic() - started < 2  # the 5 s wait was cut short
    assert [outcome.value for outcome in outcomes] == [1.0, None, 2.0]
    assert "'hangs' from plugin 'test_plugin' did not finish within 0.2 s" in outcomes[1].error
    assert all(threads == [threading.main_thread()] for threads in ran.values())
    assert threading.active_count() == threads_before
    assert signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)  # disarmed


def test_the_timer_stops_a_busy_loop_that_swallows_the_first_signal_and_passes_ctrl_c_on():
    # A pure-Python loop that catches everything, even the first signal, is stopped by a
    # later one (the timer fires again every _REFIRE_S) and still counts as overrun. What is
    # not an Exception is not the metric's to lose, as from the helper thread: Ctrl-C and
    # SystemExit during a metric stop the caller.
    def stubborn(context):
        caught = 0
        while caught < 2:
            try:
                while True:
                    pass
            except BaseException:  # noqa: BLE001 - the misbehaviour under test
                caught += 1
        return 1.0

    def exits(context):
        raise SystemExit(3)

    def interrupted(context):
        raise KeyboardInterrupt

    registry = MetricRegistry()
    common = dict(needs_field=False, unit="", description="test", source="none (a test fixture)")
    for name, compute in (("stubborn", stubborn), ("exits", exits), ("interrupted", interrupted)):
        registry.add(Metric(name, compute, **common), "test_plugin")
    (loop,) = evaluate_metrics(registry, ["stubborn"], MetricContext("p", 1e-6), time_limit=0.1)
    assert loop.value is None and "did not finish within 0.1 s" in loop.error and "(stopped)" in loop.error
    for name, error in (("exits", SystemExit), ("interrupted", KeyboardInterrupt)):
        with pytest.raises(error):
            evaluate_metrics(registry, [name], MetricContext("p", 1e-6), time_limit=5)
    assert signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)


def test_someone_elses_timer_signal_is_left_alone():
    # Where SIGALRM already has another handler (a test runner's time-out, say), the metrics
    # go to the helper thread and the handler is kept.
    def theirs(signum, frame):
        raise AssertionError("their alarm")

    release = threading.Event()
    ran: dict[str, list] = {}
    registry = _recording_registry(ran, release)
    previous = signal.signal(signal.SIGALRM, theirs)
    try:
        outcomes = evaluate_metrics(registry, ["before", "hangs"], MetricContext("p", 1e-6), time_limit=0.1)
        assert signal.getsignal(signal.SIGALRM) is theirs
    finally:
        signal.signal(signal.SIGALRM, previous)
        release.set()
    assert [outcome.value for outcome in outcomes] == [1.0, None]
    assert ran["before"][0] is not threading.main_thread()


def test_each_metric_of_a_plane_has_its_own_time_limit_not_the_batch():
    # Three metrics of 0.12 s each against a limit of 0.2 s: together they take longer than
    # the limit, each alone does not, so none is abandoned (the caller, woken only at the end,
    # measures each call from the end of the one before).
    def steady(context):
        time.sleep(0.12)
        return 1.0

    registry = MetricRegistry()
    common = dict(needs_field=False, unit="", description="test", source="none (a test fixture)")
    for name in ("first", "second", "third"):
        registry.add(Metric(name, steady, **common), "test_plugin")
    outcomes = evaluate_metrics(registry, ["first", "second", "third"], MetricContext("p", 1e-6), time_limit=0.2)
    assert [outcome.value for outcome in outcomes] == [1.0, 1.0, 1.0]


def test_a_stage_that_cannot_sample_is_a_fault(tmp_path, plugin_manager):
    runner = build_runner(load_layout(write_mirror_bench(tmp_path)), plugin_manager)
    runner.evaluator.needs_wave = True

    def simulate(realization, trace):
        raise SamplingError("stage to plane 'screen': the output window lies outside the image")

    runner.evaluator.simulate = simulate
    record = runner.run(3, {"M1.tilt_x": 1e-4}, {})
    assert record.faults == ("SamplingError: stage to plane 'screen': the output window lies outside the image",)
