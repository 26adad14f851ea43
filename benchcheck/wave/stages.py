"""Wave stages: one 3x3 ABCDEF ray matrix per axis, crossed by the Collins integral.

Per axis (Collins, JOSA 60, 1168 (1970); Siegman, Lasers (1986), ch. 20), with fields
exp(+ikz) and the constant phase exp(ikL) dropped:

    u2(x2) = (iλB)^(−1/2) ∫ u1(x1) exp(iπ (A x1² − 2 x1 x2 + D x2²)/(λB)) dx1.

Misalignment: the 3x3 matrix factors as [[1,0,E],[0,1,F],[0,0,1]] · [[A,B,0],[C,D,0],[0,0,1]],
so the aligned integral is followed by a shift E and a tilt F. In the symmetric (Weyl) form
u(x) → u(x − E) exp(ikF(x − E/2)) the stage of the inverse matrix undoes the stage exactly,
with no stray constant phase. Expanding it gives the extra linear terms of Siegman's
misaligned Collins integral, exp(ikF x2) and the shift of x2 by E.

Branch rule (per axis, N samples of pitch p, wavelength λ):

* ``"identity"``: the matrix is the identity and the output grid is the input grid;
* ``"fourier"`` when |B/A| >= N p²/λ (A = 0 included): the input chirp A x²/(λB) is then
  sampled below Nyquist over the whole window; chirp, FFT, chirp; natural pitch λ|B|/(N p);
* ``"split"`` otherwise: [[A,B],[C,D]] = [[A,0],[C,1/A]] · [[1,B/A],[0,1]] (det = 1): a short
  propagation over z = B/A with the paraxial angular-spectrum transfer function
  exp(−iπλz f²) (Goodman, Introduction to Fourier Optics, ch. 4; equation number from memory: 4-21), which is sampled
  without aliasing exactly when |z| <= N p²/λ, the complement of the Fourier condition; then a
  scaled image: pitch |A| p, reversed when A < 0, amplitude |A|^(−1/2), chirp
  exp(iπ (C/A) x²/λ). The paraxial (not the exact) transfer function is used because the
  stage is a paraxial ray matrix: the exact one would add non-paraxial terms that the
  Fourier branch lacks, so the two branches would disagree where they meet.

An ``output_grid`` other than the natural one is reached with a chirp-z transform
(:mod:`benchcheck.wave.chirp_z`, checked against scipy.signal.CZT) on the Fourier branch and
with band-limited (trigonometric) interpolation, also evaluated by a chirp-z transform, on the
split branch. An ``output_grid`` that differs from the natural one by less than a relative
1e-9 in pitch is reached by the FFT and returned exactly as asked.

Speed: the per-axis chirps of a stage depend only on the stage's matrix, grids and
wavelength, so they are kept (``functools.lru_cache``) for the next field through the same
stage (nominal runs, targets, threshold searches that move only downstream elements).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import scipy.fft

from benchcheck.errors import SamplingError
from benchcheck.wave.chirp_z import chirp_z
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.pixel_cells import (
    PixelCells,
    aperture_weight,
    central_period_mask,
    upsample_cells,
    upsample_grid,
    upsampling_factor,
)
from benchcheck.wave.sampling import SamplingNote, check_window

__all__ = ["StageResult", "propagate", "natural_output_grid", "choose_branch"]

_EXACT = 1e-12  # |matrix − identity| below this (SI units) counts as zero length
_SAME = 1e-9  # relative tolerance for "this output grid is the natural one"


@dataclass(frozen=True)
class StageResult:
    """What one stage produced.

    Attributes
    ----------
    field : Field
        The field at the output plane.
    method : str
        Branch used ("identity", "fourier", "split"), or "x: ..., y: ..." when the axes differ.
    notes : tuple of str
        Sampling warnings and how the output grid was reached.
    """

    field: Field
    method: str
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class _Axis:
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


def _elements(matrix: np.ndarray) -> tuple[float, ...]:
    m = np.asarray(matrix, dtype=np.float64)
    if m.shape != (3, 3) or not np.allclose(m[2], (0.0, 0.0, 1.0)):
        raise ValueError(f"a stage matrix must be 3x3 [[A,B,E],[C,D,F],[0,0,1]], got {m.tolist()}")
    a, b, e, c, d, f = m[0, 0], m[0, 1], m[0, 2], m[1, 0], m[1, 1], m[1, 2]
    if abs(a * d - b * c - 1.0) > 1e-6:
        raise ValueError(f"stage matrix must have unit determinant (reduced slopes), got {a * d - b * c:.9g}")
    return float(a), float(b), float(c), float(d), float(e), float(f)


def _is_identity(a: float, b: float, c: float, d: float, e: float, f: float) -> bool:
    return max(abs(a - 1), abs(b), abs(c), abs(d - 1), abs(e), abs(f)) < _EXACT


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


def _natural_axis(branch: str, a: float, b: float, e: float, n: int, pitch: float, center: float, wavelength: float):
    if branch == "identity":
        return n, pitch, center
    if branch == "fourier":
        return n, wavelength * abs(b) / (n * pitch), a * center + e
    return n, abs(a) * pitch, a * center + e


def _plan(grid: Grid, matrices, wavelength: float, output_grid: Grid | None, allow_identity: bool = True):
    axes = []
    for name, axis, matrix, n, pitch, center in zip(
        "xy", (1, 0), matrices, (grid.nx, grid.ny), grid.pitch, grid.center
    ):
        a, b, c, d, e, f = _elements(matrix)
        branch = "identity" if allow_identity and _is_identity(a, b, c, d, e, f) else choose_branch(a, b, n, pitch, wavelength)
        n_out, pitch_out, center_out = _natural_axis(branch, a, b, e, n, pitch, center, wavelength)
        natural = True
        if output_grid is not None:
            index = 0 if name == "x" else 1
            wanted = ((output_grid.nx, output_grid.ny)[index], output_grid.pitch[index], output_grid.center[index])
            same_pitch = abs(wanted[1] - pitch_out) <= _SAME * pitch_out
            same_center = abs(wanted[2] - center_out) <= _SAME * pitch_out
            natural = wanted[0] == n_out and same_pitch and (same_center or branch == "fourier")
            if branch == "identity" and not natural:
                branch = "split"
            n_out, pitch_out, center_out = wanted[0], (pitch_out if same_pitch else wanted[1]), wanted[2]
        axes.append(_Axis(name, axis, a, b, c, d, e, f, branch, n, pitch, center, n_out, pitch_out, center_out, natural))
    return axes


def _along(vector: np.ndarray, axis: int) -> np.ndarray:
    return vector[np.newaxis, :] if axis == 1 else vector[:, np.newaxis]


def _dft(work: np.ndarray, axis: int, alpha: float, m_out: int, fft_path: bool, workers: int) -> np.ndarray:
    """Σ_n work[n] exp(−2πi α n m), m = 0..m_out−1, along one axis."""
    n = work.shape[axis]
    if fft_path:
        if alpha > 0:
            out = scipy.fft.fft(work, axis=axis, overwrite_x=True, workers=workers)
        else:
            out = scipy.fft.ifft(work, axis=axis, norm="forward", overwrite_x=True, workers=workers)
        reps = m_out // n
        return np.concatenate([out] * reps, axis=axis) if reps > 1 else out
    return chirp_z(work, alpha, m_out, axis, workers)


@functools.lru_cache(maxsize=64)
def _fourier_parts(ax: _Axis, wavelength: float):
    """Input factor, output factor, α and whether the FFT serves, for the Fourier branch.

    Kept per (axis plan, wavelength): the arrays are read-only and shared between calls.
    """
    lam_b = wavelength * ax.b
    fft_path = ax.natural or (
        ax.n_out % ax.n_in == 0 and abs(ax.pitch_out - wavelength * abs(ax.b) / (ax.n_in * ax.pitch_in)) <= _SAME * ax.pitch_out
    )
    alpha = np.sign(ax.b) / ax.n_in if fft_path else ax.pitch_in * ax.pitch_out / lam_b
    index_in, index_out = np.arange(ax.n_in), np.arange(ax.n_out)
    middle_in, middle_out = ax.n_in // 2, ax.n_out // 2
    x1 = ax.center_in + (index_in - middle_in) * ax.pitch_in
    center_aligned = ax.center_out - ax.e
    x2 = center_aligned + (index_out - middle_out) * ax.pitch_out  # aligned output coordinates
    phase_in = np.pi * (ax.a * x1**2 - 2.0 * x1 * center_aligned) / lam_b
    phase_in += 2.0 * np.pi * ((alpha * middle_out * index_in) % 1.0)
    phase_out = np.pi * (ax.d * x2**2 - 2.0 * ax.center_in * (x2 - center_aligned)) / lam_b
    phase_out += 2.0 * np.pi * ((alpha * middle_in * (index_out - middle_out)) % 1.0)
    phase_out += (2.0 * np.pi / wavelength) * ax.f * (x2 + ax.e / 2.0)
    prefactor = ax.pitch_in / np.sqrt(1j * lam_b)
    factor_in, factor_out, frequency = np.exp(1j * phase_in), prefactor * np.exp(1j * phase_out), x2 / lam_b
    for array in (factor_in, factor_out, frequency):
        array.flags.writeable = False
    return factor_in, factor_out, alpha, fft_path, frequency


@functools.lru_cache(maxsize=64)
def _cell_weights(ax: _Axis, wavelength: float, pitch: float, fill: float, dtype_name: str):
    """Per-axis (aperture weight × output factor, central-period mask × output factor or None
    when the mask is 1 everywhere) of the pixel-cell Fourier branch, in the field's precision."""
    _, factor_out, _, _, frequency = _fourier_parts(ax, wavelength)
    dtype = np.dtype(dtype_name)
    aperture = (aperture_weight(frequency, pitch, fill) * factor_out).astype(dtype)
    mask = central_period_mask(frequency, pitch)
    background = None if mask.all() else (mask * factor_out).astype(dtype)
    for array in (aperture, background):
        if array is not None:
            array.flags.writeable = False
    return aperture, background


