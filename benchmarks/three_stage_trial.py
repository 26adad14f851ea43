"""A hand-written trial of three Fourier stages: the yardstick for the per-trial ratios.

The per-trial target (at most 1.5x the FFT floor) was set beside a trial written by hand:
three Fourier stages with separable chirps, masks and overlap sums, no bookkeeping. This is
such a trial, so that each run of ``trial_speed.py`` measures it beside the Evaluator's,
against the same floor, on the same machine and backend: it tells how much of a trial's
time past the floor any trial pays, and how much is ours.

The bench is a 4f relay with a round iris in its Fourier plane and a Fresnel step to a
camera, all in one window of N x N complex64 samples:

1. modulator -> Fourier plane through lens 1: a lens's Fourier transform (Goodman,
   Introduction to Fourier Optics, ch. 5; the form from memory), the modulator a drawn gap
   error away from the front focal plane (a residual chirp over the output) and the lens
   decentred (a linear phase over the input);
2. the iris, decentred: a round mask, the sum of the two axes' squared distances (float32)
   against its radius squared;
   then Fourier plane -> image plane through lens 2, the same way;
3. image plane -> camera: the one-transform Fresnel integral (Goodman, ch. 4; from memory), the
   camera placed where its sampling equals the image plane's.

Each stage's input and output factors are products of an x and a y vector (the chirps, the
linear phases, and (-1)^m to centre the transform; common practice), applied as two
broadcast products; the factors between two transforms are merged into one vector per axis,
where the centring after one transform and before the next cancel.
Power and overlap with the nominal camera field are np.vdot sums. What no drawn value
touches (the modulator's field, the nominal camera field) is made once. The trial's
numbers are not the 4f example's: only its cost is used.
"""

from __future__ import annotations

import math
import time

import numpy as np
import scipy.fft

__all__ = ["ThreeStageTrial", "three_stage_times"]

_WAVELENGTH = 1.064e-6  # m (an invented bench)
_FOCAL_LENGTH = 0.2  # m, both lenses
_WINDOW = 8.192e-3  # m, the modulator's side, as the 4f example's
# drawn per trial, standard deviations: relative focal length, gap (m), decentres (m)
_FOCAL_SPREAD, _GAP_SPREAD, _DECENTRE_SPREAD = 2e-3, 2e-4, 2e-5


