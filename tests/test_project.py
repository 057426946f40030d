"""dossier.project: manifest validation (one line naming the manifest line), bind, load_project.

Line numbers are not typed in: each case marks the offending line with a `# <-` comment and
the test finds that line in the text it wrote. Records for bind come from reading real
third-party outputs (cclib's test data, BSD-3) through dossier.reading.
"""
from __future__ import annotations

import re
import textwrap
from pathlib import Path

import pytest

from dossier.errors import ManifestError
from dossier.project import DEFAULT_RECIPE, bind, load_manifest, load_project

from conftest import fixture_path

FILES = ["a_opt.out", "a_freq.out", "ts_opt.out", "ts_freq.out", "b_opt.out", "b_freq.out", "a_sp.out"]

BASE = """\
[project]
title = "test"
temperatures_k = [298.15, 320.0]

[sites]
left = [1, 2]
right = [3, 4]

[states.a]
geometry = "a_opt.out"
frequencies = "a_freq.out"
single_points = { hi = "a_sp.out" }

[states.ts]
role = "transition-state"
geometry = "ts_opt.out"

[states.b]
geometry = "b_opt.out"

[recipes.dft]
electronic = "geometry"
thermal = "none"

[[pathways]]
name = "a_to_b"
reactant = "a"
transition_state = "ts"
product = "b"
donor_site = "left"
acceptor_site = "right"
"""


def _write(tmp_path: Path, text: str, files=FILES) -> Path:
    for f in files:
        (tmp_path / f).write_text("placeholder output\n")
    path = tmp_path / "dossier.toml"
    path.write_text(textwrap.dedent(text))
    return path


def _marked_line(path: Path) -> int:
    lines = path.read_text().splitlines()
    hits = [i + 1 for i, line in enumerate(lines) if "# <-" in line]
    assert len(hits) == 1, "test manifest must mark exactly one line"
    return hits[0]


def _error(path: Path) -> ManifestError:
    with pytest.raises(ManifestError) as info:
        load_manifest(path)
    err = info.value
    text = str(err)
    assert "\n" not in text, "manifest errors are one line"
    assert err.where == f"{path}:{_marked_line(path)}", text
    return err


def test_sound_manifest_loads_with_defaults(tmp_path):
    m = load_manifest(_write(tmp_path, BASE))
    assert m.settings.temperatures_k == [298.15, 320.0]
    # defaults named in the team contract
    assert (m.settings.energy_unit, m.settings.standard_state, m.settings.qrrho) == ("kJ/mol", "1M", "grimme")
    assert (m.settings.frequency_scale, m.settings.imaginary_threshold_cm1) == (1.0, 20.0)
    assert m.sites == {"left": [0, 1], "right": [2, 3]}  # 1-based in the file, 0-based in code
    assert [p.name for p in m.all_files()] == ["a_opt.out", "a_freq.out", "a_sp.out", "ts_opt.out", "b_opt.out"]
    assert all(p.is_absolute() for p in m.all_files())
    assert m.pathways[0].transition_state == "ts"


def test_toml_syntax_error_keeps_tomllib_line(tmp_path):
    text = BASE.replace('title = "test"', 'title = "test  # <-')
    err = _error(_write(tmp_path, text))
    assert "TOML syntax" in err.reason


def test_unknown_state_in_pathway(tmp_path):
    text = BASE.replace('product = "b"', 'product = "c"  # <-')
    err = _error(_write(tmp_path, text))
    assert "state 'c'" in err.reason and "[states]" in err.reason


def test_missing_file(tmp_path):
    text = BASE.replace('geometry = "b_opt.out"', 'geometry = "b_optt.out"  # <-')
    err = _error(_write(tmp_path, text))
    assert "b_optt.out" in err.reason and "does not exist" in err.reason


def test_duplicate_pathway_name(tmp_path):
    text = BASE + '\n[[pathways]]\nname = "a_to_b"  # <-\nreactant = "b"\nproduct = "a"\n'
    err = _error(_write(tmp_path, text))
    assert "used twice" in err.reason


def test_duplicate_state_table_is_a_toml_error(tmp_path):
    text = BASE + '\n[states.b]  # <-\ngeometry = "b_opt.out"\n'
    err = _error(_write(tmp_path, text))
    assert "TOML syntax" in err.reason


