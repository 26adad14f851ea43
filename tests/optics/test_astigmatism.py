"""Tilted lenses, mirrors and plates against the Coddington equations and Snell's law."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck.optics.astigmatism import (
    lens_axis_focal_lengths,
    tilted_lens_focal_lengths,
    tilted_mirror_focal_lengths,
    tilted_plate_lateral_shift,
    tilted_plate_matrices,
    tilted_plate_path_length,
)
from benchcheck.optics.matrices import slab

MM = 1e-3
# Check values quoted to 0.001 mm (REFERENCES.md): half a unit of the last digit.
QUOTED_TO_MICRON = 0.0005 * MM


@pytest.mark.parametrize(
    ("tilt_deg", "tangential_mm", "sagittal_mm"),
    [(2.0, 199.675, 199.919), (5.0, 197.977, 199.493)],
)
def test_tilted_lens_matches_coddington_check_values(tilt_deg, tangential_mm, sagittal_mm):
    # Coddington equations for a thin lens, f = 200 mm, n = 1.5 (Smith, Modern Optical
    # Engineering; values by exact ray trace, REFERENCES.md).
    tangential, sagittal = tilted_lens_focal_lengths(200 * MM, math.radians(tilt_deg), 1.5)
    assert tangential == pytest.approx(tangential_mm * MM, abs=QUOTED_TO_MICRON)
    assert sagittal == pytest.approx(sagittal_mm * MM, abs=QUOTED_TO_MICRON)


def test_tilted_lens_is_not_the_mirror_form():
    # The mirror form f cos θ, f / cos θ (Kogelnik et al. 1972) is wrong for a lens:
    # at 5° it is off by about 1.3 mm tangential and 1.3 mm sagittal, far above 0.1 mm.
    f, tilt = 200 * MM, math.radians(5)
    tangential, sagittal = tilted_lens_focal_lengths(f, tilt, 1.5)
    assert abs(tangential - f * math.cos(tilt)) > 0.1 * MM
    assert abs(sagittal - f / math.cos(tilt)) > 0.1 * MM
    assert sagittal < f  # both shorten for a lens (Coddington)


def test_tilted_lens_depends_on_index():
    # Coddington: the sagittal power factor (n cos θ' - cos θ)/(n - 1) depends on n.
    f, tilt = 200 * MM, math.radians(5)
    assert tilted_lens_focal_lengths(f, tilt, 1.5)[1] != pytest.approx(
        tilted_lens_focal_lengths(f, tilt, 1.8)[1], abs=QUOTED_TO_MICRON
    )


def test_lens_axis_focal_lengths_puts_tangential_on_x_for_tilt_y():
    # DESIGN.md section 4: tilt_y tilts in the xz plane, so x is tangential. A single
    # tilt is exactly the Coddington pair; equal rounding limits the match (1e-12 rel).
    f, tilt = 200 * MM, math.radians(5)
    tangential, sagittal = tilted_lens_focal_lengths(f, tilt, 1.5)
    assert lens_axis_focal_lengths(f, 0.0, tilt, 1.5) == pytest.approx(
        (tangential, sagittal), rel=1e-12
    )
    assert lens_axis_focal_lengths(f, tilt, 0.0, 1.5) == pytest.approx(
        (sagittal, tangential), rel=1e-12
    )
    assert lens_axis_focal_lengths(f, 0.0, 0.0, 1.5) == (f, f)


def test_tilted_mirror_focal_lengths_follow_kogelnik():
    # f_t = (R/2) cos θ, f_s = (R/2)/cos θ (Kogelnik et al., IEEE JQE 8, 373 (1972)).
    radius, incidence = 0.5, math.radians(10)
    assert tilted_mirror_focal_lengths(radius, incidence) == pytest.approx(
        (0.25 * math.cos(incidence), 0.25 / math.cos(incidence)), rel=1e-15
    )  # same arithmetic, so equal to rounding
    assert tilted_mirror_focal_lengths(math.inf, incidence) == (math.inf, math.inf)


def test_tilted_plate_lateral_shift_check_value_and_sign():
    # Δ = t sin θ [1 - cos θ / sqrt(n² - sin² θ)], t = 3 mm, n = 1.5, 5°: 87.53 µm
    # (Snell's law, REFERENCES.md); quoted to 0.01 µm, so half of that.
    shift = tilted_plate_lateral_shift(3 * MM, 1.5, math.radians(5))
    assert shift == pytest.approx(87.53e-6, abs=0.005e-6)
    assert tilted_plate_lateral_shift(3 * MM, 1.5, -math.radians(5)) == pytest.approx(-shift)


def _refract(direction, normal, index_ratio):
    """Vector form of Snell's law (unit vectors; normal against the incoming ray)."""
    cos_in = -float(np.dot(normal, direction))
    sin2_out = index_ratio**2 * (1 - cos_in**2)
    return index_ratio * direction + (index_ratio * cos_in - math.sqrt(1 - sin2_out)) * normal


