"""BCF topics for flagged items (BIM Collaboration Format, buildingSMART open standard, BCF-XML 2.1).

Version 2.1 is written because it is the one most BCF-capable applications read. The archive
(a zip, extension ``.bcfzip``) holds, per the BCF-XML 2.1 specification:

* ``bcf.version``: ``<Version VersionId="2.1"><DetailedVersion>2.1</DetailedVersion></Version>``;
* ``project.bcfp``: the project name (``ProjectExtension/Project/Name``, ``ExtensionSchema``);
* one folder per topic, named by the topic GUID, with

  - ``markup.bcf``: ``Markup/Topic`` (attributes Guid, TopicType, TopicStatus; elements Title,
    Index, Labels, CreationDate, CreationAuthor, Description in the schema's sequence order) and a
    ``Viewpoints`` reference when the topic names model objects;
  - ``viewpoint.bcfv``: ``VisualizationInfo/Components/Selection`` listing the IfcGuid of every
    object the topic is about (the building, a storey ...), with ``Visibility DefaultVisibility="true"``.

No camera or snapshot is written: the screening has no view to offer, and both are optional in
the 2.1 schema. Topic and viewpoint GUIDs are ``uuid5`` of the title and the object GlobalIds
(a repeated title and object list gets an occurrence number), and the creation date is a
parameter, so the same input gives the same archive byte for byte.
"""
from __future__ import annotations

import io
import re
import uuid
import xml.etree.ElementTree as ET
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from .errors import InputError
from .fileio import atomic_write_bytes

__all__ = ["BcfTopic", "BCF_VERSION", "write_bcfzip", "topic_guid", "topic_guids"]

BCF_VERSION = "2.1"
_NAMESPACE = uuid.uuid5(uuid.NAMESPACE_URL, "urn:swayscreen:bcf-topics")
# IfcGloballyUniqueId: 22 characters of the IFC base-64 alphabet (ISO 16739-1; BCF visinfo.xsd IfcGuid)
_IFC_GUID = re.compile(r"[0-9A-Za-z_$]{22}")
# Characters XML 1.0 cannot carry (section 2.2); replaced by U+FFFD rather than failing.
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")  # XML 1.0 Char; lone surrogates


@dataclass(frozen=True)
class BcfTopic:
    """One issue: a title, a description, the GlobalIds of the objects it is about, labels."""

    title: str
    description: str
    global_ids: tuple[str, ...]
    labels: tuple[str, ...] = ()
    topic_type: str = "Issue"


def topic_guid(topic: BcfTopic, occurrence: int = 0) -> str:
    """The topic's GUID: ``uuid5`` of its title and object GlobalIds (stable across runs).

    Topics with the same title and objects (say, one flag per return period) are told apart by
    their ``occurrence`` (0 for the first, 1 for the next ...), counted in the order given.
    """
    key = "\x1f".join((topic.title, *topic.global_ids)) + (f"\x1e{occurrence}" if occurrence else "")
    return str(uuid.uuid5(_NAMESPACE, key))


def topic_guids(topics: Sequence[BcfTopic]) -> tuple[str, ...]:
    """GUIDs of ``topics`` in order, as :func:`write_bcfzip` assigns them."""
    counts: dict[str, int] = {}
    out = []
    for topic in topics:
        base = topic_guid(topic)
        out.append(topic_guid(topic, counts.get(base, 0)))
        counts[base] = counts.get(base, 0) + 1
    return tuple(out)


def _viewpoint_guid(tguid: str) -> str:
    return str(uuid.uuid5(_NAMESPACE, f"{tguid}/viewpoint"))


def _text(s: str) -> str:
    return _NOT_XML.sub("\ufffd", s)


def _dt(date: datetime) -> str:
    """xs:dateTime with an explicit offset (a naive datetime is taken as UTC)."""
    if date.tzinfo is None:
        date = date.replace(tzinfo=timezone.utc)
    return date.isoformat(timespec="seconds")


