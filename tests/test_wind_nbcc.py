"""NBCC Structural Commentary I across- and along-wind accelerations.

Check values: /work/shared/reference/methods.md section 2 (the formulas are from memory of
the commentary, the check values were computed from them and are reproduced here to the
printed digits: tolerance half a unit of the last digit).
"""
from __future__ import annotations

import dataclasses
import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))
from wind_fakes import FakeModal, make_tower, three_modes  # noqa: E402

from swayscreen.pipeline.plugin_api import Context  # noqa: E402
from swayscreen.pipeline.settings import Settings  # noqa: E402
from swayscreen.pipeline.takeoff import BuildingTakeoff  # noqa: E402
from swayscreen.plugins.wind_common import MG, WindSettings, c_prob, peak_mg_for_damping  # noqa: E402
from swayscreen.plugins.wind_nbcc import (  # noqa: E402
    PLUGIN,
    NbccSettings,
    nbcc_accelerations,
    nbcc_across_wind,
    nbcc_along_wind,
    nbcc_background_factor,
    nbcc_exposure_factor,
    nbcc_gust_energy_ratio,
    nbcc_peak_factor,
    nbcc_size_reduction_factor,
)


@pytest.mark.parametrize("nu,expected", [(0.1, 3.5993), (0.2, 3.7866), (0.3, 3.8920), (0.5, 4.0209)])
def test_peak_factor_hourly(nu: float, expected: float) -> None:
    # methods sheet 2: g_p with T = 3600 s and the constant 0.5772
    assert nbcc_peak_factor(nu, 3600.0) == pytest.approx(expected, abs=5e-5)


ACROSS_CASES = [
    # case: n_W, W = D, V_H, rho_B, beta, V_r, a_r (N/m^3), a_W (m/s^2), mg
    ("A", 0.2, 40.0, 30.0, 200.0, 0.015, 3.7500, 6.1542, 0.15517, 15.82),
    ("B", 0.2, 40.0, 25.0, 200.0, 0.015, 3.1250, 3.3719, 0.08502, 8.67),
    ("C", 0.3067, 40.0, 30.0, 200.0, 0.015, 2.4454, 1.5011, 0.09161, 9.34),
    ("D", 0.2, 40.0, 30.0, 200.0, 0.030, 3.7500, 6.1542, 0.10972, 11.18),
]


@pytest.mark.parametrize("case", ACROSS_CASES, ids=[c[0] for c in ACROSS_CASES])
def test_across_wind_cases(case: tuple) -> None:
    _, n, w, vh, rho_b, beta, vr, a_r, a_w, mg = case
    r = nbcc_across_wind(n, w, w, vh, rho_b, beta)
    assert r.reduced_velocity == pytest.approx(vr, abs=5e-5)
    assert r.a_r_n_m3 == pytest.approx(a_r, abs=5e-5)
    assert r.peak_m_s2 == pytest.approx(a_w, abs=5e-6)
    assert r.peak_m_s2 / MG == pytest.approx(mg, abs=5e-3)


def test_across_wind_damping_and_frequency_scaling() -> None:
    # a_W ~ 1/sqrt(beta) (case A vs D) and ~ n^(2 - 3.3) = n^-1.3 at fixed V_H and g_p
    a = nbcc_across_wind(0.2, 40, 40, 30, 200, 0.015, g_p=3.8).peak_m_s2
    d = nbcc_across_wind(0.2, 40, 40, 30, 200, 0.030, g_p=3.8).peak_m_s2
    assert a / d == pytest.approx(math.sqrt(2), rel=1e-12)
    c = nbcc_across_wind(0.3, 40, 40, 30, 200, 0.015, g_p=3.8).peak_m_s2
    assert c / a == pytest.approx(1.5 ** -1.3, rel=1e-12)


@pytest.mark.parametrize("height_m", [3.0, 10.0, 50.0, 150.0, 560.0, 1000.0])
@pytest.mark.parametrize("width_m", [2.0, 20.0, 60.0, 300.0])
def test_background_factor_matches_adaptive_quadrature(height_m: float, width_m: float) -> None:
    # independent oracle: the commentary's integral B = 4/3 int_0^(914/H) ... dx evaluated by
    # scipy.integrate.quad (QUADPACK, adaptive Gauss-Kronrod, tightened tolerances); the
    # module's fixed Gauss-Legendre panels must agree to round-off over buildings from a
    # house to 1 km tall (quad's own error estimate is below 1e-12 relative here)
    from scipy.integrate import quad

    def f(x: float) -> float:
        return 1.0 / (1.0 + x * height_m / 457.0) / (1.0 + x * width_m / 122.0) * x / (1.0 + x * x) ** (4.0 / 3.0)

    val, err = quad(f, 0.0, 914.0 / height_m, limit=200, epsabs=0.0, epsrel=1e-13)
    assert err <= 1e-12 * val
    assert nbcc_background_factor(height_m, width_m) == pytest.approx(4.0 / 3.0 * val, rel=1e-11)


