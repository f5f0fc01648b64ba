"""Caches and vectorised paths give the results of the plain computation.

The speed-ups of issue 8 reuse work between storeys with the same geometry (sections,
column springs, slab fields), share one stiffness matrix and factorisation per stick model,
and compute plan moments of many shapes in one numpy pass. Each test here compares the
cached or vectorised result with the same function run without it (a self-consistency
check: the reference is our own uncached code path, whose numbers the other test modules
check against outside sources), plus one closed form from the handbooks.
"""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import given, settings as hsettings, strategies as st
from scipy.linalg import cho_solve
from shapely.geometry import GeometryCollection, LineString, MultiPolygon, Polygon, box

from swayscreen.pipeline.assembly import mass_matrix, stiffness_factor, stiffness_matrix
from swayscreen.pipeline.core_settings import CORE_SECTIONS, StiffnessSettings
from swayscreen.pipeline import cores
from swayscreen.pipeline.cores import _find_systems, find_systems_by_storey
from swayscreen.pipeline.deriving import derive_stick
from swayscreen.pipeline.plan_moments import area_moments, area_moments_many
from swayscreen.pipeline.settings import load_settings
from swayscreen.pipeline.stiffness import ColumnInput, SlabField, column_springs
from swayscreen.pipeline.takeoff import BuildingTakeoff, Column, Material, Slab, Storey, Wall, WallOpening

CONCRETE = Material("Concrete C40/50", "concrete")
H = 3.5


def wall(gid: str, p, q, t: float = 0.4, z0: float = 0.0, openings=()) -> Wall:
    (x0, y0), (x1, y1) = p, q
    length = math.hypot(x1 - x0, y1 - y0)
    fp = LineString([p, q]).buffer(t / 2, cap_style="flat", join_style="mitre")
    return Wall(gid, gid, (p, q), length, t, H, z0, fp, tuple(openings), True, CONCRETE)


# A C core open to the east (a door-free channel) and a box core with a door in its south wall
CHANNEL = [((0.0, 0.0), (6.0, 0.0)), ((0.0, 0.0), (0.0, 8.0)), ((0.0, 8.0), (6.0, 8.0))]
BOX = [((20.0, 0.0), (28.0, 0.0)), ((28.0, 0.0), (28.0, 6.0)), ((28.0, 6.0), (20.0, 6.0)), ((20.0, 6.0), (20.0, 0.0))]


def storey(k: int, *, door: bool, ids_reversed: bool, shift: float = 0.0) -> Storey:
    z = H * k
    walls = [wall(f"C{k}-{i}", (p[0] + shift, p[1]), (q[0] + shift, q[1]), z0=z) for i, (p, q) in enumerate(CHANNEL)]
    for i, (p, q) in enumerate(BOX):
        ops = (WallOpening(3.0, 4.0, 0.0, H, f"D{k}"),) if door and i == 0 else ()  # no lintel: cuts the cell
        walls.append(wall(f"B{k}-{i}", p, q, z0=z, openings=ops))
    if ids_reversed:  # the same walls listed (and named) in another order: the memo key ignores order
        walls = [dataclasses.replace(w, global_id=f"z{99 - j}-{w.global_id}") for j, w in enumerate(reversed(walls))]
    return Storey(f"ST{k}", f"L{k}", z, H, True, walls=tuple(walls))


def _same_section(a, b) -> None:
    for f in dataclasses.fields(a):
        va, vb = getattr(a, f.name), getattr(b, f.name)
        if isinstance(va, tuple):
            assert va == pytest.approx(vb, rel=1e-12, abs=1e-12), f.name
        elif isinstance(va, float):
            assert va == pytest.approx(vb, rel=1e-12, abs=1e-12), f.name
        else:
            assert va == vb, f.name


def test_memoised_core_sections_equal_per_storey_computation(monkeypatch) -> None:
    """Sections reused over storeys equal the sections computed storey by storey without the memo;
    notes still name each storey's own door (the memo holds geometry only)."""
    calls = []
    original = cores._system_geometry
    monkeypatch.setattr(cores, "_system_geometry", lambda *a: calls.append(a) or original(*a))
    storeys = [storey(0, door=False, ids_reversed=False), storey(1, door=True, ids_reversed=False),
               storey(2, door=False, ids_reversed=True), storey(3, door=True, ids_reversed=True),
               storey(4, door=False, ids_reversed=False, shift=0.5)]  # the channel moved: a new geometry
    stiff = StiffnessSettings()
    by_storey, _, _ = find_systems_by_storey(storeys, stiff, include_spanning_walls=False)
    # four geometries: the channel, the shifted channel, the box with and without the door cut
    assert len(calls) == 4
    for st_ in storeys:
        plain, _, _ = _find_systems(list(st_.walls), stiff)  # no memo
        cached = by_storey[st_.global_id]
        assert len(plain) == len(cached) == 2
        by_walls = {s.wall_ids: s for s in plain}
        for s in cached:
            ref = by_walls[s.wall_ids]
            _same_section(s.section, ref.section)
            assert s.closed == ref.closed and s.note == ref.note
            assert s.plan.symmetric_difference(ref.plan).area < 1e-12
    door_notes = [s.note for s in by_storey["ST3"] if "cut" in s.note]
    assert door_notes and "D3" in door_notes[0] and "D1" not in door_notes[0]
    closed = {k: sorted(s.closed for s in v) for k, v in by_storey.items()}
    assert closed["ST0"] == [False, True] and closed["ST1"] == [False, False]  # the door opens the box


