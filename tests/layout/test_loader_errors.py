"""Every kind of bad layout gives one LayoutError naming the file, line, element and field.

Each case is a layout written to a file; the line the error must point at carries a
trailing ``#!`` comment (DESIGN.md section 5: "one clear message naming the file, the
line where it can be found, the element (name and index) and the field").
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from benchcheck.errors import LayoutError
from benchcheck.layout import load_layout, parse_layout
from tests.layout.conftest import compose, marked_line

HEAD = """
format = 1

[bench]
title = "error test bench"
wavelength = "1064 nm"

[params]
f1 = "100 mm"
f2 = "50 mm"

[source]
waist = "1 mm"

[mounts.post]
rank = 0
z = "0.5 mm"
"""

LENS = """
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "f1"
"""

PLANE = """
[[element]]
name = "work"
type = "plane"
after = "L1"
gap = "f1"
"""


def lens_with(line: str, name: str = "L1", position: str = 'z = "100 mm"') -> str:
    """A lens table with one more line (which usually carries the #! mark)."""
    return f"""
    [[element]]
    name = "{name}"
    type = "lens"
    {position}
    focal_length = "f1"
    {line}
    """


@dataclass(frozen=True)
class Case:
    id: str
    text: str
    says: str  # a fragment of the message
    element: str | None = None
    number: int | None = None  # the element's #index as the message shows it (1-based)
    field: str | None = None


MODULATOR = """
[[element]]
name = "slm"
type = "modulator"
z = "300 mm"
pixel_pitch = "8 um"
pixels = [1920, 1080]
{line}
"""

CASES = [
    # -- the file as a whole --------------------------------------------------------------------------
    Case("toml syntax", compose(HEAD, lens_with('clear_aperture = "25 mm  #!')), "not valid TOML"),
    Case("format missing", compose(HEAD.replace("format = 1", ""), LENS), "does not say its format"),
    Case("format wrong", compose(HEAD.replace("format = 1", "format = 2  #!"), LENS),
         "format 2 is not supported", field="format"),
    Case("unknown top-level table", compose(HEAD, "[optics]  #!\nlayers = 3", LENS),
         "unknown table or key 'optics'", field="optics"),
    Case("unknown top-level key", compose(HEAD.replace("format = 1", 'format = 1\ncolour = "red"  #!'), LENS),
         "unknown table or key 'colour'", field="colour"),
    # -- element identity -----------------------------------------------------------------------------
    Case("unknown element field", compose(HEAD, lens_with('focus = "2 mm"  #!')),
         "'focus' is not a field of a lens", "L1", 1, "focus"),
    Case("unknown type", compose(HEAD, LENS, '[[element]]\nname = "P1"\ntype = "prism"  #!\nz = "200 mm"'),
         "unknown element type 'prism'", "P1", 2, "type"),
    Case("type not text", compose(HEAD, LENS, '[[element]]\nname = "P1"\ntype = ["lens"]  #!\nz = "200 mm"'),
         "unknown element type ['lens']", "P1", 2, "type"),
    Case("duplicate name", compose(HEAD, LENS, lens_with("", position='z = "200 mm"').replace(
        'name = "L1"', 'name = "L1"  #!')), "the name 'L1' is used twice", "L1", 2, "name"),
    Case("bad name", compose(HEAD, LENS, lens_with("", name="L 2").replace('name = "L 2"', 'name = "L 2"  #!')),
         "letters, digits and underscores, got 'L 2'", "L 2", 2, "name"),
    Case("missing required field", compose(HEAD, '[[element]]  #!\nname = "L1"\ntype = "lens"\nz = "100 mm"'),
         "a lens needs 'focal_length'", "L1", 1, "focal_length"),
    # -- quantities and expressions -------------------------------------------------------------------
    Case("bare number without [units]", compose(HEAD, lens_with("", position="z = 100  #!")),
         "the number 100 has no unit", "L1", 1, "z"),
    Case("unknown unit", compose(HEAD, lens_with('clear_aperture = "25 mmm"  #!')),
         "unknown name 'mmm'", "L1", 1, "clear_aperture"),
    Case("length where an angle is expected", compose(HEAD, lens_with('tilt_x = "2 mm"  #!')),
         "expected an angle, got a length", "L1", 1, "tilt_x"),
    Case("angle where a length is expected", compose(HEAD, lens_with("", position='z = "100 mrad"  #!')),
         "expected a length, got an angle", "L1", 1, "z"),
    Case("unknown param", compose(HEAD, lens_with('thickness = "2*f3"  #!')),
         "unknown name 'f3'", "L1", 1, "thickness"),
    Case("unknown param in [params]", compose(HEAD.replace('f2 = "50 mm"', 'f2 = "f1 + f9"  #!'), LENS),
         "unknown name 'f9'", "params", None, "f2"),
    Case("attribute access", compose(HEAD, lens_with('thickness = "f1.real"  #!')),
         "'.' is not allowed", "L1", 1, "thickness"),
    Case("call", compose(HEAD, lens_with('thickness = "exp(1)"  #!')),
         "'exp(...)' looks like a call", "L1", 1, "thickness"),
    Case("import", compose(HEAD, lens_with("""thickness = '__import__("os")'  #!""")),
         "'__import__(...)' looks like a call", "L1", 1, "thickness"),
    Case("tower of powers", compose(HEAD, lens_with('thickness = "10**10**10 mm"  #!')),
         "too large", "L1", 1, "thickness"),
    Case("overflow", compose(HEAD, lens_with('thickness = "1e308*1e308 mm"  #!')),
         "too large", "L1", 1, "thickness"),
    Case("division by zero", compose(HEAD, lens_with('thickness = "f1 / (f2 - f2) * 1 mm"  #!')),
         "division by zero", "L1", 1, "thickness"),
    # -- tolerances -----------------------------------------------------------------------------------
    Case("negative tolerance", compose(HEAD, lens_with('tolerance = { z = "-0.5 mm" }  #!')),
         "cannot be negative", "L1", 1, "tolerance.z"),
    Case("unknown dof", compose(HEAD, lens_with('tolerance = { pixel_pitch = "1 um" }  #!')),
         "'pixel_pitch' is not a degree of freedom of a lens", "L1", 1, "tolerance.pixel_pitch"),
    Case("bad distribution", compose(HEAD, lens_with('tolerance = { z = "1 mm", distribution = "triangle" }  #!')),
         "'triangle' is not one of: uniform, normal, fixed", "L1", 1, "tolerance.distribution"),
    # -- positions ------------------------------------------------------------------------------------
    Case("after an unknown element", compose(HEAD, LENS, PLANE.replace('after = "L1"', 'after = "L9"  #!')),
         "'L9' is not an element defined above", "work", 2, "after"),
    Case("after an element below", compose(HEAD, PLANE.replace('after = "L1"', 'after = "L1"  #!'), LENS),
         "'L1' is not an element defined above", "work", 1, "after"),
    Case("z and after both", compose(HEAD, LENS, PLANE.replace("type = ", 'z = "300 mm"  #!\ntype = ')),
         "either 'z' or 'after'", "work", 2, "z"),
    Case("no position", compose(HEAD, LENS, '[[element]]  #!\nname = "work"\ntype = "plane"'),
         "has no position", "work", 2, "z"),
    Case("gap without after", compose(HEAD, LENS, '[[element]]  #!\nname = "work"\ntype = "plane"\ngap = "1 mm"'),
         "has no position", "work", 2, "after"),
    Case("decreasing z", compose(HEAD, LENS, lens_with("", "L2", 'z = "90 mm"  #!')),
         "'L2' at z = 90 mm comes before 'L1' (z = 100 mm)", "L2", 2, "z"),
    Case("negative position", compose(HEAD, lens_with("", position='z = "-1 mm"  #!')),
         "must be 0 or more", "L1", 1, "z"),
    Case("mount class not in [mounts]", compose(HEAD, lens_with('mount = "gimbal"  #!')),
         "no mount class 'gimbal' in [mounts]", "L1", 1, "mount"),
    # -- splitter arms --------------------------------------------------------------------------------
    Case("arm not started", compose(HEAD, LENS, lens_with('arm = "monitor"  #!', "M1", 'z = "200 mm"')),
         "no splitter before this element starts an arm 'monitor'", "M1", 2, "arm"),
    Case("arm started below", compose(
        HEAD, lens_with('arm = "monitor"  #!', "M1", 'z = "200 mm"'),
        '[[element]]\nname = "bs"\ntype = "splitter"\nz = "300 mm"\narms = ["monitor"]'),
         "no splitter before this element starts an arm 'monitor'", "M1", 1, "arm"),
    Case("arm before its splitter", compose(
        HEAD, '[[element]]\nname = "bs"\ntype = "splitter"\nz = "300 mm"\narms = ["monitor"]',
        lens_with("", "M1", 'arm = "monitor"\nz = "200 mm"  #!')),
         "starts at the splitter 'bs'", "M1", 2, "z"),
    Case("after an element of another arm", compose(
        HEAD, '[[element]]\nname = "bs"\ntype = "splitter"\nz = "300 mm"\narms = ["monitor"]',
        lens_with("", "M1", 'arm = "monitor"\nafter = "bs"\ngap = "50 mm"'),
        lens_with("", "L2", 'after = "M1"  #!\ngap = "50 mm"')),
         "'M1' is on arm 'monitor', this element on arm 'main'", "L2", 3, "after"),
    # -- element rules --------------------------------------------------------------------------------
    Case("aperture with diameter and size", compose(
        HEAD, '[[element]]\nname = "iris"\ntype = "aperture"\nz = "50 mm"\ndiameter = "2 mm"\n'
              'size = ["1 mm", "2 mm"]  #!'),
         "exactly one of 'diameter' or 'size'", "iris", 1, "size"),
    Case("fill factor above 1", compose(HEAD, MODULATOR.format(line="fill_factor = 1.2  #!")),
         "must be in (0, 1], got 1.2", "slm", 1, "fill_factor"),
    Case("unknown hologram pattern", compose(HEAD, MODULATOR.format(line='hologram = { pattern = "spiral" }  #!')),
         "unknown hologram pattern 'spiral'", "slm", 1, "hologram.pattern"),
    Case("unknown hologram field", compose(
        HEAD, MODULATOR.format(line='hologram = { pattern = "vortex", charge = 1, twist = 2 }  #!')),
         "'twist' is not a hologram field", "slm", 1, "hologram.twist"),
    # -- specs, [simulation], [tolerancing] -------------------------------------------------------------
    Case("spec on an unknown plane", compose(HEAD, LENS, '[[spec]]\nmetric = "beam_radius"\nat = "nowhere"  #!\n'
                                                          'max = "1 mm"'),
         "no element or plane called 'nowhere'", "spec", 1, "at"),
    Case("spec without min or max", compose(HEAD, LENS, '[[spec]]\nmetric = "beam_radius"\nat = "L1"\nmax = "1 mm"\n'
                                                         '[[spec]]  #!\nmetric = "offset"\nat = "L1"'),
         "the spec on 'offset' needs 'min' or 'max'", "spec", 2),
    Case("spec min above max", compose(HEAD, LENS, '[[spec]]\nmetric = "beam_radius"\nat = "L1"\n'
                                                    'min = "2 mm"  #!\nmax = "1 mm"'),
         "min (2 mm) is above max (1 mm)", "spec", 1, "min"),
    Case("grid too small", compose(HEAD, LENS, "[simulation]\ngrid = 8  #!"),
         "must be at least 16", "simulation", None, "grid"),
    Case("grid too large", compose(HEAD, LENS, "[simulation]\ngrid = 100000  #!"),
         "must be at most", "simulation", None, "grid"),
    Case("sampler not allowed", compose(HEAD, LENS, '[tolerancing]\ntrials = 10\nsampler = "grid"  #!'),
         "'grid' is not one of: random, sobol", "tolerancing", None, "sampler"),
    Case("adjust names an unknown element", compose(HEAD, LENS, '[tolerancing]\nadjust = ["lamp.z"]  #!'),
         "'lamp.z' does not name an element's degree of freedom", "tolerancing", None, "adjust"),
]


@pytest.mark.parametrize("case", CASES, ids=[case.id for case in CASES])
def test_error_names_file_line_element_and_field(case, write_layout):
    path = write_layout(case.text)
    with pytest.raises(LayoutError) as info:
        load_layout(path)
    error = info.value
    message = str(error)
    assert case.says in error.message
    assert error.file == str(path)
    expected_line = marked_line(case.text)
    assert error.line == expected_line
    if expected_line is not None:
        assert message.startswith((f"{path}:{expected_line}, ", f"{path}:{expected_line}: "))
    if case.element is not None:
        assert error.element == case.element
        shown = f"element '{case.element}' (#{case.number})" if case.number else f"'{case.element}'"
        assert shown in message
    assert error.field == case.field
    if case.field is not None:
        assert f"field '{case.field}'" in message


def test_every_case_marks_a_line_except_the_missing_format():
    # A missing key has no line to point at; every other case must say where.
    unmarked = [case.id for case in CASES if marked_line(case.text) is None]
    assert unmarked == ["format missing"]


def test_missing_file():
    with pytest.raises(LayoutError) as info:
        load_layout("/nonexistent/folder/bench.toml")
    assert "no such file" in str(info.value)
    assert info.value.file == "/nonexistent/folder/bench.toml"


def test_toml_error_line_comes_from_tomllib(write_layout):
    # tomllib reports the line of the first character it cannot read; for an unclosed
    # string that is the line where the string starts.
    text = compose(HEAD, LENS, lens_with('clear_aperture = "25 mm  #!', "L2", 'z = "200 mm"'))
    with pytest.raises(LayoutError) as info:
        load_layout(write_layout(text))
    assert info.value.line == marked_line(text)


# -- mutations of the shipped layouts -------------------------------------------------------------------

SHIPPED = sorted((Path(__file__).resolve().parents[2] / "layouts").glob("*.toml"))
SHIPPED_TEXTS = [path.read_text(encoding="utf-8") for path in SHIPPED]
VALUE = re.compile(r"=\s*(.+)$")
UNIT = re.compile(r"\b(nm|um|mm|mrad|deg|W)\b|%")
JUNK = st.text(alphabet=st.sampled_from(list("[]{}=\"'#,.\\ \n*()%µ0123456789-+_abxz:;^")), min_size=1, max_size=6)
OTHER_UNITS = st.sampled_from(["mm", "um", "µm", "nm", "in", "m", "mrad", "deg", "rad", "%", "W", "s", "kg", "degC", "",
                               "mm**2", "f1", "mmm"])


@st.composite
def mutated_layout(draw) -> str:
    """A shipped layout with one to three small edits a person might make by mistake."""
    lines = draw(st.sampled_from(SHIPPED_TEXTS)).splitlines()
    for _ in range(draw(st.integers(1, 3))):
        if not lines:
            break
        edit = draw(st.sampled_from(["delete line", "swap values", "insert junk", "change unit"]))
        i = draw(st.integers(0, len(lines) - 1))
        if edit == "delete line":
            del lines[i]
        elif edit == "swap values":
            j = draw(st.integers(0, len(lines) - 1))
            first, second = VALUE.search(lines[i]), VALUE.search(lines[j])
            if first and second and i != j:
                lines[i], lines[j] = (lines[i][: first.start(1)] + second.group(1),
                                      lines[j][: second.start(1)] + first.group(1))
        elif edit == "insert junk":
            at = draw(st.integers(0, len(lines[i])))
            lines[i] = lines[i][:at] + draw(JUNK) + lines[i][at:]
        else:
            with_units = [k for k, line in enumerate(lines) if UNIT.search(line)]
            if with_units:
                k = with_units[i % len(with_units)]
                lines[k] = UNIT.sub(draw(OTHER_UNITS), lines[k], count=1)
    return "\n".join(lines) + "\n"


# No deadline: the suite has no timed assertions. The evaluator bounds exponents, magnitudes
# and lengths, so a hostile value errors at once instead of hanging (see test_units.py).
@settings(max_examples=150, deadline=None, database=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated_layout())
def test_mutated_layouts_load_or_raise_layout_error(text):
    try:
        layout = parse_layout(text, "mutated.toml")
    except LayoutError as error:
        assert error.file == "mutated.toml"
        assert error.message
    else:
        assert layout.elements
