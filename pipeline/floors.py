"""Which storeys become sway floors, and which slabs and elements belong to each.

The rule (a storey's elevation is its floor):

* Above-grade storeys are sorted by elevation; storeys whose elevations lie within
  ``LevelSettings.floor_tolerance_m`` of each other are one physical floor (a "group").
* The lowest group is the ground: its floor sits on the fixed base and is **not** a sway
  floor. The base elevation is its elevation.
* Every higher group's floor is a sway floor. Floor ``i`` (0-based) is the floor at the
  top of group ``i``: the segment below floor ``i`` is made of the walls and columns of
  group ``i`` (group 0 = the ground storey), and its length is the difference of the
  two floor elevations.
* The roof: when slabs lie above the top group's floor (by more than the tolerance), the
  lowest cluster of them is the roof, an extra floor on top of the top group (its
  ``storey_id`` is the top storey's GlobalId with "#roof" appended, because no
  IfcBuildingStorey has that floor as its own). When no such slab exists but the top
  group holds walls or columns at least ``ROOF_MIN_ELEMENT_M`` tall, the roof is placed at
  the top of the top storey (its height) and flagged as having no slab. Otherwise (a
  "roof" storey holding only the roof slab and perhaps parapets) the top group's own
  floor is the roof.
* Groups holding no slabs, walls or columns at all (datum-only storeys) are not floors.
* Slabs thinner than ``min_slab_thickness_m`` are finishes (the superimposed dead load
  covers them); slabs with their top within the tolerance of the base are the ground
  slab (not sway mass); slabs within the tolerance of a floor form its plate; the rest
  (landings, mezzanines, pitched roofs) are "loose": their weight is shared between the
  floors around them by elevation, like walls.
"""
from __future__ import annotations

import bisect
import math
from dataclasses import dataclass

from .core_settings import LevelSettings
from .takeoff import BuildingTakeoff, Column, Slab, Storey, Wall

__all__ = ["ROOF_MIN_ELEMENT_M", "Floor", "FloorLayout", "plan_floors", "vertical_shares", "vertical_share_pairs"]

ROOF_MIN_ELEMENT_M = 2.0
"""Walls/columns shorter than this on the top storey are parapets or upstands, not a storey
(common practice: parapets are about 1.0-1.5 m high)."""


@dataclass(frozen=True)
class Floor:
    """One sway floor.

    Attributes:
        index: level index (0 = lowest floor above the base).
        name: storey name(s); the extra roof is "<top storey> roof".
        storey_id: GlobalId of the storey whose floor this is ("<id>#roof" for an extra roof).
        elevation_m: world z of the floor.
        height_m: length of the segment below (m).
        segment_storeys: the storeys whose walls and columns form the segment below.
        floor_storeys: the storeys whose floor this is (empty for an extra roof).
        usage: occupancy from the storeys, else None.
        is_roof: the top floor.
        slabs: the slabs forming its plate.
        roof_without_slab: an extra roof placed from the storey height, no slab found.
    """

    index: int
    name: str
    storey_id: str
    elevation_m: float
    height_m: float
    segment_storeys: tuple[Storey, ...]
    floor_storeys: tuple[Storey, ...]
    usage: str | None
    is_roof: bool
    slabs: tuple[Slab, ...]
    roof_without_slab: bool = False


@dataclass(frozen=True)
class FloorLayout:
    """The sway floors of a building and what is distributed over them.

    Attributes:
        base_elevation_m: world z of the fixed base (the ground storey's elevation), None
            when there is no above-grade storey.
        floors: the sway floors, lowest first.
        walls, columns: every wall and column of the above-grade storeys (their weight is
            shared between floors by elevation; see :func:`vertical_shares`).
        loose_slabs: slabs not at a floor (shared by elevation).
        notes: assumptions and problems, one sentence each.
    """

    base_elevation_m: float | None
    floors: tuple[Floor, ...]
    walls: tuple[Wall, ...]
    columns: tuple[Column, ...]
    loose_slabs: tuple[Slab, ...]
    notes: tuple[str, ...]

    @property
    def nodes_m(self) -> tuple[float, ...]:
        """Base elevation followed by the floor elevations (m)."""
        if self.base_elevation_m is None:
            return ()
        return (self.base_elevation_m,) + tuple(f.elevation_m for f in self.floors)

    def tributary_height_m(self, i: int) -> float:
        """Half the storey below plus half the storey above floor ``i`` (roof: half below only)."""
        below = self.floors[i].height_m
        above = self.floors[i + 1].height_m if i + 1 < len(self.floors) else 0.0
        return 0.5 * (below + above)


