"""The write-back reusing the reader's parse (``write_annotated(..., source=SourceFile)``), the
pickling of screening runs, and ``swayscreen screen --out DIR --no-report``.

External references used here:
* ifcopenshell 0.9, an independent IFC parser, reads back what we wrote (instance counts,
  which entity a set is attached to), and its ``guid.compress`` is the reference for the
  22-character GlobalId form.
* Python's ``uuid.uuid5`` is the reference for name-based UUIDs (RFC 4122 section 4.3).
* ISO 10303-21 (STEP physical file): a statement is ``#id=KEYWORD(...);``; strings of the basic
  alphabet are written literally between apostrophes (clause 6.4.3), which is what the byte scan
  for repeated GlobalIds relies on.
* ISO 16739-1 (IFC): a GlobalId (IfcGloballyUniqueId) is 22 characters of 0-9 A-Z a-z _ $ and
  must be unique; IfcRelDefinesByProperties ties a property set to its object.

The byte-identity checks compare the two ways of planning the same write (on the reader's open
model, and on a fresh open of the file); the sample buildings are our own invented ones
(sample_models/generate.py).
"""
from __future__ import annotations

import gc
import os
import pickle
import re
import uuid
import weakref
from collections import Counter
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

import ifcopenshell
import ifcopenshell.guid
import pytest

from swayscreen.pipeline import reading, writing
from swayscreen.pipeline.cli import main
from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.reading import SourceFile, read_model_and_source
from swayscreen.pipeline.writing import Prop, PsetAnnotation, write_annotated

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_models"
OWN_SAMPLES = sorted(SAMPLES.glob("*.ifc"))
WHEN = datetime(2026, 1, 2, 3, 4, 5, tzinfo=timezone.utc)


# --------------------------------------------------------------------------- helpers


def _plain(gid: str) -> bool:
    """Takeoff ids that name an IFC object under its own GlobalId (no derived ``#``/``/`` ids)."""
    return bool(gid) and "#" not in gid and "/" not in gid


def _annotations(takeoff) -> list[PsetAnnotation]:
    """Typed properties on each building, above-grade storey and wall of the takeoff (SI values,
    so a millimetre model exercises the unit lookup on the model)."""
    anns = []
    for b in takeoff.buildings:
        anns.append(PsetAnnotation(b.global_id, "Swayscreen_Test", (
            Prop("Period", 2.5, "IfcTimeMeasure"),
            Prop("Note", "it's a test — ünïcode", "IfcText"),
            Prop("Flagged", True, "IfcBoolean"),
        )))
        for i, s in enumerate(b.storeys):
            if not _plain(s.global_id):
                continue
            anns.append(PsetAnnotation(s.global_id, "Swayscreen_TestStorey", (
                Prop("Mass", 1.0e6 + i, "IfcMassMeasure"),
                Prop("MassCentreX", 0.012 * i, "IfcLengthMeasure"),
                Prop("Acceleration", 0.049, "IfcAccelerationMeasure"),
            )))
            for w in s.walls:
                if _plain(w.global_id):
                    anns.append(PsetAnnotation(w.global_id, "Swayscreen_TestWall", (Prop("Closed", False, "IfcBoolean"),)))
    # one wall can appear under several storeys' takeoff only once per set name
    seen, out = set(), []
    for a in anns:
        if (a.global_id, a.pset_name) not in seen:
            seen.add((a.global_id, a.pset_name))
            out.append(a)
    return out


def _read(path: Path, monkeypatch, lazy: bool):
    """The reader's takeoff and SourceFile; ``lazy`` forces the lazy open used above 8 MB."""
    if lazy:
        monkeypatch.setattr(reading, "_LAZY_ABOVE_BYTES", 0)
    try:
        return read_model_and_source(path)
    finally:
        monkeypatch.undo()


def _bump_mtime(path: Path, seconds: float = 2.0) -> None:
    st = path.stat()
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns + int(seconds * 1e9)))


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(".part"))


# --------------------------------------------------------------------------- same bytes either way


