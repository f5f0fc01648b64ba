"""Relations the reader follows only as far as the elements it reads need them.

ISO 16739-1 (IFC4), IfcRelAggregates and IfcRelAssociatesMaterial:
* an element that is part of an assembly (IfcElementAssembly) or a roof (IfcRoof) belongs to
  the storey its whole is contained in;
* a curtain wall's parts (IfcPlate, IfcMember) are not listed by the reader at all;
* an element's material comes from its own IfcRelAssociatesMaterial, else its type's; with
  several, the first in the file is taken (a damaged export; the reader must pick one the same
  way every time).
"""
from __future__ import annotations

from swayscreen.pipeline.reading import read_model

H = 3.0
PLATE = [(0, 0), (10, 0), (10, 8), (0, 8)]


def _elements_by_building(t) -> dict[str, set[str]]:
    return {b.name: {e.name for s in b.storeys for e in (*s.walls, *s.slabs, *s.columns)} for b in t.buildings}


def test_parts_of_assemblies_and_roofs_follow_their_whole(ifc_builder, tmp_path):
    b = ifc_builder("IFC4", "m")
    a_bld, b_bld = b.building("A"), b.building("B", (50.0, 0.0, 0.0))
    sa = b.storey("A0", 0.0, a_bld)
    sb0, sb1 = b.storey("B0", 0.0, b_bld), b.storey("B1", H, b_bld)
    b.slab(sa, PLATE, 0.25, name="A floor")
    b.wall(sa, (0, 0), (10, 0), 0.3, H, name="A wall")
    b.slab(sb0, PLATE, 0.25, name="B floor")
    # a wall in no storey itself, part of an assembly contained in B0
    asm = b._create("IfcElementAssembly", name="B wall panel")
    asm.ObjectPlacement = b.placement((0, 0, 0), sb0.ObjectPlacement)
    b.contain([asm], sb0)
    part = b.wall(None, (50.0, 0.0), (60.0, 0.0), 0.3, H, name="B wall (part)")
    b._aggregate([part], asm)
    # a roof slab in no storey itself, part of an IfcRoof contained in B1
    roof = b._create("IfcRoof", name="B roof")
    roof.ObjectPlacement = b.placement((0, 0, 0), sb1.ObjectPlacement)
    b.contain([roof], sb1)
    rs = b.slab(None, [(50, 0), (60, 0), (60, 8), (50, 8)], 0.25, top=2 * H, name="B roof slab")
    b._aggregate([rs], roof)
    # a curtain wall in A with a plate part: neither is read (no slab, wall or column)
    cw = b._create("IfcCurtainWall", name="A facade")
    cw.ObjectPlacement = b.placement((0, 0, 0), sa.ObjectPlacement)
    b.contain([cw], sa)
    plate = b._create("IfcPlate", name="A facade panel")
    b._aggregate([plate], cw)
    t = read_model(b.write(tmp_path / "parts.ifc"))
    got = _elements_by_building(t)
    assert got["A"] == {"A floor", "A wall"}
    assert got["B"] == {"B floor", "B wall (part)", "B roof slab"}
    assert not any("in no storey" in w for w in t.warnings)


def test_first_material_association_in_the_file_wins(ifc_builder, tmp_path):
    import ifcopenshell.guid

    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    c = b.column(s, b.rect_profile(0.4, 0.4), (0, 0), H, name="C")
    f = b.f
    first = f.createIfcMaterial("Concrete C50/60")
    second = f.createIfcMaterial("Steel S355")
    f.createIfcRelAssociatesMaterial(ifcopenshell.guid.new(), None, None, None, [c], first)
    f.createIfcRelAssociatesMaterial(ifcopenshell.guid.new(), None, None, None, [c], second)
    col = read_model(b.write(tmp_path / "two.ifc")).buildings[0].storeys[0].columns[0]
    assert col.material.category == "concrete" and col.material.strength_class == "C50/60"


def test_occurrence_material_before_type_material(ifc_builder, tmp_path):
    b = ifc_builder("IFC2X3", "mm")
    s = b.storey("L0", 0.0)
    c = b.column(s, b.rect_profile(0.4, 0.4), (0, 0), H)
    t = b.type_of([c], "IfcColumnType", "C-type", "COLUMN")
    b.material([t], "Steel S460")
    b.material([c], "Concrete C40/50")
    col = read_model(b.write(tmp_path / "occ.ifc")).buildings[0].storeys[0].columns[0]
    assert col.material.category == "concrete" and col.material.strength_class == "C40/50"


def test_both_ways_of_finding_materials_agree(ifc_builder, tmp_path):
    """Listing every association (small files) and asking each element's HasAssociations
    (large files) give the same material for every element, with two on one element."""
    import ifcopenshell
    import ifcopenshell.guid

    from swayscreen.pipeline.ifc_materials import MaterialReader

    b = ifc_builder("IFC4", "m")
    s = b.storey("L0", 0.0)
    cols = [b.column(s, b.rect_profile(0.4, 0.4), (3.0 * i, 0), H, name=f"C{i}") for i in range(4)]
    t = b.type_of(cols[2:], "IfcColumnType", "C-type", "COLUMN")
    b.material([t], "Steel S460")
    b.material(cols[:1], "Concrete C40/50")
    f = b.f
    f.createIfcRelAssociatesMaterial(ifcopenshell.guid.new(), None, None, None, [cols[1]], f.createIfcMaterial("Timber"))
    f.createIfcRelAssociatesMaterial(ifcopenshell.guid.new(), None, None, None, [cols[1]], f.createIfcMaterial("Steel S355"))
    m = ifcopenshell.open(str(b.write(tmp_path / "m.ifc")))
    types = {o.id(): rel.RelatingType for rel in m.by_type("IfcRelDefinesByType") for o in rel.RelatedObjects}
    found = {}
    for index_all in (True, False):
        r = MaterialReader(m, types, 1.0, index_all=index_all)
        found[index_all] = [r.for_element(c).material for c in m.by_type("IfcColumn")]
    assert found[True] == found[False]
    names = sorted((c.Name, (mat.name if mat else None)) for c, mat in zip(m.by_type("IfcColumn"), found[True]))
    assert names == [("C0", "Concrete C40/50"), ("C1", "Timber"), ("C2", "Steel S460"), ("C3", "Steel S460")]
