"""Complex-amplitude encodings for phase-only modulators.

A phase-only panel cannot show a complex target a = A exp(iΦ) directly. Each encoding
below writes a phase ψ(A, Φ + θ), θ being a carrier grating, so that the first diffraction
order of the carrier carries (a multiple of) the wanted field and the rest of the light
goes to other orders, which an iris in the Fourier plane removes. The comparison of these
methods is in Clark et al., Opt. Express 24, 6249 (2016).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.special import j1, jnp_zeros

__all__ = [
    "ENCODING_METHODS",
    "ENCODING_ALIASES",
    "encode",
    "arrizon_depth",
    "bolduc_depth",
    "resolve_encoding",
]

ENCODING_METHODS = ("phase", "arrizon3", "bolduc", "davis")

# "complex" in a layout names the Bolduc encoding: of the three published forms it is the one
# whose first order is exactly A·exp(iΦ) for every A in [0, 1] (a Fourier-series identity,
# checked in the tests), and it reaches full efficiency where A = 1, whereas the Arrizón
# type-3 first order is capped at J1_max² ≈ 0.339 and Davis's is sinc(1 − A), not ∝ A.
ENCODING_ALIASES = {"complex": "bolduc"}

_TABLE_SIZE = 100_001


@lru_cache(maxsize=1)
def _bessel_inverse_table() -> tuple[np.ndarray, np.ndarray, float]:
    """J1 on [0, x*], x* its first maximum, where it rises monotonically (so it inverts)."""
    x_max = float(jnp_zeros(1, 1)[0])  # first zero of J1': 1.841184
    x = np.linspace(0.0, x_max, _TABLE_SIZE)
    return j1(x), x, float(j1(x_max))


def arrizon_depth(amplitude: np.ndarray) -> np.ndarray:
    """f(A) of the Arrizón type-3 encoding: the root of J1(f) = J1_max · A on [0, 1.8412].

    Parameters
    ----------
    amplitude : numpy.ndarray
        Target modulus A in [0, 1] (values outside are clipped).

    Returns
    -------
    numpy.ndarray
        Modulation depth f (radians).

    Notes
    -----
    Arrizón et al., JOSA A 24, 3500 (2007), type 3. The published constant 0.5819 is J1 at
    its first maximum rounded; the exact maximum from scipy (0.581865) is used so that A = 1
    maps onto the table end. Inverse by linear interpolation of a 100 001-point monotone
    table: the error in f is below one table step (1.8e-5 rad), so the error in J1(f) is
    below max|J1'| · step ≈ 1e-5.
    """
    bessel_values, depths, bessel_max = _bessel_inverse_table()
    target = bessel_max * np.clip(np.asarray(amplitude, dtype=float), 0.0, 1.0)
    return np.interp(target, bessel_values, depths)


def bolduc_depth(amplitude: np.ndarray) -> np.ndarray:
    """M(A) of the Bolduc encoding: M = 1 + sinc⁻¹(A)/π, i.e. sin(π(1−M)) / (π(1−M)) = A.

    Parameters
    ----------
    amplitude : numpy.ndarray
        Target modulus A in [0, 1] (clipped).

    Returns
    -------
    numpy.ndarray
        Blaze depth M in [0, 1] (fraction of 2π).

    Notes
    -----
    Bolduc et al., Opt. Lett. 38, 3546 (2013). sinc⁻¹ is taken on the branch where the
    unnormalised sinc falls from 1 to 0 (argument −π..0); numpy's normalised sinc is
    monotone on [0, 1], inverted here by a 100 001-point table.
    """
    s = np.linspace(0.0, 1.0, _TABLE_SIZE)
    sinc_values = np.sinc(s)[::-1]  # increasing from 0 to 1
    one_minus_m = np.interp(np.clip(np.asarray(amplitude, dtype=float), 0.0, 1.0), sinc_values, s[::-1])
    return 1.0 - one_minus_m


def resolve_encoding(method: str) -> str:
    """The canonical method name for `method` (applies aliases such as "complex")."""
    name = ENCODING_ALIASES.get(method, method)
    if name not in ENCODING_METHODS:
        known = ", ".join(ENCODING_METHODS + tuple(ENCODING_ALIASES))
        raise ValueError(f"unknown hologram encoding {method!r}; use one of {known}")
    return name


def encode(amplitude: np.ndarray, carrier_phase: np.ndarray, method: str) -> np.ndarray:
    """Phase (radians) that puts the complex target into the carrier's first order.

    Parameters
    ----------
    amplitude : numpy.ndarray
        Complex target a with |a| <= 1 (larger moduli are clipped to 1).
    carrier_phase : numpy.ndarray
        Phase θ (radians) of the carrier grating (plus any term meant for the first order
        only, such as a lens), broadcastable against `amplitude`.
    method : str
        "phase": ψ = Φ + θ (phase only, the modulus is ignored);
        "arrizon3": ψ = f(A) sin(Φ + θ), J1(f(A)) = 0.5819 A
        (Arrizón et al., JOSA A 24, 3500, 2007);
        "bolduc": ψ = M mod(Φ − πM + θ, 2π), M = 1 + sinc⁻¹(A)/π
        (Bolduc et al., Opt. Lett. 38, 3546, 2013);
        "davis": ψ = A · wrap(Φ + θ) with wrap into [−π, π)
        (Davis et al., Appl. Opt. 38, 5004, 1999);
        "complex": alias of "bolduc".

    Returns
    -------
    numpy.ndarray
        Phase in radians, not wrapped (the caller wraps the sum of all terms).

    Notes
    -----
    First-order amplitudes: −A exp(iΦ) for "bolduc" (the sign is a constant piston of the
    published form, harmless); J1(f(A)) exp(iΦ) = 0.5819 A exp(iΦ) for
    "arrizon3" (Jacobi-Anger expansion); sinc(1 − A) exp(iΦ) for "davis", which is close to
    A only for small A and near A = 1 (the reason for Bolduc's correction).
    """
    name = resolve_encoding(method)
    a = np.asarray(amplitude)
    target_phase = np.angle(a) + np.asarray(carrier_phase, dtype=float)
    if name == "phase":
        return target_phase
    modulus = np.clip(np.abs(a), 0.0, 1.0)
    if name == "arrizon3":
        return arrizon_depth(modulus) * np.sin(target_phase)
    if name == "bolduc":
        depth = bolduc_depth(modulus)
        return depth * np.mod(target_phase - np.pi * depth, 2.0 * np.pi)
    # davis: wrap into [−π, π) before scaling; scaling a [0, 2π) ramp would shift the phase
    # of the first order by π(A − 1) (REFERENCES.md, traps)
    return modulus * (np.mod(target_phase + np.pi, 2.0 * np.pi) - np.pi)
