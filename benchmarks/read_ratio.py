#!/usr/bin/env python3
"""Time ``read_model`` against ``ifcopenshell.open`` on one file, in one process.

    python benchmarks/read_ratio.py [MODEL.ifc ...] [--runs 15] [--floor] [--probe]

Default model: the bundled 60-storey sample. Both calls run alternately ``--runs`` times after
one warm-up each (imports and first-call costs excluded); the best of each is reported with
the wall clock and with CPU time, and their ratio. ``read_model`` includes its own open of the
file (full below 8 MB, lazy above), so the ratio is (open + extraction) / open.

``--floor`` also times the least any reader built on ifcopenshell's entities must do on the
same file, whatever its own arithmetic (see :func:`entity_floor` and :func:`assembly_floor`):

* *visit*: open the file, then for every slab, wall and column read its GlobalId, placement,
  representations and their items, and the storey containing it (references only: no
  coordinate, profile or material is read);
* *assemble*: build the takeoff's element objects and storeys from values already computed
  (the reader's last step, with no IFC access at all).

``floor = (visit + assemble) / open`` is the smallest read ratio that design can reach.

``--probe`` also times :func:`byte_index_probe.probe`: the same references followed in the
file's bytes instead of through entities (a probe of another design, not a reader).
"""
from __future__ import annotations

import argparse
import dataclasses
import time
from pathlib import Path


def _best(fns: dict, runs: int) -> dict[str, float]:
    """Best wall and CPU time of each callable over ``runs`` alternating rounds."""
    for fn in fns.values():
        fn()  # warm-up: imports, first-call costs
    best = {f"{k}_{c}": 1e9 for k in fns for c in ("wall", "cpu")}
    for _ in range(runs):
        for key, fn in fns.items():
            w, c = time.perf_counter(), time.process_time()
            fn()
            best[f"{key}_wall"] = min(best[f"{key}_wall"], time.perf_counter() - w)
            best[f"{key}_cpu"] = min(best[f"{key}_cpu"], time.process_time() - c)
    return best


def entity_floor(path: Path) -> int:
    """Open ``path`` and visit every slab's, wall's and column's references through
    ifcopenshell's entities: GlobalId, ObjectPlacement, Representation -> Representations ->
    identifier and Items, and the containing storey. Returns the number of items visited.

    Positions are those of IFC2X3, IFC4 and IFC4X3 (IfcRoot.GlobalId 0, IfcProduct.
    ObjectPlacement 5 and .Representation 6, IfcProductRepresentation.Representations 2,
    IfcRepresentation.RepresentationIdentifier 1 and .Items 3, IfcRelContainedInSpatialStructure
    .RelatedElements 4 and .RelatingStructure 5): read by position, the cheapest access there is.
    """
    import ifcopenshell

    model = ifcopenshell.open(str(path))
    n = 0
    for ifc_type in ("IfcSlab", "IfcWall", "IfcColumn"):
        for el in model.by_type(ifc_type):
            el.get_argument(0)
            pl = el.get_argument(5)
            if pl is not None:
                pl.id()
            rep = el.get_argument(6)
            for r in (rep.get_argument(2) or ()) if rep is not None else ():
                r.get_argument(1)
                n += len([i.id() for i in r.get_argument(3) or ()])
    for rel in model.by_type("IfcRelContainedInSpatialStructure"):
        st = rel.get_argument(5)
        if st is not None:
            st.id()
        n += len([e.id() for e in rel.get_argument(4) or ()])
    return n


