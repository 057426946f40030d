"""Benchmark of `dossier build`: cold and warm builds, time per stage and peak memory.

    python bench/build_bench.py [--replicas N] [--formats LIST] [--keep DIR]

Projects: the demo study (example_outputs/dossier.toml; when it is absent or does not build,
the shared third-party fixture project used by the tests) and a larger project made by
replicating every state, pathway and isomer family of it N times (copies of the same files
under other names, so the reader parses N times more files when the cache is off).

"cold" builds with the reader's cache off (every file parsed); "warm" builds again with a
cache filled by a previous build (what a rebuild after a manifest edit costs). Each build runs
in its own process so its peak resident memory (ru_maxrss, children included) is its own.
"""
from __future__ import annotations

import argparse
import json
import os
import re
import resource
import shutil
import subprocess
import sys
import tempfile
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "example_outputs" / "dossier.toml"
STAGES = ("read", "analysis", "figures", "html", "pdf")


# -- a minimal TOML writer for manifests: top-level tables, everything below as inline values ----

def _key(k: str) -> str:
    return k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else json.dumps(k)


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_key(k)} = {_toml_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(type(v))


def _toml(data: dict) -> str:
    out = []
    for k, v in data.items():
        if isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for item in v:
                out += [f"\n[[{_key(k)}]]"] + [f"{_key(kk)} = {_toml_value(vv)}" for kk, vv in item.items()]
        elif isinstance(v, dict):
            out += [f"\n[{_key(k)}]"] + [f"{_key(kk)} = {_toml_value(vv)}" for kk, vv in v.items()]
    return "\n".join(out).lstrip() + "\n"


def replicate(manifest: Path, folder: Path, n: int) -> Path:
    """A project with every state, pathway and isomer family of ``manifest`` n times."""
    raw = tomllib.loads(manifest.read_text(encoding="utf-8"))
    base = manifest.parent
    folder.mkdir(parents=True, exist_ok=True)
    copied: dict[tuple[int, str], str] = {}

    def copy(k: int, rel: str) -> str:
        if (k, rel) not in copied:
            src = Path(rel) if Path(rel).is_absolute() else base / rel
            dst = folder / f"r{k}" / f"{len(copied):03d}_{src.name}"  # numbered: sources may share a file name
            dst.parent.mkdir(parents=True, exist_ok=True)
            if not dst.exists():
                shutil.copyfile(src, dst)
            copied[(k, rel)] = str(dst.relative_to(folder))
        return copied[(k, rel)]

    out = {key: raw[key] for key in ("project", "sites", "recipes", "uncertainty") if key in raw}
    out["states"], out["pathways"], out["isomer_families"] = {}, [], []
    for k in range(n):
        for name, st in raw.get("states", {}).items():
            new = dict(st)
            for part in ("geometry", "frequencies", "excited_states"):
                if part in st:
                    new[part] = copy(k, st[part])
            if "single_points" in st:
                new["single_points"] = {lvl: copy(k, p) for lvl, p in st["single_points"].items()}
            out["states"][f"{name}_r{k}"] = new
        for pw in raw.get("pathways", []):
            new = dict(pw, name=f"{pw['name']}_r{k}")
            for role in ("reactant", "transition_state", "product"):
                if role in pw:
                    new[role] = f"{pw[role]}_r{k}"
            if "four_point" in pw:
                new["four_point"] = {key: (copy(k, v) if key != "note" else v) for key, v in pw["four_point"].items()}
            out["pathways"].append(new)
        for fam in raw.get("isomer_families", []):
            out["isomer_families"].append(dict(fam, name=f"{fam['name']} r{k}", states=[f"{s}_r{k}" for s in fam["states"]]))
    if "experiment" in raw:
        exp = {}
        for table, rows in raw["experiment"].items():
            exp[table] = [dict(r, pathway=f"{r['pathway']}_r{k}") if "pathway" in r else r for k in range(n) for r in rows]
        out["experiment"] = exp
    for key in ("pathways", "isomer_families"):
        if not out[key]:
            del out[key]
    path = folder / "dossier.toml"
    path.write_text(_toml(out), encoding="utf-8")
    tomllib.loads(path.read_text(encoding="utf-8"))  # the writer's output must parse
    return path


def fixture_project(folder: Path) -> Path:
    sys.path.insert(0, str(ROOT / "tests"))
    from render_fixtures import write_fixture_manifest

    return write_fixture_manifest(folder, title="Benchmark project (third-party fixture outputs)")


# -- one build in its own process ---------------------------------------------------------------

def one_build(manifest: str, out: str, formats: str, use_cache: bool) -> dict:
    from dossier.report.build import build_dossier

    t0 = time.perf_counter()
    result = build_dossier(manifest, out, formats=formats.split(","), use_cache=use_cache)
    total = time.perf_counter() - t0
    peak_kib = max(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)
    return {"timings_s": result.timings_s, "total_s": total, "peak_mib": peak_kib / 1024.0,
            "n_sources": len(result.data.get("sources", [])), "n_states": len(result.data.get("states", [])),
            "pdf_bytes": os.path.getsize(result.files["dossier.pdf"]) if "dossier.pdf" in result.files else None}


def run_child(manifest: Path, out: Path, formats: str, cache: Path, use_cache: bool) -> dict:
    env = {**os.environ, "DOSSIER_CACHE_DIR": str(cache)}
    cmd = [sys.executable, __file__, "--child", str(manifest), str(out), formats, "1" if use_cache else "0"]
    done = subprocess.run(cmd, capture_output=True, text=True, env=env)
    if done.returncode != 0:
        raise SystemExit(f"build of {manifest} failed:\n{done.stderr[-3000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--replicas", type=int, default=4, help="copies of the demo in the larger project (default 4)")
    ap.add_argument("--formats", default="html,pdf,json,csv,xyz,tex,bib")
    ap.add_argument("--keep", default=None, metavar="DIR", help="build in DIR and keep the outputs")
    ap.add_argument("--child", nargs=4, help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.child:
        manifest, out, formats, cache = args.child
        print(json.dumps(one_build(manifest, out, formats, cache == "1")))
        return 0

    work = Path(args.keep) if args.keep else Path(tempfile.mkdtemp(prefix="dossier-bench-"))
    work.mkdir(parents=True, exist_ok=True)
    demo = DEMO
    label = "demo"
    if demo.exists():
        probe = subprocess.run([sys.executable, "-m", "dossier", "check", str(demo)], capture_output=True, text=True, cwd=ROOT)
        if probe.returncode == 2:
            print(f"demo study does not load ({probe.stderr.strip().splitlines()[-1] if probe.stderr.strip() else '?'}); "
                  "using the fixture project", file=sys.stderr)
            demo = None
    else:
        demo = None
    if demo is None:
        demo, label = fixture_project(work / "fixture-project"), "fixture"
    big = replicate(demo, work / "replicated", args.replicas)
    rows = []
    try:
        for name, manifest in ((label, demo), (f"{label} x{args.replicas}", big)):
            cache = work / f"cache-{name.replace(' ', '')}"
            shutil.rmtree(cache, ignore_errors=True)
            cold = run_child(manifest, work / f"out-{name.replace(' ', '')}", args.formats, cache, use_cache=False)
            run_child(manifest, work / f"out-{name.replace(' ', '')}", "json", cache, use_cache=True)  # fill the cache
            warm = run_child(manifest, work / f"out-{name.replace(' ', '')}", args.formats, cache, use_cache=True)
            rows += [(name, "cold", cold), (name, "warm", warm)]
    finally:
        if not args.keep:
            shutil.rmtree(work, ignore_errors=True)

    print(f"dossier build benchmark ({os.cpu_count()} CPUs visible, formats {args.formats})")
    head = f"{'project':<16} {'run':<5} {'files':>5} {'states':>6} " + " ".join(f"{s + '/s':>10}" for s in STAGES) + f" {'total/s':>8} {'peak/MiB':>9}"
    print(head)
    print("-" * len(head))
    for name, kind, r in rows:
        t = r["timings_s"]
        cells = " ".join(f"{t[s]:>10.2f}" if s in t else f"{'-':>10}" for s in STAGES)
        print(f"{name:<16} {kind:<5} {r['n_sources']:>5} {r['n_states']:>6} {cells} {r['total_s']:>8.2f} {r['peak_mib']:>9.0f}")
    print("cold: reader cache off (every file parsed); warm: cache filled by a previous build.")
    return 0


if __name__ == "__main__":
    sys.exit(main())
