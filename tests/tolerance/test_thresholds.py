"""Failure thresholds, margins and fails-first, checked against ray-matrix and Gaussian-beam laws."""

from __future__ import annotations

import math

import pytest

from benchcheck.evaluate.trial import Evaluator
from benchcheck.layout.loader import parse_layout
from benchcheck.layout.model import Spec
from benchcheck.metrics import MetricRegistry
from benchcheck.tolerance.dofs import resolve_dofs
from benchcheck.tolerance.thresholds import Threshold, failure_thresholds, fails_first, spec_slack

WAVELENGTH = 1064e-9  # m

# A lens, a fold mirror and a camera; the spec bounds the chief-ray angle at the camera.
FOCAL_LENGTH = 0.25  # m
ANGLE_BOUND = 0.2e-3  # rad
POINTING_BENCH = """format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "250 mm"
tolerance = { x = "0.1 mm", z = "1 mm" }
[[element]]
name = "M1"
type = "mirror"
z = "200 mm"
incidence = "45 deg"
tolerance = { tilt_x = "0.1 mrad", tilt_y = "0.25 mrad" }
[[element]]
name = "cam"
type = "camera"
z = "400 mm"
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
[[spec]]
metric = "angle"
at = "cam"
max = "0.2 mrad"
"""

# The source waist sits at the camera; the spec bounds the beam radius there.
WAIST = 0.1e-3  # m
RADIUS_RATIO = 1.5  # spec: w <= 1.5 w0
FOCUS_BENCH = """format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "0.1 mm"
waist_z = "300 mm"
[[element]]
name = "cam"
type = "camera"
z = "300 mm"
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
tolerance = { z = "5 mm" }
[[spec]]
metric = "beam_radius"
at = "cam"
max = "0.15 mm"
"""


@pytest.fixture(scope="module")
def registry():
    from benchcheck.plugin_manager import make_plugin_manager

    return MetricRegistry.from_plugin_manager(make_plugin_manager())


def thresholds_of(text: str, registry) -> dict[str, Threshold]:
    layout = parse_layout(text)
    found = failure_thresholds(Evaluator(layout, registry), resolve_dofs(layout))
    return {item.dof.name: item for item in found}


def test_pointing_thresholds_follow_the_ray_matrices(registry):
    found = thresholds_of(POINTING_BENCH, registry)
    # A thin lens decentred by d deviates the beam by d/f (Siegman, Lasers, 1986, ch. 15,
    # ABCDEF matrices), so the angle spec fails at d = f * bound.
    # 2 %: the bound the issue sets; the paraxial model is exact, so what is left is the
    # root finder's tolerance (1e-9 of the limit).
    assert found["L1.x"].threshold == pytest.approx(FOCAL_LENGTH * ANGLE_BOUND, rel=0.02)
    # A mirror tilted by α turns the reflected beam by 2α (law of reflection), about
    # either axis: the spec fails at α = bound / 2. Same 2 % as above.
    assert found["M1.tilt_x"].threshold == pytest.approx(ANGLE_BOUND / 2, rel=0.02)
    assert found["M1.tilt_y"].threshold == pytest.approx(ANGLE_BOUND / 2, rel=0.02)
    for name in ("L1.x", "M1.tilt_x", "M1.tilt_y"):
        assert found[name].spec == "cam.angle"
        assert found[name].sign in (1, -1)
        # margin = threshold / tolerance (DESIGN.md section 3).
        assert found[name].margin == pytest.approx(found[name].threshold / found[name].dof.limit, rel=1e-12)


def test_beam_width_threshold_follows_the_gaussian_beam_law(registry):
    found = thresholds_of(FOCUS_BENCH, registry)["cam.z"]
    # w(z) = w0 sqrt(1 + (z / zR)^2), zR = π w0² / λ (Kogelnik and Li, Appl. Opt. 5, 1550,
    # 1966): w reaches 1.5 w0 at z = zR sqrt(1.5² - 1).
    rayleigh_range = math.pi * WAIST**2 / WAVELENGTH
    expected = rayleigh_range * math.sqrt(RADIUS_RATIO**2 - 1)
    # 1 %: the bound; the trace is the exact ABCD law, so only the root finder's
    # tolerance (1e-9 of the 5 mm limit) remains.
    assert found.threshold == pytest.approx(expected, rel=0.01)
    assert found.spec == "cam.beam_radius"


