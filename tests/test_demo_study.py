"""End-to-end checks of the demo study in example_outputs/ (see example_outputs/README.md).

Reading the study must give exactly the statuses its README promises: the pathway minima
0 imaginary modes, the transition state 1, and each flawed run recognisable for what it is.
The references are the output files themselves: the imaginary counts and spin populations
are re-read here from the log text with plain regular expressions, independently of cclib
and of dossier's reading layer, and geometries are compared with ASE's alignment
(ase.build.minimize_rotation_and_translation, ASE from PyPI).
A seconds-long real xtb run is read back too (skipped when xtb is not installed).
"""
from __future__ import annotations

import functools
import re
import subprocess
from pathlib import Path

import numpy as np
import pytest

from tests.conftest import DEMO, demo_path, require_program

reading = pytest.importorskip("dossier.reading", reason="dossier.reading (the reading layer) is not importable")

# What example_outputs/README.md promises for every output: (status word, imaginary modes or None
# when the file has no frequencies). Keep this table and the README's table in step.
EXPECTED = {
    "survey/xtb_planar.out": ("ok", None),
    "survey/xtb_localized.out": ("ok", None),
    "survey/xtb_twisted.out": ("ok", None),
    "pathway/min_a_opt.out": ("ok", None),
    "pathway/min_b_opt.out": ("ok", None),
    "pathway/ts_opt.out": ("ok", None),
    "pathway/min_a_freq.out": ("ok", 0),
    "pathway/min_b_freq.out": ("ok", 0),
    "pathway/ts_freq.out": ("ok", 1),
    "fourpoint/neutral_opt.out": ("ok", None),
    "fourpoint/anion_opt.out": ("ok", None),
    "fourpoint/neutral_at_anion.out": ("ok", None),
    "fourpoint/anion_at_neutral.out": ("ok", None),
    "tddft/min_a_td.out": ("ok", None),
    "tddft/ts_td.out": ("ok", None),
    "ladder/min_a_mp2.out": ("ok", None),
    "ladder/min_b_mp2.out": ("ok", None),
    "ladder/ts_mp2.out": ("ok", None),
    "flawed/min_a_maxiter.out": ("not-converged", None),
    "flawed/ts_twisted_xtb.out": ("ok", 2),
    "flawed/min_a_mp2_wronggeom.out": ("ok", None),
    "flawed/min_a_ump2.out": ("ok", None),
    "flawed/ts_ump2.out": ("ok", None),
}

# 0-based atom groups of 1,3-dinitrobenzene in the study's atom order (README: 1-based 7-9, 10-12)
NITRO_A = [6, 7, 8]
NITRO_B = [9, 10, 11]


@functools.lru_cache(maxsize=None)
def _read(rel: str):
    """Each demo output is read once per test session (without dossier's on-disk cache)."""
    return reading.read(demo_path(rel), use_cache=False)


def _text(rel: str) -> str:
    return demo_path(rel).read_text(errors="replace")


def _imaginary_from_text(rel: str) -> int:
    """Imaginary modes counted from the log itself (NWChem's projected list; xtb's eigval lines)."""
    text = _text(rel)
    if "x T B" in text[:5000]:
        block = text.rsplit("projected vibrational frequencies", 1)[1].split("reduced masses", 1)[0]
        values = [float(v) for v in re.findall(r"-?\d+\.\d+", block)]
        return sum(1 for v in values if v < -20.0)  # xtb's own "significant" cutoff is -20 cm-1
    # NWChem: the last table, "Projected Infra Red Intensities", one row per mode: "  1  -778.349 || ..."
    block = text.rsplit("Projected Infra Red Intensities", 1)[1].split("\n\n\n", 1)[0]
    rows = re.findall(r"^\s*\d+\s+(-?\d+\.\d+)\s+\|\|", block, flags=re.M)
    return sum(1 for v in rows if float(v) < -20.0)


def _spin_from_text(rel: str) -> list[float]:
    """Last 'Spin Density - Mulliken Population Analysis' block of an NWChem log."""
    block = _text(rel).rsplit("Spin Density - Mulliken Population Analysis", 1)[1]
    values = []
    for line in block.splitlines()[5:]:
        m = re.match(r"\s*\d+\s+[A-Za-z]+\s+\d+\s+(-?\d+\.\d+)", line)
        if not m:
            break
        values.append(float(m.group(1)))
    return values


def test_every_output_is_listed():
    """The README's table (EXPECTED) and the folder hold the same outputs (the second demo study,
    example_outputs/stacked_dimer/, has its own README and is not part of this one)."""
    if not DEMO.exists():
        pytest.skip("example_outputs/ absent")
    on_disk = sorted(str(p.relative_to(DEMO)) for p in DEMO.rglob("*.out")
                     if p.relative_to(DEMO).parts[0] != "stacked_dimer")
    assert on_disk == sorted(EXPECTED)


@pytest.mark.parametrize("rel", sorted(EXPECTED))
def test_status_and_imaginary_count(rel):
    word, n_imag = EXPECTED[rel]
    rec = _read(rel)
    assert rec.status.word == word, rec.status.reason
    if n_imag is None:
        return
    assert rec.vibrations is not None
    assert rec.vibrations.n_imaginary == n_imag
    assert _imaginary_from_text(rel) == n_imag  # the log itself says the same


