"""A field held as the few columns whose zoomed DFT along x makes its rows.

Where a Fourier stage carries the field from a small iris onto a grid off the FFT path (a
study's trial landing on the nominal camera grid, where the target was made once), the x
step is a zoomed DFT of the box's few columns, a matrix product as large as the window times
the box's width (direct_dft.py). ``ZoomedRowField`` holds those columns and makes the product
only if something reads ``values``. Its power and its window check follow from the columns'
Gram matrix and sums of exp(−2πi α d m) over the output columns (geometric series), and its
overlap with a fixed target from the target's low-rank form (``wave/overlaps.py``).
"""

from __future__ import annotations

from collections.abc import Callable
from functools import cached_property

import numpy as np

from benchcheck.wave.direct_dft import dft_matrix, direct_dft
from benchcheck.wave.field import (HeldColumnsField, diagonal_sums, held_columns_gram, one_modulus_power,
                                   set_field_attributes)
from benchcheck.wave.grid import Grid

__all__ = ["ZoomedRowField"]


class ZoomedRowField(HeldColumnsField):
    """values[r, m] = factor[m] · Σ_j lines[r, j] exp(−2πi α (first + j) m), m < grid.nx.

    ``factor`` (the stage's output factor) must have one modulus (checked). ``gram``, where
    the stage has a shorter way to it: a function giving Σ over rows of lines[r, j]
    conj(lines[r, j']) in double precision, else it is made from the lines.
    """

    def __init__(self, lines: np.ndarray, first: int, alpha: float, factor: np.ndarray, grid: Grid,
                 wavelength: float, plane: str, gram: Callable[[], np.ndarray] | None = None) -> None:
        if lines.shape[0] != grid.ny or factor.shape != (grid.nx,):
            raise ValueError(f"lines {lines.shape} and factor {factor.shape} do not fit {grid.shape}")
        set_field_attributes(self, lines=lines, first=int(first), alpha=float(alpha), factor=factor,
                             factor_power=one_modulus_power(factor), grid=grid, wavelength=wavelength,
                             plane=plane, support=None, gram_from=gram)

    @cached_property
    def values(self) -> np.ndarray:  # noqa: D102 - the window, transformed now
        window = direct_dft(np.ascontiguousarray(self.lines), self.alpha, self.grid.nx, 1, self.first)
        window *= self.factor[np.newaxis, :]
        return window

    def with_lines(self, lines: np.ndarray, gram: Callable[[], np.ndarray] | None) -> "ZoomedRowField":
        return ZoomedRowField(lines, self.first, self.alpha, self.factor, self.grid, self.wavelength, self.plane, gram)

    def rows_power(self, rows: slice = slice(None)) -> float:
        """Σ|values|² over ``rows`` (no sample area), without the window."""
        diagonals = self.gram_diagonals if rows == slice(None) else diagonal_sums(held_columns_gram(self.lines[rows]))
        return self._all_columns_power(diagonals)

    @cached_property
    def power(self) -> float:  # noqa: D102 - from the lines alone
        return self.rows_power() * self.grid.sample_area

    def overlap_with_factors(self, rows: np.ndarray, weights: np.ndarray, columns: np.ndarray) -> complex:
        """Σ conj(T)·values for a target T = Σ_k weights[k] rows[:, k] columns[:, k]ᴴ (a truncated
        SVD), without the window: Σ_k w_k (rows_kᴴ lines)·(K (factor ∘ columns_k)), with K the
        zoomed DFT's matrix (held columns x window columns), in double precision."""
        along_rows = rows.conj().T @ self.lines.astype(np.complex128)  # [k, j]
        kernel = dft_matrix(self.lines.shape[1], self.grid.nx, self.alpha, self.first, np.complex128)
        along_columns = kernel @ (self.factor.astype(np.complex128)[:, np.newaxis] * columns)  # [j, k]
        return complex(np.einsum("k,kj,jk->", weights, along_rows, along_columns))
