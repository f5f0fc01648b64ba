"""Write every output of a screening run into a folder.

``DIR/<model>-annotated.ifc`` (a copy of the model with our property sets), ``DIR/report.html``
(left out with ``report=False``, the CLI's ``--no-report``), ``DIR/summary.json`` and, when
anything is flagged, ``DIR/issues.bcfzip``. The input model is only read. When the run carries
the reader's open file (``screen_file(..., keep_source=True)``), the write-back plans on it
instead of parsing the model again, and the run lets go of it once the copy is written.

Nothing partial is left by an interrupted run: everything slow (the report with its plots,
the summary, the BCF archive and the annotated copy) is produced first, each file under a
temporary name beside its final one (``.<name>.<random>.part``); only then are they all
renamed into place (``os.replace``, atomic on one file system), with Ctrl-C held back for
those few renames. An interruption before that point removes the temporary files and
leaves the folder as it was. Files of an earlier run that this run does not write (the BCF
archive of a scheme no longer flagged, the report of a run without one) are removed in that
same step, so the folder never mixes two runs.

Objects whose takeoff id holds a ``#`` or ``/`` (a floor with no storey of its own, a floor
split off a storey, the second of two entities sharing one GlobalId) get no property sets; numbers that are not finite
are left out of the sets rather than written.

Our property sets (names are ours; the reserved ``Pset_`` and ``Qto_`` prefixes are not used):

* ``Swayscreen_Screening`` on IfcBuilding: status, governing check, tool version, settings
  digest, date, caution.
* ``Swayscreen_Periods`` on IfcBuilding: period and kind of the first modes.
* ``Swayscreen_Comfort`` on IfcBuilding: worst peak acceleration and its limit for each
  criterion and return period; overall drift ratio and its limit; damping assumed and required.
* ``Swayscreen_Damper`` on IfcBuilding when a damper is proposed.
* ``Swayscreen_StoreySway`` on each above-grade IfcBuildingStorey: mass, mass and stiffness
  centres, storey stiffness, drift ratio and peak acceleration at that floor.
* ``Swayscreen_CoreWall`` on each wall of a core or separate shear wall: system id, closed or open.
"""
from __future__ import annotations

import contextlib
import json
import math
import os
import re
import signal
import threading
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from . import __version__
from .console import CAUTION
from .fileio import temp_beside

__all__ = ["annotations_for", "write_outputs", "PSET_PREFIX"]

PSET_PREFIX = "Swayscreen"


def _finite(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)


