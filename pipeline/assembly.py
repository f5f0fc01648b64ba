"""Mass and stiffness matrices of the stick model (pseudo-3D tall-building idealisation).

The idealisation is the classical one for tall buildings with rigid floor diaphragms
(B. Stafford Smith and A. Coull, *Tall Building Structures: Analysis and Design*, Wiley,
1991, chapters on the analysis of lateral-load systems and three-dimensional behaviour):

* every floor is rigid in plan and has three freedoms about the common origin
  ``o = StickModel.origin_m``: translations x, y (m) and a twist theta (rad, counter-clockwise
  positive). Global index of floor ``i`` (0 = lowest floor above the base): ``3*i`` x,
  ``3*i+1`` y, ``3*i+2`` twist (see :func:`dof`);
* a point (px, py) of floor i moves by ``ux - theta*(py - oy)``, ``uy + theta*(px - ox)``;
* each cantilever system (``Segment.kind`` "core" or "wall", grouped by ``system_id`` and
  stacked by ``level_index``) is a flexure-and-shear (Timoshenko) beam in the two bending
  planes plus a torsion member about its ``centre_m`` (the shear centre): a St Venant rod,
  or for open cores (``ecw_nm4 > 0``) a Vlasov beam with warping (below); the beam's
  rotations and the rates of twist are condensed out statically onto the floor freedoms;
* each frame segment (``kind`` "frame") is a set of storey springs k_x, k_y at its
  ``centre_m`` and k_twist, between floor i-1 (or the base) and floor i.

Units: SI throughout. Matrices are ``3N x 3N`` numpy arrays (N = number of floors):
mass in kg, kg m (coupling) and kg m^2 (twist); stiffness in N/m, N (coupling) and N m/rad.

Beam element. For one segment of length L the element is built from its exact
flexibility as a cantilever (tip force P and tip "moment" M conjugate to the section
slope beta)::

    u_tip    = L^3/3 D^-1 P + L^2/2 D^-1 M + L S^-1 P
    beta_tip = L^2/2 D^-1 P + L   D^-1 M

with the bending matrix ``D = [[EI_yy, EI_xy], [EI_xy, EI_xx]]`` acting on the sway
curvatures (u_x'', u_y'') (normal strain -(x u_x'' + y u_y'')) and the shear matrix
``S = diag(GA_x, GA_y)``; the stiffness is ``T^T F^-1 T`` with T the rigid-body
transfer from the fixed end. In one plane this is exactly the textbook Timoshenko
element with phi = 12 EI / (GA L^2) (no rotary inertia; see :func:`planar_timoshenko_element`),
and where the shear stiffness is the same in both directions it equals the route
"rotate to the principal axes of D, build two planar stacks, rotate back". The matrix
form is used because, with GA_x != GA_y, the shear matrix is not diagonal in the
principal bending axes, and the rotate-and-build route would drop that coupling.
A shear stiffness of zero means "shear deformation neglected" (Euler-Bernoulli).

Torsion. With ``ecw_nm4 == 0`` a segment is a St Venant rod, ``GJ/L`` on the twist drift
of its storey. Where consecutive segments of a stack have ``ecw_nm4 > 0`` they form a
thin-walled (Vlasov) torsion beam, ``E C_w phi'''' - GJ phi'' = m_t`` (V. Z. Vlasov,
*Thin-walled elastic beams*, 1961; N. S. Trahair, *Flexural-Torsional Buckling of
Structures*, 1993, the finite-element chapter; from memory), with two freedoms per node:
the twist phi (the floor's twist: floors are rigid, so every plan point twists alike) and
the rate of twist phi' (the warping freedom). Cubic (Hermite) interpolation of phi gives
the standard element (:func:`torsion_element`)::

    K = E C_w / L^3 [[12, 6L, -12, 6L], [6L, 4L^2, -6L, 2L^2], ...]      (Euler-Bernoulli form)
      + GJ / (30 L) [[36, 3L, -36, 3L], [3L, 4L^2, -3L, -L^2],
                     [-36, -3L, 36, -3L], [3L, -L^2, -3L, 4L^2]]            (integral of GJ phi'^2)

on [phi1, phi1', phi2, phi2'] -- the second matrix has the form of the consistent
geometric stiffness of a beam under axial force (J. S. Przemieniecki, *Theory of Matrix
Structural Analysis*, 1968, from memory). Warping is restrained (phi' = 0) where such a
beam starts at the fixed base, and free everywhere else: at its top, and at its bottom
when it starts higher up (on a transfer structure or on a storey where the core is
closed or absent; on the safe side). The rates of twist carry no mass and are condensed
out statically like the bending slopes. Bending and torsion about the shear centre are
uncoupled in the section, so the two condensations are independent. With ``GJ = 0`` the
torsion beam is the Euler-Bernoulli cantilever (E C_w for E I); with both it is the
analogue of the parallel flexure-shear (wall-frame) cantilever, alpha = H sqrt(GJ / E C_w)
(methods.md section 7).

Supports. A stack whose lowest segment has ``level_index`` 0 is fixed at the base
(translations and rotations zero). A stack that starts higher (or resumes after a storey
with no segment of that system) has its bottom translation tied to the floor below its
first segment and its bottom rotation free (pinned on the unmodelled transfer structure);
:func:`assembly_notes` reports every such case. A stack that stops below the top simply
ends with a free rotation at its top floor.

P-Delta (:func:`geometric_stiffness`). The gravity load carried through storey i is the
weight of floors i..N-1, distributed in plan like their masses (each floor's weight taken
straight down). A vertical member carrying P at plan point p, drifting by
d = du + dtheta x (p - o) over the storey height h, contributes -P/h |d|^2 / 2 to the
potential energy; summed over the storey this gives::

    K_G(storey i) = -(g / h_i) * B_i^T ( sum_{j >= i} M_j ) B_i

where M_j is floor j's 3x3 mass matrix about the origin (below) and B_i maps the floor
freedoms to the storey drift q_i - q_{i-1}. In words: -(W_above/h) on the x and y
drifts, -(W_above r^2/h) on the twist drift with r the polar radius of gyration of the
weight above about the origin (r^2 = sum (J_j + m_j d_j^2) / sum m_j), and coupling
terms from the eccentricity of that weight. This is the mass-based P-Delta formulation
of E. L. Wilson and A. Habibullah, "Static and dynamic analysis of multi-story buildings,
including P-Delta effects", Earthquake Spectra 3(2), 1987 (from memory).

Floor mass matrix about the origin (kinetic energy of a rigid plate; parallel-axis
theorem J_o = J_c + m d^2), with (dx, dy) = mass centre - origin::

    [[ m,      0,      -m dy          ],
     [ 0,      m,       m dx          ],
     [ -m dy,  m dx,    J_c + m(dx^2 + dy^2) ]]
"""
from __future__ import annotations

