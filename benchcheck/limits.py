"""Resource limits of a run: caps checked before anything large is allocated.

A hostile or mistaken layout must not freeze the machine: a wave grid, a trial count or a
simulation's estimated memory above its cap is refused with the estimate and the
command-line option that raises the cap. A layout may also read files only from its own
folder, unless the user allows another folder.

The limits of a run are one ``Limits`` value. The command line sets it once for the
command it runs (``use_limits``), the way ``numpy.errstate`` scopes floating-point
handling; the code that allocates reads it with ``current_limits()`` and gets the defaults
when nothing was set. Worker processes receive the parent's limits when they start.
"""

from __future__ import annotations

import contextvars
import math
import os
import re
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from benchcheck.errors import BenchcheckError

__all__ = [
    "DEFAULT_MAX_GRID",
    "DEFAULT_MAX_TRIALS",
    "DEFAULT_MEMORY_CAP",
    "GRID_CEILING",
    "TRIALS_CEILING",
    "MAX_PIXELS_PER_SIDE",
    "FIELD_ARRAYS_AT_PEAK",
    "LimitError",
    "Limits",
    "default_memory_cap",
    "physical_memory",
    "parse_size",
    "format_size",
    "estimate_wave_memory",
    "estimate_wave_seconds",
    "estimate_study_memory",
    "check_wave_grid",
    "check_trials",
    "current_limits",
    "use_limits",
    "apply_limits",
]

#: Largest wave grid (samples per side) allowed without ``--max-grid``.
DEFAULT_MAX_GRID = 4096
#: Largest grid any option can allow; the loader refuses a ``[simulation] grid`` above it.
GRID_CEILING = 16384
#: Most trials in one study without ``--max-trials``.
DEFAULT_MAX_TRIALS = 1_000_000
#: Most trials any option can allow; the loader refuses ``[tolerancing] trials`` above it.
TRIALS_CEILING = 10_000_000
#: Most pixels per side of a modulator or camera: 2^15 is past any panel or sensor made
#: (common practice: panels and sensors are a few thousand pixels a side).
MAX_PIXELS_PER_SIDE = 2**15
#: Memory cap when physical memory cannot be read, and the most the default ever allows.
DEFAULT_MEMORY_CAP = 4 * 2**30
#: Field-sized arrays alive at the peak of one simulation: 12 to 31 measured with
#: tracemalloc on the shipped layouts (fields kept per plane, FFT work arrays, targets),
#: rounded up.
FIELD_ARRAYS_AT_PEAK = 32
#: Rough cost of one simulation in seconds per sample per log2(samples): 3.6 s for the
#: shipped 4f vortex layout on a 1024 x 1024 grid on one core of the development machine.
_SECONDS_PER_SAMPLE_LOG = 3.6 / (1024**2 * 20)
#: Rough memory kept per finished trial of a study (record, perturbation, metric values).
_BYTES_PER_TRIAL = 2048

_SIZE = re.compile(r"^\s*([0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*([A-Za-z]*)\s*$")
_SIZE_UNITS = {"": 1, "b": 1, "kb": 10**3, "mb": 10**6, "gb": 10**9, "tb": 10**12,
               "kib": 2**10, "mib": 2**20, "gib": 2**30, "tib": 2**40}


class LimitError(BenchcheckError):
    """A run that would exceed a resource cap; the message names the estimate and the option."""


def physical_memory() -> int | None:
    """Physical memory of this machine in bytes (``os.sysconf``), or None where it is unknown."""
    try:
        pages, page_size = os.sysconf("SC_PHYS_PAGES"), os.sysconf("SC_PAGE_SIZE")
    except (AttributeError, ValueError, OSError):
        return None
    if pages <= 0 or page_size <= 0:
        return None
    return int(pages) * int(page_size)


