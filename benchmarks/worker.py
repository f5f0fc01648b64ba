"""One benchmark stage in a fresh process (started by ``benchmarks/run.py``; not for direct use).

``python benchmarks/worker.py STAGE --model M.ifc --result R.json --tmp DIR [--anns A.pkl]``

Stages:

* ``generate``: write the sample tower ``--storeys N`` (facade panels on) to ``--model``.
* ``open`` / ``open_lazy``: ``ifcopenshell.open(path)`` / ``ifcopenshell.open(path, lazy=True)``.
* ``pipeline``: the screening stages one after the other, each timed: read, derive, every
  plugin, assessment, property-set annotations, streamed write-back (planned on the reader's
  open file, as ``swayscreen screen --out`` does), summary, HTML report (first call,
  plot-library import included, then a second call for the warm cost).
* ``naive``: open, tessellate every IfcSlab/IfcWall/IfcColumn with the geometry iterator
  (world coordinates, 2 threads), re-serialise the whole file with ``file.write``.
* ``reserialise``: the reference writer ``write_annotated_reserialise`` with the same
  annotations as the pipeline (pickled by the pipeline stage).

Each stage writes a JSON object to ``--result``: wall seconds ``NAME_s`` (``time.perf_counter``)
and CPU seconds ``NAME_cpu_s`` (``time.process_time``, all threads) around each call only, and
its own peak resident memory ``maxrss_mb`` (``resource.getrusage``). The driver adds the wall
and CPU time of the whole process. Nothing here is imported by the package or the tests.
"""
from __future__ import annotations

import argparse
import json
import os
import pickle
import resource
import sys
import time
from datetime import datetime, timezone
from pathlib import Path

WHEN = datetime(2025, 1, 1, tzinfo=timezone.utc)  # fixed, so every run writes the same sets
NAIVE_TYPES = ("IfcSlab", "IfcWall", "IfcColumn")
NAIVE_THREADS = 2


class _Clock:
    """Wall (``perf_counter``) and CPU (``process_time``, all threads) seconds since start."""

    def __init__(self) -> None:
        self.w, self.c = time.perf_counter(), time.process_time()

    def into(self, out: dict, name: str) -> None:
        out[f"{name}_s"] = time.perf_counter() - self.w
        out[f"{name}_cpu_s"] = time.process_time() - self.c


def _maxrss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # Linux: KiB


def stage_generate(a) -> dict:
    t0 = time.perf_counter()
    from swayscreen.sample_models.generate import generate_tower

    f = generate_tower(a.storeys, facade_panels=True, path=a.model)
    gen_s = time.perf_counter() - t0
    return {"generate_s": gen_s, "instances": sum(1 for _ in f), "file_bytes": os.path.getsize(a.model)}


def stage_open(a, lazy: bool) -> dict:
    out: dict = {}
    c = _Clock()
    import ifcopenshell

    c.into(out, "import")
    out["maxrss_before_mb"] = _maxrss_mb()
    c = _Clock()
    f = ifcopenshell.open(a.model, lazy=True) if lazy else ifcopenshell.open(a.model)
    c.into(out, "open")
    out["maxrss_mb"] = _maxrss_mb()
    del f
    return out


class _CpuPlugin:
    """A plugin as it is, with the CPU seconds of its ``run`` added to ``cpu``."""

    def __init__(self, plugin, cpu: dict[str, float]) -> None:
        self._plugin, self._cpu = plugin, cpu

    def __getattr__(self, name: str):
        return getattr(self._plugin, name)

    def run(self, ctx):
        c = time.process_time()
        try:
            return self._plugin.run(ctx)
        finally:
            key = f"plugin:{self._plugin.name}"
            self._cpu[key] = self._cpu.get(key, 0.0) + time.process_time() - c


