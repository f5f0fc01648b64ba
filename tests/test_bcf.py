"""Tests for the BCF writer (pipeline/bcf.py).

External references:
* BCF-XML 2.1 (buildingSMART): archive layout (bcf.version, project.bcfp, one folder per topic
  with markup.bcf and viewpoint.bcfv); markup.xsd Topic sequence order and Guid pattern;
  visinfo.xsd Components = Selection?, Visibility (required); IfcGuid = 22 characters.
* bcf-client 0.9 (PyPI ``bcf-client``, an independent BCF reader whose BCF 2.1 data classes are
  generated from the buildingSMART XSDs): reads our archive back; its xsdata models are used as a
  strict schema check (no unknown element or attribute, every value converts to its XSD type).
* ifcopenshell: the GlobalIds in the viewpoint resolve to the model's building and storeys.
"""
from __future__ import annotations

import re
import uuid
import xml.etree.ElementTree as ET
import zipfile
from datetime import datetime, timedelta, timezone
from pathlib import Path

import bcf.v2.model as bcf_model
import ifcopenshell
import ifcopenshell.api.aggregate
import ifcopenshell.api.project
import ifcopenshell.api.root
import pytest
from bcf.v2.bcfxml import BcfXml
from xsdata.formats.dataclass.parsers import XmlParser
from xsdata.formats.dataclass.parsers.config import ParserConfig

from swayscreen.pipeline import bcf as bcf_writer
from swayscreen.pipeline.bcf import BCF_VERSION, BcfTopic, topic_guid, topic_guids, write_bcfzip
from swayscreen.pipeline.errors import InputError

DATE = datetime(2031, 3, 14, 9, 26, 53, tzinfo=timezone.utc)
# BCF 2.1 markup.xsd, complexType Topic: the xs:sequence order of its child elements
TOPIC_SEQUENCE = [
    "ReferenceLink", "Title", "Priority", "Index", "Labels", "CreationDate", "CreationAuthor",
    "ModifiedDate", "ModifiedAuthor", "DueDate", "AssignedTo", "Stage", "Description",
    "BimSnippet", "DocumentReference", "RelatedTopic",
]  # fmt: skip
MARKUP_SEQUENCE = ["Header", "Topic", "Comment", "Viewpoints"]
GUID_XSD = re.compile(r"[a-fA-F0-9]{8}-[a-fA-F0-9]{4}-[a-fA-F0-9]{4}-[a-fA-F0-9]{4}-[a-fA-F0-9]{12}")
IFCGUID_XSD = re.compile(r"[0-9A-Za-z_$]{22}")


@pytest.fixture(scope="module")
def model() -> ifcopenshell.file:
    f = ifcopenshell.api.project.create_file(version="IFC4")
    project = ifcopenshell.api.root.create_entity(f, ifc_class="IfcProject", name="Harbourline Tower")
    building = ifcopenshell.api.root.create_entity(f, ifc_class="IfcBuilding", name="Tower A")
    ifcopenshell.api.aggregate.assign_object(f, products=[building], relating_object=project)
    storeys = [ifcopenshell.api.root.create_entity(f, ifc_class="IfcBuildingStorey", name=f"L{i}") for i in range(3)]
    ifcopenshell.api.aggregate.assign_object(f, products=storeys, relating_object=building)
    return f


@pytest.fixture(scope="module")
def topics(model) -> list[BcfTopic]:
    building = model.by_type("IfcBuilding")[0].GlobalId
    top = model.by_type("IfcBuildingStorey")[-1].GlobalId
    return [
        BcfTopic(
            "Peak acceleration above the office limit",
            "10-year peak 21.3 milli-g at the top storey corner; limit 15 milli-g (office).",
            (building, top),
            labels=("comfort", "wind"),
        ),
        BcfTopic("Interstorey drift near the limit", "Drift ratio 1/480 > 1/500 <check> & review", (building,),
                 labels=("drift",), topic_type="Warning"),
        BcfTopic("Damping assumption", "No object: a note for the whole scheme — «ß»", ()),
    ]  # fmt: skip


