"""Localization indicators against outside references (each named beside its check)."""
from __future__ import annotations

import numpy as np
import pytest

from dossier.science import localization as loc
from dossier.records import Calculation, Orbitals, Source, Vibrations
from dinitro_geometry import dinitrobenzene


def _calc(elements, coords, **kw) -> Calculation:
    return Calculation(source=Source(path="synthetic.out", sha256="0" * 64, size_bytes=0),
                       elements=list(elements), coordinates_angstrom=[list(map(float, c)) for c in coords], **kw)


def _dinitrobenzene(reduced: str | None):
    """1,3-dinitrobenzene with the extra electron on `reduced` (None: both nitro groups neutral)."""
    return dinitrobenzene({name: (1.40, 1.27) if name == reduced else (1.47, 1.22) for name in ("nitro_a", "nitro_b")})


def test_bond_detection_matches_ase_neighbour_list():
    # Reference library: ASE neighbour list with natural cutoffs (Cordero radii) x 1.2, on ASE's G2
    # experimental geometries of nitromethane and ethanol.
    ase_build = pytest.importorskip("ase.build")
    from ase.neighborlist import NeighborList, natural_cutoffs

    for name in ("CH3NO2", "CH3CH2OH", "C6H6"):
        atoms = ase_build.molecule(name)
        nl = NeighborList(natural_cutoffs(atoms, mult=1.2), self_interaction=False, bothways=False, skin=0.0)
        nl.update(atoms)
        expected = set()
        for i in range(len(atoms)):
            for j in nl.get_neighbors(i)[0]:
                expected.add((min(i, j), max(i, j)))
        ours = {(i, j) for i, j, _ in loc.bonds(atoms.get_chemical_symbols(), atoms.positions)}
        assert ours == expected, name


def test_geometric_indicator_nitro_groups():
    # The reduced nitro group has the longer N-O bonds and the shorter C-N bond (from memory, see helper):
    # the internal-bond indicator points to it; the bridging bond is shorter there.
    for reduced in ("nitro_a", "nitro_b"):
        el, xyz, sites = _dinitrobenzene(reduced)
        g = loc.geometric_indicator(el, xyz, sites, ["nitro_a", "nitro_b"], sites["bridge"])
        assert g["indicator"] == "internal-bonds"
        assert g["site_of_electron"] == reduced
        other = "nitro_b" if reduced == "nitro_a" else "nitro_a"
        assert g["internal_bond_lengths_angstrom"][reduced] == pytest.approx(1.27, abs=1e-6)
        assert g["bridging_bond_lengths_angstrom"][reduced] == pytest.approx(1.40, abs=1e-6)
        assert g["bridging_bond_lengths_angstrom"][other] == pytest.approx(1.47, abs=1e-6)
        assert g["asymmetry_angstrom"] == pytest.approx(0.05, abs=1e-6)
    el, xyz, sites = _dinitrobenzene(None)
    g = loc.geometric_indicator(el, xyz, sites, ["nitro_a", "nitro_b"], sites["bridge"])
    assert g["site_of_electron"] == "delocalized"


def test_geometric_indicator_single_atom_sites_use_bridging_bonds():
    # Two metal centres on a bridge: the one with the longer metal-ligand bonds is reduced
    # (common practice, no source; Ru(II)-N vs Ru(III)-N differ by a few hundredths of an angstrom, from memory).
    el = ["Ru", "N", "N", "Ru"]
    xyz = [(0, 0, 0), (2.10, 0, 0), (3.40, 0, 0), (5.45, 0, 0)]
    sites = {"ru_a": [0], "ru_b": [3]}
    g = loc.geometric_indicator(el, xyz, sites, ["ru_a", "ru_b"])
    assert g["indicator"] == "bridging-bonds"
    assert g["site_of_electron"] == "ru_a"


def test_population_indicators_and_index():
    el, xyz, sites = _dinitrobenzene("nitro_a")
    n = len(el)
    spin = [0.0] * n
    for i, v in zip(sites["nitro_a"], (0.40, 0.20, 0.20)):
        spin[i] = v
    spin[sites["nitro_b"][0]] = 0.05
    spin[0] = 0.15
    charge = [0.0] * n
    charge[sites["nitro_a"][1]] = -0.6
    charge[sites["nitro_b"][1]] = -0.3
    calc = _calc(el, xyz, charge=-1, multiplicity=2, spin_populations={"mulliken": spin}, charges={"mulliken": charge})
    s = loc.population_indicators(calc, sites, ["nitro_a", "nitro_b"])["mulliken"]
    assert s["spin_by_site"]["nitro_a"] == pytest.approx(0.80)
    # index by hand: |0.80 - 0.05| / (0.80 + 0.05) = 0.882
    assert s["localization_index"] == pytest.approx(0.75 / 0.85)
    assert s["site_of_electron"] == "nitro_a"
    # the anion's extra charge: the more negative site (-0.6 against -0.3 e) carries the electron
    assert s["charge_difference"] == pytest.approx(-0.3)
    assert s["charge_site_of_electron"] == "nitro_a"
    assert loc.localization_index(0.4, 0.4) == 0.0
    full = loc.state_localization(calc, sites, ["nitro_a", "nitro_b"], sites["bridge"])
    assert full["site_of_electron"] == "nitro_a" and full["indicators_agree"] is True
    # disagreeing indicators are flagged: spin on nitro_b but the geometry says nitro_a
    spin_b = [0.0] * n
    spin_b[sites["nitro_b"][0]] = 0.9
    calc_b = _calc(el, xyz, charge=-1, multiplicity=2, spin_populations={"mulliken": spin_b})
    flagged = loc.state_localization(calc_b, sites, ["nitro_a", "nitro_b"], sites["bridge"])
    assert flagged["indicators_agree"] is False
    assert any("disagree" in note for note in flagged["notes"])


