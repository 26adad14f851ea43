"""The table of report writers: what every loaded plugin registered, each name once."""

from __future__ import annotations

from dataclasses import replace

from benchcheck.errors import PluginError
from benchcheck.registration import registered_objects
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
    for plugin, writer in registered_objects(plugin_manager, _HOOK, ReportWriter, "ReportWriter objects"):
        if writer.name in writers:
            raise PluginError(f"report format '{writer.name}' is registered twice: by plugin "
                              f"'{writers[writer.name].plugin}' and by plugin '{plugin}'")
        writers[writer.name] = replace(writer, plugin=plugin)
    return writers
