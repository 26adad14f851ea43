"""The modulator device: quantisation, phase stroke away from the design wavelength, fringing."""

import numpy as np
import pytest
from scipy import fft
from scipy.special import erf

from benchcheck.errors import LayoutError
from benchcheck.wave.holograms import grating_phase, pixel_coordinates
from benchcheck.wave.modulator import (
    ModulatorDevice,
    displayed_modulation,
    displayed_phase,
    pixel_centers,
    quantise_phase,
)

PITCH = 8e-6
DESIGN = 1064e-9


def line_device(n_pixels, levels=None, crosstalk=0.0):
    return ModulatorDevice((PITCH, PITCH), (n_pixels, 1), phase_levels=levels, design_wavelength=DESIGN,
                           crosstalk=crosstalk)


def blaze(n_pixels, period):
    return grating_phase(pixel_coordinates((n_pixels, 1), (PITCH, PITCH)), period)


def orders(modulation, periods):
    """Efficiencies of orders 0 and +1 of a 1-D grating holding a whole number of periods."""
    spectrum = fft.fft(modulation[0]) / modulation.shape[1]
    return abs(spectrum[0]) ** 2, abs(spectrum[periods]) ** 2


@pytest.mark.parametrize("levels", [2, 3, 8, 16, 256])
def test_quantisation_gives_exactly_the_levels(levels):
    # a look-up table with `levels` entries over 2π (common practice): values 2πk/levels only,
    # each within half a step of the request (circularly)
    rng = np.random.default_rng(11)
    phase = rng.uniform(-20, 20, 200_000)
    shown = quantise_phase(phase, levels)
    np.testing.assert_array_equal(np.unique(shown), (2 * np.pi / levels) * np.arange(levels))
    error = np.angle(np.exp(1j * (shown - phase)))
    assert np.max(np.abs(error)) <= np.pi / levels + 1e-12


def test_blaze_at_the_design_wavelength_is_exact():
    # N = 8 pixel blaze on an 8-level panel at λ₀: the samples are exactly exp(2πik/N), so the
    # DFT puts all light in the first order (discrete Fourier identity), to rounding
    device = line_device(8 * 64, levels=8)
    hologram = blaze(8 * 64, 8)
    np.testing.assert_array_equal(displayed_phase(device, hologram, DESIGN), hologram)
    zero, first = orders(displayed_modulation(device, hologram, DESIGN), 64)
    assert first == pytest.approx(1.0, abs=1e-12) and zero < 1e-24


@pytest.mark.parametrize("wavelength", [532e-9, 1030e-9, 1550e-9])
def test_phase_depth_scales_as_design_over_wavelength(wavelength):
    # the drive sets a fixed retardance (length), so the phase scales as λ₀/λ (common practice;
    # liquid-crystal dispersion ignored)
    device = line_device(256, levels=None)
    hologram = blaze(256, 16)
    ratio = displayed_phase(device, hologram, wavelength)[hologram > 0] / hologram[hologram > 0]
    np.testing.assert_allclose(ratio, DESIGN / wavelength, rtol=1e-14)


def test_continuous_blaze_orders_follow_sinc_squared():
    # a blaze of depth α·2π sends sinc²(m − α) into order m (standard grating theory;
    # REFERENCES.md: λ₀ = 1064 nm at 1030 nm, α = 1.0330: η₁ = 0.9964, η₀ = 1.017e-3).
    # 512 pixels per period stand for a continuous blaze: the sampled staircase differs from
    # the continuous sinc by the Dirichlet factor: relative (π(m − α)/N)²/6 in amplitude,
    # twice that in efficiency, <= 1.4e-5 for m = 0.
    period, periods = 512, 8
    device = line_device(period * periods)
    zero, first = orders(displayed_modulation(device, blaze(period * periods, period), 1030e-9), periods)
    alpha = DESIGN / 1030e-9
    assert first == pytest.approx(np.sinc(1 - alpha) ** 2, rel=2e-5)
    assert zero == pytest.approx(np.sinc(alpha) ** 2, rel=2e-5)
    # the tabulated values, to their 4 digits
    assert first == pytest.approx(0.9964, abs=5e-5)
    assert zero == pytest.approx(1.017e-3, abs=5e-7)


