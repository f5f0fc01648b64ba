"""Parametric IFC geometry, read without tessellation.

Placements are composed into 4x4 world matrices (translations in metres), memoised per
``IfcLocalPlacement`` and per ``IfcAxis2Placement``. Bodies made of ``IfcExtrudedAreaSolid``
(directly, through ``IfcMappedItem`` or as the first operand of half-space clippings) become
:class:`Prism` objects: a plan profile polygon in its own plane, a matrix to world, an
extrusion direction and depth. From a prism the reader takes the world plan footprint, the
z range, the volume and the vertex cloud, all in closed form.

Profiles become shapely polygons (metres, in the profile's own position), memoised per
profile: rectangle, hollow rectangle, circle, hollow circle, ellipse, I (also asymmetric),
L, U, T, C and Z shapes from their parameters (fillet and edge radii ignored: the corner
fillets change a rolled section's area by a few per cent at most; common practice for
concept-stage takeoff), arbitrary closed profiles (with voids) bounded by polylines,
indexed poly-curves and composite curves (arcs approximated by chords every 5 degrees),
derived and composite profiles.

Circles use a 64-gon whose circumradius is scaled so the polygon has exactly the circle's
area (R' = R sqrt(2 pi / (N sin(2 pi / N)))), so areas and centroids are exact.

Bodies with no parametric reading but explicit planar faces (IfcFacetedBrep, surface
models, triangulated and polygonal face sets) are read face by face (:meth:`Geometry.items_faces`,
:func:`faces_body`): the faces are in the file, so no tessellation is needed, and this is two
orders faster than the engine (a 462-face B-rep: about 0.45 s in ``create_shape`` against a
few milliseconds). Only what remains (curved B-reps, CSG, general booleans, revolved and
swept-disk solids) goes through the geometry engine (:func:`mesh_body`).
"""
from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
import shapely
from shapely import affinity
from shapely.geometry import MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry

from .errors import InputError

__all__ = [
    "NotParametric", "Unsupported", "Prism", "Geometry", "MeshBody", "mesh_body", "polygonal",
    "prism_footprint", "prism_zrange", "prism_volume", "prism_vertices", "prism_is_vertical", "prism_plan_parts",
    "Profile", "attr",
    "circle_polygon", "ARC_STEP_RAD", "CIRCLE_SEGMENTS", "MAX_PLACEMENT_DEPTH", "faces_body", "triangles_body",
    "Face", "MAX_COORDINATE_M", "MAX_ELEVATION_M", "MAX_SIZE_M", "implausible_extent",
]

ARC_STEP_RAD = math.radians(5.0)
"""Chord step used to approximate arcs in composite and trimmed curves."""
CIRCLE_SEGMENTS = 64
"""Sides of the area-preserving polygon used for circular profiles."""
MAX_PLACEMENT_DEPTH = 256
"""Longest IfcLocalPlacement chain accepted (real models nest fewer than 10 levels)."""
MAX_COORDINATE_M = 1e8
"""Largest plan coordinate accepted (m). Projected map coordinates stay below it (UTM
northings reach 1e7 m, zone-prefixed eastings a few 1e7 m; common practice); beyond it a
value is damage, not a site."""
MAX_ELEVATION_M = 1e4
"""Largest |z| accepted for elements and storeys (m): above the highest ground on Earth
(8849 m) plus the tallest building (828 m), so absolute site elevations pass."""
MAX_SIZE_M = 1e4
"""Largest profile dimension, extrusion depth or element extent accepted (m): no building
element is 10 km long (common practice)."""
MAX_BODY_ITEMS = 10_000
"""Most representation items (extrusions, mapped items, booleans) visited for one element:
shared sub-trees referenced twice at every level would otherwise double the work per level."""
MAX_BODY_FACES = 500_000
"""Most faces read for one element body."""
MAX_CURVE_POINTS = 1_000_000
"""Most points in one curve (composite curves repeating a segment curve grow geometrically)."""
_RAW_MAX = 1e15
"""Largest magnitude of any number read from the file, in file units, before unit
conversion: keeps every square and product far from float overflow (1e30 << 1.8e308)."""
_RAW_TINY = 1e-100
"""Values closer to zero than this (in file units) read as exactly 0. No length, ratio or
angle of a building element is that small; such values come from damaged or generated data,
and subnormal numbers (below 2.2e-308) make GEOS's predicates fail in plan unions (a
TopologyException found by property-based tests)."""
VERTICAL_TOL = 1e-4
"""|1 - cos| below which an extrusion counts as vertical / a profile plane as horizontal (~0.8 deg)."""
_SIN_TOL = math.sqrt(2 * VERTICAL_TOL)
_EYE4 = np.eye(4)
_EYE4.flags.writeable = False


class NotParametric(Exception):
    """The body (or a profile/curve in it) cannot be read parametrically: its data is
    damaged or degenerate (no area, missing parameters, zero directions...)."""


class Unsupported(NotParametric):
    """The body uses a representation type this reader does not parse (curved B-reps,
    CSG, general booleans, B-spline curves...); the geometry engine may read it."""


@dataclass(frozen=True)
class Profile:
    """A profile polygon (metres, profile coordinates) with its rings as arrays.

    Attributes:
        polygon: the shapely polygon.
        parts: per polygon part, its closed exterior ring and closed hole rings, (k, 2) arrays.
        area: polygon area (m^2).
    """

    polygon: Polygon | MultiPolygon
    parts: tuple[tuple[np.ndarray, tuple[np.ndarray, ...]], ...]
    area: float

    @staticmethod
    def of(poly: Polygon | MultiPolygon) -> "Profile":
        polys = poly.geoms if isinstance(poly, MultiPolygon) else [poly]
        parts = tuple((np.asarray(q.exterior.coords)[:, :2], tuple(np.asarray(r.coords)[:, :2] for r in q.interiors))
                      for q in polys)
        return Profile(poly, parts, float(poly.area))


@dataclass(frozen=True)
class Prism:
    """A straight extrusion in world coordinates, with its closed-form summary.

    Attributes:
        profile: the swept area in its own plane (metres, local x/y).
        matrix: 4x4, profile plane (local x, y; z = extrusion base) to world (metres).
        direction: unit world extrusion direction.
        depth_m: extrusion length along ``direction`` (m).
        clipped: True when the solid was the first operand of a half-space clipping.
        vertical: profile plane horizontal and extrusion vertical.
        zmin, zmax: world vertical extent (m).
        volume_m3: profile area x depth x |cos(extrusion, profile normal)|.
    """

    profile: Profile
    matrix: np.ndarray
    direction: np.ndarray
    depth_m: float
    clipped: bool = False
    vertical: bool = True
    zmin: float = 0.0
    zmax: float = 0.0
    volume_m3: float = 0.0


# ---------------------------------------------------------------------------- helpers

_IDX: dict[tuple[str, str], int] = {}
_MISSING = 4294967295


def attr(e, name: str):
    """Forward attribute ``name`` of an entity, or None when the entity type has none.

    Reads by positional index cached per (schema.type, name): several times faster than
    ``e.Name``, and never falls into ifcopenshell's derived-attribute lookup for names a
    type lacks (``getattr(e, "Missing", None)`` imports the schema's rule module).
    """
    key = (e.is_a(True), name)
    i = _IDX.get(key)
    if i is None:
        i = e.get_argument_index(name)
        _IDX[key] = i
    return None if i == _MISSING else e.get_argument(i)


def _real(v, what: str = "value") -> float:
    """A number from the file, refused (NotParametric) when NaN, infinite or absurdly large;
    magnitudes below ``_RAW_TINY`` read as 0 (see there)."""
    x = float(v)
    if not -_RAW_MAX <= x <= _RAW_MAX:  # also False for NaN
        raise NotParametric(f"{what} {x:g} is not a usable number")
    return x if not -_RAW_TINY < x < _RAW_TINY else 0.0


