"""Along- and across-wind peak accelerations by the NBCC Structural Commentary I method.

Plugin ``wind_nbcc``: needs ``modes``, provides ``accel_nbcc`` (an
:class:`~swayscreen.plugins.wind_common.AccelerationResult`); owns the small
``[wind_nbcc]`` section (:class:`NbccSettings`) and reads the site wind from ``[wind]``.

The formulas are written FROM MEMORY of the National Building Code of Canada Structural
Commentaries (Part 4 of Division B), Commentary I (wind), dimensionally checked; confirm
against the edition adopted before relying on them:

* across-wind: a_W = n_W^2 g_p sqrt(W D) a_r / (rho_B g sqrt(beta_W)),
  a_r = 78.5e-3 [V_H / (n_W sqrt(W D))]^3.3 (N/m^3);
* along-wind: a_D = 4 pi^2 n_D^2 g_p sqrt(K s F / (C_eH beta_D)) Delta / C_g;
* gust factor terms: C_g = 1 + g_p sigma/mu, sigma/mu = sqrt(K/C_eH (B + s F/beta)),
  B = 4/3 int_0^(914/H) 1/(1 + xH/457) 1/(1 + xW/122) x/(1 + x^2)^(4/3) dx,
  s = pi/3 / ((1 + 8 n H/(3 V_H)) (1 + 10 n W/V_H)), F = x0^2/(1 + x0^2)^(4/3), x0 = 1220 n/V_H,
  nu = n sqrt(s F/(s F + beta B)), g_p = sqrt(2 ln nu T) + 0.5772/sqrt(2 ln nu T), T = 3600 s;
* exposure for the dynamic procedure: open C_e = (z/10)^0.28 within [1, 2.5], K = 0.08;
  rough C_e = 0.5 (z/12.7)^0.5 within [0.5, 2.5], K = 0.10.

Wind speed: the site's EN basic wind speed (10-min mean at 10 m, open country) at the
return period (EN c_prob, see wind_common) and direction is turned into the mean HOURLY
speed at 10 m by dividing by 1.06 (the 10-min/hourly ratio of the Durst gust curve, from
memory; ``[wind_nbcc] ten_minute_to_hourly``); V_H = V_10 sqrt(C_eH).

Delta (along-wind top deflection under the static-equivalent wind with the gust factor)
is derived from the modal model: floor forces F_i = q C_e(z_i) C_p b_i t_i (q = 1/2 rho
V_10^2, C_p = the [wind] force coefficient, windward plus leeward) act on the along-wind
mode; the generalized static response is Y = sum F_i Phi_i / (omega^2 M*), so the mean top
deflection is Y Phi_top and Delta = C_g Y Phi_top (Phi = 1 at the top). A one-mode
estimate: it omits higher-mode static flexibility (a few per cent for a cantilever).

Modes: for each direction the mode with the largest effective mass along the response is
used (n_D along, n_W across). The across-wind formula assumes a mode moving purely across
the wind; for a skewed or lateral-torsional mode its result is multiplied by the share of
the mode's kinetic energy moving across the wind, done by dividing the building density by
that share (details ``rho_B_kg_m3`` is this effective density, ``rho_B_gross_kg_m3`` the bulk
M/(W D H)); a translational mode at angle alpha to
the across-wind direction gives cos^2 alpha across and cos alpha along its own axis, as the
modal EN path does). The along-wind result needs no such factor: Delta comes from the mode's
own generalized mass.

Geometry: W and D are the reference plate's extents across and along the wind (the
[wind] ``plate_rule``); for oblique sectors they are the projected extents, a screening
extension of a method fitted to winds normal to a face. rho_B = total mass / (W D H). The
RMS reported is the peak over its peak factor g_p.

Validity (reported, result still given): W/D within 1/3..3 and reduced velocity
V_H/(n_W sqrt(W D)) <= 10 for the across-wind fit (the range of the wind-tunnel data it
came from, from memory); the dynamic procedure's range: lowest frequency >= 0.25 Hz and
H <= 6 w (w the height-weighted effective width); outside it the commentary points to
wind-tunnel testing.
"""
from __future__ import annotations

import math
from functools import lru_cache
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.settings import setting
from swayscreen.pipeline.stick import StickModel

from .wind_common import (
    COUPLED_SHARE,
    G,
    MG,
    AccelerationCase,
    AccelerationResult,
    WindSettings,
    basic_wind_speed,
    directional_shape,
    directional_share,
    floor_geometry,
    mode_motions,
    required_return_periods,
    sector_directions,
    select_mode_motion,
    structural_damping_ratio,
    wind_axes,
    wind_settings,
)