class ThreeStageTrial:
    """The hand-written trial on an N x N window (see the module's docstring)."""

    def __init__(self, grid: int, workers: int = -1):
        self.grid, self.workers = grid, workers
        self.pitch = _WINDOW / grid
        self.steps = np.arange(grid) - grid // 2
        self.centring = np.where(self.steps % 2, -1.0, 1.0).astype(np.float32)
        x = self.steps * self.pitch
        radius_squared = x[np.newaxis, :] ** 2 + x[:, np.newaxis] ** 2
        waist = 0.25 * _WINDOW
        # a Gaussian beam with one turn of phase (charge 1): the field a vortex hologram leaves
        self.source = (np.exp(-radius_squared / waist**2)
                       * np.exp(1j * np.arctan2(x[:, np.newaxis], x[np.newaxis, :]))).astype(np.complex64)
        self.source_power = float(np.vdot(self.source, self.source).real)
        spot = _WAVELENGTH * _FOCAL_LENGTH / (math.pi * waist)  # the Fourier plane's 1/e² radius
        self.iris_radius = 4.0 * spot
        self.target = self._camera_field(np.zeros(10))
        self.target_power = float(np.vdot(self.target, self.target).real)

    def draws(self, count: int, seed: int = 11) -> np.ndarray:
        """Drawn errors, one row per trial: focal lengths (2), gaps (2), lens decentres (4), iris decentre (2)."""
        spreads = np.array([_FOCAL_SPREAD] * 2 + [_GAP_SPREAD] * 2 + [_DECENTRE_SPREAD] * 6)
        return np.random.default_rng(seed).standard_normal((count, 10)) * spreads

    def run(self, errors: np.ndarray) -> tuple[float, float]:
        """(efficiency, mode purity) at the camera for one row of ``draws``."""
        camera = self._camera_field(errors)
        power = float(np.vdot(camera, camera).real)
        overlap = np.vdot(self.target, camera)
        efficiency = power / (self.source_power * float(self.grid) ** 6)  # three unnormalised 2-D transforms
        return efficiency, abs(complex(overlap)) ** 2 / (power * self.target_power)

    def _camera_field(self, errors: np.ndarray) -> np.ndarray:
        n, wavelength = self.grid, _WAVELENGTH
        focal = _FOCAL_LENGTH * (1.0 + errors[0:2])
        gaps = focal + errors[2:4]  # input plane to lens
        lens_decentre, iris_decentre = errors[4:8].reshape(2, 2), errors[8:10]
        pitches = [self.pitch, wavelength * focal[0] / (n * self.pitch)]
        pitches.append(wavelength * focal[1] / (n * pitches[1]))
        fresnel_distance = n * pitches[2] ** 2 / wavelength  # the camera sampled as the image plane

        def factors(plane: int, chirp: float, decentre) -> list[np.ndarray]:
            """The x and y vectors over the samples of ``plane``: exp(iπ chirp x²/λ) and a lens
            decentre's linear phase (the lens's focal length that of the stage it enters)."""
            x = self.steps * pitches[plane]
            return [np.exp(1j * (math.pi * chirp / wavelength * x**2
                                 + 2 * math.pi * decentre[axis] * x / (wavelength * focal[min(plane, 1)])))
                    .astype(np.complex64) for axis in range(2)]

        into_first = [self.centring * vector for vector in factors(0, 0.0, lens_decentre[0])]
        values = self.source * into_first[0][np.newaxis, :]
        values *= into_first[1][:, np.newaxis]
        values = scipy.fft.fft2(values, overwrite_x=True, workers=self.workers)
        # leaving lens 1 (a gap error d - f: a chirp (1 - d/f)/f) and entering lens 2; the
        # centring after one transform and before the next cancel
        between = factors(1, (1.0 - gaps[0] / focal[0]) / focal[0], lens_decentre[1])
        values *= between[0][np.newaxis, :]
        values *= between[1][:, np.newaxis]
        x = self.steps * pitches[1]
        squared = [((x - iris_decentre[axis]) ** 2).astype(np.float32) for axis in range(2)]
        values *= np.add.outer(squared[1], squared[0]) <= np.float32(self.iris_radius**2)
        values = scipy.fft.fft2(values, overwrite_x=True, workers=self.workers)
        # leaving lens 2, then the Fresnel integral's input chirp
        to_camera = factors(2, (1.0 - gaps[1] / focal[1]) / focal[1] + 1.0 / fresnel_distance, (0.0, 0.0))
        values *= to_camera[0][np.newaxis, :]
        values *= to_camera[1][:, np.newaxis]
        values = scipy.fft.fft2(values, overwrite_x=True, workers=self.workers)
        camera_pitch = wavelength * fresnel_distance / (n * pitches[2])
        leaving = (self.centring * np.exp(1j * math.pi / (wavelength * fresnel_distance)
                                          * (self.steps * camera_pitch) ** 2)).astype(np.complex64)
        values *= leaving[np.newaxis, :]
        values *= leaving[:, np.newaxis]
        return values


def three_stage_times(grid: int, trials: int, workers: int = -1) -> dict:
    """The hand-written trial on drawn errors, each followed by its floor (three 2-D scipy.fft
    transforms of the window, the same precision): medians, and the median of each trial's
    ratio to the floor timed right after it (as ``trial_speed._trial_times`` times ours)."""
    trial = ThreeStageTrial(grid, workers)
    draws = trial.draws(trials + 1)
    trial.run(draws[0])  # plans and caches, as a study's first trial
    floor_input = (np.random.default_rng(1).standard_normal((grid, grid)) + 0j).astype(np.complex64)
    times = {"trial": [], "floor": []}
    for errors in draws[1:]:
        start = time.perf_counter()
        trial.run(errors)
        times["trial"].append(time.perf_counter() - start)
        start = time.perf_counter()
        for _ in range(3):
            scipy.fft.fft2(floor_input, workers=workers)
        times["floor"].append(time.perf_counter() - start)
    return {"trial": float(np.median(times["trial"])), "floor": float(np.median(times["floor"])),
            "ratio_floor": float(np.median(np.divide(times["trial"], times["floor"])))}
