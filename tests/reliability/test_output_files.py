"""No command replaces an existing file unless it is given --force."""

from __future__ import annotations

import argparse

import pytest

from benchcheck.cli.main import _build_parser
from tests.reliability.conftest import write_mirror_bench, write_modulator_bench

# Option names that make a command write a file or a folder of files.
WRITER_WORDS = ("out", "save", "output", "write", "html", "export", "report-file")


def _subcommands() -> dict[str, argparse.ArgumentParser]:
    parser = _build_parser()
    actions = [a for a in parser._actions if isinstance(a, argparse._SubParsersAction)]
    return dict(actions[0].choices) if actions else {}


@pytest.mark.parametrize("name, parser", sorted(_subcommands().items()))
def test_every_command_that_writes_files_has_force(name, parser):
    options = {option for action in parser._actions for option in action.option_strings}
    writers = sorted(option for option in options if any(option.lstrip("-") == word or
                                                         option.lstrip("-").startswith(word + "-")
                                                         for word in WRITER_WORDS))
    assert not writers or "--force" in options, f"'{name}' writes files ({writers}) but has no --force"


def test_existing_outputs_are_kept_byte_for_byte(run_cli, tmp_path):
    run_file = tmp_path / "run.jsonl"
    run_file.write_bytes(b"a colleague's notes\n")
    bench = write_mirror_bench(tmp_path, trials=5)
    assert run_cli(["tolerance", str(bench), "--out", str(run_file)]).code == 2
    assert run_file.read_bytes() == b"a colleague's notes\n"
    folder = tmp_path / "fields"
    folder.mkdir()
    (folder / "work.field.npy").write_bytes(b"keep me")
    slm = write_modulator_bench(tmp_path, simulation="[simulation]\ngrid = 64")
    refused = run_cli(["simulate", str(slm), "--save", str(folder)])
    assert refused.code == 2 and "--force" in refused.output
    assert (folder / "work.field.npy").read_bytes() == b"keep me"
    assert sorted(path.name for path in folder.iterdir()) == ["work.field.npy"]  # nothing half-written
