"""The supporting information as a referee and a collaborator read it (issue 15), on the demo study.

The demo is built once (slow); the checks read the rendered HTML, the PDF text (pypdf, from PyPI)
and references.bib back, so they test what a reader gets, not the view model.
"""
from __future__ import annotations

import html as html_mod
import re
import unicodedata

import pytest

from dossier.report.typeset import fmt_temperature, fmt_wavenumber, typeset
from tests.conftest import demo_path

# ASCII stand-ins for math that must not survive into the PDF (issue 15's list).
ASCII_MATH = ["lambda", "dE0", "dG0", "10^(", "10^", "s-1", "cm-1", "H_ab", "nu max", "nu_max", "kappa", "2hab over",
              "dG_act", "dE_act", " x 10", "(c nu)", "nu =", "gamma", "sigma_"]


@pytest.fixture(scope="module")
def demo_build(tmp_path_factory):
    from dossier.report.build import build_dossier

    manifest = demo_path("dossier.toml")
    out = tmp_path_factory.mktemp("si") / "out"
    build_dossier(manifest, out)
    return out


def _bib_keys(text: str) -> list[str]:
    return re.findall(r"^@\w+\{([^,]+),", text, re.M)


@pytest.mark.slow
def test_bibliography_in_html_equals_references_bib_in_order(demo_build):
    html = (demo_build / "dossier.html").read_text(encoding="utf-8")
    listed = re.findall(r'<li id="ref-([^"]+)"', html)
    assert listed == _bib_keys((demo_build / "references.bib").read_text(encoding="utf-8"))
    # numbered in order of first citation: the first citation link of each work appears in list order
    first = []
    for key in re.findall(r'<a class="cite" href="#ref-([^"]+)"', html):
        if key not in first:
            first.append(key)
    assert first == listed[: len(first)]
    # works the demo's formulas and reasons cite inline are in the list (their texts in dossier.json)
    for key in ("newton_sutin1984", "huang_rhys", "reimers2001", "cave_newton", "creutz1994", "nelsen"):
        assert key in listed


@pytest.mark.slow
def test_pdf_text_holds_no_ascii_math(demo_build):
    pypdf = pytest.importorskip("pypdf")
    text = "\n".join(p.extract_text() or "" for p in pypdf.PdfReader(str(demo_build / "dossier.pdf")).pages)
    found = {tok: text.count(tok) for tok in ASCII_MATH if tok in text}
    assert not found, found
    # negative numbers carry the minus sign U+2212 (named by the Unicode database), not a hyphen
    assert unicodedata.name("\u2212") == "MINUS SIGN"
    assert not re.search(r"(?<![\w/.-])-\d", text), re.findall(r".{20}(?<![\w/.-])-\d.{10}", text)[:5]


def test_typeset_known_tokens():
    html = typeset("k(233 K) = 10^(13.2 +2.2/-2.3) s-1; lambda = E_op - dE0; 2H_ab/lambda; min_a on 6-31G, mp2//dft")
    assert "10<sup>13.2 +2.2/\u22122.3</sup> s⁻¹" in html
    assert "λ = E<sub>op</sub> \u2212 ΔE<sub>0</sub>" in html
    assert "2H<sub>ab</sub>/λ" in html
    assert "min_a on 6-31G, mp2//dft" in html  # names, basis sets and recipes untouched
    assert "&lt;b&gt;" in typeset("<b>")  # escaped first


def test_temperatures_as_given_and_imaginary_modes():
    assert fmt_temperature(298.15) == "298.15" and fmt_temperature(300.0) == "300" and fmt_temperature(298.1) == "298.1"
    assert fmt_wavenumber(-778.349) == "778i" and fmt_wavenumber(1066.3) == "1066"


