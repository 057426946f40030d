"""Hostile input to the reading layer, case by case (issue 16): pipes and devices, oversized,
compressed and UTF-16 logs, files holding several jobs, and a record cache edited by hand or
left open to others. Seeded and fast; the helpers and fixtures are in tests/hostile_inputs.py.
"""
from __future__ import annotations

import bz2
import gzip
import json
import lzma
import os
import random
import stat

import pytest

from conftest import fixture_path
from dossier.errors import DossierError, ReadError
from dossier.reading import cache as rcache
from dossier.reading import find_outputs, read, read_jobs, read_many
from hostile_inputs import (  # noqa: F401 (small is a fixture)
    G_CATION, G_CATION_E, G_OPT, G_OPT_E, O_CATION, O_FREQ, SEED, deadline, link1_log, log_text, orca_compound_log,
    small,
)


# -- item 6: only regular files, a size cap, compression, encodings ----------------------------

def test_named_pipe_is_refused_by_type_without_hanging(tmp_path):
    fifo = tmp_path / "queue.log"
    os.mkfifo(fifo)
    with deadline(10):
        with pytest.raises(ReadError, match="named pipe") as exc:
            read(fifo, use_cache=False)
        assert str(fifo) in str(exc.value)
        # the cache look-up of read_many must not open it either
        (res,) = read_many([fifo], jobs=1, cache_dir=tmp_path / "cache")
    assert isinstance(res, ReadError) and "named pipe" in res.reason


def test_character_device_is_refused_before_reading(tmp_path):
    with deadline(10):
        with pytest.raises(ReadError, match="character device"):
            read("/dev/zero", use_cache=False)


def test_size_cap_is_clear_and_configurable(tmp_path, monkeypatch):
    log = tmp_path / "big.log"
    log.write_text(log_text(G_OPT))
    with pytest.raises(ReadError, match="above the size cap") as exc:
        read(log, use_cache=False, max_bytes=100_000)
    assert "DOSSIER_MAX_FILE_MB" in str(exc.value)
    monkeypatch.setenv("DOSSIER_MAX_FILE_MB", "0.1")
    with pytest.raises(ReadError, match="above the size cap"):
        read(log, use_cache=False)
    monkeypatch.setenv("DOSSIER_MAX_FILE_MB", "nan")
    with pytest.raises(DossierError, match="positive number"):
        read(log, use_cache=False)
    monkeypatch.setenv("DOSSIER_MAX_FILE_MB", "5")
    assert read(log, use_cache=False).energy_hartree == pytest.approx(G_OPT_E, abs=1e-9)


def test_a_decompression_bomb_stops_at_the_cap(tmp_path):
    bomb = tmp_path / "bomb.log.gz"
    bomb.write_bytes(gzip.compress(b" Entering Gaussian System\n" + b"0" * 5_000_000))
    with pytest.raises(ReadError, match="decompresses .gzip. to more than"):
        read(bomb, use_cache=False, max_bytes=1_000_000)


@pytest.mark.parametrize("suffix, pack", [(".gz", gzip.compress), (".bz2", bz2.compress), (".xz", lzma.compress)])
def test_compressed_logs_read_as_the_plain_log(tmp_path, suffix, pack):
    plain = fixture_path(G_OPT)
    packed = tmp_path / f"dvb_gopt.out{suffix}"
    packed.write_bytes(pack(plain.read_bytes()))
    calc = read(packed, use_cache=False)
    assert calc.energy_hartree == pytest.approx(G_OPT_E, abs=1e-9)  # the log's last SCF Done line
    assert calc.source.path == str(packed) and calc.source.encoding == suffix.strip(".").replace("gz", "gzip").replace("bz2", "bzip2")
    assert calc.source.size_bytes == packed.stat().st_size  # provenance names the file on disk
    assert packed in find_outputs(tmp_path)


