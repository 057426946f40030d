"""dossier.project.checks on small projects built from real third-party outputs (cclib's test data,
BSD-3, in ../shared/fixtures/qc-logs) and, when present, on the demo study.

Each expectation is checked against something outside the checker: the log text itself
(what the program printed), ASE's superposition for RMSDs, hashlib for SHA-256.
"""
from __future__ import annotations

import dataclasses
import hashlib
import json
import re
import textwrap
from pathlib import Path

import numpy as np
import pytest

from dossier.project import checks
from dossier.project import bind, load_manifest, load_project

from conftest import demo_path, fixture_path

G = "Gaussian/basicGaussian16/"


def _project(tmp_path: Path, body: str, **kw):
    path = tmp_path / "dossier.toml"
    path.write_text(textwrap.dedent(body))
    return load_project(path, jobs=1, **kw)


def _codes(findings, severity=None):
    return {f.code for f in findings if severity is None or f.severity == severity}


def _dvb_state(role="minimum", extra=""):
    return f"""\
        [states.dvb]
        role = "{role}"
        geometry = "{fixture_path(G + 'dvb_gopt.out')}"
        frequencies = "{fixture_path(G + 'dvb_ir.out')}"
        {extra}
        """


def test_transition_state_role_on_a_minimum_is_an_error(tmp_path):
    # Outside reference: Gaussian's own frequency list in dvb_ir.out, whose first (lowest)
    # printed frequency is positive, i.e. the structure has no imaginary mode.
    text = fixture_path(G + "dvb_ir.out").read_text()
    first = float(re.search(r"Frequencies --\s+(-?\d+\.\d+)", text).group(1))
    assert first > 0
    findings = checks.run_checks(_project(tmp_path, _dvb_state("transition-state")))
    imag_ts = [f for f in findings if f.code == "IMAG-TS"]
    assert len(imag_ts) == 1 and imag_ts[0].severity == "error"
    assert imag_ts[0].state == "dvb" and imag_ts[0].file.endswith("dvb_ir.out")


def test_minimum_role_on_the_same_job_has_no_imaginary_finding(tmp_path):
    findings = checks.run_checks(_project(tmp_path, _dvb_state("minimum")))
    assert not _codes(findings) & {"IMAG-MIN", "IMAG-TS", "IMAG-NOISE"}
    assert "error" not in {f.severity for f in findings}


def test_single_point_at_another_geometry(tmp_path):
    # Q-Chem's B3LYP/STO-3G optimum vs xtb's GFN2 optimum of the same molecule, same atom order.
    # Outside reference for the RMSD: ASE's minimize_rotation_and_translation.
    from ase import Atoms
    from ase.build import minimize_rotation_and_translation
    from dossier.reading import read

    qopt = fixture_path("QChem/basicQChem5.4/dvb_gopt.out")
    xopt = fixture_path("XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out")
    project = _project(tmp_path, f"""\
        [states.q]
        geometry = "{qopt}"
        single_points = {{ xtb = "{xopt}" }}
        """)
    findings = checks.run_checks(project)
    sp = [f for f in findings if f.code == "SP-GEOM"]
    assert len(sp) == 1 and sp[0].severity == "error" and sp[0].file.endswith("dvb_opt.out")
    a, b = read(xopt), read(qopt)
    mobile, target = Atoms(a.elements, a.coordinates_angstrom), Atoms(b.elements, b.coordinates_angstrom)
    minimize_rotation_and_translation(target, mobile)
    ase_rmsd = float(np.sqrt(((mobile.positions - target.positions) ** 2).sum(1).mean()))
    assert ase_rmsd > checks.SAME_GEOMETRY_RMSD_ANGSTROM
    assert f"{ase_rmsd:.3f} A RMSD" in sp[0].message


