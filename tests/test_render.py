"""HTML and PDF: the PDF's text holds the JSON's numbers, nothing outside is referenced or fetched, user text is escaped."""
from __future__ import annotations

import re
import subprocess
from pathlib import Path

import pytest

from conftest import require_program
from dossier.report import figures
from dossier.report import containment, render
from dossier.errors import BuildError


@pytest.fixture(scope="module")
def data(tmp_path_factory):
    from render_fixtures import fixture_data

    return fixture_data(tmp_path_factory.mktemp("render-data"))


@pytest.fixture(scope="module")
def figs(data):
    return figures.make_figures(data)


@pytest.fixture(scope="module")
def html(data, figs):
    return render.render_html(data, figs)


@pytest.fixture(scope="module")
def pdf_text(data, tmp_path_factory):
    # tables only (figures=[]), to keep the module fast; the demo build in test_build.py prints the figures too
    pypdf = pytest.importorskip("pypdf")
    root = tmp_path_factory.mktemp("render-pdf")
    pdf = render.write_pdf(render.render_html(data, []), root / "dossier.pdf", root)
    reader = pypdf.PdfReader(str(pdf))
    return "\n".join(page.extract_text() for page in reader.pages), len(reader.pages)


def test_rate_format_reads_back_as_the_number():
    sup = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789-")
    for x in (1.0, 9.96, 2.5e-7, 3.14159e12, 99.9e3, 1.05e-300):
        text = render.fmt_rate(x)
        mant, exp = text.split(" × 10")
        assert float(mant) * 10 ** int(exp.translate(sup)) == pytest.approx(x, rel=0.051)
        assert 1.0 <= float(mant) < 10.0
    assert render.fmt_rate(None) == "–" and render.fmt_rate(0.0) == "–" and render.fmt_rate(float("nan")) == "–"


@pytest.mark.slow
def test_pdf_text_holds_every_hash_coordinate_and_rate(data, pdf_text):
    text, n_pages = pdf_text
    assert n_pages >= 5
    for src in data["sources"]:
        assert src["sha256"] in text, src["path"]
    flat = re.sub(r"\s+", " ", text)
    for st in data["states"]:
        for xyz in st["coordinates_angstrom"]:
            assert " ".join(render.fmt_coordinate(c) for c in xyz) in flat, st["name"]
    for pw in data["pathways"]:
        for r in pw["rates"]:
            assert render.fmt_rate(r["rate_per_s"]) in text, (r["model"], r["temperature_k"])
    for c in data["checks"]:
        if c["severity"] == "error":
            assert c["code"] in text
    assert "Page S1 of" in text and "Table S1." in text


@pytest.mark.slow
def test_pdf_escapes_the_hostile_title(data, pdf_text):
    text, _ = pdf_text
    assert data["project"]["title"] in text  # printed literally, as text


def test_html_is_self_contained(html):
    assert containment.outside_references(html) == []
    assert "<script" not in html.lower() and "<link" not in html.lower()
    assert not re.search(r"@import|@font-face|url\(\s*['\"]?(?!#|data:)", html)
    urls = set(re.findall(r"https?://[^\s\"'<>)]+", html))
    assert urls <= {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}, urls


def test_user_text_is_escaped_everywhere(html, data):
    from render_fixtures import HOSTILE_NOTE

    assert "alert('x')" not in html.replace("&#39;", "'").split("<body>")[0].replace(
        "&lt;script&gt;alert('x')&lt;/script&gt;", "")
    assert "&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt;" in html
    assert HOSTILE_NOTE not in html and "&lt;img src=x onerror=alert(1)&gt; note" in html
    assert containment.outside_references(html) == []


def test_numbering_tables_figures_sections(html):
    tables = [int(n) for n in re.findall(r"<b>Table S(\d+)\.</b>", html)]
    figs_ = [int(n) for n in re.findall(r"<b>Figure S(\d+)\.</b>", html)]
    assert tables == list(range(1, len(tables) + 1)) and figs_ == list(range(1, len(figs_) + 1))
    toc = re.findall(r'<a href="#([a-z]+)"><span class="tocnum">S(\d+)</span>', html)
    assert [int(n) for _, n in toc] == list(range(1, len(toc) + 1))
    for anchor, _ in toc:
        assert f'<section id="{anchor}"' in html


def test_errors_are_shown_prominently(data, html):
    n = sum(1 for c in data["checks"] if c["severity"] == "error")
    assert n > 0  # the fixture project mixes programs: the checks must object
    head = html.split('<nav class="toc">')[0]
    assert f"The checks found {n} error" in head and 'role="alert"' in head


def test_rendering_twice_gives_the_same_html(data, figs, html):
    assert render.render_html(data, figs) == html


