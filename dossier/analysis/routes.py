"""Parameter routes of a pathway: driving force and barrier, reorganization energy (four-point, vertical excitation, two-state fit, normal-mode projection) and electronic coupling, each with provenance."""
from __future__ import annotations

import math
from typing import Any

import numpy as np

from dossier import units as u
from dossier.science import geometry
from dossier.science import marcus
from dossier.analysis.common import QUANTUM_MODE_KT, _Unavailable, _kj, _lowest_excitation, _pick, _prov, _site_distance


def _driving_and_barrier(ctx, pw, recipe: str, temps: list[float]) -> dict:
    """Routes of dG0 and of the barrier at one recipe, each with values at every temperature."""
    en = ctx.energies
    thermal = ctx.project.recipes[recipe].thermal == "frequencies"
    kinds = ["electronic"] + (["zpe", "enthalpy", "gibbs"] if thermal else [])
    out: dict[str, Any] = {"driving_force": [], "barrier": [], "unavailable": []}
    names = {"electronic": "electronic", "zpe": "electronic+zpe", "enthalpy": "enthalpy", "gibbs": "gibbs"}
    formula_df = {"electronic": "dE0 = E(P) - E(R)", "zpe": "dE0(ZPE) = [E + ZPE](P) - [E + ZPE](R)",
                  "enthalpy": "dH0 = H(P) - H(R)", "gibbs": "dG0 = G(P) - G(R)"}
    for kind in kinds:
        for what, a, b, fml in (("driving_force", pw.reactant, pw.product, formula_df[kind]),
                                ("barrier", pw.reactant, pw.transition_state,
                                 formula_df[kind].replace("(P)", "(TS)").replace("dE0", "dE_act")
                                 .replace("dH0", "dH_act").replace("dG0", "dG_act"))):
            if b is None:
                continue
            route = names[kind] if what == "driving_force" else f"ts-{names[kind]}"
            try:
                series = [{"temperature_k": t, "value_kj_mol": en.relative_kj_mol(a, b, recipe, t, kind)}
                          for t in (temps if kind != "electronic" else temps[:1])]
            except _Unavailable as exc:
                out["unavailable"].append({"parameter": what, "route": route, "recipe": recipe, "reason": str(exc)})
                continue
            if kind == "electronic":
                series = [{"temperature_k": t, "value_kj_mol": series[0]["value_kj_mol"]} for t in temps]
            ref = next(s["value_kj_mol"] for s in series if s["temperature_k"] == ctx.t_ref) \
                if any(s["temperature_k"] == ctx.t_ref for s in series) else series[0]["value_kj_mol"]
            out[what].append({
                "route": route, "recipe": recipe, "value_kj_mol": ref, "temperature_k": ctx.t_ref,
                "by_temperature": series,
                "provenance": _prov(en.files([a, b], recipe), [a, b], en.level_label(a, recipe), fml),
            })
    return out



def _chosen_energy_route(routes: list[dict], thermal: bool, barrier: bool) -> dict | None:
    order = (["ts-gibbs", "ts-electronic"] if barrier else ["gibbs", "electronic"]) if thermal else \
        (["ts-electronic"] if barrier else ["electronic"])
    for name in order:
        r = _pick(routes, name)
        if r is not None:
            return r
    return None



