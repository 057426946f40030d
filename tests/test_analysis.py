"""analyse(): the dossier.json content, on a synthetic project (every number invented, each checked
against a hand computation or scipy.constants) and on the demo study when its outputs are present
(checked by hand against the numbers printed in the .out files)."""
from __future__ import annotations

import json
import math
import re
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as C

from dossier import analysis
from dossier.science import marcus
from dossier import units as u
from dossier.project import Pathway, Project, Recipe, Settings, State
from dossier.records import Calculation, ExcitedState, LevelOfTheory, RunStatus, Source, Vibrations

from conftest import DEMO
from dinitro_geometry import dinitrobenzene

HARTREE_KJ_MOL = C.physical_constants["Hartree energy"][0] * C.N_A / 1000  # CODATA via scipy
CM1_KJ_MOL = C.h * C.c * 100 * C.N_A / 1000


# ---------------------------------------------------------------------------------------------
# a synthetic symmetric dinitroarene radical anion (numbers invented for the test)
# ---------------------------------------------------------------------------------------------
def _skeleton(reduced):
    reduced_cn_no, neutral_cn_no, shared_cn_no = (1.40, 1.27), (1.47, 1.22), (1.435, 1.245)
    return dinitrobenzene({name: reduced_cn_no if name == reduced else (shared_cn_no if reduced is None else neutral_cn_no)
                           for name in ("nitro_a", "nitro_b")})


def _rec(path, elements, coords, energy, level=None, **kw):
    return Calculation(source=Source(path=path, sha256="0" * 64, size_bytes=1), program="NWChem",
                       program_version="7.0.2",
                       level=level or LevelOfTheory(method="DFT", functional="BHLYP", basis="6-31G", unrestricted=True),
                       charge=-1, multiplicity=2, elements=list(elements), coordinates_angstrom=coords,
                       energy_hartree=energy, energies_hartree={"scf": energy},
                       status=RunStatus(word="ok", normal_termination=True), **kw)


def _modes(n, imag=None, seed=3):
    rng = np.random.default_rng(seed)
    w = list(np.linspace(120.0, 3200.0, 3 * n - 6))
    d = [rng.normal(size=(n, 3)).tolist() for _ in w]
    if imag is not None:
        w[0], d[0] = -800.0, imag
    return w, d


BARRIER_E_KJ = 15.0
MP2_BARRIER_E_KJ = 25.0
GAP_MIN_CM1 = 9000.0
GAP_TS_CM1 = 2000.0
FOUR_POINT = {"reactant_at_reactant": -400.0, "reactant_at_product": -400.0 + 20 / HARTREE_KJ_MOL,
              "product_at_product": -400.05, "product_at_reactant": -400.05 + 25 / HARTREE_KJ_MOL}