import math
import weakref
from collections import defaultdict
from collections.abc import Callable, Sequence
from functools import lru_cache, partial
from typing import Any

import numpy as np

from scipy.linalg import LinAlgError, cho_factor, solveh_banded

from .errors import InputError
from .stick import Level, Segment, StickModel

__all__ = [
    "G_STANDARD",
    "dof",
    "floor_mass_matrix",
    "mass_matrix",
    "stiffness_matrix",
    "geometric_stiffness",
    "planar_timoshenko_element",
    "beam_element",
    "torsion_element",
    "warping_runs",
    "cantilever_runs",
    "assembly_notes",
    "is_positive_definite",
    "cholesky_or_none",
    "is_stiffness_of",
    "stiffness_factor",
]

G_STANDARD = 9.81  # m/s^2, as used throughout the project (methods.md conventions)

_COMP = {"x": 0, "y": 1, "twist": 2, "theta": 2, "t": 2}
CANTILEVER_KINDS = ("core", "wall")
FRAME_KINDS = ("frame",)


def dof(i: int, comp: str | int) -> int:
    """Global freedom index of floor ``i``: comp "x" (0), "y" (1) or "twist"/"theta" (2)."""
    if isinstance(comp, str):
        try:
            c = _COMP[comp]
        except KeyError:
            raise ValueError(f"unknown freedom {comp!r}; use 'x', 'y' or 'twist'") from None
    else:
        c = int(comp)
        if c not in (0, 1, 2):
            raise ValueError(f"freedom component must be 0, 1 or 2, got {comp!r}")
    if i < 0:
        raise ValueError(f"floor index must be >= 0, got {i}")
    return 3 * i + c


def _where(stick: StickModel) -> str:
    return f"stick model of building {stick.building_name or stick.building_id!r}"


def _finite(*values: float) -> bool:
    return all(math.isfinite(float(v)) for v in values)


def _check_level(stick: StickModel, i: int, lv: Level) -> None:
    if not _finite(lv.mass_kg, lv.polar_moment_kg_m2, *lv.mass_centre_m) or lv.mass_kg <= 0:
        raise InputError(f"{_where(stick)}: floor {lv.name!r} has no positive finite mass ({lv.mass_kg!r} kg)")
    if lv.polar_moment_kg_m2 <= 0:
        raise InputError(
            f"{_where(stick)}: floor {lv.name!r} has no positive polar mass moment ({lv.polar_moment_kg_m2!r} kg m^2)"
        )


