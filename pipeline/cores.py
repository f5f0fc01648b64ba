"""Finding the lateral systems (cores and separate walls) of each storey from the takeoff walls.

Rules (DEVELOPERS.md quotes this block):

1. **Which walls count.** A wall flagged ``LoadBearing = false`` is not part of the
   lateral system. A wall with no flag that is thinner than
   :data:`PARTITION_MAX_THICKNESS_M` (0.15 m) is taken for a partition and left out too
   (common practice: concrete shear walls of towers are 0.2 m and thicker; blockwork and
   stud partitions are 0.05-0.15 m). A wall flagged load-bearing always counts, however
   thin. ``load_bearing_only=True`` keeps only walls flagged load-bearing.
2. **Cores.** Walls whose footprints touch or overlap in plan (within
   :data:`JOIN_TOL_M`, 0.05 m) are joined in a graph (networkx); each connected component
   of two or more walls is a core, a component of one wall is a separate wall (its own
   cantilever). The walls' centre lines are joined into one network: where two axes (or
   their extensions by half the other wall's thickness, divided by the sine of the angle
   between them, plus the tolerance) cross, both get a node there; wall ends are trimmed
   or extended to a junction that close, so the stubs at corners disappear. Collinear walls
   that meet end to end join at the middle of the gap or overlap.
3. **Closed cells.** The bounded faces of the centre-line network are the closed cells
   (torsion by Bredt-Batho, see :mod:`.sections`).
4. **Door rule.** An opening whose lintel (wall left above the opening head, up to the
   wall top: ``height_m - head_m``) is shallower than
   ``StiffnessSettings.lintel_min_depth_m`` (0.4 m by default), or that has no lintel at all,
   cuts its wall through: the wall piece it sits in is slit at the opening's centre and
   carries no circulating shear flow. The cells are then the faces of the uncut network,
   so a cut in an outside wall opens that cell (St Venant), and a cut in a web shared by
   two cells merges them into one larger cell. A cell all of whose wall openings keep a
   lintel at least that deep stays closed. The wall below a window sill is not counted
   (on the safe side). The cut also changes the shear centre, as for a slit tube.
5. **Override.** ``StiffnessSettings.core_cells = "closed"`` ignores all openings (every
   cell closed); ``"open"`` makes every cell act open for torsion (J from St Venant only)
   while the shear centre keeps the uncut topology. ``"auto"`` applies rule 4.
   Each system's ``note`` says which rule decided and names the openings that cut.
6. **Section.** Area, centroid and bending constants from the union of the footprints
   (openings not subtracted: gross); torsion, shear areas and shear centre from the
   centre-line model with the free-end refinement of St Venant torsion
   (``free_end_correction=True``, so a single wall gets (b t^3/3)(1 - 0.63 t/b)).
   The warping constant ``SectionProps.cw_m6`` (Vlasov torsion of open cores, about the
   shear centre) is carried only for a system whose centre lines form one connected open
   network (a C, an L, a slit tube); closed cells, cells taken open by the override (the
   network keeps its cycle) and walls in several unconnected parts carry 0 (see
   :func:`swayscreen.pipeline.sections.combine_section`: conservative, St Venant only).

Over the height (:func:`find_systems_by_storey`) storeys are taken bottom up; each
system is matched to a system of the storey below by the largest plan overlap (then to
one seen further down, if it reappears), so ``core-1`` is the same core on every floor.
Ids are ``core-<n>`` for cores and ``wall-<n>`` for separate walls, the prefix taken from
the kind at the lowest above-grade storey where the system stands (a system that changes
kind keeps its one id). Numbering: systems standing above grade first, in the order of
the storey where they start above grade, then by plan area (largest first); systems
found only below grade last.
A wall taller than its storey (its body spans the mid-height of another storey) also
counts on that storey. Warnings report systems that stop, appear, reappear, merge or
split, walls below that are not continued above (more than :data:`STOP_MIN_LENGTH_M` and
5 % of their length uncovered), a system that changes kind, cells that open or close,
storeys whose walls all drop out, walls without usable geometry, and (one line each over
the height) how many walls were left out as partitions or as flagged non-load-bearing.
Systems that end at the top of the building (no storey above has any) are not reported.
"""
from __future__ import annotations

import bisect
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass

import networkx as nx
import numpy as np
import shapely
from shapely.errors import GEOSException
from shapely.geometry import LineString, MultiPolygon, Polygon

from .core_settings import StiffnessSettings
from .errors import InputError
from .plan_moments import ShapeTable
from .plan_ops import (PlanGeometryError, clean, robust_buffer, robust_call, robust_difference, robust_intersection,
                       robust_union)
from .sections import WallSegment, combine_section, thin_walled_properties
from .stick import CoreSummary, SectionProps
from .takeoff import Storey, Wall

__all__ = [
    "SystemSection",
    "find_systems",
    "find_systems_by_storey",
    "wall_segments",
    "lateral_walls",
    "PARTITION_MAX_THICKNESS_M",
    "JOIN_TOL_M",
    "STOP_MIN_LENGTH_M",
]

PlanShape = Polygon | MultiPolygon

