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
import scipy.linalg
import scipy.linalg.blas

from benchcheck.errors import SamplingError
from benchcheck.thread_pools import helper_thread, thread_count, threads_for
from benchcheck.wave.axis_transforms import (
    choose_branch,
    along_axis,
    cell_weights,
    fourier_axis,
    fourier_parts,
    off_path_notes,
    output_grid_of,
    plan_axes,
    scaled_dft,
    split_axis,
    stage_method,
)
from benchcheck.wave.direct_dft import DIRECT_MAX_INPUT
from benchcheck.wave.fft_backend import fft_backend_in_use
from benchcheck.wave.field import BoxedField, Field, RowTransformField, lag_sums, one_modulus_power, support_values
from benchcheck.wave.grid import Grid
from benchcheck.wave.pixel_cells import (
    PixelCells,
    SeparableBackground,
    upsample_cells,
    upsample_grid,
    upsampling_factor,
)
from benchcheck.wave.sampling import SamplingNote, check_window
from benchcheck.wave.zoomed_rows import ZoomedRowField

__all__ = ["StageResult", "propagate", "natural_output_grid", "choose_branch"]

# Rows of the modulator's pixel term go through the x transform in blocks of about this many
# bytes where only the iris box's columns go on (``_row_product_transform``): the window's
# product is never written, and a trial's smaller arrays stay in a core's cache (2 MiB of L2
# here; a pass over 4 MiB before OAM purity made it 1.1 → 1.6 ms at 512). One FFT thread a
# block; on a window whose halves are each more than a small transform (thread_pools), a
# helper thread takes half the blocks. Paired, 4f example, against the window's product and
# one transform of it: 0.15-0.25 ms less a trial at 512 on all cores (example's specs; 0.1
# with efficiency alone), 0.3-0.45 ms less at 1024 on one thread (a study's worker), 0.6 ms
# less at 1024 on all cores with efficiency alone and 1 ms with the example's specs.
_BLOCK_BYTES = 1 << 18


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
        axes = plan_axes(grid, (matrix_x, matrix_y), wavelength, None, allow_identity=False)
        if all(ax.branch == "fourier" for ax in axes):
            k = 2 * cells.replicas + 1
            return Grid((k * grid.ny, k * grid.nx), (axes[0].pitch_out, axes[1].pitch_out), (axes[0].center_out, axes[1].center_out))
        factors = (upsampling_factor(cells.fill_factor[0]), upsampling_factor(cells.fill_factor[1]))
        grid = upsample_grid(grid, factors)
    return output_grid_of(plan_axes(grid, (matrix_x, matrix_y), wavelength, None))


