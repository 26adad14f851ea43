"""First-party review rules plugin: the entry point ``core_review`` of the ``benchcheck`` group.

It only registers rule objects; each family of checks lives in its own ``review_*`` module.
"""

from __future__ import annotations

from benchcheck.hookspecs import hookimpl
from benchcheck.review import ReviewRule

from benchcheck_plugins import (
    review_apertures,
    review_camera,
    review_fourier,
    review_modulator,
    review_mounts,
    review_paraxial,
    review_power,
)

__all__ = ["benchcheck_register_review_rules"]


@hookimpl
def benchcheck_register_review_rules() -> list[ReviewRule]:
    """The first-party review rules."""
    return [
        *review_apertures.rules(),
        *review_modulator.rules(),
        *review_fourier.rules(),
        *review_camera.rules(),
        *review_mounts.rules(),
        *review_paraxial.rules(),
        *review_power.rules(),
    ]
