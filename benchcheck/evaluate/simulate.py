"""The wave simulation of one realization: fields at every mask and observation plane.

The wave starts at the first mask plane of each path with the Gaussian beam the paraxial
trace brings there (size, curvature, offset, tilt), so upstream misalignment arrives as it
would on the bench. Each stage between mask planes is crossed by the Collins integral
(``benchcheck.wave.stages``); masks are applied where they stand; a camera records a frame.
Targets (the ideal shaped field at each plane, for purity and wavefront metrics) are the
hologram's ideal modulation of the nominal incident beam carried through the nominal
stages, without masks, onto the same grids as the trial's fields.

Speed: a study's trials ask for targets lazily (``lazy_targets``), only at the planes a
metric reads one; the nominal ideal field at the mask plane before each target plane is kept,
so a target costs one stage onto the trial's grid (one FFT when only the window's centre
moved, a chirp-z transform when a dof changed the pitch), and the last few targets are kept
by grid. Each plane's result is kept with the excursions it was made for
(``upstream_planes``): a realization that moves only what lies downstream starts from there.
In a study (``full_planes``) a small aperture that no spec reads gets its arriving field only
on the aperture's box.
"""

from __future__ import annotations

import dataclasses
import math
from collections import OrderedDict
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from benchcheck.bench.realization import Realization
from benchcheck.errors import SamplingError
from benchcheck.evaluate.masks import aperture_mask, aperture_support
from benchcheck.evaluate.modulator_plane import (
    intended_charge,
    load_phase_map,
    make_panel_hologram,
    modulator_window,
)
from benchcheck.evaluate.simulation_result import DesignBeam, PlaneResult, SimulationResult
from benchcheck.evaluate.start_plane import (
    DEFAULT_WINDOW_RADII,
    MIN_GRID,
    auto_size,
    camera_device,
    start_notes,
    transmission_before,
)
from benchcheck.evaluate.upstream_planes import KeptPlane, UpstreamPlanes
from benchcheck.evaluate.wave_path import (
    OBSERVATION_TYPES,
    arriving_beam,
    mask_planes,
    stage_between,
)
from benchcheck.layout.model import Layout
from benchcheck.limits import check_wave_grid
from benchcheck.optics.beam_trace import TraceResult
from benchcheck.thread_pools import blas_on_one_thread
from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.camera import camera_frame
from benchcheck.wave.field import BoxedField, DeferredField, Field, HeldColumnsField, support_values, values_made
from benchcheck.wave.fft_backend import apply_fft_backend_from_environment
from benchcheck.wave.grid import Grid
from benchcheck.wave.holograms import builtin_patterns
from benchcheck.wave.overlaps import mark_reused
from benchcheck.wave.stages import natural_output_grid, propagate

__all__ = ["PlaneResult", "SimulationResult", "WaveSimulator", "DEFAULT_WINDOW_RADII"]



