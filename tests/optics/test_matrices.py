"""Ray matrices against textbook identities (Siegman, Lasers, 1986, ch. 15; Goodman, ch. 5)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck.optics.matrices import (
    apply_to_ray,
    compose,
    curved_mirror,
    flat_mirror,
    free_space,
    is_symplectic,
    mirror_tilt,
    misaligned,
    slab,
    thin_lens,
)

# Matrix products of O(1) entries lose a few ulps: 1e-12 is far above rounding and far
# below any physical effect tested here.
ROUNDING = 1e-12


def _elements_in_air():
    return {
        "free_space": free_space(0.37),
        "thin_lens": thin_lens(0.2),
        "diverging_lens": thin_lens(-0.05),
        "no_lens": thin_lens(math.inf),
        "flat_mirror": flat_mirror(),
        "curved_mirror": curved_mirror(0.25),
        "slab_reduced": slab(0.003, 1.5),
        "decentred_lens": misaligned(thin_lens(0.2), decenter=1e-3),
        "tilted_decentred_system": misaligned(
            compose(thin_lens(0.1), free_space(0.05), thin_lens(-0.08)), decenter=2e-4, tilt=3e-3
        ),
        "tilted_mirror": compose(curved_mirror(0.5), mirror_tilt(2e-3)),
    }


@pytest.mark.parametrize("name", sorted(_elements_in_air()))
def test_every_ray_matrix_in_air_has_unit_determinant(name):
    # Ray matrices between planes in the same medium have det 1 (Siegman, Lasers, 1986, ch. 15).
    matrix = _elements_in_air()[name]
    assert np.linalg.det(matrix[:2, :2]) == pytest.approx(1.0, abs=ROUNDING)
    assert is_symplectic(matrix)


def test_is_symplectic_rejects_a_matrix_with_other_determinant():
    # A plain 2x2 scaling by 2 has det 4: not a ray matrix in air (Siegman, ch. 15).
    assert not is_symplectic(np.diag([2.0, 2.0]))


def test_two_lens_system_order_and_effective_focal_length():
    # Textbook two-lens formula 1/f = 1/f1 + 1/f2 - d/(f1 f2); back and front focal
    # distances make A = 1 - d/f1 and D = 1 - d/f2 (Hecht, Optics, thick/compound lenses;
    # Siegman, Lasers, 1986, ch. 15).
    f1, f2, gap = 0.1, 0.25, 0.04
    forward = compose(thin_lens(f1), free_space(gap), thin_lens(f2))
    reverse = compose(thin_lens(f2), free_space(gap), thin_lens(f1))
    expected_power = 1 / f1 + 1 / f2 - gap / (f1 * f2)
    assert -forward[1, 0] == pytest.approx(expected_power, rel=ROUNDING)
    assert forward[0, 0] == pytest.approx(1 - gap / f1, rel=ROUNDING)
    assert forward[1, 1] == pytest.approx(1 - gap / f2, rel=ROUNDING)
    assert reverse[0, 0] == pytest.approx(1 - gap / f2, rel=ROUNDING)
    assert not np.allclose(forward, reverse)


def test_lens_then_gap_is_not_gap_then_lens():
    # A ray at height h, parallel to the axis: lens then gap d lands at h (1 - d/f)
    # (geometric optics, common practice); gap then lens keeps height h.
    f, d, h = 0.2, 0.05, 1e-3
    position, _ = apply_to_ray(compose(thin_lens(f), free_space(d)), h, 0.0)
    assert position == pytest.approx(h * (1 - d / f), rel=ROUNDING)
    position, _ = apply_to_ray(compose(free_space(d), thin_lens(f)), h, 0.0)
    assert position == pytest.approx(h, rel=ROUNDING)


def test_misaligned_matches_the_frame_change_construction():
    # Siegman, Lasers, 1986, ch. 15: shift into the element frame, apply, shift back.
    element = compose(thin_lens(0.15), free_space(0.02), thin_lens(-0.3))
    d, tilt = 4e-4, -2.5e-3
    into = np.array([[1.0, 0.0, -d], [0.0, 1.0, -tilt], [0.0, 0.0, 1.0]])
    back = np.array([[1.0, 0.0, d], [0.0, 1.0, tilt], [0.0, 0.0, 1.0]])
    np.testing.assert_allclose(misaligned(element, d, tilt), back @ element @ into, atol=ROUNDING)


def test_decentred_lens_deviates_by_decenter_over_f():
    # A thin lens decentred by d bends an axial ray by d/f towards its centre, and
    # parallel rays meet at the shifted focus (d, f) (geometric optics, common practice).
    f, d = 0.2, 1.5e-3
    lens = misaligned(thin_lens(f), decenter=d)
    position, slope = apply_to_ray(lens, 0.0, 0.0)
    assert position == 0.0
    assert slope == pytest.approx(d / f, rel=ROUNDING)
    for height in (-2e-3, 0.0, 3e-3):
        focus_position, _ = apply_to_ray(compose(lens, free_space(f)), height, 0.0)
        assert focus_position == pytest.approx(d, abs=ROUNDING * f)


def test_tilted_thin_lens_does_not_deviate_the_axis_ray():
    # Paraxially a thin lens tilted about its centre is still centred on the ray: F = 0
    # (Siegman, ch. 15: F = (1 - D) tilt with D = 1). Its astigmatism is tested elsewhere.
    position, slope = apply_to_ray(misaligned(thin_lens(0.1), tilt=5e-3), 0.0, 0.0)
    assert (position, slope) == (0.0, 0.0)


def test_tilted_mirror_deviates_by_twice_the_tilt():
    # Law of reflection: turning a mirror by α turns the reflected beam by 2α.
    alpha = 1.7e-3
    for mirror in (flat_mirror(), curved_mirror(0.5)):
        _, slope = apply_to_ray(compose(mirror, mirror_tilt(alpha)), 0.0, 0.0)
        assert slope == pytest.approx(2 * alpha, rel=ROUNDING)


def test_four_f_relay_images_with_magnification_minus_f2_over_f1():
    # Goodman, Introduction to Fourier Optics, ch. 5: a 4f relay images with
    # magnification -f2/f1 and maps angles by -f1/f2 (A = -f2/f1, B = C = 0).
    f1, f2 = 0.3, 0.15
    relay = compose(
        free_space(f1), thin_lens(f1), free_space(f1 + f2), thin_lens(f2), free_space(f2)
    )
    assert relay[0, 0] == pytest.approx(-f2 / f1, rel=ROUNDING)
    assert relay[1, 1] == pytest.approx(-f1 / f2, rel=ROUNDING)
    assert relay[0, 1] == pytest.approx(0.0, abs=ROUNDING)
    assert relay[1, 0] == pytest.approx(0.0, abs=ROUNDING)


def test_slab_moves_a_focus_by_t_times_one_minus_one_over_n():
    # A plane-parallel plate in a converging beam moves the focus away by t (1 - 1/n)
    # (Smith, Modern Optical Engineering, plane-parallel plates).
    f, t, n = 0.1, 0.01, 1.5
    before, after = 0.03, f + t * (1 - 1 / n) - t - 0.03
    system = compose(thin_lens(f), free_space(before), slab(t, n), free_space(after))
    # A = 0 at the focus: parallel rays all land on the axis.
    assert system[0, 0] == pytest.approx(0.0, abs=ROUNDING)


def test_compose_accepts_plain_abcd_matrices():
    # A 2x2 ABCD matrix is the 3x3 one with E = F = 0 (Siegman, ch. 15).
    np.testing.assert_allclose(compose(np.array([[1.0, 0.2], [0.0, 1.0]])), free_space(0.2))
