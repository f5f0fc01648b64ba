"""Along-wind acceleration by EN 1991-1-4:2005 Annex B (procedure 1), with the modal results.

Plugin ``wind_en``: needs ``modes``, provides ``accel_en`` (an
:class:`~swayscreen.plugins.wind_common.AccelerationResult`), owns the ``[wind]`` settings
section (:class:`~swayscreen.plugins.wind_common.WindSettings`).

Formulas (EN 1991-1-4 clause numbers; recommended values, National Annexes may differ):
mean wind 4.3 (4.3)-(4.5), turbulence 4.4 (4.7), peak velocity pressure 4.5 (4.8),
Annex B: L(z) (B.1), S_L (B.2), B^2 (B.3), k_p (B.4), nu (B.5), R^2 (B.6), R_h, R_b
(B.7)-(B.8), sigma_a (B.10), K_x (B.11); structural factor 6.3.1 (6.1); damping Annex F:
delta = delta_s + delta_a (F.15), delta_a = c_f rho b v_m(z_s) / (2 n_1 m_e) (F.16/F.18).
B.10/B.11, Table F.2 and F.14 are written from memory and checked against the SBE-MSB03
Appendix A worked example and our own closed-form re-derivation (tests/test_wind_en.py).

Use of the modal results ("actual frequency, generalized mass and mode shape"): for each
wind direction the mode with the largest effective mass along the wind is used; Phi(z_i)
is its along-wind plan displacement at each floor's plate centroid, normalised to 1 at the
top floor. B.10 is applied in its discrete modal form

    sigma_a(z_i) = c_f rho I_v(z_s) v_m(z_s)^2 R Phi_i
                   * sum_j b_j t_j ln(z_j/z_0)/ln(z_s/z_0) Phi_j  /  M*

(t_j tributary height, b_j the floor's width normal to the wind, M* = phi^T M phi with the
same normalisation, z_j >= z_min). Derivation: the fluctuating force per unit height is
c_f rho b v_m(z) sigma_v with sigma_v = k_I k_r v_b constant over the height, and
v_m(z) sigma_v = I_v(z_s) v_m(z_s)^2 ln(z/z_0)/ln(z_s/z_0). Written as B.10 this defines

    m_e = M* / sum_j t_j Phi_j^2                     (F.14 discretised; kg/m)
    K_x = sum_j (b_j/b) t_j ln(z_j/z_0) Phi_j / (ln(z_s/z_0) sum_j t_j Phi_j^2)

which reduce to the continuous F.14 and the integral form of B.11 for a uniform tower,
(1.5 for a linear mode; B.11's closed form takes ln(h/z_s) = 0.5 instead of 0.511).
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.stick import StickModel

from .wind_common import (
    COUPLED_SHARE,
    MG,
    Z_MAX_M,
    AccelerationCase,
    AccelerationResult,
    FloorGeometry,
    ModeMotion,
    Terrain,
    WindSettings,
    basic_wind_speed,
    c_prob,
    directional_factor,
    directional_shape,
    directional_share,
    floor_geometry,
    mode_motions,
    required_return_periods,
    sector_directions,
    select_mode_motion,
    structural_damping_ratio,
    terrain_from_settings,
    wind_axes,
    wind_settings,
)

__all__ = [
    "METHOD",
    "terrain_factor",
    "roughness_factor",
    "mean_wind_speed",
    "turbulence_intensity",
    "peak_velocity_pressure",
    "peak_velocity_pressures",
    "reference_height",
    "turbulence_length_scale",
    "spectral_density",
    "admittance",
    "background_factor",
    "resonance_factor",
    "peak_factor",
    "upcrossing_frequency",
    "k_x_factor",
    "aerodynamic_log_decrement",
    "rms_acceleration",
    "structural_factor",
    "modal_equivalents",
    "EnAlongInput",
    "EnAlongResponse",
    "en_along_response",
    "en_peak_for_damping",
    "AlongMode",
    "along_wind_mode",
    "en_input",
    "en_accelerations",
    "PLUGIN",
]

METHOD = "EN 1991-1-4 Annex B"
Z0_II_M = 0.05  # EN 1991-1-4 (4.5): z_0,II
L_T_M = 300.0  # EN 1991-1-4 (B.1): reference length scale L_t
Z_T_M = 200.0  # EN 1991-1-4 (B.1): reference height z_t


# ---------------------------------------------------------------------------------------------
# Profile (EN 1991-1-4 4.3-4.5)


def terrain_factor(z0_m: float) -> float:
    """k_r = 0.19 (z_0 / z_0,II)^0.07, EN 1991-1-4 (4.5)."""
    return 0.19 * (z0_m / Z0_II_M) ** 0.07


def roughness_factor(z_m: float, terrain: Terrain) -> float:
    """c_r(z) = k_r ln(max(z, z_min) / z_0), EN 1991-1-4 (4.4)."""
    return terrain_factor(terrain.z0_m) * math.log(max(z_m, terrain.z_min_m) / terrain.z0_m)


def mean_wind_speed(z_m: float, v_b_m_s: float, terrain: Terrain, c_o: float = 1.0) -> float:
    """v_m(z) = c_r(z) c_o v_b (m/s), EN 1991-1-4 (4.3)."""
    return roughness_factor(z_m, terrain) * c_o * v_b_m_s


def turbulence_intensity(z_m: float, terrain: Terrain, c_o: float = 1.0, k_i: float = 1.0) -> float:
    """I_v(z) = k_I / (c_o ln(max(z, z_min) / z_0)), EN 1991-1-4 (4.7)."""
    return k_i / (c_o * math.log(max(z_m, terrain.z_min_m) / terrain.z0_m))


def peak_velocity_pressure(z_m: float, v_b_m_s: float, terrain: Terrain, rho: float = 1.25,
                           c_o: float = 1.0, k_i: float = 1.0) -> float:
    """q_p(z) = (1 + 7 I_v(z)) 1/2 rho v_m(z)^2 (Pa), EN 1991-1-4 (4.8)."""
    vm = mean_wind_speed(z_m, v_b_m_s, terrain, c_o)
    return (1.0 + 7.0 * turbulence_intensity(z_m, terrain, c_o, k_i)) * 0.5 * rho * vm * vm


def peak_velocity_pressures(z_m: np.ndarray, v_b_m_s: float, terrain: Terrain, rho: float = 1.25,
                            c_o: float = 1.0, k_i: float = 1.0) -> np.ndarray:
    """:func:`peak_velocity_pressure` at every height of ``z_m`` (Pa), the same operations in the
    same order on arrays (identical values), for the floor loads of a tall building."""
    ln = np.array([math.log(max(z, terrain.z_min_m) / terrain.z0_m) for z in z_m], dtype=float)
    vm = terrain_factor(terrain.z0_m) * ln * c_o * v_b_m_s  # v_m(z) = c_r(z) c_o v_b, (4.3)-(4.4)
    i_v = k_i / (c_o * ln)  # (4.7)
    return (1.0 + 7.0 * i_v) * 0.5 * rho * vm * vm  # (4.8)


def reference_height(height_m: float, terrain: Terrain) -> float:
    """z_s = 0.6 h >= z_min, EN 1991-1-4 Figure 6.1 (vertical structures such as buildings)."""
    return max(0.6 * height_m, terrain.z_min_m)


# ---------------------------------------------------------------------------------------------
# Annex B


def turbulence_length_scale(z_m: float, terrain: Terrain) -> float:
    """L(z) = L_t (z/z_t)^alpha, alpha = 0.67 + 0.05 ln z_0, z >= z_min (m), EN 1991-1-4 (B.1)."""
    alpha = 0.67 + 0.05 * math.log(terrain.z0_m)
    return L_T_M * (max(z_m, terrain.z_min_m) / Z_T_M) ** alpha


def spectral_density(f_l: float) -> float:
    """Non-dimensional spectrum S_L = 6.8 f_L / (1 + 10.2 f_L)^(5/3), EN 1991-1-4 (B.2)."""
    return 6.8 * f_l / (1.0 + 10.2 * f_l) ** (5.0 / 3.0)


def admittance(eta: float) -> float:
    """R_l(eta) = 1/eta - (1 - exp(-2 eta)) / (2 eta^2); 1 at eta = 0. EN 1991-1-4 (B.7)-(B.8)."""
    if eta < 1e-8:
        return 1.0
    return 1.0 / eta - (1.0 - math.exp(-2.0 * eta)) / (2.0 * eta * eta)


def background_factor(b_m: float, h_m: float, length_scale_m: float) -> float:
    """B^2 = 1 / (1 + 0.9 ((b + h) / L(z_s))^0.63), EN 1991-1-4 (B.3)."""
    return 1.0 / (1.0 + 0.9 * ((b_m + h_m) / length_scale_m) ** 0.63)


def resonance_factor(log_decrement: float, s_l: float, r_h: float, r_b: float) -> float:
    """R^2 = pi^2 / (2 delta) S_L R_h R_b, EN 1991-1-4 (B.6)."""
    return math.pi ** 2 / (2.0 * log_decrement) * s_l * r_h * r_b


def peak_factor(nu_hz: float, duration_s: float = 600.0) -> float:
    """k_p = sqrt(2 ln(nu T)) + 0.6 / sqrt(2 ln(nu T)), at least 3.0, EN 1991-1-4 (B.4)."""
    x = 2.0 * math.log(nu_hz * duration_s)
    if x <= 0:
        return 3.0
    r = math.sqrt(x)
    return max(r + 0.6 / r, 3.0)


def upcrossing_frequency(n1_hz: float, b2: float, r2: float) -> float:
    """nu = n_1 sqrt(R^2 / (B^2 + R^2)) >= 0.08 Hz, EN 1991-1-4 (B.5)."""
    return max(n1_hz * math.sqrt(r2 / (b2 + r2)), 0.08)


def k_x_factor(zeta: float, z_s_m: float, z0_m: float) -> float:
    """K_x = (2 zeta + 1) {(zeta + 1)[ln(z_s/z_0) + 0.5] - 1} / ((zeta + 1)^2 ln(z_s/z_0)),
    EN 1991-1-4 (B.11) for the mode shape Phi = (z/h)^zeta (from memory; 1.5 for zeta = 1)."""
    lz = math.log(z_s_m / z0_m)
    return (2 * zeta + 1) * ((zeta + 1) * (lz + 0.5) - 1) / ((zeta + 1) ** 2 * lz)


def aerodynamic_log_decrement(c_f: float, rho: float, b_m: float, v_m_m_s: float, n1_hz: float,
                              m_e_kg_m: float) -> float:
    """delta_a = c_f rho b v_m(z_s) / (2 n_1 m_e), EN 1991-1-4 (F.16)/(F.18) (along-wind)."""
    return c_f * rho * b_m * v_m_m_s / (2.0 * n1_hz * m_e_kg_m)


def rms_acceleration(c_f: float, rho: float, b_m: float, i_v: float, v_m_m_s: float, r: float,
                     k_x: float, phi: float, m_e_kg_m: float) -> float:
    """sigma_a(z) = c_f rho b I_v(z_s) v_m(z_s)^2 R K_x Phi(z) / m_e (m/s^2), EN 1991-1-4 (B.10)."""
    return c_f * rho * b_m * i_v * v_m_m_s ** 2 * r * k_x * phi / m_e_kg_m


def structural_factor(k_p: float, i_v: float, b2: float, r2: float) -> tuple[float, float, float]:
    """(c_s, c_d, c_s c_d), EN 1991-1-4 (6.1): c_s c_d = (1 + 2 k_p I_v sqrt(B^2 + R^2)) / (1 + 7 I_v),
    c_s = (1 + 7 I_v sqrt(B^2)) / (1 + 7 I_v), c_d = c_s c_d / c_s."""
    cscd = (1.0 + 2.0 * k_p * i_v * math.sqrt(b2 + r2)) / (1.0 + 7.0 * i_v)
    cs = (1.0 + 7.0 * i_v * math.sqrt(b2)) / (1.0 + 7.0 * i_v)
    return cs, cscd / cs, cscd


def modal_equivalents(z_m: np.ndarray, tributary_m: np.ndarray, width_m: np.ndarray, b_m: float,
                      phi: np.ndarray, generalized_mass_kg: float, terrain: Terrain,
                      z_s_m: float) -> tuple[float, float]:
    """(K_x, m_e kg/m) of a discrete mode (module docstring): the B.10 form of the modal response.

    ``phi`` is the along-wind mode shape normalised to 1 at the top, ``generalized_mass_kg``
    is M* in that normalisation.
    """
    phi = np.asarray(phi, dtype=float)
    t = np.asarray(tributary_m, dtype=float)
    den = float(np.sum(t * phi ** 2))
    if den <= 0:
        raise InputError("mode shape has no along-wind motion: cannot form the equivalent mass")
    logs = np.log(np.maximum(np.asarray(z_m, dtype=float), terrain.z_min_m) / terrain.z0_m)
    num = float(np.sum(np.asarray(width_m) / b_m * t * logs * phi)) / math.log(z_s_m / terrain.z0_m)
    return num / den, generalized_mass_kg / den


@dataclass(frozen=True)
class EnAlongInput:
    """Inputs of the Annex B along-wind response (SI units).

    Attributes:
        v_b_m_s: basic wind speed for the case (after c_prob and c_dir).
        terrain: z_0 and z_min.
        height_m: building height h.
        width_m: width normal to the wind b.
        frequency_hz: along-wind mode frequency n_1,x.
        equivalent_mass_kg_m: m_e (F.14).
        k_x: K_x (B.11 or the discrete modal form).
        structural_log_decrement: delta_s.
        force_coefficient: c_f.
        air_density_kg_m3: rho.
        orography_factor: c_o.
        turbulence_factor: k_I.
        duration_s: T in k_p.
    """

    v_b_m_s: float
    terrain: Terrain
    height_m: float
    width_m: float
    frequency_hz: float
    equivalent_mass_kg_m: float
    k_x: float
    structural_log_decrement: float
    force_coefficient: float = 1.3
    air_density_kg_m3: float = 1.25
    orography_factor: float = 1.0
    turbulence_factor: float = 1.0
    duration_s: float = 600.0


@dataclass(frozen=True)
class EnAlongResponse:
    """Annex B intermediate values and the along-wind acceleration where Phi = 1 (the top).

    Accelerations in m/s^2; logarithmic decrements; frequencies in Hz; lengths in m.
    """

    z_s_m: float
    v_m_m_s: float
    i_v: float
    length_scale_m: float
    f_l: float
    s_l: float
    eta_h: float
    eta_b: float
    r_h: float
    r_b: float
    delta_s: float
    delta_a: float
    delta: float
    r2: float
    b2: float
    nu_hz: float
    k_p_gust: float
    c_s: float
    c_d: float
    c_s_c_d: float
    k_p_accel: float
    sigma_a_m_s2: float
    peak_a_m_s2: float

    @property
    def damping_ratio(self) -> float:
        """Total damping ratio delta / (2 pi) (fraction of critical)."""
        return self.delta / (2.0 * math.pi)


def en_along_response(inp: EnAlongInput, log_decrement_total: float | None = None) -> EnAlongResponse:
    """EN 1991-1-4 Annex B procedure 1 along-wind response at the top (Phi = 1).

    ``log_decrement_total`` replaces delta = delta_s + delta_a (e.g. to add damper damping).
    Peak acceleration = k_p sigma_a with nu = n_1 in (B.4) (EN 1991-1-4 B.4(5)).
    """
    t = inp.terrain
    zs = reference_height(inp.height_m, t)
    vm = mean_wind_speed(zs, inp.v_b_m_s, t, inp.orography_factor)
    iv = turbulence_intensity(zs, t, inp.orography_factor, inp.turbulence_factor)
    lz = turbulence_length_scale(zs, t)
    n1 = inp.frequency_hz
    fl = n1 * lz / vm
    sl = spectral_density(fl)
    eta_h = 4.6 * inp.height_m * fl / lz
    eta_b = 4.6 * inp.width_m * fl / lz
    rh, rb = admittance(eta_h), admittance(eta_b)
    da = aerodynamic_log_decrement(inp.force_coefficient, inp.air_density_kg_m3, inp.width_m, vm, n1,
                                   inp.equivalent_mass_kg_m)
    delta = inp.structural_log_decrement + da if log_decrement_total is None else log_decrement_total
    if not delta > 0:
        raise ValueError(f"total logarithmic decrement must be positive, got {delta!r}")
    r2 = resonance_factor(delta, sl, rh, rb)
    b2 = background_factor(inp.width_m, inp.height_m, lz)
    nu = upcrossing_frequency(n1, b2, r2)
    kpg = peak_factor(nu, inp.duration_s)
    cs, cd, cscd = structural_factor(kpg, iv, b2, r2)
    kpa = peak_factor(n1, inp.duration_s)
    sigma = rms_acceleration(inp.force_coefficient, inp.air_density_kg_m3, inp.width_m, iv, vm,
                             math.sqrt(r2), inp.k_x, 1.0, inp.equivalent_mass_kg_m)
    return EnAlongResponse(zs, vm, iv, lz, fl, sl, eta_h, eta_b, rh, rb, inp.structural_log_decrement, da,
                           delta, r2, b2, nu, kpg, cs, cd, cscd, kpa, sigma, kpa * sigma)


def _input_from_details(details: Mapping[str, float]) -> EnAlongInput:
    terrain = Terrain("details", details["z0_m"], details["z_min_m"])
    return EnAlongInput(details["v_b_m_s"], terrain, details["height_m"], details["b_m"],
                        details["frequency_hz"], details["m_e_kg_m"], details["K_x"], details["delta_s"],
                        details["c_f"], details["rho_kg_m3"], details["c_o"], details["k_I"],
                        details["T_s"])


def en_peak_for_damping(details: Mapping[str, float], damping_ratio: float) -> float:
    """Peak along-wind acceleration at Phi = 1 (m/s^2) for a total damping ratio (fraction of
    critical: structural + aerodynamic + added), recomputed from a case's ``details``."""
    if not damping_ratio > 0:
        raise ValueError(f"damping ratio must be positive, got {damping_ratio!r}")
    return en_along_response(_input_from_details(details), 2.0 * math.pi * damping_ratio).peak_a_m_s2


