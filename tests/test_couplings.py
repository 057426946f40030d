"""Coupling routes, fragments, the two-sphere solvent model and the distance fit
(dossier.science.couplings, fragments, solvent, exchange), each against an outside reference
named beside the check."""
from __future__ import annotations

import math
import re

import numpy as np
import pytest
from scipy import constants as sc

from dossier import units as u
from dossier.reading import read
from dossier.science import couplings as cp
from dossier.science import exchange, fragments, solvent
from tests.conftest import H2_DIMER, demo_path, fixture_path

# -- carriers, Koopmans and charge resonance on a real dimer run, cross-checked with PySCF ------------------
def test_carrier_named_from_the_charge():
    # definition (issue 13): cation -> hole, anion -> electron
    assert cp.carrier_from_charge(1) == "hole"
    assert cp.carrier_from_charge(-1) == "electron"
    assert cp.carrier_from_charge(0) is None


@pytest.mark.slow
def test_koopmans_and_charge_resonance_match_pyscf(h2_runs):
    pyscf = pytest.importorskip("pyscf")
    from pyscf import dft, gto, tdscf

    neutral, cation = read(h2_runs["neutral"], use_cache=False), read(h2_runs["cation"], use_cache=False)
    pair = cp.frontier_orbitals(neutral.orbitals.energies_hartree[0], neutral.orbitals.homo_indices[0], "hole")
    h_koopmans = cp.koopmans_coupling_cm1(pair["splitting_hartree"])
    axis = fragments.axis_between(cation.coordinates_angstrom, [0, 1], [2, 3])
    xs = cation.excited_states
    root = cp.charge_resonance_root([x.oscillator_strength for x in xs], [x.transition_dipole_au for x in xs], axis)
    h_cr = cp.coupling_from_charge_resonance_cm1(xs[root["index"]].energy_cm1)

    # Reference: PySCF, same functional (BHLYP = libxc BHANDHLYP: 0.5 HF + 0.5 B88, LYP) and basis
    atom = "; ".join(f"{e} {x} {y} {z}" for e, x, y, z in H2_DIMER)
    mol = gto.M(atom=atom, basis="6-31g", charge=0, spin=0, verbose=0)
    mf = dft.RKS(mol)
    mf.xc = "bhandhlyp"
    mf.kernel()
    homo = mol.nelectron // 2 - 1
    ref_koopmans = (mf.mo_energy[homo] - mf.mo_energy[homo - 1]) / 2 * u.HARTREE_CM1
    assert h_koopmans == pytest.approx(ref_koopmans, rel=1e-3)  # PySCF 2.x orbital energies
    ion = gto.M(atom=atom, basis="6-31g", charge=1, spin=1, verbose=0)
    umf = dft.UKS(ion)
    umf.xc = "bhandhlyp"
    umf.kernel()
    td = tdscf.TDDFT(umf)
    td.nstates = 4
    td.kernel()
    f = td.oscillator_strength()
    tdm = td.transition_dipole()
    along = [i for i in range(4) if abs(tdm[i][0]) / max(np.linalg.norm(tdm[i]), 1e-12) >= cp.AXIS_COSINE_MIN]
    ref_root = max(along, key=lambda i: f[i])
    assert root["index"] == ref_root  # the same root by the same rule on PySCF's states
    assert h_cr == pytest.approx(td.e[ref_root] / 2 * u.HARTREE_CM1, rel=2e-3)  # PySCF TDDFT (UKS)


@pytest.mark.slow
def test_gmh_from_the_printed_transition_dipole(h2_runs):
    text = open(h2_runs["cation"]).read()
    # the log's own printed numbers (root 1: energy in a.u., transition moment X in e bohr)
    energy_au = float(re.search(r"Root\s+1\s+\S+\s+([\d.]+) a\.u\.", text).group(1))
    mu_x = abs(float(re.search(r"Transition Moments\s+X\s+(\S+)", text).group(1)))
    gap_cm1 = energy_au * sc.physical_constants["hartree-inverse meter relationship"][0] / 100.0  # CODATA
    dmu = 0.8  # e bohr, a dipole difference chosen for the hand calculation
    hand = mu_x * gap_cm1 / math.sqrt(dmu**2 + 4 * mu_x**2)  # Cave & Newton, Chem. Phys. Lett. 1996, 249, 15, eq. 7
    assert cp.gmh_coupling_cm1(mu_x, dmu, gap_cm1) == pytest.approx(hand, rel=1e-9)
    # with no dipole difference GMH is half the gap (Cave & Newton 1996: the symmetric limit)
    assert cp.gmh_coupling_cm1(mu_x, 0.0, gap_cm1) == pytest.approx(gap_cm1 / 2, rel=1e-12)


