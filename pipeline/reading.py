"""Read an IFC file into a :class:`~swayscreen.pipeline.takeoff.Takeoff`, without tessellation.

Public entry point: :func:`read_model`. Only this stage (and the writer) touches ifcopenshell.

What is read, and how (all lengths converted to metres, world coordinates):

* **Schema**: IFC2X3, IFC4 and IFC4X3 (any IFC4X3 addendum). Anything else, or a file the
  library refuses, is an :class:`InputError` naming the file.
* **Units** (:mod:`.ifc_units`): the project length unit (SI with prefix, or a conversion
  based unit such as FOOT via its conversion factor); plane-angle unit for trimmed arcs.
* **Placements** (:mod:`.ifc_geometry`): IfcLocalPlacement chains composed once each and
  memoised, with the context's WorldCoordinateSystem applied; cycles and chains deeper
  than 256 are input errors. ``true_north_deg`` from the model context's TrueNorth.
* **Bodies**: IfcExtrudedAreaSolid (direct, mapped, first operand of half-space clippings,
  unions) read in closed form. Half-space clippings only trim, so the unclipped extrusion
  is used and a warning says how many elements were affected. Bodies without a
  parametric reading are meshes: explicit planar faces (IfcFacetedBrep, surface models,
  triangulated/polygonal face sets) are read face by face, anything else (curved B-reps,
  CSG, general booleans, revolved solids) goes through the geometry engine with world
  coordinates and without opening subtraction. A mesh is projected to plan as the union
  of its non-vertical faces (convex hull above 20 000 faces; see
  :class:`.ifc_geometry.MeshBody`); such elements are listed in ``Takeoff.mesh_elements``
  with ``from_mesh`` True, and one warning counts them.
* **Slabs** (IfcSlab and subtypes): plan polygon with own voids and vertical extruded
  IfcOpeningElement voids subtracted (recesses ignored); thickness = volume / plan area
  of the body before openings (= extrusion depth for a vertical extrusion; for sloped
  slabs an equivalent thickness that preserves the mass over the plan footprint); top
  elevation; PredefinedType from the occurrence, else its type; ``sloped`` when the
  extrusion is not vertical or the profile plane not horizontal.
* **Walls** (IfcWall and every subtype, IFC2X3 and IFC4): axis from the 'Axis'
  representation when present (shifted onto the body's centre line), else the long
  axis of the body footprint's minimum rotated rectangle; thickness = the footprint's
  extent across the axis, replaced by the material layer set total when an
  IfcMaterialLayerSetUsage is present and agrees within 5 % (disagreements are
  reported and the geometry kept); height and base from the body; openings from each
  voiding IfcOpeningElement's body projected onto the axis; LoadBearing from
  Pset_WallCommon (occurrence, else type).
* **Columns** (IfcColumn and subtypes): plan section from the profile, height and base.
* **Materials** (:mod:`.ifc_materials`): occurrence, else type; missing materials are
  counted per element kind in one warning each.
* **Storeys**: elevation = ``Elevation`` x unit; where the storey's placement z
  disagrees by more than 1 mm the placement (world) z is used, with a warning. Storeys
  are rebuilt from element geometry by :mod:`.ifc_floors`, which also documents the
  **ground rule**: with ``ground_rule = "nearest-zero"`` (default) the storey whose
  elevation is nearest 0 is the ground storey and the storeys below it are basements
  (``above_grade`` False); ``"lowest"`` makes the lowest storey ground; ``"named"`` the
  storey named ``ground_storey``. Heights run to the next storey; the top storey's
  height comes from its walls and columns, else from the storey below.
* **Usage hint**: from the storey's Name/LongName, else a vote over the Name, LongName,
  ObjectType and Pset_SpaceOccupancyRequirements.OccupancyType of the IfcSpaces in it
  (office, residential, hotel, plant, retail, parking).
* **Several IfcBuilding**: one BuildingTakeoff each (in file order).

Speed: attributes are read by position (several times faster than by name), placements,
directions, profiles (also by value), material selects and spatial parents are memoised,
and simple footprints are built in one vectorised shapely call at the end. Files up to
8 MB are opened in full: ``ifcopenshell.open(lazy=True)`` made the whole read slower there
(about 165 against 130 ms CPU on the 60-storey sample), since every element is visited
anyway; larger files are opened lazily (160-storey tower, 37 MB: read 2.7 -> 1.6 s, less
memory, same takeoff).

Warnings are one line each, aggregated (counts with up to five GlobalIds): what concerns
the file and its elements in ``Takeoff.warnings``, each building's floor corrections
(reassigned elements, split storeys, finish layers, duplicates, empty storeys) in its
``BuildingTakeoff.warnings``.
"""
from __future__ import annotations

import math
import mmap
import re
from collections import Counter, defaultdict
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import shapely
import shapely.errors
from shapely.geometry import MultiPolygon, Polygon

from .core_settings import LevelSettings
from .errors import InputError
from .ifc_floors import Placed, SourceStorey, build_storeys
from .ifc_geometry import (MAX_COORDINATE_M, MAX_ELEVATION_M, MAX_SIZE_M, Geometry, MeshBody, NotParametric, Prism, Unsupported, attr, faces_body,
                           implausible_extent, mesh_body, polygonal, prism_footprint,
                           prism_is_vertical, prism_vertices, prism_volume, prism_zrange)
from .ifc_materials import MaterialReader
from .ifc_units import read_context, read_units
from .takeoff import BuildingTakeoff, Column, PlanShape, Slab, Takeoff, Wall, WallOpening

__all__ = ["read_model", "SUPPORTED_SCHEMAS", "open_model"]

SUPPORTED_SCHEMAS = ("IFC2X3", "IFC4", "IFC4X3")
_BODY_TYPES = {"SweptSolid", "Brep", "Clipping", "MappedRepresentation", "SurfaceModel", "Tessellation",
               "CSG", "AdvancedSweptSolid", "AdvancedBrep", "SolidModel"}
_USAGE_RULES = [
    ("office", re.compile(r"office|b\u00fcro|buero|bureau|workplace")),
    ("residential", re.compile(r"residential|residence|apartment|\bflats?\b|dwelling|wohn|living|bedroom")),
    ("hotel", re.compile(r"hotel|guest ?room")),
    ("plant", re.compile(r"\bplant\b|mechanical|machine room|technik|\bmep\b|\bhvac\b")),
    ("retail", re.compile(r"retail|\bshops?\b|laden")),
    ("parking", re.compile(r"parking|car ?park|garage|tiefgarage")),
]
_ELEMENT_ERRORS = (AttributeError, TypeError, ValueError, IndexError, KeyError, ZeroDivisionError, RuntimeError,
                   NotParametric, shapely.errors.GEOSException, np.linalg.LinAlgError)
