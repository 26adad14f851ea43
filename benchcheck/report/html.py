"""One self-contained HTML file: text, tables, figures as base64 PNG data URIs, the data as JSON.

No external files, scripts, style sheets or fonts: the file can be mailed and opened
anywhere. The report's numbers are embedded in ``<script type="application/json"
id="report-data">`` (data, never executed) so they can be read back and checked.
"""

from __future__ import annotations

import base64
import json
import math
from collections.abc import Sequence
from html import escape
from pathlib import Path

from benchcheck import __version__
from benchcheck.safety import LASER_SAFETY_CAUTION
from benchcheck.units import format_quantity

__all__ = ["html_document", "write_html_report", "REPORT_DATA_ID"]

REPORT_DATA_ID = "report-data"

_STYLE = """
body { font-family: sans-serif; max-width: 68em; margin: 1.5em auto; padding: 0 1em; color: #1a1a1a;
       line-height: 1.4; }
h1 { font-size: 1.5em; } h2 { font-size: 1.2em; border-bottom: 1px solid #bbb; margin-top: 1.8em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.9em; }
th, td { border: 1px solid #ccc; padding: 0.2em 0.55em; text-align: right; }
th { background: #eee; } td.text, th.text { text-align: left; }
figure { margin: 1em 0; } figure img { max-width: 100%; border: 1px solid #ddd; }
figcaption { font-size: 0.85em; color: #444; }
.caution { border: 2px solid #D55E00; background: #fff4ec; padding: 0.6em 0.9em; }
.note { color: #444; font-size: 0.9em; }
"""


def _quantity(value, unit: str, digits: int = 4) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "-"
    return format_quantity(float(value), unit, digits)


def _pair(values, unit: str) -> str:
    shown = [_quantity(value, unit) for value in values]
    return shown[0] if shown[0] == shown[1] else f"{shown[0]}, {shown[1]}"