def _reals(values, what: str) -> list[float]:
    r = [float(c) for c in values]
    for i, x in enumerate(r):
        if not -_RAW_MAX <= x <= _RAW_MAX:
            raise NotParametric(f"{what} with a value {x:g} that is not a usable number")
        if -_RAW_TINY < x < _RAW_TINY:
            r[i] = 0.0
    return r


def _checked(a: np.ndarray, what: str) -> np.ndarray:
    """``a`` when every entry is finite and of plausible size (NotParametric otherwise), with
    magnitudes below ``_RAW_TINY`` set to 0."""
    if a.size:
        big = float(np.abs(a).max())
        if not big <= _RAW_MAX:  # NaN compares False
            raise NotParametric(f"{what} with a value that is not a usable number")
        if a.dtype.kind == "f" and float(np.abs(a[a != 0.0]).min(initial=1.0)) < _RAW_TINY:
            a = np.where(np.abs(a) < _RAW_TINY, 0.0, a)
    return a


def _coords(point) -> list[float]:
    return _reals(attr(point, "Coordinates"), "point")


def implausible_extent(xmin: float, ymin: float, zmin: float, xmax: float, ymax: float, zmax: float) -> str | None:
    """Why a world bounding box (m) cannot be a building element, or None when it can.

    Limits: :data:`MAX_COORDINATE_M` in plan, :data:`MAX_ELEVATION_M` vertically,
    :data:`MAX_SIZE_M` for the extent along each axis. NaN fails every test.
    """
    if not (-MAX_COORDINATE_M <= xmin <= xmax <= MAX_COORDINATE_M
            and -MAX_COORDINATE_M <= ymin <= ymax <= MAX_COORDINATE_M):
        return f"plan coordinates outside +-{MAX_COORDINATE_M:g} m"
    if not -MAX_ELEVATION_M <= zmin <= zmax <= MAX_ELEVATION_M:
        return f"elevations outside +-{MAX_ELEVATION_M:g} m"
    size = max(xmax - xmin, ymax - ymin, zmax - zmin)
    if size > MAX_SIZE_M:
        return f"{size:.3g} m across (over {MAX_SIZE_M:g} m)"
    return None


def _ratios(direction, n: int = 3) -> np.ndarray:
    r = _reals(attr(direction, "DirectionRatios"), "direction")
    r = (r + [0.0, 0.0, 0.0])[:n]
    return np.array(r)


def _unit(v: np.ndarray, fallback: np.ndarray) -> np.ndarray:
    n = float(np.linalg.norm(v))
    return v / n if n > 1e-12 else fallback


def polygonal(geom: BaseGeometry) -> Polygon | MultiPolygon:
    """The polygonal part of a geometry, made valid (empty Polygon when none)."""
    if geom.is_empty:
        return Polygon()
    if not geom.is_valid:
        geom = shapely.make_valid(geom)
    if isinstance(geom, (Polygon, MultiPolygon)):
        return geom
    parts = [g for g in getattr(geom, "geoms", [geom]) if isinstance(g, (Polygon, MultiPolygon)) and not g.is_empty]
    if not parts:
        return Polygon()
    u = shapely.union_all(parts)
    return u if isinstance(u, (Polygon, MultiPolygon)) else Polygon()


def circle_polygon(radius: float, segments: int = CIRCLE_SEGMENTS) -> Polygon:
    """Area-preserving regular polygon for a circle of ``radius`` centred at the origin."""
    n = segments
    r = radius * math.sqrt(2.0 * math.pi / (n * math.sin(2.0 * math.pi / n)))
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    return Polygon(np.column_stack([r * np.cos(t), r * np.sin(t)]))


def _ellipse_polygon(a: float, b: float, segments: int = CIRCLE_SEGMENTS) -> Polygon:
    n = segments
    k = math.sqrt(2.0 * math.pi / (n * math.sin(2.0 * math.pi / n)))
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    return Polygon(np.column_stack([k * a * np.cos(t), k * b * np.sin(t)]))


def _arc_points(centre: np.ndarray, ex: np.ndarray, ey: np.ndarray, a: float, b: float,
                t0: float, t1: float, ccw: bool) -> np.ndarray:
    """Points on an elliptical (a=b: circular) arc from parameter angle t0 to t1."""
    two_pi = 2.0 * math.pi
    if ccw:
        sweep = (t1 - t0) % two_pi
    else:
        sweep = -((t0 - t1) % two_pi)
    if abs(sweep) < 1e-12:
        sweep = two_pi if ccw else -two_pi
    n = max(2, int(math.ceil(abs(sweep) / ARC_STEP_RAD)) + 1)
    t = t0 + np.linspace(0.0, sweep, n)
    return centre + np.outer(a * np.cos(t), ex) + np.outer(b * np.sin(t), ey)


def _arc3(p0: np.ndarray, p1: np.ndarray, p2: np.ndarray) -> np.ndarray:
    """Arc through three 2D points (start, mid, end), chord-approximated."""
    ax, ay = p0
    bx, by = p1
    cx, cy = p2
    d = 2.0 * (ax * (by - cy) + bx * (cy - ay) + cx * (ay - by))
    if abs(d) < 1e-12:
        return np.array([p0, p2])
    ux = ((ax * ax + ay * ay) * (by - cy) + (bx * bx + by * by) * (cy - ay) + (cx * cx + cy * cy) * (ay - by)) / d
    uy = ((ax * ax + ay * ay) * (cx - bx) + (bx * bx + by * by) * (ax - cx) + (cx * cx + cy * cy) * (bx - ax)) / d
    c = np.array([ux, uy])
    r = float(np.linalg.norm(p0 - c))
    t0 = math.atan2(ay - uy, ax - ux)
    tm = math.atan2(by - uy, bx - ux)
    t2 = math.atan2(cy - uy, cx - ux)
    ccw = ((tm - t0) % (2 * math.pi)) < ((t2 - t0) % (2 * math.pi))
    return _arc_points(c, np.array([1.0, 0.0]), np.array([0.0, 1.0]), r, r, t0, t2, ccw)


def _append(acc: list[np.ndarray], pts: np.ndarray) -> None:
    if len(pts) == 0:
        return
    if acc and np.allclose(acc[-1][-1], pts[0], atol=1e-9 * max(1.0, float(np.abs(pts[0]).max()))):
        pts = pts[1:]
    if len(pts):
        acc.append(pts)


# ---------------------------------------------------------------------------- the reader

