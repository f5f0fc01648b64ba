"""Write our results back into a copy of the IFC model as property sets.

Two writers give the same property values:

* :func:`write_annotated` (the one the tool uses) streams the source file's bytes into the copy
  unchanged and appends the new instances before the ``ENDSEC;`` that closes the DATA section.
  Every original instance keeps its ``#id`` and its exact bytes (line endings included: LF, CRLF or
  the bare CR some exporters write). Cost: one lazy ``ifcopenshell.open`` to locate the targets and
  any earlier sets of ours, plus one pass over the bytes. When the caller passes the reader's
  :class:`~.reading.SourceFile` (``source=``) and the file is still the one that was parsed (same
  path, size and modification time), its open model is used read-only instead and no second parse
  is paid: on the 160-storey benchmark tower that is most of the write-back's time.
* :func:`write_annotated_reserialise` is the plain reference: open the model, edit it with
  ``ifcopenshell.api.pset`` and re-serialise everything with ``file.write`` (about four times the
  cost of the open). Kept as the benchmark baseline and as a cross-check in the tests.

How the streamed copy finds its way (ISO 10303-21 syntax): a statement ends at the first ``;``
outside a string (``'...'``, apostrophes doubled inside) and outside a comment (``/* */``); one
statement may span many lines. When nothing is to be removed and the file has no comment, the
insertion point is found from the end (the last ``ENDSEC;`` that starts a statement, with an even
number of apostrophes before it, after a ``DATA`` statement) and the bytes around it are copied
with C-level slices. On a re-run (our earlier instances to remove) of a file with no comment,
the statement of the lowest id to remove is found from the end the same way, the bytes before it
are sliced and only the statements after it are matched (our earlier instances were appended
together at the end, so that is a small tail). Otherwise every statement is matched in turn (one
regular expression per statement, read in 4 MiB blocks) so that the instances to remove can be
dropped by ``#id``.

What is written, per :class:`PsetAnnotation`: one ``IfcPropertySet`` holding one
``IfcPropertySingleValue`` per :class:`Prop` with a typed ``NominalValue`` (e.g.
``IFCTIMEMEASURE(2.5)``), and one ``IfcRelDefinesByProperties`` tying it to the object with that
GlobalId (ISO 16739-1, IfcPropertyResource / IfcKernel).

Our own names
    Property-set names are ours, never the reserved buildingSMART prefixes ``Pset_`` and ``Qto_``:
    every name must start with ``owner_prefix + "_"`` (``Swayscreen_BuildingSway`` ...). Every
    ``IfcPropertySet`` whose name starts with that string is treated as ours.

Re-running
    All our earlier sets in the source (with their ``IfcRelDefinesByProperties`` and the property
    instances only they use) are removed and the new ones written: the result is the same as
    annotating the original model, never a duplicate. Because the new ids start just above the
    largest id that is kept, annotating an annotated file with the same data gives byte-identical
    output.

GlobalIds
    Deterministic: ``uuid5`` of the target GlobalId and the set name, compressed to the 22-character
    IFC form, so reruns are reproducible. A target GlobalId that several entities share (IFC
    requires it unique; the parser reports it) gets its set on the first of them (lowest ``#id``)
    when that one can carry a property set, else on none; :attr:`WriteReport.notes` says which.

Reusing the reader's parse
    The reader's model is only looked at (``by_guid``, ``by_id``, ``by_type``, inverses, units),
    never edited. The parser's log of that open, which named the GlobalIds the file repeats, was
    read by the reader: when the source carries them (``shared_global_ids``) they are used, else
    the writer finds repeated target GlobalIds from the bytes: a GlobalId (22 characters of
    ``0-9A-Za-z_$``, ISO 16739-1 IfcGloballyUniqueId) is a string of the basic alphabet and so
    appears literally, quoted, in the file (ISO 10303-21 clause 6.4.3); a target quoted more than
    once is looked up among all rooted entities, as after a fresh open.
    The file's size and modification time are checked again after the copy: a source changed
    while it was being copied is an error, never a mixed copy.

Owner history
    IFC2X3 requires ``OwnerHistory`` on every IfcRoot: the file's first ``IfcOwnerHistory`` (lowest
    id) is reused; if there is none (an already invalid IFC2X3 file) a minimal one is created and
    reused by later runs. In IFC4 and later it is optional and left unset ($) (common practice:
    ownership data is only stored when a contract asks for it).

Units
    :attr:`Prop.value` is in SI (m, kg, s, Hz, N/m, m/s2, rad). IFC reads a measure-typed property
    value in the project unit for that measure (ISO 16739-1, IfcUnitAssignment), so values are
    converted to the file's project units with ``ifcopenshell.util.unit.calculate_unit_scale``: a
    0.012 m drift in a millimetre model is written ``IFCLENGTHMEASURE(12.)``. A unit type that the
    model does not assign is taken as SI (common practice). Ratios, counts, labels and booleans are
    unitless.

Measures the schema lacks
    If a measure is not a member of the schema's ``IfcValue`` select, the value is written as
    ``IfcReal`` in SI and the unit is appended to the property's Description as ``[unit: m/s2]``;
    the report lists each such fallback. (IfcAccelerationMeasure is in the IFC2X3 schema that
    ifcopenshell 0.9 ships, so in practice this does not trigger for the measures we use.)
"""
from __future__ import annotations

import base64
import errno
import hashlib
import io
import math
import mmap
import os
import re
import uuid
from collections import Counter
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import BinaryIO, Union

from .errors import InputError
from .fileio import atomic_path

__all__ = [
    "Prop",
    "PsetAnnotation",
    "WriteReport",
    "MEASURES",
    "RESERVED_PREFIXES",
    "write_annotated",
    "write_annotated_reserialise",
    "validate_output",
    "iter_our_psets",
    "p21_string",
    "p21_real",
]

Value = Union[float, int, str, bool]

#: Prefixes reserved by buildingSMART for standard property and quantity sets.
RESERVED_PREFIXES: tuple[str, ...] = ("Pset_", "Qto_")


@dataclass(frozen=True)
class _Measure:
    unit_type: str | None  # IfcUnitEnum / IfcDerivedUnitEnum item for conversion, None = unitless
    si_symbol: str  # written into the Description when the schema lacks the measure
    positive: bool = False  # IFC WHERE rule: value > 0


