"""Gaussian beams: the ABCD law against Self's thin-lens focusing formula and identities."""

from __future__ import annotations

import math

import pytest

from benchcheck.optics.gaussian import (
    AxisBeam,
    beam_numbers,
    beam_radius,
    distance_past_waist,
    gouy_phase,
    propagate_q,
    q_at,
    rayleigh_range,
    waist_radius,
    wavefront_radius,
)
from benchcheck.optics.matrices import compose, free_space, misaligned, thin_lens

# Double-precision evaluation of two algebraically equal closed forms: 1e-9 relative
# leaves room for cancellation in (s/f - 1) and still catches any real difference.
FORMULA_AGREEMENT = 1e-9


def self_focusing(waist, distance, focal_length, wavelength, m2=1.0):
    """S. A. Self, Appl. Opt. 22, 658 (1983): the Gaussian-beam lens formula in its
    dimensionless form (eq. 9 there; equation number from memory)

        s'/f = 1 + (s/f - 1) / ((s/f - 1)² + (z_R/f)²),
        w0' = w0 / sqrt((1 - s/f)² + (z_R/f)²),

    with s the distance of the input waist before the lens, s' that of the new waist
    after it and z_R = π w0² / (M² λ). Written here independently of benchcheck.
    """
    z_r = math.pi * waist**2 / (m2 * wavelength)
    s_over_f = distance / focal_length
    denominator = (s_over_f - 1) ** 2 + (z_r / focal_length) ** 2
    new_distance = focal_length * (1 + (s_over_f - 1) / denominator)
    return new_distance, waist / math.sqrt(denominator)


def abcd_focusing(waist, distance, focal_length, wavelength, m2=1.0):
    """The same quantities from benchcheck's ABCD law."""
    q = propagate_q(
        q_at(waist, 0.0, wavelength, m2), compose(free_space(distance), thin_lens(focal_length))
    )
    return -distance_past_waist(q), waist_radius(q, wavelength, m2)


CASES = [
    # (w0, s, f, λ, M²): the REFERENCES.md example, a weakly focused visible beam, and a
    # beam of M² 1.3 with its waist inside the focal length.
    (1e-3, 0.5, 0.2, 1064e-9, 1.0),
    (0.4e-3, 1.2, 0.75, 532e-9, 1.0),
    (2.5e-3, 0.1, 0.3, 1030e-9, 1.3),
]


@pytest.mark.parametrize("case", CASES)
def test_abcd_law_reproduces_self_thin_lens_focusing(case):
    new_distance, new_waist = abcd_focusing(*case)
    expected_distance, expected_waist = self_focusing(*case)
    assert new_distance == pytest.approx(expected_distance, rel=FORMULA_AGREEMENT)
    assert new_waist == pytest.approx(expected_waist, rel=FORMULA_AGREEMENT)


def test_self_worked_example_values():
    # REFERENCES.md (Self, Appl. Opt. 22, 658 (1983), values computed): new waist
    # 201.36 mm after the lens, radius 67.39 µm; quoted to 5 figures, so half a last digit.
    new_distance, new_waist = abcd_focusing(1e-3, 0.5, 0.2, 1064e-9)
    assert new_distance == pytest.approx(201.36e-3, abs=0.005e-3)
    assert new_waist == pytest.approx(67.39e-6, abs=0.005e-6)


def test_free_space_then_back_returns_q():
    # Free space is a group: d then -d is the identity (Kogelnik and Li, 1966); rounding only.
    q = q_at(0.8e-3, 0.3, 633e-9)
    back = propagate_q(propagate_q(q, free_space(1.7)), free_space(-1.7))
    assert back.real == pytest.approx(q.real, rel=1e-12)
    assert back.imag == pytest.approx(q.imag, rel=1e-12)


@pytest.mark.parametrize("m2", [1.0, 1.3])
def test_beam_radius_and_curvature_follow_the_gaussian_beam_formulas(m2):
    # w(z) = w0 sqrt(1 + (z/z_R)²), R(z) = z (1 + (z_R/z)²), Gouy phase arctan(z/z_R),
    # z_R = π w0²/(M² λ) (Kogelnik and Li, Appl. Opt. 5, 1550 (1966); ISO 11146-1 for M²).
    # Independent closed forms in double precision: 1e-12 relative.
    waist, wavelength = 1.1e-3, 1064e-9
    z_r = math.pi * waist**2 / (m2 * wavelength)
    for z in (-2.0, 0.37, z_r, 9.0):
        q = q_at(waist, z, wavelength, m2)
        assert beam_radius(q, wavelength, m2) == pytest.approx(
            waist * math.sqrt(1 + (z / z_r) ** 2), rel=1e-12
        )
        assert wavefront_radius(q) == pytest.approx(z * (1 + (z_r / z) ** 2), rel=1e-12)
        assert gouy_phase(q) == pytest.approx(math.atan(z / z_r), rel=1e-12)
        assert waist_radius(q, wavelength, m2) == pytest.approx(waist, rel=1e-12)
        assert rayleigh_range(q) == pytest.approx(z_r, rel=1e-12)
        # the six at once, as the trace takes them: the same arithmetic, identical numbers
        assert beam_numbers(q, wavelength, m2) == (beam_radius(q, wavelength, m2), wavefront_radius(q),
                                                   waist_radius(q, wavelength, m2), distance_past_waist(q),
                                                   rayleigh_range(q), gouy_phase(q))
    at_waist = q_at(waist, 0.0, wavelength, m2)
    assert beam_numbers(at_waist, wavelength, m2)[1] == math.inf
    assert wavefront_radius(at_waist) == math.inf
    assert beam_radius(at_waist, wavelength, m2) == pytest.approx(waist, rel=1e-12)


def test_misalignment_terms_do_not_change_q():
    # E and F move the beam axis only (Siegman, Lasers, 1986, ch. 15).
    q = q_at(1e-3, 0.2, 1064e-9)
    lens = thin_lens(0.15)
    assert propagate_q(q, misaligned(lens, decenter=2e-3, tilt=4e-3)) == propagate_q(q, lens)


def test_axis_beam_matches_the_functions():
    # The dataclass is a thin wrapper: identical numbers (common practice, no tolerance).
    beam = AxisBeam.from_waist(1e-3, 0.0, 1064e-9, 1.2).propagate(
        compose(free_space(0.5), thin_lens(0.2))
    )
    assert beam.radius == beam_radius(beam.q, 1064e-9, 1.2)
    assert beam.waist == waist_radius(beam.q, 1064e-9, 1.2)
    assert beam.distance_past_waist == distance_past_waist(beam.q)
    assert beam.gouy_phase == gouy_phase(beam.q)
    with pytest.raises(ValueError):
        AxisBeam(complex(0.1, -0.2), 1064e-9)
