"""Review rules about the Fourier plane: where the orders land against the iris, and how
much of the intended beam's spectrum the iris cuts."""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from benchcheck.evaluate.masks import aperture_mask
from benchcheck.review import Finding, ReviewContext, ReviewRule

from benchcheck_plugins.review_common import mm, percent, radial, with_safety

__all__ = ["SPOT_RADII", "CENTRING_SHARE", "SPECTRUM_CUT_LIMIT", "iris_radius", "rules"]

#: The first order passes whole and the zero order is blocked when each is at least two
#: 1/e² spot radii inside, resp. outside, the iris edge: a Gaussian keeps exp(−8) = 3.4e-4
#: of its power beyond 2w (Siegman, Lasers, 1986), hence "2 spot radii".
SPOT_RADII = 2.0
#: The first order should sit within a quarter of the iris radius of its centre, so the iris
#: cuts the shaped beam's spectrum evenly: our own rule of thumb.
CENTRING_SHARE = 0.25
#: Share of the intended beam's spectrum an iris may cut before it is flagged: 1 %, our own
#: rule of thumb.
SPECTRUM_CUT_LIMIT = 0.01

_ORDERS_BASIS = ("Fourier-plane spot radius λ f M²/(π w) (Goodman, Introduction to Fourier Optics, ch. 5), taken "
                 "as the traced 1/e² radius at the iris; first order ≥ 2 spot radii inside the edge and within "
                 "a quarter radius of the centre, zero order ≥ 2 spot radii outside (exp(−8) = 3.4e-4 beyond 2w; "
                 "the quarter radius is our own rule of thumb)")
_CUT_BASIS = ("power of the ideal shaped field (the intended order) outside the iris, from the wave simulation; "
              "more than 1 % flagged (our own rule of thumb)")


def iris_radius(element) -> float:
    """Radius of an aperture's opening (m): half the diameter, or half the shorter side."""
    if element.value("diameter") is not None:
        return 0.5 * element.value("diameter")
    return 0.5 * min(element.value("size"))


def _relay_spot_formula(context: ReviewContext, element) -> float | None:
    """λ f M²/(π w) for the Fourier plane of a relay, w the beam radius at its first lens."""
    if element.parent is None:
        return None
    try:
        lens = context.layout.element(f"{element.parent}.lens1")
    except KeyError:
        return None
    w = max(context.trace.plane(lens.name).w)
    m2 = max(context.layout.source.m2)
    return context.layout.wavelength * abs(lens.value("focal_length")) * m2 / (np.pi * w)


