"""The invented sample buildings in sample_models/ and their generator.

External references used here:
- the IFC schemas as compiled into IfcOpenShell (``ifcopenshell.validate``: attribute
  types, aggregates, inverse cardinalities; EXPRESS WHERE rules on one file);
- IfcOpenShell's geometry engine (``ifcopenshell.geom``), an implementation independent of
  the generator's own arithmetic, for positions, extents and volumes;
- IFC4 IfcGeometricRepresentationContext.TrueNorth (a 2D direction in the project xy
  plane pointing to geographic north);
- EN 1991-1-1 Table A.1 (reinforced concrete 25 kN/m3) and Table 6.2 (imposed loads) for
  the plausibility check of the schemes.
"""
from __future__ import annotations

import gc
import json
import math
import multiprocessing
from pathlib import Path

import ifcopenshell
import ifcopenshell.geom
import ifcopenshell.guid
import ifcopenshell.util.element
import ifcopenshell.util.shape
import ifcopenshell.util.unit
import ifcopenshell.validate
import numpy as np
import pytest
from shapely.geometry import Polygon, box

from swayscreen.sample_models import generate as gen

SAMPLES_DIR = Path(__file__).resolve().parents[1] / "sample_models"


SAMPLE_FILES = list(gen.SAMPLE_FILES)


