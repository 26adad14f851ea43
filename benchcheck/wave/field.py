"""Fields: complex samples of the optical field on a grid at a named plane."""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from benchcheck.wave.grid import Grid

__all__ = ["Field", "DeferredField", "BoxedField", "HeldColumnsField", "RowTransformField", "values_made",
           "support_values", "lag_sums"]

# |output factor| may vary by this much (relative) across a row transform: a chirp times a
# constant varies by float32 rounding alone
_ONE_MODULUS = 1e-5

# Below this |sin(π α d)| a lag's sum over the columns is added term by term: the closed
# form's quotient loses digits as its denominator vanishes (α d near an integer).
_NEAR_PERIOD = 1e-3


@dataclass(frozen=True, eq=False)
class Field:
    """Complex field samples at one plane.

    The field is scaled so that ``sum(|values|²) * grid.sample_area`` is the power in
    watts-relative units (the source carries power 1 unless the layout gives one). Time
    dependence exp(−iωt), forward propagation exp(+ikz) (DESIGN.md section 4).

    Attributes
    ----------
    values : numpy.ndarray
        Complex array of shape ``grid.shape`` indexed [y, x]; complex64 by default. Not to
        be changed in place once the field is made.
    grid : Grid
        Where the samples are.
    wavelength : float
        Vacuum wavelength (m).
    plane : str
        Name of the plane the field belongs to.
    support : tuple of slice, optional
        (rows, columns) of a box outside which every sample is exactly zero (the field just
        past a small iris); stages then transform only the box's lines along the first axis.
    """

    values: np.ndarray
    grid: Grid
    wavelength: float
    plane: str = ""
    support: tuple[slice, slice] | None = None

    def __post_init__(self) -> None:
        if self.values.shape != self.grid.shape:
            raise ValueError(f"field shape {self.values.shape} does not match grid {self.grid.shape}")

    @property
    def dtype(self) -> np.dtype:
        """The samples' precision (complex64 or complex128)."""
        return self.values.dtype

    @property
    def intensity(self) -> np.ndarray:
        """|E|² per sample (W/m² in the field's scaling)."""
        return (self.values.real**2 + self.values.imag**2).astype(
            np.float64 if self.values.dtype == np.complex128 else np.float32
        )

    @cached_property
    def power(self) -> float:
        """Total power in the window: Σ|E|² · sample area (blockwise np.vdot, double-precision
        total: one pass, no temporary; :mod:`benchcheck.wave.sums`). Worked out once: a
        field's values are never changed in place (make a new field with :meth:`replace`)."""
        from benchcheck.wave.sums import power_sum

        return power_sum(self.values if self.support is None else self.values[self.support]) * self.grid.sample_area

    def replace(self, values: np.ndarray | None = None, grid: Grid | None = None, plane: str | None = None) -> "Field":
        """A new field with some attributes changed (new values or grid drop the support box)."""
        return Field(
            self.values if values is None else values,
            self.grid if grid is None else grid,
            self.wavelength,
            self.plane if plane is None else plane,
            self.support if values is None and grid is None else None,
        )


def set_field_attributes(field: Field, **attributes) -> None:
    """Set the attributes of a frozen field being made (for the kinds whose values are made
    later: they set what they hold instead of ``values``)."""
    for name, value in attributes.items():
        object.__setattr__(field, name, value)


def held_columns_gram(lines: np.ndarray) -> np.ndarray:
    """Σ over rows of lines[r, j] conj(lines[r, j']), in double precision."""
    lines = lines.astype(np.complex128)
    return lines.T @ lines.conj()


def one_modulus_power(factor: np.ndarray) -> float:
    """mean |factor|² of a stage's output factor, which must have one modulus (a chirp times
    a constant; float32 rounding aside): ValueError otherwise."""
    modulus = np.abs(factor.astype(np.complex128))
    if modulus.max() - modulus.min() > _ONE_MODULUS * modulus.max():
        raise ValueError("the output factor of a row transform must have one modulus")
    return float(np.mean(modulus**2))


