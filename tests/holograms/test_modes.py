"""Laguerre-Gauss and Hermite-Gauss modes: normalisation, orthogonality, second moments."""

from math import sqrt

import numpy as np
import pytest
from scipy.integrate import trapezoid

from benchcheck.wave.modes import hermite_gauss, laguerre_gauss, mode_peak_amplitude

WAIST = 1.0e-3
# ±8 w holds every mode below to e^-2·(8/2.5)² ≈ 1e-9 of its peak intensity, and w/32
# sampling makes the trapezoid rule spectrally accurate for Gaussian-weighted polynomials:
# errors ~ exp(−π² (w/h)² / 2), far below 1e-10.
AXIS = np.linspace(-8 * WAIST, 8 * WAIST, 513)
X, Y = AXIS[np.newaxis, :], AXIS[:, np.newaxis]

LG_ORDERS = [(0, 0), (0, 1), (0, -1), (1, 0), (1, 2), (2, -1), (0, 3)]
HG_ORDERS = [(0, 0), (1, 0), (0, 1), (2, 1), (3, 0), (1, 3)]


def integrate(values):
    return trapezoid(trapezoid(values, AXIS, axis=1), AXIS, axis=0)


def test_fundamental_modes_are_the_normalised_gaussian():
    # TEM00 at the waist: sqrt(2/π)/w exp(−r²/w²) (Siegman, Lasers, 1986, ch. 16)
    gaussian = sqrt(2 / np.pi) / WAIST * np.exp(-(X**2 + Y**2) / WAIST**2)
    np.testing.assert_allclose(laguerre_gauss(X, Y, 0, 0, WAIST), gaussian, rtol=1e-12, atol=0)
    np.testing.assert_allclose(hermite_gauss(X, Y, 0, 0, WAIST), gaussian, rtol=1e-12, atol=0)


@pytest.mark.parametrize("family, orders", [("lg", LG_ORDERS), ("hg", HG_ORDERS)])
def test_modes_are_orthonormal(family, orders):
    # orthonormal bases of the paraxial wave equation (Siegman, Lasers, 1986, ch. 16),
    # checked by scipy.integrate.trapezoid on the grid above (tolerance: see AXIS)
    mode = laguerre_gauss if family == "lg" else hermite_gauss
    fields = [mode(X, Y, a, b, WAIST) for a, b in orders]
    gram = np.array([[integrate(np.conj(u) * v) for v in fields] for u in fields])
    np.testing.assert_allclose(gram, np.eye(len(orders)), atol=1e-10)


@pytest.mark.parametrize("p, l", LG_ORDERS)
def test_laguerre_gauss_second_moment_radius(p, l):
    # W = sqrt(2 <r²>) = w sqrt(2p + |l| + 1): Phillips and Andrews, Appl. Opt. 22, 643 (1983)
    intensity = np.abs(laguerre_gauss(X, Y, p, l, WAIST)) ** 2
    mean_r2 = integrate((X**2 + Y**2) * intensity) / integrate(intensity)
    assert sqrt(2 * mean_r2) == pytest.approx(WAIST * sqrt(2 * p + abs(l) + 1), rel=1e-10)


@pytest.mark.parametrize("m, n", HG_ORDERS)
def test_hermite_gauss_second_moment_radii(m, n):
    # W_x = w sqrt(2m+1), W_y = w sqrt(2n+1) (Siegman, Lasers, 1986; the chapter is from memory)
    intensity = np.abs(hermite_gauss(X, Y, m, n, WAIST)) ** 2
    power = integrate(intensity)
    assert 2 * sqrt(integrate(X**2 * intensity) / power) == pytest.approx(WAIST * sqrt(2 * m + 1), rel=1e-10)
    assert 2 * sqrt(integrate(Y**2 * intensity) / power) == pytest.approx(WAIST * sqrt(2 * n + 1), rel=1e-10)


def test_laguerre_gauss_carries_its_charge_in_the_phase():
    # LG(p, l) has azimuthal phase exp(+i l φ): on a circle the phase winds l times
    angle = np.linspace(0, 2 * np.pi, 721)
    values = laguerre_gauss(0.7 * WAIST * np.cos(angle), 0.7 * WAIST * np.sin(angle), 0, -3, WAIST)
    winding = np.sum(np.angle(values[1:] / values[:-1])) / (2 * np.pi)
    assert winding == pytest.approx(-3, abs=1e-9)


@pytest.mark.parametrize("l", [1, 2, 5])
def test_peak_amplitude_of_a_doughnut_mode(l):
    # |LG(0, l)| ∝ r^|l| exp(−r²/w²) peaks at r = w sqrt(|l|/2) (derivative set to zero)
    exact = abs(laguerre_gauss(WAIST * sqrt(l / 2), 0.0, 0, l, WAIST))
    # the dense profile has spacing ~1.5e-4 w; the peak is quadratic, so the error is ~1e-8
    assert mode_peak_amplitude("lg", (0, l), WAIST) == pytest.approx(exact, rel=1e-7)


def test_bad_orders_are_refused():
    with pytest.raises(ValueError):
        laguerre_gauss(X, Y, -1, 0, WAIST)
    with pytest.raises(ValueError):
        hermite_gauss(X, Y, 1.5, 0, WAIST)
