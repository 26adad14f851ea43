"""Paraxial ray matrices in the 3x3 ABCDEF form, one axis at a time.

A ray on one axis is the vector (position x in m, slope s in rad, 1). An element is the
matrix [[A, B, E], [C, D, F], [0, 0, 1]]: the 2x2 part is the usual ABCD matrix and the
third column carries the displacement E (m) and deviation F (rad) a misaligned element
adds (Siegman, Lasers, 1986, ch. 15). In air det of the 2x2 part is 1. A system of
element M1 then M2 is ``M2 @ M1``; :func:`compose` takes the elements in the order the
beam meets them. Mirrors are treated in the unfolded frame (DESIGN.md section 4).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "ray_matrix",
    "as_ray_matrix",
    "free_space",
    "thin_lens",
    "flat_mirror",
    "curved_mirror",
    "slab",
    "misaligned",
    "mirror_tilt",
    "compose",
    "apply_to_ray",
    "is_symplectic",
]


def ray_matrix(
    a: float, b: float, c: float, d: float, e: float = 0.0, f: float = 0.0
) -> np.ndarray:
    """Build [[A, B, E], [C, D, F], [0, 0, 1]] (B and E in m, C in 1/m, F in rad)."""
    return np.array([[a, b, e], [c, d, f], [0.0, 0.0, 1.0]], dtype=float)


def as_ray_matrix(matrix: np.ndarray) -> np.ndarray:
    """Return ``matrix`` as a 3x3 ABCDEF array; a 2x2 ABCD matrix gets E = F = 0.

    Parameters
    ----------
    matrix : array_like
        A 2x2 ABCD or 3x3 ABCDEF ray matrix (lengths in m, slopes in rad).

    Returns
    -------
    numpy.ndarray
        A new 3x3 float array.
    """
    array = np.asarray(matrix, dtype=float)
    if array.shape == (2, 2):
        return ray_matrix(array[0, 0], array[0, 1], array[1, 0], array[1, 1])
    if array.shape == (3, 3):
        last = array[2]
        if not (last[0] == 0.0 and last[1] == 0.0 and last[2] == 1.0):  # scalar checks: called per element per trial
            raise ValueError(f"the last row of an ABCDEF matrix must be (0, 0, 1), got {array[2]}")
        return array.copy()
    raise ValueError(f"a ray matrix is 2x2 or 3x3, got shape {array.shape}")


def free_space(length: float) -> np.ndarray:
    """Propagation over a distance in a medium of index 1.

    Parameters
    ----------
    length : float
        Path length (m); negative values propagate backwards.

    Returns
    -------
    numpy.ndarray
        [[1, L, 0], [0, 1, 0], [0, 0, 1]] (Siegman, Lasers, 1986, ch. 15).
    """
    return ray_matrix(1.0, float(length), 0.0, 1.0)


def thin_lens(focal_length: float) -> np.ndarray:
    """A thin lens in air.

    Parameters
    ----------
    focal_length : float
        Focal length (m), positive for a converging lens; ``math.inf`` gives the identity.

    Returns
    -------
    numpy.ndarray
        [[1, 0, 0], [-1/f, 1, 0], [0, 0, 1]] (Siegman, Lasers, 1986, ch. 15).
    """
    if focal_length == 0:
        raise ValueError("a thin lens needs a non-zero focal length")
    return ray_matrix(1.0, 0.0, -1.0 / float(focal_length), 1.0)


def flat_mirror() -> np.ndarray:
    """A flat mirror in the unfolded frame: the identity."""
    return ray_matrix(1.0, 0.0, 0.0, 1.0)


def curved_mirror(focal_length: float) -> np.ndarray:
    """A curved mirror at normal incidence in the unfolded frame.

    Parameters
    ----------
    focal_length : float
        Focal length (m) = R/2, positive for a concave (focusing) mirror; ``math.inf`` is flat.
        For a mirror used off normal incidence take the per-axis focal lengths from
        :func:`benchcheck.optics.astigmatism.tilted_mirror_focal_lengths`.

    Returns
    -------
    numpy.ndarray
        The thin-lens matrix with C = -1/f = -2/R (Siegman, Lasers, 1986, ch. 15).
    """
    return thin_lens(focal_length)


def slab(thickness: float, index: float) -> np.ndarray:
    """A plane-parallel plate at normal incidence, in reduced-thickness form.

    Parameters
    ----------
    thickness : float
        Plate thickness (m).
    index : float
        Refractive index of the plate (the surrounding medium is air, index 1).

    Returns
    -------
    numpy.ndarray
        [[1, t/n, 0], [0, 1, 0], [0, 0, 1]]: the plate counts as t/n of air, so a focus
        behind it moves away by t (1 - 1/n) compared with air (Siegman, Lasers, 1986,
        ch. 15; Smith, Modern Optical Engineering, plane-parallel plates). The matrix
        replaces a path length ``thickness`` of the bench; it does not add to it.
    """
    if index <= 0:
        raise ValueError(f"refractive index must be positive, got {index}")
    return ray_matrix(1.0, float(thickness) / float(index), 0.0, 1.0)


def misaligned(matrix: np.ndarray, decenter: float = 0.0, tilt: float = 0.0) -> np.ndarray:
    """A transmissive element displaced and tilted against the nominal axis.

    The ray goes into the element's frame (x - d, s - tilt), through the element's
    2x2 part, and back (x + d, s + tilt). Written out, the added terms are
    ``E = (1 - A) d - B tilt`` and ``F = -C d + (1 - D) tilt`` (Siegman, Lasers, 1986,
    ch. 15, misaligned elements). A thin lens decentred by d thus deviates an axial
    ray by F = d/f, towards the lens centre; a thin lens tilted about its own centre
    does not deviate the beam (its astigmatism is in
    :mod:`benchcheck.optics.astigmatism`). For a mirror's tilt use :func:`mirror_tilt`.

    Parameters
    ----------
    matrix : array_like
        The element's aligned 2x2 or 3x3 matrix; existing E and F are kept.
    decenter : float
        Displacement of the element's axis from the nominal axis (m).
    tilt : float
        Angle of the element's axis to the nominal axis (rad), in this axis's plane.

    Returns
    -------
    numpy.ndarray
        The 3x3 matrix of the misaligned element.
    """
    result = as_ray_matrix(matrix)
    a, b, c, d = result[0, 0], result[0, 1], result[1, 0], result[1, 1]
    result[0, 2] += (1.0 - a) * decenter - b * tilt
    result[1, 2] += -c * decenter + (1.0 - d) * tilt
    return result


def mirror_tilt(tilt: float) -> np.ndarray:
    """The deviation a tilted mirror adds, in the unfolded frame.

    Parameters
    ----------
    tilt : float
        Mirror tilt (rad) in this axis's plane.

    Returns
    -------
    numpy.ndarray
        [[1, 0, 0], [0, 1, 2 tilt], [0, 0, 1]]: a mirror turned by α turns the reflected
        beam by 2α (law of reflection). Compose it with the mirror's own matrix.
    """
    return ray_matrix(1.0, 0.0, 0.0, 1.0, 0.0, 2.0 * float(tilt))


def compose(*matrices: np.ndarray) -> np.ndarray:
    """The matrix of a system, given its elements in the order the beam meets them.

    Parameters
    ----------
    *matrices : array_like
        2x2 or 3x3 ray matrices; the first is the first element the beam meets.

    Returns
    -------
    numpy.ndarray
        ``M_n @ ... @ M_2 @ M_1`` as a 3x3 array (the identity when called with none).
    """
    system = np.eye(3)
    for matrix in matrices:
        system = as_ray_matrix(matrix) @ system
    return system


def apply_to_ray(matrix: np.ndarray, position: float, slope: float) -> tuple[float, float]:
    """Trace one ray through a matrix.

    Parameters
    ----------
    matrix : array_like
        A 2x2 or 3x3 ray matrix.
    position : float
        Ray height (m).
    slope : float
        Ray slope (rad).

    Returns
    -------
    tuple of float
        (position in m, slope in rad) after the element.
    """
    out = as_ray_matrix(matrix) @ np.array([position, slope, 1.0])
    return float(out[0]), float(out[1])


def is_symplectic(matrix: np.ndarray, rtol: float = 1e-12) -> bool:
    """Whether the 2x2 part of a ray matrix has determinant 1 (an element in air).

    Parameters
    ----------
    matrix : array_like
        A 2x2 or 3x3 ray matrix.
    rtol : float
        Allowed deviation of the determinant from 1.
    """
    array = as_ray_matrix(matrix)
    return math.isclose(float(np.linalg.det(array[:2, :2])), 1.0, rel_tol=rtol, abs_tol=rtol)