_ATTR_COUNT = re.compile(r"Expected (\d+) attribute values, found (\d+) for instance #(\d+)")
_NON_UNIQUE = re.compile(r"non-unique GlobalId (\S+)")
_PARSE_ERROR = re.compile(r"\[error\](?:\s*\[[^\]\n]*\])*\s*([^\n]*?)(?: at offset (\d+))?\s*$", re.M)
_FILE_SCHEMA = re.compile(rb"FILE_SCHEMA\s*\(\s*\(\s*'([^']*)'", re.I)
MAX_BUILDINGS = 200
"""Most buildings with storeys one file may hold (each is screened on its own; a campus
export has tens; common practice)."""
MAX_STOREYS = 1000
"""Most storeys one building may have: the tallest buildings have under 200 (common
practice); more is damage or a generated file, and is refused before any element is read."""
_LAYER_TOL_REL = 0.05
_LAYER_TOL_ABS = 0.005


# ---------------------------------------------------------------------------- opening the file

def _check_file(p: Path) -> None:
    if not p.exists():
        raise InputError(f"{p}: file not found")
    if p.is_dir():
        raise InputError(f"{p}: is a directory, not an IFC file")
    try:
        size = p.stat().st_size
        with p.open("rb") as fh:
            head = fh.read(4096)
            fh.seek(max(0, size - 4096))
            tail = fh.read()
    except OSError as exc:
        raise InputError(f"{p}: cannot be read ({exc.strerror or exc})") from None
    if size == 0:
        raise InputError(f"{p}: empty file")
    h = head.lstrip(b"\xef\xbb\xbf \t\r\n")
    if not h.startswith(b"ISO-10303-21"):
        if h.startswith(b"PK"):
            raise InputError(f"{p}: a zip archive (ifcZIP?); unzip it and pass the .ifc file")
        if h.startswith(b"<"):
            raise InputError(f"{p}: XML, not an IFC STEP file (ifcXML is not supported)")
        raise InputError(f"{p}: not an IFC file (no ISO-10303-21 header)")
    if b"END-ISO-10303-21" not in tail.rstrip(b"\x00 \t\r\n\x1a")[-256:]:
        raise InputError(f"{p}: truncated or corrupt IFC file (no END-ISO-10303-21 trailer)")
    m = _FILE_SCHEMA.search(head)
    if m:
        _check_schema(p, m.group(1).decode("ascii", "replace").strip().upper())
    if not _names_storey(p):
        raise InputError(f"{p}: no IfcBuildingStorey (the model has no storeys to screen)")


def _check_schema(p: Path, schema: str) -> None:
    if not any(schema == s or schema.startswith(s + "_") for s in SUPPORTED_SCHEMAS):
        raise InputError(f"{p}: schema {schema} is not supported (IFC2X3, IFC4, IFC4X3 are)")


def _names_storey(p: Path) -> bool:
    """False when the file's bytes never name IFCBUILDINGSTOREY (in any case): such a file has
    nothing to screen however large it is, and is refused without parsing it (a byte scan
    runs at memory speed; the parse at a few MB/s)."""
    with p.open("rb") as fh:
        with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
            return mm.find(b"IFCBUILDINGSTOREY") >= 0 or re.search(rb"(?i)ifcbuildingstorey", mm) is not None


def _instance_at(p: Path, offset: int) -> str:
    """``#id`` of the instance around byte ``offset`` (for messages), or ''."""
    try:
        with p.open("rb") as fh:
            fh.seek(max(0, offset - 65536))
            chunk = fh.read(min(offset, 65536))
    except OSError:
        return ""
    found = list(re.finditer(rb"#(\d+)\s*=", chunk))
    return f"#{found[-1].group(1).decode()}" if found else ""


def _log_findings(p: Path, log: str) -> tuple[list[str], set[str]]:
    """Warnings for what the parser left out, and the GlobalIds it saw more than once."""
    dup = set(_NON_UNIQUE.findall(log))
    errors = _PARSE_ERROR.findall(log)
    warnings = []
    if errors:
        msg, offset = errors[0]
        msg = re.sub("[\ud800-\udfff]", "\ufffd", msg)  # undecodable bytes of the file, as the log gives them
        where = _instance_at(p, int(offset)) if offset else ""
        warnings.append(f"{p}: the IFC parser could not read {len(errors)} value(s) and left them out (first: "
                        f"{msg.strip()[:120]}{' in ' + where if where else ''}); the elements using them may be "
                        "misplaced or skipped")
    return warnings, dup


def open_model(path: str | Path):
    """Open an IFC file with ifcopenshell after the cheap checks; InputError on failure."""
    return _open_with_log(Path(path))[0]


# Above this size the file is opened lazily (instances parsed when first visited): on the
# 160-storey benchmark tower (37 MB) that read faster and with less memory; on small files
# (the 60-storey sample, 1 MB) the full parse is faster.
_LAZY_ABOVE_BYTES = 8_000_000


def _large(size_bytes: int) -> bool:
    """A file opened lazily (and mostly other than structure: see the material lookup)."""
    return size_bytes > _LAZY_ABOVE_BYTES


def _open_with_log(p: Path):
    """The open model and what the parser logged while reading it."""
    import ifcopenshell

    _check_file(p)
    # The parser's log is read as text below; ifcopenshell.validate switches the process-wide
    # format to JSON and leaves it so, which hid parser messages from later reads.
    ifcopenshell.ifcopenshell_wrapper.set_log_format_text()
    ifcopenshell.get_log()  # drain messages of earlier files
    try:
        if _large(p.stat().st_size):
            model = ifcopenshell.open(str(p), lazy=True)
        else:
            model = ifcopenshell.open(str(p))
    except Exception as exc:  # noqa: BLE001 - ifcopenshell.Error, RuntimeError, SchemaError...
        msg = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(f"{p}: not readable as IFC ({msg})") from None
    log = ifcopenshell.get_log()
    bad = _ATTR_COUNT.search(log)
    if bad:
        raise InputError(f"{p}: corrupt IFC file (instance #{bad.group(3)} has {bad.group(2)} attribute values where "
                         f"its type has {bad.group(1)})")
    _check_schema(p, str(getattr(model, "schema_identifier", None) or model.schema).upper())
    return model, log


def _schema_name(model) -> str:
    s = str(model.schema).upper()
    return "IFC4X3" if s.startswith("IFC4X3") else s


# ---------------------------------------------------------------------------- solids