PARTITION_MAX_THICKNESS_M = 0.15
"""Walls with no LoadBearing flag thinner than this are partitions (common practice)."""
JOIN_TOL_M = 0.05
"""Footprints closer than this touch; also the reach added when joining axes (common practice)."""
STOP_MIN_LENGTH_M = 0.3
"""A wall below is reported as not continued when more than this much of its axis (and 5 %)
is not covered by the system above (m); smaller differences are drawing tolerances."""
_SIN_PARALLEL = 0.1  # walls within about 5.7 degrees of each other are treated as parallel
_NODE_SNAP_M = 0.02  # junction points closer than this are one node of the centre-line network
_MIN_THICKNESS_M = 1e-6  # a thinner "wall" (round-off size, e.g. subnormal coordinates) has no usable thickness


@dataclass(frozen=True)
class SystemSection:
    """One vertical system (core or separate wall) on one storey.

    Attributes:
        system_id: "core-<n>" or "wall-<n>" (stable over the height after
            :func:`find_systems_by_storey`; per storey numbering from :func:`find_systems`).
        kind: "core" (two or more walls joined) or "wall" (one wall).
        wall_ids: GlobalIds of its walls, sorted.
        section: gross section constants (see :func:`swayscreen.pipeline.sections.section_props`).
        closed: True when at least one cell acts closed (Bredt-Batho).
        plan: union of the wall footprints (m).
        note: how the closed/open decision was made (door rule, override, open section).
    """

    system_id: str
    kind: str
    wall_ids: tuple[str, ...]
    section: SectionProps
    closed: bool
    plan: PlanShape
    note: str


# ---------------------------------------------------------------------------------------
# Wall geometry helpers
# ---------------------------------------------------------------------------------------


def _wall_line(w: Wall) -> tuple[np.ndarray, np.ndarray, float] | None:
    """Axis end points and thickness; from the footprint's minimum rotated rectangle when
    the axis or thickness is missing. None when neither gives a usable wall."""
    (x0, y0), (x1, y1) = w.axis_m
    x0, y0, x1, y1 = float(x0), float(y0), float(x1), float(y1)
    t = float(w.thickness_m)
    if (math.isfinite(x0) and math.isfinite(y0) and math.isfinite(x1) and math.isfinite(y1)
            and math.dist((x0, y0), (x1, y1)) > 1e-6 and t > _MIN_THICKNESS_M and math.isfinite(t)):
        ends = np.array([[x0, y0], [x1, y1]])
        return ends[0], ends[1], t
    fp = w.footprint
    if fp is None or fp.is_empty or not fp.area > 0:
        return None
    try:
        with np.errstate(all="ignore"):  # footprints of round-off size: judged by the sizes below
            rect = shapely.minimum_rotated_rectangle(fp)
    except GEOSException:
        return None
    if not isinstance(rect, Polygon) or rect.is_empty:
        return None
    c = np.asarray(rect.exterior.coords)[:4]
    e1, e2 = c[1] - c[0], c[2] - c[1]
    if np.hypot(*e1) >= np.hypot(*e2):
        long_, short = e1, e2
        mid0, mid1 = (c[0] + c[3]) / 2, (c[1] + c[2]) / 2
    else:
        long_, short = e2, e1
        mid0, mid1 = (c[1] + c[0]) / 2, (c[2] + c[3]) / 2
    t2 = float(np.hypot(*short))
    if not (np.hypot(*long_) > 1e-6 and t2 > _MIN_THICKNESS_M):
        return None
    return mid0, mid1, t2


def _line_of(w: Wall, lines: dict | None) -> tuple[np.ndarray, np.ndarray, float] | None:
    """:func:`_wall_line` through ``lines`` (a dict kept over one call of
    :func:`find_systems_by_storey`: the same wall object is met on several storeys and by
    several steps). Entries hold the wall, so its ``id`` stays unique while the dict lives."""
    if lines is None:
        return _wall_line(w)
    got = lines.get(id(w))
    if got is None or got[0] is not w:
        got = _line_entry(w, lines)
    return got[1]


def _line_entry(w: Wall, lines: dict) -> tuple[Wall, tuple[np.ndarray, np.ndarray, float] | None, tuple | None]:
    """The entry of ``lines`` for ``w``: (wall, centre line, the line as a tuple of floats
    (x0, y0, x1, y1, t) or None), made when missing."""
    got = lines.get(id(w))
    if got is None or got[0] is not w:
        line = _wall_line(w)
        key = None
        if line is not None:
            p0, p1, t = line
            key = (float(p0[0]), float(p0[1]), float(p1[0]), float(p1[1]), float(t))
        got = lines[id(w)] = (w, line, key)
    return got


def _footprint(w: Wall, line: tuple[np.ndarray, np.ndarray, float]) -> Polygon | MultiPolygon:
    fp = w.footprint
    if fp is None or fp.is_empty or not fp.area > 0:
        return _axis_footprint(w, line)
    if not fp.is_valid:
        try:
            with np.errstate(all="ignore"):
                repaired = shapely.make_valid(fp)
        except GEOSException:
            repaired = clean(fp)
        polys = [g for g in shapely.get_parts(repaired) if isinstance(g, Polygon) and g.area > 0]
        if not polys:
            return _axis_footprint(w, line)
        fp = polys[0] if len(polys) == 1 else MultiPolygon(polys)
    return fp


def _axis_footprint(w: Wall, line: tuple[np.ndarray, np.ndarray, float]) -> Polygon | MultiPolygon:
    """The wall's rectangle from its axis and thickness (when its footprint is unusable)."""
    p0, p1, t = line
    return robust_buffer(LineString([p0, p1]), t / 2, f"wall {w.global_id}: rectangle from its axis",
                         cap_style="flat", join_style="mitre")