def test_somo_share_matches_pyscf_mulliken():
    # Reference library: PySCF UHF on an asymmetric H3 radical (STO-3G); the Mulliken population of the
    # singly occupied orbital's density by pyscf.scf.hf.mulliken_pop must equal our per-site shares,
    # and the per-site spin sums must match pyscf's Mulliken spin populations.
    pyscf = pytest.importorskip("pyscf")
    from pyscf import gto, scf

    mol = gto.M(atom="H 0 0 0; H 0 0 0.80; H 0 0 2.6", basis="sto-3g", spin=1, verbose=0, unit="Angstrom")
    mf = scf.UHF(mol).run()
    s = mol.intor("int1e_ovlp")
    homo_a = int(np.count_nonzero(mf.mo_occ[0]) - 1)
    c = mf.mo_coeff[0][:, homo_a]
    ref_pop, _ = pyscf.scf.hf.mulliken_pop(mol, np.outer(c, c), s, verbose=0)
    basis_atoms = [int(lbl.split()[0]) for lbl in mol.ao_labels()]
    orbitals = Orbitals(energies_hartree=[mf.mo_energy[0].tolist(), mf.mo_energy[1].tolist()],
                        homo_indices=[homo_a, int(np.count_nonzero(mf.mo_occ[1]) - 1)],
                        coefficients=[mf.mo_coeff[0].T.tolist(), mf.mo_coeff[1].T.tolist()],
                        basis_atoms=basis_atoms, overlap=s.tolist())
    (pop_a, pop_b), _ = mf.mulliken_pop(verbose=0)
    spin = (pop_a - pop_b).tolist()
    calc = _calc(["H", "H", "H"], mol.atom_coords(unit="Angstrom"), charge=0, multiplicity=2,
                 orbitals=orbitals, spin_populations={"mulliken": spin})
    sites = {"left": [0, 1], "right": [2]}
    shares = loc.orbital_shares(calc, sites)
    assert shares["somo_share_by_site"]["left"] == pytest.approx(ref_pop[0] + ref_pop[1], abs=1e-10)
    assert shares["somo_share_by_site"]["right"] == pytest.approx(ref_pop[2], abs=1e-10)
    assert sum(shares["somo_share_by_site"].values()) == pytest.approx(1.0, abs=1e-10)
    pops = loc.population_indicators(calc, sites, ["left", "right"])["mulliken"]
    assert pops["spin_by_site"]["right"] == pytest.approx(spin[2], abs=1e-12)
    # the lone H far away carries the unpaired electron in this geometry (the H2 unit is closed-shell)
    assert pops["site_of_electron"] == "right"


def test_imaginary_mode_shares_and_path_overlap():
    el = ["C", "N", "O", "H"]
    xyz = [(0, 0, 0), (1.4, 0, 0), (2.6, 0, 0), (-1.0, 0, 0)]
    mode = [[0.0, 0.0, 0.0], [0.3, 0.0, 0.0], [0.4, 0.0, 0.0], [0.0, 0.0, 0.0]]
    ts = _calc(el, xyz, vibrations=Vibrations(wavenumbers_cm1=[-500.0, 100.0, 200.0, 300.0, 400.0, 500.0],
                                              displacements=[mode] + [[[0.0] * 3] * 4] * 5))
    sh = loc.imaginary_mode_shares(ts, {"a": [1], "b": [2]}, bridge_atoms=[0])
    # by hand: 0.09 / 0.25 and 0.16 / 0.25
    assert sh["share_by_site"]["a"] == pytest.approx(0.36)
    assert sh["share_by_site"]["b"] == pytest.approx(0.64)
    assert sh["hydrogen_share"] == 0.0 and sh["imaginary_cm1"] == -500.0
    # a mode parallel to the (translation-free) reactant -> product difference has |cos| = 1
    delta = np.array([[-0.2, 0, 0], [0.3, 0, 0], [0.1, 0, 0], [-0.2, 0, 0]])
    base = np.array(xyz, dtype=float)
    ts2 = _calc(el, xyz, vibrations=Vibrations(wavenumbers_cm1=[-500.0, 100.0, 200.0, 300.0, 400.0, 500.0],
                                               displacements=[delta.tolist()] + [[[0.0] * 3] * 4] * 5))
    r = _calc(el, base - delta / 2)
    p = _calc(el, base + delta / 2)
    assert loc.mode_overlap_with_path(ts2, r, p) == pytest.approx(1.0, abs=1e-6)


def test_proton_shift_detection():
    el = ["O", "H", "N"]
    a = _calc(el, [(0, 0, 0), (0.97, 0, 0), (2.8, 0, 0)])
    ts = _calc(el, [(0, 0, 0), (1.35, 0, 0), (2.8, 0, 0)])
    b = _calc(el, [(0, 0, 0), (1.78, 0, 0), (2.8, 0, 0)])
    moved = loc.proton_shifts([("a", a), ("ts", ts), ("b", b)])
    assert moved["proton_transfer"] is True
    assert moved["moves"][0]["nearest_heavy_atom"] == {"a": "O1", "ts": "O1", "b": "N3"}
    assert "proton-coupled" in moved["statement"]
    still = loc.proton_shifts([("a", a), ("b", a)])
    assert still["proton_transfer"] is False and "without a proton" in still["statement"]