@dataclass
class WaveSimulator:
    """Simulates realizations of one layout; built once per study (targets are cached).

    ``record_frames``: also make each camera's frame (pixel integration and quantisation);
    studies leave it off unless a metric needs the frame. ``lazy_targets``: a call through
    ``__call__`` (the Evaluator's) makes targets only when a metric context asks for one;
    ``simulate(with_targets=True)`` always makes them all. ``full_planes``: the planes whose
    field is made over the whole window (None: all). A study names its spec planes; at any
    other small aperture the arriving field is made only on the aperture's box, the only
    part the next stage reads (the light blocked there is counted from the power that left
    the plane before). ``target_planes``: planes where a study's metric reads the target; a
    trial lands its field there on the nominal grid, where the target is made once, instead of
    carrying the target onto each trial's own grid.
    """

    layout: Layout
    nominal_trace: TraceResult
    nominal: Realization
    patterns: Mapping = field(default_factory=builtin_patterns)
    workers: int = -1
    record_frames: bool = False
    plugin_matrices: Mapping = field(default_factory=dict)
    plugin_masks: Mapping = field(default_factory=dict)
    lazy_targets: bool = True
    full_planes: frozenset | None = None
    target_planes: frozenset = frozenset()
    _targets: OrderedDict = field(default_factory=OrderedDict, init=False, repr=False)
    _target_starts: dict = field(default_factory=dict, init=False, repr=False)
    _holograms: dict = field(default_factory=dict, init=False, repr=False)
    _nominal_grids: dict = field(default_factory=dict, init=False, repr=False)
    _upstream: UpstreamPlanes = field(default_factory=UpstreamPlanes, init=False, repr=False)
    _phase_map: np.ndarray | None = field(default=None, init=False, repr=False)
    _stages: dict = field(default_factory=dict, init=False, repr=False)

    def __post_init__(self) -> None:
        apply_fft_backend_from_environment()  # BENCHCHECK_FFT_BACKEND=pyfftw: optional faster FFT
        self.dtype = np.complex128 if self.layout.simulation.precision == "double" else np.complex64
        self.source_power = self.layout.power or 1.0
        for element in self.layout.elements:
            hologram = element.value("hologram") or {}
            if element.type == "modulator" and hologram.get("pattern") == "file":
                self._phase_map = load_phase_map(hologram["path"], self.layout, element)
        self.observations = [e.name for e in self.layout.elements if e.type in OBSERVATION_TYPES]

    # -- public -------------------------------------------------------------------------------

    def __call__(self, realization: Realization, trace: TraceResult) -> SimulationResult:
        with blas_on_one_thread():  # the transforms take the cores (benchcheck.thread_pools)
            if self.lazy_targets:
                return dataclasses.replace(self.simulate(realization, trace, with_targets=False),
                                           target_source=self._target_of)
            return self.simulate(realization, trace)

    def simulate(self, realization: Realization, trace: TraceResult, with_targets: bool = True) -> SimulationResult:
        planes: dict[str, PlaneResult] = {}
        losses: list[tuple[str, float]] = []
        notes: list[str] = []
        state = {"incident_power": None, "charge": None}
        for observation in self.observations:
            self._run_path(realization, trace, observation, planes, losses, notes, state)
        if with_targets:
            planes = {name: self._with_target(result) for name, result in planes.items()}
        # One NaN or Inf sample makes the power sum NaN or Inf: one np.vdot pass per plane. A
        # modulator window whose values no one has read is not made for this: whatever it
        # would hold reaches the planes after it. Boxed and row-transform fields sum what they hold.
        faults = tuple(f"{name}: the field holds NaN or Inf" for name, result in planes.items()
                       if (values_made(result.field) or not isinstance(result.field, DeferredField))
                       and not math.isfinite(result.field.power))
        return SimulationResult(planes, self.source_power, state["incident_power"], tuple(losses),
                                state["charge"], tuple(notes), faults)

    # -- one path -----------------------------------------------------------------------------

    def _run_path(self, realization, trace, observation, planes, losses, notes, state) -> None:
        masks = mask_planes(realization, trace, observation, self.plugin_masks)
        current = None
        cells = None
        previous_key = None
        for index, name in enumerate(masks):
            if name in planes:
                current, cells, previous_key = planes[name].passed, None, self._upstream.key_of(name)
                continue
            element = realization.element(name)
            # the modulator's window depends on the next mask too (replica periods it passes),
            # and on the hologram kept for it
            replicas = self._replicas(realization, trace, masks, name) \
                if current is None and element.type == "modulator" else None
            extra = (replicas, self._hologram(name).signature) if replicas is not None else ()
            # a plane's field follows from the one before it: its key carries that plane's key
            key = self._upstream.key(realization, name, previous_key, self.record_frames, self.full_planes,
                                     self.target_planes, *extra)
            kept = self._upstream.get(name, key)
            if kept is None:
                kept = self._compute_plane(realization, trace, masks, index, current, cells, state, replicas)
                self._upstream.keep(name, key, kept)
            state.update(kept.state)
            if kept.loss is not None:
                losses.append(kept.loss)
            planes[name] = kept.result
            notes.extend(f"{name}: {note}" for note in kept.result.notes)
            current, cells, previous_key = kept.result.passed, kept.cells, key

    def _compute_plane(self, realization, trace, masks, index, current, cells, state, replicas=None) -> KeptPlane:
        """The field at mask plane ``masks[index]``, from the field ``current`` that left the one before."""
        name = masks[index]
        element = realization.element(name)
        changed = {}
        known_support = None  # the aperture box the stage found on the arriving grid
        if current is None:
            arriving, cells = self._first_field(realization, trace, name, masks, changed, replicas=replicas)
            method, stage_notes = "start", tuple(start_notes(realization, trace, name, arriving, cells))
            leaving_power = None
        else:
            stage = self._stage(realization, trace, masks[index - 1], name)
            box, box_grid = self._box_only(element, current, stage, cells)
            try:
                result = propagate(current, stage.matrix_x, stage.matrix_y, plane=name, cells=cells,
                                   workers=self.workers, output_grid=self._target_grid(name, realization),
                                   output_box=box)
            except SamplingError as error:
                raise SamplingError(f"{error} (fix: a larger [simulation] grid, or check the layout "
                                    f"around '{name}')") from None
            arriving = result.field
            leaving_power = (state["incident_power"] if cells is not None else current.power) * stage.amplitude**2
            if stage.amplitude != 1.0 and isinstance(arriving, (BoxedField, HeldColumnsField)):
                arriving = arriving.scaled(stage.amplitude)  # still without its window
            elif stage.amplitude != 1.0:
                arriving = Field(arriving.values * np.float32(stage.amplitude), arriving.grid, arriving.wavelength,
                                 arriving.plane, support=arriving.support)
            method, stage_notes, cells = result.method, result.notes, None
            known_support = box if box is not None and arriving.grid == box_grid else None
        passed, loss = arriving, None
        if element.type not in OBSERVATION_TYPES and element.type != "modulator":
            passed = self._masked(element, arriving, known_support)
            # Blocked here: all that left the previous plane and does not pass this mask,
            # replica orders outside the window included (they land on the mask's plate).
            leaving = leaving_power if leaving_power is not None else arriving.power
            loss = (name, max(leaving - passed.power, 0.0) / self.source_power)
        frame = None
        if element.type == "camera" and self.record_frames:
            frame = camera_frame(arriving, camera_device(element))
        nominal = self.nominal_trace.plane(name)
        result = PlaneResult(name, arriving, passed, None, nominal.offset_in, nominal.angle_in, frame,
                             method, tuple(stage_notes), partial=arriving.support is not None)
        if _is_nominal(realization):
            self._nominal_grids[name] = arriving.grid
        return KeptPlane(result, cells, loss, tuple(changed.items()))

    def _stage(self, realization: Realization, trace: TraceResult, start: str, end: str):
        """``stage_between``, worked out once per trial: the modulator's replica count and the
        stage after it both need the stage from the modulator (kept for the latest trial)."""
        key = (start, end)
        kept = self._stages.get(key)
        if kept is None or kept[0] is not realization or kept[1] is not trace:
            kept = (realization, trace, stage_between(realization, trace, start, end, self.plugin_matrices))
            self._stages[key] = kept
        return kept[2]

    def _target_grid(self, name: str, realization: Realization) -> Grid | None:
        """The nominal grid of a target plane for a study's trial there, else None (the natural grid)."""
        if name not in self.target_planes or _is_nominal(realization):
            return None
        if name not in self._nominal_grids:  # a worker's first trial: simulate the nominal bench once
            self.simulate(self.nominal, self.nominal_trace, with_targets=False)
        return self._nominal_grids.get(name)

    def _box_only(self, element, current: Field, stage, cells):
        """(the box of a small aperture on the stage's output grid, that grid) when only that
        part of the arriving field is needed (a study, and no spec reads this plane); else
        (None, None)."""
        if self.full_planes is None or element.name in self.full_planes or element.type in self.plugin_masks \
                or element.type in OBSERVATION_TYPES or element.type == "modulator":
            return None, None
        if element.type != "aperture" and element.value("clear_aperture") is None:
            return None, None
        grid = natural_output_grid(current.grid, stage.matrix_x, stage.matrix_y, current.wavelength, cells)
        return aperture_support(element, grid), grid

    def _masked(self, element, arriving: Field, support=None) -> Field:
        """The field past an element's mask; past a small aperture, zero outside its box (kept
        as the field's support, so the next stage transforms only the box's lines).
        ``support``: that box, where the stage has just found it on the arriving field's grid."""
        if support is not None:
            box = support
        else:
            box = None if element.type in self.plugin_masks else aperture_support(element, arriving.grid)
        if box is None:
            return arriving.replace(values=arriving.values * self._mask(element, arriving))
        inside = support_values(arriving, box)
        passed = inside * aperture_mask(element, arriving.grid, box).astype(inside.real.dtype, copy=False)
        return BoxedField(passed, arriving.grid, arriving.wavelength, arriving.plane, box)

    def _mask(self, element, arriving: Field) -> np.ndarray:
        """An element's transmission on the field's grid: a plugin type's own mask, or its aperture."""
        if element.type in self.plugin_masks:
            x, y = arriving.grid.mesh()
            mask = np.asarray(self.plugin_masks[element.type](element, x, y, arriving.wavelength))
            return mask.astype(arriving.values.dtype if np.iscomplexobj(mask) else arriving.values.real.dtype)
        return aperture_mask(element, arriving.grid).astype(arriving.values.real.dtype, copy=False)

    def _first_field(self, realization, trace, name, masks, state, ideal=False, replicas=None):
        """The field at the first mask plane of a path, and the pixel cells if it is a modulator."""
        element = realization.element(name)
        source = realization.source()
        arriving = arriving_beam(trace, name, realization.wavelength, source.m2)
        power = self.source_power * transmission_before(trace, realization, name)
        size = self.layout.simulation.grid
        if element.type == "modulator":
            pitch = element.value("pixel_pitch")
            size = size or auto_size(arriving.w, pitch)
            if replicas is None:
                replicas = self._replicas(realization, trace, masks, name)
            check_wave_grid(size, self.dtype, name, expansion=2 * replicas + 1)  # before allocating
            nominal_element = realization.bench.element(name)
            window = modulator_window(
                nominal_element, element, self.layout, arriving, realization.wavelength, power,
                size, self.dtype, replicas, self.patterns, self._phase_map, ideal=ideal,
                design_beam=self._design_beam(name), hologram=self._hologram(name),
            )
            state["incident_power"] = window.incident_power
            state["charge"] = intended_charge(element)
            return window.field, window.cells
        reach = max(arriving.w) * DEFAULT_WINDOW_RADII
        if element.type == "aperture" and element.value("diameter") is not None:
            reach = max(reach, 0.625 * element.value("diameter"))
        size = check_wave_grid(size or MIN_GRID * 2, self.dtype, name)  # before allocating
        pitch = 2 * reach / size
        center = arriving.position
        grid = Grid((size, size), (pitch, pitch), center)
        return gaussian_field(grid, realization.wavelength, arriving.q[0], arriving.q[1], arriving.position,
                              arriving.slope, power=power, dtype=self.dtype, plane=name), None

    def _design_beam(self, name: str) -> DesignBeam:
        nominal_element = self.nominal.bench.element(name)
        design = arriving_beam(self.nominal_trace, name, self.layout.wavelength, self.layout.source.m2)
        return DesignBeam(design.w, (design.position[0] - nominal_element.x, design.position[1] - nominal_element.y))

    def _hologram(self, name: str):
        """The modulator's hologram, computed once per study and sliced for every window."""
        if name not in self._holograms:
            self._holograms[name] = make_panel_hologram(self.nominal.bench.element(name), self.layout,
                                                        self.patterns, self._phase_map, self._design_beam(name))
        return self._holograms[name]

    def _replicas(self, realization, trace, masks, name) -> int:
        """Replica periods of the pixel spectrum the next mask can pass (0 or 1)."""
        index = masks.index(name)
        if index + 1 >= len(masks):
            return 0
        following = realization.element(masks[index + 1])
        stage = self._stage(realization, trace, name, following.name)
        pitch = min(realization.element(name).value("pixel_pitch"))
        half_period = realization.wavelength * abs(stage.matrix_x[0, 1]) / (2 * pitch)
        if following.type == "aperture":
            center = following.value("center", (0.0, 0.0))
            opening = (following.value("diameter") or max(following.value("size"))) / 2
            reach = math.hypot(center[0] + following.x, center[1] + following.y) + opening
        elif following.type == "camera":
            columns, rows = following.value("pixels")
            reach = max(columns * following.value("pixel_pitch")[0], rows * following.value("pixel_pitch")[1]) / 2
        elif following.value("size") is not None:
            reach = max(following.value("size")) / 2
        else:
            return 0
        return 1 if reach > half_period else 0

    # -- targets ------------------------------------------------------------------------------

    #: Targets kept by (plane, grid): a study's trials land on grids of their own, so only
    #: the latest few (the nominal grid among them) are worth keeping.
    TARGETS_KEPT = 4

    def _target_of(self, result: PlaneResult) -> Field | None:
        key = (result.name, result.field.grid)
        if key in self._targets:
            self._targets.move_to_end(key)
        else:
            self._targets[key] = target = self._target(result.name, result.field.grid)
            if target is not None and result.name in self.target_planes \
                    and result.field.grid == self._nominal_grids.get(result.name):
                mark_reused(target)  # where a study's trials land: every one of them meets it
            while len(self._targets) > self.TARGETS_KEPT:
                self._targets.popitem(last=False)
        return self._targets[key]

    def _with_target(self, result: PlaneResult) -> PlaneResult:
        return dataclasses.replace(result, target=self._target_of(result))

    def _target(self, plane: str, grid: Grid) -> Field | None:
        """The ideal field at ``plane`` on ``grid``: ideal hologram, nominal stages, no masks."""
        start = self._target_start(plane)
        if start is None:
            return None
        before, stage = start
        if stage is None:
            return before if before.grid == grid else None
        try:
            field_now = propagate(before, stage.matrix_x, stage.matrix_y, output_grid=grid, plane=plane,
                                  workers=self.workers).field
        except SamplingError:
            return None
        return field_now if field_now.grid == grid else None

    def _target_start(self, plane: str):
        """(nominal ideal field at the mask plane before ``plane``, the stage from there), or
        (the ideal field at ``plane``, None) when it is the first mask plane; kept per plane."""
        if plane not in self._target_starts:
            self._target_starts[plane] = self._nominal_ideal_before(plane)
        return self._target_starts[plane]

    def _nominal_ideal_before(self, plane: str):
        realization, trace = self.nominal, self.nominal_trace
        observation = next((o for o in self.observations if plane in realization.bench.path_to(o)), None)
        if observation is None:
            return None
        masks = mask_planes(realization, trace, observation, self.plugin_masks)
        if plane not in masks:
            return None
        masks = masks[: masks.index(plane) + 1]
        field_now, _ = self._first_field(realization, trace, masks[0], masks, {}, ideal=True)
        if len(masks) == 1:
            return field_now, None
        for previous, name in zip(masks[:-2], masks[1:-1]):
            stage = stage_between(realization, trace, previous, name, self.plugin_matrices)
            try:
                field_now = propagate(field_now, stage.matrix_x, stage.matrix_y, plane=name,
                                      workers=self.workers).field
            except SamplingError:
                return None
        return field_now, stage_between(realization, trace, masks[-2], plane, self.plugin_matrices)


def _is_nominal(realization: Realization) -> bool:
    return not any(value != 0.0 for value in realization.perturbation.values())
