"""Assemble the dossier's results (the content of dossier.json, docs/dossier-json.md) from a
bound Project.

Data flow: Project (records bound to the manifest) -> pure analyses (dossier.thermo,
dossier.energetics, dossier.localization, dossier.marcus, dossier.checks, dossier.uncertainty,
dossier.experiment) -> one plain dict of JSON types. Nothing here reads a file.

Choices this module makes, and says so in the result:

- Reference temperature: the project temperature closest to 298.15 K; the scalar pathway
  parameters (`delta_g0_kj_mol`, `barrier_kj_mol`) are quoted there, every rate at every
  temperature uses its own values.
- Energies of a recipe: electronic energy from the recipe's source (geometry job or a named
  single point) plus, for `thermal = "frequencies"`, the dossier's own RRHO/quasi-RRHO
  correction (dossier.thermo) from the state's frequency job.
- Driving force and barrier come from the recipes the pathway's `levels` name
  (driving_force, barrier); the reorganization-energy and coupling routes combine their own
  files (excited-state jobs, four-point jobs, frequency jobs) with the electronic energies of
  the recipes named by levels.reorganization_energy and levels.coupling.
- Preferred routes: lambda from the vertical excitation at the reactant, then the four-point
  scheme, then the two-state fit, then the normal-mode projection; H_ab from half the splitting
  at the transition state, then the two-state fit, then the two-state model from the barrier,
  then Mulliken–Hush. Every route is reported with its provenance.
- Floats are not rounded here (rendering rounds); the uncertainty module rounds its own
  log10 values to 4 decimals.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import asdict
from typing import Any

import numpy as np

from dossier.science import geometry
from dossier.science import localization as loc
from dossier.science import marcus
from dossier import units as u
from dossier.records import Calculation

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
    "RT ln 10 (5.7 kJ/mol at 298 K) changes a rate tenfold; the intervals show only the spread that follows from "
    "the stated uncertainties."
)


class _Unavailable(Exception):
    """A quantity cannot be computed from the project's files (the reason is reported, not raised)."""


def _rate_ratio(rate_per_s: float, reference_per_s: float) -> float | None:
    """k / k_ref, or None where the reference rate underflows to zero (very high barrier / low T)."""
    return rate_per_s / reference_per_s if reference_per_s > 0 else None


def _kj(hartree: float) -> float:
    return float(hartree) * u.HARTREE_KJ_MOL


# ---------------------------------------------------------------------------
# Energies of states under recipes
# ---------------------------------------------------------------------------
class _Energies:
    """Electronic, ZPE, enthalpy and Gibbs energies of every state under every recipe (cached)."""

    def __init__(self, project):
        self.p = project
        self._thermo: dict[tuple[str, float], Any] = {}
        self._thermo_errors: dict[str, str] = {}

    def electronic(self, state: str, recipe: str) -> tuple[float, Calculation, str]:
        st = self.p.states[state]
        rc = self.p.recipes[recipe]
        if rc.electronic == "geometry":
            rec, part = st.geometry, "geometry"
        else:
            rec = st.single_points.get(rc.electronic)
            part = f"single point {rc.electronic}"
            if rec is None:
                raise _Unavailable(f"state '{state}' has no single point '{rc.electronic}' (recipe '{recipe}')")
        if rec.energy_hartree is None:
            raise _Unavailable(f"state '{state}': the {part} job holds no final energy")
        return float(rec.energy_hartree), rec, part

    def thermo(self, state: str, temperature_k: float):
        key = (state, float(temperature_k))
        if key in self._thermo:
            return self._thermo[key]
        from dossier.science import thermo as th

        st = self.p.states[state]
        freq = st.frequencies
        result = None
        if freq is not None and freq.vibrations is not None and freq.elements:
            s = self.p.settings
            try:
                result = th.rrho(freq.elements, freq.coordinates_angstrom, freq.vibrations.wavenumbers_cm1,
                                 freq.multiplicity or st.geometry.multiplicity or 1, float(temperature_k),
                                 standard_state=s.standard_state, qrrho=s.qrrho, symmetry_number=st.symmetry_number,
                                 frequency_scale=s.frequency_scale)
            except Exception as exc:  # a ThermoError (DossierError) or bad numbers: reported per state
                self._thermo_errors[state] = str(exc)
                result = None
        self._thermo[key] = result
        return result

    def thermo_error(self, state: str) -> str | None:
        return self._thermo_errors.get(state)

    def total(self, state: str, recipe: str, temperature_k: float, kind: str) -> float:
        """Energy in hartree: kind 'electronic' | 'zpe' | 'enthalpy' | 'gibbs'."""
        e, _, _ = self.electronic(state, recipe)
        if kind == "electronic":
            return e
        if self.p.recipes[recipe].thermal != "frequencies":
            raise _Unavailable(f"recipe '{recipe}' adds no thermal correction")
        t = self.thermo(state, temperature_k)
        if t is None:
            reason = self.thermo_error(state) or "no frequency job"
            raise _Unavailable(f"state '{state}': no thermal correction ({reason})")
        corr = {"zpe": t.zpe_hartree, "enthalpy": t.enthalpy_correction_hartree,
                "gibbs": t.gibbs_correction_hartree}[kind]
        return e + corr

    def relative_kj_mol(self, a: str, b: str, recipe: str, temperature_k: float, kind: str) -> float:
        return _kj(self.total(b, recipe, temperature_k, kind) - self.total(a, recipe, temperature_k, kind))

    def files(self, states: list[str], recipe: str) -> list[str]:
        out: list[str] = []
        for s in states:
            try:
                _, rec, _ = self.electronic(s, recipe)
                out.append(self.p.label(rec))
            except _Unavailable:
                pass
            st = self.p.states[s]
            if self.p.recipes[recipe].thermal == "frequencies" and st.frequencies is not None:
                out.append(self.p.label(st.frequencies))
        return list(dict.fromkeys(out))

    def level_label(self, state: str, recipe: str) -> str | None:
        try:
            _, rec, part = self.electronic(state, recipe)
        except _Unavailable:
            return None
        st = self.p.states[state]
        label = rec.level.label()
        if part != "geometry":
            label = f"{label}//{st.geometry.level.label()}"
        if self.p.recipes[recipe].thermal == "frequencies" and st.frequencies is not None:
            s = self.p.settings
            label += f" + RRHO ({s.qrrho} low modes, {s.standard_state}) from {st.frequencies.level.label()}"
        return label


