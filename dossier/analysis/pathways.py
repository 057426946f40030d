"""One dossier.json entry per pathway: routes chosen, rates, the method ladder, normal-mode evidence and the experiment comparison."""
from __future__ import annotations

from typing import Any


from dossier import units as u
from dossier.science import localization as loc
from dossier.science import applicability, marcus
from dossier.science.couplings import carrier_from_charge
from dossier.analysis.common import COUPLING_PREFERENCE, LAMBDA_PREFERENCE, MODEL_MARCUS, MODEL_MLJ, _Unavailable, _choose, _pick, _rate_ratio, _value_at
from dossier.analysis.rates import _RateInputs, _arrhenius, _mlj_parameters, _rates
from dossier.analysis.symmetric import symmetric_transfer, zero_driving
from dossier.analysis.routes import _chosen_energy_route, _coupling_routes, _double_well, _driving_and_barrier, _lambda_routes, _mode_analysis


def _normal_mode_evidence(ctx, pw) -> dict | None:
    p = ctx.project
    if not pw.transition_state:
        return None
    ts = p.states[pw.transition_state]
    sites = {k: v for k, v in p.sites.items() if k in (pw.donor_site, pw.acceptor_site, pw.bridge_site)} or p.sites
    bridge = p.sites.get(pw.bridge_site) if pw.bridge_site else ctx.bridge_atoms
    out: dict[str, Any] = {}
    if ts.frequencies is not None:
        from dossier.science import thermo as th

        sh = loc.imaginary_mode_shares(ts.frequencies, sites, bridge, masses_amu=th.atomic_masses_amu(ts.frequencies.elements))
        if sh is not None:
            out.update(sh)
            out["file"] = p.label(ts.frequencies)
        cos = loc.mode_overlap_with_path(ts.frequencies, p.states[pw.reactant].geometry, p.states[pw.product].geometry)
        out["overlap_with_reactant_to_product"] = cos
    shifts = loc.proton_shifts([(s, p.states[s].geometry) for s in pw.state_names])
    out["proton_transfer"] = shifts["proton_transfer"]
    out["proton_moves"] = shifts["moves"]
    out["statement"] = shifts["statement"]
    return out



def _surface_barriers(db: dict) -> dict:
    """Surface -> (forward, reverse) barrier at the reference temperature, from one recipe's routes."""
    out = {}
    for kind in applicability.SURFACE_LABELS:
        fwd = _pick(db["barrier"], f"ts-{kind}")
        dg0 = _pick(db["driving_force"], kind)
        out[kind] = None if fwd is None or dg0 is None else (fwd["value_kj_mol"], fwd["value_kj_mol"] - dg0["value_kj_mol"])
    return out


