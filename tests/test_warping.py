"""Warping (Vlasov) torsion of open cores through the chain: section -> segment -> stick matrices.

Sources, beside each check:
* /work/shared/reference/methods.md section 7: the torsion-with-warping equation
  E C_w phi'''' - GJ phi'' = j_m w^2 phi is the parallel flexure-shear (wall-frame) model
  with EI -> E C_w, GA -> GJ, m -> j_m, alpha = H sqrt(GJ / (E C_w)) (warping fixed at the
  base, free at the top); its eigenvalue table [DER] and the Euler-Bernoulli cantilever
  roots beta_n L = 1.87510, 4.69409, 7.85476 (also R. D. Blevins, *Formulas for Natural
  Frequency and Mode Shape*, 1979, table of beam frequencies, from memory).
* Closed-form statics of the same equation (derived in the test's comment; the result is
  the textbook one, e.g. N. S. Trahair, *Flexural-Torsional Buckling of Structures*, 1993,
  uniform torsion with warping restrained at one end, from memory).
* methods.md section 9: channel warping constants 89.600 and 106.057 m^6.
Tolerances: 0.5 % against eigenvalues of continua (methods.md section 0); tighter where the
discrete model is exact, with the reason stated.
"""
from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from reference_tables import PARALLEL_GAMMA
from scipy.linalg import eigh
from shapely.geometry import box

from swayscreen.pipeline.assembly import (
    assembly_notes,
    dof,
    is_positive_definite,
    mass_matrix,
    planar_timoshenko_element,
    stiffness_matrix,
    torsion_element,
    warping_runs,
)
from swayscreen.pipeline.core_settings import CORE_SECTIONS, StiffnessSettings
from swayscreen.pipeline.deriving import derive_stick
from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.materials import concrete_modulus_pa
from swayscreen.pipeline.sections import WallSegment, section_props
from swayscreen.pipeline.settings import load_settings
from swayscreen.pipeline.stick import Level, SectionProps, Segment, StickModel
from swayscreen.pipeline.stiffness import cantilever_segment
from swayscreen.pipeline.takeoff import BuildingTakeoff, Material, Slab, Storey, Wall

# methods.md section 7, parallel (wall-frame) model: alpha -> (gamma_1, gamma_2, gamma_3),
# w_n = gamma_n^2 sqrt(EI / (m H^4)); alpha = 0 is the Euler-Bernoulli cantilever.
PARALLEL = PARALLEL_GAMMA
# methods.md section 7 table, columns gamma_1^2, T_1/T_2, T_1/T_3
PARALLEL_RATIOS = {
    0.0: (3.5160, 6.2669, 17.5475),
    0.5: (3.6765, 6.0431, 16.8240),
    1.0: (4.1102, 5.5366, 15.1622),
    2.0: (5.4208, 4.5705, 11.8345),
    3.0: (6.9205, 4.0095, 9.6941),
    5.0: (9.9628, 3.5353, 7.5910),
    10.0: (17.6105, 3.2083, 5.9908),
    20.0: (33.1604, 3.0649, 5.3164),
}


# ------------------------------------------------------------------------------ builders


def open_core(n, h, *, ecw, gj, centre=(0.0, 0.0), ei=1e16, first=0, sid="core-1"):
    """Uniform core segments, very stiff in bending (so sway stays out of the torsion modes)."""
    return tuple(Segment(sid, "core", i, h, centre, ei_xx_nm2=ei, ei_yy_nm2=ei, gj_nm2=gj, ecw_nm4=ecw)
                 for i in range(first, n))


def floors(n, h, jm, *, m=1.0e5, centre=(0.0, 0.0)):
    """n floors of a uniform continuum lumped at the floors: polar inertia j_m h each, half at
    the top floor (its tributary length is h/2)."""
    out = []
    for i in range(n):
        f = 0.5 if i == n - 1 else 1.0
        out.append(Level(f"F{i + 1}", f"id{i}", (i + 1) * h, h, m * f, centre, jm * h * f))
    return tuple(out)


def stick(lv, segs, origin=(0.0, 0.0)):
    return StickModel("B1", "Warping test tower", 0.0, lv, tuple(segs), origin_m=origin)


def twist_block(a, n):
    idx = [dof(i, "twist") for i in range(n)]
    return a[np.ix_(idx, idx)]


