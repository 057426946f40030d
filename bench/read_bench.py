"""Benchmark of the reading layer (prints figures; not a timed test).

A corpus of real logs (../shared/fixtures/qc-logs replicated to about 200 files, each copy
made distinct by trailing blank lines so every file has its own SHA-256) is read by
  1. a plain sequential `cclib.io.ccread` loop,
  2. `dossier read --no-cache` (cclib + supplements on a process pool), and
  3. `dossier read` with a warm cache,
each in a fresh Python process, a few repeats; medians, ratios to the plain loop and peak
memory (max RSS of the process and its children) are printed.

    nice -n 15 python bench/read_bench.py [--files 200] [--repeats 3] [--jobs N]
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FIXTURES = ROOT.parent / "shared" / "fixtures" / "qc-logs"


def make_corpus(folder: Path, n_files: int) -> list[Path]:
    logs = sorted(p for p in FIXTURES.rglob("*") if p.suffix in (".out", ".log") and p.is_file())
    out = []
    k = 0
    while len(out) < n_files:
        for src in logs:
            if len(out) >= n_files:
                break
            dst = folder / f"r{k:03d}_{src.parent.name}_{src.name}"
            dst.write_bytes(src.read_bytes() + b"\n" * (k + 1))
            out.append(dst)
        k += 1
    return out


def child(mode: str, folder: str, cache_dir: str, jobs: str) -> None:
    """Run one workload in this process; print elapsed seconds and peak RSS (MiB) as JSON."""
    t0 = time.perf_counter()
    if mode == "plain":
        import logging

        from cclib.io import ccread

        n_fail = 0
        for p in sorted(Path(folder).iterdir()):
            try:
                ccread(str(p), loglevel=logging.CRITICAL)
            except Exception:  # noqa: BLE001 - cclib 1.8.1 raises on every ORCA 6 file
                n_fail += 1
    else:
        from dossier.cli import main

        argv = ["read", folder, "--json", "--cache-dir", cache_dir]
        if jobs:
            argv += ["--jobs", jobs]
        if mode == "cold":
            argv.append("--no-cache")
        with open(os.devnull, "w") as devnull:
            old = sys.stdout
            sys.stdout = devnull
            try:
                main(argv)
            finally:
                sys.stdout = old
    elapsed = time.perf_counter() - t0
    me, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    rss = max(me.ru_maxrss, kids.ru_maxrss)
    cpu = me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime
    print(json.dumps({"seconds": elapsed, "peak_mib": rss / 1024.0, "cpu": cpu}))


def run(mode, folder, cache_dir, jobs):
    t0 = time.perf_counter()
    res = subprocess.run([sys.executable, __file__, "--child", mode, str(folder), str(cache_dir), jobs or ""],
                         capture_output=True, text=True, check=True)
    wall = time.perf_counter() - t0  # includes interpreter start and imports
    figures = json.loads(res.stdout.strip().splitlines()[-1])
    figures["wall"] = wall
    return figures


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=200)
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--jobs", default="")
    ap.add_argument("--child", nargs=4, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(*args.child)
        return
    if not FIXTURES.exists():
        sys.exit(f"fixtures not found at {FIXTURES}")
    tmp = Path(tempfile.mkdtemp(prefix="dossier-read-bench-"))
    try:
        corpus = tmp / "corpus"
        corpus.mkdir()
        files = make_corpus(corpus, args.files)
        size_mb = sum(p.stat().st_size for p in files) / 1e6
        cache_dir = tmp / "cache"
        run("cold", corpus, cache_dir, args.jobs)  # warm the OS file cache; not counted
        subprocess.run([sys.executable, "-m", "dossier", "read", str(corpus), "--cache-dir", str(cache_dir), "--json"],
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)  # fill the record cache
        results = {m: [] for m in ("plain", "cold", "warm")}
        for _ in range(args.repeats):
            for mode in results:
                results[mode].append(run(mode, corpus, cache_dir, args.jobs))
        cores = len(os.sched_getaffinity(0))
        print(f"corpus: {len(files)} files, {size_mb:.1f} MB; cores available: {cores}; repeats: {args.repeats}")
        print(f"load average before the runs: {os.getloadavg()[0]:.1f} (other work on the machine inflates wall times)")
        print(f"{'reader':30s} {'median s':>9s} {'wall s':>7s} {'ratio':>6s} {'CPU s':>6s} {'peak MiB':>9s}")
        base = statistics.median(r["seconds"] for r in results["plain"])
        base_wall = statistics.median(r["wall"] for r in results["plain"])
        names = {"plain": "plain cclib.io.ccread loop", "cold": "dossier read --no-cache", "warm": "dossier read (warm cache)"}
        for mode, runs in results.items():
            med = statistics.median(r["seconds"] for r in runs)
            wall = statistics.median(r["wall"] for r in runs)
            peak = max(r["peak_mib"] for r in runs)
            cpu = statistics.median(r["cpu"] for r in runs)
            print(f"{names[mode]:30s} {med:9.2f} {wall:7.2f} {med / base:6.3f} {cpu:6.2f} {peak:9.0f}")
        print(f"(median s: in-process, imports included; ratio to the plain loop's {base:.2f} s; wall adds interpreter start;")
        print(" CPU s: user+system of the process and its workers)")
        print("targets on 2 cores: cold <= 0.6x, warm <= 0.05x")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