def vertical_shares(nodes: tuple[float, ...] | list[float], z0: float, z1: float) -> list[float]:
    """Fractions of a uniform vertical piece [z0, z1] lumped onto floors ``nodes[1:]``.

    The piece is lumped by the linear (hat) shape functions of the floor elevations: the
    part between two floors goes to each in proportion to its closeness (a storey-high
    wall gives half to the floor below and half to the floor above). The part below
    ``nodes[0]`` (the base) is dropped; the part above the top floor goes to the top floor.
    Returns one fraction per floor (sum <= 1).
    """
    out = [0.0] * max(len(nodes) - 1, 0)
    for k, f in vertical_share_pairs(nodes, z0, z1):
        out[k] = f
    return out


def vertical_share_pairs(nodes: tuple[float, ...] | list[float], z0: float, z1: float) -> tuple[tuple[int, float], ...]:
    """The non-zero entries of :func:`vertical_shares` as (floor index, fraction), in floor order,
    found without a list over all floors (the same additions in the same order, so the same
    numbers): cost grows with the floors the piece spans, not with the building."""
    n = len(nodes) - 1
    length = z1 - z0
    if n <= 0 or length <= 0.0:
        return ()
    out: dict[int, float] = {}
    first = max(bisect.bisect_right(nodes, z0) - 1, 0)
    last = min(bisect.bisect_left(nodes, z1), n)
    for k in range(first, last):
        lo, hi = nodes[k], nodes[k + 1]
        c, d = max(z0, lo), min(z1, hi)
        if d <= c:
            continue
        part = (d - c) / length
        upper = part * ((c + d) / 2 - lo) / (hi - lo)
        out[k] = out.get(k, 0.0) + upper
        if k > 0:
            out[k - 1] = out.get(k - 1, 0.0) + (part - upper)
    if z1 > nodes[-1]:
        out[n - 1] = out.get(n - 1, 0.0) + (z1 - max(z0, nodes[-1])) / length
    return tuple((i, f) for i, f in sorted(out.items()) if f)


def _nearest(levels_z: list[float], z: float) -> int:
    """The first index k of the smallest ``abs(levels_z[k] - z)`` (``levels_z`` ascending), found by
    bisection: the distances fall, then rise, along a sorted list (rounding keeps that order), so
    the nearest lies next to the insertion point; equal distances further down are walked to,
    as ``min`` over the whole list would pick the first of them."""
    n = len(levels_z)
    k = bisect.bisect_left(levels_z, z)
    if k >= n:
        i = n - 1
    elif k == 0:
        i = 0
    else:
        i = k - 1 if abs(levels_z[k - 1] - z) <= abs(levels_z[k] - z) else k
    d = abs(levels_z[i] - z)
    while i > 0 and abs(levels_z[i - 1] - z) == d:
        i -= 1
    return i


def _elements_tall(storeys: list[Storey], min_height: float) -> bool:
    return any(w.height_m >= min_height for s in storeys for w in s.walls) or any(
        c.height_m >= min_height for s in storeys for c in s.columns)


