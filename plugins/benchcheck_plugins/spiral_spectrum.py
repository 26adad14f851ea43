"""The spiral spectrum (OAM charge weights) of a sampled field about an axis, on rings.

The field about an axis is expanded in angular harmonics (Torner, Torres and Carrasco,
Opt. Express 13, 873 (2005)):

    E(r, φ) = Σ_l a_l(r) exp(i l φ),   a_l(r) = (1/2π) ∫ E(r, φ) exp(−i l φ) dφ,
    C_l = ∫ |a_l(r)|² r dr,            weight_l = C_l / Σ_m C_m.

OAM purity (oam_purity.py) needs one weight only, which for a narrow band is computed in
closed form (charge_weight.py). Here the whole spectrum is taken: the field is interpolated
on rings about the axis (cubic splines,
``scipy.ndimage.map_coordinates``), the angular integral is an FFT along each ring
(``scipy.fft``) and the radial one Simpson's rule
(``scipy.integrate.simpson``) from the axis outwards. φ is measured from
+x towards +y, so exp(+i l φ) has charge +l.

Speed: a field past an iris is band-limited far below its sampling (at the 4f example's
camera, about 1/25 of the Nyquist frequency). Such a field is first resampled without loss
onto a grid 2, 4, 8... times coarser by cropping its spectrum (Whittaker–Shannon: a field
band-limited below the new Nyquist frequency is fully given by the coarser samples), keeping
every frequency that carries more than 1e-6 of the power and eight samples per period of the
highest of them, so that the cubic splines work on a well-oversampled field; and the rings
and angular samples follow that highest frequency rather than the pitch
(tests/plugins/test_overlap_metrics.py checks the result against the full-grid one).
"""

from __future__ import annotations

import math

import numpy as np
import scipy.fft
import scipy.integrate
import scipy.ndimage

from benchcheck.metrics import MetricUnavailable
from benchcheck.thread_pools import fft_workers
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

from benchcheck_plugins.inputs import double_values
from benchcheck_plugins.spectral_band import power_by_column, reach_index

__all__ = ["SOURCE", "outer_radius", "spiral_spectrum"]

SOURCE = "spiral spectrum weight C_l/ΣC_m, Torner, Torres and Carrasco, Opt. Express 13, 873 (2005)"

# Fewest rings across the beam and angular samples per ring: below these the spectrum is
# not resolved at all.
_MIN_RINGS = 8
_MIN_ANGLES = 64
# At most this many rings and angular samples: the radial weight integrand is smooth, so
# Simpson's rule on 256 rings is exact far below 1e-6 for beams spanning the rings; and 1024
# angular samples resolve charges up to ±511, far beyond what a shaped beam carries (a
# displaced beam's spiral spectrum falls off within a few charges of the intended one).
# Without the caps a 1024² field takes ~1 s; with them ~0.1 s.
_MAX_RINGS = 256
_MAX_ANGLES = 1024
# Light beyond the radius holding all but this fraction of the power (about the axis) is
# left out of the rings: it changes no weight by more than this, and it saves sampling
# empty window.
_NEGLIGIBLE_POWER = 1e-10
# Samples kept around the rings' reach when cropping: the cubic spline's prefilter couples
# samples with a weight falling as 0.268^n, so 12 samples make the crop's edge invisible
# (0.268^12 ≈ 1e-7).
_CROP_MARGIN = 12
# Samples per period of the highest frequency kept (the band itself: spectral_band.py).
_SAMPLES_PER_PERIOD = 8


