"""Build a dossier: manifest -> project -> analysis -> result dict -> documents and exports.

``build_dossier`` is the one entry point (used by ``dossier build`` and by the archive).
It reads nothing itself: the project loader reads every file through the reading layer
(whose content-hash cache makes a rebuild after a manifest edit re-read nothing), the
analysis turns the project into the ``dossier.json`` dict, and this module adds
``sources`` and ``generator`` before the renderers and exporters write the outputs.

Every output is written into a temporary sibling folder, which replaces the previous
dossier only when everything succeeded: a crash, a bad template or Ctrl-C (even during
the slow PDF step) leaves the previous dossier exactly as it was and no temporary folder
behind. Only a folder that is empty or holds a previous dossier build is ever replaced.
"""
from __future__ import annotations

import os
import platform
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterable

from dossier import __version__
from dossier.errors import BuildError, ChecksFailed, raise_if_terminated

ALL_FORMATS = ("html", "pdf", "json", "csv", "xyz", "tex", "bib")
#: The file that marks a folder as a dossier build (only such folders are replaced).
MARKER = ".dossier-build"
#: Default output folder, created beside the manifest.
DEFAULT_OUT_NAME = "dossier-build"

Progress = Callable[[str], None]


@dataclass
class BuildResult:
    out_dir: Path
    files: dict[str, Path] = field(default_factory=dict)  # file name -> final path
    data: dict = field(default_factory=dict)  # the dossier.json content
    timings_s: dict[str, float] = field(default_factory=dict)  # stage -> wall seconds
    n_errors: int = 0
    n_warnings: int = 0


def default_out_dir(manifest_path: str | os.PathLike) -> Path:
    return Path(os.path.abspath(manifest_path)).parent / DEFAULT_OUT_NAME


def parse_formats(text: str | Iterable[str]) -> tuple[str, ...]:
    items = [t.strip().lower() for t in (text.split(",") if isinstance(text, str) else text) if t.strip()]
    bad = [t for t in items if t not in ALL_FORMATS]
    if bad:
        raise BuildError(f"unknown format {bad[0]!r}; choose from {','.join(ALL_FORMATS)}", where="--formats")
    if not items:
        raise BuildError("no output format given", where="--formats")
    return tuple(dict.fromkeys(items))


# -- the result dict additions ----------------------------------------------------------------

def generator_entry() -> dict:
    import cclib

    return {"dossier_version": __version__, "cclib_version": getattr(cclib, "__version__", None),
            "python_version": platform.python_version()}


def complete_data(data: dict, project) -> dict:
    """Add what only the build knows: the generator, the sites (1-based, as the manifest)."""
    out = dict(data)
    out["generator"] = generator_entry()
    proj = dict(out.get("project") or {})
    proj.setdefault("sites", {k: [i + 1 for i in v] for k, v in project.sites.items()})
    proj.setdefault("title", project.title)
    proj.setdefault("authors", list(project.authors))
    out["project"] = proj
    out.setdefault("schema_version", 1)
    return out


# -- output folder handling -----------------------------------------------------------------

def _check_out_dir(out_dir: Path, manifest_path: Path) -> None:
    """Before any reading: the folder may be replaced as a whole (see dossier.report.targets)."""
    from dossier.report.targets import check_folder_target, project_inputs

    manifest_dir = manifest_path.parent
    if out_dir == manifest_dir or out_dir in manifest_dir.parents:
        raise BuildError("the output folder would contain the manifest and its outputs; choose a folder of its own",
                         where=str(out_dir))
    check_folder_target(out_dir, project_inputs(manifest_path), MARKER)


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _remove_stale_temporaries(out_dir: Path) -> None:
    """Temporary folders a killed build (SIGKILL, power loss) left beside the output folder."""
    prefix = f".{out_dir.name}."
    try:
        siblings = list(out_dir.parent.iterdir())
    except OSError:
        return
    for p in siblings:
        name = p.name
        if not (name.startswith(prefix) and p.is_dir() and (p / MARKER).is_file()):
            continue
        tail = name[len(prefix):]
        kind, _, pid = tail.partition("-")
        if kind in ("building", "previous") and pid.isdigit() and not _pid_alive(int(pid)):
            shutil.rmtree(p, ignore_errors=True)


