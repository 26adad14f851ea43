"""Reading ``[[element]]`` tables: fields, tolerances, hologram tables and relay expansion."""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from benchcheck.layout.element_types import COMMON_FIELDS, ElementType, FieldSpec
from benchcheck.layout.model import Tolerance, frozen_mapping
from benchcheck.layout.reader import Place, ValueReader

__all__ = [
    "NAME_PATTERN",
    "DISTRIBUTIONS",
    "HOLOGRAM_FIELDS",
    "RawElement",
    "read_element_fields",
    "read_tolerances",
    "read_hologram",
    "expand_relay",
]

NAME_PATTERN = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
DISTRIBUTIONS = ("uniform", "normal", "fixed")

#: Hologram table fields and the kind of value each takes (DESIGN.md section 5).
HOLOGRAM_FIELDS: Mapping[str, str] = {
    "pattern": "string",
    "period_px": "number",
    "angle": "angle",
    "charge": "integer",
    "p": "integer",
    "l": "integer",
    "m": "integer",
    "n": "integer",
    "waist": "length",
    "size": "length",
    "shape": "string",
    "cone_angle": "angle",
    "focal_length": "length",
    "path": "string",
    "encoding": "string",
    "carrier": "table",
    "lens": "length",
    "compensate_input": "bool",
}
FIRST_PARTY_PATTERNS = ("none", "grating", "vortex", "lg", "hg", "flat_top", "axicon", "lens", "file")
ENCODINGS = ("phase", "complex", "arrizon3", "bolduc", "davis")


@dataclass(frozen=True)
class RawElement:
    """An element table read field by field, before positions are resolved."""

    name: str
    type: str
    index: int
    values: dict[str, Any]
    z: float | None
    after: str | None
    gap: float | None
    arm: str | None
    mount: str | None
    pose: tuple[float, float, float, float]
    tolerances: tuple[Tolerance, ...]
    child_tolerances: Mapping[str, tuple[Tolerance, ...]]
    line: int | None


def read_element_fields(
    reader: ValueReader,
    table: Mapping[str, Any],
    index: int,
    element_type: ElementType,
    name: str,
    pattern_fields: Mapping[str, Mapping[str, str]] | None = None,
) -> RawElement:
    """Validate one element table against its type and convert every field to SI."""
    place = Place("element", index, name, index)
    known = dict(COMMON_FIELDS) | dict(element_type.fields)
    for key in table:
        if key not in known:
            raise reader.error(
                place.at(key),
                f"'{key}' is not a field of a {element_type.name}",
                hint="valid fields: " + ", ".join(sorted(known)),
            )
    values: dict[str, Any] = {}
    for key, spec in element_type.fields.items():
        if key in table:
            values[key] = _read_field(reader, table[key], spec, place.at(key), pattern_fields)
        elif spec.required:
            raise reader.error(place.at(key), f"a {element_type.name} needs '{key}' ({spec.help})")
        elif spec.default is not None:
            values[key] = spec.default
    if "damage_threshold" in table:
        values["damage_threshold"] = reader.quantity(
            table["damage_threshold"], "irradiance", place.at("damage_threshold")
        )

    z = reader.quantity(table["z"], "length", place.at("z")) if "z" in table else None
    after = reader.string(table["after"], place.at("after")) if "after" in table else None
    gap = reader.quantity(table["gap"], "length", place.at("gap")) if "gap" in table else None
    if z is not None and (after is not None or gap is not None):
        raise reader.error(place.at("z"), "give either 'z' or 'after' with 'gap', not both")
    if z is None and (after is None or gap is None):
        missing = "gap" if after is not None else "after" if gap is not None else "z"
        raise reader.error(
            place.at(missing), "the element has no position",
            hint="give 'z' (path length from the source) or 'after' = \"<element>\" with 'gap'",
        )
    pose = tuple(
        reader.quantity(table[key], COMMON_FIELDS[key].kind, place.at(key)) if key in table else 0.0
        for key in ("x", "y", "tilt_x", "tilt_y")
    )
    tolerances, child_tolerances = (), {}
    if "tolerance" in table:
        children = ("lens1", "lens2", "fourier") if element_type.name == "relay" else ()
        tolerances, child_tolerances = read_tolerances(
            reader, table["tolerance"], element_type, place.at("tolerance"), children
        )
    return RawElement(
        name=name,
        type=element_type.name,
        index=index,
        values=values,
        z=z,
        after=after,
        gap=gap,
        arm=reader.string(table["arm"], place.at("arm")) if "arm" in table else None,
        mount=reader.string(table["mount"], place.at("mount")) if "mount" in table else None,
        pose=pose,  # type: ignore[arg-type]
        tolerances=tolerances,
        child_tolerances=child_tolerances,
        line=reader.line_of(place),
    )


