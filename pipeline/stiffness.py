"""Lateral stiffness of the vertical systems per storey: cantilever segments and column frames.

Cantilevers (cores and separate walls). From the gross plan-section constants
(:class:`~swayscreen.pipeline.stick.SectionProps`) of the system at a storey::

    EI_xx = E I_xx f_w,  EI_yy = E I_yy f_w,  EI_xy = E I_xy f_w     (f_w = wall_flexure_factor)
    GA_x  = G A_s,x f_v, GA_y  = G A_s,y f_v                          (f_v = wall_shear_factor)
    GJ    = G J f_t                                                   (f_t = torsion_factor)
    EC_w  = E C_w f_t                                                 (warping, open cores)

at the section's shear centre. (EN 1992-1-1 / ACI 318-19 R6.6.3.2.2 for the factors' defaults.)
The warping stiffness E C_w (Vlasov torsion, N m^4; C_w = ``SectionProps.cw_m6``, nonzero
only for a single connected open core) takes the same cracked factor as G J: both are
the torsional stiffness of the same walls, and one factor keeps their ratio, hence the
Vlasov parameter alpha = H sqrt(GJ / (E C_w)) (methods.md section 7), that of the gross
section (common practice; no separate code value for cracked warping stiffness is known to us).

Columns. Each column is a storey shear spring in x and y::

    k_x = a_x 12 E f_c I_yy / h^3,   k_y = a_y 12 E f_c I_xx / h^3

with I_yy (I_xx) the second moment of its section polygon about its own centroidal axis
parallel to y (x) (sway in x bends the column about y), f_c = column_flexure_factor, h the
clear height (storey height minus the thickness of the slab at the column's top) when
``column_clear_height``, else the storey height. Product moments of rotated sections are
neglected (no x-y coupling per column). Columns whose centroid lies inside a wall of the
same storey are part of that wall and get no spring of their own.

End-restraint factor a: ``column_restraint_factor`` when set; otherwise Muto's D-value
method (K. Muto, *Aseismic design analysis of buildings*, Maruzen, 1974; also in
B. Stafford Smith and A. Coull, *Tall Building Structures*, 1991, approximate frame
analysis; from memory)::

    general storey:            k = (sum K_top + sum K_bottom) / (2 K_c),  a = k / (2 + k)
    lowest storey, fixed base: k = sum K_top / K_c,                       a = (0.5 + k) / (2 + k)

with K_c = E_c f_c I / h the column's and K = E_s f_s (b d^3 / 12) / L each connecting
slab strip's stiffness (f_s = slab_flexure_factor). Slab strips (flat-plate construction;
the strips stand in for beams): in each sway direction a strip runs from the column to the
nearest column or wall on each side along that direction (a column counts when it lies
within a cone of +-0.3 of the distance across, a wall when a ray from the column centroid
meets it), up to ``MAX_SLAB_SPAN_M``; L is that distance, d the slab thickness at the
joint, b = slab_strip_width_ratio times the panel width across (the mean distance to the
nearest columns or walls on either side across; L when there are none). A column with no
support on either side in a direction gets two strips of the storey's typical span (the
median of the spans found, else the square root of plate area per column). The factor
used is reported per storey (mean, min, max per direction).

Centre of stiffness of a storey (reporting only; the analysis uses the segments): each
system's lateral storey stiffness is, for a cantilever, that of a cantilever of storey
height fixed at its base, k = 1 / (h^3 / (3 EI) + h / GA) (bending and shear in series),
and for the column frame its springs; then x_s = sum k_y,i x_i / sum k_y,i and
y_s = sum k_x,i y_i / sum k_x,i over the systems' centres.
"""
from __future__ import annotations

import math
import statistics
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Protocol

import numpy as np
import shapely
from shapely.errors import GEOSException
from shapely.geometry import LineString, Point
from shapely.geometry.base import BaseGeometry

from .core_settings import StiffnessSettings
from .plan_moments import AreaMoments, area_moments, area_moments_array
from .plan_ops import PlanGeometryError, clean, robust_intersection, robust_union
from .stick import SectionProps, Segment

