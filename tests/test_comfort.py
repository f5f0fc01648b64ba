"""Comfort criteria: Melbourne-Palmer curve, ISO 6897 curve, limits by occupancy, governing cases.

Check values: /work/shared/reference/methods.md section 5 table (Melbourne & Palmer (1992)
and ISO 6897:1984 curve 1, both forms from memory; the values were computed from those
forms and are matched to the printed digits, tolerance half a unit of the last digit).
"""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
from wind_fakes import FakeModal, make_tower, three_modes  # noqa: E402

from swayscreen.pipeline.core_settings import LoadSettings  # noqa: E402
from swayscreen.pipeline.plugin_api import Check, Context  # noqa: E402
from swayscreen.pipeline.settings import Settings  # noqa: E402
from swayscreen.pipeline.takeoff import BuildingTakeoff  # noqa: E402
from swayscreen.plugins.comfort import (  # noqa: E402
    PLUGIN,
    ComfortSettings,
    comfort_assessment,
    iso6897_rms,
    melbourne_palmer_peak,
    resolve_occupancy,
)
from swayscreen.plugins.corners import corner_accelerations  # noqa: E402
from swayscreen.plugins.wind_common import MG, AccelerationCase, AccelerationResult, WindSettings  # noqa: E402
from swayscreen.plugins.wind_en import en_accelerations  # noqa: E402

MP_TABLE = [
    # f (Hz), ISO 6897 c1 rms, MP R=1, MP R=5, MP R=10, 2/3 MP(R=1)   (m/s^2)
    (0.063, 0.08074, 0.14798, 0.21803, 0.24820, 0.09866),
    (0.1, 0.06681, 0.13000, 0.19154, 0.21804, 0.08667),
    (0.2, 0.05028, 0.10580, 0.15588, 0.17745, 0.07053),
    (0.3, 0.04258, 0.09331, 0.13748, 0.15651, 0.06221),
    (0.5, 0.03453, 0.07931, 0.11686, 0.13303, 0.05288),
    (1.0, 0.02599, 0.06322, 0.09314, 0.10603, 0.04214),
]


@pytest.mark.parametrize("row", MP_TABLE, ids=[str(r[0]) for r in MP_TABLE])
def test_melbourne_palmer_and_iso6897_table(row: tuple) -> None:
    f, iso, r1, r5, r10, two_thirds = row
    assert iso6897_rms(f) == pytest.approx(iso, abs=5e-6)
    assert melbourne_palmer_peak(f, 1.0) == pytest.approx(r1, abs=5e-6)
    assert melbourne_palmer_peak(f, 5.0) == pytest.approx(r5, abs=5e-6)
    assert melbourne_palmer_peak(f, 10.0) == pytest.approx(r10, abs=5e-6)
    assert 2.0 / 3.0 * melbourne_palmer_peak(f, 1.0) == pytest.approx(two_thirds, abs=5e-6)


def test_melbourne_palmer_headline_value() -> None:
    # 0.2 Hz, 1-year: 0.1058 m/s^2 (10.78 mg)
    assert melbourne_palmer_peak(0.2, 1.0) == pytest.approx(0.1058, abs=5e-5)
    assert melbourne_palmer_peak(0.2, 1.0) / MG == pytest.approx(10.78, abs=5e-3)
    with pytest.raises(ValueError):
        melbourne_palmer_peak(0.001, 1.0)


def acc_case(rp: float, direction: float, peak_mg: float, freq: float = 0.2, valid: bool = True,
             note: str = "", response: str = "along", method: str = "EN 1991-1-4 Annex B") -> AccelerationCase:
    return AccelerationCase(method, rp, direction, response, (1.0, 0.0), 1, freq, 0.02, 0.016, peak_mg / 3.5,
                            peak_mg, (peak_mg / 2, peak_mg), "L02", 1, valid, note, {})


def result_of(*cases: AccelerationCase) -> AccelerationResult:
    return AccelerationResult(cases[0].method, tuple(cases))


def test_fixed_limit_governing_direction_and_pass_fail() -> None:
    res = result_of(acc_case(10.0, 0.0, 12.0), acc_case(10.0, 90.0, 16.0), acc_case(1.0, 0.0, 6.0),
                    acc_case(1.0, 90.0, 8.0))
    checks, detail = comfort_assessment([res], None, ComfortSettings(), "residential")
    fixed = next(c for c in checks if c.criterion.startswith("10-year"))
    assert isinstance(fixed, Check)
    assert (fixed.value, fixed.limit, fixed.unit, fixed.direction_deg) == (16.0, 15.0, "mg", 90.0)
    assert not fixed.passes and fixed.floor == "L02" and fixed.return_period_yr == 10.0
    office, _ = comfort_assessment([res], None, ComfortSettings(), "office")
    assert next(c for c in office if c.criterion.startswith("10-year")).passes  # 16 <= 25
    assert len(detail.rows) == 4


def test_curve_criterion_uses_each_case_frequency() -> None:
    # 1-year: 0.2 Hz -> limit 10.78 mg (office), 0.5 Hz -> 8.09 mg (methods sheet 5 table)
    res = result_of(acc_case(1.0, 0.0, 9.0, freq=0.2), acc_case(1.0, 90.0, 8.5, freq=0.5),
                    acc_case(10.0, 0.0, 12.0), acc_case(10.0, 90.0, 12.0))
    checks, _ = comfort_assessment([res], None, ComfortSettings(), "office")
    curve = next(c for c in checks if "Melbourne-Palmer" in c.criterion)
    assert curve.direction_deg == 90.0  # 8.5 / 8.09 governs over 9 / 10.78
    assert curve.limit == pytest.approx(0.07931 / MG, abs=5e-3)
    assert not curve.passes and "0.500 Hz" in curve.note
    # residential: 2/3 of the office curve (ISO 10137 Annex D relation, from memory)
    res_checks, _ = comfort_assessment([res], None, ComfortSettings(), "residential")
    curve_r = next(c for c in res_checks if "Melbourne-Palmer" in c.criterion)
    assert curve_r.limit == pytest.approx(0.05288 / MG, abs=5e-3)


