#!/usr/bin/env python3
"""Time ``read_model`` against ``ifcopenshell.open`` on one file, in one process.

    python benchmarks/read_ratio.py [MODEL.ifc ...] [--runs 15]

Default model: the bundled 60-storey sample. Both calls run alternately ``--runs`` times after
one warm-up each (imports and first-call costs excluded); the best of each is reported with
the wall clock and with CPU time, and their ratio. ``read_model`` includes its own open of the
file (full below 8 MB, lazy above), so the ratio is (open + extraction) / open.
"""
from __future__ import annotations

import argparse
import time
from pathlib import Path


def measure(path: Path, runs: int) -> dict[str, float]:
    import ifcopenshell

    from swayscreen.pipeline.reading import read_model

    ifcopenshell.open(str(path))
    read_model(path)
    best = {"open_wall": 1e9, "open_cpu": 1e9, "read_wall": 1e9, "read_cpu": 1e9}
    for _ in range(runs):
        for key, fn in (("open", lambda: ifcopenshell.open(str(path))), ("read", lambda: read_model(path))):
            w, c = time.perf_counter(), time.process_time()
            fn()
            best[f"{key}_wall"] = min(best[f"{key}_wall"], time.perf_counter() - w)
            best[f"{key}_cpu"] = min(best[f"{key}_cpu"], time.process_time() - c)
    return best


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("models", nargs="*", type=Path)
    p.add_argument("--runs", type=int, default=15)
    a = p.parse_args(argv)
    if not a.models:
        from swayscreen.sample_models import sample_path

        a.models = [sample_path("residential_tower_60.ifc")]
    print(f"{'model':<32} {'MB':>6} {'open s':>8} {'read s':>8} {'ratio':>6}   (best of {a.runs}; wall | CPU)")
    for m in a.models:
        b = measure(m, a.runs)
        mb = m.stat().st_size / 1e6
        for clock in ("wall", "cpu"):
            o, r = b[f"open_{clock}"], b[f"read_{clock}"]
            print(f"{m.name:<32} {mb:6.1f} {o:8.4f} {r:8.4f} {r / o:6.2f}   {clock}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