__all__ = [
    "MAX_SLAB_SPAN_M",
    "NO_SLAB_RESTRAINT",
    "SystemLike",
    "cantilever_segment",
    "cantilever_storey_stiffness",
    "column_second_moments",
    "muto_factor",
    "SlabField",
    "ColumnInput",
    "ColumnSpring",
    "RestraintReport",
    "column_springs",
    "column_frame",
    "frame_segment",
    "storey_stiffness_centre",
]

MAX_SLAB_SPAN_M = 20.0
"""Farthest column or wall a slab strip is taken to reach (m); common practice: flat-plate
spans rarely exceed 12-15 m even post-tensioned."""

NO_SLAB_RESTRAINT = 0.5
"""Restraint factor assumed when no slab is known at either end of a column (no slabs read);
common practice midpoint between a cantilever column (0.25) and fixed ends (1.0)."""

_CONE = 0.3


class SystemLike(Protocol):
    """What a vertical system found by :mod:`swayscreen.pipeline.cores` offers per storey."""

    system_id: str
    kind: str
    wall_ids: tuple[str, ...]
    section: SectionProps
    closed: bool


def cantilever_segment(system_id: str, kind: str, level_index: int, length_m: float, section: SectionProps,
                       e_pa: float, g_pa: float, stiffness: StiffnessSettings) -> Segment:
    """The Segment of a core or wall over one storey from its gross section (see module doc)."""
    fw, fv, ft = stiffness.wall_flexure_factor, stiffness.wall_shear_factor, stiffness.torsion_factor
    return Segment(
        system_id=system_id, kind=kind, level_index=level_index, length_m=length_m,
        centre_m=(float(section.shear_centre_m[0]), float(section.shear_centre_m[1])),
        ei_xx_nm2=e_pa * section.ixx_m4 * fw, ei_yy_nm2=e_pa * section.iyy_m4 * fw,
        ei_xy_nm2=e_pa * section.ixy_m4 * fw,
        ga_x_n=g_pa * section.shear_area_x_m2 * fv, ga_y_n=g_pa * section.shear_area_y_m2 * fv,
        gj_nm2=g_pa * section.j_m4 * ft, ecw_nm4=e_pa * section.cw_m6 * ft, section=section)


def cantilever_storey_stiffness(ei_nm2: float, ga_n: float, h_m: float) -> float:
    """Tip stiffness (N/m) of a cantilever of length h: 1 / (h^3/(3 EI) + h/GA); GA = 0 means rigid in shear."""
    flex = 0.0
    if ei_nm2 > 0:
        flex += h_m ** 3 / (3.0 * ei_nm2)
    else:
        return 0.0
    if ga_n > 0:
        flex += h_m / ga_n
    return 1.0 / flex


def column_second_moments(section: BaseGeometry) -> tuple[float, float, float]:
    """(I_xx, I_yy, I_xy) of a column section about its own centroid (m^4); I_xx about the axis parallel to x."""
    c = section.centroid
    return area_moments(section, (float(c.x), float(c.y))).central()


def muto_factor(k_bar: float, *, fixed_base: bool = False) -> float:
    """Muto's D-value factor on 12 E I / h^3 for a column with stiffness ratio ``k_bar``.

    a = k / (2 + k) for a general storey; a = (0.5 + k) / (2 + k) for the lowest storey
    with a fixed base (Muto 1974, from memory). Limits: k -> inf gives 1 (fixed-fixed);
    k = 0 gives 0 (general) or 0.25 (cantilever column, 3 E I / h^3).
    """
    if k_bar < 0 or math.isnan(k_bar):
        raise ValueError(f"stiffness ratio must be >= 0, got {k_bar!r}")
    if math.isinf(k_bar):
        return 1.0
    if fixed_base:
        return (0.5 + k_bar) / (2.0 + k_bar)
    return k_bar / (2.0 + k_bar)


