"""Drift under the serviceability wind: load per floor, static solution, storey and top drift.

Oracles: the uniform shear building (storey drift = storey shear / storey stiffness, a
handbook closed form, e.g. Chopra, Dynamics of Structures, ch. 9 shear-building idealisation);
rigid-floor kinematics (translation + twist x lever arm); EN 1991-1-4 (4.8) and (5.4) for
the floor forces.
"""
from __future__ import annotations

import dataclasses
import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))
from wind_fakes import FakeModal, make_tower, shear_building_stiffness, three_modes  # noqa: E402

from swayscreen.pipeline.errors import InputError  # noqa: E402
from swayscreen.pipeline.plugin_api import Check, Context  # noqa: E402
from swayscreen.pipeline.settings import Settings  # noqa: E402
from swayscreen.pipeline.takeoff import BuildingTakeoff  # noqa: E402
from swayscreen.plugins.drift import (  # noqa: E402
    PLUGIN,
    DriftSettings,
    drift_analysis,
    drift_checks,
    drift_profile,
    floor_wind_forces,
    load_vector,
    solve_displacements,
)
from swayscreen.plugins.wind_common import (  # noqa: E402
    TERRAIN_TABLE,
    Terrain,
    WindSettings,
    c_prob,
    floor_geometry,
)
from swayscreen.plugins.wind_en import peak_velocity_pressure  # noqa: E402

N, K_X, K_Y, K_T = 20, 4e9, 3e9, 2e12


def _ws(**changes) -> WindSettings:
    return dataclasses.replace(WindSettings(), **changes)


def test_floor_forces_eq_5_4() -> None:
    stick = make_tower(n=10, storey_m=4.0, width_x_m=30.0, width_y_m=20.0)
    fg = floor_geometry(stick, np.array([0.0, -1.0]))  # wind along -y: width 30 m
    t = Terrain("III", *TERRAIN_TABLE["III"])
    f = floor_wind_forces(fg, 24.0, t, WindSettings(), c_s_c_d=0.9)
    # EN 1991-1-4 (5.4): F = c_s c_d c_f q_p(z) A_ref, A_ref = b x tributary height
    assert f[4] == pytest.approx(0.9 * 1.3 * peak_velocity_pressure(20.0, 24.0, t) * 30.0 * 4.0, rel=1e-12)
    assert f[-1] == pytest.approx(0.9 * 1.3 * peak_velocity_pressure(40.0, 24.0, t) * 30.0 * 2.0, rel=1e-12)


def test_load_vector_moment_about_origin() -> None:
    p = load_vector(np.array([10.0]), np.array([0.0, -1.0]), np.array([[5.0, 2.0]]), (1.0, 0.0))
    # F = (0, -10) at (5, 2), origin (1, 0): M = dx Fy - dy Fx = 4 * -10 - 2 * 0 = -40
    assert p == pytest.approx([0.0, -10.0, -40.0])


def test_shear_building_drift_closed_form() -> None:
    # storey drift_i = V_i / k with V_i the sum of the forces at and above floor i
    stick = make_tower(n=N, storey_m=3.5)
    k = shear_building_stiffness(N, K_X, K_Y, K_T)
    forces = np.linspace(50e3, 120e3, N)
    u = solve_displacements(k, load_vector(forces, np.array([1.0, 0.0]), np.zeros((N, 2)), (0.0, 0.0)))
    drift, ratio, top, _, _ = drift_profile(stick, u)
    shear = np.cumsum(forces[::-1])[::-1]
    assert drift == pytest.approx(shear / K_X, rel=1e-9)
    assert ratio == pytest.approx(shear / K_X / 3.5, rel=1e-9)
    assert top == pytest.approx(np.sum(shear / K_X), rel=1e-9)
    assert np.allclose(u[:, 1:], 0.0, atol=1e-15)