def test_single_point_at_the_same_geometry_passes(tmp_path):
    # NWChem's frequency and UKS cation jobs were run at the optimised geometry of the cclib
    # inputs (dvb_ir.in / dvb_un_sp_ks.in carry the same coordinates): no SP-GEOM/FREQ-GEOM.
    nw = "NWChem/basicNWChem7.0/"
    project = _project(tmp_path, f"""\
        [states.n]
        geometry = "{fixture_path(nw + 'dvb_ir.out')}"
        single_points = {{ cation = "{fixture_path(nw + 'dvb_un_sp_ks.out')}" }}
        """)
    findings = checks.run_checks(project)
    assert "SP-GEOM" not in _codes(findings)
    # but the cation single point has another charge and multiplicity than the neutral geometry job
    cm = [f for f in findings if f.code == "CHARGE-MULT"]
    assert cm and cm[0].file.endswith("dvb_un_sp_ks.out")


def test_spin_contamination_of_an_unrestricted_hf_cation(tmp_path):
    # Outside reference: ORCA's own "Expectation value of <S**2>" line in the log; the doublet
    # ideal S(S+1) = 0.75; the 0.1 limit is common practice, no source.
    hf = fixture_path("ORCA/basicORCA6.0/dvb_sp_un_hf.out")
    uks = fixture_path("ORCA/basicORCA5.0/dvb_sp_un.out")
    printed = float(re.search(r"Expectation value of <S\*\*2>\s*:\s*([\d.]+)", hf.read_text()).group(1))
    printed_uks = float(re.search(r"Expectation value of <S\*\*2>\s*:\s*([\d.]+)", uks.read_text()).group(1))
    assert abs(printed - 0.75) > 0.1 > abs(printed_uks - 0.75)
    project = _project(tmp_path, f"""\
        [states.hf]
        geometry = "{hf}"
        [states.uks]
        geometry = "{uks}"
        """)
    spin = [f for f in checks.run_checks(project) if f.code == "SPIN-CONTAM"]
    assert [f.state for f in spin] == ["hf"]
    assert f"{printed:.4f}" in spin[0].message


