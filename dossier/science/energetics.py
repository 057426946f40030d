"""Relative energies, energy profiles and Boltzmann populations, on plain numbers.

No manifest knowledge here: the caller (dossier.analysis) decides which electronic energy
and which thermal correction make up a state's energy (a "recipe": e.g. a CCSD(T) single
point plus the DFT frequency job's RRHO correction) and passes the numbers in.

Conventions:
- absolute energies in hartree per molecule, relative energies in kJ/mol (also kcal/mol and
  eV; conversions only through dossier.units);
- a state's energies: electronic E, E + ZPE, H(T) = E + H_corr(T), G(T) = E + G_corr(T);
- temperature keys in JSON-ready dicts are strings without trailing zeros ("298.15", "300").
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Iterable, Mapping, Sequence

from dossier import units
from dossier.errors import DossierError

#: Units every profile point is given in (key suffixes: _kj_mol, _kcal_mol, _ev).
PROFILE_UNITS = ("kJ/mol", "kcal/mol", "eV")
_SUFFIX = {"kJ/mol": "kj_mol", "kcal/mol": "kcal_mol", "eV": "ev", "cm-1": "cm1"}
QUANTITIES = ("electronic", "zpe", "enthalpy", "gibbs")


class EnergeticsError(DossierError):
    """Energies that cannot be compared (unknown reference, missing state, bad temperature)."""


def temperature_key(temperature_k: float) -> str:
    """'298.15' for 298.15, '300' for 300.0: the key used for temperature-dependent values."""
    return f"{float(temperature_k):.2f}".rstrip("0").rstrip(".")


def unit_suffix(unit: str) -> str:
    try:
        return _SUFFIX[unit]
    except KeyError:
        raise EnergeticsError(f"unknown energy unit {unit!r}; use one of {', '.join(_SUFFIX)}") from None


def convert_kj_mol(value_kj_mol: float | None, unit: str) -> float | None:
    """kJ/mol -> unit (kJ/mol, kcal/mol with the thermochemical calorie, eV, cm-1); None stays None."""
    unit_suffix(unit)
    return None if value_kj_mol is None else units.kj_mol_to(value_kj_mol, unit)


def relative_kj_mol(energies_hartree: Mapping[str, float | None], reference: str | None = None) -> dict[str, float | None]:
    """E_i - E_ref in kJ/mol. reference: a name, None (the first entry) or "lowest"."""
    if not energies_hartree:
        return {}
    ref_value = _reference_value(energies_hartree, reference)
    return {
        name: None if (e is None or ref_value is None) else (e - ref_value) * units.HARTREE_KJ_MOL
        for name, e in energies_hartree.items()
    }


def _reference_value(values: Mapping[str, float | None], reference: str | None) -> float | None:
    if reference is None:
        return next(iter(values.values()))
    if reference == "lowest":
        present = [v for v in values.values() if v is not None]
        return min(present) if present else None
    if reference not in values:
        raise EnergeticsError(f"reference state {reference!r} is not among {', '.join(values)}")
    return values[reference]


def composite_hartree(electronic_hartree: float, thermal_correction_hartree: float | None) -> float | None:
    """A composite ("recipe") energy: electronic energy from one source plus a thermal correction
    (ZPE, H_corr or G_corr) from another, the usual high-level//low-level scheme
    (e.g. Curtiss et al., J. Chem. Phys. 1991, 94, 7221, for the additivity assumption)."""
    if thermal_correction_hartree is None:
        return None
    return electronic_hartree + thermal_correction_hartree


@dataclass
class StateEnergies:
    """Numbers for one state under one recipe. Corrections are relative to the electronic energy."""

    name: str
    electronic_hartree: float
    zpe_hartree: float | None = None
    enthalpy_correction_hartree: dict[float, float] = field(default_factory=dict)  # by temperature (K)
    gibbs_correction_hartree: dict[float, float] = field(default_factory=dict)

    @classmethod
    def from_thermo(cls, name: str, electronic_hartree: float, thermo: Iterable[Any] = ()) -> "StateEnergies":
        """Electronic energy from one job plus the corrections of `dossier.thermo.ThermoResult`s
        (one per temperature) from the frequency job: a composite recipe."""
        s = cls(name, float(electronic_hartree))
        for r in thermo:
            s.zpe_hartree = r.zpe_hartree
            s.enthalpy_correction_hartree[float(r.temperature_k)] = r.enthalpy_correction_hartree
            s.gibbs_correction_hartree[float(r.temperature_k)] = r.gibbs_correction_hartree
        return s

    def total_hartree(self, quantity: str, temperature_k: float | None = None) -> float | None:
        """E, E + ZPE, H(T) or G(T) in hartree; None when the state has no such correction."""
        if quantity == "electronic":
            return self.electronic_hartree
        if quantity == "zpe":
            return composite_hartree(self.electronic_hartree, self.zpe_hartree)
        table = {"enthalpy": self.enthalpy_correction_hartree, "gibbs": self.gibbs_correction_hartree}.get(quantity)
        if table is None:
            raise EnergeticsError(f"unknown quantity {quantity!r}; use one of {', '.join(QUANTITIES)}")
        if temperature_k is None:
            raise EnergeticsError(f"{quantity} needs a temperature")
        return composite_hartree(self.electronic_hartree, _lookup(table, temperature_k))


def _lookup(table: Mapping[float, float], temperature_k: float) -> float | None:
    for t, v in table.items():
        if abs(float(t) - float(temperature_k)) < 1e-6:
            return v
    return None


def _temperatures(states: Sequence[StateEnergies], temperatures_k: Sequence[float] | None) -> list[float]:
    if temperatures_k is not None:
        return [float(t) for t in temperatures_k]
    seen: list[float] = []
    for s in states:
        for t in list(s.enthalpy_correction_hartree) + list(s.gibbs_correction_hartree):
            if all(abs(t - u) > 1e-6 for u in seen):
                seen.append(float(t))
    return sorted(seen)


def relative_table(
    states: Sequence[StateEnergies],
    quantity: str,
    temperature_k: float | None = None,
    *,
    reference: str | None = None,
) -> dict[str, float | None]:
    """Relative `quantity` (electronic, zpe, enthalpy, gibbs) in kJ/mol for each state."""
    _check_unique(states)
    values = {s.name: s.total_hartree(quantity, temperature_k) for s in states}
    return relative_kj_mol(values, reference)


def _check_unique(states: Sequence[StateEnergies]) -> None:
    names = [s.name for s in states]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise EnergeticsError(f"state(s) listed twice: {', '.join(dupes)}")
    if not names:
        raise EnergeticsError("no states to compare")


def energy_profile(
    states: Sequence[StateEnergies],
    *,
    reference: str | None = None,
    temperatures_k: Sequence[float] | None = None,
    name: str | None = None,
    kind: str = "pathway",
    recipe: str | None = None,
    profile_units: Sequence[str] = PROFILE_UNITS,
) -> dict[str, Any]:
    """Relative energies of states in order (a pathway A -> TS -> B, or an isomer family).

    reference: a state name, None for the first state (a pathway's reactant), or "lowest"
    (each quantity, at each temperature, relative to its own lowest state: an isomer family).
    Returns the `energy_profiles` entry of docs/dossier-json.md: points with
    `electronic_kj_mol`, `zpe_kj_mol` (relative E + ZPE), `enthalpy_kj_mol` and `gibbs_kj_mol`
    (dicts by temperature key), and the same in each unit of `profile_units`. A value is None
    when the state or the reference lacks it (e.g. no frequency job).
    """
    _check_unique(states)
    temps = _temperatures(states, temperatures_k)
    ref_name = reference if reference is not None else states[0].name
    rel: dict[str, dict[str, Any]] = {s.name: {} for s in states}
    for q in ("electronic", "zpe"):
        for n, v in relative_table(states, q, reference=ref_name).items():
            rel[n][q] = v
    for q in ("enthalpy", "gibbs"):
        for n in rel:
            rel[n][q] = {}
        for t in temps:
            for n, v in relative_table(states, q, t, reference=ref_name).items():
                rel[n][q][temperature_key(t)] = v
    points = []
    for s in states:
        point: dict[str, Any] = {"state": s.name}
        for unit in profile_units:
            suffix = unit_suffix(unit)
            for q in QUANTITIES:
                v = rel[s.name][q]
                point[f"{q}_{suffix}"] = (
                    {k: convert_kj_mol(x, unit) for k, x in v.items()} if isinstance(v, dict) else convert_kj_mol(v, unit)
                )
        points.append(point)
    return {
        "name": name,
        "kind": kind,
        "recipe": recipe,
        "reference_state": ref_name,
        "temperatures_k": temps,
        "points": points,
    }


def profile_series(
    profile: Mapping[str, Any], quantity: str = "gibbs", temperature_k: float | None = None, unit: str = "kJ/mol"
) -> dict[str, Any]:
    """The data behind one profile figure: levels at x = 0, 1, 2, ... with their labels, values
    and the connectors between neighbours, plus barrier and reaction energies of a 3-point
    pathway (reactant, transition state, product). Values are None where missing."""
    if quantity not in QUANTITIES:
        raise EnergeticsError(f"unknown quantity {quantity!r}; use one of {', '.join(QUANTITIES)}")
    key = f"{quantity}_{unit_suffix(unit)}"
    labels, ys = [], []
    for p in profile["points"]:
        if key not in p:
            raise EnergeticsError(f"profile has no values in {unit}")
        v = p[key]
        if isinstance(v, dict):
            if temperature_k is None:
                raise EnergeticsError(f"{quantity} needs a temperature")
            v = v.get(temperature_key(temperature_k))
        labels.append(p["state"])
        ys.append(v)
    xs = list(range(len(ys)))
    segments = [
        (xs[i], ys[i], xs[i + 1], ys[i + 1]) for i in range(len(ys) - 1) if ys[i] is not None and ys[i + 1] is not None
    ]
    out: dict[str, Any] = {
        "name": profile.get("name"),
        "quantity": quantity,
        "temperature_k": temperature_k,
        "unit": unit,
        "labels": labels,
        "x": xs,
        "y": ys,
        "segments": segments,
    }
    if profile.get("kind") == "pathway" and len(ys) == 3 and None not in ys:
        out["barrier"] = ys[1] - ys[0]
        out["reverse_barrier"] = ys[1] - ys[2]
        out["reaction"] = ys[2] - ys[0]
    return out


def boltzmann_populations(
    gibbs_kj_mol: Mapping[str, float],
    temperature_k: float,
    degeneracies: Mapping[str, float] | None = None,
) -> dict[str, float]:
    """Equilibrium fractions p_i = g_i exp(-G_i / RT) / sum_j g_j exp(-G_j / RT).

    gibbs_kj_mol: free energies (any common zero) in kJ/mol at `temperature_k`;
    degeneracies: optional g_i (e.g. 2 for a pair of enantiomers counted as one entry), default 1.
    The Boltzmann distribution (McQuarrie, *Statistical Mechanics*, 1976, chapter 2) applied to
    isomers in equilibrium, each isomer a "state" with free energy G_i (equivalently, the
    equilibrium constants K_ij = exp(-(G_i - G_j) / RT)). Computed relative to the lowest G,
    so no overflow.
    """
    if not gibbs_kj_mol:
        raise EnergeticsError("no isomers to weigh")
    if not temperature_k > 0:
        raise EnergeticsError(f"temperature must be positive, got {temperature_k} K")
    degeneracies = degeneracies or {}
    unknown = set(degeneracies) - set(gibbs_kj_mol)
    if unknown:
        raise EnergeticsError(f"degeneracy given for unknown isomer(s): {', '.join(sorted(unknown))}")
    if any(v is None or not math.isfinite(v) for v in gibbs_kj_mol.values()):
        missing = [k for k, v in gibbs_kj_mol.items() if v is None or not math.isfinite(v)]
        raise EnergeticsError(f"no free energy for isomer(s): {', '.join(missing)}")
    rt = units.rt_kj_mol(temperature_k)
    g_min = min(gibbs_kj_mol.values())
    weights = {}
    for name, g in gibbs_kj_mol.items():
        deg = float(degeneracies.get(name, 1.0))
        if not deg > 0:
            raise EnergeticsError(f"degeneracy of {name!r} must be positive, got {deg}")
        weights[name] = deg * math.exp(-(g - g_min) / rt)
    total = sum(weights.values())
    return {name: w / total for name, w in weights.items()}


def boltzmann_table(
    gibbs_kj_mol_by_temperature: Mapping[float, Mapping[str, float]],
    degeneracies: Mapping[str, float] | None = None,
) -> dict[str, dict[str, float]]:
    """Populations at each temperature (each with its own G(T)), keyed by temperature_key."""
    return {
        temperature_key(t): boltzmann_populations(g, t, degeneracies)
        for t, g in sorted(gibbs_kj_mol_by_temperature.items())
    }


def family_populations(
    states: Sequence[StateEnergies],
    temperatures_k: Sequence[float] | None = None,
    *,
    basis: str = "gibbs",
    degeneracies: Mapping[str, float] | None = None,
    family: str | None = None,
    recipe: str | None = None,
) -> list[dict[str, Any]]:
    """`isomer_populations` entries of docs/dossier-json.md: one per temperature.

    basis: "gibbs" (the default, G(T)), "enthalpy", "zpe" or "electronic". States without the
    needed correction make that temperature's entry carry `populations: None` and a `missing` list.
    """
    _check_unique(states)
    temps = _temperatures(states, temperatures_k) if basis in ("gibbs", "enthalpy") else list(temperatures_k or [])
    out = []
    for t in temps:
        values = {s.name: s.total_hartree(basis, t if basis in ("gibbs", "enthalpy") else None) for s in states}
        missing = [n for n, v in values.items() if v is None]
        entry: dict[str, Any] = {"family": family, "recipe": recipe, "temperature_k": t, "basis": basis}
        if missing:
            entry["populations"] = None
            entry["missing"] = missing
        else:
            rel = relative_kj_mol(values, "lowest")
            entry["populations"] = boltzmann_populations(rel, t, degeneracies)
            entry["relative_kj_mol"] = rel
        out.append(entry)
    return out
