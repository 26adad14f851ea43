"""Element types: the fields each type accepts, and the degrees of freedom it has.

The loader validates an ``[[element]]`` table against its type's field specifications.
Plugins add types through the element-type hook; a type may carry its own paraxial ray
matrices and wave mask as callables, which this layer stores but never calls.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

__all__ = [
    "FieldSpec",
    "ElementType",
    "COMMON_FIELDS",
    "POSE_DOFS",
    "DOF_KINDS",
    "builtin_element_types",
]


@dataclass(frozen=True)
class FieldSpec:
    """What one field of an element accepts.

    Attributes
    ----------
    kind : str
        ``length``, ``angle``, ``ratio``, ``power``, ``irradiance`` (quantities, converted to SI);
        ``integer``, ``number``, ``string``, ``choice``, ``bool``; ``table`` (an inline table checked by
        the type's own rules); ``strings`` (a list of names).
    required : bool
        The loader refuses an element without it.
    default : Any
        Value used when the field is absent (already SI).
    choices : tuple of str
        Allowed values of a ``choice`` field.
    pair : bool
        Accepts one value or ``[x, y]``; stored as an (x, y) tuple.
    help : str
        One line for error messages and the JSON Schema.
    """

    kind: str
    required: bool = False
    default: Any = None
    choices: tuple[str, ...] = ()
    pair: bool = False
    help: str = ""


#: Fields every element has, whatever its type.
COMMON_FIELDS: Mapping[str, FieldSpec] = {
    "name": FieldSpec("string", required=True, help="identifier: letters, digits, underscore"),
    "type": FieldSpec("string", required=True, help="element type"),
    "z": FieldSpec("length", help="path length from the source along the element's arm"),
    "after": FieldSpec("string", help="name of the element this one follows (with gap)"),
    "gap": FieldSpec("length", help="path length after the element named in 'after'"),
    "arm": FieldSpec("string", help="a splitter's arm this element follows"),
    "mount": FieldSpec("string", help="a mount class from [mounts]"),
    "tolerance": FieldSpec("table", help="± limits per degree of freedom"),
    "x": FieldSpec("length", default=0.0, help="nominal decenter along x"),
    "y": FieldSpec("length", default=0.0, help="nominal decenter along y"),
    "tilt_x": FieldSpec("angle", default=0.0, help="nominal rotation about the x axis"),
    "tilt_y": FieldSpec("angle", default=0.0, help="nominal rotation about the y axis"),
    "damage_threshold": FieldSpec("irradiance", help="irradiance the optic's coating is rated for"),
    "note": FieldSpec("string", help="free text"),
}

#: Degrees of freedom of an element's mount.
POSE_DOFS = ("z", "x", "y", "tilt_x", "tilt_y")

#: The kind of value each degree of freedom takes (for tolerances); a relative ("%")
#: limit is accepted where the kind is marked with "|relative".
DOF_KINDS: Mapping[str, str] = {
    "z": "length",
    "x": "length",
    "y": "length",
    "tilt_x": "angle",
    "tilt_y": "angle",
    "focal_length": "length|relative",
    "radius": "length|relative",
    "thickness": "length|relative",
    "diameter": "length|relative",
    "pixel_pitch": "length|relative",
    "fill_factor": "ratio",
    "phase_depth": "ratio",
    "shift_x": "length",
    "shift_y": "length",
    "wavelength": "length|relative",
    "waist": "length|relative",
    "waist_z": "length",
    "m2": "ratio",
}


@dataclass(frozen=True)
class ElementType:
    """One kind of element.

    Attributes
    ----------
    name : str
        The ``type`` value in a layout.
    fields : mapping of str to FieldSpec
        Type-specific fields (the common ones are added by the loader).
    dofs : tuple of str
        Degrees of freedom a tolerance may name.
    role : str
        ``"optic"`` (acts on the beam, thin), ``"mask"`` (clips or modulates: a wave-stage boundary),
        ``"observe"`` (an observation plane), ``"compound"`` (expands into other elements).
    description : str
        One line for the JSON Schema and ``benchcheck plugins``.
    ray_matrices : callable, optional
        For plugin types: ``f(element, wavelength) -> (matrix_x, matrix_y)``, 3x3 ABCDEF per axis.
    mask : callable, optional
        For plugin types: ``f(element, x, y, wavelength) -> complex transmission`` at its plane.
    plugin : str
        The plugin that registered it (empty for first-party types).
    """

    name: str
    fields: Mapping[str, FieldSpec]
    dofs: tuple[str, ...] = POSE_DOFS
    role: str = "optic"
    description: str = ""
    ray_matrices: Callable[..., Any] | None = None
    mask: Callable[..., Any] | None = None
    plugin: str = ""
    extra_dof_kinds: Mapping[str, str] = field(default_factory=dict)

    def dof_kind(self, dof: str) -> str:
        return self.extra_dof_kinds.get(dof) or DOF_KINDS.get(dof, "length")


_CLEAR_APERTURE = FieldSpec("length", help="diameter of the clear aperture (clips the beam)")
_INDEX = FieldSpec("ratio", default=1.5, help="refractive index of the glass")

_HOLOGRAM_HELP = "hologram table: pattern and its parameters (DESIGN.md section 5)"


def builtin_element_types() -> dict[str, ElementType]:
    """The first-party element types of layout format 1 (DESIGN.md section 5)."""
    types = [
        ElementType(
            "lens",
            {
                "focal_length": FieldSpec("length", required=True, help="focal length (thin lens)"),
                "clear_aperture": _CLEAR_APERTURE,
                "index": _INDEX,
                "thickness": FieldSpec("length", help="centre thickness (not used by the thin model)"),
            },
            dofs=POSE_DOFS + ("focal_length",),
            description="thin lens",
        ),
        ElementType(
            "mirror",
            {
                "radius": FieldSpec("length", default=float("inf"), help="radius of curvature; absent or 'inf' = flat"),
                "incidence": FieldSpec("angle", default=0.0, help="angle of incidence (the nominal fold)"),
                "incidence_plane": FieldSpec("choice", default="xz", choices=("xz", "yz"),
                                             help="plane of the fold: tangential axis x for 'xz'"),
                "clear_aperture": _CLEAR_APERTURE,
            },
            dofs=POSE_DOFS + ("radius",),
            description="flat or curved fold mirror",
        ),
        ElementType(
            "plate",
            {
                "thickness": FieldSpec("length", required=True, help="thickness"),
                "index": _INDEX,
                "clear_aperture": _CLEAR_APERTURE,
            },
            dofs=POSE_DOFS + ("thickness",),
            description="plane-parallel plate: window or cube",
        ),
        ElementType(
            "aperture",
            {
                "diameter": FieldSpec("length", help="diameter of a round opening"),
                "size": FieldSpec("length", pair=True, help="[width, height] of a rectangular opening"),
                "center": FieldSpec("length", pair=True, default=(0.0, 0.0), help="[x, y] of the opening's centre"),
                "stop": FieldSpec("length", help="diameter of a central block"),
            },
            dofs=POSE_DOFS + ("diameter",),
            role="mask",
            description="iris, slit or stop",
        ),
        ElementType(
            "modulator",
            {
                "pixel_pitch": FieldSpec("length", required=True, pair=True, help="pixel pitch"),
                "pixels": FieldSpec("integer", required=True, pair=True, help="[columns, rows]"),
                "fill_factor": FieldSpec("ratio", default=1.0,
                                         help="share of a pixel's area that is modulated (datasheet fill factor)"),
                "phase_levels": FieldSpec("integer", default=256, help="number of phase levels"),
                "design_wavelength": FieldSpec("length", help="wavelength at which the stroke is 2π"),
                "hologram": FieldSpec("table", help=_HOLOGRAM_HELP),
                "incidence": FieldSpec("angle", default=0.0, help="angle of incidence on the panel"),
                "crosstalk": FieldSpec("ratio", default=0.0, help="fringing width as a fraction of a pixel"),
                "dead_space": FieldSpec("choice", default="flat", choices=("flat", "opaque"),
                                        help="what the gaps between pixels do"),
            },
            dofs=POSE_DOFS + ("pixel_pitch", "fill_factor", "phase_depth", "shift_x", "shift_y"),
            role="mask",
            description="phase-only spatial light modulator",
        ),
        ElementType(
            "relay",
            {
                "focal_lengths": FieldSpec("length", required=True, pair=True, help="[f1, f2]"),
                "iris": FieldSpec("table", help="iris in the Fourier plane: {diameter, center, stop}"),
                "clear_aperture": _CLEAR_APERTURE,
                "index": _INDEX,
            },
            dofs=POSE_DOFS + ("focal_length",),
            role="compound",
            description="4f relay: expands into <name>.lens1, <name>.fourier, <name>.lens2",
        ),
        ElementType(
            "splitter",
            {
                "ratio": FieldSpec("ratio", default=0.5, help="share of the power sent into the arm"),
                "arms": FieldSpec("strings", required=True, help="names of the arms it starts"),
                "incidence": FieldSpec("angle", default=0.0, help="angle of incidence (the nominal fold of the arm)"),
                "incidence_plane": FieldSpec("choice", default="xz", choices=("xz", "yz"),
                                             help="plane of the fold: tangential axis x for 'xz'"),
                "thickness": FieldSpec("length", help="plate thickness (thin when absent)"),
                "index": _INDEX,
                "clear_aperture": _CLEAR_APERTURE,
            },
            description="beam splitter or pick-off",
        ),
        ElementType(
            "camera",
            {
                "pixel_pitch": FieldSpec("length", required=True, pair=True, help="pixel pitch"),
                "pixels": FieldSpec("integer", required=True, pair=True, help="[columns, rows]"),
                "bit_depth": FieldSpec("integer", default=12, help="bits per pixel"),
                "exposure": FieldSpec("string", default="auto", help="'auto' or counts per W/m²"),
            },
            dofs=POSE_DOFS + ("pixel_pitch",),
            role="observe",
            description="camera (observation plane with pixels)",
        ),
        ElementType(
            "plane",
            {
                "size": FieldSpec("length", pair=True, help="[width, height] of the region of interest"),
            },
            dofs=("z", "x", "y"),
            role="observe",
            description="observation plane without pixels (work plane)",
        ),
    ]
    return {element_type.name: element_type for element_type in types}
