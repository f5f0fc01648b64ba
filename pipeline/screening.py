"""The screening pipeline: read -> derive -> plugins -> assess, for every building in a file.

Each arrow is a plain function over frozen dataclasses. Only the reader
(:func:`~.reading.read_model_and_source`) touches the IFC file; writing outputs is separate
(:mod:`.outputs`). When the outputs will be written, ``screen_file(..., keep_source=True)``
keeps the reader's open file on the run (:attr:`ScreeningRun.source`) so that the write-back
plans on it instead of parsing the file again; the write-back lets go of it
(:meth:`ScreeningRun.release_source`) and it is never pickled.
"""
from __future__ import annotations

import gc
import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

from .assessment import Assessment, assess
from .core_settings import CORE_SECTIONS
from .deriving import DerivedModel, derive_stick
from .plugin_api import Context
from .reading import read_model_and_source
from .registry import discover, order, settings_sections
from .settings import Settings, load_settings
from .takeoff import BuildingTakeoff, Takeoff

__all__ = ["BuildingScreening", "ScreeningRun", "load_plugins_and_settings", "screen_building", "screen_file"]


@dataclass(frozen=True)
class PluginFailure:
    plugin: str
    message: str


@dataclass(frozen=True)
class BuildingScreening:
    """Everything computed for one building.

    Attributes:
        building: the takeoff of this building.
        derived: the stick model (or None) with materials used, warnings and missing results.
        results: plugin results by name (read-only).
        failures: plugins that raised (their dependants are skipped and listed in ``skipped``).
        skipped: plugins not run, with the reason.
        assessment: pass / flagged / incomplete with the governing check.
        timings_s: seconds per stage and plugin (for the benchmark).
    """

    building: BuildingTakeoff
    derived: DerivedModel
    results: Any
    failures: tuple[PluginFailure, ...]
    skipped: tuple[str, ...]
    assessment: Assessment
    timings_s: dict[str, float] = field(default_factory=dict)

    # ``results`` is a read-only view (MappingProxyType), which pickle cannot write: a plain
    # dict crosses the process boundary and the view is rebuilt on arrival.
    def __getstate__(self) -> dict[str, Any]:
        state = dict(self.__dict__)
        state["results"] = dict(self.results)
        return state

    def __setstate__(self, state: dict[str, Any]) -> None:
        state = dict(state)
        state["results"] = MappingProxyType(dict(state["results"]))
        self.__dict__.update(state)


@dataclass(frozen=True)
class ScreeningRun:
    """One screened file.

    Attributes:
        takeoff: what was read; settings: the settings used.
        buildings: the screening of each building in the file.
        plugins: the ordered plugins that ran.
        timings_s: seconds per stage (for the benchmark).
        source: the reader's :class:`~.reading.SourceFile` (the open IFC file, read-only) when
            :func:`screen_file` was asked to keep it for the write-back, else None. Not part of
            the run's value (no repr, no comparison), never pickled (a run sent to another
            process arrives without it) and dropped by :meth:`release_source`.
    """

    takeoff: Takeoff
    settings: Settings
    buildings: tuple[BuildingScreening, ...]
    plugins: tuple[Any, ...]
    timings_s: dict[str, float] = field(default_factory=dict)
    source: Any = field(default=None, repr=False, compare=False)

    def release_source(self) -> None:
        """Let go of the open IFC file (it holds the parsed model: tens of MB on a large file).
        The field is a cache outside the run's value, so clearing it on the frozen run is safe."""
        object.__setattr__(self, "source", None)

    def __getstate__(self) -> dict[str, Any]:
        # The open ifcopenshell file cannot cross processes (and must not be copied): leave it out.
        state = dict(self.__dict__)
        state["source"] = None
        return state

    @property
    def status(self) -> str:
        statuses = {b.assessment.status for b in self.buildings}
        if "flagged" in statuses:
            return "flagged"
        if "incomplete" in statuses:
            return "incomplete"
        return "pass"


def load_plugins_and_settings(settings_path: str | Path | None, plugins: Sequence[Any] | None = None):
    """Discover (or take) plugins, order them, and read settings against all their sections."""
    found = list(plugins) if plugins is not None else discover()
    ordered = order(found)
    sections = settings_sections(ordered)
    return ordered, load_settings(settings_path, sections)