def _check_segment(stick: StickModel, s: Segment) -> None:
    where = f"{_where(stick)}: segment {s.system_id!r} at level index {s.level_index}"
    if not 0 <= s.level_index < stick.n_levels:
        raise InputError(f"{where}: level index outside 0..{stick.n_levels - 1}")
    vals = (s.length_m, *s.centre_m, s.ei_xx_nm2, s.ei_yy_nm2, s.ei_xy_nm2, s.ga_x_n, s.ga_y_n,
            s.gj_nm2, s.ecw_nm4, s.k_x_n_m, s.k_y_n_m, s.k_twist_nm_rad)
    if not _finite(*vals):
        raise InputError(f"{where}: non-finite stiffness or geometry")
    if s.length_m <= 0:
        raise InputError(f"{where}: length {s.length_m!r} m is not positive")
    if s.kind in CANTILEVER_KINDS:
        if s.ei_xx_nm2 <= 0 or s.ei_yy_nm2 <= 0 or s.ei_xx_nm2 * s.ei_yy_nm2 - s.ei_xy_nm2**2 <= 0:
            raise InputError(f"{where}: bending stiffness (EI_xx, EI_yy, EI_xy) is not positive definite")
        if s.ga_x_n < 0 or s.ga_y_n < 0 or s.gj_nm2 < 0 or s.ecw_nm4 < 0:
            raise InputError(f"{where}: negative shear, torsional or warping stiffness")
    elif s.kind in FRAME_KINDS:
        if s.k_x_n_m < 0 or s.k_y_n_m < 0 or s.k_twist_nm_rad < 0:
            raise InputError(f"{where}: negative storey spring stiffness")
    else:
        raise InputError(f"{where}: unknown kind {s.kind!r} (expected core, wall or frame)")


def _check_stick(stick: StickModel) -> None:
    """Raise InputError for an unusable stick model (checked once per live model)."""
    _memoised(stick, ("checked",), lambda: _check_stick_now(stick))


def _check_stick_now(stick: StickModel) -> bool:
    if stick.n_levels == 0:
        raise InputError(f"{_where(stick)}: no floors above the base")
    if not _finite(*stick.origin_m):
        raise InputError(f"{_where(stick)}: non-finite plan origin")
    for i, lv in enumerate(stick.levels):
        _check_level(stick, i, lv)
    for s in stick.segments:
        _check_segment(stick, s)
    return True


# ----------------------------------------------------------------------------------- mass


def floor_mass_matrix(level: Level, origin: Sequence[float]) -> np.ndarray:
    """3x3 mass matrix of one rigid floor about ``origin`` (kg, kg m, kg m^2); see module doc."""
    m = float(level.mass_kg)
    dx = float(level.mass_centre_m[0]) - float(origin[0])
    dy = float(level.mass_centre_m[1]) - float(origin[1])
    jo = float(level.polar_moment_kg_m2) + m * (dx * dx + dy * dy)  # parallel-axis theorem
    return np.array([[m, 0.0, -m * dy], [0.0, m, m * dx], [-m * dy, m * dx, jo]])


def _floor_mass_blocks(stick: StickModel) -> np.ndarray:
    """(N, 3, 3) stack of :func:`floor_mass_matrix` of every floor (same formulas, vectorised)."""
    m = np.array([float(lv.mass_kg) for lv in stick.levels])
    dx = np.array([float(lv.mass_centre_m[0]) for lv in stick.levels]) - float(stick.origin_m[0])
    dy = np.array([float(lv.mass_centre_m[1]) for lv in stick.levels]) - float(stick.origin_m[1])
    jo = np.array([float(lv.polar_moment_kg_m2) for lv in stick.levels]) + m * (dx * dx + dy * dy)
    out = np.zeros((len(m), 3, 3))
    out[:, 0, 0] = out[:, 1, 1] = m
    out[:, 0, 2] = out[:, 2, 0] = -m * dy
    out[:, 1, 2] = out[:, 2, 1] = m * dx
    out[:, 2, 2] = jo
    return out


def mass_matrix(stick: StickModel) -> np.ndarray:
    """Lumped rigid-floor mass matrix (3N x 3N), symmetric positive definite."""
    _check_stick(stick)
    n = stick.n_levels
    mm = np.zeros((3 * n, 3 * n))
    ii = np.arange(n)
    mm.reshape(n, 3, n, 3)[ii, :, ii, :] = _floor_mass_blocks(stick)
    return mm


# ------------------------------------------------------------------------------ elements