def _prov(files, states, level, formula, **extra) -> dict:
    d = {"files": list(files), "states": list(states), "level_of_theory": level, "formula": formula}
    d.update(extra)
    return d


# ---------------------------------------------------------------------------
# States
# ---------------------------------------------------------------------------
def _redox_sites(project) -> list[str]:
    names: list[str] = []
    for pw in project.pathways:
        for s in (pw.donor_site, pw.acceptor_site):
            if s and s not in names:
                names.append(s)
    if not names:
        bridges = {pw.bridge_site for pw in project.pathways if pw.bridge_site}
        names = [s for s in project.sites if s not in bridges and s != "bridge"]
    return names


def _bridge_atoms(project) -> list[int] | None:
    atoms: list[int] = []
    for pw in project.pathways:
        if pw.bridge_site:
            atoms += [a for a in project.sites.get(pw.bridge_site, []) if a not in atoms]
    if not atoms and "bridge" in project.sites:
        atoms = list(project.sites["bridge"])
    return atoms or None


def _excited_list(rec: Calculation | None) -> list[dict]:
    if rec is None:
        return []
    out = []
    for x in rec.excited_states:
        out.append({"energy_ev": x.energy_ev, "energy_cm1": x.energy_cm1,
                    "wavelength_nm": (u.NM_CM1 / x.energy_cm1) if x.energy_cm1 else None,
                    "oscillator_strength": x.oscillator_strength, "symmetry": x.symmetry,
                    "transition_dipole_au": x.transition_dipole_au})
    return out


def _frequency_summary(rec: Calculation | None, threshold_cm1: float) -> dict | None:
    if rec is None or rec.vibrations is None:
        return None
    w = list(rec.vibrations.wavenumbers_cm1)
    imag = [x for x in w if x < 0]
    return {"n_modes": len(w), "n_imaginary": len(imag), "imaginary_cm1": imag,
            "n_imaginary_beyond_threshold": sum(1 for x in imag if x < -threshold_cm1),
            "lowest_real_cm1": [x for x in w if x > 0][:3], "file": None}


