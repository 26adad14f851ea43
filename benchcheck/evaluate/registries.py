"""Element types and hologram patterns: the first-party ones plus what plugins register.

Each plugin's registration hook is called on its own, so a plugin that raises or returns
something else is named; a name registered twice is refused naming both plugins.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

from benchcheck.errors import PluginError
from benchcheck.layout.element_types import ElementType, builtin_element_types
from benchcheck.registration import registered_objects
from benchcheck.wave.holograms import HologramPattern, builtin_patterns

__all__ = ["Registries", "collect_registries"]


@dataclass(frozen=True)
class Registries:
    """What the loader and the engines need from plugins."""

    element_types: dict[str, ElementType]
    patterns: dict[str, HologramPattern]

    @property
    def pattern_fields(self) -> dict[str, dict[str, str]]:
        """Hologram pattern name -> its field kinds, for the loader."""
        return {name: dict(pattern.fields) for name, pattern in self.patterns.items()}

    @property
    def plugin_matrices(self) -> dict[str, Callable]:
        """Ray matrices of plugin element types, by type name."""
        return {name: kind.ray_matrices for name, kind in self.element_types.items() if kind.ray_matrices}

    @property
    def plugin_masks(self) -> dict[str, Callable]:
        """Wave masks of plugin element types, by type name."""
        return {name: kind.mask for name, kind in self.element_types.items() if kind.mask}


def collect_registries(plugin_manager=None) -> Registries:
    """First-party element types and patterns, plus those of every loaded plugin."""
    element_types = builtin_element_types()
    patterns = builtin_patterns()
    if plugin_manager is None:
        return Registries(element_types, patterns)
    owners: dict[str, str] = {}
    for plugin, element_type in registered_objects(plugin_manager, "benchcheck_register_element_types",
                                           ElementType, "ElementType objects"):
        if element_type.name in element_types:
            first = owners.get(element_type.name, "benchcheck (first party)")
            raise PluginError(f"element type '{element_type.name}' is registered twice: by {first} and by "
                              f"plugin '{plugin}'")
        if element_type.ray_matrices is None:
            raise PluginError(f"plugin '{plugin}': element type '{element_type.name}' has no ray_matrices")
        element_types[element_type.name] = replace(element_type, plugin=plugin)
        owners[element_type.name] = f"plugin '{plugin}'"
    for plugin, pattern in registered_objects(plugin_manager, "benchcheck_register_hologram_patterns",
                                      HologramPattern, "HologramPattern objects"):
        if pattern.name in patterns:
            first = owners.get("pattern:" + pattern.name, "benchcheck (first party)")
            raise PluginError(f"hologram pattern '{pattern.name}' is registered twice: by {first} and by "
                              f"plugin '{plugin}'")
        patterns[pattern.name] = pattern
        owners["pattern:" + pattern.name] = f"plugin '{plugin}'"
    return Registries(element_types, patterns)