def _as_plan(geom: object) -> PlanShape:
    if isinstance(geom, (Polygon, MultiPolygon)):
        return geom
    polys = [g for g in shapely.get_parts(geom) if isinstance(g, Polygon)]
    polys += [p for g in shapely.get_parts(geom) if isinstance(g, MultiPolygon) for p in g.geoms]
    return polys[0] if len(polys) == 1 else MultiPolygon(polys)


def _partition_note(count: int, limit_m: float) -> str:
    return (f"{count} wall(s) thinner than {limit_m:.2f} m with no LoadBearing flag "
            "taken as partitions (not in the lateral system)")


def _lateral(
    walls: Sequence[Wall], load_bearing_only: bool, partition_max_thickness_m: float, lines: dict | None = None,
    kept_lines: list | None = None,
) -> tuple[list[Wall], list[str], int, int]:
    """Kept walls, warnings, number of partitions, number flagged not load-bearing (and, into
    ``kept_lines`` when given, the kept walls' centre lines)."""
    kept: list[Wall] = []
    seen: set[str] = set()
    warnings: list[str] = []
    n_partition = n_flagged = 0
    for w in walls:
        if w.global_id in seen:
            continue
        seen.add(w.global_id)
        if w.load_bearing is False:
            n_flagged += 1
            continue
        if load_bearing_only and w.load_bearing is not True:
            continue
        line = _line_of(w, lines)
        if line is None:
            warnings.append(f"wall {w.global_id} ({w.name!r}) has no usable axis, thickness or footprint: left out")
            continue
        if w.load_bearing is None and line[2] < partition_max_thickness_m:
            n_partition += 1
            continue
        kept.append(w)
        if kept_lines is not None:
            kept_lines.append(line)
    return kept, warnings, n_partition, n_flagged


def lateral_walls(
    walls: Sequence[Wall],
    *,
    load_bearing_only: bool = False,
    partition_max_thickness_m: float = PARTITION_MAX_THICKNESS_M,
) -> tuple[list[Wall], list[str]]:
    """The walls that belong to the lateral system (rule 1 in the module docstring).

    Returns:
        (walls kept, in input order, without repeated GlobalIds; warnings). Walls with no
        usable axis or footprint are dropped with a warning each; partitions and
        non-load-bearing walls are dropped, partitions counted in one summary line.
    """
    kept, warnings, n_partition, _ = _lateral(walls, load_bearing_only, partition_max_thickness_m)
    if n_partition:
        warnings.append(_partition_note(n_partition, partition_max_thickness_m))
    return kept, warnings


def wall_segments(
    walls: Sequence[Wall],
    *,
    slits: dict[str, tuple[float, ...]] | None = None,
    tol_m: float = JOIN_TOL_M,
) -> list[WallSegment]:
    """Centre-line segments of a group of walls, joined at their junctions (rule 2).

    Args:
        walls: the walls of one core (or one wall).
        slits: per wall GlobalId, positions along its axis from the axis start (m) where
            it is cut through (openings without an adequate lintel).
        tol_m: joining tolerance (m).

    Returns:
        :class:`~swayscreen.pipeline.sections.WallSegment` pieces tagged with the wall's
        GlobalId, split at junctions; walls shorter than their junction zone give none.
    """
    slits = slits or {}
    lines = []
    for w in walls:
        line = _wall_line(w)
        if line is not None:
            lines.append((w, *line))
    n = len(lines)
    # junctions per wall: (s along own axis, point, reach)
    junctions: list[list[tuple[float, np.ndarray, float]]] = [[] for _ in range(n)]
    for i in range(n):
        _, pi0, pi1, ti = lines[i]
        li = math.dist(pi0, pi1)
        ui = (pi1 - pi0) / li
        for j in range(i + 1, n):
            _, pj0, pj1, tj = lines[j]
            lj = math.dist(pj0, pj1)
            uj = (pj1 - pj0) / lj
            sin = ui[0] * uj[1] - ui[1] * uj[0]
            if abs(sin) >= _SIN_PARALLEL:
                w_ = pj0 - pi0
                s = (w_[0] * uj[1] - w_[1] * uj[0]) / sin
                r = (w_[0] * ui[1] - w_[1] * ui[0]) / sin
                reach_i = tj / (2 * abs(sin)) + tol_m
                reach_j = ti / (2 * abs(sin)) + tol_m
                if -reach_i <= s <= li + reach_i and -reach_j <= r <= lj + reach_j:
                    x = pi0 + s * ui
                    junctions[i].append((float(s), x, reach_i))
                    junctions[j].append((float(r), x, reach_j))
                continue
            # parallel: join only when collinear and meeting end to end
            offsets = [abs(ui[0] * (q - pi0)[1] - ui[1] * (q - pi0)[0]) for q in (pj0, pj1)]
            if max(offsets) > 0.5 * min(ti, tj) + 1e-9:
                continue
            best = None
            for si, qi in ((0.0, pi0), (li, pi1)):
                for sj, qj in ((0.0, pj0), (lj, pj1)):
                    # facing ends: j's end lies beyond i's end (gap) or inside it (overlap)
                    along = float(np.dot(qj - qi, ui)) * (1.0 if si > 0 else -1.0)
                    other_side = float(np.dot((pj0 + pj1) / 2 - qi, ui)) * (1.0 if si > 0 else -1.0)
                    if other_side <= 0:
                        continue  # j lies on the other side of this end of i
                    gap = along
                    if -max(ti, tj) - tol_m <= gap <= tol_m and (best is None or abs(gap) < abs(best[0])):
                        best = (gap, si, qi, sj, qj)
            if best is not None:
                gap, si, qi, sj, qj = best
                x = (qi + qj) / 2
                reach = abs(gap) / 2 + tol_m
                junctions[i].append((float(np.dot(x - pi0, ui)), x, reach))
                junctions[j].append((float(np.dot(x - pj0, uj)), x, reach))
    segments: list[WallSegment] = []
    for i in range(n):
        w, p0, p1, t = lines[i]
        length = math.dist(p0, p1)
        js = sorted(junctions[i], key=lambda q: q[0])
        start = [q for q in js if q[0] <= q[2]]
        end = [q for q in js if q[0] >= length - q[2]]
        s_start, x_start = (start[0][0], start[0][1]) if start else (0.0, p0)
        s_end, x_end = (end[-1][0], end[-1][1]) if end else (length, p1)
        pts = [(s_start, x_start)] + [(s, x) for s, x, _ in js if s_start < s < s_end] + [(s_end, x_end)]
        pts = [pts[0]] + [p for k, p in enumerate(pts[1:], 1) if p[0] - pts[k - 1][0] > 1e-9]
        pieces = [(pts[k], pts[k + 1]) for k in range(len(pts) - 1) if math.dist(pts[k][1], pts[k + 1][1]) > 1e-6]
        at: list[list[float]] = [[] for _ in pieces]
        for c in slits.get(w.global_id, ()):
            # the piece holding the cut; cuts on a trimmed stub go to the end piece
            k = next((m for m, ((sa, _), (sb, _)) in enumerate(pieces) if sa <= c < sb), None)
            if k is None and pieces:
                k = 0 if c < pieces[0][0][0] else len(pieces) - 1
            if k is not None:
                (sa, _), (sb, _) = pieces[k]
                at[k].append(min(max(c - sa, 0.0), sb - sa))
        for ((sa, xa), (sb, xb)), here in zip(pieces, at):
            segments.append(
                WallSegment((float(xa[0]), float(xa[1])), (float(xb[0]), float(xb[1])), t, tuple(here), w.global_id)
            )
    return segments