class DeferredField(Field):
    """A field whose values are made when first read.

    For the modulator's window in a trial: the next stage reads only its factors (the beam's
    profiles and the modulation), so the N x N product is made only where a metric, a target,
    a plot or a non-Fourier stage reads it (two passes over the window and its power sum
    saved per trial). ``make_values`` must return the same array on every call.
    """

    def __init__(self, make_values, dtype, grid: Grid, wavelength: float, plane: str = "") -> None:
        set_field_attributes(self, _make_values=make_values, _dtype=np.dtype(dtype), grid=grid,
                             wavelength=wavelength, plane=plane, support=None)

    @property
    def dtype(self) -> np.dtype:
        return self._dtype

    def __reduce__(self):
        return Field, (self.values, self.grid, self.wavelength, self.plane)  # pickled as made

    @cached_property
    def values(self) -> np.ndarray:  # noqa: D102 - the values, made now
        values = self._make_values()
        if values.shape != self.grid.shape or values.dtype != self._dtype:
            raise ValueError(f"field {values.shape} {values.dtype} does not match {self.grid.shape} {self._dtype}")
        return values


def values_made(field: Field) -> bool:
    """Whether the field's values exist yet (those of the kinds that hold something else,
    DeferredField, BoxedField and the row fields, are made when first read)."""
    return "values" in field.__dict__  # a plain Field's dataclass attribute, or a made cached one


class BoxedField(Field):
    """A field that is zero outside its support box and holds only the box's samples.

    For the field at a small iris in a study: the next stage reads only the box, so the
    window-sized array of zeros around it (a fill of the whole window: about 1 ms at 1024²
    where the allocator hands back reused memory) is made only if something reads ``values``.
    """

    def __init__(self, box: np.ndarray, grid: Grid, wavelength: float, plane: str,
                 support: tuple[slice, slice]) -> None:
        rows, columns = support
        if box.shape != (rows.stop - rows.start, columns.stop - columns.start):
            raise ValueError(f"box {box.shape} does not match its support {support}")
        set_field_attributes(self, box=box, grid=grid, wavelength=wavelength, plane=plane, support=support)

    @property
    def dtype(self) -> np.dtype:
        return self.box.dtype

    def __reduce__(self):
        return Field, (self.values, self.grid, self.wavelength, self.plane, self.support)  # pickled as made

    @cached_property
    def values(self) -> np.ndarray:  # noqa: D102 - the window, made now
        values = np.zeros(self.grid.shape, self.box.dtype)
        values[self.support] = self.box
        return values

    def scaled(self, amplitude: float) -> "BoxedField":
        """The same field times a real ``amplitude`` (float32, as a stage's transmission)."""
        return BoxedField(self.box * np.float32(amplitude), self.grid, self.wavelength, self.plane, self.support)

    @cached_property
    def power(self) -> float:  # noqa: D102 - from the box alone
        from benchcheck.wave.sums import power_sum

        return power_sum(self.box) * self.grid.sample_area


def support_values(field: Field, box: tuple[slice, slice] | None = None) -> np.ndarray:
    """The samples on ``box`` (default: the field's support), without making a boxed
    field's whole window when the box is its own."""
    box = field.support if box is None else box
    if isinstance(field, BoxedField) and box == field.support:
        return field.box
    return field.values[box]


