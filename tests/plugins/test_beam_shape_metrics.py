"""Second-moment widths (ISO 11146-1) and flat-top quantities (ISO 13694) against closed
forms derived here for Gaussian, super-Gaussian, top-hat and tilted-plateau profiles."""

import math

import numpy as np
import pytest
import scipy.special

from benchcheck.metrics import MetricContext
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck_plugins.beam_moments import centroid_offset, d4sigma, d4sigma_x, d4sigma_y, ellipticity
from benchcheck_plugins.flat_top import (
    edge_steepness,
    edge_steepness_ratio,
    flatness,
    flatness_factor,
    plateau_uniformity,
    plateau_uniformity_ratio,
)

WAIST = 1.0e-3  # m
WAVELENGTH = 532e-9  # m


def context(values, grid, axis=(0.0, 0.0), options=None):
    return MetricContext(plane="work", wavelength=WAVELENGTH, field=Field(values, grid, WAVELENGTH, "work"),
                         axis=axis, options=options or {})


# --- ISO 11146-1 second moments -----------------------------------------------------------

# 16 samples per waist, ±8 waists: moments of a sampled Gaussian equal the integrals to far
# better than 1e-9 (Poisson summation: aliases fall as exp(−π²·16²/2)), and the window cuts
# at exp(−128).
MOMENT_GRID = Grid.square(256, WAIST / 16)


def gaussian_field(grid, waist_x, waist_y, center=(0.0, 0.0), rotation=0.0):
    x, y = grid.mesh()
    x, y = x - center[0], y - center[1]
    u = x * math.cos(rotation) + y * math.sin(rotation)
    v = -x * math.sin(rotation) + y * math.cos(rotation)
    return np.exp(-(u**2) / waist_x**2 - v**2 / waist_y**2).astype(np.complex128)


def test_d4sigma_of_a_gaussian_is_twice_the_waist():
    # ISO 11146-1: for TEM00, D4σ = 2w exactly (intensity exp(−2r²/w²) has σ = w/2).
    # 1e-9 relative: see the grid's comment.
    values = gaussian_field(MOMENT_GRID, WAIST, 0.6 * WAIST)
    ctx = context(values, MOMENT_GRID)
    assert d4sigma_x(ctx) == pytest.approx(2 * WAIST, rel=1e-9)
    assert d4sigma_y(ctx) == pytest.approx(2 * 0.6 * WAIST, rel=1e-9)
    assert d4sigma(ctx) == pytest.approx(2 * WAIST, rel=1e-9)


def test_centroid_offset_and_ellipticity_of_a_rotated_elliptical_gaussian():
    # The centroid is the beam centre; the ellipticity on principal axes (ISO 11146-1) is
    # w_min/w_max whatever the rotation. Same sampling argument: 1e-9.
    center = (0.3 * WAIST, -0.4 * WAIST)
    values = gaussian_field(MOMENT_GRID, 1.2 * WAIST, 0.8 * WAIST, center=center, rotation=math.radians(30))
    ctx = context(values, MOMENT_GRID)
    assert centroid_offset(ctx) == pytest.approx(0.5 * WAIST, rel=1e-9)
    assert ellipticity(ctx) == pytest.approx(0.8 / 1.2, rel=1e-9)


# --- ISO 13694 ----------------------------------------------------------------------------

# 100 samples per waist: the clip-level areas are pixel counts inside contours of radius
# ~100 samples, which match the contour's area to a few parts in 1e4 (measured ≤ 4e-4);
# tolerances of 2e-3 below cover that with margin.
ISO_GRID = Grid.square(512, WAIST / 100)
AREA_TOLERANCE = 2e-3


def super_gaussian(order):
    """Power density exp(−2 (r/w)^N): N = 2 is the Gaussian, large N tends to a top-hat."""
    x, y = ISO_GRID.mesh()
    return np.exp(-(np.hypot(x, y) / WAIST) ** order)  # field amplitude: its square is exp(−2(r/w)^N)