def synthetic_project(temperatures=(273.15, 298.15, 323.15)) -> Project:
    ea, xa, sites = _skeleton("nitro_a")
    _, xt, _ = _skeleton(None)
    _, xb, _ = _skeleton("nitro_b")
    n = len(ea)
    e0 = -800.0
    w, d = _modes(n)
    wt, dt = _modes(n, imag=(np.array(xb) - np.array(xa)).tolist())
    spins = {}
    for name, weights in (("a", {6: 0.4, 7: 0.2, 8: 0.2}), ("b", {9: 0.4, 10: 0.2, 11: 0.2}),
                          ("t", {6: 0.2, 9: 0.2, 7: 0.1, 8: 0.1, 10: 0.1, 11: 0.1})):
        spins[name] = [weights.get(i, 0.0) for i in range(n)]
    ex_a = [ExcitedState(energy_ev=GAP_MIN_CM1 / u.EV_CM1, energy_cm1=GAP_MIN_CM1, oscillator_strength=0.12),
            ExcitedState(energy_ev=2.0, energy_cm1=2.0 * u.EV_CM1, oscillator_strength=0.01)]
    ex_t = [ExcitedState(energy_ev=GAP_TS_CM1 / u.EV_CM1, energy_cm1=GAP_TS_CM1, oscillator_strength=0.3)]
    de_ts = BARRIER_E_KJ / HARTREE_KJ_MOL
    ga = _rec("pathway/min_a_opt.out", ea, xa, e0, spin_populations={"mulliken": spins["a"]})
    gt = _rec("pathway/ts_opt.out", ea, xt, e0 + de_ts, spin_populations={"mulliken": spins["t"]})
    gb = _rec("pathway/min_b_opt.out", ea, xb, e0, spin_populations={"mulliken": spins["b"]})
    fa = _rec("pathway/min_a_freq.out", ea, xa, e0, vibrations=Vibrations(wavenumbers_cm1=w, displacements=d))
    ft = _rec("pathway/ts_freq.out", ea, xt, e0 + de_ts, vibrations=Vibrations(wavenumbers_cm1=wt, displacements=dt))
    fb = _rec("pathway/min_b_freq.out", ea, xb, e0, vibrations=Vibrations(wavenumbers_cm1=w, displacements=d))
    ta = _rec("tddft/min_a_td.out", ea, xa, e0, excited_states=ex_a)
    tt = _rec("tddft/ts_td.out", ea, xt, e0 + de_ts, excited_states=ex_t)
    mp2_level = LevelOfTheory(method="MP2", basis="6-31G")
    mp2 = {"min_a": _rec("ladder/min_a_mp2.out", ea, xa, -798.0, level=mp2_level),
           "ts": _rec("ladder/ts_mp2.out", ea, xt, -798.0 + MP2_BARRIER_E_KJ / HARTREE_KJ_MOL, level=mp2_level),
           "min_b": _rec("ladder/min_b_mp2.out", ea, xb, -798.0, level=mp2_level)}
    states = {
        "min_a": State("min_a", "minimum", ga, fa, ta, {"mp2": mp2["min_a"]}, files={"geometry": "pathway/min_a_opt.out"}),
        "ts": State("ts", "transition-state", gt, ft, tt, {"mp2": mp2["ts"]}, files={"geometry": "pathway/ts_opt.out"}),
        "min_b": State("min_b", "minimum", gb, fb, None, {"mp2": mp2["min_b"]}, files={"geometry": "pathway/min_b_opt.out"}),
    }
    frag = (["C", "H", "N", "O", "O"], [[0, 0, 0], [1.09, 0, 0], [-1.4, 0, 0], [-2.0, 1.0, 0], [-2.0, -1.0, 0]])
    fp = {k: Calculation(source=Source(path=f"fourpoint/{k}.out", sha256="0" * 64, size_bytes=1), elements=frag[0],
                         coordinates_angstrom=frag[1], energy_hartree=v,
                         level=LevelOfTheory(method="DFT", functional="BHLYP", basis="6-31G"))
          for k, v in FOUR_POINT.items()}
    recipes = {"dft": Recipe("dft"), "mp2//dft": Recipe("mp2//dft", electronic="mp2")}
    pw = Pathway("a_to_b", "min_a", "ts", "min_b", "nitro_a", "nitro_b", "bridge", "dft",
                 {"driving_force": "dft", "barrier": "dft", "reorganization_energy": "dft", "coupling": "dft"},
                 ["dft", "mp2//dft"], fp, "fragment model", {k: f"fourpoint/{k}.out" for k in fp})
    return Project(manifest_path=Path("/nonexistent/synthetic/dossier.toml"), root=Path("/nonexistent/synthetic"),
                   title="Synthetic", authors=["A. N. Example"], settings=Settings(temperatures_k=list(temperatures)),
                   states=states, sites=sites, pathways=[pw], isomer_families=[], recipes=recipes,
                   uncertainty={"samples": 2000, "seed": 7}, experiment={})


