"""The bundled IDS file (buildingSMART Information Delivery Specification 1.0) and the check.

Checked against: the IDS 1.0 XML schema shipped with ifctester (ids.xsd), and open sample
files whose content is listed in ../shared/ifc-samples/SOURCES.md.
"""
from __future__ import annotations

from pathlib import Path

from swayscreen.pipeline.requirements import IDS_PATH, build_ids, check_requirements


def test_bundled_ids_is_current():
    assert IDS_PATH.read_text(encoding="utf-8") == build_ids().to_string()


def test_bundled_ids_validates_against_the_ids_schema():
    import xmlschema
    from ifctester import ids

    schema = xmlschema.XMLSchema(str(Path(ids.__file__).with_name("ids.xsd")))
    schema.validate(str(IDS_PATH))


def test_model_without_slabs_lists_floor_slabs_missing(shared_samples):
    # SOURCES.md: compare_by_name_rev_1.ifc has 0 IfcSlab
    result = check_requirements(shared_samples / "compare_by_name_rev_1.ifc")
    missing = {o.name for o in result.outcomes if not o.passed}
    assert "Floor slabs" in missing
    assert not result.passed
    assert "MISSING  Floor slabs: nothing in the model meets it" in result.text()


def test_duplex_roof_slab_without_material(shared_samples):
    # SOURCES.md: duplex.ifc slabs: materials on 20, 1 without material
    result = check_requirements(shared_samples / "duplex.ifc")
    slab = next(o for o in result.outcomes if o.name == "Slabs with materials")
    assert (slab.applicable, slab.failing) == (21, 1)