@dataclass(frozen=True)
class SourceFile:
    """The IFC file as the reader found it: lets the writer reuse the parse it already paid for.

    Attributes:
        path: the file read.
        size_bytes, mtime_ns: its size and modification time when it was opened; the writer
            re-opens the file itself when either has changed since.
        model: the open ifcopenshell file (lazy above 8 MB). Read-only by contract: nothing but
            the writer's planning step may touch it.
    """

    path: Path
    size_bytes: int
    mtime_ns: int
    model: object = field(repr=False, compare=False)
    shared_global_ids: frozenset[str] = frozenset()
    """GlobalIds the parser saw on more than one instance (from its log at open time)."""

    def unchanged(self) -> bool:
        """True when the file on disk still has the size and modification time it was read with."""
        try:
            st = self.path.stat()
        except OSError:
            return False
        return st.st_size == self.size_bytes and st.st_mtime_ns == self.mtime_ns


@dataclass
class _Solid:
    """The reader's summary of one element body (world metres)."""

    footprint: PlanShape
    zmin: float
    zmax: float
    volume_m3: float
    vertical: bool
    clipped: bool = False
    prisms: list[Prism] = field(default_factory=list)
    mesh: MeshBody | None = None

    def vertices(self) -> np.ndarray:
        if self.mesh is not None:
            return self.mesh.vertices
        return np.vstack([prism_vertices(p) for p in self.prisms])


class _Ring:
    """A plan footprint that is one simple ring (the common case: one vertical extrusion
    of a profile without holes), kept as coordinates until all elements are read, then
    turned into shapely polygons in one vectorised call (see :func:`_materialise`).

    Offers the few polygon properties the element readers use."""

    __slots__ = ("coords", "_area", "poly")

    def __init__(self, coords: np.ndarray) -> None:
        self.coords = coords  # closed ring (k, 2)
        x, y = coords[:, 0], coords[:, 1]
        self._area = abs(float(np.dot(x[:-1], y[1:]) - np.dot(x[1:], y[:-1]))) / 2.0
        self.poly: Polygon | None = None

    is_empty = False

    @property
    def area(self) -> float:
        return self._area

    def polygon(self) -> Polygon:
        if self.poly is None:
            self.poly = shapely.polygons(self.coords)
        return self.poly


def _shape(g) -> PlanShape:
    return g.polygon() if isinstance(g, _Ring) else g


def _materialise(rings: list[_Ring]) -> None:
    """Create the polygons of many rings at once (one GEOS call instead of one per ring)."""
    todo = [r for r in rings if r.poly is None]
    if not todo:
        return
    coords = np.concatenate([r.coords for r in todo])
    idx = np.repeat(np.arange(len(todo)), [len(r.coords) for r in todo])
    polys = shapely.polygons(shapely.linearrings(coords, indices=idx))
    for r, p in zip(todo, polys):
        r.poly = p


@dataclass
class _Pending:
    """An element read but not yet built (its footprint may still be a :class:`_Ring`)."""

    cls: type
    kwargs: dict
    zmin: float
    zmax: float
    geom_key: str


def _from_prisms(prisms: list[Prism], clipped: bool) -> _Solid:
    if len(prisms) == 1:  # the common case, with the same arithmetic as the general one below
        p = prisms[0]
        parts = p.profile.parts
        if p.vertical and len(parts) == 1 and not parts[0][1]:
            m = p.matrix
            fp = _Ring(parts[0][0] @ m[:2, :2].T + m[:2, 3])
        else:
            fp = prism_footprint(p)
        return _Solid(fp, p.zmin, p.zmax, p.volume_m3, p.vertical, clipped, prisms)
    fp = polygonal(shapely.union_all([prism_footprint(p) for p in prisms]))
    zr = [prism_zrange(p) for p in prisms]
    return _Solid(fp, min(z[0] for z in zr), max(z[1] for z in zr), sum(prism_volume(p) for p in prisms),
                  all(prism_is_vertical(p) for p in prisms), clipped, prisms)


def _polys(shape: PlanShape) -> list[Polygon]:
    if isinstance(shape, MultiPolygon):
        return list(shape.geoms)
    return [shape] if isinstance(shape, Polygon) and not shape.is_empty else []


def _outline(shape) -> np.ndarray:
    if isinstance(shape, _Ring):
        return shape.coords
    return np.vstack([np.asarray(p.exterior.coords) for p in _polys(shape)])


def _bool(v) -> bool | None:
    v = getattr(v, "wrappedValue", v)
    if isinstance(v, bool):
        return v
    if isinstance(v, str):
        s = v.strip().upper().strip(".")
        if s in ("TRUE", "T", "YES"):
            return True
        if s in ("FALSE", "F", "NO"):
            return False
    return None


def _ids(items, limit: int = 5) -> str:
    ids = [i for i in items if i]
    more = len(ids) - limit
    return ", ".join(ids[:limit]) + (f" and {more} more" if more > 0 else "")


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def _label(el) -> str:
    name = (attr(el, "Name") or "").strip()
    return f"{el.is_a()} {attr(el, 'GlobalId')}" + (f" '{name}'" if name else "")


# ---------------------------------------------------------------------------- the reader

