"""HTML and PDF of the dossier, from the result dict and the figures only.

Templates live in the repository's top-level ``templates/`` folder (one file per section, a
base and a stylesheet), which is installed as the package ``dossier.templates``, and are
rendered by a jinja2 ``SandboxedEnvironment`` with autoescaping on, so user text (titles,
state names, notes) is escaped everywhere and user templates (``--templates DIR``, which
override the built-in files of the same name) cannot reach Python internals.

The HTML is self-contained: stylesheet and SVG figures inline, no scripts, fonts or
images from elsewhere, and a Content-Security-Policy that forbids every fetch
(dossier.report.containment). A user template that refers to an outside resource is refused
(images inside the user's template folder are embedded as data URIs instead). The PDF is
made by WeasyPrint with a URL fetcher that refuses the network and every path outside
the build folder.
"""
from __future__ import annotations

import math
import re
from pathlib import Path
from typing import Any
from urllib.parse import unquote, urlparse

import jinja2
from jinja2.sandbox import SandboxedEnvironment
from markupsafe import Markup

from dossier.science.localization import DELOCALIZED_INDEX
from dossier import __version__, units
from dossier.errors import BuildError
from dossier.reading.files import refuse_special
from dossier.report.containment import embed_local_images, with_csp
from dossier.report.exports import state_energy_hartree, works_cited
from dossier.report.figures import FigureOut, report_temperature, unit_label
from dossier.report import collaborator, trace
from dossier.report.typeset import UNIT_SUFFIXES as _UNIT_SUFFIXES
from dossier.report.typeset import (MINUS, Citer, quantity_label, fmt_log10_interval, fmt_power, fmt_temperature, fmt_wavenumber,
                                    typeset)


def builtin_templates_dir() -> Path:
    """The folder of the built-in templates, found from the installed package (a wheel, or the
    repository's templates/ folder in an editable install) through importlib.resources."""
    from importlib.resources import files

    return Path(str(files("dossier.templates")))


TEMPLATES_DIR = builtin_templates_dir()

#: Section templates in document order: (file, anchor id, title).
SECTIONS = [
    ("summary.html", "summary", "Summary for experimental collaborators"),
    ("checks.html", "checks", "Check findings"),
    ("methods.html", "methods", "Computational details"),
    ("energies.html", "energies", "Energies and isomer populations"),
    ("localization.html", "localization", "Where the electron sits"),
    ("marcus.html", "marcus", "Electron-transfer parameters"),
    ("rates.html", "rates", "Rate estimates and method ladder"),
    ("transfers.html", "transfers", "Transfers between molecules (parameters from routes, no transition state)"),
    ("experiment.html", "experiment", "Comparison with experiment"),
    ("states.html", "states", "States: structures, energies, frequencies"),
    ("provenance.html", "provenance", "Provenance of every number"),
    ("references.html", "references", "References"),
]

_SUPERSCRIPT = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")


# -- number formatting (used by templates and by the tests that compare with the PDF) --------

def fmt_num(x: Any, digits: int = 1) -> str:
    if x is None or isinstance(x, jinja2.Undefined) or (isinstance(x, float) and not math.isfinite(x)):
        return "–"
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return str(x)
    text = f"{x:.{digits}f}"
    if text.startswith("-"):
        return text[1:] if float(text) == 0.0 else MINUS + text[1:]  # no "-0.0"; a real minus sign
    return text


def fmt_rate(x: Any) -> str:
    """A rate in s-1 as 'm.m × 10ⁿ' (two significant digits)."""
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x) or x <= 0:
        return "–"
    exp = math.floor(math.log10(x))
    mant = x / 10**exp
    if round(mant, 1) >= 10.0:
        exp += 1
        mant = x / 10**exp
    return f"{mant:.1f} × 10{str(exp).translate(_SUPERSCRIPT)}"


def fmt_coordinate(x: Any) -> str:
    return fmt_num(x, 6)


