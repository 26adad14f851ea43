"""Single-precision sums (power, overlap, second moments) against double precision.

Fields are complex64 by default (DESIGN.md section 4); the speed work sums them without
double-precision copies. Each check compares with a reference outside the fast path: the
analytic power of a sampled Gaussian, ``math.fsum`` in double precision, and D4σ = 2w of a
TEM00 beam (ISO 11146-1).
"""

from __future__ import annotations

import math

import numpy as np

from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.moments import beam_moments
from benchcheck.wave.sums import inner_product, power_sum
from benchcheck_plugins.modal_overlap import normalised_overlap

WAVELENGTH = 1.064e-6


def _beam(n: int = 1024, w: float = 0.6e-3, offset=(0.05e-3, -0.03e-3)) -> Field:
    grid = Grid.square(n, 8e-6)
    q = 1j * math.pi * w * w / WAVELENGTH
    return gaussian_field(grid, WAVELENGTH, q, q, offset, (1e-4, 0.0), power=0.5, dtype=np.complex64)


def test_power_of_a_sampled_gaussian():
    # ∫∫|E|² = P for the analytic amplitude (Siegman, Lasers (1986), ch. 17); the window holds
    # ±6.8 w, so the sampled sum equals P to the float32 rounding of the samples (~1e-7);
    # a single whole-array np.vdot was measured 5e-5 off at this size
    field = _beam()
    reference = math.fsum((np.abs(field.values.astype(np.complex128)) ** 2).ravel()) * field.grid.sample_area
    assert abs(reference / 0.5 - 1) < 1e-6  # the analytic value, checked in double precision
    assert abs(field.power / reference - 1) < 1e-6


def test_overlap_and_purity_in_single_precision():
    # normalised overlap |<t|f>|²/(<t|t><f|f>) (Joyce and DeLoach, Appl. Opt. 23, 4187 (1984),
    # from memory): complex64 blockwise sums against double precision; 1e-6 is 100x below the
    # 1e-4 resolution a purity spec is written with
    field, target = _beam(), _beam(offset=(0.0, 0.0))
    single = normalised_overlap(field.values, target.values)
    double = normalised_overlap(field.values.astype(np.complex128), target.values.astype(np.complex128))
    assert abs(single - double) < 1e-6
    overlap = inner_product(target.values, field.values)
    exact = complex(np.vdot(target.values.astype(np.complex128).ravel(), field.values.astype(np.complex128).ravel()))
    assert abs(overlap - exact) < 1e-6 * abs(exact)
    assert abs(power_sum(field.values) - math.fsum((np.abs(field.values.astype(np.complex128)) ** 2).ravel())) \
        < 1e-6 * power_sum(field.values)


def test_d4sigma_in_single_precision():
    # D4σ of a TEM00 beam is exactly 2w (ISO 11146-1); the window (±6.8 w) cuts a share
    # below 1e-30 of the power, and 1024 samples across resolve the second moment to 1e-9;
    # the float32 intensity with double accumulation keeps 1e-6 of it
    field = _beam()
    moments = beam_moments(field)
    assert np.allclose(moments.widths, (1.2e-3, 1.2e-3), rtol=1e-6, atol=0)
    assert abs(moments.centroid_x - 0.05e-3) < 1e-6 * 0.6e-3 and abs(moments.centroid_y + 0.03e-3) < 1e-6 * 0.6e-3
    double = beam_moments(field.replace(values=field.values.astype(np.complex128)))
    assert np.allclose(moments.widths, double.widths, rtol=1e-6, atol=0)
    assert abs(moments.covariance_xy - double.covariance_xy) < 1e-6 * moments.variance_x