# ---------------------------------------------------------------------------------------------
# The plugin


@dataclass(frozen=True)
class AlongMode:
    """The mode used for one wind direction and its along-wind equivalents.

    Attributes:
        direction_deg: wind direction (from), clockwise from true north.
        along: unit vector of the wind's travel in model x/y.
        geometry: the floors' wind geometry for this direction.
        mode: the selected mode (duck-typed modal result).
        participation: its effective-mass ratio along the wind.
        share: fraction of its kinetic energy along the wind.
        roof_component_m: raw along-wind shape value at the top floor (the normaliser).
        phi: along-wind shape per floor, 1 at the top (None when the mode does not move
            along the wind at the top).
        generalized_mass_kg: M* with that normalisation.
        k_x, m_e_kg_m: the discrete B.10 equivalents (module docstring).
        z_s_m: reference height.
    """

    direction_deg: float
    along: np.ndarray
    geometry: FloorGeometry
    mode: Any
    participation: float
    share: float
    roof_component_m: float
    phi: np.ndarray | None
    generalized_mass_kg: float
    k_x: float
    m_e_kg_m: float
    z_s_m: float


def along_wind_mode(stick: StickModel, modes: Sequence[Any], ws: WindSettings, direction_deg: float,
                    terrain: Terrain | None = None, motions: Sequence[ModeMotion] | None = None) -> AlongMode:
    """Pick the mode with the largest along-wind effective mass and form Phi, M*, K_x, m_e.

    ``motions``: :func:`~swayscreen.plugins.wind_common.mode_motions` of ``modes`` when already
    known (callers looping over directions compute them once)."""
    terrain = terrain_from_settings(ws) if terrain is None else terrain
    along, _ = wind_axes(direction_deg, stick.true_north_deg)
    fg = floor_geometry(stick, along, ws.plate_rule)
    mode, part, motion = select_mode_motion(modes, stick, along, motions)
    share = directional_share(stick, mode.shape, along, motion)
    raw = directional_shape(mode.shape, fg.centre_m, stick.origin_m, along)
    s = float(raw[-1])
    zs = reference_height(fg.height_m, terrain)
    if abs(s) <= 1e-9 * max(float(np.max(np.abs(np.asarray(mode.shape)[:, :2]))), 1e-300):
        return AlongMode(direction_deg, along, fg, mode, part, share, s, None, math.inf, math.nan, math.nan, zs)
    phi = raw / s
    gm = motion.generalized_mass_kg / s ** 2
    k_x, m_e = modal_equivalents(fg.z_m, fg.tributary_m, fg.width_m, fg.b_m, phi, gm, terrain, zs)
    return AlongMode(direction_deg, along, fg, mode, part, share, s, phi, gm, k_x, m_e, zs)


