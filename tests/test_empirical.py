"""Empirical periods against the check tables of the reference sheet, section 4.

Those tables were computed from the code formulas (EN 1991-1-4 F.2(2), EN 1998-1 4.3.3.2.2,
ASCE 7 12.8-7 / 12.8-8 / 26.11.3); 1e-4 relative where they give 4-5 digits, else the
rounding of the printed value.
"""
from __future__ import annotations

import math

import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import Polygon, box

from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.plugin_api import Context, Plugin
from swayscreen.pipeline.settings import Settings
from swayscreen.pipeline.stick import Level, Segment, StickModel
from swayscreen.pipeline.takeoff import BuildingTakeoff, Storey, Wall
from swayscreen.plugins.empirical import (
    PLUGIN,
    EmpiricalPeriods,
    ec8_wall_area,
    effective_length,
    empirical_periods,
)


def by_method(res: EmpiricalPeriods, start: str):
    hits = [p for p in res.periods if p.method.startswith(start)]
    assert len(hits) == 1, [p.method for p in res.periods]
    return hits[0]


# reference sheet section 4, check table [DER]: periods in s, last column a frequency in Hz
TABLE = {
    30.0: {"ASCE 7 C_t h^x, steel moment": 1.1001, "ASCE 7 C_t h^x, concrete moment": 0.9949,
           "ASCE 7 C_t h^x, steel eccentric": 0.9370, "ASCE 7 C_t h^x, all other": 0.6255,
           "EN 1998-1 C_t H^0.75, steel moment": 1.0896, "EN 1998-1 C_t H^0.75, RC moment": 0.9614,
           "EN 1998-1 C_t H^0.75, all other": 0.6409},
    60.0: {"ASCE 7 C_t h^x, steel moment": 1.9154, "ASCE 7 C_t h^x, concrete moment": 1.8566,
           "ASCE 7 C_t h^x, steel eccentric": 1.5759, "ASCE 7 C_t h^x, all other": 1.0520},
    150.0: {"ASCE 7 C_t h^x, steel moment": 3.9867, "ASCE 7 C_t h^x, concrete moment": 4.2351,
            "ASCE 7 C_t h^x, steel eccentric": 3.1332, "ASCE 7 C_t h^x, all other": 2.0916,
            "EN 1998-1 C_t H^0.75, steel moment": 3.6432, "EN 1998-1 C_t H^0.75, RC moment": 3.2146,
            "EN 1998-1 C_t H^0.75, all other": 2.1431},
}
WIND_OTHER_HZ = {30.0: 0.7620, 60.0: 0.3810, 150.0: 0.1524}  # ASCE 7 26.11.3, 22.86/h
EN1991_T = {30.0: 0.652, 60.0: 1.304, 150.0: 3.261}  # EN 1991-1-4 F.2(2), T = h/46 (3 decimals)


@pytest.mark.parametrize("h", sorted(TABLE))
def test_against_reference_table(h):
    res = empirical_periods(h, 10)
    for start, value in TABLE[h].items():
        assert by_method(res, start).period_s == pytest.approx(value, rel=1e-4)
    wind = by_method(res, "ASCE 7 wind n_a, other")
    assert 1 / wind.period_s == pytest.approx(WIND_OTHER_HZ[h], rel=1e-4)
    assert by_method(res, "EN 1991-1-4").period_s == pytest.approx(EN1991_T[h], abs=5e-4)


def test_asce_wind_si_coefficients():
    # ASCE 7 26.11.3 in US units: 22.2/h^0.8, 43.5/h^0.9 (h in ft); the SI forms on the
    # reference sheet are 8.58/h^0.8 and 14.93/h^0.9 (h in m)
    res = empirical_periods(50.0, 14)
    steel = by_method(res, "ASCE 7 wind n_a, steel")
    conc = by_method(res, "ASCE 7 wind n_a, concrete")
    h_ft = 50.0 / 0.3048
    assert 1 / steel.period_s == pytest.approx(22.2 / h_ft**0.8, rel=1e-12)
    assert 1 / conc.period_s == pytest.approx(43.5 / h_ft**0.9, rel=1e-12)
    assert 1 / steel.period_s == pytest.approx(8.58 / 50.0**0.8, rel=5e-4)
    assert 1 / conc.period_s == pytest.approx(14.93 / 50.0**0.9, rel=5e-4)


