"""A realization: the bench with one perturbation applied, each element on its own mount.

Perturbing ``L1.z`` moves L1 alone; the gaps on both sides change together, because gaps
follow from the elements' path positions (DESIGN.md section 4).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from benchcheck.bench.graph import SOURCE, Bench
from benchcheck.layout.model import Element, Source

__all__ = ["Realization", "split_dof", "POSE_ATTRIBUTES"]

POSE_ATTRIBUTES = ("z", "x", "y", "tilt_x", "tilt_y")
_VALUE_DOFS = ("focal_length", "radius", "thickness", "diameter", "fill_factor")
_PAIR_DOFS = ("pixel_pitch",)


def split_dof(dof: str) -> tuple[str, str]:
    """``"relay.lens1.z"`` -> ``("relay.lens1", "z")``."""
    owner, _, name = dof.rpartition(".")
    if not owner or not name:
        raise ValueError(f"'{dof}' is not a degree-of-freedom name (<element>.<dof>)")
    return owner, name


@dataclass(frozen=True)
class Realization:
    """The bench with excursions (SI, absolute) applied to named degrees of freedom."""

    bench: Bench
    perturbation: Mapping[str, float] = field(default_factory=dict)

    def __post_init__(self) -> None:
        grouped: dict[str, dict[str, float]] = {}
        for dof, excursion in self.perturbation.items():
            owner, name = split_dof(dof)
            if owner != SOURCE and owner not in self.bench.graph:
                raise ValueError(f"'{dof}': no element called '{owner}'")
            grouped.setdefault(owner, {})[name] = float(excursion)
        object.__setattr__(self, "perturbation", MappingProxyType(dict(self.perturbation)))
        object.__setattr__(self, "_by_owner", grouped)
        object.__setattr__(self, "_cache", {})

    @property
    def wavelength(self) -> float:
        return self.source().wavelength

    def source(self) -> Source:
        """The source with its excursions applied."""
        if SOURCE in self._cache:
            return self._cache[SOURCE]
        source = self.bench.layout.source
        changes = self._by_owner.get(SOURCE, {})
        updates = {}
        for name, excursion in changes.items():
            if name in ("x", "y", "tilt_x", "tilt_y", "wavelength"):
                updates[name] = getattr(source, name) + excursion
            elif name in ("waist", "waist_z", "m2"):
                updates[name] = tuple(value + excursion for value in getattr(source, name))
            else:
                raise ValueError(f"'source.{name}' is not a degree of freedom of the source")
        result = dataclasses.replace(source, **updates) if updates else source
        self._cache[SOURCE] = result
        return result

    def element(self, name: str) -> Element:
        """The element called ``name`` with its excursions applied."""
        if name in self._cache:
            return self._cache[name]
        element = self.bench.element(name)
        changes = self._by_owner.get(name, {})
        result = _perturbed(element, changes) if changes else element
        self._cache[name] = result
        return result

    def elements(self) -> Iterator[Element]:
        """Every element in trace order, perturbed."""
        for name in self.bench.planes():
            yield self.element(name)


def _perturbed(element: Element, changes: Mapping[str, float]) -> Element:
    pose = {}
    values = dict(element.values)
    for name, excursion in changes.items():
        if name in POSE_ATTRIBUTES:
            pose[name] = getattr(element, name) + excursion
        elif name in _VALUE_DOFS:
            if name not in values:
                raise ValueError(f"'{element.name}.{name}': the element has no {name}")
            nominal = values[name]
            values[name] = nominal if math.isinf(nominal) else nominal + excursion
        elif name in _PAIR_DOFS:
            values[name] = tuple(value + excursion for value in values[name])
        elif name == "phase_depth":
            values["phase_depth"] = values.get("phase_depth", 1.0) + excursion
        elif name in ("shift_x", "shift_y"):
            shift = list(values.get("shift", (0.0, 0.0)))
            shift[0 if name == "shift_x" else 1] += excursion
            values["shift"] = tuple(shift)
        else:
            values[name] = values.get(name, 0.0) + excursion
    return dataclasses.replace(element, values=MappingProxyType(values), **pose)
