"""dossier.science.thermo against outside references.

References used (named again beside each check):
- ASE 3.29 `ase.thermochemistry` (PyPI): IdealGasThermo (RRHO), QuasiHarmonicThermo (Truhlar-style
  raising), RRHOMode/MSRRHOThermo (Grimme 2012 quasi-RRHO entropy).
- The programs' own printed thermochemistry in real third-party logs (cclib's open test data,
  ../shared/fixtures/qc-logs), read from the log text with small regular expressions here.
- NIST-JANAF Thermochemical Tables (4th ed., 1998) standard entropies, recalled from memory.
- Geometries of small molecules from ASE's `ase.build.molecule` (G2 set), a reference library.
"""
from __future__ import annotations

import math
import re
import warnings

import numpy as np
import pytest
from scipy import constants as sc

from dossier import units
from dossier.science.thermo import (
    GRIMME_BAV_KG_M2,
    ThermoError,
    detect_symmetry,
    free_rotor_entropy_j_mol_k,
    grimme_entropy_j_mol_k,
    harmonic_entropy_j_mol_k,
    rrho,
    standard_state_correction_kj_mol,
    thermo_from_record,
)
from tests.conftest import fixture_path

ase = pytest.importorskip("ase")
from ase import Atoms  # noqa: E402
from ase.build import molecule  # noqa: E402
from ase.thermochemistry import HarmonicThermo, IdealGasThermo, QuasiHarmonicThermo, RRHOMode  # noqa: E402

KJ = units.HARTREE_KJ_MOL
EV_KJ = units.EV_KJ_MOL
EV_PER_CM1 = units.CM1_J / units.EV_J
J_MOL_PER_EV_K = units.EV_J * units.AVOGADRO_PER_MOL  # (eV/K per molecule) -> J/(mol K)

FIXTURES = {
    "gaussian": ("Gaussian/basicGaussian16/dvb_ir.out", None),
    "orca": ("ORCA/basicORCA5.0/dvb_ir.out", None),
    "qchem_dvb": ("QChem/basicQChem5.4/dvb_ir.out", None),
    "qchem_water": ("QChem/basicQChem5.4/water_ir.out", None),
    "nwchem": ("NWChem/basicNWChem7.0/dvb_ir.out", None),
    "psi4": ("Psi4/basicPsi4-1.7/dvb_ir_rks.out", None),
    # the xtb Hessian log carries no coordinates: its input was the xtb optimisation's final geometry
    "xtb": ("XTB/basicXTB6.6.1/dvb_ir/dvb_ir.out", "XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out"),
}

_cache: dict[str, tuple] = {}


def load(key):
    """Elements, coordinates (A) and the 3N-6 wavenumbers, straight from cclib (not the reader),
    with the ~0 translation/rotation rows NWChem and xtb list dropped."""
    if key in _cache:
        return _cache[key]
    import cclib
    from cclib.parser.utils import PeriodicTable

    freq_rel, geom_rel = FIXTURES[key]
    path = fixture_path(freq_rel)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        data = cclib.io.ccread(str(path))
        geom = cclib.io.ccread(str(fixture_path(geom_rel))) if geom_rel else data
    table = PeriodicTable()
    elements = [table.element[z] for z in geom.atomnos]
    assert list(geom.atomnos) == list(data.atomnos)
    waves = [float(w) for w in data.vibfreqs if abs(w) > 1.0]
    assert len(waves) == 3 * len(elements) - 6
    text = path.read_text(errors="replace")
    _cache[key] = (elements, np.asarray(geom.atomcoords[-1]), waves, text)
    return _cache[key]


def ase_ideal_gas(elements, coords, waves, sigma, spin, masses_amu):
    atoms = Atoms(elements, positions=coords)
    atoms.set_masses(masses_amu)  # same masses as ours (ASE defaults to average weights)
    return IdealGasThermo([w * EV_PER_CM1 for w in waves], geometry="nonlinear", atoms=atoms,
                          symmetrynumber=sigma, spin=spin)