@pytest.fixture(scope="module")
def synthetic():
    return analysis.analyse(synthetic_project())


def _all_rates(data):
    for pw in data["pathways"]:
        yield from pw["rates"]
        for rung in pw["ladder"]:
            yield from rung["rates"]
            yield from rung["route_combinations"]


def test_json_serializable_and_deterministic(synthetic):
    text = json.dumps(synthetic, allow_nan=False)
    again = json.dumps(analysis.analyse(synthetic_project()), allow_nan=False)
    assert text == again  # same input, same JSON byte for byte
    for key in ("schema_version", "project", "states", "energy_profiles", "isomer_populations", "pathways",
                "uncertainty", "checks", "model_statement"):
        assert key in synthetic
    assert "model estimates" in synthetic["model_statement"]


def test_contract_keys_of_states_and_pathways(synthetic):
    st = synthetic["states"][0]
    for key in ("name", "elements", "coordinates_angstrom", "energies_hartree", "thermo", "localization",
                "frequencies", "excited_states"):
        assert key in st
    assert [t["temperature_k"] for t in st["thermo"]] == [273.15, 298.15, 323.15]
    pw = synthetic["pathways"][0]
    for key in ("name", "delta_g0_kj_mol", "barrier_kj_mol", "reorganization_energy_kj_mol", "coupling_cm1",
                "robin_day_class", "routes", "rates", "arrhenius", "ladder", "normal_mode", "levels"):
        assert key in pw
    assert pw["robin_day_class"] in ("I", "II", "III")
    models = {r["model"] for r in pw["rates"]}
    assert any("eyring" in m for m in models) and any("marcus" in m for m in models) and "mlj" in models
    for r in pw["rates"]:
        for key in ("temperature_k", "model", "rate_per_s", "barrier_kj_mol", "transmission_coefficient",
                    "log10_rate_interval_68", "log10_rate_interval_95"):
            assert key in r, key


def test_every_rate_recomputes_from_its_own_parameters(synthetic):
    n = 0
    for r in _all_rates(synthetic):
        fn = getattr(marcus, (r.get("function") or "dossier.science.marcus.marcus_nonadiabatic_rate_per_s").split(".")[-1])
        assert fn(**r["parameters"]) == pytest.approx(r["rate_per_s"], rel=1e-12)
        n += 1
    assert n > 20


def test_rates_against_independent_codata_formulas(synthetic):
    # Eyring (Eyring 1935) and the golden-rule Marcus rate (Marcus & Sutin 1985, eq. 26), evaluated
    # here straight from scipy.constants, not through dossier.units.
    for r in synthetic["pathways"][0]["rates"]:
        p, t = r["parameters"], r["temperature_k"]
        if r["model"] == "eyring-tst":
            # times the reaction-path factor of a symmetric saddle (dossier.science.degenerate)
            k = p["reaction_path_degeneracy"] * C.k * t / C.h * math.exp(-p["barrier_kj_mol"] * 1000 / (C.R * t))
            assert r["rate_per_s"] == pytest.approx(k, rel=1e-10)
        if r["model"] == "marcus":
            h = p["coupling_cm1"] * C.h * C.c * 100
            lam = p["reorganization_energy_kj_mol"] * 1000 / C.N_A
            dg = p["delta_g0_kj_mol"] * 1000 / C.N_A
            k = 2 * math.pi / C.hbar * h**2 / math.sqrt(4 * math.pi * lam * C.k * t) * \
                math.exp(-(dg + lam) ** 2 / (4 * lam * C.k * t))
            assert r["rate_per_s"] == pytest.approx(k, rel=1e-10)
            # the barrier the entry reports is (lambda + dG0)^2 / 4 lambda
            assert r["barrier_kj_mol"] == pytest.approx((p["reorganization_energy_kj_mol"] + p["delta_g0_kj_mol"]) ** 2
                                                        / (4 * p["reorganization_energy_kj_mol"]))


