"""Planes kept from the last realization, for realizations that change only what lies downstream.

The field at a mask plane depends only on the source and the elements on the path up to
that plane, itself included. A failure-threshold search moves one dof with the others
nominal, and an adjustment moves the same few dofs trial after trial; when those lie
downstream of a plane, the plane's field is the one already computed, and the simulation
starts again from there.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from benchcheck.bench.graph import SOURCE
from benchcheck.bench.realization import Realization, split_dof

__all__ = ["KeptPlane", "UpstreamPlanes"]


@dataclass(frozen=True)
class KeptPlane:
    """What a plane of the path left: its result, the pixel cells it hands on, the light its
    mask blocked (a ``losses`` entry or None), and the modulator's bookkeeping."""

    result: Any
    cells: Any
    loss: tuple[str, float] | None
    state: tuple[tuple[str, Any], ...]


@dataclass
class UpstreamPlanes:
    """The last computed plane of each name, with the excursions it was computed for."""

    _kept: dict[str, tuple[tuple, KeptPlane]] = field(default_factory=dict)
    _upstream: dict[str, frozenset] = field(default_factory=dict)

    def key(self, realization: Realization, plane: str, *extra) -> tuple:
        """The excursions that can change ``plane``'s field (source and path up to it), and ``extra``."""
        if plane not in self._upstream:
            self._upstream[plane] = frozenset(realization.bench.path_to(plane)) | {SOURCE}
        upstream = self._upstream[plane]
        moved = tuple(sorted((dof, value) for dof, value in realization.perturbation.items()
                             if value != 0.0 and split_dof(dof)[0] in upstream))
        return (id(realization.bench), moved) + extra

    def key_of(self, plane: str) -> tuple | None:
        """The key the kept ``plane`` was computed for (None when none is kept)."""
        kept = self._kept.get(plane)
        return kept[0] if kept is not None else None

    def get(self, plane: str, key: tuple) -> KeptPlane | None:
        kept = self._kept.get(plane)
        return kept[1] if kept is not None and kept[0] == key else None

    def keep(self, plane: str, key: tuple, kept: KeptPlane) -> None:
        self._kept[plane] = (key, kept)

    def clear(self) -> None:
        self._kept.clear()