def expected_flatness(order, level):
    """Closed form for E = exp(−2(r/w)^N), derived here.

    A(η) = π w² (u/2)^{2/N}, u = ln(1/η); P(η) = π w² (2/N) 2^{−2/N} γ(2/N, u) (substituting
    t = 2(r/w)^N), so F = P/(A·E_max) = (2/N) Γ(2/N) P(2/N, u) / u^{2/N}, P the regularised
    lower incomplete gamma function (scipy.special.gammainc). N = 2: (1 − η)/ln(1/η).
    """
    a, u = 2.0 / order, math.log(1.0 / level)
    return a * scipy.special.gamma(a) * scipy.special.gammainc(a, u) / u**a


def expected_edge_steepness(order, lower=0.1, upper=0.9):
    """s = 1 − A(upper)/A(lower) = 1 − (ln(1/upper)/ln(1/lower))^{2/N}, derived here."""
    return 1.0 - (math.log(1 / upper) / math.log(1 / lower)) ** (2.0 / order)


@pytest.mark.parametrize("order", [2, 8, 20])
def test_super_gaussian_flatness_and_edge_steepness(order):
    ctx = context(super_gaussian(order), ISO_GRID)
    assert flatness(ctx) == pytest.approx(expected_flatness(order, 0.5), abs=AREA_TOLERANCE)
    assert edge_steepness(ctx) == pytest.approx(expected_edge_steepness(order), abs=AREA_TOLERANCE)


def test_gaussian_closed_forms_by_hand():
    # The general forms reduce for N = 2 to F = (1 − η)/ln(1/η) = 0.7213 at η = 0.5 and
    # s = 1 − ln(1/0.9)/ln(10) = 0.9542: check the derivation itself (rounding 1e-4).
    assert expected_flatness(2, 0.5) == pytest.approx(0.5 / math.log(2), abs=1e-12)
    assert expected_flatness(2, 0.5) == pytest.approx(0.7213, abs=1e-4)
    assert expected_edge_steepness(2) == pytest.approx(0.9542, abs=1e-4)


def test_flatness_option_changes_the_clip_level():
    # Same closed form at another clip level (option plateau_fraction).
    ctx = context(super_gaussian(2), ISO_GRID, options={"plateau_fraction": 0.2})
    assert flatness(ctx) == pytest.approx(expected_flatness(2, 0.2), abs=AREA_TOLERANCE)


def test_ideal_top_hat():
    # ISO 13694: an ideal top-hat has F = 1, s = 0 and U_p = 0; the histogram resolves one
    # bin, so U_p is at most 1/bins (this module's documented resolution; 1e-12 for rounding
    # of the bin edges). F and s are exact: every lit sample has the same value.
    x, y = ISO_GRID.mesh()
    values = (np.hypot(x, y) <= 2 * WAIST).astype(np.complex128)
    ctx = context(values, ISO_GRID, options={"histogram_bins": 200})
    assert flatness(ctx) == 1.0
    assert edge_steepness(ctx) == 0.0
    assert 0.0 <= plateau_uniformity(ctx) <= 1.0 / 200 + 1e-12


def test_plateau_uniformity_of_a_tilted_plateau():
    # A square plateau E = E0 (1 + a·x/h) on |x|, |y| ≤ h has power densities spread evenly
    # over [E0(1 − a), E0(1 + a)]: the histogram is a rectangle whose FWHM is its full width
    # 2a·E0, so U_p = 2a/(1 + a) (derived here from the ISO 13694 definition). Each
    # interpolated half-maximum crossing is good to a bin: tolerance two bins.
    a, half_side, bins = 0.1, 2 * WAIST, 400
    x, y = ISO_GRID.mesh()
    density = np.where((np.abs(x) <= half_side) & (np.abs(y) <= half_side), 1 + a * x / half_side, 0.0)
    assert plateau_uniformity_ratio(density, 0.5, bins) == pytest.approx(2 * a / (1 + a), abs=2.0 / bins)


def test_flat_top_functions_reject_bad_levels():
    density = np.ones((8, 8))
    with pytest.raises(ValueError):
        edge_steepness_ratio(density, 0.9, 0.1)
    with pytest.raises(ValueError):
        flatness_factor(density, 1.5)
