"""summary.json: the versioned, machine-readable result of one screening run.

The schema is in ``pipeline/data/summary.schema.json`` (JSON Schema 2020-12) and the tests
validate every summary against it. Bump ``SUMMARY_SCHEMA_VERSION`` (major for removals or
renames, minor for additions) whenever the shape changes, and document it in the schema.
"""
from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import numpy as np

from . import __version__
from .console import CAUTION
from .fileio import sha256_file
from .plugin_api import Check

__all__ = ["SUMMARY_SCHEMA_VERSION", "build_summary", "takeoff_json", "to_jsonable", "check_dict"]

SUMMARY_SCHEMA_VERSION = "1.0"


def to_jsonable(obj: Any, depth: int = 0) -> Any:
    """Dataclasses, numpy values, tuples and mappings to plain JSON values (geometry dropped)."""
    if depth > 12:
        return None
    if obj is None or isinstance(obj, (bool, str, int)):
        return obj
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, np.generic):
        return to_jsonable(obj.item(), depth + 1)
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist(), depth + 1)
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        return {f.name: to_jsonable(getattr(obj, f.name), depth + 1) for f in dataclasses.fields(obj)
                if not _is_geometry(getattr(obj, f.name))}
    if isinstance(obj, Mapping):
        return {str(k): to_jsonable(v, depth + 1) for k, v in obj.items() if not _is_geometry(v)}
    if isinstance(obj, (list, tuple, set, frozenset)):
        return [to_jsonable(v, depth + 1) for v in obj]
    if _is_geometry(obj):
        return None
    return str(obj)


def _is_geometry(v: Any) -> bool:
    return type(v).__module__.startswith("shapely")


def check_dict(c: Check) -> dict[str, Any]:
    return {
        "criterion": c.criterion,
        "method": c.method,
        "value": _num(c.value),
        "limit": _num(c.limit),
        "unit": c.unit,
        "ratio": _num(c.ratio),
        "passes": bool(c.passes),
        "return_period_yr": _num(c.return_period_yr),
        "direction_deg": _num(c.direction_deg),
        "floor": c.floor,
        "note": c.note,
        "valid": bool(c.valid),
    }


def _num(v: Any) -> float | None:
    if v is None:
        return None
    v = float(v)
    return v if math.isfinite(v) else None


def _modes(results: Mapping[str, Any]) -> list[dict[str, Any]]:
    modal = results.get("modes")
    if modal is None:
        return []
    return [
        {
            "index": m.index,
            "period_s": _num(m.period_s),
            "frequency_hz": _num(m.frequency_hz),
            "kind": m.kind,
            "shares": {k: _num(v) for k, v in m.shares.items()},
            "participation": {k: _num(v) for k, v in m.participation.items()},
            "generalized_mass_kg": _num(m.generalized_mass_kg),
        }
        for m in modal.modes
    ]


def _empirical(results: Mapping[str, Any]) -> list[dict[str, Any]]:
    emp = results.get("empirical_periods")
    if emp is None:
        return []
    items = getattr(emp, "periods", emp)
    return [
        {"method": e.method, "period_s": _num(e.period_s), "source": e.source, "valid": bool(e.valid), "note": e.note}
        for e in items
    ]


def _acceleration_cases(results: Mapping[str, Any]) -> list[dict[str, Any]]:
    out = []
    for key in ("accel_en", "accel_nbcc"):
        res = results.get(key)
        if res is None:
            continue
        for c in res.cases:
            out.append({
                "method": c.method, "return_period_yr": _num(c.return_period_yr),
                "direction_deg": _num(c.direction_deg), "response": c.response, "mode": c.mode_index,
                "frequency_hz": _num(c.frequency_hz), "damping_ratio": _num(c.damping_ratio),
                "rms_mg": _num(c.rms_mg), "peak_mg": _num(c.peak_mg), "floor": c.top_floor,
                "valid": bool(c.valid), "note": c.note,
            })
    return out


def _accelerations(checks: list[Check]) -> list[dict[str, Any]]:
    return [
        {
            "method": c.method, "return_period_yr": _num(c.return_period_yr), "direction_deg": _num(c.direction_deg),
            "floor": c.floor, "peak_mg": _num(c.value), "limit_mg": _num(c.limit), "criterion": c.criterion,
            "passes": bool(c.passes), "note": c.note, "valid": bool(c.valid),
        }
        for c in checks if c.unit == "mg"
    ]


