"""Uncertainty of computed rates: the model (from the manifest, with documented defaults) that
gives every uncertain input of a rate its distribution, and the one call per rate that
propagates them (dossier.science.propagation, whose names are re-exported here).

Correlation (shared-error model): the manifest's sigma for a level of theory is the sigma of
a *relative* energy at that level, so the cancellation of errors between two states computed
with one method is already inside it. Two relative energies from the same level (the barrier
and dG0 of one pathway, say) still share part of their error; each is drawn as
``x = mean + sigma (sqrt(rho) z_level + sqrt(1 - rho) z_own)``, so any two correlate with
coefficient rho (default 0.5: the value obtained when every state's energy carries an
independent error of the same size and both differences share the reactant; our reasoning).
Energies from different levels, lambda and H_ab are drawn independently of each other.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from dossier.errors import ManifestError
from dossier.science.propagation import (  # noqa: F401  (re-exported: callers import them from here)
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
    END_ERROR_TARGET_LOG10,
    LN10,
    MAX_SAMPLES,
    MAX_SETTLING_SAMPLES,
    MIN_SAMPLES,
    QUANTILES_68,
    QUANTILES_95,
    SETTLING_FACTOR,
    Z_95,
    Distribution,
    LogNormal,
    Normal,
    RateUncertainty,
    _r,
    _settled,
    log_linear_in_scores,
    propagate,
    sensitivity_kj_mol_per_decade,
)


# ---------------------------------------------------------------------------------------------
# the uncertainty model (manifest [uncertainty] with defaults)
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Assumption:
    """One stated uncertainty: what it applies to, its size, and where the number comes from."""

    quantity: str
    applies_to: str
    sigma: float
    unit: str  # "kJ/mol", "cm-1", "relative", "Hz", ...
    source: str
    set_in: str  # "manifest" or "default"

    def to_dict(self) -> dict[str, Any]:
        return {
            "quantity": self.quantity,
            "applies_to": self.applies_to,
            "sigma": self.sigma,
            "unit": self.unit,
            "source": self.source,
            "set_in": self.set_in,
        }


#: Default 1-sigma for relative energies and barriers, per method family (kJ/mol), with source.
#: MUE -> sigma: for a normal error, mean unsigned error = sigma sqrt(2/pi), so sigma ~ 1.25 MUE.
ENERGY_DEFAULTS: dict[str, tuple[float, str]] = {
    "coupled-cluster": (
        4.0,
        "CCSD(T) near the basis-set limit reproduces reference barrier heights (DBH24 set: Zheng, Zhao & "
        "Truhlar, J. Chem. Theory Comput. 2009, 5, 808) to well under 4 kJ/mol; 4 kJ/mol allows for a finite "
        "basis and DFT geometries (from memory; the allowance is our judgement)",
    ),
    "double-hybrid-dft": (
        6.0,
        "double hybrids: mean unsigned errors of roughly 1 kcal/mol on the GMTKN55 barrier-height subsets "
        "(Goerigk et al., Phys. Chem. Chem. Phys. 2017, 19, 32184; from memory)",
    ),
    "hybrid-dft": (
        10.0,
        "hybrid functionals: mean unsigned errors of about 1 to 4.5 kcal/mol (4 to 19 kJ/mol) on the HTBH38 and "
        "NHTBH38 barrier databases (Zhao, Gonzalez-Garcia & Truhlar, J. Phys. Chem. A 2005, 109, 2012) and the "
        "GMTKN55 barrier subsets (Goerigk et al. 2017); a typical 2 kcal/mol MUE gives sigma ~ 1.25 x 8.4 kJ/mol "
        "(from memory)",
    ),
    "gga-dft": (
        30.0,
        "GGA and meta-GGA functionals underestimate barriers, mean unsigned errors of about 5 to 9 kcal/mol on "
        "HTBH38/NHTBH38 (Zhao, Gonzalez-Garcia & Truhlar 2005; from memory)",
    ),
    "mp2": (
        15.0,
        "MP2: mean unsigned errors of about 3 kcal/mol on HTBH38/NHTBH38 (Zhao, Gonzalez-Garcia & Truhlar 2005; "
        "from memory); larger for open-shell systems with spin contamination",
    ),
    "hartree-fock": (
        60.0,
        "Hartree-Fock overestimates barriers by roughly 10 to 15 kcal/mol on HTBH38 (Zhao, Gonzalez-Garcia & "
        "Truhlar 2005; from memory)",
    ),
    "semiempirical": (
        40.0,
        "GFN2-xTB and similar: mean unsigned errors of several kcal/mol (about 8) on the GMTKN55 barrier subsets "
        "(Bannwarth, Ehlert & Grimme, J. Chem. Theory Comput. 2019, 15, 1652; from memory)",
    ),
    "unknown": (20.0, "method family not recognized: a wide default (our judgement, no source)"),
}

#: Default correlation between two relative energies from one level (see module docstring).
DEFAULT_LEVEL_CORRELATION = 0.5
LEVEL_CORRELATION_SOURCE = (
    "two relative energies sharing one reference state, each state with an independent error of equal size, "
    "correlate with rho = 0.5 (our reasoning, no benchmark)"
)

PARAMETER_DEFAULTS: dict[str, tuple[float, str]] = {
    "reorganization_energy_fraction": (
        0.2,
        "relative 1 sigma of a computed reorganization energy; the inner-sphere part from hybrid DFT is usually "
        "better than this, the continuum-solvent (outer-sphere) part is the weak point (our judgement, no benchmark)",
    ),
    "coupling_fraction": (
        0.3,
        "relative 1 sigma of a computed electronic coupling; H_ab depends strongly on the functional's exact-"
        "exchange fraction (our judgement, no benchmark)",
    ),
}

#: Route-specific defaults (used when the manifest names no value for that route).
ROUTE_DEFAULTS: dict[str, dict[str, tuple[float, str]]] = {
    "vertical-excitation": {
        "reorganization_energy_kj_mol": (
            25.0,
            "lambda from a TDDFT vertical excitation: hybrid-functional excitation energies carry errors of about "
            "0.2 to 0.3 eV (Jacquemin et al., J. Chem. Theory Comput. 2009, 5, 2420; from memory); 0.26 eV = 25 kJ/mol",
        )
    },
    "two-state-from-barrier": {
        "coupling_fraction": (
            0.5,
            "H_ab recovered from the adiabatic barrier inherits the barrier's error almost one to one "
            "(dH_ab ~ -dG*/(1 - 2 H_ab/lambda) for the symmetric two-state model), so it is the least certain "
            "route (our judgement, no benchmark)",
        )
    },
}

EXPERIMENT_DEFAULTS: dict[str, tuple[float, str]] = {
    "rate_fraction": (0.3, "relative 1 sigma of a measured rate constant given without error (our judgement, no source)"),
    "linewidth_hz": (1.0, "1 sigma of an excess line width given without error (our judgement, no source)"),
    "nu_max_cm1": (200.0, "1 sigma of a band maximum given without error (our judgement, no source)"),
    "fwhm_fraction": (0.1, "relative 1 sigma of a band width given without error (our judgement, no source)"),
    "epsilon_fraction": (0.1, "relative 1 sigma of a molar absorptivity given without error (our judgement, no source)"),
    "distance_fraction": (
        0.15,
        "relative 1 sigma of the transfer distance; the geometric site distance usually exceeds the effective "
        "(Stark) distance, so Hush couplings from it are lower bounds (Reimers & Hush; from memory)",
    ),
}

_LEVEL_KEYS = {"relative_energy_kj_mol", "barrier_kj_mol", "correlation", "source"}
_PARAMETER_KEYS = set(PARAMETER_DEFAULTS) | {"reorganization_energy_kj_mol", "coupling_cm1", "source"}
_TOP_KEYS = {"samples", "seed", "levels", "parameters", "routes", "experiment"}

_CC = ("ccsd(t)", "ccsdt", "dlpno", "cc2", "ccsd", "qcisd", "w1", "g4", "cbs-qb3")
_DOUBLE_HYBRID = ("b2plyp", "b2gp-plyp", "dsd-", "pwpb95", "revdsd", "mpw2plyp")
_HYBRID = (
    "b3lyp", "bhlyp", "bhandhlyp", "bh&hlyp", "pbe0", "pbeh", "pbe1pbe", "hse", "m05", "m06-2x", "m06-hf", "m06",
    "m08", "m11", "mn15", "mn12-sx", "wb97", "ωb97", "cam-b3lyp", "lc-", "b3pw91", "x3lyp", "tpssh", "b1lyp",
    "pw6b95", "bmk", "b97-1", "b97-2", "b97-3", "b3p86", "o3lyp", "r2scan0", "r2scanh", "scan0", "hybrid", "dft",
)
_GGA = ("pbe", "blyp", "bp86", "b97-d", "revpbe", "pw91", "tpss", "r2scan", "scan", "m06-l", "b97m", "svwn", "lda", "gga")
_SEMI = ("xtb", "gfn", "pm6", "pm7", "am1", "dftb", "mndo")


def classify_level(recipe: str, level_label: str | None = None) -> str:
    """Method family of a level of theory, from its label (e.g. 'BHLYP/6-31G*') or recipe name.

    For composite names 'A//B' the part before '//' (the energy) decides.
    Returns a key of ENERGY_DEFAULTS.
    """
    for text in (level_label, recipe):
        if not text:
            continue
        head = text.split("//")[0].strip().lower()
        method = head.split("/")[0].strip()
        if any(t in method for t in _CC):
            return "coupled-cluster"
        if any(t in method for t in _DOUBLE_HYBRID):
            return "double-hybrid-dft"
        if "mp2" in method or "mp3" in method or "mp4" in method:
            return "mp2"
        if any(t in method for t in _SEMI):
            return "semiempirical"
        # hybrids before GGAs: 'pbe0' contains 'pbe'
        if any(t in method for t in _HYBRID):
            return "hybrid-dft"
        if any(t in method for t in _GGA):
            return "gga-dft"
        if method in ("hf", "rhf", "uhf", "rohf", "scf", "hartree-fock"):
            return "hartree-fock"
    return "unknown"


@dataclass
class UncertaintyModel:
    """The validated [uncertainty] table with defaults. Records which assumptions were used."""

    samples: int = DEFAULT_SAMPLES
    seed: int = DEFAULT_SEED
    levels: dict[str, dict[str, Any]] = field(default_factory=dict)
    parameters: dict[str, Any] = field(default_factory=dict)
    routes: dict[str, dict[str, Any]] = field(default_factory=dict)
    experiment: dict[str, Any] = field(default_factory=dict)
    _used: dict[tuple[str, str], Assumption] = field(default_factory=dict, repr=False)

    # -- energies --------------------------------------------------------------------------
    def energy_assumption(self, level: str, *, kind: str = "barrier", level_label: str | None = None) -> Assumption:
        """1 sigma (kJ/mol) of a relative energy (kind='relative') or barrier (kind='barrier') at `level`
        (a recipe name); falls back to the method family's default."""
        quantity = "barrier" if kind == "barrier" else "relative energy"
        entry = self.levels.get(level)
        if entry is not None:
            key = "barrier_kj_mol" if kind == "barrier" and "barrier_kj_mol" in entry else "relative_energy_kj_mol"
            if key in entry:
                a = Assumption(quantity, f"level {level}", float(entry[key]), "kJ/mol",
                               str(entry.get("source", "set in the manifest")), "manifest")
                return self._use(("energy", f"{level}|{quantity}"), a)
        family = classify_level(level, level_label)
        sigma, source = ENERGY_DEFAULTS[family]
        a = Assumption(quantity, f"level {level} ({family.replace('-', ' ')})", sigma, "kJ/mol", source, "default")
        return self._use(("energy", f"{level}|{quantity}"), a)

    def level_correlation(self, level: str) -> float:
        entry = self.levels.get(level) or {}
        rho = float(entry.get("correlation", DEFAULT_LEVEL_CORRELATION))
        src = "set in the manifest" if "correlation" in entry else LEVEL_CORRELATION_SOURCE
        self._use(("correlation", level), Assumption("correlation of two relative energies", f"level {level}", rho,
                                                     "correlation coefficient", src,
                                                     "manifest" if "correlation" in entry else "default"))
        return rho

    # -- lambda and H_ab ---------------------------------------------------------------------
    def reorganization_distribution(self, value_kj_mol: float, route: str | None = None) -> Distribution:
        return self._parameter_distribution("reorganization_energy", value_kj_mol, route, "kJ/mol")

    def coupling_distribution(self, value_cm1: float, route: str | None = None) -> Distribution:
        return self._parameter_distribution("coupling", value_cm1, route, "cm-1")

    def _parameter_distribution(self, stem: str, value: float, route: str | None, unit: str) -> Distribution:
        abs_key = f"{stem}_{'kj_mol' if unit == 'kJ/mol' else 'cm1'}"
        frac_key = f"{stem}_fraction"
        quantity = "reorganization energy" if stem == "reorganization_energy" else "electronic coupling"
        where = f"route {route}" if route else "every route"
        sigma: float | None = None
        relative = True
        r_entry = self.routes.get(route or "", {})
        d_entry = ROUTE_DEFAULTS.get(route or "", {})
        if abs_key in r_entry or frac_key in r_entry:
            relative = frac_key in r_entry
            sigma = float(r_entry[frac_key if relative else abs_key])
            a = Assumption(quantity, where, sigma, "relative" if relative else unit,
                           str(r_entry.get("source", "set in the manifest")), "manifest")
        elif abs_key in self.parameters or frac_key in self.parameters:
            relative = frac_key in self.parameters
            sigma = float(self.parameters[frac_key if relative else abs_key])
            a = Assumption(quantity, "every route", sigma, "relative" if relative else unit,
                           str(self.parameters.get("source", "set in the manifest")), "manifest")
        elif abs_key in d_entry or frac_key in d_entry:
            relative = frac_key in d_entry
            sigma, src = d_entry[frac_key if relative else abs_key]
            a = Assumption(quantity, where, sigma, "relative" if relative else unit, src, "default")
        else:
            sigma, src = PARAMETER_DEFAULTS[frac_key]
            a = Assumption(quantity, "every route", sigma, "relative", src, "default")
        self._use(("parameter", f"{stem}|{a.applies_to}"), a)
        if relative:
            if value > 0:
                return LogNormal.from_relative(value, sigma)
            # zero or negative (unphysical for lambda; a signed coupling): a normal of that relative width
            return Normal(float(value), sigma * abs(float(value)))
        return Normal(float(value), sigma)

    # -- experimental inputs -----------------------------------------------------------------
    def experiment_sigma(self, key: str) -> Assumption:
        if key in self.experiment:
            a = Assumption(key, "experimental inputs given without error", float(self.experiment[key]),
                           "Hz" if key.endswith("_hz") else "cm-1" if key.endswith("_cm1") else "relative",
                           str(self.experiment.get("source", "set in the manifest")), "manifest")
        else:
            sigma, src = EXPERIMENT_DEFAULTS[key]
            a = Assumption(key, "experimental inputs given without error", sigma,
                           "Hz" if key.endswith("_hz") else "cm-1" if key.endswith("_cm1") else "relative", src, "default")
        return self._use(("experiment", key), a)

    # -- building the inputs of one rate -----------------------------------------------------
    def rate_inputs(
        self,
        values: Mapping[str, Any],
        *,
        levels: Mapping[str, str] | None = None,
        routes: Mapping[str, str] | None = None,
        level_labels: Mapping[str, str] | None = None,
        exact: frozenset[str] | set[str] = frozenset(),
    ) -> tuple[dict[str, Distribution | Any], dict[tuple[str, str], float]]:
        """Distributions for a rate function's keyword arguments, and their correlations.

        values: every keyword argument of the rate function (e.g. barrier_kj_mol, temperature_k).
        levels: argument -> recipe name for the energies (barrier_kj_mol, delta_g0_kj_mol, ...);
            an energy argument without a level gets the 'unknown' default.
        routes: argument -> route name for reorganization_energy_kj_mol / solvent_reorganization_kj_mol
            / coupling_cm1.
        level_labels: recipe name -> level-of-theory label (e.g. 'BHLYP/6-31G*') to pick a default.
        Arguments not recognized as uncertain (temperature_k, transmission_coefficient, mode_cm1,
        huang_rhys, n_max, ...) and those named in ``exact`` (e.g. dG0 = 0 by symmetry) are passed
        through unchanged.
        """
        levels = dict(levels or {})
        routes = dict(routes or {})
        labels = dict(level_labels or {})
        out: dict[str, Any] = {}
        energy_args: list[str] = []
        for name, value in values.items():
            if name in exact:
                out[name] = value
            elif name in ENERGY_ARGUMENTS and value is not None and np.ndim(value) == 0:
                level = levels.get(name, "unstated level")
                kind = "barrier" if "barrier" in name else "relative"
                a = self.energy_assumption(level, kind=kind, level_label=labels.get(level))
                out[name] = Normal(float(value), a.sigma)
                energy_args.append(name)
            elif name in REORGANIZATION_ARGUMENTS and value is not None and np.ndim(value) == 0:
                out[name] = self.reorganization_distribution(float(value), routes.get(name))
            elif name in COUPLING_ARGUMENTS and value is not None and np.ndim(value) == 0:
                out[name] = self.coupling_distribution(float(value), routes.get(name))
            else:
                out[name] = value
        corr: dict[tuple[str, str], float] = {}
        for i, a in enumerate(energy_args):
            for b in energy_args[i + 1:]:
                la, lb = levels.get(a, "unstated level"), levels.get(b, "unstated level")
                if la == lb:
                    corr[(a, b)] = self.level_correlation(la)
        return out, corr

    # -- record keeping ----------------------------------------------------------------------
    def _use(self, key: tuple[str, str], a: Assumption) -> Assumption:
        self._used.setdefault(key, a)
        return a

    def assumptions(self) -> list[Assumption]:
        """Every assumption used so far (in first-use order), then manifest-set ones not yet used."""
        seen = list(self._used.values())
        listed = {(a.quantity, a.applies_to) for a in seen}
        for level, entry in self.levels.items():
            for key, quantity in (("relative_energy_kj_mol", "relative energy"), ("barrier_kj_mol", "barrier")):
                if key in entry and (quantity, f"level {level}") not in listed:
                    seen.append(Assumption(quantity, f"level {level}", float(entry[key]), "kJ/mol",
                                           str(entry.get("source", "set in the manifest")), "manifest"))
        return seen

    def to_dict(self) -> dict[str, Any]:
        """The top-level `uncertainty` entry of dossier.json."""
        from dossier.science.statements import correlation_statement

        return {
            "method": "Monte Carlo",
            "check": "first-order (linearized) propagation",
            "samples": self.samples,
            "seed": self.seed,
            "intervals": "central 68.27 % and 95 % of the sampled log10 k",
            "assumptions": [a.to_dict() for a in self.assumptions()],
            "correlation": correlation_statement(self._correlated_levels()),
        }

    def _correlated_levels(self) -> dict[str, float]:
        return {key[1]: a.sigma for key, a in self._used.items() if key[0] == "correlation"}

    # -- the one call per rate -----------------------------------------------------------------
    def annotate_rate(
        self,
        rate_fn: Callable[..., Any],
        values: Mapping[str, Any],
        *,
        levels: Mapping[str, str] | None = None,
        routes: Mapping[str, str] | None = None,
        level_labels: Mapping[str, str] | None = None,
        exact: frozenset[str] | set[str] = frozenset(),
    ) -> dict[str, Any]:
        """Keys to merge into a rate entry of dossier.json (log10_rate_interval_68/95, median,
        sensitivity, statement, and an 'uncertainty' detail block), for rate_fn(**values)."""
        inputs, corr = self.rate_inputs(values, levels=levels, routes=routes, level_labels=level_labels, exact=exact)
        key = (getattr(rate_fn, "__qualname__", repr(rate_fn)), repr(sorted(inputs.items())), repr(sorted(corr.items())))
        cache = self.__dict__.setdefault("_settled_cache", {})
        try:
            if key not in cache:  # the same rate at the same inputs (a ladder rung repeating the pathway's level)
                cache[key] = _settled(rate_fn, inputs, corr, self.samples, self.seed)
            import copy

            return copy.deepcopy(cache[key])
        except ValueError as exc:
            # e.g. a zero coupling: the rate is zero at every sample; say so instead of failing the build
            return {
                "log10_rate_interval_68": None, "log10_rate_interval_95": None, "log10_rate_median": None,
                "sensitivity_kj_mol_per_decade": _r(sensitivity_kj_mol_per_decade(float(values["temperature_k"])))
                if np.ndim(values.get("temperature_k")) == 0 and values.get("temperature_k") else None,
                "statement": f"no interval could be computed: {exc}",
                "uncertainty": {"method": "Monte Carlo", "samples": self.samples, "seed": self.seed,
                                "error": str(exc)},
            }