class Geometry:
    """Memoised placement, curve and profile reading for one open model.

    Args:
        scale: metres per file length unit.
        angle: radians per file plane-angle unit (for trimmed-curve parameters).
        wcs: the context's world coordinate system (4x4, metres).
        where: file name used in error messages.
    """

    def __init__(self, scale: float, angle: float = 1.0, wcs: np.ndarray | None = None, where: str = "") -> None:
        self.scale = float(scale)
        self.angle = float(angle)
        self.wcs = wcs if wcs is not None and not np.allclose(wcs, np.eye(4)) else None
        self.where = where
        self._axis: dict[int, np.ndarray] = {}
        self._placement: dict[int, np.ndarray] = {}
        self._mapped: dict[int, tuple[list[Prism], bool]] = {}
        self._bodies: dict[tuple[int, ...], tuple[list[Prism], bool]] = {}
        self._profile: dict[int, Profile] = {}
        self._profile_by_value: dict[tuple, Profile] = {}
        self._curve: dict[int, np.ndarray] = {}
        self._dirs: dict[int, tuple[float, float, float] | None] = {}
        self._ops: dict[int, np.ndarray] = {}
        self._poly: dict[int, Polygon | MultiPolygon] = {}
        self._budget = MAX_BODY_ITEMS

    # -- placements ------------------------------------------------------------------
    def _dir3(self, d) -> tuple[float, float, float] | None:
        """Unit 3-vector of an IfcDirection (memoised), None for a zero vector."""
        if d is None:
            return None
        key = d.id()
        hit = self._dirs.get(key, False)
        if hit is not False:
            return hit
        r = _reals(d.get_argument(0), f"IfcDirection #{key}") + [0.0, 0.0]
        big = max(abs(r[0]), abs(r[1]), abs(r[2]))
        if big > 1.0:  # scale before squaring (huge ratios must not overflow)
            r = [r[0] / big, r[1] / big, r[2] / big]
        n = math.sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2])
        v = (r[0] / n, r[1] / n, r[2] / n) if n > 1e-12 else None
        self._dirs[key] = v
        return v

    def axis2(self, ap) -> np.ndarray:
        """4x4 matrix of an IfcAxis2Placement2D/3D (translation in metres); memoised."""
        if ap is None:
            return _EYE4
        key = ap.id()
        m = self._axis.get(key)
        if m is not None:
            return m
        # IfcPlacement.Location is attribute 0 in IFC2X3, IFC4 and IFC4X3; Axis 1 and
        # RefDirection 2 (3D), RefDirection 1 (2D).
        loc = ap.get_argument(0)
        c = (_reals(loc.get_argument(0), f"IfcCartesianPoint #{loc.id()}")
             if loc is not None and loc.is_a() == "IfcCartesianPoint" else [])
        c = (c + [0.0, 0.0, 0.0])[:3]
        s = self.scale
        if max(abs(c[0]), abs(c[1])) * s > MAX_COORDINATE_M or abs(c[2]) * s > MAX_ELEVATION_M:
            raise NotParametric(f"placement location #{loc.id()} at ({c[0] * s:.3g}, {c[1] * s:.3g}, "
                                f"{c[2] * s:.3g}) m is out of range")
        if ap.is_a() == "IfcAxis2Placement2D":
            x = self._dir3(ap.get_argument(1)) or (1.0, 0.0, 0.0)
            h = math.hypot(x[0], x[1]) or 1.0
            x0, x1 = x[0] / h, x[1] / h
            m = np.array([[x0, -x1, 0.0, c[0] * s], [x1, x0, 0.0, c[1] * s], [0.0, 0.0, 1.0, c[2] * s],
                          [0.0, 0.0, 0.0, 1.0]])
        else:
            z = self._dir3(ap.get_argument(1)) or (0.0, 0.0, 1.0)
            xr = self._dir3(ap.get_argument(2)) or (1.0, 0.0, 0.0)
            k = xr[0] * z[0] + xr[1] * z[1] + xr[2] * z[2]
            x = (xr[0] - k * z[0], xr[1] - k * z[1], xr[2] - k * z[2])
            n = math.sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2])
            if n < 1e-9:  # RefDirection parallel to Axis: any perpendicular
                xr = (1.0, 0.0, 0.0) if abs(z[0]) < 0.9 else (0.0, 1.0, 0.0)
                k = xr[0] * z[0] + xr[1] * z[1] + xr[2] * z[2]
                x = (xr[0] - k * z[0], xr[1] - k * z[1], xr[2] - k * z[2])
                n = math.sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2])
            x = (x[0] / n, x[1] / n, x[2] / n)
            y = (z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0])
            m = np.array([[x[0], y[0], z[0], c[0] * s], [x[1], y[1], z[1], c[1] * s], [x[2], y[2], z[2], c[2] * s],
                          [0.0, 0.0, 0.0, 1.0]])
        self._axis[key] = m
        return m

    def placement(self, pl) -> np.ndarray:
        """World 4x4 matrix of an IfcObjectPlacement, composed once per placement.

        Raises:
            InputError: on a cyclic or absurdly deep (> MAX_PLACEMENT_DEPTH) chain.
        """
        if pl is None:
            return self.wcs if self.wcs is not None else _EYE4
        cached = self._placement.get(pl.id())
        if cached is not None:
            return cached
        chain = []
        seen: set[int] = set()
        cur = pl
        base = None
        while cur is not None:
            cid = cur.id()
            hit = self._placement.get(cid)
            if hit is not None:
                base = hit
                break
            if cid in seen:
                raise InputError(f"{self.where}: placement #{cid} is part of a cycle (PlacementRelTo)")
            if len(chain) >= MAX_PLACEMENT_DEPTH:
                raise InputError(f"{self.where}: placement #{pl.id()} nests more than "
                                 f"{MAX_PLACEMENT_DEPTH} levels deep")
            seen.add(cid)
            chain.append(cur)
            cur = cur.get_argument(0)  # IfcObjectPlacement.PlacementRelTo
        if base is None:
            base = self.wcs if self.wcs is not None else _EYE4
        for p in reversed(chain):
            base = base @ self._relative(p)
            self._placement[p.id()] = base
        return base

    def _relative(self, p) -> np.ndarray:
        if p.is_a() == "IfcLocalPlacement":
            return self.axis2(p.get_argument(1))
        # Grid / linear placements: rare; let ifcopenshell evaluate them (file units).
        import ifcopenshell.util.placement as up

        try:
            m = np.array(up.get_local_placement(p), dtype=float)
        except Exception as exc:  # noqa: BLE001 - the library raises many types here
            raise NotParametric(f"{p.is_a()} #{p.id()}: {exc}") from None
        parent = attr(p, "PlacementRelTo")
        if parent is not None:  # get_local_placement already composed the parents
            m = np.linalg.solve(np.array(up.get_local_placement(parent), dtype=float), m)
        m[:3, 3] *= self.scale
        return m

    def transform_operator(self, op) -> np.ndarray:
        """IfcCartesianTransformationOperator (2D/3D, uniform or not) as a 4x4 matrix; memoised."""
        if op is None:
            return _EYE4
        hit = self._ops.get(op.id())
        if hit is not None:
            return hit
        origin = (_coords(attr(op, "LocalOrigin")) + [0.0, 0.0, 0.0])[:3]
        sc = attr(op, "Scale")
        s1 = _real(sc, "scale") if sc is not None else 1.0
        s2 = _real(attr(op, "Scale2") or s1, "scale")
        s3 = _real(attr(op, "Scale3") or s1, "scale")
        if not all(1e-6 <= abs(x) <= 1e6 for x in (s1, s2, s3)):
            raise NotParametric(f"{op.is_a()} #{op.id()} scale ({s1:g}, {s2:g}, {s3:g}) out of range")
        a1 = self._dir3(attr(op, "Axis1"))
        a2 = self._dir3(attr(op, "Axis2"))
        a3 = self._dir3(attr(op, "Axis3"))
        # IFC BaseAxis function: z first, then x projected, then y completes the frame.
        z = a3 or (0.0, 0.0, 1.0)
        x = a1 or ((1.0, 0.0, 0.0) if abs(z[0]) < 0.9 else (0.0, 1.0, 0.0))
        k = x[0] * z[0] + x[1] * z[1] + x[2] * z[2]
        x = (x[0] - k * z[0], x[1] - k * z[1], x[2] - k * z[2])
        n = math.sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2])
        x = (x[0] / n, x[1] / n, x[2] / n) if n > 1e-12 else (1.0, 0.0, 0.0)
        y = (z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0])
        if a2 is not None and a2[0] * y[0] + a2[1] * y[1] + a2[2] * y[2] < 0:  # mirrored frame
            y = (-y[0], -y[1], -y[2])
        sc_ = self.scale
        m = np.array([[x[0] * s1, y[0] * s2, z[0] * s3, origin[0] * sc_],
                      [x[1] * s1, y[1] * s2, z[1] * s3, origin[1] * sc_],
                      [x[2] * s1, y[2] * s2, z[2] * s3, origin[2] * sc_],
                      [0.0, 0.0, 0.0, 1.0]])
        self._ops[op.id()] = m
        return m

    # -- curves ----------------------------------------------------------------------
    def curve_points(self, curve) -> np.ndarray:
        """2D points (file units) along a bounded curve; memoised; arcs chord-approximated."""
        key = curve.id()
        pts = self._curve.get(key)
        if pts is None:
            pts = self._curve_points(curve, 0)
            self._curve[key] = pts
        return pts

    def _curve_points(self, c, depth: int) -> np.ndarray:
        """Memoised per curve (a sub-curve used twice is read once) and bounded in size."""
        if depth > 32:
            raise NotParametric("curve nesting too deep")
        hit = self._curve.get(c.id())
        if hit is None:
            hit = self._curve_points_of(c, depth)
            if len(hit) > MAX_CURVE_POINTS:
                raise NotParametric(f"{c.is_a()} #{c.id()} has more than {MAX_CURVE_POINTS} points")
            self._curve[c.id()] = hit
        return hit

    def _curve_points_of(self, c, depth: int) -> np.ndarray:
        t = c.is_a()
        if t == "IfcPolyline":
            return _checked(np.array([(_coords(p) + [0.0])[:2] for p in c.Points], dtype=float), "polyline")
        if t == "IfcIndexedPolyCurve":
            coords = _checked(np.array([[float(v) for v in row[:2]] for row in c.Points.CoordList], dtype=float),
                              "point list")
            if not c.Segments:
                return coords
            acc: list[np.ndarray] = []
            for seg in c.Segments:
                idx = [int(i) - 1 for i in seg.wrappedValue]
                if seg.is_a("IfcArcIndex") and len(idx) == 3:
                    _append(acc, _arc3(coords[idx[0]], coords[idx[1]], coords[idx[2]]))
                else:
                    _append(acc, coords[idx])
            return np.vstack(acc) if acc else np.zeros((0, 2))
        if c.is_a("IfcCompositeCurve"):
            acc = []
            for seg in c.Segments:
                parent = attr(seg, "ParentCurve")
                if parent is None:
                    raise Unsupported(f"composite curve segment {seg.is_a()}")
                p = self._curve_points(parent, depth + 1)
                if attr(seg, "SameSense") is False:
                    p = p[::-1]
                _append(acc, p)
            return np.vstack(acc) if acc else np.zeros((0, 2))
        if t == "IfcTrimmedCurve":
            return self._trimmed(c, depth)
        if t in ("IfcCircle", "IfcEllipse"):
            m = self.axis2(c.Position)
            a = _real(c.Radius, "radius") if t == "IfcCircle" else _real(c.SemiAxis1, "semi-axis")
            b = _real(c.Radius, "radius") if t == "IfcCircle" else _real(c.SemiAxis2, "semi-axis")
            centre = m[:2, 3] / self.scale
            return _arc_points(centre, m[:2, 0], m[:2, 1], a, b, 0.0, 2 * math.pi, True)[:-1]
        raise Unsupported(f"curve {t}")

    def _trim_value(self, trims, basis, centre, ex, ey, a, b, master: str):
        """Angle (conic) or line parameter for a trim select list."""
        param = point = None
        for tsel in trims or ():
            if tsel.is_a("IfcCartesianPoint"):
                point = np.array((_coords(tsel) + [0.0])[:2])
            else:  # IfcParameterValue
                param = _real(tsel.wrappedValue, "trim parameter")
        use_param = param is not None and (point is None or master == "PARAMETER")
        conic = basis.is_a("IfcCircle") or basis.is_a("IfcEllipse")
        if use_param:
            return param * self.angle if conic else param
        if point is None:
            raise NotParametric("trimmed curve without trim values")
        d = point - centre
        if conic:
            return math.atan2(float(d @ ey) / b, float(d @ ex) / a)
        return float(d @ ex) / a  # a = |Dir| for a line

    def _trimmed(self, c, depth: int) -> np.ndarray:
        basis = c.BasisCurve
        master = str(attr(c, "MasterRepresentation") or "")
        sense = bool(c.SenseAgreement) if c.SenseAgreement is not None else True
        if basis.is_a("IfcLine"):
            p0 = np.array((_coords(basis.Pnt) + [0.0])[:2])
            d = _ratios(basis.Dir.Orientation, 2) * _real(basis.Dir.Magnitude, "magnitude")
            mag = float(np.linalg.norm(d))
            if mag < 1e-12:
                raise NotParametric("trimmed line with zero direction")
            ex = d / mag
            t0 = self._trim_value(c.Trim1, basis, p0, ex, None, mag, mag, master)
            t1 = self._trim_value(c.Trim2, basis, p0, ex, None, mag, mag, master)
            return np.array([p0 + t0 * d, p0 + t1 * d])
        if basis.is_a("IfcCircle") or basis.is_a("IfcEllipse"):
            m = self.axis2(basis.Position)
            centre = m[:2, 3] / self.scale
            ex, ey = m[:2, 0], m[:2, 1]
            if basis.is_a("IfcCircle"):
                a = b = _real(basis.Radius, "radius")
            else:
                a, b = _real(basis.SemiAxis1, "semi-axis"), _real(basis.SemiAxis2, "semi-axis")
            t0 = self._trim_value(c.Trim1, basis, centre, ex, ey, a, b, master)
            t1 = self._trim_value(c.Trim2, basis, centre, ex, ey, a, b, master)
            # Parameters run from ex towards ey of the conic's own (possibly mirrored) frame.
            return _arc_points(centre, ex, ey, a, b, t0, t1, sense)
        if basis.is_a("IfcPolyline") or basis.is_a("IfcCompositeCurve") or basis.is_a("IfcIndexedPolyCurve"):
            pts = self._curve_points(basis, depth + 1)
            p1 = [t for t in c.Trim1 or () if t.is_a("IfcCartesianPoint")]
            p2 = [t for t in c.Trim2 or () if t.is_a("IfcCartesianPoint")]
            if p1 and p2:
                return np.array([(_coords(p1[0]) + [0.0])[:2], (_coords(p2[0]) + [0.0])[:2]])
            return pts if sense else pts[::-1]
        raise Unsupported(f"trimmed {basis.is_a()}")

    def curve_polygon_ring(self, curve) -> np.ndarray:
        """Closed ring (metres) of a profile boundary curve."""
        pts = self.curve_points(curve) * self.scale
        if len(pts) and np.allclose(pts[0], pts[-1], atol=1e-9):
            pts = pts[:-1]
        if len(pts) < 3:
            raise NotParametric("profile boundary with fewer than three points")
        return pts

    # -- profiles --------------------------------------------------------------------
    def profile(self, prof) -> Profile:
        """Profile polygon (metres, profile coordinates incl. its Position); memoised per
        entity and, for parameterised profiles, per value (exports repeat identical
        profiles for every member)."""
        key = prof.id()
        hit = self._profile.get(key)
        if hit is not None:
            return hit
        vkey = None
        if prof.is_a("IfcParameterizedProfileDef"):
            args = []
            for i in range(len(prof)):
                a = prof.get_argument(i)
                if hasattr(a, "is_a"):  # the Position placement: by its matrix
                    a = tuple(self.axis2(a)[:2, [0, 1, 3]].ravel().tolist())
                args.append(a)
            args[1] = None  # ProfileName does not change the shape
            vkey = (prof.is_a(), tuple(args))
            hit = self._profile_by_value.get(vkey)
        if hit is None:
            hit = Profile.of(self._profile_polygon(prof, 0))
            if vkey is not None:
                self._profile_by_value[vkey] = hit
        self._profile[key] = hit
        return hit

    def _profile_polygon(self, p, depth: int) -> Polygon | MultiPolygon:
        """Memoised per profile entity, so a sub-profile used twice is built once."""
        if depth > 16:
            raise NotParametric("profile nesting too deep")
        hit = self._poly.get(p.id())
        if hit is None:
            hit = self._profile_polygon_of(p, depth)
            self._poly[p.id()] = hit
        return hit

    def _profile_polygon_of(self, p, depth: int) -> Polygon | MultiPolygon:
        s = self.scale
        t = p.is_a()

        def g(name: str, default: float | None = None) -> float:
            v = attr(p, name)
            if v is None:
                if default is None:
                    raise NotParametric(f"{t} #{p.id()} without {name}")
                return default
            x = _real(v, f"{t} #{p.id()} {name}") * s
            if not 0.0 < x <= MAX_SIZE_M:  # all are IfcPositiveLengthMeasure
                raise NotParametric(f"{t} #{p.id()} {name} {x:.3g} m is not a positive length up to {MAX_SIZE_M:g} m")
            return x

        if p.is_a("IfcArbitraryClosedProfileDef"):
            outer = Polygon(self.curve_polygon_ring(p.OuterCurve))
            if p.is_a("IfcArbitraryProfileDefWithVoids"):
                holes = [Polygon(self.curve_polygon_ring(c)) for c in p.InnerCurves or ()]
                poly = outer if outer.is_valid else polygonal(outer)
                if holes:
                    poly = poly.difference(shapely.union_all([polygonal(h) for h in holes]))
            else:
                poly = outer
        elif t == "IfcArbitraryOpenProfileDef" or t == "IfcCenterLineProfileDef":
            if t != "IfcCenterLineProfileDef":
                raise Unsupported("open profile")
            line = shapely.LineString(self.curve_points(p.Curve) * s)
            poly = line.buffer(g("Thickness") / 2.0, cap_style="flat", join_style="mitre")
        elif t == "IfcDerivedProfileDef":
            parent = self._profile_polygon(attr(p, "ParentProfile"), depth + 1)
            m = self.transform_operator(attr(p, "Operator"))
            poly = affinity.affine_transform(parent, [m[0, 0], m[0, 1], m[1, 0], m[1, 1], m[0, 3], m[1, 3]])
        elif t == "IfcCompositeProfileDef":
            poly = shapely.union_all([self._profile_polygon(q, depth + 1) for q in p.Profiles])
        elif p.is_a("IfcRectangleHollowProfileDef"):
            x, y, w = g("XDim"), g("YDim"), g("WallThickness")
            poly = shapely.box(-x / 2, -y / 2, x / 2, y / 2)
            if 2 * w < min(x, y):
                poly = poly.difference(shapely.box(-x / 2 + w, -y / 2 + w, x / 2 - w, y / 2 - w))
        elif p.is_a("IfcRectangleProfileDef"):
            x, y = g("XDim"), g("YDim")
            poly = shapely.box(-x / 2, -y / 2, x / 2, y / 2)
        elif p.is_a("IfcCircleHollowProfileDef"):
            r, w = g("Radius"), g("WallThickness")
            poly = circle_polygon(r)
            if w < r:
                poly = Polygon(poly.exterior.coords, [circle_polygon(r - w).exterior.coords[::-1]])
        elif p.is_a("IfcCircleProfileDef"):
            poly = circle_polygon(g("Radius"))
        elif p.is_a("IfcEllipseProfileDef"):
            poly = _ellipse_polygon(g("SemiAxis1"), g("SemiAxis2"))
        elif p.is_a("IfcAsymmetricIShapeProfileDef"):
            d = g("OverallDepth")
            tw = g("WebThickness")
            bb = g("BottomFlangeWidth") if attr(p, "BottomFlangeWidth") is not None else g("OverallWidth")
            tb = g("BottomFlangeThickness") if attr(p, "BottomFlangeThickness") is not None else g("FlangeThickness")
            bt = g("TopFlangeWidth")
            tt = g("TopFlangeThickness", tb)
            pts = [(-bb / 2, 0), (bb / 2, 0), (bb / 2, tb), (tw / 2, tb), (tw / 2, d - tt), (bt / 2, d - tt),
                   (bt / 2, d), (-bt / 2, d), (-bt / 2, d - tt), (-tw / 2, d - tt), (-tw / 2, tb), (-bb / 2, tb)]
            poly = affinity.translate(Polygon(pts), 0.0, -d / 2)
        elif p.is_a("IfcIShapeProfileDef"):
            b, d, tw, tf = g("OverallWidth"), g("OverallDepth"), g("WebThickness"), g("FlangeThickness")
            h = d / 2
            pts = [(-b / 2, -h), (b / 2, -h), (b / 2, -h + tf), (tw / 2, -h + tf), (tw / 2, h - tf), (b / 2, h - tf),
                   (b / 2, h), (-b / 2, h), (-b / 2, h - tf), (-tw / 2, h - tf), (-tw / 2, -h + tf), (-b / 2, -h + tf)]
            poly = Polygon(pts)
        elif p.is_a("IfcLShapeProfileDef"):
            d = g("Depth")
            w = g("Width") if attr(p, "Width") is not None else d
            th = g("Thickness")
            x0, y0 = -w / 2, -d / 2
            poly = Polygon([(x0, y0), (x0 + w, y0), (x0 + w, y0 + th), (x0 + th, y0 + th), (x0 + th, y0 + d), (x0, y0 + d)])
        elif p.is_a("IfcUShapeProfileDef"):
            d, b, tw, tf = g("Depth"), g("FlangeWidth"), g("WebThickness"), g("FlangeThickness")
            x0, y0 = -b / 2, -d / 2
            poly = Polygon([(x0, y0), (x0 + b, y0), (x0 + b, y0 + tf), (x0 + tw, y0 + tf), (x0 + tw, y0 + d - tf),
                            (x0 + b, y0 + d - tf), (x0 + b, y0 + d), (x0, y0 + d)])
        elif p.is_a("IfcTShapeProfileDef"):
            d, b, tw, tf = g("Depth"), g("FlangeWidth"), g("WebThickness"), g("FlangeThickness")
            h = d / 2
            poly = Polygon([(-b / 2, h), (-b / 2, h - tf), (-tw / 2, h - tf), (-tw / 2, -h), (tw / 2, -h),
                            (tw / 2, h - tf), (b / 2, h - tf), (b / 2, h)])
        elif p.is_a("IfcCShapeProfileDef"):
            d, w, th = g("Depth"), g("Width"), g("WallThickness")
            gi = g("Girth", 0.0)
            x0, y0 = -w / 2, -d / 2
            if gi > th:
                pts = [(x0, y0), (x0 + w, y0), (x0 + w, y0 + gi), (x0 + w - th, y0 + gi), (x0 + w - th, y0 + th),
                       (x0 + th, y0 + th), (x0 + th, y0 + d - th), (x0 + w - th, y0 + d - th),
                       (x0 + w - th, y0 + d - gi), (x0 + w, y0 + d - gi), (x0 + w, y0 + d), (x0, y0 + d)]
            else:
                pts = [(x0, y0), (x0 + w, y0), (x0 + w, y0 + th), (x0 + th, y0 + th), (x0 + th, y0 + d - th),
                       (x0 + w, y0 + d - th), (x0 + w, y0 + d), (x0, y0 + d)]
            poly = Polygon(pts)
        elif p.is_a("IfcZShapeProfileDef"):
            d, b, tw, tf = g("Depth"), g("FlangeWidth"), g("WebThickness"), g("FlangeThickness")
            h = d / 2
            poly = Polygon([(-b + tw / 2, -h), (tw / 2, -h), (tw / 2, h - tf), (b - tw / 2, h - tf), (b - tw / 2, h),
                            (-tw / 2, h), (-tw / 2, -h + tf), (-b + tw / 2, -h + tf)])
        else:
            raise Unsupported(f"profile {t}")

        pos = attr(p, "Position") if p.is_a("IfcParameterizedProfileDef") else None
        if pos is not None:
            m = self.axis2(pos)
            poly = affinity.affine_transform(poly, [m[0, 0], m[0, 1], m[1, 0], m[1, 1], m[0, 3], m[1, 3]])
        poly = polygonal(poly)
        if poly.is_empty or poly.area <= 0.0:
            raise NotParametric(f"{t} #{p.id()} has no area")
        return poly

    # -- bodies ----------------------------------------------------------------------
    def items_prisms(self, items, base: np.ndarray) -> tuple[list[Prism], bool]:
        """Prisms of representation items, placed by ``base`` (the object's world matrix).

        Returns the prisms and whether any half-space clipping was dropped.

        Raises:
            NotParametric: for any item that is not an extrusion, a mapped extrusion or a
                half-space clipping of one.
        """
        out: list[Prism] = []
        clipped = False
        self._budget = MAX_BODY_ITEMS
        for it in items:
            prisms, c = self._item(it, base, 0)
            out.extend(prisms)
            clipped = clipped or c
        return out, clipped

    def body_prisms(self, items, base: np.ndarray) -> tuple[list[Prism], bool]:
        """:meth:`items_prisms` for an element's body items, memoised: exports share the same
        items among many elements (types, repeated members), so they are read once in object
        coordinates and then placed by each element's ``base`` (:func:`place_prism`), as the
        mapped representations of :meth:`_item` are."""
        key = tuple(it.id() for it in items)
        local = self._bodies.get(key)
        if local is None:
            local = self.items_prisms(items, _EYE4)
            self._bodies[key] = local
        return [place_prism(q, base) for q in local[0]], local[1]

    def _item(self, it, base: np.ndarray, depth: int) -> tuple[list[Prism], bool]:
        if depth > 16:
            raise NotParametric("representation nesting too deep")
        self._budget -= 1
        if self._budget < 0:
            raise NotParametric(f"body with more than {MAX_BODY_ITEMS} representation items")
        t = it.is_a()
        if t == "IfcExtrudedAreaSolid":
            return [self._extrusion(it, base)], False
        if t in ("IfcBooleanClippingResult", "IfcBooleanResult"):
            op = str(attr(it, "Operator"))
            second = attr(it, "SecondOperand")
            if op == "DIFFERENCE" and second is not None and second.is_a("IfcHalfSpaceSolid"):
                prisms, _ = self._item(attr(it, "FirstOperand"), base, depth + 1)
                return [dataclasses.replace(p, clipped=True) for p in prisms], True
            if op == "UNION":
                a, ca = self._item(attr(it, "FirstOperand"), base, depth + 1)
                b, cb = self._item(second, base, depth + 1)
                return a + b, ca or cb
            raise Unsupported(f"{t} {op} with {second.is_a() if second is not None else 'nothing'}")
        if t == "IfcMappedItem":
            src = attr(it, "MappingSource")
            m = base @ self.transform_operator(attr(it, "MappingTarget")) @ self.axis2(attr(src, "MappingOrigin"))
            # the mapped representation is read once (in its own coordinates) and placed per use
            local = self._mapped.get(src.id())
            if local is None:
                out: list[Prism] = []
                clipped = False
                for sub in attr(attr(src, "MappedRepresentation"), "Items"):
                    p, c = self._item(sub, _EYE4, depth + 1)
                    out.extend(p)
                    clipped = clipped or c
                local = (out, clipped)
                self._mapped[src.id()] = local
            else:
                self._budget -= len(local[0])
                if self._budget < 0:
                    raise NotParametric(f"body with more than {MAX_BODY_ITEMS} representation items")
            return [place_prism(q, m) for q in local[0]], local[1]
        raise Unsupported(t)

    def _extrusion(self, solid, base: np.ndarray) -> Prism:
        # IfcSweptAreaSolid: SweptArea 0, Position 1; IfcExtrudedAreaSolid: ExtrudedDirection 2,
        # Depth 3 (all three schemas).
        profile = self.profile(solid.get_argument(0))
        pos = solid.get_argument(1)
        m = base @ self.axis2(pos) if pos is not None else base
        d = self._dir3(solid.get_argument(2)) or (0.0, 0.0, 1.0)
        depth_f = _real(solid.get_argument(3), "extrusion depth") * self.scale
        if depth_f < 0 or depth_f > MAX_SIZE_M:  # IfcPositiveLengthMeasure; 0 is reported by the reader
            raise NotParametric(f"extrusion depth {depth_f:.3g} m is not a positive length up to {MAX_SIZE_M:g} m")
        (a, b, c, tx), (e, f, g, ty), (h, i, j, tz) = m[:3].tolist()
        vx = (a * d[0] + b * d[1] + c * d[2]) * depth_f
        vy = (e * d[0] + f * d[1] + g * d[2]) * depth_f
        vz = (h * d[0] + i * d[1] + j * d[2]) * depth_f
        return _prism(profile, m, vx, vy, vz)

    # -- explicit faces (B-reps, face sets, surface models) ----------------------------
    def items_faces(self, items, base: np.ndarray) -> tuple[list[Face], bool]:
        """World faces of explicit faceted items, read directly (no engine).

        Handles IfcFacetedBrep (with voids), IfcShellBasedSurfaceModel,
        IfcFaceBasedSurfaceModel, IfcTriangulatedFaceSet, IfcPolygonalFaceSet, through
        IfcMappedItem and as first operand of half-space clippings.

        Raises:
            NotParametric: for anything else (curved B-reps, CSG, general booleans...).
        """
        out: list[Face] = []
        clipped = False
        self._budget = MAX_BODY_ITEMS
        with np.errstate(all="ignore"):  # damaged coordinates give inf or NaN here: refused below
            for it in items:
                c = self._faces(it, base, out, 0)
                clipped = clipped or c
        if out:
            _checked(np.vstack([r for outer, inner in out for r in (outer, *inner)]), "face coordinates")
        return out, clipped

    def _faces(self, it, base: np.ndarray, out: list[Face], depth: int) -> bool:
        if depth > 16:
            raise NotParametric("representation nesting too deep")
        self._budget -= 1
        if self._budget < 0 or len(out) > MAX_BODY_FACES:
            raise NotParametric(f"body with more than {MAX_BODY_ITEMS} representation items or "
                                f"{MAX_BODY_FACES} faces")
        t = it.is_a()
        s = self.scale
        rot, off = base[:3, :3] * s, base[:3, 3]

        def world(pts) -> np.ndarray:
            return _checked(np.asarray(pts, dtype=float), "face coordinates") @ rot.T + off

        if t in ("IfcFacetedBrep", "IfcFacetedBrepWithVoids"):
            self._face_set(it.Outer.CfsFaces, world, out)
            return False
        if t == "IfcShellBasedSurfaceModel":
            for shell in it.SbsmBoundary or ():
                self._face_set(shell.CfsFaces, world, out)
            return False
        if t == "IfcFaceBasedSurfaceModel":
            for fs in it.FbsmFaces or ():
                self._face_set(fs.CfsFaces, world, out)
            return False
        if t in ("IfcTriangulatedFaceSet", "IfcTriangulatedIrregularNetwork", "IfcPolygonalFaceSet"):
            coords = world([[float(v) for v in (list(row) + [0.0])[:3]] for row in it.Coordinates.CoordList])
            pn = attr(it, "PnIndex")
            remap = (np.array([int(i) - 1 for i in pn]) if pn else None)

            def idx(seq) -> np.ndarray:
                a = np.array([int(i) - 1 for i in seq])
                return remap[a] if remap is not None else a

            if t == "IfcPolygonalFaceSet":
                for f in it.Faces:
                    inner = [coords[idx(r)] for r in (attr(f, "InnerCoordIndices") or ())]
                    out.append((coords[idx(f.CoordIndex)], inner))
            else:
                tri = np.array([[int(i) - 1 for i in row] for row in it.CoordIndex])
                if remap is not None:
                    tri = remap[tri]
                out.extend((coords[row], []) for row in tri)
            return False
        if t in ("IfcBooleanClippingResult", "IfcBooleanResult"):
            second = it.SecondOperand
            if str(it.Operator) == "DIFFERENCE" and second is not None and second.is_a("IfcHalfSpaceSolid"):
                self._faces(it.FirstOperand, base, out, depth + 1)
                return True
            raise Unsupported(f"{t} {it.Operator}")
        if t == "IfcMappedItem":
            src = it.MappingSource
            m = base @ self.transform_operator(it.MappingTarget) @ self.axis2(src.MappingOrigin)
            clipped = False
            for sub in src.MappedRepresentation.Items:
                clipped = self._faces(sub, m, out, depth + 1) or clipped
            return clipped
        raise Unsupported(t)

    @staticmethod
    def _face_set(faces, world, out: list[Face]) -> None:
        # Positional access (face[0] = Bounds, bound[0] = Bound, bound[1] = Orientation,
        # loop[0] = Polygon, point[0] = Coordinates) is about 3x faster than by name; the
        # positions are the same in IFC2X3, IFC4 and IFC4X3.
        for face in faces or ():
            bounds = face[0]
            outer = None
            inner = []
            for bound in bounds:
                loop = bound[0]
                if not loop.is_a("IfcPolyLoop"):
                    raise Unsupported(f"face bound {loop.is_a()}")
                pts = [p[0] for p in loop[0]]
                if len(pts) < 3:
                    continue
                ring = world([(c + (0.0,))[:3] if len(c) < 3 else c for c in pts])
                if bound[1] is False:
                    ring = ring[::-1]
                if outer is None and (len(bounds) == 1 or bound.is_a("IfcFaceOuterBound")):
                    outer = ring
                else:
                    inner.append(ring)
            if outer is None and inner:
                outer, inner = inner[0], inner[1:]
            if outer is not None:
                out.append((outer, inner))


