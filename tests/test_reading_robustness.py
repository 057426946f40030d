"""Bad input, cut-off logs, failed runs, the cache, parallel reading and `dossier read`.

Cut-off and failed copies are made in the test from real third-party logs
(../shared/fixtures/qc-logs, cclib's open test data); nothing in the fixture folder is modified.
"""
from __future__ import annotations

import json
import os
from concurrent.futures import ThreadPoolExecutor

import pytest

from conftest import fixture_path
from dossier.cli import main
from dossier.errors import ReadError
from dossier.reading import cache as rcache
from dossier.reading import find_outputs, read, read_many

CUT_SOURCES = [
    "Gaussian/basicGaussian16/dvb_gopt.out",
    "Gaussian/basicGaussian16/dvb_un_sp.log",
    "ORCA/basicORCA6.0/dvb_td.out",
    "ORCA/basicORCA5.0/dvb_ir.out",
    "NWChem/basicNWChem7.0/dvb_ir.out",
    "Psi4/basicPsi4-1.7/dvb_gopt_rks.out",
    "QChem/basicQChem5.4/dvb_gopt.out",
    "XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out",
]
CUT_FRACTIONS = (0.05, 0.3, 0.55, 0.8, 0.97)


def _assert_no_new_number(cut, full):
    """Everything the cut copy reports, the complete log reports too (or the cut withholds it)."""
    assert cut.status.word in ("truncated", "failed")
    assert cut.status.word != "ok"
    for name in ("energy_hartree", "scf_energy_hartree", "s2", "dipole_debye"):
        assert getattr(cut, name) in (None, getattr(full, name)), name
    assert cut.coordinates_angstrom in ([], full.coordinates_angstrom)
    assert cut.elements in ([], full.elements)
    assert cut.charge in (None, full.charge) and cut.multiplicity in (None, full.multiplicity)
    assert cut.energies_hartree == {} or cut.energies_hartree == full.energies_hartree
    n = len(cut.optimization_energies_hartree)
    assert cut.optimization_energies_hartree == full.optimization_energies_hartree[:n]
    assert cut.vibrations is None or cut.vibrations == full.vibrations
    assert cut.charges == {} and cut.spin_populations == {} and cut.excited_states == []
    assert cut.printed_thermo is None and cut.orbitals is None


@pytest.mark.parametrize("rel", CUT_SOURCES)
def test_cut_off_copies_are_never_ok_and_add_no_number(rel, tmp_path):
    src = fixture_path(rel)
    data = src.read_bytes()
    full = read(src, use_cache=False)
    assert full.status.word == "ok"
    for frac in CUT_FRACTIONS:
        cut_at = int(len(data) * frac)
        for offset in (0, 7):  # at a byte position and a few bytes later (mid-line, mid-number)
            copy = tmp_path / f"cut_{frac}_{offset}{src.suffix}"
            copy.write_bytes(data[: cut_at + offset])
            try:
                cut = read(copy, use_cache=False)
            except ReadError as exc:  # cut before the banner: not recognisable, which is honest too
                assert frac <= 0.05 and str(copy) in str(exc)
                continue
            _assert_no_new_number(cut, full)
            assert any("truncated" in p or "failed" in p for p in cut.problems)
    assert src.read_bytes() == data  # input never modified


