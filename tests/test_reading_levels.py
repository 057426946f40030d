"""Issue 14 on the real third-party fixture logs (../shared/fixtures/qc-logs): the energy of the
level each job asks for, every level it completes, excited-state jobs on their reference,
ORCA 6 frequencies, ROCIS, basis/solvation labels, orbital energies per spin, transition
dipoles, statuses that never say "ok" without the data, xtb's coordinate file and g98.out.
Every expected number is the log's own printed value, found by the test's own pattern."""
from __future__ import annotations

import re
import shutil

import numpy as np
import pytest

from conftest import fixture_path
from dossier.errors import ReadError
from dossier.reading import read
from dossier.reading.cclib_adapter import parse_with_cclib
from dossier.reading.supplements import orca_blocks
from test_reading_fixtures import G16, NW, O5, O6, P4, QC, XT, assert_printed, printed, rec, text

QC6 = "QChem/basicQChem6.0/"

# -- the level asked for, every level completed ---------------------------------------------

# (log, route/input method, energy_level, {level: pattern of its printed line})
GAUSSIAN_LADDER = [
    ("water_mp2.log", "MP2", "mp2", {}),
    ("water_mp3.log", "MP3", "mp3", {}),
    # " E4(SDTQ)= -0.32671217D-02        UMP4(SDTQ)= -0.75016068053D+02"
    ("water_mp4.log", "MP4", "mp4", {"mp4(sdq)": r"UMP4\(SDQ\)=\s+(\S+)", "mp4": r"UMP4\(SDTQ\)=\s+(\S+)"}),
    # " Wavefunction amplitudes converged. E(Corr)=     -75.017378003"
    ("water_ccd.log", "CCD", "ccd", {"mp4(dq)": r"UMP4\(DQ\)=\s+(\S+)", "ccd": r"amplitudes converged\. E\(Corr\)=\s+(\S+)"}),
    ("water_ccsd.log", "CCSD", "ccsd", {"mp4(sdq)": r"UMP4\(SDQ\)=\s+(\S+)", "ccsd": r"amplitudes converged\. E\(Corr\)=\s+(\S+)"}),
    # " CCSD(T)= -0.75017760422D+02"
    ("water_ccsdt.log", "CCSD(T)", "ccsd(t)", {"ccsd": r"amplitudes converged\. E\(Corr\)=\s+(\S+)",
                                               "ccsd(t)": r"^ CCSD\(T\)= (\S+D\S+)"}),
]

#: Gaussian archive keys (the "\HF=-74.9643288\MP2=-75.0022821\...\" summary) -> record keys
ARCHIVE_KEYS = {"HF": "scf", "MP2": "mp2", "MP3": "mp3", "MP4DQ": "mp4(dq)", "MP4SDQ": "mp4(sdq)", "MP4SDTQ": "mp4",
                "CCD": "ccd", "CCSD": "ccsd", "CCSD(T)": "ccsd(t)"}


def archive_levels(rel):
    """{record key: value} from the log's archive entry (7 decimals), the program's own summary."""
    t = text(rel)
    block = "".join(line[1:] for line in t[t.rfind(" 1\\1\\") :].split("@")[0].split("\n"))
    return {ARCHIVE_KEYS[k]: float(v) for k, v in re.findall(r"\\([A-Z0-9()]+)=(-?\d+\.\d+)", block) if k in ARCHIVE_KEYS}


@pytest.mark.parametrize("name,method,level,lines", GAUSSIAN_LADDER)
def test_gaussian_energy_is_the_level_the_route_asks_for(name, method, level, lines):
    c = rec(G16 + name)
    assert c.status.word == "ok", c.status.reason
    assert c.level.method == method and c.energy_level == level
    assert c.energy_hartree == c.energies_hartree[level]
    for key, pattern in lines.items():
        assert_printed(c.energies_hartree[key], G16 + name, pattern)
    # every level the archive summary lists is in the record, equal to its 7 printed decimals,
    # and the record holds no level the archive does not list
    arch = archive_levels(G16 + name)
    assert set(arch) == set(c.energies_hartree), (arch, c.energies_hartree)
    for key, value in arch.items():
        assert c.energies_hartree[key] == pytest.approx(value, abs=0.51e-7), key