def fmt_hartree(x: Any) -> str:
    return fmt_num(x, 6)


def fmt_sha(text: str | None) -> str:
    return text or "–"


_TEX_ACCENTS = {"\\`a": "à", "\\`e": "è", "\\'i": "í", "\\'e": "é", '\\"u': "ü", '\\"o': "ö", '\\"a': "ä", "\\o": "ø", "\\'a": "á", "\\~n": "ñ", "$\\pi$": "π", '\\"U': "Ü"}


def bib_plain(text: Any) -> str:
    """BibTeX field text as plain text: accents resolved, protecting braces and dash ligatures removed."""
    out = str(text or "")
    for tex, char in _TEX_ACCENTS.items():
        out = out.replace("{" + tex + "}", char).replace(tex, char)
    out = out.replace("{", "").replace("}", "").replace("---", "—").replace("--", "–")
    return out.rstrip(".")




def formula_markup(text: Any) -> Markup:
    """'C6H4N2O4' -> C<sub>6</sub>H<sub>4</sub>... (the text is escaped first)."""
    escaped = str(Markup.escape(text or "–"))
    return Markup(re.sub(r"(?<=[A-Za-z)])(\d+)", r"<sub>\1</sub>", escaped))


class Numberer:
    """Supplement numbering: Table S1, Figure S1 ... in order of first use; same key, same number."""

    def __init__(self) -> None:
        self._tables: dict[str, int] = {}
        self._figures: dict[str, int] = {}

    def table(self, key: str) -> str:
        return f"Table S{self._tables.setdefault(str(key), len(self._tables) + 1)}"

    def figure(self, key: str) -> str:
        return f"Figure S{self._figures.setdefault(str(key), len(self._figures) + 1)}"

    @property
    def counts(self) -> dict[str, int]:
        return {"tables": len(self._tables), "figures": len(self._figures)}


# -- environment ----------------------------------------------------------------------------

def make_environment(templates_dir: Path | None = None) -> SandboxedEnvironment:
    loaders = []
    if templates_dir is not None:
        templates_dir = Path(templates_dir)
        if not templates_dir.is_dir():
            raise BuildError("template folder does not exist", where=str(templates_dir))
        for entry in sorted(templates_dir.rglob("*")):  # a pipe named style.css would block the render
            refuse_special(entry, BuildError, "template file")
        loaders.append(jinja2.FileSystemLoader(str(templates_dir)))
    loaders.append(jinja2.FileSystemLoader(str(TEMPLATES_DIR)))
    env = SandboxedEnvironment(loader=jinja2.ChoiceLoader(loaders), autoescape=True,
                               keep_trailing_newline=True)
    env.filters.update(num=fmt_num, rate=fmt_rate, temp=fmt_temperature, wn=fmt_wavenumber, pow=fmt_power,
                       log10k=fmt_log10_interval, tx=_typeset_filter, coord=fmt_coordinate, hartree=fmt_hartree, sha=fmt_sha,
                       sci=lambda x: "–" if x is None else f"{x:.2e}", bibplain=bib_plain, qlabel=quantity_label, formula=formula_markup,
                       scheme=lambda x: {"mulliken": "Mulliken", "lowdin": "Löwdin", "hirshfeld": "Hirshfeld",
                                         "mulliken_sum": "Mulliken (summed)"}.get(str(x), str(x)))
    return env


@jinja2.pass_context
def _typeset_filter(ctx, text: Any) -> Markup:
    """ASCII math as HTML; inline literature becomes numbered citations of this render."""
    citer = ctx.get("citer")
    return typeset(text, cite=citer if isinstance(citer, Citer) else None)


# -- view model: plain words and grouped tables computed here, not in templates ---------------

def _energy(value_kj_mol: Any, unit: str) -> float | None:
    return None if value_kj_mol is None else units.kj_mol_to(float(value_kj_mol), unit)


def _digits(unit: str) -> int:
    return 3 if unit == "eV" else 1


