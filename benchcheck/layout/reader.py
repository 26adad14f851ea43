"""Reading single values out of a layout table, with the place of each error.

A ``Place`` says where a value sits (table, occurrence, element, key); ``ValueReader``
turns raw TOML values into SI floats, integers, pairs and choices, raising ``LayoutError``
with the file, line, element and field when a value is not what the field needs.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, replace
from typing import Any

import pint

from benchcheck.errors import LayoutError
from benchcheck.layout.locate import SourceMap
from benchcheck.units import KINDS, ExpressionError, evaluate_expression, is_bare, kind_of, registry, to_si

__all__ = ["Place", "ValueReader"]

_INFINITY_WORDS = {"inf", "infinity", "flat"}


@dataclass(frozen=True)
class Place:
    """Where a value sits in the layout: ``table`` (and which ``[[table]]``), element, key."""

    table: str
    occurrence: int = 0
    element: str | None = None
    element_index: int | None = None
    key: str | None = None

    def at(self, key: str) -> "Place":
        return replace(self, key=key if self.key is None else f"{self.key}.{key}")


class ValueReader:
    """Converts raw TOML values to SI with clear errors.

    Parameters
    ----------
    file : str
        Path of the layout, for messages.
    source_map : SourceMap
        Line finder for the layout's text.
    default_units : mapping of str to str
        From ``[units]``: what a bare number means for each kind (``{"length": "mm"}``).
    params : mapping of str to pint.Quantity
        Named values usable in expressions.
    """

    def __init__(
        self,
        file: str,
        source_map: SourceMap,
        default_units: Mapping[str, str] | None = None,
        params: Mapping[str, pint.Quantity] | None = None,
    ) -> None:
        self.file = file
        self.source_map = source_map
        self.default_units = dict(default_units or {})
        self.params = dict(params or {})

    # -- errors -----------------------------------------------------------------------

    def line_of(self, place: Place) -> int | None:
        if place.key is None:
            return self.source_map.table_line(place.table, place.occurrence)
        first_key = place.key.split(".")[0]
        line = self.source_map.key_line(place.table, first_key, place.occurrence)
        if "." in place.key:
            inner = place.key.split(".")[-1]
            inner_line = self.source_map.word_line(place.table, inner, place.occurrence)
            if inner_line and line and inner_line >= line:
                return inner_line
        return line

    def error(self, place: Place, message: str, hint: str | None = None) -> LayoutError:
        """A LayoutError pointing at ``place``."""
        return LayoutError(
            message,
            file=self.file,
            line=self.line_of(place),
            element=place.element if place.element is not None else (place.table if place.table else None),
            element_index=place.element_index,
            field=place.key,
            hint=hint,
        )

    # -- quantities ---------------------------------------------------------------------

    def evaluate(self, raw: Any, place: Place) -> pint.Quantity:
        """Evaluate a string expression or a bare number to a pint quantity (no kind check)."""
        if isinstance(raw, bool) or not isinstance(raw, (str, int, float)):
            raise self.error(place, f"expected a quantity such as \"150 mm\", got {_describe(raw)}")
        if isinstance(raw, (int, float)):
            if not math.isfinite(float(raw)):
                raise self.error(place, "the value is not a finite number")
            return registry.Quantity(float(raw), "")
        try:
            return evaluate_expression(raw, self.params)
        except ExpressionError as error:
            raise self.error(place, str(error)) from None

    def quantity(self, raw: Any, kind: str, place: Place, allow_infinite: bool = False) -> float:
        """An SI float of the given kind (``length``, ``angle``, ``ratio``, ``power``...).

        A plain number (or an expression with no unit at all) takes the unit that
        ``[units]`` gives for the kind; without one it is refused, except for ratios
        and zero.
        """
        if allow_infinite and isinstance(raw, str) and raw.strip().lower() in _INFINITY_WORDS:
            return math.inf
        quantity = self.evaluate(raw, place)
        if kind != "ratio" and is_bare(quantity):
            if quantity.magnitude == 0:
                return 0.0  # zero needs no unit
            unit = self.default_units.get(kind)
            if unit is None:
                raise self.error(
                    place,
                    f"the number {raw!r} has no unit",
                    hint=f"write it with a unit, e.g. \"{raw} {_example_unit(kind)}\", "
                    f"or say what bare numbers mean in [units] {kind} = \"{_example_unit(kind)}\"",
                )
            quantity = quantity * registry.Quantity(1.0, unit)
        try:
            return to_si(quantity, kind)
        except ExpressionError as error:
            raise self.error(place, str(error)) from None

    def quantity_or_relative(self, raw: Any, kind: str, place: Place) -> tuple[float, bool]:
        """A limit that may be relative: ``"1 %"`` gives (0.01, True), ``"0.1 mm"`` (1e-4, False)."""
        quantity = self.evaluate(raw, place)
        if not is_bare(quantity) and kind_of(quantity) == "ratio":
            return float(quantity.to("").magnitude), True
        return self.quantity(raw, kind, place), False

    def pair(self, raw: Any, kind: str, place: Place) -> tuple[float, float]:
        """One value or ``[x, y]`` of the given kind, as an (x, y) tuple."""
        if isinstance(raw, list):
            if len(raw) != 2:
                raise self.error(place, f"expected one value or [x, y], got a list of {len(raw)}")
            return (
                self.quantity(raw[0], kind, place),
                self.quantity(raw[1], kind, place),
            )
        value = self.quantity(raw, kind, place)
        return (value, value)

    # -- plain values ---------------------------------------------------------------------

    def integer(self, raw: Any, place: Place, minimum: int | None = None, maximum: int | None = None) -> int:
        if isinstance(raw, bool) or not isinstance(raw, int):
            if isinstance(raw, float) and raw.is_integer():
                raw = int(raw)
            else:
                raise self.error(place, f"expected a whole number, got {_describe(raw)}")
        if minimum is not None and raw < minimum:
            raise self.error(place, f"must be at least {minimum}, got {raw}")
        if maximum is not None and raw > maximum:
            raise self.error(place, f"must be at most {maximum}, got {raw}")
        return raw

    def integer_pair(self, raw: Any, place: Place, minimum: int = 1, maximum: int = 1 << 20) -> tuple[int, int]:
        if isinstance(raw, list):
            if len(raw) != 2:
                raise self.error(place, f"expected [columns, rows], got a list of {len(raw)}")
            return (
                self.integer(raw[0], place, minimum, maximum),
                self.integer(raw[1], place, minimum, maximum),
            )
        value = self.integer(raw, place, minimum, maximum)
        return (value, value)

    def number(self, raw: Any, place: Place) -> float:
        if isinstance(raw, bool) or not isinstance(raw, (int, float)):
            quantity = self.evaluate(raw, place)
            if not quantity.dimensionless:
                raise self.error(place, f"expected a plain number, got {quantity:~P}")
            return float(quantity.to("").magnitude)
        if not math.isfinite(float(raw)):
            raise self.error(place, "the value is not a finite number")
        return float(raw)

    def string(self, raw: Any, place: Place) -> str:
        if not isinstance(raw, str):
            raise self.error(place, f"expected text, got {_describe(raw)}")
        return raw

    def choice(self, raw: Any, choices: tuple[str, ...], place: Place) -> str:
        value = self.string(raw, place)
        if value not in choices:
            raise self.error(place, f"'{value}' is not one of: {', '.join(choices)}")
        return value

    def strings(self, raw: Any, place: Place) -> tuple[str, ...]:
        if isinstance(raw, str):
            return (raw,)
        if not isinstance(raw, list) or not all(isinstance(item, str) for item in raw):
            raise self.error(place, f"expected a list of names, got {_describe(raw)}")
        return tuple(raw)

    def table(self, raw: Any, place: Place) -> Mapping[str, Any]:
        if not isinstance(raw, dict):
            raise self.error(place, f"expected a table {{ ... }}, got {_describe(raw)}")
        return raw

    def si_value(self, raw: Any, place: Place) -> float:
        """Any quantity in SI base units (spec bounds, options): "0.5 mm" -> 5e-4, "90 %" -> 0.9."""
        quantity = self.evaluate(raw, place)
        if is_bare(quantity):
            return float(quantity.magnitude)
        kind = kind_of(quantity)
        if kind in KINDS:
            return float(quantity.to(KINDS[kind]).magnitude)
        return float(quantity.to_base_units().magnitude)


def _describe(raw: Any) -> str:
    if isinstance(raw, bool):
        return f"the boolean {str(raw).lower()}"
    if isinstance(raw, dict):
        return "a table"
    if isinstance(raw, list):
        return "a list"
    return repr(raw)


def _example_unit(kind: str) -> str:
    return {"length": "mm", "angle": "mrad", "power": "W", "irradiance": "W/cm^2", "time": "s"}.get(kind, "")
