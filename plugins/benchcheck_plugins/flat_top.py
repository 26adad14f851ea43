"""Flat-top quality after ISO 13694 (power density distribution): flatness, edge steepness,
plateau uniformity.

With E the power density (|E|² per sample), E_max its maximum and A(η) the area where
E > η·E_max (the clip-level irradiation area), ISO 13694:2018 defines (formulas checked
against a public summary of the standard; clause numbers not quoted here):

- flatness factor F = Ē(η) / E_max, with Ē(η) = P(η) / A(η) the mean power density over
  A(η) (P(η) the power there). 1 for an ideal top-hat. Clip level η: option
  ``plateau_fraction`` (default 0.5, our choice; the standard leaves it to the user).
- edge steepness s = [A(ε) − A(η)] / A(ε) for a lower level ε and an upper level η
  (options ``edge_lower`` = 0.1, ``edge_upper`` = 0.9, the 10 % and 90 % levels). 0 for
  vertical edges, larger for softer edges.
- plateau uniformity U_p = ΔE_FWHM / E_max, with ΔE_FWHM the full width at half maximum of
  the plateau peak of the histogram of power densities. 0 for an ideal top-hat.

Histogram details are ours: ``histogram_bins`` (default 200) bins over [0, E_max], only bins
at or above ``plateau_fraction``·E_max (so the dark background's peak at 0 is left out),
half-maximum crossings interpolated linearly between bin centres. The resolution is one bin:
an ideal top-hat gives U_p = 1 / histogram_bins.
"""

from __future__ import annotations

import numpy as np

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.field import Field

from benchcheck_plugins.inputs import double_values, field_of, float_option

__all__ = [
    "power_density",
    "clip_level_area",
    "flatness_factor",
    "edge_steepness_ratio",
    "plateau_uniformity_ratio",
    "flatness",
    "edge_steepness",
    "plateau_uniformity",
    "metrics",
]

_SOURCE = "ISO 13694:2018 (laser beam power density distribution)"
_DEFAULT_PLATEAU_FRACTION = 0.5
_DEFAULT_EDGE_LOWER = 0.1
_DEFAULT_EDGE_UPPER = 0.9
_DEFAULT_BINS = 200


def power_density(field: Field) -> np.ndarray:
    """|E|² per sample in double precision (W/m² in the field's scaling)."""
    values = double_values(field)
    density = values.real**2 + values.imag**2
    if not density.max() > 0:
        raise MetricUnavailable("the field carries no power in the window")
    return density


def _check_level(name: str, level: float) -> float:
    if not 0.0 <= level < 1.0:
        raise ValueError(f"option '{name}' must be in [0, 1), got {level}")
    return level


def clip_level_area(density: np.ndarray, level: float, sample_area: float) -> float:
    """Area (m²) where the power density exceeds ``level``·E_max (ISO 13694 A(η))."""
    return float(np.count_nonzero(density > level * density.max())) * sample_area


def flatness_factor(density: np.ndarray, level: float) -> float:
    """ISO 13694 flatness factor: mean power density above ``level``·E_max over E_max."""
    peak = density.max()
    above = density[density > _check_level("plateau_fraction", level) * peak]
    return float(above.mean() / peak)


def edge_steepness_ratio(density: np.ndarray, lower: float, upper: float) -> float:
    """ISO 13694 edge steepness [A(lower) − A(upper)] / A(lower) (dimensionless)."""
    _check_level("edge_lower", lower)
    _check_level("edge_upper", upper)
    if not lower < upper:
        raise ValueError(f"edge_lower ({lower}) must be below edge_upper ({upper})")
    area_lower = clip_level_area(density, lower, 1.0)
    area_upper = clip_level_area(density, upper, 1.0)
    return (area_lower - area_upper) / area_lower


def _crossing(center_a: float, count_a: float, center_b: float, count_b: float, half: float) -> float:
    """Where the line through (center_a, count_a), (center_b, count_b) reaches ``half``."""
    return center_a + (half - count_a) / (count_b - count_a) * (center_b - center_a)


def plateau_uniformity_ratio(density: np.ndarray, plateau_fraction: float, bins: int) -> float:
    """ISO 13694 plateau uniformity ΔE_FWHM / E_max from a histogram of power densities.

    Parameters
    ----------
    density : numpy.ndarray
        Power density samples.
    plateau_fraction : float
        Bins below this fraction of E_max are not part of the plateau peak.
    bins : int
        Histogram bins over [0, E_max]; the result resolves 1 / bins.
    """
    _check_level("plateau_fraction", plateau_fraction)
    if bins < 4:
        raise ValueError(f"option 'histogram_bins' must be at least 4, got {bins}")
    peak_density = density.max()
    counts, edges = np.histogram(density, bins=bins, range=(0.0, peak_density))
    width = edges[1] - edges[0]
    first = min(int(np.searchsorted(edges[:-1], plateau_fraction * peak_density)), bins - 1)
    # A zero bin above E_max closes the peak when it sits in the top bin.
    plateau_counts = np.append(counts[first:], 0).astype(float)
    centers = edges[first:] + 0.5 * width  # one more centre than bins: the padded bin
    peak = int(np.argmax(plateau_counts))
    half = 0.5 * plateau_counts[peak]
    below = plateau_counts < half
    left_candidates = np.flatnonzero(below[:peak])
    right_candidates = np.flatnonzero(below[peak + 1 :]) + peak + 1
    if left_candidates.size:
        j = left_candidates[-1]
        left = _crossing(centers[j], plateau_counts[j], centers[j + 1], plateau_counts[j + 1], half)
    else:  # the peak runs down to the plateau threshold: the width starts there
        left = edges[first]
    j = right_candidates[0]
    right = _crossing(centers[j - 1], plateau_counts[j - 1], centers[j], plateau_counts[j], half)
    return float((right - left) / peak_density)


def flatness(context: MetricContext) -> float:
    """ISO 13694 flatness factor of the simulated field."""
    level = float_option(context, "plateau_fraction", _DEFAULT_PLATEAU_FRACTION)
    return flatness_factor(power_density(field_of(context)), level)


def edge_steepness(context: MetricContext) -> float:
    """ISO 13694 edge steepness of the simulated field."""
    lower = float_option(context, "edge_lower", _DEFAULT_EDGE_LOWER)
    upper = float_option(context, "edge_upper", _DEFAULT_EDGE_UPPER)
    return edge_steepness_ratio(power_density(field_of(context)), lower, upper)


def plateau_uniformity(context: MetricContext) -> float:
    """ISO 13694 plateau uniformity of the simulated field."""
    level = float_option(context, "plateau_fraction", _DEFAULT_PLATEAU_FRACTION)
    bins = int(float_option(context, "histogram_bins", _DEFAULT_BINS))
    return plateau_uniformity_ratio(power_density(field_of(context)), level, bins)


def metrics() -> list[Metric]:
    """The flat-top family."""
    return [
        Metric("plateau_uniformity", plateau_uniformity, True, "",
               "FWHM of the plateau peak of the power-density histogram over the peak power "
               "density (0 = perfectly flat; resolution 1/histogram_bins).",
               _SOURCE + ", plateau uniformity", needs_target=False),
        Metric("edge_steepness", edge_steepness, True, "",
               "Share of the area above 10 % of the peak power density that lies below 90 % "
               "of it (0 = vertical edges).", _SOURCE + ", edge steepness", needs_target=False),
        Metric("flatness", flatness, True, "",
               "Mean power density above plateau_fraction (0.5) of the peak, over the peak "
               "(1 = perfectly flat).", _SOURCE + ", flatness factor", needs_target=False),
    ]
