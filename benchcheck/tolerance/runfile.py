"""The run file of a study: a header line, then one JSON line per finished trial.

Lines are written whole and flushed one at a time, so an interrupted study leaves at most
one torn last line; reading drops it. The header records what makes the trials
reproducible (layout hash, seed, sampler) so a resumed study can refuse a changed layout.
"""

from __future__ import annotations

import json
import math
import platform
from collections.abc import Mapping
from dataclasses import dataclass, field
from importlib import metadata
from pathlib import Path
from typing import BinaryIO

from benchcheck.errors import BenchcheckError

__all__ = [
    "RUN_FILE_FORMAT",
    "RunFileError",
    "TrialRecord",
    "RunHeader",
    "RunFileContents",
    "package_versions",
    "read_run_file",
    "RunFileWriter",
    "check_resumable",
]

RUN_FILE_FORMAT = 1
_HEADER_KIND = "benchcheck-tolerance-run"


class RunFileError(BenchcheckError):
    """A run file that cannot be written or resumed as asked (exit code 2 in the CLI)."""


def _finite_or_none(value: float | None) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


@dataclass(frozen=True)
class TrialRecord:
    """One finished trial, as the study keeps it and the run file stores it.

    Attributes
    ----------
    index : int
        Trial index (0-based); its draw depends only on (seed, sampler, index).
    seed : mapping
        What fixed the draw (``entropy`` and ``spawn_key``, or the Sobol sequence index).
    perturbation : mapping of str to float
        Excursion of each dof (SI).
    adjusted : mapping of str to float
        Value each adjustment dof was re-optimised to (SI); empty without adjustments.
    metrics : mapping of str to float or None
        ``<plane>.<metric>`` values (SI); None where the metric gave no value.
    specs : mapping of str to bool
        Pass (True) or fail of each spec, by spec label.
    passed : bool
        Every spec passed.
    faults : tuple of str
        Numerical or plugin faults; a trial with faults is counted apart from the yield.
    """

    index: int
    seed: Mapping[str, object]
    perturbation: Mapping[str, float]
    adjusted: Mapping[str, float] = field(default_factory=dict)
    metrics: Mapping[str, float | None] = field(default_factory=dict)
    specs: Mapping[str, bool] = field(default_factory=dict)
    passed: bool = False
    faults: tuple[str, ...] = ()

    @property
    def valid(self) -> bool:
        """True when the trial has no fault and counts towards the yield."""
        return not self.faults

    def to_dict(self) -> dict:
        return {
            "index": self.index,
            "seed": dict(self.seed),
            "perturbation": {key: float(value) for key, value in self.perturbation.items()},
            "adjusted": {key: _finite_or_none(value) for key, value in self.adjusted.items()},
            "metrics": {key: _finite_or_none(value) for key, value in self.metrics.items()},
            "specs": {key: bool(value) for key, value in self.specs.items()},
            "pass": bool(self.passed),
            "faults": list(self.faults),
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> "TrialRecord":
        return cls(
            index=int(data["index"]),
            seed=dict(data["seed"]),
            perturbation={key: float(value) for key, value in data["perturbation"].items()},
            adjusted={key: (math.nan if value is None else float(value)) for key, value in data["adjusted"].items()},
            metrics=dict(data["metrics"]),
            specs={key: bool(value) for key, value in data["specs"].items()},
            passed=bool(data["pass"]),
            faults=tuple(data["faults"]),
        )


def package_versions() -> dict[str, str]:
    """Versions that could change a trial's numbers: Python, benchcheck, numpy, scipy."""
    versions = {"python": platform.python_version()}
    for name in ("benchcheck", "numpy", "scipy"):
        try:
            versions[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            versions[name] = "unknown"
    return versions


@dataclass(frozen=True)
class RunHeader:
    """The first line of a run file."""

    layout: str
    layout_hash: str
    seed: int
    sampler: str
    trials: int
    dofs: tuple[str, ...]
    versions: Mapping[str, str] = field(default_factory=package_versions)

    def to_dict(self) -> dict:
        return {"kind": _HEADER_KIND, "format": RUN_FILE_FORMAT, "layout": self.layout,
                "layout_hash": self.layout_hash, "seed": self.seed, "sampler": self.sampler,
                "trials": self.trials, "dofs": list(self.dofs), "versions": dict(self.versions)}

    @classmethod
    def from_dict(cls, data: Mapping) -> "RunHeader":
        return cls(layout=str(data["layout"]), layout_hash=str(data["layout_hash"]), seed=int(data["seed"]),
                   sampler=str(data["sampler"]), trials=int(data["trials"]), dofs=tuple(data["dofs"]),
                   versions=dict(data.get("versions", {})))


@dataclass(frozen=True)
class RunFileContents:
    """What a run file holds: its header, complete trial records by index, and how many bytes are sound."""

    header: RunHeader
    records: Mapping[int, TrialRecord]
    sound_bytes: int
    dropped_torn_line: bool


def read_run_file(path: str | Path) -> RunFileContents:
    """Read a run file; a torn (incomplete or unparsable) last line is dropped.

    Raises
    ------
    RunFileError
        When the file is missing, has no valid header, or is damaged before its last line.
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as error:
        raise RunFileError(f"{path}: cannot read the run file ({error.strerror})") from None
    lines = data.split(b"\n")
    # A complete file ends with a newline, so the last piece is empty; anything else is torn.
    complete, tail = lines[:-1], lines[-1]
    sound_bytes = 0
    parsed: list[dict] = []
    dropped = bool(tail.strip())
    for number, line in enumerate(complete, start=1):
        try:
            parsed.append(json.loads(line))
        except (json.JSONDecodeError, UnicodeDecodeError):
            if number == len(complete) and not dropped:
                dropped = True  # torn last line that happens to end in a newline
                break
            raise RunFileError(f"{path}:{number}: damaged line in the run file; start again with --force") from None
        sound_bytes += len(line) + 1
    if not parsed or parsed[0].get("kind") != _HEADER_KIND:
        raise RunFileError(f"{path}: not a benchcheck tolerance run file (no header line)")
    if parsed[0].get("format") != RUN_FILE_FORMAT:
        raise RunFileError(f"{path}: run file format {parsed[0].get('format')} is not {RUN_FILE_FORMAT}")
    header = RunHeader.from_dict(parsed[0])
    records: dict[int, TrialRecord] = {}
    for number, item in enumerate(parsed[1:], start=2):
        try:
            record = TrialRecord.from_dict(item)
        except (KeyError, TypeError, ValueError) as error:
            raise RunFileError(f"{path}:{number}: trial line lacks {error}; start again with --force") from None
        records[record.index] = record
    return RunFileContents(header, records, sound_bytes, dropped)


def check_resumable(header: RunHeader, layout_hash: str, seed: int, sampler: str, path: str | Path) -> None:
    """Refuse to resume when the layout, seed or sampler differ from the run file's.

    Raises
    ------
    RunFileError
        Naming what differs and how to start afresh.
    """
    differences = []
    if header.layout_hash != layout_hash:
        differences.append("the layout file changed since the run began (its hash differs)")
    if header.seed != seed:
        differences.append(f"the seed is {seed}, the run used {header.seed}")
    if header.sampler != sampler:
        differences.append(f"the sampler is '{sampler}', the run used '{header.sampler}'")
    if differences:
        raise RunFileError(f"{path}: cannot resume: " + "; ".join(differences)
                           + " (run again with --force to start a new run file)")


class RunFileWriter:
    """Appends whole lines to a run file, flushing after each.

    Use ``RunFileWriter.create`` for a new file (refuses an existing one unless ``force``)
    or ``RunFileWriter.resume`` to append after the sound part of an existing one.
    """

    def __init__(self, stream: BinaryIO) -> None:
        self._stream = stream

    @classmethod
    def create(cls, path: str | Path, header: RunHeader, force: bool = False) -> "RunFileWriter":
        path = Path(path)
        if path.exists() and not force:
            raise RunFileError(f"{path} exists; use --resume to continue it or --force to overwrite it")
        try:
            stream = path.open("wb")
        except OSError as error:
            raise RunFileError(f"{path}: cannot write the run file ({error.strerror})") from None
        writer = cls(stream)
        writer._write(header.to_dict())
        return writer

    @classmethod
    def resume(cls, path: str | Path, contents: RunFileContents) -> "RunFileWriter":
        path = Path(path)
        try:
            stream = path.open("r+b")
            stream.truncate(contents.sound_bytes)  # drop a torn last line before appending
            stream.seek(contents.sound_bytes)
        except OSError as error:
            raise RunFileError(f"{path}: cannot append to the run file ({error.strerror})") from None
        return cls(stream)

    def _write(self, data: dict) -> None:
        self._stream.write((json.dumps(data, allow_nan=False, separators=(",", ":")) + "\n").encode("utf-8"))
        self._stream.flush()

    def write(self, record: TrialRecord) -> None:
        """Write one trial as one line and flush it."""
        self._write(record.to_dict())

    def close(self) -> None:
        self._stream.close()
