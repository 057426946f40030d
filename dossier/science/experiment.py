"""Experimental data from the manifest's [experiment] tables, validated and converted to the
quantities the analysis compares (their comparison with computed results is
dossier.analysis.experiment).

Tables (docs/manifest.md, docs/uncertainty.md):

- ``[[experiment.rates]]``: a rate constant with its error at a temperature.
- ``[[experiment.nmr_broadening]]``: an excess line width, converted to a rate in the
  slow-exchange limit, with the intermolecular (bimolecular) contribution removed.
- ``[[experiment.intervalence_band]]``: an intervalence band analysed by the Hush relations
  into H_ab and lambda (the band formulas are dossier.marcus's, shared with the analysis).
- ``[[experiment.vibrations]]`` and ``[[experiment.g_values]]``: placed beside computed values.

Every entry must name its ``source``. Nothing here reads an output file: comparisons take the
pathway entries the analysis produced (docs/dossier-json.md).
"""
from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from dossier.science import marcus
from dossier.errors import ManifestError

from dossier.science.uncertainty import LN10, UncertaintyModel
from dossier.units import CM1_KJ_MOL, PI, TEMPERATURE_RANGE_K, rt_kj_mol

WhereOf = Callable[..., str]

#: Computed and measured temperatures closer than this are the same temperature (K).
SAME_TEMPERATURE_K = 0.5

#: No measured first-order rate exceeds ~1e15 s-1 (electronic dephasing times are femtoseconds;
#: common practice, no source); a larger number is a unit mistake.
MAX_RATE_PER_S = 1.0e16

# name -> (required keys, optional keys); every number must be finite, most positive
_TABLES: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "rates": (("pathway", "temperature_k", "rate_per_s", "source"), ("error_per_s", "method", "note")),
    "nmr_broadening": (
        ("pathway", "temperature_k", "excess_linewidth_hz", "source"),
        ("error_hz", "reference_bimolecular_rate_m1_s1", "reference_error_m1_s1", "concentration_m",
         "concentration_error_m", "nucleus", "method", "note"),
    ),
    "intervalence_band": (
        ("pathway", "nu_max_cm1", "fwhm_cm1", "epsilon_max_m1_cm1", "distance_angstrom", "source"),
        ("nu_max_error_cm1", "fwhm_error_cm1", "epsilon_error_m1_cm1", "distance_error_angstrom",
         "delta_g0_kj_mol", "temperature_k", "solvent", "note"),
    ),
    "vibrations": (("state", "wavenumber_cm1", "source"), ("error_cm1", "assignment", "method", "note")),
    "g_values": (("state", "source"), ("g_iso", "g_tensor", "error", "method", "note")),
}
_TEXT_KEYS = {"pathway", "state", "source", "method", "note", "nucleus", "solvent", "assignment"}
_MAY_BE_ZERO = {"error_per_s", "error_hz", "reference_bimolecular_rate_m1_s1", "reference_error_m1_s1",
                "concentration_m", "concentration_error_m", "nu_max_error_cm1", "fwhm_error_cm1",
                "epsilon_error_m1_cm1", "distance_error_angstrom", "error_cm1", "error"}
_MAY_BE_NEGATIVE = {"delta_g0_kj_mol"}


@dataclass
class ExperimentData:
    """The validated [experiment] tables: one list of plain dicts per table."""

    rates: list[dict[str, Any]] = field(default_factory=list)
    nmr_broadening: list[dict[str, Any]] = field(default_factory=list)
    intervalence_band: list[dict[str, Any]] = field(default_factory=list)
    vibrations: list[dict[str, Any]] = field(default_factory=list)
    g_values: list[dict[str, Any]] = field(default_factory=list)

    def is_empty(self) -> bool:
        return not any((self.rates, self.nmr_broadening, self.intervalence_band, self.vibrations, self.g_values))

    def for_pathway(self, name: str) -> "ExperimentData":
        return ExperimentData(
            rates=[e for e in self.rates if e["pathway"] == name],
            nmr_broadening=[e for e in self.nmr_broadening if e["pathway"] == name],
            intervalence_band=[e for e in self.intervalence_band if e["pathway"] == name],
        )