def test_wrong_type(tmp_path):
    text = BASE.replace("temperatures_k = [298.15, 320.0]", 'temperatures_k = ["298.15"]  # <-')
    err = _error(_write(tmp_path, text))
    assert "list of numbers" in err.reason


def test_wrong_choice(tmp_path):
    text = BASE.replace('role = "transition-state"', 'role = "saddle"  # <-')
    err = _error(_write(tmp_path, text))
    assert "minimum, transition-state" in err.reason


def test_unknown_recipe(tmp_path):
    text = BASE.replace('acceptor_site = "right"', 'acceptor_site = "right"\nrecipe = "ccsd"  # <-')
    err = _error(_write(tmp_path, text))
    assert "recipe 'ccsd'" in err.reason


def test_unknown_key_suggests_the_known_one(tmp_path):
    text = BASE.replace('frequencies = "a_freq.out"', 'frequences = "a_freq.out"  # <-')
    err = _error(_write(tmp_path, text))
    assert "did you mean 'frequencies'" in err.reason


def test_recipe_loop(tmp_path):
    text = BASE.replace('[recipes.dft]\n', '[recipes.x]\nbased_on = "dft"\n\n[recipes.dft]\nbased_on = "x"  # <-\n')
    err = _error(_write(tmp_path, text))
    assert "loop" in err.reason


def test_site_atom_zero(tmp_path):
    text = BASE.replace("left = [1, 2]", "left = [0, 1]  # <-")
    err = _error(_write(tmp_path, text))
    assert "start at 1" in err.reason


def test_recipe_single_point_missing_on_a_state(tmp_path):
    text = BASE.replace('thermal = "none"', 'thermal = "none"\n\n[recipes.hi]\nelectronic = "hi"\nthermal = "none"')
    text = text.replace('acceptor_site = "right"', 'acceptor_site = "right"\nrecipe = "hi"  # <-')
    err = _error(_write(tmp_path, text))
    assert "single_points" in err.reason and "'ts'" in err.reason


def test_family_unknown_state_is_found_in_inline_array(tmp_path):
    text = BASE + '\n[[isomer_families]]\nname = "iso"\nstates = ["a", "zz"]  # <-\n'
    err = _error(_write(tmp_path, text))
    assert "'zz'" in err.reason


def test_line_locator_on_inline_table_and_dotted_keys(tmp_path):
    text = BASE.replace('single_points = { hi = "a_sp.out" }',
                        'single_points.hi = "a_sp.out"\nsingle_points."ccsd(t)" = "missing.out"  # <-')
    err = _error(_write(tmp_path, text))
    assert "missing.out" in err.reason


# -- bind on real records -------------------------------------------------------
def _dvb_manifest(tmp_path: Path, extra_site="[1, 2, 3]") -> Path:
    opt = fixture_path("Gaussian/basicGaussian16/dvb_gopt.out")
    ir = fixture_path("Gaussian/basicGaussian16/dvb_ir.out")
    td = fixture_path("Gaussian/basicGaussian16/dvb_td.out")
    nw = fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out")
    path = tmp_path / "dossier.toml"
    path.write_text(textwrap.dedent(f"""\
        [sites]
        ring = {extra_site}
        vinyl = [4, 5]

        [states.g]
        geometry = "{opt}"
        frequencies = "{ir}"
        excited_states = "{td}"

        [states.n]
        geometry = "{nw}"

        [[pathways]]
        name = "g_to_n"
        reactant = "g"
        product = "n"
        donor_site = "ring"
        acceptor_site = "vinyl"
        """))
    return path


def test_load_project_on_real_records(tmp_path):
    project = load_project(_dvb_manifest(tmp_path), jobs=1)
    g = project.states["g"]
    assert g.geometry.program == "Gaussian" and g.geometry.n_atoms == 20  # divinylbenzene C10H10
    assert g.frequencies is not None and g.frequencies.vibrations is not None
    assert g.role == "minimum" and g.role_source == "imaginary count"
    assert project.states["n"].role_source == "default"  # no frequency job
    assert project.sites["ring"] == [0, 1, 2]
    assert project.pathways[0].recipe == DEFAULT_RECIPE
    # the implicit recipe adds thermal corrections only if every state has a frequency job
    assert project.recipes[DEFAULT_RECIPE].thermal == "none"
    assert set(project.pathways[0].levels) == {"driving_force", "barrier", "reorganization_energy", "coupling"}
    assert project.label(g.geometry).endswith("dvb_gopt.out")


