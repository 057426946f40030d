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
