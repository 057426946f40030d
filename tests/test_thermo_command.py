"""`dossier thermo`: the manifest's words as options, one card per file, the programs' numbers beside ours.

Outside references, named again beside each check:
- the programs' own printed thermochemistry in real third-party logs (cclib's open test data,
  ../shared/fixtures/qc-logs), read from the log text with small regular expressions here;
- ASE 3.29 `ase.thermochemistry.IdealGasThermo` (package index) for the frequency scale factor;
- scipy.constants (CODATA) for the 1 M standard state and the unit conversions.
"""
from __future__ import annotations

import json
import math
import re

import pytest
from scipy import constants as sc

from conftest import fixture_path
from dossier.cli import main

G16 = "Gaussian/basicGaussian16/dvb_ir.out"
ORCA = "ORCA/basicORCA5.0/dvb_ir.out"
PSI4 = "Psi4/basicPsi4-1.7/dvb_ir_rks.out"
XTB_HESS = "XTB/basicXTB6.6.1/dvb_ir/dvb_ir.out"
XTB_OPT = "XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out"
KJ_PER_HARTREE = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000.0  # CODATA via scipy


def _num(pattern: str, text: str) -> float:
    m = re.search(pattern, text)
    assert m, pattern
    return float(m.group(1))


def _cards(capsys, *args: str) -> list[dict]:
    rc = main(["thermo", *args, "--json", "--no-cache"])
    assert rc == 0
    return json.loads(capsys.readouterr().out)


def test_options_are_the_manifests_words_with_its_defaults():
    # docs/manifest.md [project]: temperatures_k, standard_state, qrrho, frequency_scale, energy_unit;
    # [states.NAME]: symmetry_number, geometry. The command's options carry the same names and defaults.
    from dossier.cli import build_parser
    from dossier.project.model import Settings

    sub = build_parser(only="thermo")._subparsers._group_actions[0].choices["thermo"]
    options = {o for a in sub._actions for o in a.option_strings}
    for key in ("temperatures_k", "standard_state", "qrrho", "frequency_scale", "energy_unit",
                "symmetry_number", "geometry"):
        assert "--" + key.replace("_", "-") in options
    assert not {"--temperature", "--scale", "--pressure", "--qrrho-cutoff"} & options  # the old words are gone
    args = sub.parse_args(["x.out"])
    defaults = Settings()
    assert args.temperatures_k == defaults.temperatures_k
    assert (args.standard_state, args.qrrho, args.frequency_scale, args.energy_unit) == (
        defaults.standard_state, defaults.qrrho, defaults.frequency_scale, defaults.energy_unit)


def test_json_card_against_gaussian_printed_values(capsys):
    path = fixture_path(G16)
    text = path.read_text(errors="replace")
    (card,) = _cards(capsys, str(path), "--temperatures-k", "298.15,400", "--standard-state", "1atm",
                     "--qrrho", "none")
    assert card["assumed"]["standard_state"] == "1atm" and card["assumed"]["qrrho"] == "none"
    assert [r["temperature_k"] for r in card["results"]] == [298.15, 400.0]
    first = card["results"][0]
    # outside reference: Gaussian 16's printed corrections (same conventions: 1 atm, harmonic, isotopic masses)
    assert abs(first["gibbs_correction_hartree"]
               - _num(r"Thermal correction to Gibbs Free Energy=\s+([\d.]+)", text)) < 2e-6
    assert abs(first["zpe_hartree"] - _num(r"Zero-point correction=\s+([\d.]+)", text)) < 2e-6
    assert card["results"][1]["gibbs_correction_hartree"] < first["gibbs_correction_hartree"]  # -TS grows with T
    printed = card["printed"]
    assert printed["temperature_k"] == 298.15 and printed["pressure_pa"] == pytest.approx(sc.atm)
    assert abs(printed["ours_minus_program"]["gibbs_correction_kj_mol"]) < 0.01
    # Gaussian's "Total" row of its E/CV/S table: S in cal/(mol K)
    s_printed = float(re.search(r"\n Total\s+[\d.]+\s+[\d.]+\s+([\d.]+)", text).group(1)) * sc.calorie
    assert printed["program"]["entropy_j_mol_k"] == pytest.approx(s_printed, abs=0.01)