def _prism(profile: Profile, m: np.ndarray, vx: float, vy: float, vz: float, clipped: bool = False) -> Prism:
    """The prism of ``profile`` placed by ``m`` (profile plane to world) and extruded along the
    world vector (vx, vy, vz), with its closed-form summary."""
    (a, b, c, tx), (e, f, g, ty), (h, i, j, tz) = m[:3].tolist()
    depth = math.sqrt(vx * vx + vy * vy + vz * vz)
    if depth > 0:
        direction = (vx / depth, vy / depth, vz / depth)
    else:
        direction = (c, g, j)
    # area vector of the profile plane (columns 0 and 1, scaled by mapped items)
    nx, ny, nz = e * i - h * f, h * b - a * i, a * f - e * b
    volume = profile.area * abs(nx * vx + ny * vy + nz * vz)
    c0 = math.sqrt(a * a + e * e + h * h) or 1.0
    c1 = math.sqrt(b * b + f * f + i * i) or 1.0
    vertical = abs(h) <= _SIN_TOL * c0 and abs(i) <= _SIN_TOL * c1 and abs(abs(direction[2]) - 1.0) < VERTICAL_TOL
    if vertical:
        z0, z1 = tz, tz + vz
        zmin, zmax = (z0, z1) if z0 <= z1 else (z1, z0)
        return Prism(profile, m, np.array(direction), depth, clipped, True, zmin, zmax, volume)
    p = Prism(profile, m, np.array(direction), depth, clipped, False, 0.0, 0.0, volume)
    v = prism_vertices(p)
    return dataclasses.replace(p, zmin=float(v[:, 2].min()), zmax=float(v[:, 2].max()))


