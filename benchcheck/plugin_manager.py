"""Making the plugin manager: load plugins from the ``benchcheck`` entry-point group.

The manager is made by ``make_plugin_manager`` when a command needs it, never at import time.
A plugin that fails to import, whose hooks do not match the specifications, or that uses a
hook name no specification has (a misspelling) is recorded with its distribution and the
reason and left out; the other plugins load. ``describe_plugins`` turns the result into
plain records for ``benchcheck plugins``.

Set the environment variable ``BENCHCHECK_NO_PLUGINS=1`` to switch auto-loading off (for
tests and debugging); first-party plugins are then off too.
"""

from __future__ import annotations

import difflib
import importlib.metadata
import os
from collections.abc import Callable, Iterable
from dataclasses import asdict, dataclass
from typing import Any

import pluggy

from benchcheck import hookspecs
from benchcheck.errors import PluginError

__all__ = [
    "ENTRY_POINT_GROUP",
    "NO_PLUGINS_ENV",
    "BenchcheckPluginManager",
    "PluginLoadRecord",
    "PluginInfo",
    "make_plugin_manager",
    "check_pending",
    "unknown_hooks",
    "describe_plugins",
]

ENTRY_POINT_GROUP = hookspecs.PROJECT_NAME
NO_PLUGINS_ENV = "BENCHCHECK_NO_PLUGINS"

# Registration hooks and the field of PluginInfo listing what each one adds.
_REGISTRATION_HOOKS = {
    "benchcheck_register_metrics": "metrics",
    "benchcheck_register_hologram_patterns": "patterns",
    "benchcheck_register_element_types": "element_types",
    "benchcheck_register_review_rules": "review_rules",
    "benchcheck_register_report_writers": "report_writers",
}


@dataclass(frozen=True)
class PluginLoadRecord:
    """Where a plugin came from and whether it loaded.

    Attributes
    ----------
    name : str
        Plugin name (the entry-point name).
    distribution : str
        Name of the installed distribution that declares the entry point ("" if none).
    version : str
        Version of that distribution ("" if none).
    status : str
        "loaded", "failed" or "disabled".
    reason : str
        Why it failed or is disabled ("" when loaded).
    module : str
        The entry point's target (``package.module``).
    """

    name: str
    distribution: str
    version: str
    status: str
    reason: str = ""
    module: str = ""


class BenchcheckPluginManager(pluggy.PluginManager):
    """A pluggy manager that also remembers where each plugin came from."""

    def __init__(self) -> None:
        super().__init__(hookspecs.PROJECT_NAME)
        self.add_hookspecs(hookspecs)
        self.load_records: list[PluginLoadRecord] = []


