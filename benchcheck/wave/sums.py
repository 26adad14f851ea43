"""Power and overlap sums over a field's samples, fast and accurate in single precision.

``np.vdot`` reads a complex64 array once with no temporary (5-10x faster than
``(abs(u)**2).sum()``), but the BLAS kernel accumulates in single precision: over the 10⁶
samples of a 1024 x 1024 field a whole-array sum was measured 5e-5 off in relative terms.
Summing blocks of 2¹³ samples with ``np.vdot`` and the block results in double precision
keeps most of the speed and brings the error to a few 1e-7 (4.5e-7 on the 4f example; tested
against a double-precision ``math.fsum`` in tests/speed).
"""

from __future__ import annotations

import numpy as np

__all__ = ["BLOCK", "inner_product", "power_sum"]

#: Samples per np.vdot call: short enough that single-precision accumulation stays at a few
#: 1e-7 relative, and under the length from which OpenBLAS splits a dot product over threads
#: (10,000, from memory), so the sums never run BLAS threads beside the FFT's own threads;
#: long enough that the per-call overhead is a few percent.
BLOCK = 1 << 13


def inner_product(left: np.ndarray, right: np.ndarray) -> complex:
    """Σ conj(left)·right over all samples (complex, double-precision result).

    Parameters
    ----------
    left, right : numpy.ndarray
        Complex arrays of the same shape and dtype (complex64 or complex128).
    """
    left_flat, right_flat = np.ravel(left), np.ravel(right)
    if left_flat.dtype != right_flat.dtype:
        left_flat, right_flat = left_flat.astype(np.complex128), right_flat.astype(np.complex128)
    if left_flat.size != right_flat.size:
        raise ValueError(f"arrays of {left_flat.size} and {right_flat.size} samples have no inner product")
    if left_flat.dtype == np.complex128 or left_flat.size <= BLOCK:
        return complex(np.vdot(left_flat, right_flat))
    total = 0j
    for start in range(0, left_flat.size, BLOCK):
        total += complex(np.vdot(left_flat[start:start + BLOCK], right_flat[start:start + BLOCK]))
    return total


def power_sum(values: np.ndarray) -> float:
    """Σ|u|² over all samples (double-precision result), see the module docstring."""
    return inner_product(values, values).real
