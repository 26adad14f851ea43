"""The plugin system: entry-point loading, failures recorded by name, metric isolation,
duplicate names, misspelled hooks, and the `benchcheck plugins` command."""

import io
import json
import sys
import textwrap
from types import SimpleNamespace

import numpy as np
import pytest
from rich.console import Console

from benchcheck.errors import PluginError
from benchcheck.hookspecs import hookimpl
from benchcheck.metrics import Metric, MetricContext, MetricRegistry, evaluate_metrics
from benchcheck.plugin_manager import NO_PLUGINS_ENV, check_pending, describe_plugins, make_plugin_manager
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

# DESIGN.md section 6: the first-party metric names.
FIRST_PARTY_METRICS = {
    "beam_radius", "beam_radius_x", "beam_radius_y", "offset", "angle", "power", "efficiency",
    "mode_purity", "oam_purity", "d4sigma", "d4sigma_x", "d4sigma_y", "centroid_offset",
    "ellipticity", "plateau_uniformity", "edge_steepness", "flatness", "rms_wavefront", "strehl",
}


@pytest.fixture(autouse=True)
def plugins_on(monkeypatch):
    """Whatever the calling shell says, these tests decide about auto-loading themselves."""
    monkeypatch.delenv(NO_PLUGINS_ENV, raising=False)


def gaussian_context(**extra):
    grid = Grid.square(64, 50e-6)
    x, y = grid.mesh()
    values = np.exp(-(x**2 + y**2) / (0.5e-3) ** 2).astype(np.complex64)
    field = Field(values, grid, 633e-9, "work")
    return MetricContext(plane="work", wavelength=633e-9, field=field, **extra)


class BrokenMetricPlugin:
    """A plugin whose metric always fails."""

    @hookimpl
    def benchcheck_register_metrics(self):
        def divide_by_zero(context):
            return 1.0 / 0.0

        return [Metric("always_fails", divide_by_zero, True, "", "A metric with a bug.", "none")]


def test_first_party_metrics_load_through_the_entry_point():
    plugin_manager = make_plugin_manager()
    registry = MetricRegistry.from_plugin_manager(plugin_manager)
    assert FIRST_PARTY_METRICS <= set(registry.names())
    assert {registry.get(name).plugin for name in FIRST_PARTY_METRICS} == {"core_metrics"}
    info = next(info for info in describe_plugins(plugin_manager) if info.name == "core_metrics")
    assert info.distribution == "benchcheck" and info.status == "loaded"
    assert "benchcheck_register_metrics" in info.hooks
    assert set(info.metrics) == FIRST_PARTY_METRICS
    for name in FIRST_PARTY_METRICS:  # every first-party metric cites its definition
        assert registry.get(name).source


def test_a_broken_metric_is_named_and_the_others_are_computed():
    plugin_manager = make_plugin_manager(extra_plugins=[("buggy_extras", BrokenMetricPlugin())])
    registry = MetricRegistry.from_plugin_manager(plugin_manager)
    outcomes = evaluate_metrics(registry, ["d4sigma", "always_fails", "power"], gaussian_context())
    by_name = {outcome.name: outcome for outcome in outcomes}
    failed = by_name["always_fails"]
    assert failed.value is None and failed.plugin == "buggy_extras"
    assert "always_fails" in failed.error and "buggy_extras" in failed.error and "ZeroDivisionError" in failed.error
    assert by_name["d4sigma"].ok and by_name["d4sigma"].value > 0
    assert by_name["power"].ok and by_name["power"].value > 0
    assert [outcome.name for outcome in outcomes] == ["d4sigma", "always_fails", "power"]


def test_paraxial_only_context_and_missing_inputs_give_clear_outcomes():
    registry = MetricRegistry.from_plugin_manager(make_plugin_manager())
    beam = SimpleNamespace(w=(1e-3, 1e-3), offset=(0.0, 0.0), angle=(0.0, 0.0), transmission=1.0)
    paraxial = MetricContext(plane="L2", wavelength=1e-6, beam=beam)
    outcomes = {o.name: o for o in evaluate_metrics(registry, ["beam_radius", "d4sigma"], paraxial)}
    assert outcomes["beam_radius"].value == 1e-3
    assert "needs the wave simulation" in outcomes["d4sigma"].error
    no_target = {o.name: o for o in evaluate_metrics(registry, ["mode_purity", "oam_purity"], gaussian_context())}
    assert "unavailable" in no_target["mode_purity"].error and "target" in no_target["mode_purity"].error
    assert "charge" in no_target["oam_purity"].error


def test_unknown_metric_name_is_refused_with_a_suggestion():
    registry = MetricRegistry.from_plugin_manager(make_plugin_manager())
    with pytest.raises(PluginError, match="d4sigma"):
        evaluate_metrics(registry, ["d4sigmax"], gaussian_context())


def test_duplicate_metric_name_names_both_plugins():
    class Copycat:
        @hookimpl
        def benchcheck_register_metrics(self):
            return [Metric("flatness", lambda context: 1.0, True, "", "Same name.", "none")]

    plugin_manager = make_plugin_manager(extra_plugins=[("copycat", Copycat())])
    with pytest.raises(PluginError) as raised:
        MetricRegistry.from_plugin_manager(plugin_manager)
    assert "flatness" in str(raised.value)
    assert "core_metrics" in str(raised.value) and "copycat" in str(raised.value)


class MisspelledHookPlugin:
    @hookimpl
    def benchcheck_register_metric(self):  # missing final "s"
        return []