def _state_by_name(data: dict) -> dict[str, dict]:
    return {s["name"]: s for s in data.get("states", [])}


def _where_electron(state: dict | None, scheme: str | None) -> dict:
    if not state:
        return {"site": None}
    loc = state.get("localization") or {}
    site = loc.get("site_of_electron")
    sch = (loc.get("schemes") or {}).get(scheme or "", {}) if scheme else {}
    spin = (sch.get("spin_by_site") or {}).get(site) if site else None
    return {"site": site, "spin": spin, "scheme": scheme, "agree": loc.get("indicators_agree"),
            "geometry_site": (loc.get("geometry") or {}).get("site_of_electron"), "notes": loc.get("notes") or []}


def summary_view(data: dict) -> list[dict]:
    """Per pathway: the facts the plain-words summary states."""
    unit = (data.get("project") or {}).get("energy_unit", "kJ/mol")
    states = _state_by_name(data)
    scheme = data["report"]["population_scheme"]
    out = []
    errors = {c.get("state") for c in data.get("checks") or [] if c.get("severity") == "error" and c.get("state")}
    for pw in data.get("pathways", []):
        head = pw.get("headline_rate")
        model = head["model"] if head else None
        rates = sorted((r for r in pw.get("rates", []) if r.get("model") == model
                        and (r.get("validity") or {}).get("valid") is True), key=lambda r: r.get("temperature_k", 0))
        exp_all = (pw.get("experiment") or {}).get("rates") or []
        matched = [e for e in exp_all if e.get("computed_model") in (model, None)]
        ratios = [e["log10_ratio"] for e in matched if isinstance(e.get("log10_ratio"), (int, float))]
        agreement = None
        if matched:
            agreement = {
                "n": len(matched), "rows": matched,
                "log10_min": min(ratios) if ratios else None, "log10_max": max(ratios) if ratios else None,
                "n_in_68": sum(1 for e in matched if e.get("inside_68")), "n_in_95": sum(1 for e in matched if e.get("inside_95")),
                "other_models": sorted({e.get("computed_model") for e in exp_all if e.get("computed_model") not in (model, None)}),
            }
        out.append({
            "pathway": pw,
            "reactant": _where_electron(states.get(pw.get("reactant")), scheme),
            "product": _where_electron(states.get(pw.get("product")), scheme),
            "ts": _where_electron(states.get(pw.get("transition_state")), scheme),
            "barrier": _energy(pw.get("barrier_kj_mol"), unit),
            "driving_force": _energy(pw.get("delta_g0_kj_mol"), unit),
            "model": model,
            "rates": rates,
            "headline": head, "headline_reason": pw.get("headline_reason"), "supported": pw.get("supported"),
            "flagged": [n for n in (pw.get("reactant"), pw.get("transition_state"), pw.get("product")) if n in errors],
            "experiment": exp_all, "agreement": agreement,
            "band": (pw.get("experiment") or {}).get("band"),
        })
    return out


def methods_view(data: dict) -> dict:
    """Programs, levels of theory and treatments, grouped from the sources."""
    programs: dict[tuple, list[str]] = {}
    levels: dict[str, dict] = {}
    for src in data.get("sources", []):
        programs.setdefault((src.get("program") or "unknown program", src.get("program_version") or "version not printed"), []).append(src["path"])
        label = src.get("level_of_theory") or "level not recorded"
        entry = levels.setdefault(label, {"label": label, "level": src.get("level") or {}, "jobs": set(), "files": 0})
        entry["jobs"].update(src.get("job_kinds") or [])
        entry["files"] += 1
    lv = []
    for entry in levels.values():
        entry = dict(entry)
        entry["jobs"] = sorted(entry["jobs"])
        lv.append(entry)
    lv.sort(key=lambda e: (-e["files"], e["label"]))

    def distinct(field: str) -> list[str]:
        seen: dict[str, str] = {}
        for e in lv:
            v = (e["level"] or {}).get(field)
            if v and v.casefold() not in seen:
                seen[v.casefold()] = v
            elif v and v.upper() == v and seen[v.casefold()] != v:  # prefer the conventional capitals
                seen[v.casefold()] = v
        return list(seen.values())

    refs = works_cited(data)
    number = {r["key"]: True for r in refs}  # membership only; numbers come from the Citer in order of first citation
    return {
        "programs": [{"program": p, "version": v, "files": len(f)} for (p, v), f in sorted(programs.items())],
        "levels": lv,
        "functionals": distinct("functional"), "methods": distinct("method"), "basis_sets": distinct("basis"),
        "dispersion": distinct("dispersion"), "solvation": distinct("solvation"),
        "references": refs, "ref_number": number,
    }