def twist_omegas(s, k=3):
    n = s.n_levels
    w2 = eigh(twist_block(stiffness_matrix(s), n), twist_block(mass_matrix(s), n), eigvals_only=True,
              subset_by_index=[0, k - 1])
    return np.sqrt(w2)


# ------------------------------------------------------------------------------- element


def test_torsion_element_parts():
    L, ecw, gj = 3.2, 4.0e14, 7.0e10
    ke = torsion_element(ecw, gj, L)
    assert np.array_equal(ke, ke.T)
    # GJ = 0: E C_w times the Euler-Bernoulli bending element (the analogy EI -> E C_w)
    assert torsion_element(ecw, 0.0, L) == pytest.approx(planar_timoshenko_element(ecw, 0.0, L), rel=1e-12)
    # a rigid rotation (phi = 1, phi' = 0) strains nothing
    assert ke @ np.array([1.0, 0.0, 1.0, 0.0]) == pytest.approx(np.zeros(4), abs=1e-6 * gj)
    # uniform twist phi = x/L (phi' = 1/L, phi'' = 0): energy 1/2 GJ/L exactly (integral of
    # GJ phi'^2 over L); cubic interpolation holds a linear field exactly
    d = np.array([0.0, 1.0 / L, 1.0, 1.0 / L])
    assert d @ ke @ d == pytest.approx(gj / L, rel=1e-12)
    # phi = x^2 (phi'' = 2, phi' = 2x): E C_w 4 L + GJ 4 L^3 / 3, exact for a quadratic
    d = np.array([0.0, 0.0, L * L, 2 * L])
    assert d @ ke @ d == pytest.approx(ecw * 4 * L + gj * 4 * L**3 / 3, rel=1e-12)


# ------------------------------------------------------------------- uniform cantilevers


@pytest.mark.parametrize("alpha", sorted(PARALLEL))
def test_vlasov_torsion_reproduces_parallel_model_table(alpha):
    # methods.md s.7: torsion with warping is the parallel model with EI -> E C_w, GA -> GJ,
    # m -> j_m; alpha = H sqrt(GJ / (E C_w)). 60 storeys, mass lumped at the floors (top half):
    # observed discretisation error <= 0.07 % (first three modes); tolerance 0.5 % (s.0).
    n, H, ecw, jm = 60, 150.0, 1.0e15, 1.0e7
    gj = (alpha / H) ** 2 * ecw
    s = stick(floors(n, H / n, jm), open_core(n, H / n, ecw=ecw, gj=gj))
    w = twist_omegas(s)
    scale = math.sqrt(ecw / (jm * H**4))
    assert np.sqrt(w / scale) == pytest.approx(PARALLEL[alpha], rel=0.005)
    g1sq, r2, r3 = PARALLEL_RATIOS[alpha]
    assert w[0] / scale == pytest.approx(g1sq, rel=0.005)
    assert (w[1] / w[0], w[2] / w[0]) == pytest.approx((r2, r3), rel=0.005)


def test_pure_warping_is_the_euler_bernoulli_cantilever():
    # GJ = 0: E C_w phi'''' = j_m w^2 phi with phi = phi' = 0 at the base and the bimoment and
    # its derivative zero at the top: the Euler-Bernoulli cantilever, beta_n L = 1.87510,
    # 4.69409, 7.85476 (Blevins, from memory; methods.md s.7 [DER]); frequency ratios
    # 1 : 6.2669 : 17.5475. Tolerance 0.5 % (eigenvalues of a continuum, s.0).
    n, H, ecw, jm = 60, 120.0, 3.0e14, 2.0e7
    s = stick(floors(n, H / n, jm), open_core(n, H / n, ecw=ecw, gj=0.0))
    w = twist_omegas(s)
    beta_l = np.array([1.87510, 4.69409, 7.85476])
    assert w == pytest.approx(beta_l**2 * math.sqrt(ecw / (jm * H**4)), rel=0.005)
    assert (w[1] / w[0], w[2] / w[0]) == pytest.approx((6.2669, 17.5475), rel=0.005)