def test_along_wind_check() -> None:
    # methods sheet 2 along-wind check: H = 150, W = 40, n_D = 0.3067, V_H = 30, beta = 0.015,
    # K = 0.10, rough exposure, Delta = 0.15 m
    c_eh = nbcc_exposure_factor(150.0, "rough")
    assert c_eh == pytest.approx(1.7184, abs=5e-5)
    assert nbcc_background_factor(150.0, 40.0) == pytest.approx(0.6203, abs=5e-5)
    assert nbcc_size_reduction_factor(0.3067, 150.0, 40.0, 30.0) == pytest.approx(0.04043, abs=5e-6)
    assert nbcc_gust_energy_ratio(0.3067, 30.0) == pytest.approx(0.18435, abs=5e-6)
    r = nbcc_along_wind(0.3067, 150.0, 40.0, 30.0, 0.015, 0.10, c_eh, deflection_m=0.15)
    assert r.sigma_over_mu == pytest.approx(0.2550, abs=5e-5)
    assert r.nu_hz == pytest.approx(0.2045, abs=5e-5)
    assert r.g_p == pytest.approx(3.7925, abs=5e-5)
    assert r.c_g == pytest.approx(1.9670, abs=5e-5)
    assert r.peak_m_s2 == pytest.approx(0.18263, abs=5e-6)
    # the same with the mean deflection Delta / C_g
    r2 = nbcc_along_wind(0.3067, 150.0, 40.0, 30.0, 0.015, 0.10, c_eh, mean_deflection_m=0.15 / r.c_g)
    assert r2.peak_m_s2 == pytest.approx(r.peak_m_s2, rel=1e-12)
    with pytest.raises(ValueError):
        nbcc_along_wind(0.3067, 150.0, 40.0, 30.0, 0.015, 0.10, c_eh)


def test_exposure_bounds() -> None:
    # open (z/10)^0.28 in [1, 2.5]; rough 0.5 (z/12.7)^0.5 in [0.5, 2.5] (from memory, methods sheet 2)
    assert nbcc_exposure_factor(5.0, "open") == 1.0
    assert nbcc_exposure_factor(100.0, "open") == pytest.approx(10 ** 0.28, rel=1e-12)
    assert nbcc_exposure_factor(5.0, "rough") == 0.5
    assert nbcc_exposure_factor(1000.0, "rough") == 2.5
    with pytest.raises(ValueError):
        nbcc_exposure_factor(10.0, "suburban")


def _ws(**changes) -> WindSettings:
    return dataclasses.replace(WindSettings(), **changes)


def test_tower_cases_use_along_and_across_modes() -> None:
    # 150 m x 40 x 40 tower (the methods sheet tower), y mode 0.3067 Hz, x mode 0.35 Hz
    stick = make_tower(top_mass_factor=1.0)
    modes = three_modes(stick, fx=0.35, fy=0.3067, ft=0.6)
    res = nbcc_accelerations(stick, modes, _ws(), NbccSettings(), [10.0])
    by = {(c.direction_deg, c.response): c for c in res.cases}
    north_along, north_across = by[(0.0, "along")], by[(0.0, "across")]
    assert north_along.frequency_hz == pytest.approx(0.3067)  # wind along -y
    assert north_across.frequency_hz == pytest.approx(0.35)
    # the across-wind case equals the closed form with the case's own V_H and rho_B
    d = north_across.details
    assert d["rho_B_kg_m3"] == pytest.approx(200.0, rel=1e-12)
    v10 = 26.0 * c_prob(10.0) / 1.06
    assert d["V_H_m_s"] == pytest.approx(v10 * math.sqrt(nbcc_exposure_factor(150.0, "rough")), rel=1e-12)
    ref = nbcc_across_wind(0.35, 40.0, 40.0, d["V_H_m_s"], 200.0, 0.10 / (2 * math.pi))
    assert north_across.peak_mg == pytest.approx(ref.peak_m_s2 / MG, rel=1e-12)
    assert north_across.rms_mg == pytest.approx(north_across.peak_mg / ref.g_p, rel=1e-12)
    assert north_across.floor_rms_mg[-1] == pytest.approx(north_across.rms_mg, rel=1e-12)
    assert north_across.valid and north_along.valid


def test_skewed_mode_across_wind_scaled_by_its_share() -> None:
    # a mode translating along the diagonal has half its kinetic energy across a wind from
    # north: across-wind top acceleration 1/2 of the formula, the mode's own axis 1/sqrt(2)
    stick = make_tower(n=50)
    m = three_modes(stick, fx=0.3, fy=0.5, ft=0.7)[0]
    shape = m.shape.copy()
    shape[:, 1] = shape[:, 0]
    diag = dataclasses.replace(m, shape=shape)
    res = nbcc_accelerations(stick, (diag,), _ws(), NbccSettings(), [10.0])
    c = next(c for c in res.cases if c.direction_deg == 0.0 and c.response == "across")
    assert c.details["share"] == pytest.approx(0.5, rel=1e-12)
    assert c.peak_mg * MG == pytest.approx(0.5 * c.details["a_W_formula_m_s2"], rel=1e-12)
    assert c.details["rho_B_kg_m3"] == pytest.approx(2 * c.details["rho_B_gross_kg_m3"], rel=1e-12)
    assert "coupled" in c.note
    # modal coordinate peak: the diagonal motion at the top is |(1, 1)| q = sqrt(2)/2 a_W
    assert c.details["modal_peak_m_s2"] * math.sqrt(2) == pytest.approx(
        c.details["a_W_formula_m_s2"] / math.sqrt(2), rel=1e-12)


