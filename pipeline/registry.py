"""Plugin discovery, validation and ordering.

Plugins are found through the entry-point group ``swayscreen.plugins`` (built-ins are
registered there too, in pyproject.toml). Each is validated when it loads: a broken
plugin is an error that names it, never silently skipped. The run order comes from a
topological sort of a graph (networkx) whose edges go from the provider of a result to
every plugin that needs or wants it. A cycle, a missing provider, or two providers of
one result are errors naming the plugins involved.
"""
from __future__ import annotations

import dataclasses
from collections.abc import Iterable, Mapping, Sequence
from importlib.metadata import entry_points
from typing import Any

import networkx as nx

from .core_settings import CORE_SECTIONS
from .errors import PluginError

__all__ = ["ENTRY_POINT_GROUP", "discover", "validate", "order", "settings_sections"]

ENTRY_POINT_GROUP = "swayscreen.plugins"


def validate(plugin: Any, origin: str = "") -> Any:
    """Check a plugin object against the contract in :mod:`.plugin_api`; return it."""
    label = f"plugin {getattr(plugin, 'name', origin or plugin)!r}" + (f" ({origin})" if origin else "")
    for attr, kind in (("name", str), ("version", str)):
        value = getattr(plugin, attr, None)
        if not isinstance(value, kind) or not value:
            raise PluginError(f"{label}: attribute {attr!r} must be a non-empty string")
    for attr in ("needs", "provides", "wants"):
        value = getattr(plugin, attr, () if attr == "wants" else None)
        if not isinstance(value, (tuple, list)) or not all(isinstance(v, str) and v for v in value):
            raise PluginError(f"{label}: attribute {attr!r} must be a tuple of result names")
    if not plugin.provides:
        raise PluginError(f"{label}: provides nothing")
    overlap = set(plugin.needs) & set(plugin.provides)
    if overlap:
        raise PluginError(f"{label}: needs and provides the same result(s) {sorted(overlap)}")
    if not callable(getattr(plugin, "run", None)):
        raise PluginError(f"{label}: has no callable run(ctx)")
    section = getattr(plugin, "settings_section", None)
    stype = getattr(plugin, "settings_type", None)
    if stype is not None:
        if not (isinstance(stype, type) and dataclasses.is_dataclass(stype)):
            raise PluginError(f"{label}: settings_type must be a dataclass")
        if not section:
            raise PluginError(f"{label}: settings_type given without settings_section")
        try:
            stype()
        except TypeError as exc:
            raise PluginError(f"{label}: settings_type must have a default for every field ({exc})") from None
        if section in CORE_SECTIONS:
            raise PluginError(f"{label}: settings section [{section}] is reserved for the core")
    return plugin


def discover(group: str = ENTRY_POINT_GROUP) -> list[Any]:
    """Load and validate every plugin registered in the entry-point group, sorted by name."""
    found: dict[str, Any] = {}
    for ep in entry_points(group=group):
        try:
            obj = ep.load()
        except Exception as exc:  # a broken plugin must fail loudly, naming itself
            raise PluginError(f"plugin entry point {ep.name!r} ({ep.value}) failed to load: {exc}") from exc
        if isinstance(obj, type):
            try:
                obj = obj()
            except Exception as exc:
                raise PluginError(f"plugin entry point {ep.name!r}: cannot instantiate {ep.value}: {exc}") from exc
        validate(obj, origin=ep.value)
        if obj.name in found:
            raise PluginError(f"two plugins are named {obj.name!r} ({ep.value} and another entry point)")
        found[obj.name] = obj
    return [found[k] for k in sorted(found)]


def settings_sections(plugins: Iterable[Any]) -> dict[str, type]:
    """All settings sections: the core ones, then each plugin's (one owner per section)."""
    sections: dict[str, type] = dict(CORE_SECTIONS)
    owner: dict[str, str] = {}
    for p in plugins:
        sec, stype = getattr(p, "settings_section", None), getattr(p, "settings_type", None)
        if stype is None:
            continue
        if sec in sections and sections[sec] is not stype:
            raise PluginError(
                f"plugins {owner.get(sec, 'core')!r} and {p.name!r} both declare settings section [{sec}]"
            )
        sections[sec] = stype
        owner[sec] = p.name
    return sections


def order(plugins: Sequence[Any]) -> list[Any]:
    """Order plugins so every result is computed before it is needed.

    Raises:
        PluginError: two providers of one result, a need nobody provides, or a cycle.
    """
    provider: dict[str, str] = {}
    by_name: dict[str, Any] = {}
    for p in plugins:
        if p.name in by_name:
            raise PluginError(f"two plugins are named {p.name!r}")
        by_name[p.name] = p
        for r in p.provides:
            if r in provider:
                raise PluginError(f"result {r!r} is provided by two plugins: {provider[r]!r} and {p.name!r}")
            provider[r] = p.name
    graph = nx.DiGraph()
    graph.add_nodes_from(by_name)
    for p in plugins:
        for r in p.needs:
            if r not in provider:
                raise PluginError(f"plugin {p.name!r} needs result {r!r}, which no plugin provides")
            graph.add_edge(provider[r], p.name, result=r)
        for r in getattr(p, "wants", ()):
            if r in provider:
                graph.add_edge(provider[r], p.name, result=r)
    try:
        cycle = nx.find_cycle(graph)
    except nx.NetworkXNoCycle:
        cycle = None
    if cycle:
        path = " -> ".join(f"{a} ({graph.edges[a, b]['result']})" for a, b in cycle) + f" -> {cycle[0][0]}"
        raise PluginError(f"plugins depend on each other in a cycle: {path}")
    return [by_name[n] for n in nx.lexicographical_topological_sort(graph)]


def describe(plugins: Sequence[Any]) -> list[Mapping[str, Any]]:
    """Plain rows for ``swayscreen plugins``."""
    return [
        {
            "name": p.name,
            "version": p.version,
            "needs": list(p.needs),
            "wants": list(getattr(p, "wants", ())),
            "provides": list(p.provides),
            "settings_section": getattr(p, "settings_section", None) if getattr(p, "settings_type", None) else None,
            "module": type(p).__module__ if not hasattr(p, "func") else getattr(p.func, "__module__", ""),
        }
        for p in plugins
    ]