__all__ = [
    "METHOD",
    "NbccSettings",
    "nbcc_exposure_factor",
    "nbcc_roughness_factor_k",
    "nbcc_peak_factor",
    "nbcc_background_factor",
    "nbcc_size_reduction_factor",
    "nbcc_gust_energy_ratio",
    "AcrossWind",
    "nbcc_across_wind",
    "AlongWind",
    "nbcc_along_wind",
    "nbcc_along_peak_for_damping",
    "nbcc_accelerations",
    "PLUGIN",
]

METHOD = "NBCC Commentary I"
EXPOSURES = ("open", "rough")


@dataclass(frozen=True)
class NbccSettings:
    """NBCC Commentary I method: exposure, wind-speed conversion and validity limits."""

    exposure: str = setting(
        "auto", choices=("auto", "open", "rough"),
        source="NBCC Structural Commentary I (from memory); auto: EN terrain 0, I, II -> open, III, IV -> rough",
        doc="exposure for the dynamic procedure")
    ten_minute_to_hourly: float = setting(
        1.06, minimum=1.0, maximum=1.2,
        source="Durst gust-duration curve, 10-min / hourly mean speed ratio about 1.06 (from memory)",
        doc="ratio of the 10-minute to the hourly mean wind speed at 10 m")
    air_density_kg_m3: float = setting(
        1.29, unit="kg/m^3", minimum=0.9, maximum=1.5, source="NBCC Commentary I (rho = 1.2929 at 0 C; from memory)",
        doc="air density for the reference velocity pressure q = 1/2 rho V^2")
    peak_factor_duration_s: float = setting(
        3600.0, unit="s", minimum=600, maximum=7200, source="NBCC Commentary I (hourly wind, from memory)",
        doc="averaging time T in the peak factor g_p")
    min_aspect_ratio: float = setting(
        1.0 / 3.0, minimum=0.05, maximum=1.0, source="range of the across-wind data fit, W/D 1/3 to 3 (from memory)",
        doc="smallest plan aspect ratio W/D within the method's range")
    max_reduced_velocity: float = setting(
        10.0, minimum=1.0, maximum=50.0,
        source="range of the across-wind data fit, below vortex lock-in (from memory)",
        doc="largest reduced velocity V_H / (n_W sqrt(W D)) within the method's range")
    min_frequency_hz: float = setting(
        0.25, unit="Hz", minimum=0.0, maximum=1.0,
        source="NBC 4.1.7.2: below 0.25 Hz the wind-tunnel procedure is recommended (from memory)",
        doc="lowest frequency within the dynamic procedure's range")
    max_height_to_width: float = setting(
        6.0, minimum=1.0, maximum=20.0,
        source="NBC 4.1.7.2: above H/w = 6 the wind-tunnel procedure is recommended (from memory)",
        doc="largest height to effective width ratio within the dynamic procedure's range")


def nbcc_exposure_factor(z_m: float, exposure: str) -> float:
    """Exposure factor of the dynamic procedure: open (z/10)^0.28 in [1, 2.5]; rough 0.5 (z/12.7)^0.5
    in [0.5, 2.5] (NBCC Commentary I, from memory)."""
    if exposure == "open":
        return min(max((z_m / 10.0) ** 0.28, 1.0), 2.5)
    if exposure == "rough":
        return min(max(0.5 * (z_m / 12.7) ** 0.5, 0.5), 2.5)
    raise ValueError(f"exposure must be 'open' or 'rough', got {exposure!r}")


def nbcc_roughness_factor_k(exposure: str) -> float:
    """Terrain factor K: 0.08 open, 0.10 rough (NBCC Commentary I, from memory)."""
    return {"open": 0.08, "rough": 0.10}[exposure]


def nbcc_peak_factor(nu_hz: float, duration_s: float = 3600.0) -> float:
    """g_p = sqrt(2 ln(nu T)) + 0.5772 / sqrt(2 ln(nu T)) (Davenport form, NBCC Commentary I)."""
    x = 2.0 * math.log(nu_hz * duration_s)
    if x <= 0:
        raise ValueError(f"nu T = {nu_hz * duration_s:g} must exceed 1 for the peak factor")
    r = math.sqrt(x)
    return r + 0.5772 / r


_GAUSS_POINTS = 20