# ----------------------------------------------------------------------------------------
# RRHO against ASE IdealGasThermo on real frequency jobs (outside reference: ASE 3.29)
# ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("key", sorted(FIXTURES))
@pytest.mark.parametrize("temperature_k,standard_state", [(298.15, "1atm"), (298.15, "1bar"), (400.0, "1atm")])
def test_rrho_matches_ase_ideal_gas_thermo(key, temperature_k, standard_state):
    elements, coords, waves, _ = load(key)
    ours = rrho(elements, coords, waves, 1, temperature_k, standard_state=standard_state)
    # Reference: ASE 3.29 IdealGasThermo, same wavenumbers, masses and symmetry number.
    from dossier.science.thermo import atomic_masses_amu

    ref = ase_ideal_gas(elements, coords, waves, ours.symmetry_number, 0, atomic_masses_amu(elements))
    pressure = ours.pressure_pa
    zpe_ref = ref.get_ZPE_correction() * EV_KJ
    h_ref = ref.get_enthalpy(temperature_k, verbose=False) * EV_KJ
    g_ref = ref.get_gibbs_energy(temperature_k, pressure, verbose=False) * EV_KJ
    assert abs(ours.zpe_hartree * KJ - zpe_ref) < 0.2
    assert abs(ours.enthalpy_correction_hartree * KJ - h_ref) < 0.2
    assert abs(ours.gibbs_correction_hartree * KJ - g_ref) < 0.2
    # and much closer than the 0.2 kJ/mol the issue asks for (only CODATA editions differ)
    assert abs(ours.gibbs_correction_hartree * KJ - g_ref) < 0.01


def test_transition_state_imaginary_mode_left_out_like_ase():
    # An artificial transition state: the Gaussian dvb job with its lowest mode made imaginary.
    elements, coords, waves, _ = load("gaussian")
    ts_waves = [-abs(waves[0])] + waves[1:]
    ours = rrho(elements, coords, ts_waves, 1, 298.15)
    assert ours.n_imaginary == 1 and ours.imaginary_cm1 == [-abs(waves[0])]
    assert len(ours.wavenumbers_used_cm1) == len(waves) - 1
    # Reference: ASE IdealGasThermo with ignore_imag_modes=True drops the imaginary energy.
    from dossier.science.thermo import atomic_masses_amu

    atoms = Atoms(elements, positions=coords)
    atoms.set_masses(atomic_masses_amu(elements))
    energies = [complex(0, abs(waves[0]) * EV_PER_CM1)] + [w * EV_PER_CM1 for w in waves[1:]]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = IdealGasThermo(energies, geometry="nonlinear", atoms=atoms, symmetrynumber=2, spin=0,
                             ignore_imag_modes=True)
    assert ref.n_imag == 1
    assert abs(ours.gibbs_correction_hartree * KJ
               - ref.get_gibbs_energy(298.15, ours.pressure_pa, verbose=False) * EV_KJ) < 0.01


def test_frequency_scale_factor_matches_ase_on_scaled_energies():
    elements, coords, waves, _ = load("psi4")
    ours = rrho(elements, coords, waves, 1, 298.15, frequency_scale=0.96)
    from dossier.science.thermo import atomic_masses_amu

    ref = ase_ideal_gas(elements, coords, [0.96 * w for w in waves], 2, 0, atomic_masses_amu(elements))
    assert abs(ours.zpe_hartree * KJ - ref.get_ZPE_correction() * EV_KJ) < 0.01
    assert abs(ours.gibbs_correction_hartree * KJ
               - ref.get_gibbs_energy(298.15, ours.pressure_pa, verbose=False) * EV_KJ) < 0.01


def test_open_shell_spin_degeneracy_matches_ase():
    # Doublet: S_el = R ln 2; reference ASE IdealGasThermo(spin=0.5).
    elements, coords, waves, _ = load("qchem_dvb")
    ours = rrho(elements, coords, waves, 2, 298.15)
    from dossier.science.thermo import atomic_masses_amu

    ref = ase_ideal_gas(elements, coords, waves, 2, 0.5, atomic_masses_amu(elements))
    s_ref = ref.get_entropy(298.15, ours.pressure_pa, verbose=False) * J_MOL_PER_EV_K
    assert abs(ours.entropy_j_mol_k - s_ref) < 0.01
    assert ours.contributions["electronic"].entropy_j_mol_k == pytest.approx(sc.R * math.log(2), rel=1e-12)


