"""Review rules about the modulator and its hologram: fill, aliasing, phase stroke, flat-top β."""

from __future__ import annotations

import math
from collections.abc import Iterator

import numpy as np

from benchcheck.optics.element_actions import hologram_deflection
from benchcheck.review import Finding, ReviewContext, ReviewRule
from benchcheck.wave.holograms import flat_top_beta

from benchcheck_plugins.review_apertures import HEAVY_CLIPPING
from benchcheck_plugins.review_common import mm, percent

__all__ = [
    "OVERFILL_LOSS",
    "UNDERFILL_SHARE",
    "ZERO_ORDER_LIMIT",
    "BETA_POOR",
    "BETA_GOOD",
    "FLAT_TOP_WAIST_MISMATCH",
    "blaze_order_share",
    "hologram_phase_steps",
    "rules",
]

#: Clipping at the active area worth a finding: the share a round aperture of π w leaves
#: out, exp(−π²/2) = 7.2e-3 (the π w rule of clear apertures: common practice).
OVERFILL_LOSS = math.exp(-math.pi**2 / 2)
#: A beam diameter 2w under 30 % of the panel's short side uses few of its pixels: our own
#: rule of thumb.
UNDERFILL_SHARE = 0.30
#: Zero-order share of a blazed hologram worth a warning: 1e-3, our own rule of thumb.
ZERO_ORDER_LIMIT = 1e-3
#: Romero-Dickey shaping parameter thresholds (from memory): β < 4 poor, 4-32 diffraction
#: visible, > 32 good.
BETA_POOR = 4.0
BETA_GOOD = 32.0
#: Relative mismatch between a flat-top hologram's design waist and the traced beam worth a
#: warning: 5 %, our own rule of thumb.
FLAT_TOP_WAIST_MISMATCH = 0.05

_FILL_BASIS = ("overfill: clipping at the active area from the trace, flagged above exp(−π²/2) = 7.2e-3 "
               "(the share a π w aperture leaves out: common practice); underfill: 2w under 30 % of the "
               "short side (our own rule of thumb)")
_ALIAS_BASIS = ("sampling theorem: a phase sampled once per pixel aliases where it changes by more than π per "
                "pixel; lens term 2π p r/(λ f) at r = 2w, axicon 2π p sin α/λ, carrier 2π/N (N ≥ 2 px), "
                "flat top 2π p y0/(λ f) at its edge (stationary phase)")
_STROKE_BASIS = ("standard grating theory: a blaze of depth α·2π, α = λ0/λ, sends sinc²(m − α) into order m; "
                 "zero-order share above 1e-3 flagged (our own rule of thumb)")
_BETA_BASIS = ("Romero and Dickey, JOSA A 13, 751 (1996): β = 2√(2π) r0 y0/(f λ); thresholds β < 4 poor, "
               "4-32 diffraction visible, > 32 good: from memory")
_WAIST_BASIS = ("a Gaussian-to-flat-top phase is designed for one input waist; more than 5 % mismatch with the "
                "traced beam flagged (our own rule of thumb)")


def _design_wavelength(context: ReviewContext, element) -> float:
    return element.value("design_wavelength") or context.layout.wavelength


def modulator_fill_findings(context: ReviewContext) -> Iterator[Finding]:
    """Beams that overfill a modulator's active area (clipping) or use few of its pixels."""
    for element in context.elements("modulator"):
        plane = context.trace.plane(element.name)
        columns, rows = element.value("pixels")
        pitch_x, pitch_y = element.value("pixel_pitch")
        width, height = columns * pitch_x * math.cos(element.value("incidence", 0.0)), rows * pitch_y
        short_side = min(width, height)
        w = max(plane.w)
        loss = 1.0 - plane.passed
        numbers = {"w_m": w, "active_width_m": width, "active_height_m": height, "blocked_share": loss,
                   "fill_share": 2 * w / short_side}
        if loss > OVERFILL_LOSS:
            yield Finding(
                rule="modulator_fill", severity="error" if loss > HEAVY_CLIPPING else "warning", element=element.name,
                message=(f"the beam (w = {mm(w)}) overfills the {mm(width)} × {mm(height)} active area: "
                         f"{percent(loss)} of it misses the pixels (fix: a smaller beam, e.g. a weaker expander)."),
                basis=_FILL_BASIS, numbers=numbers)
        elif 2 * w < UNDERFILL_SHARE * short_side:
            yield Finding(
                rule="modulator_fill", severity="warning", element=element.name,
                message=(f"the beam diameter 2w = {mm(2 * w)} covers {percent(2 * w / short_side)} of the "
                         f"{mm(short_side)} short side ({2 * w / min(pitch_x, pitch_y):.0f} pixels across): the "
                         f"hologram uses few of the panel's pixels (fix: expand the beam to about half the short "
                         f"side)."),
                basis=_FILL_BASIS, numbers=numbers)


