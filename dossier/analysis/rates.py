"""Rate entries of a pathway: every model at every temperature, with its uncertainty interval and its range annotations; the local Arrhenius series."""
from __future__ import annotations

from collections.abc import Callable


from dossier.science import applicability, marcus
from dossier.analysis.common import FORMULAS, FUNCTIONS, LOCAL_ARRHENIUS_STEP_K, MLJ_N_MAX, MODELS, MODEL_ADIABATIC, MODEL_EYRING, MODEL_MARCUS, MODEL_MLJ, _Unavailable, _pick, _rate_ratio, _value_at


class _RateInputs:
    """Everything a pathway's rate models need at one recipe combination. ``zpe_barrier`` is the
    electronic+ZPE barrier route at the barrier's recipe (None without frequency jobs)."""

    def __init__(self, *, driving, barrier, lam, hab, mlj, nu_n_cm1, levels, zpe_barrier=None, hop_factor=1.0):
        self.driving, self.barrier, self.lam, self.hab = driving, barrier, lam, hab
        self.mlj, self.nu_n_cm1, self.levels = mlj, nu_n_cm1, levels
        self.zpe_barrier, self.hop_factor = zpe_barrier, hop_factor


def _lz(inp: _RateInputs, t: float) -> float | None:
    if inp.hab is None or inp.lam is None or inp.nu_n_cm1 is None or not inp.lam["value_kj_mol"] > 0:
        return None
    return float(marcus.landau_zener_parameter(inp.hab["value_cm1"], inp.lam["value_kj_mol"], t, inp.nu_n_cm1))


def _eyring_entry(t: float, inp: _RateInputs) -> dict:
    if inp.barrier is None:
        raise _Unavailable("no transition-state barrier")
    g = _value_at(inp.barrier, t)
    params = {"barrier_kj_mol": g, "temperature_k": t, "transmission_coefficient": 1.0,
              "reaction_path_degeneracy": inp.hop_factor}
    k = marcus.eyring_rate_per_s(**params)
    thermal = inp.barrier["route"] != "ts-electronic"
    validity = applicability.tst_verdict(g, t, thermal=thermal, landau_zener_parameter=_lz(inp, t))
    return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": 1.0, "validity": validity,
            "parameters": params, "inputs": {"barrier": inp.barrier["route"]}}


def _golden_rule_validity(params: dict, lam: float, t: float, inp: _RateInputs, kappa: float) -> dict:
    v = applicability.golden_rule_verdict(params["coupling_cm1"], lam, t, inp.nu_n_cm1, kappa)
    g = next((c["value"] for c in v["criteria"] if c["criterion"] == "nonadiabatic_passage"), None)
    v["landau_zener_parameter"] = g
    v["nonadiabatic_regime"] = None if g is None else bool(g < applicability.MAX_LANDAU_ZENER)
    return v


def _zpe_barrier_at(inp: _RateInputs, t: float) -> float | None:
    try:
        return _value_at(inp.zpe_barrier, t) if inp.zpe_barrier is not None else None
    except _Unavailable:
        return None