def test_fails_first_is_the_smallest_margin_and_names_its_spec(registry):
    layout = parse_layout(POINTING_BENCH)
    found = failure_thresholds(Evaluator(layout, registry), resolve_dofs(layout))
    first = fails_first(found)
    # Margins from the laws above: L1.x 0.05 / 0.1 = 0.5, M1.tilt_y 0.1 / 0.25 = 0.4,
    # M1.tilt_x 0.1 / 0.1 = 1: the tilt about y fails first.
    expected_margins = {"L1.x": FOCAL_LENGTH * ANGLE_BOUND / 0.1e-3, "M1.tilt_y": (ANGLE_BOUND / 2) / 0.25e-3,
                        "M1.tilt_x": (ANGLE_BOUND / 2) / 0.1e-3}
    smallest = min(expected_margins, key=expected_margins.get)
    assert first.dof.name == smallest
    assert first.spec == "cam.angle"
    assert first.to_dict() == {"dof": smallest, "tolerance": first.dof.limit, "threshold": first.threshold,
                               "margin": first.margin, "spec": "cam.angle"}
    # Sorted by margin, the dofs that never fail last.
    margins = [item.margin for item in found if item.margin is not None]
    assert margins == sorted(margins)
    assert [item.dof.name for item in found][: len(margins)] == sorted(expected_margins, key=expected_margins.get)


def test_a_dof_that_never_fails_says_so(registry):
    found = thresholds_of(POINTING_BENCH, registry)
    # Moving a centred lens along the axis leaves the chief ray on the axis (ray matrices):
    # the angle spec cannot fail however far it goes.
    never = found["L1.z"]
    assert never.threshold is None and never.margin is None and never.spec is None and never.sign == 0
    assert "no spec fails within ±10 x its tolerance" in never.note
    assert never.to_dict()["threshold"] is None
    assert fails_first([never]) is None


def test_a_nominal_bench_that_fails_says_so(registry):
    failing = FOCUS_BENCH.replace('max = "0.15 mm"', 'max = "0.05 mm"')  # below the 0.1 mm waist itself
    for item in thresholds_of(failing, registry).values():
        assert item.threshold == 0.0 and item.margin == 0.0 and item.spec == "cam.beam_radius"
        assert "nominal bench already fails" in item.note


def test_slack_sign_agrees_with_the_spec():
    # Identity: a positive slack exactly when Spec.passes, for bounds on either side and at zero.
    specs = [Spec("offset", "cam", maximum=1e-4), Spec("power", "cam", minimum=0.9),
             Spec("beam_radius", "cam", minimum=1.8e-3, maximum=2.6e-3), Spec("angle", "cam", minimum=0.0)]
    for spec in specs:
        for value in (-1.0, 0.0, 5e-5, 1e-4, 2e-4, 2e-3, 3e-3, 0.5, 0.95):
            assert (spec_slack(spec, value) >= 0) == spec.passes(value), (spec, value)
    assert spec_slack(specs[0], None) < 0 and spec_slack(specs[0], math.nan) < 0


def test_margins_equal_within_the_search_resolution_are_a_tie_ordered_by_name():
    # Two dofs as sensitive as each other: their thresholds, found to THRESHOLD_XTOL of the
    # tolerance, differ in the last bits only; the one named first fails first. A difference
    # larger than that resolution still decides.
    from benchcheck.tolerance.dofs import Dof

    def threshold(name: str, margin: float) -> Threshold:
        dof = Dof(name, 1e-4, "uniform", 0.0)
        return Threshold(dof, margin * dof.limit, 1, "cam.angle", margin)

    tied = [threshold("M1.tilt_y", 0.5 - 2e-15), threshold("M1.tilt_x", 0.5)]
    assert fails_first(tied).dof.name == "M1.tilt_x"
    apart = [threshold("M1.tilt_y", 0.4999), threshold("M1.tilt_x", 0.5)]
    assert fails_first(apart).dof.name == "M1.tilt_y"