ENERGY_ARGUMENTS = frozenset({"barrier_kj_mol", "delta_g0_kj_mol", "adiabatic_barrier_kj_mol", "activation_kj_mol",
                              "barrier_shift_kj_mol"})
REORGANIZATION_ARGUMENTS = frozenset({"reorganization_energy_kj_mol", "solvent_reorganization_kj_mol"})
COUPLING_ARGUMENTS = frozenset({"coupling_cm1"})


WhereOf = Callable[..., str]


def _default_where(*_key: Any) -> str:
    return "dossier.toml"


def _fail(reason: str, where_of: WhereOf, *key: Any) -> None:
    raise ManifestError(reason, where=where_of("uncertainty", *key))


def _number(value: Any, label: str, where_of: WhereOf, key: tuple, *, upper: float | None = None) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        _fail(f"[uncertainty] {label} must be a number, got {value!r}", where_of, *key)
    if not value > 0:
        _fail(f"[uncertainty] {label} must be greater than 0, got {value!r}", where_of, *key)
    if upper is not None and value > upper:
        _fail(f"[uncertainty] {label} must be at most {upper}, got {value!r}", where_of, *key)
    return float(value)


def _unknown(table: Mapping[str, Any], allowed: set[str], label: str, where_of: WhereOf, key: tuple) -> None:
    extra = sorted(set(table) - allowed)
    if extra:
        _fail(f"[uncertainty{label}] has unknown key '{extra[0]}' (allowed: {', '.join(sorted(allowed))})",
              where_of, *key, extra[0])


