"""What a wave simulation gives back: the field at each plane, with power bookkeeping."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from benchcheck.wave.camera import CameraFrame
from benchcheck.wave.field import Field
from benchcheck.wave.moments import beam_moments

__all__ = ["PlaneResult", "SimulationResult", "DesignBeam"]


@dataclass(frozen=True)
class PlaneResult:
    """The wave at one plane: arriving field, field after its mask, target, camera frame."""

    name: str
    field: Field
    passed: Field
    target: Field | None
    axis: tuple[float, float]
    axis_angle: tuple[float, float] = (0.0, 0.0)
    frame: CameraFrame | None = None
    method: str = ""
    notes: tuple[str, ...] = ()
    partial: bool = False  # the arriving field was made only on the aperture's box (full_planes)


@dataclass(frozen=True)
class SimulationResult:
    """Fields at the wave planes of one realization, with power bookkeeping."""

    planes: Mapping[str, PlaneResult]
    source_power: float
    incident_power: float | None
    losses: tuple[tuple[str, float], ...]
    charge: int | None
    notes: tuple[str, ...] = ()
    faults: tuple[str, ...] = ()
    target_source: Callable[[PlaneResult], Field | None] | None = field(default=None, repr=False, compare=False)

    def context_for(self, plane: str, with_target: bool = True) -> dict:
        """The wave part of a MetricContext at ``plane`` (empty when the plane has no field).

        A plane simulated without its target gets it from ``target_source`` when there is one
        and ``with_target`` says a metric there reads it.
        """
        if plane not in self.planes or self.planes[plane].partial:
            return {}
        result = self.planes[plane]
        if with_target and result.target is None and self.target_source is not None:
            result = dataclasses.replace(result, target=self.target_source(result))
        upstream = []
        for name, blocked in self.losses:
            upstream.append((name, blocked))
            if name == plane:
                break
        return dict(field=result.field, target=result.target, axis=result.axis, axis_angle=result.axis_angle,
                    incident_power=self.incident_power, losses=tuple(upstream), intended_charge=self.charge)

    def plane_rows(self) -> list[dict]:
        """Per plane, for the light leaving it (after its mask, as the trace's transmission):
        power (fraction of source power), D4σ widths and centroid (ISO 11146-1)."""
        rows = []
        for name, result in self.planes.items():
            try:
                moments = beam_moments(result.passed)
                widths, centroid = list(moments.widths), [moments.centroid_x, moments.centroid_y]
            except ValueError:
                widths, centroid = [None, None], [None, None]
            rows.append({"name": name, "power": result.passed.power / self.source_power,
                         "d4sigma_m": widths, "centroid_m": centroid})
        return rows


@dataclass(frozen=True)
class DesignBeam:
    """The nominal beam on the modulator, in the hologram's frame (for compensating holograms)."""

    w: tuple[float, float]
    center: tuple[float, float]
