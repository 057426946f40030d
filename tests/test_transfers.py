"""The manifest's [[transfers]] (dossier.project.transfers) and its analysis and report
(dossier.analysis.transfers, templates/transfers.html) on real outputs: the demo's four-point set
(nitrobenzene / its radical anion) and a tiny H2 dimer run by NWChem."""
from __future__ import annotations

import re
import shutil

import pytest
from scipy import constants as sc

from dossier.analysis.assemble import analyse
from dossier.errors import ManifestError
from dossier.project import load_manifest, load_project
from dossier.report.figures import make_figures
from dossier.report.render import render_html
from tests.conftest import demo_path

FOUR_POINT = """
[transfers.four_point.bhlyp]
reactant_at_reactant = "fourpoint/neutral_opt.out"
reactant_at_product  = "fourpoint/neutral_at_anion.out"
product_at_product   = "fourpoint/anion_opt.out"
product_at_reactant  = "fourpoint/anion_at_neutral.out"
"""
VALUES = "".join(f"""
[[transfers.couplings]]
route = "value"
coupling_cm1 = {h}
separation_angstrom = {r}
source = "invented for the test"
""" for h, r in ((300.0, 3.6), (100.0, 4.6), (35.0, 5.6)))


@pytest.fixture()
def study(tmp_path):
    """A folder with the demo's four-point files (copied: inputs are never touched)."""
    shutil.copytree(demo_path("fourpoint"), tmp_path / "fourpoint")
    return tmp_path


def _write(folder, text: str):
    path = folder / "dossier.toml"
    path.write_text(text)
    return path


def _printed(path) -> float:
    return float(re.findall(r"Total DFT energy =\s+(\S+)", open(path).read())[-1])


def test_electron_self_exchange_end_to_end(study):
    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT + VALUES
                  + '\n[transfers.solvent]\nname = "acetonitrile"\n')
    data = analyse(load_project(path))
    tr = data["transfers"][0]
    assert tr["carrier"] == "electron"  # the set pairs the neutral with the radical anion
    e = [_printed(study / f"fourpoint/{n}.out") for n in ("neutral_opt", "neutral_at_anion", "anion_opt",
                                                          "anion_at_neutral")]
    hartree_kj_mol = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000  # CODATA
    lam = tr["reorganization_energy"]["quoted"]
    # the logs' own printed energies, four-point sum (Nelsen et al. 1987)
    assert lam["value_kj_mol"] == pytest.approx(((e[1] - e[0]) + (e[3] - e[2])) * hartree_kj_mol, rel=1e-9)
    assert tr["driving_force"]["quoted"]["value_kj_mol"] == 0.0
    fit = tr["scans"][0]["fit"]
    assert fit["n_points"] == 3 and fit["beta_per_angstrom"] > 0
    rates = tr["rates"]
    assert [r["separation_angstrom"] for r in rates] == [3.6, 4.6, 5.6]
    # lambda_total = lambda_in + lambda_out, both shown; the outer part grows with R (two-sphere model)
    assert all(r["reorganization_total_kj_mol"] == pytest.approx(r["reorganization_inner_kj_mol"]
                                                                 + r["reorganization_outer_kj_mol"]) for r in rates)
    assert rates[0]["reorganization_outer_kj_mol"] < rates[-1]["reorganization_outer_kj_mol"]
    assert all("electron" in s or "driving force" in s for s in tr["statements"])
    assert not any("hole" in s for s in tr["statements"])


def test_report_names_only_what_the_data_are(study):
    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT + VALUES)
    data = analyse(load_project(path))
    html_text = render_html(data, make_figures(data))
    section = html_text[html_text.index('id="transfers"'):]
    section = re.sub(r"<svg.*?</svg>", "", section, flags=re.S)
    assert "Electron transfer nb" in section
    assert "barrier" not in section.lower() and "ΔG‡" not in section
    assert "ΔE°" in section and "zero by symmetry" in section
    assert "hole" not in section.lower()