#: Measure types accepted in :attr:`Prop.measure`, with the project-unit type used for conversion.
MEASURES: dict[str, _Measure] = {
    "IfcTimeMeasure": _Measure("TIMEUNIT", "s"),
    "IfcFrequencyMeasure": _Measure("FREQUENCYUNIT", "Hz"),
    "IfcMassMeasure": _Measure("MASSUNIT", "kg"),
    "IfcLinearStiffnessMeasure": _Measure("LINEARSTIFFNESSUNIT", "N/m"),
    "IfcLengthMeasure": _Measure("LENGTHUNIT", "m"),
    "IfcPositiveLengthMeasure": _Measure("LENGTHUNIT", "m", positive=True),
    "IfcAreaMeasure": _Measure("AREAUNIT", "m2"),
    "IfcAccelerationMeasure": _Measure("ACCELERATIONUNIT", "m/s2"),
    "IfcForceMeasure": _Measure("FORCEUNIT", "N"),
    "IfcPlaneAngleMeasure": _Measure("PLANEANGLEUNIT", "rad"),
    "IfcLinearVelocityMeasure": _Measure("LINEARVELOCITYUNIT", "m/s"),
    "IfcRatioMeasure": _Measure(None, ""),
    "IfcPositiveRatioMeasure": _Measure(None, "", positive=True),
    "IfcNormalisedRatioMeasure": _Measure(None, ""),
    "IfcCountMeasure": _Measure(None, ""),
    "IfcReal": _Measure(None, ""),
    "IfcInteger": _Measure(None, ""),
    "IfcLabel": _Measure(None, ""),
    "IfcText": _Measure(None, ""),
    "IfcIdentifier": _Measure(None, ""),
    "IfcBoolean": _Measure(None, ""),
}


@dataclass(frozen=True)
class Prop:
    """One property: ``value`` in SI units, ``measure`` an IFC measure type name (see :data:`MEASURES`)."""

    name: str
    value: Value
    measure: str
    description: str = ""


@dataclass(frozen=True)
class PsetAnnotation:
    """A property set named ``pset_name`` to attach to the object with ``global_id``."""

    global_id: str
    pset_name: str
    props: tuple[Prop, ...]


@dataclass(frozen=True)
class WriteReport:
    """What a write did.

    ``psets_replaced`` counts our earlier sets found in the source and removed;
    ``instances_removed`` every instance dropped with them (sets, relations, properties);
    ``instances_added`` every new instance (``first_new_id`` is the lowest new ``#id``, 0 if none);
    ``validation_errors`` is None unless validation was asked for; ``reused_parse`` is True when
    the plan was made on the reader's open model (``source=``) rather than a new open.
    """

    dst: Path
    schema: str
    psets_written: int
    psets_replaced: int
    properties_written: int
    instances_removed: int
    instances_added: int
    first_new_id: int
    bytes_written: int
    fallbacks: tuple[str, ...] = ()
    validation_errors: tuple[str, ...] | None = None
    notes: tuple[str, ...] = ()
    reused_parse: bool = False


# --------------------------------------------------------------------------- ISO 10303-21 values


_NOT_BASIC = re.compile(r"[^\x20-\x7e]+")


def _encode_run(m: re.Match) -> str:
    run = m.group(0)
    if all(ord(c) <= 0xFFFF for c in run):
        return "\\X2\\" + "".join(f"{ord(c):04X}" for c in run) + "\\X0\\"
    return "\\X4\\" + "".join(f"{ord(c):08X}" for c in run) + "\\X0\\"


def p21_string(text: str) -> str:
    """Quote ``text`` as an ISO 10303-21 string literal.

    Apostrophes are doubled, backslashes doubled, and every run of characters outside printable
    ASCII is written with the ``\\X2\\`` (UTF-16, BMP) or ``\\X4\\`` (UTF-32) escapes of
    ISO 10303-21:2002 clause 6.4.3.
    """
    escaped = text.replace("\\", "\\\\").replace("'", "''")
    if escaped.isascii() and escaped.isprintable():  # all in 0x20-0x7E: nothing to encode
        return "'" + escaped + "'"
    return "'" + _NOT_BASIC.sub(_encode_run, escaped) + "'"


def p21_real(x: float) -> str:
    """Format a REAL for ISO 10303-21: always a decimal point (``1.5``, ``2.``, ``1.E-05``).

    Uses Python's shortest round-trip representation, so the value read back is the same double.
    """
    x = float(x)
    if not math.isfinite(x):
        raise ValueError(f"{x!r} cannot be written to an IFC file")
    text = repr(x)
    mantissa, _, exponent = text.partition("e")
    if "." not in mantissa:
        mantissa += "."
    elif mantissa.endswith(".0"):
        mantissa = mantissa[:-1]
    return mantissa + (f"E{exponent}" if exponent else "")


@dataclass(frozen=True)
class _Ref:
    id: int


@dataclass(frozen=True)
class _Enum:
    item: str


@dataclass(frozen=True)
class _Typed:
    type_name: str
    literal: str


def _p21_value(value: object) -> str:
    kind = type(value)  # the common cases first, by exact type (bool is not int here)
    if kind is str:
        return p21_string(value)  # type: ignore[arg-type]
    if kind is _Ref:
        return f"#{value.id}"  # type: ignore[attr-defined]
    if kind is _Typed:
        return f"{value.type_name.upper()}({value.literal})"  # type: ignore[attr-defined]
    if value is None:
        return "$"
    if isinstance(value, _Ref):
        return f"#{value.id}"
    if isinstance(value, _Enum):
        return f".{value.item}."
    if isinstance(value, _Typed):
        return f"{value.type_name.upper()}({value.literal})"
    if isinstance(value, bool):
        return ".T." if value else ".F."
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return p21_real(value)
    if isinstance(value, str):
        return p21_string(value)
    if isinstance(value, (tuple, list)):
        return "(" + ",".join(_p21_value(v) for v in value) + ")"
    raise TypeError(f"cannot write {value!r} to ISO 10303-21")


# --------------------------------------------------------------------------- annotation checks


def _check_annotations(annotations: Sequence[PsetAnnotation], owner_prefix: str) -> None:
    if not owner_prefix or not re.fullmatch(r"[A-Za-z][A-Za-z0-9]*", owner_prefix):
        raise InputError(f"owner prefix {owner_prefix!r}: use letters and digits only, starting with a letter")
    for reserved in RESERVED_PREFIXES:
        if (owner_prefix + "_").lower().startswith(reserved.lower()):
            raise InputError(f"owner prefix {owner_prefix!r} uses the reserved prefix {reserved!r}")
    seen: set[tuple[str, str]] = set()
    for ann in annotations:
        where = f"property set {ann.pset_name!r} on {ann.global_id!r}"
        for reserved in RESERVED_PREFIXES:
            if ann.pset_name.lower().startswith(reserved.lower()):
                raise InputError(f"{where}: the prefix {reserved!r} is reserved for buildingSMART sets")
        if not ann.pset_name.startswith(owner_prefix + "_") or len(ann.pset_name) <= len(owner_prefix) + 1:
            raise InputError(f"{where}: our set names must start with {owner_prefix + '_'!r}")
        if (ann.global_id, ann.pset_name) in seen:
            raise InputError(f"{where}: given twice")
        seen.add((ann.global_id, ann.pset_name))
        if not ann.props:
            raise InputError(f"{where}: has no properties (IFC needs at least one)")
        names: set[str] = set()
        for prop in ann.props:
            _check_prop(prop, where)
            if prop.name in names:
                raise InputError(f"{where}: property {prop.name!r} given twice")
            names.add(prop.name)


