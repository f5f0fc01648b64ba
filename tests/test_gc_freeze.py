"""The one-shot commands pause the cyclic garbage collector during the read and freeze the
takeoff afterwards (CPython's ``gc.freeze``, Python docs "gc — Garbage Collector interface");
results are the same, and nothing stays frozen once a command or a batch item is done."""
from __future__ import annotations

import gc

from swayscreen.pipeline.batch import screen_one
from swayscreen.pipeline.cli import main
from swayscreen.pipeline.screening import screen_file
from swayscreen.pipeline.summary import build_summary
from swayscreen.sample_models import sample_path

MODEL = sample_path("courtyard_12_mm.ifc")


def _strip(summary: dict) -> dict:
    summary = dict(summary)
    for k in ("generated", "timings_s", "run"):
        summary.pop(k, None)
    return summary


def test_frozen_screening_gives_the_same_results():
    plain = screen_file(MODEL)
    assert gc.get_freeze_count() == 0
    try:
        frozen = screen_file(MODEL, freeze_gc=True)
        assert gc.get_freeze_count() > 0 and gc.isenabled()
    finally:
        gc.unfreeze()
    assert _strip(build_summary(frozen)) == _strip(build_summary(plain))


def test_cli_and_batch_leave_nothing_frozen(tmp_path, capsys):
    assert main(["screen", str(MODEL), "--out", str(tmp_path / "o"), "--no-report"]) in (0, 1)
    assert gc.get_freeze_count() == 0 and gc.isenabled()
    item = screen_one(str(MODEL), None, str(tmp_path / "b"))
    assert item.status != "error", item.error
    assert gc.get_freeze_count() == 0 and gc.isenabled()