def test_frontier_orbitals_for_a_hole_and_an_electron():
    # definition (Koopmans' theorem): hole HOMO-1/HOMO, electron LUMO/LUMO+1
    e = [-0.6, -0.5, -0.45, 0.05, 0.09]
    assert cp.frontier_orbitals(e, 2, "hole")["names"] == ["HOMO-1", "HOMO"]
    assert cp.frontier_orbitals(e, 2, "hole")["splitting_hartree"] == pytest.approx(0.05)
    assert cp.frontier_orbitals(e, 2, "electron")["splitting_hartree"] == pytest.approx(0.04)
    with pytest.raises(cp.CouplingError):
        cp.frontier_orbitals(e, 4, "electron")


def test_no_root_along_the_axis_is_an_error():
    with pytest.raises(cp.CouplingError, match="stacking axis"):
        cp.charge_resonance_root([0.1, 0.2], [[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]], [1.0, 0.0, 0.0])


# -- distance fit ------------------------------------------------------------------------------------------
def test_exponential_fit_recovers_beta_from_a_synthetic_series():
    r = np.array([3.4, 3.8, 4.2, 4.6, 5.0])
    h = 800.0 * np.exp(-1.7 * (r - 3.4) / 2)  # the model itself, beta = 1.7 per angstrom
    fit = cp.exponential_decay_fit(r, h)
    assert fit["beta_per_angstrom"] == pytest.approx(1.7, rel=1e-9)
    assert fit["h0_cm1"] == pytest.approx(800.0, rel=1e-9)
    rng = np.random.default_rng(13)
    noisy = h * np.exp(rng.normal(0.0, 0.05, size=r.size))
    fit = cp.exponential_decay_fit(r, noisy)
    # ordinary least squares: the true slope lies within 3 standard errors (scipy.stats.linregress)
    assert abs(fit["beta_per_angstrom"] - 1.7) < 3 * fit["beta_error_per_angstrom"]
    assert fit["beta_error_per_angstrom"] > 0
    with pytest.raises(cp.CouplingError, match="three separations"):
        cp.exponential_decay_fit([3.5, 4.0], [100.0, 50.0])


# -- fragments and radii -----------------------------------------------------------------------------------
def test_radius_tables_match_ase():
    from ase.data import atomic_numbers, covalent_radii, vdw_radii

    for el, r in fragments.COVALENT_RADII_ANGSTROM.items():
        assert r == pytest.approx(covalent_radii[atomic_numbers[el]], abs=0.011), el  # ASE: Cordero 2008
    for el, r in fragments.VDW_RADII_ANGSTROM.items():
        if not math.isnan(vdw_radii[atomic_numbers[el]]):
            assert r == pytest.approx(vdw_radii[atomic_numbers[el]], abs=0.011), el  # ASE: Bondi 1964


def test_fragments_of_a_real_molecule_and_its_copy_match_ase():
    from ase import Atoms
    from ase.neighborlist import natural_cutoffs, neighbor_list
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    rec = read(str(demo_path("fourpoint/neutral_opt.out")))
    xyz = np.asarray(rec.coordinates_angstrom)
    normal = np.linalg.svd(xyz - xyz.mean(axis=0))[2][-1]  # normal of the ring plane
    dimer_xyz = np.vstack([xyz, xyz + 3.6 * normal])  # a cofacial copy 3.6 A away
    elements = rec.elements * 2
    found = fragments.fragments(elements, dimer_xyz)
    assert [len(f) for f in found] == [rec.n_atoms, rec.n_atoms]
    atoms = Atoms(symbols=elements, positions=dimer_xyz)
    i, j = neighbor_list("ij", atoms, natural_cutoffs(atoms, mult=fragments.BOND_FACTOR))
    n, labels = connected_components(coo_matrix((np.ones(len(i)), (i, j)), shape=(len(atoms),) * 2))
    assert n == 2  # ASE neighbour list + scipy connected components agree on the molecules
    assert sorted(sorted(np.nonzero(labels == k)[0].tolist()) for k in range(n)) == found
    assert fragments.separation_angstrom(dimer_xyz, found[0], found[1]) == pytest.approx(3.6, abs=1e-9)


