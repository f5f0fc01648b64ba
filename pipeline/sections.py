"""Plan-section constants of walls and cores (gross, uncracked, SI units).

Two models of the same plan section are used side by side:

* the **plan polygon** (the union of the wall footprints): area, centroid and the
  centroidal second moments by Green's theorem over the exterior and hole rings
  (:func:`polygon_properties`). This is exact for the drawn polygon and is what
  :func:`section_props` reports for area, centroid and bending.
* the **centre-line model** (thin-walled theory): straight wall segments of given
  thickness joined at nodes (:class:`WallSegment`, :func:`thin_walled_properties`).
  It gives what the polygon cannot: the torsion constant, the shear areas, the shear
  centre and (open sections) the warping constant.

Conventions (plan x/y in metres):

* ``ixx`` is the second moment about the centroidal axis parallel to x, i.e. the
  integral of (y - yc)^2 dA; ``iyy`` integral of (x - xc)^2 dA; ``ixy`` integral of
  (x - xc)(y - yc) dA.
* principal angle: the angle from world x to the *major* principal axis (the axis with
  the larger second moment), in (-pi/2, pi/2].

Thin-walled rules (standard thin-walled beam theory, e.g. Megson, *Aircraft
Structures*, the chapters on open and closed thin-walled beams; Timoshenko & Goodier,
*Theory of Elasticity*, torsion of thin-walled sections; both from memory; the formulas
as in /work/shared/reference/methods.md section 9):

* Second moments of the centre-line model are line integrals along the centre line
  times thickness; the own through-thickness terms (L t^3/12) and the overlap of the
  walls at corners are neglected.
* Closed cells are the bounded faces of the planar centre-line network
  (``shapely.polygonize``). Bredt-Batho for one or more cells: with unit rate of
  twist, the circulating shear flows q_i solve
  ``q_i * sum_{walls of i} L/t - sum_j q_j * sum_{walls shared by i and j} L/t = 2 A_i``
  and ``J_closed = 2 sum_i A_i q_i`` (one cell: ``4 A^2 / sum L/t``), A_i being the
  area enclosed by the cell's centre line.
* St Venant for the open parts: ``J_open = sum L t^3 / 3`` over the walls that bound no
  closed cell. The walls of closed cells add nothing of their own (their St Venant term
  is below 0.3 % of the Bredt term for a storey-sized core: 0.252 against 98.7 m^4 for
  the 8 x 6 m box of methods.md section 9). With ``free_end_correction=True`` each free
  end of an open wall subtracts 0.105 t^4, which turns a single rectangle into the
  refined ``(b t^3/3)(1 - 0.63 t/b)`` (methods.md section 9 [MEM; DER]); the ends at
  a cut (see :class:`WallSegment`) are free ends too; junctions take no correction, and no piece drops below 0.1406 a b^3 (the square's value, for
  pieces shorter than twice their thickness).
* Shear areas: every wall element counts with ``L t cos^2(theta)`` for shear in x and
  ``L t sin^2(theta)`` for shear in y, theta its angle to x (the "web area" rule:
  webs parallel to the shear carry it). No form factor is applied: against the
  Timoshenko shear area of a solid rectangle (5/6 A) the rule is 20 % high; a
  settings factor can reduce it downstream.
* Shear centre: the bending shear flow (dq/ds = -t (a x + b y), centroidal x, y) is
  solved on the network for any topology: flow balance at every node and, for every
  independent cycle, zero twist (integral of q/t ds = 0). The point where the
  resultant of each flow acts is the shear centre. For an open (tree) network this
  equals the classical sectorial-coordinate result (channel: e = 3 b^2 t_f /
  (6 b t_f + h t_w), methods.md section 9).
* Warping constant C_w (open, connected networks only): the integral of the normalised
  sectorial coordinate squared, with the pole at the shear centre (Vlasov, *Thin-walled
  elastic beams*, 1961, from memory; channel closed form in methods.md section 9).
  :class:`~swayscreen.pipeline.stick.SectionProps` carries it as ``cw_m6``; closed
  sections and sections in several parts carry 0 (see :func:`combine_section`).
* A network in several unconnected parts (walls that touch in plan without a
  centre-line junction, or walls cut through by doors) is treated part by part: J and
  shear areas add; the shear centre is the centre of flexural stiffness of the parts'
  shear centres (x weighted by each part's ixx, y by its iyy), as for separate walls
  tied by rigid floors.

Example::

    >>> segs = [WallSegment((4, 0), (0, 0), 0.3), WallSegment((0, 0), (0, 8), 0.3),
    ...         WallSegment((0, 8), (4, 8), 0.3)]
    >>> round(thin_walled_properties(segs).j_m4, 5)
    0.144
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import networkx as nx
import numpy as np
import shapely
from shapely.geometry import GeometryCollection, LineString, MultiPolygon, Polygon
from shapely.geometry.polygon import orient

from .errors import InputError
from .stick import SectionProps

__all__ = [
    "PlanShape",
    "PolygonProps",
    "polygon_properties",
    "principal_axes",
    "WallSegment",
    "ThinWalledProps",
    "thin_walled_properties",
    "section_props",
    "combine_section",
    "FREE_END_COEFF",
    "SQUARE_J_COEFF",
]

PlanShape = Polygon | MultiPolygon

FREE_END_COEFF = 0.105
"""St Venant reduction per free end, times t^4: 0.63/3/2 from J = (b t^3/3)(1 - 0.63 t/b)
(methods.md section 9 [MEM; DER vs series solution])."""


SQUARE_J_COEFF = 0.1406
"""J / (a b^3) of a square (a = b) from the exact series, 0.14058 (methods.md section 9 [DER])."""


_CW_NEGLIGIBLE = 1e-9
"""C_w below this times I_p^2 / A is round-off, taken as 0 (a channel has about 0.1)."""


# ---------------------------------------------------------------------------------------
# Plan polygon
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class PolygonProps:
    """Area constants of a plan polygon (holes subtracted).

    Attributes:
        area_m2: area (m^2).
        centroid_m: (x, y) of the centroid (m).
        ixx_m4: integral of (y - yc)^2 dA (m^4).
        iyy_m4: integral of (x - xc)^2 dA (m^4).
        ixy_m4: integral of (x - xc)(y - yc) dA (m^4).
        principal_angle_rad: angle from world x to the major principal axis, (-pi/2, pi/2].
        i11_m4: major principal second moment (m^4).
        i22_m4: minor principal second moment (m^4).
    """

    area_m2: float
    centroid_m: tuple[float, float]
    ixx_m4: float
    iyy_m4: float
    ixy_m4: float
    principal_angle_rad: float
    i11_m4: float
    i22_m4: float


def _polygons_of(shape: object) -> list[Polygon]:
    if isinstance(shape, Polygon):
        return [shape]
    if isinstance(shape, MultiPolygon):
        return list(shape.geoms)
    if isinstance(shape, GeometryCollection):
        return [g for g in shape.geoms if isinstance(g, Polygon)] + [
            p for g in shape.geoms if isinstance(g, MultiPolygon) for p in g.geoms
        ]
    raise InputError(f"plan section: expected a Polygon or MultiPolygon, got {type(shape).__name__}")


def principal_axes(ixx: float, iyy: float, ixy: float) -> tuple[float, float, float]:
    """Major-axis angle from x (rad, (-pi/2, pi/2]), major and minor principal moments.

    I about an axis at angle a from x is (ixx+iyy)/2 + (ixx-iyy)/2 cos 2a - ixy sin 2a;
    its maximum lies at 2a = atan2(-2 ixy, ixx - iyy). A round (isotropic) section gives 0.
    """
    mean = 0.5 * (ixx + iyy)
    radius = math.hypot(0.5 * (ixx - iyy), ixy)
    if radius <= 1e-12 * max(abs(mean), 1e-300):
        angle = 0.0
    else:
        angle = 0.5 * math.atan2(-2.0 * ixy, ixx - iyy)
        if angle <= -math.pi / 2 + 1e-15:
            angle += math.pi
    return angle, mean + radius, mean - radius


def polygon_properties(shape: PlanShape) -> PolygonProps:
    """Area, centroid and centroidal second moments of a plan polygon (Green's theorem).

    Each ring is oriented (exterior counter-clockwise, holes clockwise) so that holes
    subtract; coordinates are shifted to the bounding-box centre first so that sections
    far from the world origin keep their precision. Overlapping parts of a MultiPolygon
    would be counted twice: pass a union (``shapely.union_all``).

    Args:
        shape: shapely Polygon or MultiPolygon (m).

    Returns:
        :class:`PolygonProps` in m^2 / m / m^4.

    Raises:
        InputError: empty or zero-area shape.

    Example: a 2 x 1 rectangle has ixx = 2 * 1^3 / 12.
    """
    polys = [p for p in _polygons_of(shape) if not p.is_empty]
    if not polys:
        raise InputError("plan section is empty")
    minx, miny, maxx, maxy = shapely.total_bounds(polys)
    ox, oy = 0.5 * (minx + maxx), 0.5 * (miny + maxy)
    a = sx = sy = sxx = syy = sxy = 0.0  # sx = integral x dA, sxx = integral x^2 dA ...
    for poly in polys:
        poly = orient(poly, sign=1.0)
        for ring in (poly.exterior, *poly.interiors):
            xy = np.asarray(ring.coords, dtype=float)
            x0, y0 = xy[:-1, 0] - ox, xy[:-1, 1] - oy
            x1, y1 = xy[1:, 0] - ox, xy[1:, 1] - oy
            c = x0 * y1 - x1 * y0
            a += c.sum() / 2.0
            sx += ((x0 + x1) * c).sum() / 6.0
            sy += ((y0 + y1) * c).sum() / 6.0
            syy += ((y0 * y0 + y0 * y1 + y1 * y1) * c).sum() / 12.0
            sxx += ((x0 * x0 + x0 * x1 + x1 * x1) * c).sum() / 12.0
            sxy += ((x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0) * c).sum() / 24.0
    if not a > 0.0:
        raise InputError("plan section has no area")
    xc, yc = sx / a, sy / a
    ixx = syy - a * yc * yc
    iyy = sxx - a * xc * xc
    ixy = sxy - a * xc * yc
    angle, i11, i22 = principal_axes(ixx, iyy, ixy)
    return PolygonProps(
        area_m2=float(a),
        centroid_m=(float(xc + ox), float(yc + oy)),
        ixx_m4=float(ixx),
        iyy_m4=float(iyy),
        ixy_m4=float(ixy),
        principal_angle_rad=float(angle),
        i11_m4=float(i11),
        i22_m4=float(i22),
    )


# ---------------------------------------------------------------------------------------
# Centre-line (thin-walled) model
# ---------------------------------------------------------------------------------------


@dataclass(frozen=True)
class WallSegment:
    """A straight piece of wall centre line with its thickness.

    Segments join where their end points coincide (within the snapping tolerance); a
    segment end lying on another segment, or two segments crossing, also makes a node.

    Attributes:
        start_m, end_m: plan end points of the centre line (m).
        thickness_m: wall thickness (m), > 0.
        slits_m: positions along the segment, from ``start_m`` (m), where the wall is cut
            through its full height (an opening without an adequate lintel): no shear
            flow passes, so no cell closes through it. One cut per centre-line element
            is made (at the first position); it is kept at least 5 % of the element
            length from the element's ends.
        tag: free label carried for reports (e.g. the wall's GlobalId).
    """

    start_m: tuple[float, float]
    end_m: tuple[float, float]
    thickness_m: float
    slits_m: tuple[float, ...] = ()
    tag: str = ""


@dataclass(frozen=True)
class ThinWalledProps:
    """Constants of a centre-line model (thin-walled theory; see the module docstring).

    Attributes:
        area_m2: sum of L t (m^2).
        centroid_m: (x, y) (m).
        ixx_m4, iyy_m4, ixy_m4: centroidal second moments, centre-line integrals (m^4).
        shear_area_x_m2, shear_area_y_m2: sum of L t cos^2 / sin^2 of the wall angle (m^2).
        j_m4: torsion constant, ``j_closed_m4 + j_open_m4`` (m^4).
        j_closed_m4: Bredt-Batho part from the closed cells (m^4).
        j_open_m4: St Venant part of the walls bounding no closed cell (m^4).
        cell_areas_m2: area enclosed by the centre line of each closed cell (m^2).
        shear_centre_m: (x, y) (m).
        warping_constant_m6: C_w for a connected open network, else None (m^6).
        n_parts: number of unconnected parts of the network.
        n_elements: number of centre-line elements after noding and cutting.
    """

    area_m2: float
    centroid_m: tuple[float, float]
    ixx_m4: float
    iyy_m4: float
    ixy_m4: float
    shear_area_x_m2: float
    shear_area_y_m2: float
    j_m4: float
    j_closed_m4: float
    j_open_m4: float
    cell_areas_m2: tuple[float, ...]
    shear_centre_m: tuple[float, float]
    warping_constant_m6: float | None
    n_parts: int
    n_elements: int

    @property
    def n_cells(self) -> int:
        """Number of cells acting closed."""
        return len(self.cell_areas_m2)

    @property
    def closed(self) -> bool:
        return bool(self.cell_areas_m2)


@dataclass
class _Net:
    """Noded centre-line network in local coordinates (origin ``ref``)."""

    xy: np.ndarray  # (n_nodes, 2)
    a: np.ndarray  # (n_el,) start node
    b: np.ndarray  # (n_el,) end node
    t: np.ndarray  # (n_el,)
    cut: np.ndarray  # (n_el,) bool: piece of an element cut by a slit
    ref: tuple[float, float]


def _snap(points: list[tuple[float, float]], tol: float) -> tuple[np.ndarray, list[int]]:
    """Cluster points closer than ``tol`` (union-find); return node coords and point->node."""
    pts = np.asarray(points, dtype=float)
    parent = list(range(len(pts)))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    tree = shapely.STRtree(shapely.points(pts))
    pairs = tree.query(shapely.points(pts), predicate="dwithin", distance=tol)
    for i, j in zip(pairs[0], pairs[1]):
        ri, rj = find(int(i)), find(int(j))
        if ri != rj:
            parent[max(ri, rj)] = min(ri, rj)
    roots: dict[int, int] = {}
    index: list[int] = []
    coords: list[np.ndarray] = []
    for i in range(len(pts)):
        r = find(i)
        if r not in roots:
            roots[r] = len(coords)
            coords.append(pts[r])
        index.append(roots[r])
    return np.asarray(coords, dtype=float).reshape(-1, 2), index


def _build_network(segments: Sequence[WallSegment], snap_tol_m: float) -> _Net:
    if not segments:
        raise InputError("thin-walled section: no wall segments")
    for s in segments:
        length = math.dist(s.start_m, s.end_m)
        if not (s.thickness_m > 0.0 and math.isfinite(s.thickness_m)):
            raise InputError(f"thin-walled section: wall segment {s.tag or s.start_m} has thickness {s.thickness_m!r} m")
        if not (length > 0.0 and math.isfinite(length)):
            raise InputError(f"thin-walled section: wall segment {s.tag or s.start_m} has no length")
    allpts = [p for s in segments for p in (s.start_m, s.end_m)]
    ref = (float(np.mean([p[0] for p in allpts])), float(np.mean([p[1] for p in allpts])))
    p0 = np.array([[s.start_m[0] - ref[0], s.start_m[1] - ref[1]] for s in segments])
    p1 = np.array([[s.end_m[0] - ref[0], s.end_m[1] - ref[1]] for s in segments])
    nseg = len(segments)
    lengths = np.hypot(*(p1 - p0).T)
    # split parameters (0..1) along each segment: its ends, other segments' ends lying on
    # it, and proper crossings
    params: list[list[float]] = [[0.0, 1.0] for _ in range(nseg)]
    for i in range(nseg):
        d = p1[i] - p0[i]
        for j in range(nseg):
            if i == j:
                continue
            for q in (p0[j], p1[j]):
                u = float(np.dot(q - p0[i], d) / (lengths[i] ** 2))
                if 0.0 < u < 1.0:
                    foot = p0[i] + u * d
                    if math.dist(foot, q) <= snap_tol_m:
                        params[i].append(u)
            if j > i:
                e = p1[j] - p0[j]
                den = d[0] * e[1] - d[1] * e[0]
                if abs(den) > 1e-12 * lengths[i] * lengths[j]:
                    w = p0[j] - p0[i]
                    u = (w[0] * e[1] - w[1] * e[0]) / den
                    v = (w[0] * d[1] - w[1] * d[0]) / den
                    if 0.0 < u < 1.0 and 0.0 < v < 1.0:
                        params[i].append(float(u))
                        params[j].append(float(v))
    raw_pts: list[tuple[float, float]] = []
    raw_el: list[tuple[int, int, int]] = []  # (point index a, point index b, segment)
    for i in range(nseg):
        us = sorted(set(params[i]))
        for k in range(len(us) - 1):
            pa = p0[i] + us[k] * (p1[i] - p0[i])
            pb = p0[i] + us[k + 1] * (p1[i] - p0[i])
            raw_pts.extend([tuple(pa), tuple(pb)])
            raw_el.append((len(raw_pts) - 2, len(raw_pts) - 1, i))
    xy, index = _snap(raw_pts, snap_tol_m)
    # merge duplicate elements (collinear overlapping walls): thicknesses add
    merged: dict[tuple[int, int], list] = {}
    for pa, pb, i in raw_el:
        na, nb = index[pa], index[pb]
        if na == nb:
            continue
        key = (min(na, nb), max(na, nb))
        if key in merged:
            merged[key][2] += segments[i].thickness_m
            merged[key][3].append(i)
        else:
            merged[key] = [na, nb, segments[i].thickness_m, [i]]
    nodes = [tuple(p) for p in xy]
    a_l: list[int] = []
    b_l: list[int] = []
    t_l: list[float] = []
    cut_l: list[bool] = []
    for na, nb, t, segs in merged.values():
        # a slit cuts this element if its position along the parent segment falls inside
        cut_at: float | None = None
        for i in segs:
            d = p1[i] - p0[i]
            ua = float(np.dot(np.asarray(nodes[na]) - p0[i], d) / lengths[i] ** 2)
            ub = float(np.dot(np.asarray(nodes[nb]) - p0[i], d) / lengths[i] ** 2)
            lo, hi = min(ua, ub), max(ua, ub)
            for s in segments[i].slits_m:
                u = s / lengths[i]
                if lo - 1e-12 <= u <= hi + 1e-12 and hi > lo:
                    frac = (u - ua) / (ub - ua)
                    cut_at = min(max(frac, 0.05), 0.95)
                    break
            if cut_at is not None:
                break
        if cut_at is None:
            a_l.append(na)
            b_l.append(nb)
            t_l.append(t)
            cut_l.append(False)
        else:
            pc = tuple(np.asarray(nodes[na]) + cut_at * (np.asarray(nodes[nb]) - np.asarray(nodes[na])))
            nodes.append(pc)
            c1 = len(nodes) - 1
            nodes.append(pc)
            c2 = len(nodes) - 1
            a_l += [na, c2]
            b_l += [c1, nb]
            t_l += [t, t]
            cut_l += [True, True]
    if not a_l:
        raise InputError(
            f"thin-walled section: the wall segments ({', '.join(sorted({s.tag for s in segments if s.tag})) or 'untagged'})"
            f" are all shorter than the snapping tolerance {snap_tol_m} m"
        )
    return _Net(
        xy=np.asarray(nodes, dtype=float),
        a=np.asarray(a_l, dtype=int),
        b=np.asarray(b_l, dtype=int),
        t=np.asarray(t_l, dtype=float),
        cut=np.asarray(cut_l, dtype=bool),
        ref=ref,
    )


def _line_moments(xa, ya, xb, yb, w):
    """Integrals along straight elements (weights w = t), summed: A, Sx, Sy, Ixx, Iyy, Ixy
    about the local origin (Ixx = integral of y^2)."""
    length = np.hypot(xb - xa, yb - ya)
    m = w * length
    area = m.sum()
    sx = (m * (xa + xb) / 2).sum()
    sy = (m * (ya + yb) / 2).sum()
    ixx = (m * (ya * ya + ya * yb + yb * yb) / 3).sum()
    iyy = (m * (xa * xa + xa * xb + xb * xb) / 3).sum()
    ixy = (m * (2 * xa * ya + xa * yb + xb * ya + 2 * xb * yb) / 6).sum()
    return area, sx, sy, ixx, iyy, ixy


def _cells(xy: np.ndarray, a: np.ndarray, b: np.ndarray, els: np.ndarray, cut: np.ndarray) -> tuple[list[float], list[set[int]]]:
    """Closed cells of a connected part: bounded faces of its uncut elements.

    Returns the enclosed areas and, per cell, the set of element indices on its boundary.
    """
    uncut = [e for e in els if not cut[e]]
    if len(uncut) < 3:
        return [], []
    lines = [LineString([xy[a[e]], xy[b[e]]]) for e in uncut]
    faces = [f for f in shapely.get_parts(shapely.polygonize(lines)) if f.area > 0.0]
    if not faces:
        return [], []
    areas: list[float] = []
    bounds: list[set[int]] = []
    mids = shapely.points(0.5 * (xy[a[uncut]] + xy[b[uncut]]))
    for f in faces:
        ring = Polygon(f.exterior)
        scale = math.sqrt(ring.area)
        on = shapely.dwithin(mids, f.exterior, 1e-9 * max(scale, 1.0))
        bounds.append({uncut[k] for k in np.flatnonzero(on)})
        areas.append(float(ring.area))
    return areas, bounds


def _bredt(lt: np.ndarray, areas: list[float], bounds: list[set[int]]) -> float:
    """Multi-cell Bredt-Batho torsion constant (unit G and unit rate of twist)."""
    m = len(areas)
    f = np.zeros((m, m))
    for i in range(m):
        for e in bounds[i]:
            f[i, i] += lt[e]
        for j in range(m):
            if j != i:
                f[i, j] -= sum(lt[e] for e in bounds[i] & bounds[j])
    am = np.asarray(areas)
    q = np.linalg.solve(f, 2.0 * am)
    return float(2.0 * am @ q)


def _shear_centre(xy: np.ndarray, a: np.ndarray, b: np.ndarray, t: np.ndarray, els: np.ndarray) -> tuple[float, float] | None:
    """Shear centre of a connected part, in the coordinates of ``xy`` (see module docstring).

    Returns None when the part has no bending stiffness in some direction (all elements
    on one line).
    """
    nodes = sorted({int(n) for n in a[els]} | {int(n) for n in b[els]})
    col = {n: k for k, n in enumerate(nodes)}
    xa, ya = xy[a[els], 0], xy[a[els], 1]
    xb, yb = xy[b[els], 0], xy[b[els], 1]
    tt = t[els]
    area, sx, sy, ixx, iyy, ixy = _line_moments(xa, ya, xb, yb, tt)
    xc, yc = sx / area, sy / area
    ixx -= area * yc * yc
    iyy -= area * xc * xc
    ixy -= area * xc * yc
    if ixx * iyy - ixy * ixy <= 1e-9 * max(ixx, iyy) ** 2:
        return None
    xa, xb, ya, yb = xa - xc, xb - xc, ya - yc, yb - yc
    dx, dy = xb - xa, yb - ya
    length = np.hypot(dx, dy)
    ne = len(els)
    # cycles of this part (node lists), for the zero-twist conditions
    g = nx.Graph()
    edge_of: dict[tuple[int, int], int] = {}
    for k, e in enumerate(els):
        g.add_edge(int(a[e]), int(b[e]))
        edge_of[(int(a[e]), int(b[e]))] = k
    cycles = nx.cycle_basis(g)
    nrows = len(nodes) + len(cycles)
    mat = np.zeros((nrows, ne))
    for k, e in enumerate(els):
        mat[col[int(a[e])], k] += 1.0  # flow leaving node a
        mat[col[int(b[e])], k] -= 1.0  # flow arriving at node b
    for r, cyc in enumerate(cycles):
        for u, v in zip(cyc, cyc[1:] + cyc[:1]):
            if (u, v) in edge_of:
                mat[len(nodes) + r, edge_of[(u, v)]] += length[edge_of[(u, v)]] / tt[edge_of[(u, v)]]
            else:
                k = edge_of[(v, u)]
                mat[len(nodes) + r, k] -= length[k] / tt[k]
    results = []
    for cx, cy in ((1.0, 0.0), (0.0, 1.0)):
        # q(s) = q_a - t * integral_0^s (cx x + cy y) ds ; drop from a to b over the element:
        drop = tt * length * (cx * (xa + xb) / 2 + cy * (ya + yb) / 2)
        rhs = np.zeros(nrows)
        for k, e in enumerate(els):
            rhs[col[int(b[e])]] -= drop[k]  # node b: sum(q_a out) - sum(q_a in) = -sum(drop in)
        # integral of q/t over the element = q_a L/t - (cx (xa L^2/2 + dx L^2/6) + cy (...))
        twist = cx * (xa * length**2 / 2 + dx * length**2 / 6) + cy * (ya * length**2 / 2 + dy * length**2 / 6)
        for r, cyc in enumerate(cycles):
            for u, v in zip(cyc, cyc[1:] + cyc[:1]):
                if (u, v) in edge_of:
                    rhs[len(nodes) + r] += twist[edge_of[(u, v)]]
                else:
                    rhs[len(nodes) + r] -= twist[edge_of[(v, u)]]
        qa = np.linalg.lstsq(mat, rhs, rcond=None)[0]
        # integral of q over each element and its resultant force and moment about the centroid
        qint = qa * length - tt * twist
        fx = float((qint * dx / length).sum())
        fy = float((qint * dy / length).sum())
        mz = float((qint * (xa * dy - ya * dx) / length).sum())
        results.append((fx, fy, mz))
    (fx1, fy1, m1), (fx2, fy2, m2) = results
    basis = np.array([[fx1, fx2], [fy1, fy2]])
    if not abs(np.linalg.det(basis)) > 1e-12 * max(float(np.abs(basis).max()), 1e-300) ** 2:
        return None
    # combination giving a unit force in y, then in x
    ay = np.linalg.solve(basis, [0.0, 1.0])
    ax = np.linalg.solve(basis, [1.0, 0.0])
    xs = ay[0] * m1 + ay[1] * m2  # moment of a unit y-force at xs about the centroid = xs
    ys = -(ax[0] * m1 + ax[1] * m2)  # moment of a unit x-force at ys = -ys
    return float(xs + xc), float(ys + yc)


def _warping_constant(xy: np.ndarray, a: np.ndarray, b: np.ndarray, t: np.ndarray, els: np.ndarray, sc: tuple[float, float]) -> float:
    """C_w of a connected open (tree) part: integral of (omega - mean omega)^2 t ds, pole at sc."""
    g = nx.Graph()
    for k, e in enumerate(els):
        g.add_edge(int(a[e]), int(b[e]), k=k)
    root = int(a[els[0]])
    omega = {root: 0.0}
    for u, v in nx.bfs_edges(g, root):
        (xu, yu), (xv, yv) = xy[u] - sc, xy[v] - sc
        omega[v] = omega[u] + xu * yv - yu * xv
    wa = np.array([omega[int(n)] for n in a[els]])
    wb = np.array([omega[int(n)] for n in b[els]])
    length = np.hypot(*(xy[b[els]] - xy[a[els]]).T)
    m = t[els] * length
    mean = float((m * (wa + wb) / 2).sum() / m.sum())
    wa, wb = wa - mean, wb - mean
    return float((m * (wa * wa + wa * wb + wb * wb) / 3).sum())


def thin_walled_properties(
    segments: Sequence[WallSegment],
    *,
    torsion_cells: bool = True,
    free_end_correction: bool = False,
    snap_tol_m: float = 1e-3,
) -> ThinWalledProps:
    """Thin-walled constants of a wall group given by centre-line segments.

    Args:
        segments: centre-line pieces with thickness (m); see :class:`WallSegment`.
        torsion_cells: False makes every cell act open for torsion (St Venant for all
            walls); the shear centre still uses the closed topology.
        free_end_correction: subtract 0.105 t^4 per free end from the St Venant part
            (the (1 - 0.63 t/b) refinement of a single rectangle); off by default so that
            ``J = sum b t^3 / 3`` exactly.
        snap_tol_m: end points closer than this are one node (m); pieces shorter than
            this vanish.

    Returns:
        :class:`ThinWalledProps` (m, m^2, m^4, m^6).

    Raises:
        InputError: no segments, a segment with no length or thickness, or nothing left
            after snapping.
    """
    net = _build_network(segments, snap_tol_m)
    xy, a, b, t = net.xy, net.a, net.b, net.t
    xa, ya, xb, yb = xy[a, 0], xy[a, 1], xy[b, 0], xy[b, 1]
    length = np.hypot(xb - xa, yb - ya)
    area, sx, sy, ixx, iyy, ixy = _line_moments(xa, ya, xb, yb, t)
    xc, yc = sx / area, sy / area
    ixx -= area * yc * yc
    iyy -= area * xc * xc
    ixy -= area * xc * yc
    cos2 = ((xb - xa) / length) ** 2
    as_x = float((length * t * cos2).sum())
    as_y = float((length * t * (1.0 - cos2)).sum())
    lt = length / t

    g = nx.Graph()
    g.add_nodes_from(range(len(xy)))
    for e in range(len(a)):
        g.add_edge(int(a[e]), int(b[e]))
    degree = dict(g.degree())
    parts = [sorted(c) for c in nx.connected_components(g) if len(c) > 1]
    el_part = {}
    node_part = {n: k for k, c in enumerate(parts) for n in c}
    for e in range(len(a)):
        el_part.setdefault(node_part[int(a[e])], []).append(e)

    j_closed = 0.0
    cell_areas: list[float] = []
    in_cell = np.zeros(len(a), dtype=bool)
    centres: list[tuple[float, float, float, float]] = []  # (xs, ys, ixx, iyy) per part
    open_tree = True
    for k in range(len(parts)):
        els = np.asarray(el_part[k], dtype=int)
        areas, bounds = _cells(xy, a, b, els, net.cut) if torsion_cells else ([], [])
        if areas:
            j_closed += _bredt(lt, areas, bounds)
            cell_areas.extend(areas)
            for bset in bounds:
                in_cell[list(bset)] = True
        if len(els) >= len({int(n) for n in a[els]} | {int(n) for n in b[els]}):
            open_tree = False  # the part has a cycle (even if cells act open for torsion)
        sc = _shear_centre(xy, a, b, t, els)
        pa, psx, psy, pixx, piyy, pixy = _line_moments(xy[a[els], 0], xy[a[els], 1], xy[b[els], 0], xy[b[els], 1], t[els])
        pxc, pyc = psx / pa, psy / pa
        if sc is None:
            sc = (pxc, pyc)
        centres.append((sc[0], sc[1], pixx - pa * pyc * pyc, piyy - pa * pxc * pxc))

    j_open_terms = length * t**3 / 3.0
    if free_end_correction:
        for e in range(len(a)):
            for n in (int(a[e]), int(b[e])):
                if degree[n] == 1:
                    j_open_terms[e] -= FREE_END_COEFF * t[e] ** 4
        # stubby pieces (b/t < 2, outside the refinement's range): not below the exact
        # value for a square, 0.1406 a b^3 (methods.md s.9 series, b/t = 1)
        short, long_ = np.minimum(length, t), np.maximum(length, t)
        j_open_terms = np.maximum(j_open_terms, SQUARE_J_COEFF * long_ * short**3)
    j_open = float(j_open_terms[~in_cell].sum())

    if len(centres) == 1:
        xs, ys = centres[0][0], centres[0][1]
    else:
        wx = sum(c[2] for c in centres)
        wy = sum(c[3] for c in centres)
        xs = sum(c[0] * c[2] for c in centres) / wx if wx > 0 else xc
        ys = sum(c[1] * c[3] for c in centres) / wy if wy > 0 else yc
    cw: float | None = None
    if len(parts) == 1 and open_tree:
        cw = _warping_constant(xy, a, b, t, np.arange(len(a)), (xs, ys))
    rx, ry = net.ref
    return ThinWalledProps(
        area_m2=float(area),
        centroid_m=(float(xc + rx), float(yc + ry)),
        ixx_m4=float(ixx),
        iyy_m4=float(iyy),
        ixy_m4=float(ixy),
        shear_area_x_m2=as_x,
        shear_area_y_m2=as_y,
        j_m4=j_closed + j_open,
        j_closed_m4=j_closed,
        j_open_m4=j_open,
        cell_areas_m2=tuple(cell_areas),
        shear_centre_m=(float(xs + rx), float(ys + ry)),
        warping_constant_m6=cw,
        n_parts=len(parts),
        n_elements=len(a),
    )


def section_props(
    segments: Sequence[WallSegment],
    plan: PlanShape | None = None,
    *,
    torsion_cells: bool = True,
    free_end_correction: bool = False,
    snap_tol_m: float = 1e-3,
) -> SectionProps:
    """Gross :class:`~swayscreen.pipeline.stick.SectionProps` of a wall or core.

    Area, centroid, second moments and principal angle come from ``plan`` (the union of
    the wall footprints) when given, else from the centre-line model; shear areas, the
    torsion constants (J and the warping constant C_w) and the shear centre always come
    from the centre-line model (see
    :func:`thin_walled_properties` for the keyword arguments). No cracked-section
    factors are applied.
    """
    tw = thin_walled_properties(
        segments, torsion_cells=torsion_cells, free_end_correction=free_end_correction, snap_tol_m=snap_tol_m
    )
    return combine_section(tw, plan)


def combine_section(tw: ThinWalledProps, plan: PlanShape | None = None) -> SectionProps:
    """:class:`~swayscreen.pipeline.stick.SectionProps` from a centre-line result and,
    optionally, the plan polygon (which then gives area, centroid and bending).

    Torsion (``j_m4``, ``cw_m6``), shear areas and shear centre always come from the
    centre-line result; ``cw_m6`` is C_w about the shear centre for a single connected
    open network and 0 otherwise (see :func:`_section_cw`)."""
    if plan is not None:
        pp = polygon_properties(plan)
        area, centroid = pp.area_m2, pp.centroid_m
        ixx, iyy, ixy, angle = pp.ixx_m4, pp.iyy_m4, pp.ixy_m4, pp.principal_angle_rad
    else:
        area, centroid = tw.area_m2, tw.centroid_m
        ixx, iyy, ixy = tw.ixx_m4, tw.iyy_m4, tw.ixy_m4
        angle = principal_axes(ixx, iyy, ixy)[0]
    return SectionProps(
        area_m2=area,
        centroid_m=centroid,
        ixx_m4=ixx,
        iyy_m4=iyy,
        ixy_m4=ixy,
        principal_angle_rad=angle,
        shear_area_x_m2=tw.shear_area_x_m2,
        shear_area_y_m2=tw.shear_area_y_m2,
        j_m4=tw.j_m4,
        shear_centre_m=tw.shear_centre_m,
        closed=tw.closed,
        cw_m6=_section_cw(tw),
    )


def _section_cw(tw: ThinWalledProps) -> float:
    """The warping constant a :class:`SectionProps` carries (m^6), about the shear centre.

    Only a single connected open (tree) network has one (``warping_constant_m6``); 0 for
    closed cells (Bredt-Batho: warping of a closed cell is negligible against its St Venant
    stiffness), for networks with a cycle taken open, and for walls in several unconnected
    parts. For the last, the group's C_w about its common shear centre is not the sum of
    the parts' own C_w about their own shear centres (about a common pole the sectorial
    coordinates also hold the parts' translations, which the group's bending constants
    already represent, and the result depends on how the parts are coupled); rather than
    model that, no warping term is claimed: the simple choice on the safe side (lower
    torsional stiffness, longer torsional period).
    """
    cw = tw.warping_constant_m6
    if cw is None or tw.closed or tw.n_parts != 1 or not (math.isfinite(cw) and cw > 0.0):
        return 0.0
    # sections whose walls all meet in one point (a single wall, an L, a T, a cross) have
    # C_w = 0 in thin-walled theory; the sum leaves round-off of order 1e-16 of the scale
    # (I_p^2 / A, m^6) there, which must not count as a warping stiffness
    ip = tw.ixx_m4 + tw.iyy_m4
    if cw <= _CW_NEGLIGIBLE * ip * ip / tw.area_m2:
        return 0.0
    return float(cw)