def planar_timoshenko_element(ei: float, ga: float, length: float) -> np.ndarray:
    """Textbook 2-node Timoshenko beam element in one plane, freedoms [u1, beta1, u2, beta2].

    phi = 12 EI / (GA L^2) (``ga <= 0`` means shear deformation neglected, phi = 0);
    no rotary inertia. E.g. J. S. Przemieniecki, *Theory of Matrix Structural Analysis*
    (1968), sec. 5.6 (from memory). Units N/m, N, N m.
    """
    L = float(length)
    phi = 12.0 * ei / (ga * L * L) if ga > 0 else 0.0
    c = ei / (L**3 * (1.0 + phi))
    return c * np.array([
        [12.0, 6 * L, -12.0, 6 * L],
        [6 * L, (4 + phi) * L * L, -6 * L, (2 - phi) * L * L],
        [-12.0, -6 * L, 12.0, -6 * L],
        [6 * L, (2 - phi) * L * L, -6 * L, (4 + phi) * L * L],
    ])


def beam_element(
    ei_xx: float, ei_yy: float, ei_xy: float, ga_x: float, ga_y: float, length: float
) -> np.ndarray:
    """8x8 two-plane Timoshenko element, freedoms [u1x, u1y, b1x, b1y, u2x, u2y, b2x, b2y].

    ``u`` are the sway translations and ``b`` the section slopes (conjugate to the bending
    moments), node 1 at the bottom. Built from the exact cantilever flexibility (module
    doc); ``ga_* <= 0`` means shear deformation neglected in that direction.
    """
    return _beam_element(float(ei_xx), float(ei_yy), float(ei_xy), float(ga_x), float(ga_y), float(length)).copy()


@lru_cache(maxsize=4096)
def _beam_element(ei_xx: float, ei_yy: float, ei_xy: float, ga_x: float, ga_y: float, length: float) -> np.ndarray:
    """Cached :func:`beam_element` (segments repeat over the height); read-only result."""
    L = length
    dm = np.array([[ei_yy, ei_xy], [ei_xy, ei_xx]], dtype=float)
    dinv = np.linalg.inv(dm)
    sinv = np.diag([1.0 / ga_x if ga_x > 0 else 0.0, 1.0 / ga_y if ga_y > 0 else 0.0])
    flex = np.block([
        [L**3 / 3.0 * dinv + L * sinv, L**2 / 2.0 * dinv],
        [L**2 / 2.0 * dinv, L * dinv],
    ])
    eye, zero = np.eye(2), np.zeros((2, 2))
    # tip deformation relative to the rigid-body motion of node 1
    t = np.block([[-eye, -L * eye, eye, zero], [zero, -eye, zero, eye]])
    kff = np.linalg.inv(flex)
    kff = 0.5 * (kff + kff.T)
    ke = t.T @ kff @ t
    ke.setflags(write=False)
    return ke


def torsion_element(ecw: float, gj: float, length: float) -> np.ndarray:
    """4x4 thin-walled (Vlasov) torsion element, freedoms [phi1, phi1', phi2, phi2'].

    ``ecw`` = E C_w (N m^4), ``gj`` = G J (N m^2), ``length`` L (m); node 1 at the bottom.
    E C_w times the Euler-Bernoulli bending element plus G J times the consistent matrix
    of the integral of phi'^2 under cubic interpolation (module doc). Units N m/rad,
    N m^2, N m^3.
    """
    return _torsion_element(float(ecw), float(gj), float(length)).copy()


@lru_cache(maxsize=1024)
def _torsion_element(ecw: float, gj: float, length: float) -> np.ndarray:
    L = length
    bend = (ecw / L**3) * np.array([
        [12.0, 6 * L, -12.0, 6 * L],
        [6 * L, 4 * L * L, -6 * L, 2 * L * L],
        [-12.0, -6 * L, 12.0, -6 * L],
        [6 * L, 2 * L * L, -6 * L, 4 * L * L],
    ])
    stv = (gj / (30.0 * L)) * np.array([
        [36.0, 3 * L, -36.0, 3 * L],
        [3 * L, 4 * L * L, -3 * L, -L * L],
        [-36.0, -3 * L, 36.0, -3 * L],
        [3 * L, -L * L, -3 * L, 4 * L * L],
    ])
    ke = bend + stv
    ke.setflags(write=False)
    return ke


def _plan_map(centre: Sequence[float], origin: Sequence[float]) -> np.ndarray:
    """2x3 map from floor freedoms (ux, uy, theta) to the translation of a plan point."""
    dx = float(centre[0]) - float(origin[0])
    dy = float(centre[1]) - float(origin[1])
    return np.array([[1.0, 0.0, -dy], [0.0, 1.0, dx]])


# ---------------------------------------------------------------------------- grouping


