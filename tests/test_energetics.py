"""dossier.science.energetics: relative energies, profiles and Boltzmann populations.

Outside references: CODATA via scipy.constants (unit conversions, R), hand calculations
written out beside each check, and ASE 3.29's IdealGasThermo for a composite recipe built on
real fixture frequencies.
"""
from __future__ import annotations

import math

import pytest
from scipy import constants as sc

from dossier import units
from dossier.science.energetics import (
    EnergeticsError,
    StateEnergies,
    boltzmann_populations,
    boltzmann_table,
    energy_profile,
    family_populations,
    profile_series,
    relative_kj_mol,
    temperature_key,
)

HARTREE_KJ_MOL = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000.0  # CODATA via scipy


def test_relative_energies_in_three_units():
    # 0.01 hartree = 26.2550 kJ/mol = 6.2751 kcal/mol = 0.272114 eV (CODATA via scipy.constants;
    # thermochemical calorie 4.184 J)
    rel = relative_kj_mol({"a": -100.0, "b": -99.99})
    assert rel["a"] == 0.0
    assert rel["b"] == pytest.approx(0.01 * HARTREE_KJ_MOL, rel=1e-12)
    prof = energy_profile([StateEnergies("a", -100.0), StateEnergies("b", -99.99)])
    b = prof["points"][1]
    assert b["electronic_kj_mol"] == pytest.approx(26.2550, abs=1e-3)
    assert b["electronic_kcal_mol"] == pytest.approx(0.01 * HARTREE_KJ_MOL / sc.calorie, rel=1e-12)
    assert b["electronic_ev"] == pytest.approx(0.01 * sc.physical_constants["Hartree energy in eV"][0], rel=1e-9)


def test_pathway_profile_with_composite_recipe_and_figure_data():
    # Hand calculation: reactant E = -500.000, TS E = -499.980, product E = -500.005 hartree
    # (a higher-level single point), thermal corrections from a frequency job:
    # G_corr(298.15) = 0.100, 0.098, 0.101 hartree.
    # barrier G = (0.020 - 0.002) Eh = 0.018 Eh; reaction G = (-0.005 + 0.001) Eh = -0.004 Eh.
    r = StateEnergies("R", -500.000, 0.110, {298.15: 0.118}, {298.15: 0.100})
    ts = StateEnergies("TS", -499.980, 0.108, {298.15: 0.115}, {298.15: 0.098})
    p = StateEnergies("P", -500.005, 0.111, {298.15: 0.119}, {298.15: 0.101})
    prof = energy_profile([r, ts, p], name="r_to_p", recipe="sp//dft")
    assert prof["reference_state"] == "R"
    pts = {x["state"]: x for x in prof["points"]}
    assert pts["TS"]["gibbs_kj_mol"]["298.15"] == pytest.approx(0.018 * HARTREE_KJ_MOL, rel=1e-9)
    assert pts["P"]["gibbs_kj_mol"]["298.15"] == pytest.approx(-0.004 * HARTREE_KJ_MOL, rel=1e-9)
    assert pts["TS"]["zpe_kj_mol"] == pytest.approx((0.020 - 0.002) * HARTREE_KJ_MOL, rel=1e-9)
    assert pts["P"]["enthalpy_kj_mol"]["298.15"] == pytest.approx((-0.005 + 0.001) * HARTREE_KJ_MOL, rel=1e-9)
    fig = profile_series(prof, "gibbs", 298.15, unit="kcal/mol")
    assert fig["labels"] == ["R", "TS", "P"] and fig["x"] == [0, 1, 2]
    assert fig["barrier"] == pytest.approx(0.018 * HARTREE_KJ_MOL / sc.calorie, rel=1e-9)
    assert fig["reverse_barrier"] == pytest.approx(0.022 * HARTREE_KJ_MOL / sc.calorie, rel=1e-9)
    assert len(fig["segments"]) == 2


def test_missing_thermal_correction_gives_none_not_a_number():
    a = StateEnergies("a", -1.0, 0.01, {298.15: 0.02}, {298.15: 0.0})
    b = StateEnergies("b", -1.001)  # no frequency job
    prof = energy_profile([a, b])
    pb = prof["points"][1]
    assert pb["electronic_kj_mol"] == pytest.approx(-0.001 * HARTREE_KJ_MOL)
    assert pb["zpe_kj_mol"] is None and pb["gibbs_kj_mol"]["298.15"] is None
    fig = profile_series(prof, "gibbs", 298.15)
    assert fig["y"][1] is None and fig["segments"] == []


