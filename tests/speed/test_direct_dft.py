"""The matrix-product zoomed DFT against scipy.signal.CZT (the general-purpose reference
library), and the stage that uses it against the chirp-z path it replaces."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.signal

from benchcheck.wave import axis_transforms
from benchcheck.wave.direct_dft import direct_dft


@pytest.mark.parametrize("dtype, tolerance", [
    # complex64: sums of N = 100 unit terms in float32 (6e-8 per operation) through BLAS;
    # the kernel is made in double precision and rounded once, so 1e-5 of the peak is ample
    (np.complex64, 1e-5),
    # complex128: the kernel's repeated doubling multiplies at most log2(100) ≈ 7 times
    # (a few 1e-16 each) and scipy's own chirps carry ~1e-12 (see test_chirp_z.py)
    (np.complex128, 1e-10),
])
@pytest.mark.parametrize("alpha, m_out, first_index", [
    (1 / 100, 100, 0), (0.0037, 150, 0), (-0.0021, 260, 37), (1.7 / 100, 333, 512)])
@pytest.mark.parametrize("axis", [0, 1])
def test_matches_scipy_czt(dtype, tolerance, alpha, m_out, first_index, axis):
    # Σ_k x_k exp(−2πi α (k + k₀) m) is exp(−2πi α k₀ m) times the CZT X_m = Σ x_k w^{mk},
    # w = exp(−2πi α) (Rabiner, Schafer and Rader, Bell Syst. Tech. J. 48, 1249 (1969)).
    rng = np.random.default_rng(6)
    values = (rng.standard_normal((100, 4)) + 1j * rng.standard_normal((100, 4))).astype(dtype)
    values = values if axis == 0 else np.ascontiguousarray(values.T)
    offset = np.exp(-2j * np.pi * alpha * first_index * np.arange(m_out))
    transform = scipy.signal.CZT(100, m_out, w=np.exp(-2j * np.pi * alpha), a=1.0)
    reference = transform(values.astype(np.complex128), axis=axis)
    expected = reference * (offset[:, np.newaxis] if axis == 0 else offset[np.newaxis, :])
    result = direct_dft(values, alpha, m_out, axis, first_index)
    assert result.dtype == dtype
    assert result.shape == ((m_out, 4) if axis == 0 else (4, m_out))
    assert np.max(np.abs(result - expected)) <= tolerance * np.max(np.abs(expected))


def test_a_short_input_takes_the_product_and_agrees_with_chirp_z(monkeypatch):
    # scaled_dft picks the product for inputs up to DIRECT_MAX_INPUT samples; with the
    # threshold set to 0 the same call goes through chirp-z. complex64 both: 2e-6 of the peak
    # covers float32 rounding of either (measured 3e-7 to 5e-7 at 64 inputs and 1024 outputs).
    rng = np.random.default_rng(7)
    work = (rng.standard_normal((300, 64)) + 1j * rng.standard_normal((300, 64))).astype(np.complex64)
    product = axis_transforms.scaled_dft(work.copy(), 1, 0.00091, 1024, False, 1, first_index=500)
    monkeypatch.setattr(axis_transforms, "DIRECT_MAX_INPUT", 0)
    chirped = axis_transforms.scaled_dft(work.copy(), 1, 0.00091, 1024, False, 1, first_index=500)
    assert np.max(np.abs(product - chirped)) <= 2e-6 * np.max(np.abs(chirped))
