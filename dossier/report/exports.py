"""Machine-readable exports of the dossier, written from the result dict only.

- ``dossier.json``: the whole result (schema: docs/dossier-json.md), canonical: sorted keys,
  floats rounded to 12 significant digits (so summation-order noise never changes the bytes),
  NaN/inf as null, no timestamps;
- CSV tables: energies, populations, parameters, rates (long format, one value per row);
- one multi-structure XYZ file of every state (comment line: state name and energy);
- LaTeX tables (booktabs) and a BibTeX file of the cited methods and programs.

Every file is written atomically: a temporary name in the same folder, then ``os.replace``.
"""
from __future__ import annotations

import csv
import io
import json
import math
import os
import re
import tempfile
from pathlib import Path
from typing import Any, Iterable

from dossier import units
from dossier.analysis.citations import REFERENCES
from dossier.errors import BuildError

FLOAT_DIGITS = 12


def _file_mode() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


_FILE_MODE = _file_mode()


# -- atomic writing ------------------------------------------------------------------------

def write_atomic(path: Path, data: bytes | str) -> Path:
    """Write ``data`` to ``path`` via a temporary file in the same folder and a rename."""
    path = Path(path)
    raw = data.encode("utf-8") if isinstance(data, str) else data
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(raw)
                fh.flush()
                os.fsync(fh.fileno())
            os.chmod(tmp, _FILE_MODE)
            os.replace(tmp, path)
        except BaseException:
            if os.path.exists(tmp):
                os.unlink(tmp)
            raise
    except OSError as exc:
        raise BuildError(f"cannot write: {exc.strerror or exc}", where=str(path)) from exc
    return path


# -- JSON ----------------------------------------------------------------------------------