# ----------------------------------------------------------------------------------------
# Against the programs' own printed thermochemistry (outside reference: the logs' text)
# ----------------------------------------------------------------------------------------
def _num(pattern, text):
    m = re.search(pattern, text)
    assert m, pattern
    return float(m.group(1))


def test_gaussian_printed_values():
    # Gaussian 16 prints to 1e-6 hartree; same masses (most abundant isotope), 1 atm, sigma 2.
    elements, coords, waves, text = load("gaussian")
    r = rrho(elements, coords, waves, 1, 298.15)
    assert r.symmetry_number == int(_num(r"Rotational symmetry number\s+(\d+)", text)) == 2
    assert abs(r.zpe_hartree - _num(r"Zero-point correction=\s+([\d.]+)", text)) < 2e-6
    assert abs(r.enthalpy_correction_hartree - _num(r"Thermal correction to Enthalpy=\s+([\d.]+)", text)) < 2e-6
    assert abs(r.gibbs_correction_hartree - _num(r"Thermal correction to Gibbs Free Energy=\s+([\d.]+)", text)) < 2e-6
    # total S and Cv in cal/(mol K) from the "Total" row of Gaussian's E/CV/S table
    m = re.search(r"\n Total\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)", text)
    assert abs(r.heat_capacity_cv_j_mol_k / units.KCAL_KJ - float(m.group(2))) < 2e-3
    assert abs(r.entropy_j_mol_k / units.KCAL_KJ - float(m.group(3))) < 2e-3


@pytest.mark.parametrize("key", ["qchem_dvb", "qchem_water"])
def test_qchem_printed_values(key):
    # Q-Chem 5.4 prints kcal/mol to 1e-3; isotopic masses, 1 atm, harmonic.
    elements, coords, waves, text = load(key)
    r = rrho(elements, coords, waves, 1, 298.15)
    kcal = units.HARTREE_KCAL_MOL
    assert r.symmetry_number == int(_num(r"Rotational Symmetry Number is\s+(\d+)", text))
    assert abs(r.zpe_hartree * kcal - _num(r"Zero point vibrational energy:\s+([\d.]+)", text)) < 2e-3
    assert abs(r.enthalpy_correction_hartree * kcal - _num(r"Total Enthalpy:\s+([\d.]+)", text)) < 2e-3
    assert abs(r.entropy_j_mol_k / units.KCAL_KJ - _num(r"Total Entropy:\s+([\d.]+)", text)) < 2e-3
    s_t = r.contributions["translational"].entropy_j_mol_k / units.KCAL_KJ
    assert abs(s_t - _num(r"Translational Entropy:\s+([\d.]+)", text)) < 2e-3


def test_psi4_printed_values():
    # Psi4 1.7 prints 1e-8 hartree; isotopic masses, 1 atm (101325 Pa), sigma 2.
    elements, coords, waves, text = load("psi4")
    r = rrho(elements, coords, waves, 1, 298.15)
    assert abs(r.zpe_hartree - _num(r"Correction ZPE .*?([\d.]+) \[Eh\]", text)) < 1e-7
    assert abs(r.enthalpy_correction_hartree - _num(r"Correction H .*?([\d.]+) \[Eh\]", text)) < 1e-7
    assert abs(r.gibbs_correction_hartree - _num(r"Correction G .*?([\d.]+) \[Eh\]", text)) < 1e-7


def test_orca_printed_values_need_average_masses_and_grimme_entropy():
    # ORCA 5 uses standard atomic weights (total mass 130.19) and, by default, Grimme's 2012
    # quasi-RRHO vibrational entropy; with both, we reproduce its printed numbers.
    elements, coords, waves, text = load("orca")
    e_el = _num(r"Electronic energy\s+\.\.\.\s+(-[\d.]+) Eh", text)
    h_printed = _num(r"Total Enthalpy\s+\.\.\.\s+(-[\d.]+) Eh", text) - e_el
    g_printed = _num(r"G-E\(el\)\s+\.\.\.\s+([\d.]+) Eh", text)
    ts_printed = _num(r"Final entropy term\s+\.\.\.\s+([\d.]+) Eh", text)
    assert "QRRHO of S. Grimme" in text
    r = rrho(elements, coords, waves, 1, 298.15, masses="average", qrrho="grimme")
    assert r.mass_amu == pytest.approx(_num(r"Total Mass\s+\.\.\.\s+([\d.]+) AMU", text), abs=0.01)
    assert abs(r.zpe_hartree - _num(r"Zero point energy\s+\.\.\.\s+([\d.]+) Eh", text)) < 1e-6
    assert abs(r.enthalpy_correction_hartree - h_printed) < 1e-6
    assert abs(r.gibbs_correction_hartree - g_printed) < 2e-6
    assert abs(r.temperature_k * r.entropy_hartree_per_k - ts_printed) < 2e-6
    # the harmonic entropy of the same modes differs by the low-mode treatment: 2.4 kJ/mol in G
    harmonic = rrho(elements, coords, waves, 1, 298.15, masses="average")
    shift = (g_printed - harmonic.gibbs_correction_hartree) * KJ
    assert 2.0 < shift < 3.0