def cantilever_runs(stick: StickModel) -> list[tuple[str, list[Segment]]]:
    """Cantilever stacks: per ``system_id``, maximal runs of consecutive ``level_index``.

    Returned as (system_id, segments bottom to top). Two segments of one system in the
    same storey are an input error.
    """
    groups: dict[str, list[Segment]] = defaultdict(list)
    for s in stick.segments:
        if s.kind in CANTILEVER_KINDS:
            groups[s.system_id].append(s)
    runs: list[tuple[str, list[Segment]]] = []
    for sid in sorted(groups):
        segs = sorted(groups[sid], key=lambda s: s.level_index)
        for a, b in zip(segs, segs[1:]):
            if a.level_index == b.level_index:
                raise InputError(
                    f"{_where(stick)}: system {sid!r} has two segments at level index {a.level_index}"
                )
        run = [segs[0]]
        for s in segs[1:]:
            if s.level_index == run[-1].level_index + 1:
                run.append(s)
            else:
                runs.append((sid, run))
                run = [s]
        runs.append((sid, run))
    return runs


def warping_runs(run: Sequence[Segment]) -> list[list[Segment]]:
    """Maximal stretches of consecutive segments of one cantilever run with ``ecw_nm4 > 0``
    (each becomes one Vlasov torsion beam; the other segments stay St Venant rods)."""
    out: list[list[Segment]] = []
    cur: list[Segment] = []
    for s in run:
        if s.ecw_nm4 > 0:
            cur.append(s)
        elif cur:
            out.append(cur)
            cur = []
    if cur:
        out.append(cur)
    return out


def assembly_notes(stick: StickModel) -> tuple[str, ...]:
    """Plain-language notes on support assumptions made while assembling (one line each)."""
    notes = []
    for sid, run in cantilever_runs(stick):
        for wr in warping_runs(run):
            if wr[0].level_index > 0:
                below = stick.levels[wr[0].level_index - 1].name
                notes.append(
                    f"system {sid!r}: warping torsion (open section) from floor {below!r} up, "
                    "warping taken free there (not restrained)"
                )
        first, last = run[0], run[-1]
        if first.level_index > 0:
            below = stick.levels[first.level_index - 1].name
            notes.append(
                f"system {sid!r} starts at floor {below!r} (not at the base): assumed pinned there "
                "(translation tied to that floor, rotation free)"
            )
        if last.level_index < stick.n_levels - 1:
            notes.append(
                f"system {sid!r} stops at floor {stick.levels[last.level_index].name!r} below the top"
            )
    return tuple(notes)


# --------------------------------------------------------------------------- stiffness


def _add_run(kg: np.ndarray, stick: StickModel, run: list[Segment]) -> None:
    """Assemble one cantilever run, condense its slopes, add to the global matrix."""
    origin = stick.origin_m
    a = run[0].level_index
    fixed = a == 0
    floors = list(range(a if fixed else a - 1, run[-1].level_index + 1))
    nq = 3 * len(floors)
    nodes = len(run) + 1  # node 0 at the bottom
    # slope freedoms: node 0 only when the bottom is pinned (free rotation)
    bpos = {}
    for node in range(nodes):
        if node == 0 and fixed:
            continue
        bpos[node] = nq + 2 * len(bpos)
    nloc = nq + 2 * len(bpos)
    # Every element maps its 8 freedoms onto 10 local ones: [floor below (3), slopes below (2),
    # floor above (3), slopes above (2)]; a freedom the element lacks (no floor or slopes below
    # at a fixed base) maps to a spare index ``nloc`` with a zero block, dropped afterwards.
    n_el = len(run)
    lev = np.array([s.level_index for s in run], dtype=np.intp)
    amap = np.zeros((n_el, 2, 3))  # _plan_map of every element
    amap[:, 0, 0] = amap[:, 1, 1] = 1.0
    amap[:, 0, 2] = -(np.array([float(s.centre_m[1]) for s in run]) - float(origin[1]))
    amap[:, 1, 2] = np.array([float(s.centre_m[0]) for s in run]) - float(origin[0])
    fpos_of = np.full(run[-1].level_index + 2, -1, dtype=np.intp)
    fpos_of[floors] = np.arange(len(floors))
    bpos_of = np.array([bpos.get(node, -1) for node in range(nodes)], dtype=np.intp)
    gm = np.zeros((n_el, 8, 10))
    cols = np.full((n_el, 10), nloc, dtype=np.intp)
    three, two = np.arange(3), np.arange(2)
    below = lev - 1 >= 0
    gm[below, 0:2, 0:3] = amap[below]
    cols[below, 0:3] = 3 * fpos_of[lev[below] - 1][:, None] + three
    bottom = bpos_of[:-1] >= 0
    gm[bottom, 2:4, 3:5] = np.eye(2)
    cols[bottom, 3:5] = bpos_of[:-1][bottom][:, None] + two
    gm[:, 4:6, 5:8] = amap
    cols[:, 5:8] = 3 * fpos_of[lev][:, None] + three
    gm[:, 6:8, 8:10] = np.eye(2)
    cols[:, 8:10] = bpos_of[1:][:, None] + two
    kes = np.stack([_beam_element(s.ei_xx_nm2, s.ei_yy_nm2, s.ei_xy_nm2, s.ga_x_n, s.ga_y_n, s.length_m)
                    for s in run])
    contrib = np.matmul(np.matmul(gm.transpose(0, 2, 1), kes), gm)
    # element after element, as a loop of "kl[cols, cols] += contribution" would add them
    # (bincount sums the weights of each index in input order)
    flat = (cols[:, :, None] * (nloc + 1) + cols[:, None, :]).ravel()
    kl = np.bincount(flat, weights=contrib.ravel(), minlength=(nloc + 1) ** 2).reshape(nloc + 1, nloc + 1)
    kl = kl[:nloc, :nloc]
    # static condensation of the slopes (they carry no mass): K* = Kqq - Kqb Kbb^-1 Kbq
    # Kbb couples only neighbouring nodes (2 slopes each): half-bandwidth 3
    kc = _condensed(kl, nq, 3)
    lo, hi = 3 * floors[0], 3 * floors[-1] + 3  # the run's floors are consecutive
    kg[lo:hi, lo:hi] += 0.5 * (kc + kc.T)


