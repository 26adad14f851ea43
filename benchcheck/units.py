"""Quantities and expressions in layout files, converted to SI floats.

A value such as ``"150 mm"``, ``"2*f1 + f2"`` or ``"3 %"`` is tokenised and evaluated by
pint's own expression tree with our own operator table: only numbers, units, names from
``[params]``, ``+ - * / **`` and parentheses are allowed. Nothing is passed to Python's
``eval``; exponents and magnitudes are bounded so a hostile value cannot hang or overflow.
"""

from __future__ import annotations

import math
import operator
import tokenize
from collections.abc import Mapping
from dataclasses import dataclass

import pint
from pint import pint_eval

__all__ = [
    "KINDS",
    "ExpressionError",
    "registry",
    "evaluate_expression",
    "to_si",
    "kind_of",
    "is_bare",
    "format_quantity",
    "si_per_unit",
]

registry = pint.UnitRegistry()
Quantity = registry.Quantity

#: Value kinds a layout field can ask for, with the SI unit each is stored in.
KINDS: dict[str, str] = {
    "length": "m",
    "angle": "rad",
    "ratio": "",  # dimensionless, not an angle: M², fill factor, index, 3 %
    "power": "W",
    "irradiance": "W/m^2",
    "time": "s",
}

_ANGLE_UNITS = {"degree", "arcminute", "arcsecond", "turn", "gradian"}
_MAX_MAGNITUDE = 1e30
_MAX_EXPONENT = 64
_MAX_LENGTH = 400


class ExpressionError(ValueError):
    """An expression that cannot be evaluated; the message says why in plain words."""


@dataclass(frozen=True)
class _Bare:
    """A bare number (no unit) while an expression is evaluated."""

    value: float


def _is_angle_unit(name: str) -> bool:
    return name.endswith("radian") or name in _ANGLE_UNITS


def is_bare(quantity: pint.Quantity) -> bool:
    """True for a plain number: no unit at all (pint calls percent 'unitless' too, so check the units)."""
    return not dict(quantity.unit_items())


def kind_of(quantity: pint.Quantity) -> str:
    """Name the kind of a quantity: 'length', 'angle', 'ratio', 'power', ... or its dimensionality."""
    if quantity.dimensionless:
        units = quantity.unit_items()
        if any(_is_angle_unit(name) for name, _ in units):
            return "angle"
        return "ratio"
    for kind, unit in KINDS.items():
        if unit and quantity.check(unit):
            return kind
    return str(quantity.dimensionality)


def _checked(value):
    magnitude = value.magnitude if isinstance(value, pint.Quantity) else value
    if isinstance(magnitude, complex) or not math.isfinite(float(magnitude)):
        raise ExpressionError("the result is not a finite number")
    if abs(float(magnitude)) > _MAX_MAGNITUDE:
        raise ExpressionError("the result is too large")
    return value


def _power(base, exponent):
    exponent_value = exponent.magnitude if isinstance(exponent, pint.Quantity) else exponent
    if isinstance(exponent, pint.Quantity) and not exponent.dimensionless:
        raise ExpressionError("an exponent must be a plain number")
    if abs(float(exponent_value)) > _MAX_EXPONENT:
        raise ExpressionError(f"exponent {exponent_value} is too large (at most {_MAX_EXPONENT})")
    try:
        return _checked(base ** float(exponent_value))
    except (OverflowError, ZeroDivisionError) as error:
        raise ExpressionError(f"cannot raise to that power ({error})") from None


def _guarded(operation):
    def apply(left, right):
        try:
            return _checked(operation(left, right))
        except ZeroDivisionError:
            raise ExpressionError("division by zero") from None
        except OverflowError:
            raise ExpressionError("the result is too large") from None
        except pint.DimensionalityError as error:
            raise ExpressionError(
                f"cannot combine {error.dim1 or 'a number'} with {error.dim2 or 'a number'}"
            ) from None

    return apply


_BINARY = {
    "+": _guarded(operator.add),
    "-": _guarded(operator.sub),
    "*": _guarded(operator.mul),
    "": _guarded(operator.mul),  # implicit: "150 mm"
    "/": _guarded(operator.truediv),
    "**": _power,
}
_UNARY = {"-": operator.neg, "+": operator.pos}


