"""A deterministic, self-verifying archive of a finished project, and its verification.

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

Verification reads the members sequentially from the compressed stream and hashes them without
writing anything to disk; it refuses (never extracts) an archive holding absolute paths, ``..``
components, links, devices or duplicate names. ``rebuild=True`` extracts the checked members
into a temporary folder of its own (with tarfile's ``data`` filter as a second guard), rebuilds
the dossier from the archived manifest and outputs, and compares the two ``dossier.json``.

Nothing here re-reads a log: the programs that wrote the outputs come from the build's
``dossier.json`` ``sources``.
"""
from __future__ import annotations

import gzip
import hashlib
import io
import json
import math
import os
import platform
import sys
import tarfile
import tempfile
import zlib
from dataclasses import dataclass, field
from importlib import metadata
from pathlib import Path, PurePosixPath
from typing import Any, Callable, Iterable

from dossier import __version__
from dossier.errors import ArchiveError, DossierError

#: The one top-level folder of every archive.
ARCHIVE_ROOT = "dossier-archive"
CHECKSUMS_NAME = "SHA256SUMS"
ENVIRONMENT_NAME = "environment.json"
README_NAME = "README.txt"
PROJECT_DIR = "project"
DOSSIER_DIR = "dossier"
#: Inputs archived beside an output of the same stem.
INPUT_SUFFIXES = (".nw", ".inp", ".in", ".com", ".gjf", ".xyz")
#: Packages whose versions the environment record names.
ENVIRONMENT_PACKAGES = ("dossier", "cclib", "numpy", "scipy", "jinja2", "matplotlib", "weasyprint")
#: The checksum list and environment record are small text files; refuse silly sizes.
MAX_TEXT_MEMBER_BYTES = 64 * 1024 * 1024
#: Keys of dossier.json that may differ between two builds of the same files (who built it).
REBUILD_IGNORED_KEYS = ("generator",)

_CHUNK = 1 << 20

Progress = Callable[[str], None] | None


# -- small helpers -------------------------------------------------------------

def sha256_file(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(_CHUNK), b""):
            digest.update(chunk)
    return digest.hexdigest()


def _say(progress: Progress, text: str) -> None:
    if progress is not None:
        progress(text)


def _fixed_mtime(source_date_epoch: int | None) -> int:
    if source_date_epoch is not None:
        return int(source_date_epoch)
    raw = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if not raw:
        return 0
    try:
        value = int(raw)
    except ValueError:
        raise ArchiveError(f"SOURCE_DATE_EPOCH must be a whole number of seconds, not {raw!r}") from None
    if value < 0:
        raise ArchiveError(f"SOURCE_DATE_EPOCH must not be negative ({value})")
    return value


def _package_version(name: str) -> str:
    if name == "dossier":
        return __version__
    try:
        return metadata.version(name)
    except metadata.PackageNotFoundError:
        return "not installed"


def _check_member_name(name: str) -> None:
    if any(ord(ch) < 32 or ord(ch) == 127 for ch in name) or "\\" in name:
        raise ArchiveError(
            f"file name {name!r} holds a control character or backslash; rename it before archiving"
        )


def unsafe_reason(member: tarfile.TarInfo) -> str | None:
    """Why a member must not be extracted, or None when it is a plain file or folder inside."""
    name = member.name
    if not name or "\x00" in name:
        return "empty or NUL-containing name"
    if name.startswith(("/", "\\")) or (len(name) > 1 and name[1] == ":"):
        return "absolute path"
    parts = name.replace("\\", "/").split("/")
    if ".." in parts:
        return "'..' component (path leaves the archive folder)"
    if member.issym():
        return f"symbolic link (to {member.linkname!r})"
    if member.islnk():
        return f"hard link (to {member.linkname!r})"
    if member.ischr() or member.isblk():
        return "device file"
    if member.isfifo():
        return "named pipe"
    if member.type not in (tarfile.REGTYPE, tarfile.AREGTYPE, tarfile.DIRTYPE):
        return f"unsupported member type {member.type!r}"
    return None


