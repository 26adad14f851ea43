"""The weight of one OAM charge in a band-limited field, in closed form (no rings).

A sampled field is the trigonometric polynomial of its discrete spectrum. Keeping the band
that carries power (spectral_band.py) and writing each frequency f about the axis x₀,

    E(x₀ + u) = Σ_k T_k exp(2πi f_k·u),   T_k = S_k exp(2πi f_k·(x₀ − x_first)) / (Nx Ny),

the Jacobi–Anger expansion exp(iρ r cos(φ − θ)) = Σ_l iˡ J_l(ρ r) exp(il(φ − θ)) gives the
angular harmonic of charge l (Torner, Torres and Carrasco, Opt. Express 13, 873 (2005),
for the spiral spectrum itself)

    a_l(r) = iˡ Σ_g c_g J_l(ρ_g r),   c_g = Σ_{k: ρ_k = ρ_g} T_k exp(−il θ_k),   ρ = 2π|f|,

so C_l = ∫₀ᴿ |a_l|² r dr = Σ_{g,h} c_g c̄_h ∫₀ᴿ J_l(ρ_g r) J_l(ρ_h r) r dr, each integral by
Lommel's formula (Watson, A Treatise on the Theory of Bessel Functions (1944), §5.11; NIST
DLMF §10.22(ii); both from memory, checked against quadrature in the tests):

    a ≠ b:  R [a J_{l+1}(aR) J_l(bR) − b J_l(aR) J_{l+1}(bR)] / (a² − b²)
    a = b:  (R²/2) [J_l(aR)² − J_{l−1}(aR) J_{l+1}(aR)].

The power in the disc, 2π Σ_m C_m, is Σ_{k,k'} T_k T̄_{k'} D(|f_k − f_{k'}|) with the disc's
own transform D(q) = R J₁(2π q R) / q, D(0) = πR² (the Airy integral), summed over the
lags of the band's autocorrelation. Both are exact for the band kept, which leaves out at
most 1e-6 of the power (the ring computation's share) and, on smooth spectra, far less.
On a square window the frequencies form a square lattice, f = step·(i, j): radii are then
grouped exactly by the integer k = i² + j², the Cauchy sums of Lommel's matrix become one
convolution over k, and D is taken once per distinct lag radius. The cost is two 1-D
transforms of the field and a few hundred Bessel values, against ~10⁵ spline-interpolated
ring points (on the 4f example's camera at 512: about 3 ms against 35 ms).
J_{−n} = (−1)ⁿ J_n, so a negative charge uses |l| in the integrals.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.fft
import scipy.special
from numpy.lib.stride_tricks import as_strided

from benchcheck.metrics import MetricUnavailable
from benchcheck.thread_pools import fft_workers
from benchcheck.wave.field import Field, RowTransformField
from benchcheck.wave.grid import Grid

from benchcheck_plugins.spectral_band import power_by_column, power_by_row, reach_index, reach_within

__all__ = ["FieldBand", "field_band", "band_centroid", "charge_weight"]

# Frequencies (kept band) beyond which the closed form costs more than the rings: the
# Lommel matrix grows as the square of the distinct radii among them.
_MAX_FREQUENCIES = 8192
# Columns either side of zero frequency whose powers are formed first when the x cut is
# found from a field's held lines: the 4f example's cuts lie at 19-35 (256 to 1024 samples).
_NEAR_COLUMNS = 64
# How much farther than each axis's own cut the box reaches, so that the disc fits in it:
# 1.25 first (a Gaussian spectrum's disc needs 1.07); where stray light keeps even the box's
# corners above _DISC_DROP (0.7 % of the 4f example's trials at 1024, whose first order
# arrives tilted by 32 mrad), farther, until the box would outgrow the window (then the rings).
_BOX_MARGINS = (1.25, 1.5, 2.0, 3.0)
_BOX_TOO_SMALL = object()
# Share of the power the disc may leave out of the box. A cut that is not round mixes
# charges: on a pure vortex, 1 − weight came out about 0.12 times the share left out. And
# where the disc of the weights cuts through the beam, the part left out no longer stays
# orthogonal to the rest, so a weight moves by about the square root of its share (1e-9 left
# out: 1.1e-6; 1e-12: 3e-8, on an LG mode cut at 1.5 waists). So the disc is cut far below
# the band's own share, which costs a few more frequencies only (a fifth more on that mode).
_DISC_DROP = 1e-12
# The Cauchy kernel of the lattice sums reaches out to a multiple of this (in i² + j²), so
# that trials whose bands differ a little share it (a few percent longer transforms).
_KERNEL_CLASS = 256
# The autocorrelation of the band is padded to a multiple of this on each axis (then a fast
# length), so that trials whose bands differ a little share its lag tables.
_LAG_CLASS = 32
# Radii |f| closer than this (relative to the largest) are one radius: merging them moves a
# Bessel value by at most this times ρR (≲ 10³ here), 1e-6 at worst, and it keeps the a ≠ b
# formula away from near-equal radii, where its cancellation would lose ~log10(1/this) digits.
_SAME_RADIUS = 1e-9


@dataclass(frozen=True)
class FieldBand:
    """A field's band: ``box`` holds S / (Nx Ny) on rows −ry..ry and columns −rx..rx (zero
    outside ``disc``), at frequencies ``fx``, ``fy`` (1/m), for the field on ``grid``."""

    box: np.ndarray
    fx: np.ndarray
    fy: np.ndarray
    disc: np.ndarray
    grid: Grid

    @cached_property
    def autocorrelation(self) -> np.ndarray:
        """A[q] = Σ_k box[k + q] conj(box[k]) at the lags q = (rows in natural FFT order,
        columns 0 .. L/2), half of them: the others are A(−q) = conj A(q). Wiener–Khinchin:
        the inverse transform of |transform|² of the box zero-padded to L ≥ 2n − 1 a side (no
        lag wraps round), rounded up to a class shared between trials (``_LAG_CLASS``); that
        power is real, so its inverse transform is conj(rfft2) / L², half the transform. The
        centroid reads the axes, the disc's power all of it."""
        shape = tuple(scipy.fft.next_fast_len(-(-(2 * size - 1) // _LAG_CLASS) * _LAG_CLASS)
                      for size in self.box.shape)
        workers = fft_workers(self.box.itemsize * shape[0] * shape[1])  # by the padded size
        # zero-padded along y on the box's columns only, then along x over contiguous rows
        padded = scipy.fft.fft(scipy.fft.fft(self.box, n=shape[0], axis=0, workers=workers), n=shape[1], axis=1,
                               overwrite_x=True, workers=workers)
        half = scipy.fft.rfft2(padded.real**2 + padded.imag**2, workers=workers)
        np.conjugate(half, out=half)
        half *= 1.0 / (shape[0] * shape[1])  # a real factor: numpy divides complex by complex
        return half


def field_band(field: Field, slopes: tuple[float, float] = (0.0, 0.0)) -> FieldBand | None:
    """The band of ``field`` times exp(−ik(sx x + sy y)) (a beam along a tilted axis with this
    linear phase taken out), or None where it is too wide for the closed form.

    The band is a disc about zero frequency: what a round cut leaves out mixes charges about
    any axis far less than a square one (on a lattice a disc is only nearly round). The box
    it is cut from reaches ``_BOX_MARGINS[0]`` times as far as each axis's cut at half of
    ``DROPPED_SPECTRAL_POWER``, farther where the disc does not fit in it, and the disc
    leaves out at most ``_DISC_DROP`` of the power. The y ramp is applied after the x
    transform, on the kept columns only (a factor per row passes through a transform along
    the rows). A field that holds its rows as the transform of a few columns
    (``RowTransformField``) is never made: its x transform comes from those columns
    (``_row_transform_spectrum``).
    """
    grid = field.grid
    wavenumber = 2 * math.pi / field.wavelength
    if isinstance(field, RowTransformField):  # held as the few columns its rows transform
        total, cut_x, columns_of = _row_transform_spectrum(field, wavenumber * slopes[0])
    else:
        if slopes[0]:
            along_rows = field.values * np.exp(-1j * wavenumber * slopes[0] * grid.x).astype(field.values.dtype)
            along_rows = scipy.fft.fft(along_rows, axis=1, overwrite_x=True, workers=fft_workers(along_rows.nbytes))
        else:
            along_rows = scipy.fft.fft(field.values, axis=1, workers=fft_workers(field.values.nbytes))
        column_power = power_by_column(along_rows)
        total, cut_x = float(column_power.sum()), reach_index(column_power, grid.nx)

        def columns_of(indices: np.ndarray) -> np.ndarray:
            return along_rows[:, indices]
    if not total > 0:
        raise MetricUnavailable("the field carries no power in the window")
    for margin in _BOX_MARGINS:
        band = _band_in_box(columns_of, math.ceil(margin * cut_x), margin, wavenumber * slopes[1], total, grid)
        if band is not _BOX_TOO_SMALL:
            return band
    return None


def _band_in_box(columns_of, reach_x: int, margin: float, wavenumber_slope_y: float, total: float, grid: Grid):
    """``field_band``'s disc, cut from the box of columns −reach_x..reach_x and rows out to
    ``margin`` times the y cut, from the x transform's columns (``columns_of``); None where
    the box would not fit in the window or the disc holds too many frequencies;
    ``_BOX_TOO_SMALL`` where even the box's outermost frequencies carry more than
    ``_DISC_DROP`` of the power (``total``: Σ|x transform|²)."""
    if 2 * reach_x + 1 > grid.nx:
        return None
    kept = columns_of(np.arange(-reach_x, reach_x + 1) % grid.nx)
    if wavenumber_slope_y:
        kept *= np.exp(-1j * wavenumber_slope_y * grid.y).astype(kept.dtype)[:, np.newaxis]
    spectrum = scipy.fft.fft(kept, axis=0, overwrite_x=True, workers=fft_workers(kept.nbytes))
    reach_y = math.ceil(margin * reach_index(power_by_row(spectrum), grid.ny))
    if 2 * reach_y + 1 > grid.ny:
        return None
    box = spectrum[np.arange(-reach_y, reach_y + 1) % grid.ny].astype(np.complex128)
    box *= 1.0 / (grid.nx * grid.ny)
    width, height = grid.nx * grid.pitch[0], grid.ny * grid.pitch[1]
    fx, fy = np.arange(-reach_x, reach_x + 1) / width, np.arange(-reach_y, reach_y + 1) / height
    power = box.real**2 + box.imag**2
    share = total / (grid.nx**2 * grid.ny)  # Σ|S / (Nx Ny)|² over the whole spectrum
    if _common_step((1 / width, 1 / height)) is not None:  # radii grouped by the integer i² + j²
        radius = _square_lattice(reach_x, reach_y)[0]
        by_radius = np.bincount(radius.ravel(), weights=power.ravel())  # power at each i² + j²
        radii = np.arange(by_radius.size)
    else:  # one sample a group, in order of |f|
        radius = np.hypot(fx[np.newaxis, :], fy[:, np.newaxis])
        order = np.argsort(radius.ravel(), kind="stable")
        by_radius, radii = power.ravel()[order], radius.ravel()[order]
    if power[-1, -1] / share >= _DISC_DROP:  # not even the box's outermost frequency (a corner)
        return _BOX_TOO_SMALL
    tail = np.cumsum(by_radius[::-1]) / share  # power beyond each radius and at it, outermost first
    kept = np.flatnonzero(tail >= _DISC_DROP)  # radii that may not be dropped
    disc = radius <= (radii[-1 - kept[0]] if kept.size else 0)
    if np.count_nonzero(disc) > _MAX_FREQUENCIES:
        return None
    box[~disc] = 0
    return FieldBand(box, fx, fy, disc, grid)


def _square_lattice(reach_x: int, reach_y: int) -> tuple[np.ndarray, np.ndarray]:
    """(i² + j², azimuth atan2(j, i)) at the frequency steps (i, j), |i| ≤ reach_x and
    |j| ≤ reach_y, of a square lattice: read-only views into one lattice per size class,
    the same for every trial (a trial's reaches vary a little, its lattice's class not)."""
    size = _lattice_size(max(reach_x, reach_y))
    keys, azimuth = _square_lattice_of(size)
    rows, columns = slice(size - reach_y, size + reach_y + 1), slice(size - reach_x, size + reach_x + 1)
    return keys[rows, columns], azimuth[rows, columns]


def _square_turn(reach_x: int, reach_y: int, charge: int) -> np.ndarray:
    """exp(−i charge θ) at the frequencies of ``_square_lattice`` (a read-only view)."""
    size = _lattice_size(max(reach_x, reach_y))
    return _square_turn_of(size, charge)[size - reach_y:size + reach_y + 1, size - reach_x:size + reach_x + 1]


def _lattice_size(reach: int) -> int:
    return 1 << max(reach, 1).bit_length()  # the next power of two above the reach


@functools.lru_cache(maxsize=8)
def _square_lattice_of(size: int) -> tuple[np.ndarray, np.ndarray]:
    steps = np.arange(-size, size + 1)
    keys = np.add.outer(steps**2, steps**2)
    azimuth = np.arctan2(steps[:, np.newaxis].astype(np.float64), steps[np.newaxis, :].astype(np.float64))
    for array in (keys, azimuth):
        array.flags.writeable = False
    return keys, azimuth


@functools.lru_cache(maxsize=8)
def _square_turn_of(size: int, charge: int) -> np.ndarray:
    turn = np.exp(-1j * charge * _square_lattice_of(size)[1])
    turn.flags.writeable = False
    return turn


def _row_transform_spectrum(field: RowTransformField, wavenumber_slope: float):
    """(Σ over rows and columns of |A|², the x cut ``reach_index`` gives for A's column
    powers, a function giving A's columns) for A, the transform along x of the field times
    exp(−i k sx x), from the field's held lines g alone.

    Each row is c(m) Σ_j g[j] w^(s (f + j) m) with c = factor × the ramp, w = exp(−2πi/N), so
    its transform is A[q] = Σ_j g[j] Ĉ[q + s (f + j)] (indices modulo N), Ĉ = FFT(c): one
    transform of length N, and a matrix product with the held columns (in their precision,
    that of the window's transform). The column powers are the quadratic forms
    Σ H[q, j] M[j, j'] conj(H[q, j']) with M = gᵀ ḡ (the held columns' Gram matrix in double
    precision, ``RowTransformField.gram``: far columns carry 1e-7 of the power, which
    single-precision sums of the form would blur) and H[q, j] = Ĉ[q + s (f + j)], a Hankel
    matrix (a strided view of Ĉ): a product with M, never the N x N spectrum. Their sum over
    all columns is Σ M[j, j'] R[s (j' − j)] with R[d] = Σ_p Ĉ[p] conj(Ĉ[p + d]) = N Σ_m |c(m)|²
    exp(2πi d m / N) (Wiener–Khinchin), so only the columns out to the cut are formed
    (``_NEAR_COLUMNS`` first, twice as many while more than the dropped share lies beyond)."""
    grid = field.grid
    n, held = grid.nx, field.lines.shape[1]
    chirp = field.factor.astype(np.complex128)
    if wavenumber_slope:
        chirp = chirp * np.exp(-1j * wavenumber_slope * grid.x)
    spectrum = scipy.fft.fft(chirp, workers=1)
    # hankel[q, j] = Ĉ[q + f + j] for s = +1; for s = −1 the same view reversed along j
    offset = (field.first if field.sign > 0 else -(field.first + held - 1)) % n
    doubled = np.concatenate((spectrum, spectrum))[offset:]  # cyclic
    hankel = as_strided(doubled, shape=(n, held), strides=(doubled.strides[0],) * 2, writeable=False)
    if field.sign < 0:
        hankel = hankel[:, ::-1]
    gram = field.gram
    # Σ_q H[q, j] conj(H[q, j']) = R[s (j' − j)]: R = N conj(FFT(|c|²)), |c|² real
    correlation = n * np.conjugate(scipy.fft.fft(chirp.real**2 + chirp.imag**2, workers=1))
    steps = np.arange(held)
    total = float(np.sum(gram * correlation[(field.sign * (steps - steps[:, np.newaxis])) % n]).real)

    def column_power(indices: np.ndarray) -> np.ndarray:
        # the rows picked are a copy, which BLAS can read (not the view's overlapping rows);
        # Re Σ_j (H M)[q, j] conj(H[q, j]): the real and imaginary parts side by side, one pass
        rows = hankel[indices]
        return np.einsum("qj,qj->q", (rows @ gram).view(np.float64), rows.view(np.float64))

    reach = _NEAR_COLUMNS
    while 2 * reach + 1 < n and total > 0:
        near = column_power(np.r_[0:reach + 1, n - reach:n])  # q = 0..reach, then −reach..−1
        by_reach = np.concatenate(([near[0]], near[1:reach + 1] + near[:reach:-1]))
        cut = reach_within(by_reach, total)
        if cut is not None:
            break
        reach *= 2
    else:  # the whole row (or a dark field: reach_index gives 0)
        cut = reach_index(column_power(np.arange(n)), n)

    def columns_of(indices: np.ndarray) -> np.ndarray:
        return field.lines @ hankel[indices].T.astype(field.lines.dtype)

    return total, cut, columns_of


def band_centroid(band: FieldBand) -> tuple[float, float]:
    """The centroid Σ x |E|² / Σ |E|² over the grid's samples, from the band alone.

    Along x, the column sums M(x_n) = Σ_j |E(y_j, x_n)|² are Ny Σ_q R[q] exp(2πi q n / Nx),
    R the autocorrelation of the box along its columns summed over its rows (Parseval along
    y: the band's autocorrelation on its x axis of lags), and Σ_n n w^n = N / (w − 1) for
    w = exp(2πi q / N) ≠ 1 (the derivative of the geometric series, w^N = 1), so the
    centroid is x₀ + p (N − 1)/2 + (p / R[0]) Σ_{q≠0} R[q] / (w_q − 1); the same along y.
    """
    grid = band.grid
    lags = band.autocorrelation
    centroid = []
    for correlation, (n, pitch, first, size) in ((lags[0, :], (grid.nx, grid.pitch[0], grid.x[0], band.fx.size)),
                                                 (lags[:, 0], (grid.ny, grid.pitch[1], grid.y[0], band.fy.size))):
        # R[−q] / (w_−q − 1) is the conjugate of R[q] / (w_q − 1): twice the real part over q > 0
        lag = np.arange(1, size)
        moment = 2 * np.sum(correlation[1:size] / (np.exp(2j * math.pi * lag / n) - 1.0)).real
        centroid.append(first + pitch * (n - 1) / 2 + pitch * moment / correlation[0].real)
    return float(centroid[0]), float(centroid[1])


def _radial_groups(radius: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(group index of each radius, the groups' radii): equal radii, within _SAME_RADIUS."""
    order = np.argsort(radius, kind="stable")
    ordered = radius[order]
    starts = np.diff(ordered) > _SAME_RADIUS * max(ordered[-1], 1e-300)
    group_of_ordered = np.concatenate([[0], np.cumsum(starts)])
    groups = np.empty_like(group_of_ordered)
    groups[order] = group_of_ordered
    counts = np.bincount(groups)
    return groups, np.bincount(groups, weights=radius) / counts


def _bessel(order: int, z: np.ndarray) -> np.ndarray:
    """J_order(z): scipy.special.j0 and j1 for orders 0 and ±1 (a tenth of the time of the
    general jv, same double precision), jv otherwise."""
    if order == 0:
        return scipy.special.j0(z)
    if abs(order) == 1:
        return order * scipy.special.j1(z)  # J_{−1} = −J_1
    return scipy.special.jv(order, z)


def _bessel_neighbours(order: int, z: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(J_{n−1}, J_n, J_{n+1})(z) for n = ``order`` ≥ 0. For n = 1, J₂ = 2 J₁/z − J₀ (the
    recurrence J_{ν−1} + J_{ν+1} = (2ν/z) J_ν, NIST DLMF 10.6.1, from memory; checked against
    jv in the tests, within 2e-15) where z ≥ 2: upward from past the order it loses no
    digits, and it costs an eighth of jv, which the rest still takes."""
    if order != 1:
        return _bessel(order - 1, z), _bessel(order, z), _bessel(order + 1, z)
    j0, j1 = scipy.special.j0(z), scipy.special.j1(z)
    j2 = np.empty_like(j1)
    far = z >= 2.0
    j2[far] = 2 * j1[far] / z[far] - j0[far]
    j2[~far] = scipy.special.jv(2, z[~far])
    return j0, j1, j2


def _charge_power(coefficients: np.ndarray, rho: np.ndarray, order: int, outer: float) -> float:
    """C = Σ_{g,h} c̄_g c_h ∫₀ᴿ J_n(ρ_g r) J_n(ρ_h r) r dr over distinct radii ρ (n = |order|).

    Off the diagonal Lommel's numerator is p_g s_h − s_g p_h (p = ρ J_{n+1}(ρR), s = J_n(ρR))
    over ρ_g² − ρ_h², so the matrix is applied as one Cauchy matrix 1/(ρ_g² − ρ_h²) times
    two vectors."""

    def cauchy_sums(vectors: np.ndarray) -> np.ndarray:
        cauchy = np.subtract.outer(rho * rho, rho * rho)
        np.fill_diagonal(cauchy, np.inf)  # 1/∞ = 0: the diagonal is added by the caller
        np.reciprocal(cauchy, out=cauchy)
        # as real products (no complex copy of the matrix)
        return (cauchy @ vectors.view(np.float64)).view(np.complex128)

    return _lommel_form(coefficients, rho, order, outer, cauchy_sums)


def _charge_power_on_lattice(coefficients: np.ndarray, keys: np.ndarray, step: float, order: int,
                             outer: float) -> float:
    """``_charge_power`` for radii ρ = 2π step √k on a square frequency lattice (k = i² + j²,
    distinct integers ``keys``): ρ_g² − ρ_h² = (2π step)² (k_g − k_h), so the Cauchy sums are
    one convolution of the vectors, laid out by k, with 1/d: about K log K operations for
    keys up to K, not the square of their number. The differences d = k_g − k_h lie in
    [−K, K]; with the kernel taken out to S ≥ K (K rounded up to ``_KERNEL_CLASS``) a cyclic
    convolution (scipy.fft) of length 2S + 1 or more wraps none of them onto another."""
    rho = 2 * math.pi * step * np.sqrt(keys)
    span = -(-int(keys[-1]) // _KERNEL_CLASS) * _KERNEL_CLASS  # the same kernel for nearby trials
    length, kernel = _cauchy_kernel(span)

    def cauchy_sums(vectors: np.ndarray) -> np.ndarray:
        laid_out = np.zeros((vectors.shape[1], length), np.complex128)
        laid_out[:, keys] = vectors.T
        workers = fft_workers(laid_out.nbytes)
        convolved = scipy.fft.ifft(scipy.fft.fft(laid_out, axis=1, overwrite_x=True, workers=workers) * kernel,
                                   axis=1, overwrite_x=True, workers=workers)
        return convolved[:, keys + span].T * (1.0 / (2 * math.pi * step) ** 2)

    return _lommel_form(coefficients, rho, order, outer, cauchy_sums)


@functools.lru_cache(maxsize=64)
def _cauchy_kernel(span: int) -> tuple[int, np.ndarray]:
    """(length, the transform of 1/d for d = −span..span at index d + span, 1/0 read as 0):
    the convolution kernel of ``_charge_power_on_lattice`` for keys up to ``span``
    (read-only, shared between trials)."""
    length = scipy.fft.next_fast_len(2 * span + 1)
    difference = np.arange(-span, span + 1, dtype=np.float64)
    difference[span] = np.inf  # 1/∞ = 0: the diagonal is added by the caller
    kernel = scipy.fft.fft(1.0 / difference, length, workers=1)
    kernel.flags.writeable = False
    return length, kernel


def _lommel_form(coefficients: np.ndarray, rho: np.ndarray, order: int, outer: float, cauchy_sums) -> float:
    """c̄ᵀ L c for Lommel's matrix L at radii ``rho``; ``cauchy_sums(V)`` gives
    Σ_h V[h] / (ρ_g² − ρ_h²) over h ≠ g for each column of V."""
    j_before, s, j_next = _bessel_neighbours(abs(order), rho * outer)
    p = rho * j_next
    sums = cauchy_sums(np.stack([s * coefficients, p * coefficients], axis=1))
    applied = outer * (p * sums[:, 0] - s * sums[:, 1])
    diagonal = 0.5 * outer**2 * (s * s - j_before * j_next)
    applied += diagonal * coefficients
    return float(np.real(np.vdot(coefficients, applied)))


def _common_step(steps: tuple[float, float]) -> float | None:
    """The frequency step of a square lattice (equal steps along x and y), else None."""
    return steps[0] if abs(steps[0] - steps[1]) <= 1e-12 * max(steps) else None


@functools.lru_cache(maxsize=64)
def _lag_lattice(shape: tuple[int, int]):
    """(lag rows, lag columns as floats, the half-plane of lags counted twice, i² + j²) for
    ``FieldBand.autocorrelation``'s half of the lags, of ``shape``: rows in natural FFT order,
    columns from 0 (read-only, shared between trials)."""
    iy = scipy.fft.fftfreq(shape[0], 1.0 / shape[0])[:, np.newaxis]
    ix = np.arange(shape[1], dtype=np.float64)[np.newaxis, :]
    # A(−q) = conj A(q) and D is even: one half-plane of lags, counted twice
    half = (ix > 0) | ((ix == 0) & (iy > 0))
    keys = (iy * iy + ix * ix).astype(np.int64)
    for array in (iy, ix, half, keys):
        array.flags.writeable = False
    return iy, ix, half, keys


@functools.lru_cache(maxsize=16)
def _lags_by_key(shape: tuple[int, int]):
    """(flat indices of the half-plane lags in order of i² + j², their rows and columns,
    those i² + j², the index of each among the distinct values, the distinct values) for an
    autocorrelation of ``shape`` on a square lattice (``_lag_lattice``'s half-plane); the
    lags out to a radius are a prefix (read-only, shared). Within one i² + j² the lags keep
    their flat order, so the sums over them are those of a bincount over the whole array."""
    _, _, half, keys = _lag_lattice(shape)
    flat = np.flatnonzero(half)
    order = flat[np.argsort(keys.ravel()[flat], kind="stable")]
    sorted_keys = keys.ravel()[order]
    starts = np.concatenate([[True], sorted_keys[1:] != sorted_keys[:-1]])
    by_key = np.cumsum(starts) - 1
    distinct = sorted_keys[starts]
    rows, columns = np.divmod(order, shape[1])
    for array in (order, rows, columns, sorted_keys, by_key, distinct):
        array.flags.writeable = False
    return order, rows, columns, sorted_keys, by_key, distinct


def _disc_power(band: FieldBand, frequency_step: tuple[float, float], reach: float, outer: float,
                axis: tuple[float, float]) -> float:
    """∫ over the disc of radius R about ``axis`` of |E|²: Σ_q A'_q D(|q|) over the lags q of
    the autocorrelation A' of the band moved to the axis (Wiener–Khinchin), only lags up to
    twice the band's reach (``reach``, 1/m) carrying any. Moving the band by the phase
    exp(2πi f·a) turns A_q into A_q exp(2πi q·a) (a = axis − the window's first sample), so
    the band's own autocorrelation serves every axis; only Re A' is summed (A'(−q) is its
    conjugate and D is even: one half-plane of lags, counted twice). On a square lattice D
    is taken once per distinct |q| (the lags summed by i² + j² first)."""
    lags = band.autocorrelation
    shape = lags.shape
    grid = band.grid
    iy, ix, half, _ = _lag_lattice(shape)
    shift_y = np.exp(2j * math.pi * frequency_step[1] * (axis[1] - grid.y[0]) * iy[:, 0])
    shift_x = np.exp(2j * math.pi * frequency_step[0] * (axis[0] - grid.x[0]) * ix[0])
    step = _common_step(frequency_step)
    if step is not None:  # the phase at the near lags only
        order, rows, columns, sorted_keys, by_key, distinct = _lags_by_key(shape)
        count = int(np.searchsorted(sorted_keys, (2 * reach / step) ** 2 * (1 + 1e-12), side="right"))
        shift = shift_y[rows[:count]] * shift_x[columns[:count]]
        near_lags = np.bincount(by_key[:count], weights=(lags.ravel()[order[:count]] * shift).real)
        q = step * np.sqrt(distinct[:near_lags.size])
    else:
        q_all = np.hypot(ix * frequency_step[0], iy * frequency_step[1])
        near = (q_all <= 2 * reach * (1 + 1e-12)) & half
        q, near_lags = q_all[near], (lags[near] * np.multiply.outer(shift_y, shift_x)[near]).real
    disc = outer * scipy.special.j1(2 * math.pi * q * outer) / q  # D(q); D(0) = πR²
    return float(lags[0, 0].real * math.pi * outer**2 + 2 * (near_lags @ disc))


def charge_weight(band: FieldBand, axis: tuple[float, float], charge: int, outer: float) -> float:
    """C_charge / Σ_m C_m of the field of ``band`` about ``axis`` within the disc of radius
    ``outer`` (m), which must stay inside the window: the weight of the spiral spectrum
    (spiral_spectrum.py) without its ring sampling."""
    grid = band.grid
    box = band.box * np.exp(2j * math.pi * band.fx * (axis[0] - grid.x[0]))[np.newaxis, :]
    box *= np.exp(2j * math.pi * band.fy * (axis[1] - grid.y[0]))[:, np.newaxis]
    reach_x, reach_y = band.fx.size // 2, band.fy.size // 2
    steps = (1.0 / (grid.nx * grid.pitch[0]), 1.0 / (grid.ny * grid.pitch[1]))
    step = _common_step(steps)
    if step is not None:  # radii √(i² + j²) steps: grouped exactly by the integer i² + j²
        turned = box[band.disc] * _square_turn(reach_x, reach_y, charge)[band.disc]
        keys = _square_lattice(reach_x, reach_y)[0][band.disc]
        coefficients = (np.bincount(keys, weights=turned.real) + 1j * np.bincount(keys, weights=turned.imag))
        distinct = np.flatnonzero(np.bincount(keys))
        in_charge = _charge_power_on_lattice(coefficients[distinct], distinct, step, charge, outer)
        reach = step * math.sqrt(distinct[-1])
    else:
        fx_all, fy_all = np.meshgrid(band.fx, band.fy)
        turned = box[band.disc] * np.exp(-1j * charge * np.arctan2(fy_all[band.disc], fx_all[band.disc]))
        rho = 2 * math.pi * np.hypot(fx_all[band.disc], fy_all[band.disc])
        groups, radii = _radial_groups(rho)
        coefficients = (np.bincount(groups, weights=turned.real, minlength=radii.size)
                        + 1j * np.bincount(groups, weights=turned.imag, minlength=radii.size))
        in_charge = _charge_power(coefficients, radii, charge, outer)
        reach = float(rho.max()) / (2 * math.pi)
    total = _disc_power(band, steps, reach, outer, axis)
    if not total > 0:
        raise MetricUnavailable("the field carries no power within the disc about the axis")
    return 2 * math.pi * in_charge / total