def _condensed(kl: np.ndarray, nq: int, half_bandwidth: int) -> np.ndarray:
    """``kl`` with its freedoms after the first ``nq`` condensed out statically:
    K* = Kqq - Kqx Kxx^-1 Kxq, Kxx solved by banded Cholesky (``half_bandwidth`` off-diagonals)."""
    kqq, kqx, kxx = kl[:nq, :nq], kl[:nq, nq:], kl[nq:, nq:]
    bw = min(half_bandwidth, kxx.shape[0] - 1)
    ab = np.zeros((bw + 1, kxx.shape[0]))
    for k in range(bw + 1):
        ab[bw - k, k:] = np.diagonal(kxx, k)
    return kqq - kqx @ solveh_banded(ab, kqx.T)


def _add_warping_run(kg: np.ndarray, run: list[Segment]) -> None:
    """Assemble one Vlasov torsion beam (module doc), condense its rates of twist, add it
    to the twist freedoms of the global matrix."""
    a = run[0].level_index
    fixed = a == 0  # twist and warping restrained at the base
    floors = list(range(a if fixed else a - 1, run[-1].level_index + 1))
    nq = len(floors)
    nodes = len(run) + 1  # node 0 at the bottom

    def twist(node: int) -> int | None:
        if fixed:
            return None if node == 0 else node - 1
        return node

    wpos: dict[int, int] = {}
    for node in range(nodes):
        if node == 0 and fixed:
            continue
        wpos[node] = nq + len(wpos)
    nloc = nq + len(wpos)
    kl = np.zeros((nloc, nloc))
    for e, s in enumerate(run):
        ke = _torsion_element(s.ecw_nm4, s.gj_nm2, s.length_m)
        local = [twist(e), wpos.get(e), twist(e + 1), wpos[e + 1]]
        keep = [k for k, c in enumerate(local) if c is not None]
        cols = [local[k] for k in keep]
        kl[np.ix_(cols, cols)] += ke[np.ix_(keep, keep)]
    # K* = Kqq - Kqw Kww^-1 Kwq; Kww is tridiagonal (one rate of twist per node)
    kc = _condensed(kl, nq, 1)
    idx = np.array([3 * f + 2 for f in floors])
    kg[np.ix_(idx, idx)] += 0.5 * (kc + kc.T)


def _storey_map(n: int, i: int) -> tuple[np.ndarray, np.ndarray]:
    """Indices and 3 x len(idx) map from global freedoms to the drift q_i - q_{i-1}."""
    if i == 0:
        return np.arange(0, 3), np.eye(3)
    return np.arange(3 * i - 3, 3 * i + 3), np.hstack([-np.eye(3), np.eye(3)])


# Matrices of a stick model are kept while the model lives (plugins ask for the same matrix
# one after the other): id(stick) -> (weak reference to it, {key: read-only array}).
_MEMO: dict[int, tuple[weakref.ref, dict]] = {}


def _forget(ref: weakref.ref, key: int) -> None:
    entry = _MEMO.get(key)
    if entry is not None and entry[0] is ref:
        del _MEMO[key]


