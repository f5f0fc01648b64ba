#!/usr/bin/env python3
"""Scaling benchmark of the screening pipeline against ``ifcopenshell.open`` and a naive baseline.

    python benchmarks/run.py [--sizes 20 40 80 160] [--runs 3] [--out benchmarks/out]

Generates (or reuses from ``OUT/towers/``) the sample towers with facade panels from
``swayscreen.sample_models.generate.generate_tower``, then for every run and size starts
fresh processes for: ``ifcopenshell.open`` (full and lazy), the pipeline stages one by one
(read, derive, each plugin, assessment, annotations, streamed write-back, summary, report),
``swayscreen screen MODEL --out DIR --no-report`` end to end (the issue times the HTML report
separately; the targets use this run) and with the report (for information), and the naive
baseline (tessellate every
IfcSlab/IfcWall/IfcColumn with the geometry iterator, then ``file.write``) plus the
re-serialising reference writer. All of them run interleaved in the same session, so the
ratios to ``open`` hold on a noisy machine. Prints medians, ratios, fitted exponents and
the issue-8 targets; writes ``OUT/results.json``. Not part of the test suite.

Peak memory is each child's ``ru_maxrss`` (``os.wait4``); this driver imports only the
standard library so that its own size never leaks into a child's figure.
"""
from __future__ import annotations

import argparse
import hashlib
import json
import os
import platform
import shutil
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
WORKER = HERE / "worker.py"
GENERATOR = REPO / "sample_models" / "generate.py"
sys.path.insert(0, str(HERE))

from analysis import analyse, table, targets_text  # noqa: E402  (a sibling helper, standard library only)

STAGES = ("open", "open_lazy", "pipeline", "e2e", "e2e_norep", "naive", "reserialise")
BLAS_VARS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def _spawn(cmd: list[str], log: Path) -> tuple[int, dict]:
    """Run ``cmd``; return its exit code and wall seconds, CPU seconds and peak RSS (MB) of that child alone."""
    with open(log, "wb") as fh:
        t0 = time.perf_counter()
        p = subprocess.Popen(cmd, stdout=fh, stderr=subprocess.STDOUT, cwd=REPO)
        _, status, usage = os.wait4(p.pid, 0)
        wall = time.perf_counter() - t0
    p.returncode = os.waitstatus_to_exitcode(status)  # reaped by wait4; keep Popen consistent
    return p.returncode, {"wall_s": wall, "cpu_s": usage.ru_utime + usage.ru_stime,
                          "maxrss_child_mb": usage.ru_maxrss / 1024.0}


def _worker(stage: str, model: Path, tmp: Path, *extra: str) -> dict:
    result = tmp / f"{stage}.json"
    result.unlink(missing_ok=True)
    rc, proc = _spawn([sys.executable, str(WORKER), stage, "--model", str(model), "--result", str(result),
                       "--tmp", str(tmp), *extra], tmp / f"{stage}.log")
    if rc != 0 or not result.exists():
        tail = (tmp / f"{stage}.log").read_text(errors="replace").strip().splitlines()[-3:]
        return {"error": f"exit {rc}: " + " | ".join(tail), **proc}
    out = json.loads(result.read_text()) | proc
    if stage in ("open", "open_lazy", "naive"):  # nothing untimed runs after the measured work
        out["maxrss_mb"] = proc["maxrss_child_mb"]
    return out


def _screen_cmd() -> list[str]:
    exe = Path(sys.executable).with_name("swayscreen")
    return [str(exe)] if exe.exists() else [sys.executable, "-m", "swayscreen.pipeline.cli"]


def _e2e(model: Path, tmp: Path, report: bool = True) -> dict:
    """``swayscreen screen MODEL --out DIR`` as a fresh process (``--no-report`` when not ``report``)."""
    name = "e2e" if report else "e2e_norep"
    out_dir = tmp / f"{name}-out"
    shutil.rmtree(out_dir, ignore_errors=True)
    cmd = [*_screen_cmd(), "screen", str(model), "--out", str(out_dir)] + ([] if report else ["--no-report"])
    rc, proc = _spawn(cmd, tmp / f"{name}.log")
    res = {**proc, "maxrss_mb": proc["maxrss_child_mb"], "exit_code": rc,
           "outputs": sorted(p.name for p in out_dir.iterdir()) if out_dir.is_dir() else []}
    if rc not in (0, 1):  # 0 passes, 1 flagged; anything else is a failed run
        tail = (tmp / f"{name}.log").read_text(errors="replace").strip().splitlines()[-3:]
        res = {"error": f"exit {rc}: " + " | ".join(tail), "exit_code": rc, **proc}
    elif report == ("report.html" not in res["outputs"]):
        res = {"error": f"outputs {res['outputs']} do not match report={report}", "exit_code": rc, **proc}
    shutil.rmtree(out_dir, ignore_errors=True)
    return res


