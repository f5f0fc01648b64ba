"""read_model on whole files: our generated sample buildings and real exports.

* Generated samples (sample_models/, made by sample_models/generate.py): every quantity is
  checked against the generator's own inputs in ``specs.json`` (to 1e-6 relative; the
  files carry the inputs exactly, so the only error is float round-off), and the unit and
  schema copies of one building must give the same takeoff.
* Real exports (../shared/ifc-samples, described in its SOURCES.md): storey counts and
  element counts from SOURCES.md, known exporter quirks (upper columns contained in the
  ground storey, one storey holding several slab levels, finish layers, pitched roofs,
  surface models), and plan areas cross-checked against ifcopenshell's geometry engine.
"""
from __future__ import annotations

import json
import re

import numpy as np
import pytest
import shapely
from shapely.geometry import Polygon

from swayscreen.pipeline.reading import read_model
from swayscreen.pipeline.takeoff_json import takeoff_to_dict

REL = 1e-6  # the generator writes its inputs exactly; round-off only

def _warnings(t) -> list[str]:
    """File warnings and every building's warnings."""
    return list(t.warnings) + [w for b in t.buildings for w in b.warnings]



@pytest.fixture(scope="module")
def specs(sample_models):
    return json.loads((sample_models / "specs.json").read_text())


@pytest.fixture(scope="module")
def generated(sample_models, specs):
    """Every generated sample read once: {file name: Takeoff}."""
    return {name: read_model(sample_models / name) for name in specs["samples"]}


def _storey_pairs(takeoff, spec):
    b = takeoff.buildings[0]
    assert len(b.storeys) == len(spec["storeys"])
    for s, ss in zip(b.storeys, spec["storeys"]):
        yield s, ss, spec["plans"][ss["plan"]]


def _close(a: float, b: float, rel: float = REL, abs_: float = 1e-9) -> bool:
    return abs(a - b) <= max(rel * abs(b), abs_)


# ---------------------------------------------------------------------------- generated samples

def test_generated_headers(generated, specs):
    for name, t in generated.items():
        sp = specs["samples"][name]
        assert t.schema == sp["schema"], name
        assert t.length_unit == sp["length_unit"] and t.length_scale_m == pytest.approx(sp["length_scale_m"])
        assert t.true_north_deg == pytest.approx(sp["true_north_deg"], abs=1e-9), name
        assert len(t.buildings) == 1 and t.buildings[0].name == sp["building_name"]
        assert t.mesh_elements == ()


def test_generated_storeys(generated, specs):
    for name, t in generated.items():
        for s, ss, _ in _storey_pairs(t, specs["samples"][name]):
            assert s.name == ss["name"], name
            assert _close(s.elevation_m, ss["elevation_m"]), (name, s.name)
            if ss["height_m"] is not None:
                assert _close(s.height_m, ss["height_m"]), (name, s.name)
            assert s.above_grade == ss["above_grade"], (name, s.name)
            assert s.usage == (ss["usage"].lower() if ss["usage"] else None), (name, s.name)


def test_generated_slabs(generated, specs):
    for name, t in generated.items():
        for s, _, plan in _storey_pairs(t, specs["samples"][name]):
            assert len(s.slabs) == len(plan["slabs"]), (name, s.name)
            for got, exp in zip(sorted(s.slabs, key=lambda x: x.name), sorted(plan["slabs"], key=lambda x: x["name"])):
                assert got.name == exp["name"] and got.predefined_type == exp["predefined_type"]
                assert _close(got.area_m2, exp["area_m2"]), (name, s.name, got.area_m2, exp["area_m2"])
                assert _close(got.thickness_m, exp["thickness_m"]), (name, s.name)
                assert _close(got.top_elevation_m, s.elevation_m, abs_=1e-9)  # specs: tops at the storey datum
                # centroid from shapely on the generator's outline, voids and openings
                poly = Polygon(exp["outline_m"], exp["voids_m"])
                for lo, hi in exp["openings_m"]:
                    poly = poly.difference(shapely.box(lo[0], lo[1], hi[0], hi[1]))
                assert poly.area == pytest.approx(exp["area_m2"], rel=REL)
                assert got.centroid_m == pytest.approx((poly.centroid.x, poly.centroid.y), abs=1e-6)
                assert got.material is not None and got.material.name == exp["material"]
                assert not got.sloped and not got.from_mesh


def _axis_match(got, exp_axis) -> bool:
    (a, b), (c, d) = got, exp_axis
    return (np.allclose([a, b], [c, d], atol=1e-6) or np.allclose([a, b], [d, c], atol=1e-6))


