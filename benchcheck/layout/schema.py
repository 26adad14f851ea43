"""A JSON Schema (draft 2020-12) of layout format 1, built from the element types.

Editors' TOML language servers use it for completion and first-pass validation; the
loader remains the authority (units, expressions and cross-references are checked there).
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from benchcheck.layout.element_types import COMMON_FIELDS, DOF_KINDS, ElementType, FieldSpec, builtin_element_types
from benchcheck.layout.elements import DISTRIBUTIONS, ENCODINGS, HOLOGRAM_FIELDS

__all__ = ["layout_schema"]

_QUANTITY = {"type": ["string", "number"], "description": "a quantity such as \"150 mm\" or an expression"}


def _field_schema(spec: FieldSpec) -> dict[str, Any]:
    if spec.kind in ("length", "angle", "ratio", "power", "irradiance", "number"):
        single = dict(_QUANTITY)
    elif spec.kind == "integer":
        single = {"type": "integer"}
    elif spec.kind == "choice":
        single = {"enum": list(spec.choices)}
    elif spec.kind == "string":
        single = {"type": "string"}
    elif spec.kind == "strings":
        single = {"type": "array", "items": {"type": "string"}}
    elif spec.kind == "bool":
        single = {"type": "boolean"}
    else:
        single = {"type": "object"}
    schema = {"anyOf": [single, {"type": "array", "items": single, "minItems": 2, "maxItems": 2}]} if spec.pair else single
    if spec.help:
        schema = dict(schema, description=spec.help)
    return schema


def _tolerance_schema(dofs: tuple[str, ...], extra: Mapping[str, Any] | None = None) -> dict[str, Any]:
    limit = {"anyOf": [_QUANTITY, {"type": "object", "properties": {
        "limit": _QUANTITY, "distribution": {"enum": list(DISTRIBUTIONS)}}, "required": ["limit"],
        "additionalProperties": False}]}
    properties: dict[str, Any] = {dof: limit for dof in dofs}
    properties["distribution"] = {"enum": list(DISTRIBUTIONS)}
    properties.update(extra or {})
    return {"type": "object", "properties": properties, "additionalProperties": False,
            "description": "± limits per degree of freedom"}


def _hologram_schema() -> dict[str, Any]:
    properties: dict[str, Any] = {}
    for key, kind in HOLOGRAM_FIELDS.items():
        if kind == "integer":
            properties[key] = {"type": "integer"}
        elif kind == "string":
            properties[key] = {"type": "string"}
        elif kind == "bool":
            properties[key] = {"type": "boolean"}
        elif kind == "table":
            properties[key] = {"type": "object", "properties": {"period_px": _QUANTITY, "angle": _QUANTITY},
                               "required": ["period_px"], "additionalProperties": False}
        else:
            properties[key] = _QUANTITY
    properties["encoding"] = {"enum": list(ENCODINGS)}
    properties["shape"] = {"enum": ["round", "square"]}
    return {"type": "object", "properties": properties, "required": ["pattern"]}


def _element_schema(element_type: ElementType) -> dict[str, Any]:
    properties: dict[str, Any] = {key: _field_schema(spec) for key, spec in COMMON_FIELDS.items()}
    properties["type"] = {"const": element_type.name}
    for key, spec in element_type.fields.items():
        properties[key] = _field_schema(spec)
    if "hologram" in element_type.fields:
        properties["hologram"] = _hologram_schema()
    children = {}
    if element_type.role == "compound":
        child = _tolerance_schema(element_type.dofs)
        children = {"lens1": child, "lens2": child, "fourier": _tolerance_schema(("z", "x", "y", "diameter"))}
    properties["tolerance"] = _tolerance_schema(element_type.dofs, children)
    required = ["name", "type"] + [key for key, spec in element_type.fields.items() if spec.required]
    return {
        "type": "object",
        "description": element_type.description,
        "properties": properties,
        "required": required,
        "additionalProperties": False,
        "anyOf": [{"required": ["z"]}, {"required": ["after", "gap"]}],
    }


def layout_schema(element_types: Mapping[str, ElementType] | None = None) -> dict[str, Any]:
    """The JSON Schema of layout format 1 for the given element types (first-party by default)."""
    types = element_types or builtin_element_types()
    source_dofs = ("wavelength", "waist", "waist_z", "m2", "x", "y", "tilt_x", "tilt_y")
    mount_class = {
        "type": "object",
        "properties": {"rank": {"type": "integer", "minimum": 0}, "description": {"type": "string"},
                       **{key: _QUANTITY for key in ("z", "x", "y", "tilt", "tilt_x", "tilt_y")}},
        "required": ["rank"],
        "additionalProperties": False,
    }
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "benchcheck layout, format 1",
        "type": "object",
        "required": ["format", "bench", "source"],
        "additionalProperties": False,
        "properties": {
            "format": {"const": 1},
            "bench": {"type": "object", "required": ["wavelength"], "additionalProperties": False,
                      "properties": {"title": {"type": "string"}, "wavelength": _QUANTITY, "power": _QUANTITY}},
            "units": {"type": "object", "additionalProperties": False,
                      "properties": {"length": {"type": "string"}, "angle": {"type": "string"},
                                     "power": {"type": "string"}}},
            "params": {"type": "object", "additionalProperties": _QUANTITY},
            "source": {
                "type": "object", "required": ["waist"], "additionalProperties": False,
                "properties": {
                    "waist": {"anyOf": [_QUANTITY, {"type": "array", "items": _QUANTITY}]},
                    "waist_z": {"anyOf": [_QUANTITY, {"type": "array", "items": _QUANTITY}]},
                    "m2": {"anyOf": [_QUANTITY, {"type": "array", "items": _QUANTITY}]},
                    **{key: _QUANTITY for key in ("x", "y", "tilt_x", "tilt_y")},
                    "tolerance": _tolerance_schema(source_dofs),
                },
            },
            "element": {"type": "array", "items": {"oneOf": [_element_schema(t) for t in types.values()]}},
            "mounts": {"type": "object", "additionalProperties": mount_class},
            "spec": {"type": "array", "items": {
                "type": "object", "required": ["metric", "at"],
                "properties": {"metric": {"type": "string"}, "at": {"type": "string"}, "name": {"type": "string"},
                               "min": _QUANTITY, "max": _QUANTITY},
                "anyOf": [{"required": ["min"]}, {"required": ["max"]}],
            }},
            "tolerancing": {
                "type": "object", "additionalProperties": False,
                "properties": {
                    "trials": {"type": "integer", "minimum": 1}, "seed": {"type": "integer", "minimum": 0},
                    "sampler": {"enum": ["random", "sobol"]},
                    "adjust": {"type": "array", "items": {"type": "string"}},
                    "yield_target": _QUANTITY,
                    "defaults": {"type": "object", "additionalProperties": _tolerance_schema(tuple(DOF_KINDS))},
                },
            },
            "simulation": {
                "type": "object", "additionalProperties": False,
                "properties": {"grid": {"type": "integer", "minimum": 16},
                               "precision": {"enum": ["single", "double"]},
                               "samples_per_pixel": {"type": "number"}, "replicas": {"type": "number"},
                               "margin": {"type": "number"}},
            },
        },
    }
