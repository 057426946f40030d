"""Symmetric (degenerate) transfers in a pathway: reactant and product images of each other, dG0 = 0
exactly, and the symmetry factor of a symmetric saddle in the site-to-site hop rate
(dossier.science.degenerate has the pure functions)."""
from __future__ import annotations

from typing import Any

from dossier.analysis.common import _Unavailable
from dossier.science import degenerate

#: A saddle counts as symmetric under the reactant -> product relabeling when it superposes on itself with
#: that relabeling to within this RMSD (common practice, no source).
TS_SYMMETRY_RMSD_ANGSTROM = 0.01
SYMMETRY_ROUTE = "symmetry"


def symmetric_transfer(ctx, pw) -> dict[str, Any] | None:
    """The `symmetric_transfer` block of a pathway (docs/dossier-json.md), or None when the reactant and
    product cannot be compared (missing geometries or energies)."""
    p = ctx.project
    if pw.reactant == pw.product:
        return None
    r, prod = p.states[pw.reactant].geometry, p.states[pw.product].geometry
    if r is None or prod is None or not r.coordinates_angstrom or not prod.coordinates_angstrom:
        if getattr(pw, "symmetric", None):
            return {"images": True, "detected_from": "the manifest (symmetric = true)", "hop_factor": 1.0,
                    "ts_symmetric": None, "reason": "stated by the manifest (no geometries to compare)"}
        return None
    rc = pw.levels.get("driving_force", pw.recipe)
    try:
        de = ctx.energies.relative_kj_mol(pw.reactant, pw.product, rc, ctx.t_ref, "electronic")
    except _Unavailable:
        de = None
    out = degenerate.are_images(r.elements, r.coordinates_angstrom, prod.elements, prod.coordinates_angstrom, de)
    out.update({"detected_from": "geometries and electronic energies", "hop_factor": 1.0, "ts_symmetric": None})
    stated = getattr(pw, "symmetric", None)
    if stated is not None:  # the manifest says so: it decides, the detection is kept beside it
        out.update({"detected_images": out["images"], "images": bool(stated),
                    "detected_from": f"the manifest (symmetric = {'true' if stated else 'false'})",
                    "reason": f"stated by the manifest; detection: {out['reason']}"})
    if not out["images"] or not pw.transition_state:
        return out
    ts = p.states[pw.transition_state].geometry
    if ts is None or list(ts.elements) != list(r.elements):
        return out
    if list(prod.elements) != list(r.elements) or len(ts.coordinates_angstrom) != len(r.elements):
        return out
    _, perm = degenerate.best_image_match(list(r.elements), r.coordinates_angstrom, prod.coordinates_angstrom)
    rmsd = degenerate.symmetric_under(ts.coordinates_angstrom, perm)
    out["ts_symmetry_rmsd_angstrom"] = rmsd
    out["ts_symmetric"] = bool(rmsd < TS_SYMMETRY_RMSD_ANGSTROM)
    th_r, th_ts = ctx.energies.thermo(pw.reactant, ctx.t_ref), ctx.energies.thermo(pw.transition_state, ctx.t_ref)
    if out["ts_symmetric"] and th_r is not None and th_ts is not None:
        out["sigma_reactant"], out["sigma_ts"] = int(th_r.symmetry_number), int(th_ts.symmetry_number)
        out["hop_factor"] = degenerate.degenerate_hop_factor(th_r.symmetry_number, th_ts.symmetry_number)
        out["hop_factor_rule"] = ("k_hop = (sigma_TS / sigma_R) (k_B T / h) exp(-dG_act / RT): one saddle joins a "
                                  "reactant to its image, and the free energies carry the rotational symmetry numbers "
                                  "(labeled-saddle counting after Pollak & Pechukas, J. Am. Chem. Soc. 1978, 100, 2984 "
                                  "and Fernandez-Ramos et al., Theor. Chem. Acc. 2007, 118, 813; from memory)")
    return out


def zero_driving(route: dict | None, temps: list[float], t_ref: float, sym: dict | None) -> dict | None:
    """The driving-force route replaced by dG0 = 0 exactly when reactant and product are images."""
    if not sym or not sym.get("images") or route is None:
        return route
    return {"route": SYMMETRY_ROUTE, "recipe": route.get("recipe"), "value_kj_mol": 0.0, "temperature_k": t_ref,
            "by_temperature": [{"temperature_k": t, "value_kj_mol": 0.0} for t in temps],
            "computed_route": route["route"], "computed_value_kj_mol": route["value_kj_mol"],
            "provenance": dict(route.get("provenance") or {},
                               formula="dG0 = 0 exactly: reactant and product are images of each other "
                                       f"({sym['reason']}); no uncertainty")}