@pytest.mark.slow
def test_hole_routes_on_a_real_dimer(tmp_path, h2_runs):
    shutil.copy(h2_runs["neutral"], tmp_path / "neutral.out")
    shutil.copy(h2_runs["cation"], tmp_path / "cation.out")
    path = _write(tmp_path, """
[sites]
a = [1, 2]
b = [3, 4]
[[transfers]]
name = "h2"
driving_force = "symmetry"
donor_site = "a"
acceptor_site = "b"
[[transfers.couplings]]
route = "charge-resonance"
file = "cation.out"
[[transfers.couplings]]
route = "orbital-splitting"
file = "neutral.out"
[[transfers.couplings]]
route = "gmh"
file = "cation.out"
dipole_difference_au = 0.0
dipole_difference_source = "zero by the symmetry of the dimer"
""")
    tr = analyse(load_project(path))["transfers"][0]
    assert tr["carrier"] == "hole"  # the dimer ion is a cation
    by_route = {c["route"]: c for c in tr["couplings"]}
    assert set(by_route) == {"charge-resonance", "orbital-splitting", "gmh"}
    assert by_route["charge-resonance"]["root"] == 1
    assert by_route["orbital-splitting"]["orbitals"] == ["HOMO-1", "HOMO"]
    # GMH with no dipole difference is half the gap (Cave & Newton 1996), i.e. the CR route
    assert by_route["gmh"]["value_cm1"] == pytest.approx(by_route["charge-resonance"]["value_cm1"], rel=1e-12)
    assert by_route["charge-resonance"]["separation_angstrom"] == pytest.approx(3.0, abs=1e-6)  # the input geometry
    assert not tr["rates"]  # no four-point set: no lambda, no rate


@pytest.mark.parametrize("body, message", [
    ('name = "x"\n' + FOUR_POINT, "needs 'driving_force'"),
    ('name = "x"\ndriving_force = "guess"\n' + FOUR_POINT, "is not one of: symmetry, fragments, states"),
    ('name = "x"\ndriving_force = "fragments"\n' + FOUR_POINT, "takes the energies of donor_four_point"),
    ('name = "x"\ndriving_force = "symmetry"\nbarrier = 1\n', "unknown key 'barrier'"),
    ('name = "x"\ndriving_force = "symmetry"\n[[transfers.couplings]]\nroute = "value"\ncoupling_cm1 = 10.0\n',
     "needs 'source'"),
    ('name = "x"\ndriving_force = "symmetry"\n[[transfers.couplings]]\nroute = "koopmans"\nfile = "a"\n',
     "is not one of: charge-resonance, orbital-splitting, gmh, value"),
    ('name = "x"\ndriving_force = "symmetry"\n[transfers.four_point.dft]\nreactant_at_reactant = '
     '"fourpoint/neutral_opt.out"\n', "needs all of"),
    ('name = "x"\ndriving_force = "symmetry"\n[transfers.solvent]\nname = "seawater"\n', "is not in the table"),
    ('name = "x"\ndriving_force = "symmetry"\n[transfers.solvent]\nrefractive_index = 1.4\nstatic_dielectric = 1.2'
     '\nsource = "s"\n', "1 <= refractive_index^2 <= static_dielectric"),
])
def test_manifest_errors_name_the_line(study, body, message):
    path = _write(study, "[[transfers]]\n" + body)
    with pytest.raises(ManifestError, match=re.escape(message)) as info:
        load_manifest(path)
    assert re.match(r".*dossier\.toml:\d+: ", str(info.value))


def test_a_set_whose_charges_do_not_differ_by_one_is_an_error(study):
    bad = FOUR_POINT.replace("fourpoint/anion_opt.out", "fourpoint/neutral_opt.out").replace(
        "fourpoint/anion_at_neutral.out", "fourpoint/neutral_at_anion.out")
    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + bad)
    with pytest.raises(ManifestError, match="charges must differ by one"):
        load_project(path)


