"""`benchcheck report`: one self-contained HTML file whose figures decode and whose numbers are the runs'."""

from __future__ import annotations

import base64
import io
import json
import re
import sys

import numpy as np
import pytest

from benchcheck import api
from benchcheck.plugin_manager import describe_plugins
from benchcheck.report.data import json_ready
from benchcheck.report.writers import collect_report_writers
from tests.cli.conftest import Run

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # ISO/IEC 15948 (PNG), section 5.2
TRIALS = 8


def _embedded(html: str) -> dict:
    found = re.search(r'<script type="application/json" id="report-data">(.*?)</script>', html, re.S)
    assert found, "the report data block is missing"
    return json.loads(found.group(1))


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    """One report of the expander layout (8 trials, no mount plan), built once for the module."""
    from tests.report.conftest import SHIPPED, edited_copy

    folder = tmp_path_factory.mktemp("report")
    layout = folder / "bench.toml"
    layout.write_text(edited_copy(SHIPPED.read_text(), [("trials = 500", f"trials = {TRIALS}")]))
    out = folder / "report.html"
    run = Run(["report", str(layout), "--html", str(out), "--png", str(folder / "png"), "--no-mounts"])
    assert run.code == 0, run.output
    return layout, out, folder / "png", run


def test_report_is_self_contained_and_every_image_decodes(written):
    matplotlib_image = pytest.importorskip("matplotlib.image")
    _, out, png_folder, run = written
    html = out.read_text(encoding="utf-8")
    assert "Laser safety" in html and "Laser safety" in run.output
    sources = re.findall(r'src="([^"]*)"', html)
    assert sources and all(source.startswith("data:image/png;base64,") for source in sources)
    assert not re.search(r"<link|@import|url\(|https?://", html)
    assert html.count("<script") == 1  # the JSON data block, never executed
    for source in sources:
        png = base64.b64decode(source.split(",", 1)[1])
        assert png.startswith(PNG_SIGNATURE)
        pixels = matplotlib_image.imread(io.BytesIO(png), format="png")
        assert pixels.ndim == 3 and min(pixels.shape[:2]) > 100
    # --png writes the same figures alone.
    written_files = sorted(path.name for path in png_folder.iterdir())
    assert len(written_files) == len(sources)
    assert {"bench_side_view.png", "field_work.png", "frame_monitor.png", "metric_histograms.png",
            "fails_first.png"} <= set(written_files)


def test_embedded_numbers_are_those_of_the_trace_and_study(written, plugin_manager):
    layout_path, out, _, _ = written
    data = _embedded(out.read_text(encoding="utf-8"))
    layout = api.load_layout(layout_path, plugin_manager)
    assert data["trace"] == json_ready(api.trace(layout, plugin_manager=plugin_manager).to_dict())
    study = api.tolerance(layout, trials=TRIALS, plugin_manager=plugin_manager)
    expected = json_ready(study.to_dict())
    for key in ("trials", "seed", "yield", "yield_ci95", "dofs", "metrics", "fails_first"):
        assert data["study"][key] == expected[key]
    valid = study.valid_records
    for key, values in data["trial_metrics"].items():
        assert values == [record.metrics.get(key) for record in valid]
    assert data["mounts"] is None
    assert data["simulation"]["metrics"] == json_ready(api.simulate(layout, plugin_manager).to_dict()["metrics"])


def test_histograms_and_margins_draw_the_embedded_numbers(written, plugin_manager):
    pytest.importorskip("matplotlib")
    from benchcheck.report.data import build_report_data
    from benchcheck.report.figures import render_figures

    layout_path, out, _, _ = written
    embedded = _embedded(out.read_text(encoding="utf-8"))
    layout = api.load_layout(layout_path, plugin_manager)
    # The study alone (no wave simulation): the figures checked here come from it.
    figures = {figure.name: figure for figure in
               render_figures(build_report_data(layout, plugin_manager, mounts=False, simulate=False))}
    for drawn in figures["metric_histograms"].drawn:
        values = np.array(embedded["trial_metrics"][drawn["key"]], dtype=float)
        assert int(drawn["counts"].sum()) == values.size  # every trial in one bar
        assert drawn["edges_m"][0] == values.min() and drawn["edges_m"][-1] == values.max()
    rows = [row for row in embedded["study"]["dofs"] if row["margin"] is not None]
    drawn_margins = [row["margin"] for row in figures["fails_first"].drawn]
    assert drawn_margins == sorted(row["margin"] for row in rows)[:len(drawn_margins)]


@pytest.mark.slow
def test_mount_plan_in_the_report_is_the_planners(written, plugin_manager):
    from benchcheck.report.data import build_report_data
    from benchcheck.report.html import html_document

    layout = api.load_layout(written[0], plugin_manager)
    data = build_report_data(layout, plugin_manager, trials=4, mounts=True, simulate=False)
    expected = json_ready(api.plan_mounts(layout, trials=4, plugin_manager=plugin_manager).to_dict())
    assert data.to_dict()["mounts"] == expected
    html = html_document(data, [])
    assert _embedded(html)["mounts"] == expected
    for choice in expected["elements"]:
        assert f"<td class=\"text\">{choice['element']}</td><td class=\"text\">{choice['class']}</td>" in html


def test_no_overwrite_without_force(written, tmp_path):
    layout_path, _, _, _ = written
    out = tmp_path / "existing.html"
    out.write_text("keep me")
    run = Run(["report", str(layout_path), "--html", str(out), "--trials", "0", "--no-mounts"])
    assert run.code == 2 and "already exists" in run.output and "--force" in run.output
    assert out.read_text() == "keep me"
    forced = Run(["report", str(layout_path), "--html", str(out), "--trials", "0", "--no-mounts", "--force"])
    assert forced.code == 0 and out.read_text().startswith("<!DOCTYPE html>")


def test_missing_matplotlib_says_how_to_install(written, tmp_path, monkeypatch):
    layout_path, _, _, _ = written
    monkeypatch.setitem(sys.modules, "matplotlib", None)  # import matplotlib now raises ImportError
    out = tmp_path / "report.html"
    run = Run(["report", str(layout_path), "--html", str(out)])
    assert run.code == 2
    assert "pip install 'benchcheck[plot]'" in run.output
    assert not out.exists()


def test_html_writer_is_a_registered_plugin(plugin_manager):
    writers = collect_report_writers(plugin_manager)
    assert writers["html"].plugin == "core_report_writers"
    listed = {info.name: info for info in describe_plugins(plugin_manager)}
    assert listed["core_report_writers"].report_writers == ("html",)
