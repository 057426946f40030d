"""`dossier init` on real outputs (cclib's NWChem/Gaussian test data, BSD-3) and on the demo study.

What the draft must guess is checked against the files themselves: NWChem's dvb_ir.out
prints only real frequencies (a minimum); dvb_td.out is a TDDFT job at the optimised
geometry; the cation single point has charge +1, so it belongs to no neutral state.
"""
from __future__ import annotations

import os
import re
import shutil
import stat
import tomllib

import pytest

from dossier.project import checks
from dossier.cli import main
from dossier.project import load_manifest, load_project

from conftest import demo_path, fixture_path

NW = "NWChem/basicNWChem7.0/"


def _folder(tmp_path):
    folder = tmp_path / "study"
    folder.mkdir()
    for name in ("dvb_gopt_ks.out", "dvb_ir.out", "dvb_td.out", "dvb_un_sp_ks.out"):
        shutil.copy(fixture_path(NW + name), folder / name)
    return folder


def test_init_drafts_a_manifest_that_loads_and_checks(tmp_path, capsys):
    folder = _folder(tmp_path)
    # outside reference: the frequency list NWChem printed (no negative = imaginary entry)
    # ("P.Frequency" rows; the six near-zero entries are the projected translations/rotations)
    printed = [float(x) for line in (folder / "dvb_ir.out").read_text().splitlines()
               if line.startswith(" P.Frequency") for x in line.split()[1:]]
    assert len(printed) == 60 and min(printed) > -1.0
    assert main(["init", str(folder), "--jobs", "1"]) == 0
    draft = (folder / "dossier.toml").read_text()
    data = tomllib.loads(draft)
    (name, state), = data["states"].items()
    assert state["geometry"] == "dvb_gopt_ks.out"
    assert state["frequencies"] == "dvb_ir.out" and state["excited_states"] == "dvb_td.out"
    assert state["role"] == "minimum"
    assert "single_points" not in state  # the cation single point is another charge
    assert "dvb_un_sp_ks.out" in draft.split("Files not placed")[1]
    # every guessed line says so
    for key in ("role", "geometry", "frequencies", "excited_states"):
        line = next(t for t in draft.splitlines() if t.startswith(f"{key} ="))
        assert "# guess:" in line and "confirm" in line
    project = load_project(folder / "dossier.toml", jobs=1)
    findings = checks.run_checks(project)
    assert [f.line() for f in findings if f.severity == "error"] == []
    capsys.readouterr()
    assert main(["check", str(folder / "dossier.toml")]) == 0


def test_init_never_overwrites_without_force(tmp_path, capsys):
    folder = _folder(tmp_path)
    target = folder / "dossier.toml"
    target.write_text("# my own manifest\n")
    assert main(["init", str(folder), "--jobs", "1"]) == 2
    assert "--force" in capsys.readouterr().err
    assert target.read_text() == "# my own manifest\n"
    assert main(["init", str(folder), "--jobs", "1", "--force"]) == 0
    assert "[states." in target.read_text()
    assert [p.name for p in folder.iterdir() if p.name.endswith(".tmp")] == []  # no temp file left


def test_init_out_elsewhere_writes_relative_paths(tmp_path):
    folder = _folder(tmp_path)
    out = tmp_path / "manifests" / "draft.toml"
    assert main(["init", str(folder), "--out", str(out), "--jobs", "1"]) == 0
    m = load_manifest(out)
    assert all(p.parent == folder.resolve() for p in m.all_files())
    assert '"../study/dvb_gopt_ks.out"' in out.read_text()


def _confirm(text: str) -> str:
    """What a user does after reading the draft: accept every guess (drop the comments)."""
    return "\n".join(re.sub(r"\s+# guess:.*$", "", line) for line in text.splitlines()) + "\n"


@pytest.mark.slow
def test_init_on_the_demo_study(tmp_path):
    # The demo study's sound runs (every folder but flawed/), linked into a fresh folder.
    demo = demo_path("")
    parts = ["pathway", "ladder", "tddft", "fourpoint", "survey"]
    if not all(list((demo / p).glob("*.out")) for p in parts):
        pytest.skip("the demo study's runs have not all been produced yet")
    folder = tmp_path / "study"
    folder.mkdir()
    for p in parts:
        (folder / p).symlink_to(demo / p, target_is_directory=True)
    out = folder / "dossier.toml"
    assert main(["init", str(folder)]) == 0
    draft = out.read_text()
    out.write_text(_confirm(draft))
    project = load_project(out)
    roles = {s.role for s in project.states.values()}
    assert "transition-state" in roles and "minimum" in roles
    assert project.pathways, "a pathway through the transition state is guessed"
    pw = project.pathways[0]
    # the demo's manifest (written by hand) says which states form the pathway
    sound = tomllib.loads((demo / "dossier.toml").read_text())
    ts_file = sound["states"][sound["pathways"][0]["transition_state"]]["geometry"]
    assert project.label(project.states[pw.transition_state].geometry).endswith(ts_file)
    findings = checks.run_checks(project)
    assert [f.line() for f in findings if f.severity == "error"] == []


@pytest.mark.parametrize("umask", [0o022, 0o077])
def test_init_draft_gets_the_permissions_of_an_ordinary_file(tmp_path, umask):
    # POSIX: a new file is created with mode 0666 less the process umask (open(2), umask(2));
    # tempfile.mkstemp alone would leave 0600 whatever the umask
    folder = _folder(tmp_path)
    old = os.umask(umask)
    try:
        assert main(["init", str(folder), "--jobs", "1"]) == 0
    finally:
        os.umask(old)
    assert stat.S_IMODE((folder / "dossier.toml").stat().st_mode) == 0o666 & ~umask
