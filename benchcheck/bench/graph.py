"""The bench: a directed graph of planes joined by free-space gaps, built from a layout."""

from __future__ import annotations

import functools
from collections.abc import Iterator
from dataclasses import dataclass

import networkx as nx

from benchcheck.layout.model import MAIN_ARM, Element, Layout

__all__ = ["SOURCE", "Bench", "build_bench"]

#: Name of the node that stands for the laser.
SOURCE = "source"


@dataclass(frozen=True)
class Bench:
    """A layout as a graph: nodes are planes (the source and every element), edges are gaps.

    Edge attribute ``length`` is the nominal gap (m). Every plane is reachable from the
    source along exactly one path; a splitter has one out-edge per arm it starts.
    """

    layout: Layout
    graph: nx.DiGraph

    def path_to(self, name: str) -> list[str]:
        """Plane names from the source to ``name``, both included."""
        path = self._paths.get(name)
        if path is None:  # not a plane of the bench: networkx says so
            return nx.shortest_path(self.graph, SOURCE, name)
        return list(path)

    @functools.cached_property
    def _paths(self) -> dict[str, tuple[str, ...]]:
        # the graph is a tree fixed when the bench is built; every trial's stages walk it
        return {name: tuple(path) for name, path in nx.single_source_shortest_path(self.graph, SOURCE).items()}

    def planes(self) -> list[str]:
        """Every element in trace order: depth first from the source, main arm before branches."""
        return list(self._order)

    def predecessor(self, name: str) -> str:
        """The plane the beam comes from to ``name`` (the source for the first element)."""
        return self._predecessors[name]

    @functools.cached_property
    def _order(self) -> tuple[str, ...]:
        nodes = nx.dfs_preorder_nodes(self.graph, SOURCE, sort_neighbors=self._main_first)
        return tuple(node for node in nodes if node != SOURCE)

    @functools.cached_property
    def _predecessors(self) -> dict[str, str]:
        return {name: next(iter(self.graph.predecessors(name))) for name in self._order}

    def element(self, name: str) -> Element:
        return self.graph.nodes[name]["element"]

    def elements(self) -> Iterator[Element]:
        for name in self.planes():
            yield self.element(name)

    def _main_first(self, neighbours):
        return sorted(neighbours, key=lambda name: (self.graph.nodes[name]["element"].arm != MAIN_ARM, name))


def build_bench(layout: Layout) -> Bench:
    """Build the bench graph of a validated layout.

    The loader has already checked that each arm's elements are in increasing z and that
    every arm is started by a splitter listed before it.
    """
    graph = nx.DiGraph()
    graph.add_node(SOURCE, element=None, z=0.0, arm=MAIN_ARM)
    last_in_arm: dict[str, str] = {MAIN_ARM: SOURCE}
    positions: dict[str, float] = {SOURCE: 0.0}
    for element in layout.elements:
        graph.add_node(element.name, element=element, z=element.z, arm=element.arm)
        if element.arm in last_in_arm:
            previous = last_in_arm[element.arm]
        else:
            previous = layout.arms[element.arm]  # the splitter that starts this arm
        graph.add_edge(previous, element.name, length=element.z - positions[previous], arm=element.arm)
        last_in_arm[element.arm] = element.name
        positions[element.name] = element.z
    return Bench(layout=layout, graph=graph)