class SlabField:
    """The floor slabs at one joint level: thickness and modulus looked up by plan position."""

    def __init__(self, pieces: Sequence[tuple[BaseGeometry, float, float]]) -> None:
        """``pieces``: (footprint, thickness m, effective E Pa) of each slab."""
        self.pieces = [(shp, float(t), float(e)) for shp, t, e in pieces if not shp.is_empty and t > 0]
        area = sum(p[0].area for p in self.pieces)
        if area > 0:
            self.mean_t = sum(p[0].area * p[1] for p in self.pieces) / area
            self.mean_e = sum(p[0].area * p[2] for p in self.pieces) / area
        else:
            self.mean_t = self.mean_e = 0.0
        self.area_m2 = 0.0
        if self.pieces:
            try:
                self.area_m2 = float(robust_union([p[0] for p in self.pieces], "union of a floor's slabs").area)
            except PlanGeometryError:
                self.area_m2 = float(area)  # overlaps counted twice; only sets a typical span
        self._at: dict[tuple[float, float], tuple[float, float]] = {}  # at() by point (same answer each time)

    def __bool__(self) -> bool:
        return bool(self.pieces)

    def at(self, x: float, y: float) -> tuple[float, float]:
        """(thickness m, E Pa) of the slab at (x, y): the slab containing or within 1 m of the point,
        else the area-weighted means."""
        key = (x, y)
        got = self._at.get(key)
        if got is None:
            got = self._at[key] = self._lookup(x, y)
        return got

    def _lookup(self, x: float, y: float) -> tuple[float, float]:
        pt = Point(x, y)
        best = None
        for shp, t, e in self.pieces:
            with np.errstate(all="ignore"):
                d = shp.distance(pt)
            if d <= 1.0 and (best is None or d < best[0]):
                best = (d, t, e)
        if best is not None:
            return best[1], best[2]
        return self.mean_t, self.mean_e


@dataclass(frozen=True)
class ColumnInput:
    """A column of one storey as the stiffness needs it: id, plan section, effective E (Pa)."""

    global_id: str
    section: BaseGeometry
    e_pa: float


@dataclass(frozen=True)
class ColumnSpring:
    """Storey springs of one column (N/m) at its centroid, with the factors used."""

    global_id: str
    centre_m: tuple[float, float]
    k_x_n_m: float
    k_y_n_m: float
    a_x: float
    a_y: float
    h_m: float


@dataclass(frozen=True)
class RestraintReport:
    """The column end-restraint factors used in one storey (below floor ``level_index``).

    Attributes:
        method: "settings" (column_restraint_factor), "Muto D-value" or "no slab (assumed)".
        a_x_*, a_y_*: mean, min and max factor over the storey's columns per sway direction.
    """

    level_index: int
    storey: str
    n_columns: int
    method: str
    a_x_mean: float
    a_x_min: float
    a_x_max: float
    a_y_mean: float
    a_y_min: float
    a_y_max: float

    def describe(self) -> str:
        return (f"{self.storey}: {self.n_columns} column(s), restraint factor ({self.method}) "
                f"x {self.a_x_mean:.2f} [{self.a_x_min:.2f}-{self.a_x_max:.2f}], "
                f"y {self.a_y_mean:.2f} [{self.a_y_min:.2f}-{self.a_y_max:.2f}]")


def _wall_distances(pts: np.ndarray, walls: BaseGeometry | None) -> np.ndarray:
    """Distance from each point to the first wall met along -x, +x, -y, +y (n x 4; nan: none within reach)."""
    n = len(pts)
    out = np.full((n, 4), np.nan)
    if walls is None or walls.is_empty or n == 0:
        return out
    dirs = np.array([[-1.0, 0.0], [1.0, 0.0], [0.0, -1.0], [0.0, 1.0]])
    starts = np.repeat(pts, 4, axis=0)
    ends = starts + np.tile(dirs, (n, 1)) * MAX_SLAB_SPAN_M
    rays = shapely.linestrings(np.stack([starts, ends], axis=1))
    try:
        with np.errstate(all="ignore"):
            hits = shapely.intersection(rays, walls)
    except GEOSException:
        hits = _ray_hits(rays, walls)
    with np.errstate(all="ignore"):
        d = shapely.distance(shapely.points(starts), hits)
    d = np.where(shapely.is_empty(hits) | ~(d > 1e-6), np.nan, d)
    return d.reshape(n, 4)