def test_nwchem_printed_values_differ_by_its_conversion_constants():
    # NWChem 7.0 prints ZPE, H and every entropy term about 0.05 % below the CODATA value for
    # the same wavenumbers, mass and symmetry number (its translational entropy 40.484 vs
    # 40.502 cal/(mol K) does not involve the frequencies at all), i.e. its unit conversion
    # differs; the rotational symmetry number agrees.
    elements, coords, waves, text = load("nwchem")
    r = rrho(elements, coords, waves, 1, 298.15)
    assert r.symmetry_number == int(_num(r"symmetry #\s+=\s+(\d+)", text))
    zpe = _num(r"Zero-Point correction to Energy\s+=.*?\(\s*([\d.]+) au\)", text)
    h = _num(r"Thermal correction to Enthalpy\s+=.*?\(\s*([\d.]+) au\)", text)
    s_t = _num(r"- Translational\s+=\s+([\d.]+) cal/mol-K", text)
    for printed, ours in [(zpe, r.zpe_hartree), (h, r.enthalpy_correction_hartree),
                          (s_t, r.contributions["translational"].entropy_j_mol_k / units.KCAL_KJ)]:
        assert 0.9993 < printed / ours < 0.9998


def test_xtb_printed_values_with_its_rotor_cutoff():
    # xtb 6.6.1 uses Grimme's quasi-RRHO with a 50 cm-1 rotor cutoff (printed in its setup
    # block). Its ZPE and H(T) agree to 1e-6 Eh; its G(RRHO) to 0.02 kJ/mol (its translational
    # entropy is 40.486 vs our 40.502 cal/(mol K)).
    elements, coords, waves, text = load("xtb")
    cutoff = _num(r"rotor cutoff\s+([\d.]+)", text)
    assert cutoff == 50.0
    r = rrho(elements, coords, waves, 1, 298.15, qrrho="grimme", grimme_w0_cm1=cutoff)
    assert r.symmetry_number == int(_num(r"rotational number\s+(\d+)", text)) == 2
    assert abs(r.zpe_hartree - _num(r"zero point energy\s+([\d.]+) Eh", text)) < 1e-6
    m = re.search(r"298\.15\s+([\d.E+-]+)\s+([\d.E+-]+)\s+([\d.E+-]+)\s+([\d.E+-]+)", text)
    assert abs(r.enthalpy_correction_hartree - float(m.group(2))) < 2e-6
    assert abs(r.gibbs_correction_hartree - _num(r"G\(RRHO\) contrib\.\s+([\d.]+) Eh", text)) * KJ < 0.05


# ----------------------------------------------------------------------------------------
# Quasi-RRHO against ASE 3.29 (QuasiHarmonicThermo, RRHOMode)
# ----------------------------------------------------------------------------------------
@pytest.mark.parametrize("key", ["gaussian", "xtb"])
def test_truhlar_raising_matches_ase_quasi_harmonic_thermo(key):
    elements, coords, waves, _ = load(key)
    ours = rrho(elements, coords, waves, 1, 298.15, qrrho="truhlar")
    assert min(ours.wavenumbers_used_cm1) == pytest.approx(100.0)
    # Reference: ASE QuasiHarmonicThermo raises energies below 100 cm-1 to 100 cm-1.
    ref = QuasiHarmonicThermo([w * EV_PER_CM1 for w in waves], raise_to=100 * EV_PER_CM1)
    vib = ours.contributions["vibrational"]
    assert abs(ours.zpe_hartree * KJ - ref.get_ZPE_correction() * EV_KJ) < 0.01
    assert abs(vib.energy_hartree * KJ - ref.get_internal_energy(298.15, verbose=False) * EV_KJ) < 0.01
    assert abs(vib.entropy_j_mol_k - ref.get_entropy(298.15, verbose=False) * J_MOL_PER_EV_K) < 0.01


