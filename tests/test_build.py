"""build_dossier and `dossier build`: complete outputs, byte-identical rebuilds, the cache, atomic replacement."""
from __future__ import annotations

import hashlib
import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from conftest import DEMO, ROOT
from dossier.report import build
from dossier.report import containment, render
from dossier.errors import BuildError, DossierError


def _tree(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _cli(*args: str, env: dict | None = None) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "dossier", *args], capture_output=True, text=True, timeout=600,
                          cwd=ROOT, env={**os.environ, **(env or {})})


# -- the demo study, built once per session -----------------------------------------------------

@pytest.fixture(scope="session")
def demo_build(tmp_path_factory):
    manifest = DEMO / "dossier.toml"
    if not manifest.exists():
        pytest.skip("demo study manifest example_outputs/dossier.toml not present yet")
    out = tmp_path_factory.mktemp("demo") / "dossier"
    try:
        result = build.build_dossier(manifest, out)
    except DossierError as exc:
        pytest.skip(f"the demo study does not build yet: {exc}")
    return manifest, result


@pytest.mark.slow
def test_demo_writes_every_output_and_names_every_source_with_its_hash(demo_build):
    from dossier.project import load_manifest

    manifest, result = demo_build
    names = {"dossier.html", "dossier.pdf", "dossier.json", "energies.csv", "populations.csv", "parameters.csv",
             "rates.csv", "states.xyz", "tables.tex", "references.bib"}
    assert names <= set(result.files) and all(result.files[n].is_file() for n in names)
    data = json.loads(result.files["dossier.json"].read_text())
    files = load_manifest(manifest).all_files()
    by_path = {os.path.abspath(manifest.parent / s["path"]): s for s in data["sources"]}
    assert set(by_path) == {os.path.abspath(f) for f in files}
    for f in files:
        # SHA-256 of the file's bytes (hashlib, FIPS 180-4)
        assert by_path[os.path.abspath(f)]["sha256"] == hashlib.sha256(Path(f).read_bytes()).hexdigest()
        assert by_path[os.path.abspath(f)]["program"] and by_path[os.path.abspath(f)]["level_of_theory"]
    assert "timestamp" not in result.files["dossier.json"].read_text().lower()


@pytest.mark.slow
def test_demo_pdf_text_holds_the_json_numbers(demo_build):
    pypdf = pytest.importorskip("pypdf")
    _, result = demo_build
    data = json.loads(result.files["dossier.json"].read_text())
    reader = pypdf.PdfReader(str(result.files["dossier.pdf"]))
    text = "\n".join(p.extract_text() for p in reader.pages)
    flat = re.sub(r"\s+", " ", text)
    for src in data["sources"]:
        assert src["sha256"] in text, src["path"]
    for st in data["states"]:
        for xyz in st["coordinates_angstrom"]:
            assert " ".join(render.fmt_coordinate(c) for c in xyz) in flat, st["name"]
    for pw in data["pathways"]:
        for r in pw["rates"]:
            assert render.fmt_rate(r["rate_per_s"]) in text, (pw["name"], r["model"], r["temperature_k"])
    assert re.search(r"Figure S\d+\.", text) and "Rates are model estimates" in text


@pytest.mark.slow
def test_demo_html_is_self_contained(demo_build):
    _, result = demo_build
    html = result.files["dossier.html"].read_text(encoding="utf-8")
    assert containment.outside_references(html) == []
    assert "<svg" in html and "<script" not in html.lower()


@pytest.mark.slow
def test_demo_rebuild_gives_the_same_json_bytes(demo_build, tmp_path):
    manifest, result = demo_build
    again = build.build_dossier(manifest, tmp_path / "again", formats=("json", "csv", "xyz", "tex", "bib"))
    for name in ("dossier.json", "energies.csv", "rates.csv", "states.xyz", "tables.tex", "references.bib"):
        assert again.files[name].read_bytes() == result.files[name].read_bytes(), name


# -- a small project of real third-party outputs (always available with the shared fixtures) -------

@pytest.fixture(scope="module")
def shared_cache(tmp_path_factory):
    return tmp_path_factory.mktemp("reader-cache")


@pytest.fixture
def project(tmp_path, monkeypatch, shared_cache):
    from render_fixtures import write_fixture_manifest

    monkeypatch.setenv("DOSSIER_CACHE_DIR", str(shared_cache))
    return write_fixture_manifest(tmp_path / "study", title="Fixture <script>alert(1)</script>")


@pytest.fixture(scope="module")
def analysed(tmp_path_factory, shared_cache):
    """The real analysis of the fixture project, computed once; tests of the folder handling reuse it."""
    from render_fixtures import write_fixture_manifest

    from dossier.analysis.assemble import analyse
    from dossier.project import load_project

    old = os.environ.get("DOSSIER_CACHE_DIR")
    os.environ["DOSSIER_CACHE_DIR"] = str(shared_cache)
    try:
        return analyse(load_project(write_fixture_manifest(tmp_path_factory.mktemp("analysed")), jobs=1))
    finally:
        if old is None:
            os.environ.pop("DOSSIER_CACHE_DIR", None)
        else:
            os.environ["DOSSIER_CACHE_DIR"] = old


