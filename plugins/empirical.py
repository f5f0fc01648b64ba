"""Empirical fundamental periods from height and storey count (a plausibility band).

Each code formula is reported with its source and validity range; a formula applied
outside its range is still reported, with ``valid=False`` and a note saying why (never
dropped). The seismic formulas are calibrated short (conservative for seismic base
shear), which is unconservative for wind comfort; the geometry-derived modal periods
(plugin "modal") should govern and these serve as a cross-check.

Formulas (h, H = height of the top floor above the base in m; N = storeys above grade):

* EN 1991-1-4 Annex F F.2(2): n_1 = 46/h Hz, multi-storey buildings with h > 50 m.
* EN 1998-1 4.3.3.2.2(3) eq. (4.6): T_1 = C_t H^(3/4), H <= 40 m; C_t = 0.085 steel
  moment frames, 0.075 RC moment frames and steel eccentric braced frames, 0.050 all others.
* EN 1998-1 4.3.3.2.2(4): for concrete or masonry shear walls C_t = 0.075/sqrt(A_c),
  A_c = sum A_i (0.2 + (l_wi/H)^2) (m^2) over the walls of the first storey, l_wi/H capped
  at 0.9. Reported per plan direction; a wall counts in the direction its axis is closer
  to (our reading of "in the direction parallel to the applied forces"), l_wi = its
  length, A_i = its plan area; walls marked non-load-bearing are left out.
* ASCE 7 (12.8-7): T_a = C_t h_n^x with the SI coefficients of Table 12.8-2: steel moment
  frames 0.0724, x = 0.8; concrete moment frames 0.0466, 0.9; steel eccentric or
  buckling-restrained braced frames 0.0731, 0.75; all other structures 0.0488, 0.75
  (no height limit in that equation).
* ASCE 7 (12.8-8): T_a = 0.1 N for moment frames of at most 12 storeys with storey
  heights of at least 3 m (10 ft).
* ASCE 7 26.11.3 (approximate natural frequency for wind): n_a = 8.58/h^0.8 steel moment
  frames, 14.93/h^0.9 concrete moment frames, 22.86/h other lateral systems (US units
  22.2/h^0.8, 43.5/h^0.9, 75/h with h in ft); valid for h <= 300 ft (91.44 m) and
  h < 4 L_eff, L_eff = sum h_i L_i / sum h_i (L_i plan length of floor i in the wind
  direction, h_i its height above the base).
* Rule of thumb T = 0.1 N (common practice; scatter +-30-50 %).

Coefficient tables are from memory (see the project's reference sheet, section 4).
The band is the least and greatest period of the valid entries (never empty: ASCE 7
(12.8-7) and the rule of thumb carry no range limit); entries outside their range are
listed but kept out of the band.
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import BasicPlugin, Context
from swayscreen.pipeline.takeoff import BuildingTakeoff, Wall

__all__ = [
    "EmpiricalPeriod",
    "EmpiricalPeriods",
    "empirical_periods",
    "ec8_wall_area",
    "effective_length",
    "PLUGIN",
]

FT = 0.3048  # m per foot
EN1991_MIN_HEIGHT_M = 50.0
EC8_MAX_HEIGHT_M = 40.0
ASCE_WIND_MAX_HEIGHT_M = 300 * FT  # 91.44 m
ASCE_128_8_MAX_STOREYS = 12
ASCE_128_8_MIN_STOREY_M = 3.0

# (label, C_t) EN 1998-1 4.3.3.2.2(3)
EC8_TYPES = (
    ("steel moment frames", 0.085),
    ("RC moment frames, steel eccentric braced frames", 0.075),
    ("all other structures", 0.050),
)
# (label, C_t (SI), x) ASCE 7 Table 12.8-2
ASCE_SEISMIC_TYPES = (
    ("steel moment frames", 0.0724, 0.8),
    ("concrete moment frames", 0.0466, 0.9),
    ("steel eccentric or buckling-restrained braced frames", 0.0731, 0.75),
    ("all other structures", 0.0488, 0.75),
)
# (label, coefficient (SI), exponent) ASCE 7 26.11.3
ASCE_WIND_TYPES = (
    ("steel moment frames", 22.2 * FT**0.8, 0.8),
    ("concrete moment frames", 43.5 * FT**0.9, 0.9),
    ("other lateral systems", 75.0 * FT, 1.0),
)


@dataclass(frozen=True)
class EmpiricalPeriod:
    """One empirical estimate of the fundamental period.

    Attributes:
        method: plain name, e.g. "EN 1998-1 C_t H^0.75, all other structures".
        period_s: the period (s); NaN when the formula cannot be evaluated (note says why).
        source: standard and clause.
        valid: False when the building is outside the formula's stated range.
        note: the validity range and, when invalid, why.
    """

    method: str
    period_s: float
    source: str
    valid: bool
    note: str


@dataclass(frozen=True)
class EmpiricalPeriods:
    """All empirical estimates for one building.

    Attributes:
        periods: every formula, valid or not.
        band_s: (least, greatest) period (s) of the valid entries.
        height_m: height H of the top floor above the base (m).
        n_storeys: storeys above grade.
    """

    periods: tuple[EmpiricalPeriod, ...]
    band_s: tuple[float, float]
    height_m: float
    n_storeys: int


def ec8_wall_area(walls: Iterable[Wall], height_m: float, direction: str) -> tuple[float, int]:
    """EN 1998-1 4.3.3.2.2(4) A_c (m^2) of the first-storey walls in ``direction`` "x"/"y".

    Returns (A_c, number of walls counted). See module doc for which walls count.
    """
    if direction not in ("x", "y"):
        raise ValueError(f"direction must be 'x' or 'y', got {direction!r}")
    total = 0.0
    count = 0
    for w in walls:
        if w.load_bearing is False:
            continue
        (x0, y0), (x1, y1) = w.axis_m
        along_x = abs(x1 - x0) >= abs(y1 - y0)
        if along_x != (direction == "x"):
            continue
        ratio = min(w.length_m / height_m, 0.9)
        total += w.plan_area_m2 * (0.2 + ratio**2)
        count += 1
    return total, count


def effective_length(lengths_m: Sequence[float], heights_m: Sequence[float]) -> float:
    """ASCE 7 26.11.3 L_eff = sum h_i L_i / sum h_i (m)."""
    den = float(sum(heights_m))
    return float(sum(h * L for h, L in zip(heights_m, lengths_m))) / den if den > 0 else math.nan


def empirical_periods(
    height_m: float,
    n_storeys: int,
    *,
    ground_walls: Sequence[Wall] = (),
    min_storey_height_m: float | None = None,
    l_eff_m: Mapping[str, float] | None = None,
) -> EmpiricalPeriods:
    """Every empirical period for a building of ``height_m`` and ``n_storeys`` (module doc).

    ``ground_walls``: the first above-grade storey's walls (EN 1998-1 wall variant);
    ``min_storey_height_m``: for the ASCE 7 (12.8-8) range; ``l_eff_m``: {"x": .., "y": ..}
    effective plan lengths for the ASCE 7 26.11.3 range (None: that condition unchecked,
    said in the note).
    """
    h = float(height_m)
    if not (math.isfinite(h) and h > 0):
        raise InputError(f"empirical periods: building height {height_m!r} m is not positive")
    if n_storeys < 1:
        raise InputError(f"empirical periods: {n_storeys} storeys above grade")
    out: list[EmpiricalPeriod] = []

    ok = h > EN1991_MIN_HEIGHT_M
    out.append(EmpiricalPeriod(
        "EN 1991-1-4 n1 = 46/h", h / 46.0, "EN 1991-1-4 Annex F F.2(2)", ok,
        f"valid for multi-storey buildings with h > {EN1991_MIN_HEIGHT_M:g} m"
        + ("" if ok else f"; h = {h:.1f} m is outside that range")))

    ok = h <= EC8_MAX_HEIGHT_M
    rng = f"valid for H <= {EC8_MAX_HEIGHT_M:g} m" + ("" if ok else f"; H = {h:.1f} m is outside that range")
    for label, ct in EC8_TYPES:
        out.append(EmpiricalPeriod(
            f"EN 1998-1 C_t H^0.75, {label} (C_t = {ct:.3f})", ct * h**0.75,
            "EN 1998-1 4.3.3.2.2(3), eq. (4.6)", ok, rng))
    for d in ("x", "y"):
        ac, count = ec8_wall_area(ground_walls, h, d)
        name = f"EN 1998-1 C_t H^0.75, shear walls in {d} (C_t = 0.075/sqrt(A_c))"
        src = "EN 1998-1 4.3.3.2.2(4)"
        if ac > 0:
            ct = 0.075 / math.sqrt(ac)
            out.append(EmpiricalPeriod(
                name, ct * h**0.75, src, ok,
                f"A_c = {ac:.4g} m^2 from {count} first-storey walls in {d}, C_t = {ct:.4g}; " + rng))
        else:
            out.append(EmpiricalPeriod(
                name, math.nan, src, False, f"not computable: no load-bearing first-storey walls along {d}"))

    for label, ct, x in ASCE_SEISMIC_TYPES:
        out.append(EmpiricalPeriod(
            f"ASCE 7 C_t h^x, {label} (C_t = {ct}, x = {x})", ct * h**x, "ASCE 7 eq. (12.8-7), Table 12.8-2",
            True, "seismic approximate period (calibrated short; not conservative for wind)"))

    reasons = []
    if n_storeys > ASCE_128_8_MAX_STOREYS:
        reasons.append(f"{n_storeys} storeys > {ASCE_128_8_MAX_STOREYS}")
    if min_storey_height_m is None:
        reasons.append("storey heights unknown")
    elif min_storey_height_m < ASCE_128_8_MIN_STOREY_M:
        reasons.append(f"a storey is {min_storey_height_m:.2f} m high (< {ASCE_128_8_MIN_STOREY_M:g} m)")
    out.append(EmpiricalPeriod(
        "ASCE 7 T = 0.1 N (moment frames)", 0.1 * n_storeys, "ASCE 7 eq. (12.8-8)", not reasons,
        f"valid for moment frames of <= {ASCE_128_8_MAX_STOREYS} storeys, storey height >= "
        f"{ASCE_128_8_MIN_STOREY_M:g} m" + (f"; outside: {', '.join(reasons)}" if reasons else "")))

    reasons = []
    if h > ASCE_WIND_MAX_HEIGHT_M:
        reasons.append(f"h = {h:.1f} m > {ASCE_WIND_MAX_HEIGHT_M:.2f} m")
    leff_note = ""
    if l_eff_m:
        short = {d: v for d, v in l_eff_m.items() if math.isfinite(v) and not h < 4.0 * v}
        if short:
            reasons.append("h >= 4 L_eff in " + ", ".join(f"{d} (L_eff = {v:.1f} m)" for d, v in sorted(short.items())))
    else:
        leff_note = "; h < 4 L_eff not checked (no floor plate outlines)"
    for label, c, e in ASCE_WIND_TYPES:
        n1 = c / h**e
        out.append(EmpiricalPeriod(
            f"ASCE 7 wind n_a, {label}", 1.0 / n1, "ASCE 7 26.11.3", not reasons,
            f"n_a = {n1:.4g} Hz; valid for h <= {ASCE_WIND_MAX_HEIGHT_M:.2f} m (300 ft) and h < 4 L_eff"
            + (f"; outside: {'; '.join(reasons)}" if reasons else "") + leff_note))

    out.append(EmpiricalPeriod(
        "rule of thumb T = 0.1 N", 0.1 * n_storeys, "common practice", True,
        "scatter about +-30-50 % against measured periods"))

    valid = [p.period_s for p in out if p.valid]
    return EmpiricalPeriods(tuple(out), (min(valid), max(valid)), h, int(n_storeys))


def _plate_lengths(stick: Any) -> dict[str, float] | None:
    """ASCE 7 L_eff in x and y from the stick model's floor plates, or None when any is missing."""
    if stick is None or not stick.levels or any(lv.plate is None or lv.plate.is_empty for lv in stick.levels):
        return None
    heights = [lv.elevation_m - stick.base_elevation_m for lv in stick.levels]
    lx, ly = [], []
    for lv in stick.levels:
        x0, y0, x1, y1 = lv.plate.bounds
        lx.append(x1 - x0)
        ly.append(y1 - y0)
    return {"x": effective_length(lx, heights), "y": effective_length(ly, heights)}


def _building_height(building: BuildingTakeoff) -> tuple[float, int, float | None]:
    above = building.above_grade
    if not above:
        raise InputError(f"building {building.name!r}: no storeys above grade, no empirical periods")
    top = max(s.elevation_m + s.height_m for s in above)
    return top - building.ground_elevation_m, len(above), min(s.height_m for s in above)


def _run(ctx: Context) -> dict[str, Any]:
    stick = ctx.stick
    if stick is not None and stick.levels:
        height, n = stick.height_m, stick.n_levels
        min_h: float | None = min(lv.height_m for lv in stick.levels)
    else:
        height, n, min_h = _building_height(ctx.building)
    above = ctx.building.above_grade
    walls = above[0].walls if above else ()
    return {"empirical_periods": empirical_periods(
        height, n, ground_walls=walls, min_storey_height_m=min_h, l_eff_m=_plate_lengths(stick))}


PLUGIN = BasicPlugin(
    name="empirical_periods",
    version="1.0",
    func=_run,
    needs=(),
    provides=("empirical_periods",),
    settings_section=None,
    settings_type=None,
)