def _band_limited(field: Field) -> tuple[np.ndarray, Grid, float]:
    """The field's values (complex128) on the coarsest grid that holds them without loss, and
    the highest spatial frequency (1/m, about zero frequency) that carries power.

    The grid is 2^j times the pitch, same centre; its spectrum is the field's, cropped to a
    central band outside which, per axis, less than half of ``DROPPED_SPECTRAL_POWER`` of the
    power lies, and the band's highest frequency gets ``_SAMPLES_PER_PERIOD`` samples a period.
    The x transform runs over every row; the y transform only over the columns of the x band
    kept (the others hold less than half the dropped share, by Parseval along y).
    """
    grid = field.grid
    # in the field's own precision
    along_rows = scipy.fft.fft(field.values, axis=1, workers=fft_workers(field.values.nbytes))
    x_factor, x_reach, x_band = _band(power_by_column(along_rows), grid.nx)
    kept = along_rows[:, x_band] if x_band is not None else along_rows
    spectrum = scipy.fft.fft(kept, axis=0, workers=fft_workers(kept.nbytes), overwrite_x=x_band is not None)
    y_factor, y_reach, y_band = _band(power_by_column(spectrum.T), grid.ny)
    highest = float(np.hypot(x_reach / (grid.nx * grid.pitch[0]), y_reach / (grid.ny * grid.pitch[1])))
    if x_band is None and y_band is None:
        return np.asarray(field.values, dtype=np.complex128), grid, highest
    band = (spectrum if y_band is None else spectrum[y_band]).astype(np.complex128)
    coarse = scipy.fft.ifft2(band, workers=fft_workers(band.nbytes))
    coarse *= band.shape[0] * band.shape[1] / (grid.nx * grid.ny)
    coarse_grid = Grid(band.shape, (grid.pitch[0] * x_factor, grid.pitch[1] * y_factor), grid.center)
    return coarse, coarse_grid, highest


