"""A third-party plugin installed the way pip leaves one: its metric in `benchcheck simulate`."""

from __future__ import annotations

import io
import json
import sys
import textwrap

import pytest
from rich.console import Console

from benchcheck.cli.main import main
from tests.plugins.test_plugin_system import install_fake_distribution

MODULE = textwrap.dedent(
    '''
    from benchcheck import hookimpl
    from benchcheck.metrics import Metric


    def window_power_share(context):
        """Power in the window over the source power (a trivial metric for the test)."""
        return context.field.power / context.source_power


    @hookimpl
    def benchcheck_register_metrics():
        return [Metric("window_power_share", window_power_share, True, "",
                       "Power in the simulated window over the source power.", "definition")]
    '''
)

LAYOUT = """
format = 1
[bench]
wavelength = "633 nm"
[source]
waist = "0.5 mm"
[[element]]
name = "iris"
type = "aperture"
z = "10 mm"
diameter = "1 mm"
[[element]]
name = "work"
type = "plane"
z = "40 mm"
[[spec]]
metric = "window_power_share"
at = "work"
min = 0.5
[simulation]
grid = 256
"""


@pytest.fixture
def plugin_package(tmp_path, monkeypatch):
    install_fake_distribution(tmp_path, "lab-metrics", "2.0", "lab_metrics_plugin", MODULE, "lab_metrics")
    monkeypatch.syspath_prepend(str(tmp_path))
    yield
    sys.modules.pop("lab_metrics_plugin", None)


def test_third_party_metric_is_computed_and_judged_by_simulate(plugin_package, tmp_path):
    layout = tmp_path / "bench.toml"
    layout.write_text(LAYOUT)
    buffer = io.StringIO()
    code = main(["simulate", str(layout), "--json"], console=Console(file=buffer, width=200))
    assert code == 0, buffer.getvalue()
    data = json.loads(buffer.getvalue())
    # A centred iris of radius a = w passes 1 - exp(-2) = 0.8647 of a Gaussian (Siegman, Lasers,
    # 1986); free space after it conserves the power the window holds (2e-3: the iris edge is
    # area-weighted over one sample of a 256-sample window, and the far wings leave the window).
    assert data["metrics"]["work.window_power_share"] == pytest.approx(0.8647, abs=2e-3)
    assert data["specs"][0]["metric"] == "window_power_share" and data["specs"][0]["pass"] is True
    buffer = io.StringIO()
    main(["--disable-plugin", "lab_metrics", "simulate", str(layout)], console=Console(file=buffer, width=200))
    assert "no metric named 'window_power_share'" in buffer.getvalue()