@pytest.mark.parametrize("key", ["orca", "xtb", "nwchem"])
def test_grimme_entropy_matches_ase_rrho_mode(key):
    elements, coords, waves, _ = load(key)
    ours = rrho(elements, coords, waves, 1, 298.15, qrrho="grimme")
    # Reference: ASE RRHOMode with tau = 100 cm-1 (Grimme's omega_0) and mean_inertia = B_av = 1e-44
    # kg m^2 expressed in u A^2, as in Grimme 2012.
    bav_amu_a2 = GRIMME_BAV_KG_M2 / (sc.atomic_mass * sc.angstrom**2)
    modes = [RRHOMode(w * EV_PER_CM1, mean_inertia=bav_amu_a2, tau=100.0) for w in waves]
    ref = HarmonicThermo([w * EV_PER_CM1 for w in waves], modes=modes)
    vib = ours.contributions["vibrational"]
    assert abs(vib.entropy_j_mol_k - ref.get_entropy(298.15, verbose=False) * J_MOL_PER_EV_K) < 0.01
    # Grimme 2012 changes the entropy only: energies stay harmonic (ASE treat_int_energy=False)
    assert abs(vib.energy_hartree * KJ - ref.get_internal_energy(298.15, verbose=False) * EV_KJ) < 0.01


def test_grimme_with_molecular_mean_inertia_matches_ase_msrrho():
    # ASE's MSRRHOThermo takes B_av from the molecule's mean principal moment; our bav argument
    # reproduces it (reference: ASE 3.29 MSRRHOThermo, tau 100 cm-1, nu_scal 1).
    from ase.thermochemistry import MSRRHOThermo

    elements, coords, waves, _ = load("gaussian")
    atoms = Atoms(elements, positions=coords)
    bav = float(np.mean(atoms.get_moments_of_inertia())) * sc.atomic_mass * sc.angstrom**2
    ours = rrho(elements, coords, waves, 1, 298.15, qrrho="grimme", grimme_bav_kg_m2=bav)
    ref = MSRRHOThermo([w * EV_PER_CM1 for w in waves], atoms=atoms, tau=100.0)
    s_ref = ref.get_entropy(298.15, verbose=False) * J_MOL_PER_EV_K
    assert abs(ours.contributions["vibrational"].entropy_j_mol_k - s_ref) < 0.01


def test_qrrho_limits():
    t = 298.15
    # High modes are unchanged by the Grimme interpolation (weight -> 1) and by raising.
    # 1 - w = 1 / (1 + (omega/omega_0)^4): 1e-4 at 1000 cm-1, 1.2e-6 at 3000 cm-1
    assert grimme_entropy_j_mol_k(1000.0, t) == pytest.approx(harmonic_entropy_j_mol_k(1000.0, t), rel=1e-3)
    assert abs(grimme_entropy_j_mol_k(3000.0, t) - harmonic_entropy_j_mol_k(3000.0, t)) < 1e-4
    # Very low modes tend to the free-rotor entropy with moment B_av (Grimme 2012, eqs 5-6 with
    # mu -> infinity), written out here from scipy.constants (CODATA):
    limit = sc.R * (0.5 + 0.5 * math.log(8 * math.pi**3 * GRIMME_BAV_KG_M2 * sc.k * t / sc.h**2))
    # (the gap is about (R/2) B_av / mu, mu = h / (8 pi^2 nu): 0.015 J/(mol K) at 1e-4 cm-1)
    gaps = [limit - grimme_entropy_j_mol_k(w, t) for w in (10.0, 1.0, 0.01, 1e-4, 1e-6)]
    assert all(a > b > 0 for a, b in zip(gaps, gaps[1:]))
    assert gaps[-1] < 1e-3
    assert free_rotor_entropy_j_mol_k(1e-8, t) == pytest.approx(limit, abs=1e-5)
    # while the harmonic entropy of such a mode grows without bound
    assert harmonic_entropy_j_mol_k(1e-4, t) > limit + 50
    # at the switch frequency both count half (Grimme 2012, eq 8 at omega = omega_0)
    half = 0.5 * (harmonic_entropy_j_mol_k(100.0, t) + free_rotor_entropy_j_mol_k(100.0, t))
    assert grimme_entropy_j_mol_k(100.0, t) == pytest.approx(half, rel=1e-12)
    # a molecule with only high modes: all three treatments give the same G
    a = molecule("H2O")
    waves = [1594.7, 3657.1, 3755.9]
    gs = {q: rrho(a.get_chemical_symbols(), a.positions, waves, 1, t, qrrho=q).gibbs_correction_hartree
          for q in ("none", "grimme", "truhlar")}
    assert max(gs.values()) - min(gs.values()) < 1e-8


