"""Fraction of a Gaussian beam's power that passes an aperture, centred or decentred.

The beam is the elliptical Gaussian ``I ∝ exp(-2 (x - x0)²/w_x² - 2 (y - y0)²/w_y²)``, w the
1/e² intensity radius, so along each axis the intensity is a normal distribution of
standard deviation w/2. Transmission is the share of that distribution inside the
aperture. These are pure numbers: callers that show a person transmitted or blocked
power must show it with a laser-safety caution (laser light can blind and burn; follow
local rules and the site's laser safety officer).
"""

from __future__ import annotations

import math

from scipy import integrate, special

__all__ = [
    "circular_transmission",
    "rectangular_transmission",
    "annular_transmission",
]

# Past this many standard deviations the Gaussian's share is below 1e-40: no contribution.
_NEGLIGIBLE_SIGMAS = 13.0
# Loss below which an elliptical beam's clipping is taken from the round-beam law.
_NEARLY_UNCLIPPED = 1e-7


def _check_widths(w_x: float, w_y: float) -> None:
    if not (w_x > 0 and w_y > 0):
        raise ValueError(f"beam radii must be positive, got w_x = {w_x}, w_y = {w_y}")


def _round_beam_disc(radius: float, w: float, offset: float) -> float:
    """Non-central chi-square with 2 degrees of freedom in units of w/2."""
    return float(special.chndtr((2.0 * radius / w) ** 2, 2.0, (2.0 * offset / w) ** 2))


def _elliptical_beam_disc(
    radius: float, w_x: float, w_y: float, offset_x: float, offset_y: float
) -> float:
    """Share of an elliptical Gaussian inside a disc, as a 1-D integral over x.

    For each x the y-integral across the chord is an error-function difference; with
    x = a sin φ the chord half-length is a cos φ and the integrand is smooth in φ.
    """
    sigma_x, sigma_y = w_x / 2.0, w_y / 2.0
    low = max(-radius, offset_x - _NEGLIGIBLE_SIGMAS * sigma_x)
    high = min(radius, offset_x + _NEGLIGIBLE_SIGMAS * sigma_x)
    if low >= high:
        return 0.0
    phi_low, phi_high = math.asin(low / radius), math.asin(high / radius)

    def integrand(phi: float) -> float:
        x = radius * math.sin(phi)
        half_chord = radius * math.cos(phi)
        share_y = special.ndtr((half_chord - offset_y) / sigma_y) - special.ndtr(
            (-half_chord - offset_y) / sigma_y
        )
        density_x = math.exp(-0.5 * ((x - offset_x) / sigma_x) ** 2) / sigma_x
        return density_x * share_y * half_chord / math.sqrt(2.0 * math.pi)

    value, _ = integrate.quad(integrand, phi_low, phi_high, epsabs=1e-13, epsrel=1e-11, limit=200)
    return min(max(value, 0.0), 1.0)


