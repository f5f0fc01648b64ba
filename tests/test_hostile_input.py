"""Hostile and broken input through the whole command (`swayscreen screen MODEL [--out DIR]`,
run in-process): every case ends with exit 0 or 1 and a warning naming what was left out, or
exit 2 and one line; never a traceback, an internal error, a numpy warning or unbounded work.
Also: an interrupted run leaves no partial output.

Rules checked come from outside the project:

* ISO 10303-21 (STEP physical file): REAL has no NaN or infinity literal; every instance
  name ``#n`` is unique.
* ISO 16739-1 (IFC): IfcGloballyUniqueId must be unique in a file; IfcExtrudedAreaSolid.Depth,
  profile dimensions (IfcRectangleProfileDef.XDim ...) are IfcPositiveLengthMeasure (> 0);
  IfcMaterialLayer.LayerThickness is IfcNonNegativeLengthMeasure; a project length unit is
  METRE with an SI prefix or a conversion-based unit with a factor.
* The plausibility limits (coordinates within 1e8 m, elevations within 1e4 m, element sizes
  up to 1e4 m, under 1000 storeys) are common practice; each is stated beside its constant in
  pipeline/ifc_geometry.py, pipeline/reading.py and pipeline/deriving.py.

Property-based parts (hypothesis, derandomized): random small buildings written by the
``ifc_builder`` fixture, and random corruptions (byte flips, deleted lines, swapped
references, truncations, REALs replaced by hostile values) of the sample files.
"""
from __future__ import annotations

import json
import math
import re
import time
import zipfile
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

import ifcopenshell
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from swayscreen.pipeline.cli import main
from swayscreen.pipeline.deriving import MAX_SWAY_FLOORS

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_models"
SHARED = ROOT.parent / "shared" / "ifc-samples"
PLATE = [(0.0, 0.0), (20.0, 0.0), (20.0, 16.0), (0.0, 16.0)]
_HYPO = dict(deadline=None, derandomize=True, suppress_health_check=[HealthCheck.function_scoped_fixture])


# ---------------------------------------------------------------------------- helpers

@dataclass
class Outcome:
    code: int
    out: str
    err: str
    seconds: float
    data: dict | None  # the JSON summary (stdout with --json, summary.json with --out)

    def warnings(self) -> list[str]:
        d = self.data or {}
        found = list(d.get("warnings", []))
        for b in d.get("buildings", []):
            found += list(b.get("warnings", [])) + list(b.get("missing", []))
        return found

    def warned(self, *fragments: str) -> bool:
        return any(all(f in w for f in fragments) for w in self.warnings())


def screen(capsys, model, *extra, out: Path | None = None) -> Outcome:
    """Run the command in-process and check the contract every outcome must meet."""
    argv = ["screen", str(model)] + (["--out", str(out)] if out is not None else ["--json"]) + [str(a) for a in extra]
    t0 = time.perf_counter()
    code = main(argv)
    seconds = time.perf_counter() - t0
    o, e = capsys.readouterr()
    assert code in (0, 1, 2)
    assert "Traceback" not in o + e and "internal error" not in e, e
    data = None
    if code == 2:
        lines = [x for x in e.splitlines() if x.strip()]
        assert len(lines) == 1 and lines[0].startswith("swayscreen: "), e
    elif out is not None:
        data = json.loads((out / "summary.json").read_text())
        assert not list(out.glob(".*.part")), "temporary files left"
    else:
        data = json.loads(o)
    return Outcome(code, o, e, seconds, data)


def append_instances(path: Path, instances: str, text: str | None = None) -> None:
    """Write ``path`` back with raw ISO 10303-21 instance lines added at the end of its DATA
    section (before the last ENDSEC;); ``text`` replaces the file's own text when given."""
    text = path.read_text() if text is None else text
    cut = text.rindex("ENDSEC;")
    path.write_text(text[:cut] + instances + text[cut:])


def building(b, storeys: int = 3):
    """A small valid building: per storey a slab, three walls and a column."""
    ss = []
    for i in range(storeys):
        s = b.storey(f"L{i}", 3.5 * i)
        b.slab(s, PLATE, 0.25)
        b.wall(s, (0, 0.15), (20, 0.15), 0.3, 3.5)
        b.wall(s, (0.15, 0), (0.15, 16), 0.3, 3.5)
        b.wall(s, (0, 15.85), (20, 15.85), 0.3, 3.5)
        b.column(s, b.rect_profile(0.5, 0.5), (15, 8), 3.5)
        ss.append(s)
    return ss


def _split_args(text: str) -> list[str]:
    """Top-level attribute values of one ISO 10303-21 instance (strings respected)."""
    out, cur, depth, quoted = [], "", 0, False
    for ch in text:
        if ch == "'":
            quoted = not quoted
        if not quoted and ch == "(":
            depth += 1
        elif not quoted and ch == ")":
            depth -= 1
        if not quoted and depth == 0 and ch == ",":
            out.append(cur)
            cur = ""
            continue
        cur += ch
    out.append(cur)
    return out


def set_raw(path: Path, entity, index: int, literal: str) -> Path:
    """Rewrite attribute ``index`` of ``entity`` in the written file as the raw text ``literal``
    (values the IFC writer refuses to write, such as -inf or NaN)."""
    text = path.read_text()
    m = re.search(rf"^#{entity.id()}=([A-Z0-9]+)\((.*)\);$", text, re.M)
    args = _split_args(m.group(2))
    args[index] = literal
    path.write_text(text[: m.start()] + f"#{entity.id()}={m.group(1)}({','.join(args)});" + text[m.end():])
    return path


def wall_body(w):
    return next(r for r in w.Representation.Representations if r.RepresentationIdentifier == "Body").Items[0]


