"""Storey drift and overall top drift under the serviceability wind.

Plugin ``drift``: needs ``modes``, provides ``drift_checks`` (two
:class:`~swayscreen.pipeline.plugin_api.Check`) and ``drift`` (a :class:`DriftResult`);
settings section ``[drift]`` (:class:`DriftSettings`); the site wind and the serviceability
return period come from ``[wind]``.

Load: for each wind direction sector, a static-equivalent along-wind force on every floor,
F_i = c_s c_d c_f q_p(z_i) b_i t_i (EN 1991-1-4 (5.4) with q_p from (4.8) at the
serviceability return period and the sector's c_dir; b_i the floor plate's width normal
to the wind, t_i its tributary height), acting at the plate centroid (so an eccentric plate
also twists the building). c_s c_d comes from Annex B (6.1) with the along-wind mode of that
direction and the structural damping (or 1 with ``include_structural_factor`` false).
Across-wind static loads are not included (EN 1991-1-4 has no across-wind load method for
buildings).

Response: u = K^-1 P with the stick model's stiffness matrix
(:func:`swayscreen.pipeline.assembly.stiffness_matrix`, DOF 3i x, 3i+1 y, 3i+2 twist), all
directions at once through the stick's banded factor (:mod:`swayscreen.pipeline.banded`). Drift
is measured at the vertices of each floor plate's convex hull (torsion included): storey
drift = |u_i(p) - u_{i-1}(p)| over the storey height, top drift = |u_top(p)| over the height
to the top floor; the largest over points and directions governs. Limits H/500 and h/500
(common practice; NBCC h_s/500 from memory; ASCE 7 Appendix C commentary 1/600-1/400).
"""
from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.linalg import cho_solve

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import BasicPlugin, Check, Context
from swayscreen.pipeline.settings import setting
from swayscreen.pipeline.stick import StickModel

from .wind_common import (
    FloorGeometry,
    Terrain,
    WindSettings,
    basic_wind_speed,
    mode_motions,
    plate_hulls,
    sector_directions,
    terrain_from_settings,
    wind_settings,
)
from .wind_en import along_wind_mode, en_along_response, en_input, peak_velocity_pressures

__all__ = [
    "DriftSettings",
    "floor_wind_forces",
    "load_vector",
    "solve_displacements",
    "drift_profile",
    "plate_points",
    "DriftCase",
    "DriftResult",
    "drift_analysis",
    "drift_checks",
    "PLUGIN",
]


@dataclass(frozen=True)
class DriftSettings:
    """Serviceability drift limits under wind."""

    overall_limit_ratio: float = setting(
        500.0, minimum=50, maximum=5000,
        source="common practice (H/500; H/400-H/600 in use, ASCE 7 Appendix C commentary, from memory)",
        doc="overall top drift limit is height / overall_limit_ratio")
    storey_limit_ratio: float = setting(
        500.0, minimum=50, maximum=5000,
        source="common practice (h/400-h/500, cladding-driven); NBC 4.1.3.5 h_s/500 (from memory)",
        doc="inter-storey drift limit is storey height / storey_limit_ratio")
    include_structural_factor: bool = setting(
        True, source="EN 1991-1-4 5.3 (5.4): F_w = c_s c_d c_f q_p A_ref",
        doc="multiply the static wind by the Annex B structural factor c_s c_d")
    p_delta: bool = setting(
        False, source="common practice (second-order effects are small at serviceability wind)",
        doc="include the P-Delta geometric stiffness in the drift analysis")


def floor_wind_forces(geometry: FloorGeometry, v_b_m_s: float, terrain: Terrain, ws: WindSettings,
                      c_s_c_d: float = 1.0) -> np.ndarray:
    """Along-wind force on each floor (N): c_s c_d c_f q_p(z_i) b_i t_i, EN 1991-1-4 (5.4)."""
    qp = peak_velocity_pressures(geometry.z_m, v_b_m_s, terrain, ws.air_density_kg_m3, ws.orography_factor,
                                 ws.turbulence_factor)
    return c_s_c_d * ws.force_coefficient * qp * geometry.width_m * geometry.tributary_m