def test_gaussian_ccsd_is_not_mp4():
    # the bug of issue 14: CCSD reported as MP4(SDQ) -75.016013656, 4.4 kJ/mol off
    c = rec(G16 + "water_ccsd.log")
    assert c.energy_hartree == pytest.approx(-75.017683639, abs=1e-9)  # "amplitudes converged. E(Corr)= -75.017683639"
    assert c.level.label() == "CCSD/STO-3G"
    assert rec(G16 + "water_ccd.log").level.label() == "CCD/STO-3G"


@pytest.mark.parametrize("rel,method,level,pattern", [
    # "CCD total energy          = -75.01737790"
    (QC + "water_ccd.out", "CCD", "ccd", r"^\s*CCD total energy\s+=\s+(\S+)"),
    # "E(CCSD(T))                                 ...    -75.013556310"
    (O5 + "water_ccsd_t.out", "CCSD(T)", "ccsd(t)", r"^E\(CCSD\(T\)\)\s+\.\.\.\s+(\S+)"),
    # "      * CCSD(T) total energy                  =  -75.017834880709472"
    (P4 + "water_ccsd(t).out", "CCSD(T)", "ccsd(t)", r"\* CCSD\(T\) total energy\s+=\s+(\S+)"),
    # " CCSD(T) total energy / hartree       =       -75.017834858913247"
    (NW + "water_ccsd(t).out", "CCSD(T)", "ccsd(t)", r"CCSD\(T\) total energy / hartree\s+=\s+(\S+)"),
])
def test_correlated_jobs_of_other_programs(rel, method, level, pattern):
    c = rec(rel)
    assert c.status.word == "ok" and c.level.method == method and c.energy_level == level
    assert_printed(c.energy_hartree, rel, pattern)


def test_qchem_ccd_keeps_mp2_and_scf():
    c = rec(QC + "water_ccd.out")
    assert_printed(c.energies_hartree["mp2"], QC + "water_ccd.out", r"^\s*MP2 energy\s+=\s+(\S+)")  # "MP2 energy = -75.00228210"
    assert_printed(c.energies_hartree["scf"], QC + "water_ccd.out", r"Total energy in the final basis set =\s+(\S+)")
    assert c.energy_hartree < c.energies_hartree["mp2"] < c.energies_hartree["scf"]


def test_water_ladder_agrees_across_programs():
    # same water geometry (R = 0.99 A, 106 deg: the inputs) and STO-3G in Gaussian, Q-Chem, Psi4, NWChem
    g, q, p, n = (rec(G16 + "water_ccd.log"), rec(QC + "water_ccd.out"), rec(P4 + "water_ccsd(t).out"),
                  rec(NW + "water_ccsd(t).out"))
    for c in (q, p, n):
        assert c.energies_hartree["scf"] == pytest.approx(g.energies_hartree["scf"], abs=1e-7)
    # Gaussian (-FC) and Q-Chem ("Core orbitals will be frozen") both freeze the O 1s: same MP2 and CCD
    assert q.energies_hartree["mp2"] == pytest.approx(g.energies_hartree["mp2"], abs=1e-7)
    # (Q-Chem prints 8 decimals, Gaussian 9: 2e-7 allows rounding plus convergence)
    assert q.energies_hartree["ccd"] == pytest.approx(g.energies_hartree["ccd"], abs=2e-7)
    # Psi4 and NWChem correlate all electrons: same CCSD and CCSD(T), 1e-7 (convergence thresholds)
    for key in ("ccsd", "ccsd(t)"):
        assert p.energies_hartree[key] == pytest.approx(n.energies_hartree[key], abs=1e-7)
    # frozen core raises the correlated energy (fewer correlated pairs): Gaussian's CCSD(T) above Psi4's
    assert rec(G16 + "water_ccsdt.log").energies_hartree["ccsd(t)"] > p.energies_hartree["ccsd(t)"]


def test_optimisations_are_tagged_optimisation():
    for rel in (G16 + "dvb_gopt.out", NW + "dvb_gopt_ks.out", QC + "dvb_gopt.out", P4 + "dvb_gopt_rks.out",
                O5 + "dvb_gopt.out", O6 + "dvb_gopt.out", XT + "dvb_opt/dvb_opt.out"):
        assert rec(rel).job_kinds == ["optimization"], rel
        assert rec(rel).status.optimization_converged is True, rel


