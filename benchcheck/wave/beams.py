"""Sample a Gaussian beam on a grid from its paraxial state (q parameter, chief ray)."""

from __future__ import annotations

import numpy as np

from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

__all__ = ["gaussian_field", "gaussian_profiles", "beam_profile_1d"]


def beam_profile_1d(
    coordinates: np.ndarray, wavelength: float, q: complex, offset: float = 0.0, angle: float = 0.0
) -> np.ndarray:
    """Unit-peak Gaussian beam along one axis.

    With 1/q = 1/R − iλ/(πw²) (Kogelnik and Li, Appl. Opt. 5, 1550 (1966)) and fields
    exp(+ikz) (DESIGN.md section 4) the field is exp(iπ x²/(λR)) exp(−x²/w²) =
    exp(iπ x² conj(1/q)/λ): a diverging beam (R > 0) has phase growing outward. The chief
    ray's slope adds exp(ik·angle·(x − offset)).

    Parameters
    ----------
    coordinates : numpy.ndarray
        Sample positions (m).
    wavelength : float
        Vacuum wavelength (m).
    q : complex
        Complex beam parameter (m); Im(1/q) must be negative (a beam that decays).
    offset : float
        Chief-ray position (m).
    angle : float
        Chief-ray slope (rad).
    """
    inverse_q = 1.0 / complex(q)
    if not inverse_q.imag < 0.0:
        raise ValueError(f"q = {q} does not describe a decaying Gaussian beam (Im(1/q) must be < 0)")
    relative = np.asarray(coordinates, dtype=np.float64) - offset
    exponent = (1j * np.pi / wavelength) * inverse_q.conjugate() * relative**2
    if angle:
        exponent += 1j * (2.0 * np.pi / wavelength) * angle * relative
    return np.exp(exponent)


def _radius_from_q(q: complex, wavelength: float) -> float:
    inverse_q = 1.0 / complex(q)
    if not inverse_q.imag < 0.0:
        raise ValueError(f"q = {q} does not describe a decaying Gaussian beam (Im(1/q) must be < 0)")
    return float(np.sqrt(-wavelength / (np.pi * inverse_q.imag)))


def gaussian_field(
    grid: Grid,
    wavelength: float,
    q_x: complex,
    q_y: complex,
    offset: tuple[float, float] = (0.0, 0.0),
    angle: tuple[float, float] = (0.0, 0.0),
    power: float = 1.0,
    dtype: type = np.complex64,
    plane: str = "",
) -> Field:
    """A Gaussian beam sampled on a grid.

    The amplitude is set analytically: ∫∫|E|² dx dy = P for E = a exp(−x²/wx² − y²/wy²)
    gives a = sqrt(2P/(π wx wy)) (Siegman, Lasers (1986), ch. 17). A beam partly outside
    the window therefore shows less power there: nothing is renormalised.

    Parameters
    ----------
    grid : Grid
        Where to sample (m).
    wavelength : float
        Vacuum wavelength (m).
    q_x, q_y : complex
        Complex beam parameters per axis (m), 1/q = 1/R − iλ/(πw²), for the coherent field
        actually sampled (the caller passes w and R of the real beam).
    offset : tuple of float
        Chief-ray position (x, y) in m.
    angle : tuple of float
        Chief-ray slope (x, y) in rad.
    power : float
        Power of the whole beam (W, or relative units).
    dtype : numpy dtype
        complex64 (default) or complex128.
    plane : str
        Name of the plane.

    Returns
    -------
    Field
    """
    profile_y, profile_x = gaussian_profiles(grid, wavelength, q_x, q_y, offset, angle, power, dtype)
    # separable beam: one outer product of 1-D profiles, no N x N complex exponential
    return Field(np.multiply.outer(profile_y, profile_x), grid, wavelength, plane)


def gaussian_profiles(
    grid: Grid,
    wavelength: float,
    q_x: complex,
    q_y: complex,
    offset: tuple[float, float] = (0.0, 0.0),
    angle: tuple[float, float] = (0.0, 0.0),
    power: float = 1.0,
    dtype: type = np.complex64,
) -> tuple[np.ndarray, np.ndarray]:
    """(profile along y, profile along x) whose outer product is :func:`gaussian_field`'s values.

    Same arguments as :func:`gaussian_field`; the power's amplitude rides on the x profile.
    """
    w_x = _radius_from_q(q_x, wavelength)
    w_y = _radius_from_q(q_y, wavelength)
    amplitude = np.sqrt(2.0 * power / (np.pi * w_x * w_y))
    profile_x = beam_profile_1d(grid.x, wavelength, q_x, offset[0], angle[0]) * amplitude
    profile_y = beam_profile_1d(grid.y, wavelength, q_y, offset[1], angle[1])
    return profile_y.astype(dtype), profile_x.astype(dtype)