def test_generated_walls(generated, specs):
    for name, t in generated.items():
        for s, ss, plan in _storey_pairs(t, specs["samples"][name]):
            walls = {w.name: w for w in s.walls}
            assert sorted(walls) == sorted(w["name"] for w in plan["walls"]), (name, s.name)
            for exp in plan["walls"]:
                w = walls[exp["name"]]
                assert _close(w.length_m, exp["length_m"]) and _close(w.thickness_m, exp["thickness_m"]), exp["name"]
                assert _axis_match(w.axis_m, exp["axis_m"]), (name, s.name, exp["name"], w.axis_m, exp["axis_m"])
                assert _close(w.base_elevation_m, s.elevation_m, abs_=1e-9)
                if ss["height_m"] is not None:
                    assert _close(w.height_m, ss["height_m"])
                assert w.load_bearing == exp["load_bearing"]
                assert w.material is not None and w.material.name == exp["material"]
                assert _close(w.plan_area_m2, exp["length_m"] * exp["thickness_m"])
                # openings measured from the spec axis start: flip when the reader runs the other way
                flip = not np.allclose(w.axis_m[0], exp["axis_m"][0], atol=1e-6)
                got = sorted(((w.length_m - o.end_m, w.length_m - o.start_m) if flip else (o.start_m, o.end_m))
                             + (o.sill_m, o.head_m) for o in w.openings)
                want = sorted((o["start_m"], o["end_m"], o["sill_m"], o["head_m"]) for o in exp["openings"])
                assert len(got) == len(want), (name, s.name, exp["name"])
                for g, e in zip(got, want):
                    assert g == pytest.approx(e, abs=1e-6), (name, s.name, exp["name"])


def test_generated_columns(generated, specs):
    for name, t in generated.items():
        for s, ss, plan in _storey_pairs(t, specs["samples"][name]):
            cols = {c.name: c for c in s.columns}
            assert sorted(cols) == sorted(c["name"] for c in plan["columns"]), (name, s.name)
            for exp in plan["columns"]:
                c = cols[exp["name"]]
                assert _close(c.area_m2, exp["area_m2"]), exp["name"]
                assert c.centroid_m == pytest.approx(tuple(exp["centre_m"]), abs=1e-6)
                w, h = c.section.bounds[2] - c.section.bounds[0], c.section.bounds[3] - c.section.bounds[1]
                assert (w, h) == pytest.approx((exp["size_x_m"], exp["size_y_m"]), abs=1e-6)
                if ss["height_m"] is not None:
                    assert _close(c.height_m, ss["height_m"])
                assert c.material is not None and c.material.name == exp["material"]


def test_generated_materials(generated, specs):
    for name, t in generated.items():
        want = {m["name"]: m for m in specs["samples"][name]["materials"]}
        seen = {}
        for s in t.buildings[0].storeys:
            for e in (*s.slabs, *s.walls, *s.columns):
                seen[e.material.name] = e.material
        for n, m in seen.items():
            exp = want[n]
            # Material.category is one of ours; other IFC categories (gypsum, glass) read as unknown
            cat = exp["category"] if exp["category"] in ("concrete", "steel", "timber", "masonry") else "unknown"
            assert m.category == cat and m.density_kg_m3 == exp["density_kg_m3"]
            assert m.youngs_modulus_pa == exp["youngs_modulus_pa"] and m.poisson_ratio == exp["poisson_ratio"]


def _digest(t):
    return json.dumps({k: v for k, v in takeoff_to_dict(t).items() if k not in ("source_path", "schema", "length_unit",
                                                                                 "length_scale_m")},
                      sort_keys=True, default=lambda x: x)


def _rounded(obj, nd=6):
    if isinstance(obj, float):
        return round(obj, nd) + 0.0
    if isinstance(obj, dict):
        return {k: _rounded(v, nd) for k, v in obj.items() if k not in ("source_path", "schema", "length_unit",
                                                                        "length_scale_m", "global_id", "storey_id",
                                                                        "warnings")}
    if isinstance(obj, list):
        return [_rounded(v, nd) for v in obj]
    return obj


@pytest.mark.parametrize("a,b", [("courtyard_12_mm.ifc", "courtyard_12_m.ifc"),
                                 ("courtyard_12_mm.ifc", "courtyard_12_mm_ifc2x3.ifc")])
def test_unit_and_schema_copies_read_alike(generated, a, b):
    """The millimetre file and its metre copy, and the IFC4 file and its IFC2X3 copy, give
    the same takeoff (to 1 micrometre / 1e-6 m^2; GlobalIds differ between copies)."""
    assert _rounded(takeoff_to_dict(generated[a])) == _rounded(takeoff_to_dict(generated[b]))


# ---------------------------------------------------------------------------- real exports