@pytest.mark.parametrize("lazy", [False, True], ids=["full-open", "lazy-open"])
@pytest.mark.parametrize("sample", OWN_SAMPLES, ids=[p.name for p in OWN_SAMPLES])
def test_source_gives_the_same_bytes_as_a_fresh_open(sample, lazy, tmp_path, monkeypatch):
    """Planning on the reader's model (opened fully or lazily) writes exactly what planning on
    a new open of the file writes; ifcopenshell reads the copy back with every original
    instance and only our three kinds of instances added."""
    takeoff, source = _read(sample, monkeypatch, lazy)
    anns = _annotations(takeoff)
    assert len(anns) > 10
    model_before = Counter(e.is_a() for e in source.model)
    with_src = write_annotated(sample, tmp_path / "with.ifc", anns, source=source)
    without = write_annotated(sample, tmp_path / "without.ifc", anns)
    assert with_src.reused_parse and not without.reused_parse
    assert (tmp_path / "with.ifc").read_bytes() == (tmp_path / "without.ifc").read_bytes()
    assert with_src.psets_written == without.psets_written == len(anns)
    assert Counter(e.is_a() for e in source.model) == model_before  # the reader's model was only looked at
    before = Counter(e.is_a() for e in ifcopenshell.open(str(sample)))
    after = Counter(e.is_a() for e in ifcopenshell.open(str(tmp_path / "with.ifc")))
    assert after - before == Counter({
        "IfcPropertySet": len(anns), "IfcRelDefinesByProperties": len(anns),
        "IfcPropertySingleValue": sum(len(a.props) for a in anns),
    })
    assert not before - after


@pytest.mark.parametrize("lazy", [False, True], ids=["full-open", "lazy-open"])
def test_rerun_on_the_annotated_copy_with_its_source_is_byte_identical(lazy, tmp_path, monkeypatch):
    """Annotating an annotated file again, planned on the reader's model of that file, removes
    our earlier sets and writes the same bytes (the idempotence the writer promises)."""
    sample = SAMPLES / "courtyard_12_mm.ifc"
    takeoff, _ = _read(sample, monkeypatch, lazy=False)
    anns = _annotations(takeoff)
    first = tmp_path / "first.ifc"
    write_annotated(sample, first, anns)
    _, source = _read(first, monkeypatch, lazy)
    rep = write_annotated(first, tmp_path / "second.ifc", anns, source=source)
    assert rep.reused_parse
    assert rep.psets_replaced == len(anns)
    assert (tmp_path / "second.ifc").read_bytes() == first.read_bytes()


# --------------------------------------------------------------------------- a stale source is not used


def _extra_instance(path: Path, new_id: int) -> None:
    """Insert one more instance (an unused point, ISO 10303-21 syntax) before the DATA section's
    ENDSEC, so the largest id and hence the ids of everything we append change."""
    raw = path.read_bytes()
    k = raw.rindex(b"ENDSEC;")
    path.write_bytes(raw[:k] + f"#{new_id}=IFCCARTESIANPOINT((0.,0.,0.));\n".encode() + raw[k:])


def test_source_rewritten_after_reading_is_opened_again(tmp_path, monkeypatch):
    src = tmp_path / "model.ifc"
    src.write_bytes((SAMPLES / "courtyard_12_m.ifc").read_bytes())
    takeoff, source = _read(src, monkeypatch, lazy=False)
    assert source.unchanged()
    anns = _annotations(takeoff)
    new_id = source.model.get_max_id() + 1000
    _extra_instance(src, new_id)
    _bump_mtime(src)  # whatever the file system's timestamp resolution
    assert not source.unchanged()
    rep = write_annotated(src, tmp_path / "with.ifc", anns, source=source)
    assert not rep.reused_parse
    assert rep.first_new_id == new_id + 1  # planned on the file as it is now, not on the stale model
    write_annotated(src, tmp_path / "fresh.ifc", anns)
    assert (tmp_path / "with.ifc").read_bytes() == (tmp_path / "fresh.ifc").read_bytes()
    assert b"#%d=IFCCARTESIANPOINT" % new_id in (tmp_path / "with.ifc").read_bytes()


