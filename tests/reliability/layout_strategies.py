"""Hypothesis strategies that write near-valid layouts: mostly right, with the slips people make.

A layout is drawn as a structure (tables, elements, fields) from the element types the
loader knows, each value drawn from a mix of valid quantities, expressions over
``[params]``, wrong units, wrong TOML types, hostile expressions and edge numbers, and
then written as TOML text. The loader must load each one or raise ``LayoutError`` naming
where the problem is. Used by the tests here and by ``tools/fuzz_loader.py``.
"""

from __future__ import annotations

import json
import math

from hypothesis import strategies as st

from benchcheck.layout.element_types import DOF_KINDS, builtin_element_types

__all__ = ["near_valid_layout", "toml_value", "HOSTILE_EXPRESSIONS"]

ELEMENT_TYPES = builtin_element_types()
UNITS = {
    "length": ["mm", "um", "nm", "m", "cm", "in", "µm"],
    "angle": ["mrad", "rad", "deg", "urad", "arcmin"],
    "ratio": ["", "%"],
    "power": ["W", "mW"],
    "irradiance": ["W/cm^2", "kW/m^2"],
}
#: Expressions a hostile or careless layout might hold; each must give a clear error at once.
HOSTILE_EXPRESSIONS = [
    "10**10**10", "9**9**9 mm", "2**2**2**2**2**2", "1e308*1e308 mm", "1e400 mm", "(1/0) mm", "0**-1 mm",
    "f1 / (f1 - f1)", "f1.real", "exp(1)", "__import__('os')", "f1[0]", "lambda: 1", "1 if 1 else 2",
    "(" * 20 + "1" + ")" * 21 + " mm", "(" * 60 + "1" + ")" * 60, "1 mm\n2", "-" * 300 + "1",
    "1" * 500, "1j mm", "mm mm mm", "1 mm + 1 mrad", "nan mm", "inf mm", "f1 ** f2", "1 % %", "0x10 mm",
"\u00b9 mm", "1\u2009mm", "\\u0031 mm", "", " ", "#", "'quoted'", "1 mm;2",
]
_NAMES = ["L1", "L2", "M1", "slm", "iris", "cam", "work", "bs", "relay", "P1", "x", "_a", "L 1", "1L", "", "source"]
_PARAMS = ["f1", "f2", "d"]
# Hypothesis favours the ends of a range; mixtures of valid values and slips are drawn
# from a seeded random.Random instead, so their shares are the ones written here.
_UNIFORM = st.randoms(use_true_random=True)
# One share of slips for all values of one layout: from none (a valid layout) to many.
_SLIP_RATE = st.shared(_UNIFORM.map(lambda rnd: rnd.choice([0.0, 0.0, 0.005, 0.02, 0.05, 0.3])), key="slip-rate")


def _number(kind: str, edge: bool = False):
    plain = st.floats(min_value=0.05, max_value=900, allow_nan=False).map(lambda v: round(v, 3))
    if kind == "ratio":
        plain = st.floats(min_value=1.0, max_value=1.5).map(lambda v: round(v, 3))
    if not edge:
        return plain
    return st.one_of(st.integers(min_value=-5, max_value=5000),
                     st.sampled_from([0, -0.0, 1e-300, 1e300, 2**53 + 1, -1, 0.0001]))