def stage_pipeline(a) -> dict:
    out: dict = {}
    c = _Clock()
    from swayscreen.pipeline import outputs, reading, screening, writing

    c.into(out, "import")

    c = _Clock()
    plugins, settings = screening.load_plugins_and_settings(None)
    c.into(out, "setup")

    c = _Clock()
    takeoff, source = reading.read_model_and_source(a.model, settings["levels"])
    c.into(out, "read")

    # Wall seconds of derive and of each plugin come from screen_building's own timings_s;
    # CPU seconds from thin wrappers (the pipeline code is not changed).
    cpu: dict[str, float] = {}
    derive_stick = screening.derive_stick

    def timed_derive(*args, **kwargs):
        t = time.process_time()
        try:
            return derive_stick(*args, **kwargs)
        finally:
            cpu["derive"] = cpu.get("derive", 0.0) + time.process_time() - t

    screening.derive_stick = timed_derive
    wrapped = [_CpuPlugin(p, cpu) for p in plugins]
    buildings = []
    wall: dict[str, float] = {}
    assess = assess_cpu = 0.0
    for b in takeoff.buildings:
        c = _Clock()
        tmp: dict = {}
        cpu_before = sum(cpu.values())
        bs = screening.screen_building(b, settings, wrapped)
        c.into(tmp, "total")
        for k, v in bs.timings_s.items():
            wall[k] = wall.get(k, 0.0) + v
        assess += tmp["total_s"] - sum(bs.timings_s.values())  # ordering, contexts, assessment
        assess_cpu += tmp["total_cpu_s"] - (sum(cpu.values()) - cpu_before)
        buildings.append(bs)
    screening.derive_stick = derive_stick
    for k, v in wall.items():
        out[f"{k}_s"] = v
        out[f"{k}_cpu_s"] = cpu.get(k, 0.0)
    out["assess_s"], out["assess_cpu_s"] = assess, assess_cpu
    out["buildings"] = len(buildings)
    out["statuses"] = [bs.assessment.status for bs in buildings]
    out["plugin_failures"] = [f"{f.plugin}: {f.message}" for bs in buildings for f in bs.failures]
    run = screening.ScreeningRun(takeoff, settings, tuple(buildings), tuple(plugins), {"read": out["read_s"]})

    c = _Clock()
    anns = outputs.annotations_for(run, when=WHEN)
    c.into(out, "annotate")
    if a.anns:
        with open(a.anns, "wb") as fh:
            pickle.dump(anns, fh)

    dst = Path(a.tmp) / "annotated.ifc"
    c = _Clock()  # planned on the reader's open file, as `swayscreen screen --out` does
    rep = writing.write_annotated(Path(a.model), dst, anns, owner_prefix=outputs.PSET_PREFIX, source=source)
    c.into(out, "write")
    del source  # released after the write, as in the pipeline
    out["write_reused_parse"] = rep.reused_parse
    out["write_added"] = rep.instances_added
    out["write_removed"] = rep.instances_removed
    out["psets_written"] = rep.psets_written

    try:
        from swayscreen.pipeline.summary import build_summary
    except ImportError as exc:  # a module still being written elsewhere
        out["summary_error"] = str(exc)
    else:
        c = _Clock()
        json.dumps(build_summary(run, when=WHEN), default=str)
        c.into(out, "summary")

    out["mpl_imported_before_report"] = "matplotlib" in sys.modules
    from swayscreen.pipeline.report import render_report

    c = _Clock()
    html = render_report(run, when=WHEN)
    c.into(out, "report")
    c = _Clock()
    render_report(run, when=WHEN)
    c.into(out, "report_warm")
    out["report_bytes"] = len(html.encode("utf-8"))
    out["maxrss_mb"] = _maxrss_mb()

    if a.verify:  # untimed, after the memory reading: the appended copy opens and adds up
        import ifcopenshell

        copy = ifcopenshell.open(str(dst))
        n = sum(1 for _ in copy)
        ours = [p for p in copy.by_type("IfcPropertySet") if (p.Name or "").startswith(outputs.PSET_PREFIX + "_")]
        out["verify"] = {
            "instances_out": n,
            "expected": None if a.instances is None else a.instances - rep.instances_removed + rep.instances_added,
            "our_psets": len(ours),
            "psets_written": rep.psets_written,
        }
    return out


def stage_naive(a) -> dict:
    out: dict = {}
    c = _Clock()
    import ifcopenshell
    import ifcopenshell.geom

    c.into(out, "import")
    c = _Clock()
    f = ifcopenshell.open(a.model)
    c.into(out, "open")

    c = _Clock()
    settings = ifcopenshell.geom.settings()
    settings.set("use-world-coords", True)
    elements = [e for typ in NAIVE_TYPES for e in f.by_type(typ)]
    it = ifcopenshell.geom.iterator(settings, f, NAIVE_THREADS, include=elements)
    shapes = verts = 0
    if it.initialize():
        while True:
            shape = it.get()
            shapes += 1
            verts += len(shape.geometry.verts) // 3
            if not it.next():
                break
    c.into(out, "tessellate")
    out["elements"] = len(elements)
    out["shapes"] = shapes
    out["vertices"] = verts

    c = _Clock()
    f.write(str(Path(a.tmp) / "reserialised.ifc"))
    c.into(out, "filewrite")
    out["maxrss_mb"] = _maxrss_mb()
    return out


def stage_reserialise(a) -> dict:
    from swayscreen.pipeline import outputs, writing

    with open(a.anns, "rb") as fh:
        anns = pickle.load(fh)
    out: dict = {}
    c = _Clock()
    writing.write_annotated_reserialise(Path(a.model), Path(a.tmp) / "reserialised.ifc", anns,
                                        owner_prefix=outputs.PSET_PREFIX)
    c.into(out, "reserialise")
    out["maxrss_mb"] = _maxrss_mb()
    return out


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("stage", choices=["generate", "open", "open_lazy", "pipeline", "naive", "reserialise"])
    p.add_argument("--model", required=True)
    p.add_argument("--result", required=True)
    p.add_argument("--tmp", default=".")
    p.add_argument("--anns")
    p.add_argument("--storeys", type=int)
    p.add_argument("--instances", type=int)
    p.add_argument("--verify", action="store_true")
    a = p.parse_args(argv)
    fn = {
        "generate": stage_generate,
        "open": lambda a: stage_open(a, lazy=False),
        "open_lazy": lambda a: stage_open(a, lazy=True),
        "pipeline": stage_pipeline,
        "naive": stage_naive,
        "reserialise": stage_reserialise,
    }[a.stage]
    result = fn(a)
    Path(a.result).write_text(json.dumps(result, indent=1, default=str))
    return 0


if __name__ == "__main__":
    sys.exit(main())