def _state_entry(ctx, st) -> dict:
    p = ctx.project
    g = st.geometry
    energies = {"geometry": g.energy_hartree}
    for k, rec in st.single_points.items():
        energies[k] = rec.energy_hartree
    thermo = []
    for t in ctx.temperatures:
        r = ctx.energies.thermo(st.name, t)
        if r is None:
            continue
        thermo.append({"temperature_k": t, "zpe_hartree": r.zpe_hartree,
                       "thermal_energy_correction_hartree": r.thermal_energy_correction_hartree,
                       "enthalpy_correction_hartree": r.enthalpy_correction_hartree,
                       "gibbs_correction_hartree": r.gibbs_correction_hartree, "entropy_j_mol_k": r.entropy_j_mol_k,
                       "heat_capacity_cv_j_mol_k": r.heat_capacity_cv_j_mol_k, "qrrho": r.qrrho,
                       "symmetry_number": r.symmetry_number, "symmetry_number_source": r.symmetry_number_source,
                       "point_group": r.point_group, "standard_state": r.standard_state,
                       "pressure_pa": r.pressure_pa, "frequency_scale": r.frequency_scale,
                       "n_imaginary_left_out": r.n_imaginary, "notes": list(r.notes),
                       "contributions": {k: asdict(v) for k, v in r.contributions.items()}})
    freq = _frequency_summary(st.frequencies, p.settings.imaginary_threshold_cm1)
    if freq is not None:
        freq["file"] = p.label(st.frequencies)
    printed = asdict(st.frequencies.printed_thermo) if st.frequencies is not None and \
        st.frequencies.printed_thermo is not None else None
    excited = _excited_list(st.excited_states)
    localization = loc.state_localization(g, p.sites, ctx.redox_sites, ctx.bridge_atoms)
    if st.excited_states is not None and not g.spin_populations and st.excited_states.spin_populations:
        localization["notes"].append("populations taken from the geometry job only")
    notes = []
    if ctx.energies.thermo_error(st.name):
        notes.append(f"thermochemistry not computed: {ctx.energies.thermo_error(st.name)}")
    return {
        "name": st.name, "role": st.role, "role_source": st.role_source, "note": st.note,
        "formula": g.formula if g.elements else None, "charge": g.charge, "multiplicity": g.multiplicity,
        "n_atoms": g.n_atoms, "elements": list(g.elements), "coordinates_angstrom": [list(map(float, c)) for c in
                                                                                      g.coordinates_angstrom],
        "files": st.files, "program": g.program, "program_version": g.program_version,
        "level_of_theory": g.level.label(), "status": {part: rec.status.word for part, rec in st.records()},
        "energies_hartree": energies, "s2": g.s2, "s2_ideal": g.s2_ideal,
        "frequencies": freq, "thermo": thermo, "printed_thermo": printed,
        "excited_states": excited,
        "excited_states_file": p.label(st.excited_states) if st.excited_states is not None else None,
        "excited_states_level_of_theory": st.excited_states.level.label() if st.excited_states is not None else None,
        "dipole_debye": g.dipole_debye,
        "localization": localization, "notes": notes,
    }


# ---------------------------------------------------------------------------
# Pathway parameters by route
# ---------------------------------------------------------------------------
def _lowest_excitation(rec: Calculation | None):
    if rec is None or not rec.excited_states:
        return None
    return min(rec.excited_states, key=lambda x: x.energy_cm1)


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


def _pick(routes: list[dict], name: str) -> dict | None:
    return next((r for r in routes if r["route"] == name), None)


def _chosen_energy_route(routes: list[dict], thermal: bool, barrier: bool) -> dict | None:
    order = (["ts-gibbs", "ts-electronic"] if barrier else ["gibbs", "electronic"]) if thermal else \
        (["ts-electronic"] if barrier else ["electronic"])
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


