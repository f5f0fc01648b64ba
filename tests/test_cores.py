"""Finding cores and separate walls from takeoff walls (pipeline/cores.py).

Sources: the section constants are checked against /work/shared/reference/methods.md
section 9 (thin-walled cores; tolerance 1e-4 relative for closed forms, section 0); the
door rule and the partition threshold are our documented common-practice rules
(StiffnessSettings.lintel_min_depth_m = 0.4 m, cores.PARTITION_MAX_THICKNESS_M = 0.15 m),
so those tests check that the rule is applied as written. Walls are built directly as
takeoff dataclasses with flat-capped footprints, drawn the way modelling tools join
them: one wall runs through the corner, the other butts against its face.
"""
from __future__ import annotations

import math
import random
from dataclasses import replace

import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString, Polygon, box

from swayscreen.pipeline.core_settings import StiffnessSettings
from swayscreen.pipeline.cores import (
    PARTITION_MAX_THICKNESS_M,
    SystemSection,
    find_systems,
    find_systems_by_storey,
    wall_segments,
)
from swayscreen.pipeline.sections import WallSegment, thin_walled_properties
from swayscreen.pipeline.stick import CoreSummary, SectionProps
from swayscreen.pipeline.takeoff import Storey, Wall, WallOpening

T = 0.3
H = 3.5
REL = 1e-4  # methods.md section 0: closed forms
AUTO = StiffnessSettings()


def wall(gid, p0, p1, t=T, *, h=H, z=0.0, openings=(), load_bearing=None):
    fp = LineString([p0, p1]).buffer(t / 2, cap_style="flat", join_style="mitre")
    return Wall(gid, gid, (p0, p1), math.dist(p0, p1), t, h, z, fp, tuple(openings), load_bearing)


def box_walls(suffix="", *, z=0.0, dx=0.0, south_openings=(), web_openings=None):
    """8 x 6 m box (centre lines), t = 0.3: S and N run through the corners, W and E butt.

    With ``web_openings`` not None a middle web at x = 4 (two 4 x 6 cells) is added.
    """
    h = T / 2
    walls = [
        wall("S" + suffix, (dx - h, 0.0), (dx + 8 + h, 0.0), z=z, openings=south_openings),
        wall("N" + suffix, (dx - h, 6.0), (dx + 8 + h, 6.0), z=z),
        wall("W" + suffix, (dx, h), (dx, 6 - h), z=z),
        wall("E" + suffix, (dx + 8, h), (dx + 8, 6 - h), z=z),
    ]
    if web_openings is not None:
        walls.append(wall("M" + suffix, (dx + 4, h), (dx + 4, 6 - h), z=z, openings=web_openings))
    return walls


def door(head_m, start=3.0, end=4.0, gid="D1"):
    return WallOpening(start, end, 0.0, head_m, gid)


def only(systems):
    assert len(systems) == 1
    return systems[0]


# ------------------------------------------------------------------------------ one storey


def test_box_is_one_closed_core():
    s = only(find_systems(box_walls(), AUTO))
    assert isinstance(s, SystemSection) and isinstance(s.section, SectionProps)
    assert (s.system_id, s.kind, s.wall_ids) == ("core-1", "core", ("E", "N", "S", "W"))
    assert s.closed and s.section.closed
    # methods.md s.9: closed box 8 x 6 (centre line), t = 0.3: J = 98.743 m^4
    assert s.section.j_m4 == pytest.approx(98.743, rel=REL)
    # the corner stubs are trimmed: the centre lines form exactly the 8 x 6 rectangle
    segs = wall_segments(box_walls())
    assert sum(math.dist(g.start_m, g.end_m) for g in segs) == pytest.approx(28.0, rel=1e-12)
    # plan = union of the footprints: 8.3 x 6.3 minus 7.7 x 5.7
    assert s.plan.area == pytest.approx(8.3 * 6.3 - 7.7 * 5.7, rel=1e-12)
    assert s.section.area_m2 == pytest.approx(s.plan.area, rel=1e-12)
    assert s.section.shear_centre_m == pytest.approx((4.0, 3.0), abs=1e-9)
    assert "closed" in s.note and "no openings" in s.note