@pytest.mark.slow
def test_hole_and_electron_files_in_one_transfer_are_an_error(study, h2_runs):
    shutil.copy(h2_runs["cation"], study / "cation.out")
    path = _write(study, '[[transfers]]\nname = "x"\ndriving_force = "symmetry"\n' + FOUR_POINT
                  + '[[transfers.couplings]]\nroute = "charge-resonance"\nfile = "cation.out"\n')
    with pytest.raises(ManifestError, match="disagree on the carrier"):
        load_project(path)


def test_documented_transfers_example_loads(tmp_path):
    # docs/manifest.md's [[transfers]] example must pass the validator it documents
    from pathlib import Path

    doc = (Path(__file__).resolve().parent.parent / "docs" / "manifest.md").read_text(encoding="utf-8")
    section = doc.split("### `[[transfers]]`", 1)[1]
    block = section.split("```toml", 1)[1].split("```", 1)[0]
    for f in set(re.findall(r'^\w+\s*=\s*"((?:monomer|ladder|dimer_\w+)/[^"]+)"', block, re.M)):
        (tmp_path / f).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / f).write_text("placeholder output\n")
    m = load_manifest(_write(tmp_path, block))
    tr = m.transfers[0]
    assert set(tr.four_point) == {"dft", "cc"} and len(tr.couplings) == 4
    assert tr.solvent.name == "dichloromethane" and tr.driving_force == "symmetry"


def test_carrier_named_in_localization_sentences():
    from dossier.reading import read
    from dossier.science import localization as loc
    from tests.conftest import fixture_path

    cation = read(str(fixture_path("Gaussian/basicGaussian16/dvb_un_sp.log")), use_cache=False)
    anion = read(str(demo_path("pathway/min_a_opt.out")))
    assert cation.charge == 1 and anion.charge == -1  # as the logs print them
    # cation: hole; anion: electron (issue 13) -- in the proton-shift sentence and the geometric note
    assert "the hole moves" in loc.proton_shifts([("a", cation), ("b", cation)])["statement"]
    assert "the electron moves" in loc.proton_shifts([("a", anion), ("b", anion)])["statement"]
    assert "hole" in loc._geometry_note("internal-bonds", cation.charge)
    assert "extra electron" in loc._geometry_note("internal-bonds", anion.charge)


# -- the stacked-dimer demo (example_outputs/stacked_dimer; skips until it is there) ---------------------
def _demo_transfer():
    return analyse(load_project(demo_path("stacked_dimer/dossier.toml")))["transfers"][0]


def _printed_ccsdt(path) -> float:
    return float(re.findall(r"\* CCSD\(T\) total energy\s+=\s+(\S+)", open(path).read())[-1])


def _printed_homo_pair(path) -> tuple[float, float]:
    """HOMO-1 and HOMO energies (hartree) as NWChem prints them in its final orbital analysis."""
    found = {}
    for vec, occ, e in re.findall(r"Vector\s+(\d+)\s+Occ=(\S+)\s+E=\s*(\S+)", open(path).read()):
        found[int(vec)] = (float(occ.replace("D", "E")), float(e.replace("D", "E")))
    homo = max(v for v, (occ, _) in found.items() if occ > 1.0)
    return found[homo - 1][1], found[homo][1]


def test_demo_coupled_cluster_rung_and_scan():
    import numpy as np

    tr = _demo_transfer()
    assert tr["carrier"] == "hole"  # furan radical cation
    ladder = demo_path("stacked_dimer/ladder")
    e = [_printed_ccsdt(ladder / f) for f in ("cation_ccsdt.out", "cation_at_neutral_ccsdt.out", "neutral_ccsdt.out",
                                              "neutral_at_cation_ccsdt.out")]
    hartree_kj_mol = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000  # CODATA
    rung = next(r for r in tr["reorganization_energy"]["rungs"] if r["level_of_theory"].startswith("CCSD(T)"))
    # the Psi4 logs' own printed CCSD(T) energies, four-point sum (Nelsen et al. 1987)
    assert rung["value_kj_mol"] == pytest.approx(((e[1] - e[0]) + (e[3] - e[2])) * hartree_kj_mol, rel=1e-9)
    assert {r["level_of_theory"].split("/")[0] for r in tr["reorganization_energy"]["rungs"]} >= {"HF", "MP2", "CCSD",
                                                                                                 "CCSD(T)"}
    scan = next(s for s in tr["scans"] if s["route"] == "orbital-splitting" and s["level_of_theory"].startswith("BHLYP"))
    r = [p["separation_angstrom"] for p in scan["points"]]
    h = []
    for p in scan["points"]:
        lo, hi = _printed_homo_pair(demo_path("stacked_dimer") / p["files"][0])
        h.append((hi - lo) / 2)
    # beta from the printed orbital energies by numpy's own least squares on ln H (numpy.polyfit)
    slope = np.polyfit(r, np.log(h), 1)[0]
    assert scan["fit"]["beta_per_angstrom"] == pytest.approx(-2 * slope, rel=1e-6)
    assert r == pytest.approx([3.5, 4.0, 4.5, 5.0], abs=1e-6)  # the plane-to-plane distances of the inputs