def read_zip(path: Path) -> dict[str, bytes]:
    with zipfile.ZipFile(path) as zf:
        return {n: zf.read(n) for n in zf.namelist()}


def test_archive_layout(tmp_path, topics):
    path = tmp_path / "flags.bcfzip"
    guids = write_bcfzip(path, topics, project_name="Harbourline Tower", date=DATE)
    assert guids == tuple(topic_guid(t) for t in topics)
    files = read_zip(path)
    expected = {"bcf.version", "project.bcfp"}
    for g, t in zip(guids, topics):
        expected.add(f"{g}/markup.bcf")
        if t.global_ids:
            expected.add(f"{g}/viewpoint.bcfv")
    assert set(files) == expected
    assert not list(tmp_path.glob(".*"))  # no temporary file left


def test_xml_structure_follows_bcf_21(tmp_path, topics):
    path = tmp_path / "flags.bcfzip"
    guids = write_bcfzip(path, topics, project_name="Harbourline Tower", date=DATE, author="screening-bot")
    files = read_zip(path)
    version = ET.fromstring(files["bcf.version"])
    assert version.tag == "Version" and version.get("VersionId") == "2.1" == BCF_VERSION
    assert version.findtext("DetailedVersion") == "2.1"
    project = ET.fromstring(files["project.bcfp"])
    assert project.findtext("Project/Name") == "Harbourline Tower"
    assert GUID_XSD.fullmatch(project.find("Project").get("ProjectId"))

    for index, (g, t) in enumerate(zip(guids, topics)):
        markup = ET.fromstring(files[f"{g}/markup.bcf"])
        assert markup.tag == "Markup"
        kids = [c.tag for c in markup]
        assert kids == sorted(kids, key=MARKUP_SEQUENCE.index)
        topic = markup.find("Topic")
        assert topic.get("Guid") == g and GUID_XSD.fullmatch(g)
        assert topic.get("TopicType") == t.topic_type and topic.get("TopicStatus") == "Open"
        tags = [c.tag for c in topic]
        assert tags == sorted(tags, key=TOPIC_SEQUENCE.index)  # xs:sequence order
        assert topic.findtext("Title") == t.title
        assert topic.findtext("Description") == t.description
        assert topic.findtext("Index") == str(index)
        assert [e.text for e in topic.findall("Labels")] == list(t.labels)
        assert topic.findtext("CreationAuthor") == "screening-bot"
        assert datetime.fromisoformat(topic.findtext("CreationDate")) == DATE
        refs = markup.findall("Viewpoints")
        if not t.global_ids:
            assert refs == [] and f"{g}/viewpoint.bcfv" not in files
            continue
        (ref,) = refs
        assert ref.findtext("Viewpoint") == "viewpoint.bcfv"
        visinfo = ET.fromstring(files[f"{g}/{ref.findtext('Viewpoint')}"])
        assert visinfo.tag == "VisualizationInfo" and visinfo.get("Guid") == ref.get("Guid")
        assert GUID_XSD.fullmatch(ref.get("Guid"))
        assert [c.tag for c in visinfo.find("Components")] == ["Selection", "Visibility"]
        ids = [c.get("IfcGuid") for c in visinfo.findall("Components/Selection/Component")]
        assert ids == list(t.global_ids)
        assert all(IFCGUID_XSD.fullmatch(i) for i in ids)


def test_selection_names_the_model_objects(tmp_path, topics, model):
    path = tmp_path / "flags.bcfzip"
    guids = write_bcfzip(path, topics[:1], project_name="Harbourline Tower", date=DATE)
    visinfo = ET.fromstring(read_zip(path)[f"{guids[0]}/viewpoint.bcfv"])
    kinds = [model.by_guid(c.get("IfcGuid")).is_a() for c in visinfo.iter("Component")]
    assert kinds == ["IfcBuilding", "IfcBuildingStorey"]


