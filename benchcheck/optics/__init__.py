"""Paraxial physics: ray matrices, tilted-element astigmatism, Gaussian beams and clipping.

Pure functions over SI floats (metres, radians); see DESIGN.md section 4 for conventions.
"""

from benchcheck.optics.astigmatism import (
    lens_axis_focal_lengths,
    tilted_lens_focal_lengths,
    tilted_mirror_focal_lengths,
    tilted_plate_lateral_shift,
    tilted_plate_matrices,
    tilted_plate_path_length,
)
from benchcheck.optics.clipping import (
    annular_transmission,
    circular_transmission,
    rectangular_transmission,
)
from benchcheck.optics.gaussian import (
    AxisBeam,
    beam_radius,
    distance_past_waist,
    gouy_phase,
    propagate_q,
    q_at,
    rayleigh_range,
    waist_radius,
    wavefront_radius,
)
from benchcheck.optics.matrices import (
    apply_to_ray,
    as_ray_matrix,
    compose,
    curved_mirror,
    flat_mirror,
    free_space,
    is_symplectic,
    mirror_tilt,
    misaligned,
    ray_matrix,
    slab,
    thin_lens,
)

__all__ = [
    "ray_matrix",
    "as_ray_matrix",
    "free_space",
    "thin_lens",
    "flat_mirror",
    "curved_mirror",
    "slab",
    "misaligned",
    "mirror_tilt",
    "compose",
    "apply_to_ray",
    "is_symplectic",
    "tilted_lens_focal_lengths",
    "lens_axis_focal_lengths",
    "tilted_mirror_focal_lengths",
    "tilted_plate_lateral_shift",
    "tilted_plate_path_length",
    "tilted_plate_matrices",
    "q_at",
    "propagate_q",
    "beam_radius",
    "wavefront_radius",
    "waist_radius",
    "distance_past_waist",
    "rayleigh_range",
    "gouy_phase",
    "AxisBeam",
    "circular_transmission",
    "rectangular_transmission",
    "annular_transmission",
]
