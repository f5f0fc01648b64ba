"""Damping advisor: how much damping a flagged scheme needs, and dampers that would provide it.

Plugin ``damping``: needs ``modes``, ``accel_en`` and ``comfort_checks``; wants
``accel_nbcc`` and ``accel_corners``; provides ``damping_advice`` (a :class:`DampingAdvice`);
settings section ``[dampers]`` (:class:`DampingSettings`). The mathematics lives in
:mod:`swayscreen.plugins.dampers`.

For every flagged comfort check (or the governing one with ``run_always``):

1. **Required damping from the response model.** The wind cases behind the check (same
   method and return period, in every direction whose row fails the target
   ``margin x limit``) are recomputed at a trial total damping ratio with the wind plugin's
   own function (:func:`~swayscreen.plugins.wind_common.peak_mg_for_damping`), the
   plate-corner resultants and the comfort criterion are re-evaluated with the corners and
   comfort plugins' functions, and brentq finds the total damping at which the check's
   value equals ``margin x limit``. Reported beside it: the resonant-only rule
   ``zeta_req = zeta_0 (a_0 / a_target)^2`` (methods.md section 8). ``zeta_0`` is the
   damping the method used (EN: structural + aerodynamic; NBCC: structural).
2. **Stiffening instead.** The frequency at which the check passes with no damper:
   every stiffness scaled by (f/f0)^2, masses and mode shapes unchanged, each case
   recomputed at its new frequency (EN: S_L, R_h, R_b, k_p and the aerodynamic damping
   change; NBCC: the reduced velocity, s, F, g_p and the static deflection ~ 1/f^2);
   frequency-dependent limits are re-evaluated at the new frequency.
3. **Dampers** on each mode behind the flagged cases, at the top floor's mass centre:
   a Warburton-tuned TMD (mass ratio from the 2DOF equivalent damping, acceleration
   variance matched, primary damping ``zeta_0``), rectangular sloshing tanks on the top
   floor plate (tanks along the world axis nearest the mode's motion; two directions:
   square tanks when the tuned frequencies agree, else two sets), and a TLCD.
   The generalized mass is M* / |d|^2 with d the mode's plan displacement at the damper
   point (the damper's modal mass ratio is m_d d_u^2 / M*, d_u the component along the
   damper's line of action).
4. **Closing the loop.** The damper masses are added, rigidly, to the top level of a copy
   of the stick model (:func:`dataclasses.replace`; tanks spread over the plate also add
   polar moment with the floor's radius of gyration); the modal analysis and the wind
   methods are re-run; each new case of a damped mode gets the total damping of the
   re-tuned damper on the new mode (2DOF, the new case's own zeta_0); corners and comfort
   are re-evaluated. Adding the damper mass rigidly over-states the frequency drop
   (conservative for the wind response). If a check still fails, the mass ratios are
   raised and the loop repeated (``loop_iterations``).

Free plate area for tanks: the top level's plate minus, for every wall that reaches that
floor (from the takeoff's walls by elevation, not by storey membership), the convex hull
of each core's walls (shafts and stairs inside a core are not free) and the footprints of
the other walls. The stick model keeps no core plan outline, so this is rebuilt from the
takeoff.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from shapely import union_all
from shapely.geometry import MultiPolygon, Polygon
from shapely.geometry.base import BaseGeometry

from swayscreen.pipeline.plugin_api import BasicPlugin, Check, Context
from swayscreen.pipeline.settings import setting
from swayscreen.pipeline.stick import StickModel
from swayscreen.pipeline.takeoff import BuildingTakeoff

from . import dampers as dm
from .comfort import ComfortResult, ComfortSettings, comfort_assessment, resolve_occupancy
from .corners import corner_accelerations
from .modal import ModalSettings, modal_analysis
from .wind_common import (
    MG,
    AccelerationCase,
    AccelerationResult,
    Terrain,
    generalized_mass_kg,
    level_plate,
    peak_mg_for_damping,
    plan_extent,
    point_displacement,
    required_return_periods,
    select_mode,
    wind_settings,
)
from .wind_en import METHOD as EN_METHOD
from .wind_en import EnAlongInput, en_accelerations, en_along_response
from .wind_nbcc import METHOD as NBCC_METHOD
from .wind_nbcc import NbccSettings, nbcc_accelerations, nbcc_across_wind, nbcc_along_wind

__all__ = [
    "DampingSettings",
    "CheckAdvice",
    "ModeDampers",
    "TankAdvice",
    "LoopCheck",
    "ClosedLoop",
    "DampingAdvice",
    "damped_case",
    "case_peak_at_frequency",
    "rule_total_damping",
    "free_plate_area",
    "ScreeningChain",
    "advise",
    "PLUGIN",
]

ZETA_MAX = 0.5  # upper end of the damping searched (fraction of critical)


@dataclass(frozen=True)
class DampingSettings:
    """Damping advisor: target, damper types and tank geometry."""

    run_always: bool = setting(
        False, source="user choice",
        doc="advise even when no comfort check is flagged (on the governing check)")
    damper_type: str = setting(
        "all", choices=("tmd", "tsd", "tlcd", "all"), source="user choice",
        doc="damper proposals to size: tuned mass, tuned sloshing tanks, tuned liquid column, or all")
    target_margin: float = setting(
        0.95, minimum=0.5, maximum=1.0, source="common practice (size for a little below the limit)",
        doc="size the damping so that each flagged value reaches this fraction of its limit")
    tank_width_m: float = setting(
        4.0, unit="m", minimum=0.5, maximum=30.0, source="common practice (tank modules a few metres wide)",
        doc="sloshing tank width across the motion")
    tank_depth_ratio: float = setting(
        0.15, minimum=0.02, maximum=1.0, source="common practice (shallow tanks h/L 0.1-0.2)",
        doc="still water depth over tank length h/L")
    tank_gap_m: float = setting(
        0.5, unit="m", minimum=0.0, maximum=5.0, source="common practice (walls and access between tanks)",
        doc="clear gap between packed tanks")
    usable_area_fraction: float = setting(
        0.5, minimum=0.05, maximum=1.0,
        source="common practice (about half the plate left after cores is free for tanks)",
        doc="share of the free plate area that tanks may occupy")
    water_density_kg_m3: float = setting(
        1000.0, unit="kg/m^3", minimum=900.0, maximum=1300.0, source="fresh water",
        doc="density of the tank and column liquid")
    square_tank_tolerance: float = setting(
        0.02, minimum=0.0, maximum=0.2,
        source="common practice (a tuned damper loses little within about 2 % of its tuning)",
        doc="largest relative difference of the two tuned frequencies for square tanks sloshing both ways")
    mistuning: float = setting(
        0.10, minimum=0.0, maximum=0.5, source="methods.md section 8 (design for 5-10 % frequency error; common practice)",
        doc="damper frequency error for the sensitivity study")
    max_mass_ratio: float = setting(
        0.10, minimum=0.001, maximum=0.5,
        source="common practice (TMD about 0.5-2 %, sloshing tanks 1-5 % of the modal mass)",
        doc="largest damper mass ratio (effective mass over the mode's generalized mass) considered")
    tlcd_length_ratio: float = setting(
        0.8, minimum=0.3, maximum=0.95, source="common practice (horizontal length about 0.7-0.9 of the column)",
        doc="TLCD horizontal length over total liquid length alpha")
    max_frequency_factor: float = setting(
        3.0, minimum=1.01, maximum=10.0, source="user choice",
        doc="largest frequency increase (f/f0) searched for the stiffening alternative")
    loop_iterations: int = setting(
        4, minimum=1, maximum=10, source="user choice",
        doc="closing-the-loop rounds (resize and re-run when a check still fails)")


# ---------------------------------------------------------------------------------------------
# Result dataclasses
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CheckAdvice:
    """What one flagged comfort check needs.

    Attributes:
        criterion, method, return_period_yr, direction_deg: the check.
        value_mg, limit_mg: the check's value and limit; target_mg = margin x limit.
        mode_indices: modes behind the failing directions (damped together).
        governing_mode_index, frequency_hz: mode and frequency of the governing case.
        zeta_structural, zeta_aerodynamic, zeta_current: damping of the governing case
            (fraction of critical; current = what the method used).
        zeta_required_total: total damping at which the check reaches the target, from
            the response model (None when not reachable below 0.5).
        zeta_required_rule: zeta_current (value/target)^2 (resonant 1/sqrt(zeta) rule).
        zeta_added_required: zeta_required_total - zeta_current.
        frequency_required_hz: frequency at which the check reaches the target with no damper
            (all stiffness scaled; None when not reached within max_frequency_factor).
        stiffness_factor: (frequency_required / frequency)^2.
        note: assumptions.
    """

    criterion: str
    method: str
    return_period_yr: float | None
    direction_deg: float | None
    value_mg: float
    limit_mg: float
    target_mg: float
    mode_indices: tuple[int, ...]
    governing_mode_index: int
    frequency_hz: float
    zeta_structural: float
    zeta_aerodynamic: float
    zeta_current: float
    zeta_required_total: float | None
    zeta_required_rule: float
    zeta_added_required: float | None
    frequency_required_hz: float | None
    stiffness_factor: float | None
    note: str = ""
    curve_mg: tuple[tuple[float, float], ...] = ()
    """(added damping ratio beyond zeta_current, check value in mg) from the response model."""


@dataclass(frozen=True)
class DampingCurve:
    """The governing check's value against added damping, for the report's plot."""

    label: str
    points: tuple[tuple[float, float], ...]
    limit_mg: float
    proposed_added_damping: float | None


@dataclass(frozen=True)
class ModeDampers:
    """Damper proposals for one mode.

    Attributes:
        mode_index, frequency_hz, kind: the mode.
        level: storey name of the damper floor (the top level); point_m: damper location
            (the level's mass centre); motion_xy: unit vector of the mode's plan motion there.
        modal_mass_kg: M* / |d|^2, generalized mass with the mode shape 1 at the damper.
        zeta_current: the primary's damping used for the 2DOF (the case needing most).
        zeta_target_total: total damping the response model asks for on this mode.
        mass_ratio_required: effective damper mass / modal mass for that target (2DOF,
            Warburton tuning), before any closed-loop increase; each proposal carries its
            own final mass ratio.
        tmd: the tuned mass damper after closing the loop (None when not asked for or not
            reachable).
        tlcd: the liquid column damper after closing the loop (likewise).
        tlcd_fits_plate: the TLCD's horizontal length fits the plate along the motion.
        note: why a proposal is missing, and assumptions.
    """

    mode_index: int
    frequency_hz: float
    kind: str
    level: str
    point_m: tuple[float, float]
    motion_xy: tuple[float, float]
    modal_mass_kg: float
    zeta_current: float
    zeta_target_total: float
    mass_ratio_required: float | None
    tmd: dm.TmdDesign | None
    tlcd: dm.TlcdDesign | None
    tlcd_fits_plate: bool | None
    note: str = ""


@dataclass(frozen=True)
class TankAdvice:
    """Sloshing tanks on the top floor plate.

    Attributes:
        level: storey name.
        plate_area_m2: the floor plate's area; free_area_m2: after cores and walls.
        mode_indices: modes served (in the order x, y for two directions).
        single: the design for one direction (one mode), else None.
        two_way: the design for two directions, else None.
        fits: the tanks fit (area share and packing).
        water_mass_t: total water.
        note: how the free area was found and what the layout is.
    """

    level: str
    plate_area_m2: float
    free_area_m2: float
    mode_indices: tuple[int, ...]
    single: dm.TsdDesign | None
    two_way: dm.TwoWayTsd | None
    fits: bool
    water_mass_t: float
    note: str = ""


@dataclass(frozen=True)
class LoopCheck:
    """One comfort check before and after the dampers (mg)."""

    criterion: str
    method: str
    value_before_mg: float
    limit_before_mg: float
    value_after_mg: float
    limit_after_mg: float
    passes_after: bool
    valid: bool = True


@dataclass(frozen=True)
class ClosedLoop:
    """The scheme re-analysed with a damper type's masses and damping.

    Attributes:
        damper_type: "tmd", "tsd" or "tlcd".
        level: storey carrying the dampers.
        added_mass_t: mass added to that level (rigidly).
        modes: (mode before, frequency before Hz, mode after, frequency after Hz,
            mass ratio after, total damping after of its worst case) per damped mode.
        checks: every comfort check before and after.
        passes: all comfort checks pass after.
        iterations: rounds used (1 = the first sizing passed).
        note: what was assumed.
    """

    damper_type: str
    level: str
    added_mass_t: float
    modes: tuple[tuple[int, float, int, float, float, float], ...]
    checks: tuple[LoopCheck, ...]
    passes: bool
    iterations: int
    note: str = ""


@dataclass(frozen=True)
class DampingAdvice:
    """The damping advisor's result.

    Attributes:
        needed: some comfort check is flagged.
        margin: target fraction of the limits.
        checks: per check advised.
        modes: damper proposals per mode (after closing the loop).
        tanks: sloshing tank proposal (None when not asked for or not possible).
        loops: closed-loop re-analysis per damper type.
        notes: one line each.
    """

    needed: bool
    margin: float
    checks: tuple[CheckAdvice, ...] = ()
    modes: tuple[ModeDampers, ...] = ()
    tanks: TankAdvice | None = None
    loops: tuple[ClosedLoop, ...] = ()
    notes: tuple[str, ...] = ()

    # ----- presentation (terminal, report, write-back) -----------------------------------
    @property
    def governing(self) -> CheckAdvice | None:
        """The advised check furthest above its limit."""
        return max(self.checks, key=lambda c: c.value_mg / c.limit_mg, default=None)

    @property
    def required_total_damping_ratio(self) -> float | None:
        """Largest total damping the response model asks for over the advised checks."""
        vals = [c.zeta_required_total for c in self.checks if c.zeta_required_total is not None]
        return max(vals) if vals else None

    def _loop(self, kind: str) -> ClosedLoop | None:
        return next((lp for lp in self.loops if lp.damper_type == kind), None)

    @property
    def curve(self) -> DampingCurve | None:
        g = self.governing
        if g is None or not g.curve_mg:
            return None
        tmd = next((m.tmd for m in self.modes if m.tmd is not None and m.mode_index == g.governing_mode_index), None)
        return DampingCurve(f"{g.criterion} ({g.method}), wind from {g.direction_deg or 0:.0f} deg",
                            g.curve_mg, g.limit_mg, tmd.zeta_added if tmd is not None else None)

    @property
    def summary_lines(self) -> tuple[str, ...]:
        if not self.needed:
            return ()
        out: list[str] = []
        for c in self.checks:
            need = (f"needs total damping {100 * c.zeta_required_total:.1f} % "
                    f"(now {100 * c.zeta_current:.2f} %: structural {100 * c.zeta_structural:.2f} + "
                    f"aerodynamic {100 * c.zeta_aerodynamic:.2f}); the 1/sqrt(damping) rule says "
                    f"{100 * c.zeta_required_rule:.1f} %" if c.zeta_required_total is not None
                    else "cannot be met by damping alone (total damping 50 % would not do it)")
            stiff = (f"; or stiffen to {c.frequency_required_hz:.3f} Hz (stiffness x {c.stiffness_factor:.2f})"
                     if c.frequency_required_hz is not None else "")
            out.append(f"{c.criterion} ({c.method}) {c.value_mg:.1f} mg vs {c.limit_mg:.1f}: {need}{stiff}")
        for m in self.modes:
            if m.tmd is not None:
                t = m.tmd
                stroke = f", peak stroke {1000 * t.stroke_peak_m:.0f} mm" if t.stroke_peak_m else ""
                out.append(
                    f"TMD for mode {m.mode_index} ({m.kind}, {m.frequency_hz:.3f} Hz) at {m.level}: "
                    f"{t.damper_mass_t:,.0f} t (mass ratio {100 * t.mass_ratio:.2f} % of {m.modal_mass_kg / 1e6:,.1f} kt "
                    f"generalized mass), tuned to {t.damper_frequency_hz:.3f} Hz, damper damping "
                    f"{100 * t.tuning.damping_ratio:.1f} %, adds {100 * t.zeta_added:.1f} % damping{stroke}; "
                    f"+-{100 * t.mistuning.detuning:.0f} % mistuning gives "
                    f"{100 * t.mistuning.zeta_total_worst:.1f} % total instead of {100 * t.zeta_total:.1f} %")
            if m.tlcd is not None:
                c = m.tlcd
                out.append(f"Liquid column damper for mode {m.mode_index}: column length {c.column_length_m:.1f} m "
                           f"({c.horizontal_length_m:.1f} m horizontal), {c.liquid_mass_t:,.0f} t of water"
                           f"{'' if m.tlcd_fits_plate else ' (does NOT fit the plate along the motion)'}")
        if self.tanks is not None:
            t = self.tanks
            d = t.single or (t.two_way.x if t.two_way is not None else None)
            if d is not None:
                layout = f" ({t.two_way.layout})" if t.two_way is not None else ""
                out.append(
                    f"Sloshing tanks on {t.level}{layout}: {d.n_tanks} x {d.length_m:.1f} m x {d.width_m:.1f} m, "
                    f"water {d.depth_m:.2f} m deep (h/L {d.depth_ratio:.2f}, {d.frequency_hz:.3f} Hz), "
                    f"{t.water_mass_t:,.0f} t of water; {d.load_over_tank_kpa:.1f} kPa over the tanks, "
                    f"{d.load_over_plate_kpa:.1f} kPa over the plate; "
                    f"{'fits' if t.fits else 'does NOT fit'} the free plate area ({t.free_area_m2:,.0f} m2)")
        for lp in self.loops:
            shift = ", ".join(f"mode {a} {fa:.3f} -> {fb:.3f} Hz" for a, fa, _b, fb, _mu, _z in lp.modes)
            worst = max((c for c in lp.checks if c.valid), key=lambda c: c.value_after_mg / c.limit_after_mg,
                        default=None)
            after = (f"; worst after {worst.value_after_mg:.1f} mg vs {worst.limit_after_mg:.1f} ({worst.criterion}, "
                     f"{worst.method})" if worst else "")
            out.append(f"After {lp.damper_type.upper()} (+{lp.added_mass_t:,.0f} t at {lp.level}): "
                       f"{'every comfort check within its method range passes' if lp.passes else 'still flagged'}; "
                       f"{shift}{after}")
        out += [n for n in self.notes if "validity range" in n]
        return tuple(out)

    @property
    def explanation(self) -> str:
        g = self.governing
        if not self.needed or g is None:
            return ""
        passing = [lp.damper_type.upper() for lp in self.loops if lp.passes]
        return (
            f"The scheme fails the {g.criterion} check by {g.method}: {g.value_mg:.1f} mg against {g.limit_mg:.1f} mg. "
            "The wind response was recomputed as a function of damping and solved for the limit (with a "
            f"{100 * (1 - self.margin):.0f} % margin). An auxiliary damper tuned to the responding mode adds "
            "damping; its size follows from the mass ratio that gives that damping in a two-degree-of-freedom "
            "model with Warburton's optimum tuning. The proposals were then added to the top floor, the modes and "
            "winds re-run, and the checks repeated: "
            + (f"with {', '.join(passing)} every comfort check passes." if passing
               else "no proposal clears every check; stiffen the scheme or commission a wind-tunnel study.")
        )

    @property
    def ifc_properties(self) -> tuple[tuple[str, Any, str], ...]:
        """(name, value, IFC measure type) for the write-back."""
        if not self.needed:
            return ()
        props: list[tuple[str, Any, str]] = []
        req = self.required_total_damping_ratio
        if req is not None:
            props.append(("RequiredTotalDampingRatio", float(req), "IfcRatioMeasure"))
        for m in self.modes:
            if m.tmd is not None:
                props += [(f"Mode{m.mode_index}TmdMass", float(m.tmd.damper_mass_t * 1000), "IfcMassMeasure"),
                          (f"Mode{m.mode_index}TmdFrequency", float(m.tmd.damper_frequency_hz), "IfcFrequencyMeasure"),
                          (f"Mode{m.mode_index}TmdDampingRatio", float(m.tmd.tuning.damping_ratio), "IfcRatioMeasure")]
        if self.tanks is not None:
            props += [("TankWaterMass", float(self.tanks.water_mass_t * 1000), "IfcMassMeasure"),
                      ("TanksFitPlate", bool(self.tanks.fits), "IfcBoolean"),
                      ("TankLevel", self.tanks.level, "IfcLabel")]
        for lp in self.loops:
            props.append((f"After{lp.damper_type.capitalize()}Passes", bool(lp.passes), "IfcBoolean"))
        lines = self.summary_lines
        if lines:
            props.append(("Proposal", " | ".join(lines)[:2000], "IfcText"))
        return tuple(props)


# ---------------------------------------------------------------------------------------------
# Case transforms (response model)
# ---------------------------------------------------------------------------------------------

_SCALED_DETAILS = ("modal_peak_m_s2", "peak_a_roof_m_s2", "sigma_a_roof_m_s2")


def _rescaled(case: AccelerationCase, factor: float, **changes: Any) -> AccelerationCase:
    details = dict(case.details)
    for key in _SCALED_DETAILS:
        if key in details:
            details[key] = details[key] * factor
    for key, val in changes.pop("details", {}).items():
        details[key] = val
    return replace(
        case,
        peak_mg=case.peak_mg * factor,
        rms_mg=case.rms_mg * factor,
        floor_peak_mg=tuple(v * factor for v in case.floor_peak_mg),
        details=details,
        **changes,
    )


def damped_case(case: AccelerationCase, zeta_total: float) -> AccelerationCase:
    """The case recomputed at total damping ``zeta_total`` with the wind plugin's function.

    Peaks, RMS, floor profile and the modal peak all scale by the recomputed top peak.
    Cases without details (no motion) are returned unchanged.
    """
    if not case.details or case.peak_mg <= 0:
        return case
    new = peak_mg_for_damping(case, zeta_total)
    extra = {"delta": 2.0 * math.pi * zeta_total} if "delta" in case.details else {}
    return _rescaled(case, new / case.peak_mg, damping_ratio=zeta_total, details=extra)


def case_peak_at_frequency(case: AccelerationCase, frequency_hz: float) -> tuple[float, float] | None:
    """(top peak mg, total damping) of the case with every stiffness scaled to ``frequency_hz``.

    Masses and mode shapes unchanged. EN 1991-1-4 Annex B: recomputed in full (aerodynamic
    damping changes with the frequency). NBCC across-wind: recomputed; NBCC along-wind:
    recomputed with the mean static deflection scaled by (f0/f)^2. None for other methods.
    """
    d = case.details
    if not d or case.peak_mg <= 0:
        return None
    top = float(d.get("phi_top_occupied", 1.0))
    f0 = float(d["frequency_hz"])
    if case.method == EN_METHOD:
        inp = EnAlongInput(d["v_b_m_s"], Terrain("details", d["z0_m"], d["z_min_m"]), d["height_m"], d["b_m"],
                           frequency_hz, d["m_e_kg_m"], d["K_x"], d["delta_s"], d["c_f"], d["rho_kg_m3"],
                           d["c_o"], d["k_I"], d["T_s"])
        r = en_along_response(inp)
        return r.peak_a_m_s2 * top / MG, r.damping_ratio
    if case.method == NBCC_METHOD and case.response == "across":
        r = nbcc_across_wind(frequency_hz, d["W_m"], d["D_m"], d["V_H_m_s"], d["rho_B_kg_m3"], case.damping_ratio,
                             d["T_s"])
        return r.peak_m_s2 * top / MG, case.damping_ratio
    if case.method == NBCC_METHOD and case.response == "along":
        r = nbcc_along_wind(frequency_hz, d["height_m"], d["W_m"], d["V_H_m_s"], case.damping_ratio, d["K"],
                            d["C_eH"], mean_deflection_m=d["mean_deflection_m"] * (f0 / frequency_hz) ** 2,
                            duration_s=d["T_s"])
        return r.peak_m_s2 * top / MG, case.damping_ratio
    return None


def _stiffened_case(case: AccelerationCase, factor: float) -> AccelerationCase:
    """The case with its frequency multiplied by ``factor`` (unchanged when not supported)."""
    res = case_peak_at_frequency(case, case.frequency_hz * factor)
    if res is None:
        return case
    peak, zeta = res
    f_new = case.frequency_hz * factor
    extra: dict[str, float] = {"frequency_hz": f_new}
    if "mean_deflection_m" in case.details:
        extra["mean_deflection_m"] = case.details["mean_deflection_m"] / factor**2
    if case.method == EN_METHOD:
        extra["delta"] = 2.0 * math.pi * zeta
    return _rescaled(case, peak / case.peak_mg, frequency_hz=f_new, damping_ratio=zeta, details=extra)


def rule_total_damping(zeta_current: float, value: float, target: float) -> float:
    """Resonant-only rule: zeta_req = zeta_0 (a_0 / a_target)^2 (methods.md section 8)."""
    return zeta_current * (value / target) ** 2


# ---------------------------------------------------------------------------------------------
# Free plate area
# ---------------------------------------------------------------------------------------------


def free_plate_area(
    stick: StickModel, building: BuildingTakeoff, level_index: int, tol_m: float = 0.05
) -> tuple[Polygon | MultiPolygon, float, str]:
    """(free area, plate area m^2, note): the level's plate minus cores and walls reaching it.

    Walls are taken from the takeoff by elevation (base at or below the floor and top at or
    above it, within ``tol_m``). Walls of a core (``StickModel.cores`` wall ids) are
    replaced by the convex hull of that core's walls there; other walls by their footprints.
    """
    level = stick.levels[level_index]
    plate = level_plate(level)
    note = []
    if level.plate is None or level.plate.is_empty:
        note.append("plate estimated from the floor's mass moment")
    z = level.elevation_m
    walls = [w for s in building.storeys for w in s.walls
             if w.base_elevation_m <= z + tol_m and w.base_elevation_m + w.height_m >= z - tol_m]
    core_of: dict[str, str] = {}
    for c in stick.cores:
        if c.id.startswith("core"):
            for wid in c.wall_ids:
                core_of[wid] = c.id
    blocks: list[BaseGeometry] = []
    by_core: dict[str, list[BaseGeometry]] = {}
    for w in walls:
        if w.global_id in core_of:
            by_core.setdefault(core_of[w.global_id], []).append(w.footprint)
        else:
            blocks.append(w.footprint)
    for geoms in by_core.values():
        blocks.append(union_all(geoms).convex_hull)
    free = plate.difference(union_all(blocks)) if blocks else plate
    note.append(f"{len(by_core)} core(s) and {len(blocks) - len(by_core)} other wall(s) at this floor subtracted")
    if not isinstance(free, (Polygon, MultiPolygon)):
        polys = [g for g in getattr(free, "geoms", []) if isinstance(g, Polygon)]
        free = MultiPolygon(polys) if polys else Polygon()
    return free, float(plate.area), "; ".join(note)


# ---------------------------------------------------------------------------------------------
# The screening chain (wind results -> corners -> comfort), re-evaluated for trial changes
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ScreeningChain:
    """What is needed to re-evaluate the comfort checks from acceleration results."""

    stick: StickModel
    modes: tuple[Any, ...]
    comfort: ComfortSettings
    occupancy: str
    occupancy_source: str
    use_corners: bool

    def evaluate(self, results: Sequence[AccelerationResult]) -> tuple[tuple[Check, ...], ComfortResult]:
        corners = corner_accelerations(self.stick, self.modes, results) if self.use_corners else None
        return comfort_assessment(list(results), corners, self.comfort, self.occupancy, self.occupancy_source)


def _key(c: Check) -> tuple[str, str]:
    return (c.criterion, c.method)


def _find(checks: Sequence[Check], key: tuple[str, str]) -> Check | None:
    return next((c for c in checks if _key(c) == key), None)


def _same(a: float | None, b: float | None) -> bool:
    return a is not None and b is not None and abs(a - b) < 1e-9


def _transform(results: Sequence[AccelerationResult], method: str,
               fn: Callable[[AccelerationCase], AccelerationCase]) -> list[AccelerationResult]:
    out = []
    for res in results:
        if res.method == method:
            out.append(AccelerationResult(res.method, tuple(fn(c) for c in res.cases), res.warnings))
        else:
            out.append(res)
    return out


def _solve_increasing(g: Callable[[float], float], lo: float, hi: float) -> float | None:
    """Root of g on [lo, hi] where g(lo) > 0 >= g(hi); None when g(hi) > 0; lo when g(lo) <= 0."""
    glo = g(lo)
    if glo <= 0:
        return lo
    if g(hi) > 0:
        return None
    from scipy.optimize import brentq  # imported on use: only when a scheme needs damping

    return float(brentq(g, lo, hi, xtol=1e-9, rtol=1e-8))


# ---------------------------------------------------------------------------------------------
# Per-mode damper geometry
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _ModeNeed:
    mode_index: int
    mu: float | None
    zeta0: float
    zeta_target: float
    accel_peak_m_s2: float  # at the damper point along the motion, before the damper
    peak_factor: float
    note: str


@dataclass(frozen=True)
class _Unit:
    """A damper as seen by the closed loop."""

    kind: str
    total_mass_kg: float
    effective_mass_kg: float
    direction: tuple[float, float] | None  # None: acts along any plan direction (square tank)
    serves: tuple[int, ...]  # mode indices before the change
    spread: bool  # spread over the plate (adds polar moment)


def _mode_geometry(stick: StickModel, mode: Any, level_index: int) -> tuple[np.ndarray, float, float]:
    """(plan displacement d at the level's mass centre, |d|, M* = phi^T M phi)."""
    point = stick.levels[level_index].mass_centre_m
    d = point_displacement(np.asarray(mode.shape)[level_index:level_index + 1], np.asarray(point), stick.origin_m)[0]
    return d, float(np.hypot(d[0], d[1])), generalized_mass_kg(stick, mode.shape)


# ---------------------------------------------------------------------------------------------
# The advisor
# ---------------------------------------------------------------------------------------------


def _comfort_settings(settings: Mapping[str, Any]) -> ComfortSettings:
    return settings["comfort"] if "comfort" in settings else ComfortSettings()


def _dampers_settings(settings: Mapping[str, Any]) -> DampingSettings:
    return settings["dampers"] if "dampers" in settings else DampingSettings()


def _results_list(results: Mapping[str, Any]) -> list[AccelerationResult]:
    out = [results["accel_en"]]
    if "accel_nbcc" in results:
        out.append(results["accel_nbcc"])
    return out


def _cases_for(results: Sequence[AccelerationResult], method: str, rp: float | None,
               direction: float | None = None) -> list[AccelerationCase]:
    out = []
    for res in results:
        if res.method != method:
            continue
        for c in res.cases:
            if _same(c.return_period_yr, rp) and (direction is None or _same(c.direction_deg, direction)):
                if c.details and c.peak_mg > 0:
                    out.append(c)
    return out


def _advise_check(chk: Check, chain: ScreeningChain, results: list[AccelerationResult], rows: ComfortResult,
                  ds: DampingSettings) -> tuple[CheckAdvice, dict[int, list[tuple[float, AccelerationCase]]]]:
    """CheckAdvice and, per damped mode, (required total damping, case) pairs."""
    margin = ds.target_margin
    target = margin * chk.limit
    key = _key(chk)
    my_rows = [r for r in rows.rows if r.criterion == chk.criterion and r.method == chk.method]
    failing = [r for r in my_rows if r.value_mg > margin * r.limit_mg]
    results = [r for r in results if r.method == chk.method]  # the check reads only its own method
    damped: list[AccelerationCase] = []
    for r in failing:
        damped += _cases_for(results, chk.method, r.return_period_yr, r.direction_deg)
    gov_cases = _cases_for(results, chk.method, chk.return_period_yr, chk.direction_deg)
    notes: list[str] = []
    if not gov_cases:
        adv = CheckAdvice(chk.criterion, chk.method, chk.return_period_yr, chk.direction_deg, chk.value, chk.limit,
                          target, (), 0, 0.0, 0.0, 0.0, 0.0, None, 0.0, None, None, None,
                          "no acceleration case behind this check; not advised")
        return adv, {}
    if not damped:  # nothing fails the target (run_always) or no per-direction rows: the check's direction
        damped = list(gov_cases)
    gov = max(gov_cases, key=lambda c: c.peak_mg)
    modes = tuple(sorted({c.mode_index for c in damped}))
    ids = {id(c) for c in damped}

    def ratio_at_damping(z: float, floor: bool = True) -> float:
        """The check's value / limit with the damped cases at total damping z (floored at their own)."""
        res = _transform(results, chk.method,
                         lambda c: damped_case(c, z) if id(c) in ids and (z > c.damping_ratio or not floor) else c)
        found = _find(chain.evaluate(res)[0], key)
        return found.value / found.limit if found else 0.0

    z_lo = min(c.damping_ratio for c in damped)
    z_req = _solve_increasing(lambda z: ratio_at_damping(z) - margin, z_lo, ZETA_MAX)
    if z_req is None:
        notes.append(f"not reached with total damping {ZETA_MAX:g}")
    elif z_req == z_lo:  # passes already: the damping at which it would reach the target
        z_low = _solve_increasing(lambda z: ratio_at_damping(z, floor=False) - margin, 1e-4, z_lo)
        z_req = z_low if z_low is not None else z_lo
        notes.append("passes the target with the current damping")

    def ratio_at_frequency(s: float) -> float:
        res = [AccelerationResult(r.method, tuple(_stiffened_case(c, s) for c in r.cases), r.warnings)
               for r in results]
        found = _find(chain.evaluate(res)[0], key)
        return found.value / found.limit if found else 0.0

    s_req = None
    if case_peak_at_frequency(gov, gov.frequency_hz) is not None:
        s_req = _solve_increasing(lambda s: ratio_at_frequency(s) - margin, 1.0, ds.max_frequency_factor)
        if s_req is None:
            notes.append(f"stiffening alone does not pass below {ds.max_frequency_factor:g} x the frequency")
    else:
        notes.append(f"no frequency model for {chk.method}")
    if "Melbourne-Palmer" in chk.criterion:
        notes.append("frequency-dependent limit re-evaluated at each trial frequency")
    zs = gov.structural_damping_ratio
    z_top = min(ZETA_MAX, max(0.08, 1.5 * (z_req if z_req is not None else 0.1)))
    curve = tuple(
        (z - gov.damping_ratio, ratio_at_damping(z) * chk.limit)
        for z in np.linspace(gov.damping_ratio, z_top, 25)
    )
    adv = CheckAdvice(
        criterion=chk.criterion, method=chk.method, return_period_yr=chk.return_period_yr,
        direction_deg=chk.direction_deg, value_mg=chk.value, limit_mg=chk.limit, target_mg=target,
        mode_indices=modes, governing_mode_index=gov.mode_index, frequency_hz=gov.frequency_hz,
        zeta_structural=zs, zeta_aerodynamic=gov.damping_ratio - zs, zeta_current=gov.damping_ratio,
        zeta_required_total=z_req, zeta_required_rule=rule_total_damping(gov.damping_ratio, chk.value, target),
        zeta_added_required=(z_req - gov.damping_ratio) if z_req is not None else None,
        frequency_required_hz=gov.frequency_hz * s_req if s_req is not None else None,
        stiffness_factor=s_req**2 if s_req is not None else None,
        note="; ".join(notes),
        curve_mg=curve,
    )
    needs: dict[int, list[tuple[float, AccelerationCase]]] = {}
    if z_req is not None:
        for c in damped:
            if c.damping_ratio < z_req:
                needs.setdefault(c.mode_index, []).append((z_req, c))
    return adv, needs


def _mode_needs(needs: dict[int, list[tuple[float, AccelerationCase]]], max_mu: float,
                scale: Mapping[int, float]) -> dict[int, _ModeNeed]:
    out: dict[int, _ModeNeed] = {}
    for m, pairs in needs.items():
        best: tuple[float, float, float, AccelerationCase] | None = None
        note = ""
        for z_req, case in pairs:
            try:
                mu = dm.mass_ratio_for_damping(z_req, case.damping_ratio, mu_max=max_mu)
            except ValueError as exc:
                mu, note = math.inf, str(exc)
            if best is None or mu > best[0]:
                best = (mu, z_req, case.damping_ratio, case)
        assert best is not None
        mu, z_req, z0, case = best
        if math.isfinite(mu):
            mu = min(mu * scale.get(m, 1.0), max_mu)
            z_req = dm.equivalent_damping(mu, z0)
        peak = float(case.details.get("modal_peak_m_s2", 0.0)) * (peak_mg_for_damping(case, z_req) / case.peak_mg
                                                                 if math.isfinite(mu) else 1.0)
        pf = float(case.details.get("k_p", case.details.get("g_p", 3.5)))
        out[m] = _ModeNeed(m, mu if math.isfinite(mu) else None, z0, z_req, peak, pf, note)
    return out


def _design(stick: StickModel, building: BuildingTakeoff, modes_by_index: Mapping[int, Any],
            needs: Mapping[int, _ModeNeed], ds: DampingSettings, level_index: int,
            ) -> tuple[list[ModeDampers], TankAdvice | None, dict[str, list[_Unit]], list[str]]:
    """Proposals per mode, tanks, and the closed-loop units per damper type."""
    level = stick.levels[level_index]
    plate = level_plate(level)
    kinds = ("tmd", "tsd", "tlcd") if ds.damper_type == "all" else (ds.damper_type,)
    units: dict[str, list[_Unit]] = {k: [] for k in kinds}
    out: list[ModeDampers] = []
    notes: list[str] = []
    geo: dict[int, tuple[np.ndarray, float, float]] = {}
    for m, need in sorted(needs.items()):
        mode = modes_by_index[m]
        d, dn, gm = _mode_geometry(stick, mode, level_index)
        geo[m] = (d, dn, gm)
        u = (float(d[0] / dn), float(d[1] / dn)) if dn > 0 else (1.0, 0.0)
        note = [need.note] if need.note else []
        tmd = tlcd = None
        fits = None
        m1 = gm / dn**2 if dn > 1e-12 * max(1.0, float(np.max(np.abs(mode.shape)))) else math.inf
        if not math.isfinite(m1):
            note.append("the mode does not move the damper point (torsional mode): dampers at the mass centre "
                        "do not reach it")
        elif need.mu is None:
            note.append(f"needs a mass ratio above {ds.max_mass_ratio:g}")
        else:
            if "tmd" in kinds:
                pf = need.peak_factor
                tmd = dm.design_tmd(mode.frequency_hz, m1, need.zeta0, need.zeta_target,
                                    primary_accel_rms_m_s2=need.accel_peak_m_s2 * dn / pf, peak_factor=pf,
                                    detuning=ds.mistuning, mu_max=ds.max_mass_ratio)
                units["tmd"].append(_Unit("tmd", tmd.damper_mass_t * 1000, tmd.damper_mass_t * 1000, u, (m,), False))
            if "tlcd" in kinds:
                tlcd = dm.design_tlcd(mode.frequency_hz, m1, need.mu, length_ratio=ds.tlcd_length_ratio,
                                      liquid_density_kg_m3=ds.water_density_kg_m3)
                fits = tlcd.horizontal_length_m <= plan_extent(plate, np.array(u))[1]
                units["tlcd"].append(_Unit("tlcd", tlcd.liquid_mass_t * 1000,
                                           tlcd.liquid_mass_t * 1000 * tlcd.length_ratio**2, u, (m,), False))
        out.append(ModeDampers(
            mode_index=m, frequency_hz=float(mode.frequency_hz), kind=str(getattr(mode, "kind", "")),
            level=level.name, point_m=tuple(map(float, level.mass_centre_m)), motion_xy=u,
            modal_mass_kg=m1, zeta_current=need.zeta0, zeta_target_total=need.zeta_target,
            mass_ratio_required=need.mu if math.isfinite(m1) else None, tmd=tmd, tlcd=tlcd, tlcd_fits_plate=fits,
            note="; ".join(note)))
    tanks = None
    if "tsd" in kinds:
        tanks = _tanks(stick, building, modes_by_index, needs, geo, ds, level_index, units["tsd"], notes)
    return out, tanks, units, notes


def _tanks(stick: StickModel, building: BuildingTakeoff, modes_by_index: Mapping[int, Any],
           needs: Mapping[int, _ModeNeed], geo: Mapping[int, tuple[np.ndarray, float, float]],
           ds: DampingSettings, level_index: int, units: list[_Unit], notes: list[str]) -> TankAdvice | None:
    cand = [m for m, n in needs.items() if n.mu is not None and geo[m][1] > 0
            and getattr(modes_by_index[m], "kind", "") != "torsion"]
    if not cand:
        return None
    cand.sort(key=lambda m: needs[m].mu * geo[m][2] / geo[m][1] ** 2, reverse=True)
    if len(cand) > 2:
        notes.append(f"tanks sized for modes {cand[0]} and {cand[1]} only (largest needs)")
        cand = cand[:2]
    free, plate_area, fnote = free_plate_area(stick, building, level_index)
    level = stick.levels[level_index]
    kw = dict(width_m=ds.tank_width_m, depth_ratio=ds.tank_depth_ratio, usable_fraction=ds.usable_area_fraction,
              water_density_kg_m3=ds.water_density_kg_m3, plate_area_m2=plate_area, gap_m=ds.tank_gap_m)
    try:
        if len(cand) == 1:
            m = cand[0]
            d, dn, gm = geo[m]
            axis = "x" if abs(d[0]) >= abs(d[1]) else "y"
            comp = abs(d[0]) if axis == "x" else abs(d[1])
            des = dm.design_tsd(modes_by_index[m].frequency_hz, gm / comp**2, needs[m].mu, free, direction=axis, **kw)
            units.append(_Unit("tsd", des.water_mass_t * 1000, des.effective_mass_kg,
                               (1.0, 0.0) if axis == "x" else (0.0, 1.0), (m,), True))
            note = f"{des.n_tanks} tanks along {axis} for mode {m}; {fnote}"
            return TankAdvice(level.name, plate_area, float(free.area), (m,), des, None, des.fits, des.water_mass_t,
                              note)
        a, b = cand
        fa, fb = modes_by_index[a].frequency_hz, modes_by_index[b].frequency_hz
        ta = dm.warburton_tuning(needs[a].mu).frequency_ratio * fa
        tb = dm.warburton_tuning(needs[b].mu).frequency_ratio * fb
        square = abs(ta - tb) / max(ta, tb) <= ds.square_tank_tolerance
        if square:
            mx, my = a, b
            m1x, m1y = geo[a][2] / geo[a][1] ** 2, geo[b][2] / geo[b][1] ** 2
        else:
            # axis assignment that keeps the larger motion components
            da, db = np.abs(geo[a][0]), np.abs(geo[b][0])
            mx, my = (a, b) if da[0] ** 2 + db[1] ** 2 >= da[1] ** 2 + db[0] ** 2 else (b, a)
            m1x = geo[mx][2] / geo[mx][0][0] ** 2
            m1y = geo[my][2] / geo[my][0][1] ** 2
        two = dm.design_tsd_two_way(modes_by_index[mx].frequency_hz, m1x, needs[mx].mu,
                                    modes_by_index[my].frequency_hz, m1y, needs[my].mu, free,
                                    square_tolerance=ds.square_tank_tolerance, **kw)
        if two.layout == "square":
            units.append(_Unit("tsd", two.water_mass_t * 1000, min(two.x.effective_mass_kg, two.y.effective_mass_kg),
                               None, (mx, my), True))
        else:
            units.append(_Unit("tsd", two.x.water_mass_t * 1000, two.x.effective_mass_kg, (1.0, 0.0), (mx,), True))
            units.append(_Unit("tsd", two.y.water_mass_t * 1000, two.y.effective_mass_kg, (0.0, 1.0), (my,), True))
        return TankAdvice(level.name, plate_area, float(free.area), (mx, my), None, two, two.fits,
                          two.water_mass_t, f"{two.reason}; {fnote}")
    except ValueError as exc:
        notes.append(f"sloshing tanks not sized: {exc}")
        return None


def _with_dampers(stick: StickModel, level_index: int, units: Sequence[_Unit]) -> StickModel:
    """Copy of the stick model with the dampers' masses added rigidly at the level's mass centre."""
    lv = stick.levels[level_index]
    add = sum(u.total_mass_kg for u in units)
    spread = sum(u.total_mass_kg for u in units if u.spread)
    r2 = lv.polar_moment_kg_m2 / lv.mass_kg if lv.mass_kg > 0 else 0.0
    new_lv = replace(lv, mass_kg=lv.mass_kg + add, polar_moment_kg_m2=lv.polar_moment_kg_m2 + spread * r2,
                     mass_components_kg=tuple(lv.mass_components_kg) + (("dampers", add),))
    levels = tuple(new_lv if i == level_index else x for i, x in enumerate(stick.levels))
    return replace(stick, levels=levels)


def _close_loop(kind: str, units: Sequence[_Unit], ctx_stick: StickModel, modes_by_index: Mapping[int, Any],
                settings: Mapping[str, Any], chain: ScreeningChain, before: Sequence[Check], use_nbcc: bool,
                level_index: int) -> tuple[ClosedLoop, list[Check]]:
    stick2 = _with_dampers(ctx_stick, level_index, units)
    ms = settings["modal"] if "modal" in settings else ModalSettings()
    modal2 = modal_analysis(stick2, n_modes=ms.n_modes, p_delta=ms.p_delta)
    modes2 = {int(m.index): m for m in modal2.modes}
    ws = wind_settings(settings)
    rps = required_return_periods(settings)
    results2 = [en_accelerations(stick2, modal2.modes, ws, rps)]
    if use_nbcc:
        ns = settings["wind_nbcc"] if "wind_nbcc" in settings else NbccSettings()
        results2.append(nbcc_accelerations(stick2, modal2.modes, ws, ns, rps))
    # damper mass ratio on each new mode
    mu_new: dict[int, float] = {}
    mapping: dict[int, int] = {}
    for unit in units:
        for old in unit.serves:
            d_old, dn_old, _ = _mode_geometry(ctx_stick, modes_by_index[old], level_index)
            new_mode, _ = select_mode(modal2.modes, stick2, d_old / dn_old)
            j = int(new_mode.index)
            mapping[old] = j
            d, dn, gm = _mode_geometry(stick2, new_mode, level_index)
            # square tanks (no direction) act along any plan motion with their full effective mass
            comp2 = dn**2 if unit.direction is None else float(np.dot(d, unit.direction)) ** 2
            mu_new[j] = mu_new.get(j, 0.0) + unit.effective_mass_kg * comp2 / gm
    worst: dict[int, float] = {}

    def damp(c: AccelerationCase) -> AccelerationCase:
        mu = mu_new.get(c.mode_index)
        if not mu or not c.details or c.peak_mg <= 0:
            return c
        z = dm.equivalent_damping(mu, c.damping_ratio)
        worst[c.mode_index] = min(worst.get(c.mode_index, math.inf), z)
        return damped_case(c, z)

    damped2 = [AccelerationResult(r.method, tuple(damp(c) for c in r.cases), r.warnings) for r in results2]
    chain2 = replace(chain, stick=stick2, modes=tuple(modal2.modes))
    after = list(chain2.evaluate(damped2)[0])
    rows = []
    for b in before:
        a = _find(after, _key(b))
        if a is not None:
            rows.append(LoopCheck(b.criterion, b.method, b.value, b.limit, a.value, a.limit, a.passes, a.valid))
    mode_rows = tuple(
        (old, float(modes_by_index[old].frequency_hz), new, float(modes2[new].frequency_hz), mu_new.get(new, 0.0),
         worst.get(new, math.nan))
        for old, new in sorted(mapping.items()))
    loop = ClosedLoop(
        damper_type=kind, level=ctx_stick.levels[level_index].name,
        added_mass_t=sum(u.total_mass_kg for u in units) / 1000.0, modes=mode_rows, checks=tuple(rows),
        passes=all(a.passes for a in after if a.valid), iterations=1,
        note="damper mass added rigidly (frequency drop over-stated); dampers re-tuned to the new modes")
    return loop, after


def advise(stick: StickModel, building: BuildingTakeoff, settings: Mapping[str, Any], modal: Any,
           results: Mapping[str, Any], checks: Sequence[Check]) -> DampingAdvice:
    """The damping advice for one building (see the module docstring).

    Args:
        stick: the stick model.
        building: the takeoff (for the walls on the damper floor).
        settings: all settings sections (missing ones take their defaults).
        modal: the modal result (``.modes``) or a sequence of modes.
        results: earlier results: ``accel_en`` and optionally ``accel_nbcc``, ``accel_corners``.
        checks: the comfort checks.
    """
    ds = _dampers_settings(settings)
    cs = _comfort_settings(settings)
    modes = tuple(getattr(modal, "modes", modal))
    modes_by_index = {int(m.index): m for m in modes}
    mg_checks = [c for c in checks if c.unit == "mg"]
    # Dampers are sized against estimates within their method's range; extrapolated ones are
    # reported (a wind-tunnel study must settle them), not designed for.
    outside = [c for c in mg_checks if not c.passes and not c.valid]
    mg_checks = [c for c in mg_checks if c.valid]
    flagged = [c for c in mg_checks if not c.passes]
    needed = bool(flagged)
    if not flagged and ds.run_always and mg_checks:
        flagged = [max(mg_checks, key=lambda c: c.ratio)]
    outside_notes = tuple(
        f"{c.criterion} ({c.method}) {c.value:.1f} mg vs {c.limit:.1f}: outside the method's validity range, "
        "not designed for; a wind-tunnel study should confirm it" for c in outside)
    if not flagged:
        return DampingAdvice(needed=False, margin=ds.target_margin,
                             notes=("no comfort check within its method's range is flagged",) + outside_notes)
    occ, src, _ = resolve_occupancy(cs, stick, settings)
    chain = ScreeningChain(stick, modes, cs, occ, src, "accel_corners" in results)
    accel = _results_list(results)
    base_checks, rows = chain.evaluate(accel)
    notes: list[str] = []
    for c in flagged:
        b = _find(base_checks, _key(c))
        if b is None or abs(b.value - c.value) > 1e-6 * max(1.0, abs(c.value)):
            notes.append(f"check {c.criterion!r} ({c.method}) is not reproduced by the comfort functions; "
                         "advice uses the recomputed value")
    advices: list[CheckAdvice] = []
    all_needs: dict[int, list[tuple[float, AccelerationCase]]] = {}
    for c in flagged:
        adv, needs = _advise_check(c, chain, accel, rows, ds)
        advices.append(adv)
        for m, pairs in needs.items():
            all_needs.setdefault(m, []).extend(pairs)
    if not all_needs:
        return DampingAdvice(needed, ds.target_margin, tuple(advices), notes=tuple(notes + ["no damper needed"]))
    level_index = stick.n_levels - 1
    required = _mode_needs(all_needs, ds.max_mass_ratio, {})
    use_nbcc = "accel_nbcc" in results
    loops: list[ClosedLoop] = []
    final_modes: list[ModeDampers] = []
    final_tanks: TankAdvice | None = None
    kinds = ("tmd", "tsd", "tlcd") if ds.damper_type == "all" else (ds.damper_type,)
    for kind in kinds:
        scale: dict[int, float] = {}
        loop: ClosedLoop | None = None
        keep: tuple[list[ModeDampers], TankAdvice | None, list[str]] = ([], None, [])
        for it in range(1, ds.loop_iterations + 1):
            needs = _mode_needs(all_needs, ds.max_mass_ratio, scale)
            mode_out, tanks, units, dnotes = _design(stick, building, modes_by_index, needs,
                                                      replace(ds, damper_type=kind), level_index)
            if not units[kind]:
                if it == 1:
                    notes.extend(dnotes)
                    notes.append(f"{kind}: no damper could be sized")
                break
            loop, after = _close_loop(kind, units[kind], stick, modes_by_index, settings, chain, base_checks,
                                      use_nbcc, level_index)
            loop = replace(loop, iterations=it)
            keep = (mode_out, tanks, dnotes)
            if loop.passes:
                break
            worst = max((a.value / (ds.target_margin * a.limit) for a in after if a.valid and not a.passes),
                        default=1.0)
            factor = min(max(worst**4, 1.1), 4.0)
            saturated = True
            for m, n in needs.items():
                if n.mu is not None and n.mu < ds.max_mass_ratio:
                    saturated = False
                scale[m] = scale.get(m, 1.0) * factor
            if saturated:
                loop = replace(loop, note=loop.note + f"; mass ratio at its maximum {ds.max_mass_ratio:g}")
                break
        if loop is None:
            continue
        loops.append(loop)
        mode_out, tanks, dnotes = keep
        notes.extend(n for n in dnotes if n not in notes)
        final_modes = _merge_modes(final_modes, mode_out, kind)
        if kind == "tsd":
            final_tanks = tanks
    final_modes = [replace(m, zeta_current=required[m.mode_index].zeta0,
                           zeta_target_total=required[m.mode_index].zeta_target,
                           mass_ratio_required=required[m.mode_index].mu if m.mass_ratio_required is not None else None)
                   for m in final_modes]
    return DampingAdvice(needed, ds.target_margin, tuple(advices), tuple(final_modes), final_tanks, tuple(loops),
                         tuple(notes) + outside_notes)


def _merge_modes(current: list[ModeDampers], new: list[ModeDampers], kind: str) -> list[ModeDampers]:
    """Combine the per-type passes: the TMD and TLCD fields come from their own closed loops."""
    if not current:
        return list(new)
    by = {m.mode_index: m for m in current}
    out = []
    for m in new:
        old = by.pop(m.mode_index, None)
        if old is None:
            out.append(m)
        elif kind == "tmd":
            out.append(replace(old, tmd=m.tmd))
        elif kind == "tlcd":
            out.append(replace(old, tlcd=m.tlcd, tlcd_fits_plate=m.tlcd_fits_plate))
        else:
            out.append(old)
    out.extend(by.values())
    return sorted(out, key=lambda m: m.mode_index)


def _run(ctx: Context) -> dict[str, Any]:
    if ctx.stick is None:
        return {"damping_advice": DampingAdvice(False, 0.0, notes=("no stick model",))}
    checks = tuple(ctx.need("comfort_checks"))
    return {"damping_advice": advise(ctx.stick, ctx.building, ctx.settings, ctx.need("modes"), ctx.results, checks)}


PLUGIN = BasicPlugin(
    name="damping",
    version="0.1.0",
    func=_run,
    needs=("modes", "accel_en", "comfort_checks"),
    wants=("accel_nbcc", "accel_corners"),
    provides=("damping_advice",),
    settings_section="dampers",
    settings_type=DampingSettings,
)
