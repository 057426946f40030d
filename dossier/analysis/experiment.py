"""Comparison of the computed results with the collaborators' measurements: measured rates against
the computed rate entries (interpolated in 1/T where bracketed), the intervalence band against the
reorganization-energy and coupling routes, the method ladder against the measurements, and
vibrations and g values placed beside computed values. The measurements themselves are read and
converted by dossier.science.experiment.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

from dossier.science import statements as st
import numpy as np

from dossier.science.experiment import (SAME_TEMPERATURE_K, ExperimentData, _positive, barrier_shift_to_match_kj_mol,
                                        hush_band_analysis, measured_rates, nmr_rate)
from dossier.science.uncertainty import UncertaintyModel
from dossier.units import CM1_KJ_MOL


def _validity_of(entry: Mapping[str, Any]) -> dict[str, Any]:
    """{valid, note} of a rate entry (docs/dossier-json.md, `validity`); an entry without one is not valid."""
    v = entry.get("validity") or {}
    return {"valid": v.get("valid") is True, "note": v.get("note") or "no applicability verdict"}


def _computed_at(rates: Sequence[Mapping[str, Any]], model_name: str, temperature_k: float) -> dict[str, Any] | None:
    """The computed rate entry of one model at a temperature, interpolated in 1/T if bracketed."""
    series = sorted((r for r in rates if r.get("model") == model_name and _positive(r.get("rate_per_s"))),
                    key=lambda r: r["temperature_k"])
    for r in series:
        if abs(r["temperature_k"] - temperature_k) <= SAME_TEMPERATURE_K:
            return dict(r, interpolated=False, validity=_validity_of(r))
    below = [r for r in series if r["temperature_k"] < temperature_k]
    above = [r for r in series if r["temperature_k"] > temperature_k]
    if not below or not above:
        return None
    a, b = below[-1], above[0]
    # log10 k is near-linear in 1/T (Arrhenius); interpolate every log10 quantity the same way
    f = (1 / temperature_k - 1 / a["temperature_k"]) / (1 / b["temperature_k"] - 1 / a["temperature_k"])

    def lerp(x, y):
        return x + f * (y - x)

    va, vb = _validity_of(a), _validity_of(b)
    note = va["note"] if va["note"] == vb["note"] else (f"{a['temperature_k']:.2f} K: {va['note']}; "
                                                        f"{b['temperature_k']:.2f} K: {vb['note']}")
    out: dict[str, Any] = {"model": model_name, "temperature_k": temperature_k, "interpolated": True,
                           "rate_per_s": 10 ** lerp(math.log10(a["rate_per_s"]), math.log10(b["rate_per_s"])),
                           "validity": {"valid": va["valid"] and vb["valid"], "note": note}}
    for key in ("log10_rate_interval_68", "log10_rate_interval_95"):
        if a.get(key) and b.get(key):
            out[key] = [lerp(a[key][0], b[key][0]), lerp(a[key][1], b[key][1])]
    if a.get("log10_rate_median") is not None and b.get("log10_rate_median") is not None:
        out["log10_rate_median"] = lerp(a["log10_rate_median"], b["log10_rate_median"])
    return out


def compare_rate(measured: Mapping[str, Any], computed: Mapping[str, Any]) -> dict[str, Any]:
    """One measured rate against one computed rate entry (same temperature)."""
    t = measured["temperature_k"]
    kc, ke = computed["rate_per_s"], measured["rate_per_s"]
    log_ratio = math.log10(kc) - math.log10(ke)
    out: dict[str, Any] = {
        "temperature_k": t,
        "rate_per_s": ke,
        "error_per_s": measured.get("error_per_s"),
        "method": measured.get("method"),
        "source": measured.get("source"),
        "computed_model": computed["model"],
        "computed_rate_per_s": kc,
        "computed_interpolated": bool(computed.get("interpolated", False)),
        "computed_validity": computed.get("validity") or _validity_of(computed),
        "log10_ratio": log_ratio,
        "barrier_shift_to_match_kj_mol": float(barrier_shift_to_match_kj_mol(kc, ke, t)),
        "inside_68": None,
        "inside_95": None,
    }
    le = math.log10(ke)
    i68, i95 = computed.get("log10_rate_interval_68"), computed.get("log10_rate_interval_95")
    if i68 and i95:
        out["inside_68"] = bool(i68[0] <= le <= i68[1])
        out["inside_95"] = bool(i95[0] <= le <= i95[1])
        sigma_c = 0.5 * (i68[1] - i68[0])
        sigma_e = measured.get("log10_error", 0.0) or 0.0
        combined = math.hypot(sigma_c, sigma_e)
        centre = computed.get("log10_rate_median")
        centre = math.log10(kc) if centre is None else centre
        out["combined_z"] = (centre - le) / combined if combined > 0 else None
    for key in ("error_note", "from_nmr"):
        if key in measured:
            out[key] = measured[key]
    out["statement"] = st.rate_comparison_statement(out)
    return out


def _route_comparison(routes: Sequence[Mapping[str, Any]], value_key: str, measured: float, error: float,
                      unit: str) -> list[dict[str, Any]]:
    rows = []
    for r in routes or []:
        v = r.get(value_key)
        if v is None:
            continue
        rows.append({
            "route": r.get("route"),
            f"computed_{value_key}": v,
            "difference": v - measured,
            "ratio": v / measured if measured else None,
            "within_2_sigma_of_band": bool(abs(v - measured) <= 2 * error) if error else None,
            "statement": st.band_statement("lambda" if unit == "kJ/mol" else "H_ab", v, measured, unit),
        })
    return rows


def compare_band(pathway: Mapping[str, Any], band: Mapping[str, Any]) -> dict[str, Any]:
    """Computed lambda and H_ab (each route and the chosen value) against a Hush band analysis."""
    routes = pathway.get("routes") or {}
    out = dict(band)
    vs: dict[str, Any] = {
        "reorganization_energy": _route_comparison(routes.get("reorganization_energy", []), "value_kj_mol",
                                                   band["reorganization_energy_kj_mol"],
                                                   band["reorganization_energy_error_kj_mol"], "kJ/mol"),
        "coupling": _route_comparison(routes.get("coupling", []), "value_cm1", band["coupling_cm1"],
                                      band["coupling_error_cm1"], "cm-1"),
    }
    statements = []
    lam = pathway.get("reorganization_energy_kj_mol")
    if lam is not None:
        vs["reorganization_energy_chosen_kj_mol"] = lam
        vs["reorganization_energy_kj_mol"] = lam  # same key as the band value beside it
        statements.append(st.band_statement("lambda", lam, band["reorganization_energy_kj_mol"], "kJ/mol"))
    hab = pathway.get("coupling_cm1")
    if hab is not None:
        vs["coupling_chosen_cm1"] = hab
        vs["coupling_cm1"] = hab
        if lam:
            vs["ratio_2hab_over_lambda"] = 2.0 * hab * CM1_KJ_MOL / lam
        statements.append(st.band_statement("H_ab", hab, band["coupling_cm1"], "cm-1"))
    out["computed_vs"] = vs
    out["statements"] = statements
    return out


def compare_ladder(pathway: Mapping[str, Any], measured: Sequence[Mapping[str, Any]]) -> list[dict[str, Any]]:
    """Each rung of the method ladder against each measured rate at a temperature it has."""
    rows = []
    for rung in pathway.get("ladder") or []:
        models = sorted({r.get("model") for r in rung.get("rates") or [] if r.get("model")})
        for m in measured:
            for model_name in models:
                comp = _computed_at(rung.get("rates") or [], model_name, m["temperature_k"])
                if comp is None:
                    continue
                lr = math.log10(comp["rate_per_s"]) - m["log10_rate"]
                rows.append({
                    "recipe": rung.get("recipe"), "model": model_name, "temperature_k": m["temperature_k"],
                    "computed_rate_per_s": comp["rate_per_s"], "rate_per_s": m["rate_per_s"],
                    "log10_ratio": lr,
                    "barrier_shift_to_match_kj_mol": float(barrier_shift_to_match_kj_mol(comp["rate_per_s"],
                                                                                          m["rate_per_s"],
                                                                                          m["temperature_k"])),
                    "interpolated": comp["interpolated"], "validity": comp["validity"],
                })
    # for each measurement and rate model: which rung comes closest, among the rungs whose model is valid
    groups: dict[tuple[str, float], list[dict[str, Any]]] = {}
    for r in rows:
        r["closest_to_experiment"] = False
        if r["validity"]["valid"]:
            groups.setdefault((r["model"], r["temperature_k"]), []).append(r)
    for (model_name, t), members in groups.items():
        best = min(members, key=lambda r: abs(r["log10_ratio"]))
        best["closest_to_experiment"] = True
        if len(members) > 1:
            best["statement"] = st.ladder_statement(best["recipe"], model_name, t, best["log10_ratio"], len(members))
    return rows


def compare_pathway(
    pathway: Mapping[str, Any],
    data: ExperimentData,
    model: UncertaintyModel | None = None,
) -> dict[str, Any] | None:
    """The `experiment` entry of one pathway in dossier.json, or None without data for it.

    pathway: the analysis's pathway dict (name, rates with their intervals, routes, ladder).
    Measured rates are compared with every computed model at the same temperature (or
    interpolated in 1/T between computed temperatures that bracket it).
    """
    name = pathway["name"]
    mine = data.for_pathway(name)
    if not (mine.rates or mine.nmr_broadening or mine.intervalence_band):
        return None
    model = model or UncertaintyModel()
    measured = measured_rates(mine, name, model)
    rates_out: list[dict[str, Any]] = []
    missing: list[str] = []
    computed = pathway.get("rates") or []
    model_names = sorted({r.get("model") for r in computed if r.get("model")})
    for m in measured:
        found = False
        for model_name in model_names:
            comp = _computed_at(computed, model_name, m["temperature_k"])
            if comp is not None:
                rates_out.append(compare_rate(m, comp))
                found = True
        if not found:
            missing.append(f"no computed rate at or around {m['temperature_k']:.2f} K to compare with")
    out: dict[str, Any] = {"rates": rates_out, "measured_rates": measured}
    nmr = [nmr_rate(e, model) for e in mine.nmr_broadening]
    if nmr:
        out["nmr"] = nmr
    bands = [compare_band(pathway, hush_band_analysis(e, model)) for e in mine.intervalence_band]
    if bands:
        out["band"] = bands[0]
        if len(bands) > 1:
            out["bands"] = bands
    ladder = compare_ladder(pathway, measured)
    if ladder:
        out["ladder"] = ladder
    out["statements"] = [r["statement"] for r in rates_out] + [s for b in bands for s in b["statements"]]
    if missing:
        out["notes"] = missing
    return out


def place_vibrations(data: ExperimentData, computed_cm1: Mapping[str, Sequence[float]],
                     frequency_scale: float = 1.0) -> list[dict[str, Any]]:
    """Each measured wavenumber beside the nearest computed (scaled) real wavenumber of its state.

    computed_cm1: state -> computed wavenumbers (imaginary ones negative; skipped). Nearest-
    neighbour pairing is a first guess, not an assignment; the entry says so.
    """
    rows = []
    for e in data.vibrations:
        freqs = [f * frequency_scale for f in computed_cm1.get(e["state"], []) if f > 0]
        row = {"state": e["state"], "measured_cm1": e["wavenumber_cm1"], "assignment": e.get("assignment"),
               "source": e["source"], "computed_cm1": None, "difference_cm1": None,
               "pairing": "nearest computed wavenumber (not an assignment)"}
        if freqs:
            nearest = min(freqs, key=lambda f: abs(f - e["wavenumber_cm1"]))
            row["computed_cm1"] = nearest
            row["difference_cm1"] = nearest - e["wavenumber_cm1"]
        else:
            row["pairing"] = "no computed frequencies for this state"
        rows.append(row)
    return rows


def place_g_values(data: ExperimentData, computed: Mapping[str, Mapping[str, Any]] | None = None) -> list[dict[str, Any]]:
    """Measured g-values beside computed ones where the analysis has them (state -> {g_iso, g_tensor})."""
    computed = computed or {}
    rows = []
    for e in data.g_values:
        c = computed.get(e["state"], {})
        g_iso = e.get("g_iso", float(np.mean(e["g_tensor"])) if "g_tensor" in e else None)
        row = {"state": e["state"], "measured_g_iso": g_iso, "measured_g_tensor": e.get("g_tensor"),
               "source": e["source"], "computed_g_iso": c.get("g_iso"), "computed_g_tensor": c.get("g_tensor")}
        if row["computed_g_iso"] is not None and g_iso is not None:
            # shifts from the free-electron value are quoted in ppm by convention; the difference here is plain
            row["difference_g_iso"] = row["computed_g_iso"] - g_iso
        else:
            row["note"] = "no computed g-value in the project's files"
        rows.append(row)
    return rows

