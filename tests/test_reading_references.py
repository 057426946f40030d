"""The reading layer against outside references: a PySCF recomputation of a parsed energy
at the parsed geometry, and a real NWChem run made during the test and read back."""
from __future__ import annotations

import re
import subprocess

import pytest

from conftest import fixture_path, require_program
from dossier.reading import read


@pytest.mark.slow
def test_pyscf_recomputes_gaussian_dvb_energy_at_parsed_geometry():
    # Reference library from PyPI: PySCF. 'b3lypg' is B3LYP with VWN functional III, the
    # variant Gaussian uses (PySCF documentation). Tolerance 0.05 mEh: the two programs'
    # default DFT integration grids differ (measured: PySCF's default grid reproduces
    # Gaussian's -382.308266602 to ~0.02 mEh).
    pyscf = pytest.importorskip("pyscf")
    from pyscf import dft, gto

    c = read(fixture_path("Gaussian/basicGaussian16/dvb_gopt.out"), use_cache=False)
    mol = gto.M(
        atom=[(e, tuple(x)) for e, x in zip(c.elements, c.coordinates_angstrom)],
        basis="sto-3g",
        unit="Angstrom",
        charge=c.charge,
        spin=c.multiplicity - 1,
        verbose=0,
    )
    mf = dft.RKS(mol)
    mf.xc = "b3lypg"
    mf.conv_tol = 1e-9
    e = mf.kernel()
    assert mf.converged
    assert e == pytest.approx(c.energy_hartree, abs=5e-5)


OH_INPUT = """start oh_radical
title "OH radical UKS B3LYP/STO-3G (dossier reading test)"
geometry units angstrom noautosym
  O 0.0 0.0 0.0
  H 0.0 0.0 0.97
end
basis
  * library sto-3g
end
dft
  mult 2
  xc b3lyp
end
property
  mulliken
end
task dft property
"""


def test_real_nwchem_unrestricted_run_spin_populations(tmp_path):
    exe = require_program("nwchem")
    (tmp_path / "oh.nw").write_text(OH_INPUT)
    out = tmp_path / "oh.out"
    with open(out, "w") as fh:
        subprocess.run(["nice", "-n", "15", exe, "oh.nw"], cwd=tmp_path, stdout=fh, stderr=subprocess.STDOUT, timeout=120, check=False)
    c = read(out, use_cache=False)
    assert c.program == "NWChem" and c.status.word == "ok"
    assert (c.elements, c.charge, c.multiplicity) == (["O", "H"], 0, 2)
    assert c.level.unrestricted is True and c.level.functional == "B3LYP"
    text = out.read_text()
    # spin populations exactly as printed in the property module's "Atomic spin population"
    i = text.rfind("Atomic spin population")
    printed = [float(x) for x in re.findall(r"^\s+\d+\s+\w+\s+\S+\s+(\S+)$", text[i : i + 500], re.M)[:2]]
    assert c.spin_populations["mulliken"] == printed
    assert sum(printed) == pytest.approx(1.0, abs=1e-4)  # one unpaired electron
    assert printed[0] > 0.9  # the radical sits on oxygen (textbook: OH is an oxygen-centred radical)
    assert c.s2 == pytest.approx(0.75, abs=0.01)  # S(S+1) for a doublet, little contamination in DFT
    e = float(re.findall(r"Total DFT energy =\s+(\S+)", text)[-1])
    assert c.energy_hartree == pytest.approx(e, abs=5e-13)
    assert sum(c.charges["mulliken"]) == pytest.approx(0.0, abs=1e-4)


H2O_CATION_INPUT = """start h2o_cation
title "H2O+ UKS B3LYP/STO-3G, Mulliken analysis from the DFT module (dossier reading test)"
charge 1
geometry units angstrom noautosym
  O  0.000  0.000  0.117
  H  0.000  0.757 -0.467
  H  0.000 -0.757 -0.467
end
basis
  * library sto-3g
end
dft
  odft
  mult 2
  xc b3lyp
  mulliken
end
task dft energy
"""


def test_real_nwchem_dft_module_mulliken_blocks(tmp_path):
    # cclib 1.8.1 reads neither "Total Density - Mulliken Population Analysis" nor the
    # "Spin Density" block that NWChem's DFT module prints with `mulliken`: the supplement does.
    exe = require_program("nwchem")
    (tmp_path / "h2o.nw").write_text(H2O_CATION_INPUT)
    out = tmp_path / "h2o.out"
    with open(out, "w") as fh:
        subprocess.run(["nice", "-n", "15", exe, "h2o.nw"], cwd=tmp_path, stdout=fh, stderr=subprocess.STDOUT, timeout=120, check=False)
    c = read(out, use_cache=False)
    assert c.status.word == "ok" and (c.charge, c.multiplicity) == (1, 2)
    text = out.read_text()
    i = text.rfind("Spin Density - Mulliken Population Analysis")
    block = text[i:].split("\n")[5:8]
    assert c.spin_populations["mulliken"] == [float(row.split()[3]) for row in block]
    # one unpaired electron, within the 2-decimal rounding of three printed values
    assert sum(c.spin_populations["mulliken"]) == pytest.approx(1.0, abs=0.015)
    assert sum(c.charges["mulliken"]) == pytest.approx(1.0, abs=0.015)
    # H2O+ is the 1b1 (oxygen lone-pair) hole: most of the spin on O (textbook MO picture)
    assert c.spin_populations["mulliken"][0] > 0.8


