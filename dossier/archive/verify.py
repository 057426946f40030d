"""Verifying an archive: every member against SHA256SUMS, the sources against dossier.json,
optionally a rebuild from the archived files and an SSH signature (dossier.archive.sign).

The members are read sequentially from the compressed stream and hashed without writing
anything to disk; an archive holding absolute paths, ``..`` components, links, devices or
duplicate names is refused and never extracted.
"""
from __future__ import annotations

import hashlib
import json
import math
import os
import tarfile
import tempfile
import zlib
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any, Callable

from dossier.archive.common import (
    _CHUNK, ARCHIVE_ROOT, CHECKSUMS_NAME, DOSSIER_DIR, ENVIRONMENT_NAME, MAX_TEXT_MEMBER_BYTES, REBUILD_IGNORED_KEYS,
    Progress, _say, _source_entries, unsafe_reason,
)
from dossier.archive.write import _call_builder, _default_builder
from dossier.archive.sign import verify_signature
from dossier.errors import ArchiveError, DossierError
from dossier.reading.files import refuse_special
from dossier.reading.jobs import split_name

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
    signature: str | None = None  # ssh-keygen's confirmation when a signature was checked
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
    refuse_special(path, ArchiveError, "archive file")
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
    left_out = {item.get("path"): item.get("reason") for item in layout.get("left_out") or [] if isinstance(item, dict)}
    for entry in _source_entries(data):
        raw, recorded = entry.get("path"), entry.get("sha256")
        if not isinstance(raw, str) or not isinstance(recorded, str):
            continue
        name = mapped.get(raw)
        if not isinstance(name, str):
            name = os.path.normpath(str(base / split_name(raw)[0])).replace(os.sep, "/")
        actual = digests.get(name)
        if actual is None and name in left_out:
            report.notes.append(f"dossier.json names {raw}, left out when archived: {left_out[name]}")
        elif actual is None:
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
    signer: str | os.PathLike | None = None,
) -> VerifyReport:
    """Check every member of an archive against its SHA256SUMS; optionally rebuild and compare.

    ``signer``: a public key (or OpenSSH allowed-signers file) whose signature ``ARCHIVE.sig``
    must carry; a missing or wrong signature is a problem of the report.
    """
    path = Path(archive_path)
    report = VerifyReport(archive=path)
    if signer is not None:
        try:
            report.signature = verify_signature(path, signer)
        except ArchiveError as exc:
            report.problems.append(str(exc))
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