class HeldColumnsField(Field):
    """A field whose every row is a transform along x of a few columns it holds (``lines``,
    rows x columns, with ``gram_from``: a function giving their Gram matrix, or None); the
    window is made only when ``values`` is read. The kinds say which transform: each row is
    factor[m] Σ_j lines[r, j] exp(−2πi α (first + j) m), their ``alpha`` the rate."""

    @property
    def dtype(self) -> np.dtype:
        return self.lines.dtype

    def __reduce__(self):
        return Field, (self.values, self.grid, self.wavelength, self.plane)  # pickled as made

    @cached_property
    def gram(self) -> np.ndarray:
        """G[j, j'] = Σ over rows of lines[r, j] conj(lines[r, j']), double precision (read-only)."""
        gram = self.gram_from() if self.gram_from is not None else held_columns_gram(self.lines)
        gram.flags.writeable = False
        return gram

    def scaled(self, amplitude: float) -> "HeldColumnsField":
        """The same field times a real ``amplitude`` (float32, as a stage's transmission)."""
        gram = None if self.gram_from is None else lambda: self.gram * float(np.float32(amplitude)) ** 2
        return self.with_lines(self.lines * np.float32(amplitude), gram)

    def with_lines(self, lines: np.ndarray, gram: Callable[[], np.ndarray] | None) -> "HeldColumnsField":
        """The same transform of other held columns."""
        raise NotImplementedError

    @cached_property
    def gram_diagonals(self) -> np.ndarray:
        """``gram`` summed along its diagonals (``diagonal_sums``): all the sums over output
        columns read of it."""
        return diagonal_sums(self.gram)

    def border_power(self, rows: int, columns: int) -> float:
        """Σ|values|² over the window's border band (no sample area): its first and last
        ``rows`` rows, and the first and last ``columns`` columns of the rows between.

        From the Gram matrix of the outer rows and the whole one less it (the middle rows'),
        each summed along its diagonals and weighted by the lag sums over the columns
        (``_sum_over_columns``)."""
        ny, nx = self.grid.shape
        outer = diagonal_sums(held_columns_gram(np.concatenate((self.lines[:rows], self.lines[ny - rows:]))))
        middle = self.gram_diagonals - outer
        return self._all_columns_power(outer) + self._sum_over_columns(middle, *self._side_columns(columns))

    def _all_columns_power(self, diagonals: np.ndarray) -> float:
        """``_sum_over_columns`` over the whole row."""
        return self._sum_over_columns(diagonals, (0, self.grid.nx))

    def _side_columns(self, width: int) -> tuple[tuple[int, int], ...]:
        """The ``width`` columns at each side of the window, as ranges of m."""
        return (0, width), (self.grid.nx - width, self.grid.nx)

    def _sum_over_columns(self, diagonals: np.ndarray, *columns: tuple[int, int]) -> float:
        """Σ over some rows and the output columns [start, stop) of |values|², for rows that
        are factor[m] Σ_j g_j exp(−2πi α (first + j) m) (``alpha``), from those rows' Gram
        matrix summed along its diagonals (``diagonals``): summed over m,
        |Σ_j g_j exp(−2πi α (first + j) m)|² is Σ_{j,j'} g_j conj(g_j') S(j − j'),
        S(d) = Σ_m exp(−2πi α d m), so the sum is Σ_d S(d) Σ_{j − j' = d} G[j, j']."""
        sums = sum(lag_sums(self.alpha, self.lines.shape[1], start, stop) for start, stop in columns)
        return self.factor_power * float(np.dot(sums, diagonals).real)