def load_vector(forces_n: np.ndarray, along: np.ndarray, points_m: np.ndarray,
                origin: Sequence[float]) -> np.ndarray:
    """(3n,) load vector: force along ``along`` at one point per floor, with its twisting moment
    about the origin M = dx F_y - dy F_x (counter-clockwise positive)."""
    f = np.asarray(forces_n, dtype=float)
    p = np.asarray(points_m, dtype=float)
    fx, fy = f * along[0], f * along[1]
    mz = (p[:, 0] - origin[0]) * fy - (p[:, 1] - origin[1]) * fx
    return np.column_stack([fx, fy, mz]).ravel()


def solve_displacements(stiffness: np.ndarray, load: np.ndarray, name: str = "building") -> np.ndarray:
    """Floor displacements (n, 3): x m, y m, twist rad, from K u = P."""
    try:
        u = np.linalg.solve(np.asarray(stiffness, dtype=float), np.asarray(load, dtype=float))
    except np.linalg.LinAlgError:
        raise InputError(f"building {name!r}: the lateral stiffness matrix is singular (a mechanism); "
                         "drift cannot be computed") from None
    if not np.all(np.isfinite(u)):
        raise InputError(f"building {name!r}: the drift solution is not finite (stiffness ill-conditioned)")
    return u.reshape(-1, 3)


def plate_points(stick: StickModel) -> tuple[np.ndarray, np.ndarray]:
    """The points where drift is measured: the plate hull vertices of every floor, stacked.

    Returns (points (P, 2), floor index of each point (P,)), floors lowest first."""
    hulls = plate_hulls(stick)  # computed once per stick model, shared with the wind plugins
    return hulls.points_m, hulls.owner


def drift_profile(stick: StickModel, displacements: np.ndarray,
                  points: tuple[np.ndarray, np.ndarray] | None = None
                  ) -> tuple[np.ndarray, np.ndarray, float, int, tuple[float, float]]:
    """(storey drift m (n,), storey drift ratio (n,), top drift m, index of the governing top point,
    governing top point) over the plate hull vertices of each floor.

    ``points``: :func:`plate_points` of ``stick`` when already known (the same for every load case)."""
    u = np.asarray(displacements, dtype=float)
    n = stick.n_levels
    pts, owner = points if points is not None else plate_points(stick)
    ox, oy = stick.origin_m
    dx = pts[:, 0] - ox
    dy = pts[:, 1] - oy
    here = u[owner]  # displacements (x, y, twist) of the floor of each point
    below = np.where((owner > 0)[:, None], u[np.maximum(owner - 1, 0)], 0.0)  # the floor under it (base: 0)
    ui = np.column_stack([here[:, 0] - here[:, 2] * dy, here[:, 1] + here[:, 2] * dx])
    ub = np.column_stack([below[:, 0] - below[:, 2] * dy, below[:, 1] + below[:, 2] * dx])
    d = np.sqrt(np.sum((ui - ub) ** 2, axis=1))
    starts = np.searchsorted(owner, np.arange(n))
    drift = np.maximum.reduceat(d, starts)
    elev = np.array([lv.elevation_m for lv in stick.levels], dtype=float)
    h = elev - np.concatenate([[stick.base_elevation_m], elev[:-1]])
    ratio = drift / h
    top = owner == n - 1
    tpts = pts[top]
    mag = np.sqrt(np.sum(ui[top] ** 2, axis=1))
    k = int(np.argmax(mag))
    return drift, ratio, float(mag[k]), k, (float(tpts[k, 0]), float(tpts[k, 1]))


