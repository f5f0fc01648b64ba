"""Mass and stiffness assembly of the stick model against closed forms.

Sources are named beside each check. Tolerances: 1e-9 (or 1e-6) where the discrete model
reproduces a closed form exactly, 0.5 % against eigenvalues of continua (the reference
sheet's suggestion for eigen results), otherwise as stated.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from reference_tables import PARALLEL_GAMMA
from hypothesis import given, settings, strategies as st
from scipy.linalg import eigh

from swayscreen.pipeline.assembly import (
    assembly_notes,
    beam_element,
    dof,
    floor_mass_matrix,
    geometric_stiffness,
    is_positive_definite,
    mass_matrix,
    planar_timoshenko_element,
    stiffness_matrix,
)
from swayscreen.pipeline.errors import InputError
from swayscreen.pipeline.stick import Level, Segment, StickModel


# ------------------------------------------------------------------------------ builders


def levels(n, h, m, *, top_half=False, centre=(0.0, 0.0), j=None):
    """n equal floors at h, 2h, ... (mass m each; top floor m/2 when top_half)."""
    out = []
    for i in range(n):
        mi = m * (0.5 if top_half and i == n - 1 else 1.0)
        out.append(Level(f"F{i + 1}", f"id{i}", (i + 1) * h, h, mi, centre, mi * (j if j is not None else 100.0)))
    return tuple(out)


def core(n, h, *, ei_x, ei_y=None, ei_xy=0.0, ga_x=0.0, ga_y=None, gj=1e12, centre=(0.0, 0.0), sid="core-1",
         first=0):
    """Uniform cantilever segments; ei_x resists sway in x (EI_yy), ei_y sway in y (EI_xx)."""
    ei_y = ei_x if ei_y is None else ei_y
    ga_y = ga_x if ga_y is None else ga_y
    return tuple(
        Segment(sid, "core", i, h, centre, ei_xx_nm2=ei_y, ei_yy_nm2=ei_x, ei_xy_nm2=ei_xy,
                ga_x_n=ga_x, ga_y_n=ga_y, gj_nm2=gj)
        for i in range(first, n)
    )


def frames(n, h, *, kx, ky, kt, centre=(0.0, 0.0)):
    return tuple(Segment("columns", "frame", i, h, centre, k_x_n_m=kx, k_y_n_m=ky, k_twist_nm_rad=kt)
                 for i in range(n))


def stick(lvls, segs, origin=(0.0, 0.0)):
    return StickModel("B1", "Test tower", 0.0, lvls, tuple(segs), origin_m=origin)


def sub(a, comp, n):
    idx = [dof(i, comp) for i in range(n)]
    return a[np.ix_(idx, idx)]


def planar_freqs_hz(s, comp, k=3):
    n = s.n_levels
    w2 = eigh(sub(stiffness_matrix(s), comp, n), sub(mass_matrix(s), comp, n), eigvals_only=True,
              subset_by_index=[0, k - 1])
    return np.sqrt(w2) / (2 * math.pi)


# ------------------------------------------------------------------------------- helpers


def test_dof_index_follows_stick_contract():
    # stick.py: floor i -> 3i x, 3i+1 y, 3i+2 twist
    assert [dof(0, "x"), dof(0, "y"), dof(0, "twist"), dof(4, "x"), dof(4, 2)] == [0, 1, 2, 12, 14]
    with pytest.raises(ValueError):
        dof(0, "z")
    with pytest.raises(ValueError):
        dof(-1, "x")


def test_floor_mass_matrix_parallel_axis():
    # rigid plate kinetic energy: J_o = J_c + m d^2 (parallel-axis theorem, any dynamics text)
    lv = Level("F1", "a", 3.0, 3.0, 2.0e6, (7.0, -3.0), 5.0e8)
    mm = floor_mass_matrix(lv, (1.0, 1.0))
    dx, dy = 6.0, -4.0
    assert mm[2, 2] == pytest.approx(5.0e8 + 2.0e6 * (dx**2 + dy**2), rel=1e-12)
    assert mm[0, 2] == pytest.approx(-2.0e6 * dy, rel=1e-12)
    assert mm[1, 2] == pytest.approx(2.0e6 * dx, rel=1e-12)
    # kinetic energy of a unit twist about the mass centre equals J_c/2 (translations cancel)
    q = np.array([dy, -dx, 1.0])  # origin moves so that the mass centre stays put
    assert q @ mm @ q == pytest.approx(5.0e8, rel=1e-12)


def test_planar_element_is_textbook_timoshenko():
    # Przemieniecki, Theory of Matrix Structural Analysis, 5.6: k11 = 12EI/(L^3 (1+phi)),
    # k22 = (4+phi) EI/(L (1+phi)), k24 = (2-phi) EI/(L (1+phi)), phi = 12EI/(GA L^2)
    ei, ga, L = 3.0e12, 2.0e11, 4.0
    phi = 12 * ei / (ga * L**2)
    k = planar_timoshenko_element(ei, ga, L)
    assert k[0, 0] == pytest.approx(12 * ei / (L**3 * (1 + phi)), rel=1e-12)
    assert k[1, 1] == pytest.approx((4 + phi) * ei / (L * (1 + phi)), rel=1e-12)
    assert k[1, 3] == pytest.approx((2 - phi) * ei / (L * (1 + phi)), rel=1e-12)
    # the two-plane element built from the cantilever flexibility reduces to it in each plane
    k8 = beam_element(5.0e12, ei, 0.0, ga, 7.0e10, L)
    x_plane = [0, 2, 4, 6]
    assert np.allclose(k8[np.ix_(x_plane, x_plane)], k, rtol=1e-10, atol=1e-6 * abs(k).max())


@pytest.mark.parametrize("n", [1, 7, 30])
def test_cantilever_tip_deflection_bending_plus_shear(n):
    # Timoshenko & Gere (Mechanics of Materials): tip deflection of a cantilever under a
    # tip load P: P L^3 / (3 EI) + P L / (G A_s); exact for the element, so 1e-6.
    H, ei, ga, p = 90.0, 4.0e12, 1.5e11, 2.0e6
    s = stick(levels(n, H / n, 1e5), core(n, H / n, ei_x=ei, ei_y=2.5 * ei, ga_x=ga, ga_y=0.5 * ga))
    kk = stiffness_matrix(s)
    f = np.zeros(3 * n)
    f[dof(n - 1, "x")] = p
    f[dof(n - 1, "y")] = p
    u = np.linalg.solve(kk, f)
    assert u[dof(n - 1, "x")] == pytest.approx(p * H**3 / (3 * ei) + p * H / ga, rel=1e-6)
    assert u[dof(n - 1, "y")] == pytest.approx(p * H**3 / (3 * 2.5 * ei) + p * H / (0.5 * ga), rel=1e-6)
    # mid-height under the same load: P a^2 (3L - a)/(6EI) + P a/GA (Timoshenko & Gere)
    if n % 2 == 0 or n == 1:
        return
    a = (n // 2 + 1) * H / n
    i = n // 2
    assert u[dof(i, "x")] == pytest.approx(p * a**2 * (3 * H - a) / (6 * ei) + p * a / ga, rel=1e-6)


def test_unsymmetric_bending_tip_deflection():
    # Unsymmetric bending (e.g. Boresi & Schmidt, Advanced Mechanics of Materials, ch. 7):
    # curvature k = D^-1 M with D = E [[Iyy, Ixy], [Ixy, Ixx]], so the tip deflection under a
    # tip force P is L^3/3 D^-1 P (+ L P / GA with equal shear stiffness).
    H, n, ga = 60.0, 12, 9.0e10
    ei_yy, ei_xx, ei_xy = 4.0e12, 1.0e12, 1.2e12
    s = stick(levels(n, H / n, 1e5), core(n, H / n, ei_x=ei_yy, ei_y=ei_xx, ei_xy=ei_xy, ga_x=ga))
    f = np.zeros(3 * n)
    f[dof(n - 1, "x")] = 1.0e6
    u = np.linalg.solve(stiffness_matrix(s), f)
    dinv = np.linalg.inv(np.array([[ei_yy, ei_xy], [ei_xy, ei_xx]]))
    expect = H**3 / 3 * dinv @ [1.0e6, 0.0] + H / ga * np.array([1.0e6, 0.0])
    assert u[dof(n - 1, "x")] == pytest.approx(expect[0], rel=1e-6)
    assert u[dof(n - 1, "y")] == pytest.approx(expect[1], rel=1e-6)


def _condensed_planar_stack(ei, ga, h, n):
    """Two-plane route for the same stack, built independently from the textbook element."""
    size = 2 * (n + 1)
    k = np.zeros((size, size))
    for e in range(n):
        idx = [2 * e, 2 * e + 1, 2 * e + 2, 2 * e + 3]
        k[np.ix_(idx, idx)] += planar_timoshenko_element(ei, ga, h)
    free = list(range(2, size))
    k = k[np.ix_(free, free)]
    t = list(range(0, len(free), 2))
    r = list(range(1, len(free), 2))
    return k[np.ix_(t, t)] - k[np.ix_(t, r)] @ np.linalg.solve(k[np.ix_(r, r)], k[np.ix_(r, t)])


def test_product_of_inertia_matches_principal_axes_route():
    # With equal shear stiffness in x and y the section can be rotated to its principal
    # axes (Mohr's circle), two planar stacks built and rotated back; the assembled matrix
    # must agree. Principal moments: eigenvalues of [[EI_yy, EI_xy], [EI_xy, EI_xx]].
    n, h, ga = 8, 3.5, 6.0e10
    ei_yy, ei_xx, ei_xy = 3.0e12, 1.0e12, 0.8e12
    s = stick(levels(n, h, 1e5), core(n, h, ei_x=ei_yy, ei_y=ei_xx, ei_xy=ei_xy, ga_x=ga, gj=0.0))
    kk = stiffness_matrix(s)
    vals, vecs = np.linalg.eigh(np.array([[ei_yy, ei_xy], [ei_xy, ei_xx]]))
    expect = np.zeros((2 * n, 2 * n))
    for lam, v in zip(vals, vecs.T):
        kp = _condensed_planar_stack(lam, ga, h, n)
        rot = np.kron(np.eye(n), v.reshape(1, 2))  # principal coordinate = v . (ux, uy)
        expect += rot.T @ kp @ rot
    trans = [dof(i, c) for i in range(n) for c in ("x", "y")]
    got = kk[np.ix_(trans, trans)]
    assert np.allclose(got, expect, rtol=1e-9, atol=1e-9 * abs(expect).max())


# --------------------------------------------------------------------- cantilever modes

BLEVINS_F1 = 0.55959  # Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1 (lambda^2 / 2 pi)
BLEVINS_RATIOS = (6.2669, 17.5475)  # same table: (4.69409/1.87510)^2, (7.85476/1.87510)^2


def test_euler_bernoulli_cantilever_converges():
    # Distributed mass lumped by the trapezoid rule (top floor half a storey); stiffness exact.
    E, I, m, H = 34e9, 507.917, 320e3, 150.0  # reference sheet section 7 RC box core
    f_exact = BLEVINS_F1 * math.sqrt(E * I / (m * H**4))
    errors = []
    for n in (10, 40, 160):
        s = stick(levels(n, H / n, m * H / n, top_half=True), core(n, H / n, ei_x=E * I, ei_y=3 * E * I))
        f = planar_freqs_hz(s, "x")
        errors.append(abs(f[0] / f_exact - 1))
    assert errors[0] > errors[1] > errors[2]
    assert errors[2] < 0.005
    assert f[1] / f[0] == pytest.approx(BLEVINS_RATIOS[0], rel=0.005)
    assert f[2] / f[0] == pytest.approx(BLEVINS_RATIOS[1], rel=0.005)
    # reference sheet section 7: f_1 = 0.1827 Hz for this core
    assert f[0] == pytest.approx(0.1827, rel=0.005)


def test_timoshenko_box_core_frequencies():
    # Reference sheet section 7 [DER]: 12 x 12 m box, t = 0.5 m, I = 507.917 m^4, E = 34 GPa,
    # G = E/2.4, A_s = 12 m^2 (GA_s = 1.7e11 N), m = 320 t/m, H = 150 m:
    # series bending + shear f_1, f_2, f_3 = 0.1808, 1.0692, 2.7618 Hz.
    E, I, m, H, n = 34e9, 507.917, 320e3, 150.0, 150
    s = stick(levels(n, H / n, m * H / n, top_half=True),
              core(n, H / n, ei_x=E * I, ei_y=3 * E * I, ga_x=E / 2.4 * 12.0))
    f = planar_freqs_hz(s, "x")
    assert f == pytest.approx([0.1808, 1.0692, 2.7618], rel=0.005)
    # shear flexibility lowers every frequency against bending alone (0.1827, 1.1450, 3.2060)
    assert np.all(f < np.array([0.1827, 1.1450, 3.2060]))


# --------------------------------------------------------------------------- shear building


def shear_closed_form(n, k, m, j):
    # uniform shear building, fixed base (reference sheet section 7; e.g. Chopra, Dynamics of
    # Structures, uniform shear frame): w_j = 2 sqrt(k/m) sin((2j-1) pi / (2(2N+1)))
    return 2 * math.sqrt(k / m) * math.sin((2 * j - 1) * math.pi / (2 * (2 * n + 1)))


@pytest.mark.parametrize("n,k,m", [(10, 1.0, 1.0), (40, 2.0e9, 1.7e6), (7, 3.0e8, 9.0e5)])
def test_uniform_shear_building_closed_form(n, k, m):
    s = stick(levels(n, 3.5, m, j=50.0), frames(n, 3.5, kx=k, ky=2 * k, kt=100 * k))
    kk, mm = stiffness_matrix(s), mass_matrix(s)
    # centres coincide: x, y and twist are exactly uncoupled
    assert kk[dof(0, "x"), dof(0, "y")] == 0.0 and mm[dof(0, "x"), dof(0, "twist")] == 0.0
    w = np.sqrt(eigh(sub(kk, "x", n), sub(mm, "x", n), eigvals_only=True))
    expect = [shear_closed_form(n, k, m, j) for j in range(1, n + 1)]
    assert np.allclose(w, expect, rtol=1e-9, atol=0)


def test_shear_building_reference_values():
    # reference sheet section 7: N = 10, k = m = 1: 0.149460, 0.445042, 0.730682, 1.000000;
    # N = 40, k = 2e9 N/m, m = 1.7e6 kg: f_1 = 0.2117 Hz
    s = stick(levels(10, 3.0, 1.0), frames(10, 3.0, kx=1.0, ky=1.0, kt=1e4))
    w = np.sqrt(eigh(sub(stiffness_matrix(s), "x", 10), sub(mass_matrix(s), "x", 10), eigvals_only=True))
    assert w[:4] == pytest.approx([0.149460, 0.445042, 0.730682, 1.000000], abs=2e-6)
    s = stick(levels(40, 3.0, 1.7e6), frames(40, 3.0, kx=2e9, ky=2e9, kt=1e12))
    assert planar_freqs_hz(s, "x", 1)[0] == pytest.approx(0.2117, abs=5e-5)


# Miranda & Taghavi (2005) coupled flexure-shear beam; reference sheet section 7 [DER]
# gamma_n for alpha = H sqrt(GA/EI); omega_n = gamma_n^2 sqrt(EI/(m H^4)).
WALL_FRAME = {a: g for a, g in PARALLEL_GAMMA.items() if a > 0}


@pytest.mark.parametrize("alpha", sorted(WALL_FRAME))
def test_wall_frame_parallel_eigenvalues(alpha):
    n, H, ei, m = 120, 120.0, 1.0e12, 2.0e4
    h = H / n
    ga = (alpha / H) ** 2 * ei
    segs = core(n, h, ei_x=ei, ei_y=5 * ei, sid="wall-1") + frames(n, h, kx=ga / h, ky=ga / h, kt=1e9)
    s = stick(levels(n, h, m * h, top_half=True), segs)
    w = 2 * math.pi * planar_freqs_hz(s, "x")
    gamma = np.sqrt(w * math.sqrt(m * H**4 / ei))
    assert gamma == pytest.approx(WALL_FRAME[alpha], rel=0.005)


def test_uniform_torsion_of_closed_core():
    # Reference sheet section 7 [DER]: St Venant torsion, GJ = 1.399e12 N m^2, j_m = 8.533e7 kg m,
    # H = 150 m: w_n = (2n-1) pi/(2H) sqrt(GJ/j_m), f_t1 = 0.2134 Hz.
    # The floors form a torsional shear building (springs GJ/h, inertias j_m h), so its modes
    # follow the closed form of the shear building exactly; against the continuum the ratio is
    # (2N/(2N+1)) sin(a)/a, a = (2n-1) pi / (2(2N+1)), i.e. error <= 1/(2N+1) + a^2/6.
    gj, jm, H, n = 1.399e12, 320e3 * (40**2 + 40**2) / 12, 150.0, 100
    h = H / n
    lv = tuple(Level(f"F{i}", f"i{i}", (i + 1) * h, h, 1.0e5, (0.0, 0.0), jm * h) for i in range(n))
    segs = core(n, h, ei_x=1e14, gj=gj)
    s = stick(lv, segs)
    w2 = eigh(sub(stiffness_matrix(s), "twist", n), sub(mass_matrix(s), "twist", n), eigvals_only=True,
              subset_by_index=[0, 2])
    w = np.sqrt(w2)
    for j in (1, 2, 3):
        discrete = shear_closed_form(n, gj / h, jm * h, j)
        assert w[j - 1] == pytest.approx(discrete, rel=1e-9)
        cont = (2 * j - 1) * math.pi / (2 * H) * math.sqrt(gj / jm)
        a = (2 * j - 1) * math.pi / (2 * (2 * n + 1))
        assert abs(w[j - 1] / cont - 1) <= 1 / (2 * n + 1) + a**2 / 6
    assert math.pi / (2 * H) * math.sqrt(gj / jm) / (2 * math.pi) == pytest.approx(0.2134, abs=5e-5)


# ------------------------------------------------------------------ structure and support


def eccentric_model():
    n, h = 12, 3.6
    lv = tuple(Level(f"F{i}", f"i{i}", (i + 1) * h, h, 9e5 + 1e4 * i, (2.0 + 0.1 * i, -1.0), 9e5 * 150.0)
               for i in range(n))
    segs = core(n, h, ei_x=4e12, ei_y=2e12, ei_xy=5e11, ga_x=8e10, ga_y=5e10, gj=3e11, centre=(-6.0, 3.0))
    segs += core(n, h, ei_x=5e11, ei_y=3e12, ga_x=2e10, ga_y=6e10, gj=1e9, centre=(12.0, -4.0), sid="wall-a")
    segs += frames(n, h, kx=4e8, ky=3e8, kt=2e11, centre=(1.0, 0.5))
    return stick(lv, segs, origin=(3.0, 2.0))


def test_matrices_symmetric_positive_definite():
    s = eccentric_model()
    kk, mm = stiffness_matrix(s), mass_matrix(s)
    assert np.array_equal(kk, kk.T) and np.array_equal(mm, mm.T)
    assert is_positive_definite(kk) and is_positive_definite(mm)
    assert np.linalg.eigvalsh(kk).min() > 0 and np.linalg.eigvalsh(mm).min() > 0


@settings(max_examples=40, deadline=None)
@given(
    n=st.integers(1, 8),
    ex=st.floats(-20, 20), ey=st.floats(-20, 20), ox=st.floats(-50, 50), oy=st.floats(-50, 50),
    ratio=st.floats(0.05, 20), coupling=st.floats(-0.9, 0.9), shear=st.floats(1e-3, 1e3),
    start=st.integers(0, 3),
)
def test_any_sensible_model_is_spd(n, ex, ey, ox, oy, ratio, coupling, shear, start):
    # two offset cantilevers fixed at the base keep every floor restrained in x, y and twist;
    # a third system starting higher must not break positive definiteness
    h, ei = 3.3, 2e12
    ei2 = ei * ratio
    exy = coupling * math.sqrt(ei * ei2)
    lv = levels(n, h, 8e5, centre=(ex, ey), j=120.0)
    segs = core(n, h, ei_x=ei, ei_y=ei2, ei_xy=exy, ga_x=ei * shear / h**2, gj=1e10, centre=(ex + 5, ey))
    segs += core(n, h, ei_x=ei2, ei_y=ei, ga_x=ei / h**2, gj=0.0, centre=(ex - 5, ey + 2), sid="c2")
    segs += core(n, h, ei_x=ei, ga_x=ei / h**2, centre=(ex, ey - 7), sid="c3", first=min(start, n - 1))
    s = stick(lv, segs, origin=(ox, oy))
    kk, mm = stiffness_matrix(s), mass_matrix(s)
    assert np.allclose(kk, kk.T, rtol=0, atol=1e-12 * abs(kk).max())
    assert is_positive_definite(kk) and is_positive_definite(mm)


def test_system_starting_above_base_is_pinned_and_reported():
    # A single storey of wall pinned at its foot and free at its head is a mechanism for
    # sway (rigid-body rotation about the pin): it adds no lateral stiffness.
    n, h = 5, 3.0
    base = core(n, h, ei_x=1e12, ga_x=1e11)
    upper = (Segment("wall-t", "wall", 3, h, (0.0, 0.0), ei_xx_nm2=5e12, ei_yy_nm2=5e12, ga_x_n=1e11,
                     ga_y_n=1e11),)
    s0 = stick(levels(n, h, 1e5), base)
    s1 = stick(levels(n, h, 1e5), base + upper)
    assert np.allclose(stiffness_matrix(s1), stiffness_matrix(s0), rtol=0, atol=1e-9 * abs(stiffness_matrix(s0)).max())
    notes = assembly_notes(s1)
    assert any("wall-t" in t and "pinned" in t for t in notes)
    assert any("wall-t" in t and "below the top" in t for t in notes)


def test_system_stopping_below_top_is_the_shorter_cantilever():
    # A cantilever ending at floor 3 of 6: tip load at its top floor gives P L^3/3EI + PL/GA
    # (Timoshenko & Gere); floors above are carried by a frame only.
    n, h, ei, ga, p = 6, 4.0, 2e12, 1e11, 1e6
    segs = core(4, h, ei_x=ei, ga_x=ga) + frames(n, h, kx=1e7, ky=1e7, kt=1e9)
    s = stick(levels(n, h, 1e5), segs)
    kk = stiffness_matrix(s)
    assert kk[dof(5, "x"), dof(3, "x")] == 0.0  # frame only links adjacent floors
    ref = stiffness_matrix(stick(levels(4, h, 1e5), core(4, h, ei_x=ei, ga_x=ga)))
    frame_part = stiffness_matrix(stick(levels(n, h, 1e5), frames(n, h, kx=1e7, ky=1e7, kt=1e9)))
    cant = (kk - frame_part)[:12, :12]
    assert np.allclose(cant, ref, rtol=1e-9, atol=1e-9 * abs(ref).max())
    f = np.zeros(12)
    f[dof(3, "x")] = p
    L = 4 * h
    assert np.linalg.solve(ref, f)[dof(3, "x")] == pytest.approx(p * L**3 / (3 * ei) + p * L / ga, rel=1e-6)


def test_gap_in_system_restarts_pinned():
    # Segments 0-2 fixed at the base, none at 3, then 4-5 pinned at floor index 3. The upper
    # run (translations held at floors 3, 4, 5, rotations free) is a simply supported beam of
    # span 2h loaded at mid-span: k = 48 EI / (2h)^3 on u4 - (u3 + u5)/2 (Timoshenko & Gere).
    n, h, ei = 6, 3.0, 1e12
    segs = core(3, h, ei_x=ei, ei_y=2 * ei) + core(6, h, ei_x=ei, ei_y=2 * ei, first=4)
    s = stick(levels(n, h, 1e5), segs)
    kk = stiffness_matrix(s)
    assert kk[dof(3, "x"), dof(2, "x")] == 0.0  # nothing spans the gap storey
    v = np.array([-0.5, 1.0, -0.5])
    idx = [dof(i, "x") for i in (3, 4, 5)]
    expect = 48 * ei / (2 * h) ** 3 * np.outer(v, v)
    assert np.allclose(kk[np.ix_(idx, idx)], expect, rtol=1e-9, atol=1e-9 * abs(expect).max())
    notes = assembly_notes(s)
    assert any("starts at floor 'F4'" in t and "pinned" in t for t in notes)


def test_frame_springs_at_offset_centre():
    # storey spring k_x at (cx, cy): a unit twist of floor 0 about the origin moves the spring
    # point by -(cy - oy) in x, so K_theta,theta = k_x (cy-oy)^2 + k_y (cx-ox)^2 + k_t (statics).
    kx, ky, kt = 3e8, 5e8, 7e10
    s = stick(levels(1, 3.0, 1e5), frames(1, 3.0, kx=kx, ky=ky, kt=kt, centre=(4.0, -2.0)), origin=(1.0, 1.0))
    kk = stiffness_matrix(s)
    assert kk[2, 2] == pytest.approx(kx * 9.0 + ky * 9.0 + kt, rel=1e-12)
    assert kk[0, 2] == pytest.approx(-kx * -3.0, rel=1e-12)
    assert kk[1, 2] == pytest.approx(ky * 3.0, rel=1e-12)


# -------------------------------------------------------------------------------- P-Delta


def test_p_delta_single_storey_closed_form():
    # One storey, weight W = m g on springs k: k_eff = k (1 - theta), theta = W/(k h)
    # (EN 1998-1 4.4.2.2(2) stability coefficient; amplification 1/(1-theta), 4.4.2.2(3)).
    m, h, k, g = 2.0e6, 4.0, 3.0e7, 9.81
    s = stick(levels(1, h, m, j=80.0), frames(1, h, kx=k, ky=2 * k, kt=1e12))
    theta = m * g / (k * h)
    kp = stiffness_matrix(s, p_delta=True, g=g)
    assert kp[0, 0] == pytest.approx(k * (1 - theta), rel=1e-12)
    w0 = math.sqrt(k / m)
    w = math.sqrt(kp[0, 0] / m)
    assert w0 / w == pytest.approx(1 / math.sqrt(1 - theta), rel=1e-12)


def test_p_delta_storey_drift_amplification_shear_building():
    # Shear building: storey drift with P-Delta = drift without / (1 - theta_i),
    # theta_i = P_i d_i / (V_i h_i) = P_i / (k_i h_i) (ASCE 7 12.8.7 / EN 1998-1 4.4.2.2).
    n, h, m, g = 8, 3.5, 1.0e6, 9.81
    ks = [4e8 - 3e7 * i for i in range(n)]
    segs = tuple(Segment("columns", "frame", i, h, (0.0, 0.0), k_x_n_m=ks[i], k_y_n_m=ks[i], k_twist_nm_rad=1e12)
                 for i in range(n))
    s = stick(levels(n, h, m, j=60.0), segs)
    f = np.zeros(3 * n)
    f[0::3] = np.linspace(1e5, 4e5, n)
    u0 = np.linalg.solve(stiffness_matrix(s), f)[0::3]
    u1 = np.linalg.solve(stiffness_matrix(s, p_delta=True, g=g), f)[0::3]
    d0, d1 = np.diff(u0, prepend=0.0), np.diff(u1, prepend=0.0)
    for i in range(n):
        theta = m * g * (n - i) / (ks[i] * h)
        assert d1[i] == pytest.approx(d0[i] / (1 - theta), rel=1e-9)


def test_p_delta_twist_term_equals_corner_columns():
    # First principles: four columns at (+-a, +-b) each carrying W/4 and drifting by the
    # twist: K_G,theta = -sum P_k r_k^2 / h = -(W/h)(a^2 + b^2). A floor whose mass sits at the
    # four corners has J_c = m (a^2 + b^2): the mass-based formula must give the same.
    a, b, m, h, g = 12.0, 7.0, 1.5e6, 3.0, 9.81
    lv = (Level("F1", "i", h, h, m, (0.0, 0.0), m * (a * a + b * b)),)
    s = stick(lv, frames(1, h, kx=1e9, ky=1e9, kt=1e12))
    kgeo = geometric_stiffness(s, g)
    columns = [(a, b), (-a, b), (a, -b), (-a, -b)]
    expect = -sum(m * g / 4 * (x * x + y * y) for x, y in columns) / h
    assert kgeo[2, 2] == pytest.approx(expect, rel=1e-12)
    assert kgeo[0, 0] == pytest.approx(-m * g / h, rel=1e-12)
    # negative semi-definite, and invariant to the choice of origin for the drift energy
    assert np.linalg.eigvalsh(kgeo).max() <= 1e-9 * abs(kgeo).max()


# --------------------------------------------------------------------------------- errors


@pytest.mark.parametrize(
    "seg,msg",
    [
        (Segment("c", "core", 0, 3.0, (0, 0), ei_xx_nm2=-1.0, ei_yy_nm2=1e12), "positive definite"),
        (Segment("c", "core", 0, 3.0, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12, ei_xy_nm2=2e12), "positive definite"),
        (Segment("c", "pier", 0, 3.0, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12), "unknown kind"),
        (Segment("c", "core", 5, 3.0, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12), "level index"),
        (Segment("c", "core", 0, 0.0, (0, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12), "length"),
        (Segment("f", "frame", 0, 3.0, (0, 0), k_x_n_m=-5.0), "negative"),
        (Segment("c", "core", 0, 3.0, (math.nan, 0), ei_xx_nm2=1e12, ei_yy_nm2=1e12), "non-finite"),
    ],
)
def test_bad_segments_raise_input_error(seg, msg):
    s = stick(levels(2, 3.0, 1e5), (seg,))
    with pytest.raises(InputError, match=msg):
        stiffness_matrix(s)


def test_bad_levels_and_duplicates_raise_input_error():
    with pytest.raises(InputError, match="mass"):
        mass_matrix(stick((Level("F1", "i", 3.0, 3.0, 0.0, (0, 0), 1.0),), ()))
    with pytest.raises(InputError, match="polar"):
        mass_matrix(stick((Level("F1", "i", 3.0, 3.0, 1.0, (0, 0), 0.0),), ()))
    dup = core(2, 3.0, ei_x=1e12) + core(2, 3.0, ei_x=1e12, first=1)
    with pytest.raises(InputError, match="two segments"):
        stiffness_matrix(stick(levels(2, 3.0, 1e5), dup))
    with pytest.raises(InputError, match="no floors"):
        mass_matrix(stick((), ()))
