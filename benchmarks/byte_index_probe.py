"""Probe: how fast could a reader that follows references in the file's bytes be?

Timed by ``python benchmarks/read_ratio.py --probe [MODEL.ifc ...]``.

Not part of swayscreen, and not a reader: a measurement behind a design decision recorded in
DEVELOPERS.md (why the reader stays on ifcopenshell's entities although they cannot meet the
issue-2 small-file target). It does the least such a design would do before any geometry:

1. open the file lazily with ifcopenshell (units, context and the few shared instances would
   still come from there);
2. index the DATA section with one regular expression (one record per line, as
   ifcopenshell and most exporters write it; anything else is refused);
3. for every IfcSlab, IfcWall and IfcColumn: GlobalId and Name, its placement composed to a
   world matrix (identity stands in for each IfcAxis2Placement3D: no coordinate is parsed),
   the items of its 'Body' representation, and its containing storey;
4. group elements whose body and plan placement repeat (a tower's typical floors).

``read_ratio.py`` gives its time against a full ``ifcopenshell.open``. The takeoff would
still need each group's geometry, materials, storeys and the assembly step that
``read_ratio.py --floor`` times (about 0.5x the open on the 60-storey sample).
"""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np

_RECORD = re.compile(rb"^#(\d+)=([A-Z0-9_]+)(\(.*\));\r?$", re.M)
_STR = rb"(?:'(?:[^'\\]|'')*'|\$)"
_PRODUCT = re.compile(rb"\('([0-9A-Za-z_$]{22})',(?:#\d+|\$),(?:'((?:[^'\\]|'')*)'|\$)," + _STR + b"," + _STR
                      + rb",#(\d+),#(\d+),")
_LOCAL_PLACEMENT = re.compile(rb"\((?:#(\d+)|\$),#(\d+)\)")
_PRODUCT_SHAPE = re.compile(rb"\(" + _STR + b"," + _STR + rb",\(([#\d,]*)\)\)")
_SHAPE_REP = re.compile(rb"\(#\d+,'([^'\\]*)','([^'\\]*)',\(([#\d,]*)\)\)")
_CONTAINED = re.compile(rb"\(([#\d,]*)\),#(\d+)\)$")
_ELEMENTS = {b"IFCSLAB", b"IFCWALL", b"IFCWALLSTANDARDCASE", b"IFCCOLUMN"}


class Refused(Exception):
    """The file is not in the simple form the probe reads."""


def probe(path: Path) -> tuple[list[tuple], int]:
    """(GlobalId, Name, group, z, storey id) per element, and the number of groups."""
    import ifcopenshell

    ifcopenshell.open(str(path), lazy=True)
    data = path.read_bytes()
    rec: dict[bytes, bytes] = {}
    elements: list[bytes] = []
    contained: list[bytes] = []
    for i, t, a in _RECORD.findall(data):
        rec[i] = a
        if t in _ELEMENTS:
            elements.append(i)
        elif t == b"IFCRELCONTAINEDINSPATIALSTRUCTURE":
            contained.append(a)
    start, end = data.find(b"\nDATA;"), data.rfind(b"\nENDSEC;")
    if len(rec) != data.count(b"\n#", start, end + 1):
        raise Refused(f"{path}: not one record per line")
    storey_of: dict[bytes, bytes] = {}
    for a in contained:
        m = _CONTAINED.search(a)
        if m is None:
            raise Refused(f"{path}: containment not in the simple form")
        for e in m.group(1).split(b","):
            storey_of[e[1:]] = m.group(2)
    world: dict[bytes, np.ndarray] = {}
    axis: dict[bytes, np.ndarray] = {}
    eye = np.eye(4)

    def placement(pid: bytes) -> np.ndarray:
        w = world.get(pid)
        if w is None:
            m = _LOCAL_PLACEMENT.match(rec[pid])
            if m is None:
                raise Refused(f"{path}: placement #{pid.decode()} not a local placement")
            rel, ap = m.groups()
            a = axis.get(ap)
            if a is None:
                a = axis[ap] = np.eye(4)  # stands in for parsing the IfcAxis2Placement3D
            w = world[pid] = (placement(rel) if rel else eye) @ a
        return w

    groups: dict[tuple, int] = {}
    out = []
    for eid in elements:
        m = _PRODUCT.match(rec[eid])
        if m is None:
            raise Refused(f"{path}: element #{eid.decode()} not in the simple form")
        gid, name, pl, rep = m.groups()
        w = placement(pl)
        body = None
        for r in _PRODUCT_SHAPE.match(rec[rep]).group(1).split(b","):
            s = _SHAPE_REP.match(rec[r[1:]])
            if s is not None and s.group(1) == b"Body":
                body = s.group(3)
                break
        key = (body, w[:2].tobytes(), w[2, :3].tobytes())
        g = groups.setdefault(key, len(groups))
        out.append((gid.decode(), name.decode() if name else "", g, float(w[2, 3]), storey_of.get(eid)))
    return out, len(groups)