def _band(power: np.ndarray, n: int):
    """(decimation factor, highest frequency index carrying power, indices of the kept band
    in natural FFT order or None when nothing is dropped) for one axis's power spectrum."""
    reach = reach_index(power, n)
    factor = 1
    while n % (2 * factor) == 0 and n // (2 * factor) >= _SAMPLES_PER_PERIOD * max(reach, 1):
        factor *= 2
    if factor == 1:
        return 1, reach, None
    kept = n // factor
    # frequencies 0..kept/2−1, then −kept/2..−1: the natural FFT order of the smaller band
    return factor, reach, np.concatenate([np.arange(kept // 2), np.arange(n - (kept - kept // 2), n)])


def _lit_radius(intensity: np.ndarray, mesh, axis, outer: float, pitch: float) -> float:
    """Radius about ``axis`` (at most ``outer``) holding all but a negligible share of power."""
    x, y = mesh
    distance = np.sqrt((x - axis[0]) ** 2 + (y - axis[1]) ** 2)
    inside = distance <= outer
    shells = np.bincount((distance[inside] / pitch).astype(np.int64), weights=intensity[inside])
    enclosed = np.cumsum(shells)
    if not enclosed[-1] > 0:
        raise MetricUnavailable("the field carries no power within the rings about the axis")
    last_lit = int(np.searchsorted(enclosed, (1 - _NEGLIGIBLE_POWER) * enclosed[-1]))
    # Two shells more than the last lit one, and never fewer than the minimum ring count.
    return min(outer, max((last_lit + 2) * pitch, _MIN_RINGS * pitch))


def outer_radius(grid: Grid, axis, radius: float | None) -> float:
    """The disc's radius: ``radius`` or, where None or larger, the largest circle about the
    axis that stays in the window; ``MetricUnavailable`` when that is under the fewest rings."""
    x, y = grid.x, grid.y
    inside = min(axis[0] - x[0], x[-1] - axis[0], axis[1] - y[0], y[-1] - axis[1])
    outer = inside if radius is None else min(radius, inside)
    if not outer >= _MIN_RINGS * min(grid.pitch):
        raise MetricUnavailable(
            f"the axis ({axis[0]:.4g}, {axis[1]:.4g}) m is outside the field window or within "
            f"{_MIN_RINGS} samples of its edge"
        )
    return outer


def spiral_spectrum(
    field: Field, axis: tuple[float, float], radius: float | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Spiral spectrum (OAM charge weights) of a field about an axis.

    Parameters
    ----------
    field : Field
        Sampled field.
    axis : tuple of float
        Axis position (x, y) in metres, in the grid's frame.
    radius : float or None
        Outer radius of the rings (m). None: the largest circle about the axis that stays in
        the window. Power outside it is not counted. The rings also stop two samples past
        the radius that holds all but 1e-10 of that power.

    Returns
    -------
    charges : numpy.ndarray of int
        Charges l, from −N/2 to N/2 − 1 (N angular samples).
    weights : numpy.ndarray of float
        C_l / Σ C_m for each charge (sum 1).

    Raises
    ------
    MetricUnavailable
        If the axis is outside the window or the rings cannot be sampled.
    """
    fine = field.grid
    outer = outer_radius(fine, axis, radius)
    values, grid, highest = _band_limited(field)
    pitch_x, pitch_y = grid.pitch
    pitch = min(pitch_x, pitch_y)
    x, y = grid.x, grid.y
    outer = min(outer, axis[0] - x[0], x[-1] - axis[0], axis[1] - y[0], y[-1] - axis[1])
    if not outer >= _MIN_RINGS * pitch:
        values, grid = double_values(field), fine  # too few coarse samples about the axis
        pitch_x, pitch_y = grid.pitch
        pitch = min(pitch_x, pitch_y)
        x, y = grid.x, grid.y
    intensity = values.real**2 + values.imag**2
    outer = _lit_radius(intensity, grid.mesh(), axis, outer, pitch)
    # One ring per sample pitch, and one angular sample per pitch of the outer circumference:
    # a field sampled at pitch p holds angular orders up to |l| ≈ π r / p at radius r, so
    # 2π r / p samples per ring resolve them (Nyquist).
    fine_pitch = min(fine.pitch)
    ring_count = min(int(math.ceil(outer / fine_pitch)), _MAX_RINGS)
    angle_count = min(max(_MIN_ANGLES, int(math.ceil(2 * math.pi * outer / fine_pitch))), _MAX_ANGLES)
    # Fewer where the light is smooth: a plane wave of frequency f is Σ iˡ J_l(2π f r) e^{ilφ}
    # (Jacobi–Anger), and J_l(z) is negligible past l = z + 10 z^(1/3) (its transition region
    # is a few z^(1/3) wide; the factor 10 is a margin, from memory), so light up to
    # ``highest`` carries no charge beyond that at r <= outer; the angular samples must
    # exceed twice it (no aliasing). Radially, eight rings per period of the highest
    # frequency of |a_l(r)|² (twice ``highest``): on the 4f example's camera fields the
    # weights stayed within 5e-7 of the full-grid, full-ring computation.
    reach = 2 * math.pi * outer * highest
    charges_present = reach + 10 * reach ** (1 / 3) + 8
    angle_count = scipy.fft.next_fast_len(int(min(angle_count, max(_MIN_ANGLES, 2 * charges_present + 2))))
    ring_count = min(ring_count, max(_MIN_RINGS, int(math.ceil(16 * outer * highest))))
    radii = np.linspace(0.0, outer, ring_count + 1)  # from the axis: l = 0 has light there
    angles = 2 * math.pi * np.arange(angle_count) / angle_count
    ring_x = axis[0] + radii[:, np.newaxis] * np.cos(angles)
    ring_y = axis[1] + radii[:, np.newaxis] * np.sin(angles)
    # Interpolate from a crop around the rings only (the spline prefilter costs per sample);
    # the margin keeps the crop's edge out of reach of the spline's boundary handling.
    first_col = max(0, int(math.floor((axis[0] - outer - x[0]) / pitch_x)) - _CROP_MARGIN)
    last_col = min(grid.nx, int(math.ceil((axis[0] + outer - x[0]) / pitch_x)) + _CROP_MARGIN + 1)
    first_row = max(0, int(math.floor((axis[1] - outer - y[0]) / pitch_y)) - _CROP_MARGIN)
    last_row = min(grid.ny, int(math.ceil((axis[1] + outer - y[0]) / pitch_y)) + _CROP_MARGIN + 1)
    crop = values[first_row:last_row, first_col:last_col]
    # Fractional array indices into the crop: sample k sits at x[first_col] + k * pitch.
    coordinates = np.stack([(ring_y - y[first_row]) / pitch_y, (ring_x - x[first_col]) / pitch_x])
    on_rings = scipy.ndimage.map_coordinates(crop, coordinates, order=3, mode="nearest")
    # a_l(r) for each ring
    harmonics = scipy.fft.fft(on_rings, axis=1, workers=fft_workers(on_rings.nbytes)) / angle_count
    ring_power = harmonics.real**2 + harmonics.imag**2
    weights = scipy.integrate.simpson(ring_power * radii[:, np.newaxis], x=radii, axis=0)
    total = weights.sum()
    if not total > 0:
        raise MetricUnavailable("the field carries no power within the rings about the axis")
    charges = np.rint(scipy.fft.fftfreq(angle_count, 1.0 / angle_count)).astype(int)
    order = np.argsort(charges)
    return charges[order], weights[order] / total