def _mode_analysis(ctx, pw) -> dict | None:
    """Per-mode reorganization of the reactant's frequencies displaced to the product geometry."""
    from dossier.science import thermo as th

    p = ctx.project
    r, prod = p.states[pw.reactant], p.states[pw.product]
    freq = r.frequencies
    if freq is None or freq.vibrations is None or not freq.vibrations.displacements:
        raise _Unavailable(f"reactant '{pw.reactant}' has no frequency job with normal-mode displacements")
    if not geometry.same_atom_order(freq.elements, prod.geometry.elements):
        raise _Unavailable("reactant and product list their atoms differently")
    if len(freq.vibrations.displacements) != len(freq.vibrations.wavenumbers_cm1):
        raise _Unavailable("the frequency job's displacements do not match its wavenumbers")
    n = freq.n_atoms
    if n == 0 or len(freq.coordinates_angstrom) != n or len(prod.geometry.coordinates_angstrom) != n \
            or any(np.shape(d) != (n, 3) for d in freq.vibrations.displacements):
        raise _Unavailable("the frequency job or the product lacks a complete geometry or mode set")
    prod_xyz = geometry.align(prod.geometry.coordinates_angstrom, freq.coordinates_angstrom)
    masses = th.atomic_masses_amu(freq.elements)
    w = list(freq.vibrations.wavenumbers_cm1)
    lam = marcus.mode_reorganization_kj_mol(masses, freq.coordinates_angstrom, prod_xyz, w,
                                            freq.vibrations.displacements)
    total = float(lam.sum())
    if total <= 0:
        raise _Unavailable("the product geometry does not project onto the reactant's modes")
    cutoff = QUANTUM_MODE_KT * u.BOLTZMANN_J_K * ctx.t_ref / u.CM1_J
    hi = [i for i, x in enumerate(w) if x >= cutoff]
    lam_hi = float(lam[hi].sum()) if hi else 0.0
    order = np.argsort(-lam)[:5]
    return {
        "total_kj_mol": total, "quantum_share": lam_hi / total, "quantum_cutoff_cm1": cutoff,
        "effective_mode_cm1": marcus.effective_mode_cm1(lam[hi], np.asarray(w)[hi]) if hi else None,
        "nuclear_frequency_cm1": marcus.nuclear_frequency_cm1(lam, w),
        "top_modes": [{"wavenumber_cm1": float(w[i]), "reorganization_kj_mol": float(lam[i]),
                       "huang_rhys": float(lam[i] / (w[i] * u.CM1_KJ_MOL)) if w[i] > 0 else 0.0} for i in order],
        "files": [p.label(freq), p.label(prod.geometry)],
    }



def _four_point_route(pw, missing: list[dict]) -> dict | None:
    """lambda from the four-point set (Nelsen, Blackstock, Kim, JACS 1987, 109, 677)."""
    if not pw.four_point:
        missing.append({"parameter": "reorganization_energy", "route": "four-point",
                        "reason": "the pathway has no [pathways.four_point] table"})
        return None
    fp = pw.four_point
    vals = {k: fp[k].energy_hartree for k in fp}
    if any(v is None for v in vals.values()):
        missing.append({"parameter": "reorganization_energy", "route": "four-point",
                        "reason": "a four-point job holds no final energy"})
        return None
    lam = marcus.four_point_reorganization_kj_mol(vals["reactant_at_reactant"], vals["reactant_at_product"],
                                                  vals["product_at_product"], vals["product_at_reactant"])
    levels = sorted({fp[k].level.label() for k in fp})
    return {
        "route": "four-point", "value_kj_mol": lam,
        "relaxation_reactant_kj_mol": _kj(vals["reactant_at_product"] - vals["reactant_at_reactant"]),
        "relaxation_product_kj_mol": _kj(vals["product_at_reactant"] - vals["product_at_product"]),
        "energies_hartree": vals, "note": pw.four_point_note,
        "structures": {k: {"file": str((pw.four_point_files or {}).get(k) or "") or None, "elements": list(fp[k].elements),
                           "charge": fp[k].charge, "multiplicity": fp[k].multiplicity,
                           "coordinates_angstrom": [[float(x) for x in c] for c in fp[k].coordinates_angstrom]}
                       for k in fp if fp[k].elements},
        "provenance": _prov(list((pw.four_point_files or {}).values()), [], "; ".join(levels),
                            "lambda = [E(R@P) - E(R@R)] + [E(P@R) - E(P@P)] "
                            "(Nelsen, Blackstock, Kim, JACS 1987, 109, 677)",
                            kind="inner-sphere (the four jobs' own solvent treatment)"),
    }


