"""Astigmatism of tilted elements: thin lenses, spherical mirrors and plane-parallel plates.

The tangential plane holds the tilt; the sagittal plane is perpendicular to it. A lens
tilted about the y axis (``tilt_y``) is tilted in the xz plane, so its tangential axis
is x; for ``tilt_x`` the tangential axis is y (DESIGN.md section 4).
"""

from __future__ import annotations

import math

import numpy as np

from benchcheck.optics.matrices import ray_matrix

__all__ = [
    "tilted_lens_focal_lengths",
    "lens_axis_focal_lengths",
    "tilted_mirror_focal_lengths",
    "tilted_plate_lateral_shift",
    "tilted_plate_path_length",
    "tilted_plate_matrices",
]


def _refracted_cosine(tilt: float, index: float) -> float:
    """cos θ′ with sin θ′ = sin θ / n (Snell's law, from air into index n)."""
    if index < 1.0:
        raise ValueError(f"the element index must be at least 1 (air outside), got {index}")
    sine_inside = math.sin(tilt) / index
    return math.sqrt(1.0 - sine_inside * sine_inside)


def tilted_lens_focal_lengths(
    focal_length: float, tilt: float, index: float = 1.5
) -> tuple[float, float]:
    """Tangential and sagittal focal lengths of a tilted thin lens (Coddington equations).

    ``1/f_s = (1/f) (n cos θ′ - cos θ)/(n - 1)`` with ``sin θ′ = sin θ / n``, and
    ``f_t = f_s cos² θ``: the thin-lens form of the Coddington equations (Smith, Modern
    Optical Engineering, astigmatism of a tilted lens; Kingslake, Lens Design
    Fundamentals). Both focal lengths shorten and both depend on the index; the simple
    ``f cos θ`` and ``f / cos θ`` hold for mirrors only.

    Parameters
    ----------
    focal_length : float
        Focal length at normal incidence (m); ``math.inf`` gives (inf, inf).
    tilt : float
        Angle between the lens axis and the beam (rad).
    index : float
        Refractive index of the lens glass (> 1).

    Returns
    -------
    tuple of float
        (tangential, sagittal) focal lengths (m).
    """
    if index <= 1.0:
        raise ValueError(f"a refracting lens needs index > 1, got {index}")
    if math.isinf(focal_length):
        return math.inf, math.inf
    cos_tilt = math.cos(tilt)
    power_ratio = (index * _refracted_cosine(tilt, index) - cos_tilt) / (index - 1.0)
    sagittal = focal_length / power_ratio
    return sagittal * cos_tilt * cos_tilt, sagittal


def lens_axis_focal_lengths(
    focal_length: float, tilt_x: float, tilt_y: float, index: float = 1.5
) -> tuple[float, float]:
    """Focal lengths along x and y of a thin lens tilted about both axes.

    Approximation (small compound tilts): the Coddington form of
    :func:`tilted_lens_focal_lengths` is applied with the total tilt
    ``θ = hypot(tilt_x, tilt_y)``; the tangential direction in the xy plane is
    (tilt_y, tilt_x)/θ, and the powers are projected onto x and y,
    ``P_x = P_t cos² φ + P_s sin² φ`` (and the converse for y), dropping the cross
    term ``(P_t - P_s) sin φ cos φ`` that would couple x and y. Exact when only one
    tilt is non-zero; the dropped term is second order in the tilt.

    Parameters
    ----------
    focal_length : float
        Focal length at normal incidence (m).
    tilt_x, tilt_y : float
        Lens tilts about the x and y axes (rad).
    index : float
        Refractive index of the lens glass.

    Returns
    -------
    tuple of float
        (f_x, f_y) in m; infinite where the projected power is zero.
    """
    total_tilt = math.hypot(tilt_x, tilt_y)
    if total_tilt == 0.0:
        return float(focal_length), float(focal_length)
    tangential, sagittal = tilted_lens_focal_lengths(focal_length, total_tilt, index)
    power_t, power_s = 1.0 / tangential, 1.0 / sagittal
    weight_x = (tilt_y / total_tilt) ** 2  # share of the tangential direction along x
    power_x = power_t * weight_x + power_s * (1.0 - weight_x)
    power_y = power_t * (1.0 - weight_x) + power_s * weight_x
    return _focal_from_power(power_x), _focal_from_power(power_y)