def place_prism(p: Prism, base: np.ndarray) -> Prism:
    """``p`` (read in its object's coordinates) moved by the object's world matrix ``base``.

    The same prism as reading the item with ``base`` directly: the profile matrix is composed
    (``base @ p.matrix``) and the extrusion vector rotated, so a representation shared by many
    elements is parsed once and placed per element.
    """
    m = base @ p.matrix
    r = base[:3, :3]
    if (p.vertical and r[2, 0] == 0.0 and r[2, 1] == 0.0 and r[2, 2] == 1.0 and r[0, 2] == 0.0 and r[1, 2] == 0.0
            and abs(r[0, 0] * r[0, 0] + r[1, 0] * r[1, 0] - 1.0) < 1e-12
            and abs(abs(r[0, 0] * r[1, 1] - r[0, 1] * r[1, 0]) - 1.0) < 1e-12):
        # a rigid motion that only turns about z and shifts (placements, unscaled mapping):
        # still vertical, same depth and volume, z range shifted (the common case, exact)
        tz = float(base[2, 3])
        return Prism(p.profile, m, r @ p.direction, p.depth_m, p.clipped, True, p.zmin + tz, p.zmax + tz,
                     p.volume_m3)
    v = r @ (p.direction * p.depth_m)  # zero for a zero depth: _prism then takes the placed normal
    return _prism(p.profile, m, float(v[0]), float(v[1]), float(v[2]), p.clipped)


