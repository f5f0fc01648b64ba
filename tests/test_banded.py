"""The banded (uncondensed) stiffness solves like the condensed dense matrix.

pipeline/banded.py keeps the cantilever slopes and the rates of twist of open cores as
freedoms instead of condensing them: by block elimination (the Schur complement; any linear
algebra text, e.g. G. H. Golub and C. F. Van Loan, *Matrix Computations*, 4th ed., 2013,
section 3.2.10, from memory) the floor displacements under floor loads are those of the
condensed matrix, and one is positive definite exactly when the other is. Checked here
against :func:`swayscreen.pipeline.assembly.stiffness_matrix` (itself checked against closed
forms in test_assembly.py and test_warping.py) on random stick models with every feature
the assembly knows: several cantilever stacks, gaps (pinned restarts), open storeys
(Vlasov warping runs, restrained or free at their start), eccentric centres, product
moments, frames, P-Delta, an origin far from the building. Tolerance 1e-8 of the largest
displacement: both sides carry round-off amplified by the condition number of K.
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from swayscreen.pipeline.assembly import is_positive_definite, stiffness_matrix
from swayscreen.pipeline.banded import banded_stiffness, condensed_solve
from swayscreen.pipeline.stick import Level, Segment, StickModel


def _levels(n: int, h: float, rng: np.random.Generator, origin: tuple[float, float]) -> tuple[Level, ...]:
    return tuple(Level(f"F{i + 1}", f"id{i}", (i + 1) * h, h, 1e6 * (1 + rng.random()),
                       (origin[0] + rng.normal(0, 2), origin[1] + rng.normal(0, 2)), 1e8 * (1 + rng.random()))
                 for i in range(n))


def _stack(sid: str, n: int, h: float, rng: np.random.Generator, origin, *, present, warping) -> list[Segment]:
    segs = []
    cx, cy = origin[0] + rng.normal(0, 8), origin[1] + rng.normal(0, 8)
    for i in range(n):
        if not present[i]:
            continue
        ei_x, ei_y = 1e13 * (1 + rng.random()), 1e13 * (1 + rng.random())
        segs.append(Segment(sid, "core", i, h, (cx, cy), ei_xx_nm2=ei_y, ei_yy_nm2=ei_x,
                            ei_xy_nm2=0.3 * min(ei_x, ei_y) * rng.uniform(-1, 1),
                            ga_x_n=1e10 * rng.random(), ga_y_n=1e10 * rng.random(),
                            gj_nm2=1e11 * rng.random(), ecw_nm4=1e14 * (1 + rng.random()) if warping[i] else 0.0))
    return segs


def _random_stick(seed: int, n: int, far: bool) -> StickModel:
    rng = np.random.default_rng(seed)
    origin = (5.0e5, -3.0e5) if far else (0.0, 0.0)
    h = 3.5
    segs = []
    for k in range(int(rng.integers(1, 4))):
        present = rng.random(n) > 0.15
        present[rng.integers(0, n)] = True
        warping = rng.random(n) > 0.5
        segs += _stack(f"core-{k + 1}", n, h, rng, origin, present=present, warping=warping)
    for i in range(n):  # a frame on every storey restrains every floor (no near-mechanism)
        segs.append(Segment("columns", "frame", i, h, (origin[0] + rng.normal(0, 5), origin[1] + rng.normal(0, 5)),
                            k_x_n_m=1e8 * (1 + rng.random()), k_y_n_m=1e8 * (1 + rng.random()),
                            k_twist_nm_rad=1e11 * (1 + rng.random())))
    return StickModel("B1", "Banded test tower", 0.0, _levels(n, h, rng, origin), tuple(segs), origin_m=origin)


@settings(max_examples=40, deadline=None, derandomize=True)
@given(st.integers(0, 10_000), st.integers(1, 30), st.booleans(), st.booleans())
def test_banded_solve_equals_condensed_dense_solve(seed: int, n: int, far: bool, p_delta: bool) -> None:
    s = _random_stick(seed, n, far)
    k = stiffness_matrix(s, p_delta=p_delta)
    band = banded_stiffness(s, p_delta=p_delta)
    assert band.positive_definite == is_positive_definite(k)
    if not band.positive_definite:  # P-Delta beyond stability (both agree)
        return
    loads = np.random.default_rng(seed + 1).normal(0, 1e5, (3 * n, 3))
    u = condensed_solve(s, loads, p_delta=p_delta)
    u_dense = np.linalg.solve(k, loads)
    np.testing.assert_allclose(u, u_dense, rtol=0, atol=1e-8 * np.abs(u_dense).max())


def test_mechanism_is_not_positive_definite() -> None:
    # frames without twist stiffness at one plan point: the floors can spin freely
    n, h = 5, 3.0
    lv = tuple(Level(f"F{i}", f"id{i}", (i + 1) * h, h, 1e5, (0.0, 0.0), 1e7) for i in range(n))
    segs = tuple(Segment("columns", "frame", i, h, (0.0, 0.0), k_x_n_m=1e8, k_y_n_m=1e8) for i in range(n))
    s = StickModel("B1", "Spinning", 0.0, lv, segs)
    band = banded_stiffness(s)
    assert not band.positive_definite and not is_positive_definite(stiffness_matrix(s))
    with pytest.raises(np.linalg.LinAlgError):
        band.solve(np.ones(3 * n))


def test_p_delta_beyond_stability_is_not_positive_definite() -> None:
    # a slender frame under a heavy weight: K + K_G loses positive definiteness where the
    # storey's lateral stiffness falls below W / h (the storey buckling load, P-Delta; Wilson
    # and Habibullah 1987, from memory): k = 1e6 N/m, h = 3 m, W above storey 1 = 5 * 1e6 * 9.81 N
    n, h = 5, 3.0
    lv = tuple(Level(f"F{i}", f"id{i}", (i + 1) * h, h, 1e6, (0.0, 0.0), 1e8) for i in range(n))
    segs = tuple(Segment("columns", "frame", i, h, (0.0, 0.0), k_x_n_m=1e6, k_y_n_m=1e9, k_twist_nm_rad=1e12)
                 for i in range(n))
    s = StickModel("B1", "Soft", 0.0, lv, segs)
    assert banded_stiffness(s).positive_definite
    assert not banded_stiffness(s, p_delta=True).positive_definite
    assert not is_positive_definite(stiffness_matrix(s, p_delta=True))


def test_wide_band_falls_back_to_the_condensed_matrix():
    """Hundreds of separate walls on a floor: the band would be wider than the condensed matrix;
    the fallback must give the same solves and Sturm counts as the dense condensed matrix."""
    import numpy as np
    from shapely.geometry import box

    from swayscreen.pipeline.assembly import mass_matrix, stiffness_matrix
    from swayscreen.pipeline.banded import banded_stiffness, count_modes_below
    from swayscreen.pipeline.stick import Level, Segment, StickModel

    rng = np.random.default_rng(7)
    n, nw = 3, 200
    levels = tuple(Level(f"L{i}", f"id{i}", 3.0 * (i + 1), 3.0, 5e5, (0.0, 0.0), 5e7, plate=box(-30, -30, 30, 30))
                   for i in range(n))
    segs = []
    for w in range(nw):
        x, y = rng.uniform(-25, 25, 2)
        segs += [Segment(f"wall-{w}", "wall", i, 3.0, (float(x), float(y)), ei_xx_nm2=1e9, ei_yy_nm2=2e9,
                         ga_x_n=1e9, ga_y_n=1e9, gj_nm2=1e7) for i in range(n)]
    stick = StickModel("b", "B", 0.0, levels, tuple(segs))
    band = banded_stiffness(stick)
    assert band.n_full == 3 * n  # the fallback: the condensed matrix as a full band
    k = stiffness_matrix(stick)
    loads = rng.normal(size=(3 * n, 4))
    assert np.allclose(band.solve(loads), np.linalg.solve(k, loads), rtol=1e-9, atol=0)
    w2 = np.sort(np.linalg.eigvals(np.linalg.solve(mass_matrix(stick), k)).real)
    mid = 0.5 * (w2[3] + w2[4])
    assert count_modes_below(stick, band, mid) == 4  # Sturm count (Bathe, FE Procedures 11.6.4)