def _supports(pts: np.ndarray, i: int, wall_d: np.ndarray, axis: int) -> tuple[float | None, float | None]:
    """Distances from column i to the nearest support in -axis and +axis directions (None: none)."""
    d = pts - pts[i]
    par, perp = d[:, axis], d[:, 1 - axis]
    out: list[float | None] = []
    for k, sign in enumerate((-1.0, 1.0)):
        sel = (sign * par > 1e-6) & (np.abs(perp) <= _CONE * np.abs(par)) & (np.abs(par) <= MAX_SLAB_SPAN_M)
        col = float(np.min(np.abs(par[sel]))) if np.any(sel) else None
        w = wall_d[i, 2 * axis + k]
        wall = None if math.isnan(w) else float(w)
        cands = [v for v in (col, wall) if v is not None]
        out.append(min(cands) if cands else None)
    return out[0], out[1]


def _inside(walls: BaseGeometry, xy: np.ndarray) -> np.ndarray:
    """Which points lie inside ``walls`` (``shapely.contains_xy``; on the cleaned walls when the
    geometry engine fails on them, and none when it fails again)."""
    try:
        with np.errstate(all="ignore"):
            return shapely.contains_xy(walls, xy[:, 0], xy[:, 1])
    except GEOSException:
        cleaned = clean(walls)
        if cleaned is None:
            return np.zeros(len(xy), bool)
        try:
            with np.errstate(all="ignore"):
                return shapely.contains_xy(cleaned, xy[:, 0], xy[:, 1])
        except GEOSException:
            return np.zeros(len(xy), bool)


def _ray_hits(rays: np.ndarray, walls: BaseGeometry) -> np.ndarray:
    """``shapely.intersection(rays, walls)`` after the geometry engine failed on it: on the cleaned
    walls (:mod:`.plan_ops`), ray by ray; a ray it still cannot intersect meets no wall."""
    cleaned = clean(walls)
    out = np.empty(len(rays), dtype=object)
    for k, ray in enumerate(rays):
        try:
            out[k] = robust_intersection(ray, cleaned) if cleaned is not None else LineString()
        except PlanGeometryError:
            out[k] = LineString()
    return out


def _all_supports(pts: np.ndarray, wall_d: np.ndarray) -> list[list[tuple[float | None, float | None]]]:
    """``[_supports(pts, i, wall_d, 0), _supports(pts, i, wall_d, 1)]`` for every column ``i`` at once
    (the same comparisons on the same differences; a minimum does not depend on the order)."""
    d = pts[None, :, :] - pts[:, None, :]  # d[i, j] = pts[j] - pts[i]
    per_axis = []
    for axis in (0, 1):
        par, perp = d[:, :, axis], d[:, :, 1 - axis]
        sides = []
        for k, sign in enumerate((-1.0, 1.0)):
            sel = (sign * par > 1e-6) & (np.abs(perp) <= _CONE * np.abs(par)) & (np.abs(par) <= MAX_SLAB_SPAN_M)
            col = np.where(sel, np.abs(par), np.inf).min(axis=1) if len(pts) else np.zeros(0)
            has = sel.any(axis=1)
            w = wall_d[:, 2 * axis + k]
            sides.append((col.tolist(), has.tolist(), w.tolist()))
        per_axis.append(sides)
    out: list[list[tuple[float | None, float | None]]] = []
    for i in range(len(pts)):
        row: list[tuple[float | None, float | None]] = []
        for axis in (0, 1):
            pair: list[float | None] = []
            for col, has, w in per_axis[axis]:
                c = col[i] if has[i] else None
                wall = None if math.isnan(w[i]) else w[i]
                cands = [v for v in (c, wall) if v is not None]
                pair.append(min(cands) if cands else None)
            row.append((pair[0], pair[1]))
        out.append(row)
    return out