# ---------------------------------------------------------------------------- prism maths

def prism_is_vertical(p: Prism) -> bool:
    """True when the profile plane is horizontal and the extrusion vertical."""
    return p.vertical


def _to_world(p: Prism, xy: np.ndarray) -> np.ndarray:
    m = p.matrix
    return xy @ m[:3, :2].T + m[:3, 3]


def prism_vertices(p: Prism) -> np.ndarray:
    """World vertices (n, 3) of the prism's base and top outer rings."""
    ring = np.vstack([ext for ext, _ in p.profile.parts])
    base = _to_world(p, ring)
    return np.vstack([base, base + p.direction * p.depth_m])


def prism_zrange(p: Prism) -> tuple[float, float]:
    """Lowest and highest world z of the prism (m)."""
    return p.zmin, p.zmax


def prism_volume(p: Prism) -> float:
    """Volume (m^3): profile area x depth x |cos| between extrusion and profile normal."""
    return p.volume_m3


def prism_plan_parts(p: Prism) -> list[tuple[np.ndarray, list[np.ndarray]]]:
    """World plan rings (exterior, holes) of a vertical prism's profile."""
    m = p.matrix
    A = m[:2, :2].T
    t = m[:2, 3]
    return [(ext @ A + t, [h @ A + t for h in holes]) for ext, holes in p.profile.parts]