def test_states_are_drawn_in_one_frame_and_aligned_rmsd_is_below_the_unaligned():
    """Two localized structures, the second turned and shifted as a program might write it: after
    the Kabsch superposition its RMSD to the first is that of ASE's minimize_rotation_and_translation
    (ASE from PyPI) and below the unaligned RMSD."""
    import numpy as np
    from scipy.spatial.transform import Rotation

    from dossier.report.structure_figure import common_frame
    from dossier.science.geometry import rmsd
    from tests.dinitro_geometry import dinitrobenzene

    els, a, _ = dinitrobenzene({"nitro_a": (1.40, 1.27), "nitro_b": (1.47, 1.22)})
    _, b, _ = dinitrobenzene({"nitro_a": (1.47, 1.22), "nitro_b": (1.40, 1.27)})
    turned = Rotation.from_euler("zyx", [40, 25, -70], degrees=True).apply(np.asarray(b)) + [3.0, -1.0, 2.0]
    states = [{"name": "min_a", "elements": els, "coordinates_angstrom": a},
              {"name": "min_b", "elements": els, "coordinates_angstrom": turned.tolist()}]
    coords, axes, rms = common_frame(states)
    unaligned = rmsd(turned, a)
    assert rms["min_b"] < unaligned and axes.shape == (3, 3)
    ase = pytest.importorskip("ase")
    from ase.build import minimize_rotation_and_translation

    target, mobile = ase.Atoms(els, positions=a), ase.Atoms(els, positions=turned)
    minimize_rotation_and_translation(target, mobile)
    assert rms["min_b"] == pytest.approx(rmsd(mobile.positions, a), abs=1e-6)
    assert np.allclose(coords["min_b"], mobile.positions, atol=1e-6)


def _numbers_in_json(value, out: set[tuple[float, int]] | None = None) -> list[float]:
    """Every number in dossier.json: numeric values and numbers written inside its strings."""
    found: list[float] = []

    def walk(v):
        if isinstance(v, bool):
            return
        if isinstance(v, (int, float)):
            found.append(float(v))
        elif isinstance(v, str):
            found.extend(float(m.replace("\u2212", "-")) for m in re.findall(r"[-\u2212]?\d+(?:\.\d+)?(?:e[-+]?\d+)?", v))
        elif isinstance(v, dict):
            for x in v.values():
                walk(x)
        elif isinstance(v, list):
            for x in v:
                walk(x)
    walk(value)
    return found


_QUOTED = re.compile(r"(?<![\w/.^\u2212-])([\u2212-]?\d+(?:\.\d+)?)(?: × 10\^([\u2212-]?\d+))?(?![\w.^/-])")


def _quoted_numbers(html_text: str) -> list[tuple[float, int, int | None]]:
    """(value, decimals, power of ten or None) of every number a reader sees on the page."""
    body = re.sub(r"(?s)<style.*?</style>|<head.*?</head>", "", html_text)
    body = re.sub(r"<sup>([^<]*)</sup>", r"^\1", body)
    text = html_mod.unescape(re.sub(r"<[^>]+>", " ", body))
    out = []
    for m in _QUOTED.finditer(text):
        mant = m.group(1).replace("\u2212", "-")
        dec = len(mant.split(".")[1]) if "." in mant else 0
        out.append((float(mant), dec, int(m.group(2).replace("\u2212", "-")) if m.group(2) else None))
    return out


@pytest.mark.slow
def test_every_number_in_the_collaborator_summary_is_in_dossier_json(demo_build):
    import json

    data = json.loads((demo_build / "dossier.json").read_text(encoding="utf-8"))
    page = (demo_build / "summary.html").read_text(encoding="utf-8")
    pool = _numbers_in_json(data)
    quoted = _quoted_numbers(page)
    assert len(quoted) > 20  # the page does quote numbers (rates, energies, temperatures)
    conventions = {68.0, 95.0}  # interval levels, a convention of the report, not a result
    missing = []
    for value, dec, power in quoted:
        if power is None and value in conventions:
            continue
        if power is None:
            ok = any(round(x, dec) == value for x in pool)
        else:  # "m.m × 10^n": two significant digits
            ok = any(x > 0 and round(x / 10**power, dec) == value for x in pool)
        if not ok:
            missing.append((value, power))
    assert not missing, missing


@pytest.mark.slow
def test_collaborator_summary_is_two_pages(demo_build):
    pypdf = pytest.importorskip("pypdf")
    reader = pypdf.PdfReader(str(demo_build / "summary.pdf"))
    assert len(reader.pages) <= 2
    text = "\n".join(p.extract_text() or "" for p in reader.pages)
    assert "Glossary" in text and not [t for t in ASCII_MATH if t in text]
