"""The loader on valid layouts: units, expressions, positions, relays, arms, tolerances.

Expected values are worked by hand from the layout text; positions of a 4f relay follow
its geometry (lenses at f1 and 2 f1 + f2 from the input plane, Fourier plane at 2 f1,
image plane at 2 f1 + 2 f2: Goodman, Introduction to Fourier Optics, ch. 5). Comparisons
use a relative tolerance of 1e-12: the loader only adds and scales a few floats, each
rounding about 1e-16.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest

from benchcheck.layout import MAIN_ARM, load_layout, parse_layout
from benchcheck.layout.loader import MOUNT_COLLISION_DISTANCE
from tests.layout.conftest import compose

# Float rounding only; see the module docstring.
EXACT = 1e-12
SHIPPED = Path(__file__).resolve().parents[2] / "layouts" / "relay_4f_vortex.toml"

F1, F2 = 0.300, 0.150  # m: the [params] of HEAD
HEAD = """
format = 1

[bench]
title = "loader test bench"
wavelength = "1064 nm"

[params]
f1 = "300 mm"
f2 = "150 mm"

[source]
waist = "1 mm"
"""


def close(value: float) -> pytest.approx:
    # abs=1e-15 m only matters for values that are exactly zero (an iris centred in y).
    return pytest.approx(value, rel=EXACT, abs=1e-15)


# -- the shipped layout -------------------------------------------------------------------

# Unit factors to SI, by definition: SI prefixes (SI Brochure, 9th ed., 2019, Table 7),
# degree = π/180 rad (ibid., Table 8), inch = 25.4 mm (NIST SP 811, 2008, appendix B.8).
FACTORS = {"nm": 1e-9, "um": 1e-6, "mm": 1e-3, "m": 1.0, "in": 25.4e-3, "mrad": 1e-3,
           "deg": math.pi / 180, "W": 1.0, "%": 0.01}


def by_hand(value, params=None, bare_unit="mm"):
    """Convert a simple value of the shipped file by hand: "400 mm", "f1", or a bare number."""
    if isinstance(value, (int, float)):
        return value * FACTORS[bare_unit]
    if value in (params or {}):
        return by_hand(params[value])
    number, unit = value.split()
    return float(number) * FACTORS[unit]


def shipped_document() -> dict:
    return tomllib.loads(SHIPPED.read_text(encoding="utf-8"))


def test_shipped_layout_positions_follow_the_relay_geometry():
    document = shipped_document()
    raw = {table["name"]: table for table in document["element"]}
    params = document["params"]
    layout = load_layout(SHIPPED)
    slm_z = by_hand(raw["slm"]["z"])
    assert raw["relay"]["after"] == "slm" and raw["cam"]["after"] == "relay"
    relay_z = slm_z + by_hand(raw["relay"]["gap"])
    f1, f2 = (by_hand(value, params) for value in raw["relay"]["focal_lengths"])
    expected = {
        "slm": slm_z,
        "relay.lens1": relay_z + f1,
        "relay.fourier": relay_z + 2 * f1,
        "relay.lens2": relay_z + 2 * f1 + f2,
        "cam": relay_z + 2 * f1 + 2 * f2 + by_hand(raw["cam"]["gap"]),  # after the image plane
    }
    assert layout.element_names() == tuple(expected)
    for name, z in expected.items():
        assert layout.element(name).z == close(z), name
    assert layout.element("relay.lens1").value("focal_length") == close(f1)
    assert layout.element("relay.lens2").value("focal_length") == close(f2)


def test_shipped_layout_values_in_si():
    document = shipped_document()
    raw = {table["name"]: table for table in document["element"]}
    layout = load_layout(SHIPPED)
    assert layout.wavelength == close(by_hand(document["bench"]["wavelength"]))
    assert layout.power == close(by_hand(document["bench"]["power"]))
    waist = by_hand(document["source"]["waist"])
    assert layout.source.waist == (close(waist), close(waist))
    slm = layout.element("slm")
    assert slm.value("pixel_pitch") == (close(by_hand(raw["slm"]["pixel_pitch"])),) * 2
    assert slm.value("pixels") == tuple(raw["slm"]["pixels"])
    hologram = slm.value("hologram")
    assert hologram["pattern"] == raw["slm"]["hologram"]["pattern"]
    assert hologram["carrier"]["period_px"] == close(raw["slm"]["hologram"]["carrier"]["period_px"])
    fourier = layout.element("relay.fourier")
    iris = raw["relay"]["iris"]
    assert fourier.type == "aperture"
    assert fourier.value("diameter") == close(by_hand(iris["diameter"]))
    assert fourier.value("center") == tuple(close(by_hand(value)) for value in iris["center"])
    for spec, table in zip(layout.specs, document["spec"]):
        for bound, key in ((spec.maximum, "max"), (spec.minimum, "min")):
            if key not in table:
                assert bound is None
            elif isinstance(table[key], (int, float)):
                # A plain-number bound keeps its number until the metric's unit is known.
                assert bound == table[key] and key in spec.bare_bounds
            else:
                assert bound == close(by_hand(table[key]))
    for name, mount in document["mounts"].items():
        assert layout.mounts[name].holds["tilt_x"] == close(by_hand(mount["tilt"]))
        assert layout.mounts[name].holds["z"] == close(by_hand(mount["z"]))
    tolerancing = document["tolerancing"]
    assert (layout.tolerancing.trials, layout.tolerancing.seed) == (tolerancing["trials"], tolerancing["seed"])


def test_shipped_relay_tolerances_reach_both_lenses_and_fourier_its_own():
    raw = {table["name"]: table for table in shipped_document()["element"]}["relay"]["tolerance"]
    children = ("lens1", "lens2", "fourier")
    shared = {dof: value for dof, value in raw.items() if dof not in children}
    layout = load_layout(SHIPPED)
    for child in children:
        expected = dict(shared) if child != "fourier" else {}
        expected.update(raw.get(child, {}))
        found = {t.dof: t.limit for t in layout.element(f"relay.{child}").tolerances}
        assert found == {dof: close(by_hand(value)) for dof, value in expected.items()}, child


@pytest.mark.parametrize("path", sorted(SHIPPED.parent.glob("*.toml")), ids=lambda path: path.stem)
def test_every_shipped_layout_loads_in_path_order(path):
    layout = load_layout(path)
    assert len(set(layout.element_names())) == len(layout.elements)
    for arm in {MAIN_ARM, *layout.arms}:
        positions = [element.z for element in layout.elements if element.arm == arm]
        assert positions == sorted(positions), arm


# -- quantities and [units] --------------------------------------------------------------------


def lens(name: str = "L1", position: str = 'z = "100 mm"', extra: str = "") -> str:
    return f"""
    [[element]]
    name = "{name}"
    type = "lens"
    {position}
    focal_length = "f1"
    {extra}
    """


def test_units_table_gives_bare_numbers_their_meaning():
    text = compose(HEAD, '[units]\nlength = "mm"\nangle = "mrad"\n',
                   lens(position="z = 250", extra="tilt_x = 0.5\ny = 1"))
    element = parse_layout(text).element("L1")
    assert element.z == close(0.250)
    assert element.tilt_x == close(0.5e-3)
    assert element.y == close(1e-3)
    assert element.value("index") == close(1.5)  # a ratio needs no [units]


def test_units_table_with_inch_and_degree():
    text = compose(HEAD, '[units]\nlength = "in"\nangle = "deg"\n', lens(position="z = 2", extra="tilt_y = 3"))
    element = parse_layout(text).element("L1")
    assert element.z == close(2 * 25.4e-3)  # 1 in = 25.4 mm exactly (NIST SP 811, 2008, B.8)
    assert element.tilt_y == close(3 * math.pi / 180)  # 1 deg = π/180 rad (SI Brochure, 2019, Table 8)


def test_bare_params_take_the_length_unit():
    text = compose(HEAD.replace('f1 = "300 mm"', "f1 = 300"), '[units]\nlength = "mm"\n', lens())
    assert parse_layout(text).element("L1").value("focal_length") == close(F1)


def test_quantity_strings_need_no_units_table():
    text = compose(HEAD, lens(extra='clear_aperture = "1 in"\ntilt_x = "2 deg"\nx = "8 µm"'))
    element = parse_layout(text).element("L1")
    assert element.value("clear_aperture") == close(25.4e-3)
    assert element.tilt_x == close(2 * math.pi / 180)
    assert element.x == close(8e-6)


# -- positions -------------------------------------------------------------------------------------


def test_after_and_gap_with_an_expression():
    text = compose(HEAD, lens(), lens("L2", 'after = "L1"\ngap = "f1 + f2"'),
                   lens("L3", 'z = "2*f1 + f2 + 400 mm"'))
    layout = parse_layout(text)
    assert layout.element("L2").z == close(0.100 + F1 + F2)
    assert layout.element("L3").z == close(2 * F1 + F2 + 0.400)
    assert layout.element("L2").value("focal_length") == close(F1)


def test_close_elements_give_one_warning_naming_both():
    # 0.5 mm apart: inside the 1 mm collision distance.
    text = compose(HEAD, lens(), lens("L2", 'after = "L1"\ngap = "0.5 mm"'))
    warnings = parse_layout(text).warnings
    assert len(warnings) == 1
    assert "'L1'" in warnings[0] and "'L2'" in warnings[0]


def test_elements_apart_by_more_than_the_collision_distance_give_no_warning():
    gap_mm = 2 * MOUNT_COLLISION_DISTANCE * 1e3
    text = compose(HEAD, lens(), lens("L2", f'after = "L1"\ngap = "{gap_mm} mm"'))
    assert parse_layout(text).warnings == ()


# -- relays -------------------------------------------------------------------------------------------


RELAY = """
[[element]]
name = "R"
type = "relay"
z = "50 mm"
focal_lengths = ["f1", "f2"]
{extra}
"""


def test_relay_without_iris_has_a_plane_and_after_counts_from_its_output():
    text = compose(HEAD, RELAY.format(extra=""), lens("L9", 'after = "R"\ngap = "20 mm"'))
    layout = parse_layout(text)
    z = 0.050
    assert layout.element("R.lens1").z == close(z + F1)
    assert layout.element("R.fourier").z == close(z + 2 * F1)
    assert layout.element("R.fourier").type == "plane"
    assert layout.element("R.lens2").z == close(z + 2 * F1 + F2)
    assert layout.element("L9").z == close(z + 2 * F1 + 2 * F2 + 0.020)
    assert {layout.element(name).parent for name in ("R.lens1", "R.fourier", "R.lens2")} == {"R"}


def test_relay_tolerance_sub_tables_apply_to_one_child():
    extra = ('iris = { diameter = "2 mm" }\n'
             'tolerance = { z = "0.5 mm", tilt_x = "1 mrad", lens2 = { z = "0.2 mm" }, '
             'fourier = { diameter = "5 %" } }')
    layout = parse_layout(compose(HEAD, RELAY.format(extra=extra)))
    lens1 = {t.dof: t.limit for t in layout.element("R.lens1").tolerances}
    lens2 = {t.dof: t.limit for t in layout.element("R.lens2").tolerances}
    fourier = {t.dof: (t.limit, t.relative) for t in layout.element("R.fourier").tolerances}
    assert lens1 == {"z": close(0.5e-3), "tilt_x": close(1e-3)}
    assert lens2 == {"z": close(0.2e-3), "tilt_x": close(1e-3)}  # its own z, the shared tilt
    assert fourier == {"diameter": (close(0.05), True)}
    assert layout.element("R.fourier").type == "aperture"


# -- splitter arms -------------------------------------------------------------------------------------


SPLITTER = """
[[element]]
name = "bs"
type = "splitter"
z = "200 mm"
arms = ["monitor"]
"""


def test_elements_of_an_arm_follow_the_branch():
    monitor = lens("M1", 'arm = "monitor"\nafter = "bs"\ngap = "100 mm"')
    monitor_camera = """
    [[element]]
    name = "mon"
    type = "camera"
    arm = "monitor"
    after = "M1"
    gap = "f1"
    pixel_pitch = "5 um"
    pixels = [640, 480]
    """
    main_lens = lens("L2", 'z = "300 mm"')  # same z as M1, other arm: no warning
    layout = parse_layout(compose(HEAD, SPLITTER, monitor, monitor_camera, main_lens))
    assert dict(layout.arms) == {"monitor": "bs"}
    assert layout.element("M1").arm == "monitor"
    assert layout.element("M1").z == close(0.300)
    assert layout.element("mon").z == close(0.300 + F1)
    assert layout.element("L2").arm == MAIN_ARM
    assert layout.warnings == ()


# -- tolerances, specs, tolerancing ---------------------------------------------------------------------------


def test_tolerance_distributions_and_relative_limits():
    extra = ('tolerance = { z = "0.5 mm", focal_length = "1 %", distribution = "normal", '
             'tilt_y = { limit = "2 mrad", distribution = "fixed" } }')
    layout = parse_layout(compose(HEAD, lens(extra=extra)))
    tolerances = {t.dof: t for t in layout.element("L1").tolerances}
    assert tolerances["z"].distribution == "normal"
    assert tolerances["focal_length"].relative
    assert tolerances["focal_length"].absolute_limit(F1) == close(0.01 * F1)
    assert tolerances["tilt_y"].distribution == "fixed"
    assert tolerances["tilt_y"].limit == close(2e-3)


def test_source_tolerances_and_specs_on_relay_planes():
    text = compose(HEAD, 'tolerance = { waist = "3 %", tilt_x = "0.2 mrad" }',  # still inside [source]
                   RELAY.format(extra=""),
                   '[[spec]]\nmetric = "beam_radius"\nat = "R.fourier"\nmin = "10 um"\nmax = "0.1 mm"\n',
                   '[tolerancing]\nsampler = "sobol"\nadjust = ["R.lens2.z"]\n')
    layout = parse_layout(text)
    source = {t.dof: (t.limit, t.relative) for t in layout.source.tolerances}
    assert source == {"waist": (close(0.03), True), "tilt_x": (close(0.2e-3), False)}
    (spec,) = layout.specs
    assert (spec.at, spec.minimum, spec.maximum) == ("R.fourier", close(10e-6), close(0.1e-3))
    assert spec.passes(50e-6) and not spec.passes(0.2e-3)
    assert layout.tolerancing.sampler == "sobol"
    assert layout.tolerancing.adjust == ("R.lens2.z",)