def test_truncated_run_is_an_error(tmp_path):
    text = fixture_path(G + "dvb_gopt.out").read_text()
    cut = tmp_path / "cut.log"
    cut.write_text(text[: len(text) // 2])  # a copy cut in half: no "Normal termination" line
    assert "Normal termination" not in cut.read_text()
    findings = checks.run_checks(_project(tmp_path, f'[states.c]\ngeometry = "{cut}"\n'))
    assert "RUN-TRUNCATED" in _codes(findings, "error")


def test_levels_mixed_along_a_pathway_and_allowed_by_a_recipe(tmp_path):
    # Gaussian's and ORCA's dvb files print the same level; xtb is GFN2-xTB: a different one.
    body = f"""\
        [states.g]
        geometry = "{fixture_path('QChem/basicQChem5.4/dvb_gopt.out')}"
        [states.x]
        geometry = "{fixture_path('XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out')}"
        [recipes.e]
        electronic = "geometry"
        thermal = "none"
        MIXED
        [[pathways]]
        name = "p"
        reactant = "g"
        product = "x"
        """
    findings = checks.run_checks(_project(tmp_path, body.replace("MIXED", "")))
    mix = [f for f in findings if f.code == "LEVEL-MIX"]
    assert mix and all(f.severity == "error" for f in mix) and "GFN2-xTB" in mix[0].message
    findings = checks.run_checks(_project(tmp_path, body.replace("MIXED", "mixed_levels = true")))
    assert {f.severity for f in findings if f.code == "LEVEL-MIX"} == {"info"}


def test_duplicates_and_thermo_conditions(tmp_path):
    # dvb_gopt.out and dvb_ir.out end at the same geometry with the same SCF energy (Gaussian
    # prints SCF Done: E(RB3LYP) = -382.308266602 in both): two states that are one structure.
    gopt, gir = fixture_path(G + "dvb_gopt.out"), fixture_path(G + "dvb_ir.out")
    e = [re.findall(r"SCF Done:\s+E\(\S+\)\s+=\s+(-?\d+\.\d+)", p.read_text())[-1] for p in (gopt, gir)]
    assert e[0] == e[1]
    # Gaussian prints its thermochemistry at 298.150 K and 1 atm (the log's "Temperature ... Pressure" line)
    assert re.search(r"Temperature\s+298\.150 Kelvin\.\s+Pressure\s+1\.00000 Atm", gir.read_text())
    project = _project(tmp_path, f"""\
        [project]
        temperatures_k = [320.0]
        standard_state = "1atm"
        [states.a]
        geometry = "{gopt}"
        frequencies = "{gir}"
        [states.b]
        geometry = "{gir}"
        [states.c]
        geometry = "{gir}"
        """)
    findings = checks.run_checks(project)
    assert "DUP-FILE" in _codes(findings, "error")
    assert any(f.code == "DUP-STATE" and f.state == "b" for f in findings)
    assert "THERMO-T" in _codes(findings, "info")
    assert "THERMO-SS" not in _codes(findings)  # 1 atm printed, 1 atm asked


def test_source_changed_since_the_last_build(tmp_path):
    gopt = fixture_path(G + "dvb_gopt.out")
    project = _project(tmp_path, f'[states.a]\ngeometry = "{gopt}"\n')
    label = project.label(gopt)
    sha = hashlib.sha256(gopt.read_bytes()).hexdigest()  # outside reference: hashlib
    same = checks.run_checks(project, previous_sources=[{"path": label, "sha256": sha}])
    assert not _codes(same) & {"SRC-CHANGED", "SRC-NEW", "SRC-GONE"}
    changed = checks.run_checks(project, previous_sources=[{"path": label, "sha256": "0" * 64},
                                                           {"path": "old.out", "sha256": "1" * 64}])
    assert "SRC-CHANGED" in _codes(changed, "warning") and "SRC-GONE" in _codes(changed)


def test_ts_mode_direction_on_a_real_normal_mode(tmp_path):
    # Records derived from ORCA's dvb frequency job: its lowest real mode is made the "imaginary"
    # mode of a stand-in transition state; minima displaced along that mode (+-0.05 A) are
    # connected by it (|cos| = 1), minima displaced along another mode are not (modes of one
    # Hessian are orthogonal in mass-weighted coordinates, nearly so in Cartesians).
    from dossier.reading import read

    ir = fixture_path("ORCA/basicORCA5.0/dvb_ir.out")
    base = read(ir)
    vib = base.vibrations
    x0 = np.asarray(base.coordinates_angstrom)

    def run(mode_for_minima: int):
        m = np.asarray(vib.displacements[mode_for_minima])
        m = 0.05 * m / np.linalg.norm(m)
        files = {n: tmp_path / f"{n}.out" for n in ("a", "t", "b")}
        for p in files.values():
            p.write_bytes(ir.read_bytes())
        wn = list(vib.wavenumbers_cm1)
        wn[0] = -abs(wn[0]) - 300.0
        ts = dataclasses.replace(base, vibrations=dataclasses.replace(vib, wavenumbers_cm1=wn))
        rec = {files["t"]: ts,
               files["a"]: dataclasses.replace(base, coordinates_angstrom=(x0 - m).tolist(), vibrations=None),
               files["b"]: dataclasses.replace(base, coordinates_angstrom=(x0 + m).tolist(), vibrations=None)}
        path = tmp_path / "dossier.toml"
        path.write_text(textwrap.dedent("""\
            [states.a]
            geometry = "a.out"
            [states.t]
            role = "transition-state"
            geometry = "t.out"
            [states.b]
            geometry = "b.out"
            [[pathways]]
            name = "p"
            reactant = "a"
            transition_state = "t"
            product = "b"
            """))
        manifest = load_manifest(path)
        project = bind(manifest, {p.resolve(): r for p, r in rec.items()})
        return [f for f in checks.run_checks(project) if f.code == "TS-MODE"]

    assert run(0) == []
    wrong = run(5)
    assert len(wrong) == 1 and wrong[0].severity == "error" and wrong[0].state == "t"


def test_cli_json_and_exit_codes(tmp_path, capsys):
    from dossier.cli import main

    path = tmp_path / "dossier.toml"
    path.write_text(textwrap.dedent(_dvb_state("transition-state")))
    assert main(["check", str(path), "--json"]) == 1
    out = json.loads(capsys.readouterr().out)
    assert out and all(set(f) == {"severity", "code", "state", "file", "message"} for f in out)
    path.write_text(textwrap.dedent(_dvb_state("minimum")))
    assert main(["check", str(path)]) == 0
    assert "Notes" in capsys.readouterr().out
    path.write_text('[states.a]\ngeometry = "nowhere.out"\n')
    assert main(["check", str(path)]) == 2
    assert f"{path}:2:" in capsys.readouterr().err


# -- the demo study ----------------------------------------------------------------
def _demo_project(name: str):
    """The demo study's project; skips while the study is still being produced (a file missing)."""
    from dossier.errors import ManifestError

    manifest = demo_path(name)
    try:
        load_manifest(manifest)
    except ManifestError as exc:
        if "does not exist" in exc.reason:
            pytest.skip(f"demo study incomplete: {exc}")
        raise
    return load_project(manifest)


def _demo_findings(name: str):
    return checks.run_checks(_demo_project(name))


def test_demo_sound_manifest_has_no_error():
    findings = _demo_findings("dossier.toml")
    errors = [f.line() for f in findings if f.severity == "error"]
    assert errors == []


#: What each deliberately flawed demo run must raise, by what its NWChem input says it is
#: (example_outputs/flawed/*.nw titles: "FLAWED on purpose: ...").
FLAW_CODES = {
    "maxiter": {"OPT-CONV", "RUN-STATUS", "RUN-TRUNCATED"},  # optimisation stopped by a step limit
    "wronggeom": {"SP-GEOM"},  # single point at the unoptimised start geometry
    "wrong_geom": {"SP-GEOM"},
    "twisted": {"IMAG-TS"},  # a second-order saddle filed as the transition state
    "ump2": {"SPIN-CONTAM"},  # UMP2 on a UHF reference with <S^2> far from 0.75 (the log's "S^2 =" line)
    "imag": {"IMAG-MIN", "IMAG-TS"},
    "level": {"LEVEL-MIX"},
    "charge": {"CHARGE-MULT"},
    "order": {"ATOM-ORDER"},
}


def test_demo_flawed_manifest_flags_each_flawed_run():
    project = _demo_project("flawed.toml")
    findings = checks.run_checks(project)
    flawed_files = [project.label(p) for p in project.records if "flawed/" in project.label(p)]
    assert flawed_files, "flawed.toml names the runs under example_outputs/flawed/"
    records = {project.label(p): r for p, r in project.records.items()}
    reader_gaps = []
    for label in flawed_files:
        if "ump2" in Path(label).stem and records[label].s2 is None:
            reader_gaps.append(label)  # SPIN-CONTAM needs the record's <S^2>; nothing here re-reads the log
            continue
        mine = [f for f in findings if f.file == label and f.severity in ("error", "warning")]
        assert mine, f"no finding on the flawed run {label}"
        for word, codes in FLAW_CODES.items():
            if word in Path(label).stem:
                assert {f.code for f in mine} & codes, (label, [f.line() for f in mine])
    if reader_gaps:
        pytest.skip(f"every other flawed run checked; the reader gives no <S^2> for {', '.join(reader_gaps)}, "
                    "so SPIN-CONTAM cannot be checked on them")


def test_cli_against_a_previous_build(tmp_path, capsys):
    from dossier.cli import main

    gopt = fixture_path(G + "dvb_gopt.out")
    path = tmp_path / "dossier.toml"
    path.write_text(f'[states.a]\nrole = "minimum"\ngeometry = "{gopt}"\n')
    build = tmp_path / "build"
    build.mkdir()
    sha = hashlib.sha256(gopt.read_bytes()).hexdigest()
    (build / "dossier.json").write_text(json.dumps({"sources": [{"path": str(gopt), "sha256": sha[::-1]}]}))
    assert main(["check", str(path), "--against", str(build), "--json"]) == 0  # a changed file is a warning
    out = json.loads(capsys.readouterr().out)
    assert [f["file"] for f in out if f["code"] == "SRC-CHANGED"] == [str(gopt)]
    (build / "dossier.json").write_text("{}")
    assert main(["check", str(path), "--against", str(build / "dossier.json")]) == 2


def test_imaginary_threshold_on_the_demo_transition_state(tmp_path):
    # Outside reference: NWChem's own frequency table in ts_freq.out ("P.Frequency" rows), whose
    # one negative entry is the imaginary mode of the C2v saddle point.
    ts_opt, ts_freq = demo_path("pathway/ts_opt.out"), demo_path("pathway/ts_freq.out")
    printed = [float(x) for line in ts_freq.read_text().splitlines() if line.startswith(" P.Frequency")
               for x in line.split()[1:]]
    imaginary = [w for w in printed if w < -20.0]
    if len(imaginary) != 1:
        pytest.skip("the demo's TS frequency job is not finished")

    def findings(role, threshold):
        return checks.run_checks(_project(tmp_path, f"""\
            [project]
            imaginary_threshold_cm1 = {threshold}
            [states.ts]
            role = "{role}"
            geometry = "{ts_opt}"
            frequencies = "{ts_freq}"
            """))

    assert not _codes(findings("transition-state", 20.0)) & {"IMAG-TS", "IMAG-MIN", "IMAG-NOISE"}
    as_minimum = [f for f in findings("minimum", 20.0) if f.code == "IMAG-MIN"]
    assert len(as_minimum) == 1
    reported = float(re.search(r"\(([\d.]+)i cm-1\)", as_minimum[0].message).group(1))
    assert reported == pytest.approx(abs(imaginary[0]), abs=0.06)  # NWChem prints 2 decimals
    # a threshold above |nu| makes the mode "noise": a warning, and the TS role then fails
    noisy = findings("transition-state", abs(imaginary[0]) + 100.0)
    assert "IMAG-NOISE" in _codes(noisy, "warning") and "IMAG-TS" in _codes(noisy, "error")


def test_ts_mode_direction_on_the_demo_pathway(tmp_path):
    # Real NWChem transition state (C2v, electron shared) between the two localized minima.
    # Outside reference for the projection: ASE's minimize_rotation_and_translation for the
    # superposition, numpy for the cosine.
    from ase import Atoms
    from ase.build import minimize_rotation_and_translation
    from dossier.reading import read

    files = {k: demo_path(f"pathway/{k}.out") for k in ("min_a_opt", "min_b_opt", "ts_opt", "ts_freq")}
    twisted = demo_path("survey/xtb_twisted.out")  # nitro groups rotated: another motion entirely
    ts = read(files["ts_freq"])
    if ts.vibrations is None or ts.vibrations.n_imaginary != 1:
        pytest.skip("the demo's TS frequency job is not finished")

    def ase_cos(a_path, b_path):
        ref = Atoms(ts.elements, ts.coordinates_angstrom)
        moved = []
        for p in (a_path, b_path):
            r = read(p)
            at = Atoms(r.elements, r.coordinates_angstrom)
            minimize_rotation_and_translation(ref, at)
            moved.append(at.positions)
        d = (moved[1] - moved[0]).ravel()
        m = np.asarray(ts.vibrations.displacements[0]).ravel()
        return abs(d @ m) / np.linalg.norm(d) / np.linalg.norm(m)

    def ts_mode_findings(product):
        return [f for f in checks.run_checks(_project(tmp_path, f"""\
            [states.a]
            geometry = "{files['min_a_opt']}"
            [states.t]
            role = "transition-state"
            geometry = "{files['ts_opt']}"
            frequencies = "{files['ts_freq']}"
            [states.b]
            geometry = "{product}"
            [recipes.e]
            thermal = "none"
            mixed_levels = true
            [[pathways]]
            name = "p"
            reactant = "a"
            transition_state = "t"
            product = "b"
            """)) if f.code == "TS-MODE"]

    assert ase_cos(files["min_a_opt"], files["min_b_opt"]) >= checks.TS_MODE_COS_OK
    assert ts_mode_findings(files["min_b_opt"]) == []
    cos_wrong = ase_cos(files["min_a_opt"], twisted)
    wrong = ts_mode_findings(twisted)
    assert cos_wrong < checks.TS_MODE_COS_OK and len(wrong) == 1
    assert f"|cos| = {cos_wrong:.2f}" in wrong[0].message