def _swap_in(tmp: Path, out_dir: Path) -> None:
    old = out_dir.parent / f".{out_dir.name}.previous-{os.getpid()}"
    if out_dir.exists():
        os.replace(out_dir, old)
        try:
            os.replace(tmp, out_dir)
        except BaseException:
            os.replace(old, out_dir)
            raise
        shutil.rmtree(old, ignore_errors=True)
    else:
        os.replace(tmp, out_dir)


def _write_formats(data: dict, tmp: Path, formats: tuple[str, ...], *, manifest_path: Path, templates_dir,
                   png: bool, numbered_atoms: bool, say: Progress, timings: dict[str, float]) -> dict[str, Path]:
    """Write every requested format into the temporary folder ``tmp``; returns name -> path."""
    from dossier.report import exports

    written: dict[str, Path] = {}
    exports.write_atomic(tmp / MARKER, f"Built by dossier {__version__} from {manifest_path.name}; "
                                        "`dossier build` replaces this folder as a whole.\n")
    if "json" in formats:
        written["dossier.json"] = exports.write_json(data, tmp / "dossier.json")
    if "csv" in formats:
        for name, path in exports.write_csv_tables(data, tmp).items():
            written[name] = path
    if "xyz" in formats:
        written["states.xyz"] = exports.write_xyz(data, tmp / "states.xyz")
    if "tex" in formats:
        written["tables.tex"] = exports.write_latex(data, tmp / "tables.tex")
    cited: list[str] = []  # bibliography keys in the order the report numbers them
    if {"html", "pdf"} & set(formats) or png:
        written.update(_write_pages(data, tmp, formats, templates_dir=templates_dir, png=png,
                                    numbered_atoms=numbered_atoms, say=say, timings=timings, cited=cited))
    if "bib" in formats:
        if not cited:  # no HTML rendered: number the works as the HTML would
            from dossier.report import render

            render.render_html(data, [], templates_dir=templates_dir, cited=cited)
        written["references.bib"] = exports.write_bibtex(data, tmp / "references.bib", cited)
    return written


def _write_pages(data: dict, tmp: Path, formats: tuple[str, ...], *, templates_dir, png: bool, numbered_atoms: bool,
                 say: Progress, timings: dict[str, float], cited: list[str] | None = None) -> dict[str, Path]:
    """Figures (PNG on request), the HTML page and the PDF; ``cited`` receives the bibliography order."""
    from dossier.report import exports, figures, render

    written: dict[str, Path] = {}
    t0 = time.perf_counter()
    say("drawing figures")
    figs = figures.make_figures(data, png=png, numbered_atoms=numbered_atoms)
    timings["figures"] = time.perf_counter() - t0
    if png:
        for f in figs:
            written[f"figures/{f.key}.png"] = exports.write_atomic(tmp / "figures" / f"{f.key}.png", f.png)
    if {"html", "pdf"} & set(formats):
        t0 = time.perf_counter()
        say("rendering HTML")
        html_text = render.render_html(data, figs, templates_dir=templates_dir, cited=cited)
        summary_text = render.render_html(data, figs, templates_dir=templates_dir, template="collaborator.html")
        if "html" in formats:
            written["dossier.html"] = exports.write_atomic(tmp / "dossier.html", html_text)
            written["summary.html"] = exports.write_atomic(tmp / "summary.html", summary_text)
        timings["html"] = time.perf_counter() - t0
        if "pdf" in formats:
            t0 = time.perf_counter()
            say("rendering PDF (the slowest step)")
            written["dossier.pdf"] = render.write_pdf(html_text, tmp / "dossier.pdf", tmp)
            written["summary.pdf"] = render.write_pdf(summary_text, tmp / "summary.pdf", tmp)
            timings["pdf"] = time.perf_counter() - t0
    return written


# -- the build --------------------------------------------------------------------------------