def en_input(am: AlongMode, ws: WindSettings, return_period_yr: float, terrain: Terrain | None = None,
             ) -> EnAlongInput:
    """Annex B inputs of one direction and return period."""
    terrain = terrain_from_settings(ws) if terrain is None else terrain
    vb = basic_wind_speed(ws, return_period_yr, am.direction_deg)
    return EnAlongInput(vb, terrain, am.geometry.height_m, am.geometry.b_m, float(am.mode.frequency_hz),
                        am.m_e_kg_m, am.k_x, 2.0 * math.pi * structural_damping_ratio(ws), ws.force_coefficient,
                        ws.air_density_kg_m3, ws.orography_factor, ws.turbulence_factor,
                        ws.peak_factor_duration_s)


def en_accelerations(stick: StickModel, modes: Sequence[Any], ws: WindSettings,
                     return_periods_yr: Sequence[float]) -> AccelerationResult:
    """Along-wind accelerations for every direction sector and return period (EN Annex B)."""
    terrain = terrain_from_settings(ws)
    zeta_s = structural_damping_ratio(ws)
    cases: list[AccelerationCase] = []
    warnings: list[str] = []
    motions = mode_motions(stick, modes) if modes else None
    for direction in sector_directions(ws.sectors):
        am = along_wind_mode(stick, modes, ws, direction, terrain, motions)
        fg, mode = am.geometry, am.mode
        if fg.fallback_plates:
            msg = "floor plate missing, plan size estimated from the mass moment: " + ", ".join(fg.fallback_plates)
            if msg not in warnings:
                warnings.append(msg)
        notes = []
        valid = True
        if fg.height_m > Z_MAX_M:
            valid = False
            notes.append(f"height {fg.height_m:.0f} m exceeds the EN 1991-1-4 limit of {Z_MAX_M:.0f} m")
        if am.share < COUPLED_SHARE:
            notes.append(f"mode {mode.index} is coupled: {am.share:.0%} of its kinetic energy along the wind")
        axis = (float(am.along[0]), float(am.along[1]))
        top_name = stick.levels[fg.top_index].name
        if am.phi is None:
            notes.append(f"mode {mode.index} has no along-wind motion at the top: no along-wind response")
            for rp in return_periods_yr:
                cases.append(AccelerationCase(METHOD, float(rp), direction, "along", axis, int(mode.index),
                                              float(mode.frequency_hz), zeta_s, zeta_s, 0.0, 0.0,
                                              tuple(0.0 for _ in stick.levels), top_name, fg.top_index, False,
                                              "; ".join(notes), {}))
            continue
        phi = am.phi
        top_phi = abs(float(phi[fg.top_index]))
        for rp in return_periods_yr:
            inp = en_input(am, ws, rp, terrain)
            r = en_along_response(inp)
            floor_peak = tuple((np.abs(phi) * r.peak_a_m_s2 / MG).tolist())
            details = {
                "v_b_m_s": inp.v_b_m_s, "c_prob": c_prob(rp), "c_dir": directional_factor(ws, direction),
                "z0_m": terrain.z0_m, "z_min_m": terrain.z_min_m, "height_m": fg.height_m,
                "b_m": fg.b_m, "d_m": fg.d_m, "frequency_hz": float(mode.frequency_hz),
                "m_e_kg_m": am.m_e_kg_m, "K_x": am.k_x, "generalized_mass_kg": am.generalized_mass_kg,
                "participation_along": am.participation, "share_along": am.share,
                "delta_s": inp.structural_log_decrement, "delta_a": r.delta_a, "delta": r.delta,
                "c_f": ws.force_coefficient, "rho_kg_m3": ws.air_density_kg_m3, "c_o": ws.orography_factor,
                "k_I": ws.turbulence_factor, "T_s": ws.peak_factor_duration_s, "z_s_m": r.z_s_m,
                "v_m_zs_m_s": r.v_m_m_s, "I_v": r.i_v, "L_m": r.length_scale_m, "f_L": r.f_l, "S_L": r.s_l,
                "eta_h": r.eta_h, "eta_b": r.eta_b, "R_h": r.r_h, "R_b": r.r_b, "R2": r.r2, "B2": r.b2,
                "nu_hz": r.nu_hz, "k_p_gust": r.k_p_gust, "c_s": r.c_s, "c_d": r.c_d, "c_s_c_d": r.c_s_c_d,
                "k_p": r.k_p_accel, "sigma_a_roof_m_s2": r.sigma_a_m_s2, "peak_a_roof_m_s2": r.peak_a_m_s2,
                "phi_top_occupied": top_phi, "modal_peak_m_s2": r.peak_a_m_s2 / abs(am.roof_component_m),
            }
            cases.append(AccelerationCase(
                METHOD, float(rp), direction, "along", axis, int(mode.index), float(mode.frequency_hz),
                r.damping_ratio, zeta_s, r.sigma_a_m_s2 * top_phi / MG, r.peak_a_m_s2 * top_phi / MG,
                floor_peak, top_name, fg.top_index, valid, "; ".join(notes), details))
    return AccelerationResult(METHOD, tuple(cases), tuple(warnings))


def _modes_of(ctx: Context) -> Sequence[Any]:
    modal = ctx.need("modes")
    modes = getattr(modal, "modes", modal)
    return tuple(modes)


def _stick_of(ctx: Context, plugin: str) -> StickModel:
    if ctx.stick is None:
        raise InputError(f"building {ctx.building.name!r}: no stick model, {plugin} cannot run")
    return ctx.stick


def _run(ctx: Context) -> dict[str, Any]:
    ws = wind_settings(ctx.settings)
    stick = _stick_of(ctx, "wind_en")
    return {"accel_en": en_accelerations(stick, _modes_of(ctx), ws, required_return_periods(ctx.settings))}


PLUGIN = BasicPlugin(
    name="wind_en",
    version="0.1.0",
    func=_run,
    needs=("modes",),
    provides=("accel_en",),
    settings_section="wind",
    settings_type=WindSettings,
)
