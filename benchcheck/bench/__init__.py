"""The bench graph built from a layout, and realizations of it under a perturbation."""

from benchcheck.bench.graph import SOURCE, Bench, build_bench
from benchcheck.bench.realization import Realization, split_dof

__all__ = ["SOURCE", "Bench", "Realization", "build_bench", "split_dof"]
