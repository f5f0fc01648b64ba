"""Plate-corner accelerations: rigid-floor kinematics (translation + twist x lever arm) and SRSS.

Oracles: the rigid-body plan motion of a floor, u(p) = (ux - theta dy, uy + theta dx)
(the stick-model convention, Stafford Smith & Coull pseudo-3D idealisation), evaluated by
hand for rectangles; square-root-of-sum-of-squares of uncorrelated responses (common
practice, methods sheet section 5).
"""
from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))
from wind_fakes import FakeMode, FakeModal, make_tower, mode, three_modes  # noqa: E402

from swayscreen.pipeline.errors import InputError  # noqa: E402
from swayscreen.pipeline.plugin_api import Context  # noqa: E402
from swayscreen.pipeline.settings import Settings  # noqa: E402
from swayscreen.pipeline.takeoff import BuildingTakeoff  # noqa: E402
from swayscreen.plugins.corners import PLUGIN, corner_accelerations, point_accelerations  # noqa: E402
from swayscreen.plugins.wind_common import (  # noqa: E402
    MG,
    AccelerationCase,
    AccelerationResult,
    WindSettings,
    generalized_mass_kg,
)
from swayscreen.plugins.wind_en import en_accelerations  # noqa: E402
from swayscreen.plugins.wind_nbcc import NbccSettings, nbcc_accelerations  # noqa: E402


def case_for(stick, m, modal_peak: float, response: str = "along", direction: float = 0.0,
             method: str = "test method") -> AccelerationCase:
    n = stick.n_levels
    return AccelerationCase(method, 10.0, direction, response, (1.0, 0.0), m.index, m.frequency_hz, 0.02, 0.02,
                            0.0, 0.0, tuple(0.0 for _ in range(n)), stick.levels[-1].name, n - 1, True, "",
                            {"modal_peak_m_s2": modal_peak})


def with_top_shape(stick, index: int, top: tuple[float, float, float]) -> FakeMode:
    z = np.array([lv.elevation_m for lv in stick.levels]) / stick.levels[-1].elevation_m
    shape = np.outer(z, np.asarray(top, dtype=float))
    return FakeMode(index, 4.0, 0.25, 2 * math.pi * 0.25, shape, "coupled", {}, {},
                    generalized_mass_kg(stick, shape))


def test_point_accelerations_rigid_floor() -> None:
    # row (ux, uy, theta) = (1, 2, 0.1), point (3, -4), origin (0, 0): (1 + 0.4, 2 + 0.3)
    a = point_accelerations(np.array([1.0, 2.0, 0.1]), 2.0, np.array([[3.0, -4.0]]), (0.0, 0.0))
    assert a[0] == pytest.approx([2.8, 4.6])


def test_pure_translation_same_at_all_corners() -> None:
    stick = make_tower(n=10, width_x_m=40.0, width_y_m=20.0)
    m = mode(stick, 1, 0.3, "x")
    res = corner_accelerations(stick, (m,), [AccelerationResult("test method", (case_for(stick, m, 0.05),))])
    (cc,) = res.cases
    assert cc.peak_mg == pytest.approx(0.05 / MG, rel=1e-12)
    assert cc.centre_peak_mg == pytest.approx(0.05 / MG, rel=1e-12)
    assert cc.amplification == pytest.approx(1.0, rel=1e-12)
    assert np.allclose(cc.corner_peaks_mg, cc.peak_mg, rtol=1e-12)
    assert cc.twist_peak_mrad_s2 == 0.0


def test_pure_twist_scales_with_lever_arm() -> None:
    stick = make_tower(n=10, width_x_m=40.0, width_y_m=20.0)
    m = mode(stick, 1, 0.5, "twist")  # theta r = 1 at the top with r = half-diagonal
    res = corner_accelerations(stick, (m,), [AccelerationResult("test method", (case_for(stick, m, 0.01),))])
    (cc,) = res.cases
    r = math.hypot(20.0, 10.0)
    assert cc.peak_mg == pytest.approx(0.01 / MG, rel=1e-12)  # every corner at r
    assert cc.centre_peak_mg == pytest.approx(0.0, abs=1e-12)
    assert cc.twist_peak_mrad_s2 == pytest.approx(1000 * 0.01 / r, rel=1e-12)