def test_parameters_by_route_checked_by_hand(synthetic):
    pw = synthetic["pathways"][0]
    lam = {r["route"]: r for r in pw["routes"]["reorganization_energy"]}
    # four-point (Nelsen 1987): 20 + 25 kJ/mol by construction
    assert lam["four-point"]["value_kj_mol"] == pytest.approx(45.0, abs=1e-6)
    # Hush: lambda = E_op - dE0, with dE0 = 0 (symmetric): 9000 cm-1 in kJ/mol from CODATA
    assert lam["vertical-excitation"]["value_kj_mol"] == pytest.approx(GAP_MIN_CM1 * CM1_KJ_MOL, rel=1e-9)
    hab = {r["route"]: r for r in pw["routes"]["coupling"]}
    assert hab["half-splitting-at-ts"]["value_cm1"] == pytest.approx(GAP_TS_CM1 / 2)
    assert pw["coupling_cm1"] == pytest.approx(GAP_TS_CM1 / 2)
    # two-state inversion: dE_act = (lambda - 2H)^2 / 4 lambda for dE0 = 0
    lam_v = lam["vertical-excitation"]["value_kj_mol"]
    h_kj = hab["two-state-from-barrier"]["value_cm1"] * CM1_KJ_MOL
    assert (lam_v - 2 * h_kj) ** 2 / (4 * lam_v) == pytest.approx(BARRIER_E_KJ, rel=1e-9)
    # every route names its files and formula
    for r in pw["routes"]["reorganization_energy"] + pw["routes"]["coupling"]:
        assert r["provenance"]["formula"] and r["provenance"]["files"]
    assert pw["robin_day"]["ratio_2hab_over_lambda"] == pytest.approx(2 * GAP_TS_CM1 / 2 * CM1_KJ_MOL / lam_v)
    assert pw["robin_day_class"] == "II"


def test_ladder_rungs_shift_by_the_single_point_barrier(synthetic):
    pw = synthetic["pathways"][0]
    rungs = {r["recipe"]: r for r in pw["ladder"]}
    # same thermal correction on both rungs, so the Gibbs barriers differ by the electronic difference
    assert rungs["mp2//dft"]["barrier_kj_mol"] - rungs["dft"]["barrier_kj_mol"] == pytest.approx(
        MP2_BARRIER_E_KJ - BARRIER_E_KJ, abs=1e-6)
    k_dft = next(r for r in rungs["dft"]["rates"] if r["model"] == "eyring-tst" and r["temperature_k"] == 298.15)
    k_mp2 = next(r for r in rungs["mp2//dft"]["rates"] if r["model"] == "eyring-tst" and r["temperature_k"] == 298.15)
    # 10 kJ/mol at 298.15 K is a factor exp(10000 / RT) (CODATA R)
    assert k_dft["rate_per_s"] / k_mp2["rate_per_s"] == pytest.approx(math.exp(10_000 / (C.R * 298.15)), rel=1e-9)


def test_arrhenius_parameters_follow_the_reported_rates(synthetic):
    pw = synthetic["pathways"][0]
    for fit in pw["arrhenius"]:
        pts = [(r["temperature_k"], r["rate_per_s"]) for r in pw["rates"] if r["model"] == fit["model"]]
        t = np.array([p[0] for p in pts])
        k = np.array([p[1] for p in pts])
        slope, icpt = np.polyfit(1 / t, np.log(k), 1)
        assert fit["ea_kj_mol"] == pytest.approx(-slope * C.R / 1000, rel=1e-9)
        assert fit["log10_a_per_s"] == pytest.approx(icpt / math.log(10), rel=1e-9)


