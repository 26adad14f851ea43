"""The first plane of a wave path: its window, the power arriving there, and notes on its sampling."""

from __future__ import annotations

import math

from benchcheck.bench.realization import Realization
from benchcheck.evaluate.wave_path import arriving_beam
from benchcheck.optics.beam_trace import TraceResult
from benchcheck.wave.camera import CameraDevice
from benchcheck.wave.field import Field
from benchcheck.wave.sampling import fast_size

__all__ = ["DEFAULT_WINDOW_RADII", "MIN_GRID", "start_notes", "transmission_before", "auto_size", "camera_device"]

#: Half-width of an automatic window in 1/e² radii of the arriving beam: a Gaussian puts
#: erfc(3·√2) ≈ 2e-9 of its power outside ±3 w along each axis.
DEFAULT_WINDOW_RADII = 3.0
MIN_GRID = 256


def start_notes(realization: Realization, trace: TraceResult, name: str, field: Field, cells) -> list[str]:
    """Explain the first plane's sampling, and flag hologram terms that alias on the pixels."""
    element = realization.element(name)
    grid = field.grid
    w = max(arriving_beam(trace, name, realization.wavelength, realization.source().m2).w)
    notes = [f"window {grid.nx} x {grid.ny} samples, {grid.extent[0] * 1e3:.3g} x {grid.extent[1] * 1e3:.3g} mm "
             f"(±{grid.extent[0] / 2 / w:.2g} beam radii)"]
    if cells is None:
        return notes
    notes.append(f"one sample per modulator pixel; pixel aperture {cells.fill_factor[0]:.3g} of the pitch wide "
                 f"and {cells.dead_space} dead space, modelled analytically; {cells.replicas} replica period(s) kept")
    hologram = element.value("hologram") or {}
    pitch = min(element.value("pixel_pitch"))
    wavelength = element.value("design_wavelength") or realization.wavelength
    carrier = hologram.get("carrier", {}).get("period_px") or (
        hologram.get("period_px") if hologram.get("pattern") == "grating" else None)
    if carrier is not None and carrier < 2:
        notes.append(f"carrier period {carrier:g} px is under 2 pixels: it aliases (fix: a longer period)")
    focal_lengths = [hologram.get("lens")] + ([hologram.get("focal_length")] if hologram.get("pattern") == "lens" else [])
    for focal_length in filter(None, focal_lengths):
        # The lens phase πr²/(λf) steps by 2π p r/(λf) per pixel; over π it aliases.
        radius = 2 * w
        step = 2 * math.pi * pitch * radius / (wavelength * abs(focal_length))
        if step > math.pi:
            notes.append(f"lens term f = {focal_length * 1e3:.4g} mm steps {step:.2g} rad per pixel at r = 2w: "
                         "it aliases (fix: a longer focal length)")
    if hologram.get("pattern") == "axicon":
        step = 2 * math.pi * pitch * math.sin(hologram.get("cone_angle", 0.0)) / wavelength
        if step > math.pi:
            notes.append(f"axicon steps {step:.2g} rad per pixel: it aliases (fix: a smaller cone angle)")
    return notes


def transmission_before(trace: TraceResult, realization: Realization, name: str) -> float:
    predecessor = next(iter(realization.bench.graph.predecessors(name)))
    plane = trace.plane(predecessor)
    element = realization.element(name)
    if plane.type == "splitter" and element.arm != plane.arm:
        ratio = realization.element(predecessor).value("ratio", 0.5)
        return plane.transmission / max(1.0 - ratio, 1e-300) * ratio
    return plane.transmission


def auto_size(w: tuple[float, float], pitch: tuple[float, float]) -> int:
    """Pixels across a window of ±DEFAULT_WINDOW_RADII beam radii, FFT-friendly."""
    needed = max(2 * DEFAULT_WINDOW_RADII * w[axis] / pitch[axis] for axis in (0, 1))
    return fast_size(max(MIN_GRID, int(math.ceil(needed))))


def camera_device(element) -> CameraDevice:
    exposure = element.value("exposure", "auto")
    if exposure != "auto":
        try:
            exposure = float(exposure)
        except ValueError:
            exposure = "auto"
    return CameraDevice(pixel_pitch=element.value("pixel_pitch"), pixels=element.value("pixels"),
                        bit_depth=min(element.value("bit_depth", 12), 16), exposure=exposure,
                        center=(element.x, element.y))