def test_door_with_shallow_lintel_opens_the_cell():
    # door head at 3.3 m in a 3.5 m wall: 0.2 m lintel < lintel_min_depth_m 0.4 m -> cut
    s = only(find_systems(box_walls(south_openings=[door(3.3)]), AUTO))
    assert not s.closed
    # methods.md s.9: the same walls slit open: J = 0.2520 m^4; the module applies the
    # free-end refinement (0.105 t^4 per free end, two ends at the cut): 0.2520 - 0.0017
    assert s.section.j_m4 == pytest.approx(0.2520 - 2 * 0.105 * T**4, rel=REL)
    assert "D1" in s.note and "0.20 m lintel" in s.note and "0 of 1" in s.note
    # the cut moves the shear centre outside, to the far side (as for a slit tube)
    assert s.section.shear_centre_m[1] > 6.0


def test_door_with_deep_lintel_keeps_the_cell_closed():
    s = only(find_systems(box_walls(south_openings=[door(2.9)]), AUTO))  # 0.6 m lintel
    assert s.closed
    assert s.section.j_m4 == pytest.approx(98.743, rel=REL)  # methods.md s.9
    assert "every opening keeps a lintel >= 0.40 m" in s.note


def test_lintel_depth_setting_decides():
    walls = box_walls(south_openings=[door(2.9)])  # 0.6 m lintel
    assert not only(find_systems(walls, replace(AUTO, lintel_min_depth_m=0.8))).closed
    # a full-height opening (no lintel at all) cuts even with a zero minimum depth
    assert not only(find_systems(box_walls(south_openings=[door(H)]), replace(AUTO, lintel_min_depth_m=0.0))).closed


def test_core_cells_override():
    shallow = box_walls(south_openings=[door(3.3)])
    s = only(find_systems(shallow, replace(AUTO, core_cells="closed")))
    assert s.closed and s.section.j_m4 == pytest.approx(98.743, rel=REL)  # methods.md s.9
    assert "core_cells = closed" in s.note
    s = only(find_systems(box_walls(), replace(AUTO, core_cells="open")))
    assert not s.closed
    # methods.md s.9: all walls St Venant, 0.2520 m^4 (no free ends: no refinement)
    assert s.section.j_m4 == pytest.approx(0.2520, rel=REL)
    assert "core_cells = open" in s.note
    # the shear centre keeps the closed topology under the override
    assert s.section.shear_centre_m == pytest.approx((4.0, 3.0), abs=1e-9)


def test_two_cells_and_a_door_in_the_shared_web():
    # symmetric two-cell core: methods.md s.9 box value (the middle web carries no torsional
    # shear flow in a symmetric two-cell section; Megson, multi-cell torsion, from memory)
    s = only(find_systems(box_walls(web_openings=()), AUTO))
    assert s.closed and s.section.j_m4 == pytest.approx(98.743, rel=REL)
    assert "2 cell(s) closed" in s.note
    # a door without lintel in the shared web merges the two cells into the outer one:
    # still closed, same Bredt-Batho value plus the two web stubs' St Venant terms
    # (the web's 6 m centre line cut in two: sum L t^3/3 less 0.105 t^4 at the two cut ends)
    s = only(find_systems(box_walls(web_openings=[door(H, start=2.5, end=3.5)]), AUTO))
    assert s.closed
    stubs = 6.0 * T**3 / 3 - 2 * 0.105 * T**4
    assert s.section.j_m4 == pytest.approx(98.743 + stubs, rel=REL)
    assert "1 of 2" in s.note
    # a door in the outside wall of one cell: that cell opens, the other stays closed;
    # single 4 x 6 cell: J = 4 (24)^2 / (20 / 0.3) = 34.56 m^4 (methods.md s.9 formula)
    s = only(find_systems(box_walls(south_openings=[door(H, start=1.0, end=2.0)], web_openings=()), AUTO))
    assert s.closed and "1 of 2" in s.note
    open_part = (4.0 + 6.0 + 4.0) * T**3 / 3 - 2 * 0.105 * T**4  # S(west half), W, N(west half)
    assert s.section.j_m4 == pytest.approx(4 * 24.0**2 / (20.0 / T) + open_part, rel=REL)