def plan_floors(building: BuildingTakeoff, levels: LevelSettings) -> FloorLayout:
    """Sort the above-grade storeys into sway floors (see the module doc for the rule)."""
    tol = levels.floor_tolerance_m
    notes: list[str] = []
    above = sorted(building.above_grade, key=lambda s: s.elevation_m)
    walls = tuple(w for s in above for w in s.walls)
    columns = tuple(c for s in above for c in s.columns)
    if not above:
        return FloorLayout(None, (), walls, columns, (), ("no above-grade storeys",))

    groups: list[list[Storey]] = []
    for s in above:
        if groups and s.elevation_m - groups[-1][0].elevation_m <= tol:
            groups[-1].append(s)
        else:
            groups.append([s])
    for g in groups:
        if len(g) > 1:
            notes.append(f"storeys {', '.join(repr(s.name) for s in g)} lie within {tol:g} m of each other: "
                         "treated as one floor")
    base = groups[0][0].elevation_m

    thin = ground = bad = 0
    candidates: list[Slab] = []
    loose: list[Slab] = []
    for s in above:
        for sl in s.slabs:
            if not (math.isfinite(sl.thickness_m) and math.isfinite(sl.top_elevation_m)
                    and sl.footprint is not None and not sl.footprint.is_empty):
                bad += 1
            elif not sl.thickness_m >= levels.min_slab_thickness_m:
                thin += 1
            elif sl.top_elevation_m <= base + tol:
                ground += 1
            elif sl.sloped:
                loose.append(sl)
            else:
                candidates.append(sl)
    if bad:
        notes.append(f"{bad} slab(s) with no usable thickness, elevation or outline left out")
    if thin:
        notes.append(f"{thin} slab(s) thinner than {levels.min_slab_thickness_m:g} m treated as finishes "
                     "(covered by the superimposed dead load)")

    # Datum-only storey groups (no elements, no slab at their elevation) are not floors.
    kept = [groups[0]]
    for g in groups[1:]:
        z = g[0].elevation_m
        if any(s.walls or s.columns for s in g) or any(abs(sl.top_elevation_m - z) <= tol for sl in candidates):
            kept.append(g)
        else:
            notes.append(f"storey '{g[0].name}' holds no slabs, walls or columns: not treated as a floor")
    groups = kept

    # Roof above the top group.
    top = groups[-1]
    top_elev = top[0].elevation_m
    over = sorted((sl for sl in candidates if sl.top_elevation_m > top_elev + tol), key=lambda sl: sl.top_elevation_m)
    elevations = [g[0].elevation_m for g in groups]
    roof_extra: tuple[float, bool] | None = None  # (elevation, without slab)
    if over:
        first = over[0].top_elevation_m
        cluster = [sl for sl in over if sl.top_elevation_m <= first + tol]
        area = sum(sl.area_m2 for sl in cluster)
        elev = (sum(sl.top_elevation_m * sl.area_m2 for sl in cluster) / area) if area > 0 else first
        roof_extra = (elev, False)
    elif _elements_tall(top, ROOF_MIN_ELEMENT_M):
        elev = max(s.elevation_m + s.height_m for s in top)
        if elev > top_elev + tol:
            roof_extra = (elev, True)
            notes.append(f"no roof slab found above storey '{top[0].name}': roof floor placed at "
                         f"{elev:.2f} m from the storey height")

    # Slab assignment to the nearest floor level (storey groups and the extra roof).
    levels_z = elevations[1:] + ([roof_extra[0]] if roof_extra else [])
    plate: dict[int, list[Slab]] = {i: [] for i in range(len(levels_z))}
    ascending = all(a < b for a, b in zip(levels_z, levels_z[1:]))
    for sl in candidates:
        if not levels_z:
            loose.append(sl)
            continue
        if ascending:
            i = _nearest(levels_z, sl.top_elevation_m)
        else:
            i = min(range(len(levels_z)), key=lambda k: abs(levels_z[k] - sl.top_elevation_m))
        if abs(levels_z[i] - sl.top_elevation_m) <= tol:
            plate[i].append(sl)
        else:
            loose.append(sl)
    if loose:
        notes.append(f"{len(loose)} slab(s) not at a floor level (landings, mezzanines, pitched or raised roofs): "
                     "their weight is shared between the floors around them by elevation")

    # Build the floors.
    floors: list[Floor] = []
    prev_z = base
    seg_storeys: list[Storey] = list(groups[0])
    for k, g in enumerate(groups[1:]):
        z = g[0].elevation_m
        usage = next((s.usage for s in g if s.usage), None)
        floors.append(Floor(
            index=len(floors), name=" + ".join(s.name for s in g), storey_id=g[0].global_id,
            elevation_m=z, height_m=z - prev_z, segment_storeys=tuple(seg_storeys), floor_storeys=tuple(g),
            usage=usage, is_roof=False, slabs=tuple(plate[k])))
        prev_z = z
        seg_storeys = list(g)
    if roof_extra is not None:
        z, no_slab = roof_extra
        t = groups[-1][0]
        floors.append(Floor(
            index=len(floors), name=f"{t.name} roof", storey_id=f"{t.global_id}#roof", elevation_m=z,
            height_m=z - prev_z, segment_storeys=tuple(seg_storeys), floor_storeys=(), usage=None,
            is_roof=True, slabs=tuple(plate[len(levels_z) - 1]), roof_without_slab=no_slab))
    elif floors:
        last = floors[-1]
        floors[-1] = Floor(**{**last.__dict__, "is_roof": True})
    if not floors:
        notes.append("no floor above the ground storey")
    return FloorLayout(base, tuple(floors), walls, columns, tuple(loose), tuple(notes))
