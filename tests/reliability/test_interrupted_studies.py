"""Studies stopped by a signal keep their finished trials and resume to the same summary.

Each case starts ``python3 -m benchcheck tolerance ... --out run.jsonl`` as a separate
process, stops it once a random number of trials have landed in the run file, resumes
it, and compares the summary JSON with an uninterrupted run of the same study, bit for
bit (every key but the notes, which may say a torn last line was dropped). The bench is
paraxial only, so a few thousand trials take seconds.
"""

from __future__ import annotations

import json
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from benchcheck.tolerance.runfile import read_run_file
from tests.reliability.conftest import write_mirror_bench

TRIALS = 1000
# Exit statuses of a process stopped by SIGINT and SIGTERM: 128 + signal number (common practice
# of POSIX shells), which benchcheck returns after writing its finished trials.
EXPECTED_EXIT = {signal.SIGINT: 130, signal.SIGTERM: 143, signal.SIGKILL: -signal.SIGKILL}


def _benchcheck(*arguments: str, **options) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "benchcheck", *arguments], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, **options)


def _trial_lines(path: Path) -> int:
    try:
        return max(path.read_bytes().count(b"\n") - 1, 0)
    except FileNotFoundError:
        return 0


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    """The layout and its uninterrupted summary (run to the end in this process, as main(argv))."""
    from tests.cli.conftest import Run

    layout = write_mirror_bench(tmp_path_factory.mktemp("study"), trials=TRIALS, seed=11)
    finished = Run(["tolerance", str(layout), "--json"])
    assert finished.code == 0, finished.output
    return layout, json.loads(finished.output)


def _without_notes(summary: dict) -> dict:
    return {key: value for key, value in summary.items() if key != "notes"}


@pytest.mark.slow
@pytest.mark.parametrize("stop, resume_workers", [(signal.SIGKILL, "2"), (signal.SIGINT, "1"),
                                                  (signal.SIGTERM, "1")],
                         ids=["SIGKILL", "SIGINT", "SIGTERM"])
def test_stopped_then_resumed_equals_uninterrupted(study, tmp_path, stop, resume_workers):
    layout, reference = study
    run_file = tmp_path / "run.jsonl"
    landed = random.Random().randint(1, TRIALS // 3)  # the random moment: after this many trials
    running = _benchcheck("tolerance", str(layout), "--out", str(run_file), "--json")
    while _trial_lines(run_file) < landed and running.poll() is None:
        time.sleep(0.002)
    running.send_signal(stop)
    output, errors = running.communicate(timeout=120)
    if running.returncode == 0:
        pytest.skip(f"the study finished before the signal ({landed} trials)")  # a very slow poll only
    assert running.returncode == EXPECTED_EXIT[stop], errors
    kept = read_run_file(run_file)  # sound lines parse; a torn last line is dropped, never fatal
    assert landed <= len(kept.records) < TRIALS, f"stopped after {landed} trials"
    if stop != signal.SIGKILL:
        assert "resume with: benchcheck tolerance" in errors and "--resume" in errors
        assert not kept.dropped_torn_line  # a handled signal writes whole lines only
    resumed = _benchcheck("tolerance", str(layout), "--out", str(run_file), "--resume", "--json",
                          "--workers", resume_workers)
    output, errors = resumed.communicate(timeout=300)
    assert resumed.returncode == 0, errors
    summary = json.loads(output)
    assert _without_notes(summary) == _without_notes(reference), f"stopped after {landed} trials"
    final = read_run_file(run_file)
    assert sorted(final.records) == list(range(TRIALS)) and not final.dropped_torn_line
    assert final.header.versions["numpy"] and final.header.layout_hash == kept.header.layout_hash