def test_coupled_mode_governing_corner() -> None:
    # top row (1, 0, t), plate 40 x 20 centred on the origin: corner (x, y) moves
    # (1 - t y, t x); with t = 0.02 the largest is at y = -10: sqrt((1 + 10 t)^2 + (20 t)^2)
    stick = make_tower(n=10, width_x_m=40.0, width_y_m=20.0)
    t = 0.02
    m = with_top_shape(stick, 1, (1.0, 0.0, t))
    res = corner_accelerations(stick, (m,), [AccelerationResult("test method", (case_for(stick, m, 0.03),))])
    (cc,) = res.cases
    assert cc.peak_mg == pytest.approx(0.03 * math.hypot(1 + 10 * t, 20 * t) / MG, rel=1e-12)
    assert cc.point_m[1] == pytest.approx(-10.0)
    assert cc.centre_peak_mg == pytest.approx(0.03 / MG, rel=1e-12)
    assert cc.amplification > 1.0


def test_origin_offset_does_not_change_a_rigid_motion() -> None:
    # the same physical motion described about another origin: theta unchanged, translations
    # shifted by theta x offset -> identical corner accelerations
    t = 0.02
    base = make_tower(n=6, width_x_m=30.0, width_y_m=30.0)
    m0 = with_top_shape(base, 1, (1.0, 0.5, t))
    ox, oy = 50.0, -20.0
    moved = make_tower(n=6, width_x_m=30.0, width_y_m=30.0, origin_m=(ox, oy))
    # u_origin' = u_origin + theta k x (o' - o): (ux - t*oy, uy + t*ox)
    m1 = with_top_shape(moved, 1, (1.0 - t * oy, 0.5 + t * ox, t))
    r0 = corner_accelerations(base, (m0,), [AccelerationResult("m", (case_for(base, m0, 0.02),))]).cases[0]
    r1 = corner_accelerations(moved, (m1,), [AccelerationResult("m", (case_for(moved, m1, 0.02),))]).cases[0]
    assert r1.corner_peaks_mg == pytest.approx(r0.corner_peaks_mg, rel=1e-12)


def test_along_and_across_combine_by_srss() -> None:
    stick = make_tower(n=10)
    mx, my = mode(stick, 1, 0.3, "x"), mode(stick, 2, 0.32, "y")
    cases = (case_for(stick, mx, 0.03, "along"), case_for(stick, my, 0.04, "across"))
    (cc,) = corner_accelerations(stick, (mx, my), [AccelerationResult("test method", cases)]).cases
    assert cc.responses == ("along", "across") and cc.mode_indices == (1, 2)
    assert cc.peak_mg == pytest.approx(0.05 / MG, rel=1e-12)


def test_missing_mode_is_input_error() -> None:
    stick = make_tower(n=5)
    m = mode(stick, 7, 0.3, "x")
    with pytest.raises(InputError, match="mode 7"):
        corner_accelerations(stick, (), [AccelerationResult("m", (case_for(stick, m, 0.01),))])


def test_plugin_with_en_and_nbcc_results() -> None:
    # uncoupled translational modes: every corner moves with the full modal translation, of which
    # the along-wind case reports the component along the wind; the NBCC cases add the
    # across-wind mode
    stick = make_tower(n=40)
    modes = three_modes(stick, 0.25, 0.27, 0.5)
    ws = WindSettings()
    en = en_accelerations(stick, modes, ws, [1.0, 10.0])
    nb = nbcc_accelerations(stick, modes, ws, NbccSettings(), [1.0, 10.0])
    ctx = Context(stick, BuildingTakeoff("B-1", "t", ()), Settings({}),
                  {"modes": FakeModal(modes), "accel_en": en, "accel_nbcc": nb})
    out = PLUGIN.run(ctx)
    assert set(out) == {"accel_corners"}
    res = out["accel_corners"]
    assert len(res.cases) == 2 * 12 * 2  # methods x sectors x return periods
    for cc in res.for_method(en.method, 10.0):
        match = next(c for c in en.for_period(10.0) if c.direction_deg == cc.direction_deg)
        axis = (1.0, 0.0) if modes[match.mode_index - 1].kind == "x" else (0.0, 1.0)
        projection = abs(np.dot(axis, match.axis_xy))
        assert cc.peak_mg == pytest.approx(match.peak_mg / projection, rel=1e-9)
        if cc.direction_deg % 90 == 0:
            assert cc.peak_mg == pytest.approx(match.peak_mg, rel=1e-9)
    for cc in res.for_method(nb.method, 10.0):
        if cc.direction_deg % 90 == 0:  # wind along an axis: along and across are the x and y modes
            pairs = [c for c in nb.for_period(10.0) if c.direction_deg == cc.direction_deg]
            assert cc.peak_mg == pytest.approx(math.sqrt(sum(c.peak_mg ** 2 for c in pairs)), rel=1e-9)
            assert sorted(cc.mode_indices) == [1, 2]
    assert res.governing(nb.method, 10.0).peak_mg >= max(c.peak_mg for c in nb.for_period(10.0))
