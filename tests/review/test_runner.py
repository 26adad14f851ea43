"""The review machinery: findings, sorting, the guard around each rule, the rule registry."""

from __future__ import annotations

import types

import pytest

from benchcheck import hookimpl
from benchcheck.api import load_layout
from benchcheck.errors import PluginError
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.plugin_manager import make_plugin_manager
from benchcheck.review import Finding, ReviewContext, ReviewRule, collect_review_rules, review, run_rules

from tests.review.conftest import bench_text, of_rule

# A bench with nothing to simulate (no camera, iris or sized plane) and one clipped lens:
# a 0.8 mm beam on a 2 mm clear aperture.
TRACE_ONLY = """
format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "0.8 mm"
[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "500 mm"
clear_aperture = "2 mm"
[[element]]
name = "work"
type = "plane"
z = "300 mm"
"""


def _plugin(**hooks):
    module = types.SimpleNamespace()
    for name, function in hooks.items():
        setattr(module, name, hookimpl(function))
    return module


def _raising_rule(context):
    raise ZeroDivisionError("deliberately broken")


def test_finding_checks_its_severity():
    with pytest.raises(ValueError, match="severity"):
        Finding("r", "fatal", "L1", "m", "b")


def test_finding_to_dict_has_the_contract_keys_and_si_numbers():
    finding = Finding("clear_aperture", "warning", "L1", "message", "basis", {"w_m": 1e-3, "ratio": float("inf")})
    data = finding.to_dict()
    assert set(data) == {"rule", "severity", "element", "message", "basis", "numbers"}
    assert data["numbers"] == {"w_m": 1e-3, "ratio": None}  # JSON has no inf


def test_findings_are_sorted_by_severity_then_element(write_layout, plugin_manager):
    def many(context):
        yield Finding("many", "note", "A", "n", "b")
        yield Finding("many", "warning", "Z", "w", "b")
        yield Finding("many", "error", "M", "e", "b")
        yield Finding("many", "warning", "B", "w", "b")

    layout = load_layout(write_layout(TRACE_ONLY), plugin_manager)
    report = review(layout, plugin_manager, rules={"many": ReviewRule("many", many, "d", "b")})
    assert [(f.severity, f.element) for f in report.findings] == [
        ("error", "M"), ("warning", "B"), ("warning", "Z"), ("note", "A")]
    assert report.has_at_least("warning") and report.has_at_least("error")


def test_a_broken_plugin_rule_is_reported_by_name_and_the_others_run(write_layout):
    broken = _plugin(benchcheck_register_review_rules=lambda: [
        ReviewRule("always_fails", _raising_rule, "a rule that raises", "none")])
    manager = make_plugin_manager(extra_plugins=[("broken_rules", broken)])
    report = review(load_layout(write_layout(TRACE_ONLY), manager), manager)
    failure = of_rule(report, "always_fails")
    assert len(failure) == 1 and failure[0].severity == "error"
    assert "always_fails" in failure[0].message and "broken_rules" in failure[0].message
    assert "ZeroDivisionError" in failure[0].message
    # The first-party rules still ran: the clipped lens is found.
    assert [f.element for f in of_rule(report, "clear_aperture")] == ["L1"]


def test_a_rule_returning_something_else_than_findings_is_an_error_finding(write_layout, plugin_manager):
    layout = load_layout(write_layout(TRACE_ONLY), plugin_manager)
    rule = ReviewRule("strings", lambda context: ["not a finding"], "d", "b", plugin="tests")
    report = review(layout, plugin_manager, rules={"strings": rule})
    assert [(f.rule, f.severity) for f in report.findings] == [("strings", "error")]
    assert "not a Finding" in report.findings[0].message


def test_duplicate_rule_names_are_refused_naming_both_plugins():
    copy = _plugin(benchcheck_register_review_rules=lambda: [
        ReviewRule("clear_aperture", _raising_rule, "a second rule of that name", "none")])
    manager = make_plugin_manager(extra_plugins=[("copycat", copy)])
    with pytest.raises(PluginError, match="registered twice") as error:
        collect_review_rules(manager)
    assert "core_review" in str(error.value) and "copycat" in str(error.value)


def test_a_failing_registration_hook_names_its_plugin():
    def explode():
        raise RuntimeError("no rules today")

    manager = make_plugin_manager(extra_plugins=[("exploding", _plugin(benchcheck_register_review_rules=explode))])
    with pytest.raises(PluginError, match="exploding"):
        collect_review_rules(manager)


def test_registered_rules_carry_their_plugin(plugin_manager):
    rules = collect_review_rules(plugin_manager)
    assert rules["clear_aperture"].plugin == "core_review"
    assert {"fourier_orders", "flat_top_beta", "camera_sampling", "mount_spacing", "paraxial_validity",
            "damage_threshold", "blocked_power", "phase_stroke", "hologram_aliasing"} <= set(rules)


def test_the_simulation_runs_only_when_a_rule_asks(write_layout, plugin_manager):
    rules = collect_review_rules(plugin_manager).values()
    layout = load_layout(write_layout(TRACE_ONLY), plugin_manager)
    quiet = ReviewContext(layout, make_evaluator(layout, plugin_manager))
    run_rules(rules, quiet)
    assert not quiet.simulated  # no camera, iris or sized plane: no rule needs the wave

    layout = load_layout(write_layout(bench_text(), "camera.toml"), plugin_manager)
    busy = ReviewContext(layout, make_evaluator(layout, plugin_manager))
    run_rules(rules, busy)
    assert busy.simulated
