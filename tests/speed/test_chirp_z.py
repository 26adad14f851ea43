"""The chirp-z transform against scipy.signal.CZT (the general-purpose reference library)."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.signal

from benchcheck.wave.chirp_z import chirp_z


@pytest.mark.parametrize("dtype, tolerance", [
    # complex64: the transform sums N = 200 terms of unit size; float32 rounding
    # (6e-8 per operation) through three FFTs of length 512 stays under 1e-5 of the peak
    (np.complex64, 1e-5),
    # complex128: scipy builds its chirps from phases π α k² up to ~7e3 rad without reducing
    # them mod 2π, so the reference itself carries ~1e-12 relative (7e3 x 2e-16 per phase,
    # summed over 200 terms); 1e-10 leaves room for that and nothing more
    (np.complex128, 1e-10),
])
@pytest.mark.parametrize("alpha, m_out", [(1 / 200, 200), (0.0037, 150), (-0.0021, 260), (1.7 / 200, 333)])
def test_matches_scipy_czt(dtype, tolerance, alpha, m_out):
    rng = np.random.default_rng(4)
    values = (rng.standard_normal((3, 200)) + 1j * rng.standard_normal((3, 200))).astype(dtype)
    expected = scipy.signal.CZT(200, m_out, w=np.exp(-2j * np.pi * alpha), a=1.0)(values.astype(np.complex128), axis=1)
    result = chirp_z(values, alpha, m_out, axis=1, workers=1)
    assert result.dtype == dtype and result.shape == (3, m_out)
    assert np.max(np.abs(result - expected)) <= tolerance * np.max(np.abs(expected))


def test_along_the_first_axis_and_at_the_dft_step():
    # α = 1/N is the DFT itself (Rabiner, Schafer and Rader, Bell Syst. Tech. J. 48, 1249 (1969))
    rng = np.random.default_rng(5)
    values = rng.standard_normal((64, 5)) + 1j * rng.standard_normal((64, 5))
    result = chirp_z(values, 1 / 64, 64, axis=0, workers=1)
    # double precision through length-128 FFTs: rounding of order 1e-13 of the peak
    assert np.allclose(result, np.fft.fft(values, axis=0), rtol=0, atol=1e-12 * np.abs(result).max())