def test_three_walls_in_a_c_are_one_open_core():
    h = T / 2
    walls = [wall("web", (0.0, -h), (0.0, 8 + h)), wall("f1", (h, 0.0), (4.0, 0.0)), wall("f2", (h, 8.0), (4.0, 8.0))]
    s = only(find_systems(walls, AUTO))
    assert s.kind == "core" and not s.closed
    assert "open section" in s.note
    # methods.md s.9 channel b = 4, h = 8, t = 0.3: e = 1.5000 m behind the web centre line
    assert s.section.shear_centre_m == pytest.approx((-1.5, 4.0), rel=REL)
    # J = 0.14400 (methods.md s.9) less the refinement at the two flange tips
    assert s.section.j_m4 == pytest.approx(0.144 - 2 * 0.105 * T**4, rel=REL)
    # thin-wall strong-axis I is 51.20 (methods.md s.9); the polygon adds the corner
    # squares and the walls' own t^3 terms: 0.3 % more here
    assert s.section.ixx_m4 == pytest.approx(51.20, rel=3e-3)
    assert s.section.ixx_m4 > 51.20


@pytest.mark.parametrize(("t_web", "cw"), [(0.3, 89.600), (0.5, 106.057)])
def test_c_core_warping_constant_reaches_section_props(t_web, cw):
    # methods.md s.9 channel b = 4, h = 8, t_f = 0.3: C_w = 89.600 m^6 (t_w = 0.3) and
    # 106.057 m^6 (t_w = 0.5), about the shear centre; the flanges butt against the web face,
    # so the trimmed centre lines are exactly the channel's. Tolerance 1e-4 (closed form).
    hw = t_web / 2
    walls = [wall("web", (0.0, -T / 2), (0.0, 8 + T / 2), t_web), wall("f1", (hw, 0.0), (4.0, 0.0)),
             wall("f2", (hw, 8.0), (4.0, 8.0))]
    s = only(find_systems(walls, AUTO))
    assert s.kind == "core" and not s.closed
    assert s.section.cw_m6 == pytest.approx(cw, rel=REL)
    assert "warping constant C_w" in s.note
    # over the height the summary carries the same section
    storeys = [Storey(f"S{k}", f"L{k}", H * k, H, True, (), tuple(replace(w, global_id=f"{w.global_id}{k}",
                                                                           base_elevation_m=H * k) for w in walls))
               for k in range(3)]
    by_storey, summaries, _ = find_systems_by_storey(storeys, AUTO)
    assert [c.section.cw_m6 for c in summaries] == pytest.approx([cw], rel=REL)
    assert all(sys_[0].section.cw_m6 == pytest.approx(cw, rel=REL) for sys_ in by_storey.values())


def test_warping_constant_only_for_one_connected_open_network():
    # the documented rule (sections.combine_section): closed cells and cells taken open by
    # the override carry no warping constant, nor do walls in several unconnected parts
    assert only(find_systems(box_walls(), AUTO)).section.cw_m6 == 0.0
    s = only(find_systems(box_walls(), replace(AUTO, core_cells="open")))
    assert s.section.cw_m6 == 0.0 and "warping" not in s.note
    # a door cutting the box at mid-length of its south wall (door centre 4.0 m along the
    # centre line): the slit tube is one open network and keeps the centre-line value of
    # sections (checked there against finite elements)
    slit = only(find_systems(box_walls(south_openings=[door(3.3, start=3.65, end=4.65)]), AUTO))
    ref = thin_walled_properties([WallSegment((0.0, 0.0), (8.0, 0.0), T, (4.0,)), WallSegment((8.0, 0.0), (8.0, 6.0), T),
                                  WallSegment((8.0, 6.0), (0.0, 6.0), T), WallSegment((0.0, 6.0), (0.0, 0.0), T)])
    assert not slit.closed and ref.warping_constant_m6 > 100.0
    assert slit.section.cw_m6 == pytest.approx(ref.warping_constant_m6, rel=1e-9)
    # a channel with a wall against the back of its web (footprints touch, centre lines
    # parallel 0.3 m apart: two unconnected parts) gets none
    h = T / 2
    c = [wall("web", (0.0, -h), (0.0, 8 + h)), wall("f1", (h, 0.0), (4.0, 0.0)), wall("f2", (h, 8.0), (4.0, 8.0))]
    s = only(find_systems(c + [wall("back", (-T, 1.0), (-T, 7.0))], AUTO))
    assert s.kind == "core" and s.section.cw_m6 == 0.0
    assert "2 unconnected parts" in s.note and "no warping constant" in s.note
    # L and single walls: C_w = 0 in thin-walled theory (all walls meet in one point)
    ell = only(find_systems([wall("a", (0.0, 0.0), (4.0, 0.0)), wall("b", (0.0, h), (0.0, 5.0))], AUTO))
    assert ell.kind == "core" and ell.section.cw_m6 == 0.0
    assert only(find_systems([wall("a", (0.0, 0.0), (5.0, 2.0))], AUTO)).section.cw_m6 == 0.0