@pytest.fixture
def quick(analysed, monkeypatch):
    """build_dossier with the analysis step answered from the module's real analysis."""
    import copy

    import dossier.analysis.assemble

    monkeypatch.setattr(dossier.analysis.assemble, "analyse", lambda project, **kw: copy.deepcopy(analysed))


@pytest.fixture
def no_figures(monkeypatch):
    """Folder-handling tests need the HTML/PDF steps, not the drawings (tests/test_figures.py has those)."""
    import dossier.report.figures

    monkeypatch.setattr(dossier.report.figures, "make_figures", lambda data, **kw: [])


def test_rebuild_after_a_manifest_edit_reads_no_file_again(project, tmp_path, monkeypatch):
    out = tmp_path / "out"
    first = build.build_dossier(project, out, formats=("json",), jobs=1, draft=True)
    assert first.data["project"]["title"] == "Fixture <script>alert(1)</script>"
    project.write_text(project.read_text().replace("Fixture <script>alert(1)</script>", "Edited title"))

    import dossier.reading.build as reading_build

    def refuse(*args, **kwargs):
        raise AssertionError("a file was parsed again although its bytes did not change")

    monkeypatch.setattr(reading_build, "build_record", refuse)
    lines: list[str] = []
    second = build.build_dossier(project, out, formats=("json",), jobs=1, progress=lines.append, draft=True)
    assert second.data["project"]["title"] == "Edited title"
    assert json.loads((out / "dossier.json").read_text())["project"]["title"] == "Edited title"
    assert any("reading" in line for line in lines) and any("analysing" in line for line in lines)


def test_no_change_rebuild_is_byte_identical(project, tmp_path):
    a = build.build_dossier(project, tmp_path / "a", formats=("json", "csv", "xyz", "tex", "bib"), jobs=1, draft=True)
    b = build.build_dossier(project, tmp_path / "b", formats=("json", "csv", "xyz", "tex", "bib"), jobs=1, draft=True)
    assert _tree(tmp_path / "a").keys() == _tree(tmp_path / "b").keys()
    for name in a.files:
        assert a.files[name].read_bytes() == b.files[name].read_bytes(), name
    text = a.files["dossier.json"].read_text()
    assert json.loads(text) == json.loads(json.dumps(json.loads(text), sort_keys=True))
    assert not re.search(r"20\d\d-\d\d-\d\dT\d\d:", text)  # no ISO timestamps


def test_interrupt_during_the_pdf_step_keeps_the_previous_dossier(quick, no_figures, project, tmp_path, monkeypatch):
    out = tmp_path / "out"
    build.build_dossier(project, out, formats=("json", "csv"), jobs=1, draft=True)
    before = _tree(out)

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(render, "write_pdf", interrupted)
    with pytest.raises(KeyboardInterrupt):
        build.build_dossier(project, out, formats=("html", "pdf", "json"), jobs=1, draft=True)
    assert _tree(out) == before
    assert sorted(p.name for p in out.parent.iterdir()) == ["out", "study"]


def test_a_bad_user_template_keeps_the_previous_dossier(quick, no_figures, project, tmp_path):
    out = tmp_path / "out"
    build.build_dossier(project, out, formats=("json",), jobs=1, draft=True)
    before = _tree(out)
    tpl = tmp_path / "tpl"
    tpl.mkdir()
    (tpl / "summary.html").write_text("{% for x in %}")
    with pytest.raises(BuildError) as err:
        build.build_dossier(project, out, formats=("html", "json"), templates_dir=tpl, jobs=1, draft=True)
    assert "summary.html" in str(err.value)
    assert _tree(out) == before and not [p for p in out.parent.iterdir() if p.name.startswith(".")]


def test_only_a_dossier_folder_is_replaced(project, tmp_path):
    foreign = tmp_path / "thesis"
    foreign.mkdir()
    (foreign / "chapter1.tex").write_text("precious")
    with pytest.raises(BuildError) as err:
        build.build_dossier(project, foreign, formats=("json",), jobs=1, draft=True)
    assert str(foreign) in str(err.value)
    assert (foreign / "chapter1.tex").read_text() == "precious" and len(list(foreign.iterdir())) == 1
    with pytest.raises(BuildError):
        build.build_dossier(project, project.parent, formats=("json",), jobs=1, draft=True)
    with pytest.raises(BuildError):
        build.build_dossier(project, tmp_path, formats=("json",), jobs=1, draft=True)


def test_default_folder_and_stale_temporaries(quick, project, tmp_path):
    stale = project.parent / ".dossier-build.building-999999999"
    stale.mkdir()
    (stale / build.MARKER).write_text("x")
    result = build.build_dossier(project, formats=("json", "xyz"), jobs=1, draft=True)
    assert result.out_dir == project.parent / "dossier-build"
    assert (project.parent / "dossier-build" / "states.xyz").is_file()
    assert not stale.exists()