@dataclass(frozen=True)
class DriftCase:
    """Drift under the static-equivalent wind from one direction.

    Attributes:
        direction_deg: wind direction (from), clockwise from true north.
        return_period_yr: return period of the wind.
        v_b_m_s: basic wind speed used (m/s).
        c_s_c_d: structural factor applied.
        base_shear_n: total wind force (N).
        floor_forces_n: force on each floor (N), lowest first.
        displacements: per floor (x m, y m, twist rad), lowest first.
        top_drift_m: largest top-floor displacement over the plate corners (m).
        top_drift_ratio: top_drift_m / height.
        top_point_m: the corner where it occurs.
        storey_drift_m, storey_drift_ratio: per storey (below each floor), lowest first.
        governing_storey: storey name with the largest drift ratio.
    """

    direction_deg: float
    return_period_yr: float
    v_b_m_s: float
    c_s_c_d: float
    base_shear_n: float
    floor_forces_n: tuple[float, ...]
    displacements: tuple[tuple[float, float, float], ...]
    top_drift_m: float
    top_drift_ratio: float
    top_point_m: tuple[float, float]
    storey_drift_m: tuple[float, ...]
    storey_drift_ratio: tuple[float, ...]
    governing_storey: str

    @property
    def max_storey_drift_ratio(self) -> float:
        return max(self.storey_drift_ratio)


@dataclass(frozen=True)
class DriftResult:
    """Drift for every direction and the governing cases."""

    return_period_yr: float
    height_m: float
    overall_limit_ratio: float
    storey_limit_ratio: float
    cases: tuple[DriftCase, ...]

    @property
    def governing_overall(self) -> DriftCase:
        return max(self.cases, key=lambda c: c.top_drift_ratio)

    @property
    def governing_storey(self) -> DriftCase:
        return max(self.cases, key=lambda c: c.max_storey_drift_ratio)

    @property
    def storey_drift_ratio_envelope(self) -> tuple[float, ...]:
        """Largest drift ratio of each storey over all directions, lowest storey first."""
        return tuple(float(v) for v in np.max([c.storey_drift_ratio for c in self.cases], axis=0))

    @property
    def storey_drift_ratio(self) -> tuple[float, ...]:
        """Same as :attr:`storey_drift_ratio_envelope` (per storey, lowest first)."""
        return self.storey_drift_ratio_envelope