def test_error_terminated_gaussian_job_is_failed(tmp_path):
    src = fixture_path("Gaussian/basicGaussian16/dvb_gopt.out")
    text = src.read_text()
    i = text.find(" SCF Done:", len(text) // 2)
    copy = tmp_path / "failed.log"
    # Gaussian's wording of an error exit (Link 9999 / l502), appended where the run stopped
    copy.write_text(text[:i] + " Error termination via Lnk1e in /opt/g16/l502.exe at Tue Dec  1 10:00:00 2026.\n")
    c = read(copy, use_cache=False)
    assert c.status.word == "failed"
    assert "Error termination" in c.status.reason
    assert c.energy_hartree is None and c.coordinates_angstrom == []


def test_orca_error_and_scf_non_convergence(tmp_path):
    src = fixture_path("ORCA/basicORCA6.0/dvb_sp_dft.out")
    text = src.read_text()
    i = text.find("FINAL SINGLE POINT ENERGY")
    bad = tmp_path / "err.out"
    bad.write_text(text[:i] + "ORCA finished by error termination in SCF\n")
    assert read(bad, use_cache=False).status.word == "failed"
    # ORCA's non-convergence message placed in an otherwise complete log
    nc = tmp_path / "nc.out"
    nc.write_text(text.replace("FINAL SINGLE POINT ENERGY", "                   SCF NOT CONVERGED AFTER 125 CYCLES\nFINAL SINGLE POINT ENERGY", 1))
    c = read(nc, use_cache=False)
    assert c.status.word == "not-converged" and c.status.scf_converged is False
    assert any("SCF did not converge" in p for p in c.problems)


# -- bad input: one line naming the file and the reason ------------------------------------

def _bad_folder(tmp_path):
    d = tmp_path / "project"
    d.mkdir()
    (d / "empty.out").write_bytes(b"")
    (d / "blank.log").write_text("\n\n   \n")
    (d / "binary.out").write_bytes(bytes(range(256)) * 64)
    (d / "notes.log").write_text("shopping list\n- milk\n- bread\n")
    (d / "molpro.out").write_text("\n ***  PROGRAM SYSTEM MOLPRO  ***\n Copyright, TTI GmbH Stuttgart\n")
    os.symlink(d / "loop_b.out", d / "loop_a.out")
    os.symlink(d / "loop_a.out", d / "loop_b.out")
    os.symlink(d, d / "again")  # a folder link back to itself: a directory loop
    good = fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out")
    (d / "good.out").write_bytes(good.read_bytes())
    return d


def test_each_bad_file_gets_one_reason(tmp_path):
    d = _bad_folder(tmp_path)
    notes: list[str] = []
    files = find_outputs(d, notes=notes)
    assert any("again" in n and "loop" in n for n in notes)
    names = sorted(p.name for p in files)
    assert names == sorted(["empty.out", "blank.log", "binary.out", "notes.log", "molpro.out", "loop_a.out", "loop_b.out", "good.out"])
    reasons = {}
    for p in files:
        try:
            read(p, use_cache=False)
        except ReadError as exc:
            assert str(p) in str(exc) and "\n" not in str(exc)
            reasons[p.name] = exc.reason
    assert reasons["empty.out"] == "empty file"
    assert "white space" in reasons["blank.log"]
    assert "binary" in reasons["binary.out"]
    assert "not a quantum-chemistry output" in reasons["notes.log"]
    assert "Molpro" in reasons["molpro.out"] and "not supported" in reasons["molpro.out"]
    assert "loop" in reasons["loop_a.out"]
    assert "good.out" not in reasons


def test_unreadable_file_and_folder_given_as_file(tmp_path, monkeypatch):
    # the tests run as root, for whom chmod 000 changes nothing: simulate the OS refusing
    target = tmp_path / "secret.out"
    target.write_bytes(fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out").read_bytes())
    real_open = os.open

    def refusing_open(path, *a, **k):
        if str(path) == str(target):
            raise PermissionError(13, "Permission denied", str(path))
        return real_open(path, *a, **k)

    monkeypatch.setattr(os, "open", refusing_open)  # the reader opens with os.open (non-blocking)
    with pytest.raises(ReadError, match="permission denied") as exc:
        read(target, use_cache=False)
    assert str(target) in str(exc.value)
    monkeypatch.undo()
    with pytest.raises(ReadError, match="is a folder"):
        read(tmp_path, use_cache=False)
    with pytest.raises(ReadError, match="no such file"):
        read(tmp_path / "missing.out", use_cache=False)


def test_cli_reports_bad_files_in_one_line_each_and_reads_the_rest(tmp_path, capsys):
    d = _bad_folder(tmp_path)
    rc = main(["read", str(d), "--no-cache", "--jobs", "1"])
    out, err = capsys.readouterr()
    assert rc == 1  # some file could not be read at all
    assert "Traceback" not in err and "Traceback" not in out
    lines = [ln for ln in err.splitlines() if ln.strip()]
    for name in ("empty.out", "blank.log", "binary.out", "notes.log", "molpro.out", "loop_a.out", "loop_b.out"):
        assert sum(name in ln for ln in lines) == 1, name
    assert "good.out" in out and "xtb" in out and "-26.42593936" in out


def test_cli_json_keys(tmp_path, capsys):
    rel = "ORCA/basicORCA6.0/dvb_sp_un_hf.out"
    rc = main(["read", str(fixture_path(rel)), "--json", "--cache-dir", str(tmp_path / "c")])
    out, _ = capsys.readouterr()
    assert rc == 0
    (rec,) = json.loads(out)
    for key in ("path", "sha256", "program", "program_version", "status", "problems", "charge", "multiplicity",
                "n_atoms", "elements", "coordinates_angstrom", "energy_hartree", "scf_energy_hartree",
                "energies_hartree", "frequencies_cm1", "n_imaginary", "spin_populations", "charges",
                "excited_states", "s2"):
        assert key in rec, key
    assert rec["status"] == "ok" and rec["program"] == "ORCA" and rec["charge"] == 1 and rec["multiplicity"] == 2
    assert len(rec["coordinates_angstrom"]) == rec["n_atoms"] == 20
    assert rec["energies_hartree"]["scf"] == rec["energy_hartree"]
    import hashlib

    assert rec["sha256"] == hashlib.sha256(fixture_path(rel).read_bytes()).hexdigest()  # hashlib: reference SHA-256


# -- cache -------------------------------------------------------------------------------

def test_cache_hit_damaged_and_stale_entries(tmp_path, monkeypatch):
    src = fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out")
    cdir = tmp_path / "cache"
    first = read(src, cache_dir=cdir)
    entries = list(cdir.glob("*.json"))
    assert len(entries) == 1 and first.source.sha256 in entries[0].name
    assert not list(cdir.glob(".tmp-*"))  # atomic write left no temporary file

    import dossier.reading.build as build

    def boom(*a, **k):
        raise AssertionError("parsed again although cached")

    monkeypatch.setattr(build, "build_record", boom)
    again = read(src, cache_dir=cdir)
    assert again == first
    # a copy elsewhere with the same content: same record, its own path
    other = tmp_path / "copy.out"
    other.write_bytes(src.read_bytes())
    assert read(other, cache_dir=cdir).source.path == str(other)
    monkeypatch.undo()

    entries[0].write_text("{ damaged")
    assert read(src, cache_dir=cdir) == first  # damaged entry re-read (and rewritten)
    head_line, body = entries[0].read_text().split("\n", 1)
    head = json.loads(head_line)
    json.loads(body)
    head["key"] = "stale"
    entries[0].write_text(json.dumps(head) + "\n" + body.replace(repr(first.energy_hartree), "1.0"))
    assert read(src, cache_dir=cdir).energy_hartree == first.energy_hartree  # stale key ignored
    monkeypatch.setattr(rcache, "READER_VERSION", "another-reader")
    assert rcache.load(cdir, first.source.sha256) is None  # another reader version: not trusted


def test_cache_location_precedence(tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    monkeypatch.delenv("DOSSIER_CACHE_DIR", raising=False)
    monkeypatch.delenv("XDG_CACHE_HOME", raising=False)
    assert rcache.default_cache_dir() == tmp_path / "home" / ".cache" / "dossier"
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert rcache.default_cache_dir() == tmp_path / "xdg" / "dossier"
    monkeypatch.setenv("DOSSIER_CACHE_DIR", str(tmp_path / "mine"))
    assert rcache.default_cache_dir() == tmp_path / "mine"
    read(fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out"))
    assert len(list((tmp_path / "mine").glob("*.json"))) == 1


def test_no_cache_writes_nothing(tmp_path, capsys):
    cdir = tmp_path / "c"
    assert main(["read", str(fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out")), "--no-cache", "--cache-dir", str(cdir)]) == 0
    assert not cdir.exists() or not list(cdir.iterdir())


# -- parallel reading --------------------------------------------------------------------

def test_read_many_keeps_order_with_errors_and_any_executor(tmp_path):
    paths = [
        fixture_path("XTB/basicXTB6.6.1/dvb_sp/dvb_sp.out"),
        tmp_path / "missing.out",
        fixture_path("QChem/basicQChem5.4/water_ir.out"),
        fixture_path("Gaussian/basicGaussian16/water_mp2.log"),
    ]
    with ThreadPoolExecutor(max_workers=2) as ex:
        res = read_many(paths, executor=ex, use_cache=False)
    assert isinstance(res[1], ReadError) and "missing.out" in str(res[1])
    assert [r.program for i, r in enumerate(res) if i != 1] == ["xtb", "Q-Chem", "Gaussian"]
    seen = []
    pooled = read_many(paths, jobs=2, use_cache=False, progress=lambda d, t: seen.append((d, t)))
    assert [getattr(r, "energy_hartree", None) for r in pooled] == [getattr(r, "energy_hartree", None) for r in res]
    assert seen[-1] == (4, 4)