def _read_field(
    reader: ValueReader,
    raw: Any,
    spec: FieldSpec,
    place: Place,
    pattern_fields: Mapping[str, Mapping[str, str]] | None,
) -> Any:
    kind = spec.kind
    if kind == "integer":
        return reader.integer_pair(raw, place) if spec.pair else reader.integer(raw, place, minimum=1)
    if kind == "choice":
        return reader.choice(raw, spec.choices, place)
    if kind == "string":
        return reader.string(raw, place)
    if kind == "strings":
        return reader.strings(raw, place)
    if kind == "number":
        return reader.number(raw, place)
    if kind == "bool":
        if not isinstance(raw, bool):
            raise reader.error(place, "expected true or false")
        return raw
    if kind == "table":
        if place.key == "hologram":
            return read_hologram(reader, raw, place, pattern_fields)
        if place.key == "iris":
            return read_iris(reader, raw, place)
        return frozen_mapping(reader.table(raw, place))
    allow_infinite = place.key == "radius"
    if spec.pair:
        return reader.pair(raw, kind, place)
    return reader.quantity(raw, kind, place, allow_infinite=allow_infinite)


def read_iris(reader: ValueReader, raw: Any, place: Place) -> Mapping[str, Any]:
    """The ``iris`` table of a relay: diameter (or size), centre, central stop."""
    table = reader.table(raw, place)
    allowed = {"diameter", "size", "center", "stop"}
    for key in table:
        if key not in allowed:
            raise reader.error(place.at(key), f"'{key}' is not a field of an iris",
                               hint="valid fields: " + ", ".join(sorted(allowed)))
    values: dict[str, Any] = {"center": (0.0, 0.0)}
    if "diameter" in table:
        values["diameter"] = reader.quantity(table["diameter"], "length", place.at("diameter"))
    if "size" in table:
        values["size"] = reader.pair(table["size"], "length", place.at("size"))
    if "center" in table:
        values["center"] = reader.pair(table["center"], "length", place.at("center"))
    if "stop" in table:
        values["stop"] = reader.quantity(table["stop"], "length", place.at("stop"))
    if "diameter" not in values and "size" not in values:
        raise reader.error(place, "an iris needs 'diameter' or 'size'")
    return frozen_mapping(values)


def read_hologram(
    reader: ValueReader,
    raw: Any,
    place: Place,
    pattern_fields: Mapping[str, Mapping[str, str]] | None = None,
) -> Mapping[str, Any]:
    """The modulator's ``hologram`` table, values converted to SI; patterns by registered name only."""
    table = reader.table(raw, place)
    patterns = dict(pattern_fields or {})
    known_patterns = set(FIRST_PARTY_PATTERNS) | set(patterns)
    pattern = reader.string(table.get("pattern", "none"), place.at("pattern"))
    if pattern not in known_patterns:
        raise reader.error(place.at("pattern"), f"unknown hologram pattern '{pattern}'",
                           hint="known patterns: " + ", ".join(sorted(known_patterns)))
    field_kinds = dict(HOLOGRAM_FIELDS) | dict(patterns.get(pattern, {}))
    values: dict[str, Any] = {"pattern": pattern}
    for key, value in table.items():
        if key == "pattern":
            continue
        if key not in field_kinds:
            raise reader.error(place.at(key), f"'{key}' is not a hologram field",
                               hint="valid fields: " + ", ".join(sorted(field_kinds)))
        kind = field_kinds[key]
        where = place.at(key)
        if key == "carrier":
            carrier = reader.table(value, where)
            unknown = set(carrier) - {"period_px", "angle"}
            if unknown:
                raise reader.error(where, f"'{sorted(unknown)[0]}' is not a carrier field",
                                   hint="valid fields: period_px, angle")
            if "period_px" not in carrier:
                raise reader.error(where, "a carrier needs 'period_px'")
            values[key] = frozen_mapping({
                "period_px": _positive(reader, reader.number(carrier["period_px"], where.at("period_px")), where),
                "angle": reader.quantity(carrier.get("angle", 0.0), "angle", where.at("angle"))
                if "angle" in carrier else 0.0,
            })
        elif key == "encoding":
            values[key] = reader.choice(value, ENCODINGS, where)
        elif key == "shape":
            values[key] = reader.choice(value, ("round", "square"), where)
        elif kind == "integer":
            values[key] = reader.integer(value, where, minimum=-1000, maximum=1000)
        elif kind == "number":
            values[key] = _positive(reader, reader.number(value, where), where)
        elif kind in ("string", "path"):  # a path is text; the file is read (and checked) when simulating
            values[key] = reader.string(value, where)
        elif kind == "bool":
            if not isinstance(value, bool):
                raise reader.error(where, "expected true or false")
            values[key] = value
        else:
            values[key] = reader.quantity(value, kind, where)
    return frozen_mapping(values)