class _Reader:
    def __init__(self, model, path: Path, levels: LevelSettings, log: str = "") -> None:
        self.model = model
        self.path = path
        self.where = str(path)
        self.levels = levels
        self.warnings, dup = _log_findings(path, log)
        self.shared_global_ids = dup
        self.dup_first = self._duplicates(dup) if dup else {}
        self.mesh_ids: list[str] = []
        self.mesh_types: Counter[str] = Counter()
        self.no_geometry: dict[str, list[str]] = defaultdict(list)
        self.clipped: dict[str, list[str]] = defaultdict(list)
        self.no_material: dict[str, list[str]] = defaultdict(list)
        self.layer_mismatch: list[str] = []
        self.skipped_openings: list[str] = []
        self.inclined_columns: list[str] = []
        self.unreadable: list[str] = []

    # -- relationships ----------------------------------------------------------------
    def _scan(self) -> None:
        m = self.model
        self.container: dict[int, object] = {}
        # references to instances missing from a damaged file read as None: skipped
        for rel in m.by_type("IfcRelContainedInSpatialStructure"):
            st_ = attr(rel, "RelatingStructure")
            for e in attr(rel, "RelatedElements") or ():
                if e is not None and st_ is not None:
                    self.container.setdefault(e.id(), st_)
        self.parent: dict[int, object] = {}
        self.children: dict[int, list] = defaultdict(list)
        for rel in m.by_type("IfcRelAggregates"):
            par = attr(rel, "RelatingObject")
            # A curtain wall's parts are its plates, members and panels (ISO 16739-1,
            # IfcCurtainWall): never a storey's slab, wall or column, and often most of a
            # tower's instances, so they are not listed.
            if par is not None and par.is_a("IfcCurtainWall"):
                continue
            for c in (attr(rel, "RelatedObjects") or ()) if par is not None else ():
                if c is not None:
                    self.parent.setdefault(c.id(), par)
                    self.children[par.id()].append(c)
        if m.schema != "IFC2X3":
            for rel in m.by_type("IfcRelNests"):
                par = attr(rel, "RelatingObject")
                for c in (attr(rel, "RelatedObjects") or ()) if par is not None else ():
                    if c is not None:
                        self.parent.setdefault(c.id(), par)
        self.voids: dict[int, list] = defaultdict(list)
        for rel in m.by_type("IfcRelVoidsElement"):
            host, op = attr(rel, "RelatingBuildingElement"), attr(rel, "RelatedOpeningElement")
            if host is not None and op is not None:
                self.voids[host.id()].append(op)
        self.types: dict[int, object] = {}
        for rel in m.by_type("IfcRelDefinesByType"):
            t = attr(rel, "RelatingType")
            for o in (attr(rel, "RelatedObjects") or ()) if t is not None else ():
                if o is not None:
                    self.types[o.id()] = t
        self.load_bearing: dict[int, bool] = {}
        self.occupancy: dict[int, str] = {}
        for rel in self._relevant_property_rels():
            pds = attr(rel, "RelatingPropertyDefinition")
            for pd in (pds if isinstance(pds, tuple) else (pds,)):
                name = attr(pd, "Name") if pd is not None else None
                if name == "Pset_WallCommon" and pd.is_a("IfcPropertySet"):
                    lb = self._pset_load_bearing(pd)
                    if lb is not None:
                        for o in attr(rel, "RelatedObjects") or ():
                            if o is not None:
                                self.load_bearing[o.id()] = lb
                elif name == "Pset_SpaceOccupancyRequirements" and pd.is_a("IfcPropertySet"):
                    for prop in attr(pd, "HasProperties") or ():
                        if attr(prop, "Name") == "OccupancyType" and prop.is_a("IfcPropertySingleValue"):
                            v = attr(prop, "NominalValue")
                            text = str(getattr(v, "wrappedValue", v) or "")
                            for o in attr(rel, "RelatedObjects") or ():
                                if o is not None:
                                    self.occupancy[o.id()] = text

    def _relevant_property_rels(self) -> list:
        """The IfcRelDefinesByProperties attaching sets to walls or spaces (the only objects
        whose sets are read), found through their IsDefinedBy inverses instead of walking every
        relation of the model; in id order (file order in practice), as ``by_type`` gives them."""
        rels: dict[int, object] = {}
        for ifc_type in ("IfcWall", "IfcSpace"):
            for o in self.model.by_type(ifc_type):
                for rel in o.IsDefinedBy or ():
                    if rel is not None and rel.is_a("IfcRelDefinesByProperties"):
                        rels.setdefault(rel.id(), rel)
        return [rels[k] for k in sorted(rels)]

    @staticmethod
    def _pset_load_bearing(pset) -> bool | None:
        for prop in attr(pset, "HasProperties") or ():
            if attr(prop, "Name") == "LoadBearing" and prop.is_a("IfcPropertySingleValue"):
                return _bool(attr(prop, "NominalValue"))
        return None

    def _type_load_bearing(self, el) -> bool | None:
        t = self.types.get(el.id())
        for pset in (attr(t, "HasPropertySets") or ()) if t is not None else ():
            if attr(pset, "Name") == "Pset_WallCommon" and pset.is_a("IfcPropertySet"):
                return self._pset_load_bearing(pset)
        return None

    def _duplicates(self, dup: set[str]) -> dict[str, int]:
        """GlobalId -> #id of its first entity, for the GlobalIds several entities share (IFC
        requires them unique). The first (lowest #id) keeps the GlobalId in the takeoff and
        gets the write-back; the others are read as ``<GlobalId>#<id>`` (see :meth:`_gid`)."""
        found: dict[str, list] = defaultdict(list)
        for e in self.model.by_type("IfcRoot"):
            g = e.get_argument(0)
            if g in dup:
                found[g].append(e)
        first = {g: min(x.id() for x in es) for g, es in found.items()}
        if found:
            shared = [f"{g} ({', '.join(f'#{x.id()} {x.is_a()}' for x in sorted(es, key=lambda x: x.id())[:3])})"
                      for g, es in found.items()]
            self.warnings.append(f"{self.where}: {_plural(len(found), 'GlobalId')} shared by several entities (IFC "
                                 f"requires them unique): {_ids(shared, 3)}; the first keeps it, the others are "
                                 "read as <GlobalId>#<id> and get no results written back")
        return first

    def _gid(self, e) -> str:
        """The takeoff id of an entity: its GlobalId, made unique when the file repeats it."""
        g = e.get_argument(0)
        if self.dup_first:
            first = self.dup_first.get(g)
            if first is not None and first != e.id():
                return f"{g}#{e.id()}"
        return g

    def _spatial_parent(self, obj):
        """The storey (or building) an element or space belongs to, via containment/aggregation."""
        key = obj.id()
        if key in self._sp_cache:
            return self._sp_cache[key]
        cur = obj
        found = None
        for _ in range(64):
            if cur is None:
                break
            t = cur.is_a()
            if t == "IfcBuildingStorey" or t == "IfcBuilding":
                found = cur
                break
            nxt = self.container.get(cur.id())
            if nxt is None:
                nxt = self.parent.get(cur.id())
            cur = nxt
        self._sp_cache[key] = found
        return found

    def _building_of(self, storey):
        cur = self.parent.get(storey.id())
        for _ in range(64):
            if cur is None:
                return None
            if cur.is_a("IfcBuilding"):
                return cur
            cur = self.parent.get(cur.id()) or self.container.get(cur.id())
        return None

    # -- bodies -----------------------------------------------------------------------
    def _solid(self, el, kind: str, openings: bool = False) -> _Solid | None:
        # Positions fixed in IFC2X3, IFC4 and IFC4X3: IfcProduct.ObjectPlacement 5,
        # .Representation 6; IfcProductRepresentation.Representations 2;
        # IfcRepresentation.RepresentationIdentifier 1, .RepresentationType 2, .Items 3.
        rep = el.get_argument(6)
        reps = (rep.get_argument(2) or ()) if rep is not None else ()
        body = [r for r in reps if r.get_argument(1) == "Body"]
        if not body:
            body = [r for r in reps if str(r.get_argument(1) or "").lower() == "body"]
        if not body:
            body = [r for r in reps if str(r.get_argument(2) or "") in _BODY_TYPES]
        if not body:
            if not openings:
                self.no_geometry[kind].append(_label(el))
            return None
        base = self.geo.placement(el.get_argument(5))
        items = body[0].get_argument(3) or ()
        try:
            prisms, clipped = self.geo.body_prisms(items, base)
            if not prisms:
                raise NotParametric("empty body")
            solid = _from_prisms(prisms, clipped)
            if clipped and not openings:
                self.clipped[kind].append(attr(el, "GlobalId"))
            return solid
        except Unsupported as why:
            reason = str(why).split(" ")[0]
        except NotParametric as why:  # damaged data in a type we read: no engine on it
            if not openings:
                self.no_geometry[kind].append(f"{_label(el)} ({why})")
            return None
        try:
            faces, clipped = self.geo.items_faces(items, base)
            mb = faces_body(faces)
        except Unsupported:
            # only bodies of types we do not parse go to the engine; it can crash the
            # process on damaged data, so data we recognise as damaged never reaches it
            clipped = False
            mb = mesh_body(el)
        except NotParametric as why:
            if not openings:
                self.no_geometry[kind].append(f"{_label(el)} ({why})")
            return None
        if mb is None:
            if not openings:
                self.no_geometry[kind].append(f"{_label(el)} ({reason})")
            return None
        solid = _Solid(mb.footprint, mb.zmin, mb.zmax, mb.volume_m3, not mb.sloped, clipped, [], mb)
        if not openings:
            self.mesh_ids.append(attr(el, "GlobalId"))
            self.mesh_types[reason] += 1
            if clipped:
                self.clipped[kind].append(attr(el, "GlobalId"))
        return solid

    def _openings(self, el):
        for op in self.voids.get(el.id(), ()):
            ptype = str(attr(op, "PredefinedType") or attr(op, "ObjectType") or "").upper()
            if ptype == "RECESS":
                continue
            sol = self._opening_cache.get(op.id())
            if sol is None and op.id() not in self._opening_cache:
                try:
                    sol = self._solid(op, "opening", openings=True)
                except NotParametric:  # a damaged opening is not subtracted; its host is still read
                    sol = None
                self._opening_cache[op.id()] = sol
            yield op, sol

    # -- elements ---------------------------------------------------------------------
    def _predefined(self, el) -> str:
        occ = attr(el, "PredefinedType")
        if occ in (None, "NOTDEFINED"):
            t = self.types.get(el.id())
            tt = attr(t, "PredefinedType") if t is not None else None
            if tt not in (None, "NOTDEFINED"):
                return str(tt)
        return str(occ or "NOTDEFINED")

    def _material(self, el, kind: str):
        info = self.materials.for_element(el)
        if info.material is None:
            self.no_material[kind].append(attr(el, "GlobalId"))
        return info

    def _storey_id(self, el) -> str | None:
        sp = self._spatial_parent(el)
        return self._gid(sp) if sp is not None and sp.is_a() == "IfcBuildingStorey" else None

    def _slab(self, el) -> Placed | None:
        solid = self._solid(el, "slab")
        if solid is None:
            return None
        sloped = not solid.vertical
        area0 = float(solid.footprint.area)
        if solid.mesh is not None and not sloped:
            thickness = solid.zmax - solid.zmin
        else:
            thickness = solid.volume_m3 / area0 if area0 > 0 else 0.0
        if solid.prisms and any(p.depth_m <= 0 for p in solid.prisms):
            thickness = 0.0
        if not (thickness > 1e-9) or area0 <= 0:
            self.warnings.append(f"{self.where}: slab {_label(el)} has zero thickness or area; skipped")
            return None
        footprint = solid.footprint
        cuts = []
        for op, sol in self._openings(el):
            if sol is None or sol.mesh is not None or not sol.vertical:
                self.skipped_openings.append(attr(op, "GlobalId"))
                continue
            if sol.zmax < solid.zmin - 1e-6 or sol.zmin > solid.zmax + 1e-6:
                continue
            cuts.append(sol.footprint)
        if cuts:
            footprint = polygonal(_shape(footprint).difference(shapely.union_all([_shape(c) for c in cuts])))
        info = self._material(el, "slab")
        kw = dict(global_id=el.get_argument(0), name=str(el.get_argument(2) or ""), footprint=footprint,
                  thickness_m=float(thickness), top_elevation_m=float(solid.zmax), predefined_type=self._predefined(el),
                  sloped=sloped, material=info.material, storey_id=self._storey_id(el), from_mesh=solid.mesh is not None)
        return _Pending(Slab, kw, solid.zmin, solid.zmax, "footprint")

    def _axis_from_rep(self, el) -> np.ndarray | None:
        rep = el.get_argument(6)
        if rep is None:
            return None
        for r in rep.get_argument(2) or ():
            ident = r.get_argument(1)
            if ident != "Axis" and str(ident or "").lower() != "axis":
                continue
            items = r.get_argument(3)
            if not items:
                continue
            try:
                pts = self.geo.curve_points(items[0]) * self.geo.scale
            except (NotParametric, AttributeError, TypeError, IndexError, ValueError):
                return None
            if len(pts) < 2:
                return None
            m = self.geo.placement(el.get_argument(5))
            world = pts @ m[:2, :2].T + m[:2, 3]
            (x0, y0), (x1, y1) = world[0].tolist(), world[-1].tolist()
            if math.hypot(x1 - x0, y1 - y0) < 1e-6:
                return None
            return world
        return None

    def _wall(self, el) -> Placed | None:
        solid = self._solid(el, "wall")
        if solid is None:
            return None
        height = solid.zmax - solid.zmin
        fp = solid.footprint
        if height <= 1e-9 or fp.is_empty or fp.area <= 0:
            self.warnings.append(f"{self.where}: wall {_label(el)} has no height or plan area; skipped")
            return None
        axis = self._axis_from_rep(el)
        if axis is not None:
            a, b = axis[0], axis[-1]
            (ax, ay), (bx, by) = a.tolist(), b.tolist()
            chord = math.hypot(bx - ax, by - ay)
            ux, uy = (bx - ax) / chord, (by - ay) / chord
            v = np.array([-uy, ux])
            if len(axis) == 2:
                length, straight = chord, True
            else:
                length = float(np.hypot(*np.diff(axis, axis=0).T).sum())
                straight = float(np.abs((axis - a) @ v).max()) <= 0.01 * chord + 1e-3
            if straight:
                vs = (_outline(fp) - a) @ v
                lo, hi = float(vs.min()), float(vs.max())
                off = 0.5 * (lo + hi)
                t_geom = hi - lo
                a, b = a + off * v, b + off * v
            else:
                t_geom = float(fp.area) / length
        else:
            rect = np.asarray(shapely.oriented_envelope(_shape(fp)).exterior.coords)[:4]
            e1, e2 = rect[1] - rect[0], rect[2] - rect[1]
            l1, l2 = float(np.linalg.norm(e1)), float(np.linalg.norm(e2))
            centre = rect.mean(axis=0)
            long_v, length, t_geom = (e1, l1, l2) if l1 >= l2 else (e2, l2, l1)
            u = long_v / max(length, 1e-300)
            a, b = centre - 0.5 * length * u, centre + 0.5 * length * u
            if length > 0 and fp.area < 0.9 * length * t_geom:
                t_geom = float(fp.area) / length
        info = self._material(el, "wall")
        thickness = t_geom
        if info.layer_set_usage and info.layer_total_m:
            if abs(info.layer_total_m - t_geom) <= max(_LAYER_TOL_ABS, _LAYER_TOL_REL * t_geom):
                thickness = info.layer_total_m
            else:
                self.layer_mismatch.append(f"{attr(el, 'GlobalId')} ({info.layer_total_m:.3f} vs {t_geom:.3f} m)")
        if length <= 1e-9 or thickness <= 1e-9:
            self.warnings.append(f"{self.where}: wall {_label(el)} has no length or thickness; skipped")
            return None
        base = solid.zmin
        openings = []
        for op, sol in self._openings(el):
            u = (b - a) / float(np.linalg.norm(b - a))
            if sol is None:
                self.skipped_openings.append(attr(op, "GlobalId"))
                continue
            pts = sol.vertices()
            s = (pts[:, :2] - a) @ u
            start, end = max(0.0, float(s.min())), min(length, float(s.max()))
            sill = max(0.0, sol.zmin - base)
            head = min(height, sol.zmax - base)
            if end - start <= 1e-6 or head - sill <= 1e-6:
                continue
            openings.append(WallOpening(start, end, sill, head, attr(op, "GlobalId")))
        openings.sort(key=lambda o: o.start_m)
        lb = self.load_bearing.get(el.id())
        if lb is None:
            lb = self._type_load_bearing(el)
        (ax, ay), (bx, by) = a.tolist(), b.tolist()
        kw = dict(global_id=el.get_argument(0), name=str(el.get_argument(2) or ""),
                  axis_m=((ax, ay), (bx, by)), length_m=float(length),
                  thickness_m=float(thickness), height_m=float(height), base_elevation_m=float(base),
                  footprint=fp, openings=tuple(openings), load_bearing=lb, material=info.material,
                  storey_id=self._storey_id(el), from_mesh=solid.mesh is not None)
        return _Pending(Wall, kw, solid.zmin, solid.zmax, "footprint")

    def _column(self, el) -> Placed | None:
        solid = self._solid(el, "column")
        if solid is None:
            return None
        height = solid.zmax - solid.zmin
        section = solid.footprint
        if solid.prisms and not solid.vertical:
            p = solid.prisms[0]
            c = p.profile.polygon.centroid
            start = p.matrix[:3, :2] @ np.array([c.x, c.y]) + p.matrix[:3, 3]
            section = shapely.affinity.translate(p.profile.polygon, float(start[0] - c.x), float(start[1] - c.y))
            self.inclined_columns.append(attr(el, "GlobalId"))
        if height <= 1e-9 or section.is_empty or section.area <= 0:
            self.warnings.append(f"{self.where}: column {_label(el)} has no height or section; skipped")
            return None
        info = self._material(el, "column")
        kw = dict(global_id=el.get_argument(0), name=str(el.get_argument(2) or ""), section=section,
                  height_m=float(height), base_elevation_m=float(solid.zmin), material=info.material,
                  storey_id=self._storey_id(el), from_mesh=solid.mesh is not None)
        return _Pending(Column, kw, solid.zmin, solid.zmax, "section")

    # -- storeys ----------------------------------------------------------------------
    def _usage(self, storey) -> str | None:
        def match(text: str) -> str | None:
            t = text.lower()
            for label, rx in _USAGE_RULES:
                if rx.search(t):
                    return label
            return None

        own = match(" ".join(str(x) for x in (attr(storey, "Name"), attr(storey, "LongName")) if x))
        if own:
            return own
        votes: Counter[str] = Counter()
        stack = list(self.children.get(storey.id(), ()))
        seen = 0
        while stack and seen < 10000:
            obj = stack.pop()
            seen += 1
            if obj.is_a("IfcSpace"):
                u = match(" ".join(str(x) for x in (attr(obj, "Name"), attr(obj, "LongName"), attr(obj, "ObjectType"),
                                                     self.occupancy.get(obj.id())) if x))
                if u:
                    votes[u] += 1
                stack.extend(self.children.get(obj.id(), ()))
        return votes.most_common(1)[0][0] if votes else None

    def _elevation(self, storey) -> float | None:
        """The storey's elevation (m); None (with a warning) when neither its Elevation nor its
        placement is a usable number within +-MAX_ELEVATION_M."""
        elev = attr(storey, "Elevation")
        z_pl = None
        bad = []
        if elev is not None and not -MAX_ELEVATION_M <= float(elev) * self.geo.scale <= MAX_ELEVATION_M:
            bad.append(f"Elevation {float(elev) * self.geo.scale:.3g} m")
            elev = None
        if attr(storey, "ObjectPlacement") is not None:
            try:
                z_pl = float(self.geo.placement(attr(storey, "ObjectPlacement"))[2, 3])
            except NotParametric as exc:
                bad.append(f"placement ({exc})")
            else:
                if not -MAX_ELEVATION_M <= z_pl <= MAX_ELEVATION_M:
                    bad.append(f"placement z {z_pl:.3g} m")
                    z_pl = None
        if bad:
            if elev is None and z_pl is None:
                self.warnings.append(f"{self.where}: storey {_label(storey)} has no usable elevation "
                                     f"({'; '.join(bad)}); the storey is left out")
                return None
            self.warnings.append(f"{self.where}: storey {_label(storey)}: {'; '.join(bad)} not usable; "
                                 f"its {'placement' if elev is None else 'Elevation'} is used")
        if elev is None:
            if z_pl is None:
                self.warnings.append(f"{self.where}: storey {_label(storey)} has neither Elevation nor placement; 0 assumed")
                return 0.0
            return z_pl
        z = float(elev) * self.geo.scale
        if z_pl is not None and abs(z_pl - z) > 1e-3:
            self.warnings.append(f"{self.where}: storey '{storey.Name}' Elevation {z:.3f} m differs from its "
                                 f"placement z {z_pl:.3f} m; the placement is used")
            return z_pl
        return z

    # -- run --------------------------------------------------------------------------
    def run(self) -> Takeoff:
        m = self.model
        units = read_units(m, self.where)
        self.warnings.extend(units.warnings)
        self.geo = Geometry(units.length_m, units.angle_rad, None, self.where)
        ctx = read_context(m, self.geo.axis2)
        self.warnings.extend(f"{self.where}: {w}" for w in ctx.warnings)
        self.geo.wcs = ctx.wcs if not np.allclose(ctx.wcs, np.eye(4)) else None
        storeys = m.by_type("IfcBuildingStorey")
        if not storeys:
            raise InputError(f"{self.where}: no IfcBuildingStorey (the model has no storeys to screen)")
        self._scan()
        self._sp_cache: dict[int, object] = {}
        self._opening_cache: dict[int, _Solid | None] = {}
        # a large file is mostly facade and fit-out: find materials per element asked about
        self.materials = MaterialReader(m, self.types, units.length_m, units.density_kg_m3, units.modulus_pa,
                                        index_all=not _large(self.path.stat().st_size))

        buildings = list(m.by_type("IfcBuilding"))
        bld_storeys: dict[int, list] = defaultdict(list)
        orphan_storeys = []
        for s in storeys:
            b = self._building_of(s)
            if b is None:
                orphan_storeys.append(s)
            else:
                bld_storeys[b.id()].append(s)
        if orphan_storeys:
            if len(buildings) == 1:
                bld_storeys[buildings[0].id()].extend(orphan_storeys)
            else:
                if not buildings:
                    self.warnings.append(f"{self.where}: no IfcBuilding; the storeys are read as one building")
                else:
                    self.warnings.append(f"{self.where}: {_plural(len(orphan_storeys), 'storey')} in no IfcBuilding "
                                         "are read as a building of their own")
                bld_storeys[-1].extend(orphan_storeys)
        storey_bld = {s.id(): bid for bid, ss in bld_storeys.items() for s in ss}
        if len(bld_storeys) > MAX_BUILDINGS:
            raise InputError(f"{self.where}: {len(bld_storeys)} buildings with storeys; more than {MAX_BUILDINGS} "
                             "cannot be screened in one run (split the file)")
        for bid, ss in bld_storeys.items():
            if len(ss) > MAX_STOREYS:
                b = m.by_id(bid) if bid >= 0 else None
                name = (b.Name or b.GlobalId) if b is not None else "(no IfcBuilding)"
                raise InputError(f"{self.where}: building '{name}' has {len(ss)} storeys; more than {MAX_STOREYS} "
                                 "cannot be screened (the tallest buildings have under 200)")

        per_bld: dict[int, dict[str, list[Placed]]] = defaultdict(lambda: {"slabs": [], "walls": [], "columns": []})
        first_bid = next(iter(b.id() for b in buildings if b.id() in bld_storeys), next(iter(bld_storeys)))
        unplaced = 0
        n_elements = 0
        for kind, ifc_type, reader in (("slabs", "IfcSlab", self._slab), ("walls", "IfcWall", self._wall),
                                       ("columns", "IfcColumn", self._column)):
            for el in m.by_type(ifc_type):
                n_elements += 1
                try:
                    placed = reader(el)
                except InputError:
                    raise
                except _ELEMENT_ERRORS as exc:  # malformed entities in real exports: skip, say so
                    reason = str(exc).strip().splitlines()[0][:120] if str(exc).strip() else ""
                    self.unreadable.append(f"{_label(el)} ({type(exc).__name__}{': ' + reason if reason else ''})")
                    continue
                if placed is None:
                    continue
                if self.dup_first:
                    placed.kwargs["global_id"] = self._gid(el)
                sp = self._spatial_parent(el)
                if sp is not None and sp.is_a("IfcBuildingStorey"):
                    bid = storey_bld.get(sp.id(), first_bid)
                elif sp is not None and sp.id() in bld_storeys:
                    bid = sp.id()
                else:
                    bid = first_bid
                    if len(bld_storeys) > 1:
                        unplaced += 1
                per_bld[bid][kind].append(placed)
        self._drop_implausible(per_bld)
        pendings = [p for els in per_bld.values() for lst in els.values() for p in lst]
        if n_elements and not pendings:
            why = (self.unreadable[:1] or [x for v in self.no_geometry.values() for x in v][:1]
                   or [w.split(": ", 1)[-1] for w in self.warnings if w.endswith("; skipped")][:1] or ["no usable body"])
            raise InputError(f"{self.where}: no slab, wall or column could be read ({n_elements} found; first: "
                             f"{why[0][:200]}); nothing to screen")
        _materialise([p.kwargs[p.geom_key] for p in pendings if isinstance(p.kwargs[p.geom_key], _Ring)])
        for els in per_bld.values():
            for kind in els:
                built = []
                for p in els[kind]:
                    p.kwargs[p.geom_key] = _shape(p.kwargs[p.geom_key])
                    built.append(Placed(p.cls(**p.kwargs), p.zmin, p.zmax))
                els[kind] = built
        if unplaced:
            self.warnings.append(f"{self.where}: {_plural(unplaced, 'element')} in no storey or building are "
                                 "read with the first building")

        results = []
        for bid, ss in bld_storeys.items():
            b = m.by_id(bid) if bid >= 0 else None
            bname = str(b.Name or b.LongName or "") if b is not None else "(no IfcBuilding)"
            sources = []
            for s in ss:
                z = self._elevation(s)
                if z is not None:
                    sources.append(SourceStorey(self._gid(s), str(s.Name or s.LongName or s.GlobalId), z, self._usage(s)))
            els = per_bld[bid]
            try:
                label = bname or (attr(b, "GlobalId") if b is not None else "")
                fr = build_storeys(sources, els["slabs"], els["walls"], els["columns"], self.levels, label)
            except InputError as exc:
                raise InputError(f"{self.where}: {exc}") from None
            results.append(BuildingTakeoff(global_id=self._gid(b) if b is not None else "", name=bname,
                                           storeys=fr.storeys, ground_elevation_m=fr.ground_elevation_m,
                                           warnings=fr.warnings))
        for b in buildings:
            if b.id() not in bld_storeys:
                self.warnings.append(f"{self.where}: building '{b.Name or b.GlobalId}' has no storeys; skipped")

        file_warnings = tuple(self._summary())
        return Takeoff(source_path=str(self.path), schema=_schema_name(m), length_unit=units.length_name,
                       length_scale_m=units.length_m, true_north_deg=float(ctx.true_north_deg),
                       buildings=tuple(results), warnings=file_warnings, mesh_elements=tuple(self.mesh_ids))

    def _drop_implausible(self, per_bld) -> None:
        """Leave out (with a warning naming each) elements whose world extent no building
        element has (see :func:`.ifc_geometry.implausible_extent`); one vectorised pass."""
        items = [(els, kind, p) for els in per_bld.values() for kind, lst in els.items() for p in lst]
        if not items:
            return
        shapes = [p.kwargs[p.geom_key] for _, _, p in items]
        box = np.zeros((len(items), 6))
        box[:, 2] = [p.zmin for _, _, p in items]
        box[:, 5] = [p.zmax for _, _, p in items]
        rings = [i for i, g in enumerate(shapes) if isinstance(g, _Ring)]
        if rings:
            coords = [shapes[i].coords for i in rings]
            starts = np.cumsum([0] + [len(c) for c in coords[:-1]])
            allc = np.concatenate(coords)
            box[rings, 0:2] = np.minimum.reduceat(allc, starts)
            box[rings, 3:5] = np.maximum.reduceat(allc, starts)
        others = [i for i, g in enumerate(shapes) if not isinstance(g, _Ring)]
        if others:
            b = shapely.bounds(np.array([shapes[i] for i in others], dtype=object))
            box[others] = np.nan_to_num(b[:, [0, 1, 1, 2, 3, 3]], nan=0.0)  # empty shapes: no plan extent
            box[others, 2] = [items[i][2].zmin for i in others]
            box[others, 5] = [items[i][2].zmax for i in others]
        with np.errstate(invalid="ignore", over="ignore"):
            ok = ((np.abs(box[:, [0, 1, 3, 4]]) <= MAX_COORDINATE_M).all(axis=1)
                  & (np.abs(box[:, [2, 5]]) <= MAX_ELEVATION_M).all(axis=1)
                  & ((box[:, 3:] - box[:, :3]) <= MAX_SIZE_M).all(axis=1))
        if ok.all():
            return
        for i in np.flatnonzero(~ok).tolist():
            els, kind, p = items[i]
            why = implausible_extent(*box[i].tolist()) or "extent not a finite number"
            kw = p.kwargs
            self.no_geometry[kind[:-1]].append(f"Ifc{p.cls.__name__} {kw['global_id']}"
                                               + (f" '{kw['name']}'" if kw.get("name") else "") + f" (body {why})")
            els[kind].remove(p)

    def _summary(self) -> list[str]:
        w = list(self.warnings)
        where = self.where
        for kind, items in self.no_geometry.items():
            w.append(f"{where}: {_plural(len(items), kind)} without readable geometry skipped: {_ids(items)}")
        if self.mesh_ids:
            kinds = ", ".join(f"{n} {t}" for t, n in self.mesh_types.most_common())
            n = len(self.mesh_ids)
            w.append(f"{where}: {_plural(n, 'element')} {'has' if n == 1 else 'have'} no parametric body ({kinds}); "
                     f"read as {'a mesh' if n == 1 else 'meshes'} projected to plan: {_ids(self.mesh_ids)}")
        for kind, items in self.clipped.items():
            w.append(f"{where}: {_plural(len(items), kind)} clipped by half-spaces; the unclipped extrusion is used "
                     f"(quantities slightly high): {_ids(items)}")
        for kind, items in self.no_material.items():
            w.append(f"{where}: {_plural(len(items), kind)} {'has' if len(items) == 1 else 'have'} no material; "
                     f"the settings' default material is assumed: {_ids(items)}")
        if self.layer_mismatch:
            w.append(f"{where}: {_plural(len(self.layer_mismatch), 'wall')} whose material layer total disagrees with "
                     f"the body thickness; the body is used: {_ids(self.layer_mismatch)}")
        if self.skipped_openings:
            w.append(f"{where}: {_plural(len(self.skipped_openings), 'opening')} not vertical extrusions (or without "
                     f"geometry) not subtracted: {_ids(self.skipped_openings)}")
        if self.inclined_columns:
            w.append(f"{where}: {_plural(len(self.inclined_columns), 'column')} inclined; section taken from the "
                     f"profile at the base: {_ids(self.inclined_columns)}")
        if self.unreadable:
            w.append(f"{where}: {_plural(len(self.unreadable), 'element')} could not be read and "
                     f"{'was' if len(self.unreadable) == 1 else 'were'} skipped: {_ids(self.unreadable, 3)}")
        if self.materials.dropped:
            w.append(f"{where}: implausible material values ignored: {_ids(self.materials.dropped)}")
        return w