@st.composite
def quantity_text(draw, kind: str) -> object:
    """A value for a field of ``kind``: mostly a valid quantity string, sometimes a slip."""
    units = UNITS.get(kind, ["mm"])
    rnd, rate = draw(_UNIFORM), draw(_SLIP_RATE)
    choice = rnd.randrange(46) if rnd.random() >= rate else rnd.randrange(46, 60)
    if choice <= 42 or (choice <= 45 and kind != "length"):
        return f"{draw(_number(kind))} {draw(st.sampled_from(units[:1] if kind == 'ratio' else units[:2]))}".strip()
    if choice <= 45:
        return f"{rnd.choice(['', '2*', '0.5*'])}{rnd.choice(['f1', 'f2'])}"
    if choice <= 48:
        param = draw(st.sampled_from(_PARAMS + ["f9"]))
        factor = draw(st.sampled_from(["", "2*", "0.5*", "-", "1/"]))
        extra = draw(st.sampled_from(["", " + 10 mm", " - f2", " * 1 %", " / 2", "**2"]))
        return f"{factor}{param}{extra}"
    if choice <= 50:
        return f"{draw(_number(kind, edge=True))} {draw(st.sampled_from(units))}".strip()
    if choice <= 52:
        wrong = draw(st.sampled_from([u for other, group in UNITS.items() if other != kind for u in group]
                                     + ["kg", "s", "degC", "mmm", "W/m"]))
        return f"{draw(_number(kind))} {wrong}".strip()
    if choice == 53:
        return draw(_number(kind))  # a bare number: fine only where [units] says what it means
    if choice == 54:
        return draw(st.sampled_from(HOSTILE_EXPRESSIONS))
    if choice == 55:
        return draw(st.sampled_from([True, [], ["1 mm"], ["1 mm", "2 mm", "3 mm"], {"a": 1}, "inf", "flat"]))
    if choice == 56:
        return draw(st.text(alphabet="0123456789.+-*/() emrdaº%µ", max_size=12))
    if choice == 57:
        return draw(st.sampled_from([math.inf, -math.inf, math.nan, 10**30, -(10**30)]))
    return [draw(quantity_text(kind)), draw(quantity_text(kind))]


def _field_value(kind: str, choices: tuple[str, ...], pair: bool):
    if kind in UNITS:
        single = quantity_text(kind)
        return st.one_of(single, st.tuples(single, single).map(list)) if pair else single
    if kind == "integer":
        whole = st.tuples(_UNIFORM, _SLIP_RATE).flatmap(lambda pick: st.integers(2, 2000) if pick[0].random() >= pick[1] else st.one_of(
            st.integers(-3, 5000), st.sampled_from([0, 2**15, 2**15 + 1, 2**40, 2**70]), st.floats(allow_nan=True),
            st.just("1920")))
        return st.one_of(whole, st.tuples(whole, whole).map(list)) if pair else whole
    if kind == "choice":
        return st.one_of(st.sampled_from(choices), st.sampled_from(choices), st.text(max_size=6))
    if kind == "strings":
        return st.one_of(st.lists(st.sampled_from(["monitor", "main", "aux", "a b", ""]), max_size=3),
                         st.just("monitor"))
    if kind == "string":
        return st.one_of(st.sampled_from(["auto", "7.5", "note", ""]), st.integers(0, 3))
    if kind == "number":
        return st.one_of(st.floats(allow_nan=True), st.integers(-3, 100), st.just("2*2"))
    if kind == "bool":
        return st.one_of(st.booleans(), st.just("yes"))
    return st.nothing()


@st.composite
def hologram_table(draw) -> dict:
    pattern = draw(st.sampled_from(["none", "grating", "vortex", "lg", "hg", "flat_top", "axicon", "lens", "file",
                                    "spiral", ""]))
    table: dict[str, object] = {"pattern": pattern}
    options = {
        "period_px": st.one_of(st.integers(-2, 64), st.floats(0, 64)),
        "charge": st.integers(-2000, 2000),
        "p": st.integers(0, 5), "l": st.integers(-5, 5), "m": st.integers(0, 5), "n": st.integers(0, 5),
        "waist": quantity_text("length"), "size": quantity_text("length"), "angle": quantity_text("angle"),
        "shape": st.sampled_from(["round", "square", "star"]), "cone_angle": quantity_text("angle"),
        "focal_length": quantity_text("length"), "path": st.sampled_from(["map.npy", "../map.npy", "/etc/passwd"]),
        "encoding": st.sampled_from(["phase", "complex", "bolduc", "other"]),
        "carrier": st.fixed_dictionaries({"period_px": st.integers(-1, 16)},
                                         optional={"angle": quantity_text("angle"), "phase": st.just(1)}),
        "lens": quantity_text("length"), "compensate_input": st.one_of(st.booleans(), st.just(1)),
        "twist": st.just(2),
    }
    for key in draw(st.lists(st.sampled_from(sorted(options)), max_size=4, unique=True)):
        table[key] = draw(options[key])
    return table


