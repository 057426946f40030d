"""Writing the archive: collect the project's files, build (or reuse) the dossier, pack
everything into one deterministic ``.tar.gz`` with its checksum list and environment record.

Only regular files whose real path lies inside the project folder (the folder holding the
manifest and every file it names, as the manifest writes them) are packed: an input that is
a symbolic link to a file elsewhere, a pipe or a device is left out and listed in the
archive's README, in ``environment.json`` and on stderr.

Layout of ``FILE.tar.gz`` (every member lives under one folder, ``dossier-archive/``)::

    dossier-archive/README.txt          what is inside and how to check it
    dossier-archive/SHA256SUMS          "<sha256>  <path>" for every other member, sorted
    dossier-archive/environment.json    versions of dossier, cclib, Python, numpy, scipy, ...,
                                        the programs that wrote the outputs, and the layout
    dossier-archive/project/...         the manifest and every output it names (plus the inputs
                                        found beside them), at the same relative places
    dossier-archive/dossier/...         the built dossier (HTML, PDF, dossier.json, exports)

The same project gives the same archive byte for byte: members are sorted, have one fixed
modification time (``SOURCE_DATE_EPOCH``, else 0), uid/gid 0, no owner names, and the gzip
header carries neither a file name nor a time. The archive is written to a temporary name
beside the target and renamed into place.

Nothing here re-reads a log: the programs that wrote the outputs come from the build's
``dossier.json`` ``sources``.
"""
from __future__ import annotations

import gzip
import hashlib
import io
import json
import os
import platform
import stat
import tarfile
import tempfile
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any, Callable, Iterable

from dossier.archive.common import (
    ARCHIVE_ROOT, CHECKSUMS_NAME, DOSSIER_DIR, ENVIRONMENT_NAME, ENVIRONMENT_PACKAGES, INPUT_SUFFIXES, PROJECT_DIR,
    README_NAME, Progress, _check_member_name, _fixed_mtime, _package_version, _say, _source_entries, sha256_file,
)
from dossier.archive.sign import NAMESPACE, SIG_SUFFIX, sign_file
from dossier.errors import ArchiveError, raise_if_terminated
from dossier.reading.files import refuse_special
from dossier.reading.jobs import split_name
from dossier.report.targets import check_file_target

# -- what goes in ----------------------------------------------------------------

@dataclass
class ArchiveResult:
    path: Path
    members: list[str]  # paths inside the archive, sorted
    build_dir: Path | None  # the build that was archived (None when built in a temporary folder)
    built_fresh: bool
    notes: list[str] = field(default_factory=list)
    left_out: list[dict[str, str]] = field(default_factory=list)  # {"path", "reason"}: not archived
    signature: Path | None = None  # ARCHIVE.sig when signed


def _manifest_files(manifest_path: Path) -> list[Path]:
    """The manifest's files as it writes them, made absolute without resolving links.

    Keeping the written form (not the resolved one) keeps each file at the same place
    relative to the manifest inside the archive, so the archived manifest finds them.
    """
    from dossier.project import load_manifest

    manifest = load_manifest(manifest_path)
    base = Path(os.path.abspath(manifest_path)).parent
    labels = getattr(manifest, "file_labels", {}) or {}
    out = []
    for p in manifest.all_files():
        label = labels.get(p)
        if isinstance(label, str) and label.strip():
            written = Path(label).expanduser()
            out.append(Path(os.path.normpath(written if written.is_absolute() else base / written)))
        else:
            out.append(Path(os.path.abspath(p)))
    return out


def _absolute_in_manifest(manifest_path: Path, files: list[Path]) -> list[Path]:
    """Files the manifest names by an absolute path (a rebuild from the archive would not use the copy)."""
    from dossier.project import load_manifest

    labels = getattr(load_manifest(manifest_path), "file_labels", {}) or {}
    return sorted(Path(v) for v in labels.values() if isinstance(v, str) and Path(v).expanduser().is_absolute())


def _inputs_beside(outputs: Iterable[Path]) -> list[Path]:
    outputs = list(outputs)
    taken = set(outputs)
    found: list[Path] = []
    for out in outputs:
        for suffix in INPUT_SUFFIXES:
            candidate = out.with_suffix(suffix)
            if candidate in taken or candidate.is_symlink() and not candidate.exists():
                continue
            if candidate.is_file():
                taken.add(candidate)
                found.append(candidate)
    return found