# ---------------------------------------------------------------------------- placements

def test_deep_placement_chain_is_one_line_and_quick(ifc_builder, tmp_path, capsys):
    """10,000 nested IfcLocalPlacement under the building: the chain is walked iteratively and
    refused past 256 levels (real models nest fewer than 10)."""
    b = ifc_builder("IFC4", "m")
    building(b, 2)
    pl = b.f.by_type("IfcBuilding")[0].ObjectPlacement
    site_pl, axis = pl.PlacementRelTo, pl.RelativePlacement
    first = 10 ** 6
    pl.PlacementRelTo = b.f.createIfcLocalPlacement(site_pl, axis)  # rewritten below to the deepest link
    path = b.write(tmp_path / "deep.ifc")
    chain = "".join(f"#{first + k}=IFCLOCALPLACEMENT(#{first + k - 1 if k else site_pl.id()},#{axis.id()});\n"
                    for k in range(10_000))
    text = path.read_text().replace(f"IFCLOCALPLACEMENT(#{site_pl.id()},#{axis.id()});",
                                    f"IFCLOCALPLACEMENT(#{first + 9_999},#{axis.id()});")
    append_instances(path, chain, text)
    r = screen(capsys, path)
    assert r.code == 2 and "nests more than 256 levels deep" in r.err and "deep.ifc" in r.err
    assert r.seconds < 10


@pytest.mark.parametrize("where", ["building", "one wall"])
def test_placement_cycle_is_one_line(ifc_builder, tmp_path, capsys, where):
    b = ifc_builder("IFC4", "m")
    ss = building(b, 2)
    if where == "building":
        b.f.by_type("IfcBuilding")[0].ObjectPlacement.PlacementRelTo = ss[1].ObjectPlacement
    else:
        w = b.f.by_type("IfcWall")[0]
        w.ObjectPlacement.PlacementRelTo = w.ObjectPlacement
    r = screen(capsys, b.write(tmp_path / "cycle.ifc"), out=tmp_path / "out")
    assert r.code == 2 and "is part of a cycle (PlacementRelTo)" in r.err
    assert not (tmp_path / "out").exists()  # nothing written for a refused model


# ---------------------------------------------------------------------------- shared sub-trees

def test_shared_sub_trees_are_bounded(ifc_builder, tmp_path, capsys):
    """Representation items, curves and profiles that reference one sub-tree twice at every
    level ("billion laughs"): the work stays bounded and each element is named."""
    b = ifc_builder("IFC4", "m")
    building(b, 3)
    f = b.f
    col, slab, col2 = b.f.by_type("IfcColumn")[0], b.f.by_type("IfcSlab")[1], b.f.by_type("IfcColumn")[1]
    item = col.Representation.Representations[0].Items[0]
    op = f.createIfcCartesianTransformationOperator3D(None, None, f.createIfcCartesianPoint((0.0, 0.0, 0.0)), None, None)
    for _ in range(7):  # 4^7 = 16384 extrusions
        rep = f.createIfcShapeRepresentation(b.body_ctx, "Body", "MappedRepresentation", [item])
        src = f.createIfcRepresentationMap(b.axis2((0, 0, 0)), rep)
        rep4 = f.createIfcShapeRepresentation(b.body_ctx, "Body", "MappedRepresentation",
                                              [f.createIfcMappedItem(src, op) for _ in range(4)])
        item = f.createIfcMappedItem(f.createIfcRepresentationMap(b.axis2((0, 0, 0)), rep4), op)
    col.Representation.Representations[0].Items = [item]
    prof = slab.Representation.Representations[0].Items[0].SweptArea
    curve = prof.OuterCurve
    for _ in range(30):  # 2^30 copies of the outline
        seg = f.createIfcCompositeCurveSegment("CONTINUOUS", True, curve)
        curve = f.createIfcCompositeCurve([seg, seg], False)
    prof.OuterCurve = curve
    ex = col2.Representation.Representations[0].Items[0]
    pr = ex.SweptArea
    for _ in range(15):  # one square, united with itself 2^15 times: read once per level
        pr = f.createIfcCompositeProfileDef("AREA", None, [pr, pr], None)
    ex.SweptArea = pr
    r = screen(capsys, b.write(tmp_path / "laughs.ifc"))
    assert r.code in (0, 1) and r.seconds < 20
    assert r.warned(col.GlobalId, "body with more than 10000 representation items")
    assert r.warned(slab.GlobalId, "has more than 1000000 points")
    assert not r.warned(col2.GlobalId, "skipped")  # the repeated profile is just a square, read


# ---------------------------------------------------------------------------- absurd numbers

def _target(b, what: str):
    """(entity, attribute index, element GlobalId the warning must name) for each kind of number."""
    if what == "wall location":
        w = b.f.by_type("IfcWall")[1]
        return w.ObjectPlacement.RelativePlacement.Location, 0, w.GlobalId
    if what == "slab depth":
        s = b.f.by_type("IfcSlab")[1]
        return s.Representation.Representations[0].Items[0], 3, s.GlobalId
    if what == "column XDim":
        c = b.f.by_type("IfcColumn")[1]
        return c.Representation.Representations[0].Items[0].SweptArea, 3, c.GlobalId
    if what == "wall direction":
        w = b.f.by_type("IfcWall")[1]
        return wall_body(w).ExtrudedDirection, 0, w.GlobalId
    if what == "storey elevation":
        s = b.f.by_type("IfcBuildingStorey")[1]
        return s, 9, s.GlobalId
    raise AssertionError(what)


