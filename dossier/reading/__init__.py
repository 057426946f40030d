"""The reading layer: output files -> Calculation records (cclib + supplements, cached, parallel).

Public API (the team contract):

- ``read(path, *, use_cache=True, cache_dir=None, max_bytes=None) -> Calculation``; raises
  ReadError (one line naming the file) for empty, binary, unreadable, oversized, non-QC or
  unsupported files and for anything but a regular file (see dossier.reading.files: pipes and
  devices are refused by type; gzip/bzip2/xz and UTF-16 logs are read). A cut-off or failed
  run still gives a record, with ``status.word`` "truncated", "failed" or "not-converged".
  ``path`` may name one job of a multi-job file as ``FILE#jobN``; a multi-job file named
  without it gives its last job, with a problem saying so.
- ``read_jobs(path, ...) -> list[Calculation]``: every job of a file (dossier.reading.jobs).
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
from dossier.reading import files as _files
from dossier.reading.cache import READER_VERSION, default_cache_dir
from dossier.reading.coordfile import adopt_coordinate_file
from dossier.reading.detect import SUPPORTED, identify, not_a_log
from dossier.reading.jobs import job_name, split_jobs, split_name
from dossier.reading.parallel import read_many
from dossier.records import Calculation, Source

__all__ = ["read", "read_jobs", "read_many", "every_job", "find_outputs", "READER_VERSION", "default_cache_dir", "OUTPUT_SUFFIXES"]

#: File name endings `find_outputs` collects from a folder (also compressed: run.log.gz).
OUTPUT_SUFFIXES = tuple(f"{s}{z}" for s in (".out", ".log", ".output") for z in ("", ".gz", ".bz2", ".xz"))


def refusal(text: str) -> str | None:
    """Why a text is refused before any parsing (not a calculation log, an unsupported program, no
    known banner), from its head alone; None when a supported program wrote it."""
    refused = not_a_log(text)
    if refused:
        return refused
    program, unsupported = identify(text)
    if program is not None:
        return None
    if unsupported:
        return f"{unsupported} output: this program is not supported (supported: {', '.join(SUPPORTED)})"
    return "not a quantum-chemistry output (no known program banner found)"


def _parse_jobs(text: str, where: str, source: Source) -> list[Calculation]:
    """Every job of a log's text as its own record (one for a single-job file)."""
    refused = refusal(text)
    if refused:
        raise ReadError(refused, where)
    program, _ = identify(text)
    from dossier.reading.build import build_record

    parts = split_jobs(text, program)
    calcs = []
    for part in parts:
        src = source if len(parts) == 1 else dataclasses.replace(
            source, path=job_name(source.path, part.number), job=part.number, jobs_in_file=len(parts))
        try:
            calcs.append(build_record(part.text, program, src, finished_by_next=part.finished_by_next,
                                      program_head=text[:20000]))
        except ReadError:
            raise
        except Exception as exc:  # noqa: BLE001 - one line for the user; --debug shows the chain
            what = f"{program} output" if len(parts) == 1 else f"{program} job {part.number} of {len(parts)}"
            raise ReadError(f"{what} could not be read ({type(exc).__name__}: {exc})", where) from exc
    return calcs


def read_jobs(path, *, use_cache: bool = True, cache_dir=None, max_bytes: int | None = None) -> list[Calculation]:
    """Every job of one output file as its own record, in file order (one for most files).

    A file holding several jobs (Gaussian --Link1--, ORCA $new_job, runs appended to one file)
    gives records whose ``source.path`` is ``PATH#jobN`` and ``source.job`` N.
    """
    where = str(path)
    if use_cache:
        _cache.check_folder(cache_dir)
    raw = _files.load_bytes(Path(path), where, max_bytes)
    sha, size = hashlib.sha256(raw).hexdigest(), len(raw)
    if use_cache:
        hits = _cache.load_jobs(cache_dir, sha)
        if hits is not None:
            return [adopt_coordinate_file(_with_source(c, where, sha, size)) for c in hits]
    if not raw.strip():
        raise ReadError("empty file" if not raw else "file holds only white space", where)
    content, packed = _files.decompress(raw, where, max_bytes)
    if packed and not content.strip():
        raise ReadError(f"{packed}-compressed file holds nothing (or only white space)", where)
    text, coding = _files.decode(content, where)
    del raw, content
    text = text.replace("\r\n", "\n")  # CRLF (Windows) copies: cclib's ORCA/xtb parsers miss blocks otherwise
    encoding = ", ".join(x for x in (packed, coding) if x) or None
    source = Source(path=where, sha256=sha, size_bytes=size, encoding=encoding)
    calcs = _parse_jobs(text, where, source)
    if use_cache:
        _cache.store(cache_dir, calcs)
    return [adopt_coordinate_file(c) for c in calcs]


def _with_source(calc: Calculation, where: str, sha: str, size: int) -> Calculation:
    """A cached record with the path it is read under now (the cache is keyed by content)."""
    src = calc.source
    path = job_name(where, src.job) if src.jobs_in_file > 1 and src.job else where
    return dataclasses.replace(calc, source=dataclasses.replace(src, path=path, sha256=sha, size_bytes=size))


def pick_job(calcs: list[Calculation], where: str, job: int | None) -> Calculation:
    """The record of job `job` (1-based) of a file, or for None the last job, noting the others."""
    if job is not None:
        if job > len(calcs):
            raise ReadError(f"has no job {job}: the file holds {len(calcs)} job(s)", where)
        calc = calcs[job - 1]
        return dataclasses.replace(calc, source=dataclasses.replace(calc.source, path=job_name(where, job)))
    calc = calcs[-1]
    if len(calcs) == 1:
        return calc
    n = len(calcs)
    calc = dataclasses.replace(calc, source=dataclasses.replace(calc.source, path=where),
                               problems=list(calc.problems))
    calc.problems.insert(0, f"the file holds {n} jobs; this record is the last one (job {n}). "
                            f"Name {Path(where).name}#job1 ... #job{n} to use another")
    return calc


def read(path, *, use_cache: bool = True, cache_dir=None, max_bytes: int | None = None) -> Calculation:
    """Read one output file (or one job of it, ``FILE#jobN``) into a Calculation record."""
    where = str(path)
    file_part, job = split_name(where)
    if job is not None and os.path.lexists(where):
        file_part, job = where, None  # a file really named like that
    calcs = read_jobs(file_part, use_cache=use_cache, cache_dir=cache_dir, max_bytes=max_bytes)
    return pick_job(calcs, file_part, job)


def every_job(paths, results, *, use_cache: bool = True, cache_dir=None) -> list[tuple[Path, Calculation | ReadError]]:
    """(path, record or error) per job: a file named whole that holds several jobs gives one entry
    per job (``FILE#jobN``, read from the cache the first read filled); others pass through."""
    out: list[tuple[Path, Calculation | ReadError]] = []
    for p, r in zip(paths, results):
        if isinstance(r, Calculation) and r.source.jobs_in_file > 1 and split_name(str(p))[1] is None:
            try:
                out += [(Path(c.source.path), c) for c in read_jobs(p, use_cache=use_cache, cache_dir=cache_dir)]
                continue
            except ReadError as exc:
                r = exc
        out.append((Path(p), r))
    return out


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
