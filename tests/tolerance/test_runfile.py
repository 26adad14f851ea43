"""Tests of benchcheck/tolerance/runfile.py: whole lines, torn last line, refusals."""

from __future__ import annotations

import json

import pytest

from benchcheck.tolerance.runfile import (
    RunFileError,
    RunFileWriter,
    RunHeader,
    TrialRecord,
    check_resumable,
    read_run_file,
)


def _header() -> RunHeader:
    return RunHeader(layout="bench.toml", layout_hash="abc", seed=3, sampler="random", trials=4, dofs=("M1.tilt_x",))


def _record(index: int) -> TrialRecord:
    return TrialRecord(index=index, seed={"entropy": 3, "spawn_key": [index]},
                       perturbation={"M1.tilt_x": 0.1 + index / 3}, metrics={"screen.offset": 1 / 7, "screen.angle": None},
                       specs={"screen.offset": True}, passed=True)


def _write(path, count: int) -> None:
    writer = RunFileWriter.create(path, _header())
    for index in range(count):
        writer.write(_record(index))
    writer.close()


def test_records_round_trip_exactly(tmp_path):
    path = tmp_path / "run.jsonl"
    _write(path, 3)
    contents = read_run_file(path)
    assert contents.header.layout_hash == "abc" and contents.header.versions["numpy"]
    # JSON writes floats with repr, which reads back to the same double.
    assert [contents.records[i] for i in range(3)] == [_record(i) for i in range(3)]
    assert not contents.dropped_torn_line
    assert all(json.loads(line) for line in path.read_text().splitlines())


def test_torn_last_line_is_dropped_and_overwritten_on_resume(tmp_path):
    path = tmp_path / "run.jsonl"
    _write(path, 3)
    whole = path.read_bytes()
    path.write_bytes(whole[: whole.rindex(b"\n", 0, len(whole) - 1) + 20])  # cut inside the last line
    contents = read_run_file(path)
    assert sorted(contents.records) == [0, 1] and contents.dropped_torn_line
    writer = RunFileWriter.resume(path, contents)
    writer.write(_record(2))
    writer.close()
    assert path.read_bytes() == whole


def test_damage_before_the_last_line_is_refused(tmp_path):
    path = tmp_path / "run.jsonl"
    _write(path, 3)
    lines = path.read_text().splitlines(keepends=True)
    lines[1] = lines[1][:10] + "\n"
    path.write_text("".join(lines))
    with pytest.raises(RunFileError, match=":2: damaged line"):
        read_run_file(path)


def test_a_file_without_header_is_refused(tmp_path):
    path = tmp_path / "notes.jsonl"
    path.write_text('{"index": 0}\n')
    with pytest.raises(RunFileError, match="no header"):
        read_run_file(path)


def test_existing_file_is_not_overwritten_without_force(tmp_path):
    path = tmp_path / "run.jsonl"
    path.write_text("keep me\n")
    with pytest.raises(RunFileError, match="--force"):
        RunFileWriter.create(path, _header())
    assert path.read_text() == "keep me\n"
    RunFileWriter.create(path, _header(), force=True).close()
    assert read_run_file(path).header.seed == 3


@pytest.mark.parametrize("changes, words", [({"layout_hash": "def"}, "layout file changed"),
                                            ({"seed": 4}, "seed is 4"), ({"sampler": "sobol"}, "sampler is 'sobol'")])
def test_resume_refuses_a_different_study(changes, words):
    settings = {"layout_hash": "abc", "seed": 3, "sampler": "random"} | changes
    with pytest.raises(RunFileError, match=words):
        check_resumable(_header(), settings["layout_hash"], settings["seed"], settings["sampler"], "run.jsonl")
    check_resumable(_header(), "abc", 3, "random", "run.jsonl")
