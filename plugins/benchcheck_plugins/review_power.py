"""Review rules about power: irradiance against coating damage thresholds, and light
dumped at irises and stops. Every message carries the laser-safety caution."""

from __future__ import annotations

import math
from collections.abc import Iterator

from benchcheck.review import Finding, ReviewContext, ReviewRule

from benchcheck_plugins.review_common import arriving_share, mm, percent, with_safety

__all__ = ["DAMAGE_MARGIN", "BLOCKED_NOTE_SHARE", "CLASS_3B_LIMIT", "gaussian_peak_irradiance", "rules"]

#: Peak irradiance above half the rated damage threshold is a warning: a factor-2 margin is
#: common practice (from memory).
DAMAGE_MARGIN = 2.0
#: Blocked shares of the source power below this are rounding, not light on a dump.
BLOCKED_NOTE_SHARE = 1e-4
#: Blocked power above 0.5 W gets a warning: the upper limit of Class 3B for continuous-wave
#: lasers in IEC 60825-1 (from memory).
CLASS_3B_LIMIT = 0.5

_DAMAGE_BASIS = ("peak irradiance of a Gaussian 2P/(π wx wy) (Siegman, Lasers, 1986) at normal incidence against "
                 "the element's damage_threshold; above half of it a warning (factor-2 margin: common practice, "
                 "from memory); continuous wave")
_BLOCKED_BASIS = ("power blocked at irises and stops, from the wave simulation where it reaches the plane, else "
                  "from the trace; above 0.5 W a warning (Class 3B upper limit for continuous-wave lasers, "
                  "IEC 60825-1, from memory)")


def gaussian_peak_irradiance(power: float, w_x: float, w_y: float) -> float:
    """Peak irradiance 2P/(π w_x w_y) (W/m²) of an elliptical Gaussian of power ``power`` (W).

    1/e² radii ``w_x``, ``w_y`` in m (Siegman, Lasers, 1986, ch. 17: I(0) = 2P/(π w²) for a
    round beam).
    """
    return 2.0 * power / (math.pi * w_x * w_y)


def damage_threshold_findings(context: ReviewContext) -> Iterator[Finding]:
    """Elements whose peak irradiance reaches their rated damage threshold (or half of it)."""
    for element in context.layout.elements:
        threshold = element.value("damage_threshold")
        if threshold is None:
            continue
        if context.source_power is None:
            yield Finding(
                rule="damage_threshold", severity="note", element=element.name,
                message=with_safety("a damage threshold is given but [bench] power is not: the irradiance here "
                                    "cannot be checked."),
                basis=_DAMAGE_BASIS, numbers={"damage_threshold_w_per_m2": threshold})
            continue
        plane = context.trace.plane(element.name)
        power = context.source_power * arriving_share(plane)
        irradiance = gaussian_peak_irradiance(power, plane.w[0], plane.w[1])
        if irradiance * DAMAGE_MARGIN <= threshold:
            continue
        above = irradiance > threshold
        yield Finding(
            rule="damage_threshold", severity="error" if above else "warning", element=element.name,
            message=with_safety(
                f"peak irradiance 2P/(π wx wy) = {irradiance:.3g} W/m² ({power:.3g} W on w = {mm(plane.w[0])} × "
                f"{mm(plane.w[1])}) is {irradiance / threshold:.2g} × the rated {threshold:.3g} W/m²" +
                (": the coating will be damaged" if above else ", within a factor 2 of it") +
                " (fix: a larger beam here, or an optic rated higher)."),
            basis=_DAMAGE_BASIS,
            numbers={"irradiance_w_per_m2": irradiance, "damage_threshold_w_per_m2": threshold, "power_w": power})


def _blocked_shares(context: ReviewContext, apertures) -> dict[str, tuple[float, str]]:
    """Share of source power blocked at each aperture, and where the figure comes from."""
    shares = {}
    try:
        simulated = dict(context.simulation.losses)
    except Exception:  # the trace still gives a figure; the wave rules report the failure
        simulated = {}
    for element in apertures:
        if element.name in simulated:
            shares[element.name] = (simulated[element.name], "wave simulation")
        else:
            plane = context.trace.plane(element.name)
            shares[element.name] = (arriving_share(plane) * (1.0 - plane.passed), "paraxial trace")
    return shares


def blocked_power_findings(context: ReviewContext) -> Iterator[Finding]:
    """Light dumped at each iris and stop: a note, or a warning above 0.5 W."""
    apertures = context.elements("aperture")
    if not apertures:
        return
    shares = _blocked_shares(context, apertures)
    for element in apertures:
        share, origin = shares[element.name]
        if share <= BLOCKED_NOTE_SHARE:
            continue
        numbers = {"blocked_share_of_source": share}
        watts = ""
        severity = "note"
        if context.source_power is not None:
            blocked = share * context.source_power
            numbers["blocked_power_w"] = blocked
            watts = f" = {blocked:.3g} W"
            severity = "warning" if blocked > CLASS_3B_LIMIT else "note"
        yield Finding(
            rule="blocked_power", severity=severity, element=element.name,
            message=with_safety(f"{percent(share)} of the source power{watts} is blocked here ({origin}): the iris "
                                f"or stop must be a rated beam dump or send the light to one."),
            basis=_BLOCKED_BASIS, numbers=numbers)


def rules() -> list[ReviewRule]:
    """The power rules."""
    return [
        ReviewRule("damage_threshold", damage_threshold_findings,
                   "peak irradiance against each element's damage threshold", _DAMAGE_BASIS),
        ReviewRule("blocked_power", blocked_power_findings, "power dumped at irises and stops", _BLOCKED_BASIS),
    ]