def evaluate_expression(text: str, params: Mapping[str, pint.Quantity] | None = None) -> pint.Quantity:
    """Evaluate a quantity expression from a layout.

    Parameters
    ----------
    text : str
        The expression: numbers, units, names from ``params``, ``+ - * / **``, parentheses.
    params : mapping of str to pint.Quantity, optional
        Named values from the layout's ``[params]`` table.

    Returns
    -------
    pint.Quantity
        The value with its units (a bare number comes back dimensionless).

    Raises
    ------
    ExpressionError
        For anything else: unknown names, calls, attribute access, huge numbers,
        division by zero. The message names the offending part.
    """
    params = params or {}
    if len(text) > _MAX_LENGTH:
        raise ExpressionError(f"the expression is longer than {_MAX_LENGTH} characters")
    # Surrounding blanks would reach the tokenizer as an indent: " 150 mm" is still 150 mm.
    source = text.replace("%", " percent ").replace("^", "**").strip()
    if not source:
        raise ExpressionError("the value is empty")
    try:
        tokens = list(pint_eval.tokenizer(source))
    except (tokenize.TokenError, IndentationError, SyntaxError) as error:
        raise ExpressionError(f"cannot read '{text}' ({error.args[0]})") from None

    previous = None
    for token in tokens:
        if token.type == tokenize.OP and token.string not in {"+", "-", "*", "/", "**", "(", ")"}:
            raise ExpressionError(f"'{token.string}' is not allowed (use + - * / ** and parentheses)")
        if token.type == tokenize.OP and token.string == "(" and previous is not None and previous.type == tokenize.NAME:
            raise ExpressionError(f"'{previous.string}(...)' looks like a call; calls are not allowed")
        if token.type not in (tokenize.NUMBER, tokenize.NAME, tokenize.OP, tokenize.NEWLINE,
                              tokenize.ENDMARKER, tokenize.NL):
            raise ExpressionError(f"'{token.string}' is not allowed")
        if token.type == tokenize.NEWLINE and token.string:
            # "1 mm\n2" would otherwise read as the product 2 mm.
            raise ExpressionError("a value must be one expression on one line")
        if token.type == tokenize.NUMBER and ("j" in token.string.lower()):
            raise ExpressionError(f"'{token.string}' is not a real number")
        previous = token

    def define(token):
        if token.type == tokenize.NUMBER:
            try:
                value = float(token.string.replace("_", ""))
            except ValueError:
                raise ExpressionError(f"'{token.string}' is not a number") from None
            return _checked(value)
        if token.type == tokenize.NAME:
            if token.string in params:
                return params[token.string]
            try:
                return Quantity(1.0, token.string)
            except (pint.UndefinedUnitError, AttributeError, ValueError, TypeError):
                known = ", ".join(sorted(params)) or "none defined"
                raise ExpressionError(
                    f"unknown name '{token.string}' (not a unit, and not in [params]: {known})"
                ) from None
        raise ExpressionError(f"'{token.string}' is not allowed")

    try:
        tree = pint_eval.build_eval_tree(tokens)
        value = tree.evaluate(define, _BINARY, _UNARY)
    except ExpressionError:
        raise
    except pint.DimensionalityError as error:
        raise ExpressionError(f"units do not match ({error})") from None
    except (pint.errors.DefinitionSyntaxError, AssertionError, IndexError, TypeError, ValueError) as error:
        raise ExpressionError(f"cannot read '{text}' as an expression ({error})") from None
    except RecursionError:
        raise ExpressionError("the expression is nested too deeply") from None
    if not isinstance(value, pint.Quantity):
        value = Quantity(float(value), "")
    return _checked(value)


def to_si(quantity: pint.Quantity, kind: str) -> float:
    """Convert a quantity of the expected kind to an SI float.

    Raises
    ------
    ExpressionError
        When the quantity is of another kind (a length where an angle is expected).
    """
    found = kind_of(quantity)
    if found != kind:
        raise ExpressionError(f"expected {_article(kind)}, got {_article(found)} ({quantity:~P})")
    return float(quantity.to(KINDS[kind]).magnitude)


def _article(kind: str) -> str:
    if kind in KINDS:
        return ("an " if kind[0] in "aeiou" else "a ") + kind
    return f"a quantity of dimension {kind}"


def format_quantity(value_si: float, unit: str, digits: int = 4) -> str:
    """Write an SI value in the given unit for people, e.g. ``format_quantity(0.15, 'mm')``."""
    if value_si is None:
        return "-"
    if math.isinf(value_si):
        return "inf"
    if unit in ("", "1"):
        return f"{value_si:.{digits}g}"
    magnitude = Quantity(value_si, _si_unit_for(unit)).to(unit).magnitude
    return f"{magnitude:.{digits}g} {unit}"


def si_per_unit(unit: str) -> float:
    """How many SI units one ``unit`` is: ``si_per_unit("mm") == 0.001``."""
    return float(Quantity(1.0, unit).to(_si_unit_for(unit)).magnitude)


def _si_unit_for(unit: str) -> str:
    quantity = Quantity(1.0, unit)
    kind = kind_of(quantity)
    if kind not in KINDS:
        raise ExpressionError(f"no SI unit known for '{unit}'")
    return KINDS[kind]