def _rate_entry(model: str, t: float, inp: _RateInputs) -> dict:
    """One rate entry with the exact keyword arguments its function was called with (`parameters`) and
    the verdict of the model's applicability computed from those parameters (`validity`)."""
    eyring = marcus.eyring_rate_per_s
    if model == MODEL_EYRING:
        return _eyring_entry(t, inp)
    if inp.lam is None or inp.hab is None or inp.driving is None:
        raise _Unavailable("needs lambda, H_ab and dG0")
    dg0 = _value_at(inp.driving, t)
    lam, hab = inp.lam["value_kj_mol"], inp.hab["value_cm1"]
    inputs = {"driving_force": inp.driving["route"], "reorganization_energy": inp.lam["route"],
              "coupling": inp.hab["route"]}
    if model == MODEL_MARCUS:
        params = {"coupling_cm1": hab, "reorganization_energy_kj_mol": lam, "delta_g0_kj_mol": dg0, "temperature_k": t,
                  "barrier_shift_kj_mol": 0.0}
        k = marcus.marcus_nonadiabatic_rate_per_s(**params)
        g = marcus.marcus_barrier_kj_mol(lam, dg0)
        kappa = _rate_ratio(k, eyring(g, t))
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": kappa,
                "transmission_coefficient_meaning": "k / [(k_B T/h) exp(-dG*/RT)]: the effective nonadiabatic factor "
                                                    "(above 1 only where the formula is outside its range)",
                "validity": _golden_rule_validity(params, lam, t, inp, kappa), "parameters": params, "inputs": inputs}
    if model == MODEL_MLJ:
        if inp.mlj is None:
            raise _Unavailable("no effective quantum mode")
        m = inp.mlj
        params = {"coupling_cm1": hab, "solvent_reorganization_kj_mol": m["solvent_reorganization_kj_mol"],
                  "delta_g0_kj_mol": dg0, "temperature_k": t, "mode_cm1": m["mode_cm1"],
                  "huang_rhys": m["huang_rhys"], "n_max": MLJ_N_MAX, "barrier_shift_kj_mol": 0.0}
        k = marcus.mlj_rate_per_s(**params)
        g = marcus.marcus_barrier_kj_mol(lam, dg0)
        kappa = _rate_ratio(k, eyring(g, t))
        lam_total = m["solvent_reorganization_kj_mol"] + m["quantum_reorganization_kj_mol"]
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": kappa,
                "transmission_coefficient_meaning": "k / [(k_B T/h) exp(-dG*/RT)] with the classical Marcus "
                                                    "barrier of the total lambda",
                "validity": _golden_rule_validity(params, lam_total, t, inp, kappa), "parameters": params,
                "inputs": inputs}
    if model == MODEL_ADIABATIC:
        if inp.nu_n_cm1 is None:
            raise _Unavailable("no nuclear frequency from the modes")
        params = {"coupling_cm1": hab, "reorganization_energy_kj_mol": lam, "delta_g0_kj_mol": dg0,
                  "temperature_k": t, "nuclear_frequency_cm1": inp.nu_n_cm1, "barrier_shift_kj_mol": 0.0}
        k = marcus.marcus_hush_adiabatic_rate_per_s(**params)
        g = marcus.adiabatic_barrier_kj_mol(lam, dg0, hab)
        kappa = marcus.landau_zener_transmission_coefficient(hab, lam, t, inp.nu_n_cm1)
        zpe = _zpe_barrier_at(inp, t)
        validity = applicability.adiabatic_verdict(hab, lam, dg0, t, inp.nu_n_cm1, surface_zpe_barrier_kj_mol=zpe)
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": kappa, "validity": validity,
                "parameters": params, "inputs": inputs}
    raise ValueError(model)



def _rates(ctx, pw, inp: _RateInputs, temps: list[float], *, annotate: bool) -> tuple[list[dict], list[dict]]:
    rates, missing = [], []
    for model in MODELS:
        for t in temps:
            try:
                e = _rate_entry(model, t, inp)
            except _Unavailable as exc:
                if t == temps[0]:
                    missing.append({"model": model, "reason": str(exc)})
                break
            entry = {"temperature_k": t, "model": model, **e, "function": f"dossier.science.marcus.{FUNCTIONS[model].__name__}",
                     "formula": FORMULAS[model]}
            entry["provenance"] = {"formula": FORMULAS[model], "inputs": e["inputs"], "levels": inp.levels}
            if annotate and ctx.uncertainty is not None:
                entry.update(_annotate(ctx, model, e["parameters"], inp))
            rates.append(entry)
    return rates, missing