def _trace_through_plate(thickness, index, tilt, start, direction):
    """Exact ray trace through a plate whose normal is tilted by `tilt` in the xz plane."""
    normal = np.array([math.sin(tilt), 0.0, math.cos(tilt)])
    inside = _refract(direction, -normal, 1 / index)
    entry = start + direction * (-np.dot(start, normal) / np.dot(direction, normal))
    exit_point = entry + inside * (thickness / np.dot(inside, normal))
    return exit_point, _refract(inside, -normal, index)


@pytest.mark.parametrize("tilt_deg", [5.0, 20.0, 56.31])
def test_tilted_plate_matrices_match_an_exact_ray_trace(tilt_deg):
    # Snell's law, exact 3-D ray trace: B = d(position at the exit reference)/d(slope),
    # by central differences with slope step 1e-6 (truncation error ~ step² ≈ 1e-12
    # relative, rounding ~ 1e-16/1e-6 = 1e-10 relative: test to 1e-7 relative).
    t, n, tilt = 3 * MM, 1.5, math.radians(tilt_deg)
    tangential, sagittal = tilted_plate_matrices(t, n, tilt)
    axis = np.array([0.0, 0.0, 1.0])
    exit_axis, _ = _trace_through_plate(t, n, tilt, np.zeros(3), axis)
    assert exit_axis[0] == pytest.approx(tangential[0, 2], rel=1e-12)  # E is the lateral shift
    assert exit_axis[2] == pytest.approx(tilted_plate_path_length(t, n, tilt), rel=1e-12)

    step = 1e-6
    for column, matrix in ((0, tangential), (1, sagittal)):
        heights = []
        for sign in (1.0, -1.0):
            direction = axis.copy()
            direction[column] = sign * step
            direction /= np.linalg.norm(direction)
            exit_point, out = _trace_through_plate(t, n, tilt, np.zeros(3), direction)
            # carry the ray to the plane through the axis exit point, normal to the beam
            exit_point = exit_point + out * ((exit_axis[2] - exit_point[2]) / out[2])
            heights.append(exit_point[column] - exit_axis[column])
        b_element = (heights[0] - heights[1]) / (2 * math.tan(step))
        assert b_element == pytest.approx(matrix[0, 1], rel=1e-7)


def test_tilted_plate_matrices_reduce_to_published_limits():
    # Brewster plate: d_t = t sqrt(n²+1)/n⁴, d_s = t sqrt(n²+1)/n² (Kogelnik et al., IEEE
    # JQE 8, 373 (1972)); normal incidence: the slab t/n (Siegman, ch. 15). Rounding only.
    t, n = 3 * MM, 1.5
    tangential, sagittal = tilted_plate_matrices(t, n, math.atan(n))
    assert tangential[0, 1] == pytest.approx(t * math.sqrt(n * n + 1) / n**4, rel=1e-12)
    assert sagittal[0, 1] == pytest.approx(t * math.sqrt(n * n + 1) / n**2, rel=1e-12)
    tangential, sagittal = tilted_plate_matrices(t, n, 0.0)
    np.testing.assert_allclose(tangential, slab(t, n), atol=1e-15)
    np.testing.assert_allclose(sagittal, slab(t, n), atol=1e-15)
    assert tilted_plate_path_length(t, n, 0.0) == pytest.approx(t, rel=1e-15)