def _strips(field: SlabField | None, x: float, y: float, spans: tuple[float | None, float | None],
            across: list[float], stiffness: StiffnessSettings) -> float:
    """Sum of E f_s (b d^3 / 12) / L over the slab strips meeting a column joint (N m)."""
    if not field:
        return 0.0
    t, e = field.at(x, y)
    total = 0.0
    for span in spans:
        if span is None:
            continue
        panel = statistics.fmean(across) if across else span
        b = stiffness.slab_strip_width_ratio * panel
        total += e * stiffness.slab_flexure_factor * b * t ** 3 / 12.0 / span
    return total


def column_springs(columns: Sequence[ColumnInput], *, level_index: int, storey: str, length_m: float,
                   top: SlabField | None, bottom: SlabField | None, fixed_base: bool,
                   walls: BaseGeometry | None, stiffness: StiffnessSettings, cache: dict | None = None
                   ) -> tuple[list[ColumnSpring], RestraintReport | None, list[str]]:
    """Springs of a storey's columns and the restraint factors used (see module doc).

    Args:
        columns: the storey's columns.
        level_index: floor on top of the storey.
        length_m: storey height (floor to floor).
        top, bottom: slabs at the column top (floor ``level_index``) and bottom (the floor below;
            ignored when ``fixed_base``).
        fixed_base: the storey stands on the fixed base (Muto's lowest-storey formula).
        walls: union of the storey's wall footprints (supports for slab strips; columns inside are skipped).
        cache: a dict shared between calls (e.g. over the storeys of one building). Storeys
            with the same column sections (WKB) and moduli in the same order, the same ``top``,
            ``bottom`` and ``walls`` objects and settings reuse the plan work of the first such
            storey (which columns count, sections, spans, slab strips: none depends on anything
            else); the height-dependent springs, ids and names are computed per call.
    Returns:
        (springs, report or None when there are no columns, notes).
    """
    kept, values, stats, notes, _ = _column_work(columns, None, top=top, bottom=bottom, fixed_base=fixed_base,
                                                 walls=walls, stiffness=stiffness, length_m=length_m, storey=storey,
                                                 cache=cache)
    if not kept:
        return [], None, notes
    springs = [ColumnSpring(columns[i].global_id, *v) for i, v in zip(kept, values)]
    return springs, RestraintReport(level_index, storey, len(springs), *stats), notes


def column_frame(columns: Sequence[ColumnInput] | Callable[[], Sequence[ColumnInput]], *, signature: tuple | None = None,
                 level_index: int, storey: str, length_m: float, top: SlabField | None, bottom: SlabField | None,
                 fixed_base: bool, walls: BaseGeometry | None, stiffness: StiffnessSettings, cache: dict | None = None
                 ) -> tuple[Segment | None, RestraintReport | None, list[str]]:
    """``frame_segment(column_springs(...))`` in one step: the storey's columns as one frame
    Segment ("columns"), the restraint report and the notes, the same numbers as the two calls.

    Args:
        columns: as for :func:`column_springs`, or a function returning them (called only
            when ``cache`` has not met these columns before).
        signature: with ``columns`` a function, what :func:`column_springs` would key the
            cache on: a tuple of (section WKB bytes, E Pa) per column, in order.
        Other arguments as for :func:`column_springs`. With ``cache``, storeys with the same
        columns, slabs, walls, height and settings reuse the springs' sums as well.
    """
    kept, values, stats, notes, entry = _column_work(columns, signature, top=top, bottom=bottom,
                                                     fixed_base=fixed_base, walls=walls, stiffness=stiffness,
                                                     length_m=length_m, storey=storey, cache=cache)
    if not kept:
        return None, None, notes
    report = RestraintReport(level_index, storey, len(kept), *stats)
    if entry is None:
        sums = _frame_sums(values)
    else:
        if entry[2] is None:
            entry[2] = (_frame_sums(values),)
        sums = entry[2][0]
    if sums is None:
        return None, report, notes
    kx, ky, xc, yc, kt = sums
    seg = Segment(system_id="columns", kind="frame", level_index=level_index, length_m=length_m,
                  centre_m=(xc, yc), k_x_n_m=kx, k_y_n_m=ky, k_twist_nm_rad=kt)
    return seg, report, notes