def _annotate(ctx, model: str, params: dict, inp: _RateInputs) -> dict:
    # the barrier's level-of-theory error enters every model: Eyring through its barrier, the others through
    # barrier_shift_kj_mol (0 at the central value, sampled with the barrier level's sigma)
    levels = {"barrier_kj_mol": inp.levels.get("barrier"), "delta_g0_kj_mol": inp.levels.get("driving_force"),
              "barrier_shift_kj_mol": inp.levels.get("barrier")}
    routes = {"reorganization_energy_kj_mol": inp.lam["route"] if inp.lam else None,
              "solvent_reorganization_kj_mol": inp.lam["route"] if inp.lam else None,
              "coupling_cm1": inp.hab["route"] if inp.hab else None}
    exact = {"delta_g0_kj_mol"} if inp.driving is not None and inp.driving["route"] == "symmetry" else set()
    labels = {rc: ctx.level_labels.get(rc) for rc in levels.values() if rc}
    try:
        return ctx.uncertainty.annotate_rate(FUNCTIONS[model], params, levels={k: v for k, v in levels.items() if v},
                                             routes={k: v for k, v in routes.items() if v}, level_labels=labels,
                                             exact=exact)
    except ValueError as exc:
        return {"uncertainty_note": f"no interval: {exc}"}



def _arrhenius(ctx, pw, inp_for: Callable[[list[float]], _RateInputs]) -> list[dict]:
    temps = list(ctx.temperatures)
    local = len(temps) < 2
    if local:
        t0 = temps[0]
        temps = [t0 - LOCAL_ARRHENIUS_STEP_K, t0, t0 + LOCAL_ARRHENIUS_STEP_K]
    inp = inp_for(temps)
    out = []
    for model in MODELS:
        ks, invalid = [], []
        try:
            for t in temps:
                e = _rate_entry(model, t, inp)
                ks.append(e["rate_per_s"])
                if not e["validity"]["valid"]:
                    invalid.append(f"{t:.2f} K: {e['validity']['note']}")
        except _Unavailable:
            continue
        try:
            fit = marcus.arrhenius_fit(temps, ks)
        except ValueError:
            continue
        fit.update({"model": model, "local": local,
                    "note": (f"local slope from {temps[0]:.2f}-{temps[-1]:.2f} K (the project has one temperature)"
                             if local else "least squares of ln k against 1/T over the project temperatures"),
                    "validity": {"valid": not invalid,
                                 "note": "; ".join(invalid) if invalid else "the model is valid at every temperature of the fit"}})
        out.append(fit)
    return out



def _mlj_parameters(lam: dict | None, lam_routes: list[dict], modes: dict | None,
                    rt_ref: float) -> tuple[dict | None, str | None]:
    if lam is None:
        return None, "no reorganization energy"
    if modes is None or modes.get("effective_mode_cm1") is None:
        return None, "no normal-mode displacements to find an effective quantum mode"
    inner_route = _pick(lam_routes, "four-point") or _pick(lam_routes, "normal-mode-projection")
    lam_q = modes["quantum_share"] * inner_route["value_kj_mol"]
    lam_s = lam["value_kj_mol"] - lam_q
    if lam_s < rt_ref:
        return None, (f"the classical (solvent and low-frequency) part of lambda, {lam_s:.2f} kJ/mol = total "
                      f"{lam['value_kj_mol']:.1f} kJ/mol ({lam['route']}) minus the quantum-mode part "
                      f"{lam_q:.1f} kJ/mol ({inner_route['route']}), is below RT ({rt_ref:.2f} kJ/mol): the "
                      "single-mode sum is then a comb of sharp lines, not a rate (common practice, no source)")
    nu = modes["effective_mode_cm1"]
    return {"solvent_reorganization_kj_mol": lam_s, "quantum_reorganization_kj_mol": lam_q, "mode_cm1": nu,
            "huang_rhys": marcus.huang_rhys_factor(lam_q, nu), "inner_route": inner_route["route"],
            "total_route": lam["route"], "quantum_share_of_inner": modes["quantum_share"],
            "quantum_cutoff_cm1": modes["quantum_cutoff_cm1"],
            "formula": ("lambda_q = (share of the modes above the cutoff in the normal-mode projection) x inner "
                        "lambda; lambda_s = lambda - lambda_q; nu = lambda-weighted mean of those modes; "
                        "S = lambda_q / (h c nu)")}, None