def _table(headings: Sequence[str], rows: Sequence[Sequence], text_columns: int = 1) -> str:
    def cell(tag: str, index: int, value) -> str:
        kind = ' class="text"' if index < text_columns else ""
        return f"<{tag}{kind}>{escape(str(value))}</{tag}>"

    head = "".join(cell("th", index, heading) for index, heading in enumerate(headings))
    body = "".join("<tr>" + "".join(cell("td", index, value) for index, value in enumerate(row)) + "</tr>"
                   for row in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _figure(figure) -> str:
    encoded = base64.b64encode(figure.png).decode("ascii")
    caption = escape(figure.caption)
    return (f'<figure id="figure-{escape(figure.name)}"><img src="data:image/png;base64,{encoded}" '
            f'alt="{caption}"><figcaption>{caption}</figcaption></figure>')


def _summary_section(data, length: str) -> str:
    summary = data.summary
    source = summary["source"]
    facts = [
        ("layout file", summary["path"]),
        ("wavelength", _quantity(summary["wavelength_m"], "nm")),
        ("power", _quantity(summary["power_w"], "W") if summary["power_w"] else "not given"),
        ("source waist (1/e² radius)", _pair(source["waist_m"], length)),
        ("source waist position", _pair(source["waist_z_m"], length)),
        ("M²", ", ".join(f"{m2:.3g}" for m2 in source["m2"])),
    ]
    elements = [(element["name"], element["type"], element["arm"], _quantity(element["z_m"], length),
                 element["mount"] or "-", _quantity(element["focal_length_m"], length),
                 _quantity(element["clear_aperture_m"], length)) for element in summary["elements"]]
    specs = [(spec["label"], spec["metric"], spec["at"], "-" if spec["min"] is None else f"{spec['min']:.6g}",
              "-" if spec["max"] is None else f"{spec['max']:.6g}") for spec in summary["specs"]]
    parts = ["<h2>Layout</h2>", _table(("item", "value"), facts, 2),
             _table(("element", "type", "arm", f"z ({length})", "mount", f"focal length ({length})",
                     f"clear aperture ({length})"), elements, 5)]
    if specs:
        parts.append(_table(("spec", "metric", "at", "min (SI)", "max (SI)"), specs, 3))
    parts.extend(f'<p class="note">layout warning: {escape(warning)}</p>' for warning in summary["warnings"])
    return "".join(parts)


def _trace_section(data, figures, length: str, angle: str) -> str:
    rows = [(plane["name"], plane["arm"], _quantity(plane["z_m"], length), _pair(plane["w_m"], length),
             _pair(plane["waist_z_m"], length), f"{plane['transmission']:.4%}", _pair(plane["offset_m"], length),
             _pair(plane["angle_rad"], angle)) for plane in data.trace["planes"]]
    return "".join(["<h2>Bench and paraxial beam</h2>", *(_figure(f) for f in figures if f.section == "bench"),
                    _table(("plane", "arm", f"z ({length})", f"w ({length})", f"waist at ({length})",
                            "transmission", f"offset ({length})", f"angle ({angle})"), rows, 2)])


def _wave_section(data, figures) -> str:
    parts = ["<h2>Nominal wave simulation</h2>"]
    if data.simulation is None:
        return parts[0] + '<p class="note">Not simulated.</p>'
    parts.extend(_figure(f) for f in figures if f.section == "wave")
    metrics = [(key, "-" if value is None else f"{value:.6g}") for key, value in data.simulation["metrics"].items()]
    parts.append(_table(("plane.metric", "value (SI)"), metrics))
    specs = [(f"{spec['at']}.{spec['metric']}", "-" if spec["value"] is None else f"{spec['value']:.6g}",
              "pass" if spec["pass"] else "FAIL") for spec in data.simulation["specs"]]
    if specs:
        parts.append(_table(("spec", "nominal value (SI)", "result"), specs, 1))
    losses = [(loss["plane"], f"{loss['blocked']:.3%}") for loss in data.simulation.get("losses", [])]
    if losses:
        parts.append("<p>Light blocked by irises and stops (share of the source power):</p>")
        parts.append(_table(("plane", "blocked"), losses))
    return "".join(parts)


def _study_section(data, figures) -> str:
    parts = ["<h2>Monte Carlo tolerance study</h2>"]
    study = data.study
    if study is None:
        return parts[0] + '<p class="note">No study was run.</p>'
    if study["yield"] is None:
        parts.append("<p>No valid trial.</p>")
    else:
        low, high = study["yield_ci95"]
        parts.append(f"<p>Yield {study['yield']:.1%} (95 % Wilson interval {low:.1%} to {high:.1%}): "
                     f"{study['passed_trials']} of {study['valid_trials']} valid trials meet every spec "
                     f"({study['trials']} trials, seed {study['seed']}, {escape(study['sampler'])} sampling).</p>")
    parts.extend(_figure(f) for f in figures if f.section == "study")
    rows = [(row["dof"], f"{row['tolerance']:.4g}", "-" if row["threshold"] is None else f"{row['threshold']:.4g}",
             "-" if row["margin"] is None else f"{row['margin']:.3g}", row.get("spec") or "-")
            for row in study["dofs"]]
    parts.append(_table(("dof", "tolerance (SI)", "failure threshold (SI)", "margin", "spec"), rows, 1))
    return "".join(parts)


def _mounts_section(data) -> str:
    if data.mounts is None:
        return '<h2>Mount plan</h2><p class="note">Skipped (--no-mounts).</p>'
    plan = data.mounts
    rows = [(choice["element"], choice["class"], choice["rank"], choice["layout_mount"] or "-",
             choice["limiting_dof"] or "none fails", "-" if choice["margin"] is None else f"{choice['margin']:.3g}")
            for choice in plan["elements"]]
    verdict = "no valid trial" if plan["yield"] is None else (
        f"verified yield {plan['yield']:.1%} (95 % interval {plan['yield_ci95'][0]:.1%} to "
        f"{plan['yield_ci95'][1]:.1%}, {plan['trials']} trials): {'meets' if plan['met'] else 'misses'} "
        f"the target {plan['yield_target']:.1%}")
    return "".join(["<h2>Mount plan</h2>", f"<p>{escape(verdict)}</p>",
                    _table(("element", "class", "rank", "layout mount", "limiting dof", "margin"), rows, 2)])


def _findings_section(data) -> str:
    if data.findings is None:
        return '<h2>Review findings</h2><p class="note">The layout review is not available in this version.</p>'
    if not data.findings:
        return "<h2>Review findings</h2><p>No findings.</p>"
    rows = [(finding["severity"], finding["element"] or "-", finding["rule"], finding["message"], finding["basis"])
            for finding in data.findings]
    return "<h2>Review findings</h2>" + _table(("severity", "element", "rule", "finding", "basis"), rows, 5)


def _embedded_json(data) -> str:
    text = json.dumps(data.to_dict(), allow_nan=False, separators=(",", ":"))
    # "</" could end the script element early; "<\/" reads back as the same JSON string.
    return text.replace("</", "<\\/")


def html_document(data, figures) -> str:
    """The whole report as one HTML string.

    Parameters
    ----------
    data : ReportData
        The numbers (also embedded as JSON).
    figures : sequence of RenderedFigure
        PNG figures, embedded as data URIs.
    """
    length = data.summary["display"]["length"]
    angle = data.summary["display"]["angle"]
    title = escape(data.summary["title"] or data.summary["path"])
    notes = "".join(f"<li>{escape(note)}</li>" for note in data.notes)
    caution = f'<p class="caution"><strong>{escape(LASER_SAFETY_CAUTION)}</strong></p>'
    body = "".join([
        f"<h1>{title}</h1>",
        f'<p class="note">Bench report written by benchcheck {escape(__version__)}. Planning estimates from a '
        "paraxial trace, a wave simulation and a Monte Carlo study of the layout.</p>",
        caution,
        _summary_section(data, length),
        _trace_section(data, figures, length, angle),
        _wave_section(data, figures),
        _study_section(data, figures),
        _mounts_section(data),
        _findings_section(data),
        f"<h2>Notes</h2><ul>{notes}</ul>" if notes else "",
        caution,
    ])
    return (f'<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"><title>{title}: bench report</title>'
            f"<style>{_STYLE}</style></head><body>{body}"
            f'<script type="application/json" id="{REPORT_DATA_ID}">{_embedded_json(data)}</script>'
            "</body></html>\n")


def write_html_report(data, figures, path: Path) -> None:
    """Write the report to ``path`` (UTF-8); the caller decides whether it may be replaced."""
    Path(path).write_text(html_document(data, figures), encoding="utf-8")
