"""The plugin contract, in one place.

A plugin is any object with these attributes (a frozen dataclass instance is typical)::

    name: str                      unique plugin name, e.g. "modal"
    version: str                   the plugin's own version
    needs: tuple[str, ...]         result names it requires (must be provided by another plugin)
    provides: tuple[str, ...]      result names it returns
    wants: tuple[str, ...]         optional results: used if some plugin provides them (ordering only)
    settings_section: str | None   its TOML section name
    settings_type: type | None     the frozen dataclass for that section (fields made with settings.setting)
    run(ctx: Context) -> Mapping[str, Any]   returns exactly the names in ``provides``

It is exposed through the entry-point group ``swayscreen.plugins`` (see pyproject.toml);
the built-ins register the same way. Plugins never see IFC objects and never mutate what
they are given: they read ``ctx`` and return new, preferably frozen, results. Units are
in every field name or docstring.

Checks against criteria are returned as :class:`Check` objects in any result whose name
ends in ``_checks``; the assessment collects them all.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any, Protocol, runtime_checkable

from .settings import Settings
from .stick import StickModel
from .takeoff import BuildingTakeoff

__all__ = ["Plugin", "Context", "Check", "BasicPlugin"]


@runtime_checkable
class Plugin(Protocol):
    name: str
    version: str
    needs: tuple[str, ...]
    provides: tuple[str, ...]
    wants: tuple[str, ...]
    settings_section: str | None
    settings_type: type | None

    def run(self, ctx: "Context") -> Mapping[str, Any]: ...


@dataclass(frozen=True)
class Context:
    """What a plugin sees: the stick model, the takeoff (plain data), settings, earlier results.

    Attributes:
        stick: the derived stick model (None when no lateral system could be read).
        building: the building's takeoff (plain dataclasses, no IFC objects).
        settings: all settings sections.
        results: read-only mapping of result name -> result from earlier plugins.
    """

    stick: StickModel | None
    building: BuildingTakeoff
    settings: Settings
    results: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}))

    def need(self, name: str) -> Any:
        """A required earlier result (KeyError names it when missing)."""
        try:
            return self.results[name]
        except KeyError:
            raise KeyError(f"result {name!r} is not available") from None

    def section(self, name: str) -> Any:
        return self.settings[name]

    def with_results(self, results: Mapping[str, Any]) -> "Context":
        return Context(self.stick, self.building, self.settings, MappingProxyType(dict(results)))


@dataclass(frozen=True)
class Check:
    """One criterion checked: pass or flag, with the case it came from.

    Attributes:
        criterion: short plain name, e.g. "10-year peak acceleration (residential)".
        method: the estimate behind the value, e.g. "EN 1991-1-4 Annex B".
        value: the computed quantity, in ``unit``.
        limit: the limit, in ``unit``.
        unit: "mg", "-", "m"...
        passes: value <= limit.
        return_period_yr: return period of the wind (None where not applicable).
        direction_deg: wind direction, degrees clockwise from north, the wind blowing from.
        floor: storey name of the governing floor.
        note: validity warnings and assumptions.
        valid: False when the estimate behind ``value`` comes from a method used outside its
            stated range (shown, never hidden; see :mod:`.assessment` for how it counts).
    """

    criterion: str
    method: str
    value: float
    limit: float
    unit: str
    passes: bool
    return_period_yr: float | None = None
    direction_deg: float | None = None
    floor: str | None = None
    note: str = ""
    valid: bool = True

    @property
    def ratio(self) -> float:
        """value / limit (> 1 fails)."""
        return self.value / self.limit if self.limit else float("inf")


@dataclass(frozen=True)
class BasicPlugin:
    """Convenience: a plugin made from a function ``run(ctx) -> dict``."""

    name: str
    version: str
    func: Any
    needs: tuple[str, ...] = ()
    provides: tuple[str, ...] = ()
    wants: tuple[str, ...] = ()
    settings_section: str | None = None
    settings_type: type | None = None

    def run(self, ctx: Context) -> Mapping[str, Any]:
        return self.func(ctx)