def hologram_phase_steps(element, w: float, design_wavelength: float) -> dict[str, float]:
    """Largest phase step per pixel (rad) of each hologram term, at r = 2w where it grows with r.

    Parameters
    ----------
    element : Element
        A modulator.
    w : float
        1/e² radius of the beam on the panel (m).
    design_wavelength : float
        Wavelength the hologram is computed for (m).

    Returns
    -------
    dict
        ``carrier_step_rad`` 2π/N (N the period in pixels), ``lens_step_rad`` 2π p r |Σ 1/f|/λ at
        r = 2w, ``axicon_step_rad`` 2π p sin α/λ, ``flat_top_step_rad`` 2π p y0/(λ f) (the flat
        top's edge ray, stationary phase), and ``step_rad`` their sum: the gradients add at worst.
        The vortex term l/r is singular at the centre for any design and is left out.
    """
    hologram = element.value("hologram") or {}
    pattern = hologram.get("pattern")
    pitch = min(element.value("pixel_pitch"))
    radius = 2.0 * w
    steps = {"carrier_step_rad": 0.0, "lens_step_rad": 0.0, "axicon_step_rad": 0.0, "flat_top_step_rad": 0.0}
    periods = [hologram["carrier"]["period_px"]] if "carrier" in hologram else []
    if pattern == "grating" and "period_px" in hologram:
        periods.append(hologram["period_px"])
    steps["carrier_step_rad"] = sum(2.0 * math.pi / period for period in periods)
    _, _, lens_power = hologram_deflection(element, design_wavelength)
    steps["lens_step_rad"] = 2.0 * math.pi * pitch * radius * abs(lens_power) / design_wavelength
    if pattern == "axicon":
        steps["axicon_step_rad"] = 2.0 * math.pi * pitch * abs(math.sin(hologram.get("cone_angle", 0.0))) / design_wavelength
    if pattern == "flat_top":
        half_width = 0.5 * hologram["size"]
        steps["flat_top_step_rad"] = 2.0 * math.pi * pitch * half_width / (design_wavelength * abs(hologram["focal_length"]))
    steps["step_rad"] = sum(steps.values())
    return steps


def hologram_aliasing_findings(context: ReviewContext) -> Iterator[Finding]:
    """Holograms whose local phase changes by more than π per pixel, or carriers under 2 pixels."""
    for element in context.elements("modulator"):
        hologram = element.value("hologram") or {}
        design_wavelength = _design_wavelength(context, element)
        w = max(context.trace.plane(element.name).w)
        steps = hologram_phase_steps(element, w, design_wavelength)
        numbers = dict(steps, pitch_m=min(element.value("pixel_pitch")), radius_m=2 * w,
                       design_wavelength_m=design_wavelength)
        periods = [hologram["carrier"]["period_px"]] if "carrier" in hologram else []
        if hologram.get("pattern") == "grating" and "period_px" in hologram:
            periods.append(hologram["period_px"])
        short = [period for period in periods if period < 2]
        if short:
            yield Finding(
                rule="hologram_aliasing", severity="error", element=element.name,
                message=(f"a grating period of {short[0]:g} px is under 2 pixels: it aliases and does not deflect "
                         f"as designed (fix: a period of 2 px or more)."),
                basis=_ALIAS_BASIS, numbers=dict(numbers, period_px=short[0]))
        elif steps["step_rad"] > math.pi:
            parts = ", ".join(f"{key.removesuffix('_step_rad').replace('_', ' ')} {value:.3g}"
                              for key, value in steps.items() if key != "step_rad" and value > 0)
            yield Finding(
                rule="hologram_aliasing", severity="warning", element=element.name,
                message=(f"the hologram's phase changes by up to {steps['step_rad']:.3g} rad per pixel at r = 2w = "
                         f"{mm(2 * w)} ({parts} rad), more than π: it aliases into extra orders (fix: a longer "
                         f"focal length, a smaller cone angle or a longer carrier period)."),
                basis=_ALIAS_BASIS, numbers=numbers)


def blaze_order_share(order: int, depth_ratio: float) -> float:
    """Share of light a continuous blaze of depth ``depth_ratio`` × 2π sends into ``order``.

    sinc²(m − α), sinc(x) = sin(πx)/(πx) (standard scalar grating theory; Swanson, MIT Lincoln
    Laboratory TR-854, 1989, for the quantised form).
    """
    return float(np.sinc(order - depth_ratio) ** 2)


