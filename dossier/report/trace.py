"""View helpers that show the inputs of derived numbers beside them: site atom lists, recipe
definitions, the atoms no site holds. Computed from the result dict only; nothing is decided here.
"""
from __future__ import annotations

from typing import Any

from dossier.report.exports import fragment_structures


def atom_ranges(numbers: list[int]) -> str:
    """[7, 8, 9, 12] -> '7–9, 12' (1-based numbers as the manifest gives them)."""
    nums = sorted(set(int(n) for n in numbers))
    out, start = [], None
    for i, n in enumerate(nums):
        if start is None:
            start = n
        if i + 1 == len(nums) or nums[i + 1] != n + 1:
            out.append(f"{start}–{n}" if n > start else f"{start}")
            start = None
    return ", ".join(out)


def _formula(elements: list[str]) -> str:
    counts: dict[str, int] = {}
    for el in elements:
        counts[el] = counts.get(el, 0) + 1
    return " ".join(f"{el}{n if n > 1 else ''}" for el, n in counts.items())


def site_rows(data: dict) -> dict[str, Any]:
    """Sites with their atoms (1-based) and elements, and the atoms outside every site."""
    project = data.get("project") or {}
    sites = project.get("sites") or {}
    states = data.get("states") or []
    elements = next((s.get("elements") for s in states if s.get("elements")), []) or []
    n_atoms = len(elements)
    rows, inside = [], set()
    for name, atoms in sites.items():
        inside.update(atoms)
        els = [elements[a - 1] for a in atoms if 0 < a <= n_atoms]
        rows.append({"site": name, "atoms": atom_ranges(atoms), "elements": _formula(els),
                     "redox": name in (project.get("redox_sites") or [])})
    outside = [a for a in range(1, n_atoms + 1) if a not in inside]
    return {"rows": rows, "outside": atom_ranges(outside) if outside else "",
            "outside_elements": _formula([elements[a - 1] for a in outside]) if outside else ""}


def recipe_rows(data: dict) -> list[dict]:
    """Each recipe of the manifest: its name and what it combines (A//B: energy level // geometry level)."""
    out = []
    for name, r in ((data.get("project") or {}).get("recipes") or {}).items():
        lot = r.get("level_of_theory") or ""
        energy, _, thermal = lot.partition(" + ")
        out.append({"name": name, "electronic": r.get("electronic"), "thermal": r.get("thermal"),
                    "energy_level": energy or "–", "thermal_level": thermal or "none",
                    "mixed": r.get("mixed_levels"), "note": r.get("note")})
    return out


def fragments(data: dict) -> list[dict]:
    """Four-point fragment structures (name, file, energy, elements, coordinates)."""
    return [{"name": name, **job, **frag} for name, job, frag in fragment_structures(data)]


def _profile_point(data: dict, pathway: str, recipe: str, state: str | None) -> dict | None:
    for prof in data.get("energy_profiles", []):
        if prof.get("kind", "pathway") == "pathway" and prof.get("name") == pathway and prof.get("recipe") == recipe:
            return next((p for p in prof.get("points", []) if p.get("state") == state), None)
    return None


def _first_param(rates: list[dict], key: str) -> float | None:
    return next(((r.get("parameters") or {}).get(key) for r in rates if (r.get("parameters") or {}).get(key) is not None), None)


def ladder_rows(data: dict, pw: dict) -> list[dict]:
    """One row per level of the method ladder, from what dossier.json holds for it: the electronic
    barrier from the level's energy profile, ΔG‡ and ΔG° of the rung, λ and H_ab the rung's rates
    used, localization and Robin–Day class where the pathway's own recipe is that level, and the
    rates at the report temperature with their validity verdicts."""
    t_ref = (data.get("report") or {}).get("temperature_k")
    states = {s["name"]: s for s in data.get("states", [])}
    scheme = (data.get("report") or {}).get("population_scheme")
    rows = []
    for rung in pw.get("ladder") or []:
        recipe = rung.get("recipe")
        r0 = _profile_point(data, pw["name"], recipe, pw.get("reactant"))
        ts = _profile_point(data, pw["name"], recipe, pw.get("transition_state"))
        de = (ts["electronic_kj_mol"] - r0["electronic_kj_mol"]
              if r0 and ts and ts.get("electronic_kj_mol") is not None and r0.get("electronic_kj_mol") is not None else None)
        rates = rung.get("rates") or []
        own = recipe == pw.get("recipe")
        loc = None
        if own:
            sch = (((states.get(pw.get("reactant")) or {}).get("localization") or {}).get("schemes") or {}).get(scheme or "")
            loc = (sch or {}).get("localization_index")
        at_t = [r for r in rates if t_ref is not None and abs((r.get("temperature_k") or 0) - t_ref) < 1e-6]
        rows.append({
            "recipe": recipe, "level_of_theory": rung.get("level_of_theory"),
            "electronic_barrier_kj_mol": de, "barrier_kj_mol": rung.get("barrier_kj_mol"),
            "driving_force_kj_mol": rung.get("driving_force_kj_mol"),
            "reorganization_energy_kj_mol": _first_param(rates, "reorganization_energy_kj_mol"),
            "coupling_cm1": _first_param(rates, "coupling_cm1"),
            "localization_index": loc, "robin_day_class": pw.get("robin_day_class") if own else None, "own": own,
            "headline": pw.get("headline_rate") if own else None,
            "headline_reason": pw.get("headline_reason") if own else None,
            "rates_at_t": at_t, "rates": rates, "notes": rung.get("notes") or [],
        })
    return rows


