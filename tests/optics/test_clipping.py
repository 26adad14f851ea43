"""Clipping by apertures against Siegman's closed form and direct 2-D quadrature."""

from __future__ import annotations

import math

import pytest
from scipy import integrate, stats

from benchcheck.optics.clipping import (
    _elliptical_beam_disc,
    annular_transmission,
    circular_transmission,
    rectangular_transmission,
)

# Reference: scipy.integrate.dblquad asked for 1e-11 absolute. The brief asks agreement
# to 1e-7; both sides are far better, so 1e-7 only catches real modelling errors.
QUADRATURE_AGREEMENT = 1e-7


def gaussian_intensity(x, y, w_x, w_y, x0, y0):
    """Unit-power elliptical Gaussian, w the 1/e² intensity radius (Siegman, Lasers, ch. 17)."""
    return (2 / (math.pi * w_x * w_y)) * math.exp(
        -2 * (x - x0) ** 2 / w_x**2 - 2 * (y - y0) ** 2 / w_y**2
    )


def disc_power_by_dblquad(radius, w_x, w_y, x0, y0):
    value, _ = integrate.dblquad(
        lambda y, x: gaussian_intensity(x, y, w_x, w_y, x0, y0),
        -radius,
        radius,
        lambda x: -math.sqrt(max(radius * radius - x * x, 0.0)),
        lambda x: math.sqrt(max(radius * radius - x * x, 0.0)),
        epsabs=1e-11,
        epsrel=1e-11,
    )
    return value


@pytest.mark.parametrize(
    ("radius_over_w", "expected"), [(1.0, 0.8647), (1.5, 0.9889), (math.pi / 2, 0.9928)]
)
def test_centred_circular_aperture_matches_siegman(radius_over_w, expected):
    # T = 1 - exp(-2a²/w²) (Siegman, Lasers, 1986): 0.8647 at a = w, 0.9889 at 1.5 w,
    # 0.9928 at D = π w. Quoted to 4 decimals: half a unit of the last one.
    w = 1.3e-3
    assert circular_transmission(radius_over_w * w, w, w) == pytest.approx(expected, abs=5e-5)


@pytest.mark.parametrize(
    ("radius", "w_x", "w_y", "x0", "y0"),
    [
        (1.0e-3, 1.0e-3, 1.0e-3, 0.4e-3, -0.3e-3),  # round, decentred (ncx2 path)
        (1.0e-3, 1.0e-3, 0.6e-3, 0.3e-3, -0.2e-3),  # elliptical, decentred
        (2.0e-3, 0.5e-3, 1.5e-3, 0.0, 0.0),  # elliptical, centred
        (1.0e-3, 0.3e-3, 2.0e-3, 0.9e-3, 0.5e-3),  # narrow beam near the rim
    ],
)
def test_circular_aperture_matches_direct_2d_quadrature(radius, w_x, w_y, x0, y0):
    expected = disc_power_by_dblquad(radius, w_x, w_y, x0, y0)
    assert circular_transmission(radius, w_x, w_y, x0, y0) == pytest.approx(
        expected, abs=QUADRATURE_AGREEMENT
    )


@pytest.mark.parametrize("offset_over_w", [0.0, 0.5, 1.7])
def test_elliptical_path_agrees_with_ncx2_for_a_round_beam(offset_over_w):
    # Two independent methods on a round beam: scipy.stats.ncx2 (displaced 2-D normal)
    # and the 1-D erf quadrature. The brief asks 1e-9 absolute for the quadrature.
    w, radius = 1e-3, 1.2e-3
    offset = offset_over_w * w
    reference = float(stats.ncx2.cdf((2 * radius / w) ** 2, 2, (2 * offset / w) ** 2))
    x0, y0 = offset * 0.6, offset * 0.8
    assert _elliptical_beam_disc(radius, w, w, x0, y0) == pytest.approx(reference, abs=1e-9)


def test_rectangular_aperture_matches_direct_2d_quadrature():
    # Separable erf product against scipy.integrate.dblquad over the rectangle.
    hx, hy, w_x, w_y, x0, y0 = 0.8e-3, 1.1e-3, 1.0e-3, 0.7e-3, 0.25e-3, -0.4e-3
    expected, _ = integrate.dblquad(
        lambda y, x: gaussian_intensity(x, y, w_x, w_y, x0, y0),
        -hx, hx, -hy, hy, epsabs=1e-11, epsrel=1e-11,
    )
    assert rectangular_transmission(hx, hy, w_x, w_y, x0, y0) == pytest.approx(
        expected, abs=QUADRATURE_AGREEMENT
    )


def test_annular_aperture_is_outer_disc_minus_stop():
    # Annulus against dblquad over the ring, decentred elliptical beam.
    outer, stop, w_x, w_y, x0, y0 = 2e-3, 0.5e-3, 1.5e-3, 1.2e-3, 0.2e-3, 0.1e-3
    expected = disc_power_by_dblquad(outer, w_x, w_y, x0, y0) - disc_power_by_dblquad(
        stop, w_x, w_y, x0, y0
    )
    assert annular_transmission(outer, stop, w_x, w_y, x0, y0) == pytest.approx(
        expected, abs=QUADRATURE_AGREEMENT
    )
    assert annular_transmission(outer, 0.0, w_x, w_y) == circular_transmission(outer, w_x, w_y)


def test_beam_far_outside_the_aperture_passes_nothing():
    # 20 beam radii off a 1 w aperture: the Gaussian tail is below 1e-300 (exp(-2·19²)).
    assert circular_transmission(1e-3, 1e-3, 0.5e-3, 20e-3, 0.0) == pytest.approx(0.0, abs=1e-15)