def _check_prop(prop: Prop, where: str) -> None:
    what = f"{where}, property {prop.name!r}"
    if not prop.name.strip():
        raise InputError(f"{where}: a property has an empty name")
    spec = MEASURES.get(prop.measure)
    if spec is None:
        raise InputError(f"{what}: unknown measure {prop.measure!r} (known: {', '.join(sorted(MEASURES))})")
    v = prop.value
    if prop.measure == "IfcBoolean":
        if not isinstance(v, bool):
            raise InputError(f"{what}: IfcBoolean needs True or False, got {v!r}")
    elif prop.measure in ("IfcLabel", "IfcText", "IfcIdentifier"):
        if not isinstance(v, str):
            raise InputError(f"{what}: {prop.measure} needs text, got {v!r}")
    elif prop.measure == "IfcInteger":
        if isinstance(v, bool) or not isinstance(v, int):
            raise InputError(f"{what}: IfcInteger needs an integer, got {v!r}")
    else:
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise InputError(f"{what}: {prop.measure} needs a number, got {v!r}")
        if not math.isfinite(float(v)):
            raise InputError(f"{what}: {v!r} is not a finite number")
        if spec.positive and not v > 0:
            raise InputError(f"{what}: {prop.measure} must be greater than zero, got {v!r}")


# --------------------------------------------------------------------------- inspecting the source


@dataclass
class _Plan:
    schema: str
    drop_ids: set[int]
    psets_replaced: int
    lines: list[str]  # new instances, without line ends, ids ascending
    first_new_id: int
    psets_written: int
    properties_written: int
    fallbacks: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    source_stat: tuple[int, int] | None = None  # (size, mtime_ns) of the source the plan was made on
    reused_parse: bool = False


_NON_UNIQUE = re.compile(r"non-unique GlobalId (\S+)")


def _open(src: Path, *, lazy: bool):
    import ifcopenshell

    if not src.is_file():
        raise InputError(f"{src}: no such file")
    ifcopenshell.get_log()  # drain messages of earlier files
    try:
        model = ifcopenshell.open(str(src), lazy=lazy) if lazy else ifcopenshell.open(str(src))
    except Exception as exc:  # ifcopenshell raises several kinds; all mean an unreadable model
        raise InputError(f"{src}: cannot read as IFC ({exc})") from None
    return model


def _stat_key(path: Path) -> tuple[int, int] | None:
    """(size in bytes, modification time in ns) of ``path``, None when it cannot be read."""
    try:
        st = path.stat()
    except OSError:
        return None
    return st.st_size, st.st_mtime_ns


def _reusable(source, src: Path) -> bool:
    """True when ``source`` (the reader's :class:`~.reading.SourceFile`) holds an open model of
    ``src`` as the file is on disk now (same file, same size and modification time)."""
    if source is None or getattr(source, "model", None) is None:
        return False
    return _same_file(Path(source.path), src) and source.unchanged()


# IfcGloballyUniqueId: 22 characters of the base-64 alphabet 0-9 A-Z a-z _ $ (ISO 16739-1).
_GUID = re.compile(r"[0-9A-Za-z_$]{22}")


@dataclass(frozen=True)
class _Scan:
    """What one pass over the bytes found (see :func:`_scan_global_ids`)."""

    repeated: set[str]  # targets that may name more than one entity
    present: set[str] | None  # our new GlobalIds that appear in the file (None: not known)
    prefix_seen: bool  # the file quotes a string starting with our set-name prefix


def _scan_global_ids(src: Path, targets: Iterable[str], ours: Iterable[str], prefix: str) -> _Scan:
    """From the bytes of ``src``, in one C-level regular-expression pass (about 0.05 s CPU on
    the 37 MB benchmark tower): which targets may name more than one entity, which of our new
    GlobalIds appear at all, and whether any string starts with ``prefix``.

    Repeated targets: those quoted more than once in the file, and any target that is not a
    well-formed GlobalId or starts with ``prefix`` (the pass cannot count it). A superset of the
    GlobalIds the parser reports as non-unique, because each entity writes its GlobalId as a
    string of the basic alphabet, literally and quoted (ISO 10303-21 clause 6.4.3), so two
    entities sharing one put it in the file twice. A GlobalId of ours that is nowhere in the
    file names no entity and needs no lookup (a failed ``by_guid`` costs an exception). With no
    quoted string starting with ``prefix`` the file holds no set of ours (the names are ASCII,
    written literally)."""
    head = prefix.encode("ascii")
    wanted: set[bytes] = set()
    odd: set[str] = set()
    for g in targets:
        if _GUID.fullmatch(g) and not g.startswith(prefix):
            wanted.add(g.encode("ascii") + b"'")
        else:
            odd.add(g)
    mine = {g.encode("ascii") + b"'" for g in ours}
    found: list[bytes] = []
    with open(src, "rb") as fh:
        if os.fstat(fh.fileno()).st_size:
            with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
                # the prefix alternative first: a name like 'Swayscreen_CoreWallXY' is also 22
                # GlobalId characters, and must count as a name of ours
                found = re.compile(rb"'(" + re.escape(head) + rb"|[0-9A-Za-z_$]{22}')").findall(mm)
    counts = Counter(filter(wanted.__contains__, found))  # C-level filtering and counting
    repeated = {g[:-1].decode("ascii") for g, n in counts.items() if n > 1}
    present = None if any(g.startswith(head) for g in mine) else \
        {g[:-1].decode("ascii") for g in filter(mine.__contains__, found)}
    return _Scan(repeated | odd, present, head in found)


class _Targets:
    """Finds the entity a GlobalId names; for a GlobalId the file repeats, the first of them.

    ``shared``: the GlobalIds that may name several entities. When None, call right after
    :func:`_open`: the parser's log of that open names the repeated GlobalIds (``by_guid`` alone
    would return an arbitrary one of them)."""

    def __init__(self, model, schema, shared: set[str] | None = None) -> None:
        import ifcopenshell

        self.model = model
        self.schema = schema
        self.notes: list[str] = []
        if shared is None:
            shared = set(_NON_UNIQUE.findall(ifcopenshell.get_log()))
        self.shared: dict[str, list] = {}
        if shared:  # rare: only then is every rooted entity visited
            for e in model.by_type("IfcRoot"):
                if e.GlobalId in shared:
                    self.shared.setdefault(e.GlobalId, []).append(e)

    def get(self, gid: str, where: str):
        """The target entity, or None (with a note) when the first one cannot carry a set."""
        many = self.shared.get(gid)
        if many and len(many) > 1:
            many = sorted(many, key=lambda e: e.id())
            target = many[0]
            others = ", ".join(f"#{e.id()} {e.is_a()}" for e in many[1:4])
            if not _related_object_ok(target, self.schema):
                self.notes.append(f"{where}: GlobalId shared by #{target.id()} {target.is_a()} and {others}; "
                                  "the first cannot carry a property set, so none was written")
                return None
            self.notes.append(f"{where}: GlobalId shared by #{target.id()} {target.is_a()} and {others}; "
                              f"written to #{target.id()} only")
            return target
        try:
            return self.model.by_guid(gid)
        except RuntimeError:
            raise InputError(f"{where}: no object with that GlobalId in the model") from None


def _value_leaves(schema) -> set[str]:
    import ifcopenshell.ifcopenshell_wrapper as w

    def inner(sel) -> set[str]:
        out: set[str] = set()
        for member in sel.select_list():
            out |= inner(member) if isinstance(member, w.select_type) else {member.name()}
        return out

    return inner(schema.declaration_by_name("IfcValue"))


