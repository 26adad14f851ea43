"""The review rules of every loaded plugin, each plugin's hook called on its own.

As for element types and hologram patterns (``benchcheck.evaluate.registries``): a plugin
whose hook raises or returns something other than a list of ``ReviewRule`` is named in a
``PluginError``, and a rule name registered twice is refused naming both plugins.
"""

from __future__ import annotations

import dataclasses
import re

from benchcheck.errors import PluginError
from benchcheck.registration import registered_objects
from benchcheck.review.types import ReviewRule

__all__ = ["HOOK_NAME", "collect_review_rules"]

HOOK_NAME = "benchcheck_register_review_rules"

# Rule names appear in tables and JSON; keep them plain identifiers.
_RULE_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


def collect_review_rules(plugin_manager) -> dict[str, ReviewRule]:
    """Every registered review rule by name, with ``plugin`` filled in.

    Parameters
    ----------
    plugin_manager : pluggy.PluginManager
        Made by ``benchcheck.plugin_manager.make_plugin_manager``.

    Returns
    -------
    dict of str to ReviewRule
        In registration order.

    Raises
    ------
    PluginError
        A hook that fails or returns something else than ReviewRule objects (naming the
        plugin), a rule without a plain name, or a rule name registered twice (naming both).
    """
    rules: dict[str, ReviewRule] = {}
    for plugin, rule in registered_objects(plugin_manager, HOOK_NAME, None, "ReviewRule objects"):
        if not isinstance(rule, ReviewRule):
            raise PluginError(f"plugin '{plugin}' registered {rule!r}; {HOOK_NAME} must return ReviewRule objects")
        if not _RULE_NAME.match(rule.name):
            raise PluginError(f"plugin '{plugin}': review rule name {rule.name!r} must be letters, digits and "
                              "underscores")
        if not callable(rule.check):
            raise PluginError(f"plugin '{plugin}': review rule '{rule.name}' has no callable check")
        if rule.name in rules:
            raise PluginError(f"review rule '{rule.name}' is registered twice: by plugin "
                              f"'{rules[rule.name].plugin}' and by plugin '{plugin}'")
        rules[rule.name] = dataclasses.replace(rule, plugin=plugin)
    return rules
