"""read_model on small models built in code (tests/conftest.py ModelBuilder).

Expected values are computed independently of the reader: plan areas and centroids with
shapely from the builder's input polygons, section areas from handbook closed forms,
volumes and extents from ifcopenshell's own geometry engine (an external reference for
our closed-form reading), unit factors from their definitions (1 ft = 0.3048 m exactly,
international yard and pound agreement 1959; 1 mm = 1e-3 m, SI prefix).
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest
import shapely
from hypothesis import HealthCheck, given, settings, strategies as st
from shapely import affinity
from shapely.geometry import Polygon

from swayscreen.pipeline.core_settings import LevelSettings
from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.ifc_materials import classify
from swayscreen.pipeline.reading import read_model
from swayscreen.pipeline.takeoff_json import takeoff_to_dict

PLATE = [(0.0, 0.0), (24.0, 0.0), (24.0, 16.0), (0.0, 16.0)]
SHAFT = [(10.0, 6.0), (14.0, 6.0), (14.0, 10.0), (10.0, 10.0)]
STOREY_H = 3.5

def _warnings(t) -> list[str]:
    """File warnings and every building's warnings."""
    return list(t.warnings) + [w for b in t.buildings for w in b.warnings]



def _tower(b, storeys: int = 3, basement: bool = False):
    """A plate with a shaft void, four perimeter walls with a door, two columns per storey."""
    levels = ([("B1", -STOREY_H)] if basement else []) + [(f"L{i}", i * STOREY_H) for i in range(storeys)]
    out = {}
    for name, z in levels:
        s = b.storey(name, z)
        slab = b.slab(s, PLATE, 0.25, voids=[SHAFT], name=f"{name} plate")
        walls = [b.wall(s, (0, 0.15), (24, 0.15), 0.3, STOREY_H, name=f"{name} south"),
                 b.wall(s, (23.85, 0), (23.85, 16), 0.3, STOREY_H, name=f"{name} east"),
                 b.wall(s, (24, 15.85), (0, 15.85), 0.3, STOREY_H, name=f"{name} north"),
                 b.wall(s, (0.15, 16), (0.15, 0), 0.3, STOREY_H, name=f"{name} west")]
        cols = [b.column(s, b.rect_profile(0.5, 0.8), (8.0, 8.0), STOREY_H, name=f"{name} C1"),
                b.column(s, b.rect_profile(0.5, 0.8), (16.0, 8.0), STOREY_H, name=f"{name} C2")]
        out[name] = (s, slab, walls, cols)
    return out


def _read(b, tmp_path, name="m.ifc", levels=None):
    return read_model(b.write(tmp_path / name), levels)


def _summary(t):
    """A unit-free digest of a takeoff for comparisons."""
    rows = []
    for bld in t.buildings:
        for s in bld.storeys:
            rows.append((s.name, round(s.elevation_m, 9), round(s.height_m, 9), s.above_grade,
                         tuple(sorted((round(x.area_m2, 6), round(x.thickness_m, 9), round(x.top_elevation_m, 9))
                                      for x in s.slabs)),
                         tuple(sorted((round(w.length_m, 9), round(w.thickness_m, 9), round(w.height_m, 9),
                                       round(w.base_elevation_m, 9)) for w in s.walls)),
                         tuple(sorted((round(c.area_m2, 9), round(c.height_m, 9)) for c in s.columns))))
    return rows


# ---------------------------------------------------------------------------- units and schemas

@pytest.mark.parametrize("unit,name,scale", [("m", "METRE", 1.0), ("mm", "MILLIMETRE", 1e-3), ("ft", "FOOT", 0.3048)])
def test_length_unit_read_and_converted(ifc_builder, tmp_path, unit, name, scale):
    b = ifc_builder("IFC4", unit)
    _tower(b, storeys=2)
    t = _read(b, tmp_path)
    assert t.length_unit == name
    assert t.length_scale_m == pytest.approx(scale, rel=1e-12)  # definitions: SI prefix; 1 ft = 0.3048 m
    s0 = t.buildings[0].storeys[0]
    expected = Polygon(PLATE, [SHAFT]).area  # shapely on the builder's input, metres
    assert s0.slabs[0].area_m2 == pytest.approx(expected, rel=1e-9)
    assert s0.slabs[0].thickness_m == pytest.approx(0.25, rel=1e-9)
    assert t.buildings[0].storeys[1].elevation_m == pytest.approx(STOREY_H, rel=1e-9)


def test_same_building_in_three_units_gives_the_same_takeoff(ifc_builder, tmp_path):
    digests = []
    for unit in ("m", "mm", "ft"):
        b = ifc_builder("IFC4", unit)
        _tower(b)
        digests.append(_summary(_read(b, tmp_path, f"{unit}.ifc")))
    assert digests[0] == digests[1] == digests[2]


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3"])
def test_schemas_read_alike(ifc_builder, tmp_path, schema):
    b = ifc_builder(schema, "mm")
    _tower(b)
    t = _read(b, tmp_path)
    assert t.schema == schema
    ref = ifc_builder("IFC4", "m")
    _tower(ref)
    assert _summary(t) == _summary(_read(ref, tmp_path, "ref.ifc"))


