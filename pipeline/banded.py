"""The stick model's stiffness before static condensation, in band storage.

:func:`swayscreen.pipeline.assembly.stiffness_matrix` condenses the section slopes of the
cantilevers and the rates of twist of open cores onto the floor freedoms, which gives a
dense 3N x 3N matrix: factorising it costs O(N^3). Kept as freedoms, those rotations
couple only neighbouring floors, so the uncondensed matrix is banded (half-bandwidth about
twice the freedoms per floor). Factorising it costs O(N b^2) and a solve O(N b), linear in
the number of floors, and both stay small enough that a multi-threaded BLAS does not split
them across threads.

The condensed matrix is the Schur complement of this one onto the floor freedoms, so for a
load P on the floors, K_full [u; r] = [P; 0] gives the same floor displacements u as
K_condensed u = P (block elimination; the rotations carry no load), and K_full is positive
definite exactly when K_condensed is (its rotation block is: every element has EI > 0).
Same elements, same supports and same P-Delta term as :mod:`swayscreen.pipeline.assembly`
(see its module doc); only the order of the sums differs (results equal to round-off).

Numbering: floor by floor, lowest first; on each floor its x, y, twist, then the two
slopes of every cantilever run with a node there, then the rate of twist of every
warping run with a node there.
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.linalg import LinAlgError, cho_solve_banded, cholesky_banded

from .assembly import (
    G_STANDARD,
    _beam_element,
    _check_stick,
    _floor_mass_blocks,
    _memoised,
    _storey_blocks,
    _torsion_element,
    cantilever_runs,
    geometric_stiffness_checks,
    warping_runs,
)
from .stick import StickModel

__all__ = ["BandedStiffness", "banded_stiffness", "condensed_solve", "count_modes_below"]


@dataclass(frozen=True, eq=False)
class BandedStiffness:
    """Uncondensed stiffness of a stick model (module doc).

    Attributes:
        ab: upper band storage for ``scipy.linalg.cholesky_banded``: ``ab[u + i - j, j] = K[i, j]``
            for i <= j, u = ``ab.shape[0] - 1``.
        floor_dofs: (3N,) positions of the floor freedoms (floor i: 3i x, 3i+1 y, 3i+2 twist).
        factor: the upper Cholesky factor in the same storage, or None when K is not
            positive definite (a mechanism, or P-Delta beyond stability).
    """

    ab: np.ndarray
    floor_dofs: np.ndarray
    factor: np.ndarray | None

    @property
    def n_full(self) -> int:
        return int(self.ab.shape[1])

    @property
    def positive_definite(self) -> bool:
        return self.factor is not None

    def solve(self, loads: np.ndarray) -> np.ndarray:
        """Floor displacements for floor loads (3N,) or (3N, k): K_condensed^-1 P.

        Raises:
            LinAlgError: the matrix is not positive definite.
        """
        if self.factor is None:
            raise LinAlgError("stiffness matrix is not positive definite")
        p = np.asarray(loads, dtype=float)
        rhs = np.zeros((self.n_full,) + p.shape[1:])
        rhs[self.floor_dofs] = p
        return cho_solve_banded((self.factor, False), rhs, check_finite=False)[self.floor_dofs]


def _numbering(stick: StickModel, runs: Sequence, wruns: Sequence
               ) -> tuple[np.ndarray, list[np.ndarray], list[np.ndarray]]:
    """First index of each floor's freedoms (N + 1 entries, the last the total), and per
    cantilever run the index of the first slope of each node, per warping run the index of
    the rate of twist of each node (-1 where the base restrains it)."""
    n = stick.n_levels
    extra = [0] * n
    slope_slot: list[list[tuple[int, int] | None]] = []
    for _sid, run in runs:
        a = run[0].level_index
        row: list[tuple[int, int] | None] = []
        for node in range(len(run) + 1):
            if node == 0 and a == 0:
                row.append(None)  # fixed at the base
                continue
            lvl = a - 1 + node
            row.append((lvl, extra[lvl]))
            extra[lvl] += 2
        slope_slot.append(row)
    warp_slot: list[list[tuple[int, int] | None]] = []
    for wr in wruns:
        a = wr[0].level_index
        row = []
        for node in range(len(wr) + 1):
            if node == 0 and a == 0:
                row.append(None)  # warping restrained at the base
                continue
            lvl = a - 1 + node
            row.append((lvl, extra[lvl]))
            extra[lvl] += 1
        warp_slot.append(row)
    start = np.concatenate([[0], np.cumsum([3 + e for e in extra])]).astype(np.intp)

    def index(rows: list[list[tuple[int, int] | None]]) -> list[np.ndarray]:
        return [np.array([-1 if q is None else start[q[0]] + 3 + q[1] for q in row], dtype=np.intp) for row in rows]

    return start, index(slope_slot), index(warp_slot)


def _base_entries(stick: StickModel) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(floor starts, rows, columns, values) of the upper triangle of the stiffness without
    P-Delta: cantilever elements, Vlasov torsion elements, rods and frames."""
    _check_stick(stick)
    n = stick.n_levels
    runs = cantilever_runs(stick)
    wruns = [wr for _sid, run in runs for wr in warping_runs(run)]
    start, slopes, warps = _numbering(stick, runs, wruns)
    rows: list[np.ndarray] = []
    cols: list[np.ndarray] = []
    vals: list[np.ndarray] = []
    three, two = np.arange(3), np.arange(2)
    ox, oy = float(stick.origin_m[0]), float(stick.origin_m[1])
    for (_sid, run), slope in zip(runs, slopes):
        n_el = len(run)
        lev = np.array([s.level_index for s in run], dtype=np.intp)
        amap = np.zeros((n_el, 2, 3))  # element end translation from the floor freedoms (_plan_map)
        amap[:, 0, 0] = amap[:, 1, 1] = 1.0
        amap[:, 0, 2] = -(np.array([float(s.centre_m[1]) for s in run]) - oy)
        amap[:, 1, 2] = np.array([float(s.centre_m[0]) for s in run]) - ox
        gm = np.zeros((n_el, 8, 10))  # [floor below, slopes below, floor above, slopes above]
        idx = np.full((n_el, 10), -1, dtype=np.intp)
        below = lev >= 1
        gm[below, 0:2, 0:3] = amap[below]
        idx[below, 0:3] = start[lev[below] - 1][:, None] + three
        pinned = slope[:-1] >= 0
        gm[pinned, 2:4, 3:5] = np.eye(2)
        idx[pinned, 3:5] = slope[:-1][pinned][:, None] + two
        gm[:, 4:6, 5:8] = amap
        idx[:, 5:8] = start[lev][:, None] + three
        gm[:, 6:8, 8:10] = np.eye(2)
        idx[:, 8:10] = slope[1:][:, None] + two
        kes = np.stack([_beam_element(s.ei_xx_nm2, s.ei_yy_nm2, s.ei_xy_nm2, s.ga_x_n, s.ga_y_n, s.length_m)
                        for s in run])
        _upper(idx, np.matmul(np.matmul(gm.transpose(0, 2, 1), kes), gm), rows, cols, vals)
    for wr, warp in zip(wruns, warps):
        a = wr[0].level_index
        nodes = np.arange(len(wr) + 1)
        twist = np.where(warp >= 0, start[np.maximum(a - 1 + nodes, 0)] + 2, -1)
        idx = np.column_stack([twist[:-1], warp[:-1], twist[1:], warp[1:]])
        kes = np.stack([_torsion_element(s.ecw_nm4, s.gj_nm2, s.length_m) for s in wr])
        _upper(idx, kes, rows, cols, vals)
    at, blocks = _storey_blocks(stick)
    if len(blocks):
        _upper(_floor_dof(start, n, np.where(at >= 3 * n, -1, at)), blocks, rows, cols, vals)
    return start, np.concatenate(rows), np.concatenate(cols), np.concatenate(vals)


