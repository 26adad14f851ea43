"""Load a TOML layout (format 1) into a validated ``Layout`` in SI units.

The file is data: values are read with tomllib and evaluated by our own expression
reader (``benchcheck.units``); nothing in a layout can run code or import modules.
"""

from __future__ import annotations

import hashlib
import math
import re
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from benchcheck.errors import LayoutError
from benchcheck.layout.element_types import DOF_KINDS, ElementType, builtin_element_types
from benchcheck.layout.elements import (
    NAME_PATTERN,
    RawElement,
    read_element_fields,
    read_tolerances,
)
from benchcheck.layout.locate import SourceMap
from benchcheck.layout.positions import MOUNT_COLLISION_DISTANCE, check_type_rules, resolve_positions
from benchcheck.layout.model import (
    DisplayUnits,
    Element,
    Layout,
    MountClass,
    Simulation,
    Source,
    Spec,
    Tolerance,
    Tolerancing,
    frozen_mapping,
)
from benchcheck.layout.reader import Place, ValueReader
from benchcheck.limits import GRID_CEILING, TRIALS_CEILING
from benchcheck.units import kind_of, registry

__all__ = ["load_layout", "parse_layout", "FORMAT", "TOP_LEVEL_TABLES", "MOUNT_COLLISION_DISTANCE"]

FORMAT = 1
TOP_LEVEL_TABLES = (
    "format", "bench", "units", "params", "source", "element", "mounts", "spec", "tolerancing", "simulation",
)
# The largest values any command-line option can allow (benchcheck.limits); the caps a run
# uses by default are lower and are checked before allocating, with the option to raise them.
MAX_GRID = GRID_CEILING
MAX_TRIALS = TRIALS_CEILING
_WORD = re.compile(r"^[A-Za-z_]+$")
SOURCE_DOFS = ("wavelength", "waist", "waist_z", "m2", "x", "y", "tilt_x", "tilt_y")