SHARED_STOREYS = {  # SOURCES.md inventory
    "duplex.ifc": 4, "fzk-haus.ifc": 2, "steel-mini-project.ifc": 1, "unicode-house-e1.ifc": 3,
    "unicode-house-e2.ifc": 3, "unicode-house-e4.ifc": 3, "compare_by_name_rev_1.ifc": 1,
}
SHARED_WALLS = {"duplex.ifc": 57, "fzk-haus.ifc": 13, "steel-mini-project.ifc": 0, "unicode-house-e1.ifc": 8,
                "unicode-house-e2.ifc": 8, "unicode-house-e4.ifc": 8, "compare_by_name_rev_1.ifc": 2}
SHARED_COLUMNS = {"duplex.ifc": 0, "fzk-haus.ifc": 0, "steel-mini-project.ifc": 26, "unicode-house-e1.ifc": 8,
                  "unicode-house-e2.ifc": 8, "unicode-house-e4.ifc": 8, "compare_by_name_rev_1.ifc": 0}


@pytest.fixture(scope="module")
def shared(shared_samples):
    return {name: read_model(shared_samples / name) for name in SHARED_STOREYS}


def _all(t, kind):
    return [e for b in t.buildings for s in b.storeys for e in getattr(s, kind)]


def _ifc_storeys(t):
    """Storeys that are IfcBuildingStoreys of the file (split floors carry '/n' ids)."""
    return [s for b in t.buildings for s in b.storeys if "/" not in s.global_id]


@pytest.mark.parametrize("name", list(SHARED_STOREYS))
def test_shared_sample_reads_with_plausible_quantities(shared, name):
    t = shared[name]
    assert len(_ifc_storeys(t)) == SHARED_STOREYS[name]
    assert len(_all(t, "walls")) == SHARED_WALLS[name]
    assert len(_all(t, "columns")) == SHARED_COLUMNS[name]
    for s in (s for b in t.buildings for s in b.storeys):
        assert 0.0 < s.height_m < 10.0, (s.name, s.height_m)  # house/frame storeys (SOURCES.md elevations)
    for sl in _all(t, "slabs"):
        assert 0.0 < sl.area_m2 < 500.0 and 0.06 <= sl.thickness_m < 1.0, (sl.global_id, sl.area_m2, sl.thickness_m)
    for w in _all(t, "walls"):
        assert 0.0 < w.length_m < 40.0 and 0.03 < w.thickness_m < 1.0 and 0.0 < w.height_m < 10.0, w.global_id
    for c in _all(t, "columns"):
        assert 0.0 < c.area_m2 < 1.0 and 0.0 < c.height_m < 10.0, c.global_id
    json.dumps(takeoff_to_dict(t), allow_nan=False)


def test_duplex(shared):
    t = shared["duplex.ifc"]
    st_ = t.buildings[0].storeys
    assert [s.name for s in st_] == ["T/FDN", "Level 1", "Level 2", "Roof"]
    assert [s.above_grade for s in st_] == [False, True, True, True]  # nearest-zero ground rule
    assert [round(s.elevation_m, 6) for s in st_] == [-1.25, 0.0, 3.1, 6.0]  # SOURCES.md (float noise removed)
    # 21 IfcSlab: the 10-20 mm finish layers are dropped (SOURCES.md: "10-20 mm finish layers typed FLOOR")
    finishes = [re.search(r"(\d+) slabs thinner than 0.06 m treated as finish layers", w) for w in _warnings(t)]
    finishes = [int(m.group(1)) for m in finishes if m]
    assert len(finishes) == 1 and 10 <= finishes[0] <= 15
    assert all(x.thickness_m >= 0.06 for x in _all(t, "slabs"))
    assert len(_all(t, "slabs")) + finishes[0] == 21
    assert len(t.mesh_elements) == 1  # the one IfcFaceBasedSurfaceModel wall
    roof = [x for x in _all(t, "slabs") if x.predefined_type == "ROOF"]
    assert len(roof) == 1 and not roof[0].sloped


def test_fzk_haus_pitched_roof(shared):
    t = shared["fzk-haus.ifc"]
    roofs = [x for x in _all(t, "slabs") if x.predefined_type == "ROOF"]
    assert len(roofs) == 2 and all(r.sloped for r in roofs)
    # SOURCES.md: the pitched roof spans 2.9-6.3 m
    assert all(6.0 < r.top_elevation_m < 6.4 for r in roofs)
    flat = sorted(x.predefined_type for x in _all(t, "slabs") if not x.sloped)
    assert flat == ["BASESLAB", "FLOOR"]
    assert [s.name for s in t.buildings[0].storeys] == ["Erdgeschoss", "Dachgeschoss"]