def test_van_der_waals_volume_of_spheres():
    r = 1.7
    # one atom: the sphere 4/3 pi r^3 (geometry)
    one = fragments.van_der_waals_volume_angstrom3(["C"], [[0.0, 0.0, 0.0]])
    assert one == pytest.approx(4 / 3 * math.pi * r**3, rel=0.01)
    # two atoms d apart: two spheres less the lens pi (4r + d)(2r - d)^2 / 12 (geometry of intersecting spheres)
    d = 1.4
    two = fragments.van_der_waals_volume_angstrom3(["C", "C"], [[0.0, 0.0, 0.0], [d, 0.0, 0.0]])
    assert two == pytest.approx(2 * 4 / 3 * math.pi * r**3 - math.pi * (4 * r + d) * (2 * r - d) ** 2 / 12, rel=0.01)
    assert fragments.volume_sphere_radius_angstrom(["C"], [[0.0, 0.0, 0.0]]) == pytest.approx(r, rel=0.004)


# -- two-sphere outer reorganization ---------------------------------------------------------------------
def test_two_sphere_lambda_against_codata_and_a_textbook_estimate():
    a, R = 3.5, 7.0
    water = solvent.SOLVENTS["water"]
    lam = solvent.two_sphere_reorganization_kj_mol(a, a, R, water.optical_dielectric, water.static_dielectric)
    # the formula written out in eV with CODATA constants (scipy.constants): e^2/(4 pi eps0) in eV angstrom
    e2 = sc.e / (4 * sc.pi * sc.epsilon_0) / sc.angstrom
    ref_ev = e2 * (1 / (2 * a) + 1 / (2 * a) - 1 / R) * (1 / water.refractive_index**2 - 1 / water.static_dielectric)
    assert lam / u.EV_KJ_MOL == pytest.approx(ref_ev, rel=1e-12)
    assert e2 == pytest.approx(14.3996, rel=1e-5)  # e^2/(4 pi eps0) = 14.40 eV A (CODATA 2018)
    # Textbook order of magnitude (from memory: Marcus & Sutin, Biochim. Biophys. Acta 1985, 811, 265 discuss
    # lambda_out of about 1 eV for ions of 3-4 A radius in water at contact)
    assert 0.9 < ref_ev < 1.3
    # touching spheres: the model's own limit
    assert solvent.spheres_touch(3.5, 3.5, 6.9) and not solvent.spheres_touch(3.5, 3.5, 7.0)
    with pytest.raises(solvent.SolventError):
        solvent.pekar_factor(2.0, 1.5)


def test_solvent_table_is_physical():
    # every entry: 1 < n^2 <= eps_s (a dielectric's static response includes its optical one; Marcus 1956)
    for s in solvent.SOLVENTS.values():
        assert 1.0 < s.optical_dielectric <= s.static_dielectric, s.name
        assert "CRC" in s.source


# -- four-point shares ------------------------------------------------------------------------------------
def _printed_dft_energy(path) -> float:
    return float(re.findall(r"Total DFT energy =\s+(\S+)", open(path).read())[-1])


def test_self_exchange_lambda_is_the_four_point_sum_of_the_printed_energies():
    names = ("neutral_opt", "neutral_at_anion", "anion_opt", "anion_at_neutral")
    e = [_printed_dft_energy(demo_path(f"fourpoint/{n}.out")) for n in names]  # the logs' own printed energies
    hartree_kj_mol = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000  # CODATA
    by_hand = ((e[1] - e[0]) + (e[3] - e[2])) * hartree_kj_mol  # Nelsen et al. 1987: lambda_1 + lambda_2
    share = exchange.molecule_reorganization_kj_mol(*e)
    assert 2 * share == pytest.approx(by_hand, rel=1e-9)
    l1, l2 = exchange.relaxation_energies_kj_mol(*e)
    assert l1 == pytest.approx((e[3] - e[2]) * hartree_kj_mol, rel=1e-9)


def test_rungs_of_a_coupled_cluster_log():
    from dossier.analysis.transfers import rung_label

    rec = read(str(fixture_path("Psi4/basicPsi4-1.7/water_ccsd(t).out")), use_cache=False)
    labels = [rung_label(rec, k) for k in rec.energies_hartree]
    # the log prints SCF, MP2, CCSD and CCSD(T) (its own printed levels): each is a rung
    assert any(lab.startswith("HF/") for lab in labels)
    assert any(lab.startswith("CCSD(T)/") for lab in labels)
    assert any(lab.startswith("MP2/") for lab in labels)