def _xml(root: ET.Element) -> bytes:
    ET.indent(root, space="  ")
    body = ET.tostring(root, encoding="unicode")
    return ('<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n").encode("utf-8")


def _sub(parent: ET.Element, tag: str, text: str | None = None, **attrib: str) -> ET.Element:
    el = ET.SubElement(parent, tag, {k: _text(v) for k, v in attrib.items()})
    if text is not None:
        el.text = _text(text)
    return el


def _version_xml() -> bytes:
    root = ET.Element("Version", {"VersionId": BCF_VERSION})
    _sub(root, "DetailedVersion", BCF_VERSION)
    return _xml(root)


def _project_xml(project_name: str) -> bytes:
    root = ET.Element("ProjectExtension")
    project = _sub(root, "Project", ProjectId=str(uuid.uuid5(_NAMESPACE, f"project/{project_name}")))
    _sub(project, "Name", project_name)
    _sub(root, "ExtensionSchema", "")
    return _xml(root)


def _markup_xml(topic: BcfTopic, index: int, tguid: str, author: str, when: str, status: str) -> bytes:
    root = ET.Element("Markup")
    t = _sub(root, "Topic", Guid=tguid, TopicType=topic.topic_type, TopicStatus=status)
    # element order of the Topic sequence in BCF 2.1 markup.xsd
    _sub(t, "Title", topic.title)
    _sub(t, "Index", str(index))
    for label in topic.labels:
        _sub(t, "Labels", label)
    _sub(t, "CreationDate", when)
    _sub(t, "CreationAuthor", author)
    _sub(t, "Description", topic.description)
    if topic.global_ids:
        vp = _sub(root, "Viewpoints", Guid=_viewpoint_guid(tguid))
        _sub(vp, "Viewpoint", "viewpoint.bcfv")
        _sub(vp, "Index", "0")
    return _xml(root)


def _viewpoint_xml(topic: BcfTopic, tguid: str) -> bytes:
    root = ET.Element("VisualizationInfo", {"Guid": _viewpoint_guid(tguid)})
    components = _sub(root, "Components")
    selection = _sub(components, "Selection")
    for gid in topic.global_ids:
        _sub(selection, "Component", IfcGuid=gid)
    _sub(components, "Visibility", DefaultVisibility="true")
    return _xml(root)


def _check(topics: Sequence[BcfTopic], project_name: str, author: str) -> None:
    if not project_name.strip():
        raise InputError("BCF: the project name is empty")
    if not author.strip():
        raise InputError("BCF: the author is empty")
    for topic in topics:
        if not topic.title.strip():
            raise InputError("BCF: a topic has an empty title")
        if not topic.topic_type.strip():
            raise InputError(f"BCF topic {topic.title!r}: empty topic type")
        for gid in topic.global_ids:
            if not _IFC_GUID.fullmatch(gid):
                raise InputError(f"BCF topic {topic.title!r}: {gid!r} is not an IFC GlobalId (22 characters)")
        if len(set(topic.global_ids)) != len(topic.global_ids):
            raise InputError(f"BCF topic {topic.title!r}: a GlobalId is listed twice")


def write_bcfzip(
    path: Path,
    topics: Sequence[BcfTopic],
    *,
    project_name: str,
    author: str = "swayscreen",
    date: datetime | None = None,
    status: str = "Open",
) -> tuple[str, ...]:
    """Write ``topics`` as a BCF 2.1 archive at ``path`` (atomically); return the topic GUIDs in order.

    ``date`` is the CreationDate of every topic (default: now, UTC) and also the zip entries'
    timestamp, so a fixed date gives a byte-identical archive.
    """
    path = Path(path)
    _check(topics, project_name, author)
    when_dt = date or datetime.now(timezone.utc)
    when = _dt(when_dt)
    stamp = max(when_dt.timetuple()[:6], (1980, 1, 1, 0, 0, 0))  # zip dates start in 1980

    entries: list[tuple[str, bytes]] = [("bcf.version", _version_xml()), ("project.bcfp", _project_xml(project_name))]
    guids = topic_guids(topics)
    for index, (topic, g) in enumerate(zip(topics, guids)):
        entries.append((f"{g}/markup.bcf", _markup_xml(topic, index, g, author, when, status)))
        if topic.global_ids:
            entries.append((f"{g}/viewpoint.bcfv", _viewpoint_xml(topic, g)))

    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        for name, data in entries:
            info = zipfile.ZipInfo(name, date_time=stamp)
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o644 << 16
            zf.writestr(info, data)
    atomic_write_bytes(path, buf.getvalue())
    return guids