def _lambda_routes(ctx, pw, modes) -> tuple[list[dict], list[dict], dict | None]:
    p, en = ctx.project, ctx.energies
    routes, missing = [], []
    r, ts = p.states[pw.reactant], p.states.get(pw.transition_state) if pw.transition_state else None
    prod = p.states[pw.product]
    rc = pw.levels.get("reorganization_energy", pw.recipe)
    # (i) four-point
    if pw.four_point:
        fp = pw.four_point
        vals = {k: fp[k].energy_hartree for k in fp}
        if any(v is None for v in vals.values()):
            missing.append({"parameter": "reorganization_energy", "route": "four-point",
                            "reason": "a four-point job holds no final energy"})
        else:
            lam = marcus.four_point_reorganization_kj_mol(vals["reactant_at_reactant"], vals["reactant_at_product"],
                                                          vals["product_at_product"], vals["product_at_reactant"])
            levels = sorted({fp[k].level.label() for k in fp})
            routes.append({
                "route": "four-point", "value_kj_mol": lam,
                "relaxation_reactant_kj_mol": _kj(vals["reactant_at_product"] - vals["reactant_at_reactant"]),
                "relaxation_product_kj_mol": _kj(vals["product_at_reactant"] - vals["product_at_product"]),
                "energies_hartree": vals, "note": pw.four_point_note,
                "provenance": _prov(list((pw.four_point_files or {}).values()), [], "; ".join(levels),
                                    "lambda = [E(R@P) - E(R@R)] + [E(P@R) - E(P@P)] "
                                    "(Nelsen, Blackstock, Kim, JACS 1987, 109, 677)",
                                    kind="inner-sphere (the four jobs' own solvent treatment)"),
            })
    else:
        missing.append({"parameter": "reorganization_energy", "route": "four-point",
                        "reason": "the pathway has no [pathways.four_point] table"})
    # (ii) vertical excitation at the reactant (and at the product)
    try:
        de0 = en.relative_kj_mol(pw.reactant, pw.product, rc, ctx.t_ref, "electronic")
    except _Unavailable as exc:
        de0 = None
        missing.append({"parameter": "reorganization_energy", "route": "vertical-excitation", "reason": str(exc)})
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
    # (iii) two-state fit
    fit = None
    if ts is not None and de0 is not None:
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
        if n_obs >= 2 and any(k.startswith("gap") for k in obs):
            fit = marcus.fit_two_state_model(delta_e0_kj_mol=de0, **obs)
            fit["observations_kj_mol"] = {k: v for k, v in obs.items() if v is not None}
            fit["delta_e0_kj_mol"] = de0
            routes.append({
                "route": "two-state-fit", "value_kj_mol": fit["reorganization_energy_kj_mol"],
                "rms_residual_kj_mol": fit["rms_residual_kj_mol"], "observations_kj_mol": fit["observations_kj_mol"],
                "provenance": _prov(list(dict.fromkeys(files)), pw.state_names, en.level_label(pw.reactant, rc),
                                    "least-squares fit of the diabatic parabolas lambda x^2, lambda (x-1)^2 + dE0 "
                                    "coupled by H_ab to the electronic barrier and the lowest vertical gaps "
                                    "(Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168)"),
            })
        else:
            missing.append({"parameter": "reorganization_energy", "route": "two-state-fit",
                            "reason": "needs the barrier and at least one vertical gap (excited-state job)"})
    # (iv) normal-mode projection
    if modes is not None:
        routes.append({
            "route": "normal-mode-projection", "value_kj_mol": modes["total_kj_mol"],
            "provenance": _prov(modes["files"], [pw.reactant, pw.product],
                                p.states[pw.reactant].frequencies.level.label(),
                                "lambda = sum_j (1/2) omega_j^2 Q_j^2, reactant modes displaced to the product "
                                "geometry (harmonic; Huang & Rhys 1950; Reimers, J. Chem. Phys. 2001, 115, 9103)",
                                kind="inner-sphere, harmonic",
                                note="the reactant's adiabatic Hessian is softened by the coupling along the transfer "
                                     "coordinate, so this underestimates lambda when H_ab is large"),
        })
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


def _choose(routes: list[dict], order: tuple[str, ...]) -> dict | None:
    for name in order:
        r = _pick(routes, name)
        if r is not None:
            return r
    return None


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


# ---------------------------------------------------------------------------
# Rates
# ---------------------------------------------------------------------------
class _RateInputs:
    """Everything a pathway's rate models need at one recipe combination."""

    def __init__(self, *, driving, barrier, lam, hab, mlj, nu_n_cm1, levels):
        self.driving, self.barrier, self.lam, self.hab = driving, barrier, lam, hab
        self.mlj, self.nu_n_cm1, self.levels = mlj, nu_n_cm1, levels