def test_localization_per_state(synthetic):
    by = {s["name"]: s["localization"] for s in synthetic["states"]}
    assert by["min_a"]["site_of_electron"] == "nitro_a" and by["min_a"]["indicators_agree"]
    assert by["min_b"]["site_of_electron"] == "nitro_b"
    assert by["ts"]["site_of_electron"] == "delocalized"
    assert by["min_a"]["schemes"]["mulliken"]["spin_by_site"]["nitro_a"] == pytest.approx(0.8)
    nm = synthetic["pathways"][0]["normal_mode"]
    assert nm["proton_transfer"] is False and "without a proton" in nm["statement"]
    assert nm["share_by_site"]["nitro_a"] == pytest.approx(0.5, abs=1e-9)


def test_single_temperature_gives_local_arrhenius_and_progress():
    seen = []
    data = analysis.analyse(synthetic_project(temperatures=(298.15,)), progress=lambda d, t: seen.append((d, t)))
    fits = data["pathways"][0]["arrhenius"]
    assert fits and all(f["local"] for f in fits)
    assert seen[-1][0] == seen[-1][1]


# ---------------------------------------------------------------------------------------------
# the demo study (example_outputs/): checked by hand against the numbers printed in the outputs
# ---------------------------------------------------------------------------------------------
def _demo_manifest():
    import tomllib

    path = DEMO / "dossier.toml"
    if not path.exists():
        pytest.skip("demo study manifest example_outputs/dossier.toml not present")
    return path, tomllib.loads(path.read_text())


@pytest.fixture(scope="module")
def demo():
    path, raw = _demo_manifest()
    from dossier.project import load_project

    try:
        project = load_project(path)
    except Exception as exc:  # the demo is still being generated
        pytest.skip(f"demo study not loadable yet: {exc}")
    return raw, analysis.analyse(project)


def _last_dft_energy(path: Path) -> float:
    values = re.findall(r"Total DFT energy =\s+(-?\d+\.\d+)", path.read_text())
    assert values, f"no 'Total DFT energy' in {path}"
    return float(values[-1])


def _last_spin_block(path: Path) -> list[float]:
    """Mulliken spin populations per atom from the last block NWChem printed (DFT module or property module)."""
    text = path.read_text()
    i = text.rfind("Spin Density - Mulliken Population Analysis")
    if i >= 0:  # "    7 N    7     0.22   0.00 ..." (atom, element, Z, spin, shells)
        block = text[i:i + 20000].split("Population Analysis", 2)[1]
        rows = re.findall(r"^\s+\d+\s+[A-Z][a-z]?\s+\d+\s+(-?\d+\.\d+)", block, re.M)
    else:
        i = text.rfind("----- Atomic spin population -----")
        assert i >= 0, f"no spin population block in {path}"
        rows = re.findall(r"^\s+\d+\s+[A-Za-z]{1,2}\s+-?\d+\.\d+\s+(-?\d+\.\d+)\s*$", text[i:i + 20000], re.M)
    return [float(x) for x in rows]


def test_demo_four_point_lambda_by_hand(demo):
    raw, data = demo
    pw_raw = raw["pathways"][0]
    if "four_point" not in pw_raw:
        pytest.skip("the demo pathway has no four-point table")
    fp = {k: _last_dft_energy(DEMO / v) for k, v in pw_raw["four_point"].items() if k != "note"}
    by_hand = ((fp["reactant_at_product"] - fp["reactant_at_reactant"])
               + (fp["product_at_reactant"] - fp["product_at_product"])) * HARTREE_KJ_MOL  # Nelsen 1987
    pw = next(p for p in data["pathways"] if p["name"] == pw_raw["name"])
    route = next(r for r in pw["routes"]["reorganization_energy"] if r["route"] == "four-point")
    assert route["value_kj_mol"] == pytest.approx(by_hand, rel=1e-9)
    assert 5.0 < by_hand < 300.0  # a nitroarene self-exchange lambda is tens of kJ/mol (from memory)


