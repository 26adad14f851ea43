"""Gaussian beams on one axis: the complex beam parameter q and the ABCD law, with M².

Convention (DESIGN.md section 4): ``1/q = 1/R - i M² λ / (π w²)`` with w the real beam's
1/e² intensity radius (the embedded-Gaussian reading of M²), so a beam a distance z past
its waist has ``q = z + i z_R`` with ``z_R = π w0² / (M² λ)``. The ABCD law
``q2 = (A q1 + B)/(C q1 + D)`` propagates q (Kogelnik and Li, Appl. Opt. 5, 1550 (1966));
the E and F of a misaligned element move the beam's axis, never q.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from benchcheck.optics.matrices import as_ray_matrix

__all__ = [
    "q_at",
    "propagate_q",
    "beam_radius",
    "wavefront_radius",
    "waist_radius",
    "distance_past_waist",
    "rayleigh_range",
    "gouy_phase",
    "beam_numbers",
    "AxisBeam",
]


def _checked_q(q: complex) -> complex:
    q = complex(q)
    if not q.imag > 0.0:
        raise ValueError(
            f"a physical beam parameter has Im(q) > 0 (the Rayleigh range), got q = {q}"
        )
    return q


def q_at(waist: float, distance_from_waist: float, wavelength: float, m2: float = 1.0) -> complex:
    """Complex beam parameter a given distance past the waist.

    Parameters
    ----------
    waist : float
        1/e² intensity radius at the waist, w0 (m).
    distance_from_waist : float
        z (m), positive after the waist.
    wavelength : float
        Vacuum wavelength λ (m).
    m2 : float
        Beam quality factor M² (≥ 1).

    Returns
    -------
    complex
        ``q = z + i π w0² / (M² λ)`` (Kogelnik and Li, Appl. Opt. 5, 1550 (1966); M² as in
        ISO 11146-1, embedded Gaussian).
    """
    if not (waist > 0 and wavelength > 0 and m2 > 0):
        raise ValueError(
            f"waist, wavelength and M² must be positive, got {waist}, {wavelength}, {m2}"
        )
    return complex(distance_from_waist, math.pi * waist * waist / (m2 * wavelength))


def propagate_q(q: complex, matrix: np.ndarray) -> complex:
    """Apply the ABCD law to a beam parameter.

    Parameters
    ----------
    q : complex
        Beam parameter before the element (m).
    matrix : array_like
        2x2 or 3x3 ray matrix; E and F are ignored (they move the axis, not the beam).

    Returns
    -------
    complex
        ``(A q + B)/(C q + D)`` (Kogelnik and Li, Appl. Opt. 5, 1550 (1966)).
    """
    array = as_ray_matrix(matrix)
    q = complex(q)
    return (array[0, 0] * q + array[0, 1]) / (array[1, 0] * q + array[1, 1])


def beam_radius(q: complex, wavelength: float, m2: float = 1.0) -> float:
    """1/e² intensity radius w (m) from ``Im(1/q) = -M² λ / (π w²)``.

    Parameters
    ----------
    q : complex
        Beam parameter (m).
    wavelength : float
        Vacuum wavelength (m).
    m2 : float
        Beam quality factor M².
    """
    inverse = 1.0 / _checked_q(q)
    return math.sqrt(-m2 * wavelength / (math.pi * inverse.imag))


def wavefront_radius(q: complex) -> float:
    """Wavefront radius of curvature R (m) from ``Re(1/q) = 1/R``; ``math.inf`` when flat.

    Positive past the waist (a diverging beam), negative before it (Kogelnik and Li,
    Appl. Opt. 5, 1550 (1966)).
    """
    curvature = (1.0 / _checked_q(q)).real
    return math.inf if curvature == 0.0 else 1.0 / curvature


def waist_radius(q: complex, wavelength: float, m2: float = 1.0) -> float:
    """Waist radius w0 (m) of the beam q belongs to: ``w0 = sqrt(M² λ z_R / π)``.

    Parameters
    ----------
    q : complex
        Beam parameter (m).
    wavelength : float
        Vacuum wavelength (m).
    m2 : float
        Beam quality factor M².
    """
    return math.sqrt(m2 * wavelength * rayleigh_range(q) / math.pi)


def distance_past_waist(q: complex) -> float:
    """z = Re(q) (m): positive after the waist; the waist lies a distance -z from here."""
    return _checked_q(q).real


def rayleigh_range(q: complex) -> float:
    """z_R = Im(q) (m)."""
    return _checked_q(q).imag


def gouy_phase(q: complex) -> float:
    """Gouy phase arctan(z / z_R) (rad) of the fundamental mode (Siegman, Lasers, 1986, ch. 17)."""
    q = _checked_q(q)
    return math.atan2(q.real, q.imag)


def beam_numbers(q: complex, wavelength: float, m2: float = 1.0) -> tuple[float, float, float, float, float, float]:
    """(w, R, w0, z, z_R, Gouy phase) of one axis: ``beam_radius``, ``wavefront_radius``,
    ``waist_radius``, ``distance_past_waist``, ``rayleigh_range`` and ``gouy_phase`` at
    once, with the same arithmetic and q checked once (the trace needs all six per plane)."""
    q = _checked_q(q)
    inverse = 1.0 / q
    return (math.sqrt(-m2 * wavelength / (math.pi * inverse.imag)),
            math.inf if inverse.real == 0.0 else 1.0 / inverse.real,
            math.sqrt(m2 * wavelength * q.imag / math.pi),
            q.real,
            q.imag,
            math.atan2(q.real, q.imag))


@dataclass(frozen=True)
class AxisBeam:
    """A Gaussian beam on one axis: beam parameter, wavelength and M².

    Attributes
    ----------
    q : complex
        Beam parameter (m).
    wavelength : float
        Vacuum wavelength (m).
    m2 : float
        Beam quality factor M².
    """

    q: complex
    wavelength: float
    m2: float = 1.0

    def __post_init__(self) -> None:
        object.__setattr__(self, "q", _checked_q(self.q))

    @classmethod
    def from_waist(
        cls, waist: float, distance_from_waist: float, wavelength: float, m2: float = 1.0
    ) -> "AxisBeam":
        """The beam with waist radius ``waist`` (m), ``distance_from_waist`` (m) past its waist."""
        return cls(q_at(waist, distance_from_waist, wavelength, m2), wavelength, m2)

    def propagate(self, matrix: np.ndarray) -> "AxisBeam":
        """The same beam after an element or system (ABCD law)."""
        return AxisBeam(propagate_q(self.q, matrix), self.wavelength, self.m2)

    @property
    def radius(self) -> float:
        """1/e² intensity radius w (m)."""
        return beam_radius(self.q, self.wavelength, self.m2)

    @property
    def wavefront_radius(self) -> float:
        """Wavefront radius of curvature (m); inf when flat."""
        return wavefront_radius(self.q)

    @property
    def waist(self) -> float:
        """Waist radius w0 (m)."""
        return waist_radius(self.q, self.wavelength, self.m2)

    @property
    def distance_past_waist(self) -> float:
        """Distance past the waist z (m)."""
        return distance_past_waist(self.q)

    @property
    def rayleigh_range(self) -> float:
        """Rayleigh range z_R (m)."""
        return rayleigh_range(self.q)

    @property
    def gouy_phase(self) -> float:
        """Gouy phase (rad)."""
        return gouy_phase(self.q)
