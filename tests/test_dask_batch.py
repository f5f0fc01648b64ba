"""Batch on an existing distributed engine (Dask distributed), on a local cluster bound to loopback.

The same models screened through the cluster give the same results as a serial run.
"""
from __future__ import annotations

import shutil
from pathlib import Path

import pytest

distributed = pytest.importorskip("distributed")

from swayscreen.pipeline.batch import screen_many  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


def test_cluster_results_equal_serial(tmp_path):
    models = []
    for name in ("courtyard_12_m.ifc", "courtyard_12_mm_ifc2x3.ifc"):
        p = tmp_path / name
        shutil.copy(ROOT / "sample_models" / name, p)
        models.append(str(p))
    serial = screen_many(models, settings_path=None, out_dir=tmp_path / "serial", jobs=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        remote = screen_many(models, settings_path=None, out_dir=tmp_path / "cluster", scheduler=cluster.scheduler_address)
    assert [r.status for r in remote] == [s.status for s in serial]
    for a, b in zip(serial, remote):
        assert a.t1_s == b.t1_s and a.worst_ratio == b.worst_ratio
        assert (Path(b.out_dir) / "summary.json").exists()
