"""Layout files: loading, validation and the validated model (SI units)."""

from benchcheck.layout.element_types import ElementType, FieldSpec, builtin_element_types
from benchcheck.layout.loader import load_layout, parse_layout
from benchcheck.layout.model import (
    MAIN_ARM,
    Element,
    Layout,
    MountClass,
    Simulation,
    Source,
    Spec,
    Tolerance,
    Tolerancing,
)

__all__ = [
    "MAIN_ARM",
    "Element",
    "ElementType",
    "FieldSpec",
    "Layout",
    "MountClass",
    "Simulation",
    "Source",
    "Spec",
    "Tolerance",
    "Tolerancing",
    "builtin_element_types",
    "load_layout",
    "parse_layout",
]