def test_strict_parse_with_models_generated_from_the_xsd(tmp_path, topics):
    path = tmp_path / "flags.bcfzip"
    guids = write_bcfzip(path, topics, project_name="Harbourline Tower", date=DATE)
    files = read_zip(path)
    parser = XmlParser(
        config=ParserConfig(
            fail_on_unknown_properties=True, fail_on_unknown_attributes=True, fail_on_converter_warnings=True
        )
    )
    assert parser.from_bytes(files["bcf.version"], bcf_model.Version).version_id == "2.1"
    assert parser.from_bytes(files["project.bcfp"], bcf_model.ProjectExtension).project.name == "Harbourline Tower"
    for g, t in zip(guids, topics):
        markup = parser.from_bytes(files[f"{g}/markup.bcf"], bcf_model.Markup)
        assert markup.topic.guid == g and markup.topic.title == t.title
        assert markup.topic.creation_date.to_datetime() == DATE
        if t.global_ids:
            vi = parser.from_bytes(files[f"{g}/viewpoint.bcfv"], bcf_model.VisualizationInfo)
            assert [c.ifc_guid for c in vi.components.selection.component] == list(t.global_ids)
            assert vi.components.visibility.default_visibility is True


def test_independent_bcf_reader_accepts_the_archive(tmp_path, topics):
    path = tmp_path / "flags.bcfzip"
    guids = write_bcfzip(path, topics, project_name="Harbourline Tower", date=DATE)
    with BcfXml(path) as archive:
        assert archive.version.version_id == "2.1"
        assert archive.project_info.project.name == "Harbourline Tower"
        read = archive.topics
        assert list(read) == list(guids)
        for g, t in zip(guids, topics):
            handler = read[g]
            assert handler.topic.title == t.title
            assert handler.topic.description == t.description
            assert handler.topic.labels == list(t.labels)
            assert handler.topic.topic_type == t.topic_type
            assert handler.topic.creation_author == "swayscreen"
            vps = handler.viewpoints
            if t.global_ids:
                (vp,) = vps.values()
                assert vp.get_selected_guids() == list(t.global_ids)
            else:
                assert vps == {}


def test_reproducible(tmp_path, topics):
    a, b, c = tmp_path / "a.bcfzip", tmp_path / "b.bcfzip", tmp_path / "c.bcfzip"
    write_bcfzip(a, topics, project_name="P", date=DATE)
    write_bcfzip(b, topics, project_name="P", date=DATE)
    assert a.read_bytes() == b.read_bytes()
    later = write_bcfzip(c, topics, project_name="P", date=DATE + timedelta(days=1))
    assert later == tuple(topic_guid(t) for t in topics)  # GUIDs do not depend on the date
    assert a.read_bytes() != c.read_bytes()
    # the GUID is uuid5 of the title and the ids: a different object list is a different topic
    t0 = topics[0]
    assert topic_guid(BcfTopic(t0.title, "other words", t0.global_ids)) == topic_guid(t0)
    assert topic_guid(BcfTopic(t0.title, t0.description, t0.global_ids[:1])) != topic_guid(t0)
    assert uuid.UUID(topic_guid(t0)).version == 5


def test_naive_date_is_utc_and_default_date_is_now(tmp_path, topics):
    path = tmp_path / "n.bcfzip"
    (g,) = write_bcfzip(path, topics[:1], project_name="P", date=datetime(2031, 3, 14, 9, 26, 53))
    text = ET.fromstring(read_zip(path)[f"{g}/markup.bcf"]).findtext("Topic/CreationDate")
    assert text == "2031-03-14T09:26:53+00:00"
    before = datetime.now(timezone.utc).replace(microsecond=0)
    (g,) = write_bcfzip(path, topics[:1], project_name="P")
    stamp = datetime.fromisoformat(ET.fromstring(read_zip(path)[f"{g}/markup.bcf"]).findtext("Topic/CreationDate"))
    assert before <= stamp <= datetime.now(timezone.utc)