def _schema(model):
    import ifcopenshell.ifcopenshell_wrapper as w

    return w.schema_by_name(model.schema_identifier)


def _unit_scale(model, unit_type: str | None) -> float:
    """Factor taking a value in the model's project unit to SI (1.0 when not assigned, or when
    the unit's definition is damaged and the library cannot evaluate it)."""
    if unit_type is None:
        return 1.0
    import ifcopenshell.util.unit

    try:
        scale = float(ifcopenshell.util.unit.calculate_unit_scale(model, unit_type))
    except ValueError:  # unit type not in this schema's enumerations
        return 1.0
    except Exception:  # noqa: BLE001 - damaged unit entities make the library raise anything
        return float("nan")
    return scale if math.isfinite(scale) and scale > 0 else 1.0


def _candidate_sets(src: Path, prefix: str, model) -> list | None:
    """Our earlier sets found from the raw bytes, or None when that shortcut cannot be exact.

    Every set whose name starts with ``prefix`` (ASCII, so written literally) puts the bytes
    ``'prefix`` in the file. Each occurrence is matched back to an ``#id=IFCPROPERTYSET('guid',
    owner,'prefix...`` head; if every occurrence is explained that way and ifcopenshell confirms
    each name, the list is complete without reading every property set of the model.
    """
    # ISO 10303-21 writes characters of the basic alphabet directly (the \\X escapes are for
    # the others; from memory), so an ASCII prefix appears literally in the file.
    needle = b"'" + prefix.encode("ascii")
    head = re.compile(rb"#(\d+)\s*=\s*IFCPROPERTYSET\s*\(\s*'[^']*'\s*,\s*(?:\$|#\d+)\s*,\s*\Z", re.I)
    with open(src, "rb") as fh:
        if os.fstat(fh.fileno()).st_size == 0:
            return None
        mm = mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ)
    with mm:
        found = []
        at = mm.find(needle)
        while at >= 0:
            m = head.search(mm[max(0, at - 400) : at])
            if m is None:
                return None
            found.append(int(m.group(1)))
            at = mm.find(needle, at + 1)
    ours = []
    for iid in found:
        try:
            entity = model.by_id(iid)
        except RuntimeError:
            return None
        if not entity.is_a("IfcPropertySet") or not (entity.Name or "").startswith(prefix):
            return None
        ours.append(entity)
    return ours


def _find_ours(model, owner_prefix: str, src: Path, *, none_in_file: bool = False) -> tuple[set[int], int]:
    """Ids of our earlier property sets, their relations and the properties only they use.
    ``none_in_file``: a scan of the bytes already found no string starting with our prefix."""
    prefix = owner_prefix + "_"
    ours = [] if none_in_file else _candidate_sets(src, prefix, model)
    if ours is None:  # something unusual in the file: read every property set
        ours = [p for p in model.by_type("IfcPropertySet") if (p.Name or "").startswith(prefix)]
    our_ids = {p.id() for p in ours}
    drop: set[int] = set(our_ids)
    for pset in ours:
        for inv in model.get_inverse(pset):
            if inv.is_a("IfcRelDefinesByProperties") and inv.RelatingPropertyDefinition == pset:
                if model.get_inverse(inv):
                    raise InputError(
                        f"{src}: #{inv.id()} (relation of our set {pset.Name!r}) is referenced elsewhere; "
                        "cannot replace it safely"
                    )
                drop.add(inv.id())
            elif inv.id() not in our_ids:
                raise InputError(
                    f"{src}: our earlier set #{pset.id()} {pset.Name!r} is also used by #{inv.id()} "
                    f"({inv.is_a()}); cannot replace it safely"
                )
        for prop in pset.HasProperties or ():
            if all(inv.id() in our_ids for inv in model.get_inverse(prop)):
                drop.add(prop.id())
    return drop, len(ours)


class _Builder:
    """Formats new entity instances by attribute name, in the schema's attribute order."""

    def __init__(self, schema, first_id: int) -> None:
        self.schema = schema
        self.next_id = first_id
        self.lines: list[str] = []
        self._layouts: dict[str, tuple] = {}
        self._shapes: dict[tuple[str, tuple[str, ...]], tuple] = {}

    def _layout(self, entity: str) -> tuple[tuple[str, ...], set[str], tuple[bool, ...], tuple[bool, ...]]:
        """Attribute names, their set, derived flags and optional flags of ``entity`` (cached)."""
        got = self._layouts.get(entity)
        if got is None:
            decl = self.schema.declaration_by_name(entity)
            attrs = decl.all_attributes()
            names = tuple(a.name() for a in attrs)
            got = (names, set(names), tuple(bool(d) for d in decl.derived()), tuple(a.optional() for a in attrs))
            self._layouts[entity] = got
        return got

    def _shape(self, entity: str, given: tuple[str, ...]) -> tuple[str, list[str], tuple, tuple[bool, ...]]:
        """For ``entity`` written with the attributes named ``given`` (cached per combination):
        the keyword, the values of a line before filling in (``*`` for derived attributes, ``$``
        for the others), the position of each given attribute (None for a derived one: its value
        is ignored) and whether it may be unset. Raises for an unknown attribute or a required
        one not given."""
        key = (entity, given)
        got = self._shapes.get(key)
        if got is not None:
            return got
        names, name_set, derived, optional = self._layout(entity)
        # IFC4X3 renamed IfcProperty.Description to Specification
        renamed = "Description" not in name_set and "Specification" in name_set
        in_schema = tuple("Specification" if g == "Description" and renamed else g for g in given)
        unknown = set(in_schema) - name_set
        if unknown:
            raise AssertionError(f"{entity} has no attribute(s) {sorted(unknown)} in {self.schema.name()}")
        for name, is_derived, is_optional in zip(names, derived, optional):
            if not (is_derived or is_optional or name in in_schema):
                raise AssertionError(f"{entity}.{name} is required in {self.schema.name()}")
        template = ["*" if d else "$" for d in derived]
        slots = tuple(None if derived[names.index(g)] else names.index(g) for g in in_schema)
        may_be_unset = tuple(optional[names.index(g)] for g in in_schema)
        got = (entity.upper(), template, slots, may_be_unset)
        self._shapes[key] = got
        return got

    def add_property(self, name: str, nominal: _Typed, description: str) -> int:
        """One IfcPropertySingleValue (the most frequent line): what :meth:`add` writes for
        ``Name``, ``Description`` (None when empty) and ``NominalValue``, without its per-call
        checks (the layout is checked once)."""
        keyword, template, (s_name, s_desc, s_nominal), _ = self._shape(
            "IfcPropertySingleValue", ("Name", "Description", "NominalValue"))
        values = template.copy()
        values[s_name] = p21_string(name)
        if description:
            values[s_desc] = p21_string(description)
        values[s_nominal] = f"{nominal.type_name.upper()}({nominal.literal})"
        iid = self.next_id
        self.next_id += 1
        self.lines.append(f"#{iid}={keyword}({','.join(values)});")
        return iid

    def add(self, entity: str, **attrs: object) -> int:
        keyword, template, slots, may_be_unset = self._shape(entity, tuple(attrs))
        values = template.copy()
        for slot, unset_ok, (name, v) in zip(slots, may_be_unset, attrs.items()):
            if slot is None:  # derived: always written as *
                continue
            if v is None:
                if not unset_ok:
                    raise AssertionError(f"{entity}.{name} is required in {self.schema.name()}")
            else:
                values[slot] = _p21_value(v)
        iid = self.next_id
        self.next_id += 1
        self.lines.append(f"#{iid}={keyword}({','.join(values)});")
        return iid


