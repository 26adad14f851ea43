"""Mode purity: the normalised overlap of the simulated field with the target field.

purity = |<t|f>|² / (<t|t> <f|f>), with <a|b> = Σ conj(a)·b over the window: the fraction of
the field's power that couples into the target mode (power coupling by the overlap
integral, Joyce and DeLoach, Appl. Opt. 23, 4187 (1984); citation from memory). It is 1 only when the field is the
target up to a constant factor, and does not depend on either field's scaling.
"""

from __future__ import annotations

import numpy as np

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.overlaps import overlap
from benchcheck.wave.sums import inner_product, power_sum

from benchcheck_plugins.inputs import field_of, target_of

__all__ = ["normalised_overlap", "mode_purity", "metrics"]

_SOURCE = "normalised overlap integral |<t|f>|²/(<t|t><f|f>) (power coupling into a mode), Joyce and DeLoach, Appl. Opt. 23, 4187 (1984) (citation from memory)"


def normalised_overlap(field_values: np.ndarray, target_values: np.ndarray) -> float:
    """|<t|f>|² / (<t|t><f|f>) of two sampled fields on the same grid (dimensionless).

    Parameters
    ----------
    field_values, target_values : numpy.ndarray
        Complex samples of the same shape, in their own precision: complex64 fields are summed
        blockwise with ``np.vdot`` and the blocks in double precision
        (:mod:`benchcheck.wave.sums`; within 1e-6 of a double-precision sum, tested), with
        no double-precision copy of either field.
    """
    field_norm = power_sum(field_values)
    target_norm = power_sum(target_values)
    if not (field_norm > 0 and target_norm > 0):
        raise MetricUnavailable("the field or the target carries no power")
    product = inner_product(target_values, field_values)
    return float((product.real**2 + product.imag**2) / (field_norm * target_norm))


def mode_purity(context: MetricContext) -> float:
    """Normalised overlap of the simulated field with the target at this plane.

    The same sums as :func:`normalised_overlap`; each field's own power sum is the one it
    keeps (``Field.power``), so a study's fixed target is summed once.
    """
    field, target = field_of(context), target_of(context)
    field_norm = field.power / field.grid.sample_area
    target_norm = target.power / target.grid.sample_area
    if not (field_norm > 0 and target_norm > 0):
        raise MetricUnavailable("the field or the target carries no power")
    if field.grid.shape != target.grid.shape:
        raise MetricUnavailable(f"the target's grid {target.grid.shape} is not the field's {field.grid.shape}")
    product = overlap(target, field)  # a study's held-column field is not made (wave/overlaps.py)
    return float((product.real**2 + product.imag**2) / (field_norm * target_norm))


def metrics() -> list[Metric]:
    """The modal overlap family."""
    return [
        Metric("mode_purity", mode_purity, True, "",
               "Fraction of the field's power in the target mode (normalised overlap with the "
               "target field).", _SOURCE),
    ]
