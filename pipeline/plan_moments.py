"""Area and line moments of plan shapes, and a plan mass accumulator.

Exact polygon integrals by Green's theorem (the divergence theorem in the plane): for a
closed ring of vertices (x_i, y_i), counter-clockwise, with c_i = x_i y_{i+1} - x_{i+1} y_i::

    A       = 1/2  sum c_i
    int x   = 1/6  sum (x_i + x_{i+1}) c_i
    int x^2 = 1/12 sum (x_i^2 + x_i x_{i+1} + x_{i+1}^2) c_i        (and the same in y)
    int xy  = 1/24 sum (x_i y_{i+1} + 2 x_i y_i + 2 x_{i+1} y_{i+1} + x_{i+1} y_i) c_i

Holes are rings of the opposite orientation, so they subtract themselves. Coordinates are
shifted to a reference point first, which keeps the sums well conditioned for models
placed at site coordinates far from the origin. Units follow the input (m -> m^2, m^3, m^4).
"""
from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import GeometryCollection, LinearRing, MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry
from shapely.geometry.polygon import orient

__all__ = ["AreaMoments", "polygons_of", "area_moments", "area_moments_many", "area_moments_array", "outline_moments",
           "MassMoments", "ShapeTable"]


@dataclass(frozen=True)
class AreaMoments:
    """Integrals over a plan region (or along a plan curve) about a reference point.

    Attributes:
        a: area (m^2) or length (m) for a curve.
        sx, sy: first moments int x, int y (m^3; m^2 for a curve).
        ixx, iyy, ixy: int x^2, int y^2, int xy (m^4; m^3 for a curve). Note: ``ixx``
            here is int x^2 (about the reference point), not a section "Ixx".
    """

    a: float
    sx: float
    sy: float
    ixx: float
    iyy: float
    ixy: float

    def __add__(self, other: "AreaMoments") -> "AreaMoments":
        return AreaMoments(self.a + other.a, self.sx + other.sx, self.sy + other.sy,
                           self.ixx + other.ixx, self.iyy + other.iyy, self.ixy + other.ixy)

    @property
    def centroid(self) -> tuple[float, float]:
        """Centroid relative to the reference point."""
        return (self.sx / self.a, self.sy / self.a)

    def central(self) -> tuple[float, float, float]:
        """Second moments about the centroid: (int (y-yc)^2, int (x-xc)^2, int (x-xc)(y-yc)).

        The first is the section constant about the centroidal axis parallel to x
        ("Ixx" in :class:`~swayscreen.pipeline.stick.SectionProps`), the second about
        the axis parallel to y ("Iyy").
        """
        cx, cy = self.centroid
        i_about_x = self.iyy - self.a * cy * cy
        i_about_y = self.ixx - self.a * cx * cx
        i_xy = self.ixy - self.a * cx * cy
        return (i_about_x, i_about_y, i_xy)


_ZERO = AreaMoments(0.0, 0.0, 0.0, 0.0, 0.0, 0.0)


def polygons_of(shape: BaseGeometry | None) -> list[Polygon]:
    """The non-empty polygons of a Polygon, MultiPolygon or GeometryCollection."""
    if shape is None or shape.is_empty:
        return []
    if isinstance(shape, Polygon):
        return [shape]
    if isinstance(shape, (MultiPolygon, GeometryCollection)):
        out: list[Polygon] = []
        for g in shape.geoms:
            out.extend(polygons_of(g))
        return out
    return []


