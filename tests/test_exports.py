"""Exports: JSON canonical form, XYZ read back by ASE, CSV and LaTeX tables equal to the JSON, BibTeX well formed."""
from __future__ import annotations

import csv
import io
import json
import math
import os
import re

import pytest
from scipy import constants

from dossier.analysis import citations
from dossier.report import exports
from dossier.errors import BuildError


@pytest.fixture(scope="module")
def data(tmp_path_factory):
    from render_fixtures import fixture_data

    return fixture_data(tmp_path_factory.mktemp("exports"))


def test_json_is_canonical_and_a_fixed_point():
    raw = {"b": [1.0000000000000002, float("nan"), -0.0, 1e-300], "a": {"z": float("inf"), "y": (1, 2)}, "c": True}
    text = exports.json_text(raw)
    assert text.index('"a"') < text.index('"b"') < text.index('"c"')  # sorted keys
    back = json.loads(text)
    assert back["b"] == [1.0, None, 0.0, 1e-300] and back["a"] == {"y": [1, 2], "z": None} and back["c"] is True
    assert "NaN" not in text and "Infinity" not in text
    assert exports.json_text(back) == text  # reading and writing again changes no byte


def test_json_of_real_data_round_trips_byte_for_byte(data):
    text = exports.json_text(data)
    assert exports.json_text(json.loads(text)) == text
    # 12 significant digits keep micro-hartree precision of total energies (common practice, no source)
    for st in json.loads(text)["states"]:
        for lvl, e in st["energies_hartree"].items():
            orig = next(s for s in data["states"] if s["name"] == st["name"])["energies_hartree"][lvl]
            assert e == pytest.approx(orig, abs=1e-8)


def test_xyz_reads_back_in_ase_with_the_json_coordinates(data, tmp_path):
    ase_io = pytest.importorskip("ase.io")
    path = exports.write_xyz(data, tmp_path / "states.xyz")
    frames = ase_io.read(str(path), index=":", format="xyz")
    states = [s for s in data["states"] if s.get("elements")]
    assert len(frames) == len(states)
    for frame, st in zip(frames, states):
        assert frame.get_chemical_symbols() == st["elements"]
        assert frame.positions.ravel().tolist() == pytest.approx([c for xyz in st["coordinates_angstrom"] for c in xyz], abs=1e-8)
    comments = [line for i, line in enumerate(path.read_text().splitlines()) if line.startswith(tuple(s["name"] for s in states))]
    assert [c.split()[0] for c in comments] == [s["name"] for s in states]
    e, _ = exports.state_energy_hartree(states[0])
    assert f"E={e:.8f} Eh" in comments[0]


def test_csv_tables_hold_the_json_numbers(data, tmp_path):
    files = exports.write_csv_tables(data, tmp_path)
    assert set(files) == {"energies.csv", "populations.csv", "parameters.csv", "rates.csv"}
    rates = list(csv.DictReader(io.StringIO(files["rates.csv"].read_text())))
    expected = [(pw["name"], r["model"], r["temperature_k"], r["rate_per_s"]) for pw in data["pathways"] for r in pw["rates"]]
    assert [(r["pathway"], r["model"], float(r["temperature_k"]), float(r["rate_per_s"])) for r in rates] == [
        (a, b, pytest.approx(c), pytest.approx(d, rel=1e-11)) for a, b, c, d in expected]
    energies = list(csv.DictReader(io.StringIO(files["energies.csv"].read_text())))
    prof = data["energy_profiles"][0]
    g = [float(r["value_kj_mol"]) for r in energies
         if r["profile"] == prof["name"] and r["recipe"] == prof["recipe"] and r["quantity"] == "gibbs" and r["temperature_k"] == "298.15"]
    assert g == pytest.approx([p["gibbs_kj_mol"]["298.15"] for p in prof["points"]], abs=1e-9)
    pops = list(csv.DictReader(io.StringIO(files["populations.csv"].read_text())))
    fam = data["isomer_populations"][0]
    share = [float(r["population_fraction"]) for r in pops if r["family"] == fam["family"] and float(r["temperature_k"]) == fam["temperature_k"]]
    assert sum(share) == pytest.approx(1.0, abs=1e-9)  # Boltzmann populations sum to one


def test_latex_tables_are_booktabs_with_consistent_columns(data):
    tex = exports.latex_text(data)
    assert "\\toprule" in tex and "\\midrule" in tex and "\\bottomrule" in tex
    for block in re.findall(r"\\begin\{tabular\}\{([lrc]+)\}(.*?)\\end\{tabular\}", tex, flags=re.S):
        ncol = len(block[0])
        rows = [r for r in block[1].split("\\\\") if "&" in r]
        assert rows
        for r in rows:
            assert len(re.findall(r"(?<!\\)&", r)) == ncol - 1, r
    assert tex.count("\\begin{table}") == tex.count("\\end{table}")


def test_latex_energies_convert_with_the_calorie(data):
    data_kcal = {**data, "project": {**data["project"], "energy_unit": "kcal/mol"}}
    tex = exports.latex_text(data_kcal)
    prof = next(p for p in data["energy_profiles"] if p["kind"] == "pathway")
    ts = next(p for p in prof["points"] if p["state"] == data["pathways"][0]["transition_state"])
    # thermochemical calorie 4.184 J (scipy.constants.calorie)
    expected = f"{ts['electronic_kj_mol'] / constants.calorie:.1f}"
    assert (expected[1:] if expected == "-0.0" else expected) in tex
    assert "kcal/mol" in tex


def test_latex_escapes_user_text():
    assert exports.tex_escape("a_b & 50% $x$ #1 {y} ~^\\") == (
        "a\\_b \\& 50\\% \\$x\\$ \\#1 \\{y\\} \\textasciitilde{}\\textasciicircum{}\\textbackslash{}")


def test_bibtex_is_well_formed_and_cites_the_programs_used(data):
    bib = exports.bibtex_text(data)
    entries = re.findall(r"@(\w+)\{([^,]+),", bib)
    keys = [k for _, k in entries]
    assert len(keys) == len(set(keys)) and keys
    depth = 0
    for ch in bib:
        depth += {"{": 1, "}": -1}.get(ch, 0)
        assert depth >= 0
    assert depth == 0
    for doi in re.findall(r"doi = \{([^}]*)\}", bib):
        assert re.fullmatch(r"10\.\d{4,9}/\S+", doi), doi  # DOI syntax (doi.org handbook: prefix 10.NNNN/suffix)
    programs = {(s.get("program") or "").lower() for s in data["sources"]}
    for prog, key in (("nwchem", "nwchem"), ("gaussian", "gaussian"), ("q-chem", "qchem")):
        assert (key in keys) == (prog in programs)
    assert "cclib" in keys and "eyring" in keys
    assert [r["key"] for r in citations.cited_works(data)] == keys


def test_atomic_write_leaves_the_old_file_when_the_rename_fails(tmp_path, monkeypatch):
    target = tmp_path / "x.csv"
    exports.write_atomic(target, "old\n")
    assert oct(target.stat().st_mode & 0o777) == oct(0o666 & ~_umask())

    def broken(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", broken)
    with pytest.raises(BuildError) as err:
        exports.write_atomic(target, "new\n")
    assert str(target) in str(err.value) and "\n" not in str(err.value)
    assert target.read_text() == "old\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["x.csv"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def test_canonical_refuses_objects_json_cannot_hold():
    with pytest.raises(BuildError):
        exports.canonical({"x": object()})
    assert exports.canonical(float("-inf")) is None and math.isfinite(exports.canonical(1e308))
