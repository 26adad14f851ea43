"""Quantities and expressions (benchcheck.units) against unit definitions and hand arithmetic.

Reference values are exact by definition, so the checks use ``pytest.approx`` with a
relative tolerance of 1e-12: room for the few roundings of a float multiply and divide
(each about 1e-16), far below any mistake in a unit factor.
"""

from __future__ import annotations

import math

import pytest

from benchcheck.units import (
    ExpressionError,
    evaluate_expression,
    format_quantity,
    is_bare,
    kind_of,
    registry,
    to_si,
)

# Float rounding only; see the module docstring.
EXACT = 1e-12

PARAMS = {
    "f1": registry.Quantity(300.0, "mm"),
    "f2": registry.Quantity(150.0, "mm"),
}
F1 = 0.300  # m, the value of PARAMS["f1"]
F2 = 0.150  # m


@pytest.mark.parametrize(
    ("text", "kind", "expected_si"),
    [
        # SI prefixes milli = 1e-3, micro = 1e-6, nano = 1e-9 (SI Brochure, 9th ed., 2019, Table 7).
        ("150 mm", "length", 150e-3),
        ("8 um", "length", 8e-6),
        ("8 \u00b5m", "length", 8e-6),  # MICRO SIGN, as keyboards type it
        ("8 \u03bcm", "length", 8e-6),  # GREEK SMALL LETTER MU
        ("1064 nm", "length", 1064e-9),
        ("0.5 mrad", "angle", 0.5e-3),
        # 1 degree = π/180 rad (SI Brochure, 9th ed., 2019, Table 8).
        ("2 deg", "angle", 2 * math.pi / 180),
        # The international inch is 25.4 mm exactly (NIST SP 811, 2008, appendix B.8).
        ("1 in", "length", 25.4e-3),
        ("1 in + 1 mm", "length", 26.4e-3),
        # percent = 0.01 (SI Brochure, 9th ed., 2019, section 5.4.7).
        ("3 %", "ratio", 0.03),
        ("0.5 W", "power", 0.5),
        # 1 W/cm² = 1e4 W/m² (1 cm² = 1e-4 m², SI prefixes as above).
        ("2 W/cm^2", "irradiance", 2e4),
    ],
)
def test_quantities_convert_to_si(text, kind, expected_si):
    quantity = evaluate_expression(text)
    assert kind_of(quantity) == kind
    assert to_si(quantity, kind) == pytest.approx(expected_si, rel=EXACT)


@pytest.mark.parametrize(
    ("text", "expected_si"),
    [
        # Hand arithmetic with f1 = 300 mm, f2 = 150 mm.
        ("f1", F1),
        ("2*f1 + f2", 2 * F1 + F2),
        ("f1 + f2", F1 + F2),
        ("(f1 - f2) / 2", (F1 - F2) / 2),
        ("f1**2 / (2*f2)", F1**2 / (2 * F2)),
        ("-f1 + 3*f2", -F1 + 3 * F2),
        ("2 * (f1 + 10 mm)", 2 * (F1 + 10e-3)),
        ("f2 + 1 in", F2 + 25.4e-3),
        (" 150 mm", 150e-3),  # blanks around a value change nothing
        ("(2*f1\n + f2)", 2 * F1 + F2),  # a line break inside parentheses is one expression
    ],
)
def test_expressions_with_params(text, expected_si):
    assert to_si(evaluate_expression(text, PARAMS), "length") == pytest.approx(expected_si, rel=EXACT)


def test_ratio_of_lengths_is_a_plain_number():
    # f2 / f1 is the magnitude of a 4f relay's magnification (Goodman, Introduction to Fourier Optics, ch. 5).
    assert to_si(evaluate_expression("f2 / f1", PARAMS), "ratio") == pytest.approx(F2 / F1, rel=EXACT)


def test_bare_number_is_bare_and_percent_is_not():
    assert is_bare(evaluate_expression("2.5"))
    assert not is_bare(evaluate_expression("2.5 %"))
    assert not is_bare(evaluate_expression("2.5 mm"))


@pytest.mark.parametrize(
    ("text", "names"),
    [
        ("f1.real", "'.'"),
        ("exp(1)", "exp"),
        ('__import__("os")', "__import__"),
        ("__import__('os').system('true')", "__import__"),
        ("f3", "f3"),
        ("2*f1 + f9", "f9"),
        ("f1[0]", "'['"),
        ("lambda: 1", "':'"),
        ("f1; f2", "';'"),
        ("'text'", "'text'"),
    ],
)
def test_refused_constructs_are_named(text, names):
    with pytest.raises(ExpressionError) as info:
        evaluate_expression(text, PARAMS)
    assert names in str(info.value)


def test_unknown_name_lists_the_params():
    with pytest.raises(ExpressionError) as info:
        evaluate_expression("f3", PARAMS)
    assert "f1, f2" in str(info.value)


@pytest.mark.parametrize(
    ("text", "says"),
    [
        ("10**10**10", "too large"),  # the exponent is bounded before anything is computed
        ("1e308*1e308", "too large"),  # overflows a float
        ("9" * 350 + " mm", "not a finite number"),  # an integer literal too big for a float
        ("f1/0", "division by zero"),
        ("1 mm/(f1 - f1)", "division by zero"),
        ("(-1)**0.5 * mm", "not a finite number"),  # complex result
        ("1 mm\n2", "one line"),  # would otherwise read as the product 2 mm
        ("", "empty"),
        ("(" * 250 + "1 mm" + ")" * 250, "longer than"),
    ],
)
def test_hostile_values_give_a_clear_error(text, says):
    with pytest.raises(ExpressionError) as info:
        evaluate_expression(text, PARAMS)
    assert says in str(info.value)


def test_length_where_angle_expected_says_so():
    with pytest.raises(ExpressionError) as info:
        to_si(evaluate_expression("2 mm"), "angle")
    assert "expected an angle, got a length" in str(info.value)


def test_angle_where_length_expected_says_so():
    with pytest.raises(ExpressionError) as info:
        to_si(evaluate_expression("2 deg"), "length")
    assert "expected a length, got an angle" in str(info.value)


def test_percent_is_not_an_angle():
    # Both are dimensionless to pint; the reader must still tell them apart.
    assert kind_of(evaluate_expression("3 %")) == "ratio"
    assert kind_of(evaluate_expression("3 mrad")) == "angle"


def test_format_quantity_inverts_to_si():
    # 25.4 mm = 1 in exactly (NIST SP 811, 2008, appendix B.8).
    assert format_quantity(25.4e-3, "in") == "1 in"
    assert format_quantity(0.15, "mm") == "150 mm"