def test_separate_walls_partitions_and_load_bearing_flags():
    walls = [
        wall("A", (0.0, 0.0), (5.0, 0.0)),
        wall("B", (10.0, 0.0), (10.0, 4.0)),
        wall("P", (20.0, 0.0), (25.0, 0.0), t=0.1),  # thin, unflagged: partition
        wall("Q", (30.0, 0.0), (35.0, 0.0), t=0.1, load_bearing=True),  # thin but flagged
        wall("N", (40.0, 0.0), (45.0, 0.0), t=0.3, load_bearing=False),  # flagged not load-bearing
    ]
    found = find_systems(walls, AUTO)
    assert [(s.system_id, s.kind, s.wall_ids) for s in found] == [
        ("wall-1", "wall", ("A",)), ("wall-2", "wall", ("B",)), ("wall-3", "wall", ("Q",))]  # by plan area
    a = found[0]
    assert not a.closed and a.note.startswith("separate wall")
    # methods.md s.9: rectangle J = (b t^3/3)(1 - 0.63 t/b), b = 5, t = 0.3
    assert a.section.j_m4 == pytest.approx(5 * T**3 / 3 * (1 - 0.63 * T / 5), rel=REL)
    # a wall along x: its whole area counts for shear in x, none in y (web-area rule)
    assert (a.section.shear_area_x_m2, a.section.shear_area_y_m2) == pytest.approx((1.5, 0.0), abs=1e-12)
    assert [s.wall_ids for s in find_systems(walls, AUTO, load_bearing_only=True)] == [("Q",)]
    assert PARTITION_MAX_THICKNESS_M == 0.15
    assert ("P",) in [s.wall_ids for s in find_systems(walls, AUTO, partition_max_thickness_m=0.05)]


def test_walls_within_tolerance_join_and_wider_gaps_do_not():
    h = T / 2
    near = [wall("a", (0.0, 0.0), (4.0, 0.0)), wall("b", (0.0, h + 0.04), (0.0, 5.0))]  # 40 mm gap
    far = [wall("a", (0.0, 0.0), (4.0, 0.0)), wall("b", (0.0, h + 0.10), (0.0, 5.0))]  # 100 mm gap
    s = only(find_systems(near, AUTO))
    assert s.kind == "core"
    # joined at the centre-line corner: L shear centre at the corner (thin-walled theory)
    assert s.section.shear_centre_m == pytest.approx((0.0, 0.0), abs=1e-9)
    assert [x.kind for x in find_systems(far, AUTO)] == ["wall", "wall"]


def test_collinear_walls_end_to_end_form_one_wall_line():
    # two 3 m walls in line meeting end to end act as one 6 m wall: one core of two walls
    # whose centre line is continuous (J: one rectangle 6 x 0.3 with two free ends)
    s = only(find_systems([wall("a", (0.0, 0.0), (3.0, 0.0)), wall("b", (3.0, 0.0), (6.0, 0.0))], AUTO))
    assert s.kind == "core" and not s.closed
    assert s.section.j_m4 == pytest.approx(6 * T**3 / 3 * (1 - 0.63 * T / 6), rel=REL)  # methods.md s.9