def drift_analysis(stick: StickModel, modes: Sequence[Any], ws: WindSettings, ds: DriftSettings,
                   stiffness: np.ndarray | Callable[[StickModel], np.ndarray] | None = None) -> DriftResult:
    """Drift under the serviceability wind for every direction sector.

    ``stiffness``: the (3n, 3n) matrix, a function of the stick model giving it, or None to use
    :func:`swayscreen.pipeline.assembly.stiffness_matrix` (with ``p_delta`` from the settings).
    """
    from swayscreen.pipeline.assembly import cholesky_or_none, is_stiffness_of, stiffness_matrix
    from swayscreen.pipeline.banded import banded_stiffness

    if stiffness is None:
        k_mat = stiffness_matrix(stick, p_delta=ds.p_delta)  # memoised per stick
    elif callable(stiffness):
        k_mat = stiffness(stick)
    else:
        k_mat = stiffness
    k_mat = np.asarray(k_mat, dtype=float)
    if k_mat.shape != (3 * stick.n_levels, 3 * stick.n_levels):
        raise InputError(f"building {stick.building_name!r}: stiffness matrix of shape {k_mat.shape}, "
                         f"expected {(3 * stick.n_levels,) * 2}")
    # the stick's own matrix is solved through its banded form (factorised once per stick,
    # shared with the modal analysis; linear in the floors); any other matrix directly
    band = banded_stiffness(stick, p_delta=ds.p_delta) if is_stiffness_of(stick, k_mat, p_delta=ds.p_delta) else None
    terrain = terrain_from_settings(ws)
    rp = ws.serviceability_return_period_yr
    rows = []
    motions = mode_motions(stick, modes) if modes else None
    for direction in sector_directions(ws.sectors):
        am = along_wind_mode(stick, modes, ws, direction, terrain, motions)
        cscd = 1.0
        if ds.include_structural_factor and am.phi is not None:
            cscd = en_along_response(en_input(am, ws, rp, terrain)).c_s_c_d
        vb = basic_wind_speed(ws, rp, direction)
        forces = floor_wind_forces(am.geometry, vb, terrain, ws, cscd)
        rows.append((direction, cscd, vb, forces, load_vector(forces, am.along, am.geometry.centre_m, stick.origin_m)))
    # every direction at once: one factorisation (shared with the modal analysis when the
    # matrix is the stick's own, banded: linear in the floors), many right-hand sides
    loads = np.column_stack([r[4] for r in rows]) if rows else np.zeros((3 * stick.n_levels, 0))
    if band is not None and band.positive_definite:
        solve = band.solve
    else:
        fac = cholesky_or_none(k_mat)
        solve = None if fac is None else (lambda b: cho_solve(fac, b, check_finite=False))
    if solve is not None:
        sway = solve(loads)
        if not np.all(np.isfinite(sway)):
            raise InputError(f"building {stick.building_name!r}: the drift solution is not finite "
                             "(stiffness ill-conditioned)")
        solutions = [sway[:, c].reshape(-1, 3) for c in range(len(rows))]
    else:  # not positive definite (P-Delta beyond stability, or a mechanism): general solve
        solutions = [solve_displacements(k_mat, r[4], stick.building_name) for r in rows]
    points = plate_points(stick)
    cases = []
    for (direction, cscd, vb, forces, _), u in zip(rows, solutions):
        drift, ratio, top, _, top_pt = drift_profile(stick, u, points)
        gi = int(np.argmax(ratio))
        disp = tuple(map(tuple, u.tolist()))
        cases.append(DriftCase(direction, rp, vb, cscd, float(forces.sum()), tuple(forces.tolist()), disp,
                               top, top / stick.height_m, top_pt, tuple(drift.tolist()),
                               tuple(ratio.tolist()), stick.levels[gi].name))
    return DriftResult(rp, stick.height_m, ds.overall_limit_ratio, ds.storey_limit_ratio, tuple(cases))


def drift_checks(result: DriftResult) -> tuple[Check, Check]:
    """Overall (H/limit) and inter-storey (h/limit) drift checks at the governing direction."""
    go = result.governing_overall
    gs = result.governing_storey
    overall_lim = 1.0 / result.overall_limit_ratio
    storey_lim = 1.0 / result.storey_limit_ratio
    r_over = go.top_drift_ratio
    r_storey = gs.max_storey_drift_ratio
    return (
        Check(f"overall wind drift (H/{result.overall_limit_ratio:g})", "EN 1991-1-4 static-equivalent wind",
              r_over, overall_lim, "-", r_over <= overall_lim, result.return_period_yr, go.direction_deg, None,
              f"top drift {go.top_drift_m * 1000:.1f} mm = H/{(1 / r_over) if r_over > 0 else math.inf:.0f} "
              f"at plate corner ({go.top_point_m[0]:.2f}, {go.top_point_m[1]:.2f})"),
        Check(f"inter-storey wind drift (h/{result.storey_limit_ratio:g})", "EN 1991-1-4 static-equivalent wind",
              r_storey, storey_lim, "-", r_storey <= storey_lim, result.return_period_yr, gs.direction_deg,
              gs.governing_storey,
              f"h/{(1 / r_storey) if r_storey > 0 else math.inf:.0f} at the worst plate corner"),
    )


def _run(ctx: Context) -> dict[str, Any]:
    from .wind_en import _modes_of, _stick_of

    ws = wind_settings(ctx.settings)
    ds = ctx.settings["drift"] if "drift" in ctx.settings else DriftSettings()
    stick = _stick_of(ctx, "drift")
    result = drift_analysis(stick, _modes_of(ctx), ws, ds)
    return {"drift_checks": drift_checks(result), "drift": result}


PLUGIN = BasicPlugin(
    name="drift",
    version="0.1.0",
    func=_run,
    needs=("modes",),
    provides=("drift_checks", "drift"),
    settings_section="drift",
    settings_type=DriftSettings,
)