# -- excited-state jobs: ground-state reference with the right label, plus the states --------

@pytest.mark.parametrize("rel,excited,pattern", [
    (G16 + "dvb_td.out", "TDDFT", r"SCF Done:\s+E\(RB3LYP\) =\s+(\S+)"),
    # "TD-DFT/TDA EXCITED STATES (SINGLETS)"; ground state "Total Energy       :  -382.05510710682..."
    (O6 + "dvb_td.out", "TDDFT/TDA", r"^Total Energy\s+:\s+(\S+) Eh"),
    # "TDDFT/TDA Excitation Energies"
    (QC + "dvb_td.out", "TDDFT/TDA", r"Total energy in the final basis set =\s+(\S+)"),
    # "Calculation type : TDDFT"
    (NW + "dvb_td.out", "TDDFT", r"Total DFT energy =\s+(\S+)"),
])
def test_tddft_jobs_report_the_dft_ground_state(rel, excited, pattern):
    c = rec(rel)
    assert (c.level.method, c.level.functional, c.level.excited_method) == ("DFT", "B3LYP", excited)
    assert c.energy_level == "scf" and c.excited_states
    assert_printed(c.energy_hartree, rel, pattern)


def test_orca6_rocis():
    rel = O6 + "dvb_rocis.out"
    c = rec(rel)
    assert c.status.word == "ok" and c.level.method == "HF" and c.level.excited_method == "ROCIS"
    # the reference: "Total Energy       :       -379.58724141202936 Eh"
    assert_printed(c.energy_hartree, rel, r"^Total Energy\s+:\s+(\S+) Eh")
    # the ROCIS root 0, kept as its own level: "FINAL SINGLE POINT ENERGY      -380.892798900059"
    assert_printed(c.energies_hartree["rocis"], rel, r"FINAL SINGLE POINT ENERGY\s+(\S+)")
    doublets = [s for s in c.excited_states if s.symmetry == "Doublet-A"]
    quartets = [s for s in c.excited_states if s.symmetry == "Quartet"]
    assert len(doublets) == 4 and len(quartets) == 5  # NRoots 5 (root 0 is the ground state); S'=S+1 roots
    # "  0-2A  ->  1-2A   291.659506 2352392.8     4.3   0.030923917   0.00433  -0.00000  -0.00000  -0.06579"
    first = doublets[0]
    assert (first.energy_ev, first.energy_cm1, first.oscillator_strength) == (291.659506, 2352392.8, 0.030923917)
    assert first.transition_dipole_au == [0.0, 0.0, -0.06579]
    # "STATE   0   Exc. Energy: 10864.905mEh  295.649eV     2384570.9cm**-1" (S'=S+1)
    assert quartets[0].energy_cm1 == 2384570.9 and quartets[0].energy_ev == pytest.approx(295.649, abs=5e-4)
    # f = 2/3 dE |mu|^2 in atomic units (Hilborn, Am. J. Phys. 50, 982 (1982), eq. for the
    # absorption oscillator strength): the table's f from its own dipole and energy
    de_hartree = first.energy_ev / 27.211386245988  # CODATA 2018 hartree in eV
    assert first.oscillator_strength == pytest.approx(2 / 3 * de_hartree * 0.06579 ** 2, rel=2e-3)


# -- ORCA 6 frequencies ---------------------------------------------------------------------