def test_order_of_walls_does_not_matter():
    walls = box_walls() + [wall("X", (20.0, 0.0), (20.0, 5.0))]
    ref = find_systems(walls, AUTO)
    for seed in range(3):
        shuffled = walls[:]
        random.Random(seed).shuffle(shuffled)
        got = find_systems(shuffled, AUTO)
        assert [(s.system_id, s.wall_ids) for s in got] == [(s.system_id, s.wall_ids) for s in ref]
        assert got[0].section.j_m4 == pytest.approx(ref[0].section.j_m4, rel=1e-12)


def test_no_walls_no_systems():
    assert find_systems([], AUTO) == []
    assert find_systems([wall("P", (0.0, 0.0), (5.0, 0.0), t=0.1)], AUTO) == []


# ------------------------------------------------------------------------------ over the height


def storey(k, walls, *, above=True):
    return Storey(f"G{k}", f"Level {k}", k * H, H, above, walls=tuple(walls))


def building():
    """Four storeys: a box core, a separate wall X (stops above storey 2), a wall Y that
    appears on storey 1, and the core's east wall missing on storey 2."""
    out = []
    for k in range(4):
        ws = box_walls(str(k), z=k * H) + [wall(f"X{k}", (20.0, 0.0), (20.0, 5.0), z=k * H)]
        if k >= 1:
            ws.append(wall(f"Y{k}", (30.0, 0.0), (34.0, 0.0), z=k * H))
        if k == 3:
            ws = [w for w in ws if not w.global_id.startswith("X")]
        if k == 2:
            ws = [w for w in ws if not w.global_id.startswith("E")]
        random.Random(k).shuffle(ws)
        out.append(storey(k, ws))
    return out


def test_ids_are_stable_over_the_height():
    storeys = building()
    by, summaries, _ = find_systems_by_storey(list(reversed(storeys)), AUTO)  # any input order
    ids = {sid: [(s.system_id, s.wall_ids) for s in systems] for sid, systems in by.items()}
    assert ids["G0"] == [("core-1", ("E0", "N0", "S0", "W0")), ("wall-1", ("X0",))]
    assert ids["G1"] == [("core-1", ("E1", "N1", "S1", "W1")), ("wall-1", ("X1",)), ("wall-2", ("Y1",))]
    assert ids["G2"] == [("core-1", ("N2", "S2", "W2")), ("wall-1", ("X2",)), ("wall-2", ("Y2",))]
    assert ids["G3"] == [("core-1", ("E3", "N3", "S3", "W3")), ("wall-2", ("Y3",))]
    assert [s.id for s in summaries] == ["core-1", "wall-1", "wall-2"]
    core = summaries[0]
    assert isinstance(core, CoreSummary)
    assert set(core.wall_ids) == {f"{n}{k}" for n in "NSW" for k in range(4)} | {"E0", "E1", "E3"}
    assert core.closed and core.section.j_m4 == pytest.approx(98.743, rel=REL)  # methods.md s.9
    # on storey 2 the missing east wall leaves a C: open
    assert not by["G2"][0].closed


def test_discontinuity_warnings():
    _, _, warnings = find_systems_by_storey(building(), AUTO)
    text = "\n".join(warnings)
    assert "storey 'Level 1': new wall wall-2 appears" in text
    assert "storey 'Level 2': core-1 loses walls from the storey below: E1" in text
    assert "storey 'Level 2': core-1 acts open here (closed below)" in text
    assert "storey 'Level 3': core-1 acts closed here (open below)" in text
    assert "storey 'Level 3': wall-1 stops" in text
    assert len(warnings) == 5


def test_summary_section_from_lowest_above_grade_storey():
    # a basement storey (below grade) with a thicker core: the summary reports the first
    # above-grade storey, the ids still start in the basement
    base = [replace(w, thickness_m=0.5, footprint=LineString(w.axis_m).buffer(0.25, cap_style="flat"))
            for w in box_walls("B", z=-H)]
    storeys = [Storey("GB", "Basement", -H, H, False, walls=tuple(base)), storey(0, box_walls("0"))]
    by, summaries, warnings = find_systems_by_storey(storeys, AUTO)
    assert by["GB"][0].system_id == by["G0"][0].system_id == "core-1"
    assert summaries[0].section == by["G0"][0].section
    assert warnings == []