def _pathway_entry(ctx, pw) -> dict:
    p = ctx.project
    temps = ctx.rate_temperatures(pw.name)
    df_recipe, bar_recipe = pw.levels.get("driving_force", pw.recipe), pw.levels.get("barrier", pw.recipe)
    db_df = _driving_and_barrier(ctx, pw, df_recipe, temps)
    db_bar = db_df if bar_recipe == df_recipe else _driving_and_barrier(ctx, pw, bar_recipe, temps)
    driving_routes = db_df["driving_force"]
    barrier_routes = db_bar["barrier"]
    missing = db_df["unavailable"] + ([u_ for u_ in db_bar["unavailable"] if u_ not in db_df["unavailable"]])
    sym = ctx._sym = symmetric_transfer(ctx, pw)
    hop = sym["hop_factor"] if sym else 1.0
    driving = zero_driving(_chosen_energy_route(driving_routes, p.recipes[df_recipe].thermal == "frequencies", False),
                           temps, ctx.t_ref, sym)
    barrier = _chosen_energy_route(barrier_routes, p.recipes[bar_recipe].thermal == "frequencies", True)

    modes, lam_routes, lam, hab_routes, hab = _lambda_and_coupling(ctx, pw, missing)

    rd = applicability.robin_day_assessment(hab["value_cm1"] if hab else None, lam["value_kj_mol"] if lam else None,
                                            _double_well(ctx, pw), _surface_barriers(db_bar))
    mlj, mlj_reason = _mlj_parameters(lam, lam_routes, modes, u.rt_kj_mol(ctx.t_ref))
    nu_n = modes["nuclear_frequency_cm1"] if modes else None
    levels = {k: pw.levels.get(k, pw.recipe) for k in ("driving_force", "barrier", "reorganization_energy", "coupling")}
    inp = _RateInputs(driving=driving, barrier=barrier, lam=lam, hab=hab, mlj=mlj, nu_n_cm1=nu_n, levels=levels,
                      zpe_barrier=_pick(barrier_routes, "ts-electronic+zpe"), hop_factor=hop)
    rates, rate_missing = _rates(ctx, pw, inp, temps, annotate=True)
    if mlj_reason:
        rate_missing = [m for m in rate_missing if m["model"] != MODEL_MLJ] + [{"model": MODEL_MLJ, "reason": mlj_reason}]

    def inputs_at(ts_: list[float]) -> _RateInputs:
        return _rate_inputs_at(ctx, pw, sym, inp, ts_)

    lz = _landau_zener_series(hab, lam, nu_n, temps)

    ladder = [_ladder_rung(ctx, pw, rc, temps, lam, hab, mlj, nu_n, lam_routes, hab_routes) for rc in pw.ladder]

    entry = {
        "name": pw.name, "reactant": pw.reactant, "transition_state": pw.transition_state, "product": pw.product,
        "carrier": carrier_from_charge(p.states[pw.reactant].geometry.charge or 0),
        "donor_site": pw.donor_site, "acceptor_site": pw.acceptor_site, "bridge_site": pw.bridge_site,
        "recipe": pw.recipe, "levels": levels,
        "level_labels": {rc: ctx.level_labels.get(rc) for rc in dict.fromkeys(levels.values())},
        "reference_temperature_k": ctx.t_ref,
        "delta_g0_kj_mol": driving["value_kj_mol"] if driving else None,
        "delta_g0_route": driving["route"] if driving else None,
        "barrier_kj_mol": barrier["value_kj_mol"] if barrier else None,
        "barrier_route": barrier["route"] if barrier else None,
        "reorganization_energy_kj_mol": lam["value_kj_mol"] if lam else None,
        "reorganization_energy_route": lam["route"] if lam else None,
        "coupling_cm1": hab["value_cm1"] if hab else None,
        "coupling_route": hab["route"] if hab else None,
        "robin_day_class": rd["class"],
        "routes": {"reorganization_energy": lam_routes, "coupling": hab_routes, "driving_force": driving_routes,
                   "barrier": barrier_routes, "unavailable": missing},
        "route_preference": {"reorganization_energy": list(LAMBDA_PREFERENCE), "coupling": list(COUPLING_PREFERENCE)},
        "robin_day": rd,
        "symmetric_transfer": sym,
        "normal_mode": _normal_mode_evidence(ctx, pw),
        "mode_analysis": modes,
        "mlj_parameters": mlj,
        "landau_zener": lz,
        "rates": rates,
        "rates_unavailable": rate_missing,
        "arrhenius": _arrhenius(ctx, pw, inputs_at),
        "ladder": ladder,
    }
    _attach_experiment(ctx, entry)
    return entry


def _lambda_and_coupling(ctx, pw, missing: list[dict]) -> tuple:
    """The normal-mode analysis, the reorganization-energy and coupling routes and the chosen ones:
    (modes, lam_routes, lam, hab_routes, hab). Routes that could not be computed are appended to `missing`."""
    try:
        modes = _mode_analysis(ctx, pw)
    except _Unavailable as exc:
        modes = None
        missing.append({"parameter": "reorganization_energy", "route": "normal-mode-projection", "reason": str(exc)})
    lam_routes, lam_missing, fit = _lambda_routes(ctx, pw, modes)
    ctx._lam_routes = lam_routes
    lam = _choose(lam_routes, LAMBDA_PREFERENCE)
    hab_routes, hab_missing = _coupling_routes(ctx, pw, lam, fit)
    hab = _choose(hab_routes, COUPLING_PREFERENCE)
    missing += lam_missing + hab_missing
    return modes, lam_routes, lam, hab_routes, hab


def _rate_inputs_at(ctx, pw, sym, inp: _RateInputs, ts_: list[float]) -> _RateInputs:
    """`inp` with the driving force and barrier recomputed at the temperatures `ts_` (for the Arrhenius fit)."""
    p = ctx.project
    df_recipe, bar_recipe = pw.levels.get("driving_force", pw.recipe), pw.levels.get("barrier", pw.recipe)
    d = _driving_and_barrier(ctx, pw, df_recipe, ts_)
    b = d if bar_recipe == df_recipe else _driving_and_barrier(ctx, pw, bar_recipe, ts_)
    dr = _chosen_energy_route(d["driving_force"], p.recipes[df_recipe].thermal == "frequencies", False)
    return _RateInputs(driving=zero_driving(dr, ts_, ctx.t_ref, sym),
                       barrier=_chosen_energy_route(b["barrier"], p.recipes[bar_recipe].thermal == "frequencies", True),
                       lam=inp.lam, hab=inp.hab, mlj=inp.mlj, nu_n_cm1=inp.nu_n_cm1, levels=inp.levels,
                       zpe_barrier=_pick(b["barrier"], "ts-electronic+zpe"), hop_factor=inp.hop_factor)


def _attach_experiment(ctx, entry: dict) -> None:
    """Add the comparison with the project's measurements, when it has any, to a pathway entry."""
    if ctx.experiment_data is not None:
        from dossier.analysis import experiment as comparison

        comparison = comparison.compare_pathway(entry, ctx.experiment_data, ctx.uncertainty)
        if comparison is not None:
            entry["experiment"] = comparison


