"""Deriving survives odd but valid plan geometry (issue 9 follow-up).

Wall footprints with coordinates of round-off size (subnormal numbers such as 2e-313 m) and
nearly coincident edges make GEOS's overlay fail with ``TopologyException`` in the union
of a core's footprints. :mod:`swayscreen.pipeline.plan_ops` retries such overlays on copies
rounded to a 1e-9 m grid; what still cannot be computed ends as a warning for that storey or
element. The checks: the robust union gives the closed-form area, the retry path is taken
when GEOS fails, and a tower holding such walls still gets the closed-form section of its
regular core (hollow square, I = (B^4 - b^4) / 12) with warnings instead of a traceback.
"""
from __future__ import annotations

import math

import pytest
import shapely
from hypothesis import example, given, settings as hsettings, strategies as st
from shapely import wkt
from shapely.errors import GEOSException
from shapely.geometry import LineString, Polygon, box

from swayscreen.pipeline import plan_ops
from swayscreen.pipeline.core_settings import CORE_SECTIONS
from swayscreen.pipeline.deriving import DerivedModel, derive_stick
from swayscreen.pipeline.materials import concrete_modulus_pa
from swayscreen.pipeline.plan_ops import PlanGeometryError, robust_union
from swayscreen.pipeline.settings import load_settings
from swayscreen.pipeline.takeoff import BuildingTakeoff, Material, Slab, Storey, Wall

CONCRETE = Material("Concrete C40/50", "concrete")
E = concrete_modulus_pa("C40/50")  # EN 1992-1-1 Table 3.1, 35.22 GPa
H = 3.5

# Found by a randomised search: two valid footprints whose union GEOS 3.x cannot node
# ("found non-noded intersection"). A is the triangle (1, 0), (1, 0.5), (0.5, 0.5) with a
# zero-width spike along the diagonal to (0, 1); B is a sliver 1e-300 m wide.
SPIKE = wkt.loads("POLYGON ((2e-313 1, 1 -2e-313, 1 0.5, 0.5 0.5, 2e-313 1))")
SLIVER = wkt.loads("POLYGON ((5.99999999993e-313 1, 1e-300 2e-313, 3.99999999995e-313 2e-313, 5e-324 1, "
                   "5.99999999993e-313 1))")
TRIANGLE_AREA = 0.5 * 0.5 * 0.5  # 1/2 base x height of the triangle left of SPIKE (closed form)

# the 10 x 10 m (centre line) box core t = 0.4 m of tests/test_deriving.py: the union is the
# square ring 10.4 / 9.6 m
BOX_CORE = [((14.8, 15), (25.2, 15)), ((25, 15.2), (25, 24.8)), ((25.2, 25), (14.8, 25)), ((15, 24.8), (15, 15.2))]
I_BOX = (10.4 ** 4 - 9.6 ** 4) / 12  # hollow square, gross section (closed form)


def _wall(gid: str, p, q, t: float, z0: float, footprint=None) -> Wall:
    fp = footprint if footprint is not None else LineString([p, q]).buffer(t / 2, cap_style="flat", join_style="mitre")
    return Wall(gid, gid, (p, q), math.dist(p, q), t, H, z0, fp, (), True, CONCRETE)


def _tower(odd: list[tuple[Polygon, tuple]], n: int = 3) -> BuildingTakeoff:
    """A 40 x 40 m tower with the box core and, on every storey, walls with the footprints ``odd``
    (footprint, axis) near the plan origin, far from the core."""
    storeys = []
    for k in range(n):
        z = H * k
        walls = [_wall(f"W{k}-{i}", p, q, 0.4, z) for i, (p, q) in enumerate(BOX_CORE)]
        walls += [_wall(f"X{k}-{i}", axis[0], axis[1], 0.2, z, fp) for i, (fp, axis) in enumerate(odd)]
        slab = Slab(f"S{k}", f"S{k}", box(0, 0, 40, 40), 0.25, z, material=CONCRETE)
        storeys.append(Storey(f"ST{k}", f"L{k}", z, H, True, (slab,), tuple(walls)))
    roof = Slab("SR", "SR", box(0, 0, 40, 40), 0.25, H * n, "ROOF", material=CONCRETE)
    storeys.append(Storey(f"ST{n}", "Roof", H * n, H, True, (roof,)))
    return BuildingTakeoff("B1", "Odd walls tower", tuple(storeys))


def _plain_union_fails(shapes) -> bool:
    try:
        shapely.union_all(shapes)
    except GEOSException:
        return True
    return False


def _box_core_segments(d: DerivedModel) -> list:
    return [s for s in d.stick.segments if s.kind == "core" and s.centre_m == pytest.approx((20.0, 20.0), abs=1e-6)]


def test_robust_union_of_round_off_footprints_gives_the_closed_form_area() -> None:
    got = robust_union([SPIKE, SLIVER])
    assert got.is_valid
    # the sliver adds 5e-301 m^2 and the spike none: the union is the triangle
    assert got.area == pytest.approx(TRIANGLE_AREA, rel=1e-9)