def _memoised(stick: StickModel, key: tuple, build: Callable[[], Any]) -> Any:
    """``build()`` once per live stick model and key (frozen models: the result cannot change)."""
    entry = _MEMO.get(id(stick))
    if entry is None or entry[0]() is not stick:
        try:
            ref = weakref.ref(stick, partial(_forget, key=id(stick)))
        except TypeError:  # not weakly referenceable: no memo
            return build()
        entry = _MEMO[id(stick)] = (ref, {})
    if key not in entry[1]:
        entry[1][key] = build()
    return entry[1][key]


def stiffness_matrix(stick: StickModel, *, p_delta: bool = False, g: float = G_STANDARD) -> np.ndarray:
    """Lateral stiffness matrix (3N x 3N) condensed onto the floor freedoms.

    With ``p_delta`` the geometric stiffness of :func:`geometric_stiffness` is added.
    Symmetric; positive definite when every floor is restrained in x, y and twist
    (and, with P-Delta, when the building is stable under its own weight).
    Assembled once per stick model and (p_delta, g) while the model lives; every call
    returns a fresh copy.
    """
    return _stiffness(stick, p_delta, g).copy()


def is_stiffness_of(stick: StickModel, matrix: np.ndarray, *, p_delta: bool = False, g: float = G_STANDARD) -> bool:
    """True when ``matrix`` equals the (memoised) :func:`stiffness_matrix` of ``stick`` with
    these arguments, so that the stick's other forms of it (banded, factorised) may stand in
    for it; False when it differs or was never assembled for this model."""
    entry = _MEMO.get(id(stick))
    if entry is None or entry[0]() is not stick:
        return False
    own = entry[1].get(("k", True, float(g)) if p_delta else ("k", False))
    return own is not None and own.shape == np.shape(matrix) and bool(np.array_equal(own, matrix))


def stiffness_factor(stick: StickModel, *, p_delta: bool = False, g: float = G_STANDARD
                     ) -> tuple[np.ndarray, bool] | None:
    """Cholesky factor (``scipy.linalg.cho_factor`` form, for ``cho_solve``) of
    :func:`stiffness_matrix`, or None when that matrix is not positive definite.
    Computed once per stick model and (p_delta, g) while the model lives; do not modify it."""
    def build() -> tuple[np.ndarray, bool] | None:
        fac = cholesky_or_none(_stiffness(stick, p_delta, g))
        if fac is not None:
            fac[0].setflags(write=False)
        return fac

    return _memoised(stick, ("chol", bool(p_delta), float(g)), build)