def test_cross_transfer_with_one_molecule_on_both_sides_reduces_to_the_self_exchange(study):
    donor = FOUR_POINT.replace("[transfers.four_point.bhlyp]", "[transfers.donor_four_point.bhlyp]").replace(
        "neutral_opt", "X").replace("anion_opt", "neutral_opt").replace("X", "anion_opt").replace(
        "neutral_at_anion", "Y").replace("anion_at_neutral", "neutral_at_anion").replace("Y", "anion_at_neutral")
    acceptor = FOUR_POINT.replace("[transfers.four_point.bhlyp]", "[transfers.acceptor_four_point.bhlyp]")
    cross = _write(study, '[[transfers]]\nname = "c"\ndriving_force = "fragments"\n' + donor + acceptor)
    tr = analyse(load_project(cross))["transfers"][0]
    assert tr["kind"] == "cross" and tr["carrier"] == "electron"  # donor: the anion gives its electron away
    lam = tr["reorganization_energy"]["quoted"]["value_kj_mol"]
    e = [_printed(study / f"fourpoint/{n}.out") for n in ("neutral_opt", "neutral_at_anion", "anion_opt",
                                                          "anion_at_neutral")]
    hartree_kj_mol = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000  # CODATA
    # lambda_D + lambda_A with D = A is the four-point sum of the printed energies (Nelsen et al. 1987)
    assert lam == pytest.approx(((e[1] - e[0]) + (e[3] - e[2])) * hartree_kj_mol, rel=1e-9)
    # dE0 = [E(D') - E(D)] + [E(A') - E(A)] cancels exactly for one molecule on both sides
    assert tr["driving_force"]["quoted"]["value_kj_mol"] == pytest.approx(0.0, abs=1e-9)
    assert tr["driving_force"]["quantity"] == "electronic energy difference"


def test_driving_force_from_two_states(tmp_path):
    shutil.copytree(demo_path("pathway"), tmp_path / "pathway")
    path = _write(tmp_path, '[states.a]\ngeometry = "pathway/min_a_opt.out"\n[states.b]\ngeometry = '
                            '"pathway/min_b_opt.out"\n[[transfers]]\nname = "t"\ndriving_force = "states"\n'
                            'initial_state = "a"\nfinal_state = "b"\n')
    tr = analyse(load_project(path))["transfers"][0]
    hartree_kj_mol = sc.physical_constants["Hartree energy"][0] * sc.N_A / 1000  # CODATA
    by_hand = (_printed(tmp_path / "pathway/min_b_opt.out") - _printed(tmp_path / "pathway/min_a_opt.out")) \
        * hartree_kj_mol  # the logs' own printed final energies
    assert tr["driving_force"]["quoted"]["value_kj_mol"] == pytest.approx(by_hand, rel=1e-9, abs=1e-9)
    assert tr["carrier"] == "electron" and "charge -1" in tr["carrier_reason"]  # radical anions, as printed