def test_text_is_escaped_and_cleaned(tmp_path):
    title = 'Flag <1> & "two" \u2014 d\u00e9j\u00e0 \u4e2d'
    (g,) = write_bcfzip(
        tmp_path / "x.bcfzip", [BcfTopic(title, "bell\x07 here", ())], project_name="P & Q", date=DATE
    )
    files = read_zip(tmp_path / "x.bcfzip")
    topic = ET.fromstring(files[f"{g}/markup.bcf"]).find("Topic")
    assert topic.findtext("Title") == title
    assert topic.findtext("Description") == "bell\ufffd here"  # XML 1.0 cannot carry U+0007
    assert ET.fromstring(files["project.bcfp"]).findtext("Project/Name") == "P & Q"


@pytest.mark.parametrize(
    "bad",
    [
        [BcfTopic("t", "d", ("too-short",))],
        [BcfTopic("t", "d", ("0" * 21 + "!",))],
        [BcfTopic("t", "d", ("0" * 22, "0" * 22))],
        [BcfTopic(" ", "d", ())],
        [BcfTopic("t", "d", (), topic_type="")],
    ],
)
def test_bad_topics_rejected(tmp_path, bad):
    path = tmp_path / "x.bcfzip"
    with pytest.raises(InputError):
        write_bcfzip(path, bad, project_name="P", date=DATE)
    assert not path.exists()


def test_repeated_title_and_objects_get_distinct_topics(tmp_path, topics):
    """Two flags with the same title on the same objects (e.g. two return periods) are two topics."""
    twins = [BcfTopic("Drift", "1-year", topics[0].global_ids), BcfTopic("Drift", "10-year", topics[0].global_ids)]
    path = tmp_path / "twins.bcfzip"
    guids = write_bcfzip(path, [*twins, twins[0]], project_name="P", date=DATE)
    assert len(set(guids)) == 3
    assert guids[0] == topic_guid(twins[0])  # the first keeps the plain uuid5
    assert guids == topic_guids([*twins, twins[0]])
    with BcfXml(path) as archive:
        assert sorted(h.topic.description for h in archive.topics.values()) == ["1-year", "1-year", "10-year"]


def test_empty_names_rejected(tmp_path, topics):
    with pytest.raises(InputError):
        write_bcfzip(tmp_path / "x.bcfzip", topics, project_name=" ", date=DATE)
    with pytest.raises(InputError):
        write_bcfzip(tmp_path / "x.bcfzip", topics, project_name="P", author="", date=DATE)
    assert list(tmp_path.iterdir()) == []


def test_failure_part_way_leaves_previous_file(tmp_path, topics, monkeypatch):
    path = tmp_path / "flags.bcfzip"
    path.write_bytes(b"previous archive")
    calls = {"n": 0}
    real = bcf_writer._viewpoint_xml

    def flaky(topic, tguid):
        calls["n"] += 1
        if calls["n"] == 2:
            raise RuntimeError("simulated failure")
        return real(topic, tguid)

    monkeypatch.setattr(bcf_writer, "_viewpoint_xml", flaky)
    with pytest.raises(RuntimeError, match="simulated"):
        write_bcfzip(path, topics, project_name="P", date=DATE)
    assert path.read_bytes() == b"previous archive"
    assert [p.name for p in tmp_path.iterdir()] == ["flags.bcfzip"]

    def refuse(a, b):
        raise OSError("rename refused (simulated)")

    monkeypatch.setattr(bcf_writer, "_viewpoint_xml", real)
    monkeypatch.setattr("os.replace", refuse)
    with pytest.raises(OSError, match="simulated"):
        write_bcfzip(path, topics, project_name="P", date=DATE)
    assert path.read_bytes() == b"previous archive"
    assert [p.name for p in tmp_path.iterdir()] == ["flags.bcfzip"]
