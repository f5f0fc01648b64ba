"""Unusable or odd input: one-line InputError naming the file (or a warning naming the
element), never another exception.

The structural rules checked come from ISO 10303-21 (a STEP physical file starts with
``ISO-10303-21;`` and ends with ``END-ISO-10303-21;``) and the IFC schema (a project length
unit is an IfcSIUnit METRE with optional prefix or a conversion-based unit).
"""
from __future__ import annotations

import random

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.reading import read_model

PLATE = [(0.0, 0.0), (10.0, 0.0), (10.0, 8.0), (0.0, 8.0)]

def _warnings(t) -> list[str]:
    """File warnings and every building's warnings."""
    return list(t.warnings) + [w for b in t.buildings for w in b.warnings]



def _valid(b):
    s = b.storey("L0", 0.0)
    b.slab(s, PLATE, 0.2)
    b.wall(s, (0, 0.1), (10, 0.1), 0.2, 3.0)
    return s


def _one_line_error(path, match: str) -> str:
    with pytest.raises(InputError) as info:
        read_model(path)
    msg = str(info.value)
    assert "\n" not in msg
    assert str(path) in msg  # names the file
    assert match in msg, msg
    return msg


def test_missing_file(tmp_path):
    _one_line_error(tmp_path / "nope.ifc", "file not found")


def test_directory(tmp_path):
    _one_line_error(tmp_path, "is a directory")


def test_empty_file(tmp_path):
    p = tmp_path / "empty.ifc"
    p.write_bytes(b"")
    _one_line_error(p, "empty file")


def test_text_garbage(tmp_path):
    p = tmp_path / "notes.ifc"
    p.write_text("Meeting notes: the tower is 180 m tall.\n")
    _one_line_error(p, "not an IFC file (no ISO-10303-21 header)")


def test_binary_garbage(tmp_path):
    p = tmp_path / "noise.ifc"
    p.write_bytes(random.Random(7).randbytes(5000))
    _one_line_error(p, "not an IFC file")


def test_zip_and_xml_are_named(tmp_path):
    z = tmp_path / "model.ifc"
    z.write_bytes(b"PK\x03\x04" + bytes(100))
    _one_line_error(z, "zip archive")
    x = tmp_path / "model2.ifc"
    x.write_text('<?xml version="1.0"?><ifcXML/>')
    _one_line_error(x, "XML")


