"""The closed-form weight of one OAM charge (charge_weight.py) against references outside it:
scipy.integrate quadrature of Lommel's integral and of the spiral spectrum of exact
Laguerre-Gauss modes (evaluated on rings from their formula, no interpolation), and the ring
computation on the 4f example's camera fields."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.fft
import scipy.integrate
import scipy.special

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.metrics import MetricContext, MetricUnavailable
from benchcheck.tolerance.dofs import resolve_dofs
from benchcheck.tolerance.samplers import Sampler
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck_plugins import oam_purity as metric
from benchcheck_plugins.charge_weight import (_bessel_neighbours, _charge_power, _charge_power_on_lattice,
                                              band_centroid, charge_weight, field_band)
from benchcheck_plugins.oam_purity import oam_purity
from benchcheck_plugins.spiral_spectrum import spiral_spectrum
from tests.plugins.test_overlap_metrics import GRID, WAIST, WAVELENGTH, laguerre_gauss, laguerre_gauss_at
from tests.speed.conftest import scaled_relay_text


def lommel_by_quadrature(order, a, b, outer):
    return scipy.integrate.quad(lambda r: scipy.special.jv(order, a * r) * scipy.special.jv(order, b * r) * r,
                                0, outer, epsabs=0, epsrel=1e-12, limit=400)[0]


@pytest.mark.parametrize("order", [0, 1, -3])
def test_lommel_integrals_match_quadrature(order):
    # The formulas in charge_weight.py are quoted from memory (Watson 1944 §5.11; DLMF
    # §10.22(ii)): check them against quadrature, for distinct radii, a zero radius and radii
    # 1e-7 apart (where the a ≠ b form loses digits to cancellation). With one-hot and
    # two-hot coefficient vectors the quadratic form returns a diagonal entry and
    # L_gg + L_hh + 2 L_gh. Tolerance 1e-9 relative: quadrature at 1e-12 and the
    # cancellation (1e-16 / 1e-7 · ρR ≈ 1e-9 at worst).
    outer = 1.3
    rho = np.array([0.0, 2.0, 5.0, 7.1, 7.1 * (1 + 1e-7)])
    for g in range(rho.size):
        one = np.zeros(rho.size, complex)
        one[g] = 1.0
        assert _charge_power(one, rho, order, outer) == pytest.approx(
            lommel_by_quadrature(order, rho[g], rho[g], outer), rel=1e-9, abs=1e-15)
    for g, h in [(0, 2), (1, 2), (2, 4), (3, 4)]:
        two = np.zeros(rho.size, complex)
        two[[g, h]] = 1.0
        expected = sum(lommel_by_quadrature(order, rho[i], rho[j], outer) for i in (g, h) for j in (g, h))
        assert _charge_power(two, rho, order, outer) == pytest.approx(expected, rel=1e-9, abs=1e-15)


@pytest.mark.parametrize("order", [0, 1, -2])
def test_lommel_form_on_a_square_lattice_matches_quadrature(order):
    # Radii 2π·step·√k on a square frequency lattice (k = i² + j²): the Cauchy sums become one
    # convolution over k. The quadratic form for random coefficients against
    # ∫₀ᴿ |Σ_g c_g J_n(ρ_g r)|² r dr by scipy.integrate.quad at 1e-12. Tolerance 1e-9
    # relative: the FFT convolution's rounding (about 1e-15 of the largest terms) is far below
    # the quadrature's own.
    step, outer = 0.31, 2.2
    keys = np.array([0, 1, 2, 4, 5, 8, 9, 13, 25])
    rho = 2 * math.pi * step * np.sqrt(keys)
    rng = np.random.default_rng(7)
    coefficients = rng.standard_normal(keys.size) + 1j * rng.standard_normal(keys.size)
    expected = scipy.integrate.quad(lambda r: abs(coefficients @ scipy.special.jv(order, rho * r)) ** 2 * r,
                                    0, outer, epsabs=0, epsrel=1e-12, limit=400)[0]
    assert _charge_power_on_lattice(coefficients, keys, step, order, outer) == pytest.approx(expected, rel=1e-9)
    assert _charge_power(coefficients, rho, order, outer) == pytest.approx(expected, rel=1e-9)


def spiral_weights_by_quadrature(p, l, center, axis, outer, charges, angles=256):
    """C_m / Σ C about ``axis`` within ``outer`` for LG_p^l centred at ``center``: the angular
    harmonics by an FFT of the mode's own values on each ring (the trapezoidal rule, exact far
    below 1e-12 for the few charges a displaced LG carries with 256 angles), the radial
    integrals by scipy.integrate.quad (Torner, Torres and Carrasco, Opt. Express 13, 873 (2005))."""
    angle = 2 * math.pi * np.arange(angles) / angles

    def ring_power(r):
        x = axis[0] + r * np.cos(angle) - center[0]
        y = axis[1] + r * np.sin(angle) - center[1]
        return np.abs(scipy.fft.fft(laguerre_gauss_at(x, y, p, l)) / angles) ** 2 * r

    def radial(function):
        return scipy.integrate.quad(function, 0, outer, epsabs=0, epsrel=1e-11, limit=400)[0]

    total = radial(lambda r: ring_power(r).sum())
    return [radial(lambda r, m=m: ring_power(r)[m % angles]) / total for m in charges]


@pytest.mark.parametrize("grid", [GRID, Grid((240, 256), (WAIST / 16, WAIST / 16))], ids=["square", "oblong"])
@pytest.mark.parametrize("outer, tolerance, ring_tolerance", [(7.5 * WAIST, 1e-8, 1e-5), (1.5 * WAIST, 2e-7, 5e-5)])
def test_charge_weights_of_a_displaced_higher_order_mode_match_quadrature(outer, tolerance, ring_tolerance, grid):
    # LG(2,−3) displaced from an axis that is itself off the grid's centre: the weights of
    # four charges against the quadrature above, within a disc holding the whole beam and
    # within one that cuts through it (where the disc's own transform and Lommel's integral
    # at a finite radius both matter). The closed form is exact for the band it keeps, which
    # leaves out under 1e-12 of this Gaussian-tailed spectrum: 1e-8 where the disc holds the
    # beam (measured up to 4e-10); where it cuts the beam a weight moves by about the square
    # root of that share (measured 3e-8), so 2e-7. On a square window the frequencies form a
    # square lattice (radii grouped by i² + j²); on an oblong one they do not (the general path).
    center, axis = (0.3 * WAIST, -0.2 * WAIST), (0.1 * WAIST, 0.05 * WAIST)
    charges = [-3, -2, 0, 1]
    expected = spiral_weights_by_quadrature(2, -3, center, axis, outer, charges)
    field = Field(laguerre_gauss(grid, 2, -3, center=center), grid, WAVELENGTH)
    for charge, weight in zip(charges, expected):
        assert charge_weight(field_band(field), axis, charge, outer) == pytest.approx(weight, abs=tolerance)
    # The ring computation, on the same field, within its own accuracy: cubic splines at 16
    # samples per waist on a mode with three radial nodes, measured up to 3.6e-6 with the
    # whole beam (1e-5) and 1.7e-5 with the disc cutting it (5e-5).
    found, weights = spiral_spectrum(field, axis, outer)
    for charge, weight in zip(charges, expected):
        assert weights[found == charge][0] == pytest.approx(weight, abs=ring_tolerance)


def test_a_field_with_a_wide_band_falls_back_to_the_rings():
    # White noise fills the whole band: the closed form declines (no band) and the metric takes
    # the ring computation, whose weights of all charges sum to one (Parseval on each ring).
    rng = np.random.default_rng(3)
    grid = Grid.square(64, WAIST / 8)
    values = rng.standard_normal((64, 64)) + 1j * rng.standard_normal((64, 64))
    field = Field(values, grid, WAVELENGTH)
    assert field_band(field) is None
    context = MetricContext(plane="work", wavelength=WAVELENGTH, field=field, axis=(0.0, 0.0), intended_charge=1)
    charges, weights = spiral_spectrum(field, (0.0, 0.0))
    assert oam_purity(context) == pytest.approx(weights[charges == 1][0], abs=1e-12)


@pytest.mark.slow
def test_camera_fields_of_the_4f_example_agree_with_the_rings(tmp_path, monkeypatch):
    # Fields past the iris carry stray light over the whole window, so the band's box, not
    # the disc, limits what is kept. The example's own OAM spec (about the beam's axis) on the
    # nominal bench and three drawn trials at 256 pixels, by the closed form and, with it
    # turned off, by the rings. 2e-6: the ring computation's own accuracy (cubic splines and
    # Simpson's rule: 1.6e-6 against closed forms, test_overlap_metrics.py); measured ≤ 5e-7.
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(256))
    layout = load_layout(path)
    perturbations = [None, *Sampler(tuple(resolve_dofs(layout)), "random", 5).perturbations(0, 3)]
    used = []
    closed_form = metric.field_band
    monkeypatch.setattr(metric, "field_band", lambda *args: used.append(closed_form(*args)) or used[-1])
    closed = [make_evaluator(layout).evaluate(p, wave=True).metrics["cam.oam_purity"] for p in perturbations]
    assert len(used) == len(perturbations) and all(band is not None for band in used)
    monkeypatch.setattr(metric, "field_band", lambda *args: None)
    by_rings = [make_evaluator(layout).evaluate(p, wave=True).metrics["cam.oam_purity"] for p in perturbations]
    assert closed == pytest.approx(by_rings, abs=2e-6)
    assert min(by_rings) < 0.999  # the trials do move light out of the intended charge


def test_centroid_from_the_band_matches_the_grid_sums():
    # A displaced LG(0,1) has its centroid at its centre (|E|² is symmetric about it); the
    # grid sums of the ring path find it to float rounding. The band's closed form leaves out
    # under 1e-12 of the power; weighted by x, its cross term with the rest could move the
    # centroid by up to 2 √share times the half-width (8 waists), 1.6e-5 waist, but this
    # smooth spectrum's high end is far weaker (measured 2e-12 waist): 1e-9 waist.
    center = (0.3 * WAIST, -0.2 * WAIST)
    field = Field(laguerre_gauss(GRID, 0, 1, center=center), GRID, WAVELENGTH)
    from_band = band_centroid(field_band(field))
    from_grid = metric._centroid(field)
    assert from_grid == pytest.approx(center, abs=1e-12 * WAIST)
    assert from_band == pytest.approx(center, abs=1e-9 * WAIST)


@pytest.mark.parametrize("about", ["target", "beam"])
def test_a_dark_field_has_no_oam_purity(about):
    # No light, no spectrum: the metric says so instead of returning a number (common practice).
    dark = Field(np.zeros(GRID.shape, complex), GRID, WAVELENGTH)
    context = MetricContext(plane="work", wavelength=WAVELENGTH, field=dark, axis=(0.0, 0.0), intended_charge=1,
                            options={"about": about})
    with pytest.raises(MetricUnavailable, match="no power"):
        oam_purity(context)
    with pytest.raises(MetricUnavailable, match="no power"):
        spiral_spectrum(context.field, (0.0, 0.0))


@pytest.mark.parametrize("order", [0, 1, 3])
def test_bessel_neighbours_match_the_general_bessel_function(order):
    # J₂ by upward recurrence from J₀ and J₁ where z ≥ 2 (NIST DLMF 10.6.1): against
    # scipy.special.jv, across zero, the switch at z = 2 and far past the order. 2e-15:
    # a few roundings of values of order one.
    z = np.concatenate([[0.0, 1e-8, 1.999999, 2.0, 2.000001], np.linspace(0.01, 80.0, 4001)])
    for got, n in zip(_bessel_neighbours(order, z), (order - 1, order, order + 1)):
        assert np.max(np.abs(got - scipy.special.jv(n, z))) < 2e-15


def test_stray_light_that_fills_the_first_box_widens_it(monkeypatch):
    # A charge-1 vortex under faint stray light (1e-4 of its peak amplitude, a speckle whose
    # spectrum falls as 1/f², as past a hard edge): the outermost frequencies of the first box
    # (1.25 times each axis's cut) still carry more than 1e-12 of the power, so no disc fits in
    # it (0.7 % of the 4f example's trials at 1024 raised IndexError here). The box grows until
    # the disc fits; the weight then agrees with the ring computation within its own accuracy
    # (2e-7 to 1.6e-6 against closed forms, spectral_band.py; measured 7e-10).
    from benchcheck_plugins import charge_weight as module

    n = 128
    grid = Grid.square(n, 10e-6)
    x, y = grid.mesh()
    waist = 120e-6
    vortex = (x + 1j * y) / waist * np.exp(-(x**2 + y**2) / waist**2)
    rng = np.random.default_rng(1)
    frequency = np.hypot(*np.meshgrid(scipy.fft.fftfreq(n), scipy.fft.fftfreq(n)))
    stray = scipy.fft.ifft2(scipy.fft.fft2(rng.standard_normal((n, n)) + 1j * rng.standard_normal((n, n)))
                            / (1 + (frequency / 0.05) ** 2))
    stray *= 1e-4 * np.abs(vortex).max() / np.abs(stray).max()
    field = Field((vortex + stray).astype(np.complex64), grid, WAVELENGTH, "cam")
    monkeypatch.setattr(module, "_BOX_MARGINS", module._BOX_MARGINS[:1])
    assert field_band(field) is None  # the first box alone: no disc fits in it
    monkeypatch.undo()
    band = field_band(field)
    assert band is not None
    axis = (0.0, 0.0)
    charges, weights = spiral_spectrum(field, axis)
    outer = min(-grid.x[0], grid.x[-1], -grid.y[0], grid.y[-1])
    assert charge_weight(band, axis, 1, outer) == pytest.approx(weights[charges == 1][0], abs=2e-6)