def _readonly(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


def _stiffness(stick: StickModel, p_delta: bool, g: float) -> np.ndarray:
    """The memoised, read-only :func:`stiffness_matrix`."""
    k0 = _memoised(stick, ("k", False), lambda: _readonly(_stiffness_matrix(stick)))
    if not p_delta:
        return k0
    return _memoised(stick, ("k", True, float(g)), lambda: _readonly(k0 + geometric_stiffness(stick, g)))


def _stiffness_matrix(stick: StickModel) -> np.ndarray:
    """Assemble the stiffness matrix without P-Delta (see :func:`stiffness_matrix`)."""
    _check_stick(stick)
    n = stick.n_levels
    kg = np.zeros((3 * n, 3 * n))
    for _sid, run in cantilever_runs(stick):
        _add_run(kg, stick, run)
        for wr in warping_runs(run):
            _add_warping_run(kg, wr)
    _add_storey_springs(kg, stick)
    return 0.5 * (kg + kg.T)


def _add_storey_springs(kg: np.ndarray, stick: StickModel) -> None:
    """Add the St Venant torsion rods and the frame springs of every storey.

    Each such segment gives one block on the drift of its storey, d^T k d with d the map
    from the floor freedoms to the drift (module doc): for a rod d is the twist drift and
    k = GJ/L, for a frame d is the drift at its centre (x, y) and the twist drift and
    k = diag(k_x, k_y, k_twist). The blocks are computed together and added segment after
    segment (in ``stick.segments`` order)."""
    n = stick.n_levels
    at, blocks = _storey_blocks(stick)
    if not len(blocks):
        return
    ext = np.zeros((3 * n + 1, 3 * n + 1))
    ext[:3 * n, :3 * n] = kg
    np.add.at(ext.reshape(-1), (at[:, :, None] * (3 * n + 1) + at[:, None, :]).ravel(), blocks.ravel())
    kg[...] = ext[:3 * n, :3 * n]


def _storey_blocks(stick: StickModel) -> tuple[np.ndarray, np.ndarray]:
    """The blocks of :func:`_add_storey_springs`: (indices (S, 6) into the floor freedoms, 3N
    standing for the missing floor below the lowest storey; blocks (S, 6, 6)), segments in order."""
    n = stick.n_levels
    segs = [s for s in stick.segments
            if s.kind not in CANTILEVER_KINDS or (s.ecw_nm4 <= 0 and s.gj_nm2 > 0)]
    # cantilevers with E C_w > 0 are part of a Vlasov torsion beam (GJ included there)
    if not segs:
        return np.zeros((0, 6), dtype=np.intp), np.zeros((0, 6, 6))
    lev = np.array([s.level_index for s in segs], dtype=np.intp)
    frame = np.array([s.kind not in CANTILEVER_KINDS for s in segs])
    up = lev > 0
    b = np.where(up[:, None, None], np.hstack([-np.eye(3), np.eye(3)]),
                 np.hstack([np.zeros((3, 3)), np.eye(3)]))  # floor freedoms -> storey drift
    ox, oy = float(stick.origin_m[0]), float(stick.origin_m[1])
    dx = np.array([float(s.centre_m[0]) - ox for s in segs])
    dy = np.array([float(s.centre_m[1]) - oy for s in segs])
    a3 = np.zeros((len(segs), 3, 3))
    a3[:, 0, 0] = a3[:, 1, 1] = a3[:, 2, 2] = 1.0
    a3[:, 0, 2] = -dy
    a3[:, 1, 2] = dx
    d = np.matmul(a3, b)
    kd = np.zeros((len(segs), 3, 3))
    kd[:, 0, 0] = [s.k_x_n_m for s in segs]
    kd[:, 1, 1] = [s.k_y_n_m for s in segs]
    kd[:, 2, 2] = [s.k_twist_nm_rad for s in segs]
    frame_blocks = np.matmul(np.matmul(d.transpose(0, 2, 1), kd), d)
    kt = np.array([s.gj_nm2 / s.length_m if not f else 0.0 for s, f in zip(segs, frame)])
    row = b[:, 2, :]
    rod_blocks = kt[:, None, None] * (row[:, :, None] * row[:, None, :])
    blocks = np.where(frame[:, None, None], frame_blocks, rod_blocks)
    spare = 3 * n  # a spare row/column stands for the missing floor below the lowest storey
    at = np.where(up[:, None], 3 * lev[:, None] - 3 + np.arange(6), np.r_[[spare] * 3, np.arange(3)][None, :])
    return at, blocks


def geometric_stiffness_checks(stick: StickModel, g: float) -> None:
    """The input checks of :func:`geometric_stiffness` (gravity, storey heights from the top down)."""
    if not (math.isfinite(g) and g >= 0):
        raise ValueError(f"gravity must be finite and >= 0, got {g!r}")
    for lv in reversed(stick.levels):
        if not (math.isfinite(lv.height_m) and lv.height_m > 0):
            raise InputError(f"{_where(stick)}: floor {lv.name!r} has a storey height {lv.height_m!r} m")


def geometric_stiffness(stick: StickModel, g: float = G_STANDARD) -> np.ndarray:
    """P-Delta geometric stiffness (3N x 3N, negative semi-definite); formula in module doc.

    Storey i has the height ``levels[i].height_m`` and carries the weight of floors i..N-1.
    """
    _check_stick(stick)
    geometric_stiffness_checks(stick, g)
    n = stick.n_levels
    fm = _floor_mass_blocks(stick)
    # weight above each storey: floors summed from the top down, one after the other
    above = np.cumsum(fm[::-1], axis=0)[::-1]
    h = np.array([lv.height_m for lv in stick.levels], dtype=float)
    blk = (g / h)[:, None, None] * above  # b^T (sum M) b with b = [-I, I] is [[A, -A], [-A, A]]
    kgeo = np.zeros((3 * n, 3 * n))
    kv = kgeo.reshape(n, 3, n, 3)
    ii = np.arange(n)
    # -(g/h_i) b^T A_i b of storey i: -blk_i at floors i and i-1, +blk_i between them; added in
    # the order of a loop over the storeys from the top down
    kv[ii[:-1], :, ii[:-1], :] -= blk[1:]
    kv[ii, :, ii, :] -= blk
    kv[ii[1:], :, ii[:-1], :] += blk[1:]
    kv[ii[:-1], :, ii[1:], :] += blk[1:]
    return 0.5 * (kgeo + kgeo.T)


def is_positive_definite(a: np.ndarray) -> bool:
    """True when the symmetric matrix ``a`` admits a Cholesky factorisation."""
    return cholesky_or_none(a) is not None


def cholesky_or_none(a: np.ndarray) -> tuple[np.ndarray, bool] | None:
    """``scipy.linalg.cho_factor(a)`` (for ``cho_solve``), or None when ``a`` is not positive definite."""
    try:
        return cho_factor(a)
    except LinAlgError:
        return None
