"""Read many files at once on a process pool (or any concurrent.futures executor).

Cache hits are served in the calling process (hashing a file is much cheaper than parsing
it); the rest go to the workers with at most `2 * workers` files in flight, so memory stays
bounded by the files being read, not by the size of the project.
"""
from __future__ import annotations

import os
from pathlib import Path
from concurrent.futures import FIRST_COMPLETED, Executor, ProcessPoolExecutor, wait

from dossier.errors import ReadError


def _read_one(path, use_cache, cache_dir):
    """Worker entry point: returns ("ok", record) or ("error", reason, where) (picklable)."""
    from dossier.reading import read

    try:
        return ("ok", read(path, use_cache=use_cache, cache_dir=cache_dir))
    except ReadError as exc:
        return ("error", exc.reason, exc.where)


def _cached_only(path, cache_dir):
    """The cached record when the file's content is already cached, else None (no parsing).

    The bytes are got the safe way (regular files only, size cap): a pipe named by a manifest
    must not hang the cache look-up either. Any problem means "not cached": the full read
    then reports it.
    """
    import hashlib

    from dossier.reading import _with_source, cache, files, pick_job
    from dossier.reading.coordfile import adopt_coordinate_file
    from dossier.reading.jobs import split_name

    where = str(path)
    file_part, job = split_name(where)
    if job is not None and os.path.lexists(where):
        file_part, job = where, None
    try:
        raw = files.load_bytes(Path(file_part), file_part)
        sha = hashlib.sha256(raw).hexdigest()
        hits = cache.load_jobs(cache_dir, sha)
        if hits is None:
            return _refused_by_head(raw, file_part)
        return adopt_coordinate_file(pick_job([_with_source(c, file_part, sha, len(raw)) for c in hits], file_part, job))
    except (ReadError, OSError):
        return None


def _refused_by_head(raw: bytes, where: str) -> ReadError | None:
    """A plain-text file refused from its head alone (dossier.reading.refusal), without parsing: the
    refusal is then known here and no worker (nor cclib) is started for it. Compressed files and
    anything else go to the full read."""
    from dossier.reading import files, refusal
    from dossier.reading.detect import HEAD_CHARS

    if files.is_compressed(raw):
        return None
    try:
        text, _ = files.decode(raw[: 4 * HEAD_CHARS], where)
    except ReadError:
        return None
    reason = refusal(text[:HEAD_CHARS])
    return ReadError(reason, where) if reason else None


def default_jobs() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def read_many(paths, *, jobs=None, executor: Executor | None = None, use_cache=True, cache_dir=None, progress=None):
    """Read every path; list of Calculation or ReadError, in input order (errors returned)."""
    from dossier.reading import read

    from dossier.reading import cache

    if use_cache:
        cache.check_folder(cache_dir)  # refused once here, before any worker starts
    paths = list(paths)
    total = len(paths)
    results: list = [None] * total
    done = 0

    def tick():
        if progress is not None:
            progress(done, total)

    todo = []
    for i, p in enumerate(paths):
        hit = _cached_only(p, cache_dir) if use_cache else None
        if hit is not None:
            results[i] = hit
            done += 1
        else:
            todo.append(i)
    if done:
        tick()

    n_jobs = jobs if jobs is not None else default_jobs()
    if executor is None and (n_jobs <= 1 or len(todo) <= 1):
        for i in todo:
            try:
                results[i] = read(paths[i], use_cache=use_cache, cache_dir=cache_dir)
            except ReadError as exc:
                results[i] = exc
            done += 1
            tick()
        return results

    own = executor is None
    if own:
        # load cclib and the supplements once here: forked workers then start ready to parse
        import dossier.reading.build  # noqa: F401
    pool = executor or ProcessPoolExecutor(max_workers=min(n_jobs, len(todo)))
    workers = getattr(pool, "_max_workers", n_jobs) or n_jobs
    window = max(2, 2 * workers)
    try:
        pending = {}
        queue = iter(todo)
        for i in queue:
            pending[pool.submit(_read_one, paths[i], use_cache, cache_dir)] = i
            if len(pending) >= window:
                break
        while pending:
            finished, _ = wait(pending, return_when=FIRST_COMPLETED)
            for fut in finished:
                i = pending.pop(fut)
                try:
                    out = fut.result()
                except Exception as exc:  # noqa: BLE001 - a crashed worker is that file's error
                    results[i] = ReadError(f"could not be read (worker failed: {type(exc).__name__}: {exc})", str(paths[i]))
                else:
                    results[i] = out[1] if out[0] == "ok" else ReadError(out[1], out[2])
                done += 1
                tick()
                nxt = next(queue, None)
                if nxt is not None:
                    pending[pool.submit(_read_one, paths[nxt], use_cache, cache_dir)] = nxt
    finally:
        if own:
            pool.shutdown(wait=True, cancel_futures=True)
    return results