# -- what goes in ----------------------------------------------------------------

@dataclass
class ArchiveResult:
    path: Path
    members: list[str]  # paths inside the archive, sorted
    build_dir: Path | None  # the build that was archived (None when built in a temporary folder)
    built_fresh: bool
    notes: list[str] = field(default_factory=list)


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


def _source_entries(data: dict[str, Any]) -> list[dict[str, Any]]:
    sources = data.get("sources")
    return [s for s in sources if isinstance(s, dict)] if isinstance(sources, list) else []


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
        if not path.is_file():
            raise ArchiveError("file named by the manifest is missing", where=str(path))
        if sha256_file(path) != recorded[path]:
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

How to rebuild the dossier by hand:
  dossier build {manifest} --out rebuilt

All times in this archive are set to one fixed value ({env['member_mtime']} s after 1970-01-01 UTC),
so the same project always gives the same archive. The rates in the dossier are model estimates.
"""


def _collect(
    manifest_path: Path, files: list[Path], inputs: list[Path], dossier_dir: Path
) -> tuple[dict[str, Path], dict[str, Any], dict[Path, str]]:
    """Archive member name (inside ARCHIVE_ROOT) -> file on disk, the layout record, and the
    member name of each project file."""
    manifest_abs = Path(os.path.abspath(manifest_path))
    project_paths = [manifest_abs, *files, *inputs]
    root = Path(os.path.commonpath([str(p.parent) for p in project_paths]))
    members: dict[str, Path] = {}

    def project_name(p: Path) -> str:
        return str(PurePosixPath(PROJECT_DIR, *p.relative_to(root).parts))

    for p in project_paths:
        members[project_name(p)] = p
    built = []
    for dirpath, dirnames, filenames in os.walk(dossier_dir):
        dirnames[:] = sorted(d for d in dirnames if not d.startswith("."))
        for fname in sorted(filenames):
            full = Path(dirpath, fname)
            if fname.startswith(".") or full.is_symlink() or not full.is_file():
                continue  # temporary names of an atomic write, links
            rel = full.relative_to(dossier_dir)
            name = str(PurePosixPath(DOSSIER_DIR, *rel.parts))
            members[name] = full
            built.append(name)
    if f"{DOSSIER_DIR}/dossier.json" not in members:
        raise ArchiveError(f"the build in {dossier_dir} holds no dossier.json; nothing to archive")
    for name in members:
        _check_member_name(name)
    layout = {
        "manifest": project_name(manifest_abs),
        "sources": sorted(project_name(p) for p in files),
        "inputs": sorted(project_name(p) for p in inputs),
        "dossier": sorted(built),
    }
    return members, layout, {p: project_name(p) for p in project_paths}


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


def _check_target(target: Path) -> None:
    if target.is_dir():
        raise ArchiveError("is a folder; give a file name such as project.tar.gz", where=str(target))
    if not target.parent.is_dir():
        raise ArchiveError("the folder to write the archive into does not exist", where=str(target))


def _write_tar_gz(
    target: Path, members: dict[str, bytes | Path], mtime: int, before_rename: Callable[[], None] | None = None
) -> None:
    """Write members (sorted by name) as a deterministic .tar.gz, atomically.

    ``before_rename`` runs once the temporary file is complete; if it raises, the temporary
    file is removed and whatever was at ``target`` before stays as it was.
    """
    target = Path(os.path.abspath(target))
    _check_target(target)
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
            before_rename()
        os.replace(tmp, target)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_archive(
    manifest_path: str | os.PathLike,
    out_file: str | os.PathLike,
    *,
    build_dir: str | os.PathLike | None = None,
    builder: Callable[..., Any] | None = None,
    formats: Iterable[str] | None = None,
    jobs: int | None = None,
    use_cache: bool = True,
    source_date_epoch: int | None = None,
    progress: Progress = None,
) -> ArchiveResult:
    """Archive the project of ``manifest_path`` into ``out_file`` (a .tar.gz), deterministically.

    ``build_dir``: an existing build to archive if it is current (built from exactly the
    manifest's files as they are now); otherwise the dossier is built into a temporary folder
    with ``builder`` (default ``dossier.build.build_dossier``).
    """
    manifest_path = Path(manifest_path)
    if not manifest_path.is_file():
        raise ArchiveError("manifest not found", where=str(manifest_path))
    mtime = _fixed_mtime(source_date_epoch)
    files = sorted(set(_manifest_files(manifest_path)))
    for p in files:
        if not p.is_file():
            raise ArchiveError("file named by the manifest is missing", where=str(p))
    inputs = sorted(_inputs_beside(files))
    builder = builder or _default_builder
    notes: list[str] = [
        f"the manifest names {p} by an absolute path: the archive holds a copy, but a rebuild from the "
        "archive reads the original; prefer paths relative to the manifest"
        for p in _absolute_in_manifest(manifest_path, files)
    ]
    for note in notes:
        _say(progress, note)
    out_abs = Path(os.path.abspath(out_file))
    _check_target(out_abs)  # before the build, which takes a while

    with tempfile.TemporaryDirectory(prefix="dossier-archive-") as scratch:
        use_dir: Path | None = None
        if build_dir is not None:
            build_dir = Path(build_dir)
            stale = build_is_current(build_dir, manifest_path, files)
            if stale is None:
                use_dir = build_dir
            else:
                notes.append(f"{stale}; building afresh for the archive")
                _say(progress, notes[-1])
        if use_dir is None:
            use_dir = Path(scratch) / "dossier"
            _say(progress, "building the dossier for the archive")
            _call_builder(
                builder, manifest_path, use_dir,
                formats=tuple(formats) if formats is not None else None,
                jobs=jobs, use_cache=use_cache, progress=progress,
            )
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
        _say(progress, f"hashing {len(content)} files")
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
        _say(progress, f"writing {out_abs}")

        def unchanged() -> None:
            # A file that changed between hashing and packing would make the archive lie.
            for name, item in members_on_disk.items():
                if sha256_file(item) != sums[name]:
                    raise ArchiveError("changed while it was being archived; try again", where=str(item))

        _write_tar_gz(out_abs, content, mtime, before_rename=unchanged)
        fresh = build_dir is None or use_dir != build_dir
        return ArchiveResult(
            path=out_abs,
            members=sorted(f"{ARCHIVE_ROOT}/{n}" for n in content),
            build_dir=None if fresh else use_dir,
            built_fresh=fresh,
            notes=notes,
        )


# -- verification ------------------------------------------------------------------

@dataclass
class VerifyReport:
    archive: Path
    checked: int = 0  # members whose checksum matched
    missing: list[str] = field(default_factory=list)  # listed in SHA256SUMS, absent from the archive
    altered: list[str] = field(default_factory=list)  # present, but the SHA-256 differs
    unexpected: list[str] = field(default_factory=list)  # present, not listed
    refused: list[str] = field(default_factory=list)  # "name: reason" (unsafe; nothing extracted)
    problems: list[str] = field(default_factory=list)  # other findings (checksum list, dossier.json)
    rebuilt: bool = False
    rebuild_differences: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not (self.missing or self.altered or self.unexpected or self.refused
                    or self.problems or self.rebuild_differences)

    def lines(self) -> list[str]:
        out = [f"refused: {r}" for r in self.refused]
        out += [f"missing: {m} (listed in {CHECKSUMS_NAME}, not in the archive)" for m in self.missing]
        out += [f"altered: {a} (SHA-256 differs from {CHECKSUMS_NAME})" for a in self.altered]
        out += [f"unexpected: {u} (in the archive, not listed in {CHECKSUMS_NAME})" for u in self.unexpected]
        out += [f"problem: {p}" for p in self.problems]
        out += [f"rebuild differs: {d}" for d in self.rebuild_differences]
        out += [f"note: {n}" for n in self.notes]
        return out


def _parse_checksums(text: str, report: VerifyReport) -> dict[str, str]:
    listed: dict[str, str] = {}
    for number, line in enumerate(text.splitlines(), start=1):
        if not line.strip():
            continue
        digest, sep, name = line.partition("  ")
        digest = digest.strip().lower()
        if not sep or len(digest) != 64 or any(c not in "0123456789abcdef" for c in digest) or not name:
            report.problems.append(f"{CHECKSUMS_NAME}:{number}: not a '<sha256>  <path>' line")
            continue
        if name in listed:
            report.problems.append(f"{CHECKSUMS_NAME}:{number}: {name} listed twice")
        listed[name] = digest
    return listed


def _open_archive(path: Path) -> tarfile.TarFile:
    try:
        return tarfile.open(path, mode="r:gz")
    except FileNotFoundError:
        raise ArchiveError("no such archive", where=str(path)) from None
    except IsADirectoryError:
        raise ArchiveError("is a folder, not a .tar.gz archive", where=str(path)) from None
    except (tarfile.TarError, OSError, EOFError, zlib.error) as exc:
        raise ArchiveError(f"not a readable .tar.gz archive ({exc})", where=str(path)) from None


def _scan(path: Path, report: VerifyReport) -> tuple[dict[str, str], dict[str, bytes]]:
    """One sequential pass: safety of every member, SHA-256 of every file, the small text members."""
    digests: dict[str, str] = {}
    texts: dict[str, bytes] = {}
    wanted_texts = {CHECKSUMS_NAME, ENVIRONMENT_NAME, f"{DOSSIER_DIR}/dossier.json"}
    seen: set[str] = set()
    prefix = f"{ARCHIVE_ROOT}/"
    tar = _open_archive(path)
    try:
        with tar:
            for member in tar:
                reason = unsafe_reason(member)
                if reason is None and member.name in seen:
                    reason = "second member of the same name"
                seen.add(member.name)
                if reason is not None:
                    report.refused.append(f"{member.name}: {reason}")
                    continue
                if member.isdir():
                    continue
                inner = member.name[len(prefix):] if member.name.startswith(prefix) else None
                if inner is None or not inner:
                    report.unexpected.append(member.name)
                    continue
                handle = tar.extractfile(member)
                digest = hashlib.sha256()
                keep = inner in wanted_texts and member.size <= MAX_TEXT_MEMBER_BYTES
                kept = bytearray()
                for chunk in iter(lambda: handle.read(_CHUNK), b""):
                    digest.update(chunk)
                    if keep:
                        kept += chunk
                digests[inner] = digest.hexdigest()
                if keep:
                    texts[inner] = bytes(kept)
    except (tarfile.TarError, OSError, EOFError, zlib.error) as exc:
        raise ArchiveError(f"archive is damaged or cut short ({exc})", where=str(path)) from None
    return digests, texts


def _json_member(texts: dict[str, bytes], name: str, report: VerifyReport) -> Any:
    raw = texts.get(name)
    if raw is None:
        return None
    try:
        return json.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        report.problems.append(f"{ARCHIVE_ROOT}/{name} is not readable JSON ({exc.__class__.__name__})")
        return None


def _check_sources(data: Any, env: Any, digests: dict[str, str], report: VerifyReport) -> None:
    """The archived dossier.json names the SHA-256 of each output it was built from: they must match."""
    if not isinstance(data, dict) or not isinstance(env, dict):
        return
    layout = env.get("layout") if isinstance(env.get("layout"), dict) else {}
    manifest = layout.get("manifest")
    if not isinstance(manifest, str):
        report.problems.append(f"{ARCHIVE_ROOT}/{ENVIRONMENT_NAME} does not name the archived manifest")
        return
    if manifest not in digests:
        report.problems.append(f"the archived manifest {ARCHIVE_ROOT}/{manifest} is not in the archive")
    base = PurePosixPath(manifest).parent
    mapped = layout.get("source_members") if isinstance(layout.get("source_members"), dict) else {}
    for entry in _source_entries(data):
        raw, recorded = entry.get("path"), entry.get("sha256")
        if not isinstance(raw, str) or not isinstance(recorded, str):
            continue
        name = mapped.get(raw)
        if not isinstance(name, str):
            name = os.path.normpath(str(base / raw)).replace(os.sep, "/")
        actual = digests.get(name)
        if actual is None:
            report.problems.append(f"dossier.json names {raw}, which is not archived as {ARCHIVE_ROOT}/{name}")
        elif actual != recorded.lower():
            report.problems.append(
                f"{ARCHIVE_ROOT}/{name} is not the file the dossier was built from (SHA-256 differs from dossier.json)"
            )


def _numbers_close(a: float, b: float) -> bool:
    if isinstance(a, bool) or isinstance(b, bool):
        return a == b
    if math.isnan(a) and math.isnan(b):
        return True
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)


def _label(items: list, index: int) -> str:
    item = items[index]
    if isinstance(item, dict):
        for key in ("name", "path", "state", "family", "route", "code"):
            if isinstance(item.get(key), str):
                return f"[{item[key]}]"
    return f"[{index}]"


def json_differences(old: Any, new: Any, where: str = "", limit: int = 200) -> list[str]:
    """Differences between two JSON values, each as "key.path: old -> new"."""
    found: list[str] = []

    def short(value: Any) -> str:
        text = json.dumps(value, sort_keys=True)
        return text if len(text) <= 80 else text[:77] + "..."

    def walk(a: Any, b: Any, path: str) -> None:
        if len(found) >= limit:
            return
        if isinstance(a, dict) and isinstance(b, dict):
            for key in sorted(set(a) | set(b), key=str):
                sub = f"{path}.{key}" if path else str(key)
                if key not in b:
                    found.append(f"{sub}: only in the archived dossier.json")
                elif key not in a:
                    found.append(f"{sub}: only in the rebuilt dossier.json")
                else:
                    walk(a[key], b[key], sub)
        elif isinstance(a, list) and isinstance(b, list):
            if len(a) != len(b):
                found.append(f"{path}: {len(a)} entries archived, {len(b)} rebuilt")
            for i in range(min(len(a), len(b))):
                walk(a[i], b[i], f"{path}{_label(a, i)}")
        elif isinstance(a, (int, float)) and isinstance(b, (int, float)) and not (
            isinstance(a, bool) or isinstance(b, bool)
        ):
            if not _numbers_close(float(a), float(b)):
                found.append(f"{path}: {short(a)} -> {short(b)}")
        elif a != b:
            found.append(f"{path}: {short(a)} -> {short(b)}")

    walk(old, new, where)
    return found


def _rebuild(
    path: Path, env: dict, archived: dict, report: VerifyReport, builder, jobs, progress: Progress
) -> None:
    layout = env.get("layout") if isinstance(env.get("layout"), dict) else {}
    manifest = layout.get("manifest")
    with tempfile.TemporaryDirectory(prefix="dossier-verify-") as scratch:
        target = Path(scratch) / "extracted"
        target.mkdir()
        tar = _open_archive(path)
        try:
            with tar:
                members = [m for m in tar.getmembers() if unsafe_reason(m) is None]
                tar.extractall(target, members=members, filter="data")
        except (tarfile.TarError, OSError, EOFError, zlib.error) as exc:
            raise ArchiveError(f"could not extract the archive for the rebuild ({exc})", where=str(path)) from None
        manifest_path = target / ARCHIVE_ROOT / manifest
        out_dir = Path(scratch) / "rebuilt"
        _say(progress, "rebuilding the dossier from the archived files")
        try:
            _call_builder(builder, manifest_path, out_dir, formats=("json",), jobs=jobs,
                          use_cache=False, progress=progress)
            rebuilt = json.loads((out_dir / "dossier.json").read_text(encoding="utf-8"))
        except DossierError as exc:
            report.rebuild_differences.append(f"the archived project does not rebuild: {exc.reason}")
            return
        except (OSError, json.JSONDecodeError) as exc:
            report.rebuild_differences.append(f"the rebuild wrote no readable dossier.json ({exc})")
            return
    report.rebuilt = True
    old = {k: v for k, v in archived.items() if k not in REBUILD_IGNORED_KEYS}
    new = {k: v for k, v in rebuilt.items() if k not in REBUILD_IGNORED_KEYS} if isinstance(rebuilt, dict) else rebuilt
    report.rebuild_differences.extend(json_differences(old, new))
    if isinstance(rebuilt, dict) and archived.get("generator") != rebuilt.get("generator"):
        report.notes.append(
            f"built by {json.dumps(archived.get('generator'), sort_keys=True)}, "
            f"rebuilt by {json.dumps(rebuilt.get('generator'), sort_keys=True)}"
        )


def verify_archive(
    archive_path: str | os.PathLike,
    *,
    rebuild: bool = False,
    builder: Callable[..., Any] | None = None,
    jobs: int | None = None,
    progress: Progress = None,
) -> VerifyReport:
    """Check every member of an archive against its SHA256SUMS; optionally rebuild and compare."""
    path = Path(archive_path)
    report = VerifyReport(archive=path)
    digests, texts = _scan(path, report)
    if report.refused:
        return report  # an unsafe archive is not looked at further, and never extracted
    if CHECKSUMS_NAME not in digests:
        report.problems.append(f"the archive holds no {ARCHIVE_ROOT}/{CHECKSUMS_NAME}; nothing to check against")
        return report
    if CHECKSUMS_NAME not in texts:
        report.problems.append(f"{ARCHIVE_ROOT}/{CHECKSUMS_NAME} is too large to be a checksum list")
        return report
    try:
        listed = _parse_checksums(texts[CHECKSUMS_NAME].decode("utf-8"), report)
    except UnicodeDecodeError:
        report.problems.append(f"{ARCHIVE_ROOT}/{CHECKSUMS_NAME} is not UTF-8 text")
        return report
    for name in sorted(listed):
        if name not in digests:
            report.missing.append(f"{ARCHIVE_ROOT}/{name}")
        elif digests[name] != listed[name]:
            report.altered.append(f"{ARCHIVE_ROOT}/{name}")
        else:
            report.checked += 1
    for name in sorted(digests):
        if name != CHECKSUMS_NAME and name not in listed:
            report.unexpected.append(f"{ARCHIVE_ROOT}/{name}")
    report.unexpected.sort()
    env = _json_member(texts, ENVIRONMENT_NAME, report)
    data = _json_member(texts, f"{DOSSIER_DIR}/dossier.json", report)
    if ENVIRONMENT_NAME not in digests:
        report.problems.append(f"the archive holds no {ARCHIVE_ROOT}/{ENVIRONMENT_NAME}")
    if f"{DOSSIER_DIR}/dossier.json" not in digests:
        report.problems.append(f"the archive holds no {ARCHIVE_ROOT}/{DOSSIER_DIR}/dossier.json")
    _check_sources(data, env, digests, report)
    if rebuild:
        if not report.ok:
            report.notes.append("not rebuilt: the archive failed the checks above")
        elif isinstance(env, dict) and isinstance(data, dict):
            _rebuild(path, env, data, report, builder or _default_builder, jobs, progress)
    return report