def _vertical_routes(ctx, pw, rc: str, de0: float | None, missing: list[dict]) -> list[dict]:
    """lambda = E_op - dE0 from the lowest excitation at the reactant (and at the product; Hush 1967)."""
    p, en = ctx.project, ctx.energies
    r, prod = p.states[pw.reactant], p.states[pw.product]
    routes = []
    for state, sign, where in ((r, 1.0, "reactant"), (prod, -1.0, "product")):
        x = _lowest_excitation(state.excited_states)
        if x is None:
            if where == "reactant":
                missing.append({"parameter": "reorganization_energy", "route": "vertical-excitation",
                                "reason": f"reactant '{pw.reactant}' has no excited-state job"})
            continue
        if de0 is None or (where == "product" and state.name == r.name):
            continue
        e_op = x.energy_cm1 * u.CM1_KJ_MOL
        routes.append({
            "route": "vertical-excitation" if where == "reactant" else "vertical-excitation-at-product",
            "value_kj_mol": marcus.reorganization_from_vertical_kj_mol(e_op, sign * de0),
            "vertical_excitation_kj_mol": e_op, "vertical_excitation_cm1": x.energy_cm1,
            "oscillator_strength": x.oscillator_strength, "delta_e0_kj_mol": sign * de0,
            "provenance": _prov([p.label(state.excited_states)] + en.files([pw.reactant, pw.product], rc),
                                [state.name], state.excited_states.level.label(),
                                "lambda = E_op - dE0, lowest excitation at the minimum (Hush, Prog. Inorg. Chem. "
                                "1967, 8, 391); dE0 electronic at recipe " + rc),
        })
    return routes


def _two_state_fit(ctx, pw, rc: str, de0: float | None, missing: list[dict]) -> tuple[dict | None, dict | None]:
    """The two-state model fitted to the electronic barrier and the vertical gaps (route, fit)."""
    p, en = ctx.project, ctx.energies
    ts = p.states.get(pw.transition_state) if pw.transition_state else None
    if ts is None or de0 is None:
        return None, None
    r, prod = p.states[pw.reactant], p.states[pw.product]
    try:
        barrier_e = en.relative_kj_mol(pw.reactant, pw.transition_state, rc, ctx.t_ref, "electronic")
    except _Unavailable:
        barrier_e = None
    obs = {"barrier_kj_mol": barrier_e}
    files = en.files(pw.state_names, rc)
    for key, stt in (("gap_at_reactant_kj_mol", r), ("gap_at_ts_kj_mol", ts), ("gap_at_product_kj_mol", prod)):
        x = _lowest_excitation(stt.excited_states)
        if x is not None and not (key == "gap_at_product_kj_mol" and stt.name == r.name):
            obs[key] = x.energy_cm1 * u.CM1_KJ_MOL
            files.append(p.label(stt.excited_states))
    n_obs = sum(1 for v in obs.values() if v is not None)
    if n_obs < 2 or not any(k.startswith("gap") for k in obs):
        missing.append({"parameter": "reorganization_energy", "route": "two-state-fit",
                        "reason": "needs the barrier and at least one vertical gap (excited-state job)"})
        return None, None
    fit = marcus.fit_two_state_model(delta_e0_kj_mol=de0, **obs)
    fit["observations_kj_mol"] = {k: v for k, v in obs.items() if v is not None}
    fit["delta_e0_kj_mol"] = de0
    route = {
        "route": "two-state-fit", "value_kj_mol": fit["reorganization_energy_kj_mol"],
        "rms_residual_kj_mol": fit["rms_residual_kj_mol"], "observations_kj_mol": fit["observations_kj_mol"],
        "provenance": _prov(list(dict.fromkeys(files)), pw.state_names, en.level_label(pw.reactant, rc),
                            "least-squares fit of the diabatic parabolas lambda x^2, lambda (x-1)^2 + dE0 "
                            "coupled by H_ab to the electronic barrier and the lowest vertical gaps "
                            "(Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168)"),
    }
    return route, fit