def _deterministic_guid(target_gid: str, pset_name: str, what: str) -> str:
    return _compress_guid(_uuid5_bytes(_GUID_NAMESPACE, f"{target_gid}|{pset_name}|{what}"))


def _uuid5_bytes(namespace: uuid.UUID, name: str) -> bytes:
    """The 16 bytes of ``uuid.uuid5(namespace, name)`` (RFC 4122 section 4.3: SHA-1 of the
    namespace and the name, version 5 in the top 4 bits of octet 6, variant 10 in the top 2 bits
    of octet 8), without building a UUID object (checked against ``uuid.uuid5`` in the tests)."""
    h = bytearray(hashlib.sha1(namespace.bytes + name.encode("utf-8")).digest()[:16])
    h[6] = (h[6] & 0x0F) | 0x50
    h[8] = (h[8] & 0x3F) | 0x80
    return bytes(h)


# The IFC GlobalId alphabet, digit values 0..63 (ISO 16739-1, IfcGloballyUniqueId), as a
# translation from the standard base-64 alphabet (RFC 4648, table 1) with the same digit values.
_B64_TO_IFC = bytes.maketrans(
    b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/",
    b"0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz_$",
)


def _compress_guid(uuid_bytes: bytes) -> str:
    """A 128-bit UUID as the 22-character IFC GlobalId: its base-64 digits, most significant
    first (the first digit carries the top 2 bits). Two zero bytes in front make 144 bits, 24
    standard base-64 digits of which the first two are zero; the IFC alphabet differs from the
    standard one only in the characters. Same result as ``ifcopenshell.guid.compress`` (checked
    in the tests), at C speed."""
    return base64.b64encode(b"\0\0" + uuid_bytes).translate(_B64_TO_IFC)[2:].decode("ascii")


_GUID_NAMESPACE = uuid.uuid5(uuid.NAMESPACE_URL, "urn:swayscreen:ifc-write-back")


@dataclass
class _Values:
    """Turns a :class:`Prop` into what the file stores, for one open model."""

    model: object
    leaves: set[str]  # members of the schema's IfcValue select
    fallbacks: list[str] = field(default_factory=list)
    scales: dict[str, float] = field(default_factory=dict)

    def scale(self, unit_type: str | None) -> float:
        if unit_type not in self.scales:
            f = _unit_scale(self.model, unit_type)
            if not math.isfinite(f):
                self.fallbacks.append(f"{unit_type}: the model's unit cannot be read; values written in SI")
                f = 1.0
            self.scales[unit_type] = f
        return self.scales[unit_type]

    def stored(self, prop: Prop, where: str) -> tuple[str, Value, str]:
        """``(type name, value in project units, description)`` for the NominalValue."""
        spec = MEASURES[prop.measure]
        v = prop.value
        if prop.measure not in self.leaves:
            schema = self.model.schema_identifier
            if prop.measure in ("IfcLabel", "IfcText", "IfcIdentifier", "IfcBoolean", "IfcInteger"):
                raise InputError(f"{where}: {prop.measure} is not a property value type in {schema}")
            note = f"[unit: {spec.si_symbol}]" if spec.si_symbol else f"[{prop.measure}]"
            self.fallbacks.append(f"{where}, {prop.name}: {prop.measure} not in {schema}, written as IfcReal {note}")
            return "IfcReal", float(v), f"{prop.description} {note}".strip()
        if prop.measure == "IfcBoolean":
            return prop.measure, bool(v), prop.description
        if prop.measure in ("IfcLabel", "IfcText", "IfcIdentifier"):
            return prop.measure, str(v), prop.description
        if prop.measure == "IfcInteger":
            return prop.measure, int(v), prop.description
        return prop.measure, float(v) / self.scale(spec.unit_type), prop.description

    def typed(self, prop: Prop, where: str) -> tuple[_Typed, str]:
        """The NominalValue as ISO 10303-21 text, and the description."""
        type_name, value, description = self.stored(prop, where)
        return _Typed(type_name, _p21_value(value)), description


def _owner_history(model, builder: _Builder | None, schema, src: Path) -> int | None:
    """Id of the owner history our instances reference, or None where the schema allows none."""
    required = not schema.declaration_by_name("IfcRoot").all_attributes()[1].optional()
    if not required:
        return None
    existing = sorted(model.by_type("IfcOwnerHistory"), key=lambda e: e.id())
    if existing:
        return existing[0].id()
    if builder is None:
        raise InputError(f"{src}: no IfcOwnerHistory")
    # A minimal owner history of our own; the source was already missing one.
    apps = sorted(model.by_type("IfcApplication"), key=lambda e: e.id())
    users = sorted(model.by_type("IfcPersonAndOrganization"), key=lambda e: e.id())
    org: int | None = None
    if not apps or not users:
        org = builder.add("IfcOrganization", Name="swayscreen")
    app = apps[0].id() if apps else builder.add(
        "IfcApplication",
        ApplicationDeveloper=_Ref(org),
        Version="0",
        ApplicationFullName="swayscreen",
        ApplicationIdentifier="swayscreen",
    )
    if users:
        user = users[0].id()
    else:
        person = builder.add("IfcPerson", FamilyName="swayscreen")
        user = builder.add("IfcPersonAndOrganization", ThePerson=_Ref(person), TheOrganization=_Ref(org))
    return builder.add(
        "IfcOwnerHistory",
        OwningUser=_Ref(user),
        OwningApplication=_Ref(app),
        ChangeAction=_Enum("ADDED"),
        CreationDate=int(src.stat().st_mtime),
    )


_RELATED_TYPE: dict[str, str] = {}  # schema name -> entity type RelatedObjects accepts


def _related_object_ok(entity, schema) -> bool:
    allowed = _RELATED_TYPE.get(schema.name())
    if allowed is None:
        decl = schema.declaration_by_name("IfcRelDefinesByProperties")
        attr = [a for a in decl.all_attributes() if a.name() == "RelatedObjects"][0]
        allowed = _RELATED_TYPE[schema.name()] = attr.type_of_attribute().type_of_element().declared_type().name()
    return entity.is_a(allowed) and not entity.is_a("IfcTypeObject")


