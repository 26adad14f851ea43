"""Laguerre-Gauss and Hermite-Gauss mode fields at their waist, normalised to unit power.

These are the target amplitudes of mode-generating holograms and the reference modes of
purity metrics. Fields follow DESIGN.md section 4 (exp(+ikz)); at the waist the modes are
real apart from the azimuthal factor exp(+i l φ) of the Laguerre-Gauss family.
"""

from __future__ import annotations

from math import factorial, pi, sqrt

import numpy as np
from scipy.special import eval_genlaguerre, eval_hermite

__all__ = ["laguerre_gauss", "hermite_gauss", "hermite_gauss_1d", "mode_peak_amplitude", "mode_target_amplitude"]


def _check_orders(waist: float, **orders: int) -> None:
    if not waist > 0:
        raise ValueError(f"mode waist must be positive, got {waist} m")
    for name, value in orders.items():
        if int(value) != value:
            raise ValueError(f"mode order {name} must be an integer, got {value}")


def laguerre_gauss(x: np.ndarray, y: np.ndarray, p: int, l: int, waist: float) -> np.ndarray:
    """Laguerre-Gauss mode LG(p, l) at its waist, unit power over the plane.

    u = sqrt(2 p! / (π (p+|l|)!)) / w · (√2 r/w)^|l| · L_p^|l|(2r²/w²) · exp(−r²/w²) · exp(+i l φ)

    Parameters
    ----------
    x, y : numpy.ndarray
        Transverse positions (m), broadcastable against each other.
    p : int
        Radial order, p >= 0.
    l : int
        Azimuthal order (topological charge), any sign.
    waist : float
        1/e² intensity radius w of the fundamental Gaussian of the family (m).

    Returns
    -------
    numpy.ndarray
        complex128 amplitude in 1/m, so that ∫|u|² dx dy = 1.

    Notes
    -----
    Siegman, *Lasers* (1986), ch. 16 (the cylindrical-coordinate modes at z = 0). The
    second-moment radius is w √(2p + |l| + 1) (Phillips and Andrews, Appl. Opt.
    22, 643, 1983).
    """
    _check_orders(waist, p=p, l=l)
    if p < 0:
        raise ValueError(f"radial order p must be >= 0, got {p}")
    p, l, abs_l = int(p), int(l), abs(int(l))
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    rho_squared = 2.0 * (x**2 + y**2) / waist**2  # 2r²/w²
    norm = sqrt(2.0 * factorial(p) / (pi * factorial(p + abs_l))) / waist
    radial = rho_squared ** (abs_l / 2.0) * eval_genlaguerre(p, abs_l, rho_squared) * np.exp(-rho_squared / 2.0)
    return norm * radial * np.exp(1j * l * np.arctan2(y, x))


def hermite_gauss_1d(x: np.ndarray, m: int, waist: float) -> np.ndarray:
    """One-axis Hermite-Gauss function, unit norm on the line (1/√m).

    u_m(x) = (2/π)^¼ / sqrt(2^m m! w) · H_m(√2 x / w) · exp(−x²/w²)  (Siegman, *Lasers*, ch. 16).
    """
    _check_orders(waist, m=m)
    if m < 0:
        raise ValueError(f"Hermite-Gauss order must be >= 0, got {m}")
    m = int(m)
    x = np.asarray(x, dtype=float)
    norm = (2.0 / pi) ** 0.25 / sqrt(2.0**m * factorial(m) * waist)
    t = sqrt(2.0) * x / waist
    return norm * eval_hermite(m, t) * np.exp(-(t**2) / 2.0)


def hermite_gauss(x: np.ndarray, y: np.ndarray, m: int, n: int, waist: float) -> np.ndarray:
    """Hermite-Gauss mode HG(m, n) at its waist, unit power over the plane.

    Parameters
    ----------
    x, y : numpy.ndarray
        Transverse positions (m), broadcastable.
    m, n : int
        Orders along x and y (>= 0).
    waist : float
        1/e² intensity radius of the fundamental mode (m).

    Returns
    -------
    numpy.ndarray
        complex128 amplitude in 1/m; ∫|u|² dx dy = 1.

    Notes
    -----
    Product of :func:`hermite_gauss_1d` along x and y (Siegman, *Lasers*, 1986, ch. 16).
    Second-moment radii w √(2m+1) along x and w √(2n+1) along y.
    """
    return (hermite_gauss_1d(x, m, waist) * hermite_gauss_1d(y, n, waist)).astype(complex)


def mode_peak_amplitude(family: str, orders: tuple[int, int], waist: float) -> float:
    """Largest |u| of a mode (1/m), found on a dense 1-D profile so it does not depend on a panel.

    Used to scale a mode to a target amplitude with max |a| = 1 for the encodings. The
    profile spacing (1/4000 of 6 second-moment radii) puts the sampled peak within ~1e-6 of
    the true one, far below any encoding's amplitude resolution.
    """
    first, second = orders
    if family == "lg":
        radius = waist * sqrt(2 * first + abs(second) + 1)
        r = np.linspace(0.0, 6.0 * radius, 24001)
        return float(np.max(np.abs(laguerre_gauss(r, 0.0, first, second, waist))))
    if family == "hg":
        peaks = []
        for order in (first, second):
            s = np.linspace(0.0, 6.0 * waist * sqrt(2 * order + 1), 24001)
            peaks.append(np.max(np.abs(hermite_gauss_1d(s, order, waist))))
        return float(peaks[0] * peaks[1])
    raise ValueError(f"unknown mode family {family!r}; use 'lg' or 'hg'")


def mode_target_amplitude(
    family: str, x: np.ndarray, y: np.ndarray, orders: tuple[int, int], waist: float
) -> np.ndarray:
    """A mode scaled to peak modulus 1: the complex target of a mode-generating hologram.

    Parameters
    ----------
    family : str
        "lg" (orders = (p, l)) or "hg" (orders = (m, n)).
    x, y : numpy.ndarray
        Positions (m) relative to the mode centre, broadcastable.
    orders : tuple of int
        Mode orders.
    waist : float
        1/e² radius of the family's fundamental mode (m).

    Returns
    -------
    numpy.ndarray
        complex128 with |a| <= 1 (dimensionless).
    """
    mode = laguerre_gauss if family == "lg" else hermite_gauss
    values = mode(x, y, orders[0], orders[1], waist) / mode_peak_amplitude(family, orders, waist)
    modulus = np.abs(values)
    # a sampled value can sit a hair above the dense-profile peak; keep |a| <= 1
    return np.where(modulus > 1.0, values / np.maximum(modulus, 1.0), values)