def wall(gid, x0, y0, x1, y1, t, *, load_bearing=None):
    length = math.hypot(x1 - x0, y1 - y0)
    ux, uy = (x1 - x0) / length, (y1 - y0) / length
    nx, ny = -uy * t / 2, ux * t / 2
    poly = Polygon([(x0 + nx, y0 + ny), (x1 + nx, y1 + ny), (x1 - nx, y1 - ny), (x0 - nx, y0 - ny)])
    return Wall(gid, gid, ((x0, y0), (x1, y1)), length, t, 3.0, 0.0, poly, load_bearing=load_bearing)


def test_ec8_wall_variant_reference_example():
    # Reference sheet section 4: two walls l_w = 6 m, t = 0.3 m, H = 30 m ->
    # A_c = 0.8640 m^2, C_t = 0.08069, T_1 = 1.0343 s (EN 1998-1 4.3.3.2.2(4))
    walls = (wall("w1", 0, 0, 6, 0, 0.3), wall("w2", 0, 10, 6, 10, 0.3), wall("w3", 20, 0, 20, 4, 0.3))
    ac, count = ec8_wall_area(walls, 30.0, "x")
    assert (ac, count) == (pytest.approx(0.8640, rel=1e-4), 2)
    res = empirical_periods(30.0, 10, ground_walls=walls)
    ex = by_method(res, "EN 1998-1 C_t H^0.75, shear walls in x")
    assert ex.period_s == pytest.approx(1.0343, rel=1e-4) and ex.valid
    assert "C_t = 0.08069" in ex.note
    # the one wall along y: A = 1.2 m^2, l/H = 4/30
    ey = by_method(res, "EN 1998-1 C_t H^0.75, shear walls in y")
    ac_y = 4 * 0.3 * (0.2 + (4 / 30) ** 2)
    assert ey.period_s == pytest.approx(0.075 / math.sqrt(ac_y) * 30**0.75, rel=1e-9)


def test_ec8_wall_length_ratio_capped_and_non_bearing_left_out():
    # EN 1998-1 4.3.3.2.2(4): l_wi / H not greater than 0.9
    walls = (wall("long", 0, 0, 50, 0, 0.4), wall("partition", 0, 5, 8, 5, 0.1, load_bearing=False))
    ac, count = ec8_wall_area(walls, 30.0, "x")
    assert count == 1
    assert ac == pytest.approx(50 * 0.4 * (0.2 + 0.9**2), rel=1e-9)


def test_validity_ranges_flagged_never_dropped():
    low = empirical_periods(30.0, 10, min_storey_height_m=3.0)
    f = by_method(low, "EN 1991-1-4")
    assert not f.valid and "h > 50 m" in f.note and "outside" in f.note
    assert by_method(low, "ASCE 7 T = 0.1 N").valid
    assert all(p.valid for p in low.periods if p.method.startswith("ASCE 7 wind"))
    assert "not checked" in by_method(low, "ASCE 7 wind n_a, other").note
    tall = empirical_periods(150.0, 45, min_storey_height_m=3.3)
    assert by_method(tall, "EN 1991-1-4").valid
    ec8 = [p for p in tall.periods if p.method.startswith("EN 1998-1")]
    assert len(ec8) == 5 and not any(p.valid for p in ec8)
    assert all("H <= 40 m" in p.note for p in ec8[:3])
    wind = [p for p in tall.periods if p.method.startswith("ASCE 7 wind")]
    assert len(wind) == 3 and not any(p.valid for p in wind)
    assert all("91.44" in p.note for p in wind)
    n01 = by_method(tall, "ASCE 7 T = 0.1 N")
    assert not n01.valid and "45 storeys > 12" in n01.note
    # walls missing: reported as not computable
    nowall = by_method(tall, "EN 1998-1 C_t H^0.75, shear walls in x")
    assert math.isnan(nowall.period_s) and "not computable" in nowall.note
    # band over the valid entries only
    valid = [p.period_s for p in tall.periods if p.valid]
    assert tall.band_s == (min(valid), max(valid))
    assert tall.band_s[0] <= by_method(tall, "rule of thumb").period_s <= tall.band_s[1]