@lru_cache(maxsize=1)
def _gauss_legendre() -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights of the 20-point Gauss-Legendre rule on [-1, 1]."""
    return np.polynomial.legendre.leggauss(_GAUSS_POINTS)


@lru_cache(maxsize=256)
def nbcc_background_factor(height_m: float, width_m: float) -> float:
    """B = 4/3 int_0^(914/H) [1/(1 + xH/457)] [1/(1 + xW/122)] x/(1 + x^2)^(4/3) dx.

    Integrated by composite 20-point Gauss-Legendre on panels that double in length away
    from 0: the integrand is analytic on the interval, its nearest singularities being
    x = -457/H, -122/W and +-i, and the first panel ends at a quarter of the nearest one's
    distance, so every panel lies well inside the region where the rule converges
    geometrically (error far below 1e-12 relative; it agrees with adaptive QUADPACK
    quadrature to about 4e-13 from H = 1 to 10,000 m and W = 0.5 to 5,000 m). Plain numpy:
    scipy.integrate would cost the process ~0.3 s to import.
    """
    upper = 914.0 / height_m
    nearest = min(1.0, 457.0 / height_m, 122.0 / width_m if width_m > 0 else 1.0)
    first = min(upper, nearest / 4.0)
    edges = [0.0, first if first > 0 else upper]
    while edges[-1] < upper and len(edges) < 80:
        edges.append(min(upper, 2.0 * edges[-1]))
    edges[-1] = upper
    e = np.asarray(edges)
    half = 0.5 * (e[1:] - e[:-1])[:, None]
    nodes, weights = _gauss_legendre()
    x = (e[:-1, None] + half) + half * nodes
    f = 1.0 / (1.0 + x * height_m / 457.0) / (1.0 + x * width_m / 122.0) * x / (1.0 + x * x) ** (4.0 / 3.0)
    return 4.0 / 3.0 * float(np.sum(half[:, 0] * (f @ weights)))


def nbcc_size_reduction_factor(n_hz: float, height_m: float, width_m: float, v_h_m_s: float) -> float:
    """s = (pi/3) / ((1 + 8 n H / (3 V_H)) (1 + 10 n W / V_H))."""
    return (math.pi / 3.0) / ((1.0 + 8.0 * n_hz * height_m / (3.0 * v_h_m_s)) * (1.0 + 10.0 * n_hz * width_m / v_h_m_s))


def nbcc_gust_energy_ratio(n_hz: float, v_h_m_s: float) -> float:
    """F = x0^2 / (1 + x0^2)^(4/3), x0 = 1220 n / V_H."""
    x0 = 1220.0 * n_hz / v_h_m_s
    return x0 * x0 / (1.0 + x0 * x0) ** (4.0 / 3.0)


@dataclass(frozen=True)
class AcrossWind:
    """Across-wind result: a_r (N/m^3), reduced velocity, peak factor, peak (m/s^2)."""

    a_r_n_m3: float
    reduced_velocity: float
    g_p: float
    peak_m_s2: float


def nbcc_across_wind(n_w_hz: float, width_m: float, depth_m: float, v_h_m_s: float, density_kg_m3: float,
                     damping_ratio: float, duration_s: float = 3600.0,
                     g_p: float | None = None) -> AcrossWind:
    """a_W = n_W^2 g_p sqrt(W D) a_r / (rho_B g sqrt(beta_W)); g_p at nu = n_W unless given."""
    root = math.sqrt(width_m * depth_m)
    vr = v_h_m_s / (n_w_hz * root)
    a_r = 78.5e-3 * vr ** 3.3
    gp = nbcc_peak_factor(n_w_hz, duration_s) if g_p is None else g_p
    a = n_w_hz ** 2 * gp * root * a_r / (density_kg_m3 * G * math.sqrt(damping_ratio))
    return AcrossWind(a_r, vr, gp, a)


@dataclass(frozen=True)
class AlongWind:
    """Along-wind gust-factor terms and the peak acceleration (m/s^2)."""

    background: float
    size_reduction: float
    gust_energy: float
    sigma_over_mu: float
    nu_hz: float
    g_p: float
    c_g: float
    peak_m_s2: float


def nbcc_along_wind(n_d_hz: float, height_m: float, width_m: float, v_h_m_s: float, damping_ratio: float,
                    k: float, c_eh: float, deflection_m: float | None = None,
                    mean_deflection_m: float | None = None, duration_s: float = 3600.0) -> AlongWind:
    """Along-wind peak a_D = 4 pi^2 n_D^2 g_p sqrt(K s F / (C_eH beta_D)) Delta / C_g.

    Give either ``deflection_m`` (Delta, with the gust factor, as in the commentary) or
    ``mean_deflection_m`` (Delta / C_g).
    """
    if (deflection_m is None) == (mean_deflection_m is None):
        raise ValueError("give exactly one of deflection_m and mean_deflection_m")
    b = nbcc_background_factor(height_m, width_m)
    s = nbcc_size_reduction_factor(n_d_hz, height_m, width_m, v_h_m_s)
    f = nbcc_gust_energy_ratio(n_d_hz, v_h_m_s)
    sm = math.sqrt(k / c_eh * (b + s * f / damping_ratio))
    nu = n_d_hz * math.sqrt(s * f / (s * f + damping_ratio * b))
    gp = nbcc_peak_factor(nu, duration_s)
    cg = 1.0 + gp * sm
    mean = deflection_m / cg if mean_deflection_m is None else mean_deflection_m
    a = 4.0 * math.pi ** 2 * n_d_hz ** 2 * gp * math.sqrt(k * s * f / (c_eh * damping_ratio)) * mean
    return AlongWind(b, s, f, sm, nu, gp, cg, a)


def nbcc_along_peak_for_damping(details: Mapping[str, float], damping_ratio: float) -> float:
    """Along-wind peak (m/s^2, at Phi = 1) of a case recomputed for another damping ratio."""
    r = nbcc_along_wind(details["frequency_hz"], details["height_m"], details["W_m"], details["V_H_m_s"],
                        damping_ratio, details["K"], details["C_eH"],
                        mean_deflection_m=details["mean_deflection_m"], duration_s=details["T_s"])
    return r.peak_m_s2


def _exposure(ns: NbccSettings, ws: WindSettings) -> str:
    if ns.exposure != "auto":
        return ns.exposure
    if ws.roughness_length_m is not None:
        return "open" if ws.roughness_length_m <= 0.1 else "rough"
    return "open" if ws.terrain_category in ("0", "I", "II") else "rough"


def nbcc_accelerations(stick: StickModel, modes: Sequence[Any], ws: WindSettings, ns: NbccSettings,
                       return_periods_yr: Sequence[float]) -> AccelerationResult:
    """Along- and across-wind top accelerations for every sector and return period."""
    exposure = _exposure(ns, ws)
    k = nbcc_roughness_factor_k(exposure)
    beta = structural_damping_ratio(ws)
    height = stick.height_m
    c_eh = nbcc_exposure_factor(height, exposure)
    # floor heights (as FloorGeometry.z_m) do not change with the direction: each floor's exposure once
    z_m = np.array([lv.elevation_m - stick.base_elevation_m for lv in stick.levels], dtype=float)
    ce = np.array([nbcc_exposure_factor(z, exposure) for z in z_m])
    cases: list[AccelerationCase] = []
    motions = mode_motions(stick, modes) if modes else None
    for direction in sector_directions(ws.sectors):
        along, across = wind_axes(direction, stick.true_north_deg)
        fg = floor_geometry(stick, along, ws.plate_rule)
        w, d = fg.b_m, fg.d_m
        rho_b = stick.total_mass_kg / (w * d * height)
        w_eff = float(np.sum(fg.z_m * fg.width_m) / np.sum(fg.z_m))
        top = fg.top_index
        common_notes: list[str] = []  # each one puts the case outside the method's range
        if not ns.min_aspect_ratio <= w / d <= 1.0 / ns.min_aspect_ratio:
            common_notes.append(f"plan aspect W/D = {w / d:.2f} outside {ns.min_aspect_ratio:.2f}.."
                                f"{1 / ns.min_aspect_ratio:.2f}")
        if height > ns.max_height_to_width * w_eff:
            common_notes.append(f"H/w = {height / w_eff:.1f} above {ns.max_height_to_width:g}: wind-tunnel "
                                "testing recommended")
        for response, vec in (("along", along), ("across", across)):
            mode, part, motion = select_mode_motion(modes, stick, vec, motions)
            raw = directional_shape(mode.shape, fg.centre_m, stick.origin_m, vec)
            s = float(raw[-1])
            n = float(mode.frequency_hz)
            notes = list(common_notes)
            info: list[str] = []  # assumptions that do not affect validity
            if n < ns.min_frequency_hz:
                notes.append(f"frequency {n:.3f} Hz below {ns.min_frequency_hz:g} Hz: wind-tunnel testing "
                             "recommended")
            share = directional_share(stick, mode.shape, vec, motion)
            if share < COUPLED_SHARE:
                info.append(f"mode {mode.index} is coupled: {share:.0%} of its kinetic energy along the response")
            if abs(s) <= 1e-9 * max(float(np.max(np.abs(mode.shape[:, :2]))), 1e-300):
                notes.append(f"mode {mode.index} has no motion along the response at the top")
                for rp in return_periods_yr:
                    cases.append(AccelerationCase(METHOD, float(rp), direction, response,
                                                  (float(vec[0]), float(vec[1])), int(mode.index), n, beta, beta,
                                                  0.0, 0.0, tuple(0.0 for _ in stick.levels),
                                                  stick.levels[top].name, top, False, "; ".join(notes + info), {}))
                continue
            phi = raw / s
            gm = motion.generalized_mass_kg / s ** 2
            for rp in return_periods_yr:
                v10 = basic_wind_speed(ws, rp, direction) / ns.ten_minute_to_hourly
                v_h = v10 * math.sqrt(c_eh)
                case_notes = list(notes)
                details: dict[str, float] = {
                    "v_10_hourly_m_s": v10, "V_H_m_s": v_h, "C_eH": c_eh, "K": k, "W_m": w, "D_m": d,
                    "height_m": height, "rho_B_kg_m3": rho_b, "frequency_hz": n, "T_s": ns.peak_factor_duration_s,
                    "participation": part, "share": share, "generalized_mass_kg": gm, "w_eff_m": w_eff,
                }
                if response == "across":
                    formula = nbcc_across_wind(n, w, d, v_h, rho_b, beta, ns.peak_factor_duration_s)
                    res = nbcc_across_wind(n, w, d, v_h, rho_b / share, beta, ns.peak_factor_duration_s)
                    valid_extra = res.reduced_velocity <= ns.max_reduced_velocity
                    if not valid_extra:
                        case_notes.append(f"reduced velocity {res.reduced_velocity:.1f} above "
                                          f"{ns.max_reduced_velocity:g}")
                    details.update({"a_r_n_m3": res.a_r_n_m3, "reduced_velocity": res.reduced_velocity,
                                    "g_p": res.g_p, "a_W_formula_m_s2": formula.peak_m_s2,
                                    "rho_B_kg_m3": rho_b / share, "rho_B_gross_kg_m3": rho_b})
                    peak = res.peak_m_s2
                else:
                    q = 0.5 * ns.air_density_kg_m3 * v10 ** 2
                    forces = q * ce * ws.force_coefficient * fg.width_m * fg.tributary_m
                    omega = 2.0 * math.pi * n
                    mean_top = float(np.sum(forces * phi)) / (omega ** 2 * gm)
                    res = nbcc_along_wind(n, height, w, v_h, beta, k, c_eh, mean_deflection_m=mean_top,
                                          duration_s=ns.peak_factor_duration_s)
                    details.update({"q_pa": q, "mean_deflection_m": mean_top, "Delta_m": mean_top * res.c_g,
                                    "B": res.background, "s": res.size_reduction, "F": res.gust_energy,
                                    "sigma_over_mu": res.sigma_over_mu, "nu_hz": res.nu_hz, "g_p": res.g_p,
                                    "C_g": res.c_g})
                    peak = res.peak_m_s2
                top_phi = abs(float(phi[top]))
                details["phi_top_occupied"] = top_phi
                details["modal_peak_m_s2"] = peak / abs(s)
                details["peak_a_roof_m_s2"] = peak
                valid = not case_notes
                cases.append(AccelerationCase(
                    METHOD, float(rp), direction, response, (float(vec[0]), float(vec[1])), int(mode.index), n,
                    beta, beta, peak * top_phi / MG / res.g_p, peak * top_phi / MG,
                    tuple((np.abs(phi) * peak / MG).tolist()),
                    stick.levels[top].name, top, valid, "; ".join(case_notes + info), details))
    return AccelerationResult(METHOD, tuple(cases), ())


def _run(ctx: Context) -> dict[str, Any]:
    from .wind_en import _modes_of, _stick_of

    ws = wind_settings(ctx.settings)
    ns = ctx.settings["wind_nbcc"] if "wind_nbcc" in ctx.settings else NbccSettings()
    stick = _stick_of(ctx, "wind_nbcc")
    return {"accel_nbcc": nbcc_accelerations(stick, _modes_of(ctx), ws, ns, required_return_periods(ctx.settings))}


PLUGIN = BasicPlugin(
    name="wind_nbcc",
    version="0.1.0",
    func=_run,
    needs=("modes",),
    provides=("accel_nbcc",),
    settings_section="wind_nbcc",
    settings_type=NbccSettings,
)