def _generator_digest() -> str:
    return hashlib.sha256(GENERATOR.read_bytes()).hexdigest()[:16]


def ensure_tower(n: int, towers: Path, regenerate: bool, log) -> dict:
    """The cached tower of ``n`` storeys, generated in a child process when missing or stale."""
    towers.mkdir(parents=True, exist_ok=True)
    model, meta_path = towers / f"tower_{n}.ifc", towers / f"tower_{n}.json"
    digest = _generator_digest()
    if not regenerate and model.exists() and meta_path.exists():
        meta = json.loads(meta_path.read_text())
        if meta.get("generator") == digest and meta.get("file_bytes") == model.stat().st_size:
            return meta
    log(f"generating the {n}-storey tower ...")
    result = towers / f"tower_{n}.gen.json"
    rc, proc = _spawn([sys.executable, str(WORKER), "generate", "--model", str(model), "--result", str(result),
                       "--storeys", str(n)], towers / f"tower_{n}.gen.log")
    if rc != 0:
        raise SystemExit(f"generating the {n}-storey tower failed; see {towers / f'tower_{n}.gen.log'}")
    meta = json.loads(result.read_text()) | {"storeys": n, "generator": digest, "path": str(model)}
    meta_path.write_text(json.dumps(meta, indent=1))
    log(f"  {model.name}: {meta['file_bytes'] / 1e6:.1f} MB, {meta['instances']} instances, {proc['wall_s']:.1f} s")
    return meta


def _warm_cache(path: Path) -> None:
    with open(path, "rb") as fh:
        while fh.read(1 << 22):
            pass


def _git_commit() -> str | None:
    try:
        return subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=REPO, capture_output=True, text=True,
                              check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return None


def _dirty_files() -> list[str]:
    """Uncommitted changes to the measured code (the benchmark times the working tree)."""
    try:
        st = subprocess.run(["git", "status", "--porcelain", "--", "pipeline", "plugins"], cwd=REPO,
                            capture_output=True, text=True, check=True).stdout
    except (OSError, subprocess.CalledProcessError):
        return []
    return [line[3:] for line in st.splitlines()]