def test_touched_source_is_opened_again_with_the_same_result(tmp_path, monkeypatch):
    src = tmp_path / "model.ifc"
    src.write_bytes((SAMPLES / "courtyard_12_mm.ifc").read_bytes())
    takeoff, source = _read(src, monkeypatch, lazy=True)
    anns = _annotations(takeoff)
    reused = write_annotated(src, tmp_path / "a.ifc", anns, source=source)
    _bump_mtime(src)
    opened = write_annotated(src, tmp_path / "b.ifc", anns, source=source)
    assert reused.reused_parse and not opened.reused_parse
    assert (tmp_path / "a.ifc").read_bytes() == (tmp_path / "b.ifc").read_bytes()


def test_source_of_another_file_is_not_used(tmp_path, monkeypatch):
    """Same bytes, another path: the parse belongs to the other file, so the writer opens its own."""
    a, b = tmp_path / "a.ifc", tmp_path / "b.ifc"
    a.write_bytes((SAMPLES / "courtyard_12_m.ifc").read_bytes())
    b.write_bytes(a.read_bytes())
    takeoff, source_a = _read(a, monkeypatch, lazy=False)
    opened = []
    real_open = writing._open
    monkeypatch.setattr(writing, "_open", lambda *x, **k: opened.append(x) or real_open(*x, **k))
    rep = write_annotated(b, tmp_path / "out.ifc", _annotations(takeoff), source=source_a)
    assert not rep.reused_parse and len(opened) == 1


def test_source_changed_while_copied_is_an_error_and_leaves_nothing(tmp_path, monkeypatch):
    src = tmp_path / "model.ifc"
    src.write_bytes((SAMPLES / "courtyard_12_m.ifc").read_bytes())
    takeoff, source = _read(src, monkeypatch, lazy=False)
    real_stream = writing._stream

    def stream_then_edit(s, out, drop, lines):
        n = real_stream(s, out, drop, lines)
        _extra_instance(src, 999_999)  # another program saves the model meanwhile
        _bump_mtime(src)
        return n

    monkeypatch.setattr(writing, "_stream", stream_then_edit)
    dst = tmp_path / "out" / "copy.ifc"
    dst.parent.mkdir()
    with pytest.raises(InputError, match="changed while its annotated copy was being written"):
        write_annotated(src, dst, _annotations(takeoff), source=source)
    assert not dst.exists() and not _leftovers(dst.parent)


# --------------------------------------------------------------------------- repeated GlobalIds


def _with_shared_wall_guid(tmp_path: Path) -> tuple[Path, str, list[int]]:
    """The 12-storey sample with its third wall given the first wall's GlobalId (IFC requires
    them unique; exporters get it wrong). Returns the file, the GlobalId and both walls' ids."""
    text = (SAMPLES / "courtyard_12_m.ifc").read_text()
    walls = re.findall(r"^#(\d+)=IFCWALL\('([0-9A-Za-z_$]{22})'", text, flags=re.M)
    (id1, g1), (id3, g3) = walls[0], walls[2]
    text = text.replace(f"#{id3}=IFCWALL('{g3}'", f"#{id3}=IFCWALL('{g1}'")
    path = tmp_path / "shared.ifc"
    path.write_text(text)
    return path, g1, [int(id1), int(id3)]


def test_repeated_target_guid_goes_to_the_first_entity_with_a_source(tmp_path, monkeypatch):
    """The parser's log of the reader's open is gone by write time: the byte scan finds the
    repeated GlobalId, and the set goes to the first of the two walls, as after a fresh open."""
    path, gid, ids = _with_shared_wall_guid(tmp_path)
    _, source = _read(path, monkeypatch, lazy=True)
    anns = [PsetAnnotation(gid, "Swayscreen_TestWall", (Prop("Closed", True, "IfcBoolean"),))]
    with_src = write_annotated(path, tmp_path / "with.ifc", anns, source=source)
    without = write_annotated(path, tmp_path / "without.ifc", anns)
    assert with_src.reused_parse and not without.reused_parse
    assert (tmp_path / "with.ifc").read_bytes() == (tmp_path / "without.ifc").read_bytes()
    assert any(f"written to #{min(ids)} only" in n for n in with_src.notes)
    out = ifcopenshell.open(str(tmp_path / "with.ifc"))
    (rel,) = [r for r in out.by_type("IfcRelDefinesByProperties")
              if r.RelatingPropertyDefinition.Name == "Swayscreen_TestWall"]
    assert rel.RelatedObjects[0].id() == min(ids)