@pytest.mark.parametrize("alpha", [0.0, 0.5, 3.0, 20.0])
def test_tip_torque_static_twist(alpha):
    # E C_w phi'''' - GJ phi'' = 0, phi(0) = phi'(0) = 0 (warping restrained at the base),
    # phi''(H) = 0 (no bimoment at the free top), GJ phi' - E C_w phi''' = T (tip torque).
    # With k = sqrt(GJ / E C_w): phi = A + B z + C cosh kz + D sinh kz; the torque gives
    # B = T/GJ, then D = -B/k, C = (B/k) tanh kH, A = -C, so
    # phi(H) = (T / GJ) (H - tanh(kH) / k)  (Trahair 1993, from memory; derived here);
    # GJ -> 0 gives the cantilever T H^3 / (3 E C_w). Cubic elements are exact for GJ = 0
    # (1e-9); with GJ the observed error at 40 storeys is below 0.01 %: tolerance 1e-3.
    n, H, ecw, torque = 40, 100.0, 2.0e14, 1.0e7
    gj = (alpha / H) ** 2 * ecw
    s = stick(floors(n, H / n, 1e7), open_core(n, H / n, ecw=ecw, gj=gj))
    kt = twist_block(stiffness_matrix(s), n)
    load = np.zeros(n)
    load[-1] = torque
    phi = np.linalg.solve(kt, load)
    if alpha == 0.0:
        assert phi[-1] == pytest.approx(torque * H**3 / (3 * ecw), rel=1e-9)
    else:
        k = math.sqrt(gj / ecw)
        assert phi[-1] == pytest.approx(torque / gj * (H - math.tanh(k * H) / k), rel=1e-3)
        # the St Venant rod alone would twist by T H / GJ: warping only stiffens
        assert phi[-1] < torque * H / gj


def test_eccentric_open_core_coupled_modes_closed_form():
    # Sway in y (EI) and twist (E C_w, GJ = 0) of one core whose shear centre lies e from the
    # mass centre: both are Euler-Bernoulli cantilevers with the same supports, so they share
    # the mode shapes and each beta_n gives the 2 x 2 problem per unit height
    #   det( (beta_n L)^4 / H^4 diag(EI, E C_w) - w^2 [[m, -m e], [-m e, m (r^2 + e^2)]] ) = 0
    # (uniform torsionally coupled building; e.g. Stafford Smith and Coull 1991, chapter on
    # three-dimensional behaviour, from memory). Roots beta_n L from methods.md s.7;
    # tolerance 0.5 % (eigenvalues of a continuum).
    n, H, e = 60, 150.0, 6.0
    m, r2 = 3.0e5, 120.0  # kg/m; polar radius of gyration squared about the mass centre (m^2)
    ei, ecw = 2.0e13, 2.0e13 * (r2 + e * e)  # E C_w chosen so that the uncoupled frequencies coincide
    h = H / n
    lv = tuple(Level(f"F{i}", f"i{i}", (i + 1) * h, h, m * h * (0.5 if i == n - 1 else 1.0), (0.0, 0.0),
                     m * h * r2 * (0.5 if i == n - 1 else 1.0)) for i in range(n))
    segs = tuple(Segment("core-1", "core", i, h, (e, 0.0), ei_xx_nm2=ei, ei_yy_nm2=1e17, ecw_nm4=ecw)
                 for i in range(n))
    s = stick(lv, segs, origin=(e, 0.0))  # origin at the shear centre: stiffness uncoupled there
    idx = [dof(i, c) for i in range(n) for c in ("y", "twist")]
    kk, mm = stiffness_matrix(s), mass_matrix(s)
    w = np.sqrt(eigh(kk[np.ix_(idx, idx)], mm[np.ix_(idx, idx)], eigvals_only=True, subset_by_index=[0, 3]))
    expect = []
    for bl in (1.87510, 4.69409):
        kd = np.diag([ei, ecw]) * bl**4 / H**4
        md = np.array([[m, -m * e], [-m * e, m * (r2 + e * e)]])  # mass centre at x = -e from the origin
        expect += list(np.sqrt(eigh(kd, md, eigvals_only=True)))
    assert w == pytest.approx(sorted(expect), rel=0.005)
    # the coupling is strong here: both first-pair modes differ from the uncoupled ones by > 10 %
    w_y, w_t = 1.87510**2 * math.sqrt(ei / (m * H**4)), 1.87510**2 * math.sqrt(ecw / (m * (r2 + e * e) * H**4))
    assert w[0] < 0.9 * min(w_y, w_t) and w[1] > 1.1 * max(w_y, w_t)


# ------------------------------------------------------------------ stacks and supports