@pytest.mark.parametrize("what", ["wall location", "slab depth", "column XDim", "wall direction", "storey elevation"])
@pytest.mark.parametrize("literal", ["1.E300", "-inf", "NaN"])
def test_non_finite_and_absurd_numbers(ifc_builder, tmp_path, capsys, what, literal):
    """1e300 (a valid STEP REAL), -inf (which the parser accepts) and NaN (no STEP literal):
    the element is left out with a warning naming it, or the file is refused in one line."""
    b = ifc_builder("IFC4", "m")
    building(b, 3)
    ent, index, gid = _target(b, what)
    lists = {"wall location", "wall direction"}
    value = f"({literal},0.,0.)" if what == "wall location" else f"(0.,{literal},1.)" if what == "wall direction" else literal
    path = set_raw(b.write(tmp_path / "m.ifc"), ent, index, value)
    r = screen(capsys, path)
    if literal == "NaN" and what not in lists:
        # a single REAL attribute the parser cannot read: the instance is short of attributes
        assert r.code == 2 and f"corrupt IFC file (instance #{ent.id()}" in r.err
        return
    assert r.code in (0, 1)
    if literal == "NaN":  # inside a list the parser drops the token and says so; we pass that on
        assert r.warned("the IFC parser could not read 1 value(s)", f"#{ent.id()}")
    elif what == "storey elevation":
        assert r.warned(gid, "Elevation", "not usable; its placement is used")
    else:
        assert r.warned(gid, "not a usable number")


def test_absurd_but_finite_sizes_and_places(ifc_builder, tmp_path, capsys):
    """A 50 km extrusion, a slab 14 km up (a 5 km offset on a storey 9 km up: each placement
    plausible, their sum not), a wall 1e9 m away: each left out, named, with why."""
    b = ifc_builder("IFC4", "m")
    ss = building(b, 3)
    long_wall = b.f.by_type("IfcWall")[1]
    wall_body(long_wall).Depth = 5e4
    high = b.storey("High", 9000.0)
    sky = b.slab(high, PLATE, 0.25, top=5000.0, name="sky")
    far = b.wall(ss[1], (1e9, 0), (1e9 + 10, 0), 0.3, 3.0, name="far")
    r = screen(capsys, b.write(tmp_path / "absurd.ifc"))
    assert r.code in (0, 1)
    assert r.warned(long_wall.GlobalId, "extrusion depth 5e+04 m is not a positive length up to 10000 m")
    assert r.warned(f"IfcSlab {sky.GlobalId} 'sky' (body elevations outside +-10000 m)")
    assert r.warned(far.GlobalId, "is out of range")  # its placement lies 1e9 m out


def test_nothing_usable_left_is_exit_2(ifc_builder, tmp_path, capsys):
    """The building's placement at -inf moves every element out of reach: no partial screening."""
    b = ifc_builder("IFC4", "m")
    building(b, 2)
    loc = b.f.by_type("IfcBuilding")[0].ObjectPlacement.RelativePlacement.Location
    path = set_raw(b.write(tmp_path / "gone.ifc"), loc, 0, "(-inf,0.,0.)")
    r = screen(capsys, path)
    assert r.code == 2 and "no slab, wall or column could be read (10 found; first:" in r.err


# ---------------------------------------------------------------------------- zero and negative sizes

@pytest.mark.parametrize("case", ["slab depth 0", "slab depth -0.25", "wall depth -3", "column XDim 0",
                                  "column YDim -0.5", "wall without width", "layer -0.3"])
def test_zero_and_negative_thickness(ifc_builder, tmp_path, capsys, case):
    b = ifc_builder("IFC4", "m")
    building(b, 3)
    slab, wall, col = b.f.by_type("IfcSlab")[1], b.f.by_type("IfcWall")[4], b.f.by_type("IfcColumn")[1]
    expect: tuple[str, ...]
    if case.startswith("slab depth"):
        slab.Representation.Representations[0].Items[0].Depth = float(case.split()[-1])
        expect = (slab.GlobalId, "has zero thickness or area; skipped") if case.endswith(" 0") else \
            (slab.GlobalId, "extrusion depth -0.25 m is not a positive length")
    elif case == "wall depth -3":
        wall_body(wall).Depth = -3.0
        expect = (wall.GlobalId, "extrusion depth -3 m is not a positive length")
    elif case.startswith("column"):
        attr_name, v = case.split()[1], float(case.split()[2])
        setattr(col.Representation.Representations[0].Items[0].SweptArea, attr_name, v)
        expect = (col.GlobalId, f"{attr_name} {v:.3g} m is not a positive length")
    elif case == "wall without width":
        for p in wall_body(wall).SweptArea.OuterCurve.Points:
            p.Coordinates = (p.Coordinates[0], 0.0)
        expect = (wall.GlobalId, "has no area")
    else:
        b.layer_set_usage([wall], [("Concrete C30/37", -0.3)])
        expect = ("implausible material values ignored", "thickness -0.3 m")
    r = screen(capsys, b.write(tmp_path / "thin.ifc"))
    assert r.code in (0, 1)
    assert r.warned(*expect), r.warnings()


# ---------------------------------------------------------------------------- GlobalIds