def _plan(src: Path, annotations: Sequence[PsetAnnotation], owner_prefix: str, source=None) -> _Plan:
    """What to drop and what to append; on the reader's open model when ``source`` still
    describes ``src`` (see the module docstring), else on a lazy open of ``src``."""
    new_gids = [(_deterministic_guid(a.global_id, a.pset_name, "IfcPropertySet"),
                 _deterministic_guid(a.global_id, a.pset_name, "IfcRelDefinesByProperties")) for a in annotations]
    reused = _reusable(source, src)
    present: set[str] | None = None  # our GlobalIds found in the file; None: look each one up
    none_of_ours = False  # True when the bytes hold no set name of ours
    if reused:
        model = source.model  # read-only: nothing below edits it
        stat: tuple[int, int] | None = (source.size_bytes, source.mtime_ns)
        known = getattr(source, "shared_global_ids", None)  # the parser's own list, if the reader kept it
        shared: set[str] | None
        if known is not None:
            shared = set(known)
        else:
            scan = _scan_global_ids(src, {a.global_id for a in annotations},
                                    {g for pair in new_gids for g in pair}, owner_prefix + "_")
            shared, present, none_of_ours = scan.repeated, scan.present, not scan.prefix_seen
    else:
        stat = _stat_key(src)  # before the open: a change from here on is caught after the copy
        model = _open(src, lazy=True)
        shared = None  # from the parser's log of this open
    schema = _schema(model)
    targets = _Targets(model, schema, shared)
    leaves = _value_leaves(schema)
    drop, replaced = _find_ours(model, owner_prefix, src, none_in_file=none_of_ours)

    # New ids start just above the largest id that is kept (see module docstring).
    top = int(model.get_max_id())
    while top in drop:
        top -= 1
    builder = _Builder(schema, top + 1)
    oh = _owner_history(model, builder, schema, src)
    oh_ref = _Ref(oh) if oh is not None else None

    values = _Values(model, leaves)
    n_props = 0
    skipped = 0
    for ann, (pset_gid, rel_gid) in zip(annotations, new_gids):
        where = f"{src}: {ann.pset_name!r} on {ann.global_id!r}"
        target = targets.get(ann.global_id, where)
        if target is None:
            skipped += 1
            continue
        if not _related_object_ok(target, schema):
            raise InputError(f"{where}: {target.is_a()} #{target.id()} cannot carry a property set by relation")
        for gid in (pset_gid, rel_gid):
            if present is not None and gid not in present:
                continue
            try:
                clash = model.by_guid(gid)
            except RuntimeError:
                continue
            if clash.id() not in drop:
                raise InputError(f"{where}: GlobalId {gid} already used by #{clash.id()}")
        prop_ids = [builder.add_property(prop.name, *values.typed(prop, where)) for prop in ann.props]
        n_props += len(prop_ids)
        pset = builder.add(
            "IfcPropertySet",
            GlobalId=pset_gid,
            OwnerHistory=oh_ref,
            Name=ann.pset_name,
            HasProperties=tuple(_Ref(i) for i in prop_ids),
        )
        builder.add(
            "IfcRelDefinesByProperties",
            GlobalId=rel_gid,
            OwnerHistory=oh_ref,
            RelatedObjects=(_Ref(target.id()),),
            RelatingPropertyDefinition=_Ref(pset),
        )
    return _Plan(
        schema=model.schema_identifier,
        drop_ids=drop,
        psets_replaced=replaced,
        lines=builder.lines,
        first_new_id=top + 1 if builder.lines else 0,
        psets_written=len(annotations) - skipped,
        properties_written=n_props,
        fallbacks=values.fallbacks,
        notes=targets.notes,
        source_stat=stat,
        reused_parse=reused,
    )


# --------------------------------------------------------------------------- streaming the bytes

# One ISO 10303-21 statement: leading blanks and comments, an optional "#id =" or keyword head,
# then anything up to the first ";" outside a string or comment. The body is written "unrolled"
# (plain run, then any number of {string | comment | lone slash} each followed by a plain run):
# every alternative starts with a different character, so a failed match (an incomplete
# statement at the end of the buffer) gives up in linear time. A doubled apostrophe inside a
# string reads as two adjacent strings, which ends at the same place.
_STATEMENT = re.compile(
    rb"\s*(?:/\*.*?\*/\s*)*"
    rb"(?:#(\d+)\s*=|([A-Za-z][A-Za-z0-9_]*))?"
    rb"[^';/]*(?:(?:'[^']*'|/\*.*?\*/|/(?!\*))[^';/]*)*;",
    re.DOTALL,
)
_LEADING_EOL = re.compile(rb"^[ \t]*(\r\n|\r|\n)")
_ANY_EOL = re.compile(rb"\r\n|\r|\n")
_BLOCK = 1 << 22
_COMMENT_OPEN = re.compile(rb"/\*")
_TAIL_MAX = 1 << 24  # bytes of a re-run's tail held in memory at most (see _tail_rewrite)
_FAST_COPY = True  # tests switch it off to compare with the statement scanner
_KERNEL_COPY = hasattr(os, "copy_file_range")  # tests switch it off to compare with the slices
_NO_KERNEL_COPY = {errno.EXDEV, errno.ENOSYS, errno.EOPNOTSUPP, errno.EINVAL, errno.EBADF, errno.EPERM}


class _Copier:
    """Copies statements from the source to ``out``, dropping ids and inserting new lines."""

    def __init__(self, src: Path, out: BinaryIO, drop: set[int], lines: list[str], *, start: int = 0,
                 state: str = "header", eol: bytes | None = None) -> None:
        """``start``: the byte offset to begin at (a statement boundary), in ``state``; ``eol``:
        the file's first line end when the copy starts past it."""
        self.src, self.out, self.drop, self.lines = src, out, drop, lines
        self.start = start
        self.state = state  # header -> data -> after
        self.written = 0
        self.dropped = 0  # statements left out
        self.eol: bytes | None = eol  # first line end seen in the file

    def _emit(self, data: bytes) -> None:
        self.out.write(data)
        self.written += len(data)

    def _insert(self, piece: bytes) -> None:
        self._emit(_insertion(piece, self.lines, self.eol))
        self.state = "after"

    def run(self) -> int:
        buf = b""
        eof = False
        match = _STATEMENT.match
        drop = self.drop
        with open(self.src, "rb") as fh:
            fh.seek(self.start)
            while True:
                pos = 0  # next statement starts here
                flushed = 0  # bytes of buf already written
                m = match(buf, pos)
                while m is not None:
                    end = m.end()
                    sid, keyword = m.group(1, 2)
                    if sid is not None:
                        if drop and int(sid) in drop:
                            self._emit(buf[flushed:pos])
                            flushed = end
                            self.dropped += 1
                    elif keyword is not None:
                        kw = keyword.upper()
                        if kw == b"DATA" and self.state == "header":
                            self.state = "data"
                        elif kw == b"ENDSEC" and self.state == "data":
                            self._emit(buf[flushed:pos])
                            flushed = pos
                            self._insert(buf[pos:end])
                    pos = end
                    m = match(buf, pos)
                if self.eol is None:
                    found = _ANY_EOL.search(buf, 0, pos)
                    self.eol = found.group(0) if found else None
                if eof:
                    self._emit(buf[flushed:])
                    break
                self._emit(buf[flushed:pos])
                chunk = fh.read(_BLOCK)
                eof = not chunk
                buf = buf[pos:] + chunk
        if self.state != "after":
            raise InputError(f"{self.src}: no end of the DATA section found (not an ISO 10303-21 file?)")
        return self.written