def test_st_venant_rod_kept_when_no_warping():
    # ecw_nm4 = 0 keeps the St Venant rod: the twist block is the torsional shear building
    # (springs GJ/h), tridiagonal with 2 GJ/h on the diagonal (top GJ/h), exactly.
    n, h, gj = 6, 3.0, 5.0e11
    s = stick(floors(n, h, 1e7), open_core(n, h, ecw=0.0, gj=gj))
    kt = twist_block(stiffness_matrix(s), n)
    expect = (np.diag([2.0] * (n - 1) + [1.0]) - np.diag([1.0] * (n - 1), 1) - np.diag([1.0] * (n - 1), -1)) * gj / h
    assert kt == pytest.approx(expect, rel=1e-12)
    assert warping_runs(s.segments) == []


def test_warping_only_stiffens():
    # The condensed Vlasov beam minimises the integral of E C_w phi''^2 + GJ phi'^2 over smooth
    # (C1 cubic) twist shapes through the floor twists; the rods minimise GJ phi'^2 over all
    # shapes (piecewise linear): the difference of the twist blocks is positive semi-definite.
    n, h, gj = 12, 3.5, 4.0e11
    kr = twist_block(stiffness_matrix(stick(floors(n, h, 1e7), open_core(n, h, ecw=0.0, gj=gj))), n)
    for ecw in (1e9, 1e13, 1e16):
        kv = twist_block(stiffness_matrix(stick(floors(n, h, 1e7), open_core(n, h, ecw=ecw, gj=gj))), n)
        assert np.linalg.eigvalsh(kv - kr).min() >= -1e-9 * np.abs(kv).max()
        assert np.trace(kv) > np.trace(kr)


def test_open_above_closed_and_pinned_starts():
    # Closed (St Venant) storeys 0-3 below open (Vlasov) storeys 4-9 of the same core: the
    # warping beam starts on the closed part with free warping (reported); the matrix stays
    # symmetric positive definite and lies between "all rods" and "all Vlasov, restrained".
    n, h, gj, ecw = 10, 3.0, 3.0e11, 5.0e14
    lv = floors(n, h, 1e7)
    s = stick(lv, open_core(4, h, ecw=0.0, gj=gj) + open_core(n, h, ecw=ecw, gj=gj, first=4))
    runs = warping_runs(sorted(s.segments, key=lambda g: g.level_index))
    assert [[g.level_index for g in r] for r in runs] == [list(range(4, n))]
    assert any("warping" in t and "'F4'" in t and "free" in t for t in assembly_notes(s))
    kk = stiffness_matrix(s)
    assert np.array_equal(kk, kk.T) and is_positive_definite(kk)
    k_mixed = twist_block(kk, n)
    k_rods = twist_block(stiffness_matrix(stick(lv, open_core(n, h, ecw=0.0, gj=gj))), n)
    k_all = twist_block(stiffness_matrix(stick(lv, open_core(n, h, ecw=ecw, gj=gj))), n)
    tol = 1e-9 * np.abs(k_all).max()
    assert np.linalg.eigvalsh(k_mixed - k_rods).min() >= -tol
    assert np.linalg.eigvalsh(k_all - k_mixed).min() >= -tol
    assert np.trace(k_rods) < np.trace(k_mixed) < np.trace(k_all)
    # a core standing on a transfer at floor F4 (pinned: twist tied to that floor, warping
    # free) beside a full-height wall that restrains the floors below
    wall_ = tuple(Segment("wall-1", "wall", i, h, (8.0, 0.0), ei_xx_nm2=1e13, ei_yy_nm2=1e13, gj_nm2=1e10)
                  for i in range(n))
    s2 = stick(lv, open_core(n, h, ecw=ecw, gj=gj, first=4) + wall_)
    assert is_positive_definite(stiffness_matrix(s2))
    assert any("'core-1'" in t and "warping" in t for t in assembly_notes(s2))


def test_negative_or_non_finite_warping_is_an_input_error():
    for bad, msg in ((-1.0, "warping"), (math.inf, "non-finite")):
        seg = Segment("c", "core", 0, 3.0, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12, gj_nm2=1e9, ecw_nm4=bad)
        with pytest.raises(InputError, match=msg):
            stiffness_matrix(stick(floors(1, 3.0, 1e7), (seg,)))


# -------------------------------------------------------------- section -> segment -> stick


