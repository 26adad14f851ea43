"""Review rule about the paraxial model itself: is the beam slow enough for it?"""

from __future__ import annotations

import math
from collections.abc import Iterator

from benchcheck.optics.gaussian import waist_radius
from benchcheck.review import Finding, ReviewContext, ReviewRule

from benchcheck_plugins.review_common import mm

__all__ = ["PARAXIAL_LIMIT", "beam_numerical_aperture", "rules"]

#: Beam numerical aperture or chief-ray angle above which paraxial results stop being
#: trustworthy: 0.1 (sin θ and θ differ by 0.17 % there, tan θ by 0.33 %, and aberrations of
#: real optics grow quickly): common practice.
PARAXIAL_LIMIT = 0.1

_BASIS = ("beam numerical aperture λ M²/(π w0) (far-field half-angle of the embedded-Gaussian beam, "
          "Kogelnik and Li, Appl. Opt. 5, 1550, 1966) or chief-ray angle above 0.1 rad: paraxial results stop "
          "being trustworthy (common practice)")


def beam_numerical_aperture(wavelength: float, m2: float, waist: float) -> float:
    """Far-field half-angle divergence λ M²/(π w0) of a beam of waist radius ``waist`` (m).

    Kogelnik and Li, Appl. Opt. 5, 1550 (1966), with the embedded-Gaussian M² factor.
    """
    return wavelength * m2 / (math.pi * waist)


def paraxial_validity_findings(context: ReviewContext) -> Iterator[Finding]:
    """Planes where the beam leaving becomes too fast, or the chief ray too steep, for the paraxial model.

    Reported where the condition starts (the element that makes it), not at every plane after.
    """
    wavelength = context.layout.wavelength
    m2 = context.layout.source.m2
    for plane in context.trace.planes:
        numerical_aperture = max(beam_numerical_aperture(wavelength, m2[a], plane.waist[a]) for a in (0, 1))
        arriving = max(beam_numerical_aperture(wavelength, m2[a], waist_radius(plane.q_in[a], wavelength, m2[a]))
                       for a in (0, 1)) if plane.type != "source" else 0.0
        if numerical_aperture > PARAXIAL_LIMIT and (arriving <= PARAXIAL_LIMIT or plane.type == "source"):
            yield Finding(
                rule="paraxial_validity", severity="warning", element=plane.name,
                message=(f"the beam leaving here focuses to a waist of {mm(min(plane.waist))}: numerical aperture "
                         f"λ M²/(π w0) = {numerical_aperture:.3g}, above 0.1, so paraxial sizes and positions "
                         f"from here on are rough (fix: a longer focal length, or check with a non-paraxial model)."),
                basis=_BASIS,
                numbers={"numerical_aperture": numerical_aperture, "waist_m": min(plane.waist), "limit": PARAXIAL_LIMIT})
        angle = max(abs(plane.angle[0]), abs(plane.angle[1]))
        angle_in = max(abs(plane.angle_in[0]), abs(plane.angle_in[1])) if plane.type != "source" else 0.0
        if angle > PARAXIAL_LIMIT and angle_in <= PARAXIAL_LIMIT:
            yield Finding(
                rule="paraxial_validity", severity="warning", element=plane.name,
                message=(f"the chief ray leaves here at {angle * 1e3:.4g} mrad to the axis, above 0.1 rad: paraxial "
                         f"positions from here on are rough (fix: check the tilts and the hologram's deflection)."),
                basis=_BASIS, numbers={"angle_rad": angle, "limit": PARAXIAL_LIMIT})


def rules() -> list[ReviewRule]:
    """The paraxial-validity rule."""
    return [ReviewRule("paraxial_validity", paraxial_validity_findings,
                       "beam numerical aperture and chief-ray angle within the paraxial model", _BASIS)]
