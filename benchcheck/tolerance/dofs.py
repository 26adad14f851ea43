"""Degrees of freedom of a study: every tolerance in the layout, resolved to SI limits.

An element's own ``tolerance`` table wins; ``[tolerancing] defaults`` for its type fill in
what it leaves out. Relative limits ("1 %") become absolute here, from the nominal value.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from benchcheck.errors import LayoutError
from benchcheck.layout.model import Element, Layout, Source, Tolerance

__all__ = ["Dof", "resolve_dofs", "nominal_value", "DOF_UNITS"]

#: What kind of quantity each dof is, for showing limits in the layout's units.
DOF_UNITS = {
    "tilt_x": "angle",
    "tilt_y": "angle",
    "fill_factor": "ratio",
    "phase_depth": "ratio",
    "m2": "ratio",
}


@dataclass(frozen=True)
class Dof:
    """One degree of freedom of a study.

    Attributes
    ----------
    name : str
        ``<element>.<dof>``, e.g. ``L1.z``, ``relay.lens2.focal_length``, ``source.waist``.
    limit : float
        ± limit in SI units (absolute).
    distribution : str
        ``uniform``, ``normal`` (σ = limit/3, truncated at ±limit) or ``fixed`` (at +limit).
    nominal : float
        The nominal value of the quantity (SI), for showing relative limits.
    relative : bool
        True when the layout gave the limit as a percentage.
    kind : str
        ``length``, ``angle`` or ``ratio``: how to show it.
    """

    name: str
    limit: float
    distribution: str
    nominal: float
    relative: bool = False
    kind: str = "length"

    @property
    def owner(self) -> str:
        return self.name.rpartition(".")[0]

    @property
    def dof(self) -> str:
        return self.name.rpartition(".")[2]

    def to_dict(self) -> dict:
        return {"dof": self.name, "limit": self.limit, "distribution": self.distribution,
                "nominal": self.nominal, "relative": self.relative, "kind": self.kind}


def nominal_value(owner: Element | Source, dof: str) -> float:
    """The nominal value of ``dof`` on an element or the source (SI); 0 for pose dofs."""
    if isinstance(owner, Source):
        value = getattr(owner, dof)
        return float(value[0] if isinstance(value, tuple) else value)
    if dof in ("z",):
        return owner.z
    if dof in ("x", "y", "tilt_x", "tilt_y"):
        return getattr(owner, dof)
    if dof == "phase_depth":
        return 1.0
    if dof in ("shift_x", "shift_y"):
        return 0.0
    value = owner.value(dof)
    if value is None:
        return math.nan
    return float(value[0] if isinstance(value, tuple) else value)


def _kind(dof: str) -> str:
    return DOF_UNITS.get(dof, "length")


def _dof(name: str, tolerance: Tolerance, nominal: float, layout: Layout) -> Dof:
    if tolerance.relative and not math.isfinite(nominal):
        raise LayoutError(f"a relative tolerance on '{name}' needs a finite nominal value",
                          file=layout.path, field=name)
    return Dof(name=name, limit=tolerance.absolute_limit(nominal), distribution=tolerance.distribution,
               nominal=nominal, relative=tolerance.relative, kind=_kind(tolerance.dof))


def resolve_dofs(layout: Layout) -> list[Dof]:
    """Every dof of the layout with a non-zero limit, source first, then elements in file order."""
    dofs: list[Dof] = []
    for tolerance in layout.source.tolerances:
        dofs.append(_dof(f"source.{tolerance.dof}", tolerance, nominal_value(layout.source, tolerance.dof), layout))
    for element in layout.elements:
        own = {tolerance.dof: tolerance for tolerance in element.tolerances}
        defaults = {tolerance.dof: tolerance for tolerance in layout.tolerancing.defaults.get(element.type, ())}
        for dof_name, tolerance in (defaults | own).items():
            nominal = nominal_value(element, dof_name)
            dofs.append(_dof(f"{element.name}.{dof_name}", tolerance, nominal, layout))
    return [dof for dof in dofs if dof.limit > 0]