def _column_work(columns: Sequence[ColumnInput] | Callable[[], Sequence[ColumnInput]], signature: tuple | None, *,
                 top: SlabField | None, bottom: SlabField | None, fixed_base: bool, walls: BaseGeometry | None,
                 stiffness: StiffnessSettings, length_m: float, storey: str, cache: dict | None
                 ) -> tuple[tuple[int, ...], tuple[tuple, ...], tuple, list[str], list | None]:
    """(indices of the columns kept, per kept column (centre, k_x, k_y, a_x, a_y, h), the report's
    (method, a_x mean, min, max, a_y mean, min, max), notes, the cache entry of these springs or
    None) of :func:`column_springs`."""
    got = None
    if cache is None:
        cols = columns() if callable(columns) else columns
        geo = _column_geometry(cols, top, bottom, fixed_base, walls, stiffness)
        core = _column_values(geo, length_m, top, fixed_base, stiffness)
        stats = _restraint_stats(core)
    else:
        if signature is None:
            cols = columns() if callable(columns) else columns
            sections = np.empty(len(cols), dtype=object)
            sections[:] = [c.section for c in cols]
            signature = tuple(zip(shapely.to_wkb(sections).tolist(), (float(c.e_pa) for c in cols)))
        key = (signature, id(top), id(bottom), bool(fixed_base), id(walls), stiffness)
        hit = cache.get(key)
        if hit is None:
            cols = columns() if callable(columns) else columns
            geo = _column_geometry(cols, top, bottom, fixed_base, walls, stiffness)
            # holding the objects keeps their ids unique; the dict holds the springs per storey height
            cache[key] = hit = (geo, (top, bottom, walls), {})
        geo, by_height = hit[0], hit[2]
        # the springs depend on the plan work, the storey height and the settings (in the key) only
        got = by_height.get(float(length_m))
        if got is None:
            core = _column_values(geo, length_m, top, fixed_base, stiffness)
            got = by_height[float(length_m)] = [core, _restraint_stats(core), None]
        core, stats = got[0], got[1]
    kept, n_inside, no_slab, _, values, n_flat = core
    notes: list[str] = []
    if n_inside:
        notes.append(f"{storey}: {n_inside} column(s) inside walls count as part of the wall")
    if n_flat:
        notes.append(f"{storey}: {n_flat} column(s) with a section of round-off size (no bending stiffness) left out")
    if not kept:
        return (), (), (), notes, got
    if no_slab:
        notes.append(f"{storey}: no slab to derive the column end restraint; a = {NO_SLAB_RESTRAINT:g} assumed")
    return kept, values, stats, notes, got


def _restraint_stats(core: tuple) -> tuple:
    """(method, a_x mean, min, max, a_y mean, min, max) over the kept columns of ``core`` (() when none)."""
    kept, _, _, method, values, _ = core
    if not kept:
        return ()
    ax = [v[3] for v in values]
    ay = [v[4] for v in values]
    return (method, statistics.fmean(ax), min(ax), max(ax), statistics.fmean(ay), min(ay), max(ay))


def _frame_sums(values: Sequence[tuple]) -> tuple[float, float, float, float, float] | None:
    """(k_x, k_y, x_c, y_c, k_twist) of :func:`frame_segment` from the springs' values
    ((x, y), k_x, k_y, ...); None when either total is not positive."""
    kx = sum(v[1] for v in values)
    ky = sum(v[2] for v in values)
    if kx <= 0 or ky <= 0:
        return None
    xc = sum(v[2] * v[0][0] for v in values) / ky
    yc = sum(v[1] * v[0][1] for v in values) / kx
    kt = sum(v[1] * (v[0][1] - yc) ** 2 + v[2] * (v[0][0] - xc) ** 2 for v in values)
    return kx, ky, xc, yc, kt