# ---------------------------------------------------------------------------------------
# One storey
# ---------------------------------------------------------------------------------------


def _door_cuts(w: Wall, length: float, stiffness: StiffnessSettings) -> list[tuple[float, str]]:
    """Positions along the axis (m) of openings that cut the wall, with a description."""
    cuts = []
    for o in w.openings:
        if not o.end_m > o.start_m:
            continue
        lintel = w.height_m - o.head_m
        if lintel <= 1e-6 or lintel < stiffness.lintel_min_depth_m:
            centre = min(max((o.start_m + o.end_m) / 2, 0.0), length)
            name = o.global_id or f"at {o.start_m:.2f}-{o.end_m:.2f} m"
            cuts.append((centre, f"opening {name} in wall {w.global_id} leaves a {max(lintel, 0.0):.2f} m lintel"))
    return cuts


def _footprint_wkbs(walls: Sequence[Wall]) -> list[bytes]:
    """WKB bytes of the walls' footprints (b"" for none), in one vectorised call."""
    prints = np.empty(len(walls), dtype=object)
    prints[:] = [w.footprint for w in walls]
    return [b if b is not None else b"" for b in shapely.to_wkb(prints).tolist()]


def _wall_signature(w: Wall, line: tuple[np.ndarray, np.ndarray, float], slits: tuple[float, ...],
                    wkb: bytes | None = None) -> tuple:
    """Everything of a wall that its system's section depends on: axis, thickness, footprint
    (WKB bytes, ``wkb`` when already known) and the cut positions. Walls with equal signatures
    give equal sections."""
    if wkb is None:
        wkb = w.footprint.wkb if w.footprint is not None else b""
    return (*_line_tuple(line), wkb, tuple(float(c) for c in slits))


def _line_tuple(line: tuple[np.ndarray, np.ndarray, float]) -> tuple[float, float, float, float, float]:
    p0, p1, t = line
    return (float(p0[0]), float(p0[1]), float(p1[0]), float(p1[1]), float(t))


def _system_geometry(walls: list[Wall], lines: dict, slits: dict[str, tuple[float, ...]], mode: str
                     ) -> tuple[SectionProps, PlanShape, int, int, int]:
    """(section, plan, closed cells after cuts, cells in plan, centre-line parts) of a group of walls.

    Raises:
        InputError: no centre line is left, or the geometry engine fails on the walls even
            after the robust retries of :mod:`.plan_ops` (the caller leaves the group out
            with a warning).
    """
    what = "union of walls " + ", ".join(w.global_id for w in walls)
    plan = _as_plan(robust_union([_footprint(w, lines[w.global_id]) for w in walls], what))
    try:
        uncut = wall_segments(walls)
        tw = thin_walled_properties(
            wall_segments(walls, slits=slits) if slits else uncut,
            torsion_cells=(mode != "open"), free_end_correction=True, snap_tol_m=_NODE_SNAP_M,
        )
        n_geo = tw.n_cells  # cells in plan before cuts and override
        if slits or mode == "open":
            n_geo = thin_walled_properties(uncut, free_end_correction=True, snap_tol_m=_NODE_SNAP_M).n_cells
        section = combine_section(tw, plan)
    except GEOSException as exc:
        raise PlanGeometryError(f"centre lines of walls {', '.join(w.global_id for w in walls)}: the geometry "
                                f"engine failed ({str(exc).splitlines()[0]})") from None
    return section, plan, tw.n_cells, n_geo, tw.n_parts