def _insertion(piece: bytes, lines: list[str], default_eol: bytes | None) -> bytes:
    """The new lines to put before ``piece`` (the ENDSEC statement with its leading blanks),
    each preceded by the line end that precedes ENDSEC (else the file's first line end)."""
    lead = _LEADING_EOL.match(piece)
    eol = lead.group(1) if lead else (default_eol or b"\n")
    block = b"".join(eol + line.encode("ascii") for line in lines)
    if lines and not lead:
        block += eol
    return block


def _statement_start(mm, k: int) -> int | None:
    """If the keyword at ``k`` begins a statement (only blanks back to a ';'), the offset just
    after that ';'."""
    j = k
    while j > 0 and mm[j - 1 : j] in (b" ", b"\t", b"\r", b"\n"):
        j -= 1
    return j if j > 0 and mm[j - 1 : j] == b";" else None


def _quotes_before(mm, k: int) -> int:
    return sum(mm[a : min(a + _BLOCK, k)].count(b"'") for a in range(0, k, _BLOCK))


def _plain_insert(src: Path, out: BinaryIO, lines: list[str]) -> int | None:
    """Fast path when nothing is dropped and the file has no comments: find the last ENDSEC
    (outside any string: an even number of apostrophes before it, as '' escapes come in pairs)
    after a DATA section, and copy the bytes around the insertion with C-level slicing.
    Returns None, having written nothing, when the file does not qualify."""
    with open(src, "rb") as fh:
        if os.fstat(fh.fileno()).st_size == 0:
            return None
        with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
            if _COMMENT_OPEN.search(mm) is not None:  # (the regex engine scans 3x faster than find here)
                return None
            end = len(mm)
            cut = None
            while cut is None:
                k = mm.rfind(b"ENDSEC", 0, end)
                if k < 0:
                    return None
                j = _statement_start(mm, k)
                if j is not None and re.match(rb"ENDSEC\s*;", mm[k : k + 64]) and _quotes_before(mm, k) % 2 == 0:
                    cut = j
                end = k
            if _data_statement(mm, cut) is None:
                return None
            eol = _ANY_EOL.search(mm[: min(len(mm), 1 << 16)])
            block = _insertion(mm[cut : cut + 256], lines, eol.group(0) if eol else None)
            written = _copy_range(fh.fileno(), mm, out, 0, cut)
            written += out.write(block)
            written += _copy_range(fh.fileno(), mm, out, cut, len(mm))
            return written


def _copy_range(src_fd: int, mm, out: BinaryIO, start: int, stop: int) -> int:
    """Copy source bytes [start, stop) to ``out``: in the kernel (``os.copy_file_range``, no
    trip through Python's buffers) where the system offers it, else by slices of the map."""
    done = 0
    if _KERNEL_COPY and stop > start:
        try:
            out.flush()
            dst_fd = out.fileno()
            while start + done < stop:
                k = os.copy_file_range(src_fd, dst_fd, stop - start - done, start + done)
                if k <= 0:
                    break
                done += k
        except (AttributeError, ValueError, io.UnsupportedOperation):
            pass  # not a plain file stream: the slices below
        except OSError as exc:
            if exc.errno not in _NO_KERNEL_COPY:
                raise  # a real failure (disk full, I/O error) is the caller's to report
            # not offered for these files (other file system, kernel): the slices below
    for a in range(start + done, stop, _BLOCK):
        done += out.write(mm[a : min(a + _BLOCK, stop)])
    return done


def _data_statement(mm, before: int) -> int | None:
    """Offset of a ``DATA`` statement (outside strings) before ``before``, searched from the top."""
    start = 0
    while True:
        k = mm.find(b"DATA", start, before)
        if k < 0:
            return None
        if (
            _statement_start(mm, k) is not None
            and re.match(rb"DATA\s*[;(]", mm[k : k + 64])
            and _quotes_before(mm, k) % 2 == 0
        ):
            return k
        start = k + 1