@pytest.fixture(scope="module")
def regenerated(tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("samples")
    original_new = ifcopenshell.guid.new
    gen.write_all(out)
    # the generator's deterministic hooks must not leak into other code
    assert ifcopenshell.guid.new is original_new
    return out


@pytest.fixture(scope="module")
def models() -> dict[str, ifcopenshell.file]:
    return {name: ifcopenshell.open(str(SAMPLES_DIR / name)) for name in SAMPLE_FILES}


@pytest.mark.parametrize("name", SAMPLE_FILES + ["specs.json"])
def test_regenerated_file_is_byte_identical(regenerated: Path, name: str) -> None:
    committed = SAMPLES_DIR / name
    assert committed.exists(), f"{name} not committed; run python sample_models/generate.py"
    assert (regenerated / name).read_bytes() == committed.read_bytes()


def test_output_does_not_depend_on_memory_layout() -> None:
    # ifcopenshell.api fills SETs through Python sets of entity instances (ordered by
    # address); the generator sorts them, so a build made among other live files is the same.
    first = gen.build(gen.courtyard_def("METRE")).to_string()
    others = [ifcopenshell.file(schema="IFC4") for _ in range(23)]
    points = [f.createIfcCartesianPoint((1.0, 2.0, 3.0)) for f in others]
    second = gen.build(gen.courtyard_def("METRE")).to_string()
    assert len(points) == 23
    assert first == second


def test_specs_json_matches_generator_inputs() -> None:
    doc = json.loads((SAMPLES_DIR / "specs.json").read_text(encoding="utf-8"))
    assert doc["format"] == "swayscreen-sample-specs/1"
    assert doc["samples"] == json.loads(json.dumps(gen.SPECS))
    assert sorted(doc["samples"]) == sorted(SAMPLE_FILES)


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_files_are_small(name: str) -> None:
    assert (SAMPLES_DIR / name).stat().st_size < 2_000_000


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_schema_unit_and_storeys(models: dict[str, ifcopenshell.file], name: str) -> None:
    f, spec = models[name], gen.SPECS[name]
    assert f.schema == spec["schema"]
    assert ifcopenshell.util.unit.calculate_unit_scale(f) == pytest.approx(spec["length_scale_m"], rel=1e-12)
    length = [u for u in f.by_type("IfcUnitAssignment")[0].Units if getattr(u, "UnitType", None) == "LENGTHUNIT"]
    assert len(length) == 1
    assert length[0].Prefix == ("MILLI" if spec["length_unit"] == "MILLIMETRE" else None)
    storeys = sorted(f.by_type("IfcBuildingStorey"), key=lambda s: s.Elevation)
    assert [s.Name for s in storeys] == [s["name"] for s in spec["storeys"]]
    scale = spec["length_scale_m"]
    for st, ss in zip(storeys, spec["storeys"]):
        assert st.Elevation * scale == pytest.approx(ss["elevation_m"], abs=1e-9)
        # the storey placement carries the same elevation (building placement at z = 0)
        assert st.ObjectPlacement.RelativePlacement.Location.Coordinates[2] * scale == pytest.approx(
            ss["elevation_m"], abs=1e-9)
    assert len(f.by_type("IfcBuilding")) == 1
    assert f.by_type("IfcBuilding")[0].Name == spec["building_name"]


def test_storey_counts_match_the_brief() -> None:
    counts = {name: sum(1 for s in spec["storeys"] if s["above_grade"] and s["height_m"] is not None)
              for name, spec in gen.SPECS.items()}
    assert counts["office_tower_40.ifc"] == 40
    assert counts["residential_tower_60.ifc"] == 60
    for name in ("courtyard_12_mm.ifc", "courtyard_12_m.ifc", "courtyard_12_mm_ifc2x3.ifc"):
        assert counts[name] == 12
    basements = [s["name"] for s in gen.SPECS["office_tower_40.ifc"]["storeys"] if s["elevation_m"] < 0]
    assert basements == ["B1"]


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_true_north(models: dict[str, ifcopenshell.file], name: str) -> None:
    f, spec = models[name], gen.SPECS[name]
    model = [c for c in f.by_type("IfcGeometricRepresentationContext")
             if not c.is_a("IfcGeometricRepresentationSubContext")][0]
    if spec["true_north_deg"] == 0:
        assert model.TrueNorth is None
        return
    x, y = model.TrueNorth.DirectionRatios
    # IFC4 TrueNorth: 2D direction to north in the project xy plane; (-sin a, cos a) is a
    # counter-clockwise from +Y.
    assert (x, y) == (-0.5, math.sqrt(3.0) / 2.0)
    assert math.degrees(math.atan2(-x, y)) == pytest.approx(spec["true_north_deg"], abs=1e-12)


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_schema_validation_has_no_errors(name: str) -> None:
    logger = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(str(SAMPLES_DIR / name), logger)
    assert logger.statements == []


# ifcopenshell's rule loader leaves its source file for the garbage collector to close
@pytest.mark.filterwarnings("ignore::pytest.PytestUnraisableExceptionWarning")
@pytest.mark.filterwarnings("ignore::ResourceWarning")
def test_express_where_rules_pass_on_ifc2x3_sample() -> None:
    # All five samples pass the EXPRESS WHERE rules (checked when they were made); the
    # rules take seconds per file, so the suite runs them on the smallest file only.
    logger = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(str(SAMPLES_DIR / "courtyard_12_mm_ifc2x3.ifc"), logger, express_rules=True)
    gc.collect()
    assert logger.statements == []


def _by_storey(f: ifcopenshell.file) -> dict[str, dict[str, list]]:
    out: dict[str, dict[str, list]] = {}
    for st in f.by_type("IfcBuildingStorey"):
        d = out.setdefault(st.Name, {})
        for rel in st.ContainsElements:
            for e in rel.RelatedElements:
                d.setdefault(e.is_a(), []).append(e)
        for rel in st.IsDecomposedBy:
            for e in rel.RelatedObjects:
                d.setdefault(e.is_a(), []).append(e)
    return out


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_elements_per_storey_follow_the_specs(models: dict[str, ifcopenshell.file], name: str) -> None:
    f = models[name]
    wall_class = "IfcWallStandardCase" if f.schema == "IFC2X3" else "IfcWall"
    got = _by_storey(f)
    for st in gen.expand(name):
        have = got.get(st["name"], {})
        assert sorted(e.Name for e in have.get(wall_class, [])) == sorted(w["name"] for w in st["walls"])
        assert sorted(e.Name for e in have.get("IfcColumn", [])) == sorted(c["name"] for c in st["columns"])
        assert sorted(e.Name for e in have.get("IfcSlab", [])) == sorted(s["name"] for s in st["slabs"])
        assert len(have.get("IfcCurtainWall", [])) == len(st["curtain_walls"])
        assert len(have.get("IfcSpace", [])) == (1 if st["usage"] else 0)
        doors = sum(o["door"] for w in st["walls"] for o in w["openings"]) if f.schema != "IFC2X3" else 0
        assert len(have.get("IfcDoor", [])) == doors
        for wall in have.get(wall_class, []):
            spec = next(w for w in st["walls"] if w["name"] == wall.Name)
            assert len(wall.HasOpenings) == len(spec["openings"])
            assert ifcopenshell.util.element.get_psets(wall)["Pset_WallCommon"]["LoadBearing"] is spec["load_bearing"]
            usage = ifcopenshell.util.element.get_material(wall)
            assert usage.is_a("IfcMaterialLayerSetUsage")
            assert usage.ForLayerSet.MaterialLayers[0].LayerThickness * gen.SPECS[name]["length_scale_m"] == \
                pytest.approx(spec["thickness_m"], rel=1e-12)
            assert usage.ForLayerSet.MaterialLayers[0].Material.Name == spec["material"]
        for slab in have.get("IfcSlab", []):
            spec = next(s for s in st["slabs"] if s.get("name") == slab.Name)
            assert slab.PredefinedType == spec["predefined_type"]
            assert len(slab.HasOpenings) == len(spec["openings_m"])
        for space in have.get("IfcSpace", []):
            occupancy = ifcopenshell.util.element.get_psets(space)["Pset_SpaceOccupancyRequirements"]
            assert occupancy["OccupancyType"] == st["usage"]


def test_column_types_map_the_office_columns(models: dict[str, ifcopenshell.file]) -> None:
    f = models["office_tower_40.ifc"]
    for col in f.by_type("IfcColumn"):
        ctype = ifcopenshell.util.element.get_type(col)
        assert ctype is not None and ctype.PredefinedType == "COLUMN"
        item = col.Representation.Representations[0].Items[0]
        assert item.is_a("IfcMappedItem") and item.MappingSource in ctype.RepresentationMaps
        assert ifcopenshell.util.element.get_material(col).Name == "Concrete C60/75"


def test_variants_of_the_courtyard_share_global_ids(models: dict[str, ifcopenshell.file]) -> None:
    ids = {name: sorted(e.GlobalId for e in models[name].by_type("IfcElement"))
           for name in ("courtyard_12_mm.ifc", "courtyard_12_m.ifc", "courtyard_12_mm_ifc2x3.ifc")}
    assert ids["courtyard_12_mm.ifc"] == ids["courtyard_12_m.ifc"] == ids["courtyard_12_mm_ifc2x3.ifc"]
    assert len(ids["courtyard_12_mm.ifc"]) > 400


# Storeys checked through the geometry engine (all of them take ~1 min; these cover every
# plan of every sample: basement, ground, each zone step, the roof).
GEOMETRY_STOREYS = {
    "office_tower_40.ifc": ("B1", "L00", "L13", "L20", "L27", "Roof"),
    "residential_tower_60.ifc": ("L00", "L19", "L20", "L40", "Roof"),
    "courtyard_12_mm.ifc": ("L00", "L11", "Roof"),
    "courtyard_12_m.ifc": ("L00", "L06", "Roof"),
    "courtyard_12_mm_ifc2x3.ifc": ("L01", "Roof"),
}


def _expected_box_and_volume(kind: str, st: dict, e: dict) -> tuple[list[float], list[float], float]:
    z = st["elevation_m"]
    if kind == "slabs":
        xs = [p[0] for p in e["outline_m"]]
        ys = [p[1] for p in e["outline_m"]]
        return [min(xs), min(ys), z - e["thickness_m"]], [max(xs), max(ys), z], e["area_m2"] * e["thickness_m"]
    h = st["height_m"]
    if kind == "columns":
        cx, cy = e["centre_m"]
        sx, sy = e["size_x_m"] / 2, e["size_y_m"] / 2
        return [cx - sx, cy - sy, z], [cx + sx, cy + sy, z + h], e["area_m2"] * h
    (x0, y0), (x1, y1) = e["axis_m"]
    t = e["thickness_m"] / 2
    if y0 == y1:
        lo, hi = [min(x0, x1), y0 - t, z], [max(x0, x1), y0 + t, z + h]
    else:
        lo, hi = [x0 - t, min(y0, y1), z], [x0 + t, max(y0, y1), z + h]
    cut = sum((o["end_m"] - o["start_m"]) * (o["head_m"] - o["sill_m"]) for o in e["openings"])
    return lo, hi, (e["length_m"] * h - cut) * e["thickness_m"]


@pytest.mark.parametrize("name", SAMPLE_FILES)
def test_geometry_engine_agrees_with_specs(models: dict[str, ifcopenshell.file], name: str) -> None:
    """World-coordinate extents and volumes (voids and openings cut) from the geometry
    engine equal the generator's inputs. Tolerance 1e-6 (relative for volume, metres for
    extents): the engine works in double precision on exact inputs."""
    f = models[name]
    wanted: dict[str, tuple[str, dict, dict]] = {}
    for st in gen.expand(name):
        if st["name"] in GEOMETRY_STOREYS[name]:
            for kind in ("slabs", "walls", "columns"):
                for e in st[kind]:
                    wanted[f"{st['name']}/{e['name']}"] = (kind, st, e)
    elements = [e for e in f.by_type("IfcElement") if e.Tag in wanted]
    assert len(elements) == len(wanted)
    settings = ifcopenshell.geom.settings()
    settings.set("use-world-coords", True)
    it = ifcopenshell.geom.iterator(settings, f, max(1, min(4, multiprocessing.cpu_count())), include=elements)
    assert it.initialize()
    seen = set()
    while True:
        shape = it.get()
        element = f.by_id(shape.id)
        kind, st, e = wanted[element.Tag]
        verts = ifcopenshell.util.shape.get_vertices(shape.geometry)
        lo, hi, volume = _expected_box_and_volume(kind, st, e)
        np.testing.assert_allclose(verts.min(axis=0), lo, rtol=0, atol=1e-6, err_msg=element.Tag)
        np.testing.assert_allclose(verts.max(axis=0), hi, rtol=0, atol=1e-6, err_msg=element.Tag)
        assert ifcopenshell.util.shape.get_volume(shape.geometry) == pytest.approx(volume, rel=1e-6), element.Tag
        seen.add(element.Tag)
        if not it.next():
            break
    assert seen == set(wanted)


def test_office_core_has_two_closed_cells_with_lintels() -> None:
    spec = gen.SPECS["office_tower_40.ifc"]
    for key, plan in spec["plans"].items():
        if key == "roof":
            continue
        core = {w["name"]: w for w in plan["walls"] if w["name"].startswith("CW-")}
        assert plan["wall_groups"][0] == {"walls": ["CW-S", "CW-E", "CW-N", "CW-W", "CW-X"], "closed_cells": 2}
        openings = [o for w in core.values() for o in w["openings"]]
        assert len(openings) == 5
        storeys = [s for s in spec["storeys"] if s["plan"] == key]
        for s in storeys:
            for o in openings:
                assert s["height_m"] - o["head_m"] >= 1.3  # a lintel of at least 1.3 m stays


def test_residential_core_is_an_open_c_facing_the_plate_centre() -> None:
    """The scheme the sample stands for: an open C core with returns (no closed cell), set
    east of the plate centre with its web on the side facing the centre and the opening
    between the returns on the east face; a slender plate (height / least width 6.5-8)."""
    spec = gen.SPECS["residential_tower_60.ifc"]
    plan = spec["plans"]["lower"]
    core = {w["name"]: w for w in plan["walls"] if w["name"].startswith("RC-")}
    assert set(core) == {"RC-WEB", "RC-FS", "RC-FN", "RC-RS", "RC-RN"}
    assert plan["wall_groups"][0] == {"walls": list(core), "closed_cells": 0}
    xs = [p[0] for w in core.values() for p in w["axis_m"]]
    plate = plan["slabs"][0]["outline_m"]
    plate_cx = (min(p[0] for p in plate) + max(p[0] for p in plate)) / 2
    web_x = core["RC-WEB"]["axis_m"][0][0]
    # the core sits east of the plate centre and its web is its west (centre-facing) side
    assert (min(xs) + max(xs)) / 2 - plate_cx > 4.0
    assert plate_cx < web_x == min(xs)
    # the returns stand on the east face and leave an opening between them
    (_, rs_y0), (_, rs_y1) = core["RC-RS"]["axis_m"]
    (_, rn_y0), (_, rn_y1) = core["RC-RN"]["axis_m"]
    assert core["RC-RS"]["axis_m"][0][0] == core["RC-RN"]["axis_m"][0][0] > web_x
    assert min(rn_y0, rn_y1) - max(rs_y0, rs_y1) > 2.0
    height = spec["storeys"][-1]["elevation_m"]
    width = min(max(p[0] for p in plate) - min(p[0] for p in plate), max(p[1] for p in plate) - min(p[1] for p in plate))
    assert 6.5 <= height / width <= 8.0


def test_courtyard_shear_walls_are_separate_and_plate_is_l_shaped() -> None:
    plan = gen.SPECS["courtyard_12_m.ifc"]["plans"]["typical"]
    boxes = []
    for w in plan["walls"]:
        (x0, y0), (x1, y1) = w["axis_m"]
        t = w["thickness_m"] / 2
        boxes.append(box(min(x0, x1) - (t if x0 == x1 else 0), min(y0, y1) - (t if y0 == y1 else 0),
                         max(x0, x1) + (t if x0 == x1 else 0), max(y0, y1) + (t if y0 == y1 else 0)))
    assert len(boxes) == 6
    for i in range(6):
        for j in range(i + 1, 6):
            assert boxes[i].distance(boxes[j]) > 1.0
    assert all(6.0 <= w["length_m"] <= 8.0 for w in plan["walls"])
    plate = Polygon(plan["slabs"][0]["outline_m"])
    assert plate.area == pytest.approx(945.0, rel=1e-12)
    assert plate.convex_hull.area > plate.area  # re-entrant corner


def test_schemes_are_plausible_under_gravity() -> None:
    """Average axial stress in the ground storey's load-bearing walls and columns under
    characteristic permanent + imposed load stays below 0.4 fck of C40/50 (16 MPa).
    Loads: reinforced concrete 25 kN/m3 (EN 1991-1-1 Table A.1), finishes and services
    1.5 kPa (common practice), imposed office 3.0, residential 2.0, retail 4.0 kPa
    (EN 1991-1-1 Table 6.2, categories B, A, D1), plant 7.5 kPa (common practice)."""
    imposed = {"Office": 3.0, "Residential": 2.0, "Retail": 4.0, "Plant": 7.5, "Parking": 2.5}
    for name in ("office_tower_40.ifc", "residential_tower_60.ifc", "courtyard_12_m.ifc"):
        storeys = gen.expand(name)
        load_kn = 0.0
        for below, above in zip(storeys, storeys[1:]):
            if above["elevation_m"] <= 0:
                continue
            slab = above["slabs"][0]
            load_kn += slab["area_m2"] * (25.0 * slab["thickness_m"] + 1.5 + imposed[below["usage"]])
            load_kn += 25.0 * sum(w["length_m"] * w["thickness_m"] * w["height_m"] for w in below["walls"])
            load_kn += 25.0 * sum(c["area_m2"] * c["height_m"] for c in below["columns"])
        ground = next(s for s in storeys if s["elevation_m"] == 0)
        area = sum(w["length_m"] * w["thickness_m"] for w in ground["walls"] if w["load_bearing"])
        area += sum(c["area_m2"] for c in ground["columns"])
        stress_mpa = load_kn / area / 1000
        assert 3.0 < stress_mpa < 16.0, name


def test_benchmark_tower_density() -> None:
    """The benchmark brief asks for about 270 elements and 3,900 entity instances per
    storey; allow +-10 %."""
    n = 3
    f = gen.generate_tower(n)
    assert len(f.by_type("IfcBuildingStorey")) == n + 1
    per_storey_elements = len(f.by_type("IfcElement")) / n
    per_storey_instances = len(list(f)) / n
    assert 243 <= per_storey_elements <= 297
    assert 3510 <= per_storey_instances <= 4290
    assert len({e.GlobalId for e in f.by_type("IfcRoot")}) == len(f.by_type("IfcRoot"))
    plain = gen.generate_tower(n, facade_panels=False)
    assert len(plain.by_type("IfcPlate")) == 0 and len(plain.by_type("IfcCurtainWall")) == 4 * n
