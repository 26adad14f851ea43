"""Hostile and near-valid layouts: each one loads, or raises LayoutError saying where.

The generated layouts come from ``layout_strategies.near_valid_layout`` (valid layouts
and layouts a few slips away); the mutations of the shipped layouts are tested in
``tests/layout/test_loader_errors.py``. ``tools/fuzz_loader.py`` runs both for longer
and reports counts and the slowest case; the suite keeps to a modest number of examples
and has no timed assertion.
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings

from benchcheck.errors import LayoutError
from benchcheck.layout import parse_layout
from benchcheck.limits import GRID_CEILING, MAX_PIXELS_PER_SIDE, TRIALS_CEILING
from tests.layout.conftest import compose
from tests.reliability.layout_strategies import HOSTILE_EXPRESSIONS, near_valid_layout, toml_value

HEAD = """
format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
"""


@settings(max_examples=60, deadline=None, database=None, suppress_health_check=[HealthCheck.too_slow])
@given(near_valid_layout())
def test_near_valid_layouts_load_or_say_where(text):
    try:
        layout = parse_layout(text, "near_valid.toml")
    except LayoutError as error:
        assert error.file == "near_valid.toml" and error.message
        assert str(error).startswith("near_valid.toml")
    else:
        assert layout.wavelength > 0 and all(element.z >= 0 for element in layout.elements)


@pytest.mark.parametrize("expression", HOSTILE_EXPRESSIONS)
def test_hostile_expressions_in_a_field_name_the_field(expression):
    # Refused by the expression reader (calls, huge powers, division by zero...), or read
    # and then refused as the wrong kind of value; never evaluated by Python.
    text = HEAD + f'\n[[element]]\nname = "L1"\ntype = "lens"\nz = "100 mm"\nfocal_length = {toml_value(expression)}\n'
    with pytest.raises(LayoutError) as info:
        parse_layout(text, "hostile.toml")
    assert info.value.file == "hostile.toml"
    # A literal that TOML itself cannot hold is refused by the TOML reader with its line.
    assert info.value.field == "focal_length" or info.value.message.startswith("not valid TOML")


@pytest.mark.parametrize("device, fields", [
    ("modulator", 'pixel_pitch = "8 um"'),
    ("camera", 'pixel_pitch = "5 um"'),
])
def test_absurd_pixel_counts_are_refused(device, fields):
    text = compose(HEAD, f"""
    [[element]]
    name = "dev"
    type = "{device}"
    z = "100 mm"
    {fields}
    pixels = [1920, {MAX_PIXELS_PER_SIDE + 1}]
    """)
    with pytest.raises(LayoutError) as info:
        parse_layout(text, "pixels.toml")
    assert info.value.field == "pixels" and info.value.element == "dev"
    assert f"at most {MAX_PIXELS_PER_SIDE}" in info.value.message
    assert info.value.line == text.splitlines().index(f"pixels = [1920, {MAX_PIXELS_PER_SIDE + 1}]") + 1
    parse_layout(text.replace(str(MAX_PIXELS_PER_SIDE + 1), str(MAX_PIXELS_PER_SIDE)), "pixels.toml")


@pytest.mark.parametrize("table, key, ceiling", [("simulation", "grid", GRID_CEILING),
                                                 ("tolerancing", "trials", TRIALS_CEILING)])
def test_loader_ceilings_are_the_limits_module_ceilings(table, key, ceiling):
    text = HEAD + f"\n[{table}]\n{key} = {ceiling + 1}\n"
    with pytest.raises(LayoutError, match=f"at most {ceiling}"):
        parse_layout(text, "ceiling.toml")
    assert getattr(parse_layout(text.replace(str(ceiling + 1), str(ceiling)), "ceiling.toml"), table)
