"""Planes upstream of every moved dof are reused, and the result is what a fresh run gives.

A consistency check of the cache (no physics here): the field at a mask plane depends only on
the source and the elements up to it (DESIGN.md, stages between mask planes), so a
realization that moves only downstream elements must give bit-for-bit the fields of a
simulator that never saw the earlier realization.
"""

from __future__ import annotations

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.optics.beam_trace import trace_realization
from tests.speed.conftest import scaled_relay_text

@pytest.fixture(scope="module")
def layout(tmp_path_factory):
    path = tmp_path_factory.mktemp("upstream") / "relay.toml"
    path.write_text(scaled_relay_text(256))
    return load_layout(path)


def _simulate(evaluator, perturbation):
    realization = evaluator.realization(perturbation)
    return evaluator.simulate(realization, trace_realization(realization))


@pytest.mark.parametrize("dof, reused", [
    ("cam.z", {"slm", "relay.fourier"}),
    ("relay.fourier.x", {"slm"}),
    ("relay.lens2.focal_length", {"slm", "relay.fourier"}),
    ("source.waist", set()),
    ("slm.shift_x", set()),
])
def test_downstream_moves_reuse_upstream_planes(layout, dof, reused):
    warm = make_evaluator(layout)
    nominal = _simulate(warm, {})
    moved = _simulate(warm, {dof: 1e-5})
    fresh = _simulate(make_evaluator(layout), {dof: 1e-5})
    for name in ("slm", "relay.fourier", "cam"):
        assert (moved.planes[name].field is nominal.planes[name].field) == (name in reused), name
        assert np.array_equal(moved.planes[name].passed.values, fresh.planes[name].passed.values), name
    assert moved.losses == fresh.losses
    assert moved.incident_power == fresh.incident_power