def test_a_wall_taller_than_its_storey_counts_on_both():
    tall = wall("T", (0.0, 0.0), (6.0, 0.0), h=2 * H)
    storeys = [storey(0, [tall]), storey(1, [])]
    by, summaries, warnings = find_systems_by_storey(storeys, AUTO)
    assert [s.wall_ids for s in by["G0"]] == [("T",)] == [s.wall_ids for s in by["G1"]]
    assert [s.id for s in summaries] == ["wall-1"] and warnings == []
    by, _, warnings = find_systems_by_storey(storeys, AUTO, include_spanning_walls=False)
    assert by["G1"] == [] and warnings == []  # the top of the building: nothing to report


def test_systems_that_merge_are_reported():
    # storey 0: two separate walls meeting nowhere; storey 1: a wall joins them into one core
    w0 = [wall("a0", (0.0, 0.0), (4.0, 0.0)), wall("b0", (0.0, 6.0), (4.0, 6.0))]
    w1 = [wall("a1", (0.0, 0.0), (4.0, 0.0), z=H), wall("b1", (0.0, 6.0), (4.0, 6.0), z=H),
          wall("c1", (0.0, -T / 2), (0.0, 6 + T / 2), z=H)]
    by, _, warnings = find_systems_by_storey([storey(0, w0), storey(1, w1)], AUTO)
    assert [s.system_id for s in by["G1"]] == ["wall-1"]  # keeps the id of the larger overlap
    assert by["G1"][0].kind == "core"
    assert any("wall-1 and wall-2 from below merge into wall-1" in w for w in warnings)
    assert any("wall-1 changes from wall to core" in w for w in warnings)


# ------------------------------------------------------------------------------ bad and odd input


def test_walls_with_missing_axis_or_footprint():
    # axis missing (zero length): taken from the footprint's rectangle; footprint missing:
    # built from the axis; neither: left out with a warning naming the wall
    no_axis = Wall("A", "A", ((0.0, 0.0), (0.0, 0.0)), 0.0, 0.0, H, 0.0, box(0.0, -0.15, 5.0, 0.15))
    no_print = Wall("B", "B", ((10.0, 0.0), (15.0, 0.0)), 5.0, 0.3, H, 0.0, Polygon())
    nothing = Wall("C", "C", ((20.0, 0.0), (20.0, 0.0)), 0.0, 0.0, H, 0.0, Polygon())
    by, _, warnings = find_systems_by_storey([storey(0, [no_axis, no_print, nothing])], AUTO)
    found = by["G0"]
    assert sorted(s.wall_ids for s in found) == [("A",), ("B",)]
    for s in found:
        # methods.md s.9: rectangle 5 x 0.3, J = (b t^3/3)(1 - 0.63 t/b)
        assert s.section.j_m4 == pytest.approx(5 * T**3 / 3 * (1 - 0.63 * T / 5), rel=REL)
        assert s.section.area_m2 == pytest.approx(1.5, rel=1e-12)
    assert warnings == ["storey 'Level 0': wall C ('C') has no usable axis, thickness or footprint: left out"]


grid_wall = st.tuples(
    st.integers(0, 4), st.integers(0, 4), st.booleans(), st.integers(1, 4), st.sampled_from([0.2, 0.3, 0.45]),
    st.one_of(st.none(), st.tuples(st.floats(0.0, 1.0), st.sampled_from([2.1, 3.3, H]))),
)
free_wall = st.tuples(
    st.floats(0.0, 10.0), st.floats(0.0, 10.0), st.floats(0.0, 10.0), st.floats(0.0, 10.0),
    st.sampled_from([0.2, 0.3, 0.45]),
)


@settings(max_examples=60, deadline=None)
@given(grid=st.lists(grid_wall, max_size=7), free=st.lists(free_wall, max_size=3),
       cells=st.sampled_from(["auto", "closed", "open"]))