def _system(walls: list[Wall], stiffness: StiffnessSettings, memo: dict | None = None,
            line_cache: dict | None = None, wkbs: dict[int, bytes] | None = None,
            wall_lines: Sequence | None = None) -> tuple[str, SectionProps, bool, PlanShape, str]:
    """Kind, section, closed flag, plan and note of one connected group of walls.

    ``memo``: a dict shared between calls (e.g. over the storeys of one building): groups of
    walls with the same geometry (same axes, thicknesses, footprints and cuts, in any order)
    reuse the section and plan computed for the first such group. ``line_cache``: see
    :func:`_line_of`; ``wkbs``: the WKB bytes of the walls' footprints by ``id`` of the wall,
    when already known.

    Raises:
        InputError: the walls leave no centre line (all shorter than the node snapping).
    """
    kind = "core" if len(walls) > 1 else "wall"
    if wall_lines is None:
        wall_lines = [_line_of(w, line_cache) for w in walls]
    lines = {w.global_id: line for w, line in zip(walls, wall_lines)}
    mode = stiffness.core_cells
    slits: dict[str, tuple[float, ...]] = {}
    cut_notes: list[str] = []
    if mode == "auto":
        for w in walls:
            p0, p1, _ = lines[w.global_id]  # type: ignore[misc]
            cuts = _door_cuts(w, math.dist(p0, p1), stiffness)
            if cuts:
                slits[w.global_id] = tuple(c for c, _ in cuts)
                cut_notes += [d for _, d in cuts]
    if memo is None:
        geo = _system_geometry(walls, lines, slits, mode)
    else:
        if wkbs is not None:
            group_wkbs = [wkbs[id(w)] for w in walls]
        else:
            group_wkbs = _footprint_wkbs(walls)
        if line_cache is not None:
            sigs = [(*_line_entry(w, line_cache)[2], wkb, tuple(float(c) for c in slits.get(w.global_id, ())))
                    for w, wkb in zip(walls, group_wkbs)]
        else:
            sigs = [_wall_signature(w, line, slits.get(w.global_id, ()), wkb)  # type: ignore[arg-type]
                    for w, line, wkb in zip(walls, wall_lines, group_wkbs)]
        key = (mode, tuple(sorted(sigs)))
        geo = memo.get(key)
        if geo is None:
            geo = memo[key] = _system_geometry(walls, lines, slits, mode)
    section, plan, n_cells, n_geo, n_parts = geo
    depth = f"{stiffness.lintel_min_depth_m:.2f} m"
    cut_text = "; ".join(f"{d} (< {depth}): cut" for d in cut_notes)
    if kind == "wall":
        note = "separate wall"
    elif n_geo == 0:
        note = "open section (no closed cell in plan)"
    elif mode == "closed":
        note = f"settings core_cells = closed: {n_cells} cell(s) taken closed, openings ignored"
    elif mode == "open":
        note = f"settings core_cells = open: {n_geo} cell(s) taken open (St Venant)"
    elif not cut_notes:
        tail = f"every opening keeps a lintel >= {depth}" if any(w.openings for w in walls) else "no openings"
        note = f"door rule: {n_cells} cell(s) closed; {tail}"
    else:
        note = f"door rule: {n_cells} of {n_geo} cell(s) act closed after cuts"
    if cut_text:
        note += f"; {cut_text}"
    if n_parts > 1:
        note += (f"; centre lines in {n_parts} unconnected parts (shear centre from their stiffness centre;"
                 " no warping constant taken)")
    elif kind == "core" and section.cw_m6 > 0.0:
        note += f"; warping constant C_w = {section.cw_m6:,.1f} m^6 (Vlasov torsion)"
    return kind, section, section.closed, plan, note


def _components(prints: Sequence[PlanShape], tol_m: float) -> list[tuple[int, ...]]:
    """Groups of footprints that touch within ``tol_m`` (rule 2): the connected components of
    the touch graph (networkx), as sorted index tuples in networkx's order."""
    graph = nx.Graph()
    graph.add_nodes_from(range(len(prints)))
    try:
        with np.errstate(all="ignore"):
            tree = shapely.STRtree(prints)
            left, right = tree.query(prints, predicate="dwithin", distance=tol_m)
    except GEOSException:
        cleaned = [c if c is not None else Polygon() for c in (clean(p) for p in prints)]
        tree = shapely.STRtree(cleaned)
        left, right = robust_call("walls touching", (lambda: tree.query(cleaned, predicate="dwithin", distance=tol_m),))
    graph.add_edges_from((int(i), int(j)) for i, j in zip(left, right) if i < j)
    return [tuple(sorted(comp)) for comp in nx.connected_components(graph)]