def test_perception_reported_not_gated_by_default() -> None:
    res = result_of(acc_case(1.0, 0.0, 7.0), acc_case(10.0, 0.0, 10.0))
    checks, detail = comfort_assessment([res], None, ComfortSettings(), "office")
    assert not any("perception" in c.criterion for c in checks)
    assert detail.perceptible and detail.perception_peak_mg == 7.0
    gated, _ = comfort_assessment([res], None, dataclasses.replace(ComfortSettings(), perception_gate=True),
                                  "office")
    p = next(c for c in gated if "perception" in c.criterion)
    assert (p.value, p.limit, p.passes) == (7.0, 5.0, False)


def test_invalid_method_result_is_noted() -> None:
    res = result_of(acc_case(10.0, 0.0, 30.0, valid=False, note="frequency below 0.25 Hz",
                             method="NBCC Commentary I"),
                    acc_case(1.0, 0.0, 5.0, method="NBCC Commentary I"))
    checks, _ = comfort_assessment([res], None, ComfortSettings(), "office")
    fixed = next(c for c in checks if c.criterion.startswith("10-year"))
    assert fixed.method == "NBCC Commentary I"
    assert "outside the method's range" in fixed.note and not fixed.passes


def test_validity_notes_shared_by_modes_are_said_once() -> None:
    # Two modes' cases behind one row share a reason (the building's slenderness) and differ in
    # another (their frequencies): the check names each reason once, after the range prefix.
    common = "H/w = 6.4 above 6: wind-tunnel testing recommended"
    res = result_of(acc_case(10.0, 0.0, 30.0, freq=0.143, valid=False, method="NBCC Commentary I",
                             note=f"{common}; frequency 0.143 Hz below 0.25 Hz"),
                    acc_case(10.0, 0.0, 20.0, freq=0.170, valid=False, method="NBCC Commentary I",
                             note=f"{common}; frequency 0.170 Hz below 0.25 Hz"))
    checks, _ = comfort_assessment([res], None, ComfortSettings(), "residential")
    fixed = next(c for c in checks if c.criterion.startswith("10-year"))
    assert fixed.note.count("H/w = 6.4") == 1
    assert fixed.note.startswith(f"outside the method's range: {common}")
    assert "0.143 Hz below" in fixed.note and "0.170 Hz below" in fixed.note


def test_occupancy_resolution() -> None:
    cs = ComfortSettings()
    hotel_top = make_tower(n=5, usage="hotel", top_usage="plant")
    assert resolve_occupancy(cs, hotel_top, {})[0] == "hotel"  # the top occupied floor (below plant)
    plain = make_tower(n=5)
    loads = dataclasses.replace(LoadSettings(), occupancy="residential")
    assert resolve_occupancy(cs, plain, {"loads": loads})[:2] == ("residential", "[loads] occupancy")
    assert resolve_occupancy(cs, plain, {})[0] == "office"
    assert resolve_occupancy(dataclasses.replace(cs, occupancy="hotel"), hotel_top, {})[0] == "hotel"
    occ, _, notes = resolve_occupancy(cs, plain, {"loads": dataclasses.replace(LoadSettings(), occupancy="plant")})
    assert occ == "office" and notes


def test_plugin_end_to_end_with_corners() -> None:
    # an eccentric plate (L-shaped), coupled mode: the corner resultant exceeds the centre value
    # and is the value checked
    from shapely.geometry import Polygon

    plate = Polygon([(0, 0), (40, 0), (40, 15), (15, 15), (15, 40), (0, 40)])
    stick = make_tower(n=40, plate=plate, width_x_m=40.0, width_y_m=40.0, usage="residential")
    modes = list(three_modes(stick, 0.22, 0.24, 0.4))
    shape = modes[0].shape.copy()
    shape[:, 2] = shape[:, 0] * 0.02  # twist with the first sway
    modes[0] = dataclasses.replace(modes[0], shape=shape)
    ws = WindSettings()
    en = en_accelerations(stick, modes, ws, [1.0, 10.0])
    corners = corner_accelerations(stick, modes, [en])
    settings_ = Settings({"comfort": ComfortSettings(), "wind": ws})
    ctx = Context(stick, BuildingTakeoff("B-1", "t", ()), settings_,
                  {"modes": FakeModal(tuple(modes)), "accel_en": en, "accel_corners": corners})
    out = PLUGIN.run(ctx)
    assert set(out) == set(PLUGIN.provides)
    checks = out["comfort_checks"]
    assert len(checks) == 2 and all(c.unit == "mg" for c in checks)
    fixed = next(c for c in checks if c.criterion == "10-year peak acceleration (residential)")
    gov_corner = corners.governing(en.method, 10.0)
    assert fixed.value == pytest.approx(max(gov_corner.peak_mg, en.governing(10.0).peak_mg), rel=1e-12)
    assert fixed.value > en.governing(10.0).peak_mg
    assert "plate corner" in fixed.note
    assert fixed.limit == 15.0 and fixed.passes == (fixed.value <= 15.0)