def build_is_current(build_dir: Path, manifest_path: Path, files: list[Path]) -> str | None:
    """None when ``build_dir`` holds a dossier built from exactly these files; else why not."""
    data_path = build_dir / "dossier.json"
    if not data_path.is_file():
        return f"{build_dir} holds no dossier.json"
    try:
        data = json.loads(data_path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        return f"{data_path} is not readable JSON ({exc.__class__.__name__})"
    if not isinstance(data, dict):
        return f"{data_path} is not a JSON object"
    base = Path(os.path.abspath(manifest_path)).parent
    recorded: dict[Path, str] = {}
    for entry in _source_entries(data):
        raw = entry.get("path")
        if isinstance(raw, str):
            p = Path(raw)
            recorded[Path(os.path.abspath(p if p.is_absolute() else base / p))] = str(entry.get("sha256") or "")
    wanted = set(files)
    if set(recorded) != wanted:
        extra = sorted(str(p) for p in wanted - set(recorded))
        gone = sorted(str(p) for p in set(recorded) - wanted)
        what = f"the manifest now names {extra[0]}" if extra else f"the manifest no longer names {gone[0]}"
        return f"the build in {build_dir} is not current: {what}"
    for path in sorted(wanted):
        disk = _on_disk(path)
        if not disk.is_file():
            raise ArchiveError("file named by the manifest is missing", where=str(disk))
        if sha256_file(disk) != recorded[path]:
            return f"the build in {build_dir} is not current: {path} changed since it was built"
    try:
        if os.stat(manifest_path).st_mtime > os.stat(data_path).st_mtime:
            return f"the build in {build_dir} is not current: {manifest_path} was edited after it"
    except OSError:
        pass
    return None


def _default_builder(manifest_path: Path, out_dir: Path, **kwargs: Any) -> Any:
    from dossier.report.build import build_dossier

    return build_dossier(manifest_path, out_dir, **kwargs)


def _call_builder(builder, manifest_path: Path, out_dir: Path, **kwargs: Any) -> Any:
    given = {k: v for k, v in kwargs.items() if v is not None}
    return builder(manifest_path, out_dir, **given)


def _environment(data: dict[str, Any], layout: dict[str, Any], mtime: int) -> dict[str, Any]:
    programs: dict[tuple[str, str], list[str]] = {}
    for entry in _source_entries(data):
        key = (str(entry.get("program") or "unknown"), str(entry.get("program_version") or "unknown"))
        programs.setdefault(key, []).append(str(entry.get("path")))
    generator = data.get("generator") if isinstance(data.get("generator"), dict) else {}
    return {
        "archive_format": 1,
        "archived_by": {
            "dossier": _package_version("dossier"),
            "python": platform.python_version(),
            **{name: _package_version(name) for name in ENVIRONMENT_PACKAGES if name != "dossier"},
            "platform": f"{platform.system()} {platform.machine()}",
        },
        "dossier_built_by": generator,
        "programs": [
            {"program": prog, "version": ver, "files": sorted(paths)}
            for (prog, ver), paths in sorted(programs.items())
        ],
        "member_mtime": mtime,
        "layout": layout,
    }


def _readme(layout: dict[str, Any], env: dict[str, Any], n_sources: int, n_inputs: int, n_dossier: int) -> str:
    programs = ", ".join(f"{p['program']} {p['version']}" for p in env["programs"]) or "none recorded"
    manifest = layout["manifest"]
    left_out = ""
    if layout.get("left_out"):
        left_out = ("\nLeft out of this archive (only regular files inside the project folder are packed):\n"
                    + "".join(f"  {item['path']}: {item['reason']}\n" for item in layout["left_out"]))
    return f"""Archive of a finished quantum-chemistry project, written by dossier {env['archived_by']['dossier']}.

What is inside (all paths below are inside the folder {ARCHIVE_ROOT}/):
  {manifest}
      the project manifest: which output file is which state, pathway and site
  {PROJECT_DIR}/...   the {n_sources} output files the manifest names, and {n_inputs} input file(s)
      found beside them, at the same places relative to the manifest as in the project
  {DOSSIER_DIR}/...   the built dossier ({n_dossier} files: report, dossier.json, exports).
      {DOSSIER_DIR}/dossier.json records the SHA-256 of every output it was built from.
  {ENVIRONMENT_NAME}
      versions of dossier, cclib, Python, numpy, scipy and the other libraries used, and the
      programs that wrote the outputs ({programs})
  {CHECKSUMS_NAME}
      the SHA-256 of every other file, one per line: "<sha256>  <path>"

How to check that nothing changed:
  dossier verify ARCHIVE.tar.gz             checks every checksum, names each missing,
                                            altered or unexpected file
  dossier verify ARCHIVE.tar.gz --rebuild   also rebuilds the dossier from the archived files
                                            and compares its dossier.json with the archived one
  Without dossier: extract the archive, change into {ARCHIVE_ROOT}/ and run
      sha256sum -c {CHECKSUMS_NAME}

What the checksums prove, and what they do not:
  {CHECKSUMS_NAME} travels inside the archive, so it proves only that the files agree with the
  list this archive carries: it catches damage in storage or transfer and careless edits. It
  does not prove who made the archive, nor that nobody changed it: whoever changes a file can
  write a new list. Only a signature made with a key its owner alone holds does that: when the
  archive was signed (dossier archive --sign KEY), ARCHIVE.tar.gz.sig lies beside it; check it
  with  dossier verify ARCHIVE.tar.gz --signer KEY.pub  (or OpenSSH's ssh-keygen -Y verify,
  namespace {NAMESPACE}).
{left_out}
How to rebuild the dossier by hand:
  dossier build {manifest} --out rebuilt

All times in this archive are set to one fixed value ({env['member_mtime']} s after 1970-01-01 UTC),
so the same project always gives the same archive. The rates in the dossier are model estimates.
"""


def _on_disk(p: Path) -> Path:
    """The file of a manifest entry (``run.log#job2`` names job 2 of ``run.log``)."""
    return Path(split_name(str(p))[0])


def project_folder(manifest_path: Path, files: list[Path]) -> Path:
    """The folder holding the manifest and every file it names (as written, links not resolved)."""
    manifest_abs = Path(os.path.abspath(manifest_path))
    return Path(os.path.commonpath([str(manifest_abs.parent), *(str(_on_disk(p).parent) for p in files)]))


def vet(paths: list[Path], root: Path) -> tuple[list[Path], list[dict[str, str]]]:
    """(regular files whose real path lies inside `root`, the rest as {"path", "reason"})."""
    real_root = os.path.realpath(root)
    kept, left_out = [], []
    for p in paths:
        try:
            mode = os.stat(p).st_mode
        except OSError as exc:
            left_out.append({"path": str(p), "reason": f"cannot be read ({exc.strerror or exc})"})
            continue
        real = os.path.realpath(p)
        if not stat.S_ISREG(mode):
            left_out.append({"path": str(p), "reason": "not a regular file"})
        elif not real.startswith(real_root.rstrip(os.sep) + os.sep):
            left_out.append({"path": str(p), "reason": f"its real path {real} lies outside the project folder {root}"})
        else:
            kept.append(p)
    return kept, left_out


def _built_files(dossier_dir: Path) -> dict[str, Path]:
    built: dict[str, Path] = {}
    for dirpath, dirnames, filenames in os.walk(dossier_dir):
        dirnames[:] = sorted(d for d in dirnames if not d.startswith("."))
        for fname in sorted(filenames):
            full = Path(dirpath, fname)
            if fname.startswith(".") or full.is_symlink() or not full.is_file():
                continue  # temporary names of an atomic write, links
            built[str(PurePosixPath(DOSSIER_DIR, *full.relative_to(dossier_dir).parts))] = full
    if f"{DOSSIER_DIR}/dossier.json" not in built:
        raise ArchiveError(f"the build in {dossier_dir} holds no dossier.json; nothing to archive")
    return built


def _collect(
    manifest_path: Path, files: list[Path], inputs: list[Path], dossier_dir: Path
) -> tuple[dict[str, Path], dict[str, Any], dict[Path, str]]:
    """Archive member name (inside ARCHIVE_ROOT) -> file on disk, the layout record, and the
    member name of each project file. Files that fail `vet` are left out and listed in the layout."""
    manifest_abs = Path(os.path.abspath(manifest_path))
    root = project_folder(manifest_path, files)
    disk_files = sorted({_on_disk(p) for p in files})
    kept, left_out = vet([manifest_abs, *disk_files, *inputs], root)

    def project_name(p: Path) -> str:
        return str(PurePosixPath(PROJECT_DIR, *p.relative_to(root).parts))

    members = {project_name(p): p for p in kept}
    built = _built_files(dossier_dir)
    members.update(built)
    for name in members:
        _check_member_name(name)
    kept_set = set(kept)
    for item in left_out:
        item["path"] = project_name(Path(item["path"]))
    layout = {
        "manifest": project_name(manifest_abs),
        "sources": sorted(project_name(p) for p in disk_files if p in kept_set),
        "inputs": sorted(project_name(p) for p in inputs if p in kept_set),
        "dossier": sorted(built),
        "left_out": left_out,
    }
    names = {p: project_name(p) for p in kept}
    names.update({p: project_name(_on_disk(p)) for p in files if _on_disk(p) in kept_set})
    return members, layout, names


def _source_members(data: dict[str, Any], manifest_path: Path, names: dict[Path, str]) -> dict[str, str]:
    """dossier.json ``sources`` path (as the manifest writes it) -> archive member name."""
    base = Path(os.path.abspath(manifest_path)).parent
    out = {}
    for entry in _source_entries(data):
        raw = entry.get("path")
        if isinstance(raw, str):
            p = Path(raw).expanduser()
            name = names.get(Path(os.path.normpath(p if p.is_absolute() else base / p)))
            if name is not None:
                out[raw] = name
    return out


def _tarinfo(name: str, size: int, mtime: int) -> tarfile.TarInfo:
    info = tarfile.TarInfo(f"{ARCHIVE_ROOT}/{name}")
    info.size = size
    info.mtime = mtime
    info.mode = 0o644
    info.type = tarfile.REGTYPE
    info.uid = info.gid = 0
    info.uname = info.gname = ""
    return info


def _write_tar_gz(
    target: Path, members: dict[str, bytes | Path], mtime: int, before_rename: Callable[[Path], None] | None = None
) -> None:
    """Write members (sorted by name) as a deterministic .tar.gz, atomically.

    ``before_rename`` runs once the temporary file is complete; if it raises, the temporary
    file is removed and whatever was at ``target`` before stays as it was.
    """
    target = check_file_target(target, hint="give a file name such as project.tar.gz", parent_must_exist=True)
    fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    tmp = Path(tmp_name)
    try:
        with os.fdopen(fd, "wb") as raw:
            with gzip.GzipFile(filename="", mode="wb", fileobj=raw, mtime=0, compresslevel=9) as gz:
                with tarfile.open(fileobj=gz, mode="w", format=tarfile.PAX_FORMAT) as tar:
                    for name in sorted(members):
                        content = members[name]
                        if isinstance(content, bytes):
                            tar.addfile(_tarinfo(name, len(content), mtime), io.BytesIO(content))
                        else:
                            size = content.stat().st_size
                            with open(content, "rb") as handle:
                                tar.addfile(_tarinfo(name, size, mtime), handle)
            raw.flush()
            os.fsync(raw.fileno())
        os.chmod(tmp, 0o644 & ~_umask())
        if before_rename is not None:
            before_rename(tmp)
        raise_if_terminated()
        os.replace(tmp, target)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _project_files(manifest_path: Path, progress: Progress) -> tuple[list[Path], list[Path], list[str]]:
    """The manifest's entries (``FILE#jobN`` kept), the inputs beside them, and notes."""
    files = sorted(set(_manifest_files(manifest_path)))
    for p in files:
        if not _on_disk(p).is_file():
            raise ArchiveError("file named by the manifest is missing", where=str(_on_disk(p)))
    inputs = sorted(_inputs_beside(sorted({_on_disk(p) for p in files})))
    notes: list[str] = [
        f"the manifest names {p} by an absolute path: the archive holds a copy, but a rebuild from the "
        "archive reads the original; prefer paths relative to the manifest"
        for p in _absolute_in_manifest(manifest_path, files)
    ]
    for note in notes:
        _say(progress, note)
    return files, inputs, notes


def _dossier_to_archive(manifest_path, files, build_dir, scratch, builder, formats, jobs, notes, progress) -> Path:
    """An existing current build, else a fresh one in `scratch` (outputs always parsed afresh)."""
    if build_dir is not None:
        stale = build_is_current(Path(build_dir), manifest_path, files)
        if stale is None:
            return Path(build_dir)
        notes.append(f"{stale}; building afresh for the archive")
        _say(progress, notes[-1])
    use_dir = Path(scratch) / "dossier"
    _say(progress, "building the dossier for the archive")
    # never from the record cache: an archive vouches for what the files say, not for a cache entry
    _call_builder(builder, manifest_path, use_dir, formats=tuple(formats) if formats is not None else None,
                  jobs=jobs, use_cache=False, progress=progress)
    return use_dir


def _contents(manifest_path, files, inputs, use_dir, out_abs, mtime):
    """(members on disk, all contents by member name, their SHA-256, the layout)."""
    members_on_disk, layout, names = _collect(manifest_path, files, inputs, use_dir)
    if any(p == out_abs for p in members_on_disk.values()):
        raise ArchiveError("the archive would overwrite a file it archives", where=str(out_abs))
    data_path = members_on_disk[f"{DOSSIER_DIR}/dossier.json"]
    try:
        data = json.loads(data_path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ArchiveError(f"dossier.json of the build is not readable JSON ({exc})", where=str(data_path)) from None
    if not isinstance(data, dict):
        data = {}
    layout["source_members"] = _source_members(data, manifest_path, names)
    env = _environment(data, layout, mtime)
    content: dict[str, bytes | Path] = dict(members_on_disk)
    content[ENVIRONMENT_NAME] = (json.dumps(env, indent=2, sort_keys=True) + "\n").encode("utf-8")
    content[README_NAME] = _readme(
        layout, env, len(layout["sources"]), len(layout["inputs"]), len(layout["dossier"])
    ).encode("utf-8")
    sums: dict[str, str] = {}
    for name in sorted(content):
        item = content[name]
        sums[name] = hashlib.sha256(item).hexdigest() if isinstance(item, bytes) else sha256_file(item)
    content[CHECKSUMS_NAME] = "".join(f"{sums[n]}  {n}\n" for n in sorted(sums)).encode("utf-8")
    recorded = {e.get("path"): e.get("sha256") for e in _source_entries(data)}
    for raw, name in layout["source_members"].items():
        if recorded.get(raw) != sums[name]:
            raise ArchiveError("changed since the dossier was built from it; build again and archive",
                               where=str(members_on_disk[name]))
    return members_on_disk, content, sums, layout


def write_archive(
    manifest_path: str | os.PathLike,
    out_file: str | os.PathLike,
    *,
    build_dir: str | os.PathLike | None = None,
    builder: Callable[..., Any] | None = None,
    formats: Iterable[str] | None = None,
    jobs: int | None = None,
    use_cache: bool = False,
    source_date_epoch: int | None = None,
    progress: Progress = None,
    sign_key: str | os.PathLike | None = None,
) -> ArchiveResult:
    """Archive the project of ``manifest_path`` into ``out_file`` (a .tar.gz), deterministically.

    ``build_dir``: an existing build to archive if it is current (built from exactly the
    manifest's files as they are now); otherwise the dossier is built into a temporary folder
    with ``builder`` (default ``dossier.report.build.build_dossier``), reading every output
    afresh (``use_cache`` is accepted for old callers and ignored). ``sign_key``: an SSH key to
    sign the archive with (``OUT.sig`` beside it, dossier.archive.sign). Files left out (not
    regular, or real path outside the project folder) are in ``notes`` and the archive's README.
    """
    from dossier.report.targets import project_inputs

    manifest_path = Path(manifest_path)
    refuse_special(manifest_path, ArchiveError, "manifest file")
    if not manifest_path.is_file():
        raise ArchiveError("manifest not found", where=str(manifest_path))
    mtime = _fixed_mtime(source_date_epoch)
    files, inputs, notes = _project_files(manifest_path, progress)
    # before the build, which takes a while
    project = project_inputs(manifest_path)
    out_abs = check_file_target(out_file, project, hint="give a file name such as project.tar.gz",
                                parent_must_exist=True)
    if sign_key is not None:
        check_file_target(f"{out_abs}{SIG_SUFFIX}", project, hint="the signature is written beside the archive")
    with tempfile.TemporaryDirectory(prefix="dossier-archive-") as scratch:
        use_dir = _dossier_to_archive(manifest_path, files, build_dir, scratch, builder or _default_builder,
                                      formats, jobs, notes, progress)
        members_on_disk, content, sums, layout = _contents(manifest_path, files, inputs, use_dir, out_abs, mtime)
        for item in layout["left_out"]:
            notes.append(f"left out of the archive: {item['path']}: {item['reason']}")
        _say(progress, f"writing {out_abs}")

        def unchanged_then_sign(tmp: Path) -> None:
            # A file that changed between hashing and packing would make the archive lie.
            for name, item in members_on_disk.items():
                if sha256_file(item) != sums[name]:
                    raise ArchiveError("changed while it was being archived; try again", where=str(item))
            if sign_key is not None:
                os.replace(sign_file(tmp, sign_key), f"{out_abs}{SIG_SUFFIX}")

        _write_tar_gz(out_abs, content, mtime, before_rename=unchanged_then_sign)
        fresh = build_dir is None or use_dir != Path(build_dir)
        return ArchiveResult(
            path=out_abs,
            members=sorted(f"{ARCHIVE_ROOT}/{n}" for n in content),
            build_dir=None if fresh else use_dir,
            built_fresh=fresh,
            notes=notes,
            left_out=layout["left_out"],
            signature=Path(f"{out_abs}{SIG_SUFFIX}") if sign_key is not None else None,
        )