def test_duplicated_global_ids_keep_every_entity(ifc_builder, tmp_path, capsys):
    """Two walls and two storeys share GlobalIds (ISO 16739-1 requires them unique): a warning,
    both walls count, the write-back goes to the first of each and drops nothing."""
    b = ifc_builder("IFC4", "m")
    ss = building(b, 3)
    walls = b.f.by_type("IfcWall")
    walls[4].GlobalId = walls[1].GlobalId  # wall of L0 and a wall of L1
    ss[2].GlobalId = ss[1].GlobalId
    src = b.write(tmp_path / "dups.ifc")
    r = screen(capsys, src, out=tmp_path / "out")
    assert r.code in (0, 1)
    assert r.warned("2 GlobalIds shared by several entities", walls[1].GlobalId, ss[1].GlobalId)
    a = ifcopenshell.open(str(src))
    c = ifcopenshell.open(str(tmp_path / "out" / "dups-annotated.ifc"))
    before, after = Counter(e.is_a() for e in a), Counter(e.is_a() for e in c)
    assert not before - after
    assert set(after - before) <= {"IfcPropertySet", "IfcRelDefinesByProperties", "IfcPropertySingleValue"}
    sway = [rel.RelatedObjects[0].id() for rel in c.by_type("IfcRelDefinesByProperties")
            if rel.RelatingPropertyDefinition.Name == "Swayscreen_StoreySway"]
    assert ss[2].id() not in sway and ss[1].id() in sway  # the first of the two storeys only
    assert len(sway) == len(set(sway))


def test_writer_with_a_target_shared_by_two_entities(ifc_builder, tmp_path):
    """write_annotated directly: a GlobalId matching two entities annotates the first (lowest
    #id) and says so; when the first cannot carry a property set (a property set itself), none."""
    from swayscreen.pipeline.writing import Prop, PsetAnnotation, write_annotated

    b = ifc_builder("IFC4", "m")
    ss = building(b, 2)
    w0, w1 = b.f.by_type("IfcWall")[:2]
    w1.GlobalId = w0.GlobalId
    pset = b.pset(ss[0], "Test_Data", {"Note": "kept"})
    later = b.storey("L9", 30.0)
    later.GlobalId = pset.GlobalId  # the set comes first in the file
    assert pset.id() < later.id()
    src = b.write(tmp_path / "shared.ifc")
    anns = [PsetAnnotation(w0.GlobalId, "Swayscreen_Test", (Prop("Value", 1.5, "IfcReal"),)),
            PsetAnnotation(pset.GlobalId, "Swayscreen_Test", (Prop("Value", 2.5, "IfcReal"),))]
    rep = write_annotated(src, tmp_path / "out.ifc", anns)
    assert rep.psets_written == 1
    assert any(f"written to #{min(w0.id(), w1.id())} only" in n for n in rep.notes)
    assert any("cannot carry a property set, so none was written" in n for n in rep.notes)
    out = ifcopenshell.open(str(tmp_path / "out.ifc"))
    before = Counter(e.is_a() for e in ifcopenshell.open(str(src)))
    assert Counter(e.is_a() for e in out) - before == Counter(
        {"IfcPropertySet": 1, "IfcPropertySingleValue": 1, "IfcRelDefinesByProperties": 1})
    assert not before - Counter(e.is_a() for e in out)
    (rel,) = [r for r in out.by_type("IfcRelDefinesByProperties") if r.RelatingPropertyDefinition.Name == "Swayscreen_Test"]
    assert rel.RelatedObjects[0].id() == min(w0.id(), w1.id())


def test_split_floor_is_screened_and_written(ifc_builder, tmp_path, capsys):
    """A storey holding full slabs at two levels becomes two floors (id <GlobalId>/1); the
    write-back skips the derived id instead of failing on it."""
    b = ifc_builder("IFC4", "m")
    ss = building(b, 3)
    b.slab(ss[1], PLATE, 0.25, top=1.75, name="mezzanine")
    r = screen(capsys, b.write(tmp_path / "split.ifc"), out=tmp_path / "out")
    assert r.code in (0, 1)
    assert r.warned("storey 'L1' holds floor slabs at 2 levels")


# ---------------------------------------------------------------------------- units

def test_unknown_and_implausible_units(ifc_builder, tmp_path, capsys):
    outcomes = {}
    for case in ("furlong", "second", "exametre", "density overflow"):
        b = ifc_builder("IFC4", "m")
        building(b, 2)
        f = b.f
        length = [u for u in f.by_type("IfcSIUnit") if u.UnitType == "LENGTHUNIT"][0]
        ua = f.by_type("IfcUnitAssignment")[0]
        if case == "furlong":
            bad = f.createIfcConversionBasedUnit(length.Dimensions, "LENGTHUNIT", "furlong", f.createIfcMeasureWithUnit(
                f.create_entity("IfcRatioMeasure", 0.0), length))
            ua.Units = [u for u in ua.Units if u != length] + [bad]
        elif case == "second":
            length.Name = "SECOND"
        elif case == "exametre":
            length.Prefix = "EXA"
        else:  # (kilometre)^400 / m^3 overflows a float: the unit is not understood, SI assumed
            km = f.createIfcSIUnit(None, "LENGTHUNIT", "KILO", "METRE")
            du = f.createIfcDerivedUnit([f.createIfcDerivedUnitElement(km, 400), f.createIfcDerivedUnitElement(length, -3)],
                                        "MASSDENSITYUNIT", None)
            ua.Units = list(ua.Units) + [du]
        outcomes[case] = screen(capsys, b.write(tmp_path / f"{case}.ifc"))
    assert outcomes["furlong"].code == 2 and "unknown length unit 'furlong'" in outcomes["furlong"].err
    assert outcomes["second"].code == 2 and "unknown length unit SECOND" in outcomes["second"].err
    assert outcomes["exametre"].code == 2 and "implausible length unit EXAMETRE" in outcomes["exametre"].err
    assert outcomes["density overflow"].code in (0, 1)
    assert outcomes["density overflow"].warned("mass density unit not understood; SI assumed")


# ---------------------------------------------------------------------------- size

def _huge_points(ifc_builder, tmp_path, with_building: bool) -> Path:
    b = ifc_builder("IFC4", "m")
    if with_building:
        b.building()
    p = b.write(tmp_path / "huge.ifc")
    append_instances(p, "".join(f"#{100000 + k}=IFCCARTESIANPOINT(({k}.,{k % 97}.,0.));\n" for k in range(200_000)))
    return p


