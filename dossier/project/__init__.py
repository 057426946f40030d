"""The project stage: manifest → bound project. It validates the manifest (one line naming the
manifest line and the reason for every error), binds each state, site and pathway to the records
of the files it names, runs the physics-aware checks on the bound project, and drafts manifests
for `dossier init`. It may import the shared vocabulary (dossier.units, errors, records),
dossier.science and dossier.reading; never dossier.analysis, dossier.report, dossier.archive or
the commands. Modules: ``model`` (the dataclasses and the manifest's vocabulary), ``manifest``
(``load_manifest``: one validator per table) with ``locator`` (key -> manifest line), ``bind``
(``bind``, ``load_project``), ``checks`` (``run_checks``) and ``drafting`` (records -> draft text).
"""
from __future__ import annotations

from dossier.project.bind import bind, load_project
from dossier.project.manifest import load_manifest
from dossier.project.model import (
    DEFAULT_RECIPE, ENERGY_UNITS, FOUR_POINT_KEYS, LEVEL_PARAMETERS, QRRHO_MODES, ROLES, STANDARD_STATES,
    THERMAL_SOURCES, FamilySpec, IsomerFamily, Manifest, Pathway, PathwaySpec, Project, Recipe, Settings, State,
    StateSpec,
)

__all__ = [
    "load_manifest", "bind", "load_project",
    "Manifest", "Settings", "Recipe", "StateSpec", "PathwaySpec", "FamilySpec",
    "Project", "State", "Pathway", "IsomerFamily",
    "ROLES", "ENERGY_UNITS", "STANDARD_STATES", "QRRHO_MODES", "THERMAL_SOURCES", "LEVEL_PARAMETERS",
    "FOUR_POINT_KEYS", "DEFAULT_RECIPE",
]