def _run_nwchem(tmp_path, name, deck):
    exe = require_program("nwchem")
    (tmp_path / f"{name}.nw").write_text(deck)
    out = tmp_path / f"{name}.out"
    with open(out, "w") as fh:
        subprocess.run(["nice", "-n", "15", exe, f"{name}.nw"], cwd=tmp_path, stdout=fh, stderr=subprocess.STDOUT, timeout=180, check=False)
    return out


def test_real_nwchem_error_exit_is_failed(tmp_path):
    out = _run_nwchem(tmp_path, "bad", OH_INPUT.replace("library sto-3g", "library no-such-basis-set"))
    c = read(out, use_cache=False)
    assert c.status.word == "failed" and c.status.normal_termination is False
    assert "error" in c.status.reason.lower()
    assert c.energy_hartree is None


@pytest.mark.slow
def test_real_nwchem_unrestricted_tddft_roots(tmp_path):
    deck = H2O_CATION_INPUT.replace("library sto-3g", "library 6-31g").replace("task dft energy", "tddft\n  nroots 3\nend\ntask tddft energy")
    out = _run_nwchem(tmp_path, "h2o_td", deck)
    c = read(out, use_cache=False)
    assert c.status.word == "ok" and "excited-states" in c.job_kinds
    text = out.read_text()
    roots = re.findall(r"Root\s+\d+\s+\S+\s+\S+ a\.u\.\s+(\S+) eV\s*\n\s+<S2> =\s+(\S+)", text)
    dips = re.findall(r"Transition Moments\s+X\s+(\S+)\s+Y\s+(\S+)\s+Z\s+(\S+)", text)
    assert len(c.excited_states) == len(roots) == 3
    for st, (ev, s2), d in zip(c.excited_states, roots, dips):
        assert st.energy_ev == pytest.approx(float(ev), abs=5e-5)  # printed to 4 decimals
        assert st.s2 == float(s2)
        assert st.transition_dipole_au == [float(v) for v in d]
        assert st.energy_cm1 == pytest.approx(float(ev) * 8065.544, rel=1e-4)  # CODATA: 1 eV = 8065.544 cm-1
    # ground-state <S2> is the "(Exact = 0.7500)" line, not the last root's
    assert c.s2 == float(re.findall(r"<S2> =\s+(\S+) \(Exact", text)[-1])


def test_real_nwchem_optimisation_out_of_steps_is_not_converged(tmp_path):
    # OH stretched to 1.30 A, the driver allowed 2 steps: NWChem prints "Failed to converge in
    # maximum number of steps" and exits with an error; the record says not-converged, not ok.
    deck = OH_INPUT.replace("H 0.0 0.0 0.97", "H 0.0 0.0 1.30").replace(
        "property\n  mulliken\nend\ntask dft property", "driver\n  maxiter 2\nend\ntask dft optimize")
    out = _run_nwchem(tmp_path, "oh_opt", deck)
    c = read(out, use_cache=False)
    assert "optimization" in c.job_kinds
    assert c.status.word == "not-converged" and c.status.optimization_converged is False
    steps = [float(x) for x in re.findall(r"Total DFT energy =\s+(\S+)", out.read_text())]
    assert c.optimization_energies_hartree and all(e in steps for e in c.optimization_energies_hartree)
    assert not any("cclib skipped" in p for p in c.problems)


WATER_XYZ = "3\nwater\nO 0.000 0.000 0.117\nH 0.000 0.757 -0.467\nH 0.000 -0.757 -0.467\n"


def test_real_xtb_runs_solvation_and_open_shell(tmp_path):
    exe = require_program("xtb")
    (tmp_path / "w.xyz").write_text(WATER_XYZ)
    runs = {"alpb": ["--alpb", "water"], "cation": ["--chrg", "1", "--uhf", "1"]}
    recs = {}
    for name, extra in runs.items():
        out = tmp_path / f"{name}.out"
        with open(out, "w") as fh:
            subprocess.run(["nice", "-n", "15", exe, "w.xyz", *extra], cwd=tmp_path, stdout=fh, stderr=subprocess.DEVNULL, timeout=120, check=False)
        recs[name] = (read(out, use_cache=False), out.read_text())
    c, text = recs["alpb"]
    assert c.status.word == "ok" and c.program == "xtb" and c.level.method == "GFN2-xTB"
    eps = float(re.search(r"Dielectric constant\s+(\S+)", text).group(1))
    assert c.level.solvation == f"ALPB (water, eps={eps:g})"
    assert 75 < eps < 82  # water's static dielectric constant, 78.4 at 25 C (CRC handbook), xtb uses 80.2
    assert c.energy_hartree == float(re.findall(r"\| TOTAL ENERGY\s+(\S+) Eh", text)[-1])
    ion, text = recs["cation"]
    assert (ion.charge, ion.multiplicity, ion.level.unrestricted) == (1, 2, True)
    assert sum(ion.charges["mulliken"]) == pytest.approx(1.0, abs=3 * 5e-4)  # 3 decimals printed