def test_unknown_length_unit_is_an_input_error(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _tower(b, storeys=1)
    f = b.f
    ua = f.by_type("IfcUnitAssignment")[0]
    dims = f.createIfcDimensionalExponents(1, 0, 0, 0, 0, 0, 0)
    odd = f.createIfcContextDependentUnit(dims, "LENGTHUNIT", "cubit")
    ua.Units = [u for u in ua.Units if getattr(u, "UnitType", None) != "LENGTHUNIT"] + [odd]
    with pytest.raises(InputError, match=r"m\.ifc: unknown length unit IfcContextDependentUnit"):
        _read(b, tmp_path)


# ---------------------------------------------------------------------------- placements, north

def test_true_north_from_context(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m", true_north_deg=30.0)
    _tower(b, storeys=1)
    assert _read(b, tmp_path).true_north_deg == pytest.approx(30.0, abs=1e-9)
    b2 = ifc_builder("IFC4", "m")
    _tower(b2, storeys=1)
    assert _read(b2, tmp_path, "n.ifc").true_north_deg == 0.0


def test_placement_chain_offsets_and_rotation(ifc_builder, tmp_path):
    # Building at (12, 8) rotated 90 degrees; a slab placed at (1, 2) in the storey.
    b = ifc_builder("IFC4", "mm")
    bld = b.building(xyz=(12.0, 8.0, 0.0))
    bld.ObjectPlacement.RelativePlacement = b.axis2((12.0, 8.0, 0.0), (0, 0, 1), (0, 1, 0))
    s = b.storey("L0", 0.0, bld)
    slab = b.slab(s, [(1, 2), (5, 2), (5, 4), (1, 4)], 0.2)
    t = _read(b, tmp_path)
    fp = t.buildings[0].storeys[0].slabs[0].footprint
    # expected: rotate the local rectangle by +90 degrees about the origin, then shift by (12, 8)
    exp = affinity.translate(affinity.rotate(Polygon([(1, 2), (5, 2), (5, 4), (1, 4)]), 90, origin=(0, 0)), 12, 8)
    assert fp.symmetric_difference(exp).area == pytest.approx(0.0, abs=1e-9)
    assert slab.GlobalId == t.buildings[0].storeys[0].slabs[0].global_id


def test_placement_cycle_is_an_input_error(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    out = _tower(b, storeys=1)
    wall = out["L0"][2][0]
    pl = wall.ObjectPlacement
    storey_pl = out["L0"][0].ObjectPlacement
    storey_pl.PlacementRelTo = pl  # storey -> wall -> storey
    with pytest.raises(InputError, match="cycle"):
        _read(b, tmp_path)


@settings(max_examples=25, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(angle=st.floats(-180, 180), dx=st.floats(-50, 50), dy=st.floats(-50, 50),
       w=st.floats(0.5, 30), h=st.floats(0.5, 30))
def test_rotated_rectangular_slab_area_and_centroid(ifc_builder, tmp_path_factory, angle, dx, dy, w, h):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    a = math.radians(angle)
    b.slab(s, [(0, 0), (w, 0), (w, h), (0, h)], 0.3, xy=(dx, dy), x=(math.cos(a), math.sin(a), 0.0))
    t = read_model(b.write(tmp_path_factory.mktemp("hyp") / "r.ifc"))
    slab = t.buildings[0].storeys[0].slabs[0]
    exp = affinity.translate(affinity.rotate(Polygon([(0, 0), (w, 0), (w, h), (0, h)]), a, origin=(0, 0),
                                             use_radians=True), dx, dy)
    assert slab.area_m2 == pytest.approx(w * h, rel=1e-9)
    assert slab.centroid_m == pytest.approx((exp.centroid.x, exp.centroid.y), abs=1e-7)


# ---------------------------------------------------------------------------- slabs

def test_slab_voids_and_openings_subtracted(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    slab = b.slab(s, PLATE, 0.25, voids=[SHAFT])
    # a 2 m x 1 m riser opening at (3..5, 3..4), through the slab (opening relative to the slab)
    b.opening(slab, b.rect_profile(2.0, 1.0, centre=(4.0, 3.5)), 1.0, origin=(0, 0, -0.6))
    t = _read(b, tmp_path)
    got = t.buildings[0].storeys[0].slabs[0]
    exp = Polygon(PLATE, [SHAFT]).difference(shapely.box(3, 3, 5, 4))
    assert got.area_m2 == pytest.approx(exp.area, rel=1e-9)
    assert got.centroid_m == pytest.approx((exp.centroid.x, exp.centroid.y), abs=1e-9)
    assert got.perimeter_m == pytest.approx(2 * (24 + 16), rel=1e-9)


def test_slab_top_and_thickness_three_ways(ifc_builder, tmp_path):
    """Top at the storey datum whether extruded down, placed low and extruded up, or
    with the solid's position lowered (the three conventions in common exports)."""
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L1", 4.0)
    b.slab(s, PLATE, 0.3, name="down")
    prof = b.polyline_profile(PLATE)
    b.element("IfcSlab", s, b.shape([b.extrusion(prof, 0.3)]), (30, 0, -0.3), "up", "FLOOR")
    b.element("IfcSlab", s, b.shape([b.extrusion(b.polyline_profile(PLATE), 0.3, origin=(0, 0, -0.3))]),
              (60, 0, 0), "solid-low", "FLOOR")
    t = _read(b, tmp_path)
    slabs = t.buildings[0].storeys[0].slabs
    assert len(slabs) == 3
    for sl in slabs:
        assert sl.top_elevation_m == pytest.approx(4.0, abs=1e-9)
        assert sl.thickness_m == pytest.approx(0.3, rel=1e-9)
        assert not sl.sloped


def test_sloped_roof_slab(ifc_builder, tmp_path):
    """A pitched roof plane: profile in a vertical plane, extruded horizontally."""
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    b.slab(s, PLATE, 0.25)
    # Section in the x-z plane: a 0.2 m thick plate rising 3 m over 6 m, extruded 10 m along y.
    sec = [(0, 3.0), (6, 6.0), (6, 6.2), (0, 3.2)]
    prof = b.polyline_profile(sec)
    solid = b.extrusion(prof, 10.0, z=(0, -1, 0), x=(1, 0, 0))  # profile plane x-z, extrusion along +y
    b.element("IfcSlab", s, b.shape([solid]), (0, 0, 0), "roof", "ROOF")
    t = _read(b, tmp_path)
    roof = [x for st_ in t.buildings[0].storeys for x in st_.slabs if x.name == "roof"][0]
    assert roof.sloped and roof.predefined_type == "ROOF"
    assert roof.area_m2 == pytest.approx(6.0 * 10.0, rel=1e-9)  # plan shadow 6 m x 10 m
    # equivalent thickness = volume / plan area = (section area x 10) / 60
    assert roof.thickness_m == pytest.approx(Polygon(sec).area * 10.0 / 60.0, rel=1e-9)
    assert roof.top_elevation_m == pytest.approx(6.2, abs=1e-9)


def test_predefined_type_from_the_type_object(ifc_builder, tmp_path):
    # ifcopenshell's assign_type clears PredefinedType on the occurrence (DESIGN.md note).
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    occ = b.slab(s, PLATE, 0.25, predefined_type=None)
    b.type_of([occ], "IfcSlabType", "Roof slab type", "ROOF")
    t = _read(b, tmp_path)
    assert t.buildings[0].storeys[0].slabs[0].predefined_type == "ROOF"


def test_zero_thickness_slab_warns_and_is_skipped(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _tower(b, storeys=1)
    s = b.f.by_type("IfcBuildingStorey")[0]
    bad = b.slab(s, PLATE, 0.25, name="flat nothing")
    bad.Representation.Representations[0].Items[0].Depth = 0.0
    t = _read(b, tmp_path)
    assert all(x.global_id != bad.GlobalId for st_ in t.buildings[0].storeys for x in st_.slabs)
    assert any(bad.GlobalId in w and "zero thickness" in w for w in _warnings(t))


def test_clipped_extrusion_is_read_with_a_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    w = b.wall(s, (0, 0), (6, 0), 0.2, 3.0, name="gable")
    solid = w.Representation.Representations[1].Items[0]
    plane = b.f.createIfcPlane(b.axis2((0, 0, 2.5), (0, 0.0, 1.0), (1, 0, 0)))
    half = b.f.createIfcHalfSpaceSolid(plane, False)
    clip = b.f.createIfcBooleanClippingResult("DIFFERENCE", solid, half)
    w.Representation.Representations[1].Items = [clip]
    t = _read(b, tmp_path)
    wall = t.buildings[0].storeys[0].walls[0]
    assert wall.length_m == pytest.approx(6.0, rel=1e-9) and wall.height_m == pytest.approx(3.0, rel=1e-9)
    assert any("clipped by half-spaces" in x and w.GlobalId in x for x in _warnings(t))


# ---------------------------------------------------------------------------- walls

@pytest.mark.parametrize("axis,rectangle", [(True, False), (False, False), (False, True), (True, True)])
def test_wall_axis_length_thickness(ifc_builder, tmp_path, axis, rectangle):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L2", 7.0)
    start, end = (2.0, 1.0), (2.0 + 8 * math.cos(0.6), 1.0 + 8 * math.sin(0.6))
    b.wall(s, start, end, 0.35, 3.2, axis=axis, rectangle=rectangle)
    t = _read(b, tmp_path)
    w = t.buildings[0].storeys[0].walls[0]
    assert w.length_m == pytest.approx(8.0, rel=1e-9)
    assert w.thickness_m == pytest.approx(0.35, rel=1e-9)
    assert w.height_m == pytest.approx(3.2, rel=1e-9) and w.base_elevation_m == pytest.approx(7.0, abs=1e-9)
    ends = sorted([w.axis_m[0], w.axis_m[1]])
    assert np.allclose(ends, sorted([start, end]), atol=1e-9)
    assert w.plan_area_m2 == pytest.approx(8.0 * 0.35, rel=1e-9)


def test_wall_axis_shifted_onto_the_centre_line(ifc_builder, tmp_path):
    """An exporter's axis on the wall face (location line) is moved to the centre line."""
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    prof = b.polyline_profile([(0, 0), (5, 0), (5, 0.3), (0, 0.3)])  # body on one side of the axis
    b.element("IfcWall", s, b.shape([b.extrusion(prof, 3.0)], axis_pts=[(0, 0), (5, 0)]), (0, 0, 0), "faced")
    w = _read(b, tmp_path).buildings[0].storeys[0].walls[0]
    assert np.allclose(w.axis_m, ((0, 0.15), (5, 0.15)), atol=1e-12)
    assert w.thickness_m == pytest.approx(0.3, rel=1e-12)


def test_wall_openings_positions(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L1", 3.0)
    w = b.wall(s, (1.0, 2.0), (11.0, 2.0), 0.3, 3.0)
    # a door 1.0 m wide at 2.0..3.0 along the wall, 2.1 m high from the base; a window 4.5..6.0, sill 0.9, head 2.4
    # (profiles in the wall's x-z plane, extruded through the thickness; placement relative to the wall)
    door = b.opening(w, b.rect_profile(1.0, 2.1, centre=(2.5, 1.05)), 0.6, origin=(0, 0.3, 0), z=(0, -1, 0),
                     x=(1, 0, 0))
    win = b.opening(w, b.rect_profile(1.5, 1.5, centre=(5.25, 1.65)), 0.6, origin=(0, 0.3, 0), z=(0, -1, 0),
                    x=(1, 0, 0))
    t = _read(b, tmp_path)
    wall = t.buildings[0].storeys[0].walls[0]
    got = {o.global_id: o for o in wall.openings}
    d, wi = got[door.GlobalId], got[win.GlobalId]
    assert (d.start_m, d.end_m, d.sill_m, d.head_m) == pytest.approx((2.0, 3.0, 0.0, 2.1), abs=1e-9)
    assert (wi.start_m, wi.end_m, wi.sill_m, wi.head_m) == pytest.approx((4.5, 6.0, 0.9, 2.4), abs=1e-9)
    assert wall.plan_area_m2 == pytest.approx(10 * 0.3, rel=1e-9)  # openings not subtracted in plan


def test_layer_set_thickness_and_mismatch(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    ok = b.wall(s, (0, 0), (5, 0), 0.25, 3.0, name="ok")
    bad = b.wall(s, (0, 5), (5, 5), 0.25, 3.0, name="bad")
    b.layer_set_usage([ok], [("Concrete C30/37", 0.2), ("Render", 0.05)])
    b.layer_set_usage([bad], [("Concrete C30/37", 0.4)])
    t = _read(b, tmp_path)
    walls = {w.name: w for w in t.buildings[0].storeys[0].walls}
    assert walls["ok"].thickness_m == pytest.approx(0.25, rel=1e-9)
    assert walls["ok"].material.category == "concrete" and walls["ok"].material.strength_class == "C30/37"
    assert walls["bad"].thickness_m == pytest.approx(0.25, rel=1e-9)  # geometry kept
    assert any("layer total disagrees" in w and bad.GlobalId in w for w in _warnings(t))


def test_load_bearing_from_pset(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    yes = b.wall(s, (0, 0), (5, 0), 0.25, 3.0, name="yes")
    no = b.wall(s, (0, 5), (5, 5), 0.1, 3.0, name="no")
    b.wall(s, (0, 9), (5, 9), 0.1, 3.0, name="unknown")
    b.pset(yes, "Pset_WallCommon", {"LoadBearing": True})
    b.pset(no, "Pset_WallCommon", {"LoadBearing": False})
    walls = {w.name: w for w in _read(b, tmp_path).buildings[0].storeys[0].walls}
    assert walls["yes"].load_bearing is True
    assert walls["no"].load_bearing is False
    assert walls["unknown"].load_bearing is None


# ---------------------------------------------------------------------------- columns and profiles

def _profiles(b):
    f, L = b.f, b.L
    pos = b.axis2d((0, 0))
    h, w, tw, tf = 0.4, 0.2, 0.01, 0.016
    return {
        # handbook closed forms (e.g. Roark's Formulas for Stress and Strain, Table A.1)
        "rect": (f.createIfcRectangleProfileDef("AREA", None, pos, L(0.4), L(0.6)), 0.4 * 0.6),
        "rect_hollow": (f.createIfcRectangleHollowProfileDef("AREA", None, pos, L(0.3), L(0.2), L(0.01), None, None),
                        0.3 * 0.2 - 0.28 * 0.18),
        "circle": (f.createIfcCircleProfileDef("AREA", None, pos, L(0.3)), math.pi * 0.3 ** 2),
        "circle_hollow": (f.createIfcCircleHollowProfileDef("AREA", None, pos, L(0.2), L(0.01)),
                          math.pi * (0.2 ** 2 - 0.19 ** 2)),
        "I": (f.createIfcIShapeProfileDef("AREA", None, pos, L(w), L(h), L(tw), L(tf), None),
              2 * w * tf + (h - 2 * tf) * tw),
        "L": (f.createIfcLShapeProfileDef("AREA", None, pos, L(0.15), L(0.1), L(0.012), None, None, None),
              0.012 * (0.15 + 0.1 - 0.012)),
        "U": (f.createIfcUShapeProfileDef("AREA", None, pos, L(0.3), L(0.1), L(0.01), L(0.015), None, None, None),
              2 * 0.1 * 0.015 + (0.3 - 2 * 0.015) * 0.01),
        "T": (f.createIfcTShapeProfileDef("AREA", None, pos, L(0.3), L(0.2), L(0.012), L(0.02), None, None, None,
                                          None, None), 0.2 * 0.02 + (0.3 - 0.02) * 0.012),
    }


@pytest.mark.parametrize("unit", ["m", "mm"])
def test_column_profiles_against_closed_forms_and_the_engine(ifc_builder, tmp_path, unit):
    import ifcopenshell.geom

    b = ifc_builder("IFC4", unit)
    s = b.storey("L0", 0.0)
    cols = {}
    for i, (name, (prof, area)) in enumerate(_profiles(b).items()):
        cols[name] = (b.column(s, prof, (3.0 * i, 0.0), 3.0, name=name), area)
    path = b.write(tmp_path / "cols.ifc")
    t = read_model(path)
    got = {c.name: c for c in t.buildings[0].storeys[0].columns}
    settings_ = ifcopenshell.geom.settings()
    settings_.set("use-world-coords", True)
    for name, (el, area) in cols.items():
        c = got[name]
        assert c.area_m2 == pytest.approx(area, rel=1e-9), name  # circles: area-preserving polygon
        assert c.height_m == pytest.approx(3.0, rel=1e-12)
        # the engine's tessellation: volume / height is the section area (polygonal sections exact;
        # circles are chorded by the engine, so 1 % there)
        shape = ifcopenshell.geom.create_shape(settings_, b.f.by_guid(el.GlobalId))
        v = np.asarray(shape.geometry.verts).reshape(-1, 3)
        tri = v[np.asarray(shape.geometry.faces).reshape(-1, 3)]
        vol = abs(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum()) / 6
        rel = 1e-2 if "circle" in name else 1e-6
        assert c.area_m2 == pytest.approx(vol / 3.0, rel=rel), name
        # plan extent equals the engine's (circles: our polygon's circumradius is 0.08 % larger)
        tol = 1e-3 if "circle" in name else 1e-9
        assert c.section.bounds == pytest.approx((*v[:, :2].min(axis=0), *v[:, :2].max(axis=0)), abs=tol), name
        assert c.base_elevation_m == pytest.approx(v[:, 2].min(), abs=1e-9)


def test_mapped_item_column(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L0", 0.0)
    f = b.f
    src = f.createIfcShapeRepresentation(b.body_ctx, "Body", "SweptSolid",
                                         [b.extrusion(b.rect_profile(0.4, 0.6), 3.0)])
    rmap = f.createIfcRepresentationMap(b.axis2((0, 0, 0)), src)
    target = f.createIfcCartesianTransformationOperator3D(f.createIfcDirection((0.0, 1.0, 0.0)), None,
                                                          b.point((1.0, 2.0, 0.0)), None, None)
    item = f.createIfcMappedItem(rmap, target)
    b.element("IfcColumn", s, b.shape([item], "MappedRepresentation"), (10.0, 0.0, 0.0), "mapped")
    c = _read(b, tmp_path).buildings[0].storeys[0].columns[0]
    # rotated by 90 degrees (x axis -> +y) and moved by (1, 2) in the placement at (10, 0)
    assert c.section.bounds == pytest.approx((11.0 - 0.3, 2.0 - 0.2, 11.0 + 0.3, 2.0 + 0.2), abs=1e-9)
    assert c.area_m2 == pytest.approx(0.24, rel=1e-12)


# ---------------------------------------------------------------------------- faceted bodies

def _box_brep(b, x0, y0, x1, y1, z0, z1):
    f = b.f
    P = {k: b.point(v) for k, v in {
        0: (x0, y0, z0), 1: (x1, y0, z0), 2: (x1, y1, z0), 3: (x0, y1, z0),
        4: (x0, y0, z1), 5: (x1, y0, z1), 6: (x1, y1, z1), 7: (x0, y1, z1)}.items()}
    quads = [(0, 3, 2, 1), (4, 5, 6, 7), (0, 1, 5, 4), (1, 2, 6, 5), (2, 3, 7, 6), (3, 0, 4, 7)]
    faces = [f.createIfcFace([f.createIfcFaceOuterBound(f.createIfcPolyLoop([P[i] for i in q]), True)])
             for q in quads]
    return f.createIfcFacetedBrep(f.createIfcClosedShell(faces))


def test_faceted_brep_slab_read_from_faces(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L1", 3.0)
    el = b.element("IfcSlab", s, b.shape([_box_brep(b, 0, 0, 8, 5, -0.2, 0.0)], "Brep"), (0, 0, 0), "brep", "FLOOR")
    t = _read(b, tmp_path)
    sl = t.buildings[0].storeys[0].slabs[0]
    assert sl.from_mesh and el.GlobalId in t.mesh_elements
    assert sl.area_m2 == pytest.approx(40.0, rel=1e-9)
    assert sl.thickness_m == pytest.approx(0.2, rel=1e-9)
    assert sl.top_elevation_m == pytest.approx(3.0, abs=1e-9)
    assert any("no parametric body" in w for w in _warnings(t))


def test_triangulated_face_set_column(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    f = b.f
    # a triangular prism, base triangle (0,0),(1,0),(0,1), height 2
    pts = f.createIfcCartesianPointList3D([(0., 0., 0.), (1., 0., 0.), (0., 1., 0.), (0., 0., 2.), (1., 0., 2.),
                                           (0., 1., 2.)])
    tris = [(1, 3, 2), (4, 5, 6), (1, 2, 5), (1, 5, 4), (2, 3, 6), (2, 6, 5), (3, 1, 4), (3, 4, 6)]
    fs = f.createIfcTriangulatedFaceSet(pts, None, True, tris, None)
    b.element("IfcColumn", s, b.shape([fs], "Tessellation"), (4, 4, 0), "tri")
    c = _read(b, tmp_path).buildings[0].storeys[0].columns[0]
    assert c.from_mesh and c.area_m2 == pytest.approx(0.5, rel=1e-12) and c.height_m == pytest.approx(2.0)
    assert c.centroid_m == pytest.approx((4 + 1 / 3, 4 + 1 / 3), abs=1e-12)


def test_engine_fallback_for_a_revolved_solid(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    f = b.f
    # a cylinder of radius 0.3 and height 2 as a revolved rectangle (not an extrusion)
    prof = b.polyline_profile([(0, 0), (0.3, 0), (0.3, 2.0), (0, 2.0)])
    axis = f.createIfcAxis1Placement(b.point((0, 0, 0)), f.createIfcDirection((0.0, 1.0, 0.0)))
    solid = f.createIfcRevolvedAreaSolid(prof, b.axis2((0, 0, 0), (0, -1, 0), (1, 0, 0)), axis, 2 * math.pi)
    el = b.element("IfcColumn", s, b.shape([solid], "SweptSolid"), (5, 5, 0), "revolved")
    t = _read(b, tmp_path)
    c = t.buildings[0].storeys[0].columns[0]
    assert c.from_mesh and el.GlobalId in t.mesh_elements
    assert c.height_m == pytest.approx(2.0, abs=1e-6)
    assert c.area_m2 == pytest.approx(math.pi * 0.09, rel=0.02)  # chorded circle from the engine
    assert c.centroid_m == pytest.approx((5, 5), abs=1e-3)


# ---------------------------------------------------------------------------- materials

@pytest.mark.parametrize("name,cat,cls", [
    ("Concrete C30/37", "concrete", "C30/37"), ("Stahlbeton C25/30", "concrete", "C25/30"),
    ("Beton", "concrete", None), ("Steel S355", "steel", "S355"), ("Baustahl S 235", "steel", "S235"),
    ("Glulam GL24h", "timber", None), ("Holz", "timber", None), ("Brick, Common", "masonry", None),
    ("CMU", "masonry", None), ("Gypsum board", "unknown", None), ("LC25/28 lightweight", "concrete", "LC25/28"),
])
def test_material_classification(name, cat, cls):
    # class names: EN 206 (C/LC classes), EN 10025-2 (S grades)
    assert classify(name) == (cat, cls)


def test_material_properties_and_missing_material_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    out = _tower(b, storeys=1)
    s, slab, walls, cols = out["L0"]
    m = b.material([slab] + cols, "Concrete C40/50")
    import ifcopenshell.api.pset

    ps = ifcopenshell.api.pset.add_pset(b.f, product=m, name="Pset_MaterialCommon")
    ifcopenshell.api.pset.edit_pset(b.f, pset=ps, properties={"MassDensity": 2500.0})
    ps2 = ifcopenshell.api.pset.add_pset(b.f, product=m, name="Pset_MaterialMechanical")
    ifcopenshell.api.pset.edit_pset(b.f, pset=ps2, properties={"YoungModulus": 35.0e9, "PoissonRatio": 0.2})
    t = _read(b, tmp_path)
    st0 = t.buildings[0].storeys[0]
    mat = st0.slabs[0].material
    assert (mat.name, mat.category, mat.strength_class) == ("Concrete C40/50", "concrete", "C40/50")
    assert (mat.density_kg_m3, mat.youngs_modulus_pa, mat.poisson_ratio) == (2500.0, 35.0e9, 0.2)
    assert st0.columns[0].material == mat
    no_mat = [w for w in _warnings(t) if "have no material" in w]
    assert len(no_mat) == 1 and no_mat[0].count("4 walls") == 1


def test_material_on_the_type_only(ifc_builder, tmp_path):
    b = ifc_builder("IFC2X3", "mm")
    s = b.storey("L0", 0.0)
    c = b.column(s, b.rect_profile(0.4, 0.4), (0, 0), 3.0)
    t = b.type_of([c], "IfcColumnType", "C40", "COLUMN")
    b.material([t], "Steel S460")
    col = _read(b, tmp_path).buildings[0].storeys[0].columns[0]
    assert col.material.category == "steel" and col.material.strength_class == "S460"


# ---------------------------------------------------------------------------- storeys and floors

def test_storey_heights_and_ground_rule(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _tower(b, storeys=3, basement=True)
    t = _read(b, tmp_path)
    st_ = t.buildings[0].storeys
    assert [s.name for s in st_] == ["B1", "L0", "L1", "L2"]
    assert [s.above_grade for s in st_] == [False, True, True, True]
    assert [s.height_m for s in st_] == pytest.approx([STOREY_H] * 4)  # top: its walls' top
    assert t.buildings[0].ground_elevation_m == 0.0
    lowest = _read(b, tmp_path, "b.ifc", LevelSettings(ground_rule="lowest"))
    assert all(s.above_grade for s in lowest.buildings[0].storeys)
    named = _read(b, tmp_path, "c.ifc", LevelSettings(ground_rule="named", ground_storey="l1"))
    assert [s.above_grade for s in named.buildings[0].storeys] == [False, False, True, True]
    with pytest.raises(InputError, match="ground storey 'Level 0' not found"):
        _read(b, tmp_path, "d.ifc", LevelSettings(ground_rule="named", ground_storey="Level 0"))


def test_elevation_from_placement_when_attribute_missing(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s0 = b.storey("L0", 0.0)
    s1 = b.storey("L1", 4.2, write_elevation=False)
    b.slab(s0, PLATE, 0.25)
    b.slab(s1, PLATE, 0.25)
    st_ = _read(b, tmp_path).buildings[0].storeys
    assert st_[1].elevation_m == pytest.approx(4.2, abs=1e-12)
    assert st_[0].height_m == pytest.approx(4.2, abs=1e-12)


def test_elements_reassigned_to_the_storey_their_geometry_spans(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s0, s1 = b.storey("L0", 0.0), b.storey("L1", 3.5)
    b.slab(s0, PLATE, 0.25)
    up_slab = b.slab(s0, PLATE, 0.25, top=3.5, name="upper slab in L0")  # top at L1's datum
    b.slab(s1, PLATE, 0.25, name="L1 slab", top=0.0)
    # upper-floor column contained in the ground storey (as unicode-house-e1 does)
    col = b.column(s0, b.rect_profile(0.4, 0.4), (5, 5), 3.5, base=3.5, name="upper col")
    wall = b.wall(s1, (0, 3), (5, 3), 0.2, 3.0, base=-3.25, name="lower wall")  # 0.25..3.25 absolute
    t = _read(b, tmp_path)
    st_ = {s.name: s for s in t.buildings[0].storeys}
    assert [c.name for c in st_["L1"].columns] == ["upper col"]
    assert [w.name for w in st_["L0"].walls] == ["lower wall"]
    assert sorted(x.name for x in st_["L1"].slabs) == ["L1 slab"]  # duplicate of "upper slab" dropped
    assert st_["L1"].columns[0].storey_id == s0.GlobalId  # the exported containment is kept
    text = "\n".join(_warnings(t))
    assert "1 column contained in storey 'L0' lie in storey 'L1'" in text
    assert "1 wall contained in storey 'L1' lie in storey 'L0'" in text
    assert up_slab.GlobalId in text and col.GlobalId in text and wall.GlobalId in text


def test_one_storey_with_two_slab_levels_is_split(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("Undefined", 0.0)
    b.slab(s, PLATE, 0.2, name="ground")
    b.slab(s, PLATE, 0.2, top=4.0, name="mezzanine")
    b.column(s, b.rect_profile(0.3, 0.3), (2, 2), 8.0, name="tall column")
    t = _read(b, tmp_path)
    st_ = t.buildings[0].storeys
    assert [(s_.name, round(s_.elevation_m, 6)) for s_ in st_] == [("Undefined", 0.0), ("Undefined (+4.00 m)", 4.0)]
    assert st_[1].global_id == s.GlobalId + "/1"
    assert st_[0].height_m == pytest.approx(4.0) and st_[1].height_m == pytest.approx(4.0)
    assert any("holds floor slabs at 2 levels (0.00 m, 4.00 m): split into 2 floors" in w for w in _warnings(t))


def test_finish_layers_dropped_and_empty_storey_warned(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s0 = b.storey("L0", 0.0)
    b.storey("Datum", 10.0)
    b.slab(s0, PLATE, 0.25)
    fin = b.slab(s0, PLATE, 0.02, top=0.02, name="tiles")
    t = _read(b, tmp_path)
    assert [x.thickness_m for x in t.buildings[0].storeys[0].slabs] == [pytest.approx(0.25)]
    assert any("finish layers" in w and fin.GlobalId in w for w in _warnings(t))
    assert any("'Datum' at 10.00 m has no slabs, walls or columns" in w for w in _warnings(t))


def test_usage_hint_from_spaces_and_names(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s0 = b.storey("L0", 0.0)
    s1 = b.storey("L1", 3.5, long_name="Plant level")
    for s in (s0, s1):
        b.slab(s, PLATE, 0.25)
    b.space(s0, "0.01", "Open office")
    b.space(s0, "0.02", "Office")
    b.space(s0, "0.03", "Apartment")
    st_ = _read(b, tmp_path).buildings[0].storeys
    assert [s.usage for s in st_] == ["office", "plant"]


def test_several_buildings(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    ba, bb = b.building("A"), b.building("B", (100.0, 0.0, 0.0))
    for bld, n in ((ba, 2), (bb, 3)):
        for i in range(n):
            s = b.storey(f"{bld.Name}{i}", 3.0 * i, bld)
            b.slab(s, PLATE, 0.25)
    t = _read(b, tmp_path)
    assert [(x.name, len(x.storeys)) for x in t.buildings] == [("A", 2), ("B", 3)]
    assert t.buildings[1].storeys[0].slabs[0].centroid_m == pytest.approx((112.0, 8.0))


def test_element_without_geometry_is_named_in_a_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _tower(b, storeys=1)
    s = b.f.by_type("IfcBuildingStorey")[0]
    ghost = b.element("IfcColumn", s, None, (1, 1, 0), "ghost")
    t = _read(b, tmp_path)
    assert any(ghost.GlobalId in w and "without readable geometry" in w and "'ghost'" in w for w in _warnings(t))


# ---------------------------------------------------------------------------- JSON

def test_takeoff_to_dict_is_json_and_carries_the_quantities(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm", true_north_deg=-12.5)
    _tower(b, storeys=2, basement=True)
    t = _read(b, tmp_path)
    d = json.loads(json.dumps(takeoff_to_dict(t), allow_nan=False))
    assert (d["schema"], d["length_unit"], d["true_north_deg"]) == ("IFC4", "MILLIMETRE", pytest.approx(-12.5))
    assert d["mesh_elements"] == 0 and isinstance(d["warnings"], list)
    s = d["buildings"][0]["storeys"][1]
    assert (s["name"], s["above_grade"], s["elevation_m"]) == ("L0", True, 0.0)
    assert s["slab_area_m2"] == pytest.approx(Polygon(PLATE, [SHAFT]).area)
    assert s["slab_thickness_m"] == pytest.approx(0.25)
    assert d["buildings"][0]["storeys"][0]["above_grade"] is False
    w = s["walls"][0]
    assert w["length_m"] == pytest.approx(24.0) and w["thickness_m"] == pytest.approx(0.3)
    assert w["height_m"] == pytest.approx(STOREY_H) and w["plan_area_m2"] == pytest.approx(24 * 0.3)
    c = s["columns"][0]
    assert c["area_m2"] == pytest.approx(0.4) and c["height_m"] == pytest.approx(STOREY_H)


# ---------------------------------------------------------------------------- curves and contexts

def test_composite_curve_profile_with_an_arc(ifc_builder, tmp_path):
    """A 6 m x 4 m rectangle closed by a semicircle of radius 2 m on its east side
    (IfcCompositeCurve: polyline + IfcTrimmedCurve on an IfcCircle, parameter-trimmed)."""
    b = ifc_builder("IFC2X3", "mm")
    s = b.storey("L0", 0.0)
    f = b.f
    line = f.createIfcPolyline([b.point(p) for p in [(6, 4), (0, 4), (0, 0), (6, 0)]])
    circle = f.createIfcCircle(b.axis2d((6, 2)), b.L(2.0))
    arc = f.createIfcTrimmedCurve(circle, [f.create_entity("IfcParameterValue", -math.pi / 2)],
                                  [f.create_entity("IfcParameterValue", math.pi / 2)], True, "PARAMETER")
    curve = f.createIfcCompositeCurve([f.createIfcCompositeCurveSegment("CONTINUOUS", True, line),
                                       f.createIfcCompositeCurveSegment("CONTINUOUS", True, arc)], False)
    prof = f.createIfcArbitraryClosedProfileDef("AREA", None, curve)
    b.element("IfcSlab", s, b.shape([b.extrusion(prof, 0.2, direction=(0, 0, -1))]), (0, 0, 0), "rounded", "FLOOR")
    sl = _read(b, tmp_path).buildings[0].storeys[0].slabs[0]
    exact = 24.0 + math.pi * 4.0 / 2
    # chords every 5 degrees: the semicircle polygon holds sin(5 deg)/(5 deg in rad) of the arc's area
    chorded = 24.0 + (math.pi * 4.0 / 2) * math.sin(math.radians(5)) / math.radians(5)
    assert sl.area_m2 == pytest.approx(chorded, rel=1e-9)
    assert sl.area_m2 == pytest.approx(exact, rel=2e-3)
    assert sl.footprint.bounds == pytest.approx((0.0, 0.0, 8.0, 4.0), abs=1e-9)


def test_indexed_poly_curve_with_arc_segment(ifc_builder, tmp_path):
    """IFC4 IfcIndexedPolyCurve: a 4 m square whose top edge is a half circle through (2, 6)."""
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    f = b.f
    pts = f.createIfcCartesianPointList2D([(0.0, 0.0), (4.0, 0.0), (4.0, 4.0), (2.0, 6.0), (0.0, 4.0)])
    segs = [f.create_entity("IfcLineIndex", (1, 2, 3)), f.create_entity("IfcArcIndex", (3, 4, 5)),
            f.create_entity("IfcLineIndex", (5, 1))]
    curve = f.createIfcIndexedPolyCurve(pts, segs, False)
    prof = f.createIfcArbitraryClosedProfileDef("AREA", None, curve)
    b.element("IfcSlab", s, b.shape([b.extrusion(prof, 0.25, direction=(0, 0, -1))]), (0, 0, 0), "arch", "FLOOR")
    sl = _read(b, tmp_path).buildings[0].storeys[0].slabs[0]
    chorded = 16.0 + (math.pi * 4.0 / 2) * math.sin(math.radians(5)) / math.radians(5)
    assert sl.area_m2 == pytest.approx(chorded, rel=1e-9)
    assert sl.footprint.bounds[3] == pytest.approx(6.0, abs=1e-9)


def test_world_coordinate_system_of_the_context_applied(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    b.model_ctx.WorldCoordinateSystem = b.axis2((100.0, 50.0, 10.0))
    s = b.storey("L0", 0.0)
    b.slab(s, PLATE, 0.25)
    t = _read(b, tmp_path)
    st0 = t.buildings[0].storeys[0]
    assert st0.elevation_m == pytest.approx(10.0)  # placement z; Elevation attribute 0 disagrees
    assert st0.slabs[0].centroid_m == pytest.approx((112.0, 58.0))
    assert any("differs from its placement" in w for w in _warnings(t))


def test_minor_slab_level_does_not_make_a_floor(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s0, s1 = b.storey("L0", 0.0), b.storey("L1", 3.5)
    b.slab(s0, PLATE, 0.25)
    b.slab(s1, PLATE, 0.25)
    b.slab(s0, [(1, 1), (3, 1), (3, 3), (1, 3)], 0.2, top=1.75, name="landing-ish")  # 4 m^2 at mid height
    t = _read(b, tmp_path)
    assert [s.name for s in t.buildings[0].storeys] == ["L0", "L1"]
    assert any("minor slab level at 1.75 m (4.0 m^2, 1 slab)" in w for w in _warnings(t))
    assert "landing-ish" in [x.name for x in t.buildings[0].storeys[0].slabs]


def test_floor_plate_union_and_area_weighted_thickness():
    from swayscreen.pipeline.ifc_floors import floor_plate
    from swayscreen.pipeline.takeoff import Slab

    a = Slab("a", "a", shapely.box(0, 0, 10, 10), 0.30, 0.0)
    b_ = Slab("b", "b", shapely.box(10, 0, 15, 10), 0.20, 0.0)
    roof = Slab("r", "r", shapely.box(0, 0, 15, 10), 0.25, 2.0, "ROOF", sloped=True)
    union, area, t = floor_plate([a, b_, roof])
    assert area == pytest.approx(150.0) and union.equals(shapely.box(0, 0, 15, 10))
    assert t == pytest.approx((100 * 0.30 + 50 * 0.20) / 150)  # sloped roof is not a plate


def test_ifc2x3_material_property_entities(ifc_builder, tmp_path):
    """IFC2X3 keeps mechanical data in IfcGeneralMaterialProperties / IfcMechanicalMaterialProperties."""
    b = ifc_builder("IFC2X3", "mm")
    s = b.storey("L0", 0.0)
    c = b.column(s, b.rect_profile(0.4, 0.4), (0, 0), 3.0)
    m = b.material([c], "Structural steel S355")
    f = b.f
    f.createIfcGeneralMaterialProperties(m, None, None, 7850.0)
    f.createIfcMechanicalMaterialProperties(m, None, 2.1e11, None, 0.3, None)
    mat = _read(b, tmp_path).buildings[0].storeys[0].columns[0].material
    assert (mat.category, mat.strength_class) == ("steel", "S355")
    assert (mat.density_kg_m3, mat.youngs_modulus_pa, mat.poisson_ratio) == (7850.0, 2.1e11, 0.3)
