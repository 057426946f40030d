"""Rate models and Marcus–Hush parameters against outside references (each named beside its check)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as C

from dossier.science import marcus as m
from dossier import units as u


# --- Eyring -------------------------------------------------------------------------------
def test_eyring_prefactor_is_kT_over_h_from_codata():
    # CODATA via scipy.constants: k_B T / h at 298.15 K, about 6.21e12 s-1 (the textbook value)
    expected = C.k * 298.15 / C.h
    assert m.eyring_rate_per_s(0.0, 298.15) == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(6.21e12, rel=2e-3)  # Atkins' Physical Chemistry quotes 6.2e12 s-1 (from memory)


def test_eyring_textbook_worked_example():
    # A free-energy barrier of about 17.5 kcal/mol gives about 1 s-1 at room temperature
    # (Anslyn & Dougherty, Modern Physical Organic Chemistry, Eyring table; from memory).
    k = m.eyring_rate_per_s(17.46 * C.calorie, 298.15)
    assert 0.8 < k < 1.25
    # Every RT ln 10 (5.71 kJ/mol at 298.15 K, from CODATA R) is one decade.
    rt_ln10 = C.R * 298.15 * math.log(10) / 1000
    assert rt_ln10 == pytest.approx(5.708, abs=2e-3)
    ratio = m.eyring_rate_per_s(50.0, 298.15) / m.eyring_rate_per_s(50.0 + rt_ln10, 298.15)
    assert ratio == pytest.approx(10.0, rel=1e-9)


def test_eyring_broadcasts_and_transmission():
    barriers = np.array([10.0, 20.0, 30.0])
    temps = np.array([[273.15], [298.15]])
    k = m.eyring_rate_per_s(barriers, temps, 0.5)
    assert k.shape == (2, 3)
    assert k[1, 1] == pytest.approx(0.5 * m.eyring_rate_per_s(20.0, 298.15))
    assert isinstance(m.eyring_rate_per_s(20.0, 298.15), float)


# --- nonadiabatic Marcus ------------------------------------------------------------------
def _golden_rule_reference(h_cm1, lam_kj, dg0_kj, t):
    """Independent evaluation straight from scipy.constants (Marcus & Sutin 1985, eq. 26)."""
    hj = h_cm1 * C.h * C.c * 100
    lam = lam_kj * 1000 / C.N_A
    dg = dg0_kj * 1000 / C.N_A
    kt = C.k * t
    return 2 * C.pi / C.hbar * hj**2 / math.sqrt(4 * C.pi * lam * kt) * math.exp(-((dg + lam) ** 2) / (4 * lam * kt))


def test_marcus_matches_independent_codata_evaluation():
    for args in [(50.0, 80.0, -20.0, 298.15), (300.0, 120.0, 10.0, 250.0), (5.0, 60.0, -90.0, 350.0)]:
        assert m.marcus_nonadiabatic_rate_per_s(*args) == pytest.approx(_golden_rule_reference(*args), rel=1e-10)


def test_marcus_inverted_region_peak_at_minus_dg0_equals_lambda():
    # Marcus, J. Chem. Phys. 1956; Marcus & Sutin 1985: maximum where -dG0 = lambda, falls on both sides.
    lam = 90.0
    dg0 = np.linspace(-200.0, 20.0, 2201)
    k = m.marcus_nonadiabatic_rate_per_s(100.0, lam, dg0, 298.15)
    assert dg0[np.argmax(k)] == pytest.approx(-lam, abs=0.11)
    peak = int(np.argmax(k))
    assert np.all(np.diff(k[: peak + 1]) > 0)  # inverted region (more negative dG0): rate rises towards the peak
    assert np.all(np.diff(k[peak:]) < 0)  # normal region: rate falls as dG0 grows
    # symmetric about the peak (a Gaussian in dG0)
    assert m.marcus_nonadiabatic_rate_per_s(100.0, lam, -lam - 30, 298.15) == pytest.approx(
        m.marcus_nonadiabatic_rate_per_s(100.0, lam, -lam + 30, 298.15), rel=1e-10)


# --- Marcus–Levich–Jortner -----------------------------------------------------------------
def test_mlj_vanishing_huang_rhys_recovers_marcus():
    # Jortner, J. Chem. Phys. 1976, 64, 4860: with S -> 0 only the 0-0 term remains: classical Marcus with lambda_s.
    dg0 = np.array([-150.0, -60.0, 0.0, 30.0])
    classical = m.marcus_nonadiabatic_rate_per_s(200.0, 70.0, dg0, 298.15)
    assert np.allclose(m.mlj_rate_per_s(200.0, 70.0, dg0, 298.15, 1500.0, 0.0), classical, rtol=1e-12)
    assert np.allclose(m.mlj_rate_per_s(200.0, 70.0, dg0, 298.15, 1500.0, 1e-9), classical, rtol=1e-6)


def test_mlj_franck_condon_weights_sum_to_one_and_quantum_enhancement_in_inverted_region():
    # Poisson weights e^-S S^n/n! sum to 1 (Jortner 1976): at the top of a flat Gaussian (huge lambda_s)
    # the MLJ rate equals the Marcus prefactor.
    flat = m.mlj_rate_per_s(100.0, 1e6, -1e6, 298.15, 1500.0, 1.2, n_max=60)
    marcus_top = m.marcus_nonadiabatic_rate_per_s(100.0, 1e6, -1e6, 298.15)
    assert flat == pytest.approx(marcus_top, rel=1e-3)
    # Deep inverted region: quantum modes open channels, so MLJ exceeds classical Marcus with
    # lambda = lambda_s + lambda_i (Jortner 1976; Miller, Calcaterra, Closs, JACS 1984, 106, 3047).
    lam_s, s, mode = 30.0, 2.0, 1500.0
    lam_i = s * mode * u.CM1_KJ_MOL
    deep = -3.0 * (lam_s + lam_i)
    assert m.mlj_rate_per_s(100.0, lam_s, deep, 298.15, mode, s) > 10 * m.marcus_nonadiabatic_rate_per_s(
        100.0, lam_s + lam_i, deep, 298.15)


def test_mlj_broadcasts_over_samples():
    rng = np.random.default_rng(1)
    h = rng.normal(200.0, 20.0, 500)
    lam = rng.normal(60.0, 5.0, 500)
    k = m.mlj_rate_per_s(h, lam, -10.0, 298.15, 1400.0, 0.8)
    assert k.shape == (500,)
    assert k[7] == pytest.approx(m.mlj_rate_per_s(h[7], lam[7], -10.0, 298.15, 1400.0, 0.8), rel=1e-12)


def test_huang_rhys_factor():
    # S = lambda_i / h c nu: 1 quantum of 1000 cm-1 is 11.9627 kJ/mol (CODATA h, c, N_A)
    one_quantum = C.h * C.c * 100 * 1000 * C.N_A / 1000
    assert m.huang_rhys_factor(2 * one_quantum, 1000.0) == pytest.approx(2.0, rel=1e-12)


# --- two-state model ---------------------------------------------------------------------
def test_adiabatic_barrier_symmetric_case_matches_exact_surface():
    # Brunschwig, Creutz, Sutin 2002, eq. 9; for dG0 = 0 it equals the exact lower surface (lambda-2H)^2/(4 lambda).
    lam, h = 100.0, 1000.0
    hk = h * u.CM1_KJ_MOL
    assert m.adiabatic_barrier_kj_mol(lam, 0.0, h) == pytest.approx((lam - 2 * hk) ** 2 / (4 * lam), rel=1e-12)
    exact = m.two_state_observables_kj_mol(lam, 0.0, h)
    assert exact["barrier_kj_mol"] == pytest.approx(m.adiabatic_barrier_kj_mol(lam, 0.0, h), rel=1e-6)
    assert exact["gap_at_ts_kj_mol"] == pytest.approx(2 * hk, rel=1e-6)  # gap 2 H_ab at the crossing
    assert m.adiabatic_barrier_kj_mol(lam, 0.0, 0.0) == pytest.approx(lam / 4)  # Marcus lambda/4
    assert m.adiabatic_barrier_kj_mol(lam, 0.0, 0.6 * lam / u.CM1_KJ_MOL) == 0.0  # 2H > lambda: class III


def test_coupling_from_barrier_inverts_the_two_state_barrier():
    lam = np.array([80.0, 120.0])
    dg0 = np.array([0.0, -15.0])
    h = np.array([400.0, 1500.0])
    barrier = m.adiabatic_barrier_kj_mol(lam, dg0, h)
    assert np.allclose(m.coupling_from_adiabatic_barrier_cm1(barrier, lam, dg0), h, rtol=1e-10)


def test_two_state_fit_recovers_parameters():
    truth = m.two_state_observables_kj_mol(95.0, 0.0, 900.0)
    fit = m.fit_two_state_model(delta_e0_kj_mol=0.0, barrier_kj_mol=truth["barrier_kj_mol"],
                                gap_at_reactant_kj_mol=truth["gap_at_reactant_kj_mol"],
                                gap_at_ts_kj_mol=truth["gap_at_ts_kj_mol"])
    assert fit["reorganization_energy_kj_mol"] == pytest.approx(95.0, rel=1e-4)
    assert fit["coupling_cm1"] == pytest.approx(900.0, rel=1e-4)
    # with only the barrier and the TS gap (no excitation at the minimum) the class-II root is found:
    # B = (lambda - G)^2 / (4 lambda), G = 2 H_ab, solved by hand: lambda = G + 2B + 2 (B^2 + B G)^1/2
    lam, h = 67.6, 1983.0
    obs = m.two_state_observables_kj_mol(lam, 0.0, h)
    fit2 = m.fit_two_state_model(delta_e0_kj_mol=0.0, barrier_kj_mol=obs["barrier_kj_mol"],
                                 gap_at_ts_kj_mol=obs["gap_at_ts_kj_mol"])
    b, g = obs["barrier_kj_mol"], obs["gap_at_ts_kj_mol"]
    assert fit2["reorganization_energy_kj_mol"] == pytest.approx(g + 2 * b + 2 * math.sqrt(b * b + b * g), rel=1e-6)
    assert fit2["reorganization_energy_kj_mol"] == pytest.approx(lam, rel=1e-4)


# --- coupling routes ---------------------------------------------------------------------
def test_gmh_reduces_to_half_splitting_without_dipole_difference():
    # Cave & Newton, Chem. Phys. Lett. 1996, 249, 15: dmu_12 = 0 gives H_ab = dE/2.
    assert m.gmh_coupling_cm1(2.3, 0.0, 5000.0) == pytest.approx(2500.0)
    assert m.coupling_half_splitting_cm1(5000.0) == pytest.approx(2500.0)
    assert m.gmh_coupling_from_vectors_cm1([0.3, 1.0, 0.0], [0.0, 0.0, 0.0], 5000.0) == pytest.approx(2500.0)
    # Mulliken–Hush limit (Cave & Newton 1996): mu_12 << dmu_12 gives H = mu_12 dE / dmu_12
    assert m.gmh_coupling_cm1(0.01, 10.0, 8000.0) == pytest.approx(0.01 * 8000.0 / 10.0, rel=1e-5)


def test_hush_band_prefactor_matches_published_coefficient():
    # Creutz, Newton, Sutin, J. Photochem. Photobiol. A 1994, 82, 47: H_ab = 2.06e-2 (nu eps dnu)^1/2 / r
    assert m.hush_band_prefactor() == pytest.approx(2.06e-2, rel=3e-3)
    # and the transition dipole 0.0958 (int eps dnu / nu)^1/2 debye of absorption spectroscopy
    # (e.g. Turro, Modern Molecular Photochemistry; from memory), with the Gaussian integral 1.0645
    assert m.hush_transition_dipole_prefactor_debye() / math.sqrt(math.sqrt(math.pi / (4 * math.log(2)))) \
        == pytest.approx(0.0958, rel=2e-3)


def test_hush_band_worked_example():
    # Worked example, inputs from memory: Creutz-Taube-type band, nu_max 6370 cm-1 (1570 nm),
    # eps_max 5000 M-1 cm-1, width 1500 cm-1, r_ab 6.9 angstrom; by hand with the printed
    # coefficient 2.06e-2 (Creutz, Newton, Sutin 1994): 0.0206 * sqrt(6370*5000*1500) / 6.9 = 652 cm-1.
    assert m.hush_band_coupling_cm1(6370.0, 5000.0, 1500.0, 6.9) == pytest.approx(652.0, rel=5e-3)


def test_hush_band_width_high_temperature_limit():
    # Hush, Prog. Inorg. Chem. 1967, 8, 391: dnu_1/2 = (16 ln2 kT lambda)^1/2 ~ (2310 nu_max)^1/2 at 298 K
    # for a symmetric class-II band (nu_max = lambda). 16 ln2 kT/hc = 2298 cm-1 with CODATA k, h, c.
    nu_max = 9000.0
    width = m.hush_band_width_cm1(nu_max, 298.0)
    assert width == pytest.approx(math.sqrt(2310.0 * nu_max), rel=5e-3)
    kt_cm1 = C.k * 298.0 / (C.h * C.c * 100)
    assert width == pytest.approx(math.sqrt(16 * math.log(2) * kt_cm1 * nu_max), rel=1e-12)
    assert m.hush_reorganization_from_width_cm1(width, 298.0) == pytest.approx(nu_max)


def test_four_point_and_vertical_lambda():
    # Nelsen, Blackstock, Kim, JACS 1987, 109, 677: lambda = relaxation on each surface, summed.
    lam = m.four_point_reorganization_kj_mol(-100.0, -99.99, -100.1, -100.085)
    assert lam == pytest.approx((0.01 + 0.015) * C.physical_constants["Hartree energy"][0] * C.N_A / 1000)
    assert m.reorganization_from_vertical_kj_mol(110.0, 10.0) == pytest.approx(100.0)  # Hush: E_op = lambda + dG0


# --- Landau–Zener -------------------------------------------------------------------------
def test_landau_zener_limits():
    # Newton & Sutin 1984: kappa -> 1 for strong coupling, kappa -> nu_el/nu_n for weak coupling,
    # where nu_el nu_n^-1 exp(-dG*/RT) x nu_n reproduces the golden-rule rate.
    lam, t, mode = 100.0, 298.15, 1000.0
    assert m.landau_zener_transmission_coefficient(3000.0, lam, t, mode) == pytest.approx(1.0, abs=1e-6)
    weak = 1.0
    kappa = m.landau_zener_transmission_coefficient(weak, lam, t, mode)
    nu_n = mode * C.c * 100
    assert kappa == pytest.approx(m.electronic_frequency_per_s(weak, lam, t) / nu_n, rel=1e-5)
    k_ad = m.marcus_hush_adiabatic_rate_per_s(weak, lam, -10.0, t, mode)
    k_na = m.marcus_nonadiabatic_rate_per_s(weak, lam, -10.0, t)
    # the two-state barrier is lower than (lambda+dG0)^2/4lambda by H - H^2/(lambda+dG0) (Brunschwig et al. 2002)
    hk = weak * u.CM1_KJ_MOL
    lowering = hk - hk**2 / (lam - 10.0)
    assert k_ad == pytest.approx(k_na * math.exp(lowering / (C.R * t / 1000)), rel=1e-5)


# --- Robin–Day and Arrhenius --------------------------------------------------------------
def test_robin_day_class():
    lam = 100.0
    hk = 1 / u.CM1_KJ_MOL
    assert m.robin_day_class(10 * hk, lam, True)["class"] == "II"
    assert m.robin_day_class(60 * hk, lam, None)["class"] == "III"
    assert m.robin_day_class(0.1 * hk, lam, True)["class"] == "I"
    disagree = m.robin_day_class(60 * hk, lam, True)
    assert disagree["class"] == "II" and "disagree" in disagree["reason"]
    assert m.robin_day_class(None, None, False)["class"] == "III"


def test_arrhenius_fit_recovers_parameters():
    # ln k = ln A - Ea/RT (IUPAC Gold Book): exact data give back Ea and A.
    t = np.array([260.0, 280.0, 300.0, 320.0])
    k = 1e12 * np.exp(-40_000.0 / (C.R * t))
    fit = m.arrhenius_fit(t, k)
    assert fit["ea_kj_mol"] == pytest.approx(40.0, rel=1e-10)
    assert fit["log10_a_per_s"] == pytest.approx(12.0, rel=1e-10)
    # Eyring rates have Ea = dH + RT (Eyring 1935; Atkins): for dG = 30 kJ/mol with no entropy term
    te = np.array([290.0, 300.0, 310.0])
    fe = m.arrhenius_fit(te, m.eyring_rate_per_s(30.0, te))
    assert fe["ea_kj_mol"] == pytest.approx(30.0 + C.R * 300.0 / 1000, rel=2e-3)
    with pytest.raises(ValueError):
        m.arrhenius_fit([300.0], [1.0])


# --- transition dipoles, Mulliken–Hush, normal-mode reorganization ------------------------
def test_transition_dipole_from_oscillator_strength_matches_pyscf():
    # Reference library: PySCF TDA on water (STO-3G) prints both f and the transition dipole;
    # f = 2/3 dE |mu|^2 (Hilborn 1982) must connect them.
    pytest.importorskip("pyscf")
    from pyscf import gto, scf, tdscf

    mol = gto.M(atom="O 0 0 0; H 0 0.757 0.587; H 0 -0.757 0.587", basis="sto-3g", verbose=0)
    mf = scf.RHF(mol).run()
    td = tdscf.TDA(mf).run(nstates=3)
    f = td.oscillator_strength(gauge="length")
    mu = np.linalg.norm(td.transition_dipole(), axis=1)
    e_cm1 = td.e * C.physical_constants["hartree-inverse meter relationship"][0] / 100
    for k in range(3):
        if f[k] > 1e-4:
            assert m.transition_dipole_from_oscillator_au(f[k], e_cm1[k]) == pytest.approx(mu[k], rel=1e-6)


def test_mulliken_hush_is_gmh_with_diabatic_dipole_difference():
    # Cave & Newton 1996: the diabatic dipole difference is sqrt(dmu12^2 + 4 mu12^2); setting it to e r_ab
    # (Hush) turns GMH into Mulliken-Hush, H = mu12 dE / (e r_ab).
    mu12, de, r = 0.8, 9000.0, 4.9
    r_bohr = r / (C.physical_constants["Bohr radius"][0] * 1e10)
    dmu12 = math.sqrt(r_bohr**2 - 4 * mu12**2)
    assert m.mulliken_hush_coupling_cm1(mu12, de, r) == pytest.approx(m.gmh_coupling_cm1(mu12, dmu12, de), rel=1e-12)


def test_mode_reorganization_of_a_diatomic_oscillator():
    # Textbook harmonic oscillator: stretching H2 by dr costs (1/2) mu omega^2 dr^2 (CODATA amu, c, N_A).
    masses = [1.008, 1.008]
    r = [[0, 0, 0], [0, 0, 0.74]]
    p = [[0, 0, -0.01], [0, 0, 0.75]]
    nu = 4400.0
    lam = m.mode_reorganization_kj_mol(masses, r, p, [nu], [[[0, 0, -0.3], [0, 0, 0.3]]])
    mu = 1.008 / 2 * C.atomic_mass
    omega = 2 * math.pi * C.c * nu * 100
    expected = 0.5 * mu * omega**2 * (0.02e-10) ** 2 * C.N_A / 1000
    assert lam[0] == pytest.approx(expected, rel=1e-10)
    assert m.effective_mode_cm1([1.0, 3.0], [1000.0, 1600.0]) == pytest.approx(1450.0)
    assert m.nuclear_frequency_cm1([1.0, 1.0], [300.0, 400.0]) == pytest.approx(math.sqrt(125000.0))


def test_mode_projection_on_real_nwchem_modes():
    # Real NWChem 7.0 frequency output (cclib test data, divinylbenzene): its printed modes are Cartesian
    # displacements, so M^1/2 d are orthogonal; moving the atoms along one mode must put the whole
    # harmonic energy (1/2) omega^2 Q^2 into that mode and (almost) none into the others.
    from conftest import fixture_path
    from dossier.reading import read
    from dossier.science.thermo import atomic_masses_amu

    calc = read(fixture_path("NWChem/basicNWChem7.0/dvb_ir.out"), use_cache=False)
    w = calc.vibrations.wavenumbers_cm1
    d = np.asarray(calc.vibrations.displacements)
    masses = atomic_masses_amu(calc.elements)
    k = 20
    x0 = np.asarray(calc.coordinates_angstrom)
    alpha = 0.02 / np.abs(d[k]).max()
    lam = m.mode_reorganization_kj_mol(masses, x0, x0 + alpha * d[k], w, d)
    q2 = (np.sqrt(np.asarray(masses))[:, None] * alpha * d[k]) ** 2  # amu angstrom^2
    omega = 2 * math.pi * C.c * w[k] * 100
    expected = 0.5 * omega**2 * q2.sum() * C.atomic_mass * 1e-20 * C.N_A / 1000
    assert lam[k] == pytest.approx(expected, rel=1e-6)
    assert (lam.sum() - lam[k]) < 1e-6 * lam[k]