def test_orca6_frequencies_with_irrep_column():
    rel = O6 + "dvb_ir.out"
    c = rec(rel)
    assert c.status.word == "ok" and "cclib skipped" not in " ".join(c.problems)
    v = c.vibrations
    assert len(v.wavenumbers_cm1) == 54 and c.n_imaginary == 0
    # "     6:      43.87 cm**-1    2-Au" and "    59:    3546.41 cm**-1   20-Ag"
    assert v.wavenumbers_cm1[0] == 43.87 and v.wavenumbers_cm1[-1] == 3546.41
    # " 50:   3394.10   0.019215   97.10  0.001767  (-0.040873 -0.009802 -0.000000)"
    assert v.ir_intensities_km_mol[v.wavenumbers_cm1.index(3394.10)] == 97.10
    assert np.asarray(v.displacements).shape == (54, 20, 3)
    # first normal-mode column of mode 6, atom 1 z: row "    2   0.223607   0.000000   0.000000 ..." -> 0.078313
    assert v.displacements[0][0] == [0.0, 0.0, 0.078313]
    # printed thermochemistry: "Total Enthalpy ... -381.86823509 Eh", "Final Gibbs free energy ... -381.91114546 Eh"
    pt = c.printed_thermo
    assert_printed(pt.enthalpy_hartree, rel, r"^Total Enthalpy\s+\.\.\.\s+(\S+) Eh")
    assert_printed(pt.gibbs_hartree, rel, r"^Final Gibbs free energy\s+\.\.\.\s+(\S+) Eh")
    assert_printed(pt.zpe_hartree, rel, r"^Zero point energy\s+\.\.\.\s+(\S+) Eh")
    # ORCA 5 and ORCA 6, same functional, basis and (nearly) geometry: all modes within 3 cm-1
    # (common practice, no source: grid and convergence differences)
    assert v.wavenumbers_cm1 == pytest.approx(rec(O5 + "dvb_ir.out").vibrations.wavenumbers_cm1, abs=3)


def test_orca_text_frequency_reader_equals_cclib_on_orca5():
    # the layout without point group / irrep column: cclib 1.8.1 reads it, and the text reader must agree
    t = text(O5 + "dvb_ir.out")
    data, _notes, _skipped = parse_with_cclib(t, "ORCA")
    v = orca_blocks.vibrations(t)
    assert v.wavenumbers_cm1[6:] == pytest.approx(list(data.vibfreqs), abs=0)
    assert np.array_equal(np.asarray(v.displacements)[6:], data.vibdisps)
    assert v.ir_intensities_km_mol[6:] == pytest.approx(list(data.vibirs), abs=0)


def _without(rel, start, stop, tmp_path, name):
    t = fixture_path(rel).read_text()
    i, j = t.index(start), t.index(stop)
    out = tmp_path / name
    out.write_text(t[:i] + t[j:])
    return out


def test_frequency_job_without_frequencies_is_not_ok(tmp_path):
    # the ORCA 6.0.1 frequency log with its frequency, normal-mode and IR blocks cut out
    out = _without(O6 + "dvb_ir.out", "-----------------------\nVIBRATIONAL FREQUENCIES", "--------------------------\nTHERMOCHEMISTRY",
                   tmp_path, "freq_cut.out")
    c = read(out, use_cache=False)
    assert c.vibrations is None
    assert c.status.word == "incomplete" and "frequencies" in c.status.reason
    assert c.energy_hartree is not None  # the SCF energy is still right


def test_a_run_without_any_task_failed(tmp_path):
    # NWChem water log with every task cut out: the input module, then the end summary only
    # (what an input that ends before its task line gives)
    t = fixture_path(NW + "water_ccsd(t).out").read_text()
    i = t.index("                                 NWChem SCF Module")
    j = t.rindex("                                NWChem Input Module")
    out = tmp_path / "noop.out"
    out.write_text(t[:i] + t[j:])
    c = read(out, use_cache=False)
    assert c.status.word == "failed" and "no calculation was run" in c.status.reason
    assert c.energy_hartree is None


# -- labels: mixed basis, solvation, dispersion ---------------------------------------------

def test_gen_ecp_basis_label_by_element():
    c = rec(G16 + "Mo4OCl4-sp.log")
    # route "#B3LYP/Gen pseudo=read"; " Centers:       1      3      4      5      6 / LanL2MB / ****" and
    # " Centers:       2 / 6-31G(d)"; atoms Mo, O, Cl x4 (the log's coordinates)
    assert c.elements == ["Mo", "O", "Cl", "Cl", "Cl", "Cl"]
    assert c.level.basis == "Gen/ECP (Mo, Cl: LanL2MB; O: 6-31G(d))"
    assert c.level.label() == "B3LYP/Gen/ECP (Mo, Cl: LanL2MB; O: 6-31G(d))"
    assert c.energy_level == "scf" and c.charge == -2
    assert_printed(c.energy_hartree, G16 + "Mo4OCl4-sp.log", r"SCF Done:\s+E\(RB3LYP\) =\s+(\S+)")


