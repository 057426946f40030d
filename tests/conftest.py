"""Shared test helpers: where the real third-party outputs and the demo study live."""
from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
# Real outputs of real programs (cclib's open test data, BSD-3); never copied into the project.
FIXTURES = ROOT.parent / "shared" / "fixtures" / "qc-logs"
DEMO = ROOT / "example_outputs"


def fixture_path(relative: str) -> Path:
    """Path of a third-party fixture log; skips the test when the shared folder is absent."""
    path = FIXTURES / relative
    if not path.exists():
        pytest.skip(f"third-party fixture {relative} not present (../shared/fixtures/qc-logs absent)")
    return path


def demo_path(relative: str = "") -> Path:
    """Path inside the demo study; skips when that part of the study is not there."""
    path = DEMO / relative
    if not path.exists():
        pytest.skip(f"demo study file {relative} not present")
    return path


def require_program(name: str) -> str:
    """Full path of an installed program (nwchem, xtb, chromium, ...) or skip."""
    found = shutil.which(name)
    if not found:
        pytest.skip(f"{name} is not installed (.ci/run installs it)")
    return found


# A tiny real dimer: two H2 molecules side by side, bonds parallel to z, centres 3.0 A apart along x.
H2_DIMER = [("H", -1.5, 0.0, -0.37), ("H", -1.5, 0.0, 0.37), ("H", 1.5, 0.0, -0.37), ("H", 1.5, 0.0, 0.37)]
_NW = """start {name}
title "{title}"
charge {charge}
geometry units angstrom noautoz nocenter noautosym
{atoms}
end
basis
  * library 6-31g
end
dft
  xc bhlyp
{open}end
{td}task {task} energy
"""


def nwchem_h2_dimer(folder, name: str, charge: int) -> str:
    """Run NWChem on the H2 dimer (neutral: DFT; cation: unrestricted TDDFT, 4 roots); the output path."""
    atoms = "\n".join(f"  {e} {x} {y} {z}" for e, x, y, z in H2_DIMER)
    text = _NW.format(name=name, title=f"H2 dimer charge {charge}", charge=charge, atoms=atoms,
                      open="  odft\n  mult 2\n" if charge else "  mult 1\n",
                      td="tddft\n  nroots 4\nend\n" if charge else "", task="tddft" if charge else "dft")
    (folder / f"{name}.nw").write_text(text)
    with open(folder / f"{name}.out", "w") as out:
        subprocess.run([require_program("nwchem"), f"{name}.nw"], cwd=folder, stdout=out, stderr=subprocess.STDOUT,
                       check=False, timeout=120)
    return str(folder / f"{name}.out")


@pytest.fixture(scope="session")
def h2_runs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("h2dimer")
    return {"neutral": nwchem_h2_dimer(folder, "neutral", 0), "cation": nwchem_h2_dimer(folder, "cation", 1)}
