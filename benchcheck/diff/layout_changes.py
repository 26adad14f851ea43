"""What changed between two layouts, element by element: added, removed, moved, changed.

Elements are matched by name (relay children by their expanded names, ``relay.lens1``).
Values are compared in SI; ``format_value`` writes them back in a layout's display units.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from benchcheck.layout.element_types import COMMON_FIELDS, DOF_KINDS, ElementType
from benchcheck.layout.model import DisplayUnits, Element, Layout, Source, Spec, Tolerance
from benchcheck.units import KINDS, format_quantity

__all__ = [
    "FieldChange",
    "MovedElement",
    "LayoutChanges",
    "compare_layouts",
    "format_value",
    "values_differ",
    "RELATIVE_TOLERANCE",
]

#: Two SI values closer than this (relative, and absolute in SI units) count as equal: the
#: loader sums gaps in floating point, so "after/gap" and "z" spellings differ in the last bits.
RELATIVE_TOLERANCE = 1e-12

#: Element attributes compared besides the type-specific values, with their value kinds.
_POSE_FIELDS = {"arm": "string", "x": "length", "y": "length", "tilt_x": "angle", "tilt_y": "angle",
                "mount": "string", "type": "string"}

#: Source fields and their kinds (the wavelength is shown in nm: mm would read 0.001064).
_SOURCE_FIELDS = {"wavelength": "wavelength", "waist": "length", "waist_z": "length", "m2": "ratio",
                  "power": "power", "x": "length", "y": "length", "tilt_x": "angle", "tilt_y": "angle"}

#: Value kind of a metric whose registered SI unit is this.
_KIND_OF_SI_UNIT = {"m": "length", "rad": "angle", "W": "power", "": "ratio"}


@dataclass(frozen=True)
class FieldChange:
    """One field that differs between layout A and layout B (values in SI).

    ``owner`` is an element name, ``"source"``, or a spec label; ``kind`` the value kind
    (``length``, ``angle``, ``ratio``, ``tolerance``, ...); a missing value is None.
    """

    owner: str
    field: str
    kind: str
    a: Any
    b: Any

    def to_dict(self) -> dict:
        return {"owner": self.owner, "field": self.field, "unit": _si_unit(self.kind),
                "a": _json_value(self.a), "b": _json_value(self.b)}


@dataclass(frozen=True)
class MovedElement:
    """An element whose path position changed (m)."""

    name: str
    z_a: float
    z_b: float

    def to_dict(self) -> dict:
        return {"name": self.name, "z_m": [self.z_a, self.z_b], "shift_m": self.z_b - self.z_a}


@dataclass(frozen=True)
class LayoutChanges:
    """Everything that differs between two layouts, as data."""

    added: tuple[str, ...]
    removed: tuple[str, ...]
    moved: tuple[MovedElement, ...]
    changed: tuple[FieldChange, ...]
    source: tuple[FieldChange, ...]
    specs_added: tuple[str, ...]
    specs_removed: tuple[str, ...]
    specs_changed: tuple[FieldChange, ...]
    bench: tuple[FieldChange, ...]

    @property
    def empty(self) -> bool:
        return not any((self.added, self.removed, self.moved, self.changed, self.source, self.specs_added,
                        self.specs_removed, self.specs_changed, self.bench))

    def to_dict(self) -> dict:
        return {
            "added": list(self.added),
            "removed": list(self.removed),
            "moved": [moved.to_dict() for moved in self.moved],
            "changed": [change.to_dict() for change in self.changed],
            "source": [change.to_dict() for change in self.source],
            "specs": {"added": list(self.specs_added), "removed": list(self.specs_removed),
                      "changed": [change.to_dict() for change in self.specs_changed]},
            "bench": [change.to_dict() for change in self.bench],
        }


def values_differ(a: Any, b: Any) -> bool:
    """True when two layout values differ beyond floating-point noise (see ``RELATIVE_TOLERANCE``)."""
    if isinstance(a, bool) or isinstance(b, bool) or a is None or b is None:
        return a != b
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        if math.isinf(a) or math.isinf(b):
            return a != b
        return not math.isclose(a, b, rel_tol=RELATIVE_TOLERANCE, abs_tol=RELATIVE_TOLERANCE)
    if isinstance(a, Mapping) and isinstance(b, Mapping):
        return set(a) != set(b) or any(values_differ(a[key], b[key]) for key in a)
    if isinstance(a, (tuple, list)) and isinstance(b, (tuple, list)):
        return len(a) != len(b) or any(values_differ(x, y) for x, y in zip(a, b))
    return a != b


def _tolerance_table(tolerances: tuple[Tolerance, ...]) -> dict[str, Tolerance]:
    return {tolerance.dof: tolerance for tolerance in tolerances}


def _field_kinds(element: Element, element_types: Mapping[str, ElementType]) -> dict[str, str]:
    kinds = {name: spec.kind for name, spec in COMMON_FIELDS.items()}
    element_type = element_types.get(element.type)
    if element_type is not None:
        kinds.update({name: spec.kind for name, spec in element_type.fields.items()})
    return kinds


def _tolerance_changes(owner: str, a: tuple[Tolerance, ...], b: tuple[Tolerance, ...],
                       dof_kind) -> list[FieldChange]:
    table_a, table_b = _tolerance_table(a), _tolerance_table(b)
    changes = []
    for dof in dict.fromkeys([*table_a, *table_b]):
        first, second = table_a.get(dof), table_b.get(dof)
        if first is None or second is None or values_differ(
                (first.limit, first.relative, first.distribution), (second.limit, second.relative, second.distribution)):
            kind = "ratio" if (first or second).relative else dof_kind(dof).split("|")[0]
            changes.append(FieldChange(owner, f"tolerance.{dof}", f"tolerance:{kind}", first, second))
    return changes


def _element_changes(first: Element, second: Element, element_types: Mapping[str, ElementType]) -> list[FieldChange]:
    kinds = _field_kinds(second, element_types)
    changes = [FieldChange(first.name, name, kind, getattr(first, name), getattr(second, name))
               for name, kind in _POSE_FIELDS.items() if values_differ(getattr(first, name), getattr(second, name))]
    for key in dict.fromkeys([*first.values, *second.values]):
        value_a, value_b = first.values.get(key), second.values.get(key)
        if values_differ(value_a, value_b):
            changes.append(FieldChange(first.name, key, kinds.get(key, "number"), value_a, value_b))
    element_type = element_types.get(second.type)
    dof_kind = element_type.dof_kind if element_type is not None else (lambda dof: DOF_KINDS.get(dof, "length"))
    changes.extend(_tolerance_changes(first.name, first.tolerances, second.tolerances, dof_kind))
    return changes


def _source_changes(first: Source, second: Source, power_a: float | None, power_b: float | None) -> list[FieldChange]:
    changes = []
    for name, kind in _SOURCE_FIELDS.items():
        value_a = power_a if name == "power" else getattr(first, name)
        value_b = power_b if name == "power" else getattr(second, name)
        if values_differ(value_a, value_b):
            changes.append(FieldChange("source", name, kind, value_a, value_b))
    changes.extend(_tolerance_changes("source", first.tolerances, second.tolerances,
                                      lambda dof: DOF_KINDS.get(dof, "length")))
    return changes


def _spec_changes(a: tuple[Spec, ...], b: tuple[Spec, ...], metric_units: Mapping[str, str]
                  ) -> tuple[tuple[str, ...], tuple[str, ...], list[FieldChange]]:
    table_a = {spec.label: spec for spec in a}
    table_b = {spec.label: spec for spec in b}
    changes = []
    for label in table_a.keys() & table_b.keys():
        for bound, attribute in (("min", "minimum"), ("max", "maximum")):
            value_a, value_b = getattr(table_a[label], attribute), getattr(table_b[label], attribute)
            if values_differ(value_a, value_b):
                kind = _KIND_OF_SI_UNIT.get(metric_units.get(table_b[label].metric, ""), "number")
                changes.append(FieldChange(label, bound, kind, value_a, value_b))
    added = tuple(label for label in table_b if label not in table_a)
    removed = tuple(label for label in table_a if label not in table_b)
    return added, removed, sorted(changes, key=lambda change: (change.owner, change.field))


def compare_layouts(a: Layout, b: Layout, element_types: Mapping[str, ElementType],
                    metric_units: Mapping[str, str] | None = None) -> LayoutChanges:
    """List every difference between layout ``a`` and layout ``b``.

    Parameters
    ----------
    a, b : Layout
        The two layouts (SI values).
    element_types : mapping of str to ElementType
        The known element types (for the kind of each type-specific field).
    metric_units : mapping of str to str, optional
        SI unit of each metric by name (``"m"``, ``"rad"``, ``""``), for spec bounds.

    Returns
    -------
    LayoutChanges
        Added and removed element names (in B's and A's path order), moved elements (z
        changed), changed fields of the elements in both, source and spec changes.
    """
    names_a, names_b = a.element_names(), b.element_names()
    common = [name for name in names_a if name in set(names_b)]
    moved, changed = [], []
    for name in common:
        first, second = a.element(name), b.element(name)
        if values_differ(first.z, second.z):
            moved.append(MovedElement(name, first.z, second.z))
        changed.extend(_element_changes(first, second, element_types))
    specs_added, specs_removed, specs_changed = _spec_changes(a.specs, b.specs, metric_units or {})
    bench = [FieldChange("bench", "title", "string", a.title, b.title)] if a.title != b.title else []
    return LayoutChanges(
        added=tuple(name for name in names_b if name not in set(names_a)),
        removed=tuple(name for name in names_a if name not in set(names_b)),
        moved=tuple(moved),
        changed=tuple(changed),
        source=tuple(_source_changes(a.source, b.source, a.power, b.power)),
        specs_added=specs_added,
        specs_removed=specs_removed,
        specs_changed=tuple(specs_changed),
        bench=tuple(bench),
    )


def _display_unit(kind: str, display: DisplayUnits) -> str | None:
    return {"length": display.length, "angle": display.angle, "wavelength": "nm", "power": "W"}.get(kind)


def format_value(value: Any, kind: str, display: DisplayUnits) -> str:
    """A layout value in display units for people (``"-"`` when absent).

    Parameters
    ----------
    value : any
        SI float, (x, y) pair, string, mapping (an inline table) or ``Tolerance``.
    kind : str
        Value kind (``length``, ``angle``, ``ratio``, ``tolerance:<kind>``, ...).
    display : DisplayUnits
        The layout's display units (``[units]``).
    """
    if value is None:
        return "-"
    if isinstance(value, Tolerance):
        inner = kind.partition(":")[2] or "length"
        limit = f"{value.limit * 100:.4g} %" if value.relative else format_value(value.limit, inner, display)
        return f"±{limit} ({value.distribution})"
    if isinstance(value, Mapping):
        return "{" + ", ".join(f"{key} = {format_value(item, 'number', display)}" for key, item in value.items()) + "}"
    if isinstance(value, (tuple, list)):
        return ", ".join(format_value(item, kind, display) for item in value)
    if isinstance(value, bool) or isinstance(value, str):
        return str(value)
    if isinstance(value, (int, float)):
        unit = _display_unit(kind, display)
        return format_quantity(float(value), unit) if unit else f"{value:.6g}"
    return str(value)


def _si_unit(kind: str) -> str:
    base = kind.partition(":")[2] if kind.startswith("tolerance:") else kind
    base = {"wavelength": "length"}.get(base, base)
    return KINDS.get(base, "")


def _json_value(value: Any) -> Any:
    if isinstance(value, Tolerance):
        return {"limit": value.limit, "relative": value.relative, "distribution": value.distribution}
    if isinstance(value, Mapping):
        return {key: _json_value(item) for key, item in value.items()}
    if isinstance(value, (tuple, list)):
        return [_json_value(item) for item in value]
    return value
