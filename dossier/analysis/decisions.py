"""Report decisions, made once from the result dict so that every page and export says the same:
the temperature the report quotes, the population scheme the localization evidence is shown in,
the rate each pathway's summary quotes (headline_rate, chosen among valid rate entries only), and the works cited.
"""
from __future__ import annotations

from dossier.analysis.citations import cited_works
from dossier.analysis.common import MODEL_ADIABATIC, MODEL_EYRING, MODEL_MARCUS, MODEL_MLJ
from dossier.science import applicability

#: Population schemes in order of preference for the report (Hirshfeld and Löwdin depend less on the
#: basis set than Mulliken; common practice, no source).
SCHEME_PREFERENCE = ("hirshfeld", "lowdin", "mulliken")


def population_scheme(states: list[dict]) -> str | None:
    """The population scheme the report shows: the first of SCHEME_PREFERENCE any state has."""
    seen: list[str] = []
    for st in states:
        for s in ((st.get("localization") or {}).get("schemes") or {}):
            if s not in seen:
                seen.append(s)
    for s in SCHEME_PREFERENCE:
        if s in seen:
            return s
    return sorted(seen)[0] if seen else None


#: The order in which a pathway's headline rate is chosen among the rate entries whose `validity.valid`
#: is true at the report temperature. Transition-state theory first because it uses the computed saddle
#: point's free energy directly (fewest model parameters); then the golden-rule rates, the one that
#: treats the high-frequency modes quantum mechanically (MLJ) before the classical one; the two-state
#: adiabatic model, built from fitted H_ab and lambda, last. A stated preference, no source.
HEADLINE_PREFERENCE = (MODEL_EYRING, MODEL_MLJ, MODEL_MARCUS, MODEL_ADIABATIC)
HEADLINE_PREFERENCE_REASON = ("first valid of: eyring-tst (uses the computed saddle point directly), mlj, marcus, "
                              "marcus-hush-adiabatic (most fitted parameters)")

_HEADLINE_KEYS = ("model", "temperature_k", "rate_per_s", "barrier_kj_mol", "transmission_coefficient",
                  "log10_rate_median", "log10_rate_interval_68", "log10_rate_interval_95", "sensitivity_kj_mol_per_decade",
                  "validity")


def _flagged_states(pw: dict, checks: list[dict]) -> list[str]:
    names = {pw.get("reactant"), pw.get("transition_state"), pw.get("product")} - {None}
    return sorted({c["state"] for c in checks if c.get("severity") == "error" and c.get("state") in names})


def _route_value(pw: dict, what: str, route: str) -> float | None:
    r = next((x for x in (pw.get("routes") or {}).get(what) or [] if x.get("route") == route), None)
    return None if r is None else r.get("value_kj_mol")


def supported_statement(pw: dict) -> dict:
    """What the numbers support when no rate model applies (docs/dossier-json.md, `supported`)."""
    zpe = _route_value(pw, "barrier", "ts-electronic+zpe")
    nu = (pw.get("mode_analysis") or {}).get("nuclear_frequency_cm1")
    what = "nuclear frequency of the transfer mode (lambda-weighted)"
    if nu is None and (pw.get("normal_mode") or {}).get("imaginary_cm1") is not None:
        nu, what = abs(pw["normal_mode"]["imaginary_cm1"]), "imaginary mode of the transition state"
    adiabatic = [r for r in pw.get("rates", []) if r.get("model") == MODEL_ADIABATIC
                 and r.get("temperature_k") == pw.get("reference_temperature_k")]
    below_zp = (zpe is not None and zpe <= 0.0) or any(
        c.get("criterion") == "barrier_above_zero_point" and c.get("holds") is False
        for r in adiabatic for c in (r.get("validity") or {}).get("criteria", []))
    ratio = (pw.get("robin_day") or {}).get("ratio_2hab_over_lambda")
    out = {"vibrational_period_fs": None, "wavenumber_cm1": nu, "mode": what if nu else None}
    if below_zp and nu:
        period = applicability.vibrational_period_fs(nu)
        out["vibrational_period_fs"] = period
        zp_text = f"the zero-point-corrected barrier is {zpe:.1f} kJ/mol" if zpe is not None else \
            "the model barrier lies below the zero-point level of the transfer mode"
        out["statement"] = (f"{zp_text[0].upper() + zp_text[1:]}: the barrier lies below the zero-point level, so at "
                            f"this level the {pw.get('carrier') or 'electron'} is not trapped on one site on the vibrational time scale; the "
                            f"transfer time is bounded by the vibrational period, 1/(c nu) = {period:.0f} fs "
                            f"(nu = {nu:.0f} cm-1, {what}).")
    elif ratio is not None and ratio >= applicability.MAX_COUPLING_RATIO:
        out["statement"] = (f"2H_ab/lambda = {ratio:.2f} >= 1: the {pw.get('carrier') or 'electron'} is shared by both sites (class III), so "
                            "there is no site-to-site transfer for a rate constant to describe.")
    else:
        out["statement"] = ("The numbers support no rate constant at this level; the rate tables list every model with "
                            "the reason it does not apply.")
    return out


def headline(pw: dict, checks: list[dict]) -> tuple[dict | None, str, dict | None]:
    """(headline_rate, headline_reason, supported) of one pathway: the first entry of HEADLINE_PREFERENCE
    valid at the pathway's reference temperature, or None with the reason and what the numbers support."""
    t = pw.get("reference_temperature_k")
    flagged = _flagged_states(pw, checks)
    if flagged:
        return None, (f"no rate is quoted: `dossier check` reports errors on {', '.join(flagged)}, which this pathway "
                      "uses"), None
    at_t = [r for r in pw.get("rates", []) if r.get("temperature_k") == t]
    for model in HEADLINE_PREFERENCE:
        for r in at_t:
            if r.get("model") == model and (r.get("validity") or {}).get("valid") is True:
                chosen = {k: r[k] for k in _HEADLINE_KEYS if k in r}
                chosen["rates_index"] = pw["rates"].index(r)
                return chosen, f"{model} ({HEADLINE_PREFERENCE_REASON}): {r['validity']['note']}", None
    if not at_t:
        return None, f"no rate model could be evaluated at {t:.2f} K" if t else "no rate model could be evaluated", None
    notes = "; ".join(f"{r['model']}: {(r.get('validity') or {}).get('note', 'no verdict')}" for r in at_t)
    return None, f"no rate model applies at {t:.2f} K ({notes})", supported_statement(pw)


def add_headlines(data: dict) -> None:
    """Set `headline_rate`, `headline_reason` and (when no model applies) `supported` on every pathway."""
    checks = data.get("checks") or []
    for pw in data.get("pathways") or []:
        rate, reason, supported = headline(pw, checks)
        pw["headline_rate"], pw["headline_reason"] = rate, reason
        if supported is not None:
            pw["supported"] = supported


def report_choices(data: dict) -> dict:
    """The `report` block of dossier.json (docs/dossier-json.md)."""
    return {
        "temperature_k": (data.get("project") or {}).get("reference_temperature_k"),
        "population_scheme": population_scheme(data.get("states") or []),
        "headline_preference": list(HEADLINE_PREFERENCE),
        "headline_models": {pw["name"]: (pw.get("headline_rate") or {}).get("model") for pw in data.get("pathways") or []},
        "cited_works": [{"key": w["key"], "why": w["why"]} for w in cited_works(data)],
    }
