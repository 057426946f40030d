"""How long one very large log takes to read, and how much memory (prints figures; not a test).

A ~200 MB Gaussian optimisation log is made in a temporary folder (never in the project) from
a real one (../shared/fixtures/qc-logs, Gaussian 16 dvb_gopt.out): its header, its second
optimisation step repeated until the size is reached, and its last steps and normal
termination. It is read once with `dossier.reading.read(..., use_cache=False)` in a fresh
Python process (plain, and gzip-compressed); wall time and peak memory (max RSS) are printed.

    nice -n 15 python bench/big_log_bench.py [--mb 200]
"""
from __future__ import annotations

import argparse
import gzip
import json
import re
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SOURCE = ROOT.parent / "shared" / "fixtures" / "qc-logs" / "Gaussian" / "basicGaussian16" / "dvb_gopt.out"
MARK = "                          Input orientation:"

CHILD = """
import json, resource, sys, time
t0 = time.perf_counter()
from dossier.reading import read
calc = read(sys.argv[1], use_cache=False)
dt = time.perf_counter() - t0
print(json.dumps({"seconds": dt, "max_rss_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "steps": len(calc.optimization_energies_hartree), "status": calc.status.word,
                  "encoding": calc.source.encoding}))
"""


def make_log(target: Path, megabytes: float) -> int:
    text = SOURCE.read_text()
    starts = [m.start() for m in re.finditer(re.escape(MARK), text)]
    head, step, tail = text[: starts[1]], text[starts[1]: starts[2]], text[starts[2]:]
    n = max(1, int((megabytes * 1e6 - len(head) - len(tail)) / len(step)))
    with open(target, "w") as fh:
        fh.write(head)
        for _ in range(n):
            fh.write(step)
        fh.write(tail)
    return n


def measure(path: Path) -> dict:
    done = subprocess.run([sys.executable, "-c", CHILD, str(path)], capture_output=True, text=True, cwd=ROOT)
    if done.returncode != 0:
        raise SystemExit(done.stderr)
    return json.loads(done.stdout)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--mb", type=float, default=200.0)
    args = ap.parse_args()
    scratch = Path(tempfile.mkdtemp(prefix="dossier-big-log-"))
    try:
        log = scratch / "big_opt.log"
        n = make_log(log, args.mb)
        packed = scratch / "big_opt.log.gz"
        with open(log, "rb") as src, gzip.open(packed, "wb", compresslevel=6) as dst:
            shutil.copyfileobj(src, dst)
        print(f"log: {log.stat().st_size / 1e6:.1f} MB ({n} repeated optimisation steps); "
              f"gzip: {packed.stat().st_size / 1e6:.1f} MB")
        for p in (log, packed):
            t0 = time.perf_counter()
            r = measure(p)
            print(f"{p.name}: read in {r['seconds']:.1f} s (process {time.perf_counter() - t0:.1f} s), "
                  f"peak memory {r['max_rss_mb']:.0f} MB, {r['steps']} optimisation energies, "
                  f"status {r['status']}, encoding {r['encoding']}")
    finally:
        shutil.rmtree(scratch, ignore_errors=True)


if __name__ == "__main__":
    main()
