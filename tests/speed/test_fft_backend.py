"""The optional pyFFTW backend gives the scipy backend's numbers within float32 rounding."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.fft

from benchcheck.api import load_layout
from benchcheck.errors import BenchcheckError
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.fft_backend import (ENVIRONMENT_VARIABLE, apply_fft_backend_from_environment,
                                         fft_backend_available, use_fft_backend)
from benchcheck.wave.grid import Grid
from benchcheck.wave.stages import propagate
from tests.speed.conftest import scaled_relay_text

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


@pytest.mark.skipif(not fft_backend_available("pyfftw"), reason="pyFFTW is not installed (benchcheck[fast])")
def test_a_backend_chosen_in_the_process_outlives_a_new_simulator(tmp_path, monkeypatch):
    # Without BENCHCHECK_FFT_BACKEND a new simulator keeps the backend the process chose (the
    # benchmark sets pyFFTW, then builds its evaluators); with it, the variable decides.
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128))
    layout = load_layout(path)
    monkeypatch.delenv(ENVIRONMENT_VARIABLE, raising=False)
    previous = use_fft_backend("pyfftw")
    try:
        make_evaluator(layout)
        assert apply_fft_backend_from_environment() == "pyfftw"
        monkeypatch.setenv(ENVIRONMENT_VARIABLE, "scipy")
        make_evaluator(layout)
        assert apply_fft_backend_from_environment() == "scipy"
    finally:
        use_fft_backend(previous)


@pytest.mark.skipif(not fft_backend_available("pyfftw"), reason="pyFFTW is not installed (benchcheck[fast])")
def test_only_square_windows_go_to_fftw(monkeypatch):
    # Measured FFTW plans pay off for the few fixed window shapes of a study, not for the
    # small transforms whose shapes change every trial (fft_backend.py): those stay on
    # scipy.fft's own. Both agree with scipy.fft within float32 rounding (log2(256) x 6e-8 of
    # the peak, so 1e-5).
    import pyfftw.interfaces.scipy_fft

    sent = []
    to_fftw = pyfftw.interfaces.scipy_fft.__ua_function__
    monkeypatch.setattr(pyfftw.interfaces.scipy_fft, "__ua_function__",
                        lambda method, args, kwargs: sent.append(np.shape(args[0])) or to_fftw(method, args, kwargs))
    rng = np.random.default_rng(2)
    window = (rng.standard_normal((256, 256)) + 1j * rng.standard_normal((256, 256))).astype(np.complex64)
    lines = np.ascontiguousarray(window[:, :40])
    expected = [scipy.fft.fft(window, axis=1), scipy.fft.fft(lines, axis=0)]
    previous = use_fft_backend("pyfftw")
    try:
        results = [scipy.fft.fft(window, axis=1), scipy.fft.fft(lines, axis=0)]
    finally:
        use_fft_backend(previous)
    assert sent == [(256, 256)]
    for result, reference in zip(results, expected):
        assert np.max(np.abs(result - reference)) < 1e-5 * np.max(np.abs(reference))