def _fourier_axis(work, ax: _Axis, wavelength: float, workers: int, notes: list) -> np.ndarray:
    factor_in, factor_out, alpha, fft_path, _ = _fourier_parts(ax, wavelength)
    span = wavelength * abs(ax.b) / ax.pitch_in
    if not fft_path:
        notes.append(f"{ax.name}: output grid reached with a chirp-z transform")
        if ax.n_out * ax.pitch_out > span * (1 + _SAME):
            notes.append(
                f"{ax.name}: output window {ax.n_out * ax.pitch_out:.4g} m is wider than the "
                f"alias-free span λ|B|/p = {span:.4g} m: replicas of the input sampling appear"
            )
    work *= _along(factor_in.astype(work.dtype), ax.axis)
    out = _dft(work, ax.axis, alpha, ax.n_out, fft_path, workers)
    out *= _along(factor_out.astype(out.dtype), ax.axis)
    return out


def _split_axis(work, ax: _Axis, wavelength: float, workers: int, notes: list) -> np.ndarray:
    n, p = ax.n_in, ax.pitch_in
    distance = ax.b / ax.a
    if ax.natural and distance == 0.0:
        out = work
    else:
        spectrum = scipy.fft.fft(work, axis=ax.axis, overwrite_x=True, workers=workers)
        if distance != 0.0:
            frequency = scipy.fft.fftfreq(n, p)
            spectrum *= _along(np.exp(-1j * np.pi * wavelength * distance * frequency**2).astype(work.dtype), ax.axis)
        if ax.natural:
            out = scipy.fft.ifft(spectrum, axis=ax.axis, overwrite_x=True, workers=workers)
        else:
            out = _interpolate(spectrum, ax, notes, workers)
    if ax.natural and ax.a < 0:
        # image coordinates reversed; for even N the window wraps by one sample (periodic)
        out = np.flip(out, axis=ax.axis)
        out = np.roll(out, 1, axis=ax.axis) if n % 2 == 0 else np.ascontiguousarray(out)
    x2 = (ax.center_out - ax.e) + (np.arange(ax.n_out) - ax.n_out // 2) * ax.pitch_out
    sign = -1j * (np.sign(ax.b) if ax.b != 0.0 else 1.0) if ax.a < 0 else 1.0
    phase = np.pi * ax.c * x2**2 / (wavelength * ax.a) + (2.0 * np.pi / wavelength) * ax.f * (x2 + ax.e / 2.0)
    out *= _along((sign / np.sqrt(abs(ax.a)) * np.exp(1j * phase)).astype(out.dtype), ax.axis)
    return out


def _interpolate(spectrum: np.ndarray, ax: _Axis, notes: list, workers: int = -1) -> np.ndarray:
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
    shifted *= _along(np.exp(2j * np.pi * ((np.arange(n) * t0) % 1.0)).astype(spectrum.dtype), ax.axis)
    out = chirp_z(shifted, -beta, ax.n_out, ax.axis, workers)
    t = t0 + np.arange(ax.n_out) * beta
    out *= _along((np.exp(-2j * np.pi * ((middle * t) % 1.0)) / n).astype(out.dtype), ax.axis)
    return out


def _method(axes) -> str:
    if axes[0].branch == axes[1].branch:
        return axes[0].branch
    return f"x: {axes[0].branch}, y: {axes[1].branch}"


def _output_grid(axes) -> Grid:
    x, y = axes
    return Grid((y.n_out, x.n_out), (x.pitch_out, y.pitch_out), (x.center_out, y.center_out))


def _raise_refusals(found: list[SamplingNote], stage_plane: str) -> None:
    refusals = [note.text() for note in found if note.severity == "refuse"]
    if refusals:
        raise SamplingError(f"stage to plane '{stage_plane}': " + "; ".join(refusals))


def natural_output_grid(
    grid: Grid, matrix_x, matrix_y, wavelength: float, cells: PixelCells | None = None
) -> Grid:
    """The grid :func:`propagate` lands on when no ``output_grid`` is given.

    Parameters
    ----------
    grid : Grid
        Input grid (m).
    matrix_x, matrix_y : array_like, shape (3, 3)
        ABCDEF matrices per axis.
    wavelength : float
        Vacuum wavelength (m).
    cells : PixelCells, optional
        Pixel model of the input: on the Fourier branch the window spans 2·replicas + 1
        periods λ|B|/p; on the split branch the pixels are upsampled first.
    """
    if cells is not None:
        axes = _plan(grid, (matrix_x, matrix_y), wavelength, None, allow_identity=False)
        if all(ax.branch == "fourier" for ax in axes):
            k = 2 * cells.replicas + 1
            return Grid((k * grid.ny, k * grid.nx), (axes[0].pitch_out, axes[1].pitch_out), (axes[0].center_out, axes[1].center_out))
        factors = (upsampling_factor(cells.fill_factor[0]), upsampling_factor(cells.fill_factor[1]))
        grid = upsample_grid(grid, factors)
    return _output_grid(_plan(grid, (matrix_x, matrix_y), wavelength, None))


def propagate(
    field: Field,
    matrix_x,
    matrix_y,
    *,
    output_grid: Grid | None = None,
    plane: str = "",
    cells: PixelCells | None = None,
    workers: int = -1,
) -> StageResult:
    """Carry a field through one stage (Collins integral per axis, see the module docstring).

    Parameters
    ----------
    field : Field
        Input field (one sample per pixel when ``cells`` is given).
    matrix_x, matrix_y : array_like, shape (3, 3)
        ABCDEF matrices [[A, B, E], [C, D, F], [0, 0, 1]] per axis (B, E in m; C in 1/m;
        F in rad), unit determinant.
    output_grid : Grid, optional
        Where to land; default :func:`natural_output_grid`.
    plane : str
        Name of the output plane (default: the input's).
    cells : PixelCells, optional
        Model the input as piecewise constant on modulator pixels (see pixel_cells).
    workers : int
        Threads for scipy.fft (-1: all cores).

    Returns
    -------
    StageResult

    Raises
    ------
    SamplingError
        When sampling would make the result meaningless (names the plane and the reason).
    """
    plane = plane or field.plane
    dtype = np.complex128 if field.values.dtype == np.complex128 else np.complex64
    notes: list[str] = []
    if cells is not None:
        cells.check_against(field)
        axes = _plan(field.grid, (matrix_x, matrix_y), field.wavelength, output_grid, allow_identity=False)
        if not all(ax.branch == "fourier" for ax in axes):
            upsampled, _, cost = upsample_cells(field.replace(values=field.values.astype(dtype, copy=False)), cells)
            # the modulator's edge is the window's edge: no input-window check here
            result = _propagate_plain(upsampled, (matrix_x, matrix_y), output_grid, plane, workers, False)
            return StageResult(result.field, result.method, (cost,) + result.notes)
        if output_grid is None:
            output_grid = natural_output_grid(field.grid, matrix_x, matrix_y, field.wavelength, cells)
            axes = _plan(field.grid, (matrix_x, matrix_y), field.wavelength, output_grid, allow_identity=False)
        values = _cells_fourier(field, axes, cells, dtype, workers, notes)
        out = Field(values, output_grid, field.wavelength, plane)
        found = check_window(out, plane)
        notes.extend(note.text() for note in found)  # replicas reach the edge by design
        return StageResult(out, "fourier", tuple(notes))
    return _propagate_plain(field, (matrix_x, matrix_y), output_grid, plane, workers, True)


def _propagate_plain(field: Field, matrices, output_grid, plane: str, workers: int, check_input: bool) -> StageResult:
    dtype = np.complex128 if field.values.dtype == np.complex128 else np.complex64
    notes: list[str] = []
    axes = _plan(field.grid, matrices, field.wavelength, output_grid)
    if all(ax.branch == "identity" for ax in axes):
        same = field if plane == field.plane else field.replace(plane=plane)
        return StageResult(same, "identity", ())
    if check_input:
        found = check_window(field, field.plane or plane)
        _raise_refusals(found, plane)
        notes.extend(note.text() for note in found)
    work = field.values.astype(dtype, copy=True)
    try:
        for ax in axes:
            if ax.branch == "fourier":
                work = _fourier_axis(work, ax, field.wavelength, workers, notes)
            elif ax.branch == "split":
                work = _split_axis(work, ax, field.wavelength, workers, notes)
    except SamplingError as error:
        raise SamplingError(f"stage to plane '{plane}': {error}") from None
    # an asked-for grid within 1e-9 of the natural pitch is returned exactly as asked
    out = Field(work, output_grid if output_grid is not None else _output_grid(axes), field.wavelength, plane)
    found = check_window(out, plane)
    if all(ax.natural for ax in axes):
        _raise_refusals(found, plane)  # a natural window that the beam overfills has wrapped
    notes.extend(note.text() for note in found)
    return StageResult(out, _method(axes), tuple(notes))


def _cells_fourier(field: Field, axes, cells: PixelCells, dtype, workers: int, notes: list) -> np.ndarray:
    """Fourier branch for pixel cells: array factor × aperture + flat dead-space term.

    Both axes' input chirps are applied as one outer product, and each axis's output factor
    is folded into its aperture weight (and central-period mask), so the field is read and
    written as few times as the two transforms allow.
    """
    wavelength = field.wavelength
    parts = [_fourier_parts(ax, wavelength) for ax in axes]
    for ax in axes:
        x1_max = max(abs(ax.center_in - (ax.n_in // 2) * ax.pitch_in), abs(ax.center_in + (ax.n_in // 2) * ax.pitch_in))
        swing = 2.0 * np.pi * abs(ax.a) * x1_max * ax.pitch_in / (wavelength * abs(ax.b))
        if swing > 0.5:  # 1 − sinc(Δφ/2π) ≈ Δφ²/24: 1 % amplitude error at 0.5 rad
            notes.append(f"{ax.name}: input chirp changes by {swing:.3g} rad across a pixel; per-pixel chirp approximate")
    by_axis = {ax.axis: part for ax, part in zip(axes, parts)}
    factor_in = np.multiply.outer(by_axis[0][0].astype(dtype), by_axis[1][0].astype(dtype))  # [y, x]
    pixel_term = np.multiply(field.values, factor_in, dtype=dtype)
    background = None
    if cells.dead_space == "flat":
        background = np.multiply(cells.background, factor_in, dtype=dtype)
        pixel_term -= background
    del factor_in
    for ax, (_, _, alpha, fft_path, _) in zip(axes, parts):
        pixel_term = _dft(pixel_term, ax.axis, alpha, ax.n_out, fft_path, workers)
        if background is not None:
            background = _dft(background, ax.axis, alpha, ax.n_out, fft_path, workers)
    dtype_name = np.dtype(dtype).name
    for ax, pitch, fill in zip(axes, cells.pitch, cells.fill_factor):
        aperture, central = _cell_weights(ax, wavelength, pitch, fill, dtype_name)
        pixel_term *= _along(aperture, ax.axis)
        if background is not None:
            background *= _along(by_axis[ax.axis][1].astype(dtype) if central is None else central, ax.axis)
    if background is not None:
        pixel_term += background
    return pixel_term