def _find_systems(
    walls: Sequence[Wall],
    stiffness: StiffnessSettings,
    *,
    load_bearing_only: bool = False,
    partition_max_thickness_m: float = PARTITION_MAX_THICKNESS_M,
    tol_m: float = JOIN_TOL_M,
    memo: dict | None = None,
    lines: dict | None = None,
    shapes: ShapeTable | None = None,
) -> tuple[list[SystemSection], list[str], tuple[int, int]]:
    kept_lines: list = []
    kept, warnings, n_partition, n_flagged = _lateral(walls, load_bearing_only, partition_max_thickness_m, lines,
                                                      kept_lines)
    if not kept:
        return [], warnings, (n_partition, n_flagged)
    prints = [_footprint(w, line) for w, line in zip(kept, kept_lines)]
    wkbs = None
    if memo is not None:
        # storeys with the same footprints (in the same order) have the same wall graph
        if shapes is not None:
            fp_wkbs = [b if b is not None else b"" for b in shapes.wkbs(kept, [w.footprint for w in kept])]
        else:
            fp_wkbs = _footprint_wkbs(kept)
        wkbs = {id(w): b for w, b in zip(kept, fp_wkbs)}
        print_wkbs = tuple(b if p is w.footprint else p.wkb for w, p, b in zip(kept, prints, fp_wkbs))
        gkey = ("wall graph", float(tol_m), print_wkbs)
        comps = memo.get(gkey)
        if comps is None:
            comps = memo[gkey] = _components(prints, tol_m)
    else:
        comps = _components(prints, tol_m)
    found = []
    for comp in comps:
        order_ = sorted(comp, key=lambda k: kept[k].global_id)
        group = [kept[k] for k in order_]
        try:
            kind, section, closed, plan, note = _system(group, stiffness, memo, lines, wkbs,
                                                        [kept_lines[k] for k in order_])
        except InputError as err:
            warnings.append(f"walls {', '.join(w.global_id for w in group)} give no section ({err}): left out")
            continue
        found.append((kind, tuple(w.global_id for w in group), section, closed, plan, note))
    found.sort(key=lambda f: (-f[4].area, round(f[2].centroid_m[0], 6), round(f[2].centroid_m[1], 6), f[1]))
    counters = {"core": 0, "wall": 0}
    systems = []
    for kind, ids, section, closed, plan, note in found:
        counters[kind] += 1
        systems.append(SystemSection(f"{kind}-{counters[kind]}", kind, ids, section, closed, plan, note))
    return systems, warnings, (n_partition, n_flagged)


def find_systems(
    walls: Sequence[Wall],
    stiffness: StiffnessSettings,
    *,
    load_bearing_only: bool = False,
    partition_max_thickness_m: float = PARTITION_MAX_THICKNESS_M,
) -> list[SystemSection]:
    """Cores and separate walls among the walls of one storey (rules 1-6 of the module).

    Args:
        walls: the storey's walls (world plan coordinates, m).
        stiffness: ``lintel_min_depth_m`` and ``core_cells`` are used.
        load_bearing_only: keep only walls flagged load-bearing.
        partition_max_thickness_m: unflagged walls thinner than this are partitions (m).

    Returns:
        Systems ordered by plan area (largest first), numbered ``core-1``, ``core-2``, ...
        and ``wall-1``, ... within this storey. Use :func:`find_systems_by_storey` for ids
        that are stable over the height and for the warnings.
    """
    return _find_systems(
        walls, stiffness, load_bearing_only=load_bearing_only, partition_max_thickness_m=partition_max_thickness_m
    )[0]


# ---------------------------------------------------------------------------------------
# Over the height
# ---------------------------------------------------------------------------------------


class _SpanIndex:
    """The walls of all storeys (storey by storey, in order) indexed by base elevation, to find
    those whose body spans a given elevation without scanning every wall."""

    def __init__(self, owned: Sequence[tuple[Storey, Wall]]) -> None:
        self.owned = owned
        rows = sorted((w.base_elevation_m, k) for k, (_, w) in enumerate(owned) if math.isfinite(w.base_elevation_m))
        self.bases = [b for b, _ in rows]
        self.order = [k for _, k in rows]
        heights = [owned[k][1].height_m for k in self.order]
        self.max_height = max((h for h in heights if not math.isnan(h)), default=0.0)

    def spanning(self, z: float) -> list[tuple[Storey, Wall]]:
        """(storey, wall) with base < z < top, in the order of ``owned``."""
        if not self.bases or not math.isfinite(z):
            return []
        lo = bisect.bisect_left(self.bases, z - self.max_height) if math.isfinite(self.max_height) else 0
        hi = bisect.bisect_left(self.bases, z)
        hits = sorted(self.order[lo:hi])
        return [self.owned[k] for k in hits if self.owned[k][1].base_elevation_m < z < self.owned[k][1].top_elevation_m]


def _storey_walls(storey: Storey, others: Sequence[tuple[Storey, Wall]] | _SpanIndex, include_spanning: bool
                  ) -> list[Wall]:
    walls = list(storey.walls)
    if include_spanning and storey.height_m > 0:
        mid = storey.elevation_m + storey.height_m / 2
        ids = {w.global_id for w in walls}
        cands = others.spanning(mid) if isinstance(others, _SpanIndex) else others
        for owner, w in cands:
            if owner is storey or w.global_id in ids:
                continue
            if w.base_elevation_m < mid < w.top_elevation_m:
                walls.append(w)
                ids.add(w.global_id)
    return walls


def _uncovered(w: Wall, plan: PlanShape, tol_m: float) -> tuple[float, float]:
    line = _wall_line(w)
    if line is None:
        return 0.0, 0.0
    p0, p1, t = line
    axis = LineString([p0, p1])
    try:
        rest = robust_difference(axis, robust_buffer(plan, max(tol_m, t / 2)))
    except PlanGeometryError:
        return 0.0, float(axis.length)  # cannot tell: not reported as a stop
    return float(rest.length), float(axis.length)