class RowTransformField(HeldColumnsField):
    """A field whose every row is a DFT along x of a few nonzero samples, held as those samples.

        values[r, m] = factor[m] · Σ_j lines[r, j] exp(−2πi · sign · (first + j) · m / N)

    (``sign`` +1: scipy.fft.fft, −1: ifft with norm="forward"; N = grid.nx). For the field a
    Fourier stage carries from a small iris to the next plane (x on the plain FFT path): its
    power, its edge bands and the transforms of OAM purity follow from ``lines`` alone
    (Parseval and the DFT of ``factor``), so the window's transform along x is made only if
    something reads ``values``. ``factor`` must have one modulus (a chirp times a constant:
    checked). ``gram``, where the stage has a shorter way to it: a function giving Σ over rows
    of lines[r, j] conj(lines[r, j']) in double precision (called once, if read), else it is
    made from the lines.
    """

    def __init__(self, lines: np.ndarray, first: int, sign: int, factor: np.ndarray, grid: Grid,
                 wavelength: float, plane: str, gram: Callable[[], np.ndarray] | None = None) -> None:
        if lines.shape[0] != grid.ny or not 0 <= first <= grid.nx - lines.shape[1] or factor.shape != (grid.nx,):
            raise ValueError(f"lines {lines.shape} from column {first} and factor {factor.shape} "
                             f"do not fit {grid.shape}")
        set_field_attributes(self, lines=lines, first=int(first), sign=int(sign), factor=factor,
                             factor_power=one_modulus_power(factor), grid=grid, wavelength=wavelength,
                             plane=plane, support=None, gram_from=gram)

    @cached_property
    def values(self) -> np.ndarray:  # noqa: D102 - the window, transformed now
        from benchcheck.thread_pools import fft_workers
        from benchcheck.wave.axis_transforms import scaled_dft

        window = np.zeros(self.grid.shape, self.lines.dtype)
        window[:, self.first:self.first + self.lines.shape[1]] = self.lines
        window = scaled_dft(window, 1, self.alpha, self.grid.nx, True, fft_workers())  # the FFT path's own call
        window *= self.factor[np.newaxis, :]
        return window

    @property
    def alpha(self) -> float:
        """The transform's rate: exp(−2πi α k m) with α = sign / N."""
        return self.sign / self.grid.nx

    def with_lines(self, lines: np.ndarray, gram: Callable[[], np.ndarray] | None) -> "RowTransformField":
        return RowTransformField(lines, self.first, self.sign, self.factor, self.grid, self.wavelength, self.plane,
                                 gram)

    def _all_columns_power(self, diagonals: np.ndarray) -> float:
        """Parseval along each row: N |factor|² times the trace of the rows' Gram matrix."""
        return self.grid.nx * self.factor_power * float(diagonals[self.lines.shape[1] - 1].real)

    def _side_columns(self, width: int) -> tuple[tuple[int, int], ...]:
        """The last ``width`` columns are those just before the first (the DFT's period):
        one range, m from −width to width."""
        return ((-width, width),)

    def rows_power(self, rows: slice = slice(None)) -> float:
        """Σ|values|² over ``rows`` (no sample area), by Parseval along each row."""
        from benchcheck.wave.sums import power_sum

        return self.grid.nx * self.factor_power * power_sum(self.lines[rows])

    @cached_property
    def power(self) -> float:  # noqa: D102 - from the lines alone
        return self.rows_power() * self.grid.sample_area


def diagonal_sums(gram: np.ndarray) -> np.ndarray:
    """Σ_{j − j' = d} gram[j, j'] for d = −(held − 1) .. held − 1, in that order."""
    index = _lag_index(gram.shape[0]).ravel()
    size = 2 * gram.shape[0] - 1
    return (np.bincount(index, weights=gram.real.ravel(), minlength=size)
            + 1j * np.bincount(index, weights=gram.imag.ravel(), minlength=size))


def lag_sums(alpha: float, held: int, start: int, stop: int) -> np.ndarray:
    """S(d) = Σ_{m=start}^{stop−1} exp(−2πi α d m) for d = −(held − 1) .. held − 1: the
    geometric series, exp(−iθ (start + stop − 1)) sin(θ n) / sin θ with θ = π α d and n the
    count; S(0) = n; term by term at other lags where sin θ nearly vanishes."""
    theta = (np.pi * alpha) * _lags(held)
    count = stop - start
    denominator = np.sin(theta)
    with np.errstate(divide="ignore", invalid="ignore"):  # lag 0 is set below
        sums = np.exp((-1j * (start + stop - 1)) * theta) * (np.sin(count * theta) / denominator)
    sums[held - 1] = count
    near = np.abs(denominator) < _NEAR_PERIOD
    near[held - 1] = False
    if near.any():
        lags = _lags(held)[near]
        sums[near] = np.exp(-2j * np.pi * alpha * np.multiply.outer(lags, np.arange(start, stop))).sum(axis=1)
    return sums


@functools.lru_cache(maxsize=8)
def _lags(held: int) -> np.ndarray:
    """−(held − 1) .. held − 1 (read-only)."""
    lags = np.arange(-(held - 1), held)
    lags.flags.writeable = False
    return lags


@functools.lru_cache(maxsize=8)
def _lag_index(held: int) -> np.ndarray:
    """j − j' + held − 1 for a held x held matrix (read-only)."""
    index = np.subtract.outer(np.arange(held), np.arange(held)) + held - 1
    index.flags.writeable = False
    return index