def fourier_orders_findings(context: ReviewContext) -> Iterator[Finding]:
    """Irises downstream of a deflecting hologram: does the first order pass whole and the zero order stay out?"""
    for element in context.layout.elements:
        plane = context.trace.plane(element.name)
        if plane.zero_order_offset is None:
            continue
        separation = radial(plane.offset[0] - plane.zero_order_offset[0], plane.offset[1] - plane.zero_order_offset[1])
        spot = max(plane.w)
        formula = _relay_spot_formula(context, element)
        numbers = {"spot_radius_m": spot, "order_separation_m": separation}
        if formula is not None:
            numbers["spot_radius_formula_m"] = formula
        if element.type == "plane" and element.parent is not None and separation > SPOT_RADII * spot:
            yield Finding(
                rule="fourier_orders", severity="note", element=element.name,
                message=(f"no iris in this Fourier plane: the zero order, {mm(separation)} from the first order, "
                         f"goes on downstream."),
                basis=_ORDERS_BASIS, numbers=numbers)
            continue
        if element.type != "aperture":
            continue
        center_x, center_y = element.value("center", (0.0, 0.0))
        center = (center_x + element.x, center_y + element.y)
        radius = iris_radius(element)
        first = radial(plane.offset[0] - center[0], plane.offset[1] - center[1])
        zero = radial(plane.zero_order_offset[0] - center[0], plane.zero_order_offset[1] - center[1])
        numbers.update(iris_radius_m=radius, first_order_decentre_m=first, zero_order_distance_m=zero)
        if first + SPOT_RADII * spot > radius:
            yield Finding(
                rule="fourier_orders", severity="error", element=element.name,
                message=(f"the first order (spot radius {mm(spot)}, {mm(first)} from the iris centre) does not pass "
                         f"the {mm(radius)} iris radius whole: it needs {mm(first + SPOT_RADII * spot)} (fix: a "
                         f"larger iris, centred on the first order)."),
                basis=_ORDERS_BASIS, numbers=numbers)
        elif first > CENTRING_SHARE * radius:
            yield Finding(
                rule="fourier_orders", severity="warning", element=element.name,
                message=(f"the first order sits {mm(first)} from the iris centre, more than a quarter of its "
                         f"{mm(radius)} radius: the iris cuts the shaped beam's spectrum unevenly (fix: centre the "
                         f"iris on the first order)."),
                basis=_ORDERS_BASIS, numbers=numbers)
        edge = zero - radius
        numbers["zero_order_outside_m"] = edge
        if edge <= 0:
            yield Finding(
                rule="fourier_orders", severity="error", element=element.name,
                message=with_safety(
                    f"the zero order lands {mm(zero)} from the iris centre, inside its {mm(radius)} radius: it "
                    f"passes the iris (orders {mm(separation)} apart, spot radius {mm(spot)}; fix: a shorter "
                    f"carrier period or a smaller iris)."),
                basis=_ORDERS_BASIS, numbers=numbers)
        elif edge < SPOT_RADII * spot:
            yield Finding(
                rule="fourier_orders", severity="warning", element=element.name,
                message=with_safety(
                    f"the zero order lands only {mm(edge)} outside the iris edge, less than 2 spot radii "
                    f"({mm(SPOT_RADII * spot)}): part of it passes (fix: a shorter carrier period or a smaller "
                    f"iris)."),
                basis=_ORDERS_BASIS, numbers=numbers)


def iris_spectrum_cut_findings(context: ReviewContext) -> Iterator[Finding]:
    """Irises that cut more than 1 % of the intended beam (the ideal shaped field) at their plane."""
    apertures = context.elements("aperture")
    if not apertures:
        return
    simulation = context.simulation
    blocked = dict(simulation.losses)
    for element in apertures:
        if element.name not in simulation.planes:
            continue
        # The metric context gives the target whether the simulation made it or makes it on request.
        target = simulation.context_for(element.name).get("target")
        if target is None:
            continue
        intensity = np.abs(target.values.astype(np.complex128)) ** 2
        total = float(intensity.sum())
        if not total > 0:
            continue
        open_share = aperture_mask(element, target.grid).astype(float) ** 2
        cut = 1.0 - float((intensity * open_share).sum()) / total
        if cut <= SPECTRUM_CUT_LIMIT:
            continue
        numbers = {"intended_cut_share": cut, "blocked_share_of_source": blocked.get(element.name, 0.0)}
        watts = ""
        if context.source_power is not None:
            numbers["blocked_power_w"] = blocked.get(element.name, 0.0) * context.source_power
            watts = f" ({numbers['blocked_power_w']:.3g} W with all other light stopped here)"
        yield Finding(
            rule="iris_spectrum_cut", severity="warning", element=element.name,
            message=with_safety(
                f"the iris cuts {percent(cut)} of the intended beam's spectrum at this plane, so the shaped beam "
                f"loses detail and power{watts} (fix: a larger iris, or a longer first focal length)."),
            basis=_CUT_BASIS, numbers=numbers)


def rules() -> list[ReviewRule]:
    """The Fourier-plane rules."""
    return [
        ReviewRule("fourier_orders", fourier_orders_findings,
                   "zero and first orders against the iris in a Fourier plane", _ORDERS_BASIS),
        ReviewRule("iris_spectrum_cut", iris_spectrum_cut_findings,
                   "share of the intended beam's spectrum an iris cuts (wave simulation)", _CUT_BASIS),
    ]
