"""`dossier init` recognizes transfers without a transition state (dossier.project.drafting_transfers):
four-point sets, dimers by connectivity with their fragments as sites, coupling sources, scans; and
the unedited draft loads and analyses. Real outputs: the demo's four-point set, the stacked-dimer demo."""
from __future__ import annotations

import shutil
import tomllib

from dossier.analysis.assemble import analyse
from dossier.cli import main
from dossier.project import load_project
from tests.conftest import demo_path


def _init(folder) -> dict:
    assert main(["init", str(folder)]) == 0
    return tomllib.loads((folder / "dossier.toml").read_text())


def test_four_point_set_becomes_an_electron_transfer(tmp_path):
    shutil.copytree(demo_path("fourpoint"), tmp_path / "fourpoint")
    # a cut-off copy of one output: a failed run must be listed, not used (the text ends mid-file)
    text = (tmp_path / "fourpoint/anion_opt.out").read_text()
    (tmp_path / "fourpoint/broken.out").write_text(text[: len(text) // 3])
    draft = _init(tmp_path)
    tr = draft["transfers"][0]
    assert tr["driving_force"] == "symmetry"
    fp = next(iter(tr["four_point"].values()))
    # nitrobenzene (charge 0) and its radical anion (charge -1): an electron; reactant = the anion
    assert fp == {"reactant_at_reactant": "fourpoint/anion_opt.out",
                  "reactant_at_product": "fourpoint/anion_at_neutral.out",
                  "product_at_product": "fourpoint/neutral_opt.out",
                  "product_at_reactant": "fourpoint/neutral_at_anion.out"}
    assert "electron" in (tmp_path / "dossier.toml").read_text().split("[[transfers]]")[1].splitlines()[0]
    text = (tmp_path / "dossier.toml").read_text()
    assert "fourpoint/broken.out" not in str(draft) and "#   fourpoint/broken.out" in text
    data = analyse(load_project(tmp_path / "dossier.toml"))  # the unedited draft loads and analyses
    assert data["transfers"][0]["carrier"] == "electron"
    assert data["transfers"][0]["reorganization_energy"]["quoted"]["value_kj_mol"] > 0


def test_stacked_dimer_folder_is_recognized(tmp_path):
    src = demo_path("stacked_dimer")
    for sub in ("monomer", "ladder", "dimer_cation", "dimer_neutral"):
        shutil.copytree(src / sub, tmp_path / sub, ignore=shutil.ignore_patterns("*.nw", "*.in"))
    draft = _init(tmp_path)
    tr = draft["transfers"][0]
    assert draft["sites"][tr["donor_site"]] == list(range(1, 10))  # the first furan, found by bonds
    assert draft["sites"][tr["acceptor_site"]] == list(range(10, 19))
    assert len(tr["four_point"]) >= 2  # the DFT set and the coupled-cluster set
    routes = {c["route"] for c in tr["couplings"]}
    assert routes == {"charge-resonance", "orbital-splitting"}
    data = analyse(load_project(tmp_path / "dossier.toml"))
    out = data["transfers"][0]
    assert out["carrier"] == "hole"  # a radical cation
    assert any(s["fit"] for s in out["scans"])  # several separations: a scan with its fit
