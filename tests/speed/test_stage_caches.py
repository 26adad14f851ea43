"""Caches and cheap checks of the wave stages give the numbers of the plain computation.

Physics references: the Gaussian edge share erfc (Siegman, Lasers (1986), ch. 17, per axis);
the stage itself is checked against the ABCD law in tests/wave/test_stages.py.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.special

from benchcheck.wave import axis_transforms
from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.grid import Grid
from benchcheck.wave.sampling import edge_energy
from benchcheck.wave.stages import natural_output_grid, propagate

WAVELENGTH = 1.064e-6


def _lens_to_focus(f: float = 0.2) -> np.ndarray:
    # free space f after a lens f: A = 0, B = f (Fourier branch), det 1
    return np.array([[0.0, f, 0.0], [-1.0 / f, 1.0, 0.0], [0.0, 0.0, 1.0]])


def _beam(n=256, pitch=20e-6, w=0.8e-3):
    q = 1j * math.pi * w * w / WAVELENGTH
    return gaussian_field(Grid.square(n, pitch), WAVELENGTH, q, q, dtype=np.complex64, plane="in")


def test_cached_chirps_give_the_same_field():
    field = _beam()
    matrix = _lens_to_focus()
    axis_transforms.fourier_parts.cache_clear()
    first = propagate(field, matrix, matrix, plane="out", workers=1).field.values
    second = propagate(field, matrix, matrix, plane="out", workers=1).field.values  # chirps from the cache
    assert axis_transforms.fourier_parts.cache_info().hits >= 2
    assert np.array_equal(first, second)


def test_a_grid_within_rounding_of_the_natural_one_is_returned_as_asked():
    field = _beam()
    matrix = _lens_to_focus()
    natural = natural_output_grid(field.grid, matrix, matrix, WAVELENGTH)
    asked = Grid(natural.shape, (natural.pitch[0] * (1 + 3e-10), natural.pitch[1]), natural.center)
    result = propagate(field, matrix, matrix, output_grid=asked, workers=1)
    assert result.field.grid == asked
    # same FFT path: identical values to the natural landing
    assert np.array_equal(result.field.values, propagate(field, matrix, matrix, workers=1).field.values)


def test_edge_bands_of_a_gaussian():
    # share of a Gaussian of 1/e² radius w inside [a, b] along one axis:
    # ½[erf(√2 b/w) − erf(√2 a/w)] (Siegman, Lasers (1986), ch. 17); the bands hold the
    # window's power less the inner 90 % of the samples, each sample standing for its cell
    n, pitch, w = 200, 10e-6, 0.45e-3
    field = _beam(n, pitch, w)

    def share(low_index, high_index):  # cells of samples low..high, sample k at (k − n/2) p
        low, high = (low_index - n // 2 - 0.5) * pitch, (high_index - n // 2 + 0.5) * pitch
        root = math.sqrt(2) / w
        return 0.5 * (scipy.special.erf(root * high) - scipy.special.erf(root * low))

    expected = 1 - (share(10, n - 11) / share(0, n - 1)) ** 2
    # the sample sum is the midpoint rule: relative error (p²/24)|f''/f| with f = exp(−2x²/w²),
    # f''/f = 16x²/w⁴ − 4/w² ≈ 60/w² in the bands (x ≈ 2w): 1.2e-3 at p = w/45
    assert abs(edge_energy(field) - expected) < 2e-3 * expected
    # and the band sums against the whole-window intensity in double precision: same samples,
    # so only float32 accumulation differs (1e-6)
    intensity = np.abs(field.values.astype(np.complex128)) ** 2
    direct = 1 - intensity[10:n - 10, 10:n - 10].sum() / intensity.sum()
    assert abs(edge_energy(field) - direct) < 1e-6 * direct
