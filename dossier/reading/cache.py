"""Cache of parsed records: one JSON file per (file content SHA-256, record schema, reader version).

Location: the `cache_dir` argument, else $DOSSIER_CACHE_DIR, else $XDG_CACHE_HOME/dossier,
else ~/.cache/dossier. The folder is created 0700, and a folder that group or others may
write (or another user owns) is refused, since whoever can write it could plant records.
An entry carries the SHA-256 of its source file and of its own body; one that cannot be
read, does not parse, carries another key or fails its checksums is ignored (and
overwritten by the fresh read). The checksums catch damage and hand edits, not a
deliberate forgery (which the folder's permissions guard against). Entries are written to a
temporary name and renamed, so a crash never leaves half an entry.
"""
from __future__ import annotations

import base64
import hashlib
import json
import os
import stat
import sys
import tempfile
from array import array
from pathlib import Path

from dossier.errors import DossierError
from dossier.records import RECORD_SCHEMA_VERSION, Calculation


def _reader_fingerprint() -> str:
    """dossier's version plus a digest of the reading code itself (this package and records.py).

    Any change to a supplement, the adapter or the normalization rules changes the digest, so
    records cached by an older reader are never trusted (no version to forget to bump).
    """
    import hashlib

    from dossier import __version__

    here = Path(__file__).resolve().parent
    files = sorted(here.rglob("*.py")) + [here.parent / "records.py"]
    digest = hashlib.sha256()
    for f in files:
        try:
            digest.update(f.relative_to(here.parent).as_posix().encode())
            digest.update(f.read_bytes())
        except OSError:
            continue
    return f"{__version__}-{digest.hexdigest()[:12]}"


#: Identifies the reading code; part of every cache key.
READER_VERSION = _reader_fingerprint()


def default_cache_dir() -> Path:
    env = os.environ.get("DOSSIER_CACHE_DIR")
    if env:
        return Path(env)
    xdg = os.environ.get("XDG_CACHE_HOME")
    if xdg:
        return Path(xdg) / "dossier"
    return Path.home() / ".cache" / "dossier"


def cache_key(sha256: str) -> str:
    return f"{sha256}-s{RECORD_SCHEMA_VERSION}-{READER_VERSION}"


def entry_path(cache_dir: Path, sha256: str) -> Path:
    return Path(cache_dir) / f"{cache_key(sha256)}.json"


#: Large numeric blocks stored as base64 float64 (exact, and ~10x faster to load than JSON numbers).
_PACKED = (("orbitals", "coefficients"), ("orbitals", "overlap"), ("vibrations", "displacements"))


def _shape(x):
    shape = []
    while isinstance(x, list):
        shape.append(len(x))
        x = x[0] if x else None
    return shape


def _flatten(x, depth):
    if depth == 1:
        return x
    return [v for row in x for v in _flatten(row, depth - 1)]


def _unflatten(flat, shape):
    if len(shape) == 1:
        return flat
    step = len(flat) // shape[0] if shape[0] else 0
    return [_unflatten(flat[i * step : (i + 1) * step], shape[1:]) for i in range(shape[0])]


def _pack(record: dict) -> dict:
    for part, name in _PACKED:
        block = (record.get(part) or {}).get(name)
        if block:
            shape = _shape(block)
            try:
                flat = array("d", _flatten(block, len(shape)))
            except TypeError:  # ragged or holding None: leave as plain JSON
                continue
            if len(flat) != _prod(shape):
                continue
            record[part][name] = {"f64": base64.b64encode(flat.tobytes()).decode("ascii"), "shape": shape}
    return record


def _unpack(record: dict) -> dict:
    for part, name in _PACKED:
        block = (record.get(part) or {}).get(name)
        if isinstance(block, dict):
            flat = array("d")
            flat.frombytes(base64.b64decode(block["f64"]))
            record[part][name] = _unflatten(flat.tolist(), block["shape"])
    return record


def _prod(shape):
    n = 1
    for s in shape:
        n *= s
    return n


class CacheFolderError(DossierError):
    """The cache folder is not safe to trust (writable by others, or owned by someone else)."""


_reported: set[str] = set()


