"""Wavefront error against the target, and the Maréchal estimate of the Strehl ratio.

The residual phase is arg(f · conj(t)), the simulated field's phase minus the target's,
taken where the target carries light. Removed before the RMS: piston and tilt in x and y,
by an intensity-weighted least-squares fit of a + b·x + c·y (weights |f|²). What is left
is weighted by |f|² as well:

    σ_φ² = Σ |f|² (Δφ − a − b x − c y)² / Σ |f|²,    σ = σ_φ λ / (2π)  (m).

Focus is not removed: a defocused field counts against the target. The phase is taken
modulo 2π, so σ is meaningful while the residual stays within ±π over the beam (the
Maréchal regime, where the Strehl estimate holds anyway).

Strehl ratio by the Maréchal estimate in Mahajan's exponential form
S ≈ exp(−(2πσ/λ)²) (Mahajan, JOSA 72, 1258 (1982); the 1 − (2πσ/λ)² form is Born and Wolf,
Principles of Optics, §9.1).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.field import Field

from benchcheck_plugins.inputs import double_values, field_of, target_of

__all__ = ["residual_phase_rms", "rms_wavefront_error", "marechal_strehl", "rms_wavefront", "strehl", "metrics"]

_RMS_SOURCE = "intensity-weighted RMS of the phase difference, piston and tilt removed (least squares); Born and Wolf, Principles of Optics, §9.1"
_STREHL_SOURCE = "Maréchal estimate exp(−(2πσ/λ)²), Mahajan, JOSA 72, 1258 (1982)"

# Samples whose target intensity is below this fraction of its peak have no defined target
# phase (dark rings, the window's edge) and are left out.
_TARGET_FLOOR = 1e-6
# Least-squares passes on the re-wrapped residual after the first tilt estimate: the
# second pass settles what wraps near the beam's edge pulled in the first.
_FIT_PASSES = 2


def residual_phase_rms(field: Field, target: Field) -> float:
    """RMS phase difference (rad) from the target, intensity-weighted, piston and tilt removed.

    Parameters
    ----------
    field, target : Field
        Simulated and ideal fields on the same grid.

    Notes
    -----
    Tilt is first estimated from the phase of the summed products of neighbouring samples
    (the lag-one autocorrelation along x and y), which does not care about 2π wraps; then
    piston and tilt are refined by weighted least squares on the re-wrapped residual.
    """
    values = double_values(field)
    target_values = double_values(target)
    target_intensity = target_values.real**2 + target_values.imag**2
    mask = target_intensity > _TARGET_FLOOR * target_intensity.max()
    product = np.where(mask, values * np.conj(target_values), 0.0)
    pitch_x, pitch_y = field.grid.pitch
    slope_x = np.angle(np.vdot(product[:, :-1], product[:, 1:])) / pitch_x  # rad/m
    slope_y = np.angle(np.vdot(product[:-1, :], product[1:, :])) / pitch_y
    product = product[mask]
    weights = (values.real**2 + values.imag**2)[mask]  # |f|²: intensity weighting
    if not weights.sum() > 0:
        raise MetricUnavailable("the field carries no power where the target has light")
    x_2d, y_2d = (np.broadcast_to(axis, field.grid.shape) for axis in field.grid.mesh())
    x, y = x_2d[mask], y_2d[mask]
    measured_phase = np.angle(product)
    model = slope_x * x + slope_y * y
    # Piston: the amplitude-weighted circular mean of the tilt-free phase, so the wrapped
    # residual is centred on 0 before the fit.
    tilt_free = measured_phase - model
    amplitude = np.abs(product)
    model += math.atan2(np.dot(amplitude, np.sin(tilt_free)), np.dot(amplitude, np.cos(tilt_free)))
    # Centred, scaled coordinates keep the normal equations well conditioned.
    scale = max(float(np.ptp(x)), float(np.ptp(y)), 1e-300)
    design = np.column_stack([np.ones_like(x), (x - x.mean()) / scale, (y - y.mean()) / scale])
    # Weighted least squares through the 3 x 3 normal equations (A^T W A) c = A^T W φ.
    normal_matrix = design.T @ (design * weights[:, np.newaxis])
    for _ in range(_FIT_PASSES):
        residual = _wrapped(measured_phase - model)
        coefficients = scipy.linalg.solve(normal_matrix, design.T @ (weights * residual), assume_a="pos")
        model += design @ coefficients
    residual = _wrapped(measured_phase - model)
    return float(math.sqrt(np.dot(weights, residual**2) / weights.sum()))


def _wrapped(phase: np.ndarray) -> np.ndarray:
    """Phase folded into [−π, π)."""
    return np.mod(phase + math.pi, 2 * math.pi) - math.pi


def rms_wavefront_error(field: Field, target: Field) -> float:
    """RMS wavefront error (m): the RMS phase difference times λ / 2π."""
    return residual_phase_rms(field, target) * field.wavelength / (2 * math.pi)


def marechal_strehl(rms_error: float, wavelength: float) -> float:
    """Strehl ratio estimate exp(−(2πσ/λ)²) for RMS wavefront error σ (m) at λ (m).

    Mahajan, JOSA 72, 1258 (1982).
    """
    return math.exp(-((2 * math.pi * rms_error / wavelength) ** 2))


def rms_wavefront(context: MetricContext) -> float:
    """RMS wavefront error of the simulated field against the target (m)."""
    return rms_wavefront_error(field_of(context), target_of(context))


def strehl(context: MetricContext) -> float:
    """Maréchal Strehl estimate from the RMS wavefront error against the target."""
    field = field_of(context)
    return marechal_strehl(rms_wavefront_error(field, target_of(context)), field.wavelength)


def metrics() -> list[Metric]:
    """The wavefront family."""
    return [
        Metric("rms_wavefront", rms_wavefront, True, "m",
               "Intensity-weighted RMS wavefront error against the target, piston and x/y tilt "
               "removed.", _RMS_SOURCE),
        Metric("strehl", strehl, True, "",
               "Maréchal estimate exp(−(2πσ/λ)²) of the Strehl ratio from the RMS wavefront "
               "error σ.", _STREHL_SOURCE),
    ]