def test_cut_compressed_log_is_named_damaged(tmp_path):
    packed = tmp_path / "cut.log.xz"
    blob = lzma.compress(fixture_path(G_OPT).read_bytes())
    packed.write_bytes(blob[: len(blob) // 2])
    with pytest.raises(ReadError, match="xz-compressed file is (cut short|damaged)"):
        read(packed, use_cache=False)


@pytest.mark.parametrize("codec, label", [("utf-16", "UTF-16LE"), ("utf-16-le", "UTF-16LE"), ("utf-16-be", "UTF-16BE")])
def test_utf16_logs_are_decoded(tmp_path, codec, label):
    log = tmp_path / "cation.out"
    log.write_bytes(log_text(O_CATION).encode(codec))
    calc = read(log, use_cache=False)
    plain = read(fixture_path(O_CATION), use_cache=False)
    assert calc.source.encoding == label
    assert (calc.charge, calc.multiplicity, calc.energy_hartree) == (plain.charge, plain.multiplicity, plain.energy_hartree)


def test_random_bytes_stay_binary(tmp_path):
    rng = random.Random(SEED)
    blob = tmp_path / "noise.log"
    blob.write_bytes(bytes(rng.randrange(256) for _ in range(20_000)))
    with pytest.raises(ReadError, match="binary data"):
        read(blob, use_cache=False)


def test_gaussian_link1_gives_one_record_per_job(tmp_path):
    log = link1_log(tmp_path)
    opt, cation = read_jobs(log, use_cache=False)
    assert (opt.charge, opt.multiplicity, cation.charge, cation.multiplicity) == (0, 1, 1, 2)
    assert opt.energy_hartree == pytest.approx(G_OPT_E, abs=1e-9)
    assert cation.energy_hartree == pytest.approx(G_CATION_E, abs=1e-9)
    # no energies of the cation in the optimisation list (the silent merge of issue 16)
    assert len(opt.optimization_energies_hartree) == len(read(fixture_path(G_OPT), use_cache=False).optimization_energies_hartree)
    assert cation.source.path == f"{log}#job2" and cation.source.job == 2 and cation.source.jobs_in_file == 2
    assert read(f"{log}#job1", use_cache=False).energy_hartree == opt.energy_hartree
    with pytest.raises(ReadError, match="has no job 3"):
        read(f"{log}#job3", use_cache=False)
    whole = read(log, use_cache=False)  # named without a job: the last job, and a visible note
    assert whole.charge == 1 and "holds 2 jobs" in whole.problems[0]


def test_appended_gaussian_runs_are_two_jobs(tmp_path):
    log = tmp_path / "two_runs.log"
    log.write_text(log_text(G_OPT) + log_text(G_CATION))
    jobs = read_jobs(log, use_cache=False)
    assert [j.charge for j in jobs] == [0, 1]


def test_orca_new_job_and_appended_runs(tmp_path):
    log = orca_compound_log(tmp_path)
    freq, cation = read_jobs(log, use_cache=False)
    assert (freq.charge, cation.charge, cation.multiplicity) == (0, 1, 2)
    assert freq.status.word == "ok"  # ended before job 2 started: not cut off
    assert len(freq.vibrations.wavenumbers_cm1) == 54 and cation.vibrations is None  # dvb: 3*20-6 modes
    assert cation.energy_hartree == pytest.approx(-381.831981252254, abs=1e-9)
    # each job reads its own part of the input echo: both inputs say B3LYP (dvb_ir.inp, dvb_sp_un.out echo)
    assert freq.level.functional == cation.level.functional == "B3LYP"
    appended = tmp_path / "appended.out"
    appended.write_text(log_text(O_FREQ) + log_text(O_CATION))
    assert [j.charge for j in read_jobs(appended, use_cache=False)] == [0, 1]


def test_multi_job_records_are_cached_per_job(tmp_path, monkeypatch):
    log = link1_log(tmp_path)
    cdir = tmp_path / "cache"
    first = read_jobs(log, cache_dir=cdir)
    import dossier.reading.build as build

    monkeypatch.setattr(build, "build_record", lambda *a, **k: pytest.fail("parsed again although cached"))
    again = read_jobs(log, cache_dir=cdir)
    assert again == first
    (hit,) = read_many([f"{log}#job1"], jobs=1, cache_dir=cdir)
    assert hit.source.path == f"{log}#job1" and hit.charge == 0


# -- item 3: the cache is checked, not trusted ----------------------------------------------------

def test_edited_cache_entry_is_re_read_and_reported_once(tmp_path, capsys):
    src = fixture_path(G_OPT)
    cdir = tmp_path / "cache"
    good = read(src, cache_dir=cdir)
    (entry,) = cdir.glob("*.json")
    text = entry.read_text()
    # the hand edit of issue 16: +0.01 Eh on the final energy, checksum left as it was
    entry.write_text(text.replace(repr(G_OPT_E), repr(G_OPT_E + 0.01)))
    assert entry.read_text() != text
    assert read(src, cache_dir=cdir).energy_hartree == good.energy_hartree
    err = capsys.readouterr().err
    assert err.count("does not match its checksum") == 1
    # a damaged byte (seeded position) is caught the same way
    rng = random.Random(SEED)
    blob = bytearray(entry.read_bytes())
    i = rng.randrange(len(blob) // 2, len(blob))
    blob[i] = (blob[i] + 1) % 128
    entry.write_bytes(bytes(blob))
    assert read(src, cache_dir=cdir) == good


def test_cache_entry_of_another_source_is_refused(tmp_path):
    a, b = fixture_path(G_OPT), fixture_path(G_CATION)
    cdir = tmp_path / "cache"
    ra, rb = read(a, cache_dir=cdir), read(b, cache_dir=cdir)
    entry_a = rcache.entry_path(cdir, ra.source.sha256)
    entry_b = rcache.entry_path(cdir, rb.source.sha256)
    entry_a.write_bytes(entry_b.read_bytes())  # a planted, self-consistent entry of another file
    assert read(a, cache_dir=cdir).energy_hartree == pytest.approx(G_OPT_E, abs=1e-9)


def test_cache_folder_is_private_and_an_open_one_refused(tmp_path):
    cdir = tmp_path / "fresh" / "cache"
    read(fixture_path(G_CATION), cache_dir=cdir)
    assert stat.S_IMODE(cdir.stat().st_mode) == 0o700
    cdir.chmod(0o777)
    with pytest.raises(DossierError, match="writable by others"):
        read(fixture_path(G_CATION), cache_dir=cdir)
    with pytest.raises(DossierError, match="writable by others"):
        read_many([fixture_path(G_CATION)], cache_dir=cdir)
    assert read(fixture_path(G_CATION), cache_dir=cdir, use_cache=False).charge == 1  # --no-cache still works


def test_entry_file_is_one_header_line_and_a_body(tmp_path):
    cdir = tmp_path / "cache"
    calc = read(fixture_path(G_CATION), cache_dir=cdir)
    head = json.loads(rcache.entry_path(cdir, calc.source.sha256).read_text().split("\n", 1)[0])
    assert head["source_sha256"] == calc.source.sha256 and len(head["body_sha256"]) == 64


# -- item 7 (manifest side) and item 8: naming a job; finite numbers; one range; signals ------------

def test_manifest_names_a_job_within_a_file(tmp_path):
    from dossier.project import load_project

    log = link1_log(tmp_path)
    manifest = tmp_path / "dossier.toml"
    manifest.write_text(f'[states.neutral]\ngeometry = "{log.name}#job1"\n\n'
                        f'[states.cation]\ngeometry = "{log.name}#job2"\n')
    project = load_project(manifest, jobs=1, use_cache=False)
    neutral, cation = (project.states[n].geometry for n in ("neutral", "cation"))
    assert (neutral.charge, cation.charge) == (0, 1)
    assert cation.energy_hartree == pytest.approx(G_CATION_E, abs=1e-9)
    assert project.label(cation) == f"{log.name}#job2"
    manifest.write_text(f'[states.x]\ngeometry = "{log.name}#job3"\n')
    with pytest.raises(DossierError, match="has no job 3"):
        load_project(manifest, jobs=1, use_cache=False)


def test_init_drafts_from_each_job(tmp_path, capsys):
    from dossier.cli import main

    folder = tmp_path / "runs"
    folder.mkdir()
    link1_log(folder)
    assert main(["init", str(folder), "--jobs", "1", "--no-cache"]) == 0
    draft = (folder / "dossier.toml").read_text()
    assert 'geometry = "opt_then_cation.log#job1"' in draft  # the optimisation is a state
    assert "opt_then_cation.log#job2" in draft  # the cation single point is listed, not merged


def test_provenance_names_the_compression_and_the_job(tmp_path):
    from dossier.analysis.sources import source_entries
    from dossier.project import load_project

    log = link1_log(tmp_path)
    packed = tmp_path / "cation.out.gz"
    packed.write_bytes(gzip.compress(fixture_path(O_CATION).read_bytes()))
    manifest = tmp_path / "dossier.toml"
    manifest.write_text(f'[states.a]\ngeometry = "{log.name}#job1"\n\n[states.b]\ngeometry = "{packed.name}"\n')
    entries = {e["path"]: e for e in source_entries(load_project(manifest, jobs=1, use_cache=False))}
    assert entries[f"{log.name}#job1"]["job"] == 1 and entries[f"{log.name}#job1"]["jobs_in_file"] == 2
    assert entries[packed.name]["encoding"] == "gzip" and "job" not in entries[packed.name]
    assert entries[packed.name]["sha256"] == __import__("hashlib").sha256(packed.read_bytes()).hexdigest()


def test_read_command_lists_every_job(tmp_path, capsys):
    from dossier.cli import main

    log = link1_log(tmp_path)
    assert main(["read", str(log), "--json", "--no-cache", "--jobs", "1"]) == 0
    records = json.loads(capsys.readouterr().out)
    assert [(r["path"], r["charge"]) for r in records] == [(f"{log}#job1", 0), (f"{log}#job2", 1)]


@pytest.mark.parametrize("command", ["check {m}", "build {m}", "archive {m} --out {d}/a.tar.gz", "verify {a}",
                                     "check {real} --against {a}", "thermo {m}", "init {d}/runs --jobs 1"])
def test_no_command_hangs_on_a_named_pipe(small, tmp_path, capsys, command):
    from dossier.cli import main

    pipe_m, pipe_a = tmp_path / "dossier.toml", tmp_path / "x.tar.gz"
    os.mkfifo(pipe_m)
    os.mkfifo(pipe_a)
    if command.startswith("init"):
        (tmp_path / "runs").mkdir()
        os.mkfifo(tmp_path / "runs" / "queue.out")  # a pipe among the outputs init reads
        (tmp_path / "runs" / "dvb_ir.out").write_bytes((small["runs"] / "dvb_ir.out").read_bytes())
    argv = command.format(m=pipe_m, a=pipe_a, d=tmp_path, real=small["manifest"]).split()
    with deadline(60):
        rc = main(argv)
    err = capsys.readouterr().err
    if command.startswith("init"):  # the draft is written; the pipe is listed as not read
        assert rc == 0 and "queue.out: not read: is a named pipe" in (tmp_path / "runs" / "dossier.toml").read_text()
    else:
        assert rc != 0 and "named pipe" in err