def _tail_rewrite(src: Path, out: BinaryIO, drop: set[int], lines: list[str]) -> int | None:
    """Fast path of a re-run when the file has no comments: our earlier instances sit together
    near the end (the previous run appended them), so only the statements from the first
    dropped one on are scanned; the bytes before it are copied with C-level slicing.

    The first dropped statement (``#id=`` of the lowest id to drop) is found from the end; it
    must begin a statement (only blanks back to a ';') outside any string (an even number of
    apostrophes before it), after a DATA statement. The tail is scanned into memory first;
    unless it holds every instance to drop (instance names are unique in a valid file,
    ISO 10303-21 clause 6.3.2, from memory) nothing is written and None is returned, and the
    caller scans the whole file."""
    lowest = min(drop)
    head_id = re.compile(rb"#%d\s*=" % lowest)
    with open(src, "rb") as fh:
        if os.fstat(fh.fileno()).st_size == 0:
            return None
        with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
            if _COMMENT_OPEN.search(mm) is not None:
                return None
            end, cut = len(mm), None
            while cut is None:
                k = mm.rfind(b"#%d" % lowest, 0, end)
                if k < 0:
                    return None
                j = _statement_start(mm, k)
                if j is not None and head_id.match(mm, k) and _quotes_before(mm, k) % 2 == 0:
                    cut = j
                end = k
            if len(mm) - cut > max(_TAIL_MAX, len(mm) // 2) or _data_statement(mm, cut) is None:
                return None  # (a tail that large is streamed by the full scan instead of held in memory)
            eol = _ANY_EOL.search(mm)
            tail = io.BytesIO()
            copier = _Copier(src, tail, drop, lines, start=cut, state="data", eol=eol.group(0) if eol else None)
            try:
                copier.run()
            except InputError:  # no end of the DATA section in the tail: let the full scan say so
                return None
            if copier.dropped != len(drop):
                return None
            written = 0
            for a in range(0, cut, _BLOCK):
                written += out.write(mm[a : min(a + _BLOCK, cut)])
            written += out.write(tail.getbuffer())
            return written


def _stream(src: Path, out: BinaryIO, drop: set[int], lines: list[str]) -> int:
    """Copy ``src`` to ``out`` dropping ``drop`` ids and inserting ``lines``; returns bytes written."""
    if _FAST_COPY:
        written = _tail_rewrite(src, out, drop, lines) if drop else _plain_insert(src, out, lines)
        if written is not None:
            return written
    return _Copier(src, out, drop, lines).run()


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (b.exists() and os.path.samefile(a, b))
    except OSError:
        return False


def write_annotated(
    src: Path,
    dst: Path,
    annotations: Sequence[PsetAnnotation],
    *,
    owner_prefix: str = "Swayscreen",
    validate: bool = False,
    source=None,
) -> WriteReport:
    """Write a copy of ``src`` to ``dst`` with our property sets attached (streamed, fast path).

    The source is only read. ``dst`` appears complete or not at all (temporary file beside it,
    then ``os.replace``). Raises :class:`InputError` for a reserved or foreign set name, an
    unknown GlobalId, a value that does not fit its measure, an unreadable source, or a source
    that changed while it was being copied.
    With ``validate=True`` the written file is checked with :func:`validate_output`.

    ``source``: the reader's :class:`~.reading.SourceFile` of ``src`` (``reading.
    read_model_and_source``). Its open model is used, read-only, to plan the write when it is
    the same file with the same size and modification time; otherwise (or when None) the file
    is opened again. The output is byte-identical either way; :attr:`WriteReport.reused_parse`
    says which happened. The writer keeps no reference to it. (What is used: ``path``,
    ``size_bytes``, ``mtime_ns``, ``model``, ``unchanged()`` and, when present, the GlobalIds the
    parser reported as repeated, ``shared_global_ids``.)
    """
    src, dst = Path(src), Path(dst)
    _check_annotations(annotations, owner_prefix)
    if _same_file(src, dst):
        raise InputError(f"{dst}: the annotated copy must not overwrite its source")
    plan = _plan(src, annotations, owner_prefix, source)
    with atomic_path(dst) as tmp, os.fdopen(os.open(tmp, os.O_WRONLY | os.O_TRUNC), "wb") as out:
        written = _stream(src, out, plan.drop_ids, plan.lines)
        out.flush()
        os.fsync(out.fileno())
        if _stat_key(src) != plan.source_stat:  # the plan's ids may no longer match the bytes copied
            raise InputError(f"{src}: the file changed while its annotated copy was being written; run again")
    errors = tuple(validate_output(dst)) if validate else None
    return WriteReport(
        dst=dst,
        schema=plan.schema,
        psets_written=plan.psets_written,
        psets_replaced=plan.psets_replaced,
        properties_written=plan.properties_written,
        instances_removed=len(plan.drop_ids),
        instances_added=len(plan.lines),
        first_new_id=plan.first_new_id,
        bytes_written=written,
        fallbacks=tuple(plan.fallbacks),
        validation_errors=errors,
        notes=tuple(plan.notes),
        reused_parse=plan.reused_parse,
    )


# --------------------------------------------------------------------------- reference writer


def write_annotated_reserialise(
    src: Path,
    dst: Path,
    annotations: Sequence[PsetAnnotation],
    *,
    owner_prefix: str = "Swayscreen",
    validate: bool = False,
) -> WriteReport:
    """Reference writer: edit with ``ifcopenshell.api.pset`` and re-serialise with ``file.write``.

    Same checks, names, GlobalIds, owner history and values as :func:`write_annotated`; instance
    ids of the new entities and the file's formatting differ. Several times slower on large files.
    """
    import ifcopenshell.api.pset
    import ifcopenshell.guid

    src, dst = Path(src), Path(dst)
    _check_annotations(annotations, owner_prefix)
    if _same_file(src, dst):
        raise InputError(f"{dst}: the annotated copy must not overwrite its source")
    model = _open(src, lazy=False)
    schema = _schema(model)
    targets = _Targets(model, schema)
    leaves = _value_leaves(schema)
    drop, replaced = _find_ours(model, owner_prefix, src)
    for iid in sorted(drop, reverse=True):
        model.remove(model.by_id(iid))

    oh_id = _owner_history(model, None, schema, src)  # the reference writer never creates one
    owner = model.by_id(oh_id) if oh_id is not None else None

    values = _Values(model, leaves)
    n_props = 0
    skipped = 0
    before = {e.id() for e in model.by_type("IfcOwnerHistory")}
    for ann in annotations:
        where = f"{src}: {ann.pset_name!r} on {ann.global_id!r}"
        target = targets.get(ann.global_id, where)
        if target is None:
            skipped += 1
            continue
        if not _related_object_ok(target, schema):
            raise InputError(f"{where}: {target.is_a()} #{target.id()} cannot carry a property set by relation")
        pset = ifcopenshell.api.pset.add_pset(model, product=target, name=ann.pset_name)
        props = {}
        for prop in ann.props:
            type_name, value, description = values.stored(prop, where)
            nominal = model.create_entity(type_name, value)
            single = model.create_entity("IfcPropertySingleValue", Name=prop.name, NominalValue=nominal)
            single[1] = description or None  # Description (Specification in IFC4X3)
            props[prop.name] = single
        # Property instances are passed whole: edit_pset keeps them as they are (booleans included).
        ifcopenshell.api.pset.edit_pset(model, pset=pset, properties=props)
        n_props += len(props)
        pset.GlobalId = _deterministic_guid(ann.global_id, ann.pset_name, "IfcPropertySet")
        pset.OwnerHistory = owner
        for rel in model.get_inverse(pset):
            if rel.is_a("IfcRelDefinesByProperties"):
                rel.GlobalId = _deterministic_guid(ann.global_id, ann.pset_name, "IfcRelDefinesByProperties")
                rel.OwnerHistory = owner
    # Owner histories the API created on the way and that nothing uses any more.
    for oh in model.by_type("IfcOwnerHistory"):
        if oh.id() not in before and not model.get_inverse(oh):
            model.remove(oh)

    with atomic_path(dst) as tmp:
        model.write(str(tmp))
    errors = tuple(validate_output(dst)) if validate else None
    return WriteReport(
        dst=dst,
        schema=model.schema_identifier,
        psets_written=len(annotations) - skipped,
        psets_replaced=replaced,
        properties_written=n_props,
        instances_removed=len(drop),
        instances_added=n_props + 2 * (len(annotations) - skipped),
        first_new_id=0,
        bytes_written=dst.stat().st_size,
        fallbacks=tuple(values.fallbacks),
        validation_errors=errors,
        notes=tuple(targets.notes),
    )


# --------------------------------------------------------------------------- validation


def validate_output(path: Path) -> list[str]:
    """Schema-level errors ifcopenshell.validate finds in ``path`` (attribute types, cardinalities,
    inverses; not the EXPRESS WHERE rules). One string per problem, ``"#id=IfcX: message"``.
    """
    import ifcopenshell
    import ifcopenshell.validate

    logger = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(str(path), logger)
    out: list[str] = []
    for st in logger.statements:
        if str(st.get("level", "")).lower() not in ("error", "critical"):
            continue
        inst = st.get("instance")
        label = ""
        if inst is not None:
            try:
                label = f"#{inst.id()}={inst.is_a()}: "
            except Exception:  # a non-entity value in the log record
                label = f"{inst}: "
        out.append(f"{label}{st.get('message', '')}")
    return out


def iter_our_psets(path: Path, owner_prefix: str = "Swayscreen") -> Iterable[tuple[str, str, dict[str, tuple[str, object]]]]:
    """Read back our sets: ``(target GlobalId, set name, {property: (measure type, value)})``.

    Values as stored in the file (project units). For tests and the report.
    """
    model = _open(Path(path), lazy=False)
    prefix = owner_prefix + "_"
    for rel in model.by_type("IfcRelDefinesByProperties"):
        pdef = rel.RelatingPropertyDefinition
        if not hasattr(pdef, "is_a") or not pdef.is_a("IfcPropertySet") or not (pdef.Name or "").startswith(prefix):
            continue
        props = {
            p.Name: (p.NominalValue.is_a(), p.NominalValue.wrappedValue)
            for p in pdef.HasProperties
            if p.is_a("IfcPropertySingleValue") and p.NominalValue is not None
        }
        for obj in rel.RelatedObjects:
            yield obj.GlobalId, pdef.Name, props
