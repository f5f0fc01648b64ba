"""Floor masses, mass centres and polar mass moments of the sway floors.

Per floor (see :mod:`swayscreen.pipeline.floors` for which floors exist), components:

* ``slabs``: self-weight of each plate slab, area (voids subtracted) x thickness x its
  material's density; plus the shares of loose slabs (landings, mezzanines) by elevation.
* ``superimposed dead``: ``LoadSettings.superimposed_dead_kpa`` over the plate area (the
  union of the plate slabs, so overlapping pieces count once). Also on the roof
  (roofing, services).
* ``partitions``: ``partitions_kpa`` over the plate area; not on the roof.
* ``facade``: ``facade_kpa`` x the plate's outer perimeter x the tributary height, half
  the storey below plus half the storey above (the mean of the two storey heights; on the
  roof half the storey below), spread along the perimeter as a line mass.
* ``live load``: ``live_load_fraction`` x the imposed load of the floor's occupancy
  (``Storey.usage``, else ``LoadSettings.occupancy``) over the plate area; none on the roof
  (EN 1990 Table A1.1: psi_2 = 0 for roofs, category H).
* ``walls``, ``columns``: each element's volume x density lumped onto the floors by the
  linear shape functions of the floor elevations (:func:`~swayscreen.pipeline.floors.vertical_shares`):
  a storey-high element gives half to the floor below and half to the floor above, the
  part below the base is dropped, anything above the roof goes to the roof. Wall openings
  are subtracted: each is a hole of its width x wall thickness in plan over its sill-head
  height, lumped the same way. Volumes are summed per element (element footprints are
  not unioned); a core drawn with centreline dimensions and mitred corners is exact.
  Walls that are not structural by the rule of :mod:`swayscreen.pipeline.cores`
  (``LoadBearing`` false, or no flag and thinner than 0.15 m) are partitions or cladding:
  the partition and facade allowances stand for them, so they add no wall mass (a note
  says how many).

Mass centre and polar moment: every component is spread uniformly over its plan shape
(slab polygons, the plate, the perimeter line, each wall/column footprint, the opening
holes), and the exact area/line integrals (:mod:`swayscreen.pipeline.plan_moments`) give
the first and second moments. For a wall or column this equals a point mass at its
footprint centroid plus its own plan polar moment m (I_x + I_y) / A.

Missing slabs: a floor with no plate slab borrows the plate slabs of the nearest floor
below (else above) that has them, with a warning. When no floor has slabs, every floor's
mass is estimated as ``building_density_kg_m3`` x gross area x tributary height, with the
gross area the convex hull of the walls' and columns' footprints of the storey below
(else above), and a warning.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry

from .core_settings import G, LoadSettings
from .cores import PARTITION_MAX_THICKNESS_M
from .floors import Floor, FloorLayout, vertical_share_pairs
from .materials import MaterialBook
from .plan_moments import (AreaMoments, MassMoments, ShapeTable, area_moments, area_moments_array, outline_moments,
                           polygons_of)
from .plan_ops import PlanGeometryError, clean, robust_buffer, robust_union
from .takeoff import Slab, Wall

__all__ = ["COMPONENTS", "LevelMass", "floor_masses", "floor_slabs", "plate_of", "opening_footprint", "mass_reference_point"]

COMPONENTS = ("slabs", "superimposed dead", "partitions", "facade", "live load", "walls", "columns",
              "bulk estimate")
"""Component names, in reporting order."""

_CLOSE_GAPS_M = 0.05  # slab pieces closer than this are one plate for the facade perimeter


@dataclass(frozen=True)
class LevelMass:
    """The lumped mass of one floor.

    Attributes:
        mass_kg: total; equals the sum of ``components_kg``.
        centre_m: plan mass centre.
        polar_moment_kg_m2: about the vertical axis through ``centre_m``.
        components_kg: (name, kg) in :data:`COMPONENTS` order, non-zero ones only.
        plate: the floor plate outline (union of its slabs, or the estimate's area).
        plate_area_m2: area of the plate (voids subtracted).
        gross_area_m2: area inside the plate's outer outline (voids filled), for densities.
        estimated: "" when from slabs, "borrowed" or "bulk" when estimated.
    """

    mass_kg: float
    centre_m: tuple[float, float]
    polar_moment_kg_m2: float
    components_kg: tuple[tuple[str, float], ...]
    plate: Polygon | MultiPolygon | None
    plate_area_m2: float
    gross_area_m2: float
    estimated: str = ""


def plate_of(slabs: Sequence[Slab]) -> Polygon | MultiPolygon | None:
    """Union of the slabs' footprints as a Polygon or MultiPolygon (None when empty).

    The union is taken by :func:`~swayscreen.pipeline.plan_ops.robust_union`; should the
    geometry engine fail even on the cleaned footprints, the cleaned footprints themselves
    (overlaps then count twice)."""
    return _plate_of(slabs)[0]


def _plate_of(slabs: Sequence[Slab]) -> tuple[Polygon | MultiPolygon | None, str | None]:
    """:func:`plate_of` and a note when the union could not be taken."""
    note = None
    if not slabs:
        return None, None
    shapes = [sl.footprint for sl in slabs]
    try:
        polys = polygons_of(robust_union(shapes, "union of the slabs " + ", ".join(sl.global_id for sl in slabs)))
    except PlanGeometryError as err:
        polys = [p for g in shapes for p in polygons_of(clean(g))]
        note = f"{err}: the slab outlines are used without their union (overlaps count twice)"
    if not polys:
        return None, note
    return (polys[0] if len(polys) == 1 else MultiPolygon(polys)), note


def _filled(shape: BaseGeometry | None) -> BaseGeometry | None:
    polys = polygons_of(shape)
    if not polys:
        return None
    shells = [Polygon(p.exterior) for p in polys]
    try:
        return robust_union(shells, "outline of the floor plate")
    except PlanGeometryError:
        return MultiPolygon(shells)


def _opening_corners(wall: Wall, start_m: float, end_m: float) -> list[tuple[float, float]] | None:
    """The four plan corners of :func:`opening_footprint` (None when it has none)."""
    (x0, y0), (x1, y1) = wall.axis_m
    length = ((x1 - x0) ** 2 + (y1 - y0) ** 2) ** 0.5
    if length <= 0:
        return None
    a, b = max(0.0, start_m), min(length, end_m)
    if b <= a:
        return None
    ux, uy = (x1 - x0) / length, (y1 - y0) / length
    nx, ny = -uy * wall.thickness_m / 2, ux * wall.thickness_m / 2
    p, q = (x0 + ux * a, y0 + uy * a), (x0 + ux * b, y0 + uy * b)
    return [(p[0] - nx, p[1] - ny), (q[0] - nx, q[1] - ny), (q[0] + nx, q[1] + ny), (p[0] + nx, p[1] + ny)]


def opening_footprint(wall: Wall, start_m: float, end_m: float) -> Polygon | None:
    """Plan rectangle of the part of ``wall`` between ``start_m`` and ``end_m`` along its axis."""
    corners = _opening_corners(wall, start_m, end_m)
    return Polygon(corners) if corners is not None else None


def mass_reference_point(layout: FloorLayout) -> tuple[float, float]:
    """A plan point near the building (bounding-box centre of slabs, walls and columns)."""
    shapes = [sl.footprint for f in layout.floors for sl in f.slabs]
    shapes += [w.footprint for w in layout.walls] + [c.section for c in layout.columns]
    arr = _geometries(shapes)
    arr = arr[~shapely.is_missing(arr) & ~shapely.is_empty(arr)]
    if not len(arr):
        return (0.0, 0.0)
    b = shapely.bounds(arr)
    minx, miny = float(b[:, 0].min()), float(b[:, 1].min())
    maxx, maxy = float(b[:, 2].max()), float(b[:, 3].max())
    return ((minx + maxx) / 2, (miny + maxy) / 2)


class _Shares:
    """:func:`~swayscreen.pipeline.floors.vertical_shares` as (floor, fraction) pairs of the
    non-zero fractions, memoised by (z0, z1): elements of one storey share their elevations,
    and a full list per element would cost O(floors) each."""

    def __init__(self, nodes: tuple[float, ...]) -> None:
        self.nodes = nodes
        self.memo: dict[tuple[float, float], tuple[tuple[int, float], ...]] = {}

    def __call__(self, z0: float, z1: float) -> tuple[tuple[int, float], ...]:
        key = (z0, z1)
        got = self.memo.get(key)
        if got is None:
            got = self.memo[key] = vertical_share_pairs(self.nodes, z0, z1)
        return got


def _sound_moments(shape: BaseGeometry, ref: tuple[float, float]) -> AreaMoments | None:
    """``area_moments(shape, ref)``; for a degenerate ring (a zero-width spike or round-off-size
    coordinates can make the geometry engine misjudge its orientation, giving a negative area
    integral) the moments of the shape cleaned by :func:`~swayscreen.pipeline.plan_ops.clean`;
    None when no positive area integral is found."""
    mom = area_moments(shape, ref)
    if mom.a > 0.0 or not mom.a <= 0.0:  # positive, or NaN (left to propagate as before)
        return mom
    fixed = clean(shape)
    if fixed is None:
        return None
    mom = area_moments(fixed, ref)
    return mom if mom.a > 0.0 else None


def _geometries(shapes: Sequence[BaseGeometry | None]) -> np.ndarray:
    arr = np.empty(len(shapes), dtype=object)
    arr[:] = shapes
    return arr


def _moments_table(shapes: Sequence[BaseGeometry], ref: tuple[float, float],
                   wkbs: Sequence[bytes | None] | None = None) -> np.ndarray:
    """:func:`~swayscreen.pipeline.plan_moments.area_moments_array` of ``shapes``, computed once
    per distinct shape (equal WKB bytes: equal coordinates, equal numbers); storeys of a tower
    repeat the same footprints. ``wkbs``: the shapes' WKB bytes when already known."""
    if not shapes:
        return np.zeros((0, 6))
    if wkbs is None:
        wkbs = shapely.to_wkb(_geometries(shapes)).tolist()
    first: dict[bytes | None, BaseGeometry] = {}
    for b, g in zip(wkbs, shapes):
        if b not in first:
            first[b] = g
    index = {b: k for k, b in enumerate(first)}
    inverse = np.array([index[b] for b in wkbs], dtype=np.intp)
    unique = list(first.values())
    table = area_moments_array(unique, ref)
    for k in np.flatnonzero(table[:, 0] <= 0.0).tolist():  # degenerate rings only (see _sound_moments)
        mom = _sound_moments(unique[k], ref)
        if mom is not None:
            table[k] = (mom.a, mom.sx, mom.sy, mom.ixx, mom.iyy, mom.ixy)
    return table[inverse]


def _lumped(n: int, ref: tuple[float, float], table: np.ndarray, mass_kg: np.ndarray, z0: list[float],
            z1: list[float], shares: _Shares, dropped: set[int]) -> list[MassMoments]:
    """Item ``k`` (mass ``mass_kg[k]`` spread over the plan region of moments ``table[k]``, over
    the height z0[k]..z1[k]) lumped onto ``n`` floors by :func:`vertical_shares`.

    The same numbers, term by term and in the same order, as calling
    :meth:`~swayscreen.pipeline.plan_moments.MassMoments.add_moments` item by item and share
    by share (``np.bincount`` accumulates in index order; zero masses are skipped as
    ``add_moments`` does). Items whose region has no positive area integral (where
    ``add_moments`` would refuse the mass) are left out and their indices added to ``dropped``."""
    out = [MassMoments(ref) for _ in range(n)]
    if not len(mass_kg):
        return out
    pairs = list(zip(z0, z1))
    index = {k: g for g, k in enumerate(dict.fromkeys(pairs))}
    keys = list(index)
    group = np.array([index[k] for k in pairs], dtype=np.intp)
    floors: list[int] = []
    fracs: list[float] = []
    counts: list[int] = []
    for k in keys:
        got = shares(*k)
        counts.append(len(got))
        for i, f in got:
            floors.append(i)
            fracs.append(f)
    count = np.array(counts, dtype=np.intp)
    offset = np.concatenate(([0], np.cumsum(count)[:-1])).astype(np.intp)
    per_item = count[group]
    item = np.repeat(np.arange(len(group)), per_item)  # items in order, each over its shares in order
    start = np.repeat(np.cumsum(per_item) - per_item, per_item)
    entry = offset[group][item] + (np.arange(len(item)) - start)
    floor = np.array(floors, dtype=np.intp)[entry]
    mass = mass_kg[item] * np.array(fracs, dtype=float)[entry]
    keep = mass != 0.0
    # a region whose area integral about ``ref`` is not positive although its area is (a sliver
    # of round-off size far from ``ref``) cannot carry a spread mass: left out and counted
    flat = keep & (table[item, 0] <= 0.0)
    if flat.any():
        dropped.update(np.unique(item[flat]).tolist())
        keep &= ~flat
    mass, floor, mom = mass[keep], floor[keep], table[item[keep]]
    f = mass / mom[:, 0]
    sums = [np.bincount(floor, weights=w, minlength=n).tolist()
            for w in (mass, f * mom[:, 1], f * mom[:, 2], f * (mom[:, 3] + mom[:, 4]))]
    for i, acc in enumerate(out):
        acc.m, acc.mx, acc.my, acc.mr2 = sums[0][i], sums[1][i], sums[2][i], sums[3][i]
    return out


def _vertical(layout: FloorLayout, book: MaterialBook, ref: tuple[float, float],
              warnings: list[str], table: ShapeTable | None = None
              ) -> tuple[list[MassMoments], list[MassMoments], list[MassMoments]]:
    nodes = layout.nodes_m
    shares = _Shares(nodes)
    n = len(layout.floors)
    loose = [MassMoments(ref) for _ in range(n)]
    isfinite = math.isfinite
    skipped = 0
    partitions: list[float] = []
    # plan areas, emptiness and moments of every wall, opening hole and column in one
    # vectorised pass each; the element loops only collect numbers
    if table is None:
        table = ShapeTable()
        table.add(layout.walls, [w.footprint for w in layout.walls])
        table.add(layout.columns, [c.section for c in layout.columns])
    fps = _geometries([w.footprint for w in layout.walls])
    empty = shapely.is_empty(fps).tolist()
    wall_rows = table.rows_of(layout.walls, fps)
    areas = [r[1] for r in wall_rows]
    kept_walls = []
    for k, w in enumerate(layout.walls):
        if w.load_bearing is False or (w.load_bearing is None and 0 < w.thickness_m < PARTITION_MAX_THICKNESS_M):
            partitions.append(w.plan_area_m2 * w.height_m)
            continue
        mat = book.get(w.material, "walls")
        h = w.height_m
        if not (isfinite(h) and isfinite(w.base_elevation_m) and h > 0 and w.footprint is not None
                and not empty[k] and areas[k] > 0):
            skipped += 1
            continue
        kept_walls.append((w, mat, areas[k], wall_rows[k][2]))
    # items in lumping order: each wall, then its opening holes (negative mass)
    prints: list[BaseGeometry] = []
    rects: dict[tuple, int | None] = {}  # (axis, thickness, start, end) -> index of the distinct rectangle
    corners_of: list[list[tuple[float, float]]] = []  # the distinct rectangles
    holes: list[int] = []  # rectangle of each hole
    hole_of: list[int] = []  # item index of each hole
    hole_z: list[tuple[float, float, float]] = []  # (wall base, sill, head)
    item_mass: list[float] = []  # walls: mass; holes: density (mass set from the hole's area below)
    z0: list[float] = []
    z1: list[float] = []
    for w, mat, area, _ in kept_walls:
        base, h, rho = w.base_elevation_m, w.height_m, mat.density_kg_m3
        prints.append(w.footprint)
        item_mass.append(area * h * rho)
        z0.append(base)
        z1.append(w.top_elevation_m)
        for op in w.openings:
            if not (isfinite(op.start_m) and isfinite(op.end_m) and isfinite(op.sill_m) and isfinite(op.head_m)):
                continue
            # opening holes repeat over the storeys: one rectangle per distinct wall axis and opening
            rkey = (w.axis_m, w.thickness_m, op.start_m, op.end_m)
            if rkey in rects:
                rect = rects[rkey]
            else:
                corners = _opening_corners(w, op.start_m, op.end_m)
                rect = rects[rkey] = None if corners is None else len(corners_of)
                if corners is not None:
                    corners_of.append(corners)
            sill, head = max(0.0, op.sill_m), min(h, op.head_m)
            if rect is None or head <= sill:
                continue
            holes.append(rect)
            hole_of.append(len(item_mass))
            item_mass.append(rho)
            z0.append(base + sill)
            z1.append(base + head)
            hole_z.append((sill, head))
    walls = [MassMoments(ref) for _ in range(n)]
    n_flat_walls = n_flat_holes = 0
    if item_mass:
        masses = np.array(item_mass, dtype=float)
        moments = np.zeros((len(item_mass), 6))
        idx = np.array(hole_of, dtype=np.intp)
        is_wall = np.ones(len(item_mass), dtype=bool)
        is_wall[idx] = False
        moments[is_wall] = _moments_table(prints, ref, [r[3] for r in kept_walls])
        if holes:
            inverse = np.array(holes, dtype=np.intp)
            unique = shapely.polygons(np.array(corners_of, dtype=float))
            sill_head = np.array(hole_z, dtype=float)
            masses[idx] = -(shapely.area(unique)[inverse] * (sill_head[:, 1] - sill_head[:, 0]) * masses[idx])
            moments[idx] = _moments_table(list(unique), ref)[inverse]
        flat: set[int] = set()
        walls = _lumped(n, ref, moments, masses, z0, z1, shares, flat)
        hole_items = set(hole_of)
        n_flat_walls = sum(1 for k in flat if k not in hole_items)
        n_flat_holes = len(flat) - n_flat_walls
    secs = _geometries([c.section for c in layout.columns])
    empty = shapely.is_empty(secs).tolist()
    col_rows = table.rows_of(layout.columns, secs)
    get = book.get
    mats = [get(c.material, "columns") for c in layout.columns]  # one use counted per column, in order
    ok = [isfinite(c.height_m) and isfinite(c.base_elevation_m) and c.height_m > 0 and c.section is not None
          and not e and r[1] > 0 for c, e, r in zip(layout.columns, empty, col_rows)]
    skipped += ok.count(False)
    kept = [(c, m, r) for c, m, r, keep in zip(layout.columns, mats, col_rows, ok) if keep]
    kept_cols = [c.section for c, _, _ in kept]
    col_wkbs = [r[2] for _, _, r in kept]
    item_mass = [r[1] * c.height_m * m.density_kg_m3 for c, m, r in kept]
    z0 = [c.base_elevation_m for c, _, _ in kept]
    z1 = [c.top_elevation_m for c, _, _ in kept]
    flat_cols: set[int] = set()
    cols = _lumped(n, ref, _moments_table(kept_cols, ref, col_wkbs), np.array(item_mass, dtype=float), z0, z1, shares,
                   flat_cols)
    flat_loose = 0
    for sl in layout.loose_slabs:
        mat = book.get(sl.material, "slabs")
        if sl.footprint.is_empty or sl.area_m2 <= 0:
            continue
        m = sl.area_m2 * sl.thickness_m * mat.density_kg_m3
        z = sl.top_elevation_m - sl.thickness_m / 2
        mom = _sound_moments(sl.footprint, ref)
        if mom is None:
            flat_loose += 1
            continue
        for i, f in shares(z - 1e-3, z + 1e-3):
            loose[i].add_moments(m * f, mom)
    if n_flat_walls or flat_cols or n_flat_holes or flat_loose:
        counts = [(n_flat_walls, "wall"), (len(flat_cols), "column"), (n_flat_holes, "opening"), (flat_loose, "slab")]
        warnings.append(", ".join(f"{k} {what}(s)" for k, what in counts if k)
                        + " with a plan area of round-off size (no positive area integral) carry no mass")
    if partitions:
        warnings.append(f"{len(partitions)} non-load-bearing or partition wall(s) ({sum(partitions):,.0f} m^3) "
                        "left to the partition and facade allowances, not counted as wall mass")
    if skipped:
        warnings.append(f"{skipped} wall(s)/column(s) with no height or plan area carry no mass")
    return walls, cols, loose


def floor_slabs(floors: Sequence[Floor], i: int) -> tuple[tuple[Slab, ...], Floor | None]:
    """The plate slabs of floor ``i``: its own, else those of the nearest floor below (else above)
    that has slabs. Returns (slabs, the floor they were borrowed from or None)."""
    if floors[i].slabs:
        return floors[i].slabs, None
    below = [f for f in floors[:i] if f.slabs]
    if below:
        return below[-1].slabs, below[-1]
    above = [f for f in floors[i + 1:] if f.slabs]
    return (above[0].slabs, above[0]) if above else ((), None)


def _slab_sources(floors: Sequence[Floor]) -> list[tuple[tuple[Slab, ...], Floor | None]]:
    """:func:`floor_slabs` of every floor in one pass each way (linear in the floors)."""
    out: list[tuple[tuple[Slab, ...], Floor | None] | None] = [None] * len(floors)
    last: Floor | None = None
    for i, f in enumerate(floors):
        if f.slabs:
            out[i] = (f.slabs, None)
            last = f
        elif last is not None:
            out[i] = (last.slabs, last)
    nxt: Floor | None = None
    for i in range(len(floors) - 1, -1, -1):
        if floors[i].slabs:
            nxt = floors[i]
        elif out[i] is None:
            out[i] = (nxt.slabs, nxt) if nxt is not None else ((), None)
    return out  # type: ignore[return-value]


def _hull_of(floor: Floor) -> BaseGeometry | None:
    for group in (floor.segment_storeys, floor.floor_storeys):
        shapes = [w.footprint for s in group for w in s.walls] + [c.section for s in group for c in s.columns]
        shapes = [s for s in shapes if s is not None and not s.is_empty]
        if shapes:
            try:
                hull = robust_union(shapes, "walls and columns of a storey").convex_hull
            except PlanGeometryError:
                hull = shapely.convex_hull(shapely.GeometryCollection([c for c in map(clean, shapes) if c is not None]))
            if hull.area > 0:
                return hull
    return None


def floor_masses(layout: FloorLayout, book: MaterialBook, loads: LoadSettings, *, shapes: ShapeTable | None = None
                 ) -> tuple[list[LevelMass], list[str]]:
    """The mass of every floor in ``layout`` (see the module doc); returns (masses, warnings).

    ``shapes``: plan areas and WKB bytes of the layout's walls and columns when already
    computed (shared with the other stages of a derive)."""
    warnings: list[str] = []
    floors = layout.floors
    if not floors:
        return [], warnings
    ref = mass_reference_point(layout)
    kg_per_kpa = 1000.0 / G
    walls, cols, loose = _vertical(layout, book, ref, warnings, shapes)
    any_slab = any(f.slabs for f in floors)
    if not any_slab:
        return _bulk(layout, loads, ref, warnings), warnings

    out: list[LevelMass] = []
    borrowed: list[str] = []
    no_area: set[str] = set()
    plates: dict[tuple[bytes, ...], _Plate] = {}  # floors with the same slabs in plan share the geometry
    sources = _slab_sources(floors)
    own = [sl.footprint for f in floors for sl in f.slabs]
    wkb_of = dict(zip(map(id, own), shapely.to_wkb(_geometries(own)).tolist()))
    for i, f in enumerate(floors):
        slabs, src = sources[i]
        estimated = ""
        if src is not None:
            estimated = "borrowed"
            borrowed.append(f"'{f.name}' (from '{src.name}')")
        key = tuple(wkb_of[id(sl.footprint)] for sl in slabs)
        geo = plates.get(key)
        if geo is None:
            geo = plates[key] = _Plate(slabs, ref)
            if geo.note:
                warnings.append(f"floor '{f.name}': {geo.note}")
        plate = geo.plate
        comp: dict[str, MassMoments] = {k: MassMoments(ref) for k in COMPONENTS}
        for sl, mom in zip(slabs, geo.slab_moments):
            mat = book.get(sl.material, "slabs")
            if sl.area_m2 > 0:
                if mom is None:
                    no_area.add(sl.global_id)
                    continue
                comp["slabs"].add_moments(sl.area_m2 * sl.thickness_m * mat.density_kg_m3, mom)
        comp["slabs"].merge([loose[i]])
        area = geo.area
        if area > 0:
            comp["superimposed dead"].add_moments(loads.superimposed_dead_kpa * kg_per_kpa * area, geo.moments)
            if not f.is_roof:
                comp["partitions"].add_moments(loads.partitions_kpa * kg_per_kpa * area, geo.moments)
                usage = f.usage or loads.occupancy
                if usage not in loads.live_load_kpa:
                    warnings.append(f"floor '{f.name}': occupancy '{usage}' has no imposed load in settings; "
                                    f"'{loads.occupancy}' used")
                    usage = loads.occupancy
                q = loads.live_load_kpa.get(usage, 0.0)
                comp["live load"].add_moments(loads.live_load_fraction * q * kg_per_kpa * area, geo.moments)
            perim = geo.perimeter
            h_trib = layout.tributary_height_m(i)
            if perim > 0 and h_trib > 0:
                comp["facade"].add_moments(loads.facade_kpa * kg_per_kpa * perim * h_trib, geo.outline_moments)
        comp["walls"].merge([walls[i]])
        comp["columns"].merge([cols[i]])
        out.append(_finish(comp, plate, estimated, geo.gross_area_m2, geo.area))
    if no_area:
        warnings.append(f"{len(no_area)} slab(s) with a plan area of round-off size carry no mass: "
                        + ", ".join(sorted(no_area)))
    if borrowed:
        warnings.append("no slab found at floor(s) " + ", ".join(borrowed)
                        + ": the plate and slabs of the named floor assumed")
    return out, warnings


class _Plate:
    """The plan geometry of one floor's plate slabs (shared by floors with the same slabs):
    the plate, its area moments, the facade outline's perimeter and line moments, the gross
    area, and the moments of each slab (all about ``ref``)."""

    def __init__(self, slabs: Sequence[Slab], ref: tuple[float, float]) -> None:
        self.plate, self.note = _plate_of(slabs)
        self.area = float(self.plate.area) if self.plate is not None else 0.0
        self.slab_moments = [_sound_moments(sl.footprint, ref) for sl in slabs]
        plate = self.plate
        self.moments = _sound_moments(plate, ref) if plate is not None else None
        if self.moments is None:
            self.area = 0.0  # nothing (or only round-off) to spread the plate loads over
        self.perimeter = 0.0
        self.outline_moments = None
        if plate is not None and self.area > 0:
            try:
                closed = robust_buffer(robust_buffer(plate, _CLOSE_GAPS_M, join_style="mitre"), -_CLOSE_GAPS_M,
                                       join_style="mitre")
            except PlanGeometryError:
                closed = plate
            outline = closed if not closed.is_empty else plate
            self.perimeter = sum(p.exterior.length for p in polygons_of(outline))
            self.outline_moments = outline_moments(outline, ref)
        filled = _filled(plate)
        self.gross_area_m2 = float(filled.area) if filled is not None else 0.0


def _finish(comp: dict[str, MassMoments], plate: BaseGeometry | None, estimated: str,
            gross_area_m2: float | None = None, plate_area_m2: float | None = None) -> LevelMass:
    total = MassMoments(next(iter(comp.values())).ref)
    total.merge(comp.values())
    if gross_area_m2 is None:
        filled = _filled(plate)
        gross_area_m2 = float(filled.area) if filled is not None else 0.0
    return LevelMass(
        mass_kg=total.m, centre_m=total.centre, polar_moment_kg_m2=total.polar_moment,
        components_kg=tuple((k, c.m) for k, c in comp.items() if c.m != 0.0),
        plate=plate if plate is None or isinstance(plate, (Polygon, MultiPolygon)) else None,
        plate_area_m2=plate_area_m2 if plate_area_m2 is not None else (float(plate.area) if plate is not None else 0.0),
        gross_area_m2=gross_area_m2, estimated=estimated)


def _bulk(layout: FloorLayout, loads: LoadSettings, ref: tuple[float, float], warnings: list[str]) -> list[LevelMass]:
    floors = layout.floors
    hulls = [_hull_of(f) for f in floors]
    if not any(h is not None for h in hulls):
        warnings.append("no slabs, walls or columns with a plan area: floor masses cannot be estimated")
        return []
    for i, h in enumerate(hulls):
        if h is None:
            near = sorted((abs(j - i), j) for j, g in enumerate(hulls) if g is not None)
            hulls[i] = hulls[near[0][1]]
    out: list[LevelMass] = []
    for i, hull in enumerate(hulls):
        comp = {"bulk estimate": MassMoments(ref)}
        comp["bulk estimate"].add_area(loads.building_density_kg_m3 * hull.area * layout.tributary_height_m(i), hull)
        plate = hull if isinstance(hull, Polygon) else None
        out.append(_finish(comp, plate, "bulk"))
    warnings.append(f"no floor slabs read: floor masses estimated as {loads.building_density_kg_m3:g} kg/m^3 "
                    "x the convex hull of the walls and columns x the storey height")
    return out