# ----------------------------------------------------------------------------------------
# Handbook entropies (NIST-JANAF Thermochemical Tables, 4th ed. 1998; values from memory)
# ----------------------------------------------------------------------------------------
def test_translational_entropy_of_argon_against_janaf():
    # NIST-JANAF: S(Ar, 298.15 K, 1 bar) = 154.846 J/(mol K) (from memory); all translational.
    r = rrho(["Ar"], [[0.0, 0.0, 0.0]], [], 1, 298.15, standard_state="1bar", masses="average")
    assert r.contributions["translational"].entropy_j_mol_k == pytest.approx(154.846, abs=0.005)
    assert r.contributions["rotational"].entropy_j_mol_k == 0.0


@pytest.mark.parametrize(
    "name,r_e_angstrom,wavenumber_cm1,multiplicity,s_janaf",
    [
        # NIST-JANAF S(298.15 K, 1 bar) (from memory); r_e and omega from Huber & Herzberg,
        # Constants of Diatomic Molecules (1979) (from memory).
        ("N2", 1.0977, 2358.6, 1, 191.609),
        ("O2", 1.2075, 1580.2, 3, 205.147),  # triplet ground state: S_el = R ln 3
    ],
)
def test_linear_rotor_entropy_against_janaf(name, r_e_angstrom, wavenumber_cm1, multiplicity, s_janaf):
    a = molecule(name)
    a.set_distance(0, 1, r_e_angstrom)
    r = rrho(a.get_chemical_symbols(), a.positions, [wavenumber_cm1], multiplicity, 298.15,
             standard_state="1bar", masses="average")
    assert r.linear and r.symmetry_number == 2
    # rigid rotor + harmonic oscillator vs tables with anharmonic/centrifugal terms: 0.15 J/(mol K)
    assert r.entropy_j_mol_k == pytest.approx(s_janaf, abs=0.15)


def test_water_entropy_against_janaf():
    # NIST-JANAF: S(H2O, g, 298.15 K, 1 bar) = 188.834 J/(mol K) (from memory); experimental
    # fundamentals 1594.7, 3657.1, 3755.9 cm-1 (NIST CCCBDB, from memory); ASE's G2 geometry.
    a = molecule("H2O")
    r = rrho(a.get_chemical_symbols(), a.positions, [1594.7, 3657.1, 3755.9], 1, 298.15,
             standard_state="1bar", masses="average")
    assert r.entropy_j_mol_k == pytest.approx(188.834, abs=0.3)


# ----------------------------------------------------------------------------------------
# Rotational symmetry numbers from the geometry (geometries: ASE ase.build.molecule)
# ----------------------------------------------------------------------------------------
@pytest.mark.parametrize(
    "name,point_group,sigma",
    [
        # sigma = order of the rotational subgroup of the point group; the textbook values
        # (e.g. Ochterski 2000, "Thermochemistry in Gaussian", symmetry-number table; from memory)
        ("H2O", "C2v", 2),
        ("NH3", "C3v", 3),
        ("CH4", "Td", 12),
        ("C6H6", "D6h", 12),
        ("C2H6", "D3d", 6),
        ("C2H4", "D2h", 4),
        ("BF3", "D3h", 6),
        ("C3H4_D2d", "D2d", 4),
        ("CH3Cl", "C3v", 3),
        ("CO2", "D*h", 2),
        ("HCl", "C*v", 1),
    ],
)
def test_symmetry_numbers_of_known_molecules(name, point_group, sigma):
    a = molecule(name)
    info = detect_symmetry(a.get_chemical_symbols(), a.positions)
    assert (info.point_group, info.symmetry_number) == (point_group, sigma)