def test_steel_mini_project_slab_levels_detected(shared):
    """One 'Undefined' storey holding slabs at several levels (SOURCES.md names two,
    -0.24..-0.09 m and 2.26..2.41 m; the geometry engine also puts three plates at
    4.56..4.71 m). Each level becomes a floor, with a warning."""
    t = shared["steel-mini-project.ifc"]
    tops = sorted({round(x.top_elevation_m, 3) for x in _all(t, "slabs") if not x.sloped})
    assert -0.09 in tops and 2.41 in tops
    levels = [round(s.elevation_m, 3) for s in t.buildings[0].storeys]
    assert levels[0] == 0.0 and 2.41 in levels  # the IFC storey at 0 holds the -0.09 level
    assert any("storey 'Undefined' holds floor slabs at" in w and "split into" in w for w in _warnings(t))
    cols = _all(t, "columns")
    assert sum(c.from_mesh for c in cols) == 18  # 18 IfcFacetedBrep columns (SOURCES.md)
    assert min(c.base_elevation_m for c in cols) == pytest.approx(-0.6, abs=0.01)  # extents -0.6..7.4 m
    assert max(c.top_elevation_m for c in cols) == pytest.approx(7.4, abs=0.01)


def test_unicode_house_e1_upper_columns_reassigned(shared):
    t = shared["unicode-house-e1.ifc"]
    st_ = t.buildings[0].storeys
    assert [len(s.columns) for s in st_] == [4, 4, 0]
    upper = st_[1].columns
    assert all(c.base_elevation_m == pytest.approx(3.0) for c in upper)
    assert all(c.storey_id == st_[0].global_id for c in upper)  # exported in the ground storey
    assert any("4 columns contained in storey" in w and "reassigned" in w for w in _warnings(t))


def test_unicode_house_exporters_agree(shared):
    """Three exporters, one building: storeys, slab plates and columns agree (SOURCES.md)."""
    digests = []
    for name in ("unicode-house-e1.ifc", "unicode-house-e2.ifc", "unicode-house-e4.ifc"):
        t = shared[name]
        digests.append([(round(s.elevation_m, 6), round(s.height_m, 6),
                         sorted((round(x.area_m2, 2), round(x.thickness_m, 3), round(x.top_elevation_m, 3))
                                for x in s.slabs),
                         sorted((round(c.area_m2, 4), round(c.base_elevation_m, 3), round(c.height_m, 3))
                                for c in s.columns), len(s.walls)) for s in t.buildings[0].storeys])
    assert digests[0] == digests[1] == digests[2]
    assert len(shared["unicode-house-e4.ifc"].mesh_elements) == 20  # all IfcShellBasedSurfaceModel


def test_unicode_house_duplicate_slab_left_out(shared):
    # two identical FLOOR slabs at 3.0 m in every export (checked with the geometry engine)
    t = shared["unicode-house-e2.ifc"]
    assert any("duplicating another slab" in w for w in _warnings(t))
    assert [len(s.slabs) for s in t.buildings[0].storeys] == [1, 1, 1]


def test_slab_plans_match_the_geometry_engine(shared_samples, shared):
    """Parametric plan areas against the engine's tessellation projected to plan."""
    import ifcopenshell
    import ifcopenshell.geom

    for name in ("unicode-house-e1.ifc", "fzk-haus.ifc"):
        model = ifcopenshell.open(str(shared_samples / name))
        st_ = ifcopenshell.geom.settings()
        st_.set("use-world-coords", True)
        st_.set("disable-opening-subtractions", True)
        for slab in _all(shared[name], "slabs"):
            el = model.by_guid(slab.global_id)
            if model.get_inverse(el) and any(r.is_a("IfcRelVoidsElement") for r in model.get_inverse(el)):
                continue  # our plan subtracts openings; the engine run here does not
            shape = ifcopenshell.geom.create_shape(st_, el)
            v = np.asarray(shape.geometry.verts).reshape(-1, 3)
            tri = v[np.asarray(shape.geometry.faces).reshape(-1, 3)][:, :, :2]
            polys = [Polygon(x) for x in tri if Polygon(x).area > 1e-12]
            area = shapely.union_all(polys).area
            assert slab.area_m2 == pytest.approx(area, rel=1e-6), (name, slab.global_id)


@pytest.mark.parametrize("name", sorted(SHARED_STOREYS))
def test_large_file_path_reads_real_exports_alike(shared_samples, shared, name, monkeypatch):
    """Files above 8 MB are opened lazily and their materials found per element (through
    HasAssociations) instead of from a list of every association: forced on each real
    export, that path gives the same takeoff as the small-file path."""
    from swayscreen.pipeline import reading

    monkeypatch.setattr(reading, "_LAZY_ABOVE_BYTES", 0)
    assert takeoff_to_dict(read_model(shared_samples / name)) == takeoff_to_dict(shared[name])


def test_large_file_path_reads_our_samples_alike(sample_models, generated, monkeypatch):
    from swayscreen.pipeline import reading

    monkeypatch.setattr(reading, "_LAZY_ABOVE_BYTES", 0)
    for name, t in generated.items():
        assert takeoff_to_dict(read_model(sample_models / name)) == takeoff_to_dict(t), name
