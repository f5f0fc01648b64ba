"""The read-time floor measured by ``benchmarks/read_ratio.py --floor`` measures real work.

Issue 2 asks the 60-storey sample to read in under 2x ``ifcopenshell.open``; the benchmark's
``--floor`` times the least an entity-based reader must do. These checks keep that
measurement honest (never its timing): the *visit* touches every slab, wall and column and
the containment of each, and the *assemble* step rebuilds exactly the storeys the reader
gives (same elements, same order, same heights). Reference: the reader's own takeoff of the
bundled samples (whose quantities other tests check against the generator's inputs).
"""
from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

from swayscreen.pipeline.reading import read_model
from swayscreen.sample_models import sample_path

_BENCHMARKS = Path(__file__).resolve().parents[1] / "benchmarks"


def _script(name: str):
    path = _BENCHMARKS / f"{name}.py"
    if not path.exists():
        pytest.skip("benchmarks/ not beside the tests")
    spec = importlib.util.spec_from_file_location(name, path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def read_ratio():
    return _script("read_ratio")


@pytest.mark.parametrize("name", ["residential_tower_60.ifc", "courtyard_12_mm.ifc"])
def test_assemble_floor_rebuilds_the_readers_storeys(read_ratio, name):
    path = sample_path(name)
    takeoff = read_model(path)
    rebuilt = read_ratio.assembly_floor(path)()
    assert len(rebuilt) == len(takeoff.buildings)
    for fr, b in zip(rebuilt, takeoff.buildings):
        assert [s.global_id for s in fr.storeys] == [s.global_id for s in b.storeys]
        assert fr.storeys == b.storeys  # the same element objects' values, order and heights
        assert fr.ground_elevation_m == b.ground_elevation_m


def test_visit_floor_touches_every_element_and_its_storey(read_ratio):
    path = sample_path("residential_tower_60.ifc")
    takeoff = read_model(path)
    n_elements = sum(len(s.slabs) + len(s.walls) + len(s.columns) for b in takeoff.buildings for s in b.storeys)
    # each element: at least one body item visited, and once as a contained element
    assert read_ratio.entity_floor(path) >= 2 * n_elements


def test_byte_probe_visits_every_element_the_reader_reads():
    # benchmarks/byte_index_probe.py backs a design decision in DEVELOPERS.md with a time; it
    # must have done the work it is timed for: every element the reader finds, each with a
    # containing storey, and the typical floors recognised as repeats.
    probe = _script("byte_index_probe")
    path = sample_path("residential_tower_60.ifc")
    elements, n_groups = probe.probe(path)
    takeoff = read_model(path)
    ids = {e.global_id for b in takeoff.buildings for s in b.storeys for e in (*s.slabs, *s.walls, *s.columns)}
    assert {e[0] for e in elements} == ids
    assert all(e[4] is not None for e in elements)
    assert n_groups < len(elements) / 10  # 60 storeys of a few dozen repeated elements
