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
from collections.abc import Mapping

import numpy as np

from dossier.analysis.decisions import add_headlines, report_choices
from dossier.analysis.sources import source_entries
from dossier.analysis.common import MODEL_STATEMENT, REFERENCE_TEMPERATURE_K, SCHEMA_VERSION
from dossier.analysis.energies import _Energies
from dossier.analysis.pathways import _pathway_entry
from dossier.analysis.profiles import _energy_profiles, _isomer_populations
from dossier.analysis.states import _bridge_atoms, _redox_sites, _state_entry
from dossier.analysis.transfers import transfer_entries


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
        from dossier.analysis import experiment as comparison

        computed = {st.name: list(st.frequencies.vibrations.wavenumbers_cm1)
                    for st in project.states.values() if st.frequencies is not None and st.frequencies.vibrations}
        vib = comparison.place_vibrations(ctx.experiment_data, computed, s.frequency_scale)
        g = comparison.place_g_values(ctx.experiment_data)
        if vib or g:
            out["experiment_placements"] = {"vibrations": vib, "g_values": g}
    transfers = transfer_entries(project, ctx.t_ref)
    if transfers:
        out["transfers"] = transfers
    out["sources"] = source_entries(project)
    add_headlines(out)
    out["report"] = report_choices(out)
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

