"""Each sampling check fires on a case built to fail and stays silent on a good one."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.fft

from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.sampling import (
    check_fourier_chirp,
    check_transfer_function,
    check_window,
    edge_energy,
    fast_size,
)

WAVELENGTH = 1.064e-6


def free(distance: float) -> np.ndarray:
    return np.array([[1.0, distance, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])


def waist_q(waist: float) -> complex:
    return 1j * np.pi * waist**2 / WAVELENGTH


def test_edge_energy_of_a_uniform_window():
    # a uniform 100 x 100 window: the inner 90 x 90 holds 0.81, the 5 % band 0.19 (geometry)
    grid = Grid.square(100, 1e-5)
    field = Field(np.ones(grid.shape, np.complex64), grid, WAVELENGTH)
    assert edge_energy(field) == pytest.approx(0.19, abs=1e-6)


def test_fourier_chirp_check():
    # |A| N p²/(λ|B|) <= 1 keeps the chirp under Nyquist (Collins, JOSA 60, 1168 (1970));
    # 256 x (20 µm)² / 1.064 µm = 0.096 m
    grid = Grid.square(256, 20e-6)
    assert check_fourier_chirp(grid, free(1.0), free(1.0), WAVELENGTH, "p") == []
    notes = check_fourier_chirp(grid, free(0.05), free(1.0), WAVELENGTH, "p")
    assert len(notes) == 1 and "along x" in notes[0].reason and notes[0].severity == "warning"
    assert check_fourier_chirp(grid, free(0.01), free(0.01), WAVELENGTH, "p")[0].severity == "refuse"


def test_transfer_function_check():
    # paraxial transfer function aliases past |z| = N p²/λ (Goodman, Introduction to Fourier Optics, ch. 4, sampled at 1/(N p))
    grid = Grid.square(256, 20e-6)
    assert check_transfer_function(grid, 0.05, WAVELENGTH, "p") == []
    notes = check_transfer_function(grid, -0.15, WAVELENGTH, "p")
    assert {note.severity for note in notes} == {"warning"} and len(notes) == 2
    assert check_transfer_function(grid, 1.0, WAVELENGTH, "p")[0].severity == "refuse"


def test_window_check():
    grid = Grid.square(128, 10e-6)
    good = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.2e-3))
    assert check_window(good, "p", beam_radius=0.2e-3) == []
    # beam of 0.6 mm radius in a ±0.64 mm window: energy at the edge, window too small
    big = gaussian_field(grid, WAVELENGTH, waist_q(0.6e-3), waist_q(0.6e-3))
    notes = check_window(big, "p", beam_radius=0.6e-3)
    assert any("outer 5 %" in note.reason for note in notes)
    assert any("half-width" in note.reason for note in notes)
    assert all(note.plane == "p" for note in notes)
    # a beam of 20 µm radius on a 10 µm pitch is under-sampled
    small = gaussian_field(grid, WAVELENGTH, waist_q(20e-6), waist_q(20e-6))
    assert any("pitch" in note.reason for note in check_window(small, "p", beam_radius=20e-6))


def test_fast_size():
    assert fast_size(1000) == scipy.fft.next_fast_len(1000)
    assert fast_size(1021) >= 1021