@st.composite
def tolerance_table(draw, dofs: tuple[str, ...]) -> dict:
    table: dict[str, object] = {}
    slips = draw(_UNIFORM).random() < draw(_SLIP_RATE)
    for dof in draw(st.lists(st.sampled_from(list(dofs) + (["spin", "lens2"] if slips else [])), max_size=3,
                             unique=True)):
        kind, _, relative = DOF_KINDS.get(dof, "length").partition("|")
        percent = ["1 %", "50 %"] if relative or slips else [] + (["-1 %"] if slips else [])
        value = draw(st.one_of(quantity_text(kind), *([st.sampled_from(percent)] if percent else [])))
        if draw(st.booleans()) and draw(st.booleans()):
            value = {"limit": value, "distribution": draw(st.sampled_from(["normal", "fixed", "uniform"]
                                                                          + (["beta"] if slips else [])))}
        table[dof] = value
    if draw(st.integers(0, 4)) == 0:
        table["distribution"] = draw(st.sampled_from(["normal", "fixed"] + (["triangle"] if slips else [])))
    return table


@st.composite
def element_table(draw, index: int, z_mm: float, earlier: list[str]) -> dict:
    type_name = "prism" if draw(_UNIFORM).random() < draw(_SLIP_RATE) / 4 else draw(st.sampled_from(sorted(ELEMENT_TYPES)))
    element_type = ELEMENT_TYPES.get(type_name, ELEMENT_TYPES["lens"])
    name = draw(st.sampled_from(_NAMES)) if draw(_UNIFORM).random() < draw(_SLIP_RATE) else f"E{index}"
    table: dict[str, object] = {"name": name, "type": type_name}
    position = draw(st.integers(0, 9))
    if position <= 6 or not earlier:
        table["z"] = f"{z_mm:g} mm" if position <= 5 else draw(quantity_text("length"))
    else:
        table["after"] = draw(st.sampled_from(earlier + ["nowhere"]))
        table["gap"] = draw(quantity_text("length"))
    opening = draw(st.sampled_from(["diameter", "size"]))  # an aperture has exactly one
    for key, spec in element_type.fields.items():
        wanted = spec.required or draw(st.integers(0, 3)) == 0 or (type_name == "aperture" and key == opening)
        if type_name == "aperture" and key in ("diameter", "size") and key != opening:
            wanted = draw(_UNIFORM).random() < draw(_SLIP_RATE)
        if spec.required and draw(_UNIFORM).random() < draw(_SLIP_RATE) / 2:
            wanted = False  # a missing required field
        if not wanted:
            continue
        if key == "hologram":
            table[key] = draw(hologram_table())
        elif key == "iris":
            table[key] = draw(st.fixed_dictionaries({}, optional={"diameter": quantity_text("length"),
                                                                  "center": quantity_text("length"),
                                                                  "stop": quantity_text("length"),
                                                                  "shape": st.just("round")}))
        elif spec.kind == "table":
            table[key] = {}
        else:
            table[key] = draw(_field_value(spec.kind, spec.choices, spec.pair))
    if draw(st.integers(0, 2)) == 0:
        table["tolerance"] = draw(tolerance_table(element_type.dofs))
    extra_keys = ["x", "y", "tilt_x", "tilt_y", "note", "damage_threshold"]
    if draw(_UNIFORM).random() < draw(_SLIP_RATE):
        extra_keys += ["mount", "arm", "colour"]
    for key in draw(st.lists(st.sampled_from(extra_keys), max_size=2, unique=True)):
        kind = {"x": "length", "y": "length", "tilt_x": "angle", "tilt_y": "angle",
                "damage_threshold": "irradiance"}.get(key)
        table[key] = draw(quantity_text(kind)) if kind else draw(st.sampled_from(["post", "monitor", "red", 3]))
    return table