def test_pathway_table_names_electronic_energies_as_such(tmp_path):
    shutil.copytree(demo_path("pathway"), tmp_path / "pathway")
    path = _write(tmp_path, "".join(f'[states.{s}]\ngeometry = "pathway/{s}_opt.out"\n' for s in ("min_a", "ts", "min_b"))
                  + '[recipes.e]\nthermal = "none"\n[[pathways]]\nname = "p"\nreactant = "min_a"\n'
                    'transition_state = "ts"\nproduct = "min_b"\n')
    data = analyse(load_project(path))
    html_text = render_html(data, [])
    section = html_text[html_text.index('id="marcus"'):html_text.index("</section>", html_text.index('id="marcus"'))]
    # electronic energies only (thermal = "none"): the table says dE, never dG (issue 13)
    assert "Barrier ΔE‡" in section and "ΔG" not in section
    assert ("Driving force ΔE°" in section) != ("Driving force (zero by symmetry)" in section)


def test_transfer_rows_in_the_csv_exports(study):
    import csv
    import io

    from dossier.report.exports import write_csv_tables

    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT + VALUES
                  + '\n[transfers.solvent]\nname = "acetonitrile"\n')
    data = analyse(load_project(path))
    out = study / "csv"
    out.mkdir()
    files = write_csv_tables(data, out)
    params = [r for r in csv.DictReader(io.StringIO(files["parameters.csv"].read_text())) if r["pathway"] == "nb"]
    kinds = {r["parameter"] for r in params}
    assert kinds == {"reorganization_energy", "driving_force", "coupling", "outer_reorganization_energy"}
    lam = next(r for r in params if r["parameter"] == "reorganization_energy")
    # the CSV holds the analysis' number (as written by the JSON), not a rounded copy
    assert float(lam["value"]) == pytest.approx(data["transfers"][0]["reorganization_energy"]["rungs"][0]["value_kj_mol"],
                                                rel=1e-9)
    rates = [r for r in csv.DictReader(io.StringIO(files["rates.csv"].read_text())) if r["pathway"] == "nb"]
    assert len(rates) == 3 and all(float(r["rate_per_s"]) > 0 for r in rates)


def test_routes_that_disagree_are_pointed_out(study):
    two = VALUES + '\n[[transfers.couplings]]\nroute = "value"\ncoupling_cm1 = 900.0\nseparation_angstrom = 3.6\n' \
                   'source = "a second invented value"\n'
    tr = analyse(load_project(_write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT
                                     + two)))["transfers"][0]
    # 900 vs 300 cm-1 at 3.6 A: a factor 3 (> 2); the other separations have one route each
    said = [s for s in tr["statements"] if "disagree" in s]
    assert len(said) == 1 and "factor of 3.0" in said[0] and "R = 3.60 A" in said[0] and "electron" in said[0]


def test_a_nuclear_frequency_lets_the_golden_rule_be_judged(study):
    base = '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n'
    plain = analyse(load_project(_write(study, base + FOUR_POINT + VALUES)))["transfers"][0]
    assert all(not r["validity"]["judged"] for r in plain["rates"])
    assert "nuclear_frequency_cm1" in plain["rates"][0]["verdict"]
    given = base + 'nuclear_frequency_cm1 = 1350.0\nnuclear_frequency_source = "NO2 stretch, common practice"\n'
    tr = analyse(load_project(_write(study, given + FOUR_POINT + VALUES)))["transfers"][0]
    lz = [c for r in tr["rates"] for c in r["validity"]["criteria"] if c["criterion"] == "nonadiabatic_passage"]
    assert len(lz) == 3 and all(c["holds"] is not None for c in lz)  # Landau-Zener judged at every point
    # the weakest coupling (35 cm-1) is the most nonadiabatic: smallest Landau-Zener parameter (Newton & Sutin 1984)
    assert lz[-1]["value"] < lz[0]["value"]


def test_transfer_results_validate_against_the_schema(study):
    import json

    import jsonschema

    from dossier.report.build import build_dossier
    from dossier.schema import load_schema

    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT + VALUES
                  + '\n[transfers.solvent]\nname = "acetonitrile"\n')
    build_dossier(path, study / "out", formats=("json",))
    data = json.loads((study / "out" / "dossier.json").read_text())
    jsonschema.Draft202012Validator(load_schema()).validate(data)  # jsonschema: the shipped schema holds
    broken = json.loads(json.dumps(data))
    broken["transfers"][0]["carrier"] = "positron"
    assert list(jsonschema.Draft202012Validator(load_schema()).iter_errors(broken))  # and it can fail