def test_isomer_family_relative_to_lowest_and_populations():
    # Hand calculation at 298.15 K, RT = 2.47896 kJ/mol (R = 8.314462618 J/(mol K), CODATA):
    # G = 0, 2, 5 kJ/mol -> weights 1, e^-0.80679, e^-2.01698 = 1, 0.446288, 0.133057;
    # sum 1.579345; populations 0.63317, 0.28258, 0.08425.
    fam = [
        StateEnergies("x", -1.0, None, {}, {298.15: 0.0}),
        StateEnergies("y", -1.0, None, {}, {298.15: 2.0 / HARTREE_KJ_MOL}),
        StateEnergies("z", -1.0, None, {}, {298.15: 5.0 / HARTREE_KJ_MOL}),
    ]
    entry = family_populations(fam, family="fam", recipe="dft")[0]
    assert entry["populations"]["x"] == pytest.approx(0.63317, abs=1e-5)
    assert entry["populations"]["y"] == pytest.approx(0.28258, abs=1e-5)
    assert entry["populations"]["z"] == pytest.approx(0.08425, abs=1e-5)
    prof = energy_profile(list(reversed(fam)), reference="lowest", kind="isomer-family")
    assert {p["state"]: p["gibbs_kj_mol"]["298.15"] for p in prof["points"]}["x"] == pytest.approx(0.0, abs=1e-9)


def test_boltzmann_against_hand_calculation_with_degeneracy():
    # Two isomers 1.0 kcal/mol apart at 300 K, the higher one doubly degenerate:
    # RT = 8.314462618 * 300 / 4184 = 0.596161 kcal/mol; w_b = 2 exp(-1/0.596161) = 2 * 0.186856
    # = 0.373719; p_a = 1 / 1.373719 = 0.727951, p_b = 0.272049 (hand calculation).
    pops = boltzmann_populations({"a": 0.0, "b": units.KCAL_KJ * 1.0}, 300.0, degeneracies={"b": 2})
    assert pops["a"] == pytest.approx(0.727951, abs=2e-6)
    assert pops["b"] == pytest.approx(0.272049, abs=2e-6)
    assert sum(pops.values()) == pytest.approx(1.0, abs=1e-15)


def test_boltzmann_limits_and_temperature_table():
    # common practice, no source: equal G -> equal shares; a 100 kJ/mol gap -> ~0 at 298 K;
    # a common shift of all G changes nothing (no overflow far from zero)
    assert boltzmann_populations({"a": 3.0, "b": 3.0, "c": 3.0}, 298.15)["b"] == pytest.approx(1 / 3)
    assert boltzmann_populations({"a": 0.0, "b": 100.0}, 298.15)["b"] < 1e-17
    far = boltzmann_populations({"a": -1e6, "b": -1e6 + 1.0}, 298.15)
    near = boltzmann_populations({"a": 0.0, "b": 1.0}, 298.15)
    assert far["b"] == pytest.approx(near["b"], rel=1e-12)
    table = boltzmann_table({273.15: {"a": 0.0, "b": 1.0}, 323.15: {"a": 0.0, "b": 1.0}})
    assert list(table) == ["273.15", "323.15"]
    assert table["323.15"]["b"] > table["273.15"]["b"]  # higher T, flatter distribution
    # K = p_b / p_a = exp(-dG / RT) (R from scipy.constants)
    assert table["273.15"]["b"] / table["273.15"]["a"] == pytest.approx(math.exp(-1000.0 / (sc.R * 273.15)), rel=1e-12)


def test_errors_are_one_line():
    with pytest.raises(EnergeticsError, match="reference state 'q'"):
        relative_kj_mol({"a": 1.0}, reference="q")
    with pytest.raises(EnergeticsError, match="listed twice"):
        energy_profile([StateEnergies("a", 1.0), StateEnergies("a", 2.0)])
    with pytest.raises(EnergeticsError, match="temperature"):
        boltzmann_populations({"a": 0.0}, 0.0)
    with pytest.raises(EnergeticsError, match="unknown isomer"):
        boltzmann_populations({"a": 0.0}, 298.15, degeneracies={"b": 2})
    assert temperature_key(300.0) == "300" and temperature_key(298.15) == "298.15"


def test_from_thermo_composite_matches_ase_on_fixture():
    # Composite recipe: electronic energy from one source, G correction from dossier.science.thermo on
    # a real frequency job; the correction checked against ASE 3.29 IdealGasThermo.
    import warnings

    cclib = pytest.importorskip("cclib")
    from ase import Atoms
    from ase.thermochemistry import IdealGasThermo
    from cclib.parser.utils import PeriodicTable

    from dossier.science.thermo import atomic_masses_amu, rrho
    from tests.conftest import fixture_path

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        data = cclib.io.ccread(str(fixture_path("QChem/basicQChem5.4/water_ir.out")))
    el = [PeriodicTable().element[z] for z in data.atomnos]
    xyz = data.atomcoords[-1]
    thermo = [rrho(el, xyz, data.vibfreqs, 1, t) for t in (298.15, 350.0)]
    s = StateEnergies.from_thermo("water", -76.0, thermo)
    atoms = Atoms(el, positions=xyz)
    atoms.set_masses(atomic_masses_amu(el))
    ref = IdealGasThermo([w * units.CM1_J / units.EV_J for w in data.vibfreqs], "nonlinear", atoms=atoms,
                         symmetrynumber=2, spin=0)
    g_ref_kj = ref.get_gibbs_energy(350.0, sc.atm, verbose=False) * units.EV_KJ_MOL
    g_ours_kj = (s.total_hartree("gibbs", 350.0) + 76.0) * units.HARTREE_KJ_MOL
    assert abs(g_ours_kj - g_ref_kj) < 0.01