def test_random_wall_layouts_give_sane_systems(grid, free, cells):
    # Property test (no external value): any layout of walls on a 2 m grid (doors included)
    # plus a few walls at random angles gives systems that share out every wall exactly
    # once, with finite, positive constants and a shear centre near the walls.
    walls = []
    for k, (i, j, along_x, n, t, op) in enumerate(grid):
        p0 = (2.0 * i, 2.0 * j)
        p1 = (p0[0] + 2.0 * n, p0[1]) if along_x else (p0[0], p0[1] + 2.0 * n)
        ops = () if op is None else (WallOpening(op[0] * 2 * n, op[0] * 2 * n + 0.9, 0.0, op[1], f"o{k}"),)
        walls.append(wall(f"g{k}", p0, p1, t, openings=ops))
    for k, (x0, y0, x1, y1, t) in enumerate(free):
        if math.dist((x0, y0), (x1, y1)) > 0.05:
            walls.append(wall(f"f{k}", (x0, y0), (x1, y1), t))
    found = find_systems(walls, replace(AUTO, core_cells=cells))
    assert sorted(g for s in found for g in s.wall_ids) == sorted(w.global_id for w in walls)
    for s in found:
        sec = s.section
        values = (sec.area_m2, sec.ixx_m4, sec.iyy_m4, sec.ixy_m4, sec.j_m4, sec.shear_area_x_m2,
                  sec.shear_area_y_m2, *sec.centroid_m, *sec.shear_centre_m)
        assert all(math.isfinite(v) for v in values)
        assert sec.area_m2 > 0 and sec.ixx_m4 > 0 and sec.iyy_m4 > 0 and sec.j_m4 > 0
        assert sec.ixx_m4 * sec.iyy_m4 >= sec.ixy_m4**2 * (1 - 1e-9)
        assert s.kind == ("core" if len(s.wall_ids) > 1 else "wall")
        assert s.closed == sec.closed
        if cells == "open":
            assert not s.closed
        minx, miny, maxx, maxy = s.plan.bounds
        size = max(maxx - minx, maxy - miny)
        x, y = sec.shear_centre_m
        assert minx - 3 * size <= x <= maxx + 3 * size and miny - 3 * size <= y <= maxy + 3 * size


def test_partitions_are_summarised_once_over_the_height():
    storeys = [storey(k, box_walls(str(k), z=k * H) + [wall(f"P{k}", (20.0, 0.0), (24.0, 0.0), t=0.1, z=k * H)])
               for k in range(3)]
    by, _, warnings = find_systems_by_storey(storeys, AUTO)
    assert all([s.system_id for s in systems] == ["core-1"] for systems in by.values())
    assert warnings == [
        "3 wall(s) thinner than 0.15 m with no LoadBearing flag taken as partitions (not in the lateral system)"
        " on 3 storey(s)"
    ]


def test_storeys_without_lateral_walls_are_reported():
    flagged = [replace(w, load_bearing=False) for w in box_walls("1", z=H)]
    by, _, warnings = find_systems_by_storey([storey(0, box_walls("0")), storey(1, flagged)], AUTO)
    assert by["G1"] == []
    assert warnings == [
        "4 wall(s) flagged LoadBearing = false on 1 storey(s) left out of the lateral system",
        "storey 'Level 1': none of its 4 wall(s) is in the lateral system (non-load-bearing, partitions or unusable)",
    ]


def test_systems_standing_above_grade_are_numbered_first():
    # a basement with a large retaining-wall ring (bigger plan than the core) and the core:
    # the core, which stands above grade, is core-1; the ring is core-2 and stops at ground
    ring = [wall(f"R{k}", a, b, z=-H) for k, (a, b) in enumerate(
        [((-10.15, -10.0), (20.15, -10.0)), ((-10.15, 20.0), (20.15, 20.0)),
         ((-10.0, -9.85), (-10.0, 19.85)), ((20.0, -9.85), (20.0, 19.85))])]
    basement = Storey("GB", "Basement", -H, H, False, walls=tuple(ring + box_walls("B", z=-H)))
    by, summaries, warnings = find_systems_by_storey([basement, storey(0, box_walls("0"))], AUTO)
    assert [(s.system_id, s.wall_ids[0]) for s in by["GB"]] == [("core-2", "R0"), ("core-1", "EB")]
    assert [(s.system_id, s.wall_ids[0]) for s in by["G0"]] == [("core-1", "E0")]
    assert [s.id for s in summaries] == ["core-1", "core-2"]
    assert warnings == ["storey 'Level 0': core-2 stops (walls R0, R1, R2, R3 below are not continued)"]
