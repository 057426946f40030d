"""dossier/archive.py: the deterministic archive and its verification.

The small project is built once per module (three real NWChem 7.0 outputs from cclib's open test
data, their inputs beside them, a JSON-only build) and reused.
"""
from __future__ import annotations

import hashlib
import io
import json
import os
import platform
import shutil
import subprocess
import sys
import tarfile
from importlib import metadata
from pathlib import Path

import pytest

from conftest import fixture_path
from dossier.archive.common import ARCHIVE_ROOT, CHECKSUMS_NAME, sha256_file
from dossier.archive.verify import json_differences, verify_archive
from dossier.archive.write import _manifest_files, build_is_current, write_archive
from dossier.errors import ArchiveError

NWCHEM = "NWChem/basicNWChem7.0"
MANIFEST = """\
[project]
title = "Archive test: divinylbenzene"
temperatures_k = [298.15]

[states.dvb]
geometry = "runs/dvb_gopt_ks.out"
frequencies = "runs/dvb_ir.out"

[states.dvb_cation]
geometry = "runs/dvb_un_sp_ks.out"
"""


def _cli(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "dossier", *args], capture_output=True, text=True, cwd=cwd, timeout=600
    )


def _make_project(root: Path) -> Path:
    runs = root / "runs"
    runs.mkdir(parents=True)
    for name in ("dvb_gopt_ks.out", "dvb_gopt_ks.in", "dvb_ir.out", "dvb_ir.in", "dvb_un_sp_ks.out", "dvb_un_sp_ks.in"):
        shutil.copyfile(fixture_path(f"{NWCHEM}/{name}"), runs / name)
    (root / "notes.txt").write_text("not named by the manifest, must not be archived\n")
    manifest = root / "dossier.toml"
    manifest.write_text(MANIFEST)
    return manifest


@pytest.fixture(scope="module")
def project(tmp_path_factory):
    pytest.importorskip("dossier.project", reason="dossier.project (project model) not present yet")
    pytest.importorskip("dossier.report.build", reason="dossier.report.build (build) not present yet")
    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    from dossier.report.build import build_dossier

    root = tmp_path_factory.mktemp("archive-project")
    # a record cache of our own: entries left by older reading code must not differ from a fresh read
    saved = os.environ.get("DOSSIER_CACHE_DIR")
    os.environ["DOSSIER_CACHE_DIR"] = str(root / "cache")
    try:
        manifest = _make_project(root / "study")
        build = root / "built"
        build_dossier(manifest, build, formats=("json",))
        out = root / "study.tar.gz"
        write_archive(manifest, out, build_dir=build)
        yield {"root": root, "manifest": manifest, "build": build, "archive": out}
    finally:
        if saved is None:
            os.environ.pop("DOSSIER_CACHE_DIR", None)
        else:
            os.environ["DOSSIER_CACHE_DIR"] = saved


def _members(archive: Path) -> dict[str, bytes]:
    with tarfile.open(archive, "r:gz") as tar:
        return {m.name: tar.extractfile(m).read() for m in tar.getmembers() if m.isfile()}


def _rewrite(archive: Path, target: Path, members: dict[str, bytes]) -> Path:
    with tarfile.open(target, "w:gz") as tar:
        for name in sorted(members):
            info = tarfile.TarInfo(name)
            info.size = len(members[name])
            tar.addfile(info, io.BytesIO(members[name]))
    return target


def _sums(members: dict[str, bytes]) -> dict[str, str]:
    text = members[f"{ARCHIVE_ROOT}/{CHECKSUMS_NAME}"].decode()
    return {line[66:]: line[:64] for line in text.splitlines()}


# -- the hash itself --------------------------------------------------------------

def test_sha256_file_matches_the_published_test_vector(tmp_path):
    # FIPS 180-2, Appendix B.1: SHA-256("abc")
    p = tmp_path / "abc"
    p.write_bytes(b"abc")
    assert sha256_file(p) == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"


# -- what is inside -----------------------------------------------------------------