def canonical(value: Any) -> Any:
    """Plain-JSON copy with stable floats (12 significant digits) and no NaN/inf."""
    if isinstance(value, bool) or value is None or isinstance(value, (int, str)):
        return value
    if isinstance(value, float):
        if not math.isfinite(value):
            return None
        rounded = float(f"{value:.{FLOAT_DIGITS}g}")
        return 0.0 if rounded == 0.0 else rounded
    if isinstance(value, dict):
        return {str(k): canonical(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [canonical(v) for v in value]
    if isinstance(value, Path):
        return value.as_posix()
    if hasattr(value, "item") and callable(value.item):  # numpy scalar
        return canonical(value.item())
    if hasattr(value, "tolist"):  # numpy array
        return canonical(value.tolist())
    if hasattr(value, "to_dict"):
        return canonical(value.to_dict())
    raise BuildError(f"value of type {type(value).__name__} cannot go into dossier.json")


def json_text(data: dict) -> str:
    return json.dumps(canonical(data), sort_keys=True, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def write_json(data: dict, path: Path) -> Path:
    return write_atomic(path, json_text(data))


# -- CSV -----------------------------------------------------------------------------------

#: First characters that make a spreadsheet read a cell as a formula (OWASP, "CSV Injection":
#: equals, plus, minus, at, tab, carriage return).
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def neutral_cell(text: str) -> str:
    """A text cell a spreadsheet shows as text: one leading apostrophe before a formula start, as
    the OWASP CSV-injection guidance says (the csv writer quotes the cell and doubles quotes)."""
    return f"'{text}" if text.startswith(FORMULA_STARTS) else text


def _num(x: Any) -> str:
    """A cell: numbers as numbers (a negative number stays -1.5), text neutralised (neutral_cell)."""
    if x is None:
        return ""
    if isinstance(x, bool):
        return str(x)
    if isinstance(x, float):
        c = canonical(x)
        return "" if c is None else repr(c)
    if isinstance(x, int):
        return str(x)
    return neutral_cell(str(x))


def _csv(header: list[str], rows: Iterable[list[Any]]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        w.writerow([_num(v) for v in r])
    return buf.getvalue()


def energies_rows(data: dict) -> list[list[Any]]:
    rows = []
    for prof in data.get("energy_profiles", []):
        for p in prof.get("points", []):
            base = [prof["name"], prof.get("kind"), prof.get("recipe"), prof.get("reference_state"), p["state"]]
            for q in ("electronic", "zpe"):
                v = p.get(f"{q}_kj_mol")
                if v is not None:
                    rows.append(base + [q, "", v])
            for q in ("enthalpy", "gibbs"):
                for t, v in sorted((p.get(f"{q}_kj_mol") or {}).items(), key=lambda kv: float(kv[0])):
                    if v is not None:
                        rows.append(base + [q, float(t), v])
    return rows


def populations_rows(data: dict) -> list[list[Any]]:
    return [[r["family"], r.get("recipe"), r.get("basis"), r["temperature_k"], s, p]
            for r in data.get("isomer_populations", []) for s, p in (r.get("populations") or {}).items()]


def parameter_rows(data: dict) -> list[list[Any]]:
    unit_of = {"reorganization_energy": "kJ/mol", "coupling": "cm-1", "driving_force": "kJ/mol", "barrier": "kJ/mol"}
    rows = []
    for pw in data.get("pathways", []):
        for param, routes in (pw.get("routes") or {}).items():
            if param == "unavailable" or not isinstance(routes, list):
                continue
            unit = unit_of.get(param, "")
            for r in routes:
                value = r.get("value_kj_mol", r.get("value_cm1", r.get("value")))
                prov = r.get("provenance") or {}
                rows.append([pw["name"], param, r.get("route"), value, unit, prov.get("level_of_theory"),
                             prov.get("formula"), " ".join(prov.get("files") or [])])
    return rows + transfer_parameter_rows(data)


def _at(route: str, separation: Any) -> str:
    return f"{route} at {separation:.3f} A" if isinstance(separation, (int, float)) else route


def transfer_parameter_rows(data: dict) -> list[list[Any]]:
    """Rows of parameters.csv for the transfers: every lambda and dE0 rung, every coupling point
    (route at its separation), every outer-sphere lambda; the first column names the transfer."""
    rows = []
    for tr in data.get("transfers") or []:
        for param, block in (("reorganization_energy", tr["reorganization_energy"]), ("driving_force", tr["driving_force"])):
            for r in block["rungs"]:
                prov = r.get("provenance") or {}
                rows.append([tr["name"], param, r.get("set") or r.get("source"), r["value_kj_mol"], "kJ/mol",
                             r.get("level_of_theory"), prov.get("formula"), " ".join(prov.get("files") or [])])
        for c in tr["couplings"]:
            prov = c.get("provenance") or {}
            rows.append([tr["name"], "coupling", _at(c["route"], c.get("separation_angstrom")), c["value_cm1"], "cm-1",
                         prov.get("level_of_theory"), prov.get("formula"),
                         " ".join(prov.get("files") or []) or prov.get("source")])
        sv = tr.get("solvent") or {}
        for p in sv.get("points") or []:
            rows.append([tr["name"], "outer_reorganization_energy", _at("two-sphere", p["separation_angstrom"]),
                         p["value_kj_mol"], "kJ/mol", sv.get("name"), sv.get("formula"), sv.get("source")])
    return rows


def rate_rows(data: dict) -> list[list[Any]]:
    rows = []
    for pw in data.get("pathways", []):
        for r in pw.get("rates", []):
            i68 = r.get("log10_rate_interval_68") or [None, None]
            i95 = r.get("log10_rate_interval_95") or [None, None]
            rows.append([pw["name"], r.get("model"), r.get("temperature_k"), r.get("rate_per_s"), r.get("log10_rate_median"),
                         i68[0], i68[1], i95[0], i95[1], r.get("barrier_kj_mol"), r.get("transmission_coefficient"),
                         "valid" if (r.get("validity") or {}).get("valid") is True else "not valid",
                         (r.get("validity") or {}).get("note")])
    for tr in data.get("transfers") or []:
        for r in tr.get("rates", []):
            rows.append([tr["name"], "marcus golden rule, " + _at(r["route"], r.get("separation_angstrom")),
                         r["temperature_k"], r["rate_per_s"], None, None, None, None, None, None,
                         r.get("effective_kappa"), "valid" if r.get("holds") else "not valid", r.get("verdict")])
    return rows


CSV_TABLES = {
    "energies.csv": (["profile", "kind", "recipe", "reference_state", "state", "quantity", "temperature_k", "value_kj_mol"], energies_rows),
    "populations.csv": (["family", "recipe", "basis", "temperature_k", "state", "population_fraction"], populations_rows),
    "parameters.csv": (["pathway", "parameter", "route", "value", "unit", "level_of_theory", "formula", "files"], parameter_rows),
    "rates.csv": (["pathway", "model", "temperature_k", "rate_per_s", "log10_rate_median", "log10_rate_68_low",
                   "log10_rate_68_high", "log10_rate_95_low", "log10_rate_95_high", "barrier_kj_mol", "transmission_coefficient",
                   "validity", "validity_note"], rate_rows),
}


def write_csv_tables(data: dict, out_dir: Path) -> dict[str, Path]:
    out = {}
    for name, (header, rows) in CSV_TABLES.items():
        out[name] = write_atomic(Path(out_dir) / name, _csv(header, rows(data)))
    return out


# -- XYZ -----------------------------------------------------------------------------------

def state_energy_hartree(state: dict) -> tuple[float | None, str | None]:
    e = state.get("energies_hartree") or {}
    if e.get("geometry") is not None:
        return e["geometry"], "geometry"
    for k in sorted(e):
        if e[k] is not None:
            return e[k], k
    return None, None


def _xyz_usable(st: dict) -> bool:
    els, xyz = st.get("elements") or [], st.get("coordinates_angstrom") or []
    return bool(els) and len(xyz) == len(els) and all(
        isinstance(c, (list, tuple)) and len(c) == 3 and all(isinstance(v, (int, float)) and math.isfinite(v) for v in c)
        for c in xyz)


def xyz_text(data: dict) -> str:
    """One XYZ frame per state with a full set of finite coordinates. A state without them (a
    cut-off or failed job) is left out, and named in the comment line of the first frame (a
    frame of 0 atoms carries that comment when no state has coordinates), so the file is always
    well-formed: every frame's atom count matches its atom lines."""
    frames, left_out = [], []
    for st in data.get("states", []):
        name = re.sub(r"\s+", "_", str(st.get("name")))
        if not _xyz_usable(st):
            if st.get("elements"):
                why = (st.get("status") or {}).get("geometry") or "no coordinates"
                left_out.append(f"{name} ({why}: no final coordinates)")
            continue
        e, level = state_energy_hartree(st)
        comment = f"{name} E={e:.8f} Eh" if e is not None else f"{name} E=unknown"
        if level:
            comment += f" ({level}: {st.get('level_of_theory') or 'level unknown'})"
        rows = [f"{el:<2s} {x:14.8f} {y:14.8f} {z:14.8f}" for el, (x, y, z) in zip(st["elements"], st["coordinates_angstrom"])]
        frames.append([str(len(rows)), comment, *rows])
    for name, job, frag in fragment_structures(data):
        if not _xyz_usable(frag):
            left_out.append(f"{name} (no final coordinates)")
            continue
        e = job.get("energy_hartree")
        comment = (f"{name} E={e:.8f} Eh (four-point fragment, {job.get('file') or 'file unknown'})" if e is not None
                   else f"{name} E=unknown (four-point fragment)")
        rows = [f"{el:<2s} {x:14.8f} {y:14.8f} {z:14.8f}" for el, (x, y, z) in zip(frag["elements"], frag["coordinates_angstrom"])]
        frames.append([str(len(rows)), comment, *rows])
    if left_out:
        note = "left out: " + ", ".join(left_out)
        if frames:
            frames[0][1] += f"; {note}"
        else:
            frames.append(["0", note])
    lines = [line.replace("\n", " ").replace("\r", " ") for frame in frames for line in frame]
    return "\n".join(lines) + ("\n" if lines else "")


def fragment_structures(data: dict) -> list[tuple[str, dict, dict]]:
    """(name, {file, energy_hartree}, structure) of every four-point fragment job with a geometry:
    name '<pathway>_fourpoint_<job>' (job: reactant_at_reactant, ...)."""
    out = []
    for pw in data.get("pathways", []):
        for r in (pw.get("routes") or {}).get("reorganization_energy", []):
            for job, frag in (r.get("structures") or {}).items():
                if not frag.get("elements"):
                    continue
                name = re.sub(r"\s+", "_", f"{pw['name']}_fourpoint_{job}")
                out.append((name, {"file": frag.get("file"),
                                   "energy_hartree": (r.get("energies_hartree") or {}).get(job)}, frag))
    return out



def write_xyz(data: dict, path: Path) -> Path:
    return write_atomic(path, xyz_text(data))


# -- references ----------------------------------------------------------------------------

# Bibliographic data of the methods and programs a dossier may cite. All entries were
# written from memory (authors, journal, year, volume, first page, DOI); check before print.


def works_cited(data: dict) -> list[dict]:
    """The works the analysis chose to cite (`report.cited_works`), each with its BibTeX fields."""
    return [{**w, **REFERENCES[w["key"]]} for w in data["report"]["cited_works"]]


def bibtex_text(data: dict, order: list[str] | None = None) -> str:
    """BibTeX of the cited works; ``order`` (keys) is the numbering of the rendered report, so the
    file lists the works in the order the HTML and PDF number them."""
    works = works_cited(data)
    if order:
        rank = {k: i for i, k in enumerate(order)}
        works = sorted(works, key=lambda w: rank.get(w["key"], len(rank)))
    chunks = []
    for ref in works:
        fields = [(k, v) for k, v in ref.items() if k not in ("key", "type", "why")]
        body = ",\n".join(f"  {k} = {{{v}}}" for k, v in fields)
        chunks.append(f"@{ref['type']}{{{ref['key']},\n{body}\n}}\n")
    return "\n".join(chunks)


def write_bibtex(data: dict, path: Path, order: list[str] | None = None) -> Path:
    return write_atomic(path, bibtex_text(data, order))


# -- LaTeX ---------------------------------------------------------------------------------

_TEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
                "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}", "<": r"\textless{}", ">": r"\textgreater{}"}


def tex_escape(text: Any) -> str:
    return "".join(_TEX_SPECIAL.get(c, c) for c in str(text))


def _tex_table(caption: str, label: str, header: list[str], rows: list[list[str]], align: str) -> str:
    out = ["\\begin{table}[htbp]", "  \\centering", f"  \\caption{{{tex_escape(caption)}}}", f"  \\label{{{label}}}",
           f"  \\begin{{tabular}}{{{align}}}", "    \\toprule", "    " + " & ".join(header) + " \\\\", "    \\midrule"]
    out += ["    " + " & ".join(r) + " \\\\" for r in rows]
    out += ["    \\bottomrule", "  \\end{tabular}", "\\end{table}", ""]
    return "\n".join(out)


def _f(x: Any, digits: int = 1) -> str:
    if x is None:
        return "--"
    text = f"{x:.{digits}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text  # no "-0.0"


def latex_text(data: dict) -> str:
    unit = (data.get("project") or {}).get("energy_unit", "kJ/mol")
    conv = units.ENERGY_UNITS_FROM_KJ_MOL.get(unit, 1.0)
    tex_unit = tex_escape(unit)
    digits = 3 if unit == "eV" else 1
    parts = ["% Tables of the dossier; needs \\usepackage{booktabs}. Written by dossier from dossier.json.", ""]
    for n, prof in enumerate(data.get("energy_profiles", []), 1):
        temps = sorted({t for p in prof.get("points", []) for t in (p.get("gibbs_kj_mol") or {})}, key=float)
        header = ["State", f"$\\Delta E$ / {tex_unit}", f"$\\Delta E_\\mathrm{{ZPE}}$ / {tex_unit}"]
        header += [f"$\\Delta G$({float(t):g} K) / {tex_unit}" for t in temps]
        rows = []
        for p in prof.get("points", []):
            r = [tex_escape(p["state"]), _f(None if p.get("electronic_kj_mol") is None else p["electronic_kj_mol"] * conv, digits),
                 _f(None if p.get("zpe_kj_mol") is None else p["zpe_kj_mol"] * conv, digits)]
            r += [_f(None if (p.get("gibbs_kj_mol") or {}).get(t) is None else p["gibbs_kj_mol"][t] * conv, digits) for t in temps]
            rows.append(r)
        parts.append(_tex_table(f"Relative energies of {prof.get('kind', '')} {prof['name']} (recipe {prof.get('recipe')}; reference {prof.get('reference_state')}).",
                                f"tab:energies-{n}", header, rows, "l" + "r" * (len(header) - 1)))
    prow = [[tex_escape(r[0]), tex_escape(r[1].replace("_", " ")), tex_escape(r[2]), _f(r[3], 1), tex_escape(r[4]), tex_escape(r[5] or "--")]
            for r in parameter_rows(data)]
    if prow:
        parts.append(_tex_table("Electron-transfer parameters by route.", "tab:parameters",
                                ["Pathway", "Parameter", "Route", "Value", "Unit", "Level of theory"], prow, "lllrll"))
    rrow = []
    for r in rate_rows(data):
        interval = "--" if r[5] is None else f"{r[5]:.1f}--{r[6]:.1f}"
        rate = "--" if r[3] is None else f"{r[3]:.2e}".replace("e+0", "e").replace("e+", "e")
        rrow.append([tex_escape(r[0]), tex_escape(r[1]), _f(r[2], 2), rate,
                     _f(r[4], 2), interval])
    if rrow:
        parts.append(_tex_table("Rate estimates (models, not measurements); $\\log_{10}(k/\\mathrm{s^{-1}})$ interval at 68\\,\\%.", "tab:rates",
                                ["Pathway", "Model", "$T$ / K", "$k$ / s$^{-1}$", "median $\\log_{10} k$", "68\\,\\% interval"], rrow, "llrrrr"))
    pops = populations_rows(data)
    if pops:
        parts.append(_tex_table("Boltzmann populations of isomer families.", "tab:populations",
                                ["Family", "Recipe", "$T$ / K", "State", "Population / \\%"],
                                [[tex_escape(r[0]), tex_escape(r[1]), _f(r[3], 2), tex_escape(r[4]), _f(None if r[5] is None else 100 * r[5], 1)]
                                 for r in pops], "llrlr"))
    return "\n".join(parts)


def write_latex(data: dict, path: Path) -> Path:
    return write_atomic(path, latex_text(data))
