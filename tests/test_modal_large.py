"""Modes of tall stick models by subspace iteration on the banded stiffness.

Above ``modal.DENSE_MAX_DOF`` freedoms the modal plugin finds the lowest modes by subspace
iteration (K.-J. Bathe, *Finite Element Procedures*, 1996, section 11.6; from memory) with
solves from the banded, uncondensed stiffness, and proves with a Sturm sequence count that
no lower mode was missed. Checked against the dense LAPACK eigensolver on the same models
(the path used below that size, itself checked against closed forms in test_assembly.py and
test_modal.py) and the Sturm count against dense eigenvalues.

Tolerances. The lowest eigenvalues of these models are only defined to round-off amplified
by the spread of K's eigenvalues: measured on the random 100-floor models used here, the
dense subset solver (LAPACK sygvx) differs from the dense full solver (sygvd) by up to
3e-9 relative and moves by up to 6e-9 when K changes in its last bit. So the iteration is
checked against the full dense solver at 1e-9, and the plugin's results against the dense
path (sygvx) at 2e-8; mode shapes to 1e-6 of the peak (a shape's accuracy is that of the
eigenvalue over the gap to the next one).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.linalg import eigh

from swayscreen.pipeline.assembly import mass_matrix, stiffness_matrix
from swayscreen.pipeline.banded import banded_stiffness, count_modes_below
from swayscreen.pipeline.stick import Level, Segment, StickModel
from swayscreen.plugins import modal
from swayscreen.plugins.modal import modal_analysis

sys.path.insert(0, str(Path(__file__).parent))
from test_banded import _random_stick  # noqa: E402  (same random stick models)


def _dense(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(modal, "DENSE_MAX_DOF", 10**9)


def _compare(a: modal.ModalResult, b: modal.ModalResult) -> None:
    assert len(a.modes) == len(b.modes)
    for ma, mb in zip(a.modes, b.modes):
        assert ma.period_s == pytest.approx(mb.period_s, rel=2e-8)
        assert ma.kind == mb.kind
        np.testing.assert_allclose(ma.shape, mb.shape, rtol=0, atol=1e-6)
        for d in ("x", "y", "twist"):
            assert ma.participation[d] == pytest.approx(mb.participation[d], rel=1e-6, abs=1e-9)
    assert a.t1_without_p_delta_s == pytest.approx(b.t1_without_p_delta_s, rel=2e-8)
    assert a.t1_with_p_delta_s == pytest.approx(b.t1_with_p_delta_s, rel=2e-8)
    for d in ("x", "y"):
        assert a.rayleigh_period_s[d] == pytest.approx(b.rayleigh_period_s[d], rel=1e-9)


@pytest.mark.parametrize("seed", [3, 17, 2024])
@pytest.mark.parametrize("p_delta", [True, False])
def test_subspace_modes_equal_dense_modes(seed: int, p_delta: bool, monkeypatch: pytest.MonkeyPatch) -> None:
    s = _random_stick(seed, 95, far=seed % 2 == 1)  # 285 freedoms: above DENSE_MAX_DOF
    assert 3 * s.n_levels > modal.DENSE_MAX_DOF
    calls = []
    original = modal._subspace_modes
    monkeypatch.setattr(modal, "_subspace_modes", lambda *a: calls.append(a) or original(*a))
    fast = modal_analysis(s, n_modes=9, p_delta=p_delta)
    assert calls  # the subspace path ran
    with monkeypatch.context() as m:
        _dense(m)
        ref = modal_analysis(s, n_modes=9, p_delta=p_delta)
    _compare(fast, ref)


def test_subspace_result_is_the_iteration_not_the_fallback(monkeypatch: pytest.MonkeyPatch) -> None:
    s = _random_stick(5, 100, far=False)
    got = modal._subspace_modes(s, banded_stiffness(s), 9)
    assert got is not None
    w2, vecs = got
    ref = eigh(stiffness_matrix(s), mass_matrix(s), eigvals_only=True, driver="gvd")[:9]  # all modes, dense
    np.testing.assert_allclose(w2, ref, rtol=1e-9)
    # M-orthonormal
    np.testing.assert_allclose(vecs.T @ mass_matrix(s) @ vecs, np.eye(9), atol=1e-9)


def test_failed_sturm_check_falls_back_to_the_dense_solver(monkeypatch: pytest.MonkeyPatch) -> None:
    s = _random_stick(11, 90, far=False)
    monkeypatch.setattr(modal, "count_modes_below", lambda *a: -1)  # pretend a mode was missed
    fallback = modal_analysis(s, n_modes=6)
    with monkeypatch.context() as m:
        _dense(m)
        ref = modal_analysis(s, n_modes=6)
    for a, b in zip(fallback.modes, ref.modes):
        assert a.period_s == b.period_s  # the dense solver itself: the same numbers


@pytest.mark.parametrize("seed", [1, 8])
def test_sturm_count_matches_dense_eigenvalues(seed: int) -> None:
    s = _random_stick(seed, 40, far=False)
    band = banded_stiffness(s)
    w2 = eigh(stiffness_matrix(s), mass_matrix(s), eigvals_only=True)
    for k in (0, 1, 5, 20, 60, len(w2) - 1):
        sigma = 0.5 * (w2[k - 1] + w2[k]) if k > 0 else 0.5 * w2[0]
        assert count_modes_below(s, band, sigma) == k
    assert count_modes_below(s, band, 2.0 * w2[-1]) == len(w2)


def test_doubly_symmetric_tower_repeated_periods(monkeypatch: pytest.MonkeyPatch) -> None:
    # square plate, core and frames at the centre, equal stiffness in x and y: every sway
    # period comes twice (x and y); the subspace path must give both, then the torsion mode
    n, h, m = 100, 3.5, 8.0e5
    lv = tuple(Level(f"F{i + 1}", f"id{i}", (i + 1) * h, h, m, (0.0, 0.0), m * 30.0**2 / 6.0) for i in range(n))
    segs = [Segment("core-1", "core", i, h, (0.0, 0.0), ei_xx_nm2=4e13, ei_yy_nm2=4e13, ga_x_n=5e10, ga_y_n=5e10,
                    gj_nm2=2e12) for i in range(n)]
    segs += [Segment("columns", "frame", i, h, (0.0, 0.0), k_x_n_m=2e8, k_y_n_m=2e8, k_twist_nm_rad=5e11)
             for i in range(n)]
    s = StickModel("B1", "Square", 0.0, lv, tuple(segs))
    fast = modal_analysis(s, n_modes=6, p_delta=False)
    with monkeypatch.context() as mp:
        _dense(mp)
        ref = modal_analysis(s, n_modes=6, p_delta=False)
    for a, b in zip(fast.modes, ref.modes):
        assert a.period_s == pytest.approx(b.period_s, rel=2e-8)
    t = [md.period_s for md in fast.modes]
    assert t[0] == pytest.approx(t[1], rel=1e-9)
    # the pair spans x and y together whatever basis either solver picked
    for res in (fast, ref):
        pair = res.modes[:2]
        assert sum(md.participation["x"] for md in pair) == pytest.approx(
            sum(md.participation["y"] for md in pair), rel=1e-6)
