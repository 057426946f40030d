"""Hostile input, case by case: what a careless or malicious file, folder, manifest or command
line must not be able to do (issue 16). Seeded and fast; every case names what it guards.

The logs are real third-party outputs (../shared/fixtures/qc-logs, cclib's open test data),
copied, compressed, re-encoded or joined here in tmp_path; the fixture folder is never modified.
Expected energies are the numbers the logs print themselves (quoted beside each check).
"""
from __future__ import annotations

import bz2
import gzip
import json
import lzma
import os
import random
import signal
import stat
from contextlib import contextmanager

import pytest

from conftest import fixture_path
from dossier.errors import DossierError, ReadError
from dossier.reading import cache as rcache
from dossier.reading import find_outputs, read, read_jobs, read_many

SEED = 16

G_OPT = "Gaussian/basicGaussian16/dvb_gopt.out"
G_CATION = "Gaussian/basicGaussian16/dvb_un_sp.log"
O_FREQ = "ORCA/basicORCA5.0/dvb_ir.out"
O_CATION = "ORCA/basicORCA5.0/dvb_sp_un.out"
# Printed by the logs themselves: dvb_gopt.out last "SCF Done:  E(RB3LYP) =  -382.308266602";
# dvb_un_sp.log "SCF Done:  E(UB3LYP) =  -382.081392720"; ORCA dvb_sp_un.out
# "FINAL SINGLE POINT ENERGY      -381.831981252254" (the SCF part of the cation).
G_OPT_E = -382.308266602
G_CATION_E = -382.081392720


@contextmanager
def deadline(seconds: int):
    """Fail instead of hanging (a FIFO opened for reading blocks until a writer comes)."""
    def fire(*_):
        raise TimeoutError(f"no answer within {seconds} s")

    old = signal.signal(signal.SIGALRM, fire)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def _text(rel: str) -> str:
    return fixture_path(rel).read_text(encoding="utf-8")


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
    log.write_text(_text(G_OPT))
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
    log.write_bytes(_text(O_CATION).encode(codec))
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


# -- item 7: several jobs in one file -----------------------------------------------------------

def _link1(tmp_path):
    first, second = _text(G_OPT), _text(G_CATION)
    step = second.index(" Entering Link 1 = ")  # a Link1 job step starts at its own "Entering Link 1"
    log = tmp_path / "opt_then_cation.log"
    log.write_text(first + " Link1:  Proceeding to internal job step number  2.\n" + second[step:])
    return log


def _orca_new_job(tmp_path):
    end = "****END OF INPUT****"
    head, body1 = _text(O_FREQ).split(end, 1)
    body1 = body1.split("****ORCA TERMINATED NORMALLY****")[0]
    body2 = _text(O_CATION).split(end, 1)[1]

    def banner(n):
        return f"\n                         $$$$$$$$$$$$$$$$  JOB NUMBER  {n} $$$$$$$$$$$$$$\n"

    log = tmp_path / "compound.out"
    log.write_text(head + end + "\n" + banner(1) + body1 + banner(2) + body2)
    return log


def test_gaussian_link1_gives_one_record_per_job(tmp_path):
    log = _link1(tmp_path)
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
    log.write_text(_text(G_OPT) + _text(G_CATION))
    jobs = read_jobs(log, use_cache=False)
    assert [j.charge for j in jobs] == [0, 1]


def test_orca_new_job_and_appended_runs(tmp_path):
    log = _orca_new_job(tmp_path)
    freq, cation = read_jobs(log, use_cache=False)
    assert (freq.charge, cation.charge, cation.multiplicity) == (0, 1, 2)
    assert freq.status.word == "ok"  # ended before job 2 started: not cut off
    assert len(freq.vibrations.wavenumbers_cm1) == 54 and cation.vibrations is None  # dvb: 3*20-6 modes
    assert cation.energy_hartree == pytest.approx(-381.831981252254, abs=1e-9)
    appended = tmp_path / "appended.out"
    appended.write_text(_text(O_FREQ) + _text(O_CATION))
    assert [j.charge for j in read_jobs(appended, use_cache=False)] == [0, 1]


def test_multi_job_records_are_cached_per_job(tmp_path, monkeypatch):
    log = _link1(tmp_path)
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
