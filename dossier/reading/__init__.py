"""The reading layer: output files -> Calculation records (cclib + supplements, cached, parallel).

Public API (the team contract):

- ``read(path, *, use_cache=True, cache_dir=None) -> Calculation``; raises ReadError (one line
  naming the file) for empty, binary, unreadable, non-QC or unsupported files. A cut-off or
  failed run still gives a record, with ``status.word`` "truncated", "failed" or "not-converged".
- ``read_many(paths, *, jobs=None, executor=None, use_cache=True, cache_dir=None, progress=None)
  -> list[Calculation | ReadError]`` in input order.
- ``find_outputs(folder) -> list[Path]``, recursive and safe against symlink loops.

The reading stage owns everything that touches an output file's text; nothing after it re-reads a
log. It may import only the shared vocabulary (dossier.units, dossier.errors, dossier.records).
"""
from __future__ import annotations

import dataclasses
import errno
import hashlib
import os
from pathlib import Path

from dossier.errors import ReadError
from dossier.reading import cache as _cache
from dossier.reading.cache import READER_VERSION, default_cache_dir
from dossier.reading.detect import SUPPORTED, identify, looks_binary
from dossier.reading.parallel import read_many
from dossier.records import Calculation, Source

__all__ = ["read", "read_many", "find_outputs", "READER_VERSION", "default_cache_dir", "OUTPUT_SUFFIXES"]

#: File name endings `find_outputs` collects from a folder.
OUTPUT_SUFFIXES = (".out", ".log", ".output")


def _load_bytes(path: Path, where: str) -> bytes:
    try:
        if path.is_dir():
            raise ReadError("is a folder, not an output file", where)
        with open(path, "rb") as fh:
            return fh.read()
    except ReadError:
        raise
    except FileNotFoundError:
        if os.path.islink(path):
            raise ReadError("broken symbolic link", where) from None
        raise ReadError("no such file", where) from None
    except PermissionError:
        raise ReadError("permission denied (file is not readable)", where) from None
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            raise ReadError("symbolic link loop", where) from None
        raise ReadError(f"cannot be read ({exc.strerror or exc})", where) from None


def read(path, *, use_cache: bool = True, cache_dir=None) -> Calculation:
    """Read one output file into a Calculation record (see module docstring)."""
    where = str(path)
    raw = _load_bytes(Path(path), where)
    if not raw.strip():
        raise ReadError("empty file" if not raw else "file holds only white space", where)
    if looks_binary(raw[:65536]):
        raise ReadError("binary data, not a text output file", where)
    sha = hashlib.sha256(raw).hexdigest()
    source = Source(path=where, sha256=sha, size_bytes=len(raw))
    if use_cache:
        hit = _cache.load(cache_dir, sha)
        if hit is not None:
            return dataclasses.replace(hit, source=source)
    text = raw.decode("utf-8", errors="replace")
    text = text.replace("\r\n", "\n")  # CRLF (Windows) copies: cclib's ORCA/xtb parsers miss blocks otherwise
    del raw
    program, unsupported = identify(text)
    if program is None:
        if unsupported:
            raise ReadError(
                f"{unsupported} output: this program is not supported (supported: {', '.join(SUPPORTED)})", where
            )
        raise ReadError("not a quantum-chemistry output (no known program banner found)", where)
    from dossier.reading.build import build_record

    try:
        calc = build_record(text, program, source)
    except ReadError:
        raise
    except Exception as exc:  # noqa: BLE001 - one line for the user; --debug shows the chain
        raise ReadError(f"{program} output could not be read ({type(exc).__name__}: {exc})", where) from exc
    if use_cache:
        _cache.store(cache_dir, calc)
    return calc


def find_outputs(folder, *, notes: list[str] | None = None) -> list[Path]:
    """Output files under `folder` (recursive, sorted), following folder links once.

    A folder reached twice (a symlink loop, or two links to one folder) is visited once;
    each skip is described in `notes` when a list is given.
    """
    root = Path(folder)
    found: list[Path] = []
    seen: set[tuple[int, int]] = set()

    def walk(directory: Path) -> None:
        try:
            st = directory.stat()
        except OSError as exc:
            if notes is not None:
                reason = "symbolic link loop" if exc.errno == errno.ELOOP else (exc.strerror or str(exc))
                notes.append(f"{directory}: skipped: {reason}")
            return
        key = (st.st_dev, st.st_ino)
        if key in seen:
            if notes is not None:
                notes.append(f"{directory}: skipped: folder already visited (symbolic link loop or duplicate link)")
            return
        seen.add(key)
        try:
            entries = sorted(os.scandir(directory), key=lambda e: e.name)
        except OSError as exc:
            if notes is not None:
                notes.append(f"{directory}: skipped: {exc.strerror or exc}")
            return
        for entry in entries:
            p = Path(entry.path)
            try:
                is_dir = entry.is_dir(follow_symlinks=True)
            except OSError:
                is_dir = False
            if is_dir:
                walk(p)
            elif entry.name.lower().endswith(OUTPUT_SUFFIXES) and not entry.name.startswith("."):
                found.append(p)

    walk(root)
    return found