def read_model(path: str | Path, levels: LevelSettings | None = None) -> Takeoff:
    """Read an IFC file into a takeoff (SI metres, world coordinates); see :func:`read_model_and_source`."""
    return read_model_and_source(path, levels)[0]


def read_model_and_source(path: str | Path, levels: LevelSettings | None = None) -> tuple[Takeoff, SourceFile]:
    """Read an IFC file into a takeoff (SI metres, world coordinates).

    Args:
        path: the .ifc file (IFC2X3, IFC4 or IFC4X3, STEP physical file).
        levels: floor tolerance, finish-layer threshold and ground rule (defaults when None).

    Returns:
        The takeoff, and the source as it was read (path, size, modification time and the open
        ifcopenshell file). Only the writer may use the open file, to plan its write-back
        without parsing the file a second time.

    Raises:
        InputError: one line naming the file (and element) for unusable input: missing,
            not IFC, truncated, unsupported schema, unknown length unit, no storeys,
            cyclic placements.
    """
    levels = levels or LevelSettings()
    p = Path(path)
    try:  # size and time before the open: a file replaced meanwhile then reads as changed
        st = p.stat()
    except OSError:
        st = None  # missing or unreadable: the open below says so in one line
    model, log = _open_with_log(p)
    if st is None:
        st = p.stat()
    try:
        reader = _Reader(model, p, levels, log)
        takeoff = reader.run()
        return takeoff, SourceFile(p, st.st_size, st.st_mtime_ns, model, frozenset(reader.shared_global_ids))
    except InputError:
        raise
    except RecursionError:
        raise InputError(f"{p}: references nest too deeply to read") from None
    except _ELEMENT_ERRORS as exc:  # damage outside the elements (units, context, storeys)
        reason = str(exc).strip().splitlines()[0][:160] if str(exc).strip() else ""
        raise InputError(f"{p}: malformed IFC content ({type(exc).__name__}{': ' + reason if reason else ''})") from None