def test_solvation_labels():
    # ORCA CPCM: "|  9> %cpcm / epsilon 2.3741" (set by hand, no named solvent)
    assert rec(O6 + "water_hf_solvent_cpcm.log").level.solvation == "CPCM (eps=2.3741)"
    # ORCA SMD: "Solvent: ... TOLUENE", "Epsilon ... 2.3741"
    assert rec(O6 + "water_hf_solvent_smd.log").level.solvation == "SMD (toluene, eps=2.3741)"
    # Q-Chem SMD: "Solvent: toluene", "f(eps) = (eps-1)/(eps+0.5) = 0.477352" -> eps = 2.37
    q = rec(QC6 + "water_hf_solvent_smd.out")
    f, _ = printed(QC6 + "water_hf_solvent_smd.out", r"\(eps-1\)/\(eps\+0\.5\) = (\S+)")
    assert q.level.solvation == "SMD (toluene, eps=2.37)"
    assert (2.37 - 1) / (2.37 + 0.5) == pytest.approx(f, abs=1e-6)
    # same water geometry and HF/STO-3G as Gaussian's gas-phase runs: solvation lowers the energy
    # (a free energy of solvation is negative for water in toluene, from memory: a few kcal/mol)
    dg_kcal = (q.energy_hartree - rec(G16 + "water_mp2.log").energies_hartree["scf"]) * 627.5094740631
    assert -5 < dg_kcal < 0
    for rel in (G16 + "dvb_td.out", NW + "dvb_td.out", P4 + "dvb_sp_uks.out", QC + "dvb_td.out", O6 + "dvb_td.out"):
        assert rec(rel).level.solvation is None and rec(rel).level.dispersion is None, rel


# -- orbital energies per spin, transition dipoles --------------------------------------------

def _row_values(rel, pattern):
    """Numbers of the last run of consecutive lines matching `pattern` (the final SCF's table)."""
    blocks = re.findall(r"((?:" + pattern + r"\n)+)", text(rel), re.M)
    return [float(x) for line in blocks[-1].splitlines() for x in line.split("--")[1].split()]


def test_orbital_energies_per_spin_in_hartree():
    # Gaussian: " Alpha  occ. eigenvalues --  -10.25357 -10.25352 ..." (hartree, 5 decimals);
    # cclib keeps them in eV, the record converts back
    g = rec(G16 + "dvb_un_sp.log").summary_dict()["orbital_energies_hartree"]
    assert set(g) == {"alpha", "beta"}
    alpha_occ = _row_values(G16 + "dvb_un_sp.log", r"^ Alpha  occ\. eigenvalues --.*")
    beta_occ = _row_values(G16 + "dvb_un_sp.log", r"^  Beta  occ\. eigenvalues --.*")
    n_a, n_b = len(alpha_occ), len(beta_occ)
    assert g["alpha"][:n_a] == pytest.approx(alpha_occ, abs=0.51e-5)
    assert g["beta"][:n_b] == pytest.approx(beta_occ, abs=0.51e-5)
    assert n_a == n_b + 1 == 35  # dvb cation: 69 electrons
    # ORCA 6 table "  NO   OCC          E(Eh)" under "SPIN DOWN ORBITALS": "   0   1.0000     -11.296091"
    o = rec(O6 + "dvb_sp_un_hf.out").summary_dict()["orbital_energies_hartree"]
    assert o["beta"][0] == -11.296091
    # the same cation, same functional and basis: the alpha HOMO (SOMO) and beta LUMO of Gaussian,
    # NWChem (" Vector   35  Occ=1.000000D+00  E=-3.697074D-01") and Psi4 within 2 mEh (grids)
    for rel in (NW + "dvb_un_sp_ks.out", P4 + "dvb_sp_uks.out"):
        other = rec(rel).summary_dict()["orbital_energies_hartree"]
        assert other["alpha"][34] == pytest.approx(g["alpha"][34], abs=2e-3), rel
        assert other["beta"][34] == pytest.approx(g["beta"][34], abs=2e-3), rel
    assert rec(NW + "dvb_un_sp_ks.out").orbitals.energies_hartree[0][34] == pytest.approx(-0.3697074, abs=1e-7)
    # restricted runs: one channel, "alpha"
    assert set(rec(G16 + "dvb_td.out").summary_dict()["orbital_energies_hartree"]) == {"alpha"}