def building_summary(b) -> dict[str, Any]:
    stick = b.derived.stick
    checks = list(b.assessment.checks)
    gov = b.assessment.governing
    storeys = []
    centres = (stick.stiffness_centres_m or ()) if stick is not None else ()
    if b.derived.levels:
        for i, lv in enumerate(b.derived.levels):
            storeys.append({
                "name": lv.name, "global_id": lv.storey_id, "elevation_m": _num(lv.elevation_m),
                "mass_kg": _num(lv.mass_kg), "mass_centre_m": [_num(v) for v in lv.mass_centre_m],
                "stiffness_centre_m": [_num(v) for v in centres[i]] if i < len(centres) else None,
            })
    return {
        "name": b.building.name,
        "global_id": b.building.global_id,
        "status": b.assessment.status,
        "height_m": _num(stick.height_m) if stick else None,
        "total_mass_kg": _num(b.derived.total_mass_kg) if b.derived.levels else None,
        "modes": _modes(b.results),
        "empirical": _empirical(b.results),
        "accelerations": _accelerations(checks),
        "acceleration_cases": _acceleration_cases(b.results),
        "drift": [check_dict(c) for c in checks if c.unit != "mg"],
        "checks": [check_dict(c) for c in checks],
        "governing": check_dict(gov) if gov is not None else None,
        "damper": to_jsonable(b.results.get("damping_advice")),
        "storeys": storeys,
        "reasons": list(b.assessment.reasons),
        "missing": list(b.derived.missing),
        "skipped": list(b.skipped),
        "warnings": list(b.building.warnings) + list(b.derived.warnings),
    }


def build_summary(run, *, when: datetime | None = None) -> dict[str, Any]:
    """The summary of a run; top-level ``modes`` ... ``governing`` repeat the worst building's."""
    when = when or datetime.now(timezone.utc)
    src = Path(run.takeoff.source_path)
    buildings = [building_summary(b) for b in run.buildings]
    order = {"flagged": 0, "incomplete": 1, "pass": 2}
    primary = min(buildings, key=lambda d: order.get(d["status"], 3)) if buildings else {}
    return {
        "schema_version": SUMMARY_SCHEMA_VERSION,
        "tool": {"name": "swayscreen", "version": __version__},
        "date": when.isoformat(timespec="seconds"),
        "model": {
            "file": src.name, "sha256": sha256_file(src) if src.exists() else None,
            "schema": run.takeoff.schema, "length_unit": run.takeoff.length_unit,
            "true_north_deg": _num(run.takeoff.true_north_deg),
        },
        "settings": {"source": run.settings.source, "digest": run.settings.digest()},
        "status": run.status,
        "caution": CAUTION.replace("\n", " "),
        "modes": primary.get("modes", []),
        "empirical": primary.get("empirical", []),
        "accelerations": primary.get("accelerations", []),
        "drift": primary.get("drift", []),
        "governing": primary.get("governing"),
        "buildings": buildings,
        "warnings": list(run.takeoff.warnings),
    }


def takeoff_json(base: dict[str, Any], takeoff, derived_list) -> dict[str, Any]:
    """Extend the reader's takeoff dict with masses, stiffness centres and cores (issue 3 keys)."""
    for bdict, d in zip(base.get("buildings", []), derived_list):
        stick = d.stick
        levels = {lv.storey_id: (i, lv) for i, lv in enumerate(d.levels)}
        centres = stick.stiffness_centres_m if stick else ()
        for s in bdict.get("storeys", []):
            hit = levels.get(s.get("global_id"))
            if hit is None:
                s.update({"mass_kg": None, "mass_centre_m": None, "stiffness_centre_m": None,
                          "mass_components_kg": {}})
                continue
            i, lv = hit
            s["mass_kg"] = _num(lv.mass_kg)
            s["mass_centre_m"] = [_num(v) for v in lv.mass_centre_m]
            s["stiffness_centre_m"] = [_num(v) for v in centres[i]] if i < len(centres) else None
            s["mass_components_kg"] = {k: _num(v) for k, v in lv.mass_components_kg}
        bdict["total_mass_kg"] = _num(d.total_mass_kg) if d.levels else None
        bdict["gross_volume_m3"] = _num(d.gross_volume_m3)
        bdict["cores"] = [
            {"id": c.id, "wall_ids": list(c.wall_ids), "closed": bool(c.closed), "area_m2": _num(c.section.area_m2),
             "ixx_m4": _num(c.section.ixx_m4), "iyy_m4": _num(c.section.iyy_m4), "j_m4": _num(c.section.j_m4),
             "cw_m6": _num(c.section.cw_m6), "note": c.note}
            for c in (stick.cores if stick else ())
        ]
        bdict["materials_used"] = list(d.materials_used)
        bdict["missing"] = list(d.missing)
        bdict.setdefault("warnings", [])
        bdict["warnings"] = list(bdict["warnings"]) + list(d.warnings)
    return base