def prism_footprint(p: Prism) -> Polygon | MultiPolygon:
    """World plan projection of the prism (exact, as a polygon)."""
    if p.vertical:
        parts = prism_plan_parts(p)
        if len(parts) == 1:
            ext, holes = parts[0]
            return Polygon(ext, holes) if holes else shapely.polygons(ext)
        return MultiPolygon([Polygon(e, h) for e, h in parts])
    m = p.matrix
    # Minkowski sum of the projected profile with the projected extrusion vector:
    # base and top faces plus every boundary edge swept along the extrusion.
    v = p.direction[:2] * p.depth_m
    quads = []
    for ext, holes in p.profile.parts:
        for ring in (ext, *holes):
            w = _to_world(p, ring)[:, :2]
            a, b = w[:-1], w[1:]
            quads.append(np.stack([a, b, b + v, a + v, a], axis=1))
    q = np.concatenate(quads)
    polys = list(shapely.polygons(q))
    base = affinity.affine_transform(p.profile.polygon, [m[0, 0], m[0, 1], m[1, 0], m[1, 1], m[0, 3], m[1, 3]])
    parts = [g for g in polys + [base, affinity.translate(base, float(v[0]), float(v[1]))]
             if g.is_valid and g.area > 1e-12]
    return polygonal(shapely.union_all(parts)) if parts else Polygon()


