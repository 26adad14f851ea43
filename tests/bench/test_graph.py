"""The bench graph and realizations (DESIGN.md sections 2 and 4)."""

from __future__ import annotations

from pathlib import Path

import networkx as nx
import pytest

from benchcheck.api import load_layout
from benchcheck.bench import SOURCE, Realization, build_bench

LAYOUTS = Path(__file__).resolve().parents[2] / "layouts"


def test_every_plane_has_exactly_one_path_from_the_source():
    bench = build_bench(load_layout(LAYOUTS / "expander_folds_monitor.toml"))
    assert nx.is_arborescence(bench.graph)
    assert bench.path_to("monitor") == [SOURCE, "E1", "E2", "M1", "M2", "pickoff", "mon_lens", "monitor"]
    assert bench.path_to("work")[-2:] == ["pickoff", "work"]


def test_edges_carry_the_gaps():
    bench = build_bench(load_layout(LAYOUTS / "relay_4f_vortex.toml"))
    lengths = [data["length"] for _, _, data in bench.graph.edges(data=True)]
    # The gaps add up to the camera's path position (1e-12 m: sums of a few floats).
    assert sum(lengths) == pytest.approx(bench.element("cam").z, abs=1e-12)
    assert bench.graph.edges["relay.lens1", "relay.fourier"]["length"] == pytest.approx(0.3)


def test_realization_moves_one_element_and_leaves_the_nominal_bench_alone():
    bench = build_bench(load_layout(LAYOUTS / "relay_4f_vortex.toml"))
    realization = Realization(bench, {"relay.lens2.z": 1e-3, "relay.lens2.focal_length": -2e-3,
                                      "slm.shift_x": 8e-6, "source.waist": 1e-5})
    assert realization.element("relay.lens2").z == pytest.approx(bench.element("relay.lens2").z + 1e-3)
    assert realization.element("relay.lens2").value("focal_length") == pytest.approx(0.148)
    assert realization.element("slm").value("shift") == (8e-6, 0.0)
    nominal_waist = bench.layout.source.waist[0]
    assert realization.source().waist == pytest.approx((nominal_waist + 1e-5, nominal_waist + 1e-5))
    assert realization.element("relay.lens1") is bench.element("relay.lens1")
    assert bench.element("relay.lens2").z == pytest.approx(1.15)


def test_realization_refuses_unknown_names():
    bench = build_bench(load_layout(LAYOUTS / "relay_4f_vortex.toml"))
    with pytest.raises(ValueError, match="no element called 'nowhere'"):
        Realization(bench, {"nowhere.z": 1e-3})