def _rate_entry(model: str, t: float, inp: _RateInputs) -> dict:
    """One rate entry with the exact keyword arguments its function was called with (`parameters`)."""
    eyring = marcus.eyring_rate_per_s
    if model == MODEL_EYRING:
        if inp.barrier is None:
            raise _Unavailable("no transition-state barrier")
        g = _value_at(inp.barrier, t)
        params = {"barrier_kj_mol": g, "temperature_k": t, "transmission_coefficient": 1.0}
        k = marcus.eyring_rate_per_s(**params)
        validity = {"valid": bool(g >= 0.0),
                    "note": ("transition-state theory from the TS free energy" if g >= 0.0 else
                             f"the transition state lies {-g:.1f} kJ/mol below the reactant at this level: a negative "
                             "barrier has no TST meaning (the rate exceeds k_B T / h); the level is not to be trusted "
                             "for this barrier")}
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": 1.0, "validity": validity,
                "parameters": params, "inputs": {"barrier": inp.barrier["route"]}}
    if inp.lam is None or inp.hab is None or inp.driving is None:
        raise _Unavailable("needs lambda, H_ab and dG0")
    dg0 = _value_at(inp.driving, t)
    lam, hab = inp.lam["value_kj_mol"], inp.hab["value_cm1"]
    inputs = {"driving_force": inp.driving["route"], "reorganization_energy": inp.lam["route"],
              "coupling": inp.hab["route"]}
    validity = None
    if inp.nu_n_cm1 is not None and model in (MODEL_MARCUS, MODEL_MLJ):
        gamma = marcus.landau_zener_parameter(hab, lam, t, inp.nu_n_cm1)
        validity = {"landau_zener_parameter": gamma, "nonadiabatic_regime": bool(gamma < 1.0),
                    "note": ("nonadiabatic: the golden-rule formula applies" if gamma < 1.0 else
                             f"adiabatic (2 pi gamma = {gamma:.3g} > 1): the golden-rule formula is outside its range "
                             "and overestimates the rate; prefer marcus-hush-adiabatic or eyring-tst")}
    if model == MODEL_MARCUS:
        params = {"coupling_cm1": hab, "reorganization_energy_kj_mol": lam, "delta_g0_kj_mol": dg0, "temperature_k": t}
        k = marcus.marcus_nonadiabatic_rate_per_s(**params)
        g = marcus.marcus_barrier_kj_mol(lam, dg0)
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": _rate_ratio(k, eyring(g, t)),
                "transmission_coefficient_meaning": "k / [(k_B T/h) exp(-dG*/RT)]: the effective nonadiabatic factor "
                                                    "(above 1 only where the formula is outside its range)",
                "validity": validity, "parameters": params, "inputs": inputs}
    if model == MODEL_MLJ:
        if inp.mlj is None:
            raise _Unavailable("no effective quantum mode")
        m = inp.mlj
        params = {"coupling_cm1": hab, "solvent_reorganization_kj_mol": m["solvent_reorganization_kj_mol"],
                  "delta_g0_kj_mol": dg0, "temperature_k": t, "mode_cm1": m["mode_cm1"],
                  "huang_rhys": m["huang_rhys"], "n_max": MLJ_N_MAX}
        k = marcus.mlj_rate_per_s(**params)
        g = marcus.marcus_barrier_kj_mol(lam, dg0)
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": _rate_ratio(k, eyring(g, t)),
                "transmission_coefficient_meaning": "k / [(k_B T/h) exp(-dG*/RT)] with the classical Marcus "
                                                    "barrier of the total lambda",
                "validity": validity, "parameters": params, "inputs": inputs}
    if model == MODEL_ADIABATIC:
        if inp.nu_n_cm1 is None:
            raise _Unavailable("no nuclear frequency from the modes")
        params = {"coupling_cm1": hab, "reorganization_energy_kj_mol": lam, "delta_g0_kj_mol": dg0,
                  "temperature_k": t, "nuclear_frequency_cm1": inp.nu_n_cm1}
        k = marcus.marcus_hush_adiabatic_rate_per_s(**params)
        g = marcus.adiabatic_barrier_kj_mol(lam, dg0, hab)
        kappa = marcus.landau_zener_transmission_coefficient(hab, lam, t, inp.nu_n_cm1)
        return {"rate_per_s": k, "barrier_kj_mol": g, "transmission_coefficient": kappa, "parameters": params,
                "inputs": inputs}
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
    levels = {"barrier_kj_mol": inp.levels.get("barrier"), "delta_g0_kj_mol": inp.levels.get("driving_force")}
    routes = {"reorganization_energy_kj_mol": inp.lam["route"] if inp.lam else None,
              "solvent_reorganization_kj_mol": inp.lam["route"] if inp.lam else None,
              "coupling_cm1": inp.hab["route"] if inp.hab else None}
    labels = {rc: ctx.level_labels.get(rc) for rc in levels.values() if rc}
    try:
        return ctx.uncertainty.annotate_rate(FUNCTIONS[model], params, levels={k: v for k, v in levels.items() if v},
                                             routes={k: v for k, v in routes.items() if v}, level_labels=labels)
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
        ks = []
        try:
            for t in temps:
                ks.append(_rate_entry(model, t, inp)["rate_per_s"])
        except _Unavailable:
            continue
        try:
            fit = marcus.arrhenius_fit(temps, ks)
        except ValueError:
            continue
        fit.update({"model": model, "local": local,
                    "note": (f"local slope from {temps[0]:.2f}-{temps[-1]:.2f} K (the project has one temperature)"
                             if local else "least squares of ln k against 1/T over the project temperatures")})
        out.append(fit)
    return out


# ---------------------------------------------------------------------------
# Pathways
# ---------------------------------------------------------------------------
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