# ---------------------------------------------------------------------------------------------
# validation
# ---------------------------------------------------------------------------------------------
def _default_where(*_key: Any) -> str:
    return "dossier.toml"


def validate_experiment(
    table: Mapping[str, Any] | None,
    *,
    where_of: WhereOf | None = None,
    pathways: Iterable[str] | None = None,
    states: Iterable[str] | None = None,
) -> ExperimentData:
    """Check the manifest's [experiment] tables and return them cleaned (inputs not modified).

    where_of: key path -> 'dossier.toml:LINE' (project.Manifest.where). pathways/states: names
    that exist; a reference to another name is an error. Raises ManifestError (one line).
    """
    w = where_of or _default_where
    table = table or {}

    def fail(reason: str, *key: Any) -> None:
        raise ManifestError(reason, where=w("experiment", *key))

    if not isinstance(table, Mapping):
        fail("[experiment] must be a table")
    unknown = sorted(set(table) - set(_TABLES))
    if unknown:
        fail(f"[experiment] has unknown table '{unknown[0]}' (allowed: {', '.join(_TABLES)})", unknown[0])
    known_pathways = set(pathways) if pathways is not None else None
    known_states = set(states) if states is not None else None
    data = ExperimentData()
    for name, (required, optional) in _TABLES.items():
        entries = table.get(name, [])
        if isinstance(entries, Mapping):
            fail(f"experiment.{name} must be an array of tables: write [[experiment.{name}]]", name)
        if not isinstance(entries, list):
            fail(f"experiment.{name} must be an array of tables", name)
        for i, entry in enumerate(entries):
            label = f"[[experiment.{name}]] entry {i + 1}"
            if not isinstance(entry, Mapping):
                fail(f"{label} must be a table", name, i)
            missing = [k for k in required if k not in entry]
            if missing:
                fail(f"{label} lacks '{missing[0]}' (required: {', '.join(required)})", name, i)
            extra = sorted(set(entry) - set(required) - set(optional))
            if extra:
                fail(f"{label} has unknown key '{extra[0]}' (allowed: {', '.join(required + optional)})", name, i, extra[0])
            clean: dict[str, Any] = {}
            for key, value in entry.items():
                if key in _TEXT_KEYS:
                    if not isinstance(value, str) or not value.strip():
                        fail(f"{label}: {key} must be non-empty text", name, i, key)
                    clean[key] = value
                elif key == "g_tensor":
                    if (not isinstance(value, list) or len(value) != 3
                            or not all(_is_number(v) and v > 0 for v in value)):
                        fail(f"{label}: g_tensor must be three positive numbers [gx, gy, gz]", name, i, key)
                    clean[key] = [float(v) for v in value]
                else:
                    if not _is_number(value):
                        fail(f"{label}: {key} must be a number, got {value!r}", name, i, key)
                    if key not in _MAY_BE_NEGATIVE and (value < 0 or (value == 0 and key not in _MAY_BE_ZERO)):
                        fail(f"{label}: {key} must be {'>= 0' if key in _MAY_BE_ZERO else '> 0'}, got {value!r}",
                             name, i, key)
                    if key == "temperature_k" and not TEMPERATURE_RANGE_K[0] <= value <= TEMPERATURE_RANGE_K[1]:
                        fail(f"{label}: temperature_k must be from {TEMPERATURE_RANGE_K[0]:g} to "
                             f"{TEMPERATURE_RANGE_K[1]:g} K, got {value!r}", name, i, key)
                    if key.endswith("_per_s") and value > MAX_RATE_PER_S:
                        fail(f"{label}: {key} = {value!r} is beyond any molecular rate "
                             f"(at most {MAX_RATE_PER_S:g} s-1); check the unit", name, i, key)
                    clean[key] = float(value)
            if "pathway" in clean and known_pathways is not None and clean["pathway"] not in known_pathways:
                fail(f"{label}: pathway '{clean['pathway']}' is not defined under [[pathways]]", name, i, "pathway")
            if "state" in clean and known_states is not None and clean["state"] not in known_states:
                fail(f"{label}: state '{clean['state']}' is not defined under [states]", name, i, "state")
            if name == "g_values" and "g_iso" not in clean and "g_tensor" not in clean:
                fail(f"{label} needs g_iso or g_tensor", name, i)
            if name == "nmr_broadening":
                has_k = "reference_bimolecular_rate_m1_s1" in clean
                has_c = "concentration_m" in clean
                if has_k != has_c:
                    fail(f"{label}: the intermolecular correction needs both reference_bimolecular_rate_m1_s1 "
                         "and concentration_m", name, i)
            getattr(data, name).append(clean)
    return data


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def experiment_from_project(project: Any) -> ExperimentData:
    """The validated experiment data of a bound Project (names checked against its pathways/states)."""
    # a Project carries its Manifest; a Manifest (load_manifest) locates lines itself
    manifest = project if hasattr(project, "where") else getattr(project, "manifest", None)
    where_of = manifest.where if manifest is not None and hasattr(manifest, "where") else None
    if where_of is None:
        name = str(getattr(project, "manifest_path", "dossier.toml"))
        where_of = lambda *_k: name  # noqa: E731
    return validate_experiment(
        getattr(project, "experiment", None), where_of=where_of,
        pathways=[p.name for p in getattr(project, "pathways", [])],
        states=list(getattr(project, "states", {}) or {}),
    )