def test_archive_holds_outputs_inputs_manifest_dossier_and_records(project):
    members = _members(project["archive"])
    root = ARCHIVE_ROOT
    for name in ("project/dossier.toml", "project/runs/dvb_gopt_ks.out", "project/runs/dvb_ir.out",
                 "project/runs/dvb_un_sp_ks.out", "project/runs/dvb_gopt_ks.in", "project/runs/dvb_ir.in",
                 "project/runs/dvb_un_sp_ks.in", "dossier/dossier.json", "SHA256SUMS", "environment.json",
                 "README.txt"):
        assert f"{root}/{name}" in members, name
    assert f"{root}/project/notes.txt" not in members
    # every archived source is byte for byte the project's file
    study = project["manifest"].parent
    for rel in ("runs/dvb_gopt_ks.out", "runs/dvb_ir.in", "dossier.toml"):
        assert members[f"{root}/project/{rel}"] == (study / rel).read_bytes()


def test_checksum_list_covers_every_other_member_with_its_sha256(project):
    members = _members(project["archive"])
    sums = _sums(members)
    others = {n[len(ARCHIVE_ROOT) + 1:] for n in members} - {CHECKSUMS_NAME}
    assert set(sums) == others
    for name, digest in sums.items():
        # hashlib (FIPS 180-4) computed here, independently of the archive's own hashing
        assert hashlib.sha256(members[f"{ARCHIVE_ROOT}/{name}"]).hexdigest() == digest


