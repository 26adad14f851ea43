"""`benchcheck trace LAYOUT`: the paraxial beam plane by plane."""

from __future__ import annotations

import math

from rich.table import Table

from benchcheck.api import load_layout, trace
from benchcheck.cli.output import layout_argument, print_json, print_notes, print_safety, show
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "trace", help="trace the Gaussian beam through the bench (paraxial, ABCD)",
        description="Beam size, focus, clipping and pointing at every plane of the bench.",
    )
    layout_argument(parser)
    parser.add_argument("--json", action="store_true", help="print JSON in SI units (DESIGN.md section 6)")
    parser.set_defaults(handler=run)


def run(args, context) -> int:
    layout = load_layout(args.layout, context.plugin_manager())
    result = trace(layout, plugin_manager=context.plugin_manager())
    if args.json:
        data = result.to_dict()
        data["laser_safety"] = LASER_SAFETY_CAUTION
        print_json(context.console, data)
        return 0
    length, angle = layout.display.length, layout.display.angle
    table = Table(
        title=f"{layout.title or args.layout}: paraxial trace (x, y where they differ)",
        title_justify="left",
    )
    for heading in (
        "plane", "arm", f"z ({length})", f"w ({length})", f"R ({length})",
        f"waist ({length})", f"waist at ({length})", "clipped", "transmission",
        f"offset ({length})", f"angle ({angle})",
    ):
        table.add_column(heading, justify="left" if heading in ("plane", "arm") else "right")
    for plane in result.planes:
        table.add_row(
            plane.name,
            plane.arm,
            show(plane.z, length),
            _pair(plane.w, length),
            _pair(tuple(None if math.isinf(r) else r for r in plane.radius), length, flat="flat"),
            _pair(plane.waist, length),
            _pair(plane.waist_z, length),
            _clipped(plane),
            f"{plane.transmission:.4%}",
            _pair(plane.offset, length),
            _pair(plane.angle, angle),
        )
    context.console.print(table)
    print_notes(context.console, layout.warnings, "warnings")
    print_notes(context.console, result.notes, "clipping")
    print_notes(context.console, _zero_order_notes(result, length), "zero order (not followed by the trace)")
    print_safety(context.console)
    return 0


def _zero_order_notes(result, length: str) -> list[str]:
    notes = []
    for plane in result.planes:
        if plane.zero_order_offset is not None and plane.type in ("aperture", "camera", "plane"):
            separation = math.hypot(plane.zero_order_offset[0] - plane.offset[0],
                                    plane.zero_order_offset[1] - plane.offset[1])
            notes.append(f"{plane.name}: zero order at ({show(plane.zero_order_offset[0], length)}, "
                         f"{show(plane.zero_order_offset[1], length)}) {length}, "
                         f"{show(separation, length)} {length} from the wanted order")
    return notes


def _clipped(plane) -> str:
    blocked = 1.0 - plane.passed if plane.type != "splitter" else 0.0
    return "-" if blocked < 1e-9 else f"{blocked:.3%}"


def _pair(values, unit: str, flat: str = "-") -> str:
    shown = [flat if value is None else show(value, unit) for value in values]
    return shown[0] if shown[0] == shown[1] else f"{shown[0]}, {shown[1]}"