@st.composite
def near_valid_layout(draw) -> str:
    """TOML text of a layout that is valid or a few slips away from valid."""
    document: dict[str, object] = {}
    document["format"] = draw(_UNIFORM).choice([2, "1", 1.0, True]) if draw(_UNIFORM).random() < draw(_SLIP_RATE) else 1
    bench = {"title": "fuzz bench", "wavelength": draw(quantity_text("length"))}
    if draw(st.booleans()):
        bench["power"] = draw(quantity_text("power"))
    document["bench"] = bench
    slips = draw(_UNIFORM).random() < draw(_SLIP_RATE)
    if draw(st.booleans()):
        document["units"] = draw(st.fixed_dictionaries({}, optional={
            "length": st.sampled_from(["mm", "um", "m"] + (["mrad", "parsec"] if slips else [])),
            "angle": st.sampled_from(["mrad", "deg"] + (["mm"] if slips else [])),
            "power": st.sampled_from(["W", "mW"])}))
    if not slips or draw(st.booleans()):
        document["params"] = {name: f"{draw(_number('length'))} mm" if not slips else draw(quantity_text("length"))
                              for name in _PARAMS}
    source = {"waist": draw(quantity_text("length"))}
    for key, kind in (("waist_z", "length"), ("m2", "ratio"), ("tilt_x", "angle")):
        if draw(st.integers(0, 3)) == 0:
            source[key] = draw(quantity_text(kind))
    if draw(st.integers(0, 3)) == 0:
        source["tolerance"] = draw(tolerance_table(("waist", "wavelength", "m2", "x", "tilt_x")))
    document["source"] = source
    if draw(st.integers(0, 3)) == 0:
        document["mounts"] = {"post": draw(st.fixed_dictionaries({"rank": st.integers(-1, 3)},
                                                                  optional={"z": quantity_text("length"),
                                                                            "tilt": quantity_text("angle")}))}
    elements, names, z_mm = [], [], 0.0
    for index in range(draw(st.integers(0, 6))):
        z_mm += draw(_UNIFORM).choice([0.0, 0.5, -30.0] if draw(_UNIFORM).random() < draw(_SLIP_RATE) else [50.0, 100.0, 250.0])
        table = draw(element_table(index, z_mm, names))
        elements.append(table)
        names.append(str(table["name"]))
    if elements:
        document["element"] = elements
    if names and draw(st.booleans()):
        document["spec"] = [draw(st.fixed_dictionaries(
            {"metric": st.sampled_from(["beam_radius", "offset", "angle", "power", "no_such_metric"]),
             "at": st.sampled_from(names + ["nowhere"])},
            optional={"max": quantity_text("length"), "min": quantity_text("length"),
                      "metric_time_limit": st.just("5 s")}))]
    if draw(st.integers(0, 2)) == 0:
        document["tolerancing"] = draw(st.fixed_dictionaries({}, optional={
            "trials": st.one_of(st.integers(-1, 10**8), st.just(1.5)), "seed": st.integers(-1, 2**64),
            "sampler": st.sampled_from(["random", "sobol", "grid"]), "yield_target": quantity_text("ratio"),
            "adjust": st.sampled_from([["E0.z"], ["lamp.z"], {"E0": {"z": "5 mm"}}, "E1.z"])}))
    if draw(st.integers(0, 2)) == 0:
        document["simulation"] = draw(st.fixed_dictionaries({}, optional={
            "grid": st.one_of(st.integers(0, 40000), st.just(2**40)),
            "precision": st.sampled_from(["single", "double", "half"]),
            "replicas": st.integers(-1, 3), "margin": st.just("1 mm")}))
    return _write_toml(document)


def toml_value(value: object) -> str:
    """One value as TOML text (strings as JSON-escaped basic strings, which TOML reads alike)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_value(item) for item in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{_key(key)} = {toml_value(item)}" for key, item in value.items()) + " }"
    raise TypeError(f"cannot write {value!r} as TOML")


def _key(key: str) -> str:
    return key if key and all(c.isalnum() or c in "_-" for c in key) and key.isascii() else json.dumps(key)


def _write_toml(document: dict) -> str:
    lines: list[str] = []
    for key, value in document.items():
        if not isinstance(value, (dict, list)) or (isinstance(value, list) and not value):
            lines.append(f"{_key(key)} = {toml_value(value)}")
    for key, value in document.items():
        if isinstance(value, dict):
            nested = {k: v for k, v in value.items() if isinstance(v, dict) and key == "mounts"}
            lines.append(f"\n[{_key(key)}]")
            lines.extend(f"{_key(k)} = {toml_value(v)}" for k, v in value.items() if k not in nested)
            for name, table in nested.items():
                lines.append(f"\n[{_key(key)}.{_key(name)}]")
                lines.extend(f"{_key(k)} = {toml_value(v)}" for k, v in table.items())
        elif isinstance(value, list) and value:
            for table in value:
                lines.append(f"\n[[{_key(key)}]]")
                lines.extend(f"{_key(k)} = {toml_value(v)}" for k, v in table.items())
    return "\n".join(lines) + "\n"
