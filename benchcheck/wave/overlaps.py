"""Σ conj(target)·field for a study's fixed target, without making a held-column field.

A study's trials meet the same target where its metrics read one (made once, on the
nominal grid; the simulator marks it with ``mark_reused``), and a beam's target is close
to low rank: on the 4f example's camera at 512, 28 singular values carry all but 1e-12 of
its energy. The truncated SVD of a marked target (``DISCARDED_ENERGY`` of its energy left
out) is made at its first overlap with a ``ZoomedRowField`` and kept, and the overlap is
taken through it: products as large as the rank times the held columns, against the
window's zoomed DFT. By Cauchy–Schwarz the overlap moves by at most √(DISCARDED_ENERGY)
‖T‖‖E‖, 3.2e-7 of its scale, a mode purity by at most 6.3e-7. Which way an overlap goes
depends only on the trial and the target, never on how many trials a process has run, so
studies give the same numbers with any number of workers.
"""

from __future__ import annotations

import threading
import weakref

import numpy as np
import scipy.linalg

from benchcheck.wave.field import Field, values_made
from benchcheck.wave.sums import inner_product
from benchcheck.wave.zoomed_rows import ZoomedRowField

__all__ = ["DISCARDED_ENERGY", "mark_reused", "overlap"]

#: Share of the target's energy (Σσ²) the kept singular values may leave out.
DISCARDED_ENERGY = 1e-13

_reused: "weakref.WeakSet[Field]" = weakref.WeakSet()
_factors: "weakref.WeakKeyDictionary[Field, tuple]" = weakref.WeakKeyDictionary()
_lock = threading.Lock()


def mark_reused(target: Field) -> None:
    """Say that ``target`` will meet many trials' fields (a study's, on the nominal grid): its
    overlaps with held-column fields go through its truncated SVD (0.1-0.4 s, once)."""
    _reused.add(target)


def overlap(target: Field, field: Field) -> complex:
    """Σ conj(target)·field over the grid's samples (double-precision result); the two
    fields must be on grids of one shape."""
    if isinstance(field, ZoomedRowField) and not values_made(field) and target in _reused:
        return field.overlap_with_factors(*_target_factors(target))
    return inner_product(target.values, field.values)


def _target_factors(target: Field) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    with _lock:
        factors = _factors.get(target)
        if factors is None:
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