def test_symmetry_numbers_of_spherical_tops():
    # geometries from ASE (ase.build.molecule, ase.cluster); sigma of T_d = 12, O_h = 24, I_h = 60
    # (order of the rotation subgroup; textbook values, from memory)
    from ase.cluster import Icosahedron, Octahedron

    for atoms, expected in [(molecule("SiH4"), ("Td", 12)), (Octahedron("Cu", 2), ("Oh", 24)),
                            (Icosahedron("Cu", 2), ("Ih", 60))]:
        info = detect_symmetry(atoms.get_chemical_symbols(), atoms.positions)
        assert (info.point_group, info.symmetry_number) == expected


def test_symmetry_of_divinylbenzene_fixture_and_broken_symmetry():
    # trans-divinylbenzene, C2h, sigma 2 (Gaussian, Q-Chem, ORCA, NWChem, Psi4, xtb all print 2)
    elements, coords, waves, _ = load("gaussian")
    info = detect_symmetry(elements, coords)
    assert (info.point_group, info.symmetry_number) == ("C2h", 2)
    moved = np.array(coords, dtype=float)
    moved[0] += [0.1, 0.0, 0.0]
    assert detect_symmetry(elements, moved).symmetry_number == 1


def test_symmetry_number_override_changes_rotational_entropy_by_r_ln_sigma():
    a = molecule("CH4")
    waves = [1306.0] * 3 + [1534.0] * 2 + [2917.0] + [3019.0] * 3
    found = rrho(a.get_chemical_symbols(), a.positions, waves, 1, 298.15)
    given = rrho(a.get_chemical_symbols(), a.positions, waves, 1, 298.15, symmetry_number=1)
    assert found.symmetry_number == 12 and found.symmetry_number_source == "geometry"
    assert given.symmetry_number_source == "given"
    ds = given.contributions["rotational"].entropy_j_mol_k - found.contributions["rotational"].entropy_j_mol_k
    assert ds == pytest.approx(sc.R * math.log(12), rel=1e-9)  # S_rot = R ln(q_rot), q_rot ~ 1/sigma


# ----------------------------------------------------------------------------------------
# Standard states
# ----------------------------------------------------------------------------------------
def test_one_molar_standard_state_correction():
    # 1 atm -> 1 mol/L at 298.15 K: R T ln(24.46) = 1.89 kcal/mol, the value quoted in
    # solvation-free-energy work (Cramer, Essentials of Computational Chemistry 2004; from memory)
    corr = standard_state_correction_kj_mol(298.15, "1M", "1atm")
    assert corr / units.KCAL_KJ == pytest.approx(1.89, abs=0.005)
    # the same from scipy.constants: c = 1000 mol m-3, p = c R T
    expected = sc.R * 298.15 * math.log(1000.0 * sc.R * 298.15 / sc.atm) / 1000.0
    assert corr == pytest.approx(expected, rel=1e-12)
    elements, coords, waves, _ = load("gaussian")
    g_atm = rrho(elements, coords, waves, 1, 298.15, standard_state="1atm")
    g_1m = rrho(elements, coords, waves, 1, 298.15, standard_state="1M")
    assert (g_1m.gibbs_correction_hartree - g_atm.gibbs_correction_hartree) * KJ == pytest.approx(expected, abs=1e-9)
    assert g_1m.enthalpy_correction_hartree == g_atm.enthalpy_correction_hartree
    explicit = rrho(elements, coords, waves, 1, 298.15, pressure_pa=g_1m.pressure_pa)
    assert explicit.gibbs_correction_hartree == pytest.approx(g_1m.gibbs_correction_hartree, abs=1e-12)


# ----------------------------------------------------------------------------------------
# Bad input and the record convenience
# ----------------------------------------------------------------------------------------
def test_bad_input_gives_one_line_errors():
    a = molecule("H2O")
    el, xyz = a.get_chemical_symbols(), a.positions
    with pytest.raises(ThermoError, match="expected 3 vibrational wavenumbers"):
        rrho(el, xyz, [0.0] * 6 + [1600.0, 3600.0, 3700.0], 1, 298.15)
    with pytest.raises(ThermoError, match="standard state"):
        rrho(el, xyz, [1600.0, 3600.0, 3700.0], 1, 298.15, standard_state="2M")
    with pytest.raises(ThermoError, match="temperature"):
        rrho(el, xyz, [1600.0, 3600.0, 3700.0], 1, -5.0)
    with pytest.raises(ThermoError, match="qRRHO"):
        rrho(el, xyz, [1600.0, 3600.0, 3700.0], 1, 298.15, qrrho="grim")


