#!/usr/bin/env python3
"""Profile ``swayscreen screen MODEL --out DIR`` with cProfile on a CPU-time clock.

    python benchmarks/profile_screen.py benchmarks/out/towers/tower_160.ifc [--top 40] [--save FILE.prof]

CPU time (``time.process_time``) instead of wall time keeps the profile meaningful on a busy
machine. Prints the top functions by cumulative and by own time, and a one-line breakdown
by module folder (pipeline, plugins, ifcopenshell, matplotlib, numpy/scipy, import machinery).
"""
from __future__ import annotations

import argparse
import cProfile
import io
import pstats
import sys
import tempfile
import time
from pathlib import Path


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("model", type=Path)
    p.add_argument("--top", type=int, default=40)
    p.add_argument("--save", type=Path, help="also write the raw profile here (for snakeviz, pstats)")
    p.add_argument("--command", default="screen", choices=["screen", "takeoff"])
    a = p.parse_args(argv)

    with tempfile.TemporaryDirectory(prefix="swayscreen-profile-") as out:
        args = [a.command, str(a.model)] + (["--out", out] if a.command == "screen" else [])
        prof = cProfile.Profile(time.process_time)
        t0, c0 = time.perf_counter(), time.process_time()
        prof.enable()
        from swayscreen.pipeline.cli import main as cli_main  # imports are part of the cost

        stdout, sys.stdout = sys.stdout, io.StringIO()
        try:
            rc = cli_main(args)
        finally:
            sys.stdout = stdout
        prof.disable()
        wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    print(f"swayscreen {' '.join(args[:2])}: exit {rc}, {wall:.2f} s wall, {cpu:.2f} s CPU (profiled)")
    if a.save:
        prof.dump_stats(str(a.save))
    st = pstats.Stats(prof)
    buckets: dict[str, float] = {}
    for (path, _line, _fn), (_cc, _nc, tt, _ct, _callers) in st.stats.items():  # type: ignore[attr-defined]
        key = ("pipeline" if "/pipeline/" in path else "plugins" if "/plugins/" in path
               else "ifcopenshell" if "ifcopenshell" in path else "matplotlib" if "matplotlib" in path
               else "numpy/scipy" if ("numpy" in path or "scipy" in path) else "shapely" if "shapely" in path
               else "import machinery" if "importlib" in path or path.startswith("<frozen") else "other")
        buckets[key] = buckets.get(key, 0.0) + tt
    print("own CPU time by origin: " + ", ".join(f"{k} {v:.2f} s" for k, v in
                                                sorted(buckets.items(), key=lambda kv: -kv[1])))
    for order in ("cumulative", "tottime"):
        print(f"\n--- top {a.top} by {order} ---")
        st.sort_stats(order).print_stats(a.top)
    return 0


if __name__ == "__main__":
    sys.exit(main())