def _normal_mode_evidence(ctx, pw) -> dict | None:
    p = ctx.project
    if not pw.transition_state:
        return None
    ts = p.states[pw.transition_state]
    sites = {k: v for k, v in p.sites.items() if k in (pw.donor_site, pw.acceptor_site, pw.bridge_site)} or p.sites
    bridge = p.sites.get(pw.bridge_site) if pw.bridge_site else ctx.bridge_atoms
    out: dict[str, Any] = {}
    if ts.frequencies is not None:
        sh = loc.imaginary_mode_shares(ts.frequencies, sites, bridge)
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


def _pathway_entry(ctx, pw) -> dict:
    p, en = ctx.project, ctx.energies
    temps = ctx.rate_temperatures(pw.name)
    df_recipe, bar_recipe = pw.levels.get("driving_force", pw.recipe), pw.levels.get("barrier", pw.recipe)
    db_df = _driving_and_barrier(ctx, pw, df_recipe, temps)
    db_bar = db_df if bar_recipe == df_recipe else _driving_and_barrier(ctx, pw, bar_recipe, temps)
    driving_routes = db_df["driving_force"]
    barrier_routes = db_bar["barrier"]
    missing = db_df["unavailable"] + ([u_ for u_ in db_bar["unavailable"] if u_ not in db_df["unavailable"]])
    driving = _chosen_energy_route(driving_routes, p.recipes[df_recipe].thermal == "frequencies", False)
    barrier = _chosen_energy_route(barrier_routes, p.recipes[bar_recipe].thermal == "frequencies", True)

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

    double_well = _double_well(ctx, pw)
    rd = marcus.robin_day_class(hab["value_cm1"] if hab else None, lam["value_kj_mol"] if lam else None, double_well)
    mlj, mlj_reason = _mlj_parameters(lam, lam_routes, modes, u.rt_kj_mol(ctx.t_ref))
    nu_n = modes["nuclear_frequency_cm1"] if modes else None
    levels = {k: pw.levels.get(k, pw.recipe) for k in ("driving_force", "barrier", "reorganization_energy", "coupling")}
    inp = _RateInputs(driving=driving, barrier=barrier, lam=lam, hab=hab, mlj=mlj, nu_n_cm1=nu_n, levels=levels)
    rates, rate_missing = _rates(ctx, pw, inp, temps, annotate=True)
    if mlj_reason:
        rate_missing = [m for m in rate_missing if m["model"] != MODEL_MLJ] + [{"model": MODEL_MLJ, "reason": mlj_reason}]

    def inputs_at(ts_: list[float]) -> _RateInputs:
        d = _driving_and_barrier(ctx, pw, df_recipe, ts_)
        b = d if bar_recipe == df_recipe else _driving_and_barrier(ctx, pw, bar_recipe, ts_)
        return _RateInputs(driving=_chosen_energy_route(d["driving_force"], p.recipes[df_recipe].thermal == "frequencies", False),
                           barrier=_chosen_energy_route(b["barrier"], p.recipes[bar_recipe].thermal == "frequencies", True),
                           lam=lam, hab=hab, mlj=mlj, nu_n_cm1=nu_n, levels=levels)

    lz = []
    if hab is not None and lam is not None and nu_n is not None:
        for t in temps:
            lz.append({"temperature_k": t, "nuclear_frequency_cm1": nu_n,
                       "nuclear_frequency_per_s": nu_n * u.CM1_HZ,
                       "electronic_frequency_per_s": marcus.electronic_frequency_per_s(hab["value_cm1"], lam["value_kj_mol"], t),
                       "adiabaticity_parameter": marcus.landau_zener_parameter(hab["value_cm1"], lam["value_kj_mol"], t, nu_n),
                       "probability": marcus.landau_zener_probability(hab["value_cm1"], lam["value_kj_mol"], t, nu_n),
                       "transmission_coefficient": marcus.landau_zener_transmission_coefficient(
                           hab["value_cm1"], lam["value_kj_mol"], t, nu_n)})

    ladder = [_ladder_rung(ctx, pw, rc, temps, lam, hab, mlj, nu_n, lam_routes, hab_routes) for rc in pw.ladder]

    entry = {
        "name": pw.name, "reactant": pw.reactant, "transition_state": pw.transition_state, "product": pw.product,
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
        "normal_mode": _normal_mode_evidence(ctx, pw),
        "mode_analysis": modes,
        "mlj_parameters": mlj,
        "landau_zener": lz,
        "rates": rates,
        "rates_unavailable": rate_missing,
        "arrhenius": _arrhenius(ctx, pw, inputs_at),
        "ladder": ladder,
    }
    if ctx.experiment_data is not None:
        from dossier.science import experiment as ex

        comparison = ex.compare_pathway(entry, ctx.experiment_data, ctx.uncertainty)
        if comparison is not None:
            entry["experiment"] = comparison
    return entry


