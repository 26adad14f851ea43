"""The same seed gives the same summary bit for bit; the run file records what fixed it."""

from __future__ import annotations

import hashlib
import json
from importlib import metadata

import numpy as np
import scipy

from benchcheck.api import load_layout
from benchcheck.tolerance.runfile import read_run_file
from benchcheck.tolerance.study import run_study
from tests.reliability.conftest import write_mirror_bench


def test_run_file_records_versions_and_the_layout_hash(tmp_path, plugin_manager):
    path = write_mirror_bench(tmp_path, trials=8)
    run_study(load_layout(path), plugin_manager, run_file=tmp_path / "run.jsonl")
    header = read_run_file(tmp_path / "run.jsonl").header
    # The hash is SHA-256 of the layout's text (FIPS 180-4), computed here independently.
    assert header.layout_hash == hashlib.sha256(path.read_bytes()).hexdigest()
    assert header.versions["numpy"] == np.__version__ and header.versions["scipy"] == scipy.__version__
    assert header.versions["benchcheck"] == metadata.version("benchcheck")
    assert (header.seed, header.trials, header.sampler) == (7, 8, "random")


def test_same_seed_same_json_across_runs_and_resume(tmp_path, plugin_manager, run_cli):
    path = write_mirror_bench(tmp_path, trials=60)
    first = run_cli(["tolerance", str(path), "--json", "--out", str(tmp_path / "a.jsonl")])
    second = run_cli(["tolerance", str(path), "--json"])
    assert first.code == second.code == 0 and first.output == second.output
    # Keep the header and 25 trials of the first run file, then resume: the same JSON.
    lines = (tmp_path / "a.jsonl").read_text().splitlines(keepends=True)
    (tmp_path / "b.jsonl").write_text("".join(lines[:26]))
    resumed = run_cli(["tolerance", str(path), "--json", "--out", str(tmp_path / "b.jsonl"), "--resume"])
    assert resumed.code == 0 and resumed.output == first.output
    other_seed = run_cli(["tolerance", str(path), "--json", "--seed", "8"])
    assert json.loads(other_seed.output)["metrics"] != json.loads(first.output)["metrics"]