def test_column_spring_cache_fills_ids_and_names_per_call() -> None:
    cols = [ColumnInput(f"c{i}", box(x - 0.4, y - 0.4, x + 0.4, y + 0.4), 34e9)
            for i, (x, y) in enumerate([(0, 0), (8, 0), (0, 8), (8, 8), (16, 0)])]
    top = SlabField([(box(-5, -5, 25, 15), 0.25, 34e9)])
    stiff = StiffnessSettings()
    cache: dict = {}
    kw = dict(length_m=3.5, top=top, bottom=top, fixed_base=False, walls=None, stiffness=stiff)
    first = column_springs(cols, level_index=3, storey="L3", cache=cache, **kw)
    renamed = [dataclasses.replace(c, global_id=f"x{c.global_id}") for c in cols]
    again = column_springs(renamed, level_index=4, storey="L4", cache=cache, **kw)
    plain = column_springs(renamed, level_index=4, storey="L4", **kw)
    assert len(cache) == 1  # the second storey was a hit
    assert again == plain
    assert [s.global_id for s in again[0]] == [c.global_id for c in renamed]
    assert again[1].level_index == 4 and again[1].storey == "L4"
    # another storey height reuses the plan work; the springs follow the height
    taller = column_springs(cols, level_index=5, storey="L5", cache=cache, **{**kw, "length_m": 4.2})
    assert len(cache) == 1
    assert taller == column_springs(cols, level_index=5, storey="L5", **{**kw, "length_m": 4.2})
    assert taller[0][0].k_x_n_m < first[0][0].k_x_n_m


def test_area_moments_of_a_rectangle_closed_form() -> None:
    """b x h rectangle about its centroid: I = b h^3 / 12 (any structural handbook, e.g. Roark's
    Formulas for Stress and Strain, Table A.1, case 1)."""
    b, h = 3.0, 5.0
    (m,) = area_moments_many([box(10.0, 20.0, 10.0 + b, 20.0 + h)], (11.0, 22.0))
    i_xx, i_yy, i_xy = m.central()
    assert m.a == pytest.approx(b * h, rel=1e-14)
    assert i_xx == pytest.approx(b * h**3 / 12, rel=1e-12)
    assert i_yy == pytest.approx(h * b**3 / 12, rel=1e-12)
    assert abs(i_xy) < 1e-12


rects = st.tuples(st.floats(-50, 50), st.floats(-50, 50), st.floats(0.1, 20), st.floats(0.1, 20))


@hsettings(max_examples=60, deadline=None, derandomize=True)
@given(st.lists(rects, min_size=1, max_size=6), st.tuples(st.floats(-100, 100), st.floats(-100, 100)))
def test_area_moments_many_equals_area_moments_bitwise(rs, ref) -> None:
    shapes = []
    for x, y, w, h in rs:
        r = box(x, y, x + w, y + h)
        shapes.append(r)
        shapes.append(Polygon(list(r.exterior.coords)[::-1]))  # clockwise exterior
        shapes.append(r.difference(box(x + w / 4, y + h / 4, x + w / 2, y + h / 2)))  # with a hole
    shapes.append(MultiPolygon([s for s in shapes if isinstance(s, Polygon)][:2]))
    shapes += [None, Polygon(), GeometryCollection([shapes[0], LineString([(0, 0), (1, 1)])])]
    many = area_moments_many(shapes, ref)
    assert many == [area_moments(s, ref) for s in shapes]


def _tower(n: int) -> BuildingTakeoff:
    storeys = []
    for k in range(n):
        z = H * k
        sl = (Slab(f"S{k}", f"S{k}", box(-10, -10, 40, 20), 0.25, z, material=CONCRETE),)
        ws = tuple(wall(f"W{k}-{i}", p, q, z0=z) for i, (p, q) in enumerate(CHANNEL + BOX))
        cs = tuple(Column(f"K{k}-{i}", f"K{k}-{i}", box(x - 0.4, y - 0.4, x + 0.4, y + 0.4), H, z, CONCRETE)
                   for i, (x, y) in enumerate([(-8, -8), (38, -8), (-8, 18), (38, 18)]))
        storeys.append(Storey(f"ST{k}", f"L{k}", z, H, True, sl, ws, cs))
    roof = (Slab("SR", "SR", box(-10, -10, 40, 20), 0.25, H * n, "ROOF", material=CONCRETE),)
    storeys.append(Storey(f"ST{n}", "Roof", H * n, H, True, roof))
    return BuildingTakeoff("B1", "Memo tower", tuple(storeys))


def test_stiffness_memo_returns_fresh_copies_and_a_matching_factor() -> None:
    stick = derive_stick(_tower(8), load_settings(None, CORE_SECTIONS)).stick
    assert stick is not None
    k1 = stiffness_matrix(stick)
    k1[0, 0] = -1.0  # the caller's copy: the memo must not see this
    k2 = stiffness_matrix(stick)
    assert k2[0, 0] > 0
    twin = dataclasses.replace(stick)  # an equal model, another object: assembled afresh
    assert twin is not stick
    np.testing.assert_array_equal(stiffness_matrix(twin), k2)
    kp = stiffness_matrix(stick, p_delta=True)
    assert np.all(np.diag(kp) <= np.diag(k2))  # P-Delta softens (a separate memo entry)
    f = mass_matrix(stick) @ np.tile([1.0, 0.5, 0.0], stick.n_levels)
    u = cho_solve(stiffness_factor(stick), f)
    np.testing.assert_allclose(k2 @ u, f, rtol=1e-9, atol=1e-9 * np.abs(f).max())