@dataclass(frozen=True)
class _SourceWithParserList(SourceFile):
    """A SourceFile that also carries the GlobalIds the parser reported as repeated."""

    shared_global_ids: frozenset[str] = frozenset()


def test_parser_list_of_repeated_guids_is_used_instead_of_the_scan(tmp_path, monkeypatch):
    path, gid, ids = _with_shared_wall_guid(tmp_path)
    _, plain = _read(path, monkeypatch, lazy=False)
    source = _SourceWithParserList(plain.path, plain.size_bytes, plain.mtime_ns, plain.model, frozenset({gid}))

    def no_scan(*a, **k):
        raise AssertionError("the byte scan ran although the source lists the repeated GlobalIds")

    monkeypatch.setattr(writing, "_scan_global_ids", no_scan)
    anns = [PsetAnnotation(gid, "Swayscreen_TestWall", (Prop("Closed", True, "IfcBoolean"),))]
    rep = write_annotated(path, tmp_path / "with.ifc", anns, source=source)
    monkeypatch.undo()
    write_annotated(path, tmp_path / "without.ifc", anns)
    assert rep.reused_parse
    assert (tmp_path / "with.ifc").read_bytes() == (tmp_path / "without.ifc").read_bytes()


def test_byte_scan_finds_repeated_and_present_guids(tmp_path):
    path, gid, _ = _with_shared_wall_guid(tmp_path)
    f = ifcopenshell.open(str(path))
    storey = f.by_type("IfcBuildingStorey")[0].GlobalId
    absent = ifcopenshell.guid.compress(uuid.uuid4().hex)
    scan = writing._scan_global_ids(path, {gid, storey, "not a GlobalId"}, {storey, absent}, "Swayscreen_")
    # the malformed one cannot be found in the bytes, so it is looked up among all entities
    assert scan.repeated == {gid, "not a GlobalId"}
    assert scan.present == {storey}  # in the file once; the fresh GlobalId nowhere
    assert not scan.prefix_seen
    assert writing._scan_global_ids(path, set(), {absent}, "Swayscreen_").present == set()


def test_byte_scan_sees_our_names_even_when_they_look_like_guids(tmp_path):
    """A set name of ours that is also 22 GlobalId characters ('Swayscreen_CoreWallXYZ') still
    counts as ours, and a target GlobalId that happens to start with our prefix is left to the
    lookup among all entities rather than counted in the bytes."""
    sample = SAMPLES / "courtyard_12_m.ifc"
    takeoff, _ = read_model_and_source(sample)
    wall = takeoff.buildings[0].storeys[1].walls[0].global_id
    name = "Swayscreen_CoreWallXYZ"
    assert writing._GUID.fullmatch(name)  # 22 characters of the GlobalId alphabet
    out = tmp_path / "named.ifc"
    write_annotated(sample, out, [PsetAnnotation(wall, name, (Prop("Closed", True, "IfcBoolean"),))])
    scan = writing._scan_global_ids(out, {wall, "Swayscreen_0123456789A"}, set(), "Swayscreen_")
    assert scan.prefix_seen
    assert scan.repeated == {"Swayscreen_0123456789A"}
    _, source = read_model_and_source(out)
    rep = write_annotated(out, tmp_path / "again.ifc", [], source=source)
    assert rep.reused_parse and rep.psets_replaced == 1  # found and removed


# --------------------------------------------------------------------------- GlobalId arithmetic


@pytest.mark.parametrize("seed", range(40))
def test_guid_helpers_match_the_reference_implementations(seed):
    """Our uuid5 bytes and base-64 compression against Python's uuid.uuid5 (RFC 4122) and
    ifcopenshell.guid.compress, including the all-zero and all-one UUIDs."""
    ns = uuid.UUID(int=(seed * 0x9E3779B97F4A7C15) % (1 << 128))
    name = f"{seed}|Swayscreen_StoreySway|IfcPropertySet|é"
    assert writing._uuid5_bytes(ns, name) == uuid.uuid5(ns, name).bytes
    u = uuid.uuid5(ns, name)
    assert writing._compress_guid(u.bytes) == ifcopenshell.guid.compress(u.hex)
    for edge in (b"\x00" * 16, b"\xff" * 16):
        assert writing._compress_guid(edge) == ifcopenshell.guid.compress(edge.hex())


