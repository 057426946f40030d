"""The package as a user installs it: the wheel, its files, the version, the licence and citation.

Outside references: the wheel format (PEP 427: a zip with NAME.dist-info/METADATA), the
Citation File Format 1.2.0 keys, the SPDX identifier BSD-3-Clause, and the packaging tools
from the package index (`build`, pip, venv).
"""
from __future__ import annotations

import os
import re
import shutil
import site
import subprocess
import sys
import tomllib
import zipfile
from pathlib import Path

import pytest

import dossier
from tests.conftest import ROOT

PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def _package_folders() -> set[str]:
    """Every package folder of the source tree (a folder with __init__.py under dossier/)."""
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "dossier").rglob("__init__.py")}
    return {name for name in found if "__pycache__" not in name}


def test_every_package_folder_is_listed_for_the_wheel():
    # pyproject lists the packages one by one (it maps dossier.templates onto templates/, which a
    # folder search cannot do): a new sub-package missing from the list would be left out of the wheel
    listed = set(PYPROJECT["tool"]["setuptools"]["packages"])
    assert listed - {"dossier.templates"} == _package_folders()
    assert PYPROJECT["tool"]["setuptools"]["package-dir"] == {"dossier.templates": "templates"}


def test_version_lives_in_one_place_and_the_cli_prints_it(capsys):
    from dossier.cli import main

    assert "version" not in PYPROJECT["project"] and "version" in PYPROJECT["project"]["dynamic"]
    assert PYPROJECT["tool"]["setuptools"]["dynamic"]["version"] == {"attr": "dossier.__version__"}
    assert re.fullmatch(r"\d+\.\d+\.\d+", dossier.__version__)  # PEP 440 release segment
    with pytest.raises(SystemExit) as exc:
        main(["--version"])
    assert exc.value.code == 0
    assert capsys.readouterr().out.strip() == f"dossier {dossier.__version__}"
    assert not re.search(r"^version:", (ROOT / "CITATION.cff").read_text(encoding="utf-8"), flags=re.M)


def test_license_and_citation_files():
    # SPDX BSD-3-Clause: three numbered conditions, the third naming the copyright holder's contributors
    text = (ROOT / "LICENSE").read_text(encoding="utf-8")
    assert text.startswith("BSD 3-Clause License") and "the dossier developers" in text
    assert len(re.findall(r"^\d\. ", text, flags=re.M)) == 3
    assert PYPROJECT["project"]["license"] == "BSD-3-Clause"
    # Citation File Format 1.2.0: cff-version, message, title and authors are the required keys
    cff = (ROOT / "CITATION.cff").read_text(encoding="utf-8")
    keys = dict(re.findall(r"^([a-z-]+):\s*(.*)$", cff, flags=re.M))
    assert {"cff-version", "message", "title", "authors"} <= set(keys)
    assert keys["cff-version"] == "1.2.0" and keys["license"] == "BSD-3-Clause"


def test_templates_are_found_through_the_package():
    from dossier.report import render

    assert render.TEMPLATES_DIR == render.builtin_templates_dir()
    assert (render.TEMPLATES_DIR / "base.html").is_file()


def _copy_sources(dest: Path) -> Path:
    """The files a source distribution is built from (not the caches, venvs or demo outputs)."""
    dest.mkdir()
    for name in ("pyproject.toml", "README.md", "LICENSE", "CITATION.cff"):
        shutil.copy2(ROOT / name, dest / name)
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "*.egg-info")
    shutil.copytree(ROOT / "dossier", dest / "dossier", ignore=ignore)
    shutil.copytree(ROOT / "templates", dest / "templates", ignore=ignore)
    return dest


def _run(cmd, **kw) -> subprocess.CompletedProcess:
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=300, **kw)
    assert done.returncode == 0, f"{cmd[:3]} failed:\n{done.stdout[-2000:]}\n{done.stderr[-3000:]}"
    return done


@pytest.mark.slow
def test_wheel_installs_into_a_fresh_environment_and_builds_the_demo(tmp_path):
    pytest.importorskip("build")
    src = _copy_sources(tmp_path / "src")
    dist = tmp_path / "dist"
    # `python -m build`: the sdist first, then the wheel built from the unpacked sdist
    _run([sys.executable, "-m", "build", "--outdir", str(dist), str(src)], cwd=tmp_path)
    version = dossier.__version__
    wheel = dist / f"dossier-{version}-py3-none-any.whl"
    sdist = dist / f"dossier-{version}.tar.gz"
    assert wheel.is_file() and sdist.is_file()

    # the wheel holds every template, the schema, the licence and the version
    names = set(zipfile.ZipFile(wheel).namelist())
    templates = {p.name for p in (ROOT / "templates").iterdir() if p.is_file() and p.suffix in (".html", ".css")}
    assert templates and {f"dossier/templates/{t}" for t in templates} <= names
    assert "dossier/schema/dossier.schema.json" in names
    assert f"dossier-{version}.dist-info/licenses/LICENSE" in names
    metadata = zipfile.ZipFile(wheel).read(f"dossier-{version}.dist-info/METADATA").decode()
    assert f"\nVersion: {version}\n" in metadata and "License-Expression: BSD-3-Clause" in metadata

    # a fresh environment with the wheel alone; the dependencies are those of this test run, made
    # visible by a .pth file, which adds them after the environment's own site-packages (the
    # wheel's copy of dossier comes first; .pth files inside those folders, such as an editable
    # install's, are not run, so the source tree cannot leak in)
    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", "--without-pip", str(venv)])
    python = venv / "bin" / "python"
    purelib = Path(_run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]).stdout.strip())
    _run([sys.executable, "-m", "pip", "--python", str(python), "install", "--no-deps", "--no-index", "--quiet",
          str(wheel)])
    deps = [p for p in site.getsitepackages() if Path(p).is_dir()]
    (purelib / "zz_test_dependencies.pth").write_text("\n".join(deps) + "\n")

    env = {k: v for k, v in os.environ.items() if not k.startswith("PYTHON")}
    env["DOSSIER_CACHE_DIR"] = str(tmp_path / "cache")
    run_dir = tmp_path / "elsewhere"  # not the source tree, so nothing is imported from it
    run_dir.mkdir()
    where = _run([str(python), "-c", "import dossier, dossier.report.render as r; print(dossier.__file__); "
                                     "print(r.TEMPLATES_DIR)"], env=env, cwd=run_dir).stdout.split()
    assert all(Path(p).is_relative_to(venv) for p in where), where

    dossier_cmd = venv / "bin" / "dossier"
    assert _run([str(dossier_cmd), "--version"], env=env, cwd=run_dir).stdout.strip() == f"dossier {version}"
    out = tmp_path / "demo"
    _run([str(dossier_cmd), "build", str(ROOT / "example_outputs" / "dossier.toml"), "--out", str(out),
          "--formats", "json,html", "--quiet"], env=env, cwd=run_dir)
    html = (out / "dossier.html").read_text(encoding="utf-8")
    assert "<html" in html and "Electron-transfer parameters" in html  # a section title of the templates
    import json

    data = json.loads((out / "dossier.json").read_text(encoding="utf-8"))
    assert data["generator"]["dossier_version"] == version
