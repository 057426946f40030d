"""Reliability across the tool: broken output files, broken manifests, a fuzzed manifest loader,
and an interrupted build.

Every broken input is generated here, in a temporary folder, from real third-party output files
(cclib's open test data in ../shared/fixtures/qc-logs). Each must end in a clear one-line error
(`dossier: <file>...` on stderr, no traceback) or in a record / check finding; it must never be
modified, and nothing half-written may be left behind.
"""
from __future__ import annotations

import hashlib
import json
import os
import random
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from conftest import fixture_path
from dossier.errors import DossierError, ManifestError, ReadError

SEED = 20261201
#: Real logs of different programs the broken variants are made from.
SOURCES = {
    "nwchem": "NWChem/basicNWChem7.0/dvb_gopt_ks.out",
    "gaussian": "Gaussian/basicGaussian16/dvb_gopt.out",
    "orca": "ORCA/basicORCA5.0/dvb_sp_un.out",
    "xtb": "XTB/basicXTB6.6.1/dvb_ir/dvb_ir.out",
}


def _cli(*args: str, cwd: Path | None = None, env: dict | None = None, timeout: float = 600):
    return subprocess.run([sys.executable, "-m", "dossier", *args], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=timeout)


def _sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _tree(folder: Path) -> dict[str, str]:
    """Every file under folder (relative name -> SHA-256): inputs unchanged, nothing added."""
    return {str(p.relative_to(folder)): _sha(p) for p in sorted(folder.rglob("*")) if p.is_file()}


# -- broken output files --------------------------------------------------------------

