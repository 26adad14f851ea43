"""Review rules about mounts: room between mounts along the path, and tolerances the mount
class cannot hold."""

from __future__ import annotations

from collections.abc import Iterator

from benchcheck.bench.graph import SOURCE
from benchcheck.review import Finding, ReviewContext, ReviewRule

from benchcheck_plugins.review_common import mm

__all__ = ["DEFAULT_MOUNT_THICKNESS", "VIRTUAL_TYPES", "mount_thickness", "rules"]

#: Thickness of a mount along the beam when its class gives none: half an inch, common
#: practice for one-inch optic mounts (from memory).
DEFAULT_MOUNT_THICKNESS = 12.7e-3
#: Element types with no hardware on the bench (an observation plane in the air).
VIRTUAL_TYPES = ("plane",)

_SPACING_BASIS = ("mount thickness along the beam 12.7 mm unless the mount class gives one: common practice, from "
                  "memory; two mounts need half of each thickness on either side of their optics. Path-length "
                  "check: the folded geometry is not known")
_HOLDS_BASIS = "the mount class's ± holds from [mounts] (what the mount keeps after alignment) against the tolerance"


def mount_thickness(context: ReviewContext, element) -> tuple[float, bool]:
    """Thickness (m) of an element's mount along the beam, and whether its class gave it."""
    mount = context.layout.mounts.get(element.mount) if element.mount else None
    given = getattr(mount, "thickness", None) if mount is not None else None
    return (float(given), True) if given else (DEFAULT_MOUNT_THICKNESS, False)


def _previous_hardware(context: ReviewContext, name: str):
    """The nearest element upstream of ``name`` that sits on a mount (None at the source)."""
    graph = context.bench.graph
    node = next(iter(graph.predecessors(name)))
    while node != SOURCE:
        element = context.bench.element(node)
        if element.type not in VIRTUAL_TYPES:
            return element
        node = next(iter(graph.predecessors(node)))
    return None


def mount_spacing_findings(context: ReviewContext) -> Iterator[Finding]:
    """Neighbouring mounted elements closer along the path than their mounts are thick."""
    for element in context.layout.elements:
        if element.type in VIRTUAL_TYPES:
            continue
        previous = _previous_hardware(context, element.name)
        if previous is None:
            continue
        gap = element.z - previous.z
        first, first_given = mount_thickness(context, previous)
        second, second_given = mount_thickness(context, element)
        needed = 0.5 * (first + second)
        if gap >= needed:
            continue
        origin = "from the mount classes" if first_given and second_given else "12.7 mm where the class gives none"
        yield Finding(
            rule="mount_spacing", severity="warning", element=previous.name,
            message=(f"'{previous.name}' and '{element.name}' are {mm(gap)} apart along the path, less than the "
                     f"{mm(needed)} their mounts need (half of each mount's thickness, {origin}); this is a "
                     f"path-length check, the folded geometry is not known."),
            basis=_SPACING_BASIS,
            numbers={"gap_m": gap, "needed_gap_m": needed, "first_thickness_m": first, "second_thickness_m": second})


def mount_holds_findings(context: ReviewContext) -> Iterator[Finding]:
    """Elements with tolerances tighter than their mount class holds (one finding per element)."""
    for element in context.layout.elements:
        mount = context.layout.mounts.get(element.mount) if element.mount else None
        if mount is None:
            continue
        parts, numbers = [], {}
        for tolerance in element.tolerances:
            held = mount.holds.get(tolerance.dof)
            if held is None or tolerance.relative or held <= tolerance.limit:
                continue
            scale, unit, si = (1e3, "mrad", "rad") if tolerance.dof.startswith("tilt") else (1e3, "mm", "m")
            parts.append(f"{tolerance.dof} ±{tolerance.limit * scale:.4g} {unit} (holds ±{held * scale:.4g} {unit})")
            numbers[f"{tolerance.dof}_tolerance_{si}"] = tolerance.limit
            numbers[f"{tolerance.dof}_mount_holds_{si}"] = held
        if not parts:
            continue
        yield Finding(
            rule="mount_holds", severity="warning", element=element.name,
            message=(f"tolerances tighter than a '{mount.name}' mount holds: {'; '.join(parts)} (fix: a finer mount "
                     f"class, or a tolerance study at what the mount holds)."),
            basis=_HOLDS_BASIS, numbers=numbers)


def rules() -> list[ReviewRule]:
    """The mount rules."""
    return [
        ReviewRule("mount_spacing", mount_spacing_findings, "room between neighbouring mounts along the path",
                   _SPACING_BASIS),
        ReviewRule("mount_holds", mount_holds_findings, "tolerances tighter than the mount class holds", _HOLDS_BASIS),
    ]
