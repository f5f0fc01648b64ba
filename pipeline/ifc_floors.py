"""Physical floors from element geometry, not from storey membership.

Exporters put elements in storeys loosely: columns of the upper floor in the ground
storey, a whole two-level steel frame in one "Undefined" storey. This module rebuilds the
storey list from the elements' actual elevations:

1. **Floor plates** are slabs that are not sloped, not stair landings and at least
   ``LevelSettings.min_slab_thickness_m`` thick. Thinner pieces are finish layers (screed,
   tiles, timber boards): they are dropped from the takeoff with a warning (their weight
   belongs to the superimposed dead load). Sloped slabs (pitched roofs) stay in the
   takeoff, flagged ``sloped``, but never define a floor level.
2. Plates are **grouped by top elevation**: sorted by top, a new group starts where a top
   lies more than ``floor_tolerance_m`` above the group's lowest top. A group's level is
   the top of its largest plate.
3. Each group is **matched to the nearest IFC storey** within ``floor_tolerance_m`` (slabs
   hang below the storey datum, so a slab top equals the storey elevation). A group no
   storey matches becomes a new floor, split off the storey whose slabs it holds (named
   "<storey> (+z m)", GlobalId "<storey GlobalId>/<n>"), with a warning - unless it is
   minor (under 10 % of the largest group's area), which only gets a warning.
4. **Every element is assigned by its geometry**. Slabs by their top (sloped slabs by
   their lowest point): the nearest level within ``floor_tolerance_m``, failing that the
   highest level at or below it. Walls and columns go to the storey whose range
   [elevation, next elevation) holds the largest part of their height (the lowest
   storey's range extends down, the top storey's up; a tie goes to the lower storey), so
   a wall standing on the slab soffit or a short bulkhead under the next floor stays in
   its storey. Where this differs from the exported containment, the element moves and
   a warning reports it (aggregated per storey pair). ``storey_id`` on the element keeps
   the exported containment. A floor plate that duplicates another (plan overlap over
   half the smaller, depth overlap over half the thinner: two copies of one slab) is
   left out with a warning, so its mass is not counted twice.
5. **Heights**: each storey reaches the next higher elevation. The top storey reaches the
   highest top of its elements (Storey.height_m contract); with nothing rising above its
   elevation it repeats the height of the storey below.
6. **Ground rule** (``LevelSettings.ground_rule``): ``nearest-zero`` (default) makes the
   storey whose elevation is nearest 0 the ground storey (a tie goes to the higher
   one); ``lowest`` the lowest storey; ``named`` the storey named
   ``LevelSettings.ground_storey`` (case-insensitive). Storeys below the ground storey
   are basements (``above_grade`` False).
"""
from __future__ import annotations

import bisect
import math
from collections import defaultdict
from dataclasses import dataclass, field

import shapely
from shapely.geometry import MultiPolygon, Polygon

from .core_settings import LevelSettings
from .errors import InputError
from .takeoff import Column, PlanShape, Slab, Storey, Wall

__all__ = ["SourceStorey", "Placed", "FloorResult", "is_floor_plate", "floor_plate", "build_storeys",
           "ground_index", "MINOR_LEVEL_FRACTION"]

MINOR_LEVEL_FRACTION = 0.10
"""A slab level holding less than this fraction of the largest level's plate area does not
become a floor of its own (landings, pits, canopies; common practice)."""

_SAME_LEVEL_M = 1e-3


@dataclass(frozen=True)
class SourceStorey:
    """An IfcBuildingStorey as exported: GlobalId, name, elevation (m), usage hint."""

    global_id: str
    name: str
    elevation_m: float
    usage: str | None = None


@dataclass(frozen=True)
class Placed:
    """An element with its vertical extent (world z, metres)."""

    element: Slab | Wall | Column
    zmin: float
    zmax: float


@dataclass(frozen=True)
class FloorResult:
    """Storeys rebuilt from geometry, the ground storey's elevation and what changed."""

    storeys: tuple[Storey, ...]
    ground_elevation_m: float
    warnings: tuple[str, ...] = field(default=())


def is_floor_plate(slab: Slab, min_thickness_m: float = 0.0) -> bool:
    """A flat, structural slab: not sloped, not a landing, at least ``min_thickness_m`` thick."""
    return (not slab.sloped and slab.predefined_type != "LANDING" and slab.thickness_m > 0
            and slab.thickness_m >= min_thickness_m and not slab.footprint.is_empty)


