"""First and second moments of a field's intensity: centroid and D4σ widths (ISO 11146-1).

From the intensity E(x, y): centroid x̄ = ∫x E / ∫E; second moments σ_x² = ∫(x − x̄)² E / ∫E,
σ_y², σ_xy likewise; D4σ widths d_x = 4σ_x, d_y = 4σ_y (a TEM00 beam gives exactly 2w).
Moments are taken over the whole window (simulated fields carry no camera noise).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from benchcheck.wave.field import Field

__all__ = ["BeamMoments", "beam_moments"]


@dataclass(frozen=True)
class BeamMoments:
    """Centroid (m) and second moments (m²) of an intensity distribution."""

    centroid_x: float
    centroid_y: float
    variance_x: float
    variance_y: float
    covariance_xy: float

    @property
    def widths(self) -> tuple[float, float]:
        """D4σ widths along x and y (m): 4σ (ISO 11146-1)."""
        return 4.0 * math.sqrt(self.variance_x), 4.0 * math.sqrt(self.variance_y)

    @property
    def principal_widths(self) -> tuple[float, float]:
        """D4σ widths along the principal axes (m), smaller first."""
        matrix = np.array([[self.variance_x, self.covariance_xy],
                           [self.covariance_xy, self.variance_y]])
        smaller, larger = np.linalg.eigvalsh(matrix)
        return 4.0 * math.sqrt(max(smaller, 0.0)), 4.0 * math.sqrt(max(larger, 0.0))


def beam_moments(field: Field) -> BeamMoments:
    """First and second moments of |E|² over the window (ISO 11146-1).

    Sums are marginal projections (vector products), no loops over samples. The intensity
    stays in the field's precision (|E|² of a complex64 field in float32, one sample-sized
    array) and the projections are accumulated in double precision, so a complex64 field
    needs no double-precision copy (widths within 1e-6 relative of a double-precision
    computation, tested).
    """
    intensity = field.intensity
    x, y = field.grid.x, field.grid.y
    profile_x = intensity.sum(axis=0, dtype=np.float64)  # projection onto x
    profile_y = intensity.sum(axis=1, dtype=np.float64)
    total = profile_x.sum()
    if not total > 0:
        raise ValueError("the field carries no power in the window")
    centroid_x = float(profile_x @ x / total)
    centroid_y = float(profile_y @ y / total)
    dx, dy = x - centroid_x, y - centroid_y
    variance_x = float(profile_x @ dx**2 / total)
    variance_y = float(profile_y @ dy**2 / total)
    covariance_xy = float(dy @ np.dot(intensity, dx.astype(intensity.dtype)).astype(np.float64) / total)
    return BeamMoments(centroid_x, centroid_y, variance_x, variance_y, covariance_xy)
