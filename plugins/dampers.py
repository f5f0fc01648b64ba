"""Auxiliary damper mathematics: tuned mass, tuned sloshing and tuned liquid column dampers.

Pure functions over plain numbers and shapely polygons, SI units (m, kg, s, Hz, Pa).
The advisor plugin (:mod:`swayscreen.plugins.damping`) calls these; nothing here reads
settings or results.

Model of a tuned mass damper (TMD) on one mode
----------------------------------------------
The target mode is a single-degree-of-freedom primary of generalized mass ``M_1`` (kg,
mode shape normalised to 1 at the damper), natural frequency ``f_1`` (Hz) and damping
ratio ``zeta_s`` (structural + aerodynamic). The damper has mass ``m_d = mu M_1``,
frequency ``f_d = f f_1`` and damping ratio ``zeta_d`` (dashpot ``c_d = 2 zeta_d
omega_d m_d``) and acts between the primary and its own mass. The force on the primary
is white noise. The 4-state system is solved exactly with the Lyapunov equation
``A P + P A^T + B B^T = 0`` (scipy.linalg.solve_continuous_lyapunov), in units where
``M_1 = 1`` and ``omega_1 = 1`` (every ratio below is dimensionless).

Equivalent damping ``zeta_total`` is the damping ratio of an SDOF with the primary's
frequency and mass whose response variance equals the 2DOF primary's under the same
force. Two matching conventions:

* ``"displacement"``: equal displacement variance. With an undamped primary this
  reproduces the classical ``zeta_eq = 1/4 sqrt(mu (1+mu) / (1 + 3 mu / 4))``
  (methods.md section 8 [DER]; shortcut ``sqrt(mu)/4``).
* ``"acceleration"`` (used by the advisor, comfort is an acceleration criterion): equal
  absolute-acceleration variance under a force that is white over a band much wider
  than the modes. Under ideal white noise both accelerations contain the same
  unbounded feedthrough of the force (``F/M_1`` at high frequency), so the comparison is
  made on the excess over it, which is finite: ``J = C P C^T + C B`` where ``C`` is
  the primary's acceleration row of the state matrix (the ``C B`` term is the
  cross-spectrum of force and restoring-force acceleration, integrated by residues).
  For the SDOF ``J = 1/(4 zeta) - zeta`` (times ``omega``), inverted in closed form.
  Dense-grid integration of ``omega^4 |H|^2`` to an increasing cut-off converges to the
  same value (tests/test_dampers.py checks this).

Tuning rules: Den Hartog (1956) and Warburton (1982) closed forms, methods.md section 8.
The Warburton base-excitation variants are from memory, not verified.

Tuned sloshing damper (TSD)
---------------------------
Rectangular tank, linear potential theory: ``f_n = (1/2 pi) sqrt((n pi g / L)
tanh(n pi h / L))``; first-mode effective (sloshing) mass ``m_1/m_w = 8 tanh(pi h/L) /
(pi^3 h/L)`` (Tait 2008 equivalent-TMD model, from memory); Housner (1963) alternative
(from memory). Shallow tanks, ``h/L`` 0.1-0.2, are common practice.

Tuned liquid column damper (TLCD)
---------------------------------
Sakai et al. (1989), from memory: ``f = (1/2 pi) sqrt(2 g / L_e)``, effective mass ratio
``alpha^2 mu`` with ``alpha`` = horizontal length / ``L_e``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from scipy.linalg import solve_continuous_lyapunov
from shapely.geometry import MultiPolygon, Polygon

__all__ = [
    "G_M_S2",
    "WATER_DENSITY_KG_M3",
    "Tuning",
    "den_hartog_tuning",
    "warburton_tuning",
    "warburton_base_harmonic_tuning",
    "warburton_base_random_tuning",
    "tuning_for",
    "TwoDofResponse",
    "two_dof_response",
    "sdof_damping_from_response",
    "equivalent_damping",
    "warburton_equivalent_damping",
    "den_hartog_equivalent_damping",
    "sqrt_mu_estimate",
    "optimal_tuning_numeric",
    "mass_ratio_for_damping",
    "Mistuning",
    "mistuning_sensitivity",
    "stroke_rms_from_accel",
    "stroke_rms_from_force_psd",
    "TmdDesign",
    "design_tmd",
    "sloshing_frequency",
    "shallow_water_frequency",
    "sloshing_mass_fraction",
    "housner_mass_fraction",
    "housner_frequency",
    "deep_water_limit_hz",
    "depth_for_frequency",
    "length_for_frequency",
    "pack_rectangles",
    "TsdDesign",
    "design_tsd",
    "TwoWayTsd",
    "design_tsd_two_way",
    "liquid_column_frequency",
    "liquid_column_length",
    "TlcdDesign",
    "design_tlcd",
]

G_M_S2 = 9.81
"""Gravity (m/s^2), the value methods.md uses for its check values."""
WATER_DENSITY_KG_M3 = 1000.0

_MATCHES = ("acceleration", "displacement")


def _check_mu(mu: float) -> None:
    if not (mu > 0 and math.isfinite(mu)):
        raise ValueError(f"mass ratio must be positive and finite, got {mu!r}")


# ---------------------------------------------------------------------------------------------
# Tuning rules
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Tuning:
    """A TMD tuning: frequency ratio ``f_d/f_1`` and damper damping ratio.

    Attributes:
        frequency_ratio: f = f_d / f_1 (-).
        damping_ratio: zeta_d (-), dashpot c_d = 2 zeta_d omega_d m_d.
        rule: the rule's name and source.
    """

    frequency_ratio: float
    damping_ratio: float
    rule: str


def den_hartog_tuning(mu: float) -> Tuning:
    """Den Hartog (1956): harmonic force on an undamped primary, minimum peak displacement.

    f_opt = 1/(1+mu), zeta_d = sqrt(3 mu / (8 (1+mu)^3)) (methods.md section 8).
    """
    _check_mu(mu)
    return Tuning(1.0 / (1.0 + mu), math.sqrt(3.0 * mu / (8.0 * (1.0 + mu) ** 3)), "Den Hartog (1956), harmonic force")


def warburton_tuning(mu: float) -> Tuning:
    """Warburton (1982): white-noise force on an undamped primary, minimum displacement variance.

    f_opt = sqrt(1 + mu/2)/(1+mu), zeta_d = sqrt(mu (1 + 3 mu/4) / (4 (1+mu)(1 + mu/2))).
    """
    _check_mu(mu)
    f = math.sqrt(1.0 + mu / 2.0) / (1.0 + mu)
    z = math.sqrt(mu * (1.0 + 0.75 * mu) / (4.0 * (1.0 + mu) * (1.0 + mu / 2.0)))
    return Tuning(f, z, "Warburton (1982), white-noise force")


def warburton_base_harmonic_tuning(mu: float) -> Tuning:
    """Warburton (1982), harmonic base acceleration -- from memory, not verified.

    f_opt = sqrt(1 - mu/2)/(1+mu), zeta_d = sqrt(3 mu / (8 (1+mu)(1 - mu/2))).
    """
    _check_mu(mu)
    if mu >= 2.0:
        raise ValueError(f"mass ratio {mu} out of range for the base-excitation rule (< 2)")
    f = math.sqrt(1.0 - mu / 2.0) / (1.0 + mu)
    z = math.sqrt(3.0 * mu / (8.0 * (1.0 + mu) * (1.0 - mu / 2.0)))
    return Tuning(f, z, "Warburton (1982), harmonic base acceleration (from memory, not verified)")


def warburton_base_random_tuning(mu: float) -> Tuning:
    """Warburton (1982), white-noise base acceleration -- from memory, not verified.

    f_opt = sqrt(1 - mu/2)/(1+mu), zeta_d = sqrt(mu (1 - mu/4) / (4 (1+mu)(1 - mu/2))).
    """
    _check_mu(mu)
    if mu >= 2.0:
        raise ValueError(f"mass ratio {mu} out of range for the base-excitation rule (< 2)")
    f = math.sqrt(1.0 - mu / 2.0) / (1.0 + mu)
    z = math.sqrt(mu * (1.0 - mu / 4.0) / (4.0 * (1.0 + mu) * (1.0 - mu / 2.0)))
    return Tuning(f, z, "Warburton (1982), white-noise base acceleration (from memory, not verified)")


_RULES = {
    "warburton": warburton_tuning,
    "den_hartog": den_hartog_tuning,
    "warburton_base_harmonic": warburton_base_harmonic_tuning,
    "warburton_base_random": warburton_base_random_tuning,
}


def tuning_for(mu: float, rule: str = "warburton") -> Tuning:
    """The tuning of ``rule`` ("warburton", "den_hartog", "warburton_base_harmonic", "warburton_base_random")."""
    try:
        return _RULES[rule](mu)
    except KeyError:
        raise ValueError(f"unknown tuning rule {rule!r} (known: {', '.join(_RULES)})") from None


# ---------------------------------------------------------------------------------------------
# Two-degree-of-freedom response (exact, Lyapunov)
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class TwoDofResponse:
    """Stationary response of primary + TMD to unit white-noise force on the primary.

    Dimensionless: primary mass 1, primary frequency omega_1 = 1 rad/s, force intensity 1
    (E[w(t) w(t+tau)] = delta(tau)). Dimensional variances follow from
    ``disp ~ q / (M_1^2 omega_1^3)``, ``accel ~ q omega_1 / M_1^2``.

    Attributes:
        mass_ratio, frequency_ratio, damper_damping_ratio, structural_damping_ratio: inputs.
        primary_disp_var: variance of the primary displacement.
        primary_vel_var: variance of the primary velocity.
        primary_accel_excess: acceleration "variance" J in excess of the force feedthrough
            (see module docstring); equals 1/(4 zeta) - zeta for an SDOF.
        relative_disp_var: variance of the damper stroke (damper minus primary displacement).
        damper_disp_var: variance of the damper mass's displacement.
    """

    mass_ratio: float
    frequency_ratio: float
    damper_damping_ratio: float
    structural_damping_ratio: float
    primary_disp_var: float
    primary_vel_var: float
    primary_accel_excess: float
    relative_disp_var: float
    damper_disp_var: float


def _state_matrices(mu: float, f: float, zeta_d: float, zeta_s: float) -> tuple[np.ndarray, np.ndarray]:
    """A (4x4) and B (4x1) for states (x1, x2, v1, v2), unit primary mass and frequency."""
    k1, c1 = 1.0, 2.0 * zeta_s
    k2, c2 = mu * f * f, 2.0 * zeta_d * f * mu
    a = np.zeros((4, 4))
    a[0, 2] = a[1, 3] = 1.0
    # primary: x1'' = w - c1 v1 - k1 x1 + c2 (v2 - v1) + k2 (x2 - x1)
    a[2, :] = [-(k1 + k2), k2, -(c1 + c2), c2]
    # damper: mu x2'' = -c2 (v2 - v1) - k2 (x2 - x1)
    a[3, :] = [k2 / mu, -k2 / mu, c2 / mu, -c2 / mu]
    b = np.array([[0.0], [0.0], [1.0], [0.0]])
    return a, b


def two_dof_response(mu: float, f: float, zeta_d: float, zeta_s: float = 0.0) -> TwoDofResponse:
    """Exact stationary covariances of primary + TMD under white-noise force (Lyapunov).

    Args:
        mu: damper mass / generalized mass of the mode (-), > 0.
        f: damper frequency / primary frequency (-), > 0.
        zeta_d: damper damping ratio (-), > 0.
        zeta_s: primary damping ratio (-), >= 0.
    """
    _check_mu(mu)
    if not (f > 0 and zeta_d > 0 and zeta_s >= 0):
        raise ValueError(f"need f > 0, zeta_d > 0, zeta_s >= 0 (got {f}, {zeta_d}, {zeta_s})")
    a, b = _state_matrices(mu, f, zeta_d, zeta_s)
    p = solve_continuous_lyapunov(a, -b @ b.T)
    c = a[2, :]
    excess = float(c @ p @ c + c @ b[:, 0])
    rel = np.array([-1.0, 1.0, 0.0, 0.0])
    return TwoDofResponse(
        mass_ratio=mu,
        frequency_ratio=f,
        damper_damping_ratio=zeta_d,
        structural_damping_ratio=zeta_s,
        primary_disp_var=float(p[0, 0]),
        primary_vel_var=float(p[2, 2]),
        primary_accel_excess=excess,
        relative_disp_var=float(rel @ p @ rel),
        damper_disp_var=float(p[1, 1]),
    )


def sdof_damping_from_response(resp: TwoDofResponse, match: str = "acceleration") -> float:
    """Damping ratio of the SDOF (same mass and frequency) with the same response variance.

    ``match="displacement"``: SDOF variance 1/(4 zeta) -> zeta = 1/(4 var).
    ``match="acceleration"``: SDOF excess 1/(4 zeta) - zeta = J -> zeta = (sqrt(J^2+1) - J)/2.
    """
    if match == "displacement":
        return 1.0 / (4.0 * resp.primary_disp_var)
    if match == "acceleration":
        j = resp.primary_accel_excess
        return (math.sqrt(j * j + 1.0) - j) / 2.0
    raise ValueError(f"match must be one of {', '.join(_MATCHES)}, got {match!r}")


def equivalent_damping(
    mu: float,
    zeta_s: float = 0.0,
    *,
    match: str = "acceleration",
    rule: str = "warburton",
    tuning: Tuning | None = None,
    detuning: float = 0.0,
) -> float:
    """Total equivalent damping ratio of the primary with a TMD (structural + added).

    The 2DOF is solved exactly (:func:`two_dof_response`) and matched to an SDOF of the
    primary's frequency. The added damping is ``equivalent_damping(...) - zeta_s`` (it is
    less than the undamped-primary ``zeta_eq``: the two do not add).

    Args:
        mu: damper mass / generalized mass (-).
        zeta_s: the primary's own damping ratio (-).
        match: "acceleration" (advisor default) or "displacement".
        rule: tuning rule when ``tuning`` is not given (see :func:`tuning_for`).
        tuning: explicit tuning (overrides ``rule``).
        detuning: relative error of the damper frequency, e.g. +0.1 = 10 % high.
    """
    t = tuning if tuning is not None else tuning_for(mu, rule)
    resp = two_dof_response(mu, t.frequency_ratio * (1.0 + detuning), t.damping_ratio, zeta_s)
    return sdof_damping_from_response(resp, match)


def warburton_equivalent_damping(mu: float) -> float:
    """Closed form, undamped primary, Warburton tuning, equal displacement variance (methods.md 8 [DER]).

    zeta_eq = 1/4 sqrt(mu (1+mu) / (1 + 3 mu/4)).
    """
    _check_mu(mu)
    return 0.25 * math.sqrt(mu * (1.0 + mu) / (1.0 + 0.75 * mu))


def den_hartog_equivalent_damping(mu: float) -> float:
    """Harmonic, Den Hartog tuning, equal peak amplification sqrt(1 + 2/mu): 1/2 sqrt(mu/(2+mu)) (methods.md 8)."""
    _check_mu(mu)
    return 0.5 * math.sqrt(mu / (2.0 + mu))


def sqrt_mu_estimate(mu: float) -> float:
    """The shortcut zeta_eq ~ sqrt(mu)/4 (undamped primary, small mu) -- a check only."""
    _check_mu(mu)
    return math.sqrt(mu) / 4.0


def optimal_tuning_numeric(mu: float, zeta_s: float = 0.0, match: str = "acceleration") -> Tuning:
    """Tuning that maximises the equivalent damping by direct optimisation of the 2DOF model.

    Started from Warburton's rule (Nelder-Mead). With zeta_s = 0 and displacement matching it
    reproduces Warburton's closed form (methods.md section 8 [DER]); with a damped primary
    it tunes slightly lower.
    """
    from scipy.optimize import minimize  # imported on use: scipy.optimize costs ~0.5 s to import

    w = warburton_tuning(mu)

    def neg(x: np.ndarray) -> float:
        f, z = float(x[0]), float(x[1])
        if f <= 0 or z <= 0:
            return 1.0
        return -sdof_damping_from_response(two_dof_response(mu, f, z, zeta_s), match)

    res = minimize(
        neg,
        np.array([w.frequency_ratio, w.damping_ratio]),
        method="Nelder-Mead",
        options={"xatol": 1e-9, "fatol": 1e-13, "maxiter": 4000},
    )
    return Tuning(float(res.x[0]), float(res.x[1]), f"numeric optimum of the 2DOF model ({match} variance)")


def mass_ratio_for_damping(
    target_total: float,
    zeta_s: float = 0.0,
    *,
    match: str = "acceleration",
    rule: str = "warburton",
    mu_max: float = 0.2,
) -> float:
    """Mass ratio whose TMD brings the primary's total equivalent damping to ``target_total``.

    Root of ``equivalent_damping(mu, zeta_s) = target_total`` by brentq on the 2DOF model.

    Raises:
        ValueError: when the target is not above ``zeta_s`` or not reachable with ``mu_max``.
    """
    if not target_total > zeta_s:
        raise ValueError(f"target damping {target_total:.4g} is not above the structure's {zeta_s:.4g}")
    from scipy.optimize import brentq  # imported on use: scipy.optimize costs ~0.5 s to import

    lo = 1e-8
    hi_val = equivalent_damping(mu_max, zeta_s, match=match, rule=rule)
    if hi_val < target_total:
        raise ValueError(
            f"target damping {target_total:.4g} needs a mass ratio above {mu_max:.3g} "
            f"(reaches {hi_val:.4g} there)"
        )
    return float(
        brentq(
            lambda m: equivalent_damping(m, zeta_s, match=match, rule=rule) - target_total,
            lo,
            mu_max,
            xtol=1e-12,
            rtol=1e-10,
        )
    )


@dataclass(frozen=True)
class Mistuning:
    """Equivalent total damping with the damper frequency off by +-``detuning``.

    Attributes:
        detuning: relative frequency error studied (e.g. 0.10).
        zeta_total_low: with f_d (1 - detuning).
        zeta_total_nominal: tuned.
        zeta_total_high: with f_d (1 + detuning).
    """

    detuning: float
    zeta_total_low: float
    zeta_total_nominal: float
    zeta_total_high: float

    @property
    def zeta_total_worst(self) -> float:
        return min(self.zeta_total_low, self.zeta_total_high)


def mistuning_sensitivity(
    mu: float, zeta_s: float = 0.0, detuning: float = 0.10, *, match: str = "acceleration", rule: str = "warburton"
) -> Mistuning:
    """Achieved total damping with the damper frequency mistuned by +-``detuning``."""
    if not 0 <= detuning < 1:
        raise ValueError(f"detuning must be in [0, 1), got {detuning}")
    t = tuning_for(mu, rule)
    return Mistuning(
        detuning=detuning,
        zeta_total_low=equivalent_damping(mu, zeta_s, match=match, tuning=t, detuning=-detuning),
        zeta_total_nominal=equivalent_damping(mu, zeta_s, match=match, tuning=t),
        zeta_total_high=equivalent_damping(mu, zeta_s, match=match, tuning=t, detuning=detuning),
    )


def stroke_rms_from_accel(resp: TwoDofResponse, frequency_hz: float, primary_accel_rms_m_s2: float) -> float:
    """RMS damper stroke (m) for a given RMS (resonant) acceleration of the primary.

    Both come from the same white-noise 2DOF solution: stroke_rms = a_rms sqrt(var_rel / J)
    / omega_1^2, J the acceleration excess (see module docstring). Scales linearly with
    the acceleration.
    """
    if not (frequency_hz > 0 and primary_accel_rms_m_s2 >= 0):
        raise ValueError("need frequency > 0 and a non-negative acceleration")
    w1 = 2.0 * math.pi * frequency_hz
    return primary_accel_rms_m_s2 * math.sqrt(resp.relative_disp_var / resp.primary_accel_excess) / w1**2


def stroke_rms_from_force_psd(
    resp: TwoDofResponse, frequency_hz: float, modal_mass_kg: float, force_psd_n2_per_hz: float
) -> float:
    """RMS damper stroke (m) for a modal force with one-sided PSD ``S_F`` (N^2/Hz), flat near f_1.

    Lyapunov intensity q = S_F / 2 (so an SDOF gives sigma_x^2 = S_F / (8 zeta M^2 omega^3),
    the classical pi f S_F / (4 zeta k^2)); stroke variance = q var_rel / (M_1^2 omega_1^3).
    """
    if not (frequency_hz > 0 and modal_mass_kg > 0 and force_psd_n2_per_hz >= 0):
        raise ValueError("need frequency > 0, modal mass > 0 and a non-negative force PSD")
    w1 = 2.0 * math.pi * frequency_hz
    q = force_psd_n2_per_hz / 2.0
    return math.sqrt(q * resp.relative_disp_var / (modal_mass_kg**2 * w1**3))


@dataclass(frozen=True)
class TmdDesign:
    """A tuned mass damper sized for one mode.

    Attributes:
        frequency_hz: the primary's frequency.
        modal_mass_kg: generalized mass M_1 (mode shape 1 at the damper).
        zeta_structure: the primary's own damping (structural + aerodynamic).
        zeta_target_total: the total damping asked for.
        mass_ratio: mu = m_d / M_1.
        damper_mass_t: mu M_1 in tonnes.
        tuning: frequency ratio and damper damping (Warburton unless stated).
        damper_frequency_hz: f f_1.
        damper_stiffness_n_m: m_d (2 pi f_d)^2.
        damper_damping_n_s_m: 2 zeta_d (2 pi f_d) m_d.
        zeta_total: achieved total equivalent damping (2DOF, ``match`` variance).
        zeta_added: zeta_total - zeta_structure.
        zeta_eq_undamped_primary: the 2DOF equivalent damping with an undamped primary.
        match: variance matched ("acceleration" or "displacement").
        mistuning: damping with the damper frequency +-detuning.
        stroke_rms_m, stroke_peak_m: damper stroke for ``primary_accel_rms_m_s2`` (None if not given).
        peak_factor: peak / RMS used for the stroke.
    """

    frequency_hz: float
    modal_mass_kg: float
    zeta_structure: float
    zeta_target_total: float
    mass_ratio: float
    damper_mass_t: float
    tuning: Tuning
    damper_frequency_hz: float
    damper_stiffness_n_m: float
    damper_damping_n_s_m: float
    zeta_total: float
    zeta_added: float
    zeta_eq_undamped_primary: float
    match: str
    mistuning: Mistuning
    stroke_rms_m: float | None
    stroke_peak_m: float | None
    peak_factor: float


def design_tmd(
    frequency_hz: float,
    modal_mass_kg: float,
    zeta_structure: float,
    zeta_target_total: float,
    *,
    primary_accel_rms_m_s2: float | None = None,
    peak_factor: float = 3.5,
    detuning: float = 0.10,
    match: str = "acceleration",
    mu_max: float = 0.2,
) -> TmdDesign:
    """Size a Warburton-tuned TMD that brings the mode's total damping to ``zeta_target_total``.

    Args:
        frequency_hz: f_1 of the target mode.
        modal_mass_kg: generalized mass M_1 with the mode shape 1 at the damper location.
        zeta_structure: damping the mode already has (structural + aerodynamic).
        zeta_target_total: total damping wanted.
        primary_accel_rms_m_s2: the primary's RMS acceleration with the damper (for the stroke).
        peak_factor: peak/RMS for the stroke (about 3.5 for 10-min to 1-h wind, common practice).
        detuning: relative damper-frequency error for the sensitivity study.
        match: variance matched.
        mu_max: the largest mass ratio considered.

    Raises:
        ValueError: target not reachable (see :func:`mass_ratio_for_damping`).
    """
    if not (frequency_hz > 0 and modal_mass_kg > 0):
        raise ValueError("need frequency > 0 and modal mass > 0")
    mu = mass_ratio_for_damping(zeta_target_total, zeta_structure, match=match, mu_max=mu_max)
    t = warburton_tuning(mu)
    resp = two_dof_response(mu, t.frequency_ratio, t.damping_ratio, zeta_structure)
    total = sdof_damping_from_response(resp, match)
    md = mu * modal_mass_kg
    fd = t.frequency_ratio * frequency_hz
    wd = 2.0 * math.pi * fd
    stroke_rms = stroke_peak = None
    if primary_accel_rms_m_s2 is not None:
        stroke_rms = stroke_rms_from_accel(resp, frequency_hz, primary_accel_rms_m_s2)
        stroke_peak = peak_factor * stroke_rms
    return TmdDesign(
        frequency_hz=frequency_hz,
        modal_mass_kg=modal_mass_kg,
        zeta_structure=zeta_structure,
        zeta_target_total=zeta_target_total,
        mass_ratio=mu,
        damper_mass_t=md / 1000.0,
        tuning=t,
        damper_frequency_hz=fd,
        damper_stiffness_n_m=md * wd * wd,
        damper_damping_n_s_m=2.0 * t.damping_ratio * wd * md,
        zeta_total=total,
        zeta_added=total - zeta_structure,
        zeta_eq_undamped_primary=equivalent_damping(mu, 0.0, match=match, tuning=t),
        match=match,
        mistuning=mistuning_sensitivity(mu, zeta_structure, detuning, match=match),
        stroke_rms_m=stroke_rms,
        stroke_peak_m=stroke_peak,
        peak_factor=peak_factor,
    )


# ---------------------------------------------------------------------------------------------
# Tuned sloshing damper: rectangular tank, linear potential theory
# ---------------------------------------------------------------------------------------------


def _check_tank(length_m: float, depth_m: float) -> None:
    if not (length_m > 0 and depth_m > 0 and math.isfinite(length_m) and math.isfinite(depth_m)):
        raise ValueError(f"tank length and depth must be positive (got L={length_m}, h={depth_m})")


def sloshing_frequency(length_m: float, depth_m: float, mode: int = 1, g: float = G_M_S2) -> float:
    """Natural sloshing frequency (Hz) of mode n in a rectangular tank (linear potential theory).

    f_n = (1/2 pi) sqrt((n pi g / L) tanh(n pi h / L)); L along the motion, h still depth.
    Antisymmetric modes n = 1, 3, 5, ... are excited by base motion (methods.md section 8).
    """
    _check_tank(length_m, depth_m)
    if mode < 1:
        raise ValueError(f"mode number must be >= 1, got {mode}")
    k = mode * math.pi / length_m
    return math.sqrt(g * k * math.tanh(k * depth_m)) / (2.0 * math.pi)


def shallow_water_frequency(length_m: float, depth_m: float, g: float = G_M_S2) -> float:
    """Shallow-water limit of the first sloshing frequency: sqrt(g h)/(2 L) (Hz)."""
    _check_tank(length_m, depth_m)
    return math.sqrt(g * depth_m) / (2.0 * length_m)


def sloshing_mass_fraction(length_m: float, depth_m: float) -> float:
    """First-mode effective (sloshing) mass / water mass: 8 tanh(pi h/L) / (pi^3 h/L).

    Equivalent-TMD model of a rectangular TSD (Tait 2008, from memory; methods.md section 8).
    """
    _check_tank(length_m, depth_m)
    r = depth_m / length_m
    return 8.0 * math.tanh(math.pi * r) / (math.pi**3 * r)


def housner_mass_fraction(length_m: float, depth_m: float) -> float:
    """Housner (1963) first-mode convective mass fraction, half-length l = L/2 (from memory).

    m_1/m_w = 0.527 (l/h) tanh(1.58 h/l).
    """
    _check_tank(length_m, depth_m)
    half = length_m / 2.0
    return 0.527 * (half / depth_m) * math.tanh(1.58 * depth_m / half)


def housner_frequency(length_m: float, depth_m: float, g: float = G_M_S2) -> float:
    """Housner (1963) first convective frequency (Hz): omega^2 = (g/l) sqrt(5/2) tanh(sqrt(5/2) h/l), l = L/2."""
    _check_tank(length_m, depth_m)
    half = length_m / 2.0
    s = math.sqrt(2.5)
    return math.sqrt((g / half) * s * math.tanh(s * depth_m / half)) / (2.0 * math.pi)


def deep_water_limit_hz(length_m: float, g: float = G_M_S2) -> float:
    """The highest first-mode frequency a tank of length L can reach (h -> infinity), Hz."""
    return math.sqrt(math.pi * g / length_m) / (2.0 * math.pi)


def depth_for_frequency(length_m: float, frequency_hz: float, g: float = G_M_S2) -> float:
    """Still depth h (m) that tunes the first sloshing mode of a tank of length L to ``frequency_hz``.

    Exact inverse of :func:`sloshing_frequency`: h = (L/pi) artanh(omega^2 L / (pi g)).

    Raises:
        ValueError: when the frequency is at or above the deep-water limit sqrt(pi g/L)/(2 pi).
    """
    if not (length_m > 0 and frequency_hz > 0):
        raise ValueError("tank length and frequency must be positive")
    w = 2.0 * math.pi * frequency_hz
    x = w * w * length_m / (math.pi * g)
    if x >= 1.0:
        raise ValueError(
            f"a {length_m:g} m tank cannot slosh at {frequency_hz:.4g} Hz at any depth "
            f"(deep-water limit {deep_water_limit_hz(length_m, g):.4g} Hz): use a shorter tank"
        )
    return length_m / math.pi * math.atanh(x)


def length_for_frequency(depth_ratio: float, frequency_hz: float, g: float = G_M_S2) -> float:
    """Tank length L (m) along the motion giving ``frequency_hz`` at depth ratio h/L.

    From omega^2 = (pi g / L) tanh(pi h/L): L = pi g tanh(pi h/L) / omega^2 (exact).
    """
    if not (depth_ratio > 0 and frequency_hz > 0):
        raise ValueError("depth ratio and frequency must be positive")
    w = 2.0 * math.pi * frequency_hz
    return math.pi * g * math.tanh(math.pi * depth_ratio) / (w * w)


def pack_rectangles(
    area: Polygon | MultiPolygon,
    length_m: float,
    width_m: float,
    *,
    along: str = "x",
    gap_m: float = 0.0,
    max_count: int | None = None,
    offsets: int = 4,
) -> tuple[Polygon, ...]:
    """Axis-aligned rectangles (``length_m`` along ``along``) packed on a grid inside ``area``.

    A simple, conservative packer: a regular grid of pitch (size + gap), tried at
    ``offsets`` x ``offsets`` shifts of the grid origin; the shift holding the most
    rectangles wholly inside ``area`` wins. Returns at most ``max_count`` rectangles.
    """
    if not (length_m > 0 and width_m > 0 and gap_m >= 0):
        raise ValueError("rectangle sizes must be positive and the gap non-negative")
    if along not in ("x", "y"):
        raise ValueError(f"along must be 'x' or 'y', got {along!r}")
    if area.is_empty:
        return ()
    dx, dy = (length_m, width_m) if along == "x" else (width_m, length_m)
    px, py = dx + gap_m, dy + gap_m
    minx, miny, maxx, maxy = area.bounds
    nx = int(math.floor((maxx - minx + gap_m) / px))
    ny = int(math.floor((maxy - miny + gap_m) / py))
    if nx < 1 or ny < 1:
        return ()
    shapely.prepare(area)
    best: list[Polygon] = []
    for i in range(offsets):
        for j in range(offsets):
            ox = minx + px * i / offsets
            oy = miny + py * j / offsets
            xs = ox + px * np.arange(nx + 1)
            ys = oy + py * np.arange(ny + 1)
            gx, gy = np.meshgrid(xs, ys, indexing="ij")
            gx, gy = gx.ravel(), gy.ravel()
            boxes = shapely.box(gx, gy, gx + dx, gy + dy)
            inside = boxes[shapely.contains(area, boxes)]
            if len(inside) > len(best):
                best = list(inside)
    if max_count is not None:
        best = best[:max_count]
    return tuple(best)


@dataclass(frozen=True)
class TsdDesign:
    """A set of identical rectangular sloshing tanks tuned to one mode (one direction).

    Attributes:
        direction: world axis of the motion ("x" or "y"); tank length runs along it.
        target_frequency_hz: tank frequency aimed at (Warburton f_opt times the structure's).
        length_m: inner tank length along the motion.
        width_m: inner tank width across the motion.
        depth_m: still water depth.
        depth_ratio: h / L.
        frequency_hz: the tank's first sloshing frequency (linear theory).
        housner_frequency_hz: Housner (1963) estimate, for comparison.
        mass_fraction: m_1/m_w (Tait equivalent TMD).
        housner_mass_fraction: Housner's m_1/m_w, for comparison.
        water_mass_per_tank_kg: rho L B h.
        effective_mass_per_tank_kg: m_1 per tank.
        n_tanks: number of tanks.
        required_effective_mass_kg: mu M_1 asked for.
        effective_mass_kg: n m_1 provided.
        mass_ratio: provided effective mass / M_1.
        water_mass_t: total water (tonnes).
        footprint_m2: n L B.
        available_area_m2: the area tanks may use (plate minus cores).
        usable_fraction: share of ``available_area_m2`` tanks may take (common practice 0.5).
        fits_area: footprint <= usable_fraction * available area.
        packed_count: tanks the grid packer fits in the available polygon.
        fits_packing: packed_count >= n_tanks.
        tanks: the packed tank rectangles (up to n_tanks), world plan.
        load_over_tank_kpa: water weight over the tank footprint.
        load_over_plate_kpa: water weight averaged over the plate area.
        damper_damping_ratio: zeta_d the tanks need (screens/baffles), Warburton.
        notes: assumptions and warnings.
    """

    direction: str
    target_frequency_hz: float
    length_m: float
    width_m: float
    depth_m: float
    depth_ratio: float
    frequency_hz: float
    housner_frequency_hz: float
    mass_fraction: float
    housner_mass_fraction: float
    water_mass_per_tank_kg: float
    effective_mass_per_tank_kg: float
    n_tanks: int
    required_effective_mass_kg: float
    effective_mass_kg: float
    mass_ratio: float
    water_mass_t: float
    footprint_m2: float
    available_area_m2: float
    usable_fraction: float
    fits_area: bool
    packed_count: int
    fits_packing: bool
    tanks: tuple[Polygon, ...]
    load_over_tank_kpa: float
    load_over_plate_kpa: float
    damper_damping_ratio: float
    notes: tuple[str, ...] = ()

    @property
    def fits(self) -> bool:
        return self.fits_area and self.fits_packing


def design_tsd(
    structure_frequency_hz: float,
    modal_mass_kg: float,
    mass_ratio: float,
    available: Polygon | MultiPolygon,
    *,
    direction: str = "x",
    width_m: float = 4.0,
    depth_ratio: float = 0.15,
    usable_fraction: float = 0.5,
    water_density_kg_m3: float = WATER_DENSITY_KG_M3,
    plate_area_m2: float | None = None,
    gap_m: float = 0.5,
    n_tanks: int | None = None,
    g: float = G_M_S2,
) -> TsdDesign:
    """Size rectangular sloshing tanks acting as a TMD of effective mass ``mass_ratio * M_1``.

    The tanks are tuned to Warburton's f_opt(mu) f_1; the length along the motion follows
    from the frequency and the depth ratio (:func:`length_for_frequency`), the depth from
    the length; the number of tanks from the effective (first-mode) mass per tank.

    Args:
        structure_frequency_hz: f_1 of the mode in ``direction``.
        modal_mass_kg: M_1 (mode shape 1 at the tank floor).
        mass_ratio: effective mass ratio needed (from :func:`mass_ratio_for_damping`).
        available: plan polygon the tanks may occupy (plate minus cores), world m.
        direction: "x" or "y", the world axis of the mode's motion.
        width_m: tank width across the motion (settable).
        depth_ratio: h/L, 0.1-0.2 shallow-water common practice.
        usable_fraction: share of ``available`` tanks may take (common practice 0.5).
        water_density_kg_m3: 1000 fresh water.
        plate_area_m2: gross plate area for the averaged load (default: ``available.area``).
        gap_m: clear gap between packed tanks (walls, access), m.
        n_tanks: use this many tanks when it is more than the mass needs (e.g. square tanks
            shared by two directions).
    """
    if not (structure_frequency_hz > 0 and modal_mass_kg > 0 and width_m > 0 and water_density_kg_m3 > 0):
        raise ValueError("need positive frequency, modal mass, tank width and water density")
    if not 0 < usable_fraction <= 1:
        raise ValueError(f"usable fraction must be in (0, 1], got {usable_fraction}")
    t = warburton_tuning(mass_ratio)
    f_t = t.frequency_ratio * structure_frequency_hz
    length = length_for_frequency(depth_ratio, f_t, g)
    depth = depth_ratio * length
    frac = sloshing_mass_fraction(length, depth)
    m_w = water_density_kg_m3 * length * width_m * depth
    m_1 = frac * m_w
    need = mass_ratio * modal_mass_kg
    n = max(1, math.ceil(need / m_1 - 1e-9), n_tanks or 0)
    footprint = n * length * width_m
    avail_area = float(available.area)
    packed = pack_rectangles(available, length, width_m, along=direction, gap_m=gap_m)
    plate_area = float(plate_area_m2) if plate_area_m2 else avail_area
    notes = [
        "linear sloshing theory; large-amplitude (breaking) response is lower than predicted (common practice)",
        "effective mass from the Tait (2008) equivalent-TMD model (from memory)",
        f"tanks need damping zeta_d = {t.damping_ratio:.3f} from screens or baffles (Warburton tuning)",
    ]
    if not 0.1 <= depth_ratio <= 0.2:
        notes.append(f"depth ratio {depth_ratio:g} is outside the shallow-water window 0.1-0.2 (common practice)")
    if width_m > length:
        notes.append(
            f"tank width {width_m:g} m exceeds its length {length:.2f} m: the cross-wise sloshing mode "
            f"({sloshing_frequency(width_m, depth, g=g):.3f} Hz) is untuned"
        )
    return TsdDesign(
        direction=direction,
        target_frequency_hz=f_t,
        length_m=length,
        width_m=width_m,
        depth_m=depth,
        depth_ratio=depth_ratio,
        frequency_hz=sloshing_frequency(length, depth, g=g),
        housner_frequency_hz=housner_frequency(length, depth, g),
        mass_fraction=frac,
        housner_mass_fraction=housner_mass_fraction(length, depth),
        water_mass_per_tank_kg=m_w,
        effective_mass_per_tank_kg=m_1,
        n_tanks=n,
        required_effective_mass_kg=need,
        effective_mass_kg=n * m_1,
        mass_ratio=n * m_1 / modal_mass_kg,
        water_mass_t=n * m_w / 1000.0,
        footprint_m2=footprint,
        available_area_m2=avail_area,
        usable_fraction=usable_fraction,
        fits_area=footprint <= usable_fraction * avail_area,
        packed_count=len(packed),
        fits_packing=len(packed) >= n,
        tanks=packed[:n],
        load_over_tank_kpa=water_density_kg_m3 * g * depth / 1000.0,
        load_over_plate_kpa=n * m_w * g / plate_area / 1000.0 if plate_area > 0 else float("inf"),
        damper_damping_ratio=t.damping_ratio,
        notes=tuple(notes),
    )


@dataclass(frozen=True)
class TwoWayTsd:
    """Tanks for both plan directions.

    Attributes:
        layout: "square" (one set of square tanks sloshing both ways, L_x = L_y) or
            "two sets" (one set per direction).
        x, y: the per-direction designs; for "square" both describe the same tanks
            (same ``n_tanks``, water counted once in ``water_mass_t``).
        water_mass_t: total water.
        footprint_m2: total tank footprint.
        fits: both sets fit (area and packing; for two sets, the combined footprint and
            a joint packing).
        reason: why this layout.
    """

    layout: str
    x: TsdDesign
    y: TsdDesign
    water_mass_t: float
    footprint_m2: float
    fits: bool
    reason: str


def design_tsd_two_way(
    frequency_x_hz: float,
    modal_mass_x_kg: float,
    mass_ratio_x: float,
    frequency_y_hz: float,
    modal_mass_y_kg: float,
    mass_ratio_y: float,
    available: Polygon | MultiPolygon,
    *,
    width_m: float = 4.0,
    depth_ratio: float = 0.15,
    usable_fraction: float = 0.5,
    water_density_kg_m3: float = WATER_DENSITY_KG_M3,
    plate_area_m2: float | None = None,
    gap_m: float = 0.5,
    square_tolerance: float = 0.02,
    g: float = G_M_S2,
) -> TwoWayTsd:
    """Tanks for two directions: square tanks when the tuned frequencies agree, else two sets.

    A square tank (L_x = L_y = L, depth h) sloshes at the same first frequency both ways,
    with the same effective mass fraction; it serves both directions when the two target
    frequencies differ by at most ``square_tolerance`` (relative; common practice: a TSD
    tuned within about 2 % loses little). The tank is then sized for the mean target
    frequency and the number of tanks is the larger of the two needs.
    """
    tx = warburton_tuning(mass_ratio_x).frequency_ratio * frequency_x_hz
    ty = warburton_tuning(mass_ratio_y).frequency_ratio * frequency_y_hz
    kw = dict(
        depth_ratio=depth_ratio,
        usable_fraction=usable_fraction,
        water_density_kg_m3=water_density_kg_m3,
        plate_area_m2=plate_area_m2,
        gap_m=gap_m,
        g=g,
    )
    if abs(tx - ty) / max(tx, ty) <= square_tolerance:
        f_mean = 0.5 * (tx + ty)
        side = length_for_frequency(depth_ratio, f_mean, g)
        # size each direction with square tanks of that side, tuned to the mean frequency:
        # pass an equivalent structure frequency so that f_opt * f_1 = f_mean in both
        dx = design_tsd(f_mean / warburton_tuning(mass_ratio_x).frequency_ratio, modal_mass_x_kg, mass_ratio_x,
                        available, direction="x", width_m=side, **kw)
        dy = design_tsd(f_mean / warburton_tuning(mass_ratio_y).frequency_ratio, modal_mass_y_kg, mass_ratio_y,
                        available, direction="y", width_m=side, **kw)
        n = max(dx.n_tanks, dy.n_tanks)
        dx = design_tsd(f_mean / warburton_tuning(mass_ratio_x).frequency_ratio, modal_mass_x_kg, mass_ratio_x,
                        available, direction="x", width_m=side, n_tanks=n, **kw)
        dy = design_tsd(f_mean / warburton_tuning(mass_ratio_y).frequency_ratio, modal_mass_y_kg, mass_ratio_y,
                        available, direction="y", width_m=side, n_tanks=n, **kw)
        return TwoWayTsd(
            layout="square",
            x=dx,
            y=dy,
            water_mass_t=dx.water_mass_t,
            footprint_m2=dx.footprint_m2,
            fits=dx.fits,
            reason=(
                f"tuned frequencies {tx:.4f} Hz (x) and {ty:.4f} Hz (y) agree within "
                f"{100 * square_tolerance:g} %: square {side:.2f} m tanks slosh both ways"
            ),
        )
    dx = design_tsd(frequency_x_hz, modal_mass_x_kg, mass_ratio_x, available, direction="x", width_m=width_m, **kw)
    dy = design_tsd(frequency_y_hz, modal_mass_y_kg, mass_ratio_y, available, direction="y", width_m=width_m, **kw)
    footprint = dx.footprint_m2 + dy.footprint_m2
    fits_area = footprint <= usable_fraction * float(available.area)
    # joint packing: x tanks first, then y tanks in what is left
    used = shapely.union_all([shapely.buffer(t, gap_m, join_style="mitre") for t in dx.tanks]) if dx.tanks else None
    rest = available.difference(used) if used is not None else available
    packed_y = pack_rectangles(rest, dy.length_m, dy.width_m, along="y", gap_m=gap_m)
    fits = fits_area and dx.fits_packing and len(packed_y) >= dy.n_tanks
    return TwoWayTsd(
        layout="two sets",
        x=dx,
        y=dy,
        water_mass_t=dx.water_mass_t + dy.water_mass_t,
        footprint_m2=footprint,
        fits=fits,
        reason=(
            f"tuned frequencies {tx:.4f} Hz (x) and {ty:.4f} Hz (y) differ by more than "
            f"{100 * square_tolerance:g} %: one set of tanks per direction"
        ),
    )


# ---------------------------------------------------------------------------------------------
# Tuned liquid column damper (Sakai et al. 1989, from memory)
# ---------------------------------------------------------------------------------------------


def liquid_column_frequency(column_length_m: float, g: float = G_M_S2) -> float:
    """Natural frequency (Hz) of a U-tube liquid column of total length L_e: sqrt(2g/L_e)/(2 pi)."""
    if not column_length_m > 0:
        raise ValueError(f"liquid column length must be positive, got {column_length_m}")
    return math.sqrt(2.0 * g / column_length_m) / (2.0 * math.pi)


def liquid_column_length(frequency_hz: float, g: float = G_M_S2) -> float:
    """Liquid column length L_e (m) for a target frequency: 2 g / (2 pi f)^2."""
    if not frequency_hz > 0:
        raise ValueError(f"frequency must be positive, got {frequency_hz}")
    w = 2.0 * math.pi * frequency_hz
    return 2.0 * g / (w * w)


@dataclass(frozen=True)
class TlcdDesign:
    """A tuned liquid column damper (uniform section) for one mode.

    Attributes:
        target_frequency_hz: Warburton f_opt times the structure frequency.
        column_length_m: total liquid length L_e.
        horizontal_length_m: alpha L_e.
        vertical_length_m: each riser's liquid height (L_e - b)/2.
        length_ratio: alpha = b / L_e.
        liquid_mass_t: m_l = mu_eff M_1 / alpha^2 (tonnes).
        effective_mass_ratio: alpha^2 m_l / M_1 (= the mu asked for).
        section_area_m2: m_l / (rho L_e).
        damper_damping_ratio: zeta_d wanted (Warburton), obtained by orifice head loss
            (amplitude-dependent; not sized here).
    """

    target_frequency_hz: float
    column_length_m: float
    horizontal_length_m: float
    vertical_length_m: float
    length_ratio: float
    liquid_mass_t: float
    effective_mass_ratio: float
    section_area_m2: float
    damper_damping_ratio: float


def design_tlcd(
    structure_frequency_hz: float,
    modal_mass_kg: float,
    mass_ratio: float,
    *,
    length_ratio: float = 0.8,
    liquid_density_kg_m3: float = WATER_DENSITY_KG_M3,
    g: float = G_M_S2,
) -> TlcdDesign:
    """Size a TLCD whose effective mass alpha^2 m_l equals ``mass_ratio * M_1`` (Sakai et al. 1989, from memory)."""
    if not 0 < length_ratio < 1:
        raise ValueError(f"horizontal length ratio alpha must be in (0, 1), got {length_ratio}")
    if not (structure_frequency_hz > 0 and modal_mass_kg > 0 and liquid_density_kg_m3 > 0):
        raise ValueError("need positive frequency, modal mass and liquid density")
    t = warburton_tuning(mass_ratio)
    f_t = t.frequency_ratio * structure_frequency_hz
    le = liquid_column_length(f_t, g)
    m_l = mass_ratio * modal_mass_kg / length_ratio**2
    return TlcdDesign(
        target_frequency_hz=f_t,
        column_length_m=le,
        horizontal_length_m=length_ratio * le,
        vertical_length_m=(1.0 - length_ratio) * le / 2.0,
        length_ratio=length_ratio,
        liquid_mass_t=m_l / 1000.0,
        effective_mass_ratio=length_ratio**2 * m_l / modal_mass_kg,
        section_area_m2=m_l / (liquid_density_kg_m3 * le),
        damper_damping_ratio=t.damping_ratio,
    )