def model_from_manifest(
    table: Mapping[str, Any] | None,
    *,
    where_of: WhereOf | None = None,
    recipes: Iterable[str] | None = None,
) -> UncertaintyModel:
    """Validate the manifest's [uncertainty] table and build the model.

    where_of: key path -> 'dossier.toml:LINE' (project.Manifest.where); without it errors name
    'dossier.toml'. recipes: the project's recipe names; a level not among them is an error.
    Raises ManifestError (one line naming the manifest line and the reason) on a bad table.
    """
    w = where_of or _default_where
    if table is None:
        table = {}
    if not isinstance(table, Mapping):
        _fail("[uncertainty] must be a table", w)
    _unknown(table, _TOP_KEYS, "", w, ())
    samples = table.get("samples", DEFAULT_SAMPLES)
    if isinstance(samples, bool) or not isinstance(samples, int) or not MIN_SAMPLES <= samples <= MAX_SAMPLES:
        _fail(f"[uncertainty] samples must be a whole number from {MIN_SAMPLES} to {MAX_SAMPLES}, got {samples!r}",
              w, "samples")
    seed = table.get("seed", DEFAULT_SEED)
    if isinstance(seed, bool) or not isinstance(seed, int) or seed < 0:
        _fail(f"[uncertainty] seed must be a whole number >= 0, got {seed!r}", w, "seed")
    known = set(recipes) if recipes is not None else None
    levels: dict[str, dict[str, Any]] = {}
    raw_levels = table.get("levels") or {}
    if not isinstance(raw_levels, Mapping):
        _fail("[uncertainty.levels] must be a table of recipe names", w, "levels")
    for name, entry in raw_levels.items():
        key = ("levels", name)
        label = f'.levels."{name}"'
        if not isinstance(entry, Mapping):
            _fail(f"[uncertainty{label}] must be a table", w, *key)
        if known is not None and name not in known:
            _fail(f"[uncertainty{label}] names no recipe under [recipes] (known: {', '.join(sorted(known)) or 'none'})",
                  w, *key)
        _unknown(entry, _LEVEL_KEYS, label, w, key)
        if "relative_energy_kj_mol" not in entry and "barrier_kj_mol" not in entry:
            _fail(f"[uncertainty{label}] needs relative_energy_kj_mol (1 sigma, kJ/mol)", w, *key)
        clean: dict[str, Any] = {}
        for k in ("relative_energy_kj_mol", "barrier_kj_mol"):
            if k in entry:
                clean[k] = _number(entry[k], f'levels."{name}".{k}', w, (*key, k), upper=500.0)
        clean.setdefault("relative_energy_kj_mol", clean.get("barrier_kj_mol"))
        if "correlation" in entry:
            c = entry["correlation"]
            if isinstance(c, bool) or not isinstance(c, (int, float)) or not 0.0 <= c <= 1.0:
                _fail(f'[uncertainty] levels."{name}".correlation must be a number from 0 to 1 (shared-error model), '
                      f"got {c!r}", w, *key, "correlation")
            clean["correlation"] = float(c)
        if "source" in entry:
            if not isinstance(entry["source"], str):
                _fail(f'[uncertainty] levels."{name}".source must be text', w, *key, "source")
            clean["source"] = entry["source"]
        levels[name] = clean
    parameters = _parameter_table(table.get("parameters") or {}, ".parameters", w, ("parameters",))
    routes = {}
    raw_routes = table.get("routes") or {}
    if not isinstance(raw_routes, Mapping):
        _fail("[uncertainty.routes] must be a table of route names", w, "routes")
    for name, entry in raw_routes.items():
        routes[name] = _parameter_table(entry, f'.routes."{name}"', w, ("routes", name))
    exp_table = table.get("experiment") or {}
    if not isinstance(exp_table, Mapping):
        _fail("[uncertainty.experiment] must be a table", w, "experiment")
    _unknown(exp_table, set(EXPERIMENT_DEFAULTS) | {"source"}, ".experiment", w, ("experiment",))
    experiment: dict[str, Any] = {}
    for k, v in exp_table.items():
        if k == "source":
            experiment[k] = str(v)
        else:
            experiment[k] = _number(v, f"experiment.{k}", w, ("experiment", k))
    return UncertaintyModel(samples=samples, seed=seed, levels=levels, parameters=parameters, routes=routes,
                            experiment=experiment)