def test_check_pending_names_a_misspelled_hook():
    plugin_manager = make_plugin_manager(autoload=False)
    plugin_manager.register(MisspelledHookPlugin(), name="typo_plugin")
    with pytest.raises(PluginError) as raised:
        check_pending(plugin_manager)
    message = str(raised.value)
    assert "typo_plugin" in message and "benchcheck_register_metric'" in message
    assert "did you mean 'benchcheck_register_metrics'" in message


def test_a_misspelled_plugin_is_left_out_and_recorded_when_loading():
    plugin_manager = make_plugin_manager(autoload=False, extra_plugins=[("typo_plugin", MisspelledHookPlugin())])
    info = {info.name: info for info in describe_plugins(plugin_manager)}["typo_plugin"]
    assert info.status == "failed" and "benchcheck_register_metric" in info.reason


def test_no_plugins_switch_and_disabled_plugins(monkeypatch):
    disabled = {info.name: info for info in describe_plugins(make_plugin_manager(disabled=["core_metrics"]))}
    assert disabled["core_metrics"].status == "disabled"
    assert len(MetricRegistry.from_plugin_manager(make_plugin_manager(disabled=["core_metrics"]))) == 0
    monkeypatch.setenv(NO_PLUGINS_ENV, "1")
    assert describe_plugins(make_plugin_manager()) == []


# --- third-party plugins installed in a temporary folder ---------------------------------

THIRD_PARTY_MODULE = textwrap.dedent(
    '''
    """A third-party plugin: one metric and one (listing-only) hologram pattern."""
    from types import SimpleNamespace

    from benchcheck.hookspecs import hookimpl
    from benchcheck.metrics import Metric


    def window_peak_density(context):
        return float(context.field.intensity.max())


    @hookimpl
    def benchcheck_register_metrics():
        return [Metric("window_peak_density", window_peak_density, True, "",
                       "Largest |E|² sample in the window.", "definition")]


    @hookimpl
    def benchcheck_register_hologram_patterns():
        return [SimpleNamespace(name="ring_lattice")]
    '''
)


def install_fake_distribution(folder, distribution, version, module_name, module_text, entry_name):
    """A module and a *.dist-info with METADATA and entry_points.txt, as pip would leave them."""
    (folder / f"{module_name}.py").write_text(module_text)
    info = folder / f"{distribution.replace('-', '_')}-{version}.dist-info"
    info.mkdir()
    (info / "METADATA").write_text(f"Metadata-Version: 2.1\nName: {distribution}\nVersion: {version}\n")
    (info / "entry_points.txt").write_text(f"[benchcheck]\n{entry_name} = {module_name}\n")


@pytest.fixture
def third_party_plugins(tmp_path, monkeypatch):
    install_fake_distribution(tmp_path, "beam-extras", "0.3.1", "beam_extras_plugin", THIRD_PARTY_MODULE, "beam_extras")
    install_fake_distribution(tmp_path, "broken-beam-tools", "1.0", "broken_beam_plugin",
                              'raise ImportError("needs the library frobnicate")\n', "broken_tools")
    monkeypatch.syspath_prepend(str(tmp_path))
    yield
    for name in ("beam_extras_plugin", "broken_beam_plugin"):
        sys.modules.pop(name, None)


def test_third_party_metric_appears_and_a_broken_import_is_recorded(third_party_plugins):
    plugin_manager = make_plugin_manager()
    registry = MetricRegistry.from_plugin_manager(plugin_manager)
    assert registry.get("window_peak_density").plugin == "beam_extras"
    outcome = evaluate_metrics(registry, ["window_peak_density"], gaussian_context())[0]
    assert outcome.value == pytest.approx(1.0, rel=1e-6)  # the test field peaks at 1 (float32)
    infos = {info.name: info for info in describe_plugins(plugin_manager)}
    assert (infos["beam_extras"].distribution, infos["beam_extras"].version) == ("beam-extras", "0.3.1")
    assert infos["beam_extras"].patterns == ("ring_lattice",)
    broken = infos["broken_tools"]
    assert broken.status == "failed" and broken.distribution == "broken-beam-tools"
    assert "ImportError" in broken.reason and "frobnicate" in broken.reason


def run_command(argv):
    from benchcheck.cli.main import main

    buffer = io.StringIO()
    code = main(argv, console=Console(file=buffer, width=200))
    return code, buffer.getvalue()


def test_plugins_command_json_lists_third_party_and_failed_plugins(third_party_plugins):
    code, text = run_command(["plugins", "--json"])
    assert code == 0
    plugins = {entry["name"]: entry for entry in json.loads(text)["plugins"]}
    assert "window_peak_density" in plugins["beam_extras"]["metrics"]
    assert plugins["beam_extras"]["hooks"] == ["benchcheck_register_hologram_patterns", "benchcheck_register_metrics"]
    assert plugins["broken_tools"]["status"] == "failed"
    assert "frobnicate" in plugins["broken_tools"]["reason"]
    assert set(plugins["core_metrics"]["metrics"]) == FIRST_PARTY_METRICS


def test_plugins_command_table_and_global_options(third_party_plugins):
    code, text = run_command(["plugins"])
    assert code == 0
    assert "beam_extras" in text and "window_peak_density" in text and "broken_tools" in text
    code, text = run_command(["--disable-plugin", "beam_extras", "plugins", "--json"])
    assert {entry["name"]: entry["status"] for entry in json.loads(text)["plugins"]}["beam_extras"] == "disabled"
    code, text = run_command(["--no-plugins", "plugins", "--json"])
    assert json.loads(text) == {"plugins": []}