def cite(view: dict, *keys: str) -> Markup:
    """Numbered citation of the works ``keys`` (numbers in order of first citation in this render)."""
    return Markup(view["citer"](list(keys)))


def cite_for(view: dict, kind: str, name: str, version: str | None = None) -> Markup:
    from dossier.analysis.citations import keys_for, program_keys

    return cite(view, *(program_keys(name, version) if kind == "program" else keys_for(kind, name)))


def profile_table(profile: dict, unit: str) -> dict:
    temps = sorted({t for p in profile.get("points", []) for t in (p.get("gibbs_kj_mol") or {})}, key=float)
    rows = []
    for p in profile.get("points", []):
        rows.append({"state": p["state"], "electronic": _energy(p.get("electronic_kj_mol"), unit),
                     "zpe": _energy(p.get("zpe_kj_mol"), unit),
                     "enthalpy": [_energy((p.get("enthalpy_kj_mol") or {}).get(t), unit) for t in temps],
                     "gibbs": [_energy((p.get("gibbs_kj_mol") or {}).get(t), unit) for t in temps]})
    return {"temperatures": [float(t) for t in temps], "rows": rows}


def band_rows(band: dict | None) -> list[dict]:
    """Numbers of the measured-band analysis: quantity, value, its error, the computed counterpart."""
    if not band:
        return []
    computed = band.get("computed_vs") or {}
    rows = []
    for key, value in band.items():
        if isinstance(value, bool) or not isinstance(value, (int, float)) or "_error_" in key:
            continue
        err = None
        for suffix, _ in _UNIT_SUFFIXES:
            if key.endswith(suffix):
                err = band.get(key[: -len(suffix)] + "_error" + suffix)
                break
        other = computed.get(key)
        rows.append({"key": key, "label": quantity_label(key), "value": value, "error": err,
                     "computed": other if isinstance(other, (int, float)) and not isinstance(other, bool) else None})
    return rows


def population_tables(data: dict) -> list[dict]:
    """Isomer populations grouped by (family, recipe, basis): state rows, temperature columns."""
    groups: dict[tuple, list[dict]] = {}
    for row in data.get("isomer_populations", []):
        groups.setdefault((row["family"], row.get("recipe"), row.get("basis")), []).append(row)
    out = []
    for (family, recipe, basis), rows in groups.items():
        rows = sorted(rows, key=lambda r: r["temperature_k"])
        states: list[str] = []
        for r in rows:
            states += [s for s in (r.get("populations") or {}) if s not in states]
        notes = sorted({r["note"] for r in rows if r.get("note")})
        out.append({"family": family, "recipe": recipe, "basis": basis or "relative",
                    "temperatures": [r["temperature_k"] for r in rows], "notes": notes,
                    "rows": [{"state": s, "cells": [(r.get("populations") or {}).get(s) for r in rows]} for s in states]})
    return out


def localization_rows(data: dict) -> list[dict]:
    out = []
    for st in data.get("states", []):
        loc = st.get("localization") or {}
        for name, sch in sorted((loc.get("schemes") or {}).items()):
            out.append({"state": st["name"], "scheme": name, "spin": sch.get("spin_by_site") or {},
                        "charge": sch.get("charge_by_site") or {}, "index": sch.get("localization_index"),
                        "site": sch.get("site_of_electron")})
    return out


