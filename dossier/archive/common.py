"""What the archive writer and verifier share: the layout names, hashing, member-name rules."""
from __future__ import annotations

import hashlib
import os
import tarfile
from importlib import metadata
from pathlib import Path
from typing import Any, Callable

from dossier import __version__
from dossier.errors import ArchiveError
from dossier.report.targets import INPUT_SUFFIXES  # noqa: F401 (re-exported: inputs archived beside an output)

ARCHIVE_ROOT = "dossier-archive"
CHECKSUMS_NAME = "SHA256SUMS"
ENVIRONMENT_NAME = "environment.json"
README_NAME = "README.txt"
PROJECT_DIR = "project"
DOSSIER_DIR = "dossier"
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


def _source_entries(data: dict[str, Any]) -> list[dict[str, Any]]:
    sources = data.get("sources")
    return [s for s in sources if isinstance(s, dict)] if isinstance(sources, list) else []