# --------------------------------------------------------------------------- the screening run


@pytest.fixture(scope="module")
def kept_run():
    from swayscreen.pipeline.screening import screen_file

    return screen_file(SAMPLES / "courtyard_12_m.ifc", keep_source=True)


def test_screening_run_pickles_without_its_source(kept_run):
    """A run crosses process boundaries (process pool, Dask) as plain data: the open IFC file
    stays behind and the results arrive whole (same summary)."""
    from swayscreen.pipeline.summary import build_summary

    assert kept_run.source is not None
    back = pickle.loads(pickle.dumps(kept_run))
    assert back.source is None
    assert kept_run.source is not None  # pickling did not touch the original
    assert back.takeoff == kept_run.takeoff and back.settings == kept_run.settings
    assert [b.assessment for b in back.buildings] == [b.assessment for b in kept_run.buildings]
    assert dict(back.buildings[0].results).keys() == dict(kept_run.buildings[0].results).keys()
    assert build_summary(back, when=WHEN) == build_summary(kept_run, when=WHEN)


def test_screen_file_keeps_the_source_only_when_asked():
    from swayscreen.pipeline.screening import screen_file

    run = screen_file(SAMPLES / "courtyard_12_m.ifc")
    assert run.source is None
    pickle.loads(pickle.dumps(run))


def test_write_outputs_uses_the_source_and_lets_it_go(tmp_path, monkeypatch):
    """The write-back plans on the run's open file (no second parse) and the run drops it once
    the copy is written, so the parsed model can be freed."""
    from swayscreen.pipeline.outputs import write_outputs
    from swayscreen.pipeline.screening import screen_file

    run = screen_file(SAMPLES / "courtyard_12_m.ifc", keep_source=True)
    model_ref = weakref.ref(run.source.model)
    opened = []
    real_open = writing._open
    monkeypatch.setattr(writing, "_open", lambda *x, **k: opened.append(x) or real_open(*x, **k))
    paths = write_outputs(run, tmp_path / "out", when=WHEN, report=False)
    assert not opened
    assert run.source is None
    gc.collect()
    assert model_ref() is None  # nothing else kept the parsed model alive
    assert paths["annotated model"].is_file()


# --------------------------------------------------------------------------- screen --no-report


def test_no_report_writes_everything_but_the_report(tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "report.html").write_text("<html>an earlier run</html>")  # stale: must not survive
    strict = tmp_path / "strict.toml"  # an unreachable drift limit: flagged, so BCF is written too
    strict.write_text("[drift]\noverall_limit_ratio = 5000.0\nstorey_limit_ratio = 5000.0\n")
    code = main(["screen", str(SAMPLES / "courtyard_12_m.ifc"), "--settings", str(strict), "--out", str(out),
                 "--no-report"])
    stdout, _ = capsys.readouterr()
    assert code == 1
    assert sorted(p.name for p in out.iterdir()) == ["courtyard_12_m-annotated.ifc", "issues.bcfzip", "summary.json"]
    assert "report.html" not in stdout and "summary.json" in stdout
    copy = ifcopenshell.open(str(out / "courtyard_12_m-annotated.ifc"))
    assert any((p.Name or "").startswith("Swayscreen_") for p in copy.by_type("IfcPropertySet"))


def test_no_report_without_out_is_a_one_line_error(tmp_path, capsys):
    code = main(["screen", str(SAMPLES / "courtyard_12_m.ifc"), "--no-report"])
    _, err = capsys.readouterr()
    assert code == 2
    assert err.strip() == "swayscreen: error: --no-report applies to the files written with --out DIR; give --out as well"


# --------------------------------------------------------------------------- re-run: only the tail is scanned


def _annotated_sample(tmp_path: Path) -> tuple[Path, list[PsetAnnotation], int]:
    """The 12-storey sample annotated once, its annotations and the lowest id we appended."""
    sample = SAMPLES / "courtyard_12_mm.ifc"
    takeoff, _ = read_model_and_source(sample)
    anns = _annotations(takeoff)
    first = tmp_path / "first.ifc"
    rep = write_annotated(sample, first, anns)
    return first, anns, rep.first_new_id


