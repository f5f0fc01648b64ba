"""Modal plugin: mode classification, participation, normalisation, P-Delta, Rayleigh.

Sources beside each check; the eigen results of the assembly itself are checked in
test_assembly.py against closed forms.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from swayscreen.pipeline.assembly import mass_matrix
from swayscreen.pipeline.errors import InputError, SettingsError
from swayscreen.pipeline.plugin_api import Context, Plugin
from swayscreen.pipeline.settings import Settings, load_settings, template
from swayscreen.pipeline.stick import Level, Segment, StickModel
from swayscreen.pipeline.takeoff import BuildingTakeoff
from swayscreen.plugins.modal import (
    PLUGIN,
    ModalResult,
    ModalSettings,
    dominant_mode,
    modal_analysis,
    shape_at_point,
)

B, D = 30.0, 20.0  # floor plate (m)


def levels(n, h, m, *, centre=(0.0, 0.0), top_half=False):
    j = (B**2 + D**2) / 12.0  # rectangle plate, uniform mass: J = m (B^2 + D^2)/12
    out = []
    for i in range(n):
        mi = m * (0.5 if top_half and i == n - 1 else 1.0)
        out.append(Level(f"F{i + 1}", f"id{i}", (i + 1) * h, h, mi, centre, mi * j))
    return tuple(out)


def core(n, h, *, ei_x, ei_y, ga=0.0, gj=0.0, centre=(0.0, 0.0), sid="core-1"):
    return tuple(Segment(sid, "core", i, h, centre, ei_xx_nm2=ei_y, ei_yy_nm2=ei_x, ga_x_n=ga, ga_y_n=ga,
                         gj_nm2=gj) for i in range(n))


def frames(n, h, *, kx, ky, kt, centre=(0.0, 0.0)):
    return tuple(Segment("columns", "frame", i, h, centre, k_x_n_m=kx, k_y_n_m=ky, k_twist_nm_rad=kt)
                 for i in range(n))


def stick(lv, segs, origin=(0.0, 0.0)):
    return StickModel("B1", "Test tower", 0.0, lv, tuple(segs), origin_m=origin)


def tower(core_centre=(0.0, 0.0), origin=(0.0, 0.0), n=15, plate_centre=(0.0, 0.0)):
    h, m = 3.5, 8.0e5
    segs = core(n, h, ei_x=6e12, ei_y=9e12, ga=2e11, gj=4e11, centre=core_centre)
    segs += frames(n, h, kx=2e8, ky=2.5e8, kt=5e10, centre=plate_centre)
    return stick(levels(n, h, m, centre=plate_centre), segs, origin)


# --------------------------------------------------------------------------- classification


def test_symmetric_building_has_uncoupled_modes():
    r = modal_analysis(tower(), n_modes=9, p_delta=False)
    kinds = [m.kind for m in r.modes]
    assert set(kinds) == {"x", "y", "torsion"}  # none "coupled"
    for m in r.modes:
        key = {"x": "x", "y": "y", "torsion": "twist"}[m.kind]
        assert m.shares[key] == pytest.approx(1.0, abs=1e-9)
        assert sum(m.shares.values()) == pytest.approx(1.0, abs=1e-12)
        others = [d for d in ("x", "y", "twist") if d != key]
        assert all(m.participation[d] < 1e-12 for d in others)
    # periods ascending
    periods = [m.period_s for m in r.modes]
    assert periods == sorted(periods, reverse=True)


def test_off_centre_core_couples_translation_and_twist():
    sym = modal_analysis(tower(), n_modes=6, p_delta=False)
    ecc = modal_analysis(tower(core_centre=(0.0, 6.0)), n_modes=6, p_delta=False)
    # a core offset in y couples x sway with twist (stiffness eccentricity); y stays pure
    assert any(m.kind == "coupled" for m in ecc.modes)
    first_x = dominant_mode(ecc, "x")
    assert first_x.shares["twist"] > 0.05 and first_x.shares["y"] < 1e-9
    assert dominant_mode(ecc, "y").shares["y"] == pytest.approx(1.0, abs=1e-9)
    # coupling spreads the frequencies apart (lowest goes down, compared with symmetric)
    assert ecc.modes[0].period_s > sym.modes[0].period_s


@pytest.mark.parametrize("origin", [(0.0, 0.0), (250.0, -80.0)])
def test_participation_and_effective_mass_complete_over_all_modes(origin):
    # M-orthogonality of the modes: sum over all 3N modes of (phi^T M r)^2/(phi^T M phi)
    # = r^T M r (Chopra, Dynamics of Structures, modal expansion of the influence vector).
    s = tower(core_centre=(3.0, 5.0), origin=origin, n=6, plate_centre=(1.0, -2.0))
    r = modal_analysis(s, n_modes=18, p_delta=False)
    for d in ("x", "y", "twist"):
        assert sum(m.participation[d] for m in r.modes) == pytest.approx(1.0, rel=1e-9)
        assert r.cumulative[d] == pytest.approx(1.0, rel=1e-9)
    assert sum(m.effective_mass["x"] for m in r.modes) == pytest.approx(s.total_mass_kg, rel=1e-9)
    assert sum(m.effective_mass["y"] for m in r.modes) == pytest.approx(s.total_mass_kg, rel=1e-9)
    # polar moment about the mass centre: J_c + 0 (all plates share the centre (1, -2))
    assert r.total_polar_kg_m2 == pytest.approx(sum(lv.polar_moment_kg_m2 for lv in s.levels), rel=1e-9)
    assert sum(m.effective_mass["twist"] for m in r.modes) == pytest.approx(r.total_polar_kg_m2, rel=1e-9)
    assert r.centre_of_mass_m == pytest.approx((1.0, -2.0))


def test_results_do_not_depend_on_the_plan_origin():
    a = modal_analysis(tower(core_centre=(3.0, 5.0)), n_modes=6, p_delta=True)
    b = modal_analysis(tower(core_centre=(3.0, 5.0), origin=(-40.0, 75.0)), n_modes=6, p_delta=True)
    for ma, mb in zip(a.modes, b.modes):
        assert mb.period_s == pytest.approx(ma.period_s, rel=1e-9)
        for d in ("x", "y", "twist"):
            assert mb.shares[d] == pytest.approx(ma.shares[d], abs=1e-9)
            assert mb.participation[d] == pytest.approx(ma.participation[d], abs=1e-9)
        assert mb.kind == ma.kind


# ---------------------------------------------------------------------------- normalisation


def test_normalisation_contract_and_orthogonality():
    s = tower(core_centre=(2.0, 4.0), plate_centre=(1.0, 0.5))
    r = modal_analysis(s, n_modes=9, p_delta=False)
    radii = np.array([math.sqrt(lv.polar_moment_kg_m2 / lv.mass_kg) for lv in s.levels])
    mm = mass_matrix(s)
    phis = []
    for m in r.modes:
        scaled = np.column_stack([m.shape[:, 0], m.shape[:, 1], m.shape[:, 2] * radii])
        k = np.argmax(np.abs(scaled))
        assert abs(scaled).max() == pytest.approx(1.0, abs=1e-12)
        assert scaled.ravel()[k] == pytest.approx(1.0, abs=1e-12)
        phi = m.shape.ravel()
        assert m.generalized_mass_kg == pytest.approx(phi @ mm @ phi, rel=1e-12)
        assert m.omega_rad_s == pytest.approx(2 * math.pi / m.period_s, rel=1e-12)
        assert m.frequency_hz == pytest.approx(1 / m.period_s, rel=1e-12)
        assert not m.shape.flags.writeable
        phis.append(phi)
    g = np.array(phis) @ mm @ np.array(phis).T
    off = g - np.diag(np.diag(g))
    assert abs(off).max() < 1e-9 * np.diag(g).min()


def test_shape_at_point_follows_stick_sign_convention():
    # stick.py: a point (px, py) moves by ux - theta (py - oy), uy + theta (px - ox)
    s = tower(origin=(2.0, -1.0))
    r = modal_analysis(s, n_modes=9, p_delta=False)
    tors = dominant_mode(r, "twist")
    ux, uy, th = tors.shape[-1]
    corner = (B / 2, D / 2)
    dx, dy = shape_at_point(tors, s.n_levels - 1, corner, s.origin_m)
    assert dx == pytest.approx(ux - th * (D / 2 + 1.0), rel=1e-12)
    assert dy == pytest.approx(uy + th * (B / 2 - 2.0), rel=1e-12)
    # torsion mode of the symmetric tower: the plate centre does not move, so the corner
    # moves by theta times its distance, perpendicular to the radius
    cx, cy = shape_at_point(tors, s.n_levels - 1, (0.0, 0.0), s.origin_m)
    assert math.hypot(cx, cy) < 1e-9
    assert math.hypot(dx, dy) == pytest.approx(abs(th) * math.hypot(B / 2, D / 2), rel=1e-9)


def test_dominant_mode_picks_the_fundamental_per_direction():
    r = modal_analysis(tower(), n_modes=9, p_delta=False)
    x, y, t = (dominant_mode(r, d) for d in ("x", "y", "twist"))
    assert (x.kind, y.kind, t.kind) == ("x", "y", "torsion")
    assert x.index == min(m.index for m in r.modes if m.kind == "x")
    assert t is dominant_mode(r, "torsion")
    with pytest.raises(ValueError):
        dominant_mode(r, "z")


# ----------------------------------------------------------------------- P-Delta, Rayleigh


def test_p_delta_lengthens_periods_single_storey_closed_form():
    # one storey: T_pd / T = 1/sqrt(1 - theta), theta = W/(k h) (EN 1998-1 4.4.2.2(2))
    m, h, k = 2.0e6, 4.0, 4.0e7
    s = stick(levels(1, h, m), frames(1, h, kx=k, ky=3 * k, kt=1e13))
    r = modal_analysis(s, n_modes=3, p_delta=True)
    theta = m * 9.81 / (k * h)
    assert r.p_delta is True
    assert r.t1_with_p_delta_s / r.t1_without_p_delta_s == pytest.approx(1 / math.sqrt(1 - theta), rel=1e-9)
    assert r.modes[0].period_s == pytest.approx(r.t1_with_p_delta_s, rel=1e-12)
    assert r.t1_without_p_delta_s == pytest.approx(2 * math.pi * math.sqrt(m / k), rel=1e-9)


def test_p_delta_lengthens_cantilever_tower():
    on = modal_analysis(tower(), n_modes=3, p_delta=True)
    off = modal_analysis(tower(), n_modes=3, p_delta=False)
    assert on.t1_with_p_delta_s > on.t1_without_p_delta_s
    assert on.modes[0].period_s == pytest.approx(on.t1_with_p_delta_s, rel=1e-12)
    assert off.modes[0].period_s == pytest.approx(off.t1_without_p_delta_s, rel=1e-12)
    assert off.t1_with_p_delta_s == pytest.approx(on.t1_with_p_delta_s, rel=1e-12)


def test_unstable_under_own_weight_falls_back_with_warning():
    m, h, k = 2.0e6, 4.0, 4.0e6  # theta = m g/(k h) = 1.23 > 1
    s = stick(levels(1, h, m), frames(1, h, kx=k, ky=3 * k, kt=1e13))
    r = modal_analysis(s, n_modes=3, p_delta=True)
    assert r.p_delta is False and math.isinf(r.t1_with_p_delta_s)
    assert any("unstable under its own weight" in w for w in r.warnings)
    assert r.modes[0].period_s == pytest.approx(2 * math.pi * math.sqrt(m / k), rel=1e-9)


def test_rayleigh_uniform_cantilever():
    # Reference sheet section 7: Rayleigh with the static shape under uniform load gives
    # 3.5301 against the exact 3.5160 (+0.4 % on omega), an upper bound on omega.
    # Static tip sway under uniform load w: w L^4 / (8 EI) (Timoshenko & Gere).
    n, H, m, ei = 100, 120.0, 3.0e5, 2.0e14
    h = H / n
    s = stick(levels(n, h, m * h, top_half=True), core(n, h, ei_x=ei, ei_y=3 * ei, gj=1e13))
    r = modal_analysis(s, n_modes=3, p_delta=False)
    t1 = dominant_mode(r, "x").period_s
    tr = r.rayleigh_period_s["x"]
    assert tr < t1
    assert t1 / tr == pytest.approx(3.5301 / 3.5160, rel=1e-3)
    assert abs(tr / t1 - 1) < 0.01
    assert r.rayleigh_top_sway_m["x"] == pytest.approx(m * 9.81 * H**4 / (8 * ei), rel=1e-3)


def test_rayleigh_shear_building_reference_value():
    # Reference sheet section 7 [DER]: N = 10, k = m = 1: Rayleigh with the uniform-load sway
    # omega = 0.150414 (eigen 0.149460)
    s = stick(levels(10, 3.0, 1.0), frames(10, 3.0, kx=1.0, ky=1.0, kt=1e6))
    r = modal_analysis(s, n_modes=1, p_delta=False)
    assert 2 * math.pi / r.rayleigh_period_s["y"] == pytest.approx(0.150414, abs=2e-6)
    assert 2 * math.pi / r.modes[0].period_s == pytest.approx(0.149460, abs=2e-6)


# --------------------------------------------------------------------------- bad input


def test_mechanism_is_a_clear_input_error():
    n, h = 6, 3.0
    s = stick(levels(n, h, 1e5), core(4, h, ei_x=1e12, ei_y=1e12, gj=1e10))  # floors 5-6 unsupported
    with pytest.raises(InputError, match="singular"):
        modal_analysis(s)


def test_too_many_modes_are_capped_with_warning():
    r = modal_analysis(tower(n=2), n_modes=50, p_delta=False)
    assert len(r.modes) == 6
    assert any("only 6 freedoms" in w for w in r.warnings)
    few = modal_analysis(tower(n=20), n_modes=1, p_delta=False)
    assert any("below 90%" in w for w in few.warnings)


def test_support_notes_reach_the_warnings():
    n, h = 6, 3.0
    segs = core(n, h, ei_x=5e12, ei_y=5e12, gj=1e11) + (
        Segment("wall-t", "wall", 3, h, (5.0, 0.0), ei_xx_nm2=1e12, ei_yy_nm2=1e11, ga_x_n=1e10, ga_y_n=1e10),)
    r = modal_analysis(stick(levels(n, h, 1e5), segs), n_modes=3)
    assert any("wall-t" in w and "pinned" in w for w in r.warnings)


# ------------------------------------------------------------------------------- plugin


def ctx(s, sections=None):
    return Context(s, BuildingTakeoff("B1", "Test tower", ()), Settings(sections or {}))


def test_plugin_contract_and_run():
    assert isinstance(PLUGIN, Plugin)
    assert (PLUGIN.name, PLUGIN.version, PLUGIN.needs, PLUGIN.provides) == ("modal", "1.0", (), ("modes",))
    assert PLUGIN.settings_section == "modal" and PLUGIN.settings_type is ModalSettings
    out = PLUGIN.run(ctx(tower(), {"modal": ModalSettings(n_modes=4, p_delta=False)}))
    assert set(out) == {"modes"}
    res = out["modes"]
    assert isinstance(res, ModalResult) and len(res.modes) == 4 and res.p_delta is False
    # defaults when the section is missing: 9 modes with P-Delta
    res = PLUGIN.run(ctx(tower()))["modes"]
    assert len(res.modes) == 9 and res.p_delta is True


def test_plugin_without_stick_is_input_error():
    with pytest.raises(InputError, match="no stick model"):
        PLUGIN.run(ctx(None))


def test_settings_section_loads_and_validates(tmp_path):
    text = template({"modal": ModalSettings})
    assert "n_modes = 9" in text and "p_delta = true" in text
    f = tmp_path / "s.toml"
    f.write_text("[modal]\nn_modes = 12\np_delta = false\n")
    sec = load_settings(f, {"modal": ModalSettings})["modal"]
    assert (sec.n_modes, sec.p_delta) == (12, False)
    f.write_text("[modal]\nn_modes = 0\n")
    with pytest.raises(SettingsError, match="minimum"):
        load_settings(f, {"modal": ModalSettings})