def _user_templates(tmp_path: Path, body: str) -> Path:
    folder = tmp_path / "tpl"
    folder.mkdir(exist_ok=True)
    (folder / "summary.html").write_text(body, encoding="utf-8")
    return folder


def test_user_template_refering_outside_is_refused(data, figs, tmp_path):
    folder = _user_templates(tmp_path, '<p>logo</p><img src="../../etc/passwd">')
    with pytest.raises(BuildError) as err:
        render.render_html(data, figs, templates_dir=folder)
    assert "../../etc/passwd" in str(err.value) and "\n" not in str(err.value)
    for bad in ('<img src="https://example.org/x.png">', '<link rel="stylesheet" href="x.css">',
                '<div style="background: url(/etc/passwd)"></div>', "<script>1</script>", '<img src="file:///etc/passwd">'):
        with pytest.raises(BuildError):
            render.render_html(data, figs, templates_dir=_user_templates(tmp_path, bad))


def test_user_template_image_inside_its_folder_is_embedded(data, figs, tmp_path):
    folder = _user_templates(tmp_path, '<p>{{ project.title }}</p><img src="logo.png" alt="logo">')
    png = b"\x89PNG\r\n\x1a\n" + b"\x00" * 16
    (folder / "logo.png").write_bytes(png)
    out = render.render_html(data, figs, templates_dir=folder)
    assert 'src="data:image/png;base64,' in out and containment.outside_references(out) == []
    assert "&lt;script&gt;" in out  # the user's template is autoescaped too


def test_user_template_cannot_escape_the_sandbox(data, figs, tmp_path):
    folder = _user_templates(tmp_path, "{{ ''.__class__.__mro__[1].__subclasses__() }}")
    with pytest.raises(BuildError) as err:
        render.render_html(data, figs, templates_dir=folder)
    assert "sandbox" in str(err.value) or "unsafe" in str(err.value)
    folder = _user_templates(tmp_path, '{% include "../../../etc/passwd" %}')
    with pytest.raises(BuildError):
        render.render_html(data, figs, templates_dir=folder)


def test_pdf_fetcher_refuses_network_and_outside_paths(tmp_path):
    root = tmp_path / "build"
    root.mkdir()
    (root / "inside.txt").write_text("ok")
    outside = tmp_path / "outside.txt"
    outside.write_text("secret")
    fetcher = render.make_fetcher(root)
    for url in ("http://example.org/x.png", "https://example.org/", "ftp://example.org/x", outside.as_uri(),
                (root / ".." / "outside.txt").as_uri(), "file:///etc/passwd"):
        with pytest.raises(ValueError):
            fetcher.fetch(url)
    got = fetcher.fetch((root / "inside.txt").as_uri())
    assert got.read() == b"ok"
    got.close()
    assert fetcher.fetch("data:text/plain;base64,b2s=").read() == b"ok"


@pytest.mark.slow
def test_pdf_of_a_page_with_outside_references_fetches_nothing(tmp_path):
    page = ('<html><body><p>x</p><img src="http://127.0.0.1:9/x.png"><img src="/etc/passwd">'
            '<img src="../outside.png"></body></html>')
    (tmp_path / "outside.png").write_bytes(b"\x89PNG\r\n\x1a\n")
    root = tmp_path / "b"
    root.mkdir()
    calls = []
    fetcher_cls = render._local_fetcher_class()
    original = fetcher_cls.fetch

    def spy(self, url, headers=None):
        calls.append(url)
        return original(self, url, headers)

    fetcher_cls.fetch = spy
    try:
        from weasyprint import HTML

        fetcher = fetcher_cls(root)
        HTML(string=page, base_url=root.as_uri() + "/", url_fetcher=fetcher).write_pdf(str(root / "x.pdf"))
    finally:
        fetcher_cls.fetch = original
    assert (root / "x.pdf").stat().st_size > 0
    assert sorted(fetcher.refused) == sorted(calls) and len(calls) == 3


@pytest.mark.slow
def test_chromium_renders_the_html_and_writes_a_screenshot(html, tmp_path):
    chromium = require_program("chromium")
    page = tmp_path / "dossier.html"
    page.write_text(html, encoding="utf-8")
    shot = tmp_path / "dossier.png"
    cmd = [chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}", "--enable-logging=stderr", "--v=0",
           f"--screenshot={shot}", "--window-size=1280,2000", page.as_uri()]
    done = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert shot.is_file() and shot.stat().st_size > 20000, done.stderr[-2000:]
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "Failed to load resource" not in done.stderr and "Uncaught" not in done.stderr
    print(f"screenshot written to {shot}")