def test_along_wind_deflection_from_the_modal_model() -> None:
    # One floor: the single mode is exact, so the mean deflection must be F / k with
    # k = omega^2 m and F = q C_e(z) C_p b t (t = half the storey: the floor's tributary height).
    stick = make_tower(n=1, storey_m=70.0, width_x_m=20.0, width_y_m=20.0)
    modes = three_modes(stick, 0.4, 0.5, 0.9)
    res = nbcc_accelerations(stick, modes, _ws(terrain_category="II"), NbccSettings(), [10.0])
    case = next(c for c in res.cases if c.direction_deg == 90.0 and c.response == "along")
    v10 = 26.0 * c_prob(10.0) / 1.06
    q = 0.5 * 1.29 * v10 ** 2
    force = q * (70.0 / 10.0) ** 0.28 * 1.3 * 20.0 * 35.0  # open exposure for terrain II
    k = (2 * math.pi * 0.4) ** 2 * stick.levels[0].mass_kg
    assert case.details["mean_deflection_m"] == pytest.approx(force / k, rel=1e-12)
    assert case.details["Delta_m"] == pytest.approx(force / k * case.details["C_g"], rel=1e-12)


def test_validity_flags() -> None:
    # low frequency (0.2 Hz < 0.25 Hz) and a 4:1 plan: both outside the method, results still given
    stick = make_tower(n=50, width_x_m=60.0, width_y_m=15.0)
    modes = three_modes(stick, fx=0.2, fy=0.22, ft=0.5)
    res = nbcc_accelerations(stick, modes, _ws(), NbccSettings(), [10.0])
    c = next(c for c in res.cases if c.direction_deg == 0.0 and c.response == "across")
    assert not c.valid
    assert "below 0.25 Hz" in c.note and "aspect" in c.note
    assert c.peak_mg > 0
    # the same tower with a stiffer structure and a square plan is inside
    stick2 = make_tower(n=50, width_x_m=40.0, width_y_m=40.0)
    ok = nbcc_accelerations(stick2, three_modes(stick2, 0.3, 0.32, 0.6), _ws(), NbccSettings(), [10.0])
    assert all(c.valid for c in ok.cases)


def test_reduced_velocity_limit() -> None:
    stick = make_tower(n=20, width_x_m=12.0, width_y_m=12.0)  # 60 m high, H/w = 5
    modes = three_modes(stick, 0.26, 0.27, 0.6)
    res = nbcc_accelerations(stick, modes, _ws(basic_wind_speed_m_s=60.0), NbccSettings(), [10.0])
    across = [c for c in res.cases if c.response == "across"]
    assert all(c.details["reduced_velocity"] > 10 for c in across)
    assert all(not c.valid and "reduced velocity" in c.note for c in across)


def test_peak_for_damping_nbcc() -> None:
    stick = make_tower(n=50)
    modes = three_modes(stick, 0.3, 0.32, 0.6)
    res = nbcc_accelerations(stick, modes, _ws(), NbccSettings(), [10.0])
    for c in res.cases[:2]:
        assert peak_mg_for_damping(c, c.damping_ratio) == pytest.approx(c.peak_mg, rel=1e-12)
        lower = peak_mg_for_damping(c, 2 * c.damping_ratio)
        if c.response == "across":
            assert lower == pytest.approx(c.peak_mg / math.sqrt(2), rel=1e-12)
        else:  # the along-wind peak factor also changes with damping: close to, not exactly, 1/sqrt
            assert lower < c.peak_mg
            assert lower == pytest.approx(c.peak_mg / math.sqrt(2), rel=0.05)


def test_plugin_runs_with_default_sections() -> None:
    stick = make_tower(n=40)
    modal = FakeModal(three_modes(stick, 0.3, 0.33, 0.6))
    settings_ = Settings({"wind": WindSettings(), "wind_nbcc": NbccSettings()})
    out = PLUGIN.run(Context(stick, BuildingTakeoff("B-1", "t", ()), settings_, {"modes": modal}))
    assert set(out) == {"accel_nbcc"}
    res = out["accel_nbcc"]
    assert len(res.cases) == 12 * 2 * 2  # sectors x responses x return periods
    gov = res.governing(10.0)
    assert gov.response == "across"  # across-wind governs a square tower of this kind (methods sheet 2 vs 1.3)
    assert np.isfinite(gov.peak_mg) and gov.peak_mg > 0