def find_systems_by_storey(
    storeys: Sequence[Storey],
    stiffness: StiffnessSettings,
    *,
    load_bearing_only: bool = False,
    include_spanning_walls: bool = True,
    shapes: ShapeTable | None = None,
) -> tuple[dict[str, list[SystemSection]], list[CoreSummary], list[str]]:
    """Systems of every storey with ids stable over the height (see the module docstring).

    Args:
        storeys: any order; processed by elevation, lowest first.
        stiffness: ``lintel_min_depth_m`` and ``core_cells`` are used.
        load_bearing_only: keep only walls flagged load-bearing.
        include_spanning_walls: also count on a storey the walls of other storeys whose
            body spans its mid-height.
        shapes: the walls' footprint areas and WKB bytes when already computed (a derive
            shares them between its stages); computed here otherwise.

    Returns:
        (storey GlobalId -> its systems (largest plan first), one
        :class:`~swayscreen.pipeline.stick.CoreSummary` per distinct system, cores then
        walls by number (section, closed and note at the lowest above-grade storey where
        it stands, else the lowest), warnings).
    """
    order = sorted(storeys, key=lambda s: s.elevation_m)
    owned = [(s, w) for s in order for w in s.walls]
    by_storey: dict[str, list[SystemSection]] = {}
    warnings: list[str] = []
    # provisional ids are tokens "\x00<n>\x00", renamed once all storeys are matched
    n_ids = 0
    history: dict[str, tuple[int, SystemSection]] = {}  # id -> (storey index, last system)
    ref: dict[str, tuple[bool, int, SystemSection]] = {}  # id -> (above grade, storey index, system)
    walls_of: dict[str, list[str]] = {}
    walls_seen: dict[str, set[str]] = {}  # the same ids as a set (membership in constant time)
    first_seen: list[str] = []
    wall_index: dict[int, dict[str, Wall]] = {}
    per_storey_raw: list[tuple[list[SystemSection], list[str], list[Wall]]] = []
    partitions: list[int] = []
    flagged: list[int] = []
    span_index = _SpanIndex(owned)
    memo: dict = {}  # wall-group geometry -> section and plan, shared over the storeys
    lines: dict = {}  # id(wall) -> (wall, centre line), see _line_of
    if shapes is None:
        shapes = ShapeTable()
        shapes.add([w for _, w in owned], [w.footprint for _, w in owned])
    for st in order:
        walls = _storey_walls(st, span_index, include_spanning_walls)
        systems, warn, (n_partition, n_flagged) = _find_systems(walls, stiffness, load_bearing_only=load_bearing_only,
                                                                 memo=memo, lines=lines, shapes=shapes)
        if walls and not systems:
            warn.append(f"none of its {len(walls)} wall(s) is in the lateral system (non-load-bearing, partitions or unusable)")
        per_storey_raw.append((systems, warn, walls))
        partitions.append(n_partition)
        flagged.append(n_flagged)
    if sum(partitions):
        n_storeys = sum(1 for n in partitions if n)
        warnings.append(f"{_partition_note(sum(partitions), PARTITION_MAX_THICKNESS_M)} on {n_storeys} storey(s)")
    if sum(flagged):
        n_storeys = sum(1 for n in flagged if n)
        warnings.append(f"{sum(flagged)} wall(s) flagged LoadBearing = false on {n_storeys} storey(s) left out of the lateral system")
    top_with_systems = max((k for k, r in enumerate(per_storey_raw) if r[0]), default=-1)

    prev: list[SystemSection] = []
    overlap_memo: dict[tuple[int, int], float] = {}
    query_memo: dict[tuple, tuple] = {}  # plan ids -> intersecting pairs (entries hold the plans)
    uncovered_memo: dict[tuple, tuple[float, float]] = {}
    for k, st in enumerate(order):
        systems, warn, walls = per_storey_raw[k]
        wall_index[k] = {w.global_id: w for w in walls}
        where = f"storey {st.name!r}"
        warnings += [f"{where}: {m}" for m in warn]
        prev_ids = {s.system_id for s in prev}
        older = [(sid, sys_) for sid, (kk, sys_) in history.items() if sid not in prev_ids]
        # candidate pairs: (priority, overlap, new index, old id)
        pairs = []
        overlaps: dict[int, list[str]] = {}
        pool = [(1, s.system_id, s.plan) for s in prev] + [(0, sid, old.plan) for sid, old in older]
        if pool and systems:
            # storeys with the same plans (the memo shares them) meet the same candidates
            old_plans = [c[2] for c in pool]
            new_plans = [s.plan for s in systems]
            qkey = (tuple(map(id, old_plans)), tuple(map(id, new_plans)))
            hit = query_memo.get(qkey)
            if hit is None:
                try:
                    with np.errstate(all="ignore"):
                        tree = shapely.STRtree(old_plans)
                        hits_new, hits_old = tree.query(new_plans, predicate="intersects")
                except GEOSException:  # odd geometry: candidates by bounding box, overlaps decide
                    tree = shapely.STRtree(old_plans)
                    hits_new, hits_old = tree.query(new_plans)
                hit = query_memo[qkey] = (list(zip(hits_new.tolist(), hits_old.tolist())), old_plans, new_plans)
            for n, m in hit[0]:
                prio, sid, old_plan = pool[m]
                okey = (id(systems[n].plan), id(old_plan))  # plans are alive until the end: ids are stable
                ov = overlap_memo.get(okey)
                if ov is None:
                    try:
                        ov = robust_intersection(systems[n].plan, old_plan).area
                    except PlanGeometryError:
                        ov = 0.0  # cannot tell: not matched by this pair
                    overlap_memo[okey] = ov
                if ov > 1e-9:
                    pairs.append((prio, ov, n, sid))
                    if prio == 1:
                        overlaps.setdefault(n, []).append(sid)
        pairs.sort(key=lambda p: (-p[0], -p[1], p[2], p[3]))
        assigned: dict[int, str] = {}
        used: set[str] = set()
        for prio, ov, n, sid in pairs:
            if n in assigned or sid in used:
                continue
            assigned[n] = sid
            used.add(sid)
        renamed: list[SystemSection] = []
        for n, new in enumerate(systems):
            if n in assigned:
                sid = assigned[n]
                if sid not in prev_ids:
                    last_k = history[sid][0]
                    warnings.append(f"{where}: {sid} reappears (last seen on storey {order[last_k].name!r})")
            else:
                sid = f"\x00{n_ids}\x00"
                n_ids += 1
                if k > 0:
                    warnings.append(f"{where}: new {new.kind} {sid} appears (walls {', '.join(new.wall_ids)}) with nothing below it")
            renamed.append(SystemSection(sid, new.kind, new.wall_ids, new.section, new.closed, new.plan, new.note))
        # per matched system: merges, kind and closure changes, walls not continued
        prev_by_id = {s.system_id: s for s in prev}
        for n, new in enumerate(renamed):
            sid = new.system_id
            below = overlaps.get(n, [])
            if len(below) > 1:
                warnings.append(f"{where}: {' and '.join(sorted(below))} from below merge into {sid}")
            old = prev_by_id.get(sid)
            if old is None:
                continue
            if old.kind != new.kind:
                warnings.append(f"{where}: {sid} changes from {old.kind} to {new.kind}")
            if old.closed != new.closed:
                state = "closed" if new.closed else "open"
                warnings.append(f"{where}: {sid} acts {state} here ({'open' if new.closed else 'closed'} below): {new.note}")
            stops = []
            for gid in old.wall_ids:
                w = wall_index[k - 1].get(gid)
                if w is None:
                    continue
                # _uncovered depends on the wall's centre line only
                lk = _line_entry(w, lines)[2]
                ukey = (lk if lk is not None else gid, id(new.plan))
                got = uncovered_memo.get(ukey)
                if got is None:
                    got = uncovered_memo[ukey] = _uncovered(w, new.plan, JOIN_TOL_M)
                rest, total = got
                if rest > max(STOP_MIN_LENGTH_M, 0.05 * total):
                    stops.append(f"{gid} ({rest:.2f} m of {total:.2f} m)")
            if stops:
                warnings.append(f"{where}: {sid} loses walls from the storey below: {', '.join(stops)} not continued")
        # systems below that found no partner here
        here_ids = {s.system_id for s in renamed}
        if k <= top_with_systems:
            for old in prev:
                if old.system_id in here_ids:
                    continue
                into = sorted({renamed[n].system_id for n, ids in overlaps.items() if old.system_id in ids})
                if into:
                    continue  # reported as a merge
                warnings.append(f"{where}: {old.system_id} stops (walls {', '.join(old.wall_ids)} below are not continued)")
        # a system below split into several here
        for old in prev:
            parts = sorted({renamed[n].system_id for n, ids in overlaps.items() if old.system_id in ids})
            if len(parts) > 1:
                warnings.append(f"{where}: {old.system_id} from below splits into {', '.join(parts)}")
        for s in renamed:
            history[s.system_id] = (k, s)
            if s.system_id not in walls_of:
                walls_of[s.system_id] = []
                walls_seen[s.system_id] = set()
                first_seen.append(s.system_id)
            seen_here = walls_seen[s.system_id]
            for g in s.wall_ids:
                if g not in seen_here:
                    seen_here.add(g)
                    walls_of[s.system_id].append(g)
            if s.system_id not in ref or (st.above_grade and not ref[s.system_id][0]):
                ref[s.system_id] = (st.above_grade, k, s)
        by_storey[st.global_id] = renamed
        prev = renamed
    # final names: systems standing above grade first, by the storey where they start
    # there, then by plan area; the prefix is the kind at that storey
    def order_key(sid: str) -> tuple:
        above, k, sys_ = ref[sid]
        cx, cy = sys_.section.centroid_m
        return (0 if above else 1, k, -sys_.plan.area, round(cx, 6), round(cy, 6), sid)

    counters = {"core": 0, "wall": 0}
    final: dict[str, str] = {}
    for sid in sorted(first_seen, key=order_key):
        kind = ref[sid][2].kind
        counters[kind] += 1
        final[sid] = f"{kind}-{counters[kind]}"
    token = re.compile("\x00\\d+\x00")

    def name(text: str) -> str:
        return token.sub(lambda m: final[m.group(0)], text)

    by_storey = {gid: [SystemSection(final[s.system_id], s.kind, s.wall_ids, s.section, s.closed, s.plan, s.note)
                       for s in systems] for gid, systems in by_storey.items()}
    summaries = [
        CoreSummary(
            id=final[sid],
            wall_ids=tuple(walls_of[sid]),
            closed=ref[sid][2].closed,
            section=ref[sid][2].section,
            note=ref[sid][2].note,
        )
        for sid in sorted(first_seen, key=lambda x: (final[x].split("-")[0] != "core", int(final[x].split("-")[1])))
    ]
    return by_storey, summaries, [name(w) for w in warnings]