# ---------------------------------------------------------------------------------------------
# NMR line broadening -> rate
# ---------------------------------------------------------------------------------------------
def slow_exchange_rate_per_s(excess_linewidth_hz):
    """Rate constant (s-1) of leaving a site from the exchange broadening of its line, slow-exchange limit.

    k = pi x dnu_e, with dnu_e the excess full width at half height (Hz) over the width without
    exchange. Source: H. S. Gutowsky, C. H. Holm, J. Chem. Phys. 1956, 25, 1228 (slow-exchange
    limit of the two-site line shape: 1/T2' = 1/T2 + k); J. Sandström, Dynamic NMR Spectroscopy,
    Academic Press 1982, ch. 6 (from memory).
    """
    return PI * np.asarray(excess_linewidth_hz, dtype=float)


def intramolecular_rate_per_s(observed_rate_per_s, bimolecular_rate_m1_s1, concentration_m):
    """k_intra = k_obs - k_inter [C]: removes the pseudo-first-order intermolecular exchange.

    k_inter is a reference compound's bimolecular self-exchange rate constant (M-1 s-1) and [C]
    the exchange partner's concentration (M). Common practice, no source (a rate law of
    parallel first- and pseudo-first-order channels).
    """
    return np.asarray(observed_rate_per_s, dtype=float) - (
        np.asarray(bimolecular_rate_m1_s1, dtype=float) * np.asarray(concentration_m, dtype=float))


def nmr_rate(entry: Mapping[str, Any], model: UncertaintyModel | None = None) -> dict[str, Any]:
    """One [[experiment.nmr_broadening]] entry as a measured rate, with first-order errors.

    sigma(k_intra)^2 = (pi sigma_dnu)^2 + ([C] sigma_kinter)^2 + (k_inter sigma_C)^2.
    A width without an error gets the model's default 1 sigma (shown as an assumption).
    """
    model = model or UncertaintyModel()
    width = entry["excess_linewidth_hz"]
    if "error_hz" in entry:
        sigma_w, width_note = entry["error_hz"], "as given"
    else:
        a = model.experiment_sigma("linewidth_hz")
        sigma_w, width_note = a.sigma, f"default {a.sigma} Hz ({a.source})"
    k_obs = float(slow_exchange_rate_per_s(width))
    k_bim = entry.get("reference_bimolecular_rate_m1_s1", 0.0)
    conc = entry.get("concentration_m", 0.0)
    s_kb = entry.get("reference_error_m1_s1", 0.0)
    s_c = entry.get("concentration_error_m", 0.0)
    k_inter = k_bim * conc
    k_intra = float(intramolecular_rate_per_s(k_obs, k_bim, conc))
    sigma = math.sqrt((PI * sigma_w) ** 2 + (conc * s_kb) ** 2 + (k_bim * s_c) ** 2)
    out: dict[str, Any] = {
        "pathway": entry["pathway"],
        "temperature_k": entry["temperature_k"],
        "method": entry.get("method", "NMR line broadening (slow-exchange limit)"),
        "source": entry["source"],
        "excess_linewidth_hz": width,
        "linewidth_error_hz": sigma_w,
        "linewidth_error_note": width_note,
        "observed_rate_per_s": k_obs,
        "intermolecular_rate_per_s": k_inter,
        "rate_per_s": k_intra if k_intra > 0 else None,
        "error_per_s": sigma,
        "formula": "k_obs = pi x excess line width (slow exchange); k_intra = k_obs - k_inter [C]",
    }
    if k_intra <= 0:
        out["note"] = (f"the intermolecular exchange (k_inter [C] = {k_inter:.3g} s-1) accounts for all the observed "
                       f"broadening (k_obs = {k_obs:.3g} s-1): no intramolecular rate can be given")
    elif sigma >= k_intra:
        out["note"] = "the error is as large as the intramolecular rate itself: an upper bound at best"
    return out