@pytest.mark.slow
def test_png_figures_on_request(quick, project, tmp_path):
    result = build.build_dossier(project, tmp_path / "png", formats=("json",), png=True, jobs=1, draft=True)
    pngs = [p for name, p in result.files.items() if name.startswith("figures/")]
    assert pngs and all(p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" for p in pngs)
    assert "dossier.html" not in result.files and "dossier.pdf" not in result.files


def test_formats_are_checked():
    assert build.parse_formats("json, PDF,json") == ("json", "pdf")
    with pytest.raises(BuildError):
        build.parse_formats("json,docx")
    with pytest.raises(BuildError):
        build.parse_formats(" , ")


@pytest.mark.slow
def test_command_refuses_check_errors_builds_a_draft_on_request_and_exits_2_on_bad_input(project, tmp_path,
                                                                                          shared_cache):
    out = tmp_path / "cli-out"
    env = {"DOSSIER_CACHE_DIR": str(shared_cache)}
    refused = _cli("build", str(project), "--out", str(out), "--formats", "json,html", env=env)
    assert refused.returncode == 1, refused.stderr
    assert "CHECKS FOUND" in refused.stderr and "nothing was written" in refused.stderr
    assert "error ATOM-ORDER" in refused.stderr or "error IMAG" in refused.stderr
    assert not out.exists() and not refused.stdout.strip()
    done = _cli("build", str(project), "--out", str(out), "--formats", "json,xyz,html", "--draft", env=env)
    assert done.returncode == 0, done.stderr
    assert "DRAFT" in done.stderr and "build: reading output files" in done.stderr and "build: analysing" in done.stderr
    data = json.loads((out / "dossier.json").read_text())
    n = sum(1 for c in data["checks"] if c["severity"] == "error")
    assert data["draft"] is True and data["draft_errors"] == n > 0
    html_text = (out / "dossier.html").read_text()
    # the visible mark and the PDF page-margin mark (CSS @page top-center) carry the same words
    assert html_text.count(f"draft: {n} check error") >= 2
    assert (out / "states.xyz").is_file() and str(out / "dossier.json") in done.stdout.splitlines()
    for args in (["build", str(tmp_path / "missing.toml")], ["build", str(project), "--formats", "json,docx"],
                 ["build", str(project), "--templates", str(tmp_path / "no-such-folder")]):
        bad = _cli(*args, env=env)
        assert bad.returncode == 2, (args, bad.stderr)
        lines = bad.stderr.strip().splitlines()
        assert lines[-1].startswith("dossier: ") and "Traceback" not in bad.stderr


@pytest.mark.slow
def test_demo_headline_is_null_and_the_summary_says_why(demo_build):
    """On the demo no model applies: the Gibbs TST barrier is negative, the golden-rule Marcus rate is in the
    adiabatic regime (2 pi gamma ~ 19, kappa_eff ~ 200) and the two-state barrier (1.3 kJ/mol) lies below the
    zero-point level of the ~1070 cm-1 transfer mode. The summary quotes no rate and gives the vibrational
    period 1/(c nu) instead (c from CODATA via scipy.constants)."""
    from scipy import constants

    from dossier.report.typeset import typeset

    _, result = demo_build
    assert result.data.get("draft") is False
    html_text = (result.out_dir / "dossier.html").read_text()
    for pw in result.data["pathways"]:
        assert pw["headline_rate"] is None and pw["headline_reason"].startswith("no rate model applies")
        assert all(r["validity"]["valid"] is False for r in pw["rates"] if r["temperature_k"] == 298.15)
        sup = pw["supported"]
        period = 1e15 / (constants.c * 100.0 * sup["wavenumber_cm1"])
        assert sup["vibrational_period_fs"] == pytest.approx(period, rel=1e-9)
        # the report typesets the statement's ASCII math (dossier.report.typeset)
        assert f"{period:.0f} fs" in sup["statement"] and str(typeset(sup["statement"])) in html_text
        assert "No rate constant is quoted" in html_text
    # every rate row and every ladder rate prints its verdict with the JSON's note, word for word (typeset as the report shows it)
    for pw in result.data["pathways"]:
        for r in pw["rates"] + [x for rung in pw["ladder"] for x in rung["rates"]]:
            assert str(typeset(r["validity"]["note"])) in html_text, r["model"]
        for e in pw["experiment"]["rates"]:
            assert f"not valid</b>: {typeset(e['computed_validity']['note'])}" in html_text
        assert not any(r["closest_to_experiment"] for r in pw["experiment"].get("ladder", []))
    csv_text = (result.out_dir / "rates.csv").read_text()
    assert csv_text.splitlines()[0].endswith(",validity,validity_note") and ",valid," not in csv_text
