"""Shared names of the analysis stage: model identifiers, formulas, route preferences, small helpers."""
from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np

from dossier import units as u
from dossier.records import Calculation
from dossier.science import marcus


SCHEMA_VERSION = 1



REFERENCE_TEMPERATURE_K = 298.15



MODEL_EYRING = "eyring-tst"



MODEL_MARCUS = "marcus"



MODEL_MLJ = "mlj"



MODEL_ADIABATIC = "marcus-hush-adiabatic"



MODELS = (MODEL_EYRING, MODEL_MARCUS, MODEL_MLJ, MODEL_ADIABATIC)



#: Modes with h c nu above QUANTUM_MODE_KT x k_B T (at the reference temperature) form the MLJ quantum
#: mode; softer modes join the classical reorganization energy. Common practice, no source.
QUANTUM_MODE_KT = 2.0



#: Temperature step (K) of the local Arrhenius series used when the project has one temperature.
LOCAL_ARRHENIUS_STEP_K = 5.0



MLJ_N_MAX = 40



LAMBDA_PREFERENCE = ("vertical-excitation", "four-point", "two-state-fit", "normal-mode-projection")



COUPLING_PREFERENCE = ("half-splitting-at-ts", "two-state-fit", "two-state-from-barrier", "mulliken-hush")



FORMULAS = {
    MODEL_EYRING: "k = kappa (k_B T / h) exp(-dG_act / RT) (Eyring, J. Chem. Phys. 1935, 3, 107)",
    MODEL_MARCUS: ("k = (2 pi / hbar) H_ab^2 (4 pi lambda k_B T)^-1/2 exp[-(dG0 + lambda)^2 / (4 lambda k_B T)] "
                   "(Marcus & Sutin, Biochim. Biophys. Acta 1985, 811, 265)"),
    MODEL_MLJ: ("k = (2 pi / hbar) H_ab^2 (4 pi lambda_s k_B T)^-1/2 sum_n e^-S S^n / n! "
                "exp[-(dG0 + lambda_s + n h nu)^2 / (4 lambda_s k_B T)] (Jortner, J. Chem. Phys. 1976, 64, 4860)"),
    MODEL_ADIABATIC: ("k = kappa_LZ nu_n exp(-dG*_ad / RT), dG*_ad = (lambda + dG0)^2 / (4 lambda) - H_ab + "
                      "H_ab^2 / (lambda + dG0) (Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168; "
                      "kappa_LZ: Newton & Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437)"),
}



FUNCTIONS: dict[str, Callable[..., Any]] = {
    MODEL_EYRING: marcus.eyring_rate_per_s,
    MODEL_MARCUS: marcus.marcus_nonadiabatic_rate_per_s,
    MODEL_MLJ: marcus.mlj_rate_per_s,
    MODEL_ADIABATIC: marcus.marcus_hush_adiabatic_rate_per_s,
}



MODEL_STATEMENT = (
    "Rates are model estimates, not measurements: each follows from its named formula (transition-state theory, "
    "nonadiabatic Marcus, Marcus-Levich-Jortner or the two-state adiabatic model) and from computed energies, "
    "reorganization energies and couplings that carry the errors of their levels of theory. A barrier error of "
    "RT ln 10 (5.7 kJ/mol at 298.15 K) changes a rate tenfold; the intervals show only the spread that follows from "
    "the stated uncertainties."
)



class _Unavailable(Exception):
    """A quantity cannot be computed from the project's files (the reason is reported, not raised)."""



def _rate_ratio(rate_per_s: float, reference_per_s: float) -> float | None:
    """k / k_ref, or None where the reference rate underflows to zero (very high barrier / low T)."""
    return rate_per_s / reference_per_s if reference_per_s > 0 else None



def _kj(hartree: float) -> float:
    return float(hartree) * u.HARTREE_KJ_MOL



def _prov(files, states, level, formula, **extra) -> dict:
    d = {"files": list(files), "states": list(states), "level_of_theory": level, "formula": formula}
    d.update(extra)
    return d



def _pick(routes: list[dict], name: str) -> dict | None:
    return next((r for r in routes if r["route"] == name), None)



def _choose(routes: list[dict], order: tuple[str, ...]) -> dict | None:
    for name in order:
        r = _pick(routes, name)
        if r is not None:
            return r
    return None



def _value_at(route: dict, t: float) -> float:
    for s in route["by_temperature"]:
        if s["temperature_k"] == t:
            return s["value_kj_mol"]
    raise _Unavailable(f"route {route['route']} has no value at {t} K")



def _site_distance(calc: Calculation, sites, a: str | None, b: str | None) -> float | None:
    if not a or not b or a not in sites or b not in sites:
        return None
    x = np.asarray(calc.coordinates_angstrom, dtype=float)
    if x.ndim != 2 or any(not 0 <= i < len(x) for i in list(sites[a]) + list(sites[b])):
        return None
    return float(np.linalg.norm(x[sites[a]].mean(axis=0) - x[sites[b]].mean(axis=0)))



def _lowest_excitation(rec: Calculation | None):
    if rec is None or not rec.excited_states:
        return None
    return min(rec.excited_states, key=lambda x: x.energy_cm1)