def floor_plate(slabs, min_thickness_m: float = 0.0) -> tuple[PlanShape, float, float]:
    """The floor plate of a set of slabs: plan union, its area (m^2), area-weighted thickness (m).

    The thickness is sum(A_i t_i) / sum(A_i) over the plate pieces (their own areas, so
    overlapping pieces count with their own thickness).
    """
    plates = [s for s in slabs if is_floor_plate(s, min_thickness_m)]
    if not plates:
        return Polygon(), 0.0, 0.0
    union = shapely.union_all([s.footprint for s in plates])
    if not isinstance(union, (Polygon, MultiPolygon)):
        union = Polygon()
    a = sum(s.area_m2 for s in plates)
    t = sum(s.area_m2 * s.thickness_m for s in plates) / a if a > 0 else 0.0
    return union, float(union.area), float(t)


def _duplicates(a: Placed, b: Placed) -> bool:
    """Two plates in the same space: plan overlap over half of the smaller one, and depth
    overlap over half of the thinner one."""
    sa, sb = a.element, b.element
    dz = min(a.zmax, b.zmax) - max(a.zmin, b.zmin)
    if dz <= 0.5 * min(sa.thickness_m, sb.thickness_m):
        return False
    ax0, ay0, ax1, ay1 = sa.footprint.bounds
    bx0, by0, bx1, by1 = sb.footprint.bounds
    if ax1 <= bx0 or bx1 <= ax0 or ay1 <= by0 or by1 <= ay0:
        return False
    small = min(sa.area_m2, sb.area_m2)
    return small > 0 and sa.footprint.intersection(sb.footprint).area > 0.5 * small


def ground_index(names: list[str], elevations: list[float], levels: LevelSettings) -> int:
    """Index of the ground storey among storeys sorted by elevation (see module docstring)."""
    if not elevations:
        raise InputError("no storeys to choose a ground storey from")
    rule = levels.ground_rule
    if rule == "lowest":
        return 0
    if rule == "named":
        want = levels.ground_storey.strip().casefold()
        for i, n in enumerate(names):
            if n.strip().casefold() == want:
                return i
        raise InputError(f"ground storey '{levels.ground_storey}' not found (storeys: "
                         + ", ".join(repr(n) for n in names) + ")")
    best = 0
    for i, z in enumerate(elevations):
        if abs(z) <= abs(elevations[best]) + 1e-9:
            best = i
    return best


@dataclass
class _Level:
    elevation_m: float
    name: str
    global_id: str
    source_id: str | None
    usage: str | None
    slabs: list = field(default_factory=list)
    walls: list = field(default_factory=list)
    columns: list = field(default_factory=list)
    extents: list = field(default_factory=list)