def build_dossier(manifest_path, out_dir=None, *, formats: Iterable[str] = ALL_FORMATS, templates_dir=None,
                  jobs: int | None = None, use_cache: bool = True, progress: Progress | None = None,
                  png: bool = False, numbered_atoms: bool = True, draft: bool = False) -> BuildResult:
    """Build the dossier of ``manifest_path`` into ``out_dir`` (default: ``dossier-build`` beside it).

    ``formats``: any of html, pdf, json, csv, xyz, tex, bib. ``templates_dir``: a folder whose
    templates override the built-in ones (rendered sandboxed). ``png``: also write every figure
    as PNG under ``figures/``. ``progress``: called with one line of text per slow step; if it
    also has ``step(done, total)``, the reading and analysis counts go there (see ``_counter``).
    Raises a DossierError (manifest, read or build error) for bad input; the previous dossier
    in ``out_dir`` is then left untouched. When the checks find errors it raises ChecksFailed and
    writes nothing, unless ``draft``: then it builds, sets ``"draft": true`` (and ``draft_errors``)
    in dossier.json and marks every HTML/PDF page "draft: N check errors".
    """
    from dossier.project import load_project

    formats = parse_formats(formats)
    say = progress or (lambda text: None)
    manifest_path = Path(os.path.abspath(manifest_path))
    out_dir = Path(os.path.abspath(out_dir)) if out_dir is not None else default_out_dir(manifest_path)
    if templates_dir is not None:
        templates_dir = Path(os.path.abspath(templates_dir))
        if not templates_dir.is_dir():
            raise BuildError("template folder does not exist", where=str(templates_dir))
    _check_out_dir(out_dir, manifest_path)
    timings: dict[str, float] = {}

    t0 = time.perf_counter()
    say("reading output files")
    project = load_project(manifest_path, jobs=jobs, use_cache=use_cache, progress=_counter(progress, "reading output files"))
    timings["read"] = time.perf_counter() - t0

    from dossier.analysis.assemble import analyse

    t0 = time.perf_counter()
    say("analysing (thermochemistry, localization, rates, uncertainty, checks)")
    data = complete_data(analyse(project, progress=_counter(progress, "analysing")), project)
    timings["analysis"] = time.perf_counter() - t0

    checks = data.get("checks") or []
    errors = [c for c in checks if c.get("severity") == "error"]
    if errors and not draft:
        n = len(errors)
        raise ChecksFailed(f"the checks found {n} error{'s' if n != 1 else ''}; nothing was written "
                           "(fix them, or build with --draft)", errors, where=str(manifest_path))
    data["draft"] = bool(errors)
    data["draft_errors"] = len(errors)
    result = BuildResult(out_dir=out_dir, data=data,
                         n_errors=sum(1 for c in checks if c.get("severity") == "error"),
                         n_warnings=sum(1 for c in checks if c.get("severity") == "warning"))

    tmp = out_dir.parent / f".{out_dir.name}.building-{os.getpid()}"
    try:
        out_dir.parent.mkdir(parents=True, exist_ok=True)
        _remove_stale_temporaries(out_dir)
        if tmp.exists():
            shutil.rmtree(tmp)
        tmp.mkdir()
    except OSError as exc:
        raise BuildError(f"cannot create the output folder ({exc.strerror or exc})", where=str(out_dir)) from None
    try:
        written = _write_formats(data, tmp, formats, manifest_path=manifest_path, templates_dir=templates_dir,
                                 png=png, numbered_atoms=numbered_atoms, say=say, timings=timings)
        t0 = time.perf_counter()
        raise_if_terminated()  # a SIGTERM swallowed by a finalizer still stops the build here
        _swap_in(tmp, out_dir)
        timings["swap"] = time.perf_counter() - t0
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    result.files = {name: out_dir / path.relative_to(tmp) for name, path in written.items()}
    result.timings_s = timings
    return result


def _counter(progress: Progress | None, label: str) -> Callable[[int, int], None] | None:
    """Counts of a stage for ``progress``: its ``step(done, total)`` if it has one (a progress bar,
    dossier.commands._progress), else a text line per tenth."""
    if progress is None:
        return None
    step = getattr(progress, "step", None)
    if callable(step):
        return step
    last = [-1]

    def as_text(done: int, total: int) -> None:
        every = max(1, total // 10)
        if done == total or done // every != last[0]:
            last[0] = done // every
            progress(f"{label}: {done}/{total}")

    return as_text
