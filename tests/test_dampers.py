"""Damper mathematics against closed forms, published tuning rules and independent integration.

Sources: Den Hartog (1956) and Warburton (1982) optimum-tuning closed forms, and the
check tables of /work/shared/reference/methods.md section 8 ([DER] values computed
independently of this code); Tait (2008) / Housner (1963) sloshing models (from memory,
tables in methods.md section 8); Sakai et al. (1989) liquid column (from memory).
Independent oracles computed here: direct frequency-domain integration of the 2DOF
frequency response functions (numpy grid / scipy.integrate.quad), not the Lyapunov
solution the module uses.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from shapely.geometry import box

from swayscreen.plugins import dampers as d

# --------------------------------------------------------------------------------------------
# helpers: the 2DOF receptance written out by hand (primary mass 1, omega_1 = 1)
# --------------------------------------------------------------------------------------------


def _receptances(w, mu, f, zd, zs):
    """Primary and damper displacement per unit force on the primary (complex)."""
    k2, c2 = mu * f * f, 2.0 * zd * f * mu
    a = 1.0 + k2 - w * w + 1j * w * (2.0 * zs + c2)
    b = -(k2 + 1j * w * c2)
    dd = k2 - mu * w * w + 1j * w * c2
    det = a * dd - b * b
    return dd / det, -b / det


def _sdof(w, z):
    return 1.0 / (1.0 - w * w + 2j * z * w)


# --------------------------------------------------------------------------------------------
# tuning rules: methods.md section 8 table (values rounded to 5 decimals -> abs tol 6e-6)
# --------------------------------------------------------------------------------------------

# mu, DH f, DH zeta_d, W f, W zeta_d, zeta_eq random, zeta_eq harmonic  (methods.md section 8)
TABLE_8 = [
    (0.005, 0.99502, 0.04298, 0.99627, 0.03529, 0.01769, 0.02497),
    (0.01, 0.99010, 0.06033, 0.99257, 0.04981, 0.02503, 0.03527),
    (0.02, 0.98039, 0.08407, 0.98528, 0.07019, 0.03544, 0.04975),
    (0.03, 0.97087, 0.10147, 0.97813, 0.08565, 0.04346, 0.06078),
    (0.05, 0.95238, 0.12727, 0.96421, 0.10977, 0.05624, 0.07809),
]
ROUND5 = 6e-6  # half a unit in the 5th decimal of the table, plus float slack


@pytest.mark.parametrize("mu,dh_f,dh_z,w_f,w_z,zeq_r,zeq_h", TABLE_8)
def test_tuning_rules_match_table(mu, dh_f, dh_z, w_f, w_z, zeq_r, zeq_h):
    # Den Hartog (1956), Warburton (1982); methods.md section 8 table
    dh, w = d.den_hartog_tuning(mu), d.warburton_tuning(mu)
    assert dh.frequency_ratio == pytest.approx(dh_f, abs=ROUND5)
    assert dh.damping_ratio == pytest.approx(dh_z, abs=ROUND5)
    assert w.frequency_ratio == pytest.approx(w_f, abs=ROUND5)
    assert w.damping_ratio == pytest.approx(w_z, abs=ROUND5)
    # harmonic equivalent damping 1/2 sqrt(mu/(2+mu)) (methods.md section 8 [DER])
    assert d.den_hartog_equivalent_damping(mu) == pytest.approx(zeq_h, abs=ROUND5)


@pytest.mark.parametrize("mu,dh_f,dh_z,w_f,w_z,zeq_r,zeq_h", TABLE_8)
def test_equivalent_damping_from_2dof_displacement_variance(mu, dh_f, dh_z, w_f, w_z, zeq_r, zeq_h):
    # methods.md section 8: zeta_eq (random) = equal displacement variance, undamped primary,
    # Warburton tuning; closed form 1/4 sqrt(mu(1+mu)/(1+3mu/4))
    z2dof = d.equivalent_damping(mu, 0.0, match="displacement")
    assert z2dof == pytest.approx(zeq_r, abs=ROUND5)
    assert z2dof == pytest.approx(d.warburton_equivalent_damping(mu), rel=1e-9)


@pytest.mark.parametrize("mu", [0.002, 0.005, 0.01, 0.02, 0.05])
def test_sqrt_mu_over_four_shortcut(mu):
    # methods.md section 8: zeta_eq ~ sqrt(mu)/4 for small mu (error grows ~ mu/8: 0.6 % at 0.05)
    exact = d.equivalent_damping(mu, 0.0, match="displacement")
    assert d.sqrt_mu_estimate(mu) == pytest.approx(exact, rel=0.01)
    assert d.sqrt_mu_estimate(mu) < exact


@pytest.mark.parametrize("mu", [0.01, 0.02, 0.05])
def test_den_hartog_peaks_equal_closed_form(mu):
    # methods.md section 8 [DER]: with Den Hartog tuning both FRF peaks ~ sqrt(1 + 2/mu) within 0.6 %
    t = d.den_hartog_tuning(mu)
    w = np.linspace(0.7, 1.3, 200001)
    h1, _ = _receptances(w, mu, t.frequency_ratio, t.damping_ratio, 0.0)
    amp = np.abs(h1)
    # the two peaks lie either side of the valley near the damper frequency
    mid = int(np.argmin(np.abs(w - t.frequency_ratio)))
    left, right = amp[: mid].max(), amp[mid:].max()
    expected = math.sqrt(1.0 + 2.0 / mu)
    assert left == pytest.approx(expected, rel=0.01)
    assert right == pytest.approx(expected, rel=0.01)


def test_numeric_optimum_reproduces_warburton():
    # methods.md section 8 [DER]: the direct numeric optimum of the displacement variance is
    # identical to Warburton's closed form to 5 digits (undamped primary)
    for mu in (0.01, 0.03):
        num = d.optimal_tuning_numeric(mu, 0.0, match="displacement")
        w = d.warburton_tuning(mu)
        assert num.frequency_ratio == pytest.approx(w.frequency_ratio, abs=1e-5)
        assert num.damping_ratio == pytest.approx(w.damping_ratio, abs=1e-5)


def test_base_excitation_rules_are_the_quoted_closed_forms():
    # Warburton (1982) base-excitation variants as quoted in methods.md section 8 [MEM, not verified]:
    # check the limits that any such rule must have: f -> 1 and zeta_d -> 0 as mu -> 0, and
    # both base rules share f_opt = sqrt(1 - mu/2)/(1+mu)
    mu = 0.02
    h, r = d.warburton_base_harmonic_tuning(mu), d.warburton_base_random_tuning(mu)
    assert h.frequency_ratio == pytest.approx(math.sqrt(0.99) / 1.02, rel=1e-12)
    assert r.frequency_ratio == h.frequency_ratio
    assert h.damping_ratio == pytest.approx(math.sqrt(0.06 / (8 * 1.02 * 0.99)), rel=1e-12)
    assert r.damping_ratio == pytest.approx(math.sqrt(0.02 * 0.995 / (4 * 1.02 * 0.99)), rel=1e-12)
    tiny = d.warburton_base_random_tuning(1e-8)
    assert tiny.frequency_ratio == pytest.approx(1.0, abs=1e-7)
    assert tiny.damping_ratio < 1e-4
    assert "not verified" in h.rule


# --------------------------------------------------------------------------------------------
# damped primary: methods.md section 8 ("equal acceleration variance")
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "mu,zs,ztot",
    [(0.01, 0.01, 0.03266), (0.01, 0.015, 0.03665), (0.02, 0.01, 0.04288), (0.02, 0.015, 0.04678)],
)
def test_total_damping_with_structural_damping(mu, zs, ztot):
    # methods.md section 8 [DER], Warburton tuning, equal acceleration variance. Convention here:
    # absolute acceleration under force white over a band much wider than the modes, compared
    # on the excess over the common force feedthrough. Table rounded to 5 decimals.
    assert d.equivalent_damping(mu, zs, match="acceleration") == pytest.approx(ztot, abs=ROUND5)
    # displacement matching differs by about 1e-4 .. 3e-4 (stated convention matters)
    zdisp = d.equivalent_damping(mu, zs, match="displacement")
    assert abs(zdisp - ztot) < 1e-3
    assert zdisp > ztot
    # damping does not add: total < zeta_s + zeta_eq(undamped)
    assert ztot < zs + d.warburton_equivalent_damping(mu)


def test_acceleration_excess_equals_frequency_domain_integral():
    # Independent check of the Lyapunov + residue term: pi J = integral_0^inf (|omega^2 H|^2 - 1) d omega
    # (the "-1" removes the force feedthrough on a unit primary mass), by scipy quad
    mu, zs = 0.02, 0.01
    t = d.warburton_tuning(mu)
    resp = d.two_dof_response(mu, t.frequency_ratio, t.damping_ratio, zs)

    def excess(w):
        h1, _ = _receptances(w, mu, t.frequency_ratio, t.damping_ratio, zs)
        return abs(w * w * h1) ** 2 - 1.0

    pts = [0.9, 0.95, 1.0, 1.05, 1.1]
    body = quad(excess, 0.0, 2.0, points=pts, limit=400, epsabs=1e-10)[0]
    tail = quad(excess, 2.0, np.inf, limit=400)[0]
    assert (body + tail) / math.pi == pytest.approx(resp.primary_accel_excess, rel=1e-6)
    # and the SDOF excess 1/(4 zeta) - zeta (same integral, closed form)
    z = 0.02
    sd = quad(lambda w: abs(w * w * _sdof(w, z)) ** 2 - 1.0, 0, 2, points=[1.0], limit=400)[0]
    sd += quad(lambda w: abs(w * w * _sdof(w, z)) ** 2 - 1.0, 2, np.inf, limit=400)[0]
    assert sd / math.pi == pytest.approx(1 / (4 * z) - z, rel=1e-6)


def test_mistuned_damper_lyapunov_matches_direct_integration():
    # Independent check at an off-optimal point: displacement variance of the primary by
    # direct integration of |H|^2 (variance = (1/pi) int_0^inf |H|^2 for unit intensity)
    mu, zs = 0.02, 0.01
    t = d.warburton_tuning(mu)
    f = 1.1 * t.frequency_ratio
    resp = d.two_dof_response(mu, f, t.damping_ratio, zs)
    var = quad(lambda w: abs(_receptances(w, mu, f, t.damping_ratio, zs)[0]) ** 2, 0, 3,
               points=[0.9, 1.0, 1.1], limit=400)[0]
    var += quad(lambda w: abs(_receptances(w, mu, f, t.damping_ratio, zs)[0]) ** 2, 3, np.inf)[0]
    assert var / math.pi == pytest.approx(resp.primary_disp_var, rel=1e-6)
    rel = quad(lambda w: abs(np.subtract(*_receptances(w, mu, f, t.damping_ratio, zs)[::-1])) ** 2, 0, 3,
               points=[0.9, 1.0, 1.1], limit=400)[0]
    rel += quad(lambda w: abs(np.subtract(*_receptances(w, mu, f, t.damping_ratio, zs)[::-1])) ** 2, 3, np.inf)[0]
    assert rel / math.pi == pytest.approx(resp.relative_disp_var, rel=1e-6)


def test_mistuning_sensitivity_lowers_damping():
    # +-10 % frequency error costs damping both ways (detuning robustness, methods.md section 8 [PRAC])
    m = d.mistuning_sensitivity(0.02, 0.01, 0.10)
    assert m.zeta_total_nominal == pytest.approx(0.04288, abs=ROUND5)
    assert m.zeta_total_low < m.zeta_total_nominal
    assert m.zeta_total_high < m.zeta_total_nominal
    assert m.zeta_total_worst == min(m.zeta_total_low, m.zeta_total_high)
    # even badly detuned, the damper still adds damping over the structure's own
    assert m.zeta_total_worst > 0.01


# --------------------------------------------------------------------------------------------
# inverse: mass ratio for a target damping
# --------------------------------------------------------------------------------------------


def test_mass_ratio_inverse_reproduces_table():
    # methods.md section 8: mu = 0.01, zeta_s = 0.01 -> 0.03266 (rounded: d zeta/d mu ~ 0.8 -> rel 1e-3)
    assert d.mass_ratio_for_damping(0.03266, 0.01) == pytest.approx(0.01, rel=1e-3)
    assert d.mass_ratio_for_damping(0.04678, 0.015) == pytest.approx(0.02, rel=1e-3)
    # undamped primary, displacement: inverse of the closed form
    target = d.warburton_equivalent_damping(0.03)
    assert d.mass_ratio_for_damping(target, 0.0, match="displacement") == pytest.approx(0.03, rel=1e-7)


def test_mass_ratio_inverse_rejects_unreachable_targets():
    with pytest.raises(ValueError, match="not above"):
        d.mass_ratio_for_damping(0.01, 0.02)
    with pytest.raises(ValueError, match="mass ratio above"):
        d.mass_ratio_for_damping(0.5, 0.01, mu_max=0.05)


# --------------------------------------------------------------------------------------------
# the sized TMD in an independent frequency-domain simulation
# --------------------------------------------------------------------------------------------


def test_sized_tmd_reduces_acceleration_by_inverse_sqrt_damping():
    # Resonant response of an SDOF scales as 1/sqrt(zeta) (methods.md section 8 screening rule).
    # Independent simulation: primary + TMD, force spectrum of EN 1991-1-4 eq. B.2 shape
    # S(f_L) = 6.8 f_L/(1 + 10.2 f_L)^(5/3), resonance in its tail (f_L(n_1) = 2), accelerations
    # from a dense grid of omega^4 |H|^2 S. The ratio with/without the damper must equal
    # sqrt(zeta_s / zeta_total) within 5 %.
    zs, target = 0.01, 0.03
    design = d.design_tmd(0.2, 4.0e7, zs, target)
    assert design.zeta_total == pytest.approx(target, rel=1e-8)
    mu, t = design.mass_ratio, design.tuning
    w = np.linspace(1e-4, 6.0, 600001)  # omega / omega_1
    f_l = 2.0 * w
    spectrum = 6.8 * f_l / (1.0 + 10.2 * f_l) ** (5.0 / 3.0) / w  # force PSD ~ S_L / n
    h1, _ = _receptances(w, mu, t.frequency_ratio, t.damping_ratio, zs)
    a_with = np.trapezoid(spectrum * np.abs(w * w * h1) ** 2, w)
    a_without = np.trapezoid(spectrum * np.abs(w * w * _sdof(w, zs)) ** 2, w)
    ratio = math.sqrt(a_with / a_without)
    assert ratio == pytest.approx(math.sqrt(zs / target), rel=0.05)
    # and the SDOF with zeta_total gives the same acceleration as the 2DOF (the definition)
    a_equiv = np.trapezoid(spectrum * np.abs(w * w * _sdof(w, design.zeta_total)) ** 2, w)
    assert math.sqrt(a_with / a_equiv) == pytest.approx(1.0, rel=0.05)


def test_design_tmd_quantities():
    # damper mass = mu M_1 (methods.md section 8 notation); k = m (2 pi f_d)^2; c = 2 zeta m omega
    m1 = 3.0e7
    dsg = d.design_tmd(0.18, m1, 0.015, 0.035, primary_accel_rms_m_s2=0.03, peak_factor=3.5)
    assert dsg.damper_mass_t == pytest.approx(dsg.mass_ratio * m1 / 1000.0, rel=1e-12)
    wd = 2 * math.pi * 0.18 * dsg.tuning.frequency_ratio
    assert dsg.damper_stiffness_n_m == pytest.approx(dsg.damper_mass_t * 1000 * wd**2, rel=1e-12)
    assert dsg.damper_damping_n_s_m == pytest.approx(2 * dsg.tuning.damping_ratio * wd * dsg.damper_mass_t * 1000)
    assert dsg.zeta_added == pytest.approx(0.02, rel=1e-8)
    assert dsg.zeta_eq_undamped_primary > dsg.zeta_added  # damping does not add (methods.md section 8)
    assert dsg.stroke_peak_m == pytest.approx(3.5 * dsg.stroke_rms_m)
    assert dsg.mistuning.zeta_total_worst < dsg.zeta_total


def test_stroke_from_force_psd_matches_direct_integration():
    # Dimensional stroke: sigma^2 = int_0^inf S_F(f) |X_rel/F|^2 df, one-sided S_F in N^2/Hz,
    # integrated directly over frequency in Hz (independent of the Lyapunov scaling)
    mu, zs, f1, m1, s_f = 0.015, 0.012, 0.15, 2.5e7, 4.0e9
    t = d.warburton_tuning(mu)
    resp = d.two_dof_response(mu, t.frequency_ratio, t.damping_ratio, zs)
    w1 = 2 * math.pi * f1

    def integrand(fhz):
        h1, h2 = _receptances(fhz / f1, mu, t.frequency_ratio, t.damping_ratio, zs)
        return s_f * abs(h2 - h1) ** 2 / (m1 * w1 * w1) ** 2

    var = quad(integrand, 0, 3 * f1, points=[0.9 * f1, f1, 1.1 * f1], limit=400)[0]
    var += quad(integrand, 3 * f1, np.inf)[0]
    assert d.stroke_rms_from_force_psd(resp, f1, m1, s_f) == pytest.approx(math.sqrt(var), rel=1e-6)
    # the SDOF classic sigma_x^2 = pi f S_F / (4 zeta k^2) with the same intensity convention
    tiny = d.two_dof_response(1e-9, 1.0, 0.05, zs)
    sigma_x2 = s_f / 2.0 * tiny.primary_disp_var / (m1**2 * w1**3)
    assert sigma_x2 == pytest.approx(math.pi * f1 * s_f / (4 * zs * (m1 * w1 * w1) ** 2), rel=1e-6)
    # the acceleration-based stroke agrees when fed the same white-noise acceleration
    a_rms = math.sqrt(s_f / 2.0 * w1 * resp.primary_accel_excess) / m1
    assert d.stroke_rms_from_accel(resp, f1, a_rms) == pytest.approx(math.sqrt(var), rel=1e-6)


# --------------------------------------------------------------------------------------------
# sloshing tanks: methods.md section 8 table (linear potential theory; Tait 2008; Housner 1963)
# --------------------------------------------------------------------------------------------

# L, h, f_1, shallow approx, m1/mw, Housner m1/mw, Housner f_1   (methods.md section 8)
SLOSH = [
    (10, 1.0, 0.15411, 0.15660, 0.7849, 0.8060, 0.15509),
    (10, 0.5, 0.11028, 0.11074, 0.8040, 0.8258, 0.11100),
    (8, 1.5, 0.22725, 0.23975, 0.7282, 0.7472, 0.22859),
    (5, 0.5, 0.21794, 0.22147, 0.7849, 0.8060, 0.21933),
]


@pytest.mark.parametrize("length,depth,f1,fsh,frac,hfrac,hf", SLOSH)
def test_sloshing_table(length, depth, f1, fsh, frac, hfrac, hf):
    assert d.sloshing_frequency(length, depth) == pytest.approx(f1, abs=ROUND5)
    assert d.shallow_water_frequency(length, depth) == pytest.approx(fsh, abs=ROUND5)
    assert d.sloshing_mass_fraction(length, depth) == pytest.approx(frac, abs=6e-5)  # 4 decimals
    assert d.housner_mass_fraction(length, depth) == pytest.approx(hfrac, abs=6e-5)
    assert d.housner_frequency(length, depth) == pytest.approx(hf, abs=ROUND5)


@pytest.mark.parametrize(
    "length,f,depth,frac", [(10, 0.2, 1.8015, 0.7338), (12, 0.15, 1.3779, 0.7771), (8, 0.25, 1.9328, 0.6840)]
)
def test_depth_for_frequency_table(length, f, depth, frac):
    # methods.md section 8 [DER]: inverse depth for a target frequency (4 decimals)
    h = d.depth_for_frequency(length, f)
    assert h == pytest.approx(depth, abs=6e-5)
    assert d.sloshing_mass_fraction(length, h) == pytest.approx(frac, abs=6e-5)
    assert d.sloshing_frequency(length, h) == pytest.approx(f, rel=1e-12)


def test_shallow_water_and_deep_water_limits():
    # tanh(x) -> x: f_1 -> sqrt(g h)/(2L) as h/L -> 0 (error ~ (pi h/L)^2/6); m_1/m_w -> 8/pi^2
    assert d.sloshing_frequency(20, 0.2) == pytest.approx(d.shallow_water_frequency(20, 0.2), rel=2e-4)
    assert d.sloshing_mass_fraction(20, 0.02) == pytest.approx(8 / math.pi**2, rel=1e-5)
    # deep water: f -> sqrt(pi g / L)/(2 pi); no depth reaches it
    assert d.sloshing_frequency(10, 100) == pytest.approx(d.deep_water_limit_hz(10), rel=1e-12)
    with pytest.raises(ValueError, match="deep-water limit"):
        d.depth_for_frequency(10, d.deep_water_limit_hz(10) * 1.01)
    # higher antisymmetric mode n = 3: f_3 = (1/2pi) sqrt((3 pi g/L) tanh(3 pi h/L))
    assert d.sloshing_frequency(10, 1, mode=3) == pytest.approx(
        math.sqrt(3 * math.pi * 9.81 / 10 * math.tanh(0.3 * math.pi)) / (2 * math.pi), rel=1e-12
    )


@given(st.floats(0.05, 0.5), st.floats(0.05, 1.0))
@settings(max_examples=50, deadline=None)
def test_length_for_frequency_round_trip(ratio, f):
    length = d.length_for_frequency(ratio, f)
    assert d.sloshing_frequency(length, ratio * length) == pytest.approx(f, rel=1e-10)


# --------------------------------------------------------------------------------------------
# tuned liquid column damper: methods.md section 8 [DER] (Sakai et al. 1989, from memory)
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("length,f", [(5, 0.3153), (10, 0.2229), (20, 0.1576)])
def test_liquid_column_frequency(length, f):
    assert d.liquid_column_frequency(length) == pytest.approx(f, abs=6e-5)


@pytest.mark.parametrize("f,length", [(0.1, 49.70), (0.15, 22.09), (0.2, 12.43), (0.3, 5.52)])
def test_liquid_column_length(f, length):
    assert d.liquid_column_length(f) == pytest.approx(length, abs=6e-3)


def test_tlcd_design_effective_mass():
    dsg = d.design_tlcd(0.2, 4e7, 0.02, length_ratio=0.8)
    assert dsg.effective_mass_ratio == pytest.approx(0.02, rel=1e-12)
    assert dsg.liquid_mass_t == pytest.approx(0.02 * 4e7 / 0.64 / 1000, rel=1e-12)
    assert d.liquid_column_frequency(dsg.column_length_m) == pytest.approx(dsg.target_frequency_hz, rel=1e-12)
    assert dsg.horizontal_length_m + 2 * dsg.vertical_length_m == pytest.approx(dsg.column_length_m)
    with pytest.raises(ValueError):
        d.design_tlcd(0.2, 4e7, 0.02, length_ratio=1.2)


# --------------------------------------------------------------------------------------------
# tank packing and sizing
# --------------------------------------------------------------------------------------------


def test_pack_rectangles_exact_grid():
    # a 40 x 40 m plate takes exactly 4 x 10 tanks of 10 x 4 m with no gap (arithmetic)
    tanks = d.pack_rectangles(box(0, 0, 40, 40), 10, 4, along="x")
    assert len(tanks) == 40
    tanks_y = d.pack_rectangles(box(0, 0, 40, 40), 10, 4, along="y")
    assert len(tanks_y) == 40
    minx, miny, maxx, maxy = tanks_y[0].bounds
    assert (maxx - minx, maxy - miny) == pytest.approx((4, 10))
    assert d.pack_rectangles(box(0, 0, 9, 40), 10, 4) == ()


@given(
    st.floats(12, 60),
    st.floats(12, 60),
    st.floats(2, 10),
    st.floats(1, 5),
    st.floats(0, 1),
    st.sampled_from(["x", "y"]),
)
@settings(max_examples=40, deadline=None)
def test_pack_rectangles_inside_and_disjoint(a, b, length, width, gap, along):
    plate = box(0, 0, a, b).difference(box(a * 0.4, b * 0.4, a * 0.6, b * 0.6))  # plate with a core hole
    tanks = d.pack_rectangles(plate, length, width, along=along, gap_m=gap)
    for i, t in enumerate(tanks):
        assert plate.buffer(1e-9).contains(t)
        assert t.area == pytest.approx(length * width)
        for u in tanks[i + 1 :]:
            assert t.intersection(u).area < 1e-9
    assert sum(t.area for t in tanks) <= plate.area + 1e-6


def test_design_tsd_counts_and_loads():
    plate = box(0, 0, 40, 40)
    avail = plate.difference(box(15, 15, 25, 25))
    m1, f1 = 4.0e7, 0.2
    mu = d.mass_ratio_for_damping(0.035, 0.015)
    dsg = d.design_tsd(f1, m1, mu, avail, direction="y", width_m=4.0, depth_ratio=0.15, plate_area_m2=plate.area)
    # tuned to Warburton's f_opt (methods.md section 8: use m_1 as the TMD mass)
    assert dsg.frequency_hz == pytest.approx(d.warburton_tuning(mu).frequency_ratio * f1, rel=1e-12)
    assert dsg.depth_m / dsg.length_m == pytest.approx(0.15)
    assert dsg.effective_mass_kg >= mu * m1
    assert (dsg.n_tanks - 1) * dsg.effective_mass_per_tank_kg < mu * m1
    assert dsg.water_mass_per_tank_kg == pytest.approx(1000 * dsg.length_m * 4.0 * dsg.depth_m)
    assert dsg.load_over_tank_kpa == pytest.approx(1000 * 9.81 * dsg.depth_m / 1000)
    assert dsg.load_over_plate_kpa == pytest.approx(dsg.water_mass_t * 1000 * 9.81 / 1600 / 1000)
    assert dsg.fits and len(dsg.tanks) == dsg.n_tanks
    for t in dsg.tanks:  # tanks slosh along y: long side along y
        minx, miny, maxx, maxy = t.bounds
        assert maxy - miny == pytest.approx(dsg.length_m)
    # a small plate does not take them
    small = d.design_tsd(f1, m1, mu, box(0, 0, 12, 12), direction="x")
    assert not small.fits


def test_two_way_tanks_layouts():
    avail = box(0, 0, 50, 50).difference(box(20, 20, 30, 30))
    sq = d.design_tsd_two_way(0.2, 4e7, 0.01, 0.201, 4e7, 0.01, avail)
    assert sq.layout == "square"
    assert sq.x.length_m == pytest.approx(sq.x.width_m)
    assert sq.x.n_tanks == sq.y.n_tanks
    assert len(sq.x.tanks) == min(sq.x.n_tanks, sq.x.packed_count)
    assert min(sq.x.effective_mass_kg, sq.y.effective_mass_kg) >= 0.01 * 4e7
    assert sq.water_mass_t == pytest.approx(sq.x.water_mass_t)
    two = d.design_tsd_two_way(0.2, 4e7, 0.01, 0.25, 4e7, 0.01, avail)
    assert two.layout == "two sets"
    assert two.water_mass_t == pytest.approx(two.x.water_mass_t + two.y.water_mass_t)
    assert two.y.length_m < two.x.length_m  # higher frequency -> shorter tank


def test_bad_inputs_raise_clear_errors():
    with pytest.raises(ValueError, match="mass ratio"):
        d.warburton_tuning(0.0)
    with pytest.raises(ValueError, match="unknown tuning rule"):
        d.tuning_for(0.01, "nope")
    with pytest.raises(ValueError, match="match"):
        d.equivalent_damping(0.01, 0.0, match="velocity")
    with pytest.raises(ValueError, match="positive"):
        d.sloshing_frequency(-1, 1)
    with pytest.raises(ValueError, match="usable fraction"):
        d.design_tsd(0.2, 4e7, 0.01, box(0, 0, 10, 10), usable_fraction=0)