def test_demo_charge_resonance_root_and_value():
    tr = _demo_transfer()
    cr = [c for c in tr["couplings"] if c["route"] == "charge-resonance"]
    assert len(cr) >= 3
    for c in cr:
        text = open(demo_path("stacked_dimer") / c["provenance"]["files"][0]).read()
        # the log's own printed root energies (a.u.) and x transition moments (x: the stacking axis)
        roots = re.findall(r"Root\s+(\d+)\s+\S+\s+([\d.]+) a\.u\.", text)
        moments = [abs(float(x)) for x in re.findall(r"Transition Moments\s+X\s+(\S+)", text)]
        strongest_x = max(range(len(moments)), key=lambda i: moments[i])
        assert c["root"] == int(roots[strongest_x][0])  # the root polarized along the stack (Badger & Brocklehurst)
        gap_cm1 = float(roots[strongest_x][1]) * sc.physical_constants["hartree-inverse meter relationship"][0] / 100
        # H_ab = E_CR / 2; the record keeps the log's eV column (4 decimals), hence 1e-4
        assert c["value_cm1"] == pytest.approx(gap_cm1 / 2, rel=1e-4)
        assert c["provenance"]["level_of_theory"].startswith("TDDFT/TDA ")  # NWChem's "Tamm-Dancoff TDDFT"


def test_transfer_literature_is_numbered_in_the_bibliography(study):
    path = _write(study, '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n' + FOUR_POINT + VALUES
                  + '\n[transfers.solvent]\nname = "acetonitrile"\n')
    data = analyse(load_project(path))
    keys = [w["key"] for w in data["report"]["cited_works"]]
    assert {"nelsen", "marcus1956", "bondi1964"} <= set(keys)  # four-point, two-sphere model, radii
    html_text = render_html(data, [])
    section = html_text[html_text.index('id="transfers"'):html_text.index("</section>", html_text.index('id="transfers"'))]
    assert 'class="cite"' in section and "1956, 24, 966" not in section  # inline literature became [n]


def test_a_transfer_quotes_only_a_rate_that_holds(study):
    """headline_rate is chosen among valid golden-rule entries only (issue 12): without a nuclear frequency
    the regime cannot be judged and nothing is quoted; with one, the quoted entry holds and no valid entry of
    the same route lies at a shorter separation (the stated preference; common practice, no source)."""
    base = '[[transfers]]\nname = "nb"\ndriving_force = "symmetry"\n'
    plain = analyse(load_project(_write(study, base + FOUR_POINT + VALUES)))["transfers"][0]
    assert plain["headline_rate"] is None
    assert "cannot be judged" in plain["headline_reason"] and "3 coupling points" in plain["headline_reason"]
    assert plain["statements"][-1].startswith("No rate constant is quoted")
    given = base + 'nuclear_frequency_cm1 = 1350.0\nnuclear_frequency_source = "NO2 stretch, common practice"\n'
    tr = analyse(load_project(_write(study, given + FOUR_POINT + VALUES)))["transfers"][0]
    head = tr["headline_rate"]
    valid = [r for r in tr["rates"] if r["validity"]["valid"]]
    assert head is not None and head in valid
    assert not any(r["route"] == head["route"] and r["separation_angstrom"] < head["separation_angstrom"] for r in valid)
    assert f"{len(valid)} of 3" in tr["headline_reason"]


def test_demo_transfer_says_why_no_rate_is_quoted():
    tr = _demo_transfer()
    assert tr["headline_rate"] is None and not any(r["validity"]["valid"] for r in tr["rates"])
    failing = sum(1 for r in tr["rates"] for c in r["validity"]["criteria"]
                  if c["criterion"] == "two_hab_over_lambda" and c["holds"] is False)
    assert f"at {failing} of {len(tr['rates'])} points 2H_ab/lambda >= 1" in tr["headline_reason"]
