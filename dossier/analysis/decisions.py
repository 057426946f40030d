"""Report decisions, made once from the result dict so that every page and export says the same:
the temperature the report quotes, the population scheme the localization evidence is shown in,
the rate model each pathway's summary quotes, and the works cited.
"""
from __future__ import annotations

from dossier.analysis.citations import cited_works

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


def _model_in_range(pw: dict, model: str) -> bool:
    """True when no rate of this model is flagged as outside its formula's range."""
    rates = [r for r in pw.get("rates", []) if r.get("model") == model]
    return bool(rates) and all(
        (r.get("validity") or {}).get("valid", True) and (r.get("validity") or {}).get("nonadiabatic_regime", True)
        for r in rates)


def quoted_model(pw: dict) -> str | None:
    """The model the plain-words summary quotes: the first one (the experiment's comparison model
    first, then the analysis order) whose formula is within its range at every temperature."""
    exp = (pw.get("experiment") or {}).get("rates") or []
    candidates = [e["computed_model"] for e in exp if e.get("computed_model")]
    candidates += [r.get("model") for r in pw.get("rates", []) if r.get("model")]
    for model in candidates:
        if _model_in_range(pw, model):
            return model
    return candidates[0] if candidates else None


def report_choices(data: dict) -> dict:
    """The `report` block of dossier.json (docs/dossier-json.md)."""
    return {
        "temperature_k": (data.get("project") or {}).get("reference_temperature_k"),
        "population_scheme": population_scheme(data.get("states") or []),
        "quoted_models": {pw["name"]: quoted_model(pw) for pw in data.get("pathways") or []},
        "cited_works": [{"key": w["key"], "why": w["why"]} for w in cited_works(data)],
    }
