"""Batch screening (process pool) and run history.

A broken model must not stop the others (issue brief: batch with one corrupt file exits with
the worst status and still writes the other results); parallel results equal serial ones.
"""
from __future__ import annotations

import json
import re
import shutil
from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest

from swayscreen.pipeline.batch import ranking, run_batch, screen_many
from swayscreen.pipeline.history import append_history
from swayscreen.pipeline.screening import screen_file

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_models"


@pytest.fixture(scope="module")
def models(tmp_path_factory):
    folder = tmp_path_factory.mktemp("models")
    a = folder / "scheme_a.ifc"
    b = folder / "scheme_b.ifc"
    shutil.copy(SAMPLES / "courtyard_12_m.ifc", a)
    shutil.copy(SAMPLES / "courtyard_12_mm.ifc", b)
    bad = folder / "scheme_broken.ifc"
    bad.write_bytes(a.read_bytes()[:5000])
    return [str(a), str(b), str(bad)]


def test_batch_with_a_corrupt_model(models, tmp_path, capsys):
    code = run_batch(models, settings_path=None, out_dir=tmp_path, jobs=2)
    out = capsys.readouterr().out
    assert code == 2  # worst status: one unusable input
    assert "scheme_broken.ifc" in out and "error" in out
    for stem in ("scheme_a", "scheme_b"):
        assert (tmp_path / stem / "summary.json").exists()
        assert (tmp_path / stem / "report.html").exists()
    assert not (tmp_path / "scheme_broken").exists() or not any((tmp_path / "scheme_broken").iterdir())


def test_parallel_equals_serial(models, tmp_path):
    good = models[:2]
    serial = screen_many(good, settings_path=None, out_dir=tmp_path / "s", jobs=1)
    parallel = screen_many(good, settings_path=None, out_dir=tmp_path / "p", jobs=2)
    for a, b in zip(serial, parallel):
        assert a.status == b.status
        assert a.t1_s == b.t1_s
        assert a.worst_ratio == b.worst_ratio
        assert json.dumps(a.summary["buildings"], sort_keys=True) == json.dumps(b.summary["buildings"], sort_keys=True)
    # the metre and millimetre copies of one building screen alike (unit conversion on read)
    assert serial[0].t1_s == pytest.approx(serial[1].t1_s, rel=1e-9)
    ranked = ranking(serial + parallel)
    assert ranked[0].worst_ratio >= ranked[-1].worst_ratio


def test_history_reports_change_between_exports(tmp_path):
    model = tmp_path / "scheme.ifc"
    shutil.copy(SAMPLES / "courtyard_12_m.ifc", model)
    hist = tmp_path / "history.jsonl"
    t0 = datetime(2026, 3, 1, tzinfo=timezone.utc)
    first = append_history(hist, screen_file(model), when=t0)
    assert first[0].startswith("History: first run of scheme.ifc")
    # a heavier scheme (more superimposed dead load stands in for an export change): T = 2 pi sqrt(m/k)
    heavy = tmp_path / "heavy.toml"
    heavy.write_text("[loads]\nsuperimposed_dead_kpa = 4.0\n")
    lines = append_history(hist, screen_file(model, heavy), when=t0 + timedelta(days=1))
    t1 = next(x for x in lines if ": T1 " in x)
    change = float(re.search(r"\(([+-][0-9.]+) %\)", t1).group(1))
    assert change > 1.0
    records = [json.loads(x) for x in hist.read_text().splitlines()]
    assert len(records) == 2 and records[0]["sha256"] == records[1]["sha256"]