def _variants(folder: Path) -> dict[str, tuple[Path, str]]:
    """name -> (file, kind). Generated from the real logs with a fixed seed."""
    rng = random.Random(SEED)
    out: dict[str, tuple[Path, str]] = {}

    def put(name: str, data: bytes, kind: str) -> None:
        path = folder / name
        path.write_bytes(data)
        out[name] = (path, kind)

    for tag, rel in SOURCES.items():
        raw = fixture_path(rel).read_bytes()
        for i in range(3):  # cut at seeded random offsets between 5 % and 95 % of the file
            put(f"{tag}_cut{i}.out", raw[: rng.randint(len(raw) // 20, len(raw) * 19 // 20)], "cut")
        flipped = bytearray(raw)
        for _ in range(40):
            flipped[rng.randrange(len(flipped))] ^= 1 << rng.randrange(8)
        put(f"{tag}_flipped.out", bytes(flipped), "flipped")
        lines = raw.split(b"\n")
        for _ in range(30):  # latin-1 / stray bytes that are not UTF-8
            j = rng.randrange(len(lines))
            lines[j] = lines[j] + bytes([rng.choice([0xE9, 0xFF, 0xC3, 0x80, 0xFE])])
        put(f"{tag}_latin1.out", b"\n".join(lines), "non-utf8")
        put(f"{tag}_crlf.out", raw.replace(b"\r\n", b"\n").replace(b"\n", b"\r\n"), "crlf")
        put(f"{tag}_oneline.out", raw.replace(b"\n", b" "), "one-line")
    raw = fixture_path(SOURCES["nwchem"]).read_bytes()
    head, tail = raw[: len(raw) // 3], raw[len(raw) // 3:]
    put("nwchem_hugeline.out", head + b"9" * (8 * 1024 * 1024) + tail, "huge-line")
    put("empty.out", b"", "empty")
    put("blank.out", b"\n \n\t\n", "empty")
    put("random.out", rng.randbytes(200_000), "binary")
    put("nul.log", raw[:5000] + b"\x00" * 4096 + raw[5000:20000], "binary")
    put("gzipped.out", __import__("gzip").compress(raw, mtime=0), "compressed")  # read as the plain log (issue 16)
    # files of other kinds renamed to an output's name: inputs of the runs, a licence, a README
    for name, rel in (("nwchem_input.out", "NWChem/basicNWChem7.0/dvb_gopt_ks.in"),
                      ("gaussian_input.log", "Gaussian/basicGaussian16/water_ccsdt.com"),
                      ("orca_input.out", "ORCA/basicORCA5.0/water_ccsd_t.inp"),
                      ("licence.out", "LICENSE-cclib-data"), ("readme.log", "README.md")):
        put(name, fixture_path(rel).read_bytes(), "other")
    return out


@pytest.fixture(scope="module")
def broken(tmp_path_factory):
    pytest.importorskip("dossier.reading", reason="dossier.reading not present yet")
    folder = tmp_path_factory.mktemp("broken")
    variants = _variants(folder)
    return folder, variants, _tree(folder)


def test_every_broken_file_gives_a_record_or_a_read_error(broken):
    from dossier.reading import read

    folder, variants, before = broken
    crashes = []
    for name, (path, kind) in variants.items():
        try:
            rec = read(path, use_cache=False)
        except ReadError as exc:
            text = str(exc)
            assert "\n" not in text and str(path) in text, (name, text)
            assert kind not in ("crlf",), f"{name}: a CRLF copy of a readable log must read: {text}"
        except Exception as exc:  # noqa: BLE001 - this is the crash the test looks for
            crashes.append(f"{name}: {type(exc).__name__}: {exc}")
        else:
            if kind == "cut":
                # a file cut before its end has no normal termination: never "ok" (common practice, no source)
                assert rec.status.word != "ok", f"{name} cut short but read as ok"
            if kind in ("empty", "binary"):
                pytest.fail(f"{name} ({kind}) gave a record instead of a ReadError")
    assert not crashes, crashes
    assert _tree(folder) == before  # inputs unchanged, nothing written beside them


def test_crlf_copies_read_like_the_originals(broken):
    from dossier.reading import read

    folder, variants, _ = broken
    for tag, rel in SOURCES.items():
        original = read(fixture_path(rel), use_cache=False)
        crlf = read(variants[f"{tag}_crlf.out"][0], use_cache=False)
        assert crlf.program == original.program, tag
        assert crlf.n_atoms == original.n_atoms, tag
        assert crlf.status.word == original.status.word, tag
        assert crlf.energy_hartree == pytest.approx(original.energy_hartree, abs=1e-9), tag


def test_cli_read_of_every_broken_file_is_one_line_each_and_no_traceback(broken, tmp_path):
    folder, variants, before = broken
    env = {**os.environ, "DOSSIER_CACHE_DIR": str(tmp_path / "cache")}
    done = _cli("read", "--json", "--jobs", "1", *[str(p) for p, _ in variants.values()], env=env)
    assert "Traceback" not in done.stderr, done.stderr[-3000:]
    assert done.returncode in (0, 1), done.stderr
    records = json.loads(done.stdout) if done.stdout.strip() else []
    read_ok = {Path(r["path"]).name for r in records}
    lines = [ln for ln in done.stderr.splitlines() if ln.strip()]
    assert all(ln.startswith("dossier: ") for ln in lines), lines
    failed = set()
    for ln in lines:
        named = [n for n in variants if str(variants[n][0]) in ln]
        assert len(named) == 1, ln  # each line names exactly one file
        failed.add(named[0])
    assert read_ok | failed == set(variants)  # every file accounted for, once
    assert not (read_ok & failed)
    assert {"empty.out", "blank.out", "random.out", "licence.out", "readme.log"} <= failed
    assert "gzipped.out" in read_ok
    assert _tree(folder) == before
    cache = tmp_path / "cache"
    if cache.exists():  # the cache holds whole entries only, no temporary names
        assert all(p.suffix == ".json" and not p.name.startswith(".") for p in cache.rglob("*") if p.is_file())


@pytest.mark.parametrize("name", ["empty.out", "random.out", "licence.out", "nwchem_input.out"])
def test_cli_read_of_one_unreadable_file_is_exactly_one_line(broken, name):
    folder, variants, before = broken
    path = variants[name][0]
    done = _cli("read", "--no-cache", str(path))
    assert done.returncode == 1
    assert done.stderr.count("\n") == 1 and done.stderr.startswith("dossier: ") and str(path) in done.stderr
    assert "Traceback" not in done.stderr
    assert _sha(path) == before[name]


@pytest.mark.slow
def test_every_broken_file_in_a_project_is_a_manifest_error_or_a_finding(broken, tmp_path):
    """Each broken variant named as a state's geometry and frequency job: load_project gives a one-line
    ManifestError naming the manifest line, or a Project whose checks report the file."""
    pytest.importorskip("dossier.project.checks", reason="dossier.project.checks not present yet")
    from dossier.project.checks import run_checks
    from dossier.project import load_project

    folder, variants, before = broken
    good = fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out")
    good_freq = fixture_path("NWChem/basicNWChem7.0/dvb_ir.out")
    crashes, silent = [], []
    for name, (path, kind) in sorted(variants.items()):
        manifest = tmp_path / f"{name}.toml"
        manifest.write_text(
            f'[states.good]\ngeometry = "{good}"\nfrequencies = "{good_freq}"\n\n'
            f'[states.broken]\ngeometry = "{path}"\nfrequencies = "{path}"\n\n'
            '[[pathways]]\nname = "p"\nreactant = "good"\nproduct = "broken"\n')
        try:
            project = load_project(manifest, jobs=1, use_cache=False)
            findings = run_checks(project)
        except ManifestError as exc:
            assert "\n" not in str(exc) and str(exc).startswith(f"{manifest}:"), str(exc)
            continue
        except Exception as exc:  # noqa: BLE001 - the crash this test looks for
            crashes.append(f"{name}: {type(exc).__name__}: {exc}")
            continue
        for f in findings:
            assert f.severity in ("error", "warning", "info") and "\n" not in f.message, f
        if kind == "cut" and not any(f.severity == "error" and f.state == "broken" for f in findings):
            silent.append(name)
    assert not crashes, crashes
    assert not silent, f"cut-off files passed the checks without an error: {silent}"
    assert _tree(folder) == before


#: Broken variants that still give a record, for the build test (one per kind and program).
BUILD_VARIANTS = ["nwchem_cut0.out", "orca_latin1.out", "gaussian_crlf.out", "nwchem_hugeline.out"]


@pytest.mark.slow
@pytest.mark.parametrize("layout", ["pathway", "family"])
def test_build_of_a_project_with_a_broken_file_is_a_dossier_or_a_one_line_error(broken, tmp_path, layout):
    """A broken file as the transition state of a pathway (with sites) or as a member of an isomer
    family: the build writes a dossier (the checks report the file) or fails with a DossierError
    that names the manifest or the file, and leaves no output folder behind."""
    pytest.importorskip("dossier.report.build", reason="dossier.report.build not present yet")
    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    from dossier.report.build import build_dossier

    folder, variants, before = broken
    good = fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out")
    good_freq = fixture_path("NWChem/basicNWChem7.0/dvb_ir.out")
    other = fixture_path("Gaussian/basicGaussian16/dvb_gopt.out")
    other_freq = fixture_path("Gaussian/basicGaussian16/dvb_ir.out")
    tail = ('[[pathways]]\nname = "p"\nreactant = "good"\ntransition_state = "broken"\nproduct = "other"\n'
            'donor_site = "x"\nacceptor_site = "y"\n' if layout == "pathway"
            else '[[isomer_families]]\nname = "f"\nstates = ["good", "other", "broken"]\n')
    problems = []
    for name in BUILD_VARIANTS:
        path = variants[name][0]
        manifest = tmp_path / f"{name}.toml"
        manifest.write_text(
            '[sites]\nx = [1, 2]\ny = [3, 4]\n\n'
            f'[states.good]\ngeometry = "{good}"\nfrequencies = "{good_freq}"\n\n'
            f'[states.other]\ngeometry = "{other}"\nfrequencies = "{other_freq}"\n\n'
            f'[states.broken]\ngeometry = "{path}"\nfrequencies = "{path}"\n\n' + tail)
        out = tmp_path / f"out-{name}"
        try:
            result = build_dossier(manifest, out, formats=("json", "csv", "xyz", "tex", "bib"), jobs=1,
                                   use_cache=False)
        except DossierError as exc:
            if "\n" in str(exc) or (str(manifest) not in str(exc) and str(path) not in str(exc)):
                problems.append(f"{name}: error names neither the manifest nor the file: {exc}")
            if out.exists():
                problems.append(f"{name}: failed build left {out}")
        except Exception as exc:  # noqa: BLE001 - the crash this test looks for
            problems.append(f"{name}: {type(exc).__name__}: {exc}")
        else:
            assert (result.out_dir / "dossier.json").is_file()
    assert not problems, problems
    assert _tree(folder) == before


def test_read_of_missing_folder_and_link_loop_is_one_line(tmp_path):
    pytest.importorskip("dossier.reading", reason="dossier.reading not present yet")
    loop = tmp_path / "loop.out"
    loop.symlink_to(loop)
    for target in (tmp_path / "nothing.out", tmp_path, loop):
        done = _cli("read", "--no-cache", str(target))
        assert done.returncode in (1, 2), target
        assert "Traceback" not in done.stderr
        lines = done.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("dossier: ") and str(target) in lines[0], done.stderr


# -- broken manifests ----------------------------------------------------------------

GOOD = """\
[project]
title = "robustness"
temperatures_k = [298.15]

[sites]
ring_a = [1, 2, 3]
ring_b = [4, 5, 6]

[states.a]
geometry = "runs/opt.out"
frequencies = "runs/freq.out"

[states.b]
geometry = "runs/opt.out"
frequencies = "runs/freq.out"

[recipes.dft]
electronic = "geometry"
thermal = "frequencies"

[[pathways]]
name = "a_to_b"
reactant = "a"
product = "b"
donor_site = "ring_a"
acceptor_site = "ring_b"
recipe = "dft"
"""

#: name -> (replace this text of GOOD, with this) ; "" old means the whole document
BROKEN_MANIFESTS = {
    "toml-unclosed-table": ("[states.b]", "[states.b"),
    "toml-unclosed-string": ('title = "robustness"', 'title = "robustness'),
    "toml-duplicate-key": ('name = "a_to_b"', 'name = "a_to_b"\nname = "again"'),
    "toml-bare-words": ("[sites]", "this is not toml\n[sites]"),
    "unknown-key": ("frequencies = \"runs/freq.out\"\n\n[states.b]", "frequences = \"runs/freq.out\"\n\n[states.b]"),
    "unknown-top-table": ("[sites]", "[sights]\nx = 1\n\n[sites]"),
    "unknown-state": ('product = "b"', 'product = "c"'),
    "reactant-is-product": ('product = "b"', 'product = "a"'),
    "unknown-site": ('acceptor_site = "ring_b"', 'acceptor_site = "ring_c"'),
    "unknown-recipe": ('recipe = "dft"\n', 'recipe = "ccsd"\n'),
    "recipe-self-cycle": ('electronic = "geometry"\nthermal = "frequencies"', 'based_on = "dft"'),
    "recipe-cycle": ('[recipes.dft]\nelectronic = "geometry"\nthermal = "frequencies"',
                     '[recipes.dft]\nbased_on = "hi"\n\n[recipes.hi]\nbased_on = "dft"'),
    "type-temperatures": ("temperatures_k = [298.15]", 'temperatures_k = "warm"'),
    "type-geometry": ('geometry = "runs/opt.out"\nfrequencies = "runs/freq.out"\n\n[states.b]',
                      'geometry = 5\nfrequencies = "runs/freq.out"\n\n[states.b]'),
    "type-site": ("ring_a = [1, 2, 3]", 'ring_a = [1, "two", 3]'),
    "type-states": ("[states.a]", "[states.a.geometry]\nx = 1\n[states.z]"),
    "type-pathways": ("", "pathways = 3\n" + GOOD.split("[[pathways]]")[0]),
    "negative-temperature": ("temperatures_k = [298.15]", "temperatures_k = [-5.0]"),
    "atom-zero": ("ring_a = [1, 2, 3]", "ring_a = [0, 1]"),
    "atom-beyond": ("ring_b = [4, 5, 6]", "ring_b = [4, 5, 600]"),
    "missing-file": ('geometry = "runs/opt.out"\nfrequencies = "runs/freq.out"\n\n[states.b]',
                     'geometry = "runs/gone.out"\nfrequencies = "runs/freq.out"\n\n[states.b]'),
    "folder-as-file": ('frequencies = "runs/freq.out"\n\n[states.b]', 'frequencies = "runs"\n\n[states.b]'),
    "no-states": ("", '[project]\ntitle = "empty"\n'),
    "empty-document": ("", ""),
    "unreadable-output": ('frequencies = "runs/freq.out"\n\n[states.b]', 'frequencies = "runs/empty.out"\n\n[states.b]'),
    "binary-output": ('geometry = "runs/opt.out"\nfrequencies = "runs/freq.out"\n\n[states.b]',
                      'geometry = "runs/noise.out"\nfrequencies = "runs/freq.out"\n\n[states.b]'),
    "input-as-output": ('geometry = "runs/opt.out"\nfrequencies = "runs/freq.out"\n\n[states.b]',
                        'geometry = "runs/opt.in"\nfrequencies = "runs/freq.out"\n\n[states.b]'),
    "cut-output": ('geometry = "runs/opt.out"\nfrequencies = "runs/freq.out"\n\n[states.b]',
                   'geometry = "runs/cut.out"\nfrequencies = "runs/freq.out"\n\n[states.b]'),
}


def _manifest_project(root: Path, text: str) -> Path:
    runs = root / "runs"
    runs.mkdir(parents=True)
    shutil.copyfile(fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out"), runs / "opt.out")
    shutil.copyfile(fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.in"), runs / "opt.in")
    shutil.copyfile(fixture_path("NWChem/basicNWChem7.0/dvb_ir.out"), runs / "freq.out")
    raw = (runs / "opt.out").read_bytes()
    (runs / "cut.out").write_bytes(raw[: len(raw) // 2])
    (runs / "empty.out").write_bytes(b"")
    (runs / "noise.out").write_bytes(random.Random(SEED).randbytes(50_000))
    manifest = root / "dossier.toml"
    manifest.write_text(text)
    return manifest


def _broken_text(name: str) -> str:
    old, new = BROKEN_MANIFESTS[name]
    if old == "":
        return new
    assert old in GOOD, name
    return GOOD.replace(old, new, 1)


def test_the_good_manifest_loads(tmp_path):
    pytest.importorskip("dossier.project", reason="dossier.project not present yet")
    from dossier.project import load_manifest

    manifest = load_manifest(_manifest_project(tmp_path, GOOD))
    assert set(manifest.states) == {"a", "b"}  # so each broken variant differs from a loadable one


@pytest.mark.parametrize("name", sorted(BROKEN_MANIFESTS))
def test_broken_manifest_is_one_line_error_or_finding(name, tmp_path):
    pytest.importorskip("dossier.project", reason="dossier.project not present yet")
    from dossier.project import load_manifest, load_project

    manifest = _manifest_project(tmp_path / "p", _broken_text(name))
    before = _tree(tmp_path)
    try:
        load_project(manifest, jobs=1, use_cache=False)
    except ManifestError as exc:
        text = str(exc)
        assert "\n" not in text, text
        assert text.startswith(f"{manifest}:"), text  # names the manifest and its line
    except DossierError as exc:
        assert "\n" not in str(exc) and str(manifest.parent) in str(exc), str(exc)
    else:
        # loads: then it must be a case that the checks, not the loader, report
        assert name in ("cut-output",), f"{name}: a broken manifest loaded without complaint"
    assert _tree(tmp_path) == before


def _check_command_exists() -> None:
    import importlib.util

    if importlib.util.find_spec("dossier.commands.check") is None:
        pytest.skip("`dossier check` not present yet")


@pytest.mark.parametrize("name", ["toml-unclosed-table", "unknown-state", "recipe-cycle", "type-geometry",
                                  "missing-file", "binary-output", "no-states", "atom-beyond", "cut-output"])
def test_cli_check_of_a_broken_manifest(name, tmp_path):
    _check_command_exists()
    manifest = _manifest_project(tmp_path / "p", _broken_text(name))
    before = _tree(tmp_path)
    done = _cli("check", str(manifest), cwd=tmp_path)
    assert "Traceback" not in done.stderr, done.stderr[-3000:]
    if done.returncode == 2:
        lines = done.stderr.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith(f"dossier: {manifest}:"), done.stderr
    else:  # the manifest loads; the checks report the problem as a finding
        assert done.returncode == 1, (done.returncode, done.stdout, done.stderr)
        assert done.stdout.strip(), "a finding must be shown"
    assert _tree(tmp_path) == before


@pytest.mark.parametrize("case", ["missing", "folder", "not-utf8"])
def test_cli_check_of_an_unopenable_manifest(case, tmp_path):
    _check_command_exists()
    target = {"missing": tmp_path / "nothing.toml", "folder": tmp_path, "not-utf8": tmp_path / "latin.toml"}[case]
    if case == "not-utf8":
        target.write_bytes('[project]\ntitle = "caf\xe9"\n'.encode("latin-1"))
    done = _cli("check", str(target))
    assert done.returncode == 2 and "Traceback" not in done.stderr
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("dossier: ") and str(target) in lines[0], done.stderr


def test_build_of_a_broken_manifest_leaves_no_output(tmp_path):
    pytest.importorskip("dossier.report.build", reason="dossier.report.build not present yet")
    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    for name in ("unknown-state", "binary-output"):
        manifest = _manifest_project(tmp_path / name, _broken_text(name))
        out = tmp_path / f"{name}-out"
        done = _cli("build", str(manifest), "--out", str(out))
        assert done.returncode == 2 and "Traceback" not in done.stderr, done.stderr
        assert done.stderr.strip().splitlines()[-1].startswith("dossier: ")
        assert not out.exists(), f"{name}: build left {sorted(out.rglob('*'))}"
        leftovers = [p.name for p in tmp_path.iterdir() if p.name.startswith(".")]
        assert not leftovers, leftovers


# -- property-based fuzz of the manifest loader ----------------------------------------------

hypothesis = pytest.importorskip("hypothesis")
from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_KEYS = ["project", "title", "authors", "temperatures_k", "energy_unit", "standard_state", "qrrho",
         "frequency_scale", "imaginary_threshold_cm1", "sites", "states", "a", "b", "role", "geometry",
         "frequencies", "excited_states", "single_points", "symmetry_number", "note", "recipes", "dft",
         "electronic", "thermal", "based_on", "mixed_levels", "pathways", "name", "reactant", "product",
         "transition_state", "donor_site", "acceptor_site", "bridge_site", "recipe", "levels", "ladder",
         "four_point", "isomer_families", "uncertainty", "experiment", "x", "ring_a"]
_ATOMS = ['"a.out"', '"b.out"', '"missing.out"', '""', '"a"', '"b"', '"dft"', '"ring_a"', "1", "0", "-3",
          "2.5", "1e400", "nan", "-inf", "true", "false", "[]", "[1, 2]", '["a", "b"]', "{}",
          '{ "x" = "a.out" }', "1979-05-27T07:32:00Z", "'''multi\nline'''", '"\\u00e9"', "[[1], [2]]"]


def _toml_ish():
    key = st.one_of(st.sampled_from(_KEYS), st.text("abcxyz_-.\"' ", min_size=1, max_size=8))
    header = st.builds(lambda k, d: f"[{k}]" if d == 1 else f"[[{k}]]", st.lists(key, min_size=1, max_size=3)
                       .map(".".join), st.sampled_from([1, 1, 2]))
    value = st.one_of(st.sampled_from(_ATOMS), st.text(max_size=12))
    pair = st.builds(lambda k, v: f"{k} = {v}", key, value)
    junk = st.text(max_size=20)
    return st.lists(st.one_of(header, pair, pair, junk), max_size=25).map("\n".join)


_SCALARS = st.one_of(st.integers(-10**20, 10**20), st.floats(allow_nan=True, allow_infinity=True),
                     st.booleans(), st.text(max_size=10), st.sampled_from(["a.out", "b.out", "a", "b", "dft", "ring_a"]))
_VALUES = st.recursive(_SCALARS, lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                          st.dictionaries(st.sampled_from(_KEYS), inner, max_size=4)),
                       max_leaves=8)


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if v != v:
            return "nan"
        if v in (float("inf"), float("-inf")):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)  # a JSON string is a valid TOML basic string
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return "{" + ", ".join(f"{json.dumps(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"


def _structured():
    """Documents with the manifest's shape where any value may be of a wrong type."""
    def doc(project, sites, state_a, state_b, recipe, pathway, family):
        parts = ["[project]", *(f"{k} = {_toml_value(v)}" for k, v in project.items()),
                 "[sites]", *(f"{k} = {_toml_value(v)}" for k, v in sites.items()),
                 "[states.a]", *(f"{k} = {_toml_value(v)}" for k, v in state_a.items()),
                 "[states.b]", *(f"{k} = {_toml_value(v)}" for k, v in state_b.items()),
                 "[recipes.dft]", *(f"{k} = {_toml_value(v)}" for k, v in recipe.items()),
                 "[[pathways]]", *(f"{k} = {_toml_value(v)}" for k, v in pathway.items()),
                 "[[isomer_families]]", *(f"{k} = {_toml_value(v)}" for k, v in family.items())]
        return "\n".join(parts) + "\n"

    def table(keys, good):
        return st.fixed_dictionaries({}, optional={k: st.one_of(st.just(good.get(k, "a")), _VALUES) for k in keys})

    return st.builds(
        doc,
        table(["title", "authors", "temperatures_k", "energy_unit", "standard_state", "qrrho", "frequency_scale",
               "imaginary_threshold_cm1"], {"temperatures_k": [298.15], "energy_unit": "eV", "qrrho": "none"}),
        table(["ring_a", "ring_b"], {"ring_a": [1, 2], "ring_b": [3, 4]}),
        table(["role", "geometry", "frequencies", "excited_states", "single_points", "symmetry_number", "note"],
              {"geometry": "a.out", "role": "minimum", "single_points": {"mp2": "b.out"}, "symmetry_number": 2}),
        table(["geometry", "frequencies"], {"geometry": "b.out", "frequencies": "a.out"}),
        table(["electronic", "thermal", "based_on", "mixed_levels"], {"electronic": "geometry", "thermal": "none",
                                                                    "based_on": "dft", "mixed_levels": True}),
        table(["name", "reactant", "product", "transition_state", "donor_site", "acceptor_site", "recipe", "levels",
               "ladder", "four_point"], {"name": "p", "reactant": "a", "product": "b", "donor_site": "ring_a",
                                         "acceptor_site": "ring_b", "recipe": "dft", "ladder": ["dft"],
                                         "levels": {"barrier": "dft"}}),
        table(["name", "states", "recipe"], {"name": "f", "states": ["a", "b"], "recipe": "dft"}),
    )


@pytest.fixture(scope="module")
def fuzz_dir(tmp_path_factory):
    pytest.importorskip("dossier.project", reason="dossier.project not present yet")
    folder = tmp_path_factory.mktemp("fuzz")
    (folder / "a.out").write_text("stand-in output file: the loader checks only that it exists\n")
    (folder / "b.out").write_text("another\n")
    return folder


def _load_only_manifest_errors(folder: Path, text: str) -> None:
    from dossier.project import load_manifest

    path = folder / "dossier.toml"
    path.write_bytes(text.encode("utf-8", errors="replace"))
    try:
        load_manifest(path)
    except ManifestError as exc:
        assert str(exc).startswith(f"{path}:"), str(exc)
        assert "\n" not in str(exc).rstrip("\n"), str(exc)


@settings(max_examples=300, deadline=None, database=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(text=_toml_ish())
def test_fuzz_toml_ish_documents_raise_only_manifest_errors(fuzz_dir, text):
    _load_only_manifest_errors(fuzz_dir, text)


@pytest.mark.slow
@settings(max_examples=200, deadline=None, database=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(text=_structured())
def test_fuzz_wrong_types_in_a_valid_structure_raise_only_manifest_errors(fuzz_dir, text):
    _load_only_manifest_errors(fuzz_dir, text)


# -- an interrupted build ------------------------------------------------------------------

def _interrupt_build(manifest: Path, out: Path, sig: int, *, delay_s: float | None, marker: str = "pdf"):
    """Start `dossier build`, wait for its PDF step on stderr (or a delay), send `sig`."""
    # its own process group, so the signal reaches the build and any helper it started, as Ctrl-C would
    proc = subprocess.Popen([sys.executable, "-m", "dossier", "build", str(manifest), "--out", str(out)],
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, bufsize=1,
                            start_new_session=True)
    seen = []
    start = time.monotonic()
    try:
        if delay_s is None:
            for line in proc.stderr:
                seen.append(line)
                if marker in line.lower():
                    break
                if time.monotonic() - start > 300:
                    break
        else:
            time.sleep(delay_s)
        if proc.poll() is None:
            os.killpg(proc.pid, sig)
        proc.wait(timeout=120)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    rest = proc.stderr.read() if proc.stderr else ""
    return proc.returncode, "".join(seen) + rest


@pytest.fixture(scope="module")
def built_demo(tmp_path_factory):
    """A small project of real NWChem outputs, built once with every format (so with a PDF step)."""
    pytest.importorskip("dossier.report.build", reason="dossier.report.build not present yet")
    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    root = tmp_path_factory.mktemp("interrupt")
    manifest = _manifest_project(root / "study", GOOD)
    out = root / "dossier"
    done = _cli("build", str(manifest), "--out", str(out))
    if done.returncode != 0:
        pytest.skip(f"the project does not build here: {done.stderr.strip()[-300:]}")
    return manifest, out


@pytest.mark.slow
@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGKILL], ids=["SIGINT", "SIGKILL"])
def test_build_interrupted_during_the_pdf_step_leaves_the_previous_dossier(built_demo, sig):
    manifest, out = built_demo
    before = _tree(out)
    beside = sorted(p.name for p in out.parent.iterdir())
    project_before = _tree(manifest.parent)
    assert "dossier.json" in before
    code, stderr = _interrupt_build(manifest, out, sig, delay_s=None)
    assert "Traceback" not in stderr, stderr[-3000:]
    if code == 0:
        pytest.skip("the build finished before the signal arrived")
    assert _tree(out) == before  # the previous dossier, whole and unchanged
    if sig == signal.SIGINT:  # a caught interrupt also removes its temporary files (a SIGKILL cannot)
        assert code == 130, (code, stderr[-2000:])
        assert stderr.strip().splitlines()[-1].startswith("dossier: "), stderr[-2000:]
        assert sorted(p.name for p in out.parent.iterdir()) == beside
    assert _tree(manifest.parent) == project_before


# -- property-based: one or two values of a complete, valid project changed -------------------

_BASE_PROJECT = {
    "project": {"title": "t", "temperatures_k": [250.0, 298.15], "energy_unit": "kJ/mol", "standard_state": "1M",
                "qrrho": "grimme"},
    "sites": {"x": [1, 2, 3], "y": [4, 5, 6], "br": [7, 8]},
    "states": {"a": {"role": "minimum", "geometry": "a.out", "frequencies": "b.out", "excited_states": "d.out",
                     "single_points": {"sp": "c.out"}},
               "t": {"role": "transition-state", "geometry": "c.out", "frequencies": "b.out"},
               "b": {"geometry": "a.out", "frequencies": "b.out", "single_points": {"sp": "a.out"}}},
    "recipes": {"dft": {"electronic": "geometry", "thermal": "frequencies"}, "sp": {"electronic": "sp", "thermal": "none"}},
    "pathways": [{"name": "p", "reactant": "a", "transition_state": "t", "product": "b", "donor_site": "x",
                  "acceptor_site": "y", "bridge_site": "br", "recipe": "dft", "ladder": ["dft"],
                  "levels": {"barrier": "dft"},
                  "four_point": {"reactant_at_reactant": "a.out", "reactant_at_product": "c.out",
                                 "product_at_product": "a.out", "product_at_reactant": "c.out"}}],
    "isomer_families": [{"name": "f", "states": ["a", "b"], "recipe": "dft"}],
    "uncertainty": {"samples": 1000, "seed": 1},
    "experiment": {"rates": [{"pathway": "p", "temperature_k": 298.15, "rate_per_s": 1e7, "error_per_s": 1e6,
                              "method": "m", "source": "invented for the test"}],
                   "intervalence_band": [{"pathway": "p", "nu_max_cm1": 9000.0, "fwhm_cm1": 4000.0,
                                          "epsilon_max_m1_cm1": 500.0, "distance_angstrom": 5.0,
                                          "source": "invented for the test"}]},
}


def _leaf_paths(d, path=()):
    if isinstance(d, dict):
        for k, v in d.items():
            yield from _leaf_paths(v, path + (k,))
    elif isinstance(d, list) and d and isinstance(d[0], dict):
        for i, v in enumerate(d):
            yield from _leaf_paths(v, path + (i,))
    else:
        yield path


def _project_toml(doc: dict) -> str:
    out = []
    for k, v in doc.items():
        for item in (v if isinstance(v, list) else [v]):
            out.append(f"[[{k}]]" if isinstance(v, list) else f"[{k}]")
            out += [f"{json.dumps(kk)} = {_toml_value(vv)}" for kk, vv in item.items()]
    return "\n".join(out) + "\n"


def _mutated(changes) -> str:
    import copy

    doc = copy.deepcopy(_BASE_PROJECT)
    for path, value in changes:
        d = doc
        for k in path[:-1]:
            d = d[k]
        d[path[-1]] = value
    return _project_toml(doc)


@pytest.fixture(scope="module")
def analysable(tmp_path_factory):
    """A folder with four real NWChem 7.0 outputs and their records, read once."""
    pytest.importorskip("dossier.analysis.assemble", reason="dossier.analysis.assemble not present yet")
    from dossier.reading import read

    folder = tmp_path_factory.mktemp("analysable")
    for name, rel in {"a.out": "dvb_gopt_ks.out", "b.out": "dvb_ir.out", "c.out": "dvb_un_sp_ks.out",
                      "d.out": "dvb_td.out"}.items():
        shutil.copyfile(fixture_path(f"NWChem/basicNWChem7.0/{rel}"), folder / name)
    records = {p.resolve(): read(p, use_cache=False) for p in folder.glob("*.out")}
    return folder, records


def _analyse_only_dossier_errors(folder: Path, records: dict, text: str) -> None:
    from dossier.analysis.assemble import analyse
    from dossier.project import bind, load_manifest

    path = folder / "dossier.toml"
    path.write_text(text)
    try:
        analyse(bind(load_manifest(path), records))
    except DossierError as exc:
        assert "\n" not in str(exc), str(exc)


def test_the_base_project_analyses(analysable):
    from dossier.analysis.assemble import analyse
    from dossier.project import bind, load_manifest

    folder, records = analysable
    (folder / "dossier.toml").write_text(_project_toml(_BASE_PROJECT))
    data = analyse(bind(load_manifest(folder / "dossier.toml"), records))
    assert data["pathways"] and data["pathways"][0]["name"] == "p"  # so each mutation starts from a working project


@pytest.mark.parametrize("changes", [
    [(("project", "temperatures_k"), [1e-300])],
    [(("experiment", "rates", 0, "temperature_k"), 3.35e-19)],
    [(("experiment", "rates", 0, "rate_per_s"), 1.3e218)],
], ids=["project-temperature-1e-300K", "measured-at-3e-19K", "measured-rate-1e218"])
def test_absurd_numbers_are_manifest_errors_not_crashes(analysable, changes):
    folder, records = analysable
    _analyse_only_dossier_errors(folder, records, _mutated(changes))


_MUTATION_VALUES = st.one_of(
    st.integers(-5, 10**6), st.floats(allow_nan=True, allow_infinity=True), st.booleans(),
    st.sampled_from(["a", "b", "t", "x", "y", "dft", "sp", "a.out", "c.out", "d.out", "", "minimum", "none", "eV"]),
    st.lists(st.integers(-2, 40), max_size=4), st.lists(st.sampled_from(["a", "b", "t", "dft", "sp"]), max_size=3),
    st.just({}), st.just([]))


@pytest.mark.slow
@settings(max_examples=300, deadline=None, database=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(changes=st.lists(st.tuples(st.sampled_from(list(_leaf_paths(_BASE_PROJECT))), _MUTATION_VALUES), max_size=2))
def test_fuzz_a_valid_project_with_changed_values_analyses_or_raises_a_dossier_error(analysable, changes):
    folder, records = analysable
    _analyse_only_dossier_errors(folder, records, _mutated(changes))