def _normal_mode_route(ctx, pw, modes: dict) -> dict:
    """lambda from the reactant's normal modes displaced to the product geometry (harmonic)."""
    return {
        "route": "normal-mode-projection", "value_kj_mol": modes["total_kj_mol"],
        "provenance": _prov(modes["files"], [pw.reactant, pw.product],
                            ctx.project.states[pw.reactant].frequencies.level.label(),
                            "lambda = sum_j (1/2) omega_j^2 Q_j^2, reactant modes displaced to the product "
                            "geometry (harmonic; Huang & Rhys 1950; Reimers, J. Chem. Phys. 2001, 115, 9103)",
                            kind="inner-sphere, harmonic",
                            note="the reactant's adiabatic Hessian is softened by the coupling along the transfer "
                                 "coordinate, so this underestimates lambda when H_ab is large"),
    }


def _lambda_routes(ctx, pw, modes) -> tuple[list[dict], list[dict], dict | None]:
    """Every reorganization-energy route of a pathway, the reasons for the missing ones, and the
    two-state fit (which the coupling routes reuse)."""
    routes, missing = [], []
    rc = pw.levels.get("reorganization_energy", pw.recipe)
    four = _four_point_route(pw, missing)
    if four is not None:
        routes.append(four)
    try:
        de0 = ctx.energies.relative_kj_mol(pw.reactant, pw.product, rc, ctx.t_ref, "electronic")
    except _Unavailable as exc:
        de0 = None
        missing.append({"parameter": "reorganization_energy", "route": "vertical-excitation", "reason": str(exc)})
    routes += _vertical_routes(ctx, pw, rc, de0, missing)
    fit_route, fit = _two_state_fit(ctx, pw, rc, de0, missing)
    if fit_route is not None:
        routes.append(fit_route)
    if modes is not None:
        routes.append(_normal_mode_route(ctx, pw, modes))
    return routes, missing, fit