def test_demo_localization_by_hand(demo):
    raw, data = demo
    pw_raw = raw["pathways"][0]
    sites = {k: [a - 1 for a in v] for k, v in raw["sites"].items()}
    donor, acceptor = pw_raw["donor_site"], pw_raw["acceptor_site"]
    states = {s["name"]: s for s in data["states"]}
    for state, expected in ((pw_raw["reactant"], donor), (pw_raw["product"], acceptor)):
        spins = _last_spin_block(DEMO / raw["states"][state]["geometry"])
        on_donor = sum(spins[i] for i in sites[donor])
        on_acceptor = sum(spins[i] for i in sites[acceptor])
        loc_json = states[state]["localization"]["schemes"]["mulliken"]
        assert loc_json["spin_by_site"][donor] == pytest.approx(on_donor, abs=1e-6)
        assert loc_json["spin_by_site"][acceptor] == pytest.approx(on_acceptor, abs=1e-6)
        # index by hand: |rho_A - rho_B| / (|rho_A| + |rho_B|)
        assert loc_json["localization_index"] == pytest.approx(
            abs(on_donor - on_acceptor) / (abs(on_donor) + abs(on_acceptor)), rel=1e-9)
        assert loc_json["site_of_electron"] == expected
    if pw_raw.get("transition_state"):
        ts = states[pw_raw["transition_state"]]["localization"]
        assert ts["schemes"]["mulliken"]["localization_index"] < 0.2  # symmetric TS: the electron is shared


def test_demo_every_rate_recomputes(demo):
    _, data = demo
    n = 0
    for r in _all_rates(data):
        fn = getattr(marcus, r["function"].split(".")[-1])
        assert fn(**r["parameters"]) == pytest.approx(r["rate_per_s"], rel=1e-12)
        n += 1
    assert n > 0
    json.dumps(data, allow_nan=False)


def test_experiment_hook_compares_at_the_measured_temperature():
    p = synthetic_project()
    p.experiment = {"rates": [{"pathway": "a_to_b", "temperature_k": 300.0, "rate_per_s": 2e7, "error_per_s": 5e6,
                               "method": "ESR line broadening", "source": "invented for the test"}]}
    data = analysis.analyse(p)
    pw = data["pathways"][0]
    # a rate is computed at the measured temperature too, and the comparison quotes that very rate
    at300 = {r["model"]: r for r in pw["rates"] if r["temperature_k"] == 300.0}
    assert set(at300) == set(analysis.MODELS)
    comp = {c["computed_model"]: c for c in pw["experiment"]["rates"]}
    for model, c in comp.items():
        assert c["computed_rate_per_s"] == pytest.approx(at300[model]["rate_per_s"], rel=1e-12)
        assert c["log10_ratio"] == pytest.approx(math.log10(at300[model]["rate_per_s"] / 2e7), rel=1e-9)


def test_symmetric_transfer_has_zero_driving_force_without_uncertainty(synthetic):
    """The synthetic reactant and product are mirror images (dinitro_geometry) with equal energies: dG0 = 0 exactly
    (by symmetry, not by subtraction) and no rate samples it; the C2v saddle doubles the TST hop rate
    (dossier.science.degenerate; sigma_TS = 2 for C2v, McQuarrie's table, from memory)."""
    pw = synthetic["pathways"][0]
    sym = pw["symmetric_transfer"]
    assert sym["images"] and sym["ts_symmetric"] and (sym["sigma_reactant"], sym["sigma_ts"]) == (1, 2)
    assert pw["delta_g0_kj_mol"] == 0.0 and pw["delta_g0_route"] == "symmetry"
    for r in _all_rates(synthetic):
        if "delta_g0_kj_mol" in r["parameters"]:
            assert r["parameters"]["delta_g0_kj_mol"] == 0.0
            assert "delta_g0_kj_mol" not in (r.get("uncertainty") or {}).get("inputs", {})
        if r["model"] == "eyring-tst":
            assert r["parameters"]["reaction_path_degeneracy"] == 2.0