def test_truncated_file(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _valid(b)
    full = b.write(tmp_path / "full.ifc").read_bytes()
    p = tmp_path / "half.ifc"
    p.write_bytes(full[: len(full) // 2])
    _one_line_error(p, "truncated or corrupt")


def test_truncated_shared_sample(shared_samples, tmp_path):
    data = (shared_samples / "duplex.ifc").read_bytes()
    p = tmp_path / "duplex-half.ifc"
    p.write_bytes(data[: len(data) // 2])
    _one_line_error(p, "truncated or corrupt")


@settings(max_examples=30, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(frac=st.floats(0.0, 0.995))
def test_truncated_anywhere(ifc_builder, tmp_path_factory, frac):
    b = ifc_builder("IFC4", "mm")
    _valid(b)
    d = tmp_path_factory.mktemp("cut")
    full = b.write(d / "full.ifc").read_bytes()
    cut = full[: int(len(full) * frac)]
    p = d / "cut.ifc"
    p.write_bytes(cut)
    with pytest.raises(InputError) as info:
        read_model(p)
    assert "\n" not in str(info.value) and str(p) in str(info.value)


def test_corrupt_middle(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _valid(b)
    text = b.write(tmp_path / "ok.ifc").read_text()
    lines = text.splitlines()
    k = next(i for i, ln in enumerate(lines) if ln.startswith("#") and "IFCWALL" in ln)
    lines[k] = lines[k][: len(lines[k]) // 2]  # a broken entity line, file still ends properly
    p = tmp_path / "corrupt.ifc"
    p.write_text("\n".join(lines) + "\n")
    _one_line_error(p, "corrupt IFC file (instance #")


def test_old_schema_refused(tmp_path):
    p = tmp_path / "old.ifc"
    p.write_text("ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION((''),'2;1');\nFILE_NAME('','',(''),(''),'','','');\n"
                 "FILE_SCHEMA(('IFC2X2_FINAL'));\nENDSEC;\nDATA;\n#1=IFCPROJECT('0YvctVUKr0kugbFTf53O9L',$,'x',$,$,$,$,$,$);\n"
                 "ENDSEC;\nEND-ISO-10303-21;\n")
    msg = _one_line_error(p, "")
    assert "IFC2X2" in msg or "not readable" in msg


def test_no_storey(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    b.building()
    _one_line_error(b.write(tmp_path / "nostorey.ifc"), "no IfcBuildingStorey")


def test_unknown_unit(ifc_builder, tmp_path):
    b = ifc_builder("IFC2X3", "m")
    _valid(b)
    f = b.f
    length = [u for u in f.by_type("IfcSIUnit") if u.UnitType == "LENGTHUNIT"][0]
    bad = f.createIfcConversionBasedUnit(length.Dimensions, "LENGTHUNIT", "furlong",
                                         f.createIfcMeasureWithUnit(f.create_entity("IfcRatioMeasure", 0.0), length))
    ua = f.by_type("IfcUnitAssignment")[0]
    ua.Units = [u for u in ua.Units if u != length] + [bad]
    _one_line_error(b.write(tmp_path / "furlong.ifc"), "unknown length unit 'furlong'")


def test_placement_cycle(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = _valid(b)
    bld = b.f.by_type("IfcBuilding")[0]
    bld.ObjectPlacement.PlacementRelTo = s.ObjectPlacement
    _one_line_error(b.write(tmp_path / "cycle.ifc"), "cycle")


def test_storey_without_elements_is_a_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    _valid(b)
    b.storey("Empty", 3.0)
    t = read_model(b.write(tmp_path / "empty-storey.ifc"))
    assert any("storey 'Empty' at 3.00 m has no slabs, walls or columns" in w for w in _warnings(t))


def test_element_without_geometry_is_a_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = _valid(b)
    ghost = b.element("IfcWall", s, None, (0, 0, 0), "ghost wall")
    t = read_model(b.write(tmp_path / "ghost.ifc"))
    assert any(f"IfcWall {ghost.GlobalId} 'ghost wall'" in w and "without readable geometry" in w for w in _warnings(t))


def test_zero_thickness_slab_is_a_warning(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    s = _valid(b)
    flat = b.slab(s, PLATE, 0.2, name="paper")
    flat.Representation.Representations[0].Items[0].Depth = 0.0
    t = read_model(b.write(tmp_path / "paper.ifc"))
    assert any(f"slab IfcSlab {flat.GlobalId} 'paper' has zero thickness" in w for w in _warnings(t))


def test_bare_cr_line_endings(ifc_builder, tmp_path):
    b = ifc_builder("IFC2X3", "mm")
    _valid(b)
    src = b.write(tmp_path / "lf.ifc")
    cr = tmp_path / "cr.ifc"
    cr.write_bytes(src.read_bytes().replace(b"\r\n", b"\n").replace(b"\n", b"\r"))
    assert b"\n" not in cr.read_bytes()
    a, c = read_model(src), read_model(cr)
    sa, sc = a.buildings[0].storeys[0], c.buildings[0].storeys[0]
    assert sc.slabs[0].area_m2 == pytest.approx(sa.slabs[0].area_m2) == pytest.approx(80.0)
    assert sc.walls[0].length_m == pytest.approx(10.0)


def test_bare_cr_shared_sample(shared_samples):
    # unicode-house-e4.ifc has bare CR line endings (SOURCES.md)
    raw = (shared_samples / "unicode-house-e4.ifc").read_bytes()
    assert b"\n" not in raw
    t = read_model(shared_samples / "unicode-house-e4.ifc")
    assert len(t.buildings[0].storeys) == 3


_FUZZ_TYPES = ("IfcExtrudedAreaSolid", "IfcRectangleProfileDef", "IfcArbitraryClosedProfileDef", "IfcPolyline",
               "IfcAxis2Placement3D", "IfcAxis2Placement2D", "IfcCartesianPoint", "IfcDirection", "IfcLocalPlacement",
               "IfcShapeRepresentation", "IfcProductDefinitionShape", "IfcBuildingStorey", "IfcRelVoidsElement",
               "IfcOpeningElement", "IfcWall", "IfcSlab", "IfcColumn")


@settings(max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_damaged_entities_never_crash(ifc_builder, tmp_path_factory, data):
    """Blank or absurd values in geometric attributes: a takeoff with warnings, or a
    one-line InputError; never another exception."""
    b = ifc_builder("IFC4", data.draw(st.sampled_from(["m", "mm"])))
    s = _valid(b)
    w = b.f.by_type("IfcWall")[0]
    b.opening(w, b.rect_profile(1.0, 2.1, centre=(2.5, 1.05)), 0.6, origin=(0, 0.3, 0), z=(0, -1, 0), x=(1, 0, 0))
    b.column(s, b.rect_profile(0.4, 0.4), (5, 4), 3.0)
    for _ in range(data.draw(st.integers(1, 3))):
        cls = data.draw(st.sampled_from(_FUZZ_TYPES))
        ents = b.f.by_type(cls)
        if not ents:
            continue
        e = data.draw(st.sampled_from(ents))
        i = data.draw(st.integers(0, len(e) - 1))
        value = data.draw(st.sampled_from([None, 0.0, -1.0, 1e12, float("nan"), (0.0, 0.0, 0.0), ()]))
        try:
            e[i] = value
        except Exception:  # noqa: BLE001 - a value of the wrong type for this attribute
            continue
    p = tmp_path_factory.mktemp("fuzz") / "damaged.ifc"
    try:
        b.write(p)
    except Exception:  # noqa: BLE001 - the writer refuses some damage (e.g. NaN)
        return
    try:
        t = read_model(p)
    except InputError as exc:
        assert "\n" not in str(exc) and str(p) in str(exc)
        return
    assert t.buildings