def _multiplicity_by_file(data: dict) -> dict[str, int]:
    out: dict[str, int] = {}
    for st in data.get("states", []):
        files = st.get("files") or {}
        paths = [files.get(k) for k in ("geometry", "frequencies", "excited_states")] + list((files.get("single_points") or {}).values())
        for path in paths:
            if path and st.get("multiplicity"):
                out[path] = st["multiplicity"]
    for frag in fragments(data):
        if frag.get("file") and frag.get("multiplicity"):
            out[frag["file"]] = frag["multiplicity"]
    return out


def reference_word(level: dict, open_shell: bool | None) -> str:
    """The SCF reference of a level as the record gives it (unrestricted flag and spin state)."""
    unrestricted = level.get("unrestricted")
    dft = (level.get("method") or "").upper() == "DFT" or bool(level.get("functional"))
    if unrestricted is None:
        return "reference not recorded"
    if dft:
        return "unrestricted Kohn–Sham (UKS)" if unrestricted else ("restricted open-shell Kohn–Sham (ROKS)" if open_shell else "restricted Kohn–Sham (RKS)")
    if unrestricted:
        return "UHF reference"
    return "ROHF reference" if open_shell else "RHF reference"


def reference_rows(data: dict) -> list[dict]:
    """Per level of theory and shell type: the SCF reference and the files, from the sources."""
    mult = _multiplicity_by_file(data)
    rows: dict[tuple, dict] = {}
    for src in data.get("sources", []):
        m = mult.get(src.get("path"))
        open_shell = None if m is None else m > 1
        word = reference_word(src.get("level") or {}, open_shell)
        key = (src.get("level_of_theory") or "level not recorded", word)
        row = rows.setdefault(key, {"level_of_theory": key[0], "reference": word, "files": []})
        row["files"].append(src["path"])
    return list(rows.values())


def transition_state_rows(data: dict) -> list[dict]:
    """How each transition state was obtained, from what the records and the manifest say."""
    out = []
    sources = {s["path"]: s for s in data.get("sources", [])}
    for st in data.get("states", []):
        if st.get("role") != "transition-state":
            continue
        files = st.get("files") or {}
        geo = sources.get(files.get("geometry") or "", {})
        freq = st.get("frequencies") or {}
        out.append({"state": st["name"], "geometry_file": files.get("geometry"), "job_kinds": geo.get("job_kinds") or [],
                    "note": st.get("note"), "frequency_file": files.get("frequencies"),
                    "n_imaginary": freq.get("n_imaginary"), "imaginary_cm1": freq.get("imaginary_cm1") or []})
    return out


def group_checks(checks: list[dict]) -> list[dict]:
    """One row per finding: the same code and message on several states or files is shown once,
    with every state and file it concerns (order of first appearance kept)."""
    rows: dict[tuple, dict] = {}
    for c in checks:
        key = (c.get("severity"), c.get("code"), c.get("message"))
        row = rows.setdefault(key, {**c, "states": [], "files": []})
        if c.get("state") and c["state"] not in row["states"]:
            row["states"].append(c["state"])
        if c.get("file") and c["file"] not in row["files"]:
            row["files"].append(c["file"])
    for row in rows.values():
        row["state"] = ", ".join(row["states"]) or None
        row["file"] = "; ".join(row["files"]) or None
    return list(rows.values())