# ---------------------------------------------------------------------------------------------
# intervalence band -> H_ab and lambda (Hush)
# ---------------------------------------------------------------------------------------------
def hush_band_analysis(entry: Mapping[str, Any], model: UncertaintyModel | None = None) -> dict[str, Any]:
    """H_ab and lambda from one [[experiment.intervalence_band]] entry, with first-order errors.

    H_ab = 2.06e-2 (nu_max eps_max dnu_1/2)^1/2 / r (dossier.marcus.hush_band_coupling_cm1;
    N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391); lambda = h nu_max - dG0 (dG0 from the entry,
    0 for a symmetric system; marcus.reorganization_from_vertical_kj_mol); the class-II width
    expected at the temperature, [16 ln2 k_B T lambda]^1/2 (marcus.hush_band_width_cm1), and the
    ratio of the measured width to it (well below 1 points to class II/III borderline or III:
    Brunschwig, Creutz & Sutin, Chem. Soc. Rev. 2002, 31, 168). Errors: ln H_ab has variance
    (1/4)[(s_nu/nu)^2 + (s_eps/eps)^2 + (s_w/w)^2] + (s_r/r)^2.
    """
    model = model or UncertaintyModel()
    nu = entry["nu_max_cm1"]
    w = entry["fwhm_cm1"]
    eps = entry["epsilon_max_m1_cm1"]
    r = entry["distance_angstrom"]
    t = entry.get("temperature_k", 298.15)
    dg0 = entry.get("delta_g0_kj_mol", 0.0)
    notes: list[str] = []

    def sig(key: str, default_key: str, value: float) -> float:
        if key in entry:
            return entry[key]
        a = model.experiment_sigma(default_key)
        notes.append(f"{key.replace('_error', '')}: default 1 sigma {a.sigma} {a.unit} ({a.source})")
        return a.sigma * value if a.unit == "relative" else a.sigma

    s_nu = sig("nu_max_error_cm1", "nu_max_cm1", nu)
    s_w = sig("fwhm_error_cm1", "fwhm_fraction", w)
    s_eps = sig("epsilon_error_m1_cm1", "epsilon_fraction", eps)
    s_r = sig("distance_error_angstrom", "distance_fraction", r)
    h_ab = float(marcus.hush_band_coupling_cm1(nu, eps, w, r))
    rel_h = math.sqrt(0.25 * ((s_nu / nu) ** 2 + (s_eps / eps) ** 2 + (s_w / w) ** 2) + (s_r / r) ** 2)
    lam = float(marcus.reorganization_from_vertical_kj_mol(nu * CM1_KJ_MOL, dg0))
    width_expected = float(marcus.hush_band_width_cm1(lam / CM1_KJ_MOL, t))
    lam_width = float(marcus.hush_reorganization_from_width_cm1(w, t)) * CM1_KJ_MOL
    out = {
        "pathway": entry["pathway"],
        "source": entry["source"],
        "nu_max_cm1": nu, "fwhm_cm1": w, "epsilon_max_m1_cm1": eps, "distance_angstrom": r,
        "temperature_k": t, "delta_g0_kj_mol": dg0,
        "coupling_cm1": h_ab,
        "coupling_error_cm1": rel_h * h_ab,
        "reorganization_energy_kj_mol": lam,
        "reorganization_energy_error_kj_mol": s_nu * CM1_KJ_MOL,
        "reorganization_energy_from_width_kj_mol": lam_width,
        "expected_class_ii_fwhm_cm1": width_expected,
        "width_ratio": w / width_expected,
        "ratio_2hab_over_lambda": 2.0 * h_ab * CM1_KJ_MOL / lam if lam > 0 else None,
        "formula": ("H_ab = 2.06e-2 (nu_max eps_max fwhm)^1/2 / r (Hush 1967); lambda = nu_max - dG0; "
                    "class-II width (16 ln2 kT lambda)^1/2"),
        "notes": notes,
    }
    if "temperature_k" not in entry:
        notes.append("temperature not given: the width check assumes 298.15 K")
    if w / width_expected < 0.7:
        notes.append("the band is much narrower than a class-II band of this energy: the system may be near the "
                     "class II/III border, where the Hush relations no longer hold")
    notes.append("the geometric site distance usually exceeds the effective transfer distance, so this H_ab is "
                 "best read as a lower bound")
    return out


