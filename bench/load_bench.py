"""Load benchmark: build a project of many real output files and report time and peak memory.

    python bench/load_bench.py                 # 500 files (250 states), and 50 for comparison
    python bench/load_bench.py --files 1000 --formats json,csv,xyz,html,pdf --jobs 2

The project is generated in a temporary folder from the real third-party logs in
../shared/fixtures/qc-logs (optimisation + frequency jobs of the same molecule from six
programs). Each copy gets a different number of trailing blank lines, which keeps it a valid
output but gives it its own SHA-256, so the record cache cannot fold copies into one. Each state
names one optimisation and one frequency job of the same program; one pathway and one isomer
family span a few of them.

Each build runs build_dossier in a fresh child process with a cache folder of its own (first
empty: "cold", then again: "warm"). Peak memory is the maximum resident set size of that
process (resource.getrusage RUSAGE_SELF) and of its largest child process, e.g. a reading worker (RUSAGE_CHILDREN);
the stage times are the build's own (BuildResult.timings_s). Not a test: it prints figures.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import textwrap
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FIXTURES = ROOT.parent / "shared" / "fixtures" / "qc-logs"
#: (program, optimisation job, frequency job), all divinylbenzene at B3LYP/STO-3G or GFN2-xTB.
PAIRS = [
    ("gaussian", "Gaussian/basicGaussian16/dvb_gopt.out", "Gaussian/basicGaussian16/dvb_ir.out"),
    ("orca", "ORCA/basicORCA5.0/dvb_gopt.out", "ORCA/basicORCA5.0/dvb_ir.out"),
    ("qchem", "QChem/basicQChem5.4/dvb_gopt.out", "QChem/basicQChem5.4/dvb_ir.out"),
    ("nwchem", "NWChem/basicNWChem7.0/dvb_gopt_ks.out", "NWChem/basicNWChem7.0/dvb_ir.out"),
    ("psi4", "Psi4/basicPsi4-1.7/dvb_gopt_rks.out", "Psi4/basicPsi4-1.7/dvb_ir_rks.out"),
    ("xtb", "XTB/basicXTB6.6.1/dvb_opt/dvb_opt.out", "XTB/basicXTB6.6.1/dvb_ir/dvb_ir.out"),
]


def make_project(folder: Path, n_files: int) -> Path:
    """A manifest over n_files copies (n_files // 2 states, each an optimisation + frequency job)."""
    n_states = max(2, n_files // 2)
    runs = folder / "runs"
    runs.mkdir(parents=True)
    blobs = {rel: (FIXTURES / rel).read_bytes() for _, opt, freq in PAIRS for rel in (opt, freq)}
    lines = ['[project]', 'title = "Load benchmark: replicated real outputs"', "temperatures_k = [298.15]", ""]
    for i in range(n_states):
        tag, opt, freq = PAIRS[i % len(PAIRS)]
        name = f"s{i:04d}_{tag}"
        for kind, rel in (("opt", opt), ("freq", freq)):
            # i + 1 trailing blank lines: a valid file with its own SHA-256
            (runs / f"{name}_{kind}.out").write_bytes(blobs[rel] + b"\n" * (i + 1))
        lines += [f"[states.{name}]", f'geometry = "runs/{name}_opt.out"', f'frequencies = "runs/{name}_freq.out"', ""]
    same = [f"s{i:04d}_{PAIRS[i % len(PAIRS)][0]}" for i in range(0, min(n_states, 4 * len(PAIRS)), len(PAIRS))]
    if len(same) >= 2:  # states of one program: an isomer family and a pathway between two of them
        lines += ["[[isomer_families]]", 'name = "copies"', f"states = {json.dumps(same)}", ""]
        lines += ["[[pathways]]", 'name = "copy_to_copy"', f'reactant = "{same[0]}"', f'product = "{same[1]}"', ""]
    manifest = folder / "dossier.toml"
    manifest.write_text("\n".join(lines))
    return manifest


_CHILD = textwrap.dedent("""
    import json, resource, sys, time
    manifest, out, formats, jobs = sys.argv[1], sys.argv[2], sys.argv[3].split(","), json.loads(sys.argv[4])
    from dossier.report.build import build_dossier
    from dossier.errors import DossierError
    start = time.perf_counter()
    try:
        result = build_dossier(manifest, out, formats=formats, jobs=jobs)
        rc, timings, error = 0, result.timings_s, ""
    except DossierError as exc:
        rc, timings, error = 2, {}, str(exc)
    wall = time.perf_counter() - start
    self_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # Linux: KiB
    workers_kib = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss  # largest child (reading workers)
    print(json.dumps({"rc": rc, "wall_s": wall, "peak_kib": max(self_kib, workers_kib), "self_kib": self_kib,
                      "workers_kib": workers_kib, "timings_s": timings, "stderr": error}))
""")


def run_build(manifest: Path, out: Path, formats: str, jobs: int | None, cache: Path) -> dict:
    """One build in a fresh process (so its peak memory is this build's only), with its own cache."""
    env = {**os.environ, "DOSSIER_CACHE_DIR": str(cache)}
    done = subprocess.run([sys.executable, "-c", _CHILD, str(manifest), str(out), formats, json.dumps(jobs)],
                          capture_output=True, text=True, env=env)
    if done.returncode != 0 or not done.stdout.strip():
        return {"rc": done.returncode or 1, "wall_s": 0.0, "peak_kib": 0, "self_kib": 0, "workers_kib": 0,
                "timings_s": {}, "stderr": done.stderr[-2000:]}
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--files", type=int, default=500, help="output files in the large project (default 500)")
    parser.add_argument("--small", type=int, default=50, help="output files in the comparison project (default 50)")
    parser.add_argument("--formats", default="json,csv,xyz,html", help="build formats (default json,csv,xyz,html)")
    parser.add_argument("--jobs", type=int, default=None, help="parallel readers (default: the build's own)")
    parser.add_argument("--keep", action="store_true", help="keep the generated projects and print where")
    args = parser.parse_args(argv)
    if not FIXTURES.is_dir():
        print(f"load_bench: {FIXTURES} is absent; nothing to replicate", file=sys.stderr)
        return 2
    scratch = Path(tempfile.mkdtemp(prefix="dossier-load-"))
    print(f"load average at start (1/5/15 min): {' '.join(f'{x:.1f}' for x in os.getloadavg())} "
          f"on {os.cpu_count()} CPUs; times are wall-clock and share the machine", flush=True)
    results = {}
    try:
        for n in sorted({args.small, args.files}):
            folder = scratch / f"p{n}"
            manifest = make_project(folder, n)
            n_real = len(list((folder / "runs").iterdir()))
            size_mb = sum(p.stat().st_size for p in (folder / "runs").iterdir()) / 1e6
            for label, cache in (("cold cache", scratch / f"cache{n}"), ("warm cache", scratch / f"cache{n}")):
                res = run_build(manifest, folder / f"out-{label.split()[0]}", args.formats, args.jobs, cache)
                results[(n, label)] = res
                status = "ok" if res["rc"] == 0 else f"FAILED (exit {res['rc']}): {res['stderr'].strip()[-400:]}"
                stages = ", ".join(f"{k} {v:.1f}" for k, v in res["timings_s"].items())
                print(f"{n_real:5d} files ({size_mb:6.1f} MB of logs), {label}: "
                      f"{res['wall_s']:7.1f} s, peak RSS {res['peak_kib'] / 1024:7.1f} MiB "
                      f"(build process {res['self_kib'] / 1024:.0f}, largest child process {res['workers_kib'] / 1024:.0f})"
                      f"  [{status}]" + (f"\n        stages (s): {stages}" if stages else ""), flush=True)
        small, large = (results.get((args.small, "cold cache")), results.get((args.files, "cold cache")))
        if small and large and small["rc"] == 0 and large["rc"] == 0:
            print(f"ratio {args.files}/{args.small} files: time x{large['wall_s'] / small['wall_s']:.1f}, "
                  f"peak memory x{large['peak_kib'] / small['peak_kib']:.2f} (files x{args.files / args.small:.0f})")
        print(f"load average at end: {' '.join(f'{x:.1f}' for x in os.getloadavg())}")
        if args.keep:
            print(f"projects kept in {scratch}")
    finally:
        if not args.keep:
            shutil.rmtree(scratch, ignore_errors=True)
    return 0 if all(r["rc"] == 0 for r in results.values()) else 1


if __name__ == "__main__":
    sys.exit(main())
