"""`dossier init` benchmark on a folder of many real outputs (the demo studies' files, replicated).

    python bench/init_bench.py                 # 300 files
    python bench/init_bench.py --files 600 --jobs 2

The folder is generated in a temporary directory from example_outputs/ (every *.out of the
intramolecular demo and of the stacked-dimer demo, when present), copied round-robin into
numbered sub-folders until --files outputs exist. Each copy gets a different number of trailing
blank lines: still a valid output, but its own SHA-256, so the record cache cannot fold copies
into one. `dossier init` runs twice in a fresh child process with a cache folder of its own
(first empty: "cold", then again: "warm"); the figure that matters is the warm time (target:
under 10 s for 300 files). Not a test: it prints figures.
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "example_outputs"


def sources(demo: Path) -> list[Path]:
    out = sorted(p for p in demo.rglob("*.out") if "flawed" not in p.parts)
    if not out:
        sys.exit(f"no demo outputs under {demo}")
    return out


def make_folder(folder: Path, n_files: int, demo: Path) -> int:
    src = sources(demo)
    for i in range(n_files):
        s = src[i % len(src)]
        copy = i // len(src)
        dest = folder / f"copy{copy:03d}" / s.relative_to(demo)
        dest.parent.mkdir(parents=True, exist_ok=True)
        dest.write_bytes(s.read_bytes() + b"\n" * (copy + 1))
    return len(src)


def run_init(folder: Path, cache: Path, jobs: int | None) -> float:
    env = dict(os.environ, DOSSIER_CACHE_DIR=str(cache), XDG_CACHE_HOME=str(cache))
    cmd = [sys.executable, "-m", "dossier", "init", str(folder), "--force"] + (["--jobs", str(jobs)] if jobs else [])
    t0 = time.perf_counter()
    done = subprocess.run(cmd, env=env, capture_output=True, text=True)
    elapsed = time.perf_counter() - t0
    if done.returncode != 0:
        sys.exit(f"init failed: {done.stderr.strip()}")
    return elapsed


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=300)
    ap.add_argument("--jobs", type=int, default=None)
    ap.add_argument("--source", type=Path, default=DEMO, help="folder of outputs to replicate (default: example_outputs)")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory(prefix="init-bench-") as tmp:
        folder, cache = Path(tmp) / "study", Path(tmp) / "cache"
        n_src = make_folder(folder, args.files, args.source)
        cold = run_init(folder, cache, args.jobs)
        warm = run_init(folder, cache, args.jobs)
        text = (folder / "dossier.toml").read_text()
        print(f"init on {args.files} files ({n_src} distinct demo outputs, replicated): cold {cold:.1f} s, "
              f"warm {warm:.1f} s (target: warm < 10 s)")
        print(f"draft: {text.count(chr(10) + '[states.')} states, {text.count('[[transfers]]')} transfers, "
              f"{text.count('[[transfers.couplings]]')} coupling points")


if __name__ == "__main__":
    main()
