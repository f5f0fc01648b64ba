"""Run history: one JSON line per run, and the change against the previous run of the same model.

A team runs swayscreen after every export; the history shows which export made the sway
worse. Each line holds the model name, the file's SHA-256, the date, the first periods,
the peak of every check, and the status.
"""
from __future__ import annotations

import json
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from .fileio import atomic_write_text, sha256_file

__all__ = ["history_record", "append_history", "compare"]


def history_record(run, *, when: datetime | None = None) -> dict[str, Any]:
    when = when or datetime.now(timezone.utc)
    src = Path(run.takeoff.source_path)
    rec: dict[str, Any] = {
        "model": src.name,
        "sha256": sha256_file(src),
        "date": when.isoformat(timespec="seconds"),
        "status": run.status,
        "buildings": {},
    }
    for b in run.buildings:
        modes = b.results.get("modes")
        periods = [round(m.period_s, 4) for m in modes.modes[:3]] if modes is not None else []
        checks = {f"{c.criterion} | {c.method}": round(c.value, 4) for c in b.assessment.checks}
        rec["buildings"][b.building.name or b.building.global_id] = {
            "periods_s": periods,
            "checks": checks,
            "status": b.assessment.status,
        }
    return rec


def compare(previous: dict[str, Any], current: dict[str, Any]) -> list[str]:
    """Plain lines describing what changed between two records of the same model."""
    lines = [f"Change since the run of {previous['date']} (status {previous['status']} -> {current['status']}):"]
    if previous.get("sha256") == current.get("sha256"):
        lines.append("  the model file is unchanged")
    for name, cur in current["buildings"].items():
        prev = previous["buildings"].get(name)
        if prev is None:
            lines.append(f"  {name}: new building")
            continue
        for i, (a, b) in enumerate(zip(prev["periods_s"], cur["periods_s"]), start=1):
            if a:
                lines.append(f"  {name}: T{i} {a:.3f} s -> {b:.3f} s ({100 * (b - a) / a:+.1f} %)")
        for key, b in cur["checks"].items():
            a = prev["checks"].get(key)
            if a is None:
                continue
            if a and abs(b - a) / abs(a) >= 0.005:
                word = "worse" if b > a else "better"
                lines.append(f"  {name}: {key}: {a:.2f} -> {b:.2f} ({100 * (b - a) / a:+.1f} %, {word})")
    return lines


def append_history(path: Path, run, *, when: datetime | None = None) -> list[str]:
    """Append this run's record to ``path`` (JSON lines) and return the comparison lines."""
    rec = history_record(run, when=when)
    previous = None
    existing = ""
    if path.exists():
        existing = path.read_text(encoding="utf-8")
        for line in existing.splitlines():
            try:
                old = json.loads(line)
            except json.JSONDecodeError:
                continue
            if old.get("model") == rec["model"]:
                previous = old
    if existing and not existing.endswith("\n"):
        existing += "\n"
    atomic_write_text(path, existing + json.dumps(rec, sort_keys=True) + "\n")
    if previous is None:
        return [f"History: first run of {rec['model']} recorded in {path}"]
    return compare(previous, rec)
