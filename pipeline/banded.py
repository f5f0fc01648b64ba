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
    _plan_map,
    _storey_blocks,
    _torsion_element,
    cantilever_runs,
    geometric_stiffness_checks,
    warping_runs,
)
from .stick import StickModel

__all__ = ["BandedStiffness", "banded_stiffness", "condensed_solve"]


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


def _numbering(stick: StickModel, runs: Sequence, wruns: Sequence) -> tuple[np.ndarray, dict, dict]:
    """First index of each floor's freedoms, and the global index of every slope pair and
    rate of twist: {(run, node): index}."""
    n = stick.n_levels
    extra = [0] * n
    slope_slot: dict[tuple[int, int], tuple[int, int]] = {}
    for r, (_sid, run) in enumerate(runs):
        a = run[0].level_index
        for node in range(len(run) + 1):
            if node == 0 and a == 0:
                continue  # fixed at the base
            lvl = a - 1 + node
            slope_slot[(r, node)] = (lvl, extra[lvl])
            extra[lvl] += 2
    warp_slot: dict[tuple[int, int], tuple[int, int]] = {}
    for w, wr in enumerate(wruns):
        a = wr[0].level_index
        for node in range(len(wr) + 1):
            if node == 0 and a == 0:
                continue  # warping restrained at the base
            lvl = a - 1 + node
            warp_slot[(w, node)] = (lvl, extra[lvl])
            extra[lvl] += 1
    start = np.concatenate([[0], np.cumsum([3 + e for e in extra])]).astype(np.intp)
    slopes = {k: int(start[lvl] + 3 + s) for k, (lvl, s) in slope_slot.items()}
    warps = {k: int(start[lvl] + 3 + s) for k, (lvl, s) in warp_slot.items()}
    return start, slopes, warps


def _assemble(stick: StickModel, p_delta: bool, g: float) -> BandedStiffness:
    _check_stick(stick)
    n = stick.n_levels
    runs = cantilever_runs(stick)
    wruns = [wr for _sid, run in runs for wr in warping_runs(run)]
    start, slopes, warps = _numbering(stick, runs, wruns)
    n_full = int(start[-1])

    def floor_dof(dense: np.ndarray) -> np.ndarray:
        """Global index of dense floor freedom 3f + c (-1 stays -1)."""
        dense = np.asarray(dense, dtype=np.intp)
        out = start[np.clip(dense // 3, 0, n - 1)] + dense % 3
        return np.where(dense < 0, -1, out)

    rows: list[np.ndarray] = []
    cols: list[np.ndarray] = []
    vals: list[np.ndarray] = []

    def add(index: np.ndarray, blocks: np.ndarray) -> None:
        """Blocks (E, k, k) on global freedoms ``index`` (E, k); -1 marks a freedom the element lacks."""
        r = np.broadcast_to(index[:, :, None], blocks.shape)
        c = np.broadcast_to(index[:, None, :], blocks.shape)
        keep = (r >= 0) & (c >= 0) & (r <= c)
        rows.append(r[keep])
        cols.append(c[keep])
        vals.append(blocks[keep])

    origin = stick.origin_m
    for r_no, (_sid, run) in enumerate(runs):
        a = run[0].level_index
        gm = np.zeros((len(run), 8, 10))
        idx = np.full((len(run), 10), -1, dtype=np.intp)
        eye2 = np.eye(2)
        for e, s in enumerate(run):
            amap = _plan_map(s.centre_m, origin)
            i = s.level_index
            if i - 1 >= 0:
                gm[e, 0:2, 0:3] = amap
                idx[e, 0:3] = start[i - 1] + np.arange(3)
            if (r_no, e) in slopes:
                gm[e, 2:4, 3:5] = eye2
                idx[e, 3:5] = slopes[(r_no, e)] + np.arange(2)
            gm[e, 4:6, 5:8] = amap
            idx[e, 5:8] = start[i] + np.arange(3)
            gm[e, 6:8, 8:10] = eye2
            idx[e, 8:10] = slopes[(r_no, e + 1)] + np.arange(2)
        kes = np.stack([_beam_element(s.ei_xx_nm2, s.ei_yy_nm2, s.ei_xy_nm2, s.ga_x_n, s.ga_y_n, s.length_m)
                        for s in run])
        add(idx, np.matmul(np.matmul(gm.transpose(0, 2, 1), kes), gm))
        del a
    for w_no, wr in enumerate(wruns):
        a = wr[0].level_index
        idx = np.full((len(wr), 4), -1, dtype=np.intp)
        for e in range(len(wr)):
            for k, node in ((0, e), (2, e + 1)):
                if not (node == 0 and a == 0):
                    idx[e, k] = start[a - 1 + node] + 2
                    idx[e, k + 1] = warps[(w_no, node)]
        kes = np.stack([_torsion_element(s.ecw_nm4, s.gj_nm2, s.length_m) for s in wr])
        add(idx, kes)
    at, blocks = _storey_blocks(stick)
    if len(blocks):
        add(floor_dof(np.where(at >= 3 * n, -1, at)), blocks)
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
        add(floor_dof(dense), pd)
    r = np.concatenate(rows)
    c = np.concatenate(cols)
    v = np.concatenate(vals)
    u = int(np.max(c - r)) if len(r) else 0
    ab = np.zeros((u + 1, n_full))
    np.add.at(ab.reshape(-1), (u + r - c) * n_full + c, v)
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
