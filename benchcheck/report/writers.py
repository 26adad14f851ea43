"""The table of report writers: what every loaded plugin registered, each name once."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace

from benchcheck.errors import PluginError
from benchcheck.report.types import ReportWriter

__all__ = ["collect_report_writers"]

_HOOK = "benchcheck_register_report_writers"


def collect_report_writers(plugin_manager) -> dict[str, ReportWriter]:
    """Report writers by format name, from every plugin that implements the hook.

    Raises
    ------
    PluginError
        Naming the plugin, when its hook raises, returns something other than a list of
        ``ReportWriter``, or registers a format name another plugin already has.
    """
    writers: dict[str, ReportWriter] = {}
    for implementation in getattr(plugin_manager.hook, _HOOK).get_hookimpls():
        plugin = implementation.plugin_name
        try:
            items = implementation.function()
        except Exception as error:  # name the plugin whose hook failed
            raise PluginError(f"plugin '{plugin}' failed in {_HOOK}: {type(error).__name__}: {error}") from error
        if isinstance(items, (str, bytes)) or not isinstance(items, Iterable):
            raise PluginError(f"plugin '{plugin}': {_HOOK} returned {items!r}, not a list of ReportWriter")
        for writer in items:
            if not isinstance(writer, ReportWriter):
                raise PluginError(f"plugin '{plugin}' registered {writer!r}; {_HOOK} must return ReportWriter objects")
            if writer.name in writers:
                raise PluginError(f"report format '{writer.name}' is registered twice: by plugin "
                                  f"'{writers[writer.name].plugin}' and by plugin '{plugin}'")
            writers[writer.name] = replace(writer, plugin=plugin)
    return writers