def test_printed_comparison_is_made_at_the_programs_temperature_and_pressure(capsys):
    # asked only for 400 K and 1 M, the card still sets the program's 298.15 K / 1 atm numbers beside
    # ours at 298.15 K and 1 atm (outside reference: Gaussian 16's printed corrections)
    path = fixture_path(G16)
    (card,) = _cards(capsys, str(path), "--temperatures-k", "400", "--qrrho", "none")
    assert [r["temperature_k"] for r in card["results"]] == [400.0]
    diff = card["printed"]["ours_minus_program"]
    assert abs(diff["zpe_kj_mol"]) < 0.01 and abs(diff["enthalpy_correction_kj_mol"]) < 0.01
    assert abs(diff["gibbs_correction_kj_mol"]) < 0.01
    assert card["printed"]["pressure_pa_used"] == pytest.approx(sc.atm)


def test_default_standard_state_is_one_molar(capsys):
    # 1 M = c R T with c = 1000 mol m-3 (scipy.constants): G(1M) - G(1atm) = R T ln(c R T / 1 atm),
    # 7.92 kJ/mol at 298.15 K (Cramer 2004, from memory); H does not change
    path = str(fixture_path(G16))
    one_molar, = _cards(capsys, path, "--qrrho", "none")
    one_atm, = _cards(capsys, path, "--qrrho", "none", "--standard-state", "1atm")
    t = 298.15
    expected = sc.R * t * math.log(1000.0 * sc.R * t / sc.atm) / 1000.0
    a, b = one_molar["results"][0], one_atm["results"][0]
    assert (a["gibbs_correction_hartree"] - b["gibbs_correction_hartree"]) * KJ_PER_HARTREE == pytest.approx(expected, abs=1e-6)
    assert a["enthalpy_correction_hartree"] == b["enthalpy_correction_hartree"]
    # a pressure in Pa replaces the standard state: 1 bar is 1e5 Pa by definition (scipy.constants.bar)
    bar, = _cards(capsys, path, "--standard-state", "1bar")
    pa, = _cards(capsys, path, "--pressure-pa", "100000")
    assert pa["results"][0]["gibbs_correction_hartree"] == pytest.approx(bar["results"][0]["gibbs_correction_hartree"], abs=1e-12)
    assert pa["assumed"]["pressure_pa"] == 1e5 and pa["assumed"]["standard_state"] is None


def test_orca_numbers_with_its_own_settings(capsys):
    # ORCA 5 uses standard atomic weights and Grimme's quasi-RRHO entropy; with those (the default
    # qrrho is grimme already) ours agree with its printed G - E (outside reference: the ORCA log)
    (card,) = _cards(capsys, str(fixture_path(ORCA)), "--masses", "average", "--standard-state", "1atm")
    diff = card["printed"]["ours_minus_program"]
    # ORCA prints 1e-6 Eh (0.0026 kJ/mol); with isotopic masses the G gap would be 0.0075 kJ/mol
    assert abs(diff["zpe_kj_mol"]) < 0.005 and abs(diff["gibbs_correction_kj_mol"]) < 0.005
    assert card["assumed"]["masses"] == "average"