@pytest.mark.parametrize("levels, published", [(2, 0.4053), (4, 0.8106), (8, 0.9496), (16, 0.9872)])
def test_n_level_blaze_first_order(levels, published):
    # N-level staircase of full-width steps: η₁ = sinc²(1/N) (Swanson, MIT Lincoln Laboratory
    # TR-854, 1989). Oversampling each pixel 128 times models the full-width step; the
    # sampled box differs from the continuous one by (π/(N·128))²/6 relative in amplitude
    # (<= 5e-5 in efficiency at N = 2); the published values carry 4 digits.
    periods = 4
    device = line_device(levels * periods, levels=levels)
    modulation = displayed_modulation(device, blaze(levels * periods, levels), DESIGN, oversample=128)
    _, first = orders(modulation[:1], periods)
    assert first == pytest.approx(np.sinc(1 / levels) ** 2, rel=1e-4)
    assert first == pytest.approx(published, abs=6e-5)


def test_fringing_smooths_a_phase_step_like_an_error_function():
    # a Gaussian kernel of standard deviation σ turns a step into
    # φ₁ + (φ₂ − φ₁)(1 + erf(x / σ√2))/2 (convolution of a step with a Gaussian). The model
    # samples the kernel on 64 sub-samples per pixel, σ = 16 samples: the midpoint-rule error
    # of the discrete cumulative sum is <= (1/24)·max|g'|·Δφ = 6e-5 rad, truncation at 5σ 1e-6.
    sigma_px, oversample = 0.25, 64
    device = line_device(16, crosstalk=sigma_px)
    step = np.where(np.arange(16) < 8, 1.0, 2.5)[np.newaxis, :]
    shown = displayed_phase(device, step, DESIGN, oversample=oversample)[0]
    x = (np.arange(16 * oversample) + 0.5) / oversample - 8.0  # sample centres, pixels from the edge
    expected = 1.0 + 1.5 * (1 + erf(x / (sigma_px * np.sqrt(2)))) / 2
    np.testing.assert_allclose(shown, expected, atol=1e-4)


def test_fringing_costs_blaze_efficiency():
    # fringing smooths the 2π flyback of a blaze and lowers its first order, more for wider
    # kernels (Persson et al., Opt. Express 20, 22334, 2012; Moser et al., Opt. Express 27,
    # 25046, 2019 report the trend; the numbers here are of this model only)
    efficiencies = []
    for crosstalk in (0.0, 0.1, 0.3):
        device = line_device(8 * 8, levels=256, crosstalk=crosstalk)
        modulation = displayed_modulation(device, blaze(64, 8), DESIGN, oversample=32)
        efficiencies.append(orders(modulation, 8)[1])
    # without fringing: Swanson's sinc²(1/8) (256 levels reproduce the 8 steps exactly; the
    # 32-fold oversampling of full-width pixels is good to (π/256)²/3 = 5e-5 relative)
    assert efficiencies[0] == pytest.approx(np.sinc(1 / 8) ** 2, rel=1e-4)
    assert efficiencies[0] > efficiencies[1] > efficiencies[2]


def test_one_sample_per_pixel_cannot_see_sub_pixel_fringing():
    # sampled at pixel centres, a kernel 0.1 pixel wide weighs the neighbours by
    # exp(−1/(2·0.1²)) ~ 2e-22: the displayed phase is the drive (REFERENCES.md trap: one sample
    # per pixel has no pixel envelope)
    device = line_device(64, crosstalk=0.1)
    hologram = blaze(64, 8)
    np.testing.assert_allclose(displayed_phase(device, hologram, DESIGN), hologram, atol=1e-15)


def test_pixel_centres_use_the_real_pitch():
    device = ModulatorDevice((8.1e-6, 7.9e-6), (6, 5))
    x, y = pixel_centers(device)
    np.testing.assert_allclose(x[0], (np.arange(6) - 3) * 8.1e-6, rtol=1e-15)
    np.testing.assert_allclose(y[:, 0], (np.arange(5) - 2) * 7.9e-6, rtol=1e-15)


def test_bad_devices_are_refused():
    with pytest.raises(LayoutError):
        ModulatorDevice((8e-6, 8e-6), (10, 10), fill_factor=1.2)
    with pytest.raises(LayoutError):
        ModulatorDevice((8e-6, 8e-6), (10, 10), phase_levels=1)
    with pytest.raises(LayoutError):
        ModulatorDevice((8e-6, 8e-6), (10, 10), dead_space="mirror")
    with pytest.raises(LayoutError):
        displayed_phase(ModulatorDevice((8e-6, 8e-6), (10, 10)), np.zeros((10, 9)), DESIGN)
