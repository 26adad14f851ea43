"""The wave stages compose the matrices the paraxial trace applied: an element's ray matrices
do not depend on the beam it meets (ABCD law; Siegman, Lasers (1986), ch. 15: only the
clipping share does), so taking them from the trace gives the stage of acting anew."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from benchcheck.api import load_layout
from benchcheck.bench.graph import build_bench
from benchcheck.bench.realization import Realization
from benchcheck.evaluate.wave_path import mask_planes, stage_between
from benchcheck.optics.beam_trace import trace_realization
from benchcheck.tolerance.dofs import resolve_dofs
from benchcheck.tolerance.samplers import Sampler

LAYOUTS = sorted((Path(__file__).resolve().parents[2] / "layouts").glob("*.toml"))


@pytest.mark.parametrize("path", LAYOUTS, ids=[path.stem for path in LAYOUTS])
def test_stages_from_the_traced_actions_are_those_of_acting_again(path):
    layout = load_layout(path)
    bench = build_bench(layout)
    perturbation = Sampler(tuple(resolve_dofs(layout)), "random", 5).perturbations(0, 1)[0]
    realization = Realization(bench, dict(perturbation))
    trace = trace_realization(realization)
    untraced = dataclasses.replace(trace, actions={})  # every element acts again
    observations = [element.name for element in layout.elements if element.type in ("camera", "plane")]
    compared = 0
    for observation in observations:
        path, masks = bench.path_to(observation)[1:], mask_planes(realization, trace, observation)
        # the wave path's own stages, each element to the next, and the whole path at once
        pairs = list(zip(masks, masks[1:])) + list(zip(path, path[1:])) + [(path[0], path[-1])]
        for start, end in pairs:
            kept = stage_between(realization, trace, start, end)
            fresh = stage_between(realization, untraced, start, end)
            assert np.array_equal(kept.matrix_x, fresh.matrix_x) and np.array_equal(kept.matrix_y, fresh.matrix_y)
            assert kept.amplitude == fresh.amplitude
            compared += 1
    assert compared