def default_memory_cap() -> int:
    """A quarter of physical memory, and at most ``DEFAULT_MEMORY_CAP`` (4 GiB)."""
    total = physical_memory()
    return DEFAULT_MEMORY_CAP if total is None else min(DEFAULT_MEMORY_CAP, total // 4)


def parse_size(text: str) -> int:
    """A memory size such as ``"8GiB"``, ``"500 MB"`` or ``"1e9"`` (bytes) as a byte count.

    Raises
    ------
    ValueError
        When the text is not a positive number with one of B, kB, MB, GB, TB, KiB, MiB, GiB, TiB.
    """
    match = _SIZE.match(text)
    unit = match.group(2).lower() if match else ""
    if not match or unit not in _SIZE_UNITS:
        raise ValueError(f"'{text}' is not a memory size (write e.g. 8GiB, 500MB)")
    value = float(match.group(1)) * _SIZE_UNITS[unit]
    if not value >= 1:
        raise ValueError(f"'{text}' is not a positive memory size")
    return int(value)


def format_size(size: float) -> str:
    """Bytes for people, in binary units: ``format_size(3 * 2**30) == '3.0 GiB'``."""
    for unit, scale in (("TiB", 2**40), ("GiB", 2**30), ("MiB", 2**20), ("KiB", 2**10)):
        if size >= scale:
            return f"{size / scale:.1f} {unit}"
    return f"{int(size)} B"


def _format_seconds(seconds: float) -> str:
    if seconds < 1:
        return "under a second"
    if seconds < 120:
        return f"about {seconds:.0f} s"
    if seconds < 7200:
        return f"about {seconds / 60:.0f} min"
    return f"about {seconds / 3600:.1f} h"


@dataclass(frozen=True)
class Limits:
    """The caps of one run, and the folders outside a layout's own that it may read.

    Attributes
    ----------
    max_grid : int
        Most samples per side of a wave grid (``--max-grid``).
    max_memory : int
        Most bytes the estimated peak of one simulation may take (``--max-memory``).
    max_trials : int
        Most trials in one study (``--max-trials``).
    allowed_folders : tuple of Path
        Resolved folders a layout may name files in besides its own (``--allow-path``).
    """

    max_grid: int = DEFAULT_MAX_GRID
    max_memory: int = field(default_factory=default_memory_cap)
    max_trials: int = DEFAULT_MAX_TRIALS
    allowed_folders: tuple[Path, ...] = ()

    def allowing(self, folders: Sequence[str | Path]) -> "Limits":
        """These limits with more readable folders (resolved now, so later ``cd`` changes nothing)."""
        return replace(self, allowed_folders=self.allowed_folders + tuple(Path(f).resolve() for f in folders))

    def may_read(self, path: Path, layout_folder: Path) -> bool:
        """True when the resolved ``path`` lies inside the layout's folder or an allowed one."""
        return any(folder == path.parent or folder in path.parents
                   for folder in (layout_folder, *self.allowed_folders))


def estimate_wave_memory(shape: tuple[int, int], dtype, expansion: int = 1) -> int:
    """Estimated peak bytes of one simulation on a grid of ``shape`` samples.

    Parameters
    ----------
    shape : tuple of int
        (ny, nx) samples of the first field.
    dtype : numpy dtype
        Complex field type (complex64: 8 bytes a sample, complex128: 16).
    expansion : int
        How many times wider per side later grids are (3 when one replica period of the
        pixel spectrum is kept on each side).
    """
    samples = int(shape[0]) * int(shape[1]) * expansion**2
    return FIELD_ARRAYS_AT_PEAK * samples * np.dtype(dtype).itemsize


def estimate_wave_seconds(shape: tuple[int, int], expansion: int = 1) -> float:
    """Rough seconds of one simulation on one core: proportional to N log2 N (FFT cost)."""
    samples = max(int(shape[0]) * int(shape[1]) * expansion**2, 2)
    return _SECONDS_PER_SAMPLE_LOG * samples * math.log2(samples)


def estimate_study_memory(trials: int) -> int:
    """Rough bytes a study keeps for its finished trials."""
    return int(trials) * _BYTES_PER_TRIAL


def check_wave_grid(size: int, dtype, plane: str, expansion: int = 1, limits: "Limits | None" = None) -> int:
    """Refuse a wave grid above the caps, before it is allocated; return ``size`` when it fits.

    Parameters
    ----------
    size : int
        Samples per side of the (square) first field.
    dtype : numpy dtype
        Complex field type.
    plane : str
        The plane the grid starts at (for the message).
    expansion : int
        See ``estimate_wave_memory``.
    limits : Limits, optional
        The caps; ``current_limits()`` when omitted.

    Raises
    ------
    LimitError
        Naming the grid, the estimated memory and time, and the option that raises the cap.
    """
    limits = limits or current_limits()
    shape = (int(size), int(size))
    memory = estimate_wave_memory(shape, dtype, expansion)
    estimate = (f"estimated peak memory {format_size(memory)}, "
                f"{_format_seconds(estimate_wave_seconds(shape, expansion))} per simulation")
    if size > limits.max_grid:
        raise LimitError(f"the wave grid at '{plane}' would be {size} x {size} samples, above the cap of "
                         f"{limits.max_grid} ({estimate}); raise it with --max-grid {size}, or set a smaller "
                         "[simulation] grid")
    if memory > limits.max_memory:
        raise LimitError(f"the wave simulation starting at '{plane}' ({size} x {size} samples) needs an "
                         f"{estimate}, above the cap of {format_size(limits.max_memory)}; raise it with "
                         f"--max-memory {_size_option(memory)}, or set a smaller [simulation] grid "
                         "or precision = \"single\"")
    return size


def check_trials(trials: int, limits: "Limits | None" = None, seconds_per_trial: float | None = None) -> int:
    """Refuse a study of more trials than the cap, before any is drawn; return ``trials``.

    Raises
    ------
    LimitError
        Naming the count, the estimated memory (and time, when ``seconds_per_trial`` is
        given), and ``--max-trials``.
    """
    limits = limits or current_limits()
    if trials <= limits.max_trials:
        return trials
    estimate = f"estimated memory {format_size(estimate_study_memory(trials))} for the records"
    if seconds_per_trial is not None:
        estimate += f", {_format_seconds(trials * seconds_per_trial)} on one core"
    raise LimitError(f"{trials} trials is above the cap of {limits.max_trials} ({estimate}); raise it with "
                     f"--max-trials {trials}, or run fewer trials (the yield's 95 % interval narrows as "
                     "1/sqrt(trials))")


def _size_option(memory: int) -> str:
    return f"{math.ceil(memory / 2**30)}GiB"


_CURRENT: contextvars.ContextVar[Limits | None] = contextvars.ContextVar("benchcheck_limits", default=None)


def current_limits() -> Limits:
    """The limits set by ``use_limits`` around this call, or the defaults."""
    return _CURRENT.get() or Limits()


@contextmanager
def use_limits(limits: Limits) -> Iterator[Limits]:
    """Apply ``limits`` to everything run inside the ``with`` block (this thread or task)."""
    token = _CURRENT.set(limits)
    try:
        yield limits
    finally:
        _CURRENT.reset(token)


def apply_limits(limits: Limits | None) -> None:
    """Set ``limits`` for the rest of this process's main context (a worker process at start)."""
    if limits is not None:
        _CURRENT.set(limits)
