"""Modal analysis of the stick model: periods, mode shapes, mass participation, P-Delta.

Solves the generalized eigenproblem K phi = omega^2 M phi, lowest modes only, on the
rigid-floor model assembled by :mod:`swayscreen.pipeline.assembly` (pseudo-3D idealisation,
Stafford Smith and Coull 1991): up to :data:`DENSE_MAX_DOF` freedoms with the dense LAPACK
solver (scipy.linalg.eigh), above that by subspace iteration on the banded stiffness of
:mod:`swayscreen.pipeline.banded` with a Sturm sequence check (cost linear in the floors;
the same modes to round-off). Static solves use the banded factor. Also gives the Rayleigh
estimate of the fundamental period from the static sway under the floor weights applied
laterally (the idea of EN 1991-1-4 Annex F F.2(1) and EN 1998-1 4.3.3.2.2(5)).

Mode-shape normalisation (a fixed contract, other plugins depend on it): each shape is
scaled so that the largest of |ux|, |uy| and |theta| * r_i over all floors equals 1,
where r_i = sqrt(J_i / m_i) is floor i's radius of gyration about its mass centre; the
sign makes that largest component positive (the first floor/component in floor order
x, y, twist wins a tie).

Definitions (all modes M-orthogonal; units in the field docs):

* shares: fractions of the modal kinetic energy phi^T M phi carried by the floor mass
  centres' translation in x and y and by the floors' rotation about their own mass centres
  (in those coordinates the mass matrix is diagonal, so the three parts are non-negative
  and sum to 1; independent of the plan origin).
* effective mass in direction r (a rigid-body pattern): (phi^T M r)^2 / (phi^T M phi);
  r = unit translation in x or y, or unit rotation about the vertical axis through the
  building's overall mass centre (so the twist values do not depend on where the plan
  origin lies). Summed over all 3N modes it gives the total mass (x, y) and the total
  polar moment about that axis (twist); participation = effective / total.
* kind: "x", "y" or "torsion" when that share is at least 0.8, else "coupled"
  (threshold: common practice).
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.linalg import eigh

from swayscreen.pipeline.assembly import (
    G_STANDARD,
    _floor_mass_blocks,
    assembly_notes,
    mass_matrix,
    stiffness_matrix,
)
from swayscreen.pipeline.banded import BandedStiffness, banded_stiffness, count_modes_below
from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.settings import setting
from swayscreen.pipeline.stick import StickModel

__all__ = [
    "ModalSettings",
    "Mode",
    "ModalResult",
    "modal_analysis",
    "shape_at_point",
    "dominant_mode",
    "CLASSIFY_SHARE",
    "PLUGIN",
]

CLASSIFY_SHARE = 0.8  # share of modal kinetic energy that names a mode x / y / torsion (common practice)
PARTICIPATION_TARGET = 0.9  # cumulative effective mass worth reporting (EN 1998-1 4.3.3.3.1(3) idea)
DIRECTIONS = ("x", "y", "twist")


@dataclass(frozen=True)
class ModalSettings:
    """Modal analysis of the stick model."""

    n_modes: int = setting(
        9, minimum=1, maximum=300,
        source="common practice (enough for three modes per direction)",
        doc="number of modes to compute and report (capped at 3 per floor)")
    p_delta: bool = setting(
        True, source="common practice (gravity softening lengthens periods of slender towers)",
        doc="include the P-Delta geometric stiffness of the floor weights in the reported modes")


@dataclass(frozen=True, eq=False)
class Mode:
    """One natural mode of the stick model (equality is identity: it holds an array).

    Attributes:
        index: 1-based, in order of increasing frequency.
        period_s, frequency_hz, omega_rad_s: natural period (s), frequency (Hz), circular
            frequency (rad/s).
        shape: read-only (n_levels, 3) array, floors bottom to top: x (m), y (m) and twist
            (rad) about the stick model's origin, normalised as in the module doc.
        kind: "x", "y", "torsion" or "coupled".
        shares: "x", "y", "twist" fractions of the modal kinetic energy (sum 1).
        participation: effective modal mass ratio in "x", "y", "twist" (-).
        effective_mass: kg for "x" and "y", kg m^2 for "twist".
        generalized_mass_kg: phi^T M phi with this normalisation (kg, since the largest
            floor component is 1 m or the equivalent twist).
    """

    index: int
    period_s: float
    frequency_hz: float
    omega_rad_s: float
    shape: np.ndarray
    kind: str
    shares: dict[str, float]
    participation: dict[str, float]
    effective_mass: dict[str, float]
    generalized_mass_kg: float


@dataclass(frozen=True, eq=False)
class ModalResult:
    """The modal analysis of one building.

    Attributes:
        modes: lowest modes first.
        total_mass_kg: sum of the floor masses (kg).
        total_polar_kg_m2: polar mass moment of all floors about the vertical axis through
            the building's overall mass centre (kg m^2).
        cumulative: participation summed over the reported modes, per direction (-).
        p_delta: True when the reported modes include the P-Delta geometric stiffness.
        t1_without_p_delta_s / t1_with_p_delta_s: fundamental period without and with
            P-Delta (s); ``inf`` when the building is unstable under its own weight.
        rayleigh_period_s: "x" and "y": Rayleigh period from the static sway under the floor
            weights applied laterally at the mass centres, omega^2 = g F^T u / (u^T M u)
            (= g sum W u / sum W u^2 without twist), using the same stiffness as the modes (s).
        rayleigh_top_sway_m: "x" and "y": that static sway of the top floor's mass centre in
            the load direction (m); EN 1998-1 4.3.3.2.2(5) gives T_1 = 2 sqrt(d) from it.
        warnings: one line each.
        centre_of_mass_m: the building's overall mass centre (x, y) in plan (m).
    """

    modes: tuple[Mode, ...]
    total_mass_kg: float
    total_polar_kg_m2: float
    cumulative: dict[str, float]
    p_delta: bool
    t1_without_p_delta_s: float
    t1_with_p_delta_s: float
    rayleigh_period_s: dict[str, float]
    rayleigh_top_sway_m: dict[str, float]
    warnings: tuple[str, ...]
    centre_of_mass_m: tuple[float, float] = (0.0, 0.0)


def shape_at_point(
    mode: Mode, level_index: int, point_xy: Sequence[float], origin: Sequence[float]
) -> tuple[float, float]:
    """(x, y) modal displacement (m) of plan point ``point_xy`` on floor ``level_index``.

    ``origin`` is the stick model's ``origin_m`` (the twist axis of ``mode.shape``).
    """
    ux, uy, th = (float(v) for v in mode.shape[level_index])
    return (ux - th * (float(point_xy[1]) - float(origin[1])), uy + th * (float(point_xy[0]) - float(origin[0])))


def dominant_mode(modal_result: ModalResult, direction: str) -> Mode:
    """The reported mode with the largest participation in "x", "y" or "twist".

    Among modes whose participation is within 1e-9 of the largest, the lowest is returned.
    """
    key = "twist" if direction == "torsion" else direction
    if key not in DIRECTIONS:
        raise ValueError(f"direction must be 'x', 'y' or 'twist', got {direction!r}")
    if not modal_result.modes:
        raise ValueError("no modes in the modal result")
    best = max(m.participation[key] for m in modal_result.modes)
    return next(m for m in modal_result.modes if m.participation[key] >= best - 1e-9)


def _centre_map(stick: StickModel) -> np.ndarray:
    """3N x 3N map from origin freedoms to (mass-centre x, mass-centre y, twist) per floor."""
    n = stick.n_levels
    tmat = np.zeros((3 * n, 3 * n))
    ox, oy = stick.origin_m
    for i, lv in enumerate(stick.levels):
        dx, dy = lv.mass_centre_m[0] - ox, lv.mass_centre_m[1] - oy
        tmat[3 * i:3 * i + 3, 3 * i:3 * i + 3] = [[1.0, 0.0, -dy], [0.0, 1.0, dx], [0.0, 0.0, 1.0]]
    return tmat


def _rigid_patterns(stick: StickModel, centre: tuple[float, float]) -> dict[str, np.ndarray]:
    n = stick.n_levels
    rx = np.zeros(3 * n)
    ry = np.zeros(3 * n)
    rt = np.zeros(3 * n)
    rx[0::3] = 1.0
    ry[1::3] = 1.0
    ox, oy = stick.origin_m
    # unit rotation about the vertical axis through ``centre``: that point stays still
    rt[0::3] = centre[1] - oy
    rt[1::3] = -(centre[0] - ox)
    rt[2::3] = 1.0
    return {"x": rx, "y": ry, "twist": rt}


def _normalise(phi: np.ndarray, radii: np.ndarray) -> np.ndarray:
    shape = phi.reshape(-1, 3)
    scaled = np.column_stack([shape[:, 0], shape[:, 1], shape[:, 2] * radii])
    k = int(np.argmax(np.abs(scaled).ravel()))  # first maximum in floor order x, y, twist
    peak = scaled.ravel()[k]
    return phi / peak


def _solve(k: np.ndarray, m: np.ndarray, n_modes: int) -> tuple[np.ndarray, np.ndarray]:
    # the lowest modes only (LAPACK sygvx); the matrices are finite by construction
    w2, vecs = eigh(k, m, subset_by_index=[0, n_modes - 1], check_finite=False)
    return w2, vecs


DENSE_MAX_DOF = 240
"""Models with at most this many freedoms (80 floors) are solved by the dense eigensolver
(LAPACK, cost growing with the cube of the floors, negligible at that size); larger ones by
subspace iteration on the banded stiffness (:func:`_subspace_modes`), linear in the floors.
Both give the same modes to round-off."""

_SUBSPACE_MAX_IT = 200
_SUBSPACE_TOL = 1e-11  # relative residual of every returned mode (M-norm)


def _subspace_modes(stick: StickModel, band: BandedStiffness, n_modes: int) -> tuple[np.ndarray, np.ndarray] | None:
    """The lowest ``n_modes`` of K phi = w^2 M phi by subspace iteration with Rayleigh-Ritz
    projection (K.-J. Bathe, *Finite Element Procedures*, 1996, section 11.6; from memory),
    the solves with K from the banded factor, M applied floor by floor; None when it does not
    settle or the Sturm check fails (the caller then uses the dense solver).

    q = max(2 p, p + 8) vectors: smooth sway and twist shapes (height powers) and
    pseudo-random ones from a fixed seed (deterministic; every mode has a part in them).
    Converged when every wanted pair has a relative residual
    ||w^2 K^-1 M phi - phi||_M <= 1e-11; then a Sturm sequence count proves that no mode
    below them was missed (exactly p eigenvalues below the midpoint to the next Ritz value).
    """
    n = stick.n_levels
    ndof = 3 * n
    q = min(ndof, max(2 * n_modes, n_modes + 8))
    if 2 * q > ndof:
        return None
    blocks = _floor_mass_blocks(stick)

    def mass(x: np.ndarray) -> np.ndarray:
        return np.matmul(blocks, x.reshape(n, 3, -1)).reshape(ndof, -1)

    z = np.array([lv.elevation_m for lv in stick.levels], dtype=float) - stick.base_elevation_m
    z = z / z[-1] if z[-1] > 0 else np.arange(1, n + 1) / n
    radius = np.sqrt(blocks[:, 2, 2] / blocks[:, 0, 0])  # about the origin: twist scaled like sway
    cols: list[np.ndarray] = []
    power = 1
    while len(cols) < q - max(2, q // 3):
        for c in range(3):
            v = np.zeros((n, 3))
            v[:, c] = z ** power / (radius if c == 2 else 1.0)
            cols.append(v.ravel())
        power += 1
    rng = np.random.default_rng(20250101)
    while len(cols) < q:
        cols.append(rng.standard_normal(ndof))
    x = np.column_stack(cols[:q])
    try:
        for _ in range(_SUBSPACE_MAX_IT):
            mx = mass(x)
            y = band.solve(mx)  # K^-1 M X
            k_r = y.T @ mx  # = Y^T K Y
            m_r = y.T @ mass(y)
            lam, vec = eigh(0.5 * (k_r + k_r.T), 0.5 * (m_r + m_r.T))
            x = y @ vec  # M-orthonormal Ritz vectors, ascending Ritz values
            xk = x[:, :n_modes]
            res = band.solve(mass(xk)) * lam[:n_modes] - xk
            if np.all(np.sqrt(np.abs(np.sum(res * mass(res), axis=0))) <= _SUBSPACE_TOL):
                sigma = 0.5 * (lam[n_modes - 1] + lam[n_modes])
                if not lam[0] > 0 or count_modes_below(stick, band, sigma) != n_modes:
                    return None
                return lam[:n_modes], xk
    except np.linalg.LinAlgError:
        return None
    return None


def _period(w2: float) -> float:
    return 2.0 * math.pi / math.sqrt(w2) if w2 > 0 else math.inf


def modal_analysis(
    stick: StickModel, n_modes: int = 9, p_delta: bool = True, g: float = G_STANDARD
) -> ModalResult:
    """Natural modes of the stick model (see module doc). Raises InputError for a mechanism."""
    warnings: list[str] = list(assembly_notes(stick))
    mm = mass_matrix(stick)
    n = stick.n_levels
    ndof = 3 * n
    # Positive definiteness and the static solves from the banded (uncondensed) stiffness:
    # linear in the floors, factorised once per stick and shared with the other plugins.
    # K + K_G positive definite implies K positive definite (K_G is negative semi-definite),
    # so K is factorised only when its factor is used or K + K_G is not positive definite.
    band_p = banded_stiffness(stick, p_delta=True, g=g)  # K + K_G (geometric_stiffness)
    stable = band_p.positive_definite
    band_0 = banded_stiffness(stick) if (not stable or not p_delta) else None
    if not stable and not band_0.positive_definite:  # type: ignore[union-attr]
        raise InputError(
            f"stick model of building {stick.building_name or stick.building_id!r}: the lateral stiffness is "
            "singular (some floor has no lateral system in x, y or twist); periods cannot be computed"
        )
    if n_modes < 1:
        raise ValueError(f"n_modes must be >= 1, got {n_modes}")
    if n_modes > ndof:
        warnings.append(f"{n_modes} modes requested; the model has only {ndof} freedoms")
        n_modes = ndof
    if p_delta and not stable:
        warnings.append(
            "P-Delta: the building is unstable under its own weight (stiffness with the geometric "
            "term is not positive definite); modes reported without P-Delta"
        )
    use_pd = p_delta and stable
    band = band_p if use_pd else band_0

    def lowest(with_pd: bool, count: int) -> tuple[np.ndarray, np.ndarray]:
        """The lowest modes of K (+ K_G with ``with_pd``): subspace iteration for large models,
        the dense solver for small ones or when the iteration does not settle."""
        got = None
        if ndof > DENSE_MAX_DOF:
            got = _subspace_modes(stick, band_p if with_pd else banded_stiffness(stick), count)
        if got is None:
            got = _solve(stiffness_matrix(stick, p_delta=with_pd, g=g), mm, count)
        return got

    w2, vecs = lowest(use_pd, n_modes)

    def first_period(with_pd: bool) -> float:
        return _period(float(lowest(with_pd, 1)[0][0]))

    if use_pd:
        t1_with, t1_without = _period(float(w2[0])), first_period(False)
    else:
        t1_without = _period(float(w2[0]))
        t1_with = first_period(True) if stable else math.inf

    masses = np.array([lv.mass_kg for lv in stick.levels])
    polars = np.array([lv.polar_moment_kg_m2 for lv in stick.levels])
    radii = np.sqrt(polars / masses)
    total_mass = float(masses.sum())
    cx = float(sum(lv.mass_kg * lv.mass_centre_m[0] for lv in stick.levels) / total_mass)
    cy = float(sum(lv.mass_kg * lv.mass_centre_m[1] for lv in stick.levels) / total_mass)
    patterns = _rigid_patterns(stick, (cx, cy))
    totals = {d: float(r @ mm @ r) for d, r in patterns.items()}
    tmat = _centre_map(stick)
    diag_mass = np.repeat(masses, 3)
    diag_mass[2::3] = polars

    modes = []
    for j in range(n_modes):
        phi = _normalise(vecs[:, j], radii)
        gen = float(phi @ mm @ phi)
        centre_coords = tmat @ phi
        parts = diag_mass * centre_coords**2
        ke = float(parts.sum())
        shares = {"x": float(parts[0::3].sum() / ke), "y": float(parts[1::3].sum() / ke),
                  "twist": float(parts[2::3].sum() / ke)}
        eff = {d: float((phi @ mm @ r) ** 2 / gen) for d, r in patterns.items()}
        part = {d: eff[d] / totals[d] for d in DIRECTIONS}
        kind = "coupled"
        for d, name in (("x", "x"), ("y", "y"), ("twist", "torsion")):
            if shares[d] >= CLASSIFY_SHARE:
                kind = name
        w2j = float(w2[j])
        omega = math.sqrt(w2j) if w2j > 0 else 0.0
        shape = phi.reshape(n, 3).copy()
        shape.setflags(write=False)
        modes.append(Mode(
            index=j + 1,
            period_s=_period(w2j),
            frequency_hz=omega / (2.0 * math.pi),
            omega_rad_s=omega,
            shape=shape,
            kind=kind,
            shares=shares,
            participation=part,
            effective_mass=eff,
            generalized_mass_kg=gen,
        ))
    cumulative = {d: float(sum(m.participation[d] for m in modes)) for d in DIRECTIONS}
    low = [d for d in ("x", "y") if cumulative[d] < PARTICIPATION_TARGET]
    if low and n_modes < ndof:
        warnings.append(
            f"cumulative effective mass below {PARTICIPATION_TARGET:.0%} in {', '.join(low)} over "
            f"{n_modes} modes; consider more modes"
        )

    # Rayleigh estimate per direction: floor weights applied laterally at the mass centres
    ray_t: dict[str, float] = {}
    ray_d: dict[str, float] = {}
    top = n - 1
    forces = np.column_stack([g * (mm @ patterns[d]) for d in ("x", "y")])
    sway = band.solve(forces)  # both load cases with the one factor
    for c, d in enumerate(("x", "y")):
        force, u = forces[:, c], sway[:, c]
        w2r = float(force @ u) / float(u @ mm @ u)
        ray_t[d] = _period(w2r)
        ray_d[d] = float((tmat @ u)[3 * top + (0 if d == "x" else 1)])

    return ModalResult(
        modes=tuple(modes),
        total_mass_kg=total_mass,
        total_polar_kg_m2=totals["twist"],
        cumulative=cumulative,
        p_delta=use_pd,
        t1_without_p_delta_s=t1_without,
        t1_with_p_delta_s=t1_with,
        rayleigh_period_s=ray_t,
        rayleigh_top_sway_m=ray_d,
        warnings=tuple(warnings),
        centre_of_mass_m=(cx, cy),
    )


def _settings(ctx: Context) -> ModalSettings:
    sec = ctx.settings.get("modal") if isinstance(ctx.settings, Mapping) else None
    return sec if isinstance(sec, ModalSettings) else ModalSettings()


def _run(ctx: Context) -> dict[str, Any]:
    if ctx.stick is None:
        raise InputError(f"building {ctx.building.name!r}: no stick model, modal analysis not possible")
    s = _settings(ctx)
    return {"modes": modal_analysis(ctx.stick, n_modes=s.n_modes, p_delta=s.p_delta)}


PLUGIN = BasicPlugin(
    name="modal",
    version="1.0",
    func=_run,
    needs=(),
    provides=("modes",),
    settings_section="modal",
    settings_type=ModalSettings,
)
