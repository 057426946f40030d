"""View model of the two-page summary for experimental collaborators (summary.html / summary.pdf).

Only numbers that dossier.json holds are quoted (a test parses the rendered page and looks each
one up); the page says what was computed, the headline rate or why there is none, what a
measurement would tell apart, a glossary of every symbol and label it uses, and the caveats.
"""
from __future__ import annotations

from typing import Any

from markupsafe import Markup

MODEL_WORDS = {
    "eyring-tst": "transition-state theory over the computed saddle point (Eyring)",
    "marcus": "nonadiabatic Marcus theory (weak coupling, golden rule)",
    "marcus-hush-adiabatic": "two-state adiabatic Marcus–Hush model (strong coupling, crossing on the lower surface)",
    "mlj": "Marcus–Levich–Jortner (one quantum mode)",
}


def _rates_at(pw: dict, t: float | None) -> list[dict]:
    return [r for r in pw.get("rates", []) if t is not None and abs((r.get("temperature_k") or 0) - t) < 1e-6]


def _route(pw: dict, param: str, name: str) -> dict | None:
    return next((r for r in (pw.get("routes") or {}).get(param, []) if r.get("route") == name), None)


def pathway_facts(data: dict, pw: dict) -> dict[str, Any]:
    t_ref = (data.get("report") or {}).get("temperature_k")
    exp = pw.get("experiment") or {}
    measured = []
    seen = set()
    for e in exp.get("rates") or []:
        if e.get("temperature_k") in seen:
            continue
        seen.add(e.get("temperature_k"))
        measured.append(e)
    vertical = _route(pw, "reorganization_energy", "vertical-excitation")
    return {
        "pw": pw, "t_ref": t_ref, "rates_at_t": _rates_at(pw, t_ref), "measured": measured,
        "band": exp.get("band"), "vertical": vertical,
        "models": sorted({r.get("model") for r in pw.get("rates", []) if r.get("model")}),
    }


def glossary(data: dict, site_table: dict) -> list[tuple[str, str]]:
    """(term, meaning) of every symbol and label the summary uses."""
    out: list[tuple[str, str]] = [
        ("ΔG°", "driving force: free energy of the end structure minus that of the start"),
        ("ΔG‡", "free-energy barrier: free energy of the transition state minus that of the start"),
        ("ΔE‡", "the same barrier from electronic energies only (no zero-point or thermal energy)"),
        ("λ", "reorganization energy: the energy to distort the start structure into the end structure's shape without moving the electron"),
        ("H<sub>ab</sub>", "electronic coupling between the two sites; large H<sub>ab</sub> means the sites share the electron"),
        ("2H<sub>ab</sub>/λ", "below 1: two separate wells (the electron sits on one site); above 1: one well (shared)"),
        ("k", "rate constant of the electron hop, per second (s⁻¹)"),
        ("ν<sub>n</sub>, κ<sub>LZ</sub>", "how often the nuclei attempt the crossing, and the share of attempts that succeed"),
        ("Robin–Day class", "I: no communication; II: electron on one site, hopping; III: electron shared by both sites"),
        ("localization index", "share of the unpaired spin on the site holding most of it (1: on one site, 0: evenly shared)"),
        ("68 % interval", "range that holds the true value with 68 % probability given the assumed uncertainties"),
        ("transition state", "the highest point on the lowest path between the two structures"),
        ("recipe", "a combination of levels of theory; A//B means energies at level A on structures optimised at level B"),
        ("Mulliken, Löwdin, Hirshfeld", "ways of dividing the electron density (and spin) among atoms"),
        ("zero-point energy (ZPE)", "the vibrational energy a molecule keeps even at absolute zero; it can fill a shallow double well"),
        ("RT", "thermal energy per mole: the gas constant times the temperature"),
        ("golden rule", "the weak-coupling rate formula; it fails when the coupling is strong (adiabatic passage)"),
    ]
    out = [(Markup(term), Markup(meaning)) for term, meaning in out]  # fixed text with markup; user text below stays escaped
    for model, words in MODEL_WORDS.items():
        if any(r.get("model") == model for pw in data.get("pathways", []) for r in pw.get("rates", [])) or \
                any(u.get("model") == model for pw in data.get("pathways", []) for u in pw.get("rates_unavailable", [])):
            out.append((model, words))
    for row in site_table.get("rows", []):
        out.append((row["site"], f"site: atoms {row['atoms']}" + (f" ({row['elements']})" if row["elements"] else "")))
    for st in data.get("states", []):
        out.append((st["name"], f"{st.get('role') or 'state'}" + (f": {st['note']}" if st.get("note") else "")))
    for name, r in ((data.get("project") or {}).get("recipes") or {}).items():
        if r.get("level_of_theory"):
            out.append((name, f"recipe: {r['level_of_theory']}"))
    return out