def _landau_zener_series(hab: dict | None, lam: dict | None, nu_n: float | None, temps: list[float]) -> list[dict]:
    """Landau–Zener adiabaticity parameter, probability and transmission coefficient at each
    temperature (dossier.science.marcus; Newton & Sutin 1984)."""
    if hab is None or lam is None or nu_n is None:
        return []
    h, lam_kj = hab["value_cm1"], lam["value_kj_mol"]
    return [{"temperature_k": t, "nuclear_frequency_cm1": nu_n, "nuclear_frequency_per_s": nu_n * u.CM1_HZ,
             "electronic_frequency_per_s": marcus.electronic_frequency_per_s(h, lam_kj, t),
             "adiabaticity_parameter": marcus.landau_zener_parameter(h, lam_kj, t, nu_n),
             "probability": marcus.landau_zener_probability(h, lam_kj, t, nu_n),
             "transmission_coefficient": marcus.landau_zener_transmission_coefficient(h, lam_kj, t, nu_n)}
            for t in temps]


def _ladder_rung(ctx, pw, recipe, temps, lam, hab, mlj, nu_n, lam_routes, hab_routes) -> dict:
    p = ctx.project
    rung: dict[str, Any] = {"recipe": recipe, "level_of_theory": ctx.level_labels.get(recipe),
                            "driving_force_kj_mol": None, "barrier_kj_mol": None, "rates": [], "notes": []}
    thermal = p.recipes[recipe].thermal == "frequencies"
    d = _driving_and_barrier(ctx, pw, recipe, temps)
    driving = zero_driving(_chosen_energy_route(d["driving_force"], thermal, False), temps, ctx.t_ref, ctx._sym)
    barrier = _chosen_energy_route(d["barrier"], thermal, True)
    rung["notes"] += [x["reason"] for x in d["unavailable"]]
    if barrier is not None and barrier["value_kj_mol"] < 0:
        rung["notes"].append(f"negative barrier ({barrier['value_kj_mol']:.1f} kJ/mol): the transition state lies "
                             "below the reactant at this level, so its TST rate means nothing")
    if driving:
        rung["driving_force_kj_mol"] = driving["value_kj_mol"]
        rung["driving_force_route"] = driving["route"]
    if barrier:
        rung["barrier_kj_mol"] = barrier["value_kj_mol"]
        rung["barrier_route"] = barrier["route"]
    levels = {"driving_force": recipe, "barrier": recipe,
              "reorganization_energy": pw.levels.get("reorganization_energy", pw.recipe),
              "coupling": pw.levels.get("coupling", pw.recipe)}
    inp = _RateInputs(driving=driving, barrier=barrier, lam=lam, hab=hab, mlj=mlj, nu_n_cm1=nu_n, levels=levels,
                      zpe_barrier=_pick(d["barrier"], "ts-electronic+zpe"),
                      hop_factor=ctx._sym["hop_factor"] if ctx._sym else 1.0)
    rates, missing = _rates(ctx, pw, inp, temps, annotate=True)
    rung["rates"] = [{k: v for k, v in r.items() if k not in ("formula", "provenance")} for r in rates]
    rung["notes"] += [f"{m['model']}: {m['reason']}" for m in missing]
    # every lambda route x every H_ab route at the reference temperature (nonadiabatic Marcus)
    combos = []
    if driving is not None:
        dg0 = _value_at(driving, ctx.t_ref) if any(s["temperature_k"] == ctx.t_ref for s in driving["by_temperature"]) \
            else driving["value_kj_mol"]
        for lr in lam_routes:
            for hr in hab_routes:
                if lr["value_kj_mol"] is None or lr["value_kj_mol"] <= 0 or hr["value_cm1"] is None:
                    continue
                params = {"coupling_cm1": hr["value_cm1"], "reorganization_energy_kj_mol": lr["value_kj_mol"],
                          "delta_g0_kj_mol": dg0, "temperature_k": ctx.t_ref}
                k = marcus.marcus_nonadiabatic_rate_per_s(**params)
                kappa = _rate_ratio(k, marcus.eyring_rate_per_s(marcus.marcus_barrier_kj_mol(lr["value_kj_mol"], dg0),
                                                                ctx.t_ref))
                combos.append({"reorganization_energy_route": lr["route"], "coupling_route": hr["route"],
                               "temperature_k": ctx.t_ref, "model": MODEL_MARCUS,
                               "function": "dossier.science.marcus.marcus_nonadiabatic_rate_per_s", "parameters": params,
                               "rate_per_s": k, "validity": applicability.golden_rule_verdict(
                                   hr["value_cm1"], lr["value_kj_mol"], ctx.t_ref, nu_n, kappa)})
    rung["route_combinations"] = combos
    return rung