def test_bind_rejects_atom_number_beyond_the_molecule(tmp_path):
    path = _dvb_manifest(tmp_path, extra_site="[1, 2, 21]")
    manifest = load_manifest(path)
    from dossier.reading import read

    records = {p: read(p) for p in manifest.all_files()}
    with pytest.raises(ManifestError) as info:
        bind(manifest, records)
    line = next(i + 1 for i, t in enumerate(path.read_text().splitlines()) if t.startswith("ring"))
    assert info.value.where == f"{path}:{line}"
    assert "21" in info.value.reason and "only 20 atoms" in info.value.reason


def test_bind_reports_a_file_that_is_no_output(tmp_path):
    path = _dvb_manifest(tmp_path)
    text = path.read_text()
    bogus = tmp_path / "notes.out"
    bogus.write_text("these are my notes, not a calculation\n")
    text = re.sub(r'geometry = "[^"]*dvb_gopt_ks.out"', f'geometry = "{bogus}"', text)
    path.write_text(text)
    with pytest.raises(ManifestError) as info:
        load_project(path, jobs=1)
    line = next(i + 1 for i, t in enumerate(text.splitlines()) if "notes.out" in t)
    assert info.value.where == f"{path}:{line}" and "could not be read" in info.value.reason


def test_documented_example_loads(tmp_path):
    # docs/manifest.md's complete example must pass the validator it documents
    doc = (Path(__file__).resolve().parent.parent / "docs" / "manifest.md").read_text(encoding="utf-8")
    block = doc.split("```toml", 1)[1].split("```", 1)[0]
    files = re.findall(r'"((?:pathway|ladder|fourpoint|survey)/[^"]+)"', block)
    for f in files:
        (tmp_path / f).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / f).write_text("placeholder output\n")
    path = tmp_path / "dossier.toml"
    path.write_text(block)
    m = load_manifest(path)
    assert len(m.all_files()) == len(set(files))
    assert m.pathways[0].four_point is not None and m.isomer_families[0].states == ["ortho", "min_a", "para"]
    assert m.experiment["rates"][0]["pathway"] == "a_to_b"  # passed through raw


def test_documented_finding_codes_match_the_checker():
    from dossier.project.checks import CODES

    doc = (Path(__file__).resolve().parent.parent / "docs" / "manifest.md").read_text(encoding="utf-8")
    table = set(re.findall(r"^\| `([A-Z0-9-]+)` \|", doc, re.M))
    assert table == set(CODES)


def test_line_locator_survives_strings_comments_and_multiline_values():
    # The line of each key, found independently by searching the text for a unique marker.
    from dossier.project.locator import Locator

    text = textwrap.dedent('''\
        a = "x # ] [ {"   # comment with = sign
        b = [
          1, # one
          "two ]",
          { c = 1, d = "}" },
        ]
        'lit key' = 'x'
        m = """
        multi [x]
        y = 2
        """
        [t . "u v"]
        z = 1
        [[arr]]
        k = 1
        [[arr]]
        k = 2
        [arr.sub]
        w = 3
        ''')
    lines = text.splitlines()

    def line_with(s, nth=0):
        return [i + 1 for i, t in enumerate(lines) if s in t][nth]

    loc = Locator(text)
    assert loc.line_of(("b", 2, "d")) == line_with('d = "}"')
    assert loc.line_of(("lit key",)) == line_with("'lit key'")
    assert loc.line_of(("m",)) == line_with('m = """')
    assert loc.line_of(("t", "u v", "z")) == line_with("z = 1")
    assert loc.line_of(("arr", 1, "k")) == line_with("k = 2")
    assert loc.line_of(("arr", 1, "sub", "w")) == line_with("w = 3")
    assert loc.line_of(("arr", 1, "nothing")) == line_with("[[arr]]", 1)  # nearest known ancestor


def test_recipe_naming_a_single_point_label_no_state_has(tmp_path):
    text = BASE.replace('electronic = "geometry"', 'electronic = "ccsd"  # <-')
    err = _error(_write(tmp_path, text))
    assert "no state has" in err.reason and "hi" in err.reason