@pytest.mark.parametrize("with_building", [False, True])
def test_huge_file_without_storeys_ends_quickly(ifc_builder, tmp_path, capsys, monkeypatch, with_building):
    """200,000 IfcCartesianPoint and no storey: refused from a byte scan, never parsed."""
    path = _huge_points(ifc_builder, tmp_path, with_building)
    parsed = []
    real_open = ifcopenshell.open
    monkeypatch.setattr(ifcopenshell, "open", lambda *a, **k: parsed.append(a) or real_open(*a, **k))
    r = screen(capsys, path)
    assert r.code == 2 and "no IfcBuildingStorey (the model has no storeys to screen)" in r.err
    assert not parsed and r.seconds < 5


def test_five_thousand_storeys_are_refused_before_the_elements(ifc_builder, tmp_path, capsys):
    import ifcopenshell.guid

    b = ifc_builder("IFC4", "m")
    building(b, 2)  # two storeys with elements
    bld = b.f.by_type("IfcBuilding")[0]
    path = b.write(tmp_path / "tall.ifc")
    first = 10 ** 6
    lines = [f"#{first + i}=IFCBUILDINGSTOREY('{ifcopenshell.guid.new()}',$,'S{i}',$,$,$,$,$,.ELEMENT.,{3.0 * i + 7.0});\n"
             for i in range(5000)]
    refs = ",".join(f"#{first + i}" for i in range(5000))
    lines.append(f"#{first + 5000}=IFCRELAGGREGATES('{ifcopenshell.guid.new()}',$,$,$,#{bld.id()},({refs}));\n")
    append_instances(path, "".join(lines))
    r = screen(capsys, path)
    assert r.code == 2 and "has 5002 storeys; more than 1000 cannot be screened" in r.err
    assert r.seconds < 20


def test_too_many_buildings_are_refused(ifc_builder, tmp_path, capsys):
    import ifcopenshell.guid

    b = ifc_builder("IFC4", "m")
    building(b, 1)
    site = b.f.by_type("IfcSite")[0]
    path = b.write(tmp_path / "campus.ifc")
    first, lines, blds = 10 ** 6, [], []
    for i in range(250):
        bid, sid = first + 3 * i, first + 3 * i + 1
        blds.append(f"#{bid}")
        lines += [f"#{bid}=IFCBUILDING('{ifcopenshell.guid.new()}',$,'B{i}',$,$,$,$,$,.ELEMENT.,$,$,$);\n",
                  f"#{sid}=IFCBUILDINGSTOREY('{ifcopenshell.guid.new()}',$,'G',$,$,$,$,$,.ELEMENT.,0.);\n",
                  f"#{sid + 1}=IFCRELAGGREGATES('{ifcopenshell.guid.new()}',$,$,$,#{bid},(#{sid}));\n"]
    lines.append(f"#{first + 900}=IFCRELAGGREGATES('{ifcopenshell.guid.new()}',$,$,$,#{site.id()},({','.join(blds)}));\n")
    append_instances(path, "".join(lines))
    r = screen(capsys, path)
    assert r.code == 2 and "251 buildings with storeys; more than 200 cannot be screened" in r.err


def test_more_sway_floors_than_a_stick_model_is_built_for(ifc_builder, tmp_path, capsys):
    """MAX_SWAY_FLOORS + 10 storeys with slabs and walls: storeys and masses, no stick model,
    the reason said, exit 1 (a scheme that cannot be cleared); bounded time."""
    n = MAX_SWAY_FLOORS + 10
    b = ifc_builder("IFC4", "m")
    for i in range(n):
        s = b.storey(f"L{i}", 3.0 * i)
        b.slab(s, PLATE, 0.2)
        b.wall(s, (0, 0.15), (20, 0.15), 0.3, 3.0)
    r = screen(capsys, b.write(tmp_path / "many.ifc"))
    assert r.code == 1 and r.data["status"] == "incomplete"
    assert r.warned("sway floors, more than the 250 a stick model is built for")
    assert r.seconds < 30


# ---------------------------------------------------------------------------- settings

@pytest.mark.parametrize("text, fragment", [
    ("[loads]\nsuperimposed_dead_kpa = -1.5\n", "is below the minimum 0"),
    ("[loads]\nsuperimposed_dead_kpa = \"lots\"\n", "expected a number"),
    ("[loads]\nsuperimposed_dead_kpa = true\n", "expected a number"),
    ("[loads]\nsuperimposed_dead_kpa = nan\n", "must be finite"),
    ("[materials]\nsteel_modulus_pa = inf\n", "must be finite"),
    ("[loads]\nlive_load_kpa = { office = -3.0 }\n", "office = -3 is below the minimum 0"),
    ("[levels]\nfloor_tolerance_m = 1e300\n", "is above the maximum"),
    ("loads = 3\n", "[loads] must be a table"),
    ("[loads\n", "not valid TOML"),
    (b"\x80\x81\xfe\xff", "cannot read settings file"),
])
def test_bad_settings_are_one_line_exit_2(tmp_path, capsys, text, fragment):
    p = tmp_path / "s.toml"
    p.write_bytes(text if isinstance(text, bytes) else text.encode())
    r = screen(capsys, SAMPLES / "courtyard_12_m.ifc", "--settings", p)
    assert r.code == 2 and fragment in r.err


# ---------------------------------------------------------------------------- interrupted runs