@pytest.mark.parametrize("rel, heavier", [("pathway/min_a_freq.out", "a"), ("pathway/min_b_freq.out", "b"),
                                          ("pathway/ts_freq.out", None)])
def test_spin_localization(rel, heavier):
    """Electron on nitro_a in min_a, on nitro_b in min_b, shared equally at the C2v saddle."""
    spin = _spin_from_text(rel)
    rec = _read(rel)
    assert np.allclose(rec.spin_populations["mulliken"], spin, atol=0.006)  # log prints 2 decimals
    a, b = sum(spin[i] for i in NITRO_A), sum(spin[i] for i in NITRO_B)
    if heavier == "a":
        assert a - b > 0.3
    elif heavier == "b":
        assert b - a > 0.3
    else:
        assert abs(a - b) < 0.02


def _rmsd_aligned(rec1, rec2) -> float:
    from ase import Atoms
    from ase.build import minimize_rotation_and_translation

    one = Atoms(rec1.elements, positions=rec1.coordinates_angstrom)
    two = Atoms(rec2.elements, positions=rec2.coordinates_angstrom)
    minimize_rotation_and_translation(one, two)
    return float(np.sqrt(((one.positions - two.positions) ** 2).sum(axis=1).mean()))


def test_single_points_sit_on_their_geometries():
    """MP2 and TDDFT single points at the optimised geometry; the flawed one is not."""
    opt = _read("pathway/min_a_opt.out")
    for rel in ("ladder/min_a_mp2.out", "tddft/min_a_td.out", "flawed/min_a_ump2.out"):
        assert _rmsd_aligned(_read(rel), opt) < 1e-4, rel
    wrong = _read("flawed/min_a_mp2_wronggeom.out")
    assert _rmsd_aligned(wrong, opt) > 0.01


def test_ump2_references_are_spin_contaminated():
    """The flawed UMP2 runs: NWChem's own S^2 of the UHF reference is far from 0.75 (a doublet)."""
    for rel in ("flawed/min_a_ump2.out", "flawed/ts_ump2.out"):
        s2 = float(re.findall(r"^\s*S\^2 =\s+(-?\d+\.\d+)", _text(rel), flags=re.M)[-1])
        assert s2 - 0.75 > 0.3, (rel, s2)
        rec = _read(rel)
        assert rec.s2 == pytest.approx(s2, abs=1e-4)  # the reader takes the SCF module's S^2 line
        assert any("spin contamination" in p for p in rec.problems)


def test_min_b_is_the_mirror_image_of_min_a():
    """Same energy (to the optimiser's convergence) and the same structure with the sites swapped."""
    a = _read("pathway/min_a_opt.out")
    b = _read("pathway/min_b_opt.out")
    assert abs(a.energy_hartree - b.energy_hartree) < 2e-5
    mirror = [2, 1, 0, 5, 4, 3, 9, 10, 11, 6, 7, 8, 12, 15, 14, 13]  # example_outputs/tools/geom.py
    swapped = type(b)(source=b.source, elements=[b.elements[j] for j in mirror],
                      coordinates_angstrom=[b.coordinates_angstrom[j] for j in mirror])
    assert _rmsd_aligned(swapped, a) < 0.01


def test_checks_catch_the_flawed_runs():
    """dossier check on flawed.toml: each flawed run raises the finding README names."""
    project = pytest.importorskip("dossier.project", reason="dossier.project not importable")
    checks = pytest.importorskip("dossier.project.checks", reason="dossier.project.checks not importable")
    sound = checks.run_checks(project.load_project(demo_path("dossier.toml"), use_cache=False))
    assert [f.line() for f in sound if f.severity == "error"] == []
    found = checks.run_checks(project.load_project(demo_path("flawed.toml"), use_cache=False))
    codes = {(f.state, f.code) for f in found if f.severity == "error"}
    assert ("min_a_short", "OPT-CONV") in codes
    assert ("ts_twisted", "IMAG-TS") in codes
    assert ("min_a", "SP-GEOM") in codes, codes


def test_tiny_real_xtb_run_reads_back(tmp_path: Path):
    """A real GFN2-xTB optimisation + Hessian of water (about a second), read back."""
    xtb = require_program("xtb")
    xyz = tmp_path / "water.xyz"
    xyz.write_text("3\nwater\nO 0.000 0.000 0.117\nH 0.000 0.757 -0.467\nH 0.000 -0.757 -0.467\n")
    with open(tmp_path / "water.out", "w") as out:
        subprocess.run([xtb, "water.xyz", "--ohess"], cwd=tmp_path, stdout=out, stderr=subprocess.STDOUT,
                       timeout=120, check=True, env={"OMP_NUM_THREADS": "1", "PATH": "/usr/bin:/bin"})
    rec = reading.read(tmp_path / "water.out", use_cache=False)
    assert rec.program == "xtb" and rec.status.word == "ok"
    assert rec.elements == ["O", "H", "H"]
    # three real modes for a non-linear triatomic (3N-6), none imaginary
    assert len(rec.vibrations.wavenumbers_cm1) == 3 and rec.vibrations.n_imaginary == 0
    # water's fundamentals are about 1595, 3657, 3756 cm-1 (NIST CCCBDB, from memory); GFN2 is a
    # cheap model, so only the ordering bend < stretches and a loose window are asserted
    w = sorted(rec.vibrations.wavenumbers_cm1)
    assert 1300 < w[0] < 1900 and 3000 < w[1] < 4200 and 3000 < w[2] < 4200
