"""Complex-amplitude encodings: the first order of the carrier carries the wanted field.

Each check writes a long 1-D grating (a whole number of carrier periods, so the first order
falls on one FFT bin) for a constant target A·exp(iΦ) and reads the first-order Fourier
coefficient c1 = FFT[periods] / samples.
"""

import numpy as np
import pytest
from scipy import fft
from scipy.special import j1

from benchcheck.wave.encodings import arrizon_depth, encode, resolve_encoding

PERIODS = 8
TARGET_PHASE = 0.7  # Φ, radians; any value works
AMPLITUDES = np.linspace(0.0, 1.0, 21)


def first_order(method, amplitude, samples_per_period):
    k = np.arange(PERIODS * samples_per_period)
    carrier = 2 * np.pi * k / samples_per_period
    psi = encode(np.full(k.shape, amplitude * np.exp(1j * TARGET_PHASE)), carrier, method)
    spectrum = fft.fft(np.exp(1j * psi)) / k.size
    return spectrum[PERIODS]


@pytest.mark.parametrize("amplitude", AMPLITUDES)
def test_arrizon_first_order_is_bessel_j1_and_proportional_to_a(amplitude):
    # Jacobi-Anger: exp(i f sin u) = Σ J_n(f) e^{inu}, so c1 = J1(f(A)) e^{iΦ}; with
    # J1(f(A)) = 0.5819 A (Arrizón et al., JOSA A 24, 3500, 2007, type 3). 64 samples per
    # period alias only J_{1±64}(1.84) ~ 1e-90 into c1, so the Bessel check is at rounding
    # level (1e-12); proportionality to A carries the table-inversion error (< 1e-5).
    c1 = first_order("arrizon3", amplitude, 64)
    assert abs(c1 - j1(arrizon_depth(amplitude)) * np.exp(1j * TARGET_PHASE)) < 1e-12
    assert abs(c1 - 0.5818652 * amplitude * np.exp(1j * TARGET_PHASE)) < 1e-5


def test_arrizon_efficiency_cap():
    # the first order of type 3 peaks at J1_max² = 0.3386 at A = 1 (Arrizón et al. 2007;
    # Clark et al., Opt. Express 24, 6249, 2016, quote 0.339)
    assert abs(first_order("arrizon3", 1.0, 64)) ** 2 == pytest.approx(0.3386, abs=1e-4)


SAMPLES = 4096
# A sampled blaze is a staircase: |c1| differs from the continuous sinc by the Dirichlet
# factor, relative (π/N)²/6 = 1e-7 at N = 4096; the phase of c1 is off by at most π/N
# (samples are not centred in their cells), so |Δc1| <= A·π/N = 7.7e-4·A. Table inversion of
# sinc adds < 1e-5 to |c1|.
PHASE_BOUND = np.pi / SAMPLES


@pytest.mark.parametrize("amplitude", AMPLITUDES)
def test_bolduc_first_order_equals_the_target(amplitude):
    # ψ = M mod(Φ − πM + θ, 2π), M = 1 + sinc⁻¹(A)/π (Bolduc et al., Opt. Lett. 38, 3546,
    # 2013): the Fourier series of a blaze of depth 2πM gives c1 = −sinc(1 − M) e^{iΦ} = −A e^{iΦ},
    # so c1 / A is the constant −1 (a piston).
    c1 = first_order("bolduc", amplitude, SAMPLES)
    assert abs(c1) == pytest.approx(amplitude, abs=2e-5)
    assert abs(c1 + amplitude * np.exp(1j * TARGET_PHASE)) <= amplitude * PHASE_BOUND + 2e-5


@pytest.mark.parametrize("amplitude", AMPLITUDES)
def test_davis_first_order_is_sinc_of_one_minus_a(amplitude):
    # ψ = A·wrap(Φ + θ) in [−π, π) (Davis et al., Appl. Opt. 38, 5004, 1999). The Fourier
    # series of exp(iAv) on [−π, π) gives c1 = sinc(1 − A) e^{iΦ} (numpy's normalised sinc):
    # close to A for small A and at A = 1 but not proportional to it between (up to 1.27 A at
    # A = 0.5), which is what Bolduc et al. (2013) corrected.
    c1 = first_order("davis", amplitude, SAMPLES)
    expected = np.sinc(1.0 - amplitude)
    assert abs(c1) == pytest.approx(expected, rel=1e-6, abs=1e-12)
    assert abs(c1 - expected * np.exp(1j * TARGET_PHASE)) <= expected * PHASE_BOUND + 1e-12


def test_davis_ratio_to_a_is_not_constant():
    # the same series at A = 0.5: sinc(0.5) / 0.5 = 4/π = 1.273, against 1 at A = 1
    ratio_half = abs(first_order("davis", 0.5, SAMPLES)) / 0.5
    ratio_full = abs(first_order("davis", 1.0, SAMPLES))
    assert ratio_half == pytest.approx(4 / np.pi, rel=1e-6)
    assert ratio_full == pytest.approx(1.0, rel=1e-6)


def test_phase_only_keeps_the_phase_and_drops_the_modulus():
    # ψ = Φ + θ: a pure blaze, all light in the first order whatever A (Fourier series)
    c1 = first_order("phase", 0.3, 64)
    assert abs(c1 - np.exp(1j * TARGET_PHASE)) < 1e-12


def test_complex_is_an_alias_of_bolduc():
    assert resolve_encoding("complex") == "bolduc"
    rng = np.random.default_rng(5)
    target = rng.uniform(0, 1, 50) * np.exp(1j * rng.uniform(-np.pi, np.pi, 50))
    carrier = rng.uniform(0, 2 * np.pi, 50)
    np.testing.assert_array_equal(encode(target, carrier, "complex"), encode(target, carrier, "bolduc"))


def test_unknown_encoding_is_refused():
    with pytest.raises(ValueError, match="encoding"):
        encode(np.ones(3), np.zeros(3), "no_such_method")