@pytest.fixture(scope="module")
def flagged_run(tmp_path_factory):
    """The 12-storey sample with an unreachable drift limit: flagged, so every output (BCF
    included) is written."""
    from swayscreen.pipeline.screening import screen_file

    folder = tmp_path_factory.mktemp("strict")
    settings_path = folder / "strict.toml"
    settings_path.write_text("[drift]\noverall_limit_ratio = 5000.0\nstorey_limit_ratio = 5000.0\n")
    run = screen_file(SAMPLES / "courtyard_12_mm.ifc", settings_path)
    assert run.status == "flagged"
    return run


OUTPUTS = ("courtyard_12_mm-annotated.ifc", "summary.json", "report.html", "issues.bcfzip")


def _complete(folder: Path) -> dict[str, bytes]:
    """Every output present and whole (each format's own end marker or container check)."""
    files = {n: (folder / n).read_bytes() for n in OUTPUTS}
    assert files["courtyard_12_mm-annotated.ifc"].rstrip().endswith(b"END-ISO-10303-21;")
    json.loads(files["summary.json"])
    assert files["report.html"].rstrip().endswith(b"</html>")
    with zipfile.ZipFile(folder / "issues.bcfzip") as z:
        assert z.testzip() is None and "bcf.version" in z.namelist()
    return files


def _cheap_report(monkeypatch):
    import swayscreen.pipeline.report as report

    monkeypatch.setattr(report, "render_report", lambda run, when=None: "<!DOCTYPE html><html>report</html>\n")


def _interrupt_at(monkeypatch, step: str):
    """Raise KeyboardInterrupt at one step of write_outputs."""
    import swayscreen.pipeline.bcf as bcf
    import swayscreen.pipeline.summary as summary
    import swayscreen.pipeline.writing as writing

    def boom(*a, **k):
        raise KeyboardInterrupt

    if step == "summary":
        monkeypatch.setattr(summary, "build_summary", boom)
    elif step == "report":
        import swayscreen.pipeline.report as report

        monkeypatch.setattr(report, "render_report", boom)
    elif step == "annotated copy, half streamed":
        real = writing._stream

        def half(src, out, drop, lines):
            out.write(Path(src).read_bytes()[:1000])
            raise KeyboardInterrupt

        monkeypatch.setattr(writing, "_stream", half)
        assert real is not half
    elif step == "BCF":
        monkeypatch.setattr(bcf, "write_bcfzip", boom)
    else:
        raise AssertionError(step)


STEPS = ["summary", "report", "annotated copy, half streamed", "BCF"]


@pytest.mark.parametrize("step", STEPS)
def test_interrupted_write_leaves_the_folder_as_it_was(flagged_run, tmp_path, monkeypatch, step):
    from datetime import datetime, timezone

    from swayscreen.pipeline.outputs import write_outputs

    _cheap_report(monkeypatch)
    out = tmp_path / "out"
    write_outputs(flagged_run, out, when=datetime(2026, 1, 1, tzinfo=timezone.utc))
    before = _complete(out)
    _interrupt_at(monkeypatch, step)
    with pytest.raises(KeyboardInterrupt):
        write_outputs(flagged_run, out, when=datetime(2026, 2, 2, tzinfo=timezone.utc))
    assert sorted(p.name for p in out.iterdir()) == sorted(OUTPUTS)  # no temporary name left
    assert _complete(out) == before  # the earlier run's files, whole and unchanged


@pytest.mark.parametrize("step", STEPS)
def test_interrupted_first_run_writes_nothing(flagged_run, tmp_path, monkeypatch, step):
    from swayscreen.pipeline.outputs import write_outputs

    _cheap_report(monkeypatch)
    _interrupt_at(monkeypatch, step)
    out = tmp_path / "out"
    with pytest.raises(KeyboardInterrupt):
        write_outputs(flagged_run, out)
    assert not out.exists() or not any(out.iterdir())


def test_ctrl_c_during_the_renames_is_held_until_they_are_done(flagged_run, tmp_path, monkeypatch):
    """A real SIGINT while the outputs are renamed into place: every rename completes (a whole
    new set, no temporary file), then the interrupt is delivered."""
    import os
    import signal

    from swayscreen.pipeline import outputs

    _cheap_report(monkeypatch)
    real_replace = os.replace
    calls = []

    def replace_with_sigint(a, b):
        if Path(b).name in OUTPUTS and not calls:
            calls.append(b)
            signal.raise_signal(signal.SIGINT)  # Python runs the handler before the next bytecode
        return real_replace(a, b)

    monkeypatch.setattr(outputs.os, "replace", replace_with_sigint)
    out = tmp_path / "out"
    handler = signal.getsignal(signal.SIGINT)
    with pytest.raises(KeyboardInterrupt):
        outputs.write_outputs(flagged_run, out)
    assert calls
    _complete(out)
    assert sorted(p.name for p in out.iterdir()) == sorted(OUTPUTS)
    assert signal.getsignal(signal.SIGINT) is handler  # restored


