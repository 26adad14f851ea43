"""The mount plan: class choice from failure thresholds, Monte Carlo verification, upgrades."""

from __future__ import annotations

import math

import pytest
from scipy.stats import norm

from benchcheck.api import plan_mounts
from benchcheck.errors import LayoutError
from benchcheck.layout.loader import parse_layout
from benchcheck.tolerance.mount_catalogue import MOUNT_CATALOGUE

OFFSET_BOUND = 0.5e-3  # m
FAR_ARM, NEAR_ARM = 0.5, 0.015  # m from each mirror to the camera

# Two fold mirrors: M1 far from the camera (a long lever for its tilt), M2 close to it.
FOLDS = """format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "M1"
type = "mirror"
z = "100 mm"
incidence = "45 deg"
[[element]]
name = "M2"
type = "mirror"
z = "585 mm"
incidence = "45 deg"
[[element]]
name = "cam"
type = "camera"
z = "600 mm"
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
[[spec]]
metric = "offset"
at = "cam"
max = "0.5 mm"
[tolerancing]
trials = 200
seed = 5
{extra}
"""


def wilson_interval(passed: int, trials: int, confidence: float = 0.95) -> tuple[float, float]:
    """Wilson score interval (Wilson, J. Am. Stat. Assoc. 22, 209 (1927)), closed form."""
    z = norm.ppf(0.5 + confidence / 2)
    share = passed / trials
    centre = (share + z * z / (2 * trials)) / (1 + z * z / trials)
    half = z / (1 + z * z / trials) * math.sqrt(share * (1 - share) / trials + z * z / (4 * trials**2))
    return centre - half, centre + half


def choices(plan) -> dict:
    return {choice.element: choice for choice in plan.choices}


def test_a_tight_tilt_gets_a_finer_class_than_a_loose_one():
    plan = plan_mounts(parse_layout(FOLDS.format(extra="")))
    chosen = choices(plan)
    # A mirror tilted by α moves the spot a distance L away by 2αL (law of reflection):
    # thresholds 0.5 mrad for M1 (L = 500 mm) and 16.7 mrad for M2 (L = 15 mm). Exact
    # paraxial model: 2 % only covers the root finder.
    assert chosen["M1"].threshold == pytest.approx(OFFSET_BOUND / (2 * FAR_ARM), rel=0.02)
    assert chosen["M2"].threshold == pytest.approx(OFFSET_BOUND / (2 * NEAR_ARM), rel=0.02)
    assert chosen["M1"].rank > chosen["M2"].rank
    # RSS allocation over the four tilts with a finite threshold: each may use threshold / 2.
    for name in ("M1", "M2"):
        assert chosen[name].hold <= chosen[name].threshold / 2
        assert chosen[name].limiting_dof.startswith(f"{name}.tilt_")
        assert chosen[name].origin == "catalogue"
    # The camera's pose does not move the chief ray: nothing limits it, the coarsest class.
    assert chosen["cam"].limiting_dof is None and chosen["cam"].rank == min(m.rank for m in MOUNT_CATALOGUE.values())


def test_the_verified_yield_meets_the_target_with_its_wilson_interval():
    plan = plan_mounts(parse_layout(FOLDS.format(extra="")))
    assert plan.met and plan.yield_value >= plan.yield_target == 0.95
    passed = round(plan.yield_value * plan.valid_trials)
    low, high = wilson_interval(passed, plan.valid_trials)
    # Closed form against scipy's binomtest interval: float rounding only.
    assert plan.yield_ci95 == pytest.approx((low, high), abs=1e-9)
    data = plan.to_dict()
    assert data["yield"] == plan.yield_value and data["met"] is True
    assert [entry["element"] for entry in data["elements"]] == ["M1", "M2", "cam"]
    assert any("common practice, from memory" in note for note in data["notes"])


def test_layout_classes_override_the_catalogue():
    extra = '[mounts.kinematic]\nrank = 1\ndescription = "our own"\ntilt = "0.01 mrad"\nz = "1 mm"\n'
    plan = plan_mounts(parse_layout(FOLDS.format(extra="").replace("[[element]]", extra + "[[element]]", 1)))
    chosen = choices(plan)
    assert chosen["M1"].mount_class == "kinematic"
    assert chosen["M1"].origin == "layout"
    assert chosen["M1"].hold == pytest.approx(1e-5)  # the layout's 0.01 mrad, not the catalogue's
    listed = {entry["name"]: entry for entry in plan.to_dict()["classes"]}
    assert listed["kinematic"]["origin"] == "layout" and listed["post"]["origin"] == "catalogue"


# A camera at the focus of a lens; only focus matters (beam radius spec) and the layout's own
# classes hold only z, so the plan is about L1.z and cam.z.
FOCUS = """format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[mounts.coarse]
rank = 0
z = "2.6 mm"
[mounts.fine]
rank = 1
z = "0.5 mm"
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "100 mm"
[[element]]
name = "cam"
type = "camera"
z = "200 mm"
pixel_pitch = "5 um"
pixels = [1000, 1000]
bit_depth = 12
[[spec]]
metric = "beam_radius"
at = "cam"
max = "{bound_mm!r} mm"
[tolerancing]
trials = 300
seed = 2
"""


def test_an_upgrade_when_the_allocation_misses_the_target():
    # Waist at the front focal plane: the focus lies at the back focal plane, w0' = λf/(πw0)
    # (Self, Appl. Opt. 22, 658 (1983), s = f). Spec w <= 1.5 w0': both the lens and the
    # camera fail alone at a defocus zR' sqrt(1.25) = 3.79 mm (Kogelnik and Li, Appl. Opt. 5,
    # 1550 (1966)); the RSS share is 2.68 mm, so "coarse" (2.6 mm) is chosen for both. Their
    # defocus errors add: with both uniform on ±2.6 mm, |δ1 − δ2| > 3.79 mm in
    # ((5.2 − 3.79) / 5.2)² = 7.4 % of trials, below the 95 % target.
    focus_radius = 1064e-9 * 0.1 / (math.pi * 1e-3)
    rayleigh = math.pi * focus_radius**2 / 1064e-9
    plan = plan_mounts(parse_layout(FOCUS.format(bound_mm=1.5 * focus_radius * 1e3)), use_catalogue=False)
    chosen = choices(plan)
    assert chosen["cam"].threshold == pytest.approx(rayleigh * math.sqrt(1.25), rel=0.02)  # root finder only
    assert len(plan.upgrades) == 1
    upgrade = plan.upgrades[0]
    assert (upgrade.from_class, upgrade.to_class) == ("coarse", "fine")
    assert upgrade.dof in ("L1.z", "cam.z")
    # 7.4 % expected failures of 300 trials: a binomial standard error of 1.5 %; 3 sigma.
    assert 1 - upgrade.yield_before == pytest.approx(0.074, abs=0.045)
    # After one upgrade the worst defocus is 2.6 + 0.5 = 3.1 mm < 3.79 mm: every trial passes.
    assert plan.yield_value == 1.0 and plan.met
    assert {choice.mount_class for choice in plan.choices} == {"coarse", "fine"}


def test_no_classes_is_a_layout_error():
    with pytest.raises(LayoutError, match="no mount classes"):
        plan_mounts(parse_layout(FOLDS.format(extra="")), use_catalogue=False)