def _ring_moments(ring: LinearRing, ref: tuple[float, float]) -> AreaMoments:
    pts = list(ring.coords)
    ox, oy = ref
    a = sx = sy = ixx = iyy = ixy = 0.0
    for (x0, y0), (x1, y1) in zip(pts[:-1], pts[1:]):
        x0 -= ox
        x1 -= ox
        y0 -= oy
        y1 -= oy
        c = x0 * y1 - x1 * y0
        a += c
        sx += (x0 + x1) * c
        sy += (y0 + y1) * c
        ixx += (x0 * x0 + x0 * x1 + x1 * x1) * c
        iyy += (y0 * y0 + y0 * y1 + y1 * y1) * c
        ixy += (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c
    return AreaMoments(a / 2, sx / 6, sy / 6, ixx / 12, iyy / 12, ixy / 24)


def area_moments(shape: BaseGeometry | None, ref: tuple[float, float] = (0.0, 0.0)) -> AreaMoments:
    """Area integrals of a plan shape (voids subtracted) about ``ref`` (m-based units)."""
    total = _ZERO
    for poly in polygons_of(shape):
        p = orient(poly, sign=1.0)  # exterior counter-clockwise, holes clockwise
        total = total + _ring_moments(p.exterior, ref)
        for hole in p.interiors:
            total = total + _ring_moments(hole, ref)
    return total


_DIVISORS = np.array([2.0, 6.0, 6.0, 12.0, 12.0, 24.0])


def area_moments_many(shapes: Sequence[BaseGeometry | None], ref: tuple[float, float] = (0.0, 0.0)
                      ) -> list[AreaMoments]:
    """:func:`area_moments` of many shapes at once (one numpy pass over all ring coordinates).

    Same formulas, same vertex order (rings oriented as :func:`area_moments` does) and the
    same left-to-right summation per ring (``np.bincount`` accumulates in index order), so
    each result equals ``area_moments(shape, ref)``. Shapes that are not a Polygon or
    MultiPolygon (None, collections) take the scalar path.
    """
    table = area_moments_array(shapes, ref)
    return [AreaMoments(*row) for row in table.tolist()]


def area_moments_array(shapes: Sequence[BaseGeometry | None], ref: tuple[float, float] = (0.0, 0.0), *,
                       refs: np.ndarray | None = None) -> np.ndarray:
    """:func:`area_moments_many` as an array: one row (a, sx, sy, ixx, iyy, ixy) per shape
    (m-based units; zeros for None and empty shapes), bit for bit the same numbers.

    ``refs``: an (n, 2) array of one reference point per shape, used instead of ``ref``.
    """
    out = np.zeros((len(shapes), 6))
    fast = []
    for i, g in enumerate(shapes):
        if isinstance(g, (Polygon, MultiPolygon)):
            fast.append(i)
        elif g is not None:
            m = area_moments(g, ref if refs is None else (float(refs[i][0]), float(refs[i][1])))
            out[i] = (m.a, m.sx, m.sy, m.ixx, m.iyy, m.ixy)
    if not fast:
        return out
    geoms = np.empty(len(fast), dtype=object)
    geoms[:] = [shapes[i] for i in fast]
    parts, part_of = shapely.get_parts(geoms, return_index=True)
    keep = ~shapely.is_empty(parts)
    parts, part_of = shapely.orient_polygons(parts[keep]), part_of[keep]
    rings, ring_of = shapely.get_rings(parts, return_index=True)
    coords, coord_ring = shapely.get_coordinates(rings, return_index=True)
    shape_of_ring = np.asarray(fast)[part_of[ring_of]]
    if refs is None:
        ox, oy = ref
    else:
        at = np.asarray(refs, dtype=float)[shape_of_ring[coord_ring]]
        ox, oy = at[:, 0], at[:, 1]
    x = coords[:, 0] - ox
    y = coords[:, 1] - oy
    same = coord_ring[:-1] == coord_ring[1:]  # consecutive vertices of one ring
    x0, x1, y0, y1 = x[:-1][same], x[1:][same], y[:-1][same], y[1:][same]
    seg_ring = coord_ring[:-1][same]
    c = x0 * y1 - x1 * y0
    terms = (c, (x0 + x1) * c, (y0 + y1) * c, (x0 * x0 + x0 * x1 + x1 * x1) * c,
             (y0 * y0 + y0 * y1 + y1 * y1) * c, (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c)
    n_rings = len(rings)
    per_ring = np.column_stack([np.bincount(seg_ring, weights=t, minlength=n_rings) for t in terms]) / _DIVISORS
    # rings in order (exterior, holes; part by part), added to 0 one after the other as area_moments does
    per_shape = np.column_stack([np.bincount(shape_of_ring, weights=per_ring[:, k], minlength=len(shapes))
                                 for k in range(6)])
    out[fast] = per_shape[fast]
    return out


def outline_moments(shape: BaseGeometry | None, ref: tuple[float, float] = (0.0, 0.0)) -> AreaMoments:
    """Line integrals along the outer boundary (holes excluded) of a plan shape about ``ref``.

    For a straight piece from p to q of length L: int x ds = L (x_p + x_q)/2,
    int x^2 ds = L (x_p^2 + x_p x_q + x_q^2)/3, int xy ds = L (2 x_p y_p + x_p y_q + x_q y_p + 2 x_q y_q)/6.
    """
    ox, oy = ref
    a = sx = sy = ixx = iyy = ixy = 0.0
    for poly in polygons_of(shape):
        pts = list(poly.exterior.coords)
        for (x0, y0), (x1, y1) in zip(pts[:-1], pts[1:]):
            x0 -= ox
            x1 -= ox
            y0 -= oy
            y1 -= oy
            seg = ((x1 - x0) ** 2 + (y1 - y0) ** 2) ** 0.5
            a += seg
            sx += seg * (x0 + x1) / 2
            sy += seg * (y0 + y1) / 2
            ixx += seg * (x0 * x0 + x0 * x1 + x1 * x1) / 3
            iyy += seg * (y0 * y0 + y0 * y1 + y1 * y1) / 3
            ixy += seg * (2 * x0 * y0 + x0 * y1 + x1 * y0 + 2 * x1 * y1) / 6
    return AreaMoments(a, sx, sy, ixx, iyy, ixy)


class MassMoments:
    """Accumulates plan-distributed masses about a fixed reference point.

    Each addition spreads a mass uniformly over a region (or along a curve); a point
    mass with its own polar moment can be added too. The result is the total mass, the
    mass centre and the polar mass moment about the vertical axis through the mass centre
    (parallel-axis theorem J_c = J_ref - m |c - ref|^2). Negative masses (openings cut
    from a wall) are allowed.
    """

    def __init__(self, ref: tuple[float, float]) -> None:
        self.ref = (float(ref[0]), float(ref[1]))
        self.m = 0.0
        self.mx = 0.0
        self.my = 0.0
        self.mr2 = 0.0

    def add_moments(self, mass_kg: float, mom: AreaMoments) -> None:
        """Spread ``mass_kg`` uniformly over the region (or curve) whose moments are ``mom``."""
        if mass_kg == 0.0:
            return
        if mom.a <= 0.0:
            raise ValueError("cannot spread a mass over a region of zero size")
        f = mass_kg / mom.a
        self.m += mass_kg
        self.mx += f * mom.sx
        self.my += f * mom.sy
        self.mr2 += f * (mom.ixx + mom.iyy)

    def add_area(self, mass_kg: float, shape: BaseGeometry) -> None:
        self.add_moments(mass_kg, area_moments(shape, self.ref))

    def add_outline(self, mass_kg: float, shape: BaseGeometry) -> None:
        self.add_moments(mass_kg, outline_moments(shape, self.ref))

    def add_point(self, mass_kg: float, at: tuple[float, float], own_polar_kg_m2: float = 0.0) -> None:
        dx, dy = at[0] - self.ref[0], at[1] - self.ref[1]
        self.m += mass_kg
        self.mx += mass_kg * dx
        self.my += mass_kg * dy
        self.mr2 += own_polar_kg_m2 + mass_kg * (dx * dx + dy * dy)

    def merge(self, others: Iterable["MassMoments"]) -> None:
        for o in others:
            if o.ref != self.ref:
                raise ValueError("mass moments about different reference points")
            self.m += o.m
            self.mx += o.mx
            self.my += o.my
            self.mr2 += o.mr2

    @property
    def centre(self) -> tuple[float, float]:
        if self.m <= 0.0:
            return self.ref
        return (self.ref[0] + self.mx / self.m, self.ref[1] + self.my / self.m)

    @property
    def polar_moment(self) -> float:
        """Polar mass moment about the vertical axis through the mass centre (kg m^2)."""
        if self.m <= 0.0:
            return 0.0
        dx, dy = self.mx / self.m, self.my / self.m
        return max(self.mr2 - self.m * (dx * dx + dy * dy), 0.0)


class ShapeTable:
    """Plan area and WKB bytes of elements' plan shapes, computed in one vectorised pass and
    looked up by element identity, so the stages of one derive share them.

    ``shapely.area`` and ``shapely.to_wkb`` give the same numbers and bytes as ``shape.area``
    and ``shape.wkb`` one by one. Entries hold the element, so its ``id`` stays unique while
    the table lives; an element not added is computed when first asked for.
    """

    def __init__(self) -> None:
        self.rows: dict[int, tuple[object, float, bytes | None]] = {}

    def add(self, elements: Sequence[object], shapes: Sequence[BaseGeometry | None]) -> None:
        """Add ``elements`` with their plan shapes (None: area NaN, WKB None)."""
        if not elements:
            return
        geoms = np.empty(len(shapes), dtype=object)
        geoms[:] = list(shapes)
        rows = self.rows
        for e, a, b in zip(elements, shapely.area(geoms).tolist(), shapely.to_wkb(geoms).tolist()):
            rows[id(e)] = (e, a, b)

    def row(self, element: object, shape: BaseGeometry | None) -> tuple[object, float, bytes | None]:
        """(element, area, WKB) of ``element`` whose plan shape is ``shape``."""
        got = self.rows.get(id(element))
        if got is None or got[0] is not element:
            if shape is None:
                got = (element, float("nan"), None)
            else:
                got = (element, float(shape.area), shape.wkb)
            self.rows[id(element)] = got
        return got

    def rows_of(self, elements: Sequence[object], shapes: Sequence[BaseGeometry | None]
                ) -> list[tuple[object, float, bytes | None]]:
        """:meth:`row` of each element."""
        rows = self.rows
        out = []
        for e, g in zip(elements, shapes):
            got = rows.get(id(e))
            out.append(got if got is not None and got[0] is e else self.row(e, g))
        return out

    def wkbs(self, elements: Sequence[object], shapes: Sequence[BaseGeometry | None]) -> list[bytes | None]:
        """The WKB bytes of each element's shape (None for no shape)."""
        return [r[2] for r in self.rows_of(elements, shapes)]