def _ids(items, limit: int = 5) -> str:
    ids = [i for i in items if i]
    more = len(ids) - limit
    return ", ".join(ids[:limit]) + (f" and {more} more" if more > 0 else "")


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def build_storeys(sources: list[SourceStorey], slabs: list[Placed], walls: list[Placed],
                  columns: list[Placed], levels: LevelSettings | None = None,
                  building: str = "") -> FloorResult:
    """Rebuild the storeys of one building from its elements' elevations.

    Args:
        sources: the building's IfcBuildingStoreys (any order, at least one).
        slabs, walls, columns: elements with their z extents.
        levels: tolerances and the ground rule.
        building: name used in warnings.

    Raises:
        InputError: no storeys, or the named ground storey is missing.
    """
    levels = levels or LevelSettings()
    tol = float(levels.floor_tolerance_m)
    where = f"building '{building}': " if building else ""
    warnings: list[str] = []
    if not sources:
        raise InputError(f"{where}no IfcBuildingStorey")
    src = sorted(sources, key=lambda s: s.elevation_m)
    by_id = {s.global_id: s for s in src}

    # 1. finishes out, floor plates in
    kept: list[Placed] = []
    finishes: list[Placed] = []
    for p in slabs:
        s = p.element
        if not s.sloped and 0 < s.thickness_m < levels.min_slab_thickness_m:
            finishes.append(p)
        else:
            kept.append(p)
    if finishes:
        warnings.append(f"{where}{_plural(len(finishes), 'slab')} thinner than {levels.min_slab_thickness_m:g} m "
                        f"treated as finish layers and left out ({_ids([p.element.global_id for p in finishes])})")
    plates = sorted((p for p in kept if is_floor_plate(p.element, levels.min_slab_thickness_m)),
                    key=lambda p: p.element.top_elevation_m)

    # 2. group plates by top elevation
    groups: list[list[Placed]] = []
    for p in plates:
        top = p.element.top_elevation_m
        if groups and top - groups[-1][0].element.top_elevation_m <= tol:
            groups[-1].append(p)
        else:
            groups.append([p])

    # 3. match groups to storeys; unmatched groups become new floors
    lv: list[_Level] = [_Level(s.elevation_m, s.name, s.global_id, s.global_id, s.usage) for s in src]
    src_z = [s.elevation_m for s in src]
    max_area = max((sum(p.element.area_m2 for p in g) for g in groups), default=0.0)
    split_count: dict[str, int] = defaultdict(int)
    split_levels: dict[str, list[float]] = defaultdict(list)
    for g in groups:
        z = max(g, key=lambda p: p.element.area_m2).element.top_elevation_m
        near = min(range(len(src)), key=lambda i: abs(src_z[i] - z))
        if abs(src_z[near] - z) <= tol:
            continue
        area = sum(p.element.area_m2 for p in g)
        owners: dict[str | None, float] = defaultdict(float)
        for p in g:
            owners[p.element.storey_id] += p.element.area_m2
        owner = max(owners, key=lambda k: owners[k])
        if area < MINOR_LEVEL_FRACTION * max_area:
            warnings.append(f"{where}minor slab level at {z:.2f} m ({area:.1f} m^2, "
                            f"{_plural(len(g), 'slab')}) matches no storey; not made a floor of its own")
            continue
        base = by_id.get(owner) if owner is not None else None
        if base is not None:
            split_count[base.global_id] += 1
            split_levels[base.global_id].append(z)
            gid = f"{base.global_id}/{split_count[base.global_id]}"
            name = f"{base.name} (+{z:.2f} m)" if z >= 0 else f"{base.name} ({z:.2f} m)"
            lv.append(_Level(z, name, gid, base.global_id, base.usage))
        else:
            lv.append(_Level(z, f"Level {z:+.2f} m", "", None, None))
            warnings.append(f"{where}slab level at {z:.2f} m ({area:.1f} m^2) belongs to no storey: "
                            "made a floor of its own")
    for sid, zs in split_levels.items():
        s = by_id[sid]
        all_z = sorted([s.elevation_m] + zs)
        warnings.append(f"{where}storey '{s.name}' holds floor slabs at {len(all_z)} levels "
                        f"({', '.join(f'{z:.2f} m' for z in all_z)}): split into {len(all_z)} floors")
    lv.sort(key=lambda L: L.elevation_m)
    zs = [L.elevation_m for L in lv]

    def pick(z: float) -> int:
        i = bisect.bisect_right(zs, z + tol)
        lo = bisect.bisect_left(zs, z - tol)
        if lo < i:  # levels within tolerance: the nearest (the higher one on a tie)
            return min(range(lo, i), key=lambda k: (abs(zs[k] - z), -k))
        j = bisect.bisect_right(zs, z) - 1
        return max(j, 0)

    # 4. assign by geometry
    moved: dict[tuple[str, str, str], list[Placed]] = defaultdict(list)
    orphans: dict[str, int] = defaultdict(int)

    def span(p: Placed) -> int:
        if p.zmax - p.zmin <= 1e-9:
            return max(bisect.bisect_right(zs, p.zmin) - 1, 0)
        lo = max(bisect.bisect_right(zs, p.zmin) - 1, 0)
        hi = max(bisect.bisect_left(zs, p.zmax) - 1, lo)
        best, best_len = lo, -1.0
        for k in range(lo, hi + 1):
            a = -math.inf if k == 0 else zs[k]
            b = math.inf if k == len(zs) - 1 else zs[k + 1]
            part = min(p.zmax, b) - max(p.zmin, a)
            if part > best_len + 1e-9:
                best, best_len = k, part
        return best

    def place(p: Placed, kind: str, key: float | None) -> None:
        L = lv[pick(key) if key is not None else span(p)]
        getattr(L, kind).append(p.element)
        L.extents.append(p)
        sid = p.element.storey_id
        if sid is None or sid not in by_id:
            orphans[kind] += 1
        elif L.source_id != sid:
            moved[(kind, sid, L.global_id)].append(p)

    for p in kept:
        place(p, "slabs", p.zmin if p.element.sloped else p.element.top_elevation_m)
    for p in walls:
        place(p, "walls", None)
    for p in columns:
        place(p, "columns", None)
    by_level = {L.global_id: L for L in lv}
    for (kind, sid, lid), items in moved.items():
        dest = by_level[lid]
        z_lo = min(p.zmin if kind != "slabs" else p.element.top_elevation_m for p in items)
        z_hi = max(p.zmin if kind != "slabs" else p.element.top_elevation_m for p in items)
        z_top = max(p.zmax for p in items)
        ref = "tops" if kind == "slabs" else "bases"
        zr = f"{z_lo:.2f} m" if abs(z_hi - z_lo) < 0.005 else f"{z_lo:.2f}..{z_hi:.2f} m"
        extra = "" if kind == "slabs" else f", tops up to {z_top:.2f} m"
        warnings.append(f"{where}{_plural(len(items), kind[:-1])} contained in storey '{by_id[sid].name}' "
                        f"lie in storey '{dest.name}' by geometry ({ref} at {zr}{extra}): reassigned "
                        f"({_ids([p.element.global_id for p in items])})")
    for kind, n in orphans.items():
        warnings.append(f"{where}{_plural(n, kind[:-1])} not contained in any storey: placed by elevation")

    # 4b. duplicates: plates occupying the same space (same place in plan, overlapping depth)
    dupes: list[str] = []
    for L in lv:
        plates_here = [p for p in L.extents if isinstance(p.element, Slab)
                       and is_floor_plate(p.element, levels.min_slab_thickness_m)]
        if len(plates_here) < 2:
            continue
        # keep the larger piece; of equal ones, the one the export put in this storey
        plates_here.sort(key=lambda p: (-p.element.area_m2, p.element.storey_id != L.source_id))
        drop: set[int] = set()
        # only pairs whose plan boxes meet can be duplicates: a spatial index keeps a floor
        # split into thousands of pieces from costing n^2 comparisons
        tree = shapely.STRtree([p.element.footprint for p in plates_here])
        for i, a in enumerate(plates_here):
            if id(a) in drop:
                continue
            for j in sorted(tree.query(a.element.footprint).tolist()):
                b = plates_here[j]
                if j <= i or id(b) in drop or not _duplicates(a, b):
                    continue
                drop.add(id(b))
                dupes.append(f"{b.element.global_id} (of {a.element.global_id} at {b.element.top_elevation_m:.2f} m)")
        if drop:
            L.extents = [p for p in L.extents if id(p) not in drop]
            keep_ids = {id(p.element) for p in L.extents}
            L.slabs = [e for e in L.slabs if id(e) in keep_ids]
    if dupes:
        warnings.append(f"{where}{_plural(len(dupes), 'slab')} duplicating another slab (same plan and depth) "
                        f"left out: {_ids(dupes)}")

    # 5. heights
    heights = [0.0] * len(lv)
    for i, L in enumerate(lv):
        nxt = next((z for z in zs[i + 1:] if z > L.elevation_m + _SAME_LEVEL_M), None)
        if nxt is not None:
            heights[i] = nxt - L.elevation_m
    top_group = [i for i, L in enumerate(lv) if L.elevation_m >= zs[-1] - _SAME_LEVEL_M]
    tops = [p.zmax for i in top_group for p in lv[i].extents]
    below = [h for h in heights if h > 0]
    if tops and max(tops) - zs[-1] > _SAME_LEVEL_M:
        top_h = max(tops) - zs[-1]
    elif below:
        top_h = below[-1]
    else:
        top_h = 0.0
        warnings.append(f"{where}single storey level with no element rising above it: height 0")
    for i in top_group:
        heights[i] = top_h

    # 6. ground rule and empties
    gi = ground_index([L.name for L in lv], zs, levels)
    storeys = []
    for i, L in enumerate(lv):
        if not (L.slabs or L.walls or L.columns):
            warnings.append(f"{where}storey '{L.name}' at {L.elevation_m:.2f} m has no slabs, walls or columns")
        storeys.append(Storey(global_id=L.global_id, name=L.name, elevation_m=float(L.elevation_m),
                              height_m=float(heights[i]), above_grade=i >= gi, slabs=tuple(L.slabs),
                              walls=tuple(L.walls), columns=tuple(L.columns), usage=L.usage))
    return FloorResult(tuple(storeys), float(zs[gi]), tuple(warnings))