def _positive(reader: ValueReader, value: float, place: Place) -> float:
    if not value > 0:
        raise reader.error(place, f"must be positive, got {value}")
    return value


def read_tolerances(
    reader: ValueReader,
    raw: Any,
    element_type: ElementType,
    place: Place,
    children: tuple[str, ...] = (),
) -> tuple[tuple[Tolerance, ...], dict[str, tuple[Tolerance, ...]]]:
    """A ``tolerance`` table: ``{ z = "0.5 mm", focal_length = "1 %", distribution = "normal" }``.

    A dof may also be ``{ limit = "...", distribution = "..." }``. Relay tolerances may hold
    sub-tables for one child (``lens2 = { z = "0.2 mm" }``).
    """
    table = reader.table(raw, place)
    default_distribution = "uniform"
    if "distribution" in table:
        default_distribution = reader.choice(table["distribution"], DISTRIBUTIONS, place.at("distribution"))
    tolerances: list[Tolerance] = []
    child_tolerances: dict[str, tuple[Tolerance, ...]] = {}
    for dof, value in table.items():
        if dof == "distribution":
            continue
        if dof in children:
            child_type = ElementType("aperture" if dof == "fourier" else "lens", {},
                                     dofs=("z", "x", "y", "diameter") if dof == "fourier" else element_type.dofs)
            child_tolerances[dof], _ = read_tolerances(reader, value, child_type, place.at(dof))
            continue
        if dof not in element_type.dofs:
            raise reader.error(
                place.at(dof), f"'{dof}' is not a degree of freedom of a {element_type.name}",
                hint="valid: " + ", ".join(element_type.dofs + children + ("distribution",)),
            )
        tolerances.append(_read_one_tolerance(reader, dof, value, element_type, place.at(dof), default_distribution))
    return tuple(tolerances), child_tolerances


def _read_one_tolerance(
    reader: ValueReader, dof: str, value: Any, element_type: ElementType, place: Place, distribution: str
) -> Tolerance:
    if isinstance(value, dict):
        unknown = set(value) - {"limit", "distribution"}
        if unknown or "limit" not in value:
            raise reader.error(place, "expected { limit = ..., distribution = ... }")
        if "distribution" in value:
            distribution = reader.choice(value["distribution"], DISTRIBUTIONS, place.at("distribution"))
        value = value["limit"]
    kind = element_type.dof_kind(dof)
    base_kind, _, relative_allowed = kind.partition("|")
    if relative_allowed:
        limit, relative = reader.quantity_or_relative(value, base_kind, place)
    else:
        limit, relative = reader.quantity(value, base_kind, place), False
    if not limit >= 0:
        raise reader.error(place, f"a tolerance is a ± limit and cannot be negative, got {value!r}")
    return Tolerance(dof=dof, limit=limit, relative=relative, distribution=distribution)


def expand_relay(raw: RawElement, z: float) -> list[dict[str, Any]]:
    """The two lenses and the Fourier plane of a 4f relay whose input plane is at ``z``.

    Returns dicts of Element keyword arguments; the output (image) plane is at
    ``z + 2 f1 + 2 f2`` (Goodman, Introduction to Fourier Optics, ch. 5).
    """
    f1, f2 = raw.values["focal_lengths"]
    lens_values = {"focal_length": None, "index": raw.values.get("index", 1.5)}
    if "clear_aperture" in raw.values:
        lens_values["clear_aperture"] = raw.values["clear_aperture"]
    iris = raw.values.get("iris")
    children = []
    for suffix, child_z, child_type, values in (
        ("lens1", z + f1, "lens", dict(lens_values, focal_length=f1)),
        ("fourier", z + 2 * f1, "aperture" if iris else "plane", dict(iris) if iris else {}),
        ("lens2", z + 2 * f1 + f2, "lens", dict(lens_values, focal_length=f2)),
    ):
        pose = raw.pose if child_type == "lens" else (0.0, 0.0, 0.0, 0.0)
        own = raw.child_tolerances.get(suffix, ())
        shared = raw.tolerances if child_type == "lens" else ()
        named = {tolerance.dof for tolerance in own}
        children.append(
            dict(
                name=f"{raw.name}.{suffix}",
                type=child_type,
                index=raw.index,
                z=child_z,
                values=frozen_mapping(values),
                x=pose[0],
                y=pose[1],
                tilt_x=pose[2],
                tilt_y=pose[3],
                mount=raw.mount,
                tolerances=tuple(own) + tuple(t for t in shared if t.dof not in named),
                parent=raw.name,
                line=raw.line,
            )
        )
    return children
