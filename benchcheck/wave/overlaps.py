"""Σ conj(target)·field for a study's fixed target, without making a held-column field.

A study's trials meet the same target (made once, on the nominal grid), and a beam's target
is close to low rank: on the 4f example's camera at 512, 28 singular values carry all but
1e-12 of its energy. Once a target has served ``FACTOR_AFTER_USES`` overlaps, its truncated
SVD is kept (``DISCARDED_ENERGY`` of its energy left out), and the overlap with a
``ZoomedRowField`` is taken through it: products as large as the rank times the held
columns, against the window's zoomed DFT. By Cauchy–Schwarz the overlap then moves by at
most √(DISCARDED_ENERGY) ‖T‖‖E‖, 3.2e-7 of its scale, a mode purity by at most 6.3e-7.
"""

from __future__ import annotations

import threading
import weakref

import numpy as np
import scipy.linalg

from benchcheck.wave.field import Field, values_made
from benchcheck.wave.sums import inner_product
from benchcheck.wave.zoomed_rows import ZoomedRowField

__all__ = ["FACTOR_AFTER_USES", "DISCARDED_ENERGY", "overlap"]

#: Overlaps a target serves before its SVD is made: the SVD of a 1024² target took about
#: 0.4 s here, the overlaps it saves 2-3 ms each, so short studies never pay for it.
FACTOR_AFTER_USES = 64
#: Share of the target's energy (Σσ²) the kept singular values may leave out.
DISCARDED_ENERGY = 1e-13

_uses: "weakref.WeakKeyDictionary[Field, int]" = weakref.WeakKeyDictionary()
_factors: "weakref.WeakKeyDictionary[Field, tuple]" = weakref.WeakKeyDictionary()
_lock = threading.Lock()


def overlap(target: Field, field: Field) -> complex:
    """Σ conj(target)·field over the grid's samples (double-precision result); the two
    fields must be on grids of one shape."""
    if isinstance(field, ZoomedRowField) and not values_made(field):
        factors = _target_factors(target)
        if factors is not None:
            return field.overlap_with_factors(*factors)
    return inner_product(target.values, field.values)


def _target_factors(target: Field):
    """(rows, weights, columns) of the target's truncated SVD once it has served
    ``FACTOR_AFTER_USES`` overlaps, else None."""
    with _lock:
        factors = _factors.get(target)
        if factors is not None:
            return factors
        _uses[target] = uses = _uses.get(target, 0) + 1
        if uses < FACTOR_AFTER_USES:
            return None
        _factors[target] = factors = _truncated_svd(target.values)
        return factors


def _truncated_svd(values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(U_r, σ_r, V_r) with values ≈ U_r diag(σ_r) V_rᴴ, r the fewest singular values that
    leave out at most DISCARDED_ENERGY of Σσ² (LAPACK's SVD, in double precision)."""
    rows, weights, columns_h = scipy.linalg.svd(values.astype(np.complex128), full_matrices=False,
                                                check_finite=False)
    energy = weights**2
    left_out = np.cumsum(energy[::-1])[::-1]  # energy of σ_k and all after it
    rank = max(1, int(np.count_nonzero(left_out > DISCARDED_ENERGY * energy.sum())))
    return rows[:, :rank].copy(), weights[:rank].copy(), columns_h[:rank].conj().T.copy()
