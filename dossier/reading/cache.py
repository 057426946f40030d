"""Cache of parsed records: one JSON file per (file content SHA-256, record schema, reader version).

Location: the `cache_dir` argument, else $DOSSIER_CACHE_DIR, else $XDG_CACHE_HOME/dossier,
else ~/.cache/dossier. An entry that cannot be read, does not parse, or carries another
key is ignored (and overwritten by the fresh read); entries are written to a temporary
name and renamed, so a crash never leaves half an entry.
"""
from __future__ import annotations

import base64
import json
import os
import tempfile
from array import array
from pathlib import Path

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


def load(cache_dir: Path | None, sha256: str) -> Calculation | None:
    """The cached record for this content, or None when absent, damaged or stale."""
    path = entry_path(cache_dir or default_cache_dir(), sha256)
    try:
        with open(path, encoding="utf-8") as fh:
            payload = json.load(fh)
        if payload.get("key") != cache_key(sha256):
            return None
        calc = Calculation.from_dict(_unpack(payload["record"]))
        if calc.source.sha256 != sha256 or calc.reader_version != RECORD_SCHEMA_VERSION:
            return None
        return calc
    except (OSError, ValueError, KeyError, TypeError, AttributeError):
        return None


def store(cache_dir: Path | None, calc: Calculation) -> None:
    """Write the record atomically; a cache that cannot be written is silently skipped."""
    folder = Path(cache_dir or default_cache_dir())
    try:
        folder.mkdir(parents=True, exist_ok=True)
        payload = {"key": cache_key(calc.source.sha256), "record": _pack(calc.to_dict())}
        fd, tmp = tempfile.mkstemp(prefix=".tmp-", suffix=".json", dir=folder)
        try:
            with os.fdopen(fd, "w", encoding="utf-8") as fh:
                json.dump(payload, fh, separators=(",", ":"), allow_nan=True)
            os.replace(tmp, entry_path(folder, calc.source.sha256))
        except BaseException:
            try:
                os.unlink(tmp)
            except OSError:
                pass
            raise
    except OSError:
        return