def _parameter_table(entry: Any, label: str, w: WhereOf, key: tuple) -> dict[str, Any]:
    if not isinstance(entry, Mapping):
        _fail(f"[uncertainty{label}] must be a table", w, *key)
    _unknown(entry, _PARAMETER_KEYS, label, w, key)
    clean: dict[str, Any] = {}
    for k, value in entry.items():
        if k == "source":
            if not isinstance(value, str):
                _fail(f"[uncertainty{label}] source must be text", w, *key, k)
            clean[k] = value
        elif k.endswith("_fraction"):
            clean[k] = _number(value, f"{label.lstrip('.')}.{k}", w, (*key, k), upper=5.0)
        else:
            clean[k] = _number(value, f"{label.lstrip('.')}.{k}", w, (*key, k))
    for stem in ("reorganization_energy", "coupling"):
        if f"{stem}_fraction" in clean and any(k.startswith(stem) and not k.endswith("_fraction") for k in clean):
            _fail(f"[uncertainty{label}] gives {stem} both as a fraction and in absolute units; keep one", w, *key)
    return clean


def model_from_project(project: Any) -> UncertaintyModel:
    """The model for a bound Project: its raw `.uncertainty` table, checked against its recipes,
    errors located by the manifest's line finder."""
    # a Project carries its Manifest; a Manifest (load_manifest) locates lines itself
    manifest = project if hasattr(project, "where") else getattr(project, "manifest", None)
    where_of = manifest.where if manifest is not None and hasattr(manifest, "where") else None
    if where_of is None:
        name = str(getattr(project, "manifest_path", "dossier.toml"))
        where_of = lambda *_k: name  # noqa: E731
    recipes = getattr(project, "recipes", None)
    return model_from_manifest(getattr(project, "uncertainty", None), where_of=where_of,
                               recipes=list(recipes) if recipes else None)