def _rerun_both_ways(src: Path, anns, tmp_path: Path, monkeypatch) -> tuple[bytes, bytes, list[int]]:
    """The re-run's bytes with the fast paths on (and where the scan started) and off."""
    starts: list[int] = []
    real_init = writing._Copier.__init__

    def spy(self, *a, **k):
        starts.append(k.get("start", 0))
        real_init(self, *a, **k)

    monkeypatch.setattr(writing._Copier, "__init__", spy)
    write_annotated(src, tmp_path / "fast.ifc", anns)
    monkeypatch.setattr(writing, "_FAST_COPY", False)
    write_annotated(src, tmp_path / "scanned.ifc", anns)
    monkeypatch.undo()
    return (tmp_path / "fast.ifc").read_bytes(), (tmp_path / "scanned.ifc").read_bytes(), starts


def test_rerun_scans_only_the_tail_and_agrees_with_the_full_scan(tmp_path, monkeypatch):
    first, anns, lowest = _annotated_sample(tmp_path)
    fast, scanned, starts = _rerun_both_ways(first, anns, tmp_path, monkeypatch)
    assert fast == scanned == first.read_bytes()  # idempotent either way
    raw = first.read_bytes()
    # the fast path began at the statement of our lowest earlier instance (after its line end)
    assert starts[0] == raw.index(b"#%d=" % lowest) - 1 and starts[1] == 0


def test_rerun_with_an_earlier_instance_moved_to_the_top(tmp_path, monkeypatch):
    """One of our earlier relations moved up to just after DATA (a tool re-ordered the file):
    the tail misses it, so the whole file is scanned and the result is the same."""
    first, anns, _ = _annotated_sample(tmp_path)
    raw = first.read_bytes()
    last = re.findall(rb"\n(#\d+=IFCRELDEFINESBYPROPERTIES\('[^\n]*;)", raw)[-1]
    moved = raw.replace(b"\n" + last, b"", 1).replace(b"DATA;\n", b"DATA;\n" + last + b"\n", 1)
    src = tmp_path / "moved.ifc"
    src.write_bytes(moved)
    fast, scanned, starts = _rerun_both_ways(src, anns, tmp_path, monkeypatch)
    assert fast == scanned
    assert len(starts) == 3 and starts[1] == 0  # tail tried, then the full scan, then the reference
    assert fast == first.read_bytes()  # dropped at the top, written again in its place at the end
    rels = [r for r in ifcopenshell.open(str(tmp_path / "fast.ifc")).by_type("IfcRelDefinesByProperties")
            if (r.RelatingPropertyDefinition.Name or "").startswith("Swayscreen_")]
    assert len(rels) == len(anns)


def test_rerun_ignores_a_lookalike_statement_inside_a_string(tmp_path, monkeypatch):
    """A name holding '; #<lowest id>=' after our instances: inside a string (an odd number of
    apostrophes before it), so it is not taken for the start of the tail."""
    first, anns, lowest = _annotated_sample(tmp_path)
    raw = first.read_bytes()
    k = raw.rindex(b"ENDSEC;")
    trap = b"#9999999=IFCPROPERTYSINGLEVALUE('Note',$,IFCLABEL('x; #%d=IFCWALL(y)'),$);\n" % lowest
    src = tmp_path / "trap.ifc"
    src.write_bytes(raw[:k] + trap + raw[k:])
    fast, scanned, starts = _rerun_both_ways(src, anns, tmp_path, monkeypatch)
    assert fast == scanned and trap in fast
    assert starts[0] == raw.index(b"#%d=" % lowest) - 1


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3_ADD2"])
def test_property_line_shortcut_writes_what_the_general_builder_writes(schema):
    """IfcPropertySingleValue in each schema's attribute order (IFC4X3 renamed Description to
    Specification; ISO 16739-1), with and without a description."""
    import ifcopenshell.ifcopenshell_wrapper as w

    s = w.schema_by_name(schema)
    general, short = writing._Builder(s, 100), writing._Builder(s, 100)
    for name, nominal, description in (("Mass", writing._Typed("IfcMassMeasure", "1.5"), ""),
                                       ("Note's", writing._Typed("IfcText", "'x'"), "ünï [unit: m]")):
        general.add("IfcPropertySingleValue", Name=name, Description=description or None, NominalValue=nominal)
        short.add_property(name, nominal, description)
    assert short.lines == general.lines
