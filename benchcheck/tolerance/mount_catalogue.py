"""The default catalogue of mount classes: generic kinds of mount, coarse to fine.

Each class says to what ± limit (SI) it holds an element's pose after an ordinary careful
alignment: ``z`` along the beam, ``x``/``y`` across it, ``tilt_x``/``tilt_y``. The numbers
are common practice for general-purpose bench hardware, recalled from memory rather than
looked up; they are planning figures, not a supplier's data. A layout can use this
catalogue, extend it with its own ``[mounts.<class>]`` tables, override a class by giving
one of the same name, or leave the catalogue out (``plan_mounts(..., use_catalogue=False)``,
``benchcheck mounts --layout-mounts-only``).

Finer classes hold every dof at least as tightly as coarser ones, so upgrading an element
never loosens anything.
"""

from __future__ import annotations

from collections.abc import Mapping

from benchcheck.layout.model import Layout, MountClass, frozen_mapping

__all__ = ["CATALOGUE_BASIS", "MOUNT_CATALOGUE", "mount_classes"]

#: Where the catalogue's numbers come from (shown with every plan that uses them).
CATALOGUE_BASIS = "catalogue numbers are common practice, from memory: planning figures, not supplier data"

_MM = 1e-3
_MRAD = 1e-3


def _mount(name: str, rank: int, description: str, z: float, across: float, tilt: float) -> MountClass:
    holds = {"z": z * _MM, "x": across * _MM, "y": across * _MM,
             "tilt_x": tilt * _MRAD, "tilt_y": tilt * _MRAD}
    return MountClass(name=name, rank=rank, holds=frozen_mapping(holds), description=description)


#: Generic mount classes, coarse (rank 0) to fine. Numbers: common practice, from memory.
MOUNT_CATALOGUE: Mapping[str, MountClass] = frozen_mapping({
    mount.name: mount
    for mount in (
        # Clamped to a post and placed by eye against a ruler: ~0.5 mm, a few tenths of a degree.
        _mount("post", 0, "fixed post mount", z=0.5, across=0.5, tilt=5.0),
        # Fine-pitch tilt screws set while watching the beam: tens of µrad; position as a post.
        _mount("kinematic", 1, "kinematic tilt mount", z=0.5, across=0.5, tilt=0.05),
        # Kinematic tilt plus screw-driven x/y translation: tens of µm across the beam.
        _mount("translating", 2, "translating mount (x/y screws, kinematic tilt)", z=0.5, across=0.02, tilt=0.05),
        # Micrometer-driven stage in x, y and z with a fine tilt platform: a few µm.
        _mount("micrometer", 3, "micrometer stage (x, y, z) with fine tilt", z=0.005, across=0.005, tilt=0.02),
        # Differential-screw drives: about a micrometre and a few µrad.
        _mount("differential", 4, "differential-screw stage", z=0.001, across=0.001, tilt=0.005),
    )
})


def mount_classes(layout: Layout, use_catalogue: bool = True) -> dict[str, tuple[MountClass, str]]:
    """The mount classes a plan may choose from, with where each came from.

    Parameters
    ----------
    layout : Layout
        Its ``[mounts.<class>]`` tables win over catalogue classes of the same name.
    use_catalogue : bool
        False: only the layout's own classes.

    Returns
    -------
    dict
        class name -> (MountClass, ``"catalogue"`` or ``"layout"``), ordered coarse to fine
        (by rank, then name).
    """
    merged: dict[str, tuple[MountClass, str]] = {}
    if use_catalogue:
        merged.update({name: (mount, "catalogue") for name, mount in MOUNT_CATALOGUE.items()})
    merged.update({name: (mount, "layout") for name, mount in layout.mounts.items()})
    return dict(sorted(merged.items(), key=lambda item: (item[1][0].rank, item[0])))