def phase_stroke_findings(context: ReviewContext) -> Iterator[Finding]:
    """Modulators used away from their design wavelength: their stroke is λ0/λ × 2π."""
    wavelength = context.layout.wavelength
    for element in context.elements("modulator"):
        design_wavelength = element.value("design_wavelength")
        if design_wavelength is None:
            continue
        ratio = design_wavelength / wavelength
        zero, first = blaze_order_share(0, ratio), blaze_order_share(1, ratio)
        if zero <= ZERO_ORDER_LIMIT:
            continue
        yield Finding(
            rule="phase_stroke", severity="warning", element=element.name,
            message=(f"calibrated for {design_wavelength * 1e9:.4g} nm but used at {wavelength * 1e9:.4g} nm: the "
                     f"phase stroke is {ratio:.4g} × 2π, so the first order gets {percent(first)} and the "
                     f"undiffracted zero order {percent(zero)} (fix: a lookup table for the operating "
                     f"wavelength)."),
            basis=_STROKE_BASIS,
            numbers={"design_wavelength_m": design_wavelength, "wavelength_m": wavelength, "depth_ratio": ratio,
                     "first_order_share": first, "zero_order_share": zero})


def flat_top_beta_findings(context: ReviewContext) -> Iterator[Finding]:
    """Flat-top holograms with a small Romero-Dickey β (diffraction spoils the plateau)."""
    for element in context.elements("modulator"):
        hologram = element.value("hologram") or {}
        if hologram.get("pattern") != "flat_top":
            continue
        wavelength = _design_wavelength(context, element)
        waist, half_width, focal_length = hologram["waist"], 0.5 * hologram["size"], hologram["focal_length"]
        beta = flat_top_beta(waist, half_width, abs(focal_length), wavelength)
        if beta > BETA_GOOD:
            continue
        poor = beta < BETA_POOR
        yield Finding(
            rule="flat_top_beta", severity="error" if poor else "warning", element=element.name,
            message=(f"β = 2√(2π) r0 y0/(f λ) = {beta:.3g} (r0 = {mm(waist)}, y0 = {mm(half_width)}, f = "
                     f"{mm(focal_length)}): " + ("below 4, the flat top will not form" if poor else
                                                  "between 4 and 32, diffraction ripples will show") +
                     " (thresholds from memory; fix: a larger beam, a larger flat top or a shorter lens)."),
            basis=_BETA_BASIS,
            numbers={"beta": beta, "waist_m": waist, "half_width_m": half_width, "focal_length_m": focal_length,
                     "wavelength_m": wavelength})


def flat_top_input_findings(context: ReviewContext) -> Iterator[Finding]:
    """Flat-top holograms designed for another waist than the traced beam brings."""
    for element in context.elements("modulator"):
        hologram = element.value("hologram") or {}
        if hologram.get("pattern") != "flat_top":
            continue
        w = context.trace.plane(element.name).w
        traced = 0.5 * (w[0] + w[1])
        mismatch = traced / hologram["waist"] - 1.0
        if abs(mismatch) <= FLAT_TOP_WAIST_MISMATCH:
            continue
        yield Finding(
            rule="flat_top_input_beam", severity="warning", element=element.name,
            message=(f"the flat-top phase is designed for w = {mm(hologram['waist'])} but the traced beam here has "
                     f"w = {mm(w[0])} × {mm(w[1])} ({mismatch:+.1%}): the plateau will droop or ring (fix: match "
                     f"the hologram's waist to the beam)."),
            basis=_WAIST_BASIS,
            numbers={"design_waist_m": hologram["waist"], "w_x_m": w[0], "w_y_m": w[1], "mismatch": mismatch})


def rules() -> list[ReviewRule]:
    """The modulator rules."""
    return [
        ReviewRule("modulator_fill", modulator_fill_findings,
                   "beam overfilling a modulator's active area or using few of its pixels", _FILL_BASIS),
        ReviewRule("hologram_aliasing", hologram_aliasing_findings,
                   "hologram phase changing by more than π per pixel", _ALIAS_BASIS),
        ReviewRule("phase_stroke", phase_stroke_findings,
                   "modulator phase stroke at the operating wavelength against its design wavelength", _STROKE_BASIS),
        ReviewRule("flat_top_beta", flat_top_beta_findings, "Romero-Dickey β of flat-top holograms", _BETA_BASIS),
        ReviewRule("flat_top_input_beam", flat_top_input_findings,
                   "flat-top hologram's design waist against the traced beam", _WAIST_BASIS),
    ]
