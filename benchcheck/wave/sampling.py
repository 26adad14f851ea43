"""Sampling checks for wave stages and output-grid sizes.

Each check returns a list of :class:`SamplingNote`. A note of severity ``"warning"`` is
recorded with the result; ``"refuse"`` means the result would be meaningless and
:func:`benchcheck.wave.stages.propagate` raises :class:`benchcheck.errors.SamplingError`.

The thresholds below are our own rules (common practice for FFT-based propagation, e.g.
Voelz and Roggemann, Appl. Opt. 48, 6132 (2009), on chirp and transfer-function
sampling); each says in its docstring why it is where it is.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
import scipy.fft

from benchcheck.wave.field import BoxedField, Field, HeldColumnsField
from benchcheck.wave.grid import Grid

__all__ = [
    "SamplingNote",
    "edge_energy",
    "check_fourier_chirp",
    "check_transfer_function",
    "check_window",
    "fast_size",
    "EDGE_WARNING",
    "EDGE_REFUSE",
]

#: share of power in the outer 5 % band above which a window note is written
EDGE_WARNING = 1e-4
#: share above which the field visibly continues past the window (a uniformly filled
#: window puts 19 % there): the field outside is unknown, the result meaningless
EDGE_REFUSE = 0.1


@dataclass(frozen=True)
class SamplingNote:
    """One sampling finding at one plane.

    Attributes
    ----------
    plane : str
        The plane the finding is about.
    reason : str
        What is wrong, with numbers.
    fix : str
        What would cure it (more samples, a finer pitch, a larger window...).
    severity : {"warning", "refuse"}
        ``"refuse"``: the result would be meaningless.
    """

    plane: str
    reason: str
    fix: str
    severity: Literal["warning", "refuse"] = "warning"

    def text(self) -> str:
        """One line for notes and error messages."""
        return f"plane '{self.plane}': {self.reason} (fix: {self.fix})"


def fast_size(n: int) -> int:
    """The next size >= n that scipy.fft transforms fast (``scipy.fft.next_fast_len``)."""
    return int(scipy.fft.next_fast_len(int(n)))


def _band_power(block: np.ndarray) -> float:
    """Σ|E|² of a block, contiguous or not, without copying it (single-precision sums of each
    row, added in double precision: enough for a share compared against a threshold)."""
    if block.strides[-1] != block.itemsize:
        block = np.ascontiguousarray(block)
    real_pairs = block.view(block.real.dtype)  # [..., 2 nx]: real and imaginary parts side by side
    return float(np.einsum("ij,ij->i", real_pairs, real_pairs).sum(dtype=np.float64))


def edge_energy(field: Field, border_fraction: float = 0.05) -> float:
    """Share of the field's power in the outer border band of its window.

    Parameters
    ----------
    field : Field
        The field.
    border_fraction : float
        Width of the band on each side as a fraction of the window (at least one sample).

    Returns
    -------
    float
        Power in the band over total power (0 for a dark field).

    Notes
    -----
    The total is the field's own power (kept on the field); only the four edge bands are
    read besides, in place, and the band's power is summed directly rather than as total
    minus inner, so a tiny share keeps its relative precision in single precision too.
    """
    ny, nx = field.grid.shape
    by = max(1, int(np.ceil(border_fraction * ny)))
    bx = max(1, int(np.ceil(border_fraction * nx)))
    total = field.power / field.grid.sample_area
    if not total > 0.0:
        return 0.0
    if 2 * by >= ny or 2 * bx >= nx:
        return 1.0
    if isinstance(field, HeldColumnsField):  # from the held columns alone
        return min(1.0, max(0.0, field.border_power(by, bx) / total))
    if isinstance(field, BoxedField):  # zero outside its box: the band's part of the box
        (rows, columns), values = field.support, field.box

        def inside(index: int, start: int, length: int) -> int:  # a window index on the box
            return min(max(index - start, 0), length)

        top, bottom = inside(by, rows.start, values.shape[0]), inside(ny - by, rows.start, values.shape[0])
        left, right = inside(bx, columns.start, values.shape[1]), inside(nx - bx, columns.start, values.shape[1])
        if (top, bottom, left, right) == (0, values.shape[0], 0, values.shape[1]):
            return 0.0  # the box lies inside the band's inner edge (an iris well inside the window)
    else:
        values = field.values
        top, bottom, left, right = by, ny - by, bx, nx - bx
    band = (_band_power(values[:top]) + _band_power(values[bottom:])
            + _band_power(values[top:bottom, :left]) + _band_power(values[top:bottom, right:]))
    return min(1.0, max(0.0, band / total))


def _axis_names() -> tuple[str, str]:
    return ("x", "y")


def _ratio_severity(ratio: float) -> Literal["warning", "refuse"]:
    # up to twice the limit only the outer half of the window is aliased: a beam that
    # fills the inner half is still right; beyond that the result is meaningless
    return "warning" if ratio <= 2.0 else "refuse"


def check_fourier_chirp(
    grid: Grid, matrix_x: np.ndarray, matrix_y: np.ndarray, wavelength: float, plane: str
) -> list[SamplingNote]:
    """Check the input chirp of the Fourier branch against the Nyquist limit.

    The Collins integral's input chirp exp(iπ A x²/(λB)) has the local frequency
    A x/(λB) (Collins, JOSA 60, 1168 (1970)); at the window edge x = N p / 2 it must stay
    below the Nyquist frequency 1/(2p), i.e. |A| N p² / (λ |B|) <= 1.

    Parameters
    ----------
    grid : Grid
        Input grid (pitch in m).
    matrix_x, matrix_y : array_like, shape (3, 3)
        ABCDEF ray matrices per axis (B in m, C in 1/m).
    wavelength : float
        Vacuum wavelength (m).
    plane : str
        Name of the plane, for the note.
    """
    notes = []
    for name, matrix, n, pitch in zip(
        _axis_names(), (matrix_x, matrix_y), (grid.nx, grid.ny), grid.pitch
    ):
        a, b = float(matrix[0][0]), float(matrix[0][1])
        if a == 0.0:
            continue
        if b == 0.0:
            ratio = np.inf
        else:
            local = abs(a) * (n * pitch / 2.0) / (wavelength * abs(b))
            ratio = local / (1.0 / (2.0 * pitch))
        if ratio > 1.0:
            notes.append(
                SamplingNote(
                    plane,
                    f"input chirp along {name} reaches {ratio:.3g} x the Nyquist frequency "
                    f"at the window edge (|A| N p²/(λ|B|) > 1)",
                    "use the near-imaging (split) branch, a finer pitch, or a smaller window",
                    _ratio_severity(ratio),
                )
            )
    return notes


def check_transfer_function(grid: Grid, distance: float, wavelength: float, plane: str) -> list[SamplingNote]:
    """Check the sampled paraxial angular-spectrum transfer function for aliasing.

    The transfer function exp(−iπ λ z f²) (Goodman, Introduction to Fourier Optics,
    ch. 4, paraxial form) changes its phase by 2π λ |z| f Δf between frequency samples
    Δf = 1/(N p); at the band edge f = 1/(2p) this stays below π while |z| <= N p² / λ.

    Parameters
    ----------
    grid : Grid
        Grid the propagation runs on (pitch in m).
    distance : float
        Propagation distance (m), either sign.
    wavelength : float
        Vacuum wavelength (m).
    plane : str
        Name of the plane, for the note.
    """
    notes = []
    for name, n, pitch in zip(_axis_names(), (grid.nx, grid.ny), grid.pitch):
        critical = n * pitch**2 / wavelength
        ratio = abs(distance) / critical
        if ratio > 1.0:
            notes.append(
                SamplingNote(
                    plane,
                    f"transfer function along {name} aliases: |z| = {abs(distance):.4g} m "
                    f"is {ratio:.3g} x the limit N p²/λ = {critical:.4g} m",
                    "use the Fourier branch, more samples, or a larger pitch",
                    _ratio_severity(ratio),
                )
            )
    return notes


def check_window(field: Field, plane: str, beam_radius: float | None = None) -> list[SamplingNote]:
    """Check that the window holds the field: energy near the edge, window size, pitch.

    Parameters
    ----------
    field : Field
        The field to check.
    plane : str
        Name of the plane, for the note.
    beam_radius : float, optional
        1/e² radius (m) the paraxial trace expects here. With it, the half-width of the
        window must be at least 1.5 radii (a centred round clip at 1.5w passes 0.9889 of the
        power, Siegman, Lasers (1986); refuse below 1 radius, 0.8647) and the pitch at most a
        quarter radius (refuse above one radius: fewer than two samples across the beam).
    """
    notes = []
    share = edge_energy(field)
    if share > EDGE_WARNING:
        notes.append(
            SamplingNote(
                plane,
                f"{share:.3g} of the power lies in the outer 5 % band of the window",
                "enlarge the window (more samples or a larger pitch)",
                "refuse" if share > EDGE_REFUSE else "warning",
            )
        )
    if beam_radius is not None and beam_radius > 0:
        for name, width, pitch in zip(_axis_names(), field.grid.extent, field.grid.pitch):
            half = width / 2.0
            if half < 1.5 * beam_radius:
                notes.append(
                    SamplingNote(
                        plane,
                        f"window half-width along {name} {half:.4g} m is under 1.5 beam radii "
                        f"({beam_radius:.4g} m)",
                        "enlarge the window",
                        "refuse" if half < beam_radius else "warning",
                    )
                )
            if pitch > beam_radius / 4.0:
                notes.append(
                    SamplingNote(
                        plane,
                        f"pitch along {name} {pitch:.4g} m is coarser than a quarter beam radius",
                        "use a finer pitch",
                        "refuse" if pitch > beam_radius else "warning",
                    )
                )
    return notes