def test_qchem_transition_dipoles():
    rel = QC + "dvb_td.out"
    c = rec(rel)
    rows = re.findall(r"excitation energy \(eV\) =\s+(\S+).*?Trans\. Mom\.:\s+(\S+) X\s+(\S+) Y\s+(\S+) Z\s*\n\s+Strength\s+:\s+(\S+)",
                      text(rel), re.S)
    assert len(rows) == len(c.excited_states) == 10
    for st, (e, x, y, z, f) in zip(c.excited_states, rows):
        assert st.transition_dipole_au == [float(x), float(y), float(z)]
        # f = 2/3 dE |mu|^2 in atomic units (Hilborn, Am. J. Phys. 50, 982 (1982)); the printed
        # dipole has 4 decimals, so the check is loose for weak bands
        mu2 = float(x) ** 2 + float(y) ** 2 + float(z) ** 2
        assert 2 / 3 * float(e) / 27.211386245988 * mu2 == pytest.approx(float(f), abs=2e-3)


# -- xtb: g98.out, coordinate file ------------------------------------------------------------

def test_xtb_g98_file_is_refused_by_name():
    with pytest.raises(ReadError, match=r"g98\.out.*xtb|xtb.*g98\.out"):
        read(fixture_path(XT + "dvb_ir/g98.out"), use_cache=False)


def _g98_geometry():
    t = text(XT + "dvb_ir/g98.out")
    block = t[t.index("Standard orientation:") :].split("\n ----")[2].split("\n", 1)[1]
    rows = [r.split() for r in block.strip().splitlines()]
    return [{1: "H", 6: "C"}[int(r[1])] for r in rows], [[float(v) for v in r[3:6]] for r in rows]


def test_xtb_geometry_from_the_coordinate_file_beside_the_log(tmp_path):
    # xtb's Hessian run does not move the atoms: the geometry it wrote into g98.out
    # ("Standard orientation") is the one it read from dvb_ir.xyz ("coordinate file : dvb_ir.xyz")
    elements, coords = _g98_geometry()
    shutil.copy(fixture_path(XT + "dvb_ir/dvb_ir.out"), tmp_path / "dvb_ir.out")
    alone = read(tmp_path / "dvb_ir.out", use_cache=False)
    assert alone.coordinates_angstrom == [] and alone.geometry_source is None
    assert "the log prints no coordinates for this job" in alone.problems
    (tmp_path / "dvb_ir.xyz").write_text(
        f"{len(elements)}\nfrom g98.out\n" + "".join(f"{e} {x} {y} {z}\n" for e, (x, y, z) in zip(elements, coords)))
    for use_cache in (False, True, True):  # fresh, stored, then from the cache
        c = read(tmp_path / "dvb_ir.out", use_cache=use_cache, cache_dir=tmp_path / "cache")
        assert c.coordinates_angstrom == coords and c.elements == elements
        assert "dvb_ir.xyz" in c.geometry_source and c.status.word == "ok"
        assert "the log prints no coordinates for this job" not in c.problems
    # an optimisation's input file is its start geometry: never adopted
    shutil.copy(fixture_path(XT + "dvb_opt/dvb_opt.out"), tmp_path / "dvb_opt.out")
    shutil.copy(tmp_path / "dvb_ir.xyz", tmp_path / "dvb_opt.xyz")
    assert read(tmp_path / "dvb_opt.out", use_cache=False).geometry_source is None


def test_json_keys_of_issue_14():
    d = rec(G16 + "water_ccsd.log").summary_dict()
    assert d["energy_level"] == "ccsd" and d["energy_hartree"] == d["energies_hartree"]["ccsd"]
    assert d["level_of_theory"]["excited_method"] is None and d["geometry_source"] is None
    assert rec(G16 + "dvb_td.out").summary_dict()["level_of_theory"]["excited_method"] == "TDDFT"