def test_checksum_list_is_readable_by_sha256sum(project, tmp_path):
    sha256sum = shutil.which("sha256sum")
    if not sha256sum:
        pytest.skip("sha256sum (GNU coreutils) not installed")
    with tarfile.open(project["archive"], "r:gz") as tar:
        tar.extractall(tmp_path, filter="data")
    done = subprocess.run([sha256sum, "-c", "--strict", CHECKSUMS_NAME], cwd=tmp_path / ARCHIVE_ROOT,
                          capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr


def test_environment_names_library_versions_and_the_programs_of_the_records(project):
    members = _members(project["archive"])
    env = json.loads(members[f"{ARCHIVE_ROOT}/environment.json"])
    assert env["archived_by"]["python"] == platform.python_version()
    for name in ("cclib", "numpy", "scipy"):
        assert env["archived_by"][name] == metadata.version(name)
    data = json.loads(members[f"{ARCHIVE_ROOT}/dossier/dossier.json"])
    from_sources = {(s["program"], s["program_version"]) for s in data["sources"]}
    assert {(p["program"], p["version"]) for p in env["programs"]} == {(str(a), str(b)) for a, b in from_sources}
    # the fixture files were written by NWChem 7.0 (fixture README: basicNWChem7.0)
    assert any(p["program"] == "NWChem" and p["version"].startswith("7.0") for p in env["programs"])
    assert env["layout"]["manifest"] == "project/dossier.toml"


def test_readme_says_how_to_verify(project):
    text = _members(project["archive"])[f"{ARCHIVE_ROOT}/README.txt"].decode()
    assert "dossier verify" in text and "sha256sum -c SHA256SUMS" in text


# -- deterministic ------------------------------------------------------------------

def test_two_archives_of_the_same_project_are_identical(project, tmp_path):
    again = tmp_path / "again.tar.gz"
    write_archive(project["manifest"], again, build_dir=project["build"])
    assert again.read_bytes() == project["archive"].read_bytes()


@pytest.mark.slow
def test_two_archives_with_fresh_builds_are_identical(project, tmp_path):
    one, two = tmp_path / "one.tar.gz", tmp_path / "two.tar.gz"
    write_archive(project["manifest"], one, formats=("json",))
    write_archive(project["manifest"], two, formats=("json",))
    assert one.read_bytes() == two.read_bytes()


def test_gzip_and_tar_headers_carry_no_time_name_or_owner(project, monkeypatch, tmp_path):
    raw = project["archive"].read_bytes()
    # RFC 1952 section 2.3: ID1 ID2 CM FLG MTIME(4) XFL OS; FNAME is FLG bit 3
    assert raw[:3] == b"\x1f\x8b\x08"
    assert raw[3] & 0x08 == 0
    assert raw[4:8] == b"\x00\x00\x00\x00"
    with tarfile.open(project["archive"], "r:gz") as tar:
        infos = tar.getmembers()
    assert [m.name for m in infos] == sorted(m.name for m in infos)
    assert all(m.mtime == 0 and m.uid == 0 and m.gid == 0 and m.uname == "" and m.gname == "" for m in infos)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764547200")
    dated = tmp_path / "dated.tar.gz"
    write_archive(project["manifest"], dated, build_dir=project["build"])
    with tarfile.open(dated, "r:gz") as tar:
        assert {m.mtime for m in tar.getmembers()} == {1764547200}


# -- verification -----------------------------------------------------------------

def test_untouched_archive_verifies(project):
    report = verify_archive(project["archive"])
    assert report.ok, report.lines()
    assert report.checked == len(_members(project["archive"])) - 1


def test_one_altered_byte_fails_and_is_named(project, tmp_path):
    members = _members(project["archive"])
    victim = f"{ARCHIVE_ROOT}/project/runs/dvb_ir.out"
    body = bytearray(members[victim])
    body[len(body) // 2] ^= 0x01
    members[victim] = bytes(body)
    bad = _rewrite(project["archive"], tmp_path / "bad.tar.gz", members)
    report = verify_archive(bad)
    assert not report.ok
    assert report.altered == [victim]
    done = _cli("verify", str(bad))
    assert done.returncode == 1
    assert f"altered: {victim}" in done.stdout
    assert "Traceback" not in done.stderr


def test_missing_and_unexpected_members_are_named(project, tmp_path):
    members = _members(project["archive"])
    gone = f"{ARCHIVE_ROOT}/project/runs/dvb_gopt_ks.in"
    del members[gone]
    extra = f"{ARCHIVE_ROOT}/project/runs/smuggled.out"
    members[extra] = b"not in the checksum list\n"
    report = verify_archive(_rewrite(project["archive"], tmp_path / "bad.tar.gz", members))
    assert report.missing == [gone]
    assert report.unexpected == [extra]
    assert not report.ok


def test_source_changed_with_its_checksum_is_caught_by_dossier_json(project, tmp_path):
    # Someone alters an output AND rewrites SHA256SUMS to match: the dossier.json's record of the
    # SHA-256 it was built from still disagrees.
    members = _members(project["archive"])
    victim = "project/runs/dvb_ir.out"
    members[f"{ARCHIVE_ROOT}/{victim}"] += b"\n"
    sums = _sums(members)
    sums[victim] = hashlib.sha256(members[f"{ARCHIVE_ROOT}/{victim}"]).hexdigest()
    members[f"{ARCHIVE_ROOT}/{CHECKSUMS_NAME}"] = "".join(
        f"{sums[n]}  {n}\n" for n in sorted(sums)).encode()
    report = verify_archive(_rewrite(project["archive"], tmp_path / "bad.tar.gz", members))
    assert not report.altered
    assert any(victim in p and "dossier.json" in p for p in report.problems), report.problems


def test_damaged_archive_is_a_one_line_error(project, tmp_path):
    cut = tmp_path / "cut.tar.gz"
    raw = project["archive"].read_bytes()
    cut.write_bytes(raw[: len(raw) // 2])
    with pytest.raises(ArchiveError) as err:
        verify_archive(cut)
    assert str(cut) in str(err.value)
    not_gz = tmp_path / "plain.tar.gz"
    not_gz.write_text("hello\n")
    done = _cli("verify", str(not_gz))
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("dossier: ") and str(not_gz) in lines[0]


# -- hostile archives ----------------------------------------------------------------

def _hostile(path: Path, add) -> Path:
    with tarfile.open(path, "w:gz") as tar:
        ok = tarfile.TarInfo(f"{ARCHIVE_ROOT}/README.txt")
        ok.size = 3
        tar.addfile(ok, io.BytesIO(b"hi\n"))
        add(tar)
    return path


def _file(name: str, data: bytes = b"escaped\n"):
    def add(tar):
        info = tarfile.TarInfo(name)
        info.size = len(data)
        tar.addfile(info, io.BytesIO(data))
    return add


def _link(name: str, target: str, kind: bytes):
    def add(tar):
        info = tarfile.TarInfo(name)
        info.type = kind
        info.linkname = target
        tar.addfile(info)
    return add


def _device(name: str):
    def add(tar):
        info = tarfile.TarInfo(name)
        info.type = tarfile.CHRTYPE
        info.devmajor, info.devminor = 1, 3
        tar.addfile(info)
    return add


@pytest.mark.parametrize("case", ["dotdot", "dotdot-inside", "absolute", "symlink", "hardlink", "device"])
def test_hostile_archive_is_refused_and_nothing_is_written_outside(case, tmp_path):
    work = tmp_path / "work"
    work.mkdir()
    outside = tmp_path / "escaped"
    adders = {
        "dotdot": _file("../escaped"),
        "dotdot-inside": _file(f"{ARCHIVE_ROOT}/../../escaped"),
        "absolute": _file(str(outside)),
        "symlink": _link(f"{ARCHIVE_ROOT}/link", str(outside), tarfile.SYMTYPE),
        "hardlink": _link(f"{ARCHIVE_ROOT}/hard", "/etc/passwd", tarfile.LNKTYPE),
        "device": _device(f"{ARCHIVE_ROOT}/null"),
    }
    bad = _hostile(tmp_path / f"{case}.tar.gz", adders[case])
    with tarfile.open(bad) as tar:
        hostile_name = tar.getmembers()[-1].name
    report = verify_archive(bad, rebuild=True)
    assert not report.ok
    assert len(report.refused) == 1 and report.refused[0].startswith(f"{hostile_name}: ")
    assert not report.rebuilt
    done = _cli("verify", str(bad), "--rebuild", cwd=work)
    assert done.returncode == 1
    assert f"refused: {hostile_name}" in done.stdout
    assert not outside.exists() and not os.path.lexists(outside)
    assert list(work.iterdir()) == []


def test_duplicate_member_names_are_refused(tmp_path):
    name = f"{ARCHIVE_ROOT}/README.txt"
    bad = _hostile(tmp_path / "dup.tar.gz", _file(name, b"second copy\n"))
    report = verify_archive(bad)
    assert report.refused == [f"{name}: second member of the same name"]


# -- rebuild ---------------------------------------------------------------------------

@pytest.mark.slow
def test_rebuild_of_an_untouched_archive_agrees(project):
    report = verify_archive(project["archive"], rebuild=True)
    assert report.rebuilt
    assert report.ok, report.lines()


@pytest.mark.slow
def test_rebuild_reports_a_changed_number_by_its_key(project, tmp_path):
    members = _members(project["archive"])
    name = f"{ARCHIVE_ROOT}/dossier/dossier.json"
    data = json.loads(members[name])
    data["project"]["temperatures_k"] = [310.0]
    members[name] = json.dumps(data).encode()
    sums = _sums(members)
    sums["dossier/dossier.json"] = hashlib.sha256(members[name]).hexdigest()
    members[f"{ARCHIVE_ROOT}/{CHECKSUMS_NAME}"] = "".join(f"{sums[n]}  {n}\n" for n in sorted(sums)).encode()
    report = verify_archive(_rewrite(project["archive"], tmp_path / "edited.tar.gz", members), rebuild=True)
    assert report.rebuilt
    assert any(d.startswith("project.temperatures_k[0]: 310.0 -> 298.15") for d in report.rebuild_differences), \
        report.rebuild_differences


def test_json_differences_names_keys_and_list_entries():
    old = {"a": 1.0, "states": [{"name": "min_a", "charge": -1}], "x": "same"}
    new = {"a": 1.0 + 1e-13, "states": [{"name": "min_a", "charge": 0}], "x": "same", "y": 2}
    assert json_differences(old, new) == ["states[min_a].charge: -1 -> 0", "y: only in the rebuilt dossier.json"]


# -- writing -----------------------------------------------------------------------------

def test_stale_build_is_not_archived(project, tmp_path):
    study = tmp_path / "study"
    shutil.copytree(project["manifest"].parent, study)
    manifest = study / "dossier.toml"
    # the copy has the same files at the same relative places: the build is current for it
    assert build_is_current(project["build"], manifest, sorted(_manifest_files(manifest))) is None
    with open(study / "runs" / "dvb_ir.out", "ab") as handle:
        handle.write(b"\n")
    reason = build_is_current(project["build"], manifest, sorted(_manifest_files(manifest)))
    assert reason is not None and "dvb_ir.out" in reason
    result = write_archive(manifest, tmp_path / "fresh.tar.gz", build_dir=project["build"], formats=("json",))
    assert result.built_fresh and "dvb_ir.out" in result.notes[0]
    assert verify_archive(result.path).ok


def test_failed_write_leaves_the_previous_archive_and_no_temporary_file(project, tmp_path):
    target = tmp_path / "keep.tar.gz"
    shutil.copyfile(project["archive"], target)
    before = target.read_bytes()

    def broken_builder(manifest_path, out_dir, **kwargs):
        Path(out_dir).mkdir(parents=True)
        (Path(out_dir) / "dossier.json").write_text("{")
        raise KeyboardInterrupt  # as if the user pressed Ctrl-C during the build

    with pytest.raises(KeyboardInterrupt):
        write_archive(project["manifest"], target, builder=broken_builder)
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.tar.gz"]


def test_archive_cli_writes_and_verify_cli_agrees(project, tmp_path):
    out = tmp_path / "cli.tar.gz"
    done = _cli("archive", str(project["manifest"]), "--out", str(out), "--build", str(project["build"]), "--quiet")
    assert done.returncode == 0, done.stderr
    assert out.read_bytes() == project["archive"].read_bytes()
    done = _cli("verify", str(out))
    assert done.returncode == 0, done.stdout
    assert done.stdout.strip().splitlines()[-1].startswith("ok: all ")


def test_archive_of_a_manifest_naming_a_missing_file_is_a_one_line_error(tmp_path):
    pytest.importorskip("dossier.project", reason="dossier.project (project model) not present yet")
    manifest = tmp_path / "dossier.toml"
    manifest.write_text('[project]\ntitle = "t"\n\n[states.a]\ngeometry = "gone.out"\n')
    out = tmp_path / "a.tar.gz"
    done = _cli("archive", str(manifest), "--out", str(out), "--quiet")
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("dossier: ") and "gone.out" in lines[0]
    assert not out.exists()


# -- damaged archives, property-based -------------------------------------------------------

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=150, deadline=None, database=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_fuzz_damaged_archive_is_an_archive_error_or_a_failed_report(project, tmp_path, data):
    good = project["archive"].read_bytes()
    raw = bytearray(good)
    how = data.draw(st.sampled_from(["flip", "cut", "splice"]))
    if how == "flip":
        for _ in range(data.draw(st.integers(1, 4))):
            raw[data.draw(st.integers(0, len(raw) - 1))] ^= data.draw(st.integers(1, 255))
    elif how == "cut":
        raw = raw[: data.draw(st.integers(0, len(raw) - 1))]
    else:
        at = data.draw(st.integers(0, len(raw)))
        raw[at:at] = data.draw(st.binary(min_size=1, max_size=64))
    bad = tmp_path / "damaged.tar.gz"
    bad.write_bytes(bytes(raw))
    try:
        report = verify_archive(bad)
    except ArchiveError as exc:
        assert "\n" not in str(exc) and str(bad) in str(exc)
        return
    if report.ok:
        # only a change gzip and tar ignore (header time, OS byte, trailing padding) may pass
        with tarfile.open(project["archive"], "r:gz") as a, tarfile.open(bad, "r:gz") as b:
            assert [(m.name, a.extractfile(m).read()) for m in a.getmembers()] == \
                   [(m.name, b.extractfile(m).read()) for m in b.getmembers()]


@pytest.mark.parametrize("case", ["missing", "folder", "plain-tar"])
def test_verify_of_something_that_is_no_archive_is_one_line(case, tmp_path):
    target = {"missing": tmp_path / "gone.tar.gz", "folder": tmp_path, "plain-tar": tmp_path / "plain.tar.gz"}[case]
    if case == "plain-tar":  # a tar without the gzip layer
        with tarfile.open(target, "w") as tar:
            info = tarfile.TarInfo(f"{ARCHIVE_ROOT}/README.txt")
            tar.addfile(info, io.BytesIO(b""))
    done = _cli("verify", str(target))
    assert done.returncode == 2 and "Traceback" not in done.stderr
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("dossier: ") and str(target) in lines[0], done.stderr


def test_archive_into_a_missing_folder_is_one_line_and_writes_nothing(project, tmp_path):
    out = tmp_path / "no" / "such" / "folder" / "a.tar.gz"
    done = _cli("archive", str(project["manifest"]), "--out", str(out), "--build", str(project["build"]), "--quiet")
    assert done.returncode == 2 and "Traceback" not in done.stderr
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("dossier: ") and str(out) in lines[0], done.stderr
    assert list(tmp_path.iterdir()) == []


@pytest.mark.slow
def test_files_outside_the_manifest_folder_and_absolute_paths_archive_and_rebuild(project, tmp_path):
    runs = tmp_path / "runs"
    runs.mkdir()
    for name in ("dvb_gopt_ks.out", "dvb_ir.out", "dvb_ir.in"):
        shutil.copyfile(fixture_path(f"{NWCHEM}/{name}"), runs / name)
    (tmp_path / "m").mkdir()
    manifest = tmp_path / "m" / "dossier.toml"
    manifest.write_text(f'[states.dvb]\ngeometry = "../runs/dvb_gopt_ks.out"\nfrequencies = "{runs / "dvb_ir.out"}"\n')
    result = write_archive(manifest, tmp_path / "out.tar.gz", formats=("json",))
    names = set(result.members)
    root = ARCHIVE_ROOT
    assert {f"{root}/project/m/dossier.toml", f"{root}/project/runs/dvb_gopt_ks.out",
            f"{root}/project/runs/dvb_ir.out", f"{root}/project/runs/dvb_ir.in"} <= names
    assert any("absolute path" in n for n in result.notes)  # said plainly: a rebuild reads the original
    report = verify_archive(result.path, rebuild=True)
    assert report.ok, report.lines()


@pytest.mark.slow
def test_demo_study_archives_with_its_inputs_and_rebuilds(tmp_path, monkeypatch):
    from conftest import demo_path
    from dossier.errors import ManifestError

    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    from dossier.project import load_manifest

    manifest = demo_path("dossier.toml")
    try:
        files = load_manifest(manifest).all_files()
    except ManifestError as exc:
        pytest.skip(f"the demo study is not complete yet: {exc}")
    monkeypatch.setenv("DOSSIER_CACHE_DIR", str(tmp_path / "cache"))
    before = {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in files}
    result = write_archive(manifest, tmp_path / "demo.tar.gz", formats=("json",))
    names = set(result.members)
    # every NWChem input beside its output is archived (the demo's runs keep NAME.nw beside NAME.out)
    for p in files:
        if p.with_suffix(".nw").is_file():
            rel = p.with_suffix(".nw").relative_to(manifest.parent)
            assert f"{ARCHIVE_ROOT}/project/{rel.as_posix()}" in names
    report = verify_archive(result.path, rebuild=True)
    assert report.rebuilt and report.ok, report.lines()
    assert {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in files} == before  # inputs unchanged
