"""Plan overlays (union, intersection, difference, buffer) that survive odd but valid geometry.

GEOS computes overlays in floating point. On valid input made of coordinates of round-off
size (subnormal numbers such as 2e-313 m) or of nearly coincident edges, its noding can fail
with ``TopologyException`` ("found non-noded intersection", "unable to assign free hole to a
shell"). The stages that derive the stick model take plan overlays of wall, slab and column
footprints, and one such failure must not end the screening with a traceback.

Every function here first runs the plain shapely operation, so ordinary input gives exactly
what it gave before. Only when GEOS raises does it retry on cleaned copies of the inputs:

1. every coordinate rounded to a :data:`GRID_M` grid (``shapely.set_precision`` pointwise,
   which moves vertices and builds no topology, so it cannot fail the same way), the result
   repaired with ``shapely.make_valid`` and its polygonal (or, for lines, lineal) parts kept;
2. the operation again on those copies; then with GEOS's own fixed-precision overlay
   (``grid_size=GRID_M``, snap-rounding); then (unions) on ``buffer(0)`` of each copy.

A millionth of a millimetre is far below any drawing tolerance of a building model (walls
are joined within 0.05 m), so the cleaned result is the same building. If every attempt
fails, :class:`PlanGeometryError` is raised; the callers turn it into a warning for that
storey or element. Floating-point warnings numpy raises on such numbers (``invalid value
encountered``) are silenced inside these calls.
"""
from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
import shapely
from shapely.errors import GEOSException
from shapely.geometry import GeometryCollection, LineString, MultiLineString, MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry

from .errors import InputError

__all__ = ["GRID_M", "PlanGeometryError", "clean", "robust_union", "robust_intersection", "robust_difference",
           "robust_buffer", "robust_call"]

GRID_M = 1e-9
"""Grid (m) the inputs are rounded to before a failed overlay is retried."""


class PlanGeometryError(InputError):
    """A plan overlay the geometry engine could not compute even on the cleaned inputs."""


def _parts(geom: BaseGeometry | None, kinds: tuple[type, ...]) -> list[BaseGeometry]:
    if geom is None or geom.is_empty:
        return []
    if isinstance(geom, kinds):
        return [geom]
    if isinstance(geom, (MultiPolygon, MultiLineString, GeometryCollection)):
        out: list[BaseGeometry] = []
        for g in geom.geoms:
            out.extend(_parts(g, kinds))
        return out
    return []


def clean(geom: BaseGeometry | None) -> BaseGeometry | None:
    """``geom`` with its coordinates on the :data:`GRID_M` grid, made valid, with the parts of
    its own dimension (polygons of a polygon, lines of a line) of positive size kept (None when
    nothing is left). Points and collections are passed through rounded and made valid."""
    if geom is None or geom.is_empty:
        return geom
    with np.errstate(all="ignore"):
        snapped = shapely.make_valid(shapely.set_precision(geom, GRID_M, mode="pointwise"))
    if isinstance(geom, (Polygon, MultiPolygon)):
        polys = [p for p in _parts(snapped, (Polygon,)) if p.area > 0]
        if not polys:
            return None
        return polys[0] if len(polys) == 1 else MultiPolygon(polys)
    if isinstance(geom, (LineString, MultiLineString)):
        lines = [g for g in _parts(snapped, (LineString,)) if g.length > 0]
        if not lines:
            return None
        return lines[0] if len(lines) == 1 else MultiLineString(lines)
    return snapped


def robust_call(what: str, attempts: Sequence[Callable[[], Any]]) -> Any:
    """The result of the first attempt that GEOS completes; :class:`PlanGeometryError` naming
    ``what`` and the first GEOS message when all fail."""
    first: GEOSException | None = None
    for attempt in attempts:
        try:
            with np.errstate(all="ignore"):
                return attempt()
        except GEOSException as exc:
            first = first or exc
    raise PlanGeometryError(f"{what}: the geometry engine failed even with coordinates rounded to {GRID_M:g} m "
                            f"({str(first).splitlines()[0] if first else 'no result'})")


def robust_union(shapes: Sequence[BaseGeometry | None], what: str = "union of plan shapes") -> BaseGeometry:
    """``shapely.union_all(shapes)``, retried on cleaned shapes when GEOS fails (module doc)."""
    try:
        with np.errstate(all="ignore"):
            return shapely.union_all(shapes)
    except GEOSException:
        pass
    cleaned = [c for c in (clean(g) for g in shapes) if c is not None]
    return robust_call(what, (
        lambda: shapely.union_all(cleaned),
        lambda: shapely.union_all(cleaned, grid_size=GRID_M),
        lambda: shapely.union_all([shapely.buffer(g, 0) for g in cleaned]),
    ))


def _cleaned_pair(a: BaseGeometry, b: BaseGeometry) -> tuple[BaseGeometry, BaseGeometry]:
    ca, cb = clean(a), clean(b)
    empty = GeometryCollection()
    return (ca if ca is not None else empty), (cb if cb is not None else empty)


def _robust_binary(op: str, a: BaseGeometry, b: BaseGeometry, what: str) -> BaseGeometry:
    """``shapely.<op>(a, b)``, retried on cleaned shapes when GEOS fails (module doc)."""
    fn = getattr(shapely, op)
    try:
        with np.errstate(all="ignore"):
            return fn(a, b)
    except GEOSException:
        pass
    ca, cb = _cleaned_pair(a, b)
    return robust_call(what, (lambda: fn(ca, cb), lambda: fn(ca, cb, grid_size=GRID_M)))


def robust_intersection(a: BaseGeometry, b: BaseGeometry, what: str = "intersection of plan shapes") -> BaseGeometry:
    """``a.intersection(b)``, retried on cleaned shapes when GEOS fails (module doc)."""
    return _robust_binary("intersection", a, b, what)


def robust_difference(a: BaseGeometry, b: BaseGeometry, what: str = "difference of plan shapes") -> BaseGeometry:
    """``a.difference(b)``, retried on cleaned shapes when GEOS fails (module doc)."""
    return _robust_binary("difference", a, b, what)


def robust_buffer(geom: BaseGeometry, distance: float, what: str = "offset of a plan shape",
                  **kwargs: Any) -> BaseGeometry:
    """``geom.buffer(distance, **kwargs)``, retried on the cleaned shape when GEOS fails."""
    try:
        with np.errstate(all="ignore"):
            return geom.buffer(distance, **kwargs)
    except GEOSException:
        pass
    c = clean(geom)
    if c is None:
        c = GeometryCollection()
    return robust_call(what, (lambda: c.buffer(distance, **kwargs),))