def sites_in(data: dict) -> list[str]:
    seen: list[str] = []
    for st in data.get("states", []):
        for sch in ((st.get("localization") or {}).get("schemes") or {}).values():
            for s in list(sch.get("spin_by_site") or {}) + list(sch.get("charge_by_site") or {}):
                if s not in seen:
                    seen.append(s)
    return seen


def carrier_word(data: dict) -> str:
    """'hole', 'electron' (named from the charges by the analysis) or 'charge carrier' when the
    pathways and transfers of one dossier move both; 'electron' when none says."""
    found = {x.get("carrier") for x in (data.get("pathways") or []) + (data.get("transfers") or [])} - {None}
    return found.pop() if len(found) == 1 else ("charge carrier" if found else "electron")


def context(data: dict, figures: list[FigureOut]) -> dict:
    project = data.get("project") or {}
    unit = project.get("energy_unit", "kJ/mol")
    checks = data.get("checks") or []
    sev = {"error": 0, "warning": 1}
    figs_by_section: dict[str, list[FigureOut]] = {}
    figs_by_subject: dict[str, FigureOut] = {}
    for f in figures:
        figs_by_section.setdefault(f.section, []).append(f)
        for k, v in f.subject.items():
            figs_by_subject[f"{f.section}:{k}:{v}"] = f
    present = {
        "summary": True, "checks": True, "methods": True,
        "energies": bool(data.get("energy_profiles") or data.get("isomer_populations")),
        "localization": bool(localization_rows(data)),
        "marcus": bool(data.get("pathways")), "rates": any(p.get("rates") or p.get("ladder") for p in data.get("pathways", [])),
        "experiment": any(p.get("experiment") for p in data.get("pathways", [])),
        "transfers": bool(data.get("transfers")),
        "states": bool(data.get("states")), "provenance": True, "references": True,
    }
    carrier = carrier_word(data)
    sections = [{"file": f, "id": i, "title": t.replace("the electron", f"the {carrier}")}
                for f, i, t in SECTIONS if present[i]]
    citer = Citer(works_cited(data))
    methods = {**methods_view(data), "citer": citer}
    for n, s in enumerate(sections, 1):
        s["number"] = n
    return {
        "d": data, "project": project, "unit": unit, "unit_label": unit_label(unit), "digits": _digits(unit),
        "t_ref": report_temperature(data),
        # RT ln 10: the barrier change that changes a TST rate tenfold, at the report temperature
        "decade_kj_mol": units.rt_kj_mol(report_temperature(data) or 298.15) * math.log(10.0),
        "delocalized_index": DELOCALIZED_INDEX,
        "sections": sections, "section_number": {s["id"]: s["number"] for s in sections},
        "num": Numberer(),
        "figures": figs_by_section, "figure_for": figs_by_subject,
        "svg": lambda f: Markup(f.svg),
        "summary": summary_view(data), "methods": methods, "cite": cite, "cite_for": cite_for, "citer": citer,
        "profile_table": lambda p: profile_table(p, unit),
        "energy": lambda v: _energy(v, unit),
        "loc_rows": localization_rows(data), "sites": sites_in(data), "population_tables": population_tables(data),
        "band_rows": band_rows,
        "checks": trace.group_checks(sorted(checks, key=lambda c: (sev.get(c.get("severity"), 2), c.get("code") or "", c.get("state") or ""))),
        "n_errors": sum(1 for c in checks if c.get("severity") == "error"),
        "n_warnings": sum(1 for c in checks if c.get("severity") == "warning"),
        "states_by_name": _state_by_name(data),
        "state_energy": state_energy_hartree,
        "dossier_version": __version__, "carrier_word": carrier,
        "ladder_rows": lambda pw: trace.ladder_rows(data, pw),
        "references_scf": trace.reference_rows(data), "ts_rows": trace.transition_state_rows(data),
        "collaborator": {"pathways": [collaborator.pathway_facts(data, pw) for pw in data.get("pathways", [])],
                         "glossary": collaborator.glossary(data, trace.site_rows(data))},
        "site_table": trace.site_rows(data), "recipes": trace.recipe_rows(data), "fragments": trace.fragments(data),
    }