def test_thermo_from_record_reads_through_the_reading_layer():
    reading = pytest.importorskip("dossier.reading")
    calc = reading.read(fixture_path("Psi4/basicPsi4-1.7/dvb_ir_rks.out"), use_cache=False)
    r = thermo_from_record(calc, 298.15)
    elements, coords, waves, _ = load("psi4")
    direct = rrho(elements, coords, waves, 1, 298.15)
    assert r.gibbs_correction_hartree == pytest.approx(direct.gibbs_correction_hartree, abs=1e-7)
    assert set(r.contributions) == {"translational", "rotational", "vibrational", "electronic"}


def test_low_temperature_freezes_modes_without_overflow():
    # common practice, no source: at 5 K a 3000 cm-1 mode (x ~ 860) contributes nothing above
    # its zero-point energy; the result stays finite and G -> ZPE as T -> 0
    a = molecule("H2O")
    r = rrho(a.get_chemical_symbols(), a.positions, [1594.7, 3657.1, 3755.9], 1, 5.0)
    vib = r.contributions["vibrational"]
    assert vib.entropy_j_mol_k < 1e-100 and vib.heat_capacity_j_mol_k < 1e-100
    assert vib.energy_hartree == pytest.approx(r.zpe_hartree, abs=1e-15)
    assert math.isfinite(r.gibbs_correction_hartree)
    # C_v of one mode against the textbook Einstein function at x = 1: e / (e - 1)^2 = 0.920674 R
    from dossier.science.thermo import harmonic_heat_capacity_j_mol_k

    nu = sc.k * 300.0 / (sc.h * sc.c * 100.0)  # the wavenumber with x = 1 at 300 K
    assert harmonic_heat_capacity_j_mol_k(nu, 300.0) == pytest.approx(0.920674 * sc.R, rel=1e-6)


def test_demo_transition_state_against_nwchem_printed_zpe():
    # The demo study's NWChem transition-state frequency job (one imaginary mode): NWChem leaves
    # the imaginary mode out of its ZPE too; its printed value sits the same ~0.05 % below ours
    # as on the divinylbenzene fixture (its unit conversion, see the NWChem test above).
    from tests.conftest import demo_path

    reading = pytest.importorskip("dossier.reading")
    calc = reading.read(demo_path("pathway/ts_freq.out"), use_cache=False)
    if calc.vibrations is None or calc.printed_thermo is None or calc.printed_thermo.zpe_hartree is None:
        pytest.skip("demo TS frequency job not finished")
    r = thermo_from_record(calc, 298.15)
    assert r.n_imaginary == 1 and r.imaginary_cm1[0] < -100
    assert 0.9993 < calc.printed_thermo.zpe_hartree / r.zpe_hartree < 0.9998


def test_localized_radical_anion_is_not_given_the_delocalized_symmetry():
    # The demo minimum with the electron on one nitro group is Cs (sigma 1); the symmetric TS is
    # C2v (sigma 2). A loose 0.1 A tolerance (xtb's printed "desy" threshold) would call the
    # localized minimum C2v too: the default 0.02 A keeps the distortion that matters here.
    from tests.conftest import demo_path

    reading = pytest.importorskip("dossier.reading")
    loc = reading.read(demo_path("pathway/min_a_opt.out"))
    ts = reading.read(demo_path("pathway/ts_opt.out"))
    if not loc.coordinates_angstrom or not ts.coordinates_angstrom:
        pytest.skip("demo geometries not finished")
    assert detect_symmetry(loc.elements, loc.coordinates_angstrom).symmetry_number == 1
    assert detect_symmetry(ts.elements, ts.coordinates_angstrom).symmetry_number == 2
    assert detect_symmetry(loc.elements, loc.coordinates_angstrom, tolerance_angstrom=0.1).symmetry_number == 2