def test_eccentric_load_twists_and_corner_drift_adds_lever_arm() -> None:
    # force at the plate centroid 5 m off the stiffness centre: twist = T_i / k_t per storey,
    # the corner at distance r on the far side drifts by V/k + theta * lever arm (rigid floor)
    stick = make_tower(n=3, storey_m=4.0, width_x_m=20.0, width_y_m=20.0, centre_m=(0.0, 5.0))
    k = shear_building_stiffness(3, K_X, K_Y, K_T)
    forces = np.array([1e5, 1e5, 1e5])
    u = solve_displacements(k, load_vector(forces, np.array([1.0, 0.0]), np.array([[0.0, 5.0]] * 3),
                                           (0.0, 0.0)))
    shear = np.array([3e5, 2e5, 1e5])
    twist_storey = -5.0 * shear / K_T  # M = -dy Fx
    assert np.diff(np.concatenate([[0.0], u[:, 2]])) == pytest.approx(twist_storey, rel=1e-9)
    drift, _, _, _, _ = drift_profile(stick, u)
    # corners (+-10, 15): (ux - theta * 15, theta * (+-10)) relative to the floor below
    assert drift == pytest.approx(np.hypot(shear / K_X - twist_storey * 15.0, twist_storey * 10.0), rel=1e-9)


def test_singular_stiffness_is_input_error() -> None:
    with pytest.raises(InputError, match="singular"):
        solve_displacements(np.zeros((3, 3)), np.ones(3))


def test_drift_analysis_directions_and_checks() -> None:
    stick = make_tower(n=N, storey_m=3.5, width_x_m=40.0, width_y_m=25.0)
    modes = three_modes(stick, 0.3, 0.25, 0.6)
    k = shear_building_stiffness(N, K_X, K_Y, K_T)
    res = drift_analysis(stick, modes, WindSettings(), DriftSettings(), stiffness=k)
    assert len(res.cases) == 12 and res.return_period_yr == 10.0
    by = {c.direction_deg: c for c in res.cases}
    # symmetric plan at the stiffness centre: opposite directions give the same drift
    assert by[0.0].top_drift_m == pytest.approx(by[180.0].top_drift_m, rel=1e-12)
    # wind from north loads the 40 m face, resisted by K_Y: storey drift = shear / K_Y
    c = by[0.0]
    shear = np.cumsum(np.array(c.floor_forces_n)[::-1])[::-1]
    assert c.storey_drift_m == pytest.approx(tuple(shear / K_Y), rel=1e-9)
    assert c.base_shear_n == pytest.approx(shear[0], rel=1e-12)
    assert c.v_b_m_s == pytest.approx(26.0 * c_prob(10.0), rel=1e-12)
    assert 0.7 < c.c_s_c_d < 1.2
    assert c.governing_storey == "L01"  # the base storey carries the largest shear
    overall, storey = drift_checks(res)
    assert isinstance(overall, Check) and overall.unit == "-"
    assert overall.value == pytest.approx(res.governing_overall.top_drift_ratio)
    assert overall.limit == pytest.approx(1 / 500) and storey.limit == pytest.approx(1 / 500)
    assert overall.passes == (overall.value <= overall.limit)
    # projected widths: an oblique wind sees up to 40 cos 30 + 25 sin 30 = 47.1 m here (conservative)
    assert storey.floor == "L01"
    assert storey.direction_deg == res.governing_storey.direction_deg
    assert storey.value == pytest.approx(max(x.max_storey_drift_ratio for x in res.cases), rel=1e-12)
    # without the structural factor the drift scales by 1 / c_s c_d
    res1 = drift_analysis(stick, modes, WindSettings(), DriftSettings(include_structural_factor=False), stiffness=k)
    c1 = next(x for x in res1.cases if x.direction_deg == 0.0)
    assert c1.top_drift_m == pytest.approx(c.top_drift_m / c.c_s_c_d, rel=1e-9)


def test_drift_limit_flags_a_soft_building() -> None:
    stick = make_tower(n=N, storey_m=3.5)
    modes = three_modes(stick, 0.3, 0.3, 0.6)
    soft = shear_building_stiffness(N, 2e7, 2e7, K_T)
    overall, storey = drift_checks(drift_analysis(stick, modes, WindSettings(), DriftSettings(), stiffness=soft))
    assert not overall.passes and not storey.passes
    assert storey.ratio > 1


def test_true_north_rotation_swaps_directions() -> None:
    stick0 = make_tower(n=N, storey_m=3.5, width_x_m=40.0, width_y_m=25.0)
    stick90 = dataclasses.replace(stick0, true_north_deg=90.0)
    modes = three_modes(stick0, 0.3, 0.25, 0.6)
    k = shear_building_stiffness(N, K_X, K_Y, K_T)
    r0 = {c.direction_deg: c for c in drift_analysis(stick0, modes, WindSettings(), DriftSettings(), k).cases}
    r90 = {c.direction_deg: c for c in drift_analysis(stick90, modes, WindSettings(), DriftSettings(), k).cases}
    for d, c in r90.items():
        assert c.top_drift_m == pytest.approx(r0[(d - 90.0) % 360.0].top_drift_m, rel=1e-12)