def _ladder_rung(ctx, pw, recipe, temps, lam, hab, mlj, nu_n, lam_routes, hab_routes) -> dict:
    p = ctx.project
    rung: dict[str, Any] = {"recipe": recipe, "level_of_theory": ctx.level_labels.get(recipe),
                            "driving_force_kj_mol": None, "barrier_kj_mol": None, "rates": [], "notes": []}
    thermal = p.recipes[recipe].thermal == "frequencies"
    d = _driving_and_barrier(ctx, pw, recipe, temps)
    driving = _chosen_energy_route(d["driving_force"], thermal, False)
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
    inp = _RateInputs(driving=driving, barrier=barrier, lam=lam, hab=hab, mlj=mlj, nu_n_cm1=nu_n, levels=levels)
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
                combos.append({"reorganization_energy_route": lr["route"], "coupling_route": hr["route"],
                               "temperature_k": ctx.t_ref, "model": MODEL_MARCUS,
                               "function": "dossier.science.marcus.marcus_nonadiabatic_rate_per_s", "parameters": params,
                               "rate_per_s": marcus.marcus_nonadiabatic_rate_per_s(**params)})
    rung["route_combinations"] = combos
    return rung


# ---------------------------------------------------------------------------
# Profiles and populations
# ---------------------------------------------------------------------------
def _profile(ctx, name: str, kind: str, states: list[str], recipe: str) -> dict:
    """One energy profile through dossier.energetics (our RRHO corrections, the recipe's electronic energies)."""
    from dossier.science import energetics

    en = ctx.energies
    thermal = ctx.project.recipes[recipe].thermal == "frequencies"
    rows, notes = [], []
    for s in states:
        try:
            e, _, _ = en.electronic(s, recipe)
        except _Unavailable as exc:
            notes.append(f"{exc}; left out of the profile")
            continue
        thermo = [en.thermo(s, t) for t in ctx.temperatures] if thermal else []
        if thermal and any(t is None for t in thermo):
            notes.append(f"state '{s}': no thermal correction ({en.thermo_error(s) or 'no frequency job'})")
        rows.append(energetics.StateEnergies.from_thermo(s, e, [t for t in thermo if t is not None]))
    if not rows:
        return {"name": name, "kind": kind, "recipe": recipe, "level_of_theory": ctx.level_labels.get(recipe),
                "reference_state": None, "points": [], "notes": notes}
    prof = energetics.energy_profile(rows, reference=None if kind == "pathway" else "lowest",
                                     temperatures_k=ctx.temperatures, name=name, kind=kind, recipe=recipe)
    prof["level_of_theory"] = ctx.level_labels.get(recipe)
    prof["files"] = en.files([r.name for r in rows], recipe)
    prof["notes"] = notes
    return prof


def _energy_profiles(ctx) -> list[dict]:
    out = []
    p = ctx.project
    for pw in p.pathways:
        for rc in dict.fromkeys([pw.recipe, *pw.levels.values(), *pw.ladder]):
            out.append(_profile(ctx, pw.name, "pathway", pw.state_names, rc))
    for fam in p.isomer_families:
        out.append(_profile(ctx, fam.name, "isomer-family", fam.states, fam.recipe))
    return out


def _isomer_populations(ctx) -> list[dict]:
    from dossier.science import energetics

    out = []
    p = ctx.project
    for fam in p.isomer_families:
        thermal = p.recipes[fam.recipe].thermal == "frequencies"
        for t in ctx.temperatures:
            basis = "gibbs" if thermal else "electronic"
            try:
                g = {s: ctx.energies.relative_kj_mol(fam.states[0], s, fam.recipe, t, basis) for s in fam.states}
            except _Unavailable as exc:
                out.append({"family": fam.name, "recipe": fam.recipe, "temperature_k": t, "basis": basis,
                            "populations": None, "note": str(exc)})
                continue
            pops = energetics.boltzmann_populations(g, t)
            out.append({"family": fam.name, "recipe": fam.recipe, "temperature_k": t, "basis": basis,
                        "relative_kj_mol": g, "populations": {k: float(v) for k, v in dict(pops).items()}})
    return out


