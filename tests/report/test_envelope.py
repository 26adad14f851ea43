"""The drawn beam envelope against the paraxial trace (Gaussian law between planes vs ABCD law)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchcheck import api
from benchcheck.report.data import ReportData, envelope_segments, layout_summary
from benchcheck.report.figures_bench import SAMPLES_PER_GAP, draw_bench_side_view

pytest.importorskip("matplotlib")

# Thin elements (no length along z) leave the 1/e² radius where it arrived.
THIN_TYPES = ("lens", "mirror", "camera", "plane")
# Two double-precision routes to the same radius: the ABCD law on q and the closed-form
# w(z) = w0 sqrt(1 + ((z - z0)/z_R)²); 1e-9 relative is far above their rounding (~1e-14).
SAME_RADIUS = 1e-9


@pytest.fixture
def drawn(report_layout, plugin_manager):
    layout = api.load_layout(report_layout, plugin_manager)
    trace = api.trace(layout, plugin_manager=plugin_manager)
    data = ReportData(summary=layout_summary(layout), trace=trace.to_dict(), envelope=envelope_segments(trace))
    figure, lines = draw_bench_side_view(data)
    return layout, trace, lines, figure


def test_envelope_meets_the_trace_at_every_element(drawn):
    """Kogelnik and Li, Appl. Opt. 5, 1550 (1966): free-space propagation of q by the ABCD law
    and the Gaussian beam-width law describe the same beam."""
    _, trace, lines, _ = drawn
    assert len(lines) == len(trace.planes) - 1
    checked = 0
    for line in lines:
        start, end = trace.plane(line["start"]), trace.plane(line["end"])
        for axis in (0, 1):
            if start.arm == line["arm"]:  # a branch leaves a splitter with its own beam
                assert line["w_m"][axis][0] == pytest.approx(start.w[axis], rel=SAME_RADIUS)
                checked += 1
            if end.type in THIN_TYPES:
                assert line["w_m"][axis][-1] == pytest.approx(end.w[axis], rel=SAME_RADIUS)
                checked += 1
            assert line["z_m"][0] == start.z and line["z_m"][-1] == end.z
    assert checked >= 2 * len(lines)


def test_focus_between_planes_is_sampled(drawn):
    """Between E1 (f = 50 mm) and E2 the beam passes a waist: the sampled minimum lies between w0
    and w0 sqrt(1 + (dz/2/z_R)²), dz the sample spacing (the nearest sample is within dz/2)."""
    layout, trace, lines, _ = drawn
    line = next(line for line in lines if line["end"] == "E2")
    dz = (line["z_m"][-1] - line["z_m"][0]) / (SAMPLES_PER_GAP - 1)
    for axis in (0, 1):
        waist = trace.plane("E1").waist[axis]
        rayleigh = math.pi * waist**2 / (layout.source.m2[axis] * layout.wavelength)
        smallest = float(np.min(line["w_m"][axis]))
        assert waist * (1 - SAME_RADIUS) <= smallest <= waist * math.sqrt(1 + (dz / 2 / rayleigh) ** 2)


def test_plotted_lines_are_the_sampled_envelope_in_display_units(drawn):
    layout, _, lines, figure = drawn
    axes = figure.axes[0]
    plotted = [artist for artist in axes.get_lines() if len(artist.get_xdata()) == SAMPLES_PER_GAP]
    # Four curves per gap: +w_x, -w_x, +w_y, -w_y.
    assert len(plotted) == 4 * len(lines)
    per_mm = 1e3  # the layout's [units] length is mm
    assert layout.display.length == "mm"
    first = plotted[0]
    np.testing.assert_allclose(first.get_xdata(), lines[0]["z_m"] * per_mm, rtol=SAME_RADIUS)
    np.testing.assert_allclose(first.get_ydata(), lines[0]["w_m"][0] * per_mm, rtol=SAME_RADIUS)