def test_stiffness_shape_checked_and_callable_accepted() -> None:
    stick = make_tower(n=4)
    modes = three_modes(stick, 1.0, 1.1, 2.0)
    with pytest.raises(InputError, match="shape"):
        drift_analysis(stick, modes, WindSettings(), DriftSettings(), stiffness=np.eye(3))
    res = drift_analysis(stick, modes, _ws(sectors=4, directional_factors=[1.0] * 4), DriftSettings(),
                         stiffness=lambda s: shear_building_stiffness(s.n_levels, K_X, K_X, K_T))
    assert len(res.cases) == 4
    assert res.storey_drift_ratio_envelope == pytest.approx(
        tuple(max(c.storey_drift_ratio[i] for c in res.cases) for i in range(4)))


def test_plugin_uses_the_assembly_stiffness(monkeypatch: pytest.MonkeyPatch) -> None:
    # the plugin asks swayscreen.pipeline.assembly.stiffness_matrix(stick, p_delta=...) for K
    assembly = pytest.importorskip("swayscreen.pipeline.assembly")
    calls = []

    def fake_stiffness(stick, *, p_delta=False, g=9.81):
        calls.append(p_delta)
        return shear_building_stiffness(stick.n_levels, K_X, K_Y, K_T)

    monkeypatch.setattr(assembly, "stiffness_matrix", fake_stiffness)
    stick = make_tower(n=10)
    settings_ = Settings({"wind": WindSettings(), "drift": DriftSettings(p_delta=True)})
    ctx = Context(stick, BuildingTakeoff("B-1", "t", ()), settings_,
                  {"modes": FakeModal(three_modes(stick, 0.5, 0.55, 1.0))})
    out = PLUGIN.run(ctx)
    assert set(out) == {"drift_checks", "drift"}
    assert calls == [True]
    assert len(out["drift_checks"]) == 2
    assert math.isfinite(out["drift"].governing_overall.top_drift_m)


def test_with_the_assembled_cantilever_and_modal_plugin() -> None:
    # Real assembly and modal analysis of a uniform Euler-Bernoulli core (GA = 0: shear neglected):
    # the top deflection under the floor forces F_j at heights a_j is
    # sum F_j a_j^2 (3 z - a_j) / (6 EI) for z >= a_j, F_j z^2 (3 a_j - z) / (6 EI) for z < a_j
    # (Roark's Formulas for Stress and Strain, cantilever with an intermediate point load).
    from swayscreen.pipeline.stick import Segment
    from swayscreen.plugins.modal import modal_analysis

    n, h, ei = 30, 3.5, 1.7e13
    base = make_tower(n=n, storey_m=h, top_mass_factor=0.5)
    segs = tuple(Segment("core-1", "core", i, h, (0.0, 0.0), ei_xx_nm2=ei, ei_yy_nm2=1.5 * ei, gj_nm2=5e12)
                 for i in range(n))
    stick = dataclasses.replace(base, segments=segs)
    modes = modal_analysis(stick, n_modes=6, p_delta=False).modes
    ws = _ws(sectors=4, directional_factors=[1.0] * 4)
    res = drift_analysis(stick, modes, ws, DriftSettings())
    c = next(x for x in res.cases if x.direction_deg == 90.0)  # wind from east: along -x, EI_yy resists
    z = np.array([lv.elevation_m for lv in stick.levels])
    f = np.array(c.floor_forces_n)
    e = 1.5 * ei
    defl = np.array([sum(fj * (a * a * (3 * zz - a) if zz >= a else zz * zz * (3 * a - zz)) / (6 * e)
                         for fj, a in zip(f, z)) for zz in z])
    ux = -np.array([d[0] for d in c.displacements])
    assert ux == pytest.approx(defl, rel=1e-6)
    assert c.top_drift_m == pytest.approx(defl[-1], rel=1e-6)  # square plate centred: no twist
    assert c.storey_drift_m == pytest.approx(tuple(np.diff(np.concatenate([[0.0], defl]))), rel=1e-6)
    assert c.c_s_c_d != 1.0  # the Annex B factor from the real mode was applied
