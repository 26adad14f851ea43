"""The bench seen from the side: the 1/e² envelope ±w(z) along the unfolded path, elements marked."""

from __future__ import annotations

import math

import numpy as np

from benchcheck.report.style import LINE_COLOURS, new_figure
from benchcheck.units import si_per_unit

__all__ = ["envelope_radius", "sample_envelope", "draw_bench_side_view", "SAMPLES_PER_GAP"]

#: Samples per free-space gap: enough for a smooth curve through a focus at report size.
SAMPLES_PER_GAP = 240


def envelope_radius(z: np.ndarray, waist: float, waist_z: float, m2: float, wavelength: float) -> np.ndarray:
    """1/e² radius of a Gaussian beam in free space (m).

    Parameters
    ----------
    z : array_like
        Path positions (m).
    waist : float
        Waist radius w₀ (m).
    waist_z : float
        Path position of the waist z₀ (m).
    m2 : float
        Beam quality factor M² (embedded-Gaussian convention, ISO 11146-1).
    wavelength : float
        Vacuum wavelength λ (m).

    Returns
    -------
    numpy.ndarray
        ``w(z) = w₀ √(1 + ((z − z₀)/z_R)²)``, ``z_R = π w₀² / (M² λ)`` (Kogelnik and Li,
        Appl. Opt. 5, 1550 (1966)).
    """
    rayleigh = math.pi * waist * waist / (m2 * wavelength)
    return waist * np.sqrt(1.0 + ((np.asarray(z, dtype=float) - waist_z) / rayleigh) ** 2)


def sample_envelope(envelope: dict, samples: int = SAMPLES_PER_GAP) -> list[dict]:
    """The envelope of every gap sampled densely, both ends included (SI).

    Parameters
    ----------
    envelope : dict
        ``ReportData.envelope``.
    samples : int
        Points per gap.

    Returns
    -------
    list of dict
        ``{"arm", "start", "end", "z_m": array, "w_m": (array_x, array_y)}`` per gap.
    """
    wavelength, m2 = envelope["wavelength_m"], envelope["m2"]
    sampled = []
    for segment in envelope["segments"]:
        z = np.linspace(segment["z_start_m"], segment["z_end_m"], samples)
        widths = tuple(envelope_radius(z, segment["waist_m"][axis], segment["waist_z_m"][axis], m2[axis], wavelength)
                       for axis in (0, 1))
        sampled.append({"arm": segment["arm"], "start": segment["start"], "end": segment["end"],
                        "z_m": z, "w_m": widths})
    return sampled


def draw_bench_side_view(data) -> tuple[object, list[dict]]:
    """Draw ±w_x(z) (solid) and ±w_y(z) (dashed) per arm, with every element at its z.

    Parameters
    ----------
    data : ReportData
        Its ``envelope``, ``trace`` and ``summary`` are drawn.

    Returns
    -------
    (matplotlib.figure.Figure, list of dict)
        The figure and the drawn lines in SI (``sample_envelope``'s records), so callers
        and tests can check the curve against the trace.
    """
    length = data.summary["display"]["length"]
    scale = 1.0 / si_per_unit(length)
    lines = sample_envelope(data.envelope)
    figure = new_figure(10.0, 4.2)
    axes = figure.add_subplot()
    arms = list(dict.fromkeys(line["arm"] for line in lines))
    for line in lines:
        colour = LINE_COLOURS[arms.index(line["arm"]) % len(LINE_COLOURS)]
        z = line["z_m"] * scale
        for axis, style in ((0, "-"), (1, "--")):
            w = line["w_m"][axis] * scale
            axes.plot(z, w, style, color=colour, linewidth=1.4)
            axes.plot(z, -w, style, color=colour, linewidth=1.4)
    peak = max((float(np.max(line["w_m"])) for line in lines), default=1e-3) * scale
    elements = {element["name"]: element for element in data.summary["elements"]}
    for plane in data.trace["planes"]:
        aperture = (elements.get(plane["name"]) or {}).get("clear_aperture_m")
        half = aperture / 2 * scale if aperture else 1.15 * max(max(plane["w_m"]) * scale, 0.2 * peak)
        z = plane["z_m"] * scale
        axes.plot([z, z], [-half, half], color="#555555", linewidth=1.0)
        axes.annotate(plane["name"], (z, half), xytext=(0, 3), textcoords="offset points", rotation=90,
                      ha="center", va="bottom", fontsize=7)
    for index, arm in enumerate(arms):
        colour = LINE_COLOURS[index % len(LINE_COLOURS)]
        axes.plot([], [], "-", color=colour, label=f"{arm} arm: ±w x")
        axes.plot([], [], "--", color=colour, label=f"{arm} arm: ±w y")
    axes.set_xlabel(f"path length z ({length}, unfolded)")
    axes.set_ylabel(f"1/e² radius ({length})")
    axes.set_title("Beam envelope along the bench (paraxial trace, Gaussian law between planes)", fontsize=10)
    axes.axhline(0.0, color="#999999", linewidth=0.6)
    axes.margins(y=0.25)
    axes.legend(fontsize=7, loc="upper left", ncols=min(4, 2 * len(arms)))
    return figure, lines
