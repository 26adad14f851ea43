"""Collecting what plugins register: each plugin's hook called on its own, so a failure names it.

pluggy stops a hook call at the first exception and does not say which plugin returned what,
so the registries (metrics, element types, hologram patterns, review rules, report writers)
walk the hook's implementations one by one through this helper.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator

from benchcheck.errors import PluginError

__all__ = ["registered_objects"]


def registered_objects(plugin_manager, hook_name: str, kind: type | None, what: str) -> Iterator[tuple[str, object]]:
    """Yield (plugin name, object) for everything the plugins' ``hook_name`` returns.

    Parameters
    ----------
    plugin_manager : pluggy.PluginManager
        Made by ``benchcheck.plugin_manager.make_plugin_manager``.
    hook_name : str
        A registration hook of ``benchcheck.hookspecs``.
    kind : type or None
        The class every object must be (None: the caller checks).
    what : str
        How to name the objects in messages ("Metric objects").

    Raises
    ------
    PluginError
        Naming the plugin, when its hook raises, returns something other than a list, or
        returns an object that is not a ``kind``.
    """
    for implementation in getattr(plugin_manager.hook, hook_name).get_hookimpls():
        plugin = implementation.plugin_name
        try:
            items = implementation.function()
        except Exception as error:  # a plugin's bug must not hide which plugin it was
            raise PluginError(f"plugin '{plugin}' failed in {hook_name}: {type(error).__name__}: {error}") from error
        if isinstance(items, (str, bytes)) or not isinstance(items, Iterable):
            raise PluginError(f"plugin '{plugin}': {hook_name} returned {items!r}, not a list of {what}")
        for item in items:
            if kind is not None and not isinstance(item, kind):
                raise PluginError(f"plugin '{plugin}' registered {item!r}; {hook_name} must return {what}")
            yield plugin, item