def propagate(
    field: Field,
    matrix_x,
    matrix_y,
    *,
    output_grid: Grid | None = None,
    plane: str = "",
    cells: PixelCells | None = None,
    workers: int = -1,
    output_box: tuple[slice, slice] | None = None,
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
    output_box : tuple of slice, optional
        (rows, columns) of the output grid: only these samples are computed, the rest are
        left zero and the field carries the box as its support (a study's field just before
        a small iris, where nothing outside the opening matters). Used on the Fourier branch;
        other branches compute the whole window. No window check is made on such a field.

    Returns
    -------
    StageResult

    Raises
    ------
    SamplingError
        When sampling would make the result meaningless (names the plane and the reason).
    """
    plane = plane or field.plane
    dtype = np.complex128 if field.dtype == np.complex128 else np.complex64
    notes: list[str] = []
    if cells is not None:
        cells.check_against(field)
        axes = plan_axes(field.grid, (matrix_x, matrix_y), field.wavelength, output_grid, allow_identity=False)
        if not all(ax.branch == "fourier" for ax in axes):
            upsampled, _, cost = upsample_cells(field.replace(values=field.values.astype(dtype, copy=False)), cells)
            # the modulator's edge is the window's edge: no input-window check here
            result = _propagate_plain(upsampled, (matrix_x, matrix_y), output_grid, plane, workers, False)
            return StageResult(result.field, result.method, (cost,) + result.notes)
        if output_grid is None:
            output_grid = natural_output_grid(field.grid, matrix_x, matrix_y, field.wavelength, cells)
            axes = plan_axes(field.grid, (matrix_x, matrix_y), field.wavelength, output_grid, allow_identity=False)
        values = _cells_fourier(field, axes, cells, dtype, workers, notes, output_box)
        if output_box is not None:
            return StageResult(_boxed(values, output_grid, field.wavelength, plane, output_box), "fourier", tuple(notes))
        out = Field(values, output_grid, field.wavelength, plane)
        found = check_window(out, plane)
        notes.extend(note.text() for note in found)  # replicas reach the edge by design
        return StageResult(out, "fourier", tuple(notes))
    return _propagate_plain(field, (matrix_x, matrix_y), output_grid, plane, workers, True, output_box)


def _boxed(box_values: np.ndarray, grid: Grid, wavelength: float, plane: str, box) -> Field:
    """A field on ``grid`` that is ``box_values`` on ``box`` and zero elsewhere (its support)."""
    return BoxedField(box_values, grid, wavelength, plane, box)


def _propagate_plain(field: Field, matrices, output_grid, plane: str, workers: int, check_input: bool,
                     output_box=None) -> StageResult:
    dtype = np.complex128 if field.dtype == np.complex128 else np.complex64
    notes: list[str] = []
    axes = plan_axes(field.grid, matrices, field.wavelength, output_grid)
    if all(ax.branch == "identity" for ax in axes):
        same = field if plane == field.plane else field.replace(plane=plane)
        return StageResult(same, "identity", ())
    if check_input:
        found = check_window(field, field.plane or plane)
        _raise_refusals(found, plane)
        notes.extend(note.text() for note in found)
    both_fourier = all(ax.branch == "fourier" for ax in axes)
    # an asked-for grid within 1e-9 of the natural pitch is returned exactly as asked
    grid = output_grid if output_grid is not None else output_grid_of(axes)
    try:
        if output_box is not None and both_fourier:
            box_values = _fourier_to_box(field, axes, dtype, workers, notes, output_box)
            return StageResult(_boxed(box_values, grid, field.wavelength, plane, output_box), "fourier",
                               tuple(notes))
        # past a small iris, the x transform is made when something reads the values
        out = _row_transform(field, axes, dtype, workers, notes, grid, plane) \
            if field.support is not None and both_fourier else None
        if out is None:
            out = Field(_transformed(field, axes, dtype, workers, notes, both_fourier), grid, field.wavelength, plane)
    except SamplingError as error:
        raise SamplingError(f"stage to plane '{plane}': {error}") from None
    found = check_window(out, plane)
    if all(ax.natural for ax in axes):
        _raise_refusals(found, plane)  # a natural window that the beam overfills has wrapped
    notes.extend(note.text() for note in found)
    return StageResult(out, stage_method(axes), tuple(notes))


def _transformed(field: Field, axes, dtype, workers: int, notes: list, both_fourier: bool) -> np.ndarray:
    """The field's values carried through the stage's axes, in ``dtype``."""
    if field.support is not None and both_fourier:
        return _pruned_fourier(field, axes, dtype, workers, notes)  # copies the box in ``dtype``
    work = field.values.astype(dtype, copy=False)
    owned = work is not field.values  # the input field is never changed: the first axis copies it
    for ax in axes:
        if ax.branch == "fourier":
            work = fourier_axis(work, ax, field.wavelength, workers, notes, owned)
        elif ax.branch == "split":
            work = split_axis(work, ax, field.wavelength, workers, notes, owned)
        else:
            continue
        owned = True
    return work


def _pruned_fourier(field: Field, axes, dtype, workers: int, notes: list, rows_out=slice(None)) -> np.ndarray:
    """Fourier branch on both axes for a field that is zero outside its support box.

    Along y only the box's columns are transformed (``_pruned_lines``); along x, every output
    row. Off the FFT path the x axis transforms the box's samples alone, with its input
    factor applied to them (a matrix product for a short box, direct_dft.py, else a chirp-z
    transform as long as the box). On the FFT path the box is placed in the full window
    (along x then over contiguous rows, about twice as fast as along y on one thread): with
    BLAS on one thread beside a two-thread FFT, the product of a 43-sample box took 5.7-6.1
    ms at 1024 against 5.2-5.6 ms for the FFT. ``rows_out``: only these output rows.
    """
    columns = field.support[1]
    x_axis = axes[0]  # plan_axes gives x, then y
    lines = _pruned_lines(field, axes, dtype, workers, notes, rows_out)
    if _on_box_only(x_axis, field.wavelength):
        return fourier_axis(np.ascontiguousarray(lines), x_axis, field.wavelength, workers, notes,
                            input_applied=True, first_index=columns.start)
    full = np.zeros((lines.shape[0], field.grid.nx), dtype)
    full[:, columns] = lines
    return fourier_axis(full, x_axis, field.wavelength, workers, notes, input_applied=True)


def _on_box_only(ax, wavelength: float) -> bool:
    """Whether an axis of the Fourier branch is off the FFT path (chirp-z or matrix product,
    on the box's samples alone)."""
    return not fourier_parts(ax, wavelength)[3]


def _pruned_lines(field: Field, axes, dtype, workers: int, notes: list, rows_out=slice(None)) -> np.ndarray:
    """The y step of ``_pruned_fourier`` on the box's columns, times the x axis's input
    factor there: (output rows × box columns)."""
    rows, columns = field.support
    x_axis, y_axis = axes
    wavelength = field.wavelength
    if _on_box_only(y_axis, wavelength):
        lines = support_values(field).astype(dtype)  # a copy
        lines *= fourier_parts(y_axis, wavelength)[0][rows].astype(dtype)[:, np.newaxis]
        lines = fourier_axis(lines, y_axis, wavelength, workers, notes, input_applied=True,
                             first_index=rows.start)[rows_out]
    else:
        lines = np.zeros((field.grid.ny, columns.stop - columns.start), dtype)
        lines[rows] = support_values(field)
        lines = fourier_axis(lines, y_axis, wavelength, workers, notes)[rows_out]
    lines *= fourier_parts(x_axis, wavelength)[0][columns].astype(dtype)[np.newaxis, :]
    return lines


def _row_transform(field: Field, axes, dtype, workers: int, notes: list, grid: Grid, plane: str):
    """``_pruned_fourier``'s field with its x transform left pending: a RowTransformField where
    x is on the plain FFT path onto as many samples, a ZoomedRowField where x is off it and the
    box is short enough for the matrix product (direct_dft.py); else None."""
    x_axis = axes[0]
    _, factor_out, alpha, _, _ = fourier_parts(x_axis, field.wavelength)
    columns = field.support[1]
    if _on_box_only(x_axis, field.wavelength):
        if columns.stop - columns.start > DIRECT_MAX_INPUT:
            return None
        lines = _pruned_lines(field, axes, dtype, workers, notes)
        notes.extend(off_path_notes(x_axis, field.wavelength))
        return ZoomedRowField(lines, columns.start, alpha, factor_out.astype(dtype), grid, field.wavelength, plane,
                              _lines_gram(field, axes, dtype))
    if x_axis.n_out != x_axis.n_in:
        return None
    lines = _pruned_lines(field, axes, dtype, workers, notes)
    return RowTransformField(lines, columns.start, 1 if alpha > 0 else -1, factor_out.astype(dtype),
                             grid, field.wavelength, plane, _lines_gram(field, axes, dtype))


def _lines_gram(field: Field, axes, dtype):
    """A function giving Σ over rows of lines[r, j] conj(lines[r, j']) for ``_pruned_lines``'
    lines from the box alone (``_box_gram``): a product over the box's rows instead of the
    window's (43 against 512 or 1024 on the 4f example)."""
    x_axis, y_axis = axes
    return functools.partial(_box_gram, field, x_axis, y_axis, dtype)


def _box_gram(field: Field, x_axis, y_axis, dtype) -> np.ndarray:
    """``_lines_gram``'s matrix, made when first read.

    Along y the lines are c[m] Σ_k b[k, j] exp(−2πi α (first + k) m) over the box's rows b
    (times the x input factor and the y input factor), c the output factor of one modulus, so
    the sum over the M output rows is |c|² Σ_{k,k'} b[k, j] S(k − k') conj(b[k', j']) with
    S(d) = Σ_m exp(−2πi α d m), a geometric series (``lag_sums``). A plain DFT over the whole
    period (FFT path, as many samples out as in) has S(d) = N δ_d: its columns are
    orthogonal, and the y input factor (modulus 1) drops out."""
    rows, columns = field.support
    factor_in_y, factor_out_y, alpha, fft_path, _ = fourier_parts(y_axis, field.wavelength)
    factor_power = one_modulus_power(factor_out_y.astype(dtype))
    box = support_values(field).astype(np.complex128)
    box *= fourier_parts(x_axis, field.wavelength)[0][columns].astype(dtype)[np.newaxis, :]
    if fft_path and y_axis.n_out == y_axis.n_in:
        gram = (y_axis.n_out * factor_power) * (box.T @ box.conj())
    else:
        box *= factor_in_y[rows].astype(dtype)[:, np.newaxis]
        sums = lag_sums(alpha, box.shape[0], 0, y_axis.n_out)
        middle = box.shape[0] - 1
        between_rows = scipy.linalg.toeplitz(sums[middle:], sums[middle::-1])  # [k, k'] = S(k − k')
        gram = factor_power * (box.T @ (between_rows @ box.conj()))
    gram.flags.writeable = False
    return gram


def _fourier_to_box(field: Field, axes, dtype, workers: int, notes: list, box) -> np.ndarray:
    """The Fourier branch on both axes, only on the output samples of ``box`` (an array of the
    box's shape): each axis's transform runs on the lines the next one needs."""
    rows_out, columns_out = box
    if field.support is not None:
        return _pruned_fourier(field, axes, dtype, workers, notes, rows_out)[:, columns_out]
    x_axis, y_axis = axes
    lines = fourier_axis(field.values.astype(dtype, copy=False), x_axis, field.wavelength, workers, notes,
                         owned=False)[:, columns_out]
    return fourier_axis(lines, y_axis, field.wavelength, workers, notes)[rows_out]


def _cells_fourier(field: Field, axes, cells: PixelCells, dtype, workers: int, notes: list,
                   box: tuple[slice, slice] | None = None) -> np.ndarray:
    """Fourier branch for pixel cells: array factor × aperture + flat dead-space term.

    Both axes' input chirps are applied as one outer product (for a separable beam, the x
    profile before the x transform and the y profile after it, on the columns kept: a factor
    per row passes through a transform along the rows), and each axis's output factor is
    folded into its aperture weight (and central-period mask), so the field is read and
    written as few times as the two transforms allow. A separable background (a Gaussian
    beam) is transformed per axis: its term costs two 1-D transforms. With ``box`` (rows,
    columns of the output) only those samples are made: after the x transform only the
    box's columns go on to the y transform.
    """
    keep = {0: slice(None), 1: slice(None)} if box is None else {0: box[0], 1: box[1]}
    wavelength = field.wavelength
    parts = [fourier_parts(ax, wavelength) for ax in axes]
    for ax in axes:
        x1_max = max(abs(ax.center_in - (ax.n_in // 2) * ax.pitch_in), abs(ax.center_in + (ax.n_in // 2) * ax.pitch_in))
        swing = 2.0 * np.pi * abs(ax.a) * x1_max * ax.pitch_in / (wavelength * abs(ax.b))
        if swing > 0.5:  # 1 − sinc(Δφ/2π) ≈ Δφ²/24: 1 % amplitude error at 0.5 rad
            notes.append(f"{ax.name}: input chirp changes by {swing:.3g} rad across a pixel; per-pixel chirp approximate")
    by_axis = {ax.axis: part for ax, part in zip(axes, parts)}
    flat = cells.dead_space == "flat"
    separable = flat and isinstance(cells.background, SeparableBackground)
    background = None
    row_factor = None  # a factor per row, applied after the x transform (it commutes with it)
    if separable:
        # per axis: profile × input chirp, [y] and [x]
        profiles = {0: cells.background.profile_y.astype(dtype) * by_axis[0][0].astype(dtype),
                    1: cells.background.profile_x.astype(dtype) * by_axis[1][0].astype(dtype)}
        if cells.modulation_less_one is not None and axes[0].axis == 1:
            # field − background = background·(exp(iψ) − 1): the x profile with the x
            # transform, the y profile on the columns it keeps (one pass over the window)
            pixel_term = None
            row_factor = profiles[0][:, np.newaxis]
        else:
            pixel_term = np.multiply.outer(profiles[0], profiles[1])
            if cells.modulation_less_one is not None:
                pixel_term *= cells.modulation_less_one
            else:
                pixel_term = np.multiply(field.values, np.multiply.outer(by_axis[0][0].astype(dtype),
                                                                         by_axis[1][0].astype(dtype)),
                                         dtype=dtype) - pixel_term
    else:
        factor_in = np.multiply.outer(by_axis[0][0].astype(dtype), by_axis[1][0].astype(dtype))  # [y, x]
        pixel_term = np.multiply(field.values, factor_in, dtype=dtype)
        if flat:
            background = np.multiply(cells.background, factor_in, dtype=dtype)
            pixel_term -= background
        del factor_in
    for ax, (_, _, alpha, fft_path, _) in zip(axes, parts):
        if pixel_term is None:  # x first, on exp(iψ) − 1 times the x profile
            pixel_term = _row_product_transform(cells.modulation_less_one, profiles[1], ax, alpha, fft_path, workers,
                                                keep[1])
        else:
            if row_factor is not None and ax.axis == 0:
                pixel_term *= row_factor
            pixel_term = _along(scaled_dft(pixel_term, ax.axis, alpha, ax.n_out, fft_path, workers), ax.axis, keep)
        if background is not None:
            background = _along(scaled_dft(background, ax.axis, alpha, ax.n_out, fft_path, workers), ax.axis, keep)
        elif separable:
            profiles[ax.axis] = scaled_dft(along_axis(profiles[ax.axis], ax.axis), ax.axis, alpha, ax.n_out,
                                           fft_path, workers).ravel()[keep[ax.axis]]
    dtype_name = np.dtype(dtype).name
    for ax, pitch, fill in zip(axes, cells.pitch, cells.fill_factor):
        aperture, central = cell_weights(ax, wavelength, pitch, fill, dtype_name, keep[ax.axis])
        pixel_term *= along_axis(aperture, ax.axis)
        weight = by_axis[ax.axis][1][keep[ax.axis]].astype(dtype) if central is None else central
        if background is not None:
            background *= along_axis(weight, ax.axis)
        elif separable:
            profiles[ax.axis] = profiles[ax.axis] * weight
    if background is not None:
        pixel_term += background
    elif separable:
        _add_outer(pixel_term, profiles[0], profiles[1])
    return pixel_term


def _row_product_transform(values: np.ndarray, row: np.ndarray, ax, alpha: float, fft_path: bool, workers: int,
                           columns: slice) -> np.ndarray:
    """``values`` times ``row`` on every row, transformed along x (``scaled_dft``), ``columns``
    of the result kept. Where the FFT serves and only some columns go on, the rows go through
    one buffer a block at a time (``_BLOCK_BYTES``), so the window's product is never made.
    Not with pyFFTW: its measured plan for the whole window beat scipy's blocks (paired, 4f
    example with efficiency alone: 0.09 ms less at 512, 0.6 ms less at 1024)."""
    if columns == slice(None) or not fft_path or ax.n_out != ax.n_in or fft_backend_in_use() != "scipy":
        return _along(scaled_dft(values * row[np.newaxis, :], 1, alpha, ax.n_out, fft_path, workers), 1, {1: columns})
    rows, n = values.shape
    kept = np.empty((rows, len(range(n)[columns])), np.result_type(values, row))
    block_rows = min(rows, max(1, _BLOCK_BYTES // (n * kept.itemsize)))

    def run(first: int, stop: int) -> None:
        buffer = np.empty((block_rows, n), kept.dtype)
        for start in range(first, stop, block_rows):
            block = buffer[:min(block_rows, stop - start)]
            np.multiply(values[start:start + block.shape[0]], row, out=block)
            kept[start:start + block.shape[0]] = scaled_dft(block, 1, alpha, n, True, 1)[:, columns]

    # two threads where each half of the window is more than a small transform (thread_pools)
    if thread_count(threads_for(kept.itemsize * rows * n // 2, workers)) > 1 and rows >= 4 * block_rows:
        half = (rows // block_rows // 2) * block_rows
        other = helper_thread().submit(run, half, rows)
        run(0, half)
        other.result()
    else:
        run(0, rows)
    return kept


def _along(values: np.ndarray, axis: int, keep: dict) -> np.ndarray:
    """``values`` with only the kept indices along ``axis`` (all when the slice is full)."""
    if keep[axis] == slice(None):
        return values
    return np.ascontiguousarray(values[:, keep[axis]] if axis == 1 else values[keep[axis]])


def _add_outer(array: np.ndarray, column: np.ndarray, row: np.ndarray) -> None:
    """array += column ⊗ row in place: a BLAS rank-1 update (one pass, no N x N temporary;
    about 10x faster than adding ``np.multiply.outer``)."""
    if not (array.flags.c_contiguous and array.dtype in (np.complex64, np.complex128)):
        array += np.multiply.outer(column, row)
        return
    # a C-ordered [y, x] array is the Fortran-ordered transpose: A^T += row ⊗ column
    update = scipy.linalg.blas.get_blas_funcs("geru", (array,))
    update(1.0, row.astype(array.dtype, copy=False), column.astype(array.dtype, copy=False), a=array.T, overwrite_a=1)