def annotations_for(run, *, when: datetime) -> list:
    from .writing import Prop, PsetAnnotation

    anns: list[PsetAnnotation] = []
    for b in run.buildings:
        a = b.assessment
        gov = a.governing
        props = [
            Prop("Status", a.status, "IfcLabel", "pass, flagged or incomplete (a screening estimate, not a design)"),
            Prop("GoverningCheck", f"{gov.criterion} ({gov.method}): {gov.value:.3g} {gov.unit} against {gov.limit:.3g}"
                 if gov else "none", "IfcText"),
            Prop("ToolVersion", f"swayscreen {__version__}", "IfcLabel"),
            Prop("SettingsDigest", run.settings.digest(), "IfcIdentifier"),
            Prop("ScreeningDate", when.isoformat(timespec="seconds"), "IfcLabel"),
            Prop("Caution", CAUTION.replace("\n", " "), "IfcText"),
        ]
        if a.reasons:
            props.append(Prop("Reasons", "; ".join(a.reasons)[:1000], "IfcText"))
        anns.append(PsetAnnotation(b.building.global_id, f"{PSET_PREFIX}_Screening", tuple(props)))
        modal = b.results.get("modes")
        if modal is not None:
            pp = []
            for m in modal.modes[:6]:
                pp.append(Prop(f"Mode{m.index}Period", float(m.period_s), "IfcTimeMeasure"))
                pp.append(Prop(f"Mode{m.index}Kind", m.kind, "IfcLabel"))
            anns.append(PsetAnnotation(b.building.global_id, f"{PSET_PREFIX}_Periods", tuple(pp)))
        cp = []
        seen = set()
        for n, c in enumerate(sorted(a.checks, key=lambda c: -c.ratio)):
            key = (c.criterion, c.method)
            if key in seen:
                continue
            seen.add(key)
            tag = f"Check{len(seen)}"
            if c.unit == "mg":
                cp += [Prop(f"{tag}Criterion", f"{c.criterion} ({c.method})", "IfcText"),
                       Prop(f"{tag}PeakAcceleration", c.value * 9.81e-3, "IfcAccelerationMeasure"),
                       Prop(f"{tag}Limit", c.limit * 9.81e-3, "IfcAccelerationMeasure"),
                       Prop(f"{tag}Passes", bool(c.passes), "IfcBoolean")]
            else:
                cp += [Prop(f"{tag}Criterion", f"{c.criterion} ({c.method})", "IfcText"),
                       Prop(f"{tag}Value", float(c.value), "IfcRatioMeasure" if c.unit == "-" else "IfcReal"),
                       Prop(f"{tag}Limit", float(c.limit), "IfcRatioMeasure" if c.unit == "-" else "IfcReal"),
                       Prop(f"{tag}Passes", bool(c.passes), "IfcBoolean")]
        accel = b.results.get("accel_en")
        if accel is not None and accel.cases:
            c0 = accel.cases[0]
            cp.append(Prop("StructuralDampingRatio", float(c0.structural_damping_ratio), "IfcRatioMeasure"))
        adv = b.results.get("damping_advice")
        req = getattr(adv, "required_total_damping_ratio", None) if adv is not None else None
        if _finite(req):
            cp.append(Prop("RequiredDampingRatio", float(req), "IfcRatioMeasure"))
        if cp:
            anns.append(PsetAnnotation(b.building.global_id, f"{PSET_PREFIX}_Comfort", tuple(cp)))
        damper_props = getattr(adv, "ifc_properties", None) if adv is not None else None
        if damper_props:
            anns.append(PsetAnnotation(b.building.global_id, f"{PSET_PREFIX}_Damper",
                                       tuple(Prop(n, v, m) for n, v, m in damper_props)))
        stick = b.derived.stick
        if stick is not None:
            drift = b.results.get("drift")
            drift_by_level = {}
            if drift is not None:
                drift_by_level = dict(zip(range(len(stick.levels)), getattr(drift, "storey_drift_ratio", ()) or ()))
            peak_by_level: dict[int, float] = {}
            if accel is not None:
                for case in accel.cases:
                    for i, v in enumerate(case.floor_peak_mg):
                        peak_by_level[i] = max(peak_by_level.get(i, 0.0), v)
            k_by_level: dict[int, list[float]] = {}
            for s in stick.segments:
                if s.kind == "frame":
                    k = k_by_level.setdefault(s.level_index, [0.0, 0.0])
                    k[0] += s.k_x_n_m
                    k[1] += s.k_y_n_m
            centres = stick.stiffness_centres_m or ()
            for i, lv in enumerate(stick.levels):
                if "#" in lv.storey_id:  # a floor with no storey of its own (roof slab in the top storey)
                    continue
                pp = [Prop("Mass", float(lv.mass_kg), "IfcMassMeasure"),
                      Prop("MassCentreX", float(lv.mass_centre_m[0]), "IfcLengthMeasure"),
                      Prop("MassCentreY", float(lv.mass_centre_m[1]), "IfcLengthMeasure")]
                if i < len(centres):
                    pp += [Prop("StiffnessCentreX", float(centres[i][0]), "IfcLengthMeasure"),
                           Prop("StiffnessCentreY", float(centres[i][1]), "IfcLengthMeasure")]
                if i in k_by_level:
                    pp += [Prop("ColumnStiffnessX", float(k_by_level[i][0]), "IfcLinearStiffnessMeasure"),
                           Prop("ColumnStiffnessY", float(k_by_level[i][1]), "IfcLinearStiffnessMeasure")]
                if _finite(drift_by_level.get(i)):
                    pp.append(Prop("DriftRatio", float(drift_by_level[i]), "IfcRatioMeasure"))
                if _finite(peak_by_level.get(i)):
                    pp.append(Prop("PeakAcceleration", peak_by_level[i] * 9.81e-3, "IfcAccelerationMeasure"))
                anns.append(PsetAnnotation(lv.storey_id, f"{PSET_PREFIX}_StoreySway", tuple(pp)))
            seen_walls: set[str] = set()
            for core in stick.cores:
                for wid in core.wall_ids:
                    if wid in seen_walls:  # a wall shared by two systems keeps its first
                        continue
                    seen_walls.add(wid)
                    anns.append(PsetAnnotation(wid, f"{PSET_PREFIX}_CoreWall", (
                        Prop("SystemId", core.id, "IfcIdentifier"),
                        Prop("Closed", bool(core.closed), "IfcBoolean"),
                    )))
    return _writable(anns)


def _derived_id(gid: str) -> bool:
    """True for takeoff ids that name no IFC object: ``<GlobalId>#roof`` (a floor with no storey
    of its own), ``<GlobalId>/<n>`` (a floor split off a storey), ``<GlobalId>#<id>`` (an entity
    repeating another's GlobalId). Neither character is in the GlobalId alphabet."""
    return "#" in gid or "/" in gid


def _source_id(gid: str) -> str:
    """The IFC GlobalId a takeoff id comes from (see :func:`_derived_id`)."""
    return re.split(r"[#/]", gid, maxsplit=1)[0]


def _writable(anns: list) -> list:
    """Only what the writer can attach: objects that exist under their own GlobalId (no ``#`` in
    the id), each set once per object, finite numbers only, no empty sets."""
    from .writing import PsetAnnotation

    out = []
    seen: set[tuple[str, str]] = set()
    for a in anns:
        key = (a.global_id, a.pset_name)
        if not a.global_id or _derived_id(a.global_id) or key in seen:
            continue
        seen.add(key)
        props = tuple(p for p in a.props if not (isinstance(p.value, float) and not math.isfinite(p.value)))
        if props:
            out.append(PsetAnnotation(a.global_id, a.pset_name, props))
    return out