def _floor_dof(start: np.ndarray, n: int, dense: np.ndarray) -> np.ndarray:
    """Global index of the dense floor freedom 3f + c (-1 stays -1)."""
    dense = np.asarray(dense, dtype=np.intp)
    return np.where(dense < 0, -1, start[np.clip(dense // 3, 0, n - 1)] + dense % 3)


def _upper(index: np.ndarray, blocks: np.ndarray, rows: list, cols: list, vals: list) -> None:
    """Collect the upper-triangle entries of blocks (E, k, k) on global freedoms ``index`` (E, k);
    -1 marks a freedom the element lacks."""
    r = np.broadcast_to(index[:, :, None], blocks.shape)
    c = np.broadcast_to(index[:, None, :], blocks.shape)
    keep = (r >= 0) & (c >= 0) & (r <= c)
    rows.append(r[keep])
    cols.append(c[keep])
    vals.append(blocks[keep])


def _band(n_full: int, rows: np.ndarray, cols: np.ndarray, vals: np.ndarray) -> np.ndarray:
    u = int(np.max(cols - rows)) if len(rows) else 0
    ab = np.zeros((u + 1, n_full))
    np.add.at(ab.reshape(-1), (u + rows - cols) * n_full + cols, vals)
    return ab


def _assemble(stick: StickModel, p_delta: bool, g: float) -> BandedStiffness:
    n = stick.n_levels
    start, rows, cols, vals = _memoised(stick, ("banded entries",), lambda: _base_entries(stick))
    n_full = int(start[-1])
    if p_delta:
        geometric_stiffness_checks(stick, g)
        fm = _floor_mass_blocks(stick)
        above = np.cumsum(fm[::-1], axis=0)[::-1]
        h = np.array([lv.height_m for lv in stick.levels], dtype=float)
        blk = (g / h)[:, None, None] * above  # storey i: -blk at floors i, i-1; +blk between them
        lower = np.arange(n) - 1
        dense = np.concatenate([3 * np.maximum(lower, 0)[:, None] + np.arange(3), 3 * np.arange(n)[:, None]
                                + np.arange(3)], axis=1)
        dense[lower < 0, :3] = -1
        pd = np.concatenate([np.concatenate([-blk, blk], axis=2), np.concatenate([blk, -blk], axis=2)], axis=1)
        extra_r: list[np.ndarray] = []
        extra_c: list[np.ndarray] = []
        extra_v: list[np.ndarray] = []
        _upper(_floor_dof(start, n, dense), pd, extra_r, extra_c, extra_v)
        rows, cols, vals = (np.concatenate([a, *b]) for a, b in ((rows, extra_r), (cols, extra_c), (vals, extra_v)))
    u = int(np.max(cols - rows)) if len(rows) else 0
    if n_full * u * u > (3 * n) ** 3:
        # Many separate systems on a floor make the band wider than the condensed matrix is
        # large (3,000 wall pieces on one storey: 88 s in banded Cholesky). The condensed
        # matrix, stored as a full band, costs what a dense factorisation costs and gives the
        # same solves, positive-definiteness and Sturm counts.
        from .assembly import stiffness_matrix

        kc = stiffness_matrix(stick, p_delta=p_delta, g=g)
        m = 3 * n
        r, c = np.triu_indices(m)
        rows, cols, vals, n_full, start = r, c, kc[r, c], m, np.arange(0, m + 1, 3)
    ab = _band(n_full, rows, cols, vals)
    ab.setflags(write=False)
    try:
        factor = cholesky_banded(ab, lower=False, check_finite=False)
        factor.setflags(write=False)
    except LinAlgError:
        factor = None
    floor_dofs = (start[:n, None] + np.arange(3)).ravel()
    return BandedStiffness(ab, floor_dofs, factor)


def banded_stiffness(stick: StickModel, *, p_delta: bool = False, g: float = G_STANDARD) -> BandedStiffness:
    """The uncondensed stiffness of ``stick`` in band storage, factorised (module doc).

    Built once per stick model and (p_delta, g) while the model lives.

    Raises:
        InputError: the stick model is not usable (as :func:`~swayscreen.pipeline.assembly.stiffness_matrix`).
        ValueError: ``g`` is not finite and >= 0 (with ``p_delta``).
    """
    key = ("banded", bool(p_delta), float(g) if p_delta else None)
    return _memoised(stick, key, lambda: _assemble(stick, bool(p_delta), float(g)))


def condensed_solve(stick: StickModel, loads: np.ndarray, *, p_delta: bool = False,
                    g: float = G_STANDARD) -> np.ndarray:
    """Floor displacements under floor loads, K^-1 P with K = ``stiffness_matrix(stick, p_delta, g)``,
    in time linear in the floors. Raises LinAlgError when K is not positive definite."""
    return banded_stiffness(stick, p_delta=p_delta, g=g).solve(loads)


def count_modes_below(stick: StickModel, band: BandedStiffness, omega2: float) -> int | None:
    """How many eigenvalues of K phi = w^2 M phi (the condensed stiffness of ``band``, the
    floor masses of ``stick``) lie below ``omega2``: a Sturm sequence count. None when a
    pivot vanishes (``omega2`` on an eigenvalue, to round-off).

    By Sylvester's law of inertia and its additivity over a Schur complement (E. V.
    Haynsworth, 1968; from memory), the number of negative eigenvalues of
    K_full - w^2 M_full (masses on the floor freedoms only) is that of the rotation block
    (none: positive definite) plus that of K_condensed - w^2 M, the count wanted; it equals
    the number of negative pivots of an L D L^T factorisation of the band (the classical
    Sturm sequence check of subspace iteration; K.-J. Bathe, *Finite Element Procedures*,
    1996, section 11.6.4, from memory). Time linear in the floors.
    """
    u = band.ab.shape[0] - 1
    n = band.n_full
    blocks = _floor_mass_blocks(stick)
    f = band.floor_dofs.reshape(-1, 3)
    w = np.zeros((u + 1, n + u))
    w[:, :n] = band.ab
    w[u, n:] = 1.0  # identity padding keeps the sliding window inside the array
    for i in range(3):
        for j in range(i, 3):  # upper triangle of each floor's 3 x 3 mass block
            if u + i - j >= 0:
                w[u + i - j, f[:, j]] -= omega2 * blocks[:, i, j]
    a_off, b_off = np.triu_indices(u, 0)  # window offsets 0 <= a <= b < u: entry (j+1+a, j+1+b)
    rows, cols = u + a_off - b_off, 1 + b_off
    lrow, lcol = u - 1 - np.arange(u), 1 + np.arange(u)  # A[j, j+1+a] is w[u-1-a, j+1+a]
    negative = 0
    for j in range(n):
        d = w[u, j]
        if d == 0.0 or not math.isfinite(d):
            return None
        if d < 0.0:
            negative += 1
        l = w[lrow, j + lcol] / d
        w[rows, j + cols] -= d * l[a_off] * l[b_off]
    return negative