def test_frequency_scale_and_symmetry_number_against_ase(capsys):
    # outside reference: ASE 3.29 IdealGasThermo on the wavenumbers times 0.96, symmetry number 1
    pytest.importorskip("ase")
    import cclib
    from ase import Atoms
    from ase.thermochemistry import IdealGasThermo

    from dossier.science.thermo import atomic_masses_amu

    path = fixture_path(PSI4)
    (card,) = _cards(capsys, str(path), "--frequency-scale", "0.96", "--symmetry-number", "1",
                     "--standard-state", "1atm", "--qrrho", "none")
    assert card["assumed"]["symmetry_number"] == 1 and card["assumed"]["symmetry_number_source"] == "given"
    data = cclib.io.ccread(str(path))
    elements = [cclib.parser.utils.PeriodicTable().element[z] for z in data.atomnos]
    atoms = Atoms(elements, positions=data.atomcoords[-1])
    atoms.set_masses(atomic_masses_amu(elements))
    ev_per_cm1 = sc.h * sc.c * 100.0 / sc.eV
    ref = IdealGasThermo([0.96 * w * ev_per_cm1 for w in data.vibfreqs if abs(w) > 1.0], geometry="nonlinear",
                         atoms=atoms, symmetrynumber=1, spin=0)
    g_ref_kj = ref.get_gibbs_energy(298.15, sc.atm, verbose=False) * sc.eV * sc.N_A / 1000.0
    assert abs(card["results"][0]["gibbs_correction_hartree"] * KJ_PER_HARTREE - g_ref_kj) < 0.01


def test_xtb_hessian_with_geometry_from_its_optimisation(capsys):
    hess, opt = fixture_path(XTB_HESS), fixture_path(XTB_OPT)
    (card,) = _cards(capsys, str(hess), "--geometry", str(opt), "--qrrho-cutoff-cm1", "50", "--multiplicity", "1")
    assert card["geometry_file"] == str(opt) and card["assumed"]["qrrho_cutoff_cm1"] == 50.0
    # outside reference: xtb's printed ZPE and H(T) (its G(RRHO) uses its own translational constant)
    text = hess.read_text(errors="replace")
    assert abs(card["results"][0]["zpe_hartree"] - _num(r"zero point energy\s+([\d.]+) Eh", text)) < 1e-6
    assert abs(card["printed"]["ours_minus_program"]["enthalpy_correction_kj_mol"]) < 0.01


def test_text_card_shows_assumptions_results_printed_values_and_parts(capsys):
    path = fixture_path(G16)
    text = path.read_text(errors="replace")
    rc = main(["thermo", str(path), "--temperatures-k", "298.15,350", "--standard-state", "1atm",
               "--qrrho", "none", "--energy-unit", "kcal/mol", "--contributions", "--no-cache"])
    out = capsys.readouterr().out
    assert rc == 0
    lines = out.splitlines()
    assert lines[0] == str(path) and set(lines[1]) == {"="}
    assert "standard_state 1atm; qrrho none" in out and "symmetry_number 2 (C2h, from the geometry)" in out
    assert "kcal/mol" in out
    rows = {float(ln.split()[0]): ln.split() for ln in lines if re.match(r"\s+\d+\.\d\d\s", ln)}
    assert set(rows) == {298.15, 350.0}
    # the card's ZPE in kcal/mol against Gaussian's printed "Zero-point correction" (hartree), CODATA units
    zpe_kcal = _num(r"Zero-point correction=\s+([\d.]+)", text) * KJ_PER_HARTREE / sc.calorie
    assert float(rows[298.15][1]) == pytest.approx(zpe_kcal, abs=2e-3)
    program_rows = {ln.split()[0]: ln.split() for ln in lines if re.match(r"\s+(ZPE|S)\s", ln)}
    assert float(program_rows["ZPE"][1]) == pytest.approx(zpe_kcal, abs=1e-3)
    # parts at each temperature: translation + rotation + vibration + spin = the total H - E
    parts = [ln.split() for ln in lines if ln.strip().startswith("H - E kcal/mol")]
    assert len(parts) == 2
    values = [float(x) for x in parts[0][4:]]
    assert sum(values[:4]) == pytest.approx(values[4], abs=2e-3)
    assert values[4] == pytest.approx(float(rows[298.15][2]), abs=1e-3)


def test_errors_name_the_file(tmp_path, capsys):
    not_qc = tmp_path / "notes.out"
    not_qc.write_text("shopping list\n")
    no_freq = fixture_path("Gaussian/basicGaussian16/dvb_gopt.out")
    rc = main(["thermo", str(not_qc), str(no_freq), "--no-cache"])
    err = capsys.readouterr().err.strip().splitlines()
    assert rc == 2 and len(err) == 2
    assert str(not_qc) in err[0]
    assert str(no_freq) in err[1] and "frequenc" in err[1]