def test_interrupted_command_is_exit_2_in_one_line(tmp_path, capsys, monkeypatch):
    import swayscreen.pipeline.report as report

    def boom(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(report, "render_report", boom)
    out = tmp_path / "out"
    code = main(["screen", str(SAMPLES / "courtyard_12_m.ifc"), "--out", str(out)])
    o, e = capsys.readouterr()
    assert code == 2
    assert e.strip() == "swayscreen: interrupted; no partial output was left"
    assert not out.exists()


# ---------------------------------------------------------------------------- random buildings

@st.composite
def buildings(draw):
    """A random small building: 1-6 storeys of random heights, 0-2 rectangular slabs, 0-4 walls
    and 0-4 columns per storey, in a random schema and unit (metres in, the builder converts)."""
    n = draw(st.integers(1, 6))
    heights = [draw(st.floats(2.4, 8.0)) for _ in range(n)]
    coord = st.floats(0.0, 40.0)
    storeys = []
    for h in heights:
        slabs = [(draw(coord), draw(coord), draw(st.floats(1.0, 40.0)), draw(st.floats(1.0, 40.0)),
                  draw(st.floats(0.01, 0.6))) for _ in range(draw(st.integers(0, 2)))]
        walls = []
        for _ in range(draw(st.integers(0, 4))):
            x0, y0 = draw(coord), draw(coord)
            ang, length = draw(st.floats(0.0, 2 * math.pi)), draw(st.floats(0.5, 30.0))
            walls.append(((x0, y0), (x0 + length * math.cos(ang), y0 + length * math.sin(ang)),
                          draw(st.floats(0.05, 0.6))))
        cols = [((draw(coord), draw(coord)), draw(st.floats(0.15, 1.2)), draw(st.floats(0.15, 1.2)))
                for _ in range(draw(st.integers(0, 4)))]
        storeys.append((h, slabs, walls, cols))
    return draw(st.sampled_from(["IFC2X3", "IFC4", "IFC4X3"])), draw(st.sampled_from(["m", "mm", "ft"])), storeys


@settings(max_examples=12, **_HYPO)
@given(spec=buildings())
def test_random_buildings_screen_cleanly(ifc_builder, tmp_path_factory, capsys, spec):
    schema, unit, storeys = spec
    b = ifc_builder(schema, unit)
    z = 0.0
    for i, (h, slabs, walls, cols) in enumerate(storeys):
        s = b.storey(f"L{i}", z)
        for x, y, w, d, t in slabs:
            b.slab(s, [(x, y), (x + w, y), (x + w, y + d), (x, y + d)], t)
        for a, e, t in walls:
            b.wall(s, a, e, t, h)
        for xy, cx, cy in cols:
            b.column(s, b.rect_profile(cx, cy), xy, h)
        z += h
    folder = tmp_path_factory.mktemp("random")
    src = b.write(folder / "random.ifc")
    r = screen(capsys, src, out=folder / "out")
    assert r.code in (0, 1), r.err  # a valid model is screened (flagged or incomplete at worst)
    a = ifcopenshell.open(str(src))
    c = ifcopenshell.open(str(folder / "out" / "random-annotated.ifc"))
    assert {e.GlobalId for e in a.by_type("IfcRoot")} <= {e.GlobalId for e in c.by_type("IfcRoot")}
    assert not Counter(e.is_a() for e in a) - Counter(e.is_a() for e in c)


# ---------------------------------------------------------------------------- corrupted samples

def _corruption_sources() -> list[Path]:
    found = [SAMPLES / "courtyard_12_mm.ifc", SAMPLES / "courtyard_12_mm_ifc2x3.ifc"]
    if (SHARED / "unicode-house-e2.ifc").is_file():  # a real export (skipped when absent)
        found.append(SHARED / "unicode-house-e2.ifc")
    return [p for p in found if p.is_file()]


_REF = re.compile(rb"#\d+")
_REAL = re.compile(rb"(?<=[(,])-?\d+\.\d*(?:E[-+]?\d+)?(?=[,)])")
_HOSTILE = (b"0.", b"-1.", b"-0.", b"1.E300", b"-1.E300", b"-inf", b"1.E-300", b"1.E15", b"1.E8")


def corrupt(data: bytes, kind: str, rnd) -> bytes:
    """``data`` damaged by ``kind``, positions from the random generator ``rnd``."""
    if kind == "flip":
        buf = bytearray(data)
        for _ in range(rnd.randint(1, 20)):
            buf[rnd.randrange(len(buf))] ^= rnd.randrange(1, 256)
        return bytes(buf)
    if kind == "truncate":
        return data[: rnd.randrange(len(data))]
    if kind == "hostile numbers":  # REALs replaced by values no building has (-inf is accepted by the parser)
        reals = list(_REAL.finditer(data))
        for m in sorted(rnd.sample(reals, min(rnd.randint(1, 12), len(reals))), key=lambda m: -m.start()):
            data = data[: m.start()] + rnd.choice(_HOSTILE) + data[m.end():]
        return data
    lines = data.split(b"\n")
    body = [i for i, ln in enumerate(lines) if ln.startswith(b"#")]
    if kind == "delete lines":
        drop = {rnd.choice(body) for _ in range(rnd.randint(1, 15))}
        return b"\n".join(ln for i, ln in enumerate(lines) if i not in drop)
    if kind == "swap references":
        for _ in range(rnd.randint(1, 10)):
            i, j = rnd.choice(body), rnd.choice(body)
            ri, rj = list(_REF.finditer(lines[i]))[1:], list(_REF.finditer(lines[j]))[1:]  # not the instance names
            if not ri or not rj:
                continue
            a, c = rnd.choice(ri), rnd.choice(rj)
            ref_a, ref_c = a.group(), c.group()
            lines[i] = lines[i][: a.start()] + ref_c + lines[i][a.end():]
            lines[j] = lines[j][: c.start()] + ref_a + lines[j][c.end():]
        return b"\n".join(lines)
    raise AssertionError(kind)


@pytest.mark.parametrize("kind", ["flip", "delete lines", "swap references", "truncate", "hostile numbers"])
@settings(max_examples=6, **_HYPO)
@given(data=st.data())
def test_corrupted_samples_screen_cleanly(tmp_path_factory, capsys, kind, data):
    sources = _corruption_sources()
    if not sources:
        pytest.skip("no sample IFC files")
    src = data.draw(st.sampled_from(sources))
    rnd = data.draw(st.randoms(use_true_random=False))
    bad = corrupt(src.read_bytes().replace(b"\r\n", b"\n"), kind, rnd)
    folder = tmp_path_factory.mktemp("corrupt")
    path = folder / f"bad-{src.name}"
    path.write_bytes(bad)
    r = screen(capsys, path, out=folder / "out")
    if r.code == 2:
        assert path.name in r.err
    else:
        assert (folder / "out" / "report.html").is_file()
    assert path.read_bytes() == bad  # the input is only read


# ---------------------------------------------------------------------------- the geometry engine

@pytest.mark.parametrize("angle", [None, "-inf", "1.E300"])
def test_damaged_bodies_never_reach_the_geometry_engine(ifc_builder, tmp_path, capsys, angle):
    """A revolved solid (read by the geometry engine, which cannot be interrupted): valid, it
    is read as a mesh; with a non-finite or absurd angle it is refused before the engine."""
    b = ifc_builder("IFC4", "m")
    building(b, 2)
    f = b.f
    col = f.by_type("IfcColumn")[0]
    axis = f.createIfcAxis1Placement(f.createIfcCartesianPoint((0.0, 0.0, 0.0)), f.createIfcDirection((0.0, 1.0, 0.0)))
    rev = f.createIfcRevolvedAreaSolid(b.rect_profile(0.4, 0.4, centre=(2.0, 0.0)), b.axis2((0, 0, 0)), axis, 1.0)
    col.Representation.Representations[0].Items = [rev]
    path = b.write(tmp_path / "revolved.ifc")
    if angle is not None:
        set_raw(path, rev, 3, angle)
    r = screen(capsys, path)
    assert r.code in (0, 1)
    if angle is None:
        assert r.warned("read as a mesh projected to plan", col.GlobalId)
    else:
        assert r.warned(col.GlobalId, "NaN, infinite or absurd number", "for the geometry engine")


def test_undecodable_bytes_reach_every_output(tmp_path, capsys):
    """A byte flipped to 0xCD inside an entity keyword (ISO 10303-21 is ASCII): the parser drops
    the instance and logs the keyword with the undecodable byte; the warning passes it on, and
    the console, report, summary and BCF are still written, never an encoding error."""
    data = (SAMPLES / "courtyard_12_mm.ifc").read_bytes()
    at = data.index(b"IFCLOCALPLACEMENT(", data.index(b"IFCWALL("))
    data = data[:at] + b"IFCLOCAL\xcdLACEMENT(" + data[at + len(b"IFCLOCALPLACEMENT("):]
    path = tmp_path / "bytes.ifc"
    path.write_bytes(data)
    strict = tmp_path / "strict.toml"  # flagged, so a BCF archive is written too (as in test_outputs.py)
    strict.write_text("[drift]\noverall_limit_ratio = 5000.0\nstorey_limit_ratio = 5000.0\n")
    r = screen(capsys, path, "--settings", strict, out=tmp_path / "out")
    assert r.code == 1 and r.data["status"] == "flagged"
    assert r.warned("the IFC parser could not read", "IFCLOCAL\ufffdLACEMENT")
    assert "IFCLOCAL\ufffdLACEMENT" in (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    with zipfile.ZipFile(tmp_path / "out" / "issues.bcfzip") as z:
        assert z.testzip() is None


def test_a_floor_in_thousands_of_pieces_is_read_in_bounded_time(ifc_builder, tmp_path, capsys):
    """4,000 one-metre slab pieces tiling one floor (exporters split floors into pieces): the
    duplicate-plate check compares only pieces whose plan boxes meet, not every pair."""
    import ifcopenshell.guid

    b = ifc_builder("IFC4", "m")
    ss = building(b, 3)
    piece = b.slab(ss[1], [(0, 0), (1, 0), (1, 1), (0, 1)], 0.25, name="piece")
    path = b.write(tmp_path / "pieces.ifc")
    shape = piece.Representation.id()
    first, lines, ids = 10 ** 6, [], []
    for i in range(4000):
        x, y = i % 64, i // 64
        n = first + 4 * i
        lines += [f"#{n}=IFCCARTESIANPOINT(({x + 30.0},{y + 0.0},0.));\n",
                  f"#{n + 1}=IFCAXIS2PLACEMENT3D(#{n},$,$);\n",
                  f"#{n + 2}=IFCLOCALPLACEMENT(#{ss[1].ObjectPlacement.id()},#{n + 1});\n",
                  f"#{n + 3}=IFCSLAB('{ifcopenshell.guid.new()}',$,'p{i}',$,$,#{n + 2},#{shape},$,.FLOOR.);\n"]
        ids.append(f"#{n + 3}")
    lines.append(f"#{first + 20000}=IFCRELCONTAINEDINSPATIALSTRUCTURE('{ifcopenshell.guid.new()}',$,$,$,"
                 f"({','.join(ids)}),#{ss[1].id()});\n")
    append_instances(path, "".join(lines))
    r = screen(capsys, path)
    assert r.code in (0, 1)
    assert r.seconds < 25  # all pairs: about a minute on the test machine; indexed: a few seconds


def test_parser_messages_survive_an_earlier_validation(ifc_builder, tmp_path, capsys):
    """ifcopenshell.validate switches the process-wide parser log to JSON and leaves it so; the
    reader must still hear the parser drop a value in a later read in the same process."""
    import ifcopenshell.ifcopenshell_wrapper

    b = ifc_builder("IFC4", "m")
    building(b, 3)
    ent, index, _ = _target(b, "wall location")
    path = set_raw(b.write(tmp_path / "m.ifc"), ent, index, "(NaN,0.,0.)")
    ifcopenshell.ifcopenshell_wrapper.set_log_format_json()  # as validate() leaves it
    r = screen(capsys, path)
    assert r.code in (0, 1)
    assert r.warned("the IFC parser could not read 1 value(s)", f"#{ent.id()}")