# ---------------------------------------------------------------------------
# Entry point
# ---------------------------------------------------------------------------
class _Context:
    def __init__(self, project):
        from dossier.science import uncertainty as unc

        self.project = project
        self.temperatures = [float(t) for t in project.settings.temperatures_k]
        self.t_ref = min(self.temperatures, key=lambda t: (abs(t - REFERENCE_TEMPERATURE_K), t))
        self.energies = _Energies(project)
        self.redox_sites = _redox_sites(project)
        self.bridge_atoms = _bridge_atoms(project)
        self.uncertainty = unc.model_from_project(project)
        self.experiment_data = None
        try:
            from dossier.science import experiment as ex
        except ImportError:  # the experiment module is optional at this layer
            ex = None
        if ex is not None and getattr(project, "experiment", None):
            self.experiment_data = ex.experiment_from_project(project)
        self.level_labels: dict[str, str | None] = {}
        first_state = next(iter(project.states), None)
        for rc in project.recipes:
            label = None
            for pw in project.pathways:
                if rc in (pw.recipe, *pw.levels.values(), *pw.ladder):
                    label = self.energies.level_label(pw.reactant, rc)
                    break
            if label is None and first_state is not None:
                label = self.energies.level_label(first_state, rc)
            self.level_labels[rc] = label
        self._lam_routes: list[dict] = []

    def rate_temperatures(self, pathway: str) -> list[float]:
        temps = list(self.temperatures)
        if self.experiment_data is not None:
            from dossier.science import experiment as ex

            for t in ex.experiment_temperatures(self.experiment_data, pathway):
                if all(abs(t - x) > ex.SAME_TEMPERATURE_K for x in temps):
                    temps.append(float(t))
        return sorted(temps)


def analyse(project, *, progress=None) -> dict:
    """The dossier.json content (docs/dossier-json.md) of a bound Project, except `sources` and
    `generator`, which the build adds. Deterministic; plain JSON types only."""
    from dossier.project.checks import run_checks

    ctx = _Context(project)
    total = len(project.states) + len(project.pathways) + 2
    done = 0

    def tick():
        nonlocal done
        done += 1
        if progress is not None:
            progress(done, total)

    states = []
    for st in project.states.values():
        states.append(_state_entry(ctx, st))
        tick()
    pathways = []
    for pw in project.pathways:
        pathways.append(_pathway_entry(ctx, pw))
        tick()
    profiles = _energy_profiles(ctx)
    populations = _isomer_populations(ctx)
    tick()
    checks = [f.to_dict() for f in run_checks(project)]
    tick()
    s = project.settings
    out = {
        "schema_version": SCHEMA_VERSION,
        "project": {"title": project.title, "authors": list(project.authors), "temperatures_k": ctx.temperatures,
                    "reference_temperature_k": ctx.t_ref, "energy_unit": s.energy_unit,
                    "standard_state": s.standard_state, "qrrho": s.qrrho, "frequency_scale": s.frequency_scale,
                    "imaginary_threshold_cm1": s.imaginary_threshold_cm1,
                    "manifest": project.manifest_path.name if project.manifest_path else None,
                    "sites": {k: [i + 1 for i in v] for k, v in project.sites.items()},
                    "sites_numbering": "1-based, as the programs print them",
                    "redox_sites": ctx.redox_sites, "recipes": {k: {"electronic": r.electronic, "thermal": r.thermal,
                                                                    "mixed_levels": r.mixed_levels, "note": r.note,
                                                                    "level_of_theory": ctx.level_labels.get(k)}
                                                                for k, r in project.recipes.items()},
                    "warnings": list(project.warnings)},
        "states": states,
        "energy_profiles": profiles,
        "isomer_populations": populations,
        "pathways": pathways,
        "uncertainty": ctx.uncertainty.to_dict() if ctx.uncertainty is not None else None,
        "checks": checks,
        "model_statement": MODEL_STATEMENT,
    }
    if ctx.experiment_data is not None:
        from dossier.science import experiment as ex

        computed = {st.name: list(st.frequencies.vibrations.wavenumbers_cm1)
                    for st in project.states.values() if st.frequencies is not None and st.frequencies.vibrations}
        vib = ex.place_vibrations(ctx.experiment_data, computed, s.frequency_scale)
        g = ex.place_g_values(ctx.experiment_data)
        if vib or g:
            out["experiment_placements"] = {"vibrations": vib, "g_values": g}
    return to_json_types(out)


def to_json_types(obj):
    """Plain JSON types: numpy scalars to Python, tuples to lists, NaN/inf to None, keys to str."""
    if isinstance(obj, Mapping):
        return {str(k): to_json_types(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_json_types(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return [to_json_types(v) for v in obj.tolist()]
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        f = float(obj)
        return f if math.isfinite(f) else None
    return obj
