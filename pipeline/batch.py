"""Batch screening of several schemes: process pool (or a Dask cluster), ranking table.

Each model is screened in its own process and writes its own output folder
``OUT/<model stem>/``. One broken model does not stop the others: it is listed with its
error. The exit code is the worst of all: 2 if any model was unusable, else 1 if any is
flagged, else 0.
"""
from __future__ import annotations

import os
from concurrent.futures import ProcessPoolExecutor
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

from .errors import EXIT_FLAGGED, EXIT_INPUT, EXIT_PASS, InputError, PluginError

__all__ = ["BatchItem", "screen_one", "run_batch", "ranking"]


@dataclass(frozen=True)
class BatchItem:
    """The outcome of one model in a batch (plain data: crosses process boundaries)."""

    model: str
    status: str  # "pass", "flagged", "incomplete" or "error"
    worst_ratio: float | None = None
    governing: str = ""
    t1_s: float | None = None
    out_dir: str = ""
    error: str = ""
    summary: dict | None = None


def screen_one(model: str, settings_path: str | None, out_dir: str) -> BatchItem:
    """Screen one model and write its outputs; never raises for a bad model."""
    from .outputs import write_outputs
    from .screening import end_one_shot, screen_file
    from .summary import build_summary

    try:
        # the reader's parse is reused by the write-back and released by it; only plain data
        # (BatchItem) leaves this process
        run = screen_file(model, settings_path, keep_source=True, freeze_gc=True)
        folder = Path(out_dir) / Path(model).stem
        write_outputs(run, folder)
        summary = build_summary(run)
    except (InputError, PluginError) as exc:
        return BatchItem(model, "error", error=str(exc))
    except Exception as exc:  # an unattended batch must carry on with the other models
        return BatchItem(model, "error", error=f"internal error: {type(exc).__name__}: {exc}")
    finally:
        end_one_shot()  # the worker moves on to the next model: let this one's objects go
    gov = summary.get("governing") or {}
    modes = summary.get("modes") or []
    ratio = None
    if gov and gov.get("limit"):
        ratio = gov["value"] / gov["limit"]
    return BatchItem(
        model, run.status, ratio,
        f"{gov.get('criterion', '')} ({gov.get('method', '')})" if gov else "",
        modes[0]["period_s"] if modes else None, str(folder), summary=summary,
    )


def ranking(items: list[BatchItem]) -> list[BatchItem]:
    """Worst comfort ratio first; errors last."""
    return sorted(items, key=lambda i: (i.status == "error", -(i.worst_ratio or 0.0), i.model))


def _run_dask(models: list[str], settings_path: str | None, out_dir: str, scheduler: str) -> list[BatchItem]:
    try:
        from dask.distributed import Client
    except ImportError:
        raise InputError("--scheduler needs the optional 'cluster' extra: pip install 'swayscreen[cluster]'") from None
    with Client(scheduler, timeout="20s") as client:
        futures = client.map(screen_one, models, [settings_path] * len(models), [out_dir] * len(models), pure=False)
        return client.gather(futures)


def screen_many(models: list[str], *, settings_path: str | None, out_dir: Path, jobs: int = 0,
                scheduler: str | None = None) -> list[BatchItem]:
    out = str(out_dir)
    if scheduler:
        return list(_run_dask(models, settings_path, out, scheduler))
    jobs = jobs or os.cpu_count() or 1
    if jobs == 1 or len(models) == 1:
        return [screen_one(m, settings_path, out) for m in models]
    with ProcessPoolExecutor(max_workers=min(jobs, len(models))) as pool:
        return list(pool.map(screen_one, models, [settings_path] * len(models), [out] * len(models)))


def run_batch(models: list[str], *, settings_path: str | None, out_dir: Path, jobs: int = 0,
              scheduler: str | None = None) -> int:
    from .console import CAUTION, table

    if settings_path:  # fail once, early, on bad settings rather than once per model
        from .screening import load_plugins_and_settings

        load_plugins_and_settings(settings_path)
    items = screen_many(models, settings_path=settings_path, out_dir=out_dir, jobs=jobs, scheduler=scheduler)
    rows = []
    for rank, it in enumerate(ranking(items), start=1):
        rows.append([
            rank, Path(it.model).name, it.status,
            f"{it.worst_ratio:.2f}" if it.worst_ratio is not None else "-",
            f"{it.t1_s:.2f}" if it.t1_s is not None else "-",
            it.error or it.governing,
        ])
    print(table(["rank", "model", "status", "worst ratio", "T1 s", "governing check / error"], rows))
    print(f"\nOutputs in {out_dir.resolve()} (one folder per model).")
    print(CAUTION)
    statuses = {i.status for i in items}
    if "error" in statuses:
        return EXIT_INPUT
    if statuses & {"flagged", "incomplete"}:
        return EXIT_FLAGGED
    return EXIT_PASS


def item_dict(item: BatchItem) -> dict[str, Any]:
    d = asdict(item)
    d.pop("summary", None)
    return d