def test_retry_path_is_taken_when_the_engine_fails(monkeypatch) -> None:
    """Whatever the GEOS version does with the pair above, the retry itself is checked by making the
    first union fail: two overlapping rectangles 2 x 1 m offset by 1 m cover 3 m^2 (closed form)."""
    calls = []
    real = shapely.union_all

    def flaky(shapes, *args, **kwargs):
        calls.append(kwargs.get("grid_size"))
        if len(calls) == 1:
            raise GEOSException("TopologyException: found non-noded intersection (provoked by the test)")
        return real(shapes, *args, **kwargs)

    monkeypatch.setattr(plan_ops.shapely, "union_all", flaky)
    got = robust_union([box(0, 0, 2, 1), box(1, 0, 3, 1)])
    assert got.area == pytest.approx(3.0, rel=1e-12)
    assert len(calls) == 2  # the plain union, then the union of the cleaned copies


def test_union_that_cannot_be_made_is_a_clear_error(monkeypatch) -> None:
    def broken(*args, **kwargs):
        raise GEOSException("TopologyException: side location conflict (provoked by the test)")

    monkeypatch.setattr(plan_ops.shapely, "union_all", broken)
    with pytest.raises(PlanGeometryError, match="walls W1, W2: the geometry engine failed even with coordinates "
                                                "rounded to 1e-09 m"):
        robust_union([box(0, 0, 2, 1), box(1, 0, 3, 1)], "walls W1, W2")


def test_tower_with_round_off_wall_footprints_derives_with_warnings(monkeypatch) -> None:
    fallbacks = []
    real_call = plan_ops.robust_call
    monkeypatch.setattr(plan_ops, "robust_call", lambda what, attempts: fallbacks.append(what) or real_call(what, attempts))
    odd = [(SPIKE, ((1.0, 0.0), (1.0, 1.0))), (SLIVER, ((0.0, 0.0), (0.0, 1.0)))]
    d = derive_stick(_tower(odd), load_settings(None, CORE_SECTIONS))
    assert d.stick is not None
    if _plain_union_fails([SPIKE, SLIVER]):  # this GEOS fails on the pair: the retry must have been used
        assert any(w.startswith("union of walls") for w in fallbacks)
    core = _box_core_segments(d)
    assert len(core) == 3
    for s in core:  # the regular core is untouched by its odd neighbours
        assert s.ei_xx_nm2 == pytest.approx(E * I_BOX, rel=1e-9)
        assert s.ei_yy_nm2 == pytest.approx(E * I_BOX, rel=1e-9)
    # the sliver's ring integral vanishes about the plan reference: no mass, said so
    assert any("round-off size" in w for w in d.warnings)
    assert all(math.isfinite(lv.mass_kg) and lv.mass_kg > 0 for lv in d.levels)


_TINY = [0.0, 2e-313, -2e-313, 6e-313, 5e-324, 1e-300, 1e-12, -1e-12]


@st.composite
def _odd_polygon(draw) -> Polygon:
    """A valid polygon of 3-5 vertices on {0, 0.5, 1, 2} m offset by round-off amounts."""
    def coord() -> float:
        return draw(st.sampled_from([0.0, 0.5, 1.0, 2.0])) + draw(st.sampled_from(_TINY))

    n = draw(st.integers(3, 5))
    poly = Polygon([(coord(), coord()) for _ in range(n)])
    if not (poly.is_valid and poly.area > 0):
        poly = box(0.0, 0.0, 1.0, 0.2 + draw(st.sampled_from(_TINY)))
    return poly


@hsettings(max_examples=25, deadline=None, derandomize=True)
@given(st.lists(_odd_polygon(), min_size=1, max_size=3), st.booleans())
@example([SPIKE, SLIVER], True)
def test_odd_wall_footprints_never_end_the_derive(prints, axis_given) -> None:
    """Any valid footprints with round-off coordinates: the derive returns, the regular core keeps its
    closed-form section, masses stay finite, and whatever was left out is said in a warning."""
    odd = []
    for fp in prints:
        x0, y0, x1, y1 = fp.bounds
        axis = ((x0, (y0 + y1) / 2), (x1, (y0 + y1) / 2)) if axis_given else ((0.0, 0.0), (0.0, 0.0))
        odd.append((fp, axis))
    d = derive_stick(_tower(odd, n=2), load_settings(None, CORE_SECTIONS))
    assert isinstance(d, DerivedModel) and d.stick is not None
    core = _box_core_segments(d)
    assert len(core) == 2
    assert all(s.ei_xx_nm2 == pytest.approx(E * I_BOX, rel=1e-9) for s in core)
    assert all(math.isfinite(lv.mass_kg) and lv.mass_kg > 0 for lv in d.levels)
    assert all(isinstance(w, str) and w for w in d.warnings)