@dataclass(frozen=True)
class PluginInfo:
    """What one plugin is and what it adds, for people and for JSON output.

    Attributes
    ----------
    name, distribution, version, status, reason, module : str
        As in ``PluginLoadRecord``.
    hooks : tuple of str
        Hook names the plugin implements.
    metrics, patterns, element_types, review_rules, report_writers : tuple of str
        Names of what the plugin registers through each registration hook.
    """

    name: str
    distribution: str = ""
    version: str = ""
    status: str = "loaded"
    reason: str = ""
    module: str = ""
    hooks: tuple[str, ...] = ()
    metrics: tuple[str, ...] = ()
    patterns: tuple[str, ...] = ()
    element_types: tuple[str, ...] = ()
    review_rules: tuple[str, ...] = ()
    report_writers: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready mapping (lists, not tuples)."""
        return {
            key: list(value) if isinstance(value, tuple) else value
            for key, value in asdict(self).items()
        }


def unknown_hooks(plugin_manager: pluggy.PluginManager, plugin: object) -> list[str]:
    """Hook names that ``plugin`` implements but no specification declares.

    Implementations marked ``optionalhook=True`` are allowed to have no specification.
    """
    names = []
    for caller in plugin_manager.get_hookcallers(plugin) or []:
        if caller.has_spec():
            continue
        if any(
            impl.plugin is plugin and not impl.optionalhook for impl in caller.get_hookimpls()
        ):
            names.append(caller.name)
    return sorted(names)


def _spelling_hint(hook_name: str, plugin_manager: pluggy.PluginManager) -> str:
    known = [
        name
        for name, caller in vars(plugin_manager.hook).items()
        if not name.startswith("_") and caller.has_spec()
    ]
    close = difflib.get_close_matches(hook_name, known, n=1)
    return f" (did you mean '{close[0]}'?)" if close else ""


def _unknown_hook_reason(plugin_manager: pluggy.PluginManager, names: list[str]) -> str:
    parts = [f"'{name}'{_spelling_hint(name, plugin_manager)}" for name in names]
    return "implements hooks no specification declares: " + ", ".join(parts)


def check_pending(plugin_manager: pluggy.PluginManager) -> None:
    """Check that every registered hook implementation matches a specification.

    Raises
    ------
    PluginError
        Naming each plugin and each unknown (for example misspelled) hook, with the closest
        known hook name.
    """
    problems = []
    for name, plugin in plugin_manager.list_name_plugin():
        if plugin is None:  # blocked (disabled) name
            continue
        unknown = unknown_hooks(plugin_manager, plugin)
        if unknown:
            problems.append(f"plugin '{name}' {_unknown_hook_reason(plugin_manager, unknown)}")
    if problems:
        raise PluginError("; ".join(problems))
    # pluggy's own check as well, in case a future pluggy checks more than names.
    try:
        plugin_manager.check_pending()
    except pluggy.PluginValidationError as error:
        raise PluginError(f"plugin '{error.plugin}' is invalid: {error}") from error


def _distribution_of(entry_point: importlib.metadata.EntryPoint) -> tuple[str, str]:
    dist = getattr(entry_point, "dist", None)
    if dist is None:
        return "", ""
    return str(dist.metadata["Name"] or dist.name), str(dist.version)


def _load_entry_points(
    plugin_manager: BenchcheckPluginManager, disabled: frozenset[str]
) -> None:
    for entry_point in importlib.metadata.entry_points(group=ENTRY_POINT_GROUP):
        distribution, version = _distribution_of(entry_point)

        def record(status: str, reason: str = "") -> None:
            plugin_manager.load_records.append(
                PluginLoadRecord(
                    entry_point.name, distribution, version, status, reason, entry_point.value
                )
            )

        if entry_point.name in disabled:
            plugin_manager.set_blocked(entry_point.name)
            record("disabled", "disabled on the command line")
            continue
        if plugin_manager.has_plugin(entry_point.name) or plugin_manager.is_blocked(entry_point.name):
            record("failed", f"another plugin already uses the name '{entry_point.name}'")
            continue
        try:
            plugin = entry_point.load()
        except Exception as error:  # an import failure is recorded, not a crash
            record("failed", f"import of '{entry_point.value}' failed: {type(error).__name__}: {error}")
            continue
        _register_checked(plugin_manager, plugin, entry_point.name, record)


def _register_checked(
    plugin_manager: BenchcheckPluginManager,
    plugin: object,
    name: str,
    record: Callable[..., None],
) -> None:
    """Register a plugin; on a bad hook signature or unknown hook, record it and leave it out."""
    try:
        plugin_manager.register(plugin, name=name)
    except (pluggy.PluginValidationError, ValueError) as error:
        record("failed", f"rejected by the plugin manager: {error}")
        return
    unknown = unknown_hooks(plugin_manager, plugin)
    if unknown:
        plugin_manager.unregister(plugin)
        record("failed", _unknown_hook_reason(plugin_manager, unknown))
        return
    record("loaded")


def make_plugin_manager(
    disabled: Iterable[str] = (),
    autoload: bool = True,
    extra_plugins: Iterable[tuple[str, object]] = (),
) -> BenchcheckPluginManager:
    """Make a plugin manager and load the plugins of the ``benchcheck`` entry-point group.

    Parameters
    ----------
    disabled : iterable of str
        Plugin (entry-point) names not to load (``--disable-plugin NAME``).
    autoload : bool
        Load entry-point plugins. Forced off when the environment variable
        ``BENCHCHECK_NO_PLUGINS`` is "1" (``--no-plugins`` passes False).
    extra_plugins : iterable of (str, object)
        Plugins to register directly by name (modules or objects with hook implementations),
        for tests and embedding; checked like entry-point plugins.

    Returns
    -------
    BenchcheckPluginManager
        With ``load_records`` saying, for each plugin, its distribution, version and whether
        it loaded (with the reason when not).

    Raises
    ------
    PluginError
        If, after loading, a registered plugin still has hooks without specification
        (``check_pending``).
    """
    plugin_manager = BenchcheckPluginManager()
    disabled_names = frozenset(disabled)
    if autoload and os.environ.get(NO_PLUGINS_ENV, "").strip() != "1":
        _load_entry_points(plugin_manager, disabled_names)
    for name, plugin in extra_plugins:

        def record(status: str, reason: str = "", _name: str = name) -> None:
            plugin_manager.load_records.append(PluginLoadRecord(_name, "", "", status, reason))

        if name in disabled_names:
            record("disabled", "disabled on the command line")
            continue
        _register_checked(plugin_manager, plugin, name, record)
    check_pending(plugin_manager)
    return plugin_manager


def _registered_names(function: Callable[[], Any], hook_name: str) -> tuple[tuple[str, ...], str]:
    """Call one registration hook implementation for listing; never raises."""
    try:
        objects = function()
        return tuple(str(getattr(item, "name", item)) for item in objects or ()), ""
    except Exception as error:  # listing must survive a broken plugin
        return (), f"{hook_name} failed: {type(error).__name__}: {error}"


def describe_plugins(plugin_manager: pluggy.PluginManager) -> list[PluginInfo]:
    """Describe every plugin the manager knows: loaded, failed to load, or disabled.

    Returns
    -------
    list of PluginInfo
        Loaded plugins first (in registration order), then failed and disabled ones with the
        reason. A registration hook that raises while listing is reported in ``reason``.
    """
    all_records = list(getattr(plugin_manager, "load_records", []))
    loaded_records = {record.name: record for record in all_records if record.status == "loaded"}
    infos = []
    for name, plugin in plugin_manager.list_name_plugin():
        if plugin is None:
            continue
        record = loaded_records.get(name) or PluginLoadRecord(name, "", "", "loaded")
        hooks = sorted(caller.name for caller in plugin_manager.get_hookcallers(plugin) or [])
        added: dict[str, tuple[str, ...]] = {}
        problems = []
        for hook_name, field_name in _REGISTRATION_HOOKS.items():
            implementations = [
                impl
                for impl in getattr(plugin_manager.hook, hook_name).get_hookimpls()
                if impl.plugin is plugin
            ]
            names: tuple[str, ...] = ()
            for impl in implementations:
                found, problem = _registered_names(impl.function, hook_name)
                names += found
                if problem:
                    problems.append(problem)
            added[field_name] = names
        infos.append(
            PluginInfo(
                name=name,
                distribution=record.distribution,
                version=record.version,
                status="loaded",
                reason="; ".join(problems),
                module=record.module or getattr(plugin, "__name__", type(plugin).__name__),
                hooks=tuple(hooks),
                **added,
            )
        )
    for record in all_records:
        if record.status != "loaded":
            infos.append(
                PluginInfo(
                    name=record.name,
                    distribution=record.distribution,
                    version=record.version,
                    status=record.status,
                    reason=record.reason,
                    module=record.module,
                )
            )
    return infos