def test_cantilever_segment_takes_e_cw_with_the_torsion_factor():
    # stiffness.py: EC_w = E C_w f_t, the same cracked factor as GJ. Section: the methods.md
    # s.9 channel b = 4, h = 8, t = 0.3 (C_w = 89.600 m^6, e = 1.5 m behind the web).
    sec = section_props([WallSegment((4, 0), (0, 0), 0.3), WallSegment((0, 0), (0, 8), 0.3),
                         WallSegment((0, 8), (4, 8), 0.3)])
    assert isinstance(sec, SectionProps) and sec.cw_m6 == pytest.approx(89.600, rel=1e-4)
    e, g = 34e9, 34e9 / 2.4
    for ft in (1.0, 0.3):
        seg = cantilever_segment("core-1", "core", 0, 3.5, sec, e, g, StiffnessSettings(torsion_factor=ft))
        assert seg.ecw_nm4 == pytest.approx(e * 89.600 * ft, rel=1e-4)
        assert seg.gj_nm2 == pytest.approx(g * sec.j_m4 * ft, rel=1e-12)
        assert seg.centre_m == pytest.approx((-1.5, 4.0), abs=1e-9)


CONCRETE = Material("Concrete C40/50", "concrete")
T_WALL = 0.3


def _footprint(p, q):
    """Footprint of an axis-parallel wall of thickness T_WALL with flat ends."""
    (x0, y0), (x1, y1) = p, q
    half = T_WALL / 2
    if x0 == x1:
        return box(x0 - half, min(y0, y1), x0 + half, max(y0, y1))
    return box(min(x0, x1), y0 - half, max(x0, x1), y0 + half)


def c_core_tower(n, h=3.5):
    """An invented n-storey tower: 30 x 30 m plates 0.25 m thick, no columns, a channel core
    (methods.md s.9: b = 4, h = 8, t = 0.3 between centre lines) with its web on x = 15 and
    the flanges toward +x; the web runs through the corners, the flanges butt against it."""
    half = T_WALL / 2
    lines = [((15.0, 11.0 - half), (15.0, 19.0 + half)), ((15.0 + half, 11.0), (19.0, 11.0)),
             ((15.0 + half, 19.0), (19.0, 19.0))]
    storeys = []
    for k in range(n):
        z = h * k
        walls = []
        for i, (p, q) in enumerate(lines):
            fp = _footprint(p, q)
            walls.append(Wall(f"W{k}-{i}", f"W{k}-{i}", (p, q), math.dist(p, q), T_WALL, h, z, fp, (), True,
                              CONCRETE))
        slab = Slab(f"S{k}", f"S{k}", box(0, 0, 30, 30), 0.25, z, material=CONCRETE)
        storeys.append(Storey(f"ST{k}", f"L{k}", z, h, True, (slab,), tuple(walls), ()))
    roof = Slab("SR", "SR", box(0, 0, 30, 30), 0.25, h * n, "ROOF", material=CONCRETE)
    storeys.append(Storey(f"ST{n}", "Roof", h * n, h, True, (roof,)))
    return BuildingTakeoff("B1", "C-core tower", tuple(storeys))


def test_derived_stick_carries_the_channel_warping_stiffness():
    # From takeoff walls to Segment.ecw_nm4 = E C_w (methods.md s.9: 89.600 m^6; E of C40/50
    # from EN 1992-1-1 Table 3.1); warping makes the torsion stiffer than St Venant alone.
    n = 6
    d = derive_stick(c_core_tower(n), load_settings(None, CORE_SECTIONS))
    segs = [s for s in d.stick.segments if s.kind == "core"]
    assert len(segs) == n
    e = concrete_modulus_pa("C40/50")
    for s in segs:
        assert s.section.cw_m6 == pytest.approx(89.600, rel=1e-4)
        assert s.ecw_nm4 == pytest.approx(e * 89.600, rel=1e-4)
        assert s.centre_m == pytest.approx((15.0 - 1.5, 15.0), abs=1e-6)  # e = 1.5 m behind the web
    rods = replace(d.stick, segments=tuple(replace(s, ecw_nm4=0.0) for s in d.stick.segments))
    k_v, k_r = stiffness_matrix(d.stick), stiffness_matrix(rods)
    assert is_positive_definite(k_v)
    assert np.linalg.eigvalsh(k_v - k_r).min() >= -1e-9 * np.abs(k_v).max()
    assert np.trace(k_v) > np.trace(k_r)