def load_layout(
    path: str | Path,
    element_types: Mapping[str, ElementType] | None = None,
    pattern_fields: Mapping[str, Mapping[str, str]] | None = None,
) -> Layout:
    """Read and validate a layout file.

    Parameters
    ----------
    path : str or Path
        The TOML file.
    element_types : mapping, optional
        Element types by name (first-party types when omitted; plugins add more).
    pattern_fields : mapping, optional
        Hologram patterns added by plugins: pattern name -> field name -> value kind.

    Raises
    ------
    LayoutError
        With the file, line, element and field of the first problem found.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise LayoutError("no such file", file=str(path)) from None
    except (OSError, UnicodeDecodeError) as error:
        raise LayoutError(f"cannot read the file ({error})", file=str(path)) from None
    return parse_layout(text, str(path), element_types, pattern_fields)


def parse_layout(
    text: str,
    path: str = "<layout>",
    element_types: Mapping[str, ElementType] | None = None,
    pattern_fields: Mapping[str, Mapping[str, str]] | None = None,
) -> Layout:
    """Validate layout text; ``path`` is used in messages (see ``load_layout``)."""
    try:
        document = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        message = str(error)
        match = re.search(r"\(at line (\d+), column (\d+)\)", message)
        line = int(match.group(1)) if match else None
        reason = re.sub(r" \(at line.*", "", message)
        raise LayoutError(f"not valid TOML: {reason}", file=path, line=line) from None
    return _LayoutBuilder(text, path, document, element_types or builtin_element_types(), pattern_fields).build()


class _LayoutBuilder:
    def __init__(self, text, path, document, element_types, pattern_fields) -> None:
        self.text = text
        self.path = path
        self.document = document
        self.element_types = dict(element_types)
        self.pattern_fields = pattern_fields
        self.source_map = SourceMap(text)
        self.reader = ValueReader(path, self.source_map)
        self.warnings: list[str] = []

    def error(self, place: Place, message: str, hint: str | None = None) -> LayoutError:
        return self.reader.error(place, message, hint)

    def build(self) -> Layout:
        document = self.document
        for key in document:
            if key not in TOP_LEVEL_TABLES:
                raise self.error(Place("", key=key), f"unknown table or key '{key}'",
                                 hint="format 1 has: " + ", ".join(TOP_LEVEL_TABLES))
        if "format" not in document:
            raise self.error(Place(""), "the layout does not say its format", hint="add 'format = 1' at the top")
        if document["format"] != FORMAT or isinstance(document["format"], bool):
            raise self.error(Place("", key="format"), f"format {document['format']!r} is not supported",
                             hint="this version reads format = 1")
        display = self._units()
        params = self._params()
        bench = self._table("bench", required=True)
        for key in bench:
            if key not in ("title", "wavelength", "power"):
                raise self.error(Place("bench", key=key), f"'{key}' is not a field of [bench]",
                                 hint="valid fields: title, wavelength, power")
        if "wavelength" not in bench:
            raise self.error(Place("bench", key="wavelength"), "[bench] needs 'wavelength'")
        wavelength = self.reader.quantity(bench["wavelength"], "length", Place("bench", key="wavelength"))
        _require_positive(self, wavelength, Place("bench", key="wavelength"))
        power = None
        if "power" in bench:
            power = self.reader.quantity(bench["power"], "power", Place("bench", key="power"))
            _require_positive(self, power, Place("bench", key="power"))
        title = self.reader.string(bench.get("title", ""), Place("bench", key="title"))
        source = self._source(wavelength, power)
        mounts = self._mounts()
        elements, arms = self._elements(mounts)
        specs = self._specs({element.name for element in elements})
        tolerancing = self._tolerancing(elements)
        simulation = self._simulation()
        return Layout(
            path=self.path,
            title=title,
            wavelength=wavelength,
            source=source,
            elements=tuple(elements),
            power=power,
            display=display,
            bare_units=frozen_mapping(self.reader.default_units),
            params=frozen_mapping(params),
            arms=frozen_mapping(arms),
            specs=tuple(specs),
            mounts=frozen_mapping(mounts),
            tolerancing=tolerancing,
            simulation=simulation,
            warnings=tuple(self.warnings),
            text_hash=hashlib.sha256(self.text.encode("utf-8")).hexdigest(),
        )

    # -- small tables ---------------------------------------------------------------------

    def _table(self, name: str, required: bool = False) -> dict[str, Any]:
        if name not in self.document:
            if required:
                raise self.error(Place(""), f"the layout has no [{name}] table")
            return {}
        value = self.document[name]
        if not isinstance(value, dict):
            raise self.error(Place("", key=name), f"'{name}' must be a table [{name}]")
        return value

    def _units(self) -> DisplayUnits:
        table = self._table("units")
        defaults: dict[str, str] = {}
        for key, value in table.items():
            place = Place("units", key=key)
            if key not in ("length", "angle", "power"):
                raise self.error(place, f"'{key}' is not a field of [units]", hint="valid fields: length, angle, power")
            unit = self.reader.string(value, place)
            try:
                found = kind_of(registry.Quantity(1.0, unit))
            except Exception:
                raise self.error(place, f"'{unit}' is not a unit") from None
            if found != key:
                raise self.error(place, f"'{unit}' is not a unit of {key}")
            defaults[key] = unit
        self.reader.default_units = defaults
        return DisplayUnits(length=defaults.get("length", "mm"), angle=defaults.get("angle", "mrad"))

    def _params(self) -> dict[str, float]:
        table = self._table("params")
        quantities = {}
        for key, value in table.items():
            place = Place("params", key=key)
            if not NAME_PATTERN.match(key):
                raise self.error(place, f"'{key}' is not a valid name", hint="letters, digits, underscore")
            # A bare number stays bare: the field that uses it gives it the unit [units]
            # states for that field's kind (so `n = 1.5` can be an index and `f1 = 300` a length).
            quantities[key] = self.reader.evaluate(value, place)
            self.reader.params = dict(quantities)
        return {key: float(q.to_base_units().magnitude) for key, q in quantities.items()}

    def _source(self, wavelength: float, power: float | None) -> Source:
        table = self._table("source", required=True)
        allowed = {"waist", "waist_z", "m2", "x", "y", "tilt_x", "tilt_y", "tolerance"}
        for key in table:
            if key not in allowed:
                raise self.error(Place("source", key=key), f"'{key}' is not a field of [source]",
                                 hint="valid fields: " + ", ".join(sorted(allowed)))
        if "waist" not in table:
            raise self.error(Place("source", key="waist"), "[source] needs 'waist' (the 1/e² radius)")
        read = self.reader
        waist = read.pair(table["waist"], "length", Place("source", key="waist"))
        for value in waist:
            _require_positive(self, value, Place("source", key="waist"))
        waist_z = read.pair(table.get("waist_z", 0.0), "length", Place("source", key="waist_z")) \
            if "waist_z" in table else (0.0, 0.0)
        m2 = read.pair(table.get("m2", 1.0), "ratio", Place("source", key="m2")) if "m2" in table else (1.0, 1.0)
        if min(m2) < 1.0:
            raise self.error(Place("source", key="m2"), f"M² cannot be below 1, got {min(m2)}")
        pose = [
            read.quantity(table[key], "length" if key in ("x", "y") else "angle", Place("source", key=key))
            if key in table else 0.0
            for key in ("x", "y", "tilt_x", "tilt_y")
        ]
        tolerances: tuple[Tolerance, ...] = ()
        if "tolerance" in table:
            source_type = ElementType("source", {}, dofs=SOURCE_DOFS)
            tolerances, _ = read_tolerances(read, table["tolerance"], source_type, Place("source", key="tolerance"))
        return Source(
            wavelength=wavelength, waist=waist, waist_z=waist_z, m2=m2, power=power,
            x=pose[0], y=pose[1], tilt_x=pose[2], tilt_y=pose[3], tolerances=tolerances,
            line=self.source_map.table_line("source"),
        )

    def _mounts(self) -> dict[str, MountClass]:
        table = self._table("mounts")
        mounts = {}
        for name, entry in table.items():
            place = Place(f"mounts.{name}")
            if not isinstance(entry, dict):
                raise self.error(Place("mounts", key=name), f"[mounts.{name}] must be a table")
            holds: dict[str, float] = {}
            rank = None
            description = ""
            for key, value in entry.items():
                where = place.at(key)
                if key == "rank":
                    rank = self.reader.integer(value, where, minimum=0)
                elif key == "description":
                    description = self.reader.string(value, where)
                elif key in ("z", "x", "y"):
                    holds[key] = self.reader.quantity(value, "length", where)
                elif key in ("tilt", "tilt_x", "tilt_y"):
                    limit = self.reader.quantity(value, "angle", where)
                    for axis in (("tilt_x", "tilt_y") if key == "tilt" else (key,)):
                        holds[axis] = limit
                else:
                    raise self.error(where, f"'{key}' is not a field of a mount class",
                                     hint="valid fields: rank, description, z, x, y, tilt, tilt_x, tilt_y")
            if rank is None:
                raise self.error(place.at("rank"), f"[mounts.{name}] needs 'rank' (0 = coarsest)")
            mounts[name] = MountClass(name=name, rank=rank, holds=frozen_mapping(holds), description=description)
        return mounts

    # -- elements ---------------------------------------------------------------------------

    def _elements(self, mounts: Mapping[str, MountClass]) -> tuple[list[Element], dict[str, str]]:
        tables = self.document.get("element", [])
        if not isinstance(tables, list):
            raise self.error(Place("", key="element"), "elements are written as [[element]] tables")
        raw_elements: list[RawElement] = []
        names: dict[str, int] = {}
        for index, table in enumerate(tables):
            place = Place("element", index, None, index)
            if not isinstance(table, dict):
                raise self.error(place, "each [[element]] must be a table")
            name = table.get("name")
            if not isinstance(name, str) or not NAME_PATTERN.match(name):
                # Name the element by what the file says, not by the table's own name 'element'.
                place = Place("element", index, name if isinstance(name, str) and name else "(no name)", index)
                raise self.error(place.at("name"),
                                 "every element needs a 'name' of letters, digits and underscores"
                                 + (f", got {name!r}" if name is not None else ""))
            place = Place("element", index, name, index)
            if name in names or name == "source":
                raise self.error(place.at("name"), f"the name '{name}' is used twice"
                                 if name != "source" else "'source' is reserved for the laser")
            names[name] = index
            type_name = table.get("type")
            if not isinstance(type_name, str) or type_name not in self.element_types:
                raise self.error(place.at("type"), f"unknown element type {type_name!r}",
                                 hint="known types: " + ", ".join(sorted(self.element_types)))
            raw = read_element_fields(self.reader, table, index, self.element_types[type_name], name,
                                      self.pattern_fields)
            if raw.mount is not None and raw.mount not in mounts:
                raise self.error(place.at("mount"), f"no mount class '{raw.mount}' in [mounts]",
                                 hint="defined: " + (", ".join(sorted(mounts)) or "none"))
            check_type_rules(self, raw, place)
            raw_elements.append(raw)
        return resolve_positions(self, raw_elements)

    # -- specs, tolerancing, simulation ---------------------------------------------------

    def _specs(self, plane_names: set[str]) -> list[Spec]:
        tables = self.document.get("spec", [])
        if not isinstance(tables, list):
            raise self.error(Place("", key="spec"), "specs are written as [[spec]] tables")
        specs = []
        for index, table in enumerate(tables):
            place = Place("spec", index, None, index)
            if not isinstance(table, dict):
                raise self.error(place, "each [[spec]] must be a table")
            metric = self.reader.string(table.get("metric"), place.at("metric")) if "metric" in table else None
            if not metric:
                raise self.error(place.at("metric"), "a spec needs 'metric' (a registered metric name)")
            if "at" not in table:
                raise self.error(place.at("at"), "a spec needs 'at' (the plane it applies to)")
            at = self.reader.string(table["at"], place.at("at"))
            if at not in plane_names:
                raise self.error(place.at("at"), f"no element or plane called '{at}'",
                                 hint="elements: " + ", ".join(sorted(plane_names)))
            if "min" not in table and "max" not in table:
                raise self.error(place, f"the spec on '{metric}' needs 'min' or 'max'")
            minimum = self.reader.si_value(table["min"], place.at("min")) if "min" in table else None
            maximum = self.reader.si_value(table["max"], place.at("max")) if "max" in table else None
            if minimum is not None and maximum is not None and minimum > maximum:
                raise self.error(place.at("min"), f"min ({table['min']}) is above max ({table['max']})")
            options = {
                key: self._option_value(value, place.at(key))
                for key, value in table.items() if key not in ("metric", "at", "min", "max", "name")
            }
            name = self.reader.string(table.get("name", ""), place.at("name")) if "name" in table else ""
            bare = tuple(key for key in ("min", "max")
                         if key in table and isinstance(table[key], (int, float)) and not isinstance(table[key], bool))
            specs.append(Spec(metric=metric, at=at, minimum=minimum, maximum=maximum, name=name, index=index,
                              line=self.source_map.table_line("spec", index), options=frozen_mapping(options),
                              bare_bounds=bare))
        return specs

    def _option_value(self, value: Any, place: Place) -> Any:
        """A spec option: a quantity in SI, or a plain word (``about = "beam"``) kept as text."""
        if isinstance(value, (bool, dict, list)):
            return value
        if isinstance(value, str) and _WORD.match(value) and value not in self.reader.params:
            return value
        return self.reader.si_value(value, place)

    def _tolerancing(self, elements: list[Element]) -> Tolerancing:
        table = self._table("tolerancing")
        place = Place("tolerancing")
        allowed = {"trials", "seed", "sampler", "adjust", "yield_target", "defaults"}
        for key in table:
            if key not in allowed:
                raise self.error(place.at(key), f"'{key}' is not a field of [tolerancing]",
                                 hint="valid fields: " + ", ".join(sorted(allowed)))
        read = self.reader
        trials = read.integer(table.get("trials", 200), place.at("trials"), 1, MAX_TRIALS)
        seed = read.integer(table.get("seed", 0), place.at("seed"), 0, 2**63 - 1)
        sampler = read.choice(table.get("sampler", "random"), ("random", "sobol"), place.at("sampler"))
        target = read.quantity(table.get("yield_target", 0.95), "ratio", place.at("yield_target"))
        if not 0 < target <= 1:
            raise self.error(place.at("yield_target"), f"must be between 0 and 1, got {target}")
        adjust, adjust_ranges = self._adjustments(table.get("adjust", []), place.at("adjust"))
        names = {element.name for element in elements} | {"source"}
        for dof in adjust:
            element_name, _, dof_name = dof.rpartition(".")
            if element_name not in names or not dof_name:
                raise self.error(place.at("adjust"), f"'{dof}' does not name an element's degree of freedom",
                                 hint="write <element>.<dof>, for example cam.z")
        defaults = {}
        for type_name, entry in read.table(table.get("defaults", {}), place.at("defaults")).items():
            if type_name not in self.element_types:
                raise self.error(place.at(f"defaults.{type_name}"), f"unknown element type '{type_name}'")
            defaults[type_name], _ = read_tolerances(read, entry, self.element_types[type_name],
                                                     place.at(f"defaults.{type_name}"))
        return Tolerancing(trials=trials, seed=seed, sampler=sampler, adjust=adjust, yield_target=target,
                           defaults=frozen_mapping(defaults), adjust_ranges=frozen_mapping(adjust_ranges))

    def _adjustments(self, raw: Any, place: Place) -> tuple[tuple[str, ...], dict[str, float]]:
        """``adjust``: a list of dof names, or a table of dof name -> ± range ("cam.z" = "5 mm")."""
        if not isinstance(raw, dict):
            return self.reader.strings(raw, place), {}
        ranges: dict[str, float] = {}
        pending = list(raw.items())
        while pending:
            name, value = pending.pop(0)
            if isinstance(value, dict):  # unquoted keys: cam.z = "5 mm" reads as { cam = { z = ... } }
                pending[:0] = [(f"{name}.{key}", item) for key, item in value.items()]
                continue
            kind = DOF_KINDS.get(name.rpartition(".")[2], "length").partition("|")[0]
            limit = self.reader.quantity(value, kind, place)
            if not (limit > 0 and math.isfinite(limit)):
                raise self.error(place, f"the adjustment range of '{name}' must be positive, got {value!r}",
                                 hint="a ± range such as \"5 mm\"")
            ranges[name] = limit
        return tuple(ranges), ranges

    def _simulation(self) -> Simulation:
        table = self._table("simulation")
        place = Place("simulation")
        grid = None
        if "grid" in table:
            grid = self.reader.integer(table["grid"], place.at("grid"), 16, MAX_GRID)
        precision = self.reader.choice(table.get("precision", "single"), ("single", "double"), place.at("precision"))
        options = {}
        for key, value in table.items():
            if key in ("grid", "precision"):
                continue
            if key not in ("samples_per_pixel", "replicas", "margin"):
                raise self.error(place.at(key), f"'{key}' is not a field of [simulation]",
                                 hint="valid fields: grid, precision, samples_per_pixel, replicas, margin")
            options[key] = self.reader.number(value, place.at(key))
        return Simulation(grid=grid, precision=precision, options=frozen_mapping(options))


def _require_positive(builder: _LayoutBuilder, value: float, place: Place) -> None:
    if not (value > 0 and math.isfinite(value)):
        raise builder.error(place, f"must be positive and finite, got {value:g} (SI)")