def test_real_nwchem_cosmo_level_of_theory(tmp_path):
    deck = H2O_CATION_INPUT.replace("charge 1\n", "").replace(
        "dft\n  odft\n  mult 2\n  xc b3lyp\n  mulliken\nend", "cosmo\n  dielec 78.4\nend\ndft\n  xc b3lyp\nend")
    out = _run_nwchem(tmp_path, "w_cosmo", deck)
    c = read(out, use_cache=False)
    assert c.status.word == "ok" and (c.charge, c.multiplicity) == (0, 1)
    assert c.level.label() == "B3LYP/STO-3G COSMO (eps=78.4)"  # the dielectric the input asked for, as printed
    assert "dielectric constant -eps-     =  78.40" in out.read_text()


def test_real_nwchem_dispersion_in_level_of_theory(tmp_path):
    deck = H2O_CATION_INPUT.replace("charge 1\n", "").replace(
        "dft\n  odft\n  mult 2\n  xc b3lyp\n  mulliken\nend", "dft\n  xc b3lyp\n  disp vdw 4\nend")
    out = _run_nwchem(tmp_path, "w_disp", deck)
    c = read(out, use_cache=False)
    text = out.read_text()
    assert "DFT-D3BJ Model" in text  # NWChem's own statement of the model it used
    assert c.level.dispersion == "D3(BJ)" and c.level.label() == "B3LYP/STO-3G-D3(BJ)"
    # printed to 12 decimals; cclib's eV round trip adds ~1e-14
    assert c.energy_hartree == pytest.approx(float(re.findall(r"Total DFT energy =\s+(\S+)", text)[-1]), abs=5e-13)


PSI4_OH_UMP2 = """memory 300 mb
molecule {
0 2
O 0.0 0.0 0.0
H 0.0 0.0 0.97
}
set {
  basis sto-3g
  reference uhf
  mp2_type conv
}
energy('mp2')
"""


def test_real_psi4_ump2_run(tmp_path):
    # the installed Psi4 (Debian 1.3.2) prints "Git: Rev {} zzzzzzz", on which cclib 1.8.1's
    # version parsing fails: the record must still be complete and carry the banner version
    exe = require_program("psi4")
    (tmp_path / "oh.in").write_text(PSI4_OH_UMP2)
    subprocess.run(["nice", "-n", "15", exe, "oh.in", "oh.out"], cwd=tmp_path, capture_output=True, timeout=300, check=False)
    out = tmp_path / "oh.out"
    c = read(out, use_cache=False)
    text = out.read_text()
    assert c.status.word == "ok" and c.problems == []
    assert c.program_version == re.search(r"Psi4 (\S+) release", text).group(1)
    assert (c.charge, c.multiplicity, c.level.unrestricted, c.level.method) == (0, 2, True, "MP2")
    mp2 = float(re.search(r"\tMP2 Total Energy \(a\.u\.\)\s+:\s+(\S+)", text).group(1))
    scs = float(re.search(r"SCS-MP2 Total Energy \(a\.u\.\)\s+:\s+(\S+)", text).group(1))
    assert c.energies_hartree["mp2"] == mp2 and c.energies_hartree["scs-mp2"] == scs
    assert c.energy_hartree == mp2 and c.energies_hartree["scf"] > mp2  # correlation lowers the energy
    assert c.s2 == float(re.search(r"@S\^2 Observed:\s+(\S+)", text).group(1))


def test_real_nwchem_uhf_mp2_multiplicity(tmp_path):
    # NWChem's SCF module prints alpha/beta electron counts but no multiplicity line
    deck = OH_INPUT.replace("dft\n  mult 2\n  xc b3lyp\nend\nproperty\n  mulliken\nend\ntask dft property",
                            "scf\n  uhf\n  doublet\nend\ntask mp2 energy")
    out = _run_nwchem(tmp_path, "oh_mp2", deck)
    c = read(out, use_cache=False)
    text = out.read_text()
    assert c.status.word == "ok" and c.multiplicity == 2 and c.level.method == "MP2"
    assert c.energies_hartree["mp2"] == float(re.search(r"Total MP2 energy\s+(\S+)", text).group(1))
    assert c.energies_hartree["scf"] == pytest.approx(float(re.search(r"Total SCF energy =\s+(\S+)", text).group(1)), abs=5e-13)
