"""Occupant comfort: peak accelerations against limits by occupancy and a frequency-dependent curve.

Plugin ``comfort``: needs ``accel_en``, wants ``accel_nbcc`` and ``accel_corners``, provides
``comfort_checks`` (a tuple of :class:`~swayscreen.pipeline.plugin_api.Check`, one per
criterion and method at its governing direction) and ``comfort`` (a :class:`ComfortResult`
with the per-direction values). Settings section ``[comfort]`` (:class:`ComfortSettings`).

Criteria (sources in the settings):

* a fixed peak limit at the 10-year return period by occupancy: residential 15 mg, hotel
  20 mg, office 25 mg (common North-American practice; NBCC Commentary I and Isyumov (1993),
  from memory);
* the Melbourne & Palmer (1992) peak curve at the 1-year return period (from memory):
  a = sqrt(2 ln(f T)) (0.68 + ln(R)/5) exp(-3.65 - 0.41 ln f) m/s^2, T = 600 s, scaled by
  an occupancy factor (residential 2/3 of office, the ISO 10137 Annex D relation between
  its two curves, from memory and unconfirmed);
* the median perception threshold (about 5 mg at 0.1-0.3 Hz; ISO 6897 / common practice),
  reported, and a pass/fail gate only when ``perception_gate`` is set.

A result outside its method's range (``valid`` false) is still checked, with the reason in
the note: an out-of-range estimate above a limit flags the scheme (conservative; such cases
call for wind-tunnel testing).

Value checked: the peak at the top occupied floor; with ``use_corners`` and corner results
present, the larger of that and the resultant at the governing plate corner. For the curve
criterion each case is compared with the curve at its own mode frequency (a combined corner
value with the lowest limit among its modes) and the governing direction is the one with the
largest value / limit.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from swayscreen.pipeline.plugin_api import BasicPlugin, Check, Context
from swayscreen.pipeline.settings import setting

from .corners import CornerResult
from .wind_common import MG, AccelerationResult, top_occupied_index

__all__ = [
    "ComfortSettings",
    "melbourne_palmer_peak",
    "melbourne_palmer_peak_m_s2",
    "iso6897_rms",
    "ComfortRow",
    "ComfortResult",
    "comfort_assessment",
    "resolve_occupancy",
    "PLUGIN",
]

OCCUPANCIES = ("residential", "hotel", "office", "retail")


@dataclass(frozen=True)
class ComfortSettings:
    """Occupant comfort criteria for wind-induced floor accelerations."""

    occupancy: str = setting(
        "auto", choices=("auto",) + OCCUPANCIES, source="user choice",
        doc="occupancy for the limits; auto: the top occupied floor's usage, else [loads] occupancy")
    peak_limits_mg: dict[str, float] = setting(
        {"residential": 15.0, "hotel": 20.0, "office": 25.0, "retail": 25.0}, unit="mg", minimum=1, maximum=200,
        source="common practice (NBCC Structural Commentary I 15/25 mg and Isyumov 1993, from memory; retail as office)",
        doc="peak acceleration limit by occupancy at peak_limit_return_period_yr")
    peak_limit_return_period_yr: float = setting(
        10.0, unit="yr", minimum=0.5, maximum=100, source="NBCC Structural Commentary I (10-year wind, from memory)",
        doc="return period of the fixed peak limits")
    curve_return_period_yr: float = setting(
        1.0, unit="yr", minimum=0.5, maximum=100,
        source="ISO 10137:2007 Annex D (1-year return period basis)",
        doc="return period of the frequency-dependent curve criterion")
    curve_duration_s: float = setting(
        600.0, unit="s", minimum=60, maximum=7200, source="Melbourne and Palmer (1992), T = 600 s (from memory)",
        doc="storm duration T in the curve's peak factor")
    curve_occupancy_factors: dict[str, float] = setting(
        {"residential": 2.0 / 3.0, "hotel": 2.0 / 3.0, "office": 1.0, "retail": 1.0}, minimum=0.1, maximum=2,
        source="ISO 10137:2007 Annex D: residences about 2/3 of offices (from memory, unconfirmed); "
               "hotel as residential (overnight occupancy), retail as office: common practice",
        doc="factor on the Melbourne-Palmer curve by occupancy")
    perception_threshold_mg: float = setting(
        5.0, unit="mg", minimum=0.5, maximum=50,
        source="common practice (median perception about 5 mg at 0.1-0.3 Hz; ISO 6897 curve 1 at 0.2 Hz is 5.1 mg rms)",
        doc="perception threshold compared with the curve-period peak")
    perception_gate: bool = setting(
        False, source="common practice (perception is reported, not a design criterion)",
        doc="make the perception threshold a pass/fail check")
    use_corners: bool = setting(
        True, source="common practice (check the worst point of the plate, torsion included)",
        doc="check the larger of the plate-centroid and plate-corner peaks when corner results exist")


def melbourne_palmer_peak(frequency_hz: float, return_period_yr: float, duration_s: float = 600.0) -> float:
    """Melbourne & Palmer (1992) peak acceleration criterion (m/s^2), from memory:
    sqrt(2 ln(f T)) (0.68 + ln(R)/5) exp(-3.65 - 0.41 ln f). 0.2 Hz, 1 yr -> 0.1058 m/s^2."""
    if not frequency_hz > 0 or frequency_hz * duration_s <= 1:
        raise ValueError(f"frequency {frequency_hz!r} Hz gives f T <= 1 in the Melbourne-Palmer peak factor")
    return (math.sqrt(2.0 * math.log(frequency_hz * duration_s)) * (0.68 + math.log(return_period_yr) / 5.0)
            * math.exp(-3.65 - 0.41 * math.log(frequency_hz)))


melbourne_palmer_peak_m_s2 = melbourne_palmer_peak
"""Alias of :func:`melbourne_palmer_peak` (the name says the unit)."""


def iso6897_rms(frequency_hz: float) -> float:
    """ISO 6897:1984 curve 1 RMS acceleration (m/s^2), exp(-3.65 - 0.41 ln f), 0.063-1 Hz (from memory)."""
    return math.exp(-3.65 - 0.41 * math.log(frequency_hz))


@dataclass(frozen=True)
class ComfortRow:
    """One direction's value for one criterion and method.

    Attributes:
        criterion, method: as in the checks.
        return_period_yr, direction_deg: the case.
        value_mg: peak checked; limit_mg: its limit; frequency_hz: mode frequency behind the limit
        (None for fixed limits); floor: storey; at_corner: value is a plate-corner resultant;
        valid: the method's validity; note: notes.
    """

    criterion: str
    method: str
    return_period_yr: float
    direction_deg: float
    value_mg: float
    limit_mg: float
    frequency_hz: float | None
    floor: str
    at_corner: bool
    valid: bool
    note: str = ""

    @property
    def ratio(self) -> float:
        return self.value_mg / self.limit_mg


@dataclass(frozen=True)
class ComfortResult:
    """Per-direction comfort values, the occupancy used and the perception comparison."""

    occupancy: str
    occupancy_source: str
    rows: tuple[ComfortRow, ...]
    perception_threshold_mg: float
    perception_peak_mg: float
    perception_direction_deg: float | None
    notes: tuple[str, ...] = ()

    @property
    def perceptible(self) -> bool:
        """True when the curve-period peak exceeds the perception threshold."""
        return self.perception_peak_mg > self.perception_threshold_mg


def resolve_occupancy(cs: ComfortSettings, stick: Any, settings: Mapping[str, Any]) -> tuple[str, str, list[str]]:
    """(occupancy, where it came from, notes): the setting, else the top occupied floor's usage,
    else ``[loads] occupancy``, else office."""
    notes: list[str] = []
    if cs.occupancy != "auto":
        occ, src = cs.occupancy, "[comfort] occupancy"
    else:
        usage = None
        if stick is not None and stick.n_levels:
            usage = stick.levels[top_occupied_index(stick)].usage
        if usage and usage.lower() in OCCUPANCIES:
            occ, src = usage.lower(), f"usage of storey {stick.levels[top_occupied_index(stick)].name!r}"
        elif "loads" in settings and getattr(settings["loads"], "occupancy", None):
            occ, src = settings["loads"].occupancy, "[loads] occupancy"
        else:
            occ, src = "office", "default"
    if occ not in cs.peak_limits_mg or occ not in cs.curve_occupancy_factors:
        notes.append(f"no comfort limits for occupancy {occ!r}; office limits used")
        occ = "office"
    return occ, src, notes


def _rows_for(res: AccelerationResult, corners: CornerResult | None, cs: ComfortSettings, occ: str,
              ) -> tuple[list[ComfortRow], list[ComfortRow]]:
    """Rows of the fixed-limit and the curve criterion for one method."""
    peak_rows: list[ComfortRow] = []
    curve_rows: list[ComfortRow] = []
    fixed_name = f"{cs.peak_limit_return_period_yr:g}-year peak acceleration ({occ})"
    curve_name = f"{cs.curve_return_period_yr:g}-year peak acceleration vs Melbourne-Palmer curve ({occ})"
    factor = cs.curve_occupancy_factors[occ]
    for rp, name, rows, curve in ((cs.peak_limit_return_period_yr, fixed_name, peak_rows, False),
                                  (cs.curve_return_period_yr, curve_name, curve_rows, True)):
        by_dir: dict[float, list] = {}
        for case in res.for_period(rp):
            by_dir.setdefault(case.direction_deg, []).append(case)
        for direction, cases in by_dir.items():
            valid = all(c.valid for c in cases)
            # the cases (modes) behind a row repeat the same reasons: each part once
            note = "; ".join(dict.fromkeys(part for n in sorted({c.note for c in cases if c.note})
                                           for part in n.split("; ") if part))
            # candidates: (value, limit, frequency, at_corner)
            cands = []
            for c in cases:
                lim = (melbourne_palmer_peak(c.frequency_hz, rp, cs.curve_duration_s) * factor / MG
                       if curve else cs.peak_limits_mg[occ])
                cands.append((c.peak_mg, lim, c.frequency_hz if curve else None, False, c.top_floor))
            if cs.use_corners and corners is not None:
                for cc in corners.for_method(res.method, rp):
                    if cc.direction_deg != direction:
                        continue
                    freqs = [c.frequency_hz for c in cases if c.mode_index in cc.mode_indices]
                    if curve and freqs:
                        lims = [melbourne_palmer_peak(f, rp, cs.curve_duration_s) * factor / MG for f in freqs]
                        k = min(range(len(lims)), key=lims.__getitem__)
                        cands.append((cc.peak_mg, lims[k], freqs[k], True, cc.floor))
                    elif not curve:
                        cands.append((cc.peak_mg, cs.peak_limits_mg[occ], None, True, cc.floor))
            if not cands:
                continue
            v, lim, f, corner, floor = max(cands, key=lambda t: (t[0] / t[1], t[0]))
            rows.append(ComfortRow(name, res.method, rp, direction, v, lim, f, floor, corner, valid, note))
    return peak_rows, curve_rows


def _check_from(rows: list[ComfortRow]) -> Check | None:
    if not rows:
        return None
    gov = max(rows, key=lambda r: (r.ratio, r.value_mg))
    notes = []
    if gov.at_corner:
        notes.append("resultant at a plate corner (translation and twist)")
    if gov.frequency_hz is not None:
        notes.append(f"limit at {gov.frequency_hz:.3f} Hz")
    if not gov.valid:
        notes.append("outside the method's range: " + gov.note)
    elif gov.note:
        notes.append(gov.note)
    return Check(gov.criterion, gov.method, gov.value_mg, gov.limit_mg, "mg", gov.value_mg <= gov.limit_mg,
                 gov.return_period_yr, gov.direction_deg, gov.floor, "; ".join(notes), valid=gov.valid)


def comfort_assessment(results: list[AccelerationResult], corners: CornerResult | None, cs: ComfortSettings,
                       occupancy: str, occupancy_source: str = "",
                       notes: tuple[str, ...] = ()) -> tuple[tuple[Check, ...], ComfortResult]:
    """Checks (one per criterion and method, at the governing direction) and the detail."""
    checks: list[Check] = []
    all_rows: list[ComfortRow] = []
    perception = (0.0, None, "", "")
    for res in results:
        peak_rows, curve_rows = _rows_for(res, corners, cs, occupancy)
        all_rows += peak_rows + curve_rows
        for rows in (peak_rows, curve_rows):
            chk = _check_from(rows)
            if chk is not None:
                checks.append(chk)
        for r in curve_rows:
            if r.value_mg > perception[0]:
                perception = (r.value_mg, r.direction_deg, r.method, r.floor)
    extra = list(notes)
    if not any(r.return_period_yr == cs.peak_limit_return_period_yr for r in all_rows):
        extra.append(f"no {cs.peak_limit_return_period_yr:g}-year accelerations were computed")
    if cs.perception_gate and perception[1] is not None:
        checks.append(Check(f"{cs.curve_return_period_yr:g}-year peak vs perception threshold", perception[2],
                            perception[0], cs.perception_threshold_mg, "mg",
                            perception[0] <= cs.perception_threshold_mg, cs.curve_return_period_yr,
                            perception[1], perception[3], "median perception threshold (common practice)"))
    result = ComfortResult(occupancy, occupancy_source, tuple(all_rows), cs.perception_threshold_mg,
                           perception[0], perception[1], tuple(extra))
    return tuple(checks), result


def _run(ctx: Context) -> dict[str, Any]:
    cs = ctx.settings["comfort"] if "comfort" in ctx.settings else ComfortSettings()
    occ, src, notes = resolve_occupancy(cs, ctx.stick, ctx.settings)
    results = [ctx.need("accel_en")]
    if "accel_nbcc" in ctx.results:
        results.append(ctx.results["accel_nbcc"])
    corners = ctx.results.get("accel_corners")
    checks, detail = comfort_assessment(results, corners, cs, occ, src, tuple(notes))
    return {"comfort_checks": checks, "comfort": detail}


PLUGIN = BasicPlugin(
    name="comfort",
    version="0.1.0",
    func=_run,
    needs=("accel_en",),
    wants=("accel_nbcc", "accel_corners"),
    provides=("comfort_checks", "comfort"),
    settings_section="comfort",
    settings_type=ComfortSettings,
)