def render_html(data: dict, figures: list[FigureOut], *, templates_dir: Path | None = None,
                cited: list[str] | None = None, template: str = "base.html") -> str:
    """The whole dossier as one self-contained HTML page (raises BuildError on outside references).
    ``cited`` (a list) receives the bibliography keys in the order the page numbers them;
    ``template`` "collaborator.html" gives the two-page summary for experimental collaborators."""
    env = make_environment(templates_dir)
    ctx = context(data, figures)
    try:
        text = env.get_template(template).render(**ctx)
        if cited is not None:
            cited[:] = [r["key"] for r in ctx["citer"].bibliography()]
    except jinja2.TemplateNotFound as exc:
        raise BuildError(f"template {exc.name!r} not found", where=str(templates_dir or TEMPLATES_DIR)) from exc
    except jinja2.TemplateSyntaxError as exc:
        raise BuildError(f"template syntax error: {exc.message}", where=f"{exc.filename or exc.name}:{exc.lineno}") from exc
    except jinja2.exceptions.SecurityError as exc:
        raise BuildError(f"template tried something the sandbox forbids: {exc}", where=str(templates_dir or TEMPLATES_DIR)) from exc
    except jinja2.TemplateError as exc:
        raise BuildError(f"template error: {exc}", where=str(templates_dir or TEMPLATES_DIR)) from exc
    except (TypeError, ValueError, KeyError, AttributeError, ArithmeticError) as exc:
        raise BuildError(f"template failed on the data ({type(exc).__name__}: {exc})",
                         where=str(templates_dir or TEMPLATES_DIR)) from exc
    return with_csp(embed_local_images(text, templates_dir))


# -- PDF --------------------------------------------------------------------------------------

def _local_fetcher_class():
    from weasyprint.urls import URLFetcher

    class LocalOnlyFetcher(URLFetcher):
        """Serves data: URIs and files inside one folder; refuses the network and everything else."""

        def __init__(self, root: Path, **kwargs):
            super().__init__(allowed_protocols=("data", "file"), **kwargs)
            self.root = Path(root).resolve()
            self.refused: list[str] = []

        def fetch(self, url, headers=None):
            scheme = url.split(":", 1)[0].lower() if ":" in url else ""
            if scheme == "data":
                return super().fetch(url, headers)
            if scheme == "file":
                path = Path(unquote(urlparse(url).path)).resolve()
                if path.is_relative_to(self.root) and path.is_file():
                    return super().fetch(url, headers)
            self.refused.append(url)
            raise ValueError(f"dossier fetches nothing outside its build folder: {url}")

    return LocalOnlyFetcher


def make_fetcher(root: Path):
    return _local_fetcher_class()(root)


def write_pdf(html_text: str, pdf_path: Path, root: Path) -> Path:
    """Render the HTML to ``pdf_path`` (temporary name + rename); ``root`` bounds what may be read."""
    import logging
    import os
    import tempfile

    from weasyprint import HTML

    pdf_path = Path(pdf_path)
    fetcher = make_fetcher(root)
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    fd, tmp = tempfile.mkstemp(prefix=f".{pdf_path.name}.", suffix=".part", dir=pdf_path.parent)
    os.close(fd)
    try:
        HTML(string=html_text, base_url=Path(root).resolve().as_uri() + "/", url_fetcher=fetcher).write_pdf(tmp)
        os.chmod(tmp, 0o644)
        os.replace(tmp, pdf_path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return pdf_path
