"""Per-axis pieces of a wave stage: the plan of each axis (branch, grids) and its kernels.

A stage is separable: along each axis the Collins integral is crossed by the Fourier branch
(chirp, FFT or chirp-z, chirp) or the split branch (short angular-spectrum step, scaled
image); see ``benchcheck.wave.stages`` for the branch rule and the sources. Chirps that no
trial changes are cached per (axis plan, wavelength).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import scipy.fft

from benchcheck.errors import SamplingError
from benchcheck.thread_pools import threads_for
from benchcheck.wave.chirp_z import chirp_z
from benchcheck.wave.direct_dft import DIRECT_MAX_INPUT, direct_dft
from benchcheck.wave.grid import Grid
from benchcheck.wave.pixel_cells import (
    aperture_weight,
    central_period_mask,
)

__all__ = [
    "AxisPlan",
    "EXACT_LENGTH",
    "SAME_GRID",
    "choose_branch",
    "plan_axes",
    "along_axis",
    "scaled_dft",
    "fourier_parts",
    "cell_weights",
    "off_path_notes",
    "fourier_axis",
    "split_axis",
    "interpolate_spectrum",
    "stage_method",
    "output_grid_of",
    "matrix_elements",
    "is_identity",
    "natural_axis",
]

EXACT_LENGTH = 1e-12  # |matrix − identity| below this (SI units) counts as zero length
SAME_GRID = 1e-9  # relative tolerance for "this output grid is the natural one"


@dataclass(frozen=True)
class AxisPlan:
    name: str
    axis: int  # array axis: 1 for x, 0 for y
    a: float
    b: float
    c: float
    d: float
    e: float
    f: float
    branch: str
    n_in: int
    pitch_in: float
    center_in: float
    n_out: int
    pitch_out: float
    center_out: float
    natural: bool


def matrix_elements(matrix: np.ndarray) -> tuple[float, ...]:
    m = np.asarray(matrix, dtype=np.float64)
    # scalar checks (np.allclose costs ~70 µs, and this runs per axis per stage per trial)
    if m.shape != (3, 3) or not (abs(m[2, 0]) <= 1e-8 and abs(m[2, 1]) <= 1e-8 and abs(m[2, 2] - 1.0) <= 1e-8 + 1e-5):
        raise ValueError(f"a stage matrix must be 3x3 [[A,B,E],[C,D,F],[0,0,1]], got {m.tolist()}")
    a, b, e, c, d, f = m[0, 0], m[0, 1], m[0, 2], m[1, 0], m[1, 1], m[1, 2]
    if abs(a * d - b * c - 1.0) > 1e-6:
        raise ValueError(f"stage matrix must have unit determinant (reduced slopes), got {a * d - b * c:.9g}")
    return float(a), float(b), float(c), float(d), float(e), float(f)


def is_identity(a: float, b: float, c: float, d: float, e: float, f: float) -> bool:
    return max(abs(a - 1), abs(b), abs(c), abs(d - 1), abs(e), abs(f)) < EXACT_LENGTH


def choose_branch(a: float, b: float, n: int, pitch: float, wavelength: float) -> str:
    """Fourier branch when |B/A| >= N p²/λ, else split (see the module docstring).

    Parameters
    ----------
    a, b : float
        Matrix elements A and B (m) of one axis.
    n : int
        Samples along the axis.
    pitch : float
        Sample pitch (m).
    wavelength : float
        Vacuum wavelength (m).
    """
    if b == 0.0:
        return "split"
    if a == 0.0:
        return "fourier"
    return "fourier" if abs(b / a) >= n * pitch**2 / wavelength else "split"


def natural_axis(branch: str, a: float, b: float, e: float, n: int, pitch: float, center: float, wavelength: float):
    if branch == "identity":
        return n, pitch, center
    if branch == "fourier":
        return n, wavelength * abs(b) / (n * pitch), a * center + e
    return n, abs(a) * pitch, a * center + e


def plan_axes(grid: Grid, matrices, wavelength: float, output_grid: Grid | None, allow_identity: bool = True):
    axes = []
    for name, axis, matrix, n, pitch, center in zip(
        "xy", (1, 0), matrices, (grid.nx, grid.ny), grid.pitch, grid.center
    ):
        a, b, c, d, e, f = matrix_elements(matrix)
        branch = "identity" if allow_identity and is_identity(a, b, c, d, e, f) else choose_branch(a, b, n, pitch, wavelength)
        n_out, pitch_out, center_out = natural_axis(branch, a, b, e, n, pitch, center, wavelength)
        natural = True
        if output_grid is not None:
            index = 0 if name == "x" else 1
            wanted = ((output_grid.nx, output_grid.ny)[index], output_grid.pitch[index], output_grid.center[index])
            same_pitch = abs(wanted[1] - pitch_out) <= SAME_GRID * pitch_out
            same_center = abs(wanted[2] - center_out) <= SAME_GRID * pitch_out
            natural = wanted[0] == n_out and same_pitch and (same_center or branch == "fourier")
            if branch == "identity" and not natural:
                branch = "split"
            n_out, pitch_out, center_out = wanted[0], (pitch_out if same_pitch else wanted[1]), wanted[2]
        axes.append(AxisPlan(name, axis, a, b, c, d, e, f, branch, n, pitch, center, n_out, pitch_out, center_out, natural))
    return axes


def along_axis(vector: np.ndarray, axis: int) -> np.ndarray:
    return vector[np.newaxis, :] if axis == 1 else vector[:, np.newaxis]


def scaled_dft(work: np.ndarray, axis: int, alpha: float, m_out: int, fft_path: bool, workers: int,
               first_index: int | None = None) -> np.ndarray:
    """Σ_n work[n] exp(−2πi α n m), m = 0..m_out−1, along one axis.

    ``first_index``: ``work`` holds only the samples from this index on (the rest are zero), so
    the sum is exp(−2πi α first m) Σ_k work[k] exp(−2πi α k m): a transform as long as the
    samples held, not the window. Such a part of at most ``DIRECT_MAX_INPUT`` samples, and
    any input that short off the FFT path, is one matrix product (direct_dft.py); a longer
    part needs the chirp-z path (the FFT needs the whole window).
    """
    n = work.shape[axis]
    partial = first_index is not None
    if n <= DIRECT_MAX_INPUT and (partial or not fft_path):  # a short input: one matrix product
        return direct_dft(work, alpha, m_out, axis, first_index or 0)
    if partial:
        if fft_path:
            raise ValueError("a part of the window longer than DIRECT_MAX_INPUT needs the chirp-z path")
        out = chirp_z(work, alpha, m_out, axis, workers)
        out *= along_axis(np.exp(-2j * np.pi * ((alpha * first_index * np.arange(m_out)) % 1.0)).astype(out.dtype),
                          axis)
        return out
    if fft_path:
        workers = threads_for(work.nbytes, workers)
        if alpha > 0:
            out = scipy.fft.fft(work, axis=axis, overwrite_x=True, workers=workers)
        else:
            out = scipy.fft.ifft(work, axis=axis, norm="forward", overwrite_x=True, workers=workers)
        reps = m_out // n
        return np.concatenate([out] * reps, axis=axis) if reps > 1 else out
    return chirp_z(work, alpha, m_out, axis, workers)


@functools.lru_cache(maxsize=64)
def fourier_parts(ax: AxisPlan, wavelength: float):
    """Input factor, output factor, α and whether the FFT serves, for the Fourier branch.

    Kept per (axis plan, wavelength): the arrays are read-only and shared between calls.
    """
    lam_b = wavelength * ax.b
    fft_path = ax.natural or (
        ax.n_out % ax.n_in == 0 and abs(ax.pitch_out - wavelength * abs(ax.b) / (ax.n_in * ax.pitch_in)) <= SAME_GRID * ax.pitch_out
    )
    alpha = np.sign(ax.b) / ax.n_in if fft_path else ax.pitch_in * ax.pitch_out / lam_b
    middle_in, middle_out = ax.n_in // 2, ax.n_out // 2
    x1 = ax.center_in + _steps_from(ax.n_in, middle_in) * ax.pitch_in
    center_aligned = ax.center_out - ax.e
    x2 = center_aligned + _steps_from(ax.n_out, middle_out) * ax.pitch_out  # aligned output coordinates
    phase_in = np.pi * (ax.a * x1**2 - 2.0 * x1 * center_aligned) / lam_b
    phase_in += _index_phase(alpha * middle_out, ax.n_in, 0)
    phase_out = np.pi * (ax.d * x2**2 - 2.0 * ax.center_in * (x2 - center_aligned)) / lam_b
    phase_out += _index_phase(alpha * middle_in, ax.n_out, middle_out)
    phase_out += (2.0 * np.pi / wavelength) * ax.f * (x2 + ax.e / 2.0)
    prefactor = ax.pitch_in / np.sqrt(1j * lam_b)
    factor_in, factor_out, frequency = np.exp(1j * phase_in), prefactor * np.exp(1j * phase_out), x2 / lam_b
    for array in (factor_in, factor_out, frequency):
        array.flags.writeable = False
    return factor_in, factor_out, alpha, fft_path, frequency


@functools.lru_cache(maxsize=16)
def _steps_from(n: int, middle: int) -> np.ndarray:
    """k − middle for k < n (read-only, shared)."""
    steps = np.arange(n) - middle
    steps.flags.writeable = False
    return steps


@functools.lru_cache(maxsize=16)
def _index_phase(rate: float, n: int, middle: int) -> np.ndarray:
    """2π ((rate (k − middle)) mod 1) for k < n: on the FFT path the shift of the DFT's index
    origin, the same for every trial (read-only, shared)."""
    phase = 2.0 * np.pi * ((rate * _steps_from(n, middle)) % 1.0)
    phase.flags.writeable = False
    return phase


def cell_weights(ax: AxisPlan, wavelength: float, pitch: float, fill: float, dtype_name: str,
                 keep: slice = slice(None)):
    """Per-axis (aperture weight × output factor, central-period mask × output factor or None
    when the mask is 1 everywhere) of the pixel-cell Fourier branch on the output samples
    ``keep``, in the field's precision (made per stage: a trial's axis plan is its own)."""
    _, factor_out, _, _, frequency = fourier_parts(ax, wavelength)
    frequency, factor_out = frequency[keep], factor_out[keep]
    dtype = np.dtype(dtype_name)
    aperture = (aperture_weight(frequency, pitch, fill) * factor_out).astype(dtype)
    mask = central_period_mask(frequency, pitch)
    background = None if mask.all() else (mask * factor_out).astype(dtype)
    return aperture, background


def off_path_notes(ax: AxisPlan, wavelength: float) -> list[str]:
    """What a Fourier axis off the FFT path says of its output grid."""
    span = wavelength * abs(ax.b) / ax.pitch_in
    notes = [f"{ax.name}: output grid reached with a chirp-z transform"]
    if ax.n_out * ax.pitch_out > span * (1 + SAME_GRID):
        notes.append(f"{ax.name}: output window {ax.n_out * ax.pitch_out:.4g} m is wider than the "
                     f"alias-free span λ|B|/p = {span:.4g} m: replicas of the input sampling appear")
    return notes


def fourier_axis(work, ax: AxisPlan, wavelength: float, workers: int, notes: list, owned: bool = True,
                 input_applied: bool = False, first_index: int | None = None) -> np.ndarray:
    """One axis of the Fourier branch; ``owned``: ``work`` may be overwritten (else it is left
    as it is); ``input_applied``: the caller has applied the input factor already;
    ``first_index``: ``work`` holds the samples from there on only (see :func:`scaled_dft`)."""
    factor_in, factor_out, alpha, fft_path, _ = fourier_parts(ax, wavelength)
    if not fft_path:
        notes.extend(off_path_notes(ax, wavelength))
    factor = along_axis(factor_in.astype(work.dtype), ax.axis)
    if input_applied:
        work = work if owned else work.copy()
    elif owned:
        work *= factor
    else:
        work = work * factor  # the copy the transform may overwrite, made by the first product
    out = scaled_dft(work, ax.axis, alpha, ax.n_out, fft_path, workers, first_index)
    out *= along_axis(factor_out.astype(out.dtype), ax.axis)
    return out


def split_axis(work, ax: AxisPlan, wavelength: float, workers: int, notes: list, owned: bool = True) -> np.ndarray:
    """One axis of the split branch; ``owned``: ``work`` may be overwritten (else it is left as it is)."""
    n, p = ax.n_in, ax.pitch_in
    distance = ax.b / ax.a
    if ax.natural and distance == 0.0:
        out = work if owned else work.copy()
    else:
        workers = threads_for(work.nbytes, workers)
        spectrum = scipy.fft.fft(work, axis=ax.axis, overwrite_x=owned, workers=workers)
        if distance != 0.0:
            frequency = scipy.fft.fftfreq(n, p)
            spectrum *= along_axis(np.exp(-1j * np.pi * wavelength * distance * frequency**2).astype(work.dtype), ax.axis)
        if ax.natural:
            out = scipy.fft.ifft(spectrum, axis=ax.axis, overwrite_x=True, workers=workers)
        else:
            out = interpolate_spectrum(spectrum, ax, notes, workers)
    if ax.natural and ax.a < 0:
        # image coordinates reversed; for even N the window wraps by one sample (periodic)
        out = np.flip(out, axis=ax.axis)
        out = np.roll(out, 1, axis=ax.axis) if n % 2 == 0 else np.ascontiguousarray(out)
    x2 = (ax.center_out - ax.e) + (np.arange(ax.n_out) - ax.n_out // 2) * ax.pitch_out
    sign = -1j * (np.sign(ax.b) if ax.b != 0.0 else 1.0) if ax.a < 0 else 1.0
    phase = np.pi * ax.c * x2**2 / (wavelength * ax.a) + (2.0 * np.pi / wavelength) * ax.f * (x2 + ax.e / 2.0)
    out *= along_axis((sign / np.sqrt(abs(ax.a)) * np.exp(1j * phase)).astype(out.dtype), ax.axis)
    return out


def interpolate_spectrum(spectrum: np.ndarray, ax: AxisPlan, notes: list, workers: int = -1) -> np.ndarray:
    """Band-limited interpolation of the (propagated) input at x = x2/A by a chirp-z transform."""
    n, p, middle = ax.n_in, ax.pitch_in, ax.n_in // 2
    start = ax.center_in - middle * p
    low, high = sorted((ax.a * (start - p / 2), ax.a * (start + (n - 0.5) * p)))
    center_aligned = ax.center_out - ax.e
    out_low = center_aligned - (ax.n_out // 2) * ax.pitch_out
    out_high = out_low + (ax.n_out - 1) * ax.pitch_out
    if out_high < low or out_low > high:
        raise SamplingError(
            f"{ax.name}: the output window [{out_low:.4g}, {out_high:.4g}] m lies outside the image "
            f"[{low:.4g}, {high:.4g}] m of the input window"
        )
    if out_low < low or out_high > high:
        notes.append(f"{ax.name}: output window extends past the image of the input window: periodic copies there")
    notes.append(f"{ax.name}: output grid reached by band-limited interpolation (chirp-z transform)")
    t0 = ((center_aligned - (ax.n_out // 2) * ax.pitch_out) / ax.a - start) / (n * p)
    beta = ax.pitch_out / (ax.a * n * p)
    shifted = scipy.fft.fftshift(spectrum, axes=ax.axis)
    shifted *= along_axis(np.exp(2j * np.pi * ((np.arange(n) * t0) % 1.0)).astype(spectrum.dtype), ax.axis)
    out = chirp_z(shifted, -beta, ax.n_out, ax.axis, workers)
    t = t0 + np.arange(ax.n_out) * beta
    out *= along_axis((np.exp(-2j * np.pi * ((middle * t) % 1.0)) / n).astype(out.dtype), ax.axis)
    return out


def stage_method(axes) -> str:
    if axes[0].branch == axes[1].branch:
        return axes[0].branch
    return f"x: {axes[0].branch}, y: {axes[1].branch}"


def output_grid_of(axes) -> Grid:
    x, y = axes
    return Grid((y.n_out, x.n_out), (x.pitch_out, y.pitch_out), (x.center_out, y.center_out))