def _focal_from_power(power: float) -> float:
    return math.inf if power == 0.0 else 1.0 / power


def tilted_mirror_focal_lengths(radius: float, incidence: float) -> tuple[float, float]:
    """Tangential and sagittal focal lengths of a spherical mirror used off normal incidence.

    ``f_t = (R/2) cos θ`` and ``f_s = (R/2)/cos θ`` (Kogelnik et al., IEEE J. Quantum
    Electron. 8, 373 (1972); Siegman, Lasers, 1986). This simple form is for mirrors only.

    Parameters
    ----------
    radius : float
        Radius of curvature (m), positive for a concave (focusing) mirror; ``math.inf`` is flat.
    incidence : float
        Angle of incidence (rad).

    Returns
    -------
    tuple of float
        (tangential, sagittal) focal lengths (m); (inf, inf) for a flat mirror.
    """
    if math.isinf(radius):
        return math.inf, math.inf
    if radius == 0:
        raise ValueError("a mirror radius of curvature must be non-zero (use inf for flat)")
    half_radius = radius / 2.0
    cos_incidence = math.cos(incidence)
    return half_radius * cos_incidence, half_radius / cos_incidence


def tilted_plate_lateral_shift(thickness: float, index: float, tilt: float) -> float:
    """Lateral displacement of a beam by a tilted plane-parallel plate.

    ``Δ = t sin θ [1 - cos θ / sqrt(n² - sin² θ)]`` (Snell's law; Smith, Modern Optical
    Engineering, plane-parallel plates). Signed: the shift has the sign of the tilt.

    Parameters
    ----------
    thickness : float
        Plate thickness (m).
    index : float
        Refractive index of the plate.
    tilt : float
        Angle of incidence on the plate (rad).

    Returns
    -------
    float
        Displacement (m), perpendicular to the beam, in the plane of the tilt.
    """
    sine = math.sin(tilt)
    return thickness * sine * (1.0 - math.cos(tilt) / math.sqrt(index * index - sine * sine))


def tilted_plate_path_length(thickness: float, index: float, tilt: float) -> float:
    """Length along the beam that a tilted plate occupies (m).

    The axis ray crosses the plate over ``t / cos θ′``; projected on the beam direction
    that is ``t cos(θ - θ′) / cos θ′`` (geometry with Snell's law). This is the bench path
    the matrices of :func:`tilted_plate_matrices` replace.
    """
    cos_inside = _refracted_cosine(tilt, index)
    inside_angle = math.acos(cos_inside) * math.copysign(1.0, tilt)
    return thickness * math.cos(tilt - inside_angle) / cos_inside


def tilted_plate_matrices(
    thickness: float, index: float, tilt: float
) -> tuple[np.ndarray, np.ndarray]:
    """Tangential and sagittal ray matrices of a tilted plane-parallel plate.

    Between its faces, a plate at incidence θ acts as a free path of
    ``d_t = t cos² θ / (n cos³ θ′)`` in the tangential plane and ``d_s = t / (n cos θ′)``
    in the sagittal plane. These follow from the tilted-interface matrices (Siegman,
    Lasers, 1986, ch. 15; Kogelnik et al., IEEE J. Quantum Electron. 8, 373 (1972)) and
    reduce to their Brewster-plate distances t sqrt(n² + 1)/n⁴ and t sqrt(n² + 1)/n²,
    and to the normal-incidence slab t/n. The tangential matrix also carries the
    lateral shift of :func:`tilted_plate_lateral_shift` as E. The matrices replace the
    bench path :func:`tilted_plate_path_length`.

    Parameters
    ----------
    thickness : float
        Plate thickness (m).
    index : float
        Refractive index of the plate.
    tilt : float
        Angle of incidence (rad).

    Returns
    -------
    tuple of numpy.ndarray
        (tangential, sagittal) 3x3 matrices.
    """
    cos_inside = _refracted_cosine(tilt, index)
    cos_tilt = math.cos(tilt)
    tangential_path = thickness * cos_tilt * cos_tilt / (index * cos_inside**3)
    sagittal_path = thickness / (index * cos_inside)
    shift = tilted_plate_lateral_shift(thickness, index, tilt)
    return (
        ray_matrix(1.0, tangential_path, 0.0, 1.0, shift, 0.0),
        ray_matrix(1.0, sagittal_path, 0.0, 1.0),
    )