def test_asce_wind_leff_condition():
    # ASCE 7 26.11.3: h < 4 L_eff, L_eff = sum h_i L_i / sum h_i
    assert effective_length([10.0, 20.0], [1.0, 3.0]) == pytest.approx(17.5)
    res = empirical_periods(60.0, 18, l_eff_m={"x": 40.0, "y": 12.0})
    p = by_method(res, "ASCE 7 wind n_a, other")
    assert not p.valid and "4 L_eff in y" in p.note
    ok = empirical_periods(60.0, 18, l_eff_m={"x": 40.0, "y": 20.0})
    assert by_method(ok, "ASCE 7 wind n_a, other").valid


@settings(max_examples=60, deadline=None)
@given(h=st.floats(1.0, 600.0), n=st.integers(1, 200))
def test_every_entry_documented(h, n):
    res = empirical_periods(h, n)
    assert len(res.periods) == 15
    for p in res.periods:
        assert p.note and p.source and p.method
        assert math.isnan(p.period_s) or p.period_s > 0
    assert 0 < res.band_s[0] <= res.band_s[1]


def test_bad_height_is_input_error():
    with pytest.raises(InputError):
        empirical_periods(0.0, 5)
    with pytest.raises(InputError):
        empirical_periods(30.0, 0)


# ------------------------------------------------------------------------------- plugin


def building(n=10, h=3.0):
    walls = (wall("w1", 0, 0, 6, 0, 0.3), wall("w2", 0, 10, 6, 10, 0.3))
    storeys = [Storey("b1", "Basement", -h, h, False)]
    storeys += [Storey(f"s{i}", f"Level {i}", i * h, h, True, walls=walls if i == 0 else ()) for i in range(n)]
    return BuildingTakeoff("B1", "Test block", tuple(storeys))


def test_plugin_from_takeoff_without_stick():
    assert isinstance(PLUGIN, Plugin)
    assert (PLUGIN.name, PLUGIN.provides, PLUGIN.needs) == ("empirical_periods", ("empirical_periods",), ())
    out = PLUGIN.run(Context(None, building(), Settings({})))
    res = out["empirical_periods"]
    assert res.height_m == pytest.approx(30.0) and res.n_storeys == 10
    # the ground storey's walls feed the EN 1998-1 wall variant: reference example, 1.0343 s
    assert by_method(res, "EN 1998-1 C_t H^0.75, shear walls in x").period_s == pytest.approx(1.0343, rel=1e-4)


def test_plugin_uses_stick_height_and_plates():
    n, h = 20, 3.0
    lv = tuple(Level(f"F{i}", f"s{i}", (i + 1) * h, h, 1e5, (0, 0), 1e7, plate=box(0, 0, 40, 14))
               for i in range(n))
    seg = (Segment("c", "core", 0, h, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12),)
    s = StickModel("B1", "Test block", 0.0, lv, seg)
    res = PLUGIN.run(Context(s, building(n, h), Settings({})))["empirical_periods"]
    assert res.height_m == pytest.approx(60.0) and res.n_storeys == 20
    # L_eff in y is 14 m: h = 60 m >= 4 x 14 = 56 m
    p = by_method(res, "ASCE 7 wind n_a, other")
    assert not p.valid and "y (L_eff = 14.0 m)" in p.note


def test_plugin_without_storeys_is_input_error():
    with pytest.raises(InputError, match="no storeys above grade"):
        PLUGIN.run(Context(None, BuildingTakeoff("B1", "Empty", ()), Settings({})))