def check_folder(cache_dir: Path | None) -> Path:
    """The cache folder, refused (CacheFolderError) when others could plant entries in it.

    As ssh does with private keys: a folder writable by group or others, or owned by another
    user, is not used. A missing folder is fine (it is created 0700 on the first store).
    """
    folder = Path(cache_dir or default_cache_dir())
    try:
        st = os.stat(folder)
    except FileNotFoundError:
        return folder
    except OSError as exc:
        raise CacheFolderError(f"record cache folder cannot be used ({exc.strerror or exc})", str(folder)) from None
    if not stat.S_ISDIR(st.st_mode):
        raise CacheFolderError("record cache folder is not a folder; remove it or set $DOSSIER_CACHE_DIR", str(folder))
    if st.st_mode & 0o022:
        raise CacheFolderError(
            f"record cache folder is writable by others (mode {stat.S_IMODE(st.st_mode):03o}); its entries "
            "cannot be trusted. Run `chmod 700` on it, or read with --no-cache", str(folder))
    if hasattr(os, "getuid") and st.st_uid != os.getuid():
        raise CacheFolderError("record cache folder belongs to another user; its entries cannot be trusted. "
                               "Set $DOSSIER_CACHE_DIR to a folder of your own, or read with --no-cache", str(folder))
    return folder


def _report_once(path: Path, why: str) -> None:
    key = str(path)
    if key in _reported:
        return
    _reported.add(key)
    print(f"dossier: note: record cache entry {path.name} {why}; the file is read afresh", file=sys.stderr)


def load_jobs(cache_dir: Path | None, sha256: str) -> list[Calculation] | None:
    """The cached records (one per job) for this content, or None when absent, damaged or stale.

    An entry is a header line (key, SHA-256 of the source, SHA-256 of the body) and a body
    (the records). A body whose checksum does not match, or records of another source, mean a
    damaged or edited entry: it is reported once on stderr and ignored (the caller re-reads).
    """
    path = entry_path(cache_dir or default_cache_dir(), sha256)
    try:
        with open(path, "rb") as fh:
            blob = fh.read()
    except OSError:
        return None
    try:
        head_raw, _, body = blob.partition(b"\n")
        head = json.loads(head_raw)
        if head.get("key") != cache_key(sha256):
            return None
        if head.get("source_sha256") != sha256 or hashlib.sha256(body).hexdigest() != head.get("body_sha256"):
            _report_once(path, "does not match its checksum (damaged or edited)")
            return None
        calcs = [Calculation.from_dict(_unpack(r)) for r in json.loads(body)["records"]]
    except (ValueError, KeyError, TypeError, AttributeError):
        _report_once(path, "is not readable")
        return None
    if not calcs or any(c.source.sha256 != sha256 or c.reader_version != RECORD_SCHEMA_VERSION for c in calcs):
        _report_once(path, "names another source file")
        return None
    return calcs


def load(cache_dir: Path | None, sha256: str) -> Calculation | None:
    """The cached record of a single-job file (the last job of a multi-job one), or None."""
    calcs = load_jobs(cache_dir, sha256)
    return calcs[-1] if calcs else None


def store(cache_dir: Path | None, calc: Calculation | list[Calculation]) -> None:
    """Write the record(s) of one file atomically; a cache that cannot be written is silently skipped."""
    calcs = calc if isinstance(calc, list) else [calc]
    folder = Path(cache_dir or default_cache_dir())
    sha = calcs[0].source.sha256
    try:
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        body = json.dumps({"records": [_pack(c.to_dict()) for c in calcs]},
                          separators=(",", ":"), allow_nan=True).encode("utf-8")
        head = json.dumps({"key": cache_key(sha), "source_sha256": sha,
                           "body_sha256": hashlib.sha256(body).hexdigest()}).encode("utf-8")
        fd, tmp = tempfile.mkstemp(prefix=".tmp-", suffix=".json", dir=folder)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(head + b"\n" + body)
            os.replace(tmp, entry_path(folder, sha))
        except BaseException:
            try:
                os.unlink(tmp)
            except OSError:
                pass
            raise
    except OSError:
        return