def _column_geometry(columns: Sequence[ColumnInput], top: SlabField | None, bottom: SlabField | None,
                     fixed_base: bool, walls: BaseGeometry | None, stiffness: StiffnessSettings) -> tuple:
    """The plan work of :func:`column_springs` (independent of the storey height): (indices of
    the columns kept, number inside walls, no-slab assumption made, method, have_slab, per kept
    column (x, y, E, I_xx, I_yy, slab thickness at the top or None, per axis the slab strip
    stiffness at the top and at the bottom or None), number left out because their section
    has no positive area integral or second moment (round-off size))."""
    cols = list(columns)
    index = list(range(len(cols)))
    n_inside = 0
    sections = np.empty(len(cols), dtype=object)
    sections[:] = [c.section for c in cols]
    with np.errstate(all="ignore"):  # sections of round-off size are sorted out below
        centroids = shapely.centroid(sections)
        cxy = np.column_stack([shapely.get_x(centroids), shapely.get_y(centroids)]).reshape(-1, 2)
    if walls is not None and not walls.is_empty:
        mask = _inside(walls, cxy) if len(cols) else np.zeros(0, bool)
        if mask.any():
            n_inside = int(mask.sum())
            keep = ~mask
            index = [i for i, k in zip(index, keep.tolist()) if k]
            cols = [c for c, k in zip(cols, keep.tolist()) if k]
            sections, cxy = sections[keep], cxy[keep]
    if not cols:
        return (), n_inside, False, "", False, (), 0
    pts = np.array(cxy, dtype=float)
    # second moments of each section about its own centroid (column_second_moments, vectorised)
    with np.errstate(all="ignore"):
        moments = area_moments_array(list(sections), refs=pts).tolist()
    inertias = [AreaMoments(*row).central() if row[0] > 0 else (0.0, 0.0, 0.0) for row in moments]
    # a section of round-off size (no positive area integral or second moment) has no stiffness
    sound = [ixx > 0 and iyy > 0 for ixx, iyy, _ in inertias]
    n_flat = sound.count(False)
    if n_flat:
        index = [i for i, k in zip(index, sound) if k]
        cols = [c for c, k in zip(cols, sound) if k]
        inertias = [m for m, k in zip(inertias, sound) if k]
        pts = pts[np.array(sound, dtype=bool)]
        if not cols:
            return (), n_inside, False, "", False, (), n_flat

    set_a = stiffness.column_restraint_factor
    have_slab = bool(top) or (bool(bottom) and not fixed_base)
    method = "settings" if set_a is not None else ("Muto D-value" if have_slab else "no slab (assumed)")
    no_slab = set_a is None and not have_slab

    # Spans and panel widths per column and direction (only needed for Muto).
    spans: list[list[tuple[float | None, float | None]]] = []
    if set_a is None and have_slab:
        wall_d = _wall_distances(pts, walls)
        spans = _all_supports(pts, wall_d)
        found = [v for s in spans for pair in s for v in pair if v is not None]
        field_area = max((top.area_m2 if top else 0.0), (bottom.area_m2 if bottom else 0.0))
        if found:
            typical = statistics.median(found)
        elif field_area > 0:
            typical = math.sqrt(field_area / len(cols))
        else:
            typical = 8.0
        for s in spans:
            for axis in (0, 1):
                if s[axis] == (None, None):
                    s[axis] = (typical, typical)

    rows: list[tuple] = []
    for i, c in enumerate(cols):
        x, y = float(pts[i, 0]), float(pts[i, 1])
        t_top = top.at(x, y)[0] if stiffness.column_clear_height and top else None
        ixx, iyy, _ = inertias[i]
        strips: list[tuple[float, float | None] | None] = []
        for axis in (0, 1):
            if set_a is not None or not have_slab:
                strips.append(None)
                continue
            across = [v for v in spans[i][1 - axis] if v is not None]
            k_top = _strips(top, x, y, spans[i][axis], across, stiffness)
            k_bottom = None if fixed_base else _strips(bottom, x, y, spans[i][axis], across, stiffness)
            strips.append((k_top, k_bottom))
        rows.append((x, y, c.e_pa, ixx, iyy, t_top, tuple(strips)))
    return tuple(index), n_inside, no_slab, method, have_slab, tuple(rows), n_flat


