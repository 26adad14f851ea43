"""The optional pyFFTW backend gives the scipy backend's numbers within float32 rounding."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck.errors import BenchcheckError
from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.fft_backend import fft_backend_available, use_fft_backend
from benchcheck.wave.grid import Grid
from benchcheck.wave.stages import propagate

WAVELENGTH = 1.064e-6


def test_unknown_backend_is_refused():
    with pytest.raises(BenchcheckError, match="unknown FFT backend"):
        use_fft_backend("fastest")


@pytest.mark.skipif(not fft_backend_available("pyfftw"), reason="pyFFTW is not installed (benchcheck[fast])")
def test_pyfftw_matches_scipy():
    q = 1j * math.pi * (0.6e-3) ** 2 / WAVELENGTH
    field = gaussian_field(Grid.square(256, 16e-6), WAVELENGTH, q, q, dtype=np.complex64)
    matrix = np.array([[0.0, 0.3, 0.0], [-1 / 0.3, 1.0, 0.0], [0.0, 0.0, 1.0]])
    expected = propagate(field, matrix, matrix, workers=1).field.values
    previous = use_fft_backend("pyfftw")
    try:
        result = propagate(field, matrix, matrix, workers=1).field.values
    finally:
        use_fft_backend(previous)
    # two length-256 transforms in float32: rounding grows as log2(256) x 6e-8 ≈ 5e-7 of the peak
    assert np.max(np.abs(result - expected)) < 1e-5 * np.max(np.abs(expected))