def screen_building(building: BuildingTakeoff, settings: Settings, plugins: Sequence[Any], *,
                    true_north_deg: float = 0.0) -> BuildingScreening:
    """Derive the stick model of one building and run the ordered plugins over it."""
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    derived = derive_stick(building, settings, true_north_deg=true_north_deg)
    timings["derive"] = time.perf_counter() - t0
    ctx = Context(derived.stick, building, settings)
    results: dict[str, Any] = {}
    failures: list[PluginFailure] = []
    skipped: list[str] = []
    unavailable: set[str] = set()
    for plugin in plugins:
        blocked = [r for r in plugin.needs if r in unavailable or r not in results]
        if derived.stick is None and not getattr(plugin, "runs_without_stick", False):
            skipped.append(f"{plugin.name}: no stick model ({'; '.join(derived.missing) or 'no lateral system'})")
            unavailable.update(plugin.provides)
            continue
        if blocked:
            skipped.append(f"{plugin.name}: needs {', '.join(blocked)}, which could not be computed")
            unavailable.update(plugin.provides)
            continue
        t1 = time.perf_counter()
        try:
            out = plugin.run(ctx.with_results(results))
        except Exception as exc:  # an estimator failing must not stop the screening
            failures.append(PluginFailure(plugin.name, f"{type(exc).__name__}: {exc}"))
            unavailable.update(plugin.provides)
            continue
        finally:
            timings[f"plugin:{plugin.name}"] = time.perf_counter() - t1
        missing = set(plugin.provides) - set(out)
        extra = set(out) - set(plugin.provides)
        if missing or extra:
            failures.append(PluginFailure(
                plugin.name, f"returned {sorted(out)} but declares provides {list(plugin.provides)}"))
            unavailable.update(plugin.provides)
            continue
        results.update(out)
    height = derived.stick.height_m if derived.stick is not None else _takeoff_height(building)
    missing_notes = tuple(derived.missing) + tuple(f"{f.plugin} failed: {f.message}" for f in failures)
    assessment = assess(
        results,
        height_m=height,
        min_wind_height_m=settings["levels"].min_wind_height_m,
        missing=missing_notes,
        failed=tuple(f.plugin for f in failures),
    )
    return BuildingScreening(
        building, derived, MappingProxyType(results), tuple(failures), tuple(skipped), assessment, timings
    )


def _takeoff_height(building: BuildingTakeoff) -> float | None:
    above = building.above_grade
    if not above:
        return None
    top = max(s.elevation_m + s.height_m for s in above)
    return top - building.ground_elevation_m


def screen_file(
    path: str | Path,
    settings_path: str | Path | None = None,
    *,
    plugins: Sequence[Any] | None = None,
    settings: Settings | None = None,
    keep_source: bool = False,
    freeze_gc: bool = False,
) -> ScreeningRun:
    """Read one IFC file and screen every building in it.

    ``freeze_gc=True`` (for one-shot work: the CLI, a batch item) runs the read with the
    cyclic garbage collector paused and then moves everything alive into its permanent
    generation (:func:`gc.freeze`): the takeoff's tens of thousands of objects live until the
    work ends, and each later full collection would otherwise walk them again (about 50 ms
    per pass on the 160-storey benchmark tower). It also parks the reader's open file until
    then, so that dropping it after the write-back costs nothing; a process that exits right
    after (``swayscreen`` itself, see :func:`.cli.run`) never pays for tearing the parsed
    model down (about 0.1 s on that tower). The caller calls :func:`end_one_shot` when it
    moves on in the same process.

    ``keep_source=True`` keeps the reader's open file on the run (:attr:`ScreeningRun.source`)
    for :func:`~.outputs.write_outputs`, which then writes back without a second parse and
    releases it; leave it False when no outputs will be written, so the parsed model is freed
    as soon as the takeoff is read.
    """
    timings: dict[str, float] = {}
    ordered, loaded = load_plugins_and_settings(settings_path, plugins)
    settings = settings or loaded
    t0 = time.perf_counter()
    paused = freeze_gc and gc.isenabled()
    if paused:
        gc.disable()
    try:
        takeoff, source = read_model_and_source(path, settings["levels"])
    finally:
        if paused:
            gc.enable()
    if freeze_gc:
        _PARKED.append(source)
        gc.freeze()
    timings["read"] = time.perf_counter() - t0
    if not keep_source:
        source = None
    buildings = tuple(screen_building(b, settings, ordered, true_north_deg=takeoff.true_north_deg)
                      for b in takeoff.buildings)
    return ScreeningRun(takeoff, settings, buildings, tuple(ordered), timings, source)


_PARKED: list[Any] = []  # open files kept alive until end_one_shot (see screen_file)


def end_one_shot() -> None:
    """Undo what ``screen_file(..., freeze_gc=True)`` did to the process: collections may walk
    the takeoff again, and the parked open files are let go (and freed now)."""
    gc.unfreeze()
    _PARKED.clear()


def default_sections() -> dict[str, type]:
    """Core sections only (for commands that need no plugins)."""
    return dict(CORE_SECTIONS)
