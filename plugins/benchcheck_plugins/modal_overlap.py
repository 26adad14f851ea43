"""Mode purity: the normalised overlap of the simulated field with the target field.

purity = |<t|f>|² / (<t|t> <f|f>), with <a|b> = Σ conj(a)·b over the window: the fraction of
the field's power that couples into the target mode (power coupling by the overlap
integral, Joyce and DeLoach, Appl. Opt. 23, 4187 (1984); citation from memory). It is 1 only when the field is the
target up to a constant factor, and does not depend on either field's scaling.
"""

from __future__ import annotations

import numpy as np

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable

from benchcheck_plugins.inputs import double_values, field_of, target_of

__all__ = ["normalised_overlap", "mode_purity", "metrics"]

_SOURCE = "normalised overlap integral |<t|f>|²/(<t|t><f|f>) (power coupling into a mode), Joyce and DeLoach, Appl. Opt. 23, 4187 (1984) (citation from memory)"


def normalised_overlap(field_values: np.ndarray, target_values: np.ndarray) -> float:
    """|<t|f>|² / (<t|t><f|f>) of two sampled fields on the same grid (dimensionless).

    Parameters
    ----------
    field_values, target_values : numpy.ndarray
        Complex samples of the same shape; summed in double precision with ``np.vdot``.
    """
    field_flat = np.asarray(field_values, dtype=np.complex128).ravel()
    target_flat = np.asarray(target_values, dtype=np.complex128).ravel()
    field_norm = np.vdot(field_flat, field_flat).real
    target_norm = np.vdot(target_flat, target_flat).real
    if not (field_norm > 0 and target_norm > 0):
        raise MetricUnavailable("the field or the target carries no power")
    overlap = np.vdot(target_flat, field_flat)
    return float((overlap.real**2 + overlap.imag**2) / (field_norm * target_norm))


def mode_purity(context: MetricContext) -> float:
    """Normalised overlap of the simulated field with the target at this plane."""
    return normalised_overlap(double_values(field_of(context)), double_values(target_of(context)))


def metrics() -> list[Metric]:
    """The modal overlap family."""
    return [
        Metric("mode_purity", mode_purity, True, "",
               "Fraction of the field's power in the target mode (normalised overlap with the "
               "target field).", _SOURCE),
    ]
