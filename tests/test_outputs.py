"""The output folder as the structural team receives it.

Checks against outside references: the IFC schema (ifcopenshell.validate), JSON Schema
2020-12 (the jsonschema library validating our versioned summary schema), ISO 10303-21
round trip (every original entity and GlobalId survives), BCF 2.1 archive layout
(buildingSMART), and HTML with no external references.
"""
from __future__ import annotations

import json
import re
import zipfile
from collections import Counter
from datetime import datetime, timezone
from pathlib import Path

import ifcopenshell
import pytest

from swayscreen.pipeline.outputs import PSET_PREFIX, write_outputs
from swayscreen.pipeline.screening import screen_file

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_models"
WHEN = datetime(2026, 1, 2, 3, 4, 5, tzinfo=timezone.utc)


@pytest.fixture(scope="module")
def flagged(tmp_path_factory):
    """The 12-storey sample with an unreachable drift limit: a flagged scheme, quickly."""
    folder = tmp_path_factory.mktemp("flagged")
    settings = folder / "strict.toml"
    settings.write_text("[drift]\noverall_limit_ratio = 5000.0\nstorey_limit_ratio = 5000.0\n")
    run = screen_file(SAMPLES / "courtyard_12_mm.ifc", settings)
    paths = write_outputs(run, folder / "out", when=WHEN)
    return run, paths


def counts(f):
    return Counter(e.is_a() for e in f)


def test_annotated_model_keeps_everything(flagged):
    run, paths = flagged
    src = ifcopenshell.open(run.takeoff.source_path)
    out = ifcopenshell.open(str(paths["annotated model"]))
    before, after = counts(src), counts(out)
    added = after - before
    assert set(added) <= {"IfcPropertySet", "IfcRelDefinesByProperties", "IfcPropertySingleValue", "IfcSIUnit",
                          "IfcDerivedUnit", "IfcDerivedUnitElement", "IfcOwnerHistory"}
    assert not (before - after)  # nothing removed
    gids_before = {e.GlobalId for e in src.by_type("IfcRoot")}
    gids_after = {e.GlobalId for e in out.by_type("IfcRoot")}
    assert gids_before <= gids_after


def test_our_property_sets_and_values(flagged):
    import ifcopenshell.util.element as ue

    run, paths = flagged
    out = ifcopenshell.open(str(paths["annotated model"]))
    (building,) = out.by_type("IfcBuilding")
    psets = ue.get_psets(building)
    screening = psets[f"{PSET_PREFIX}_Screening"]
    assert screening["Status"] == "flagged"
    assert screening["SettingsDigest"] == run.settings.digest()
    periods = psets[f"{PSET_PREFIX}_Periods"]
    t1 = run.buildings[0].results["modes"].modes[0].period_s
    assert periods["Mode1Period"] == pytest.approx(t1, rel=1e-9)
    # measure types: IfcTimeMeasure for periods (IFC schema, IfcMeasureResource)
    for rel in building.IsDefinedBy:
        ps = rel.RelatingPropertyDefinition
        if ps.Name == f"{PSET_PREFIX}_Periods":
            prop = next(p for p in ps.HasProperties if p.Name == "Mode1Period")
            assert prop.NominalValue.is_a() == "IfcTimeMeasure"
    storeys = [s for s in out.by_type("IfcBuildingStorey") if f"{PSET_PREFIX}_StoreySway" in ue.get_psets(s)]
    levels = run.buildings[0].derived.levels
    assert len(storeys) == len([lv for lv in levels if "#" not in lv.storey_id])
    walls = [w for w in out.by_type("IfcWall") if f"{PSET_PREFIX}_CoreWall" in ue.get_psets(w)]
    assert walls
    for name in {n for e in out.by_type("IfcPropertySet") for n in [e.Name]}:
        assert not name.startswith(f"Pset_{PSET_PREFIX}")


def test_rerun_on_annotated_model_replaces_sets(flagged, tmp_path):
    run, paths = flagged
    first = ifcopenshell.open(str(paths["annotated model"]))
    rerun = screen_file(paths["annotated model"], Path(paths["summary"]).parent.parent / "strict.toml")
    paths2 = write_outputs(rerun, tmp_path / "again", when=WHEN)
    second = ifcopenshell.open(str(paths2["annotated model"]))
    assert counts(first) == counts(second)
    ours = [p.Name for p in second.by_type("IfcPropertySet") if p.Name.startswith(PSET_PREFIX)]
    assert len(ours) == len([p for p in first.by_type("IfcPropertySet") if p.Name.startswith(PSET_PREFIX)])


def test_written_model_passes_schema_validation(flagged):
    import logging

    import ifcopenshell.validate

    _, paths = flagged
    logger = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(str(paths["annotated model"]), logger)
    errors = [s for s in logger.statements if str(s.get("level")).lower() in ("error", str(logging.ERROR))]
    assert errors == []


def test_summary_validates_against_its_schema(flagged):
    import jsonschema

    _, paths = flagged
    schema = json.loads((ROOT / "pipeline" / "data" / "summary.schema.json").read_text())
    summary = json.loads(Path(paths["summary"]).read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(summary, schema, cls=jsonschema.Draft202012Validator)
    assert summary["status"] == "flagged"
    assert any(not d["passes"] for d in summary["drift"])


def test_report_is_self_contained_with_svg_plots(flagged):
    _, paths = flagged
    html = Path(paths["report"]).read_text()
    assert html.count("<svg") >= 4  # modes, comfort curves, profiles, plan
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:)?//""", html)
    assert "@import" not in html and "<script" not in html
    assert "screening estimate, not a design" in html


def test_bcf_archive_names_the_flagged_building(flagged):
    import xml.etree.ElementTree as ET

    run, paths = flagged
    gid = run.buildings[0].building.global_id
    with zipfile.ZipFile(paths["BCF topics"]) as z:
        names = z.namelist()
        assert "bcf.version" in names
        markups = [n for n in names if n.endswith("markup.bcf")]
        assert markups
        found = False
        for n in names:
            if n.endswith((".bcf", ".bcfv", ".version")):
                root = ET.fromstring(z.read(n))  # well-formed XML
                found |= gid in ET.tostring(root, encoding="unicode")
        assert found


def test_passing_scheme_leaves_no_bcf(tmp_path):
    run = screen_file(SAMPLES / "courtyard_12_m.ifc")
    assert run.status == "pass"
    paths = write_outputs(run, tmp_path, when=WHEN)
    assert "BCF topics" not in paths and not (tmp_path / "issues.bcfzip").exists()


def test_input_model_never_written(tmp_path):
    import shutil

    src = tmp_path / "model.ifc"
    shutil.copy(SAMPLES / "courtyard_12_m.ifc", src)
    before = src.read_bytes()
    run = screen_file(src)
    write_outputs(run, tmp_path, when=WHEN)  # output folder == input folder
    assert src.read_bytes() == before
    assert (tmp_path / "model-annotated.ifc").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]