def bcf_topics(run) -> list:
    from .bcf import BcfTopic

    topics = []
    for b in run.buildings:
        if b.assessment.status == "pass":
            continue
        storey_ids = {lv.name: _source_id(lv.storey_id) for lv in b.derived.levels}
        bid = _source_id(b.building.global_id)
        for c in b.assessment.flagged:
            ids = [bid] if bid else []
            if c.floor and c.floor in storey_ids and storey_ids[c.floor] not in ids:
                ids.append(storey_ids[c.floor])
            where = f" at {c.floor}" if c.floor else ""
            wind = f", wind from {c.direction_deg:.0f} deg" if c.direction_deg is not None else ""
            rp = f", {c.return_period_yr:g}-year return period" if c.return_period_yr else ""
            desc = (f"{c.criterion} by {c.method}: {c.value:.3g} {c.unit} against a limit of {c.limit:.3g} {c.unit} "
                    f"(ratio {c.ratio:.2f}){where}{wind}{rp}. {c.note} "
                    f"{CAUTION.replace(chr(10), ' ')}").strip()
            topics.append(BcfTopic(f"Sway screening: {c.criterion} exceeded ({c.method})", desc, tuple(ids),
                                   labels=("swayscreen", "wind comfort" if c.unit == "mg" else "drift")))
        if b.assessment.status == "incomplete":
            topics.append(BcfTopic("Sway screening: results missing", "; ".join(b.assessment.reasons),
                                   (bid,) if bid else (), labels=("swayscreen",)))
    return topics


def write_outputs(run, out_dir: Path, *, when: datetime | None = None, report: bool = True) -> dict[str, Path]:
    """Write annotated IFC, report (unless ``report=False``), summary and (when flagged) BCF;
    return their paths.

    All files are produced under temporary names first and renamed into place together at
    the end (see the module docstring), so an interruption leaves either the complete new
    set or the folder as it was, and never a temporary file. ``run.source`` (the reader's open
    file, when the run kept it) is handed to the write-back and released once the annotated
    copy is written, or when anything fails.
    """
    from .bcf import write_bcfzip
    from .summary import build_summary
    from .writing import write_annotated

    try:
        when = when or datetime.now(timezone.utc)
        out_dir = Path(out_dir)
        src = Path(run.takeoff.source_path)
        ifc_out = out_dir / f"{src.stem}-annotated.ifc"
        if ifc_out.resolve() == src.resolve():
            from .errors import InputError

            raise InputError(f"{ifc_out}: the output would overwrite the input model; choose another --out folder")
        bcf_path = out_dir / "issues.bcfzip"
        report_path = out_dir / "report.html"
        paths: dict[str, Path] = {"annotated model": ifc_out, "summary": out_dir / "summary.json"}
        # in memory first: everything slow that needs no file
        annotations = annotations_for(run, when=when)
        texts = [(json.dumps(build_summary(run, when=when), indent=2) + "\n", paths["summary"])]
        if report:
            from .report import render_report

            paths["report"] = report_path
            texts.append((render_report(run, when=when), report_path))
        topics = bcf_topics(run)
        if topics:
            paths["BCF topics"] = bcf_path

        out_dir.mkdir(parents=True, exist_ok=True)
        staged: list[tuple[Path, Path]] = []
        try:
            tmp = temp_beside(ifc_out)
            staged.append((tmp, ifc_out))
            write_annotated(src, tmp, annotations, owner_prefix=PSET_PREFIX, source=getattr(run, "source", None))
            _release_source(run)  # the parsed model is not needed any more
            for text, final in texts:
                tmp = temp_beside(final)
                staged.append((tmp, final))
                tmp.write_bytes(text.encode("utf-8", "replace"))  # names from damaged files may hold lone surrogates
            if topics:
                tmp = temp_beside(bcf_path)
                staged.append((tmp, bcf_path))
                write_bcfzip(tmp, topics, project_name=src.stem, date=when)
            with _sigint_held():
                for tmp, final in staged:
                    os.replace(tmp, final)
                # stale files of an earlier run would mislead: a BCF archive of a scheme no
                # longer flagged, a report that no longer matches the annotated model
                for stale, written in ((bcf_path, bool(topics)), (report_path, report)):
                    if not written and stale.exists():
                        stale.unlink()
        except BaseException:
            for tmp, _ in staged:
                tmp.unlink(missing_ok=True)
            raise
    finally:
        _release_source(run)
    return paths


def _release_source(run) -> None:
    """Drop the run's reference to the reader's open file (runs built without one have nothing to drop)."""
    release = getattr(run, "release_source", None)
    if release is not None:
        release()


@contextlib.contextmanager
def _sigint_held():
    """Hold back Ctrl-C (SIGINT) for the duration of the block, then deliver it.

    Only the main thread can install signal handlers; elsewhere the block runs unguarded
    (the renames take microseconds)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught: list[tuple] = []
    try:
        previous = signal.signal(signal.SIGINT, lambda *a: caught.append(a))
    except (ValueError, OSError):  # not allowed here (embedded interpreter)
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous if previous is not None else signal.default_int_handler)
    if caught:
        raise KeyboardInterrupt