def _versions() -> dict:
    code = "import ifcopenshell, numpy, scipy, shapely, matplotlib; print(ifcopenshell.version, numpy.__version__, " \
           "scipy.__version__, shapely.__version__, matplotlib.__version__)"
    try:
        v = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    except (OSError, subprocess.CalledProcessError):
        return {}
    return dict(zip(("ifcopenshell", "numpy", "scipy", "shapely", "matplotlib"), v))


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description="Scaling benchmark of swayscreen (see benchmarks/README.md).")
    p.add_argument("--sizes", type=int, nargs="+", default=[20, 40, 80, 160], help="storeys (default: %(default)s)")
    p.add_argument("--runs", type=int, default=3, help="fresh-process runs per size and stage (default: %(default)s)")
    p.add_argument("--runs-largest", type=int, help="runs for the largest size only (default: --runs)")
    p.add_argument("--out", type=Path, default=HERE / "out", help="cache and results folder (default: benchmarks/out)")
    p.add_argument("--stages", nargs="+", choices=STAGES, default=list(STAGES),
                   help="stages to run (default: all; open is always run, it is the reference)")
    p.add_argument("--regenerate", action="store_true", help="regenerate the towers even when cached")
    p.add_argument("--blas-threads", type=int, metavar="N",
                   help="set OPENBLAS/OMP/MKL_NUM_THREADS=N for every child (default: leave the environment as is)")
    p.add_argument("--clock", choices=["wall", "cpu"], default="wall",
                   help="times in the printed table: wall clock or CPU seconds (default: %(default)s; "
                        "both are recorded, and the targets are printed for both)")
    a = p.parse_args(argv)

    t_start = time.perf_counter()
    # Children cache their bytecode as an installed copy does (pip compiles on install): a
    # PYTHONDONTWRITEBYTECODE=1 in the environment would make every fresh process compile
    # our modules again (~0.07 s) and charge that to the screening, never to the open.
    bytecode_env = os.environ.pop("PYTHONDONTWRITEBYTECODE", None)
    if a.blas_threads is not None:  # inherited by every child process
        for var in BLAS_VARS:
            os.environ[var] = str(a.blas_threads)
    out: Path = a.out.resolve()
    out.mkdir(parents=True, exist_ok=True)
    stages = ["open"] + [s for s in STAGES if s in a.stages and s != "open"]
    if "reserialise" in stages and "pipeline" not in stages:
        stages.remove("reserialise")  # it reuses the pipeline's annotations
    sizes = sorted(set(a.sizes))

    def log(msg: str) -> None:
        print(msg, flush=True)

    results: dict = {
        "meta": {
            "date": time.strftime("%Y-%m-%d %H:%M:%S"), "python": platform.python_version(),
            "machine": platform.machine(), "cpus": os.cpu_count(), "commit": _git_commit(),
            "uncommitted": _dirty_files(),
            "versions": _versions(), "runs": a.runs, "runs_largest": a.runs_largest or a.runs,
            "stages": stages, "command": " ".join([Path(sys.argv[0]).name, *sys.argv[1:]]),
            "load_average_start": os.getloadavg(),
            "blas_env": {v: os.environ.get(v) for v in BLAS_VARS},
            "pythondontwritebytecode_removed": bytecode_env,
        },
        "sizes": {},
    }
    t_gen = time.perf_counter()
    metas = {n: ensure_tower(n, out / "towers", a.regenerate, log) for n in sizes}
    results["meta"]["generate_s"] = time.perf_counter() - t_gen
    for n in sizes:
        results["sizes"][str(n)] = {"storeys": n, "file_bytes": metas[n]["file_bytes"],
                                    "instances": metas[n].get("instances"), "runs": []}

    max_runs = max(a.runs, a.runs_largest or 0)
    for r in range(max_runs):
        for n in sizes:
            want = (a.runs_largest or a.runs) if n == sizes[-1] else a.runs
            if r >= want:
                continue
            model = Path(metas[n]["path"])
            tmp = out / "tmp" / f"{n}"
            shutil.rmtree(tmp, ignore_errors=True)
            tmp.mkdir(parents=True)
            _warm_cache(model)
            anns = out / f"annotations_{n}.pkl"
            run: dict = {}
            t_run = time.perf_counter()
            for stage in stages:
                if stage in ("e2e", "e2e_norep"):
                    run[stage] = _e2e(model, tmp, report=stage == "e2e")
                elif stage == "pipeline":
                    extra = ["--anns", str(anns)]
                    if r == 0:
                        extra += ["--verify"] + (["--instances", str(metas[n]["instances"])]
                                                 if metas[n].get("instances") else [])
                    run[stage] = _worker(stage, model, tmp, *extra)
                elif stage == "reserialise":
                    run[stage] = _worker(stage, model, tmp, "--anns", str(anns)) if anns.exists() else \
                        {"error": "no annotations (the pipeline stage failed)"}
                else:
                    run[stage] = _worker(stage, model, tmp)
                if "error" in run[stage]:
                    log(f"  {n} storeys, run {r + 1}: {stage} failed: {run[stage]['error']}")
            results["sizes"][str(n)]["runs"].append(run)
            shutil.rmtree(tmp, ignore_errors=True)
            brief = ", ".join(f"{s} {run[s]['wall_s']:.1f}" for s in stages if "wall_s" in run[s])
            log(f"run {r + 1}/{want}, {n} storeys: {time.perf_counter() - t_run:.0f} s (process wall s: {brief})")

    results["meta"]["total_s"] = time.perf_counter() - t_start
    results["meta"]["load_average_end"] = os.getloadavg()
    analyses = {clock: analyse(results, clock) for clock in ("wall", "cpu")}
    results["analysis"] = analyses
    (out / "results.json").write_text(json.dumps(results, indent=1, default=str))
    print()
    print(table(results, analyses[a.clock]))
    print()
    print(targets_text(analyses["cpu" if a.clock == "wall" else "wall"]))
    print()
    m = results["meta"]
    cpus = os.cpu_count() or 1
    loads = (m["load_average_start"][0], m["load_average_end"][0])
    if max(loads) > cpus:
        print(f"Note: the 1-minute load average was {loads[0]:.1f} at the start and {loads[1]:.1f} at the end on "
              f"{cpus} CPUs: other work competed for the processors, so wall-clock times are inflated; "
              "the CPU-time targets are the steadier reading.")
    print(f"Total benchmark time {m['total_s']:.0f} s (tower generation {m['generate_s']:.0f} s); "
          f"results in {out / 'results.json'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
