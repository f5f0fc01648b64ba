"""The one-shot commands pause the cyclic garbage collector during the read and freeze the
takeoff afterwards (CPython's ``gc.freeze``, Python docs "gc — Garbage Collector interface");
results are the same, and nothing stays frozen once a command or a batch item is done."""
from __future__ import annotations

import gc

from swayscreen.pipeline.batch import screen_one
from swayscreen.pipeline.cli import main
from swayscreen.pipeline import screening
from swayscreen.pipeline.screening import end_one_shot, screen_file
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
        assert len(screening._PARKED) == 1  # the open file waits for the end of the work
    finally:
        end_one_shot()
    assert gc.get_freeze_count() == 0 and not screening._PARKED
    assert _strip(build_summary(frozen)) == _strip(build_summary(plain))


def test_cli_and_batch_leave_nothing_frozen(tmp_path, capsys):
    assert main(["screen", str(MODEL), "--out", str(tmp_path / "o"), "--no-report"]) in (0, 1)
    assert gc.get_freeze_count() == 0 and gc.isenabled() and not screening._PARKED
    item = screen_one(str(MODEL), None, str(tmp_path / "b"))
    assert item.status != "error", item.error
    assert gc.get_freeze_count() == 0 and gc.isenabled() and not screening._PARKED


def test_the_command_exits_at_once_with_its_code_and_complete_outputs(tmp_path):
    """`swayscreen` leaves through os._exit after flushing: the exit code, the printed report
    and every output file are still complete."""
    import json
    import subprocess
    import sys

    out = tmp_path / "o"
    r = subprocess.run([sys.executable, "-m", "swayscreen.pipeline.cli", "screen", str(MODEL), "--out", str(out),
                        "--json"], capture_output=True, text=True, timeout=300)
    assert r.returncode in (0, 1), r.stderr
    printed = json.loads(r.stdout)  # all of it reached the pipe
    written = json.loads((out / "summary.json").read_text())
    assert printed["status"] == written["status"]
    assert (out / "report.html").read_text().rstrip().endswith("</html>")
    bad = subprocess.run([sys.executable, "-m", "swayscreen.pipeline.cli", "screen", str(tmp_path / "missing.ifc")],
                         capture_output=True, text=True, timeout=300)
    assert bad.returncode == 2 and "file not found" in bad.stderr
