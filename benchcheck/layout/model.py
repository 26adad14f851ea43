"""The validated contents of one layout file, in SI units (DESIGN.md section 5)."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

__all__ = [
    "MAIN_ARM",
    "Tolerance",
    "Source",
    "Element",
    "Spec",
    "MountClass",
    "Tolerancing",
    "Simulation",
    "DisplayUnits",
    "Layout",
    "frozen_mapping",
]

#: The arm every element belongs to unless it names a splitter's arm.
MAIN_ARM = "main"


def frozen_mapping(values: Mapping[str, Any] | None = None) -> Mapping[str, Any]:
    """A read-only view of a fresh dict, so layout values cannot be changed after loading."""
    return MappingProxyType(dict(values or {}))


@dataclass(frozen=True)
class Tolerance:
    """A ± limit on one degree of freedom.

    Attributes
    ----------
    dof : str
        Degree of freedom of its element, such as ``"z"`` or ``"focal_length"``.
    limit : float
        The ± limit: SI units, or a fraction of the nominal value when ``relative``.
    relative : bool
        True when the layout gave a percentage of the nominal value ("1 %").
    distribution : str
        ``"uniform"``, ``"normal"`` (σ = limit/3, truncated at the limit) or ``"fixed"``.
    """

    dof: str
    limit: float
    relative: bool = False
    distribution: str = "uniform"

    def absolute_limit(self, nominal: float) -> float:
        """The limit in SI units for a dof whose nominal value is ``nominal``."""
        return abs(self.limit * nominal) if self.relative else self.limit


@dataclass(frozen=True)
class Source:
    """The laser: a Gaussian beam (embedded-Gaussian M² model) at path position 0.

    ``waist_z`` is the path position of the waist (negative: before the source plane).
    Pose: ``x``, ``y`` offset (m); ``tilt_x``, ``tilt_y`` rotations (rad) about x and y.
    """

    wavelength: float
    waist: tuple[float, float]
    waist_z: tuple[float, float] = (0.0, 0.0)
    m2: tuple[float, float] = (1.0, 1.0)
    power: float | None = None
    x: float = 0.0
    y: float = 0.0
    tilt_x: float = 0.0
    tilt_y: float = 0.0
    tolerances: tuple[Tolerance, ...] = ()
    line: int | None = None


@dataclass(frozen=True)
class Element:
    """One optic on one mount at a path position.

    Attributes
    ----------
    name : str
        Identifier; children of a relay are named ``<relay>.lens1`` and so on.
    type : str
        Element type name (``lens``, ``mirror``, ...).
    index : int
        Position of its ``[[element]]`` table in the file (0-based); children share their relay's.
    z : float
        Path length from the source along its arm (m).
    arm : str
        The arm it belongs to; ``"main"`` unless it follows a splitter's branch.
    values : mapping
        Type-specific fields in SI units (``focal_length``, ``clear_aperture``, ...).
    x, y : float
        Nominal decenter (m). ``tilt_x``, ``tilt_y``: nominal rotation about x and y (rad).
    mount : str or None
        Mount class name from ``[mounts]``.
    tolerances : tuple of Tolerance
        The ± limits given for this element.
    parent : str or None
        The relay this element was expanded from.
    line : int or None
        Line of its table in the layout file.
    """

    name: str
    type: str
    index: int
    z: float
    arm: str = MAIN_ARM
    values: Mapping[str, Any] = field(default_factory=frozen_mapping)
    x: float = 0.0
    y: float = 0.0
    tilt_x: float = 0.0
    tilt_y: float = 0.0
    mount: str | None = None
    tolerances: tuple[Tolerance, ...] = ()
    parent: str | None = None
    line: int | None = None

    def value(self, key: str, default: Any = None) -> Any:
        """A type-specific field, or ``default`` when the layout left it out."""
        return self.values.get(key, default)


@dataclass(frozen=True)
class Spec:
    """A bound on a metric at a plane (``[[spec]]``).

    ``bare_bounds`` names the bounds ("min", "max") written as plain numbers: their unit is
    the metric's, read through ``[units]`` once the metric is known (``resolve_spec_units``).
    """

    metric: str
    at: str
    minimum: float | None = None
    maximum: float | None = None
    name: str = ""
    index: int = 0
    line: int | None = None
    options: Mapping[str, Any] = field(default_factory=frozen_mapping)
    bare_bounds: tuple[str, ...] = ()

    @property
    def label(self) -> str:
        return self.name or f"{self.at}.{self.metric}"

    def passes(self, value: float) -> bool:
        """True when ``value`` lies inside the bound (NaN never passes)."""
        if value != value:  # NaN
            return False
        if self.minimum is not None and value < self.minimum:
            return False
        if self.maximum is not None and value > self.maximum:
            return False
        return True


@dataclass(frozen=True)
class MountClass:
    """What one kind of mount holds, per dof (± limits in SI), and its rank (coarse to fine)."""

    name: str
    rank: int
    holds: Mapping[str, float] = field(default_factory=frozen_mapping)
    description: str = ""


@dataclass(frozen=True)
class Tolerancing:
    """Settings of a tolerance study (``[tolerancing]``).

    ``adjust`` names the adjustments (dofs re-optimised after assembly); ``adjust_ranges``
    holds the ± range (SI) of those the layout gave one for (``adjust = { "cam.z" = "5 mm" }``);
    the others get the tolerance study's default range.
    """

    trials: int = 200
    seed: int = 0
    sampler: str = "random"
    adjust: tuple[str, ...] = ()
    yield_target: float = 0.95
    defaults: Mapping[str, tuple[Tolerance, ...]] = field(default_factory=frozen_mapping)
    adjust_ranges: Mapping[str, float] = field(default_factory=frozen_mapping)


@dataclass(frozen=True)
class Simulation:
    """Settings of the wave simulation (``[simulation]``)."""

    grid: int | None = None
    precision: str = "single"
    options: Mapping[str, Any] = field(default_factory=frozen_mapping)


@dataclass(frozen=True)
class DisplayUnits:
    """Units in which reports show lengths and angles (from ``[units]``, else mm and mrad)."""

    length: str = "mm"
    angle: str = "mrad"


@dataclass(frozen=True)
class Layout:
    """A validated layout: everything in SI units, elements in path order per arm."""

    path: str
    title: str
    wavelength: float
    source: Source
    elements: tuple[Element, ...]
    power: float | None = None
    display: DisplayUnits = DisplayUnits()
    bare_units: Mapping[str, str] = field(default_factory=frozen_mapping)
    params: Mapping[str, float] = field(default_factory=frozen_mapping)
    arms: Mapping[str, str] = field(default_factory=frozen_mapping)
    specs: tuple[Spec, ...] = ()
    mounts: Mapping[str, MountClass] = field(default_factory=frozen_mapping)
    tolerancing: Tolerancing = Tolerancing()
    simulation: Simulation = Simulation()
    warnings: tuple[str, ...] = ()
    text_hash: str = ""

    def element(self, name: str) -> Element:
        """The element called ``name`` (KeyError when there is none)."""
        for element in self.elements:
            if element.name == name:
                return element
        raise KeyError(name)

    def element_names(self) -> tuple[str, ...]:
        return tuple(element.name for element in self.elements)
