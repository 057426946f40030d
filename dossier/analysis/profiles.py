"""Energy profiles of pathways and isomer families, and isomer populations."""
from __future__ import annotations



from dossier.analysis.common import _Unavailable


def _profile(ctx, name: str, kind: str, states: list[str], recipe: str) -> dict:
    """One energy profile through dossier.energetics (our RRHO corrections, the recipe's electronic energies)."""
    from dossier.science import energetics

    en = ctx.energies
    thermal = ctx.project.recipes[recipe].thermal == "frequencies"
    rows, notes = [], []
    for s in states:
        try:
            e, _, _ = en.electronic(s, recipe)
        except _Unavailable as exc:
            notes.append(f"{exc}; left out of the profile")
            continue
        thermo = [en.thermo(s, t) for t in ctx.temperatures] if thermal else []
        if thermal and any(t is None for t in thermo):
            notes.append(f"state '{s}': no thermal correction ({en.thermo_error(s) or 'no frequency job'})")
        rows.append(energetics.StateEnergies.from_thermo(s, e, [t for t in thermo if t is not None]))
    if not rows:
        return {"name": name, "kind": kind, "recipe": recipe, "level_of_theory": ctx.level_labels.get(recipe),
                "reference_state": None, "points": [], "notes": notes}
    prof = energetics.energy_profile(rows, reference=None if kind == "pathway" else "lowest",
                                     temperatures_k=ctx.temperatures, name=name, kind=kind, recipe=recipe)
    prof["level_of_theory"] = ctx.level_labels.get(recipe)
    prof["files"] = en.files([r.name for r in rows], recipe)
    prof["notes"] = notes
    return prof



def _energy_profiles(ctx) -> list[dict]:
    out = []
    p = ctx.project
    for pw in p.pathways:
        for rc in dict.fromkeys([pw.recipe, *pw.levels.values(), *pw.ladder]):
            out.append(_profile(ctx, pw.name, "pathway", pw.state_names, rc))
    for fam in p.isomer_families:
        out.append(_profile(ctx, fam.name, "isomer-family", fam.states, fam.recipe))
    return out



def _isomer_populations(ctx) -> list[dict]:
    from dossier.science import energetics

    out = []
    p = ctx.project
    for fam in p.isomer_families:
        thermal = p.recipes[fam.recipe].thermal == "frequencies"
        for t in ctx.temperatures:
            basis = "gibbs" if thermal else "electronic"
            try:
                g = {s: ctx.energies.relative_kj_mol(fam.states[0], s, fam.recipe, t, basis) for s in fam.states}
            except _Unavailable as exc:
                out.append({"family": fam.name, "recipe": fam.recipe, "temperature_k": t, "basis": basis,
                            "populations": None, "note": str(exc)})
                continue
            pops = energetics.boltzmann_populations(g, t)
            out.append({"family": fam.name, "recipe": fam.recipe, "temperature_k": t, "basis": basis,
                        "relative_kj_mol": g, "populations": {k: float(v) for k, v in dict(pops).items()}})
    return out