def circular_transmission(
    radius: float, w_x: float, w_y: float, offset_x: float = 0.0, offset_y: float = 0.0
) -> float:
    """Fraction of a Gaussian beam's power inside a circular aperture.

    Round beam: ``ncx2.cdf((2a/w)², 2, (2d/w)²)`` with d = hypot(offset_x, offset_y),
    the non-central chi-square law of a displaced 2-D normal distribution; centred it
    is ``1 - exp(-2a²/w²)`` (Siegman, Lasers, 1986, ch. 17). Elliptical beam: adaptive
    quadrature (scipy.integrate.quad) of an error-function difference across the
    aperture, accurate to about 1e-11.

    Parameters
    ----------
    radius : float
        Aperture radius a (m); ``math.inf`` passes everything.
    w_x, w_y : float
        1/e² intensity radii of the beam along x and y (m).
    offset_x, offset_y : float
        Beam centre relative to the aperture centre (m).

    Returns
    -------
    float
        Transmitted fraction in [0, 1].
    """
    _check_widths(w_x, w_y)
    if radius <= 0.0:
        return 0.0
    if math.isinf(radius):
        return 1.0
    # Fast exit: when the disc holds a centred disc of 13 standard deviations (w/2) of the
    # widest axis, the power outside is below 1e-36, far under any share worth reporting.
    if radius - math.hypot(offset_x, offset_y) > _NEGLIGIBLE_SIGMAS * max(w_x, w_y) / 2:
        return 1.0
    offset = math.hypot(offset_x, offset_y)
    if w_x == w_y:
        return _round_beam_disc(radius, w_x, offset)
    # Nearly unclipped elliptical beams (the usual clear aperture): when even a round beam of
    # the larger radius loses under 1e-7, the round law with the geometric-mean radius gives the
    # loss to within its own size, so the transmission is right to ~1e-7 absolute without
    # the quadrature (the trace's hot path; the accuracy asked of a trace is 1e-6 relative).
    if 1.0 - _round_beam_disc(radius, max(w_x, w_y), offset) < _NEARLY_UNCLIPPED:
        return _round_beam_disc(radius, math.sqrt(w_x * w_y), offset)
    return _elliptical_beam_disc(radius, w_x, w_y, offset_x, offset_y)


def _slit_share(half_width: float, w: float, offset: float) -> float:
    if math.isinf(half_width):
        return 1.0
    root_two_over_w = math.sqrt(2.0) / w
    return 0.5 * float(
        special.erf(root_two_over_w * (half_width - offset))
        + special.erf(root_two_over_w * (half_width + offset))
    )


def rectangular_transmission(
    half_width_x: float,
    half_width_y: float,
    w_x: float,
    w_y: float,
    offset_x: float = 0.0,
    offset_y: float = 0.0,
) -> float:
    """Fraction of a Gaussian beam's power inside a rectangular aperture.

    The Gaussian separates in x and y, so the share is a product of two error-function
    differences, ``½[erf(√2 (h - x0)/w) + erf(√2 (h + x0)/w)]`` per axis (Siegman,
    Lasers, 1986, ch. 17, applied per axis).

    Parameters
    ----------
    half_width_x, half_width_y : float
        Half-widths of the aperture (m); ``math.inf`` for an open axis.
    w_x, w_y : float
        1/e² intensity radii of the beam (m).
    offset_x, offset_y : float
        Beam centre relative to the aperture centre (m).

    Returns
    -------
    float
        Transmitted fraction in [0, 1].
    """
    _check_widths(w_x, w_y)
    if half_width_x <= 0.0 or half_width_y <= 0.0:
        return 0.0
    return _slit_share(half_width_x, w_x, offset_x) * _slit_share(half_width_y, w_y, offset_y)


def annular_transmission(
    outer_radius: float,
    stop_radius: float,
    w_x: float,
    w_y: float,
    offset_x: float = 0.0,
    offset_y: float = 0.0,
) -> float:
    """Fraction of a Gaussian beam's power through a circular aperture with a central stop.

    The outer disc's share minus the stop's disc (both from :func:`circular_transmission`).

    Parameters
    ----------
    outer_radius : float
        Radius of the clear aperture (m).
    stop_radius : float
        Radius of the opaque central stop (m), at most ``outer_radius``.
    w_x, w_y : float
        1/e² intensity radii of the beam (m).
    offset_x, offset_y : float
        Beam centre relative to the common centre of aperture and stop (m).

    Returns
    -------
    float
        Transmitted fraction in [0, 1].
    """
    if stop_radius > outer_radius:
        raise ValueError(
            f"central stop radius {stop_radius} m exceeds the aperture radius {outer_radius} m"
        )
    outer = circular_transmission(outer_radius, w_x, w_y, offset_x, offset_y)
    stop = circular_transmission(stop_radius, w_x, w_y, offset_x, offset_y)
    return max(outer - stop, 0.0)
