"""Everything a report shows, gathered once: the figures and every writer draw from it.

``ReportData.to_dict()`` holds the same dictionaries the other commands print as JSON
(``trace``, ``simulate``, ``tolerance``, ``mounts``, ``review``), plus what the figures
need besides (the beam between planes, per-trial metric values); the field arrays drawn
as images stay out of the JSON and are summarised there.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from benchcheck.bench.graph import build_bench
from benchcheck.errors import BenchcheckError
from benchcheck.evaluate.wave_path import OBSERVATION_TYPES
from benchcheck.layout.model import Layout
from benchcheck.optics.beam_trace import TraceResult
from benchcheck.optics.gaussian import distance_past_waist, waist_radius
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = ["PlaneImage", "ReportData", "build_report_data", "envelope_segments", "layout_summary", "json_ready"]

#: Phase is drawn only where the intensity is above this share of the plane's peak: below it
#: the phase of a sampled field is noise (common practice).
PHASE_INTENSITY_FLOOR = 1e-3


@dataclass(frozen=True, eq=False)
class PlaneImage:
    """The arrays drawn for one observation plane (SI positions; intensity relative to its peak).

    ``frame`` is the simulated camera frame in counts (None without a camera), on a sensor
    whose full extent is ``frame_extent`` (x0, x1, y0, y1) in metres.
    """

    name: str
    x: np.ndarray
    y: np.ndarray
    intensity: np.ndarray
    phase: np.ndarray
    peak_intensity: float
    frame: np.ndarray | None = None
    frame_extent: tuple[float, float, float, float] | None = None
    bit_depth: int | None = None

    def summary(self) -> dict:
        """JSON-ready description of what is drawn (the arrays themselves are not in the JSON)."""
        data = {"name": self.name, "shape": list(self.intensity.shape),
                "x_range_m": [float(self.x[0]), float(self.x[-1])],
                "y_range_m": [float(self.y[0]), float(self.y[-1])],
                "peak_intensity": self.peak_intensity}
        if self.frame is not None:
            data["frame_shape"] = list(self.frame.shape)
            data["frame_extent_m"] = list(self.frame_extent)
            data["frame_peak_counts"] = int(self.frame.max())
        return data


@dataclass(frozen=True, eq=False)
class ReportData:
    """The numbers of one report (SI units), built once by ``build_report_data``.

    Attributes
    ----------
    summary : dict
        The layout in brief (``layout_summary``).
    trace : dict
        ``api.trace(layout).to_dict()`` (as ``benchcheck trace --json``).
    envelope : dict
        ``{"wavelength_m", "m2": [x, y], "segments": [...]}``: the free-space gaps, each with
        the waist and waist position of the beam crossing it (``envelope_segments``).
    simulation : dict or None
        ``api.simulate(layout).to_dict()``; None when not simulated.
    study : dict or None
        ``api.tolerance(layout, ...).to_dict()``; None when no study ran.
    trial_metrics : dict
        ``<plane>.<metric>`` -> value of each valid trial, in trial order (None where missing).
    metric_units : dict
        SI unit of each metric by name (``"m"``, ``"rad"``, ``""``).
    specs : list of dict
        ``{"key", "label", "min", "max"}`` per spec (SI).
    mounts : dict or None
        ``api.plan_mounts(layout, ...).to_dict()``; None when skipped.
    findings : list of dict or None
        Review findings (``Finding.to_dict()``); None when the review is not available.
    notes : list of str
        What was left out and why.
    images : tuple of PlaneImage
        Arrays drawn for the observation planes (not in the JSON).
    """

    summary: dict
    trace: dict
    envelope: dict
    simulation: dict | None = None
    study: dict | None = None
    trial_metrics: dict = field(default_factory=dict)
    metric_units: dict = field(default_factory=dict)
    specs: list = field(default_factory=list)
    mounts: dict | None = None
    findings: list | None = None
    notes: list = field(default_factory=list)
    images: tuple[PlaneImage, ...] = ()

    def to_dict(self) -> dict:
        """JSON-ready (no inf or NaN: they become null) and equal to what the HTML embeds."""
        return json_ready({
            "summary": self.summary,
            "trace": self.trace,
            "envelope": self.envelope,
            "simulation": self.simulation,
            "images": [image.summary() for image in self.images],
            "study": self.study,
            "trial_metrics": self.trial_metrics,
            "metric_units": self.metric_units,
            "specs": self.specs,
            "mounts": self.mounts,
            "findings": self.findings,
            "notes": self.notes,
            "laser_safety": LASER_SAFETY_CAUTION,
        })


def json_ready(value: Any) -> Any:
    """Tuples to lists, numpy scalars to floats, inf and NaN to None (JSON has neither)."""
    if isinstance(value, Mapping):
        return {str(key): json_ready(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(item) for item in value]
    if isinstance(value, (np.floating, float)):
        return float(value) if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


def envelope_segments(trace: TraceResult) -> dict:
    """The free-space gaps of a traced bench with the beam that crosses each.

    For the gap that ends at plane P, the beam is the one arriving at P (``PlaneBeam.q_in``):
    in free space its waist radius w₀ and waist position z₀ stay fixed, and
    ``w(z) = w₀ √(1 + ((z − z₀)/z_R)²)`` with ``z_R = π w₀² / (M² λ)`` anywhere in the gap
    (Kogelnik and Li, Appl. Opt. 5, 1550 (1966); embedded-Gaussian M², ISO 11146-1).

    Returns
    -------
    dict
        ``{"wavelength_m", "m2": [x, y], "segments": [{"arm", "start", "end", "z_start_m",
        "z_end_m", "waist_m": [x, y], "waist_z_m": [x, y]}]}`` in trace order.
    """
    layout = trace.layout
    wavelength, m2 = layout.source.wavelength, layout.source.m2
    bench = build_bench(layout)
    planes = {plane.name: plane for plane in trace.planes}
    segments = []
    for plane in trace.planes[1:]:
        start = next(iter(bench.graph.predecessors(plane.name)))
        segments.append({
            "arm": plane.arm,
            "start": start,
            "end": plane.name,
            "z_start_m": planes[start].z,
            "z_end_m": plane.z,
            "waist_m": [waist_radius(plane.q_in[axis], wavelength, m2[axis]) for axis in (0, 1)],
            "waist_z_m": [plane.z - distance_past_waist(plane.q_in[axis]) for axis in (0, 1)],
        })
    return {"wavelength_m": wavelength, "m2": list(m2), "segments": segments}


def layout_summary(layout: Layout) -> dict:
    """The layout in brief, SI units: bench, source, elements, specs, tolerancing settings."""
    source = layout.source
    return {
        "path": layout.path,
        "title": layout.title,
        "wavelength_m": layout.wavelength,
        "power_w": layout.power,
        "display": {"length": layout.display.length, "angle": layout.display.angle},
        "source": {"waist_m": list(source.waist), "waist_z_m": list(source.waist_z), "m2": list(source.m2)},
        "elements": [{"name": element.name, "type": element.type, "arm": element.arm, "z_m": element.z,
                      "mount": element.mount, "clear_aperture_m": element.value("clear_aperture"),
                      "focal_length_m": element.value("focal_length")} for element in layout.elements],
        "specs": [{"label": spec.label, "metric": spec.metric, "at": spec.at, "min": spec.minimum,
                   "max": spec.maximum} for spec in layout.specs],
        "tolerancing": {"trials": layout.tolerancing.trials, "seed": layout.tolerancing.seed,
                        "yield_target": layout.tolerancing.yield_target},
        "warnings": list(layout.warnings),
    }


def _plane_images(layout: Layout, report) -> tuple[PlaneImage, ...]:
    images = []
    for element in layout.elements:
        if element.type not in OBSERVATION_TYPES or element.name not in report.simulation.planes:
            continue
        result = report.simulation.planes[element.name]
        intensity = np.asarray(result.field.intensity, dtype=float)
        peak = float(intensity.max())
        relative = intensity / peak if peak > 0 else intensity
        phase = np.where(relative >= PHASE_INTENSITY_FLOOR, np.angle(result.field.values), np.nan)
        frame = extent = depth = None
        if result.frame is not None:
            grid = result.frame.grid
            half_x, half_y = grid.pitch[0] / 2, grid.pitch[1] / 2
            extent = (float(grid.x[0] - half_x), float(grid.x[-1] + half_x),
                      float(grid.y[0] - half_y), float(grid.y[-1] + half_y))
            frame, depth = np.asarray(result.frame.counts), element.value("bit_depth")
        images.append(PlaneImage(element.name, result.field.grid.x, result.field.grid.y, relative, phase, peak,
                                 frame, extent, depth))
    return tuple(images)


def _trial_metrics(study) -> dict[str, list]:
    valid = study.valid_records
    keys = list(study.to_dict()["metrics"])
    return {key: [record.metrics.get(key) for record in valid] for key in keys}


def build_report_data(
    layout: Layout,
    plugin_manager=None,
    *,
    trials: int | None = None,
    seed: int | None = None,
    mounts: bool = True,
    simulate: bool = True,
) -> ReportData:
    """Run what the report shows, once: trace, simulation, study, mount plan, review.

    Parameters
    ----------
    layout : Layout
        The bench.
    plugin_manager : optional
        Where metrics, rules and writers come from.
    trials, seed : int, optional
        Monte Carlo size and seed (``[tolerancing]`` when omitted); the mount plan uses them too.
        ``trials=0`` skips the study.
    mounts : bool
        Plan the mounts (slow: failure thresholds and Monte Carlo rounds).
    simulate : bool
        Run the wave simulation of the nominal bench.

    Returns
    -------
    ReportData
    """
    from benchcheck import api
    from benchcheck.evaluate.factory import metric_registry

    notes: list[str] = []
    traced = api.trace(layout, plugin_manager=plugin_manager)
    simulation, images = None, ()
    if simulate:
        try:
            report = api.simulate(layout, plugin_manager)
            simulation, images = report.to_dict(), _plane_images(layout, report)
        except BenchcheckError as error:  # a plane that cannot be sampled: report without fields
            notes.append(f"wave simulation not possible: {error}")
    study = trial_metrics = None
    if trials != 0:
        result = api.tolerance(layout, trials=trials, seed=seed, plugin_manager=plugin_manager)
        study, trial_metrics = result.to_dict(), _trial_metrics(result)
    plan = None
    if mounts:
        plan = api.plan_mounts(layout, trials=trials or None, seed=seed, plugin_manager=plugin_manager).to_dict()
    findings = _review_findings(layout, plugin_manager, notes)
    registry = metric_registry(plugin_manager)
    return ReportData(
        summary=layout_summary(layout),
        trace=traced.to_dict(),
        envelope=envelope_segments(traced),
        simulation=simulation,
        study=study,
        trial_metrics=trial_metrics or {},
        metric_units={name: registry.get(name).unit for name in registry.names()},
        specs=[{"key": f"{spec.at}.{spec.metric}", "label": spec.label, "min": spec.minimum, "max": spec.maximum}
               for spec in layout.specs],
        mounts=plan,
        findings=findings,
        notes=notes + list(traced.notes),
        images=images,
    )


def _review_findings(layout: Layout, plugin_manager, notes: list[str]) -> list[dict] | None:
    """The review's findings, or None (with a note) in a version without ``benchcheck review``."""
    from benchcheck import api

    review = getattr(api, "review", None)
    if review is None:
        notes.append("layout review: not available in this version")
        return None
    try:
        return [finding.to_dict() for finding in review(layout, plugin_manager=plugin_manager).findings]
    except ImportError:
        notes.append("layout review: not available in this version")
        return None