def _column_values(geo: tuple, length_m: float, top: SlabField | None, fixed_base: bool,
                   stiffness: StiffnessSettings) -> tuple[tuple[int, ...], int, bool, str, tuple[tuple, ...], int]:
    """The springs of :func:`column_springs` for one storey height from :func:`_column_geometry`:
    (indices kept, number inside walls, no-slab assumption made, method, per kept column
    (centre, k_x, k_y, a_x, a_y, h), number left out with a section of round-off size)."""
    index, n_inside, no_slab, method, have_slab, rows, n_flat = geo
    f_c = stiffness.column_flexure_factor
    set_a = stiffness.column_restraint_factor
    values: list[tuple] = []
    for x, y, e_pa, ixx, iyy, t_top, strips in rows:
        h = length_m
        if t_top is not None:
            if 0 < t_top < 0.5 * length_m:
                h = length_m - t_top
        a_dir = []
        for axis, i_bend in ((0, iyy), (1, ixx)):
            if set_a is not None:
                a_dir.append(float(set_a))
                continue
            if not have_slab:
                a_dir.append(NO_SLAB_RESTRAINT)
                continue
            k_col = e_pa * f_c * i_bend / h
            k_top, k_bottom = strips[axis]
            if fixed_base:
                k_bar = k_top / k_col
            else:
                k_bar = (k_top + k_bottom) / (2.0 * k_col)
            a_dir.append(muto_factor(k_bar, fixed_base=fixed_base))
        k_x = a_dir[0] * 12.0 * e_pa * f_c * iyy / h ** 3
        k_y = a_dir[1] * 12.0 * e_pa * f_c * ixx / h ** 3
        values.append(((x, y), k_x, k_y, a_dir[0], a_dir[1], h))
    return index, n_inside, no_slab, method, tuple(values), n_flat


def frame_segment(springs: Sequence[ColumnSpring], level_index: int, length_m: float,
                  system_id: str = "columns") -> Segment | None:
    """All of a storey's column springs as one frame Segment at their centre of stiffness.

    x_c = sum k_y x / sum k_y, y_c = sum k_x y / sum k_x;
    k_twist = sum k_x (y - y_c)^2 + k_y (x - x_c)^2.
    """
    kx = sum(s.k_x_n_m for s in springs)
    ky = sum(s.k_y_n_m for s in springs)
    if kx <= 0 or ky <= 0:
        return None
    xc = sum(s.k_y_n_m * s.centre_m[0] for s in springs) / ky
    yc = sum(s.k_x_n_m * s.centre_m[1] for s in springs) / kx
    kt = sum(s.k_x_n_m * (s.centre_m[1] - yc) ** 2 + s.k_y_n_m * (s.centre_m[0] - xc) ** 2 for s in springs)
    return Segment(system_id=system_id, kind="frame", level_index=level_index, length_m=length_m,
                   centre_m=(xc, yc), k_x_n_m=kx, k_y_n_m=ky, k_twist_nm_rad=kt)


def storey_stiffness_centre(segments: Sequence[Segment]) -> tuple[float, float] | None:
    """Centre of stiffness of one storey's segments (module doc); None when nothing is stiff."""
    sx = sy = kx_tot = ky_tot = 0.0
    for s in segments:
        if s.kind == "frame":
            kx, ky = s.k_x_n_m, s.k_y_n_m
        else:
            kx = cantilever_storey_stiffness(s.ei_yy_nm2, s.ga_x_n, s.length_m)
            ky = cantilever_storey_stiffness(s.ei_xx_nm2, s.ga_y_n, s.length_m)
        kx_tot += kx
        ky_tot += ky
        sy += kx * s.centre_m[1]
        sx += ky * s.centre_m[0]
    if kx_tot <= 0 or ky_tot <= 0:
        return None
    return (sx / ky_tot, sy / kx_tot)
