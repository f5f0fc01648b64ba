"""Representation items shared by many elements are read once and placed per element.

Exports reuse one body for every member of a type (IfcMappedItem of an IfcRepresentationMap)
and often point many representations at one IfcExtrudedAreaSolid. The reader parses such a
body once in object coordinates and moves it by each element's placement
(:func:`swayscreen.pipeline.ifc_geometry.place_prism`). Checked here against:

* ifcopenshell's geometry engine (an outside reference): section area (volume / height),
  plan bounds and base level of each placed column, including rotated, uniformly and
  non-uniformly scaled mapping targets (ISO 16739-1, IfcCartesianTransformationOperator3D
  and ...3DnonUniform);
* the same model with an unshared copy of the body in every element (the reading without
  reuse), element by element, including tilted placements that leave the fast path.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings as hsettings, strategies as st

from swayscreen.pipeline.ifc_geometry import Profile, _prism, place_prism
from swayscreen.pipeline.reading import read_model
from swayscreen.pipeline.takeoff_json import takeoff_to_dict
from shapely.geometry import box

H = 3.0


def _engine_section(b, el):
    import ifcopenshell.geom

    s = ifcopenshell.geom.settings()
    s.set("use-world-coords", True)
    shape = ifcopenshell.geom.create_shape(s, b.f.by_guid(el.GlobalId))
    v = np.asarray(shape.geometry.verts).reshape(-1, 3)
    tri = v[np.asarray(shape.geometry.faces).reshape(-1, 3)]
    vol = abs(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum()) / 6
    height = v[:, 2].max() - v[:, 2].min()
    return vol / height, (*v[:, :2].min(axis=0), *v[:, :2].max(axis=0)), v[:, 2].min()


def test_shared_mapped_body_placed_per_column_matches_the_engine(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "mm")
    s = b.storey("L0", 0.0)
    f = b.f
    src = f.createIfcShapeRepresentation(b.body_ctx, "Body", "SweptSolid",
                                         [b.extrusion(b.rect_profile(0.4, 0.6, centre=(0.1, 0.0)), H)])
    rmap = f.createIfcRepresentationMap(b.axis2((0, 0, 0)), src)

    def op3(x_axis=None, scale=None):
        return f.createIfcCartesianTransformationOperator3D(
            f.createIfcDirection(x_axis) if x_axis else None, None, b.point((0.5, -0.5, 0.0)), scale, None)

    targets = {
        "plain": op3(),
        "turned 90": op3((0.0, 1.0, 0.0)),
        "turned 30": op3((math.cos(math.radians(30)), math.sin(math.radians(30)), 0.0)),
        "scaled 1.5": op3(None, 1.5),
        # Scale 1 along x, Scale2 2 along y, Scale3 1 (z): a 0.4 x 1.2 section, same height
        "stretched": f.createIfcCartesianTransformationOperator3DnonUniform(
            None, None, b.point((0.0, 0.0, 0.0)), 1.0, None, 2.0, 1.0),
    }
    cols = {}
    for i, (name, op) in enumerate(targets.items()):
        item = f.createIfcMappedItem(rmap, op)
        cols[name] = b.element("IfcColumn", s, b.shape([item], "MappedRepresentation"), (5.0 * i, 2.0, 0.0), name)
    path = b.write(tmp_path / "mapped.ifc")
    got = {c.name: c for c in read_model(path).buildings[0].storeys[0].columns}
    for name, el in cols.items():
        area, bounds, zmin = _engine_section(b, el)
        c = got[name]
        assert c.area_m2 == pytest.approx(area, rel=1e-6), name
        assert c.section.bounds == pytest.approx(bounds, abs=1e-6), name
        assert c.base_elevation_m == pytest.approx(zmin, abs=1e-6), name
    # and the closed forms (section a x b, scaled): 0.24, 0.24 x 1.5^2, 0.4 x 1.2
    assert got["plain"].area_m2 == pytest.approx(0.24, rel=1e-12)
    assert got["scaled 1.5"].area_m2 == pytest.approx(0.24 * 2.25, rel=1e-12)
    assert got["scaled 1.5"].height_m == pytest.approx(H * 1.5, rel=1e-12)
    assert got["stretched"].area_m2 == pytest.approx(0.48, rel=1e-12)


def _model(ifc_builder, tmp_path, shared: bool):
    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    one = b.extrusion(b.rect_profile(0.5, 0.3), H, origin=(0.2, 0.1, 0.0))
    poses = [
        dict(xyz=(0.0, 0.0, 0.0)),
        dict(xyz=(4.0, 1.0, 0.5), x=(math.cos(0.7), math.sin(0.7), 0.0)),  # turned about z
        dict(xyz=(8.0, 0.0, 0.0), x=(-1.0, 0.0, 0.0)),  # half turn
        dict(xyz=(12.0, 0.0, 0.0), z=(0.0, 0.0, -1.0), x=(1.0, 0.0, 0.0)),  # upside down
        dict(xyz=(16.0, 0.0, 0.0), z=(0.2, 0.0, 1.0), x=(1.0, 0.0, -0.2)),  # tilted: leaves the fast path
    ]
    for i, pose in enumerate(poses):
        item = one if shared else b.extrusion(b.rect_profile(0.5, 0.3), H, origin=(0.2, 0.1, 0.0))
        b.element("IfcColumn", s, b.shape([item]), name=f"C{i}", **pose)
    return read_model(b.write(tmp_path / f"shared_{shared}.ifc"))


def _close(a, b, path="") -> None:
    if isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for k in a:
            if not k.endswith(("global_id", "_id", "warnings", "source_path")):  # random GlobalIds, warnings naming them
                _close(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b)):
            _close(x, y, f"{path}[{i}]")
    elif isinstance(a, float):
        assert a == pytest.approx(b, rel=1e-12, abs=1e-12), path
    else:
        assert a == b, path


def test_shared_item_reads_like_unshared_copies(ifc_builder, tmp_path):
    shared = _model(ifc_builder, tmp_path, True)
    copies = _model(ifc_builder, tmp_path, False)
    a, b = takeoff_to_dict(shared), takeoff_to_dict(copies)
    _close(a, b)
    cols = shared.buildings[0].storeys[0].columns
    assert len(cols) == 5
    # the tilted one (axis 0.2 run per 1 rise): its z extent is the axis rise H / sqrt(1.04)
    # plus the 0.5 m section width times the tilt of its local x axis, 0.2 / sqrt(1.04)
    tilted = next(c for c in cols if c.name == "C4")
    assert tilted.height_m == pytest.approx((H + 0.5 * 0.2) / math.sqrt(1.04), rel=1e-9)


_unit = st.floats(-1.0, 1.0, allow_nan=False)


@hsettings(max_examples=60, deadline=None, derandomize=True)
@given(st.lists(_unit, min_size=9, max_size=9), st.lists(st.floats(-50, 50), min_size=3, max_size=3),
       st.floats(0.0, 6.28), st.floats(0.1, 10.0))
def test_place_prism_equals_reading_with_the_placement(a9, t3, turn, depth):
    """place_prism(p read at the origin, M) == the prism read with M directly, for any
    invertible linear map plus shift (mapped items may scale and shear)."""
    lin = np.array(a9).reshape(3, 3) + 2.0 * np.eye(3)
    if abs(np.linalg.det(lin)) < 1e-3:
        return
    base = np.eye(4)
    base[:3, :3], base[:3, 3] = lin, t3
    prof = Profile.of(box(-0.3, -0.2, 0.5, 0.4))
    local = np.eye(4)
    local[:2, :2] = [[math.cos(turn), -math.sin(turn)], [math.sin(turn), math.cos(turn)]]
    local[:3, 3] = (1.0, 2.0, 3.0)
    v_local = local[:3, :3] @ np.array([0.0, 0.1, 1.0]) * depth
    p0 = _prism(prof, local, *v_local)
    direct = _prism(prof, base @ local, *(lin @ v_local))
    placed = place_prism(p0, base)
    assert placed.matrix == pytest.approx(direct.matrix, abs=1e-12)
    assert placed.direction == pytest.approx(direct.direction, abs=1e-12)
    assert placed.depth_m == pytest.approx(direct.depth_m, rel=1e-12)
    assert placed.volume_m3 == pytest.approx(direct.volume_m3, rel=1e-12)
    assert placed.vertical == direct.vertical
    assert (placed.zmin, placed.zmax) == pytest.approx((direct.zmin, direct.zmax), abs=1e-9)
