"""Rules that tie an element's fields together, and path positions resolved per arm.

``resolve_positions`` turns ``z`` or ``after`` + ``gap`` into path lengths, expands relays
into their lenses and Fourier plane, and checks that each arm runs in increasing z (with a
warning where two mounts would collide). Both take the loader's builder for its error and
warning helpers.
"""

from __future__ import annotations

import math

from benchcheck.layout.elements import NAME_PATTERN, RawElement, expand_relay
from benchcheck.layout.model import MAIN_ARM, Element, frozen_mapping
from benchcheck.layout.reader import Place
from benchcheck.limits import MAX_PIXELS_PER_SIDE

__all__ = ["MOUNT_COLLISION_DISTANCE", "check_type_rules", "resolve_positions"]

#: Two elements closer than this along one arm may not both fit (common practice: a one-inch
#: mount is about 10-15 mm thick, so 1 mm apart is certainly a collision).
MOUNT_COLLISION_DISTANCE = 1e-3


def check_type_rules(builder, raw: RawElement, place: Place) -> None:
    """Rules that tie fields of one element together."""
    values = raw.values
    for key in ("focal_length", "clear_aperture", "thickness", "diameter", "stop", "design_wavelength"):
        if key in values and not (values[key] > 0 or (key == "focal_length" and values[key] < 0)):
            raise builder.error(place.at(key), f"'{key}' must be {'non-zero' if key == 'focal_length' else 'positive'}")
    if raw.type == "aperture":
        if ("diameter" in values) == ("size" in values):
            raise builder.error(place.at("size") if "size" in values else place,
                                "an aperture needs exactly one of 'diameter' or 'size'")
        if "stop" in values and "diameter" in values and values["stop"] >= values["diameter"]:
            raise builder.error(place.at("stop"), "the central stop is as large as the opening")
    if raw.type == "relay":
        f1, f2 = values["focal_lengths"]
        if not (f1 > 0 and f2 > 0):
            raise builder.error(place.at("focal_lengths"), "a 4f relay needs two positive focal lengths")
    if raw.type in ("modulator", "camera"):
        for pitch in values["pixel_pitch"]:
            if not pitch > 0:
                raise builder.error(place.at("pixel_pitch"), "the pixel pitch must be positive")
        if max(values["pixels"]) > MAX_PIXELS_PER_SIDE:
            raise builder.error(place.at("pixels"), f"{max(values['pixels'])} pixels on one side is more than any "
                                f"{raw.type} has (at most {MAX_PIXELS_PER_SIDE})",
                                hint="pixels = [columns, rows] of the device, e.g. [1920, 1080]")
    if raw.type == "modulator":
        if not 0 < values["fill_factor"] <= 1:
            raise builder.error(place.at("fill_factor"), f"must be in (0, 1], got {values['fill_factor']}")
        if values["phase_levels"] < 2:
            raise builder.error(place.at("phase_levels"), "a modulator needs at least 2 phase levels")
    if raw.type == "camera" and not 1 <= values["bit_depth"] <= 32:
        raise builder.error(place.at("bit_depth"), f"bit depth must be 1 to 32, got {values['bit_depth']}")
    if raw.type == "splitter":
        if not 0 <= values["ratio"] <= 1:
            raise builder.error(place.at("ratio"), f"the split ratio must be in [0, 1], got {values['ratio']}")
        for arm in values["arms"]:
            if not NAME_PATTERN.match(arm) or arm == MAIN_ARM:
                raise builder.error(place.at("arms"), f"'{arm}' cannot name an arm")
    if raw.type == "mirror" and "radius" in values and values["radius"] == 0:
        raise builder.error(place.at("radius"), "a mirror radius cannot be zero (use 'inf' for flat)")


def resolve_positions(builder, raw_elements: list[RawElement]) -> tuple[list[Element], dict[str, str]]:
    """Turn z / after + gap into path positions, expand relays, and check order per arm."""
    arms: dict[str, str] = {}
    ends: dict[str, tuple[float, str]] = {}  # name -> (path position that 'after' counts from, arm)
    elements: list[Element] = []
    last_in_arm: dict[str, Element] = {}
    for raw in raw_elements:
        place = Place("element", raw.index, raw.name, raw.index)
        arm = raw.arm or MAIN_ARM
        if arm != MAIN_ARM and arm not in arms:
            raise builder.error(place.at("arm"), f"no splitter before this element starts an arm '{arm}'",
                                hint="declared arms: " + (", ".join(sorted(arms)) or "none"))
        if raw.after is not None:
            if raw.after not in ends:
                raise builder.error(place.at("after"), f"'{raw.after}' is not an element defined above this one")
            after_arm = ends[raw.after][1]
            if after_arm != arm and arms.get(arm) != raw.after:
                # Path lengths along different arms cannot be added to each other.
                raise builder.error(place.at("after"), f"'{raw.after}' is on arm '{after_arm}', this element on "
                                    f"arm '{arm}'", hint=f"give arm = \"{after_arm}\" or follow an element of '{arm}'")
            z = ends[raw.after][0] + raw.gap
        else:
            z = raw.z
        if not math.isfinite(z) or z < 0:
            raise builder.error(place.at("z" if raw.after is None else "gap"),
                                f"the path position must be 0 or more, got {z * 1e3:g} mm")
        if arm != MAIN_ARM:
            splitter = elements[[e.name for e in elements].index(arms[arm])]
            if z <= splitter.z:
                raise builder.error(place.at("z"), f"the arm '{arm}' starts at the splitter '{splitter.name}' "
                                    f"(z = {splitter.z * 1e3:g} mm); this element must come after it")
        if raw.type == "relay":
            new = [Element(arm=arm, **child) for child in expand_relay(raw, z)]
            f1, f2 = raw.values["focal_lengths"]
            ends[raw.name] = (z + 2 * f1 + 2 * f2, arm)
        else:
            new = [Element(name=raw.name, type=raw.type, index=raw.index, z=z, arm=arm,
                           values=frozen_mapping(raw.values), x=raw.pose[0], y=raw.pose[1],
                           tilt_x=raw.pose[2], tilt_y=raw.pose[3], mount=raw.mount,
                           tolerances=raw.tolerances, line=raw.line)]
            ends[raw.name] = (z, arm)
        for element in new:
            previous = last_in_arm.get(arm)
            if previous is not None:
                if element.z < previous.z:
                    raise builder.error(place.at("z" if raw.after is None else "gap"),
                                        f"'{element.name}' at z = {element.z * 1e3:g} mm comes before "
                                        f"'{previous.name}' (z = {previous.z * 1e3:g} mm) on arm '{arm}'",
                                        hint="list the elements of an arm in increasing z")
                if element.z - previous.z < MOUNT_COLLISION_DISTANCE:
                    builder.warnings.append(
                        f"'{previous.name}' and '{element.name}' are {(element.z - previous.z) * 1e3:.3g} mm apart "
                        "on the path: their mounts may collide (a one-inch mount is about 10-15 mm thick; "
                        "common practice)"
                    )
            last_in_arm[arm] = element
            elements.append(element)
        if raw.type == "splitter":
            for new_arm in raw.values["arms"]:
                if new_arm in arms:
                    raise builder.error(place.at("arms"), f"the arm '{new_arm}' is already started by '{arms[new_arm]}'")
                arms[new_arm] = raw.name
    return elements, arms