def assembly_floor(path: Path):
    """A callable that rebuilds the takeoff's element objects, their vertical extents and the
    storeys of every building of ``path`` from values already read (read once, outside the
    timing): the part of a read that no faster IFC access removes. The callable returns the
    rebuilt :class:`FloorResult` of each building (the same storeys the reader gives)."""
    from swayscreen.pipeline.core_settings import LevelSettings
    from swayscreen.pipeline.ifc_floors import Placed, SourceStorey, build_storeys
    from swayscreen.pipeline.reading import read_model
    from swayscreen.pipeline.takeoff import Slab

    takeoff = read_model(path)
    levels = LevelSettings()
    plans = []
    for b in takeoff.buildings:
        sources = [SourceStorey(s.global_id, s.name, s.elevation_m, s.usage) for s in b.storeys
                   if "/" not in s.global_id]  # floors split off a storey are rebuilt, not read
        kinds: dict[str, list] = {"slabs": [], "walls": [], "columns": []}
        for s in b.storeys:
            for kind in kinds:
                for e in getattr(s, kind):
                    if isinstance(e, Slab):
                        z = (e.top_elevation_m - e.thickness_m, e.top_elevation_m)
                    else:
                        z = (e.base_elevation_m, e.base_elevation_m + e.height_m)
                    kw = {f.name: getattr(e, f.name) for f in dataclasses.fields(e) if f.init}
                    kinds[kind].append((type(e), kw, z))
        plans.append((b.name, sources, kinds))

    def run() -> list:
        out = []
        for name, sources, kinds in plans:
            placed = {k: [Placed(cls(**kw), z0, z1) for cls, kw, (z0, z1) in v] for k, v in kinds.items()}
            out.append(build_storeys(sources, placed["slabs"], placed["walls"], placed["columns"], levels, name))
        return out

    return run


def measure(path: Path, runs: int, floor: bool = False, probe=None) -> dict[str, float]:
    """Best times of open and read (and of the floor steps, and of ``probe(path)`` when given)."""
    import ifcopenshell

    from swayscreen.pipeline.reading import read_model

    fns = {"open": lambda: ifcopenshell.open(str(path)), "read": lambda: read_model(path)}
    if floor:
        fns["visit"] = lambda: entity_floor(path)
        fns["assemble"] = assembly_floor(path)
    if probe is not None:
        fns["probe"] = lambda: probe(path)
    return _best(fns, runs)


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("models", nargs="*", type=Path)
    p.add_argument("--runs", type=int, default=15)
    p.add_argument("--floor", action="store_true",
                   help="also time the least an entity-based reader must do (see the module docstring)")
    p.add_argument("--probe", action="store_true", help="also time the references followed in the file's bytes")
    a = p.parse_args(argv)
    if not a.models:
        from swayscreen.sample_models import sample_path

        a.models = [sample_path("residential_tower_60.ifc")]
    print(f"{'model':<32} {'MB':>6} {'open s':>8} {'read s':>8} {'ratio':>6}   (best of {a.runs}; wall | CPU)")
    if a.probe:
        from byte_index_probe import Refused, probe  # beside this script
    for m in a.models:
        if a.probe:
            try:
                elements, n_groups = probe(m)
            except Refused as why:
                print(f"{m.name}: probe refused ({why})")
                continue
        b = measure(m, a.runs, a.floor, probe if a.probe else None)
        mb = m.stat().st_size / 1e6
        for clock in ("wall", "cpu"):
            o, r = b[f"open_{clock}"], b[f"read_{clock}"]
            print(f"{m.name:<32} {mb:6.1f} {o:8.4f} {r:8.4f} {r / o:6.2f}   {clock}")
        if a.floor:
            for clock in ("wall", "cpu"):
                o, v, s = b[f"open_{clock}"], b[f"visit_{clock}"], b[f"assemble_{clock}"]
                print(f"  floor ({clock}): visit {v:.4f} s ({v / o:.2f}x open) + assemble {s:.4f} s "
                      f"({s / o:.2f}x) = {(v + s) / o:.2f}x open")
        if a.probe:
            for clock in ("wall", "cpu"):
                o, q = b[f"open_{clock}"], b[f"probe_{clock}"]
                print(f"  byte probe ({clock}): {len(elements)} elements in {n_groups} groups, {q:.4f} s "
                      f"({q / o:.2f}x open)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