def _coupling_routes(ctx, pw, lam_route: dict | None, fit: dict | None) -> tuple[list[dict], list[dict]]:
    p, en = ctx.project, ctx.energies
    routes, missing = [], []
    rc = pw.levels.get("coupling", pw.recipe)
    ts = p.states.get(pw.transition_state) if pw.transition_state else None
    r = p.states[pw.reactant]
    # (i) half the splitting at the transition state
    x = _lowest_excitation(ts.excited_states) if ts is not None else None
    if x is not None:
        routes.append({
            "route": "half-splitting-at-ts", "value_cm1": marcus.coupling_half_splitting_cm1(x.energy_cm1),
            "splitting_cm1": x.energy_cm1,
            "provenance": _prov([p.label(ts.excited_states)], [ts.name], ts.excited_states.level.label(),
                                "H_ab = dE_1 / 2, lowest excitation at the symmetric transition state "
                                "(Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168)"),
        })
    else:
        missing.append({"parameter": "coupling", "route": "half-splitting-at-ts",
                        "reason": "no excited-state job at the transition state"})
    # (ii) generalized Mulliken–Hush needs the adiabatic dipole difference
    missing.append({"parameter": "coupling", "route": "generalized-mulliken-hush",
                    "reason": "the records hold no excited-state dipole moments (dmu_12 of Cave & Newton 1996); "
                              "the Mulliken-Hush route below uses the site distance instead"})
    # (iii) two-state fit
    if fit is not None:
        lam_fit = next((rr for rr in ctx._lam_routes if rr["route"] == "two-state-fit"), None)
        routes.append({"route": "two-state-fit", "value_cm1": fit["coupling_cm1"],
                       "rms_residual_kj_mol": fit["rms_residual_kj_mol"],
                       "provenance": dict(lam_fit["provenance"]) if lam_fit else {}})
    # (iv) two-state model from the adiabatic barrier and lambda
    if ts is not None and lam_route is not None:
        try:
            barrier_e = en.relative_kj_mol(pw.reactant, pw.transition_state, rc, ctx.t_ref, "electronic")
            de0 = en.relative_kj_mol(pw.reactant, pw.product, rc, ctx.t_ref, "electronic")
            h = marcus.coupling_from_adiabatic_barrier_cm1(barrier_e, lam_route["value_kj_mol"], de0)
            if h is None or not math.isfinite(h):
                raise _Unavailable(f"the barrier ({barrier_e:.1f} kJ/mol) exceeds (lambda + dE0)^2 / 4 lambda "
                                   f"for lambda = {lam_route['value_kj_mol']:.1f} kJ/mol: no real H_ab")
            routes.append({
                "route": "two-state-from-barrier", "value_cm1": h, "barrier_kj_mol": barrier_e,
                "reorganization_energy_kj_mol": lam_route["value_kj_mol"], "lambda_route": lam_route["route"],
                "delta_e0_kj_mol": de0,
                "provenance": _prov(en.files(pw.state_names, rc) + lam_route["provenance"]["files"],
                                    pw.state_names, en.level_label(pw.reactant, rc),
                                    "H_ab from dE_act = (lambda + dE0)^2 / (4 lambda) - H_ab + H_ab^2 / (lambda + dE0) "
                                    "(Brunschwig, Creutz, Sutin 2002), electronic barrier"),
            })
        except _Unavailable as exc:
            missing.append({"parameter": "coupling", "route": "two-state-from-barrier", "reason": str(exc)})
    # (v) Mulliken–Hush at the reactant: mu_12 from the oscillator strength, dmu = e r_ab
    x = _lowest_excitation(r.excited_states)
    dist = _site_distance(r.geometry, p.sites, pw.donor_site, pw.acceptor_site)
    if x is not None and x.oscillator_strength and dist:
        if x.transition_dipole_au:
            mu = float(np.linalg.norm(x.transition_dipole_au))
            mu_src = "printed transition dipole"
        else:
            mu = marcus.transition_dipole_from_oscillator_au(x.oscillator_strength, x.energy_cm1)
            mu_src = "transition dipole from the oscillator strength, f = 2/3 dE mu^2 (Hilborn 1982)"
        routes.append({
            "route": "mulliken-hush", "value_cm1": marcus.mulliken_hush_coupling_cm1(mu, x.energy_cm1, dist),
            "transition_dipole_au": mu, "vertical_gap_cm1": x.energy_cm1, "site_distance_angstrom": dist,
            "provenance": _prov([p.label(r.excited_states), p.label(r.geometry)], [r.name],
                                r.excited_states.level.label(),
                                f"H_ab = mu_12 dE_12 / (e r_ab), {mu_src}; r_ab between the centroids of "
                                f"{pw.donor_site} and {pw.acceptor_site} (Hush 1967; Creutz, Newton, Sutin 1994)",
                                note="the geometric distance exceeds the effective transfer distance, so this is "
                                     "usually a lower bound"),
        })
    else:
        missing.append({"parameter": "coupling", "route": "mulliken-hush",
                        "reason": "needs an excited-state job with oscillator strengths at the reactant and "
                                  "donor/acceptor sites"})
    return routes, missing



def _double_well(ctx, pw) -> bool | None:
    p = ctx.project
    if pw.reactant == pw.product:
        return False
    if not pw.transition_state:
        return None
    ts = p.states[pw.transition_state]
    thr = p.settings.imaginary_threshold_cm1
    if ts.frequencies is None or ts.frequencies.vibrations is None:
        return None
    n = sum(1 for w in ts.frequencies.vibrations.wavenumbers_cm1 if w < -thr)
    minima_ok = all(p.states[s].role == "minimum" for s in (pw.reactant, pw.product))
    return bool(n == 1 and minima_ok)