# ---------------------------------------------------------------------------------------------
# measured rates of a pathway
# ---------------------------------------------------------------------------------------------
def measured_rates(data: ExperimentData, pathway: str, model: UncertaintyModel | None = None) -> list[dict[str, Any]]:
    """Every measured rate of a pathway: direct ones and those from NMR broadening, with log10 errors."""
    model = model or UncertaintyModel()
    out: list[dict[str, Any]] = []
    for e in data.rates:
        if e["pathway"] != pathway:
            continue
        entry = {"temperature_k": e["temperature_k"], "rate_per_s": e["rate_per_s"],
                 "method": e.get("method", "rate constant"), "source": e["source"]}
        if "error_per_s" in e:
            entry["error_per_s"] = e["error_per_s"]
        else:
            a = model.experiment_sigma("rate_fraction")
            entry["error_per_s"] = a.sigma * e["rate_per_s"]
            entry["error_note"] = f"no error given: default {a.sigma:.0%} ({a.source})"
        out.append(entry)
    for e in data.nmr_broadening:
        if e["pathway"] != pathway:
            continue
        conv = nmr_rate(e, model)
        if conv["rate_per_s"] is None:
            continue
        out.append({"temperature_k": conv["temperature_k"], "rate_per_s": conv["rate_per_s"],
                    "error_per_s": conv["error_per_s"], "method": conv["method"], "source": conv["source"],
                    "from_nmr": conv})
    for entry in out:
        entry["log10_rate"] = math.log10(entry["rate_per_s"])
        # first order: sigma(log10 k) = sigma_k / (k ln 10)
        entry["log10_error"] = entry["error_per_s"] / (entry["rate_per_s"] * LN10)
    return sorted(out, key=lambda e: e["temperature_k"])


def experiment_temperatures(data: ExperimentData, pathway: str | None = None) -> list[float]:
    """Temperatures at which rates were measured (so the analysis can compute rates there too)."""
    temps = {e["temperature_k"] for e in data.rates + data.nmr_broadening if pathway is None or e["pathway"] == pathway}
    return sorted(temps)


# ---------------------------------------------------------------------------------------------
# comparison
# ---------------------------------------------------------------------------------------------
def barrier_shift_to_match_kj_mol(computed_rate_per_s, measured_rate_per_s, temperature_k):
    """Change of the activation free energy that brings the computed rate onto the measured one:
    dG_shift = RT ln(k_calc / k_exp) (positive: the barrier would have to be higher).

    Follows from k = A exp(-dG/RT) with A unchanged (Eyring, J. Chem. Phys. 1935, 3, 107); for
    Marcus-type rates the shift applies to the effective activation free energy.
    """
    return rt_kj_mol(np.asarray(temperature_k, dtype=float)) * np.log(
        np.asarray(computed_rate_per_s, dtype=float) / np.asarray(measured_rate_per_s, dtype=float))


def _positive(value: Any) -> bool:
    return _is_number(value) and value > 0


# ---------------------------------------------------------------------------------------------
# vibrations and g-values beside computed ones
# ---------------------------------------------------------------------------------------------