# ---------------------------------------------------------------------------- explicit faces and mesh fallback

@dataclass(frozen=True)
class MeshBody:
    """What the reader takes from a faceted body (world metres).

    Attributes:
        footprint: plan projection: the union of the projected non-vertical faces (the
            convex hull above ``MAX_UNION_FACES`` faces, for speed).
        zmin, zmax: vertical extent (m).
        volume_m3: enclosed volume (divergence theorem; meaningful for closed, consistently
            oriented shells only).
        sloped: True when most of the non-vertical face area is inclined more than 5 degrees.
        vertices: (n, 3) array.
    """

    footprint: Polygon | MultiPolygon
    zmin: float
    zmax: float
    volume_m3: float
    sloped: bool
    vertices: np.ndarray


MAX_UNION_FACES = 20000
_COS_5DEG = math.cos(math.radians(5.0))

Face = tuple[np.ndarray, list[np.ndarray]]
"""A planar face: outer ring (k, 3) and inner rings, world metres."""


def faces_body(faces: list[Face]) -> MeshBody | None:
    """Plan footprint, extent, volume and slope of a body given as planar faces (vectorised)."""
    if not faces:
        return None
    rings = []
    owner = []
    for i, (outer, inner) in enumerate(faces):
        rings.append(outer)
        owner.append(i)
        for r in inner:
            rings.append(r)
            owner.append(i)
    sizes = np.array([len(r) for r in rings])
    pts = np.vstack(rings)
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]])
    nxt = np.arange(len(pts)) + 1
    nxt[starts + sizes - 1] = starts
    a, b = pts, pts[nxt]
    # Newell's method: twice the area vector of each ring; inner rings run the other way
    # in a well-formed face, so summing the rings of a face subtracts the holes.
    terms = np.column_stack([(a[:, 1] - b[:, 1]) * (a[:, 2] + b[:, 2]),
                             (a[:, 2] - b[:, 2]) * (a[:, 0] + b[:, 0]),
                             (a[:, 0] - b[:, 0]) * (a[:, 1] + b[:, 1])])
    ring_n = np.add.reduceat(terms, starts, axis=0)
    owner_a = np.array(owner)
    n = np.zeros((len(faces), 3))
    np.add.at(n, owner_a, ring_n)
    first = np.array([f[0][0] for f in faces])
    vol = float(abs(np.einsum("ij,ij->i", first, n).sum()) / 6.0)
    a2 = np.linalg.norm(n, axis=1)
    keep = (a2 > 1e-14) & (np.abs(n[:, 2]) > 1e-9 * a2)
    up = n[:, 2] > 0
    up_area = float(a2[up & keep].sum())
    inclined = float(a2[up & keep & (n[:, 2] < _COS_5DEG * a2)].sum())
    sloped = up_area > 0 and inclined > 0.5 * up_area
    idx = np.flatnonzero(keep)
    if len(idx) == 0:
        fp: Polygon | MultiPolygon = Polygon()
    elif len(idx) > MAX_UNION_FACES:
        fp = polygonal(shapely.MultiPoint(pts[:, :2]).convex_hull)
    else:
        simple = [i for i in idx if not faces[i][1]]
        holed = [i for i in idx if faces[i][1]]
        geoms = []
        if simple:
            coords = np.vstack([faces[i][0][:, :2] for i in simple])
            ids = np.repeat(np.arange(len(simple)), [len(faces[i][0]) for i in simple])
            geoms.extend(shapely.polygons(shapely.linearrings(coords, indices=ids)))
        for i in holed:
            outer, inner = faces[i]
            geoms.append(Polygon(outer[:, :2], [r[:, :2] for r in inner if len(r) >= 3]))
        arr = np.array(geoms, dtype=object)
        bad = ~shapely.is_valid(arr)
        if bad.any():
            arr[bad] = [polygonal(g) for g in arr[bad]]
        fp = polygonal(shapely.union_all(arr))
    return MeshBody(fp, float(pts[:, 2].min()), float(pts[:, 2].max()), vol, sloped, pts)


def triangles_body(verts: np.ndarray, faces: np.ndarray) -> MeshBody | None:
    """As :func:`faces_body` for a triangle mesh (vectorised)."""
    if len(verts) == 0 or len(faces) == 0:
        return None
    tri = verts[faces]
    n = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    area2 = np.linalg.norm(n, axis=1)
    volume = float(abs(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum()) / 6.0)
    keep = (np.abs(n[:, 2]) > 1e-9 * area2) & (area2 > 1e-14)
    planar = tri[keep][:, :, :2]
    if len(planar) == 0:
        footprint: Polygon | MultiPolygon = Polygon()
    elif len(planar) > MAX_UNION_FACES:
        footprint = polygonal(shapely.MultiPoint(planar.reshape(-1, 2)).convex_hull)
    else:
        closed = np.concatenate([planar, planar[:, :1]], axis=1)
        footprint = polygonal(shapely.union_all(shapely.polygons(closed)))
    up = n[:, 2] > 0
    cosang = n[:, 2] / np.maximum(area2, 1e-300)
    up_area = float(area2[up].sum())
    inclined = float(area2[up & (cosang < _COS_5DEG)].sum())
    sloped = up_area > 0 and inclined > 0.5 * up_area
    return MeshBody(footprint, float(verts[:, 2].min()), float(verts[:, 2].max()), volume, sloped, verts)


_SETTINGS = None


def _geom_settings():
    global _SETTINGS
    if _SETTINGS is None:
        import ifcopenshell.geom

        s = ifcopenshell.geom.settings()
        s.set("use-world-coords", True)
        s.set("disable-opening-subtractions", True)
        _SETTINGS = s
    return _SETTINGS


MAX_ENGINE_INSTANCES = 200_000
"""Most instances an element's representation may hold to be sent to the geometry engine."""


def _numbers_ok(values) -> bool:
    """True when every REAL in an attribute value (nested aggregates included) is finite and
    of plausible size (see ``_RAW_MAX``)."""
    for v in values:
        if isinstance(v, float):
            if not -_RAW_MAX <= v <= _RAW_MAX:
                return False
        elif isinstance(v, tuple) and not _numbers_ok(v):
            return False
    return True


def engine_safe(element) -> bool:
    """True when the element's representation (and placement chain) may go to the geometry
    engine: no more than MAX_ENGINE_INSTANCES instances and no NaN, infinite or absurd number
    in any of them. The engine cannot be interrupted and may loop or crash on such data, so
    it never sees it."""
    rep = element.get_argument(6)
    if rep is None:
        return True
    found = element.file.traverse(rep, max_levels=None)
    if len(found) > MAX_ENGINE_INSTANCES:
        return False
    for inst in found:
        if not _numbers_ok(inst[i] for i in range(len(inst))):
            return False
    return True


def mesh_body(element) -> MeshBody | None:
    """Tessellate one element with the geometry engine (world coordinates, metres,
    openings not subtracted). None when the engine produces nothing.

    Raises:
        NotParametric: the body is not :func:`engine_safe` (it is never given to the engine).
    """
    import ifcopenshell.geom

    if not engine_safe(element):
        raise NotParametric("body with a NaN, infinite or absurd number (or too large) for the geometry engine")
    try:
        shape = ifcopenshell.geom.create_shape(_geom_settings(), element)
    except Exception:  # noqa: BLE001 - the engine raises RuntimeError and others
        return None
    verts = np.asarray(shape.geometry.verts, dtype=float).reshape(-1, 3)
    faces = np.asarray(shape.geometry.faces, dtype=np.int64).reshape(-1, 3)
    return triangles_body(verts, faces)
