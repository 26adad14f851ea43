"""Plain-number spec bounds take the metric's unit through [units] (DESIGN.md section 5)."""

from __future__ import annotations

import pytest

from benchcheck.errors import LayoutError
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.layout import parse_layout

BASE = """
format = 1
{units}
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "p"
type = "plane"
z = "10 mm"
[[spec]]
metric = "beam_radius"
at = "p"
max = 1.2
[[spec]]
metric = "power"
at = "p"
min = 0.5
"""


def test_bare_bound_on_a_length_metric_uses_the_layout_length_unit():
    layout = parse_layout(BASE.format(units='[units]\nlength = "mm"'), "units.toml")
    evaluator = make_evaluator(layout)
    bound = evaluator.layout.specs[0].maximum
    assert bound == pytest.approx(1.2e-3)  # 1.2 mm, not 1.2 m
    assert evaluator.layout.specs[1].minimum == 0.5  # a ratio stays a ratio


def test_bare_bound_without_units_is_refused_naming_the_spec():
    layout = parse_layout(BASE.format(units=""), "units.toml")
    with pytest.raises(LayoutError, match="plain number") as caught:
        make_evaluator(layout)
    assert caught.value.field == "max" and "beam_radius" in str(caught.value)
