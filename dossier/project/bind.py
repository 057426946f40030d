"""Binding a validated manifest to the records of its files: ``bind(manifest, records) -> Project``.

``bind`` joins each file the manifest names to its Calculation record and checks what needs
the records: every file was read, a geometry job has atoms, a recipe that adds thermal
corrections has a frequency job for every state it is used on, and a site's atom numbers
lie within every state of a pathway that names the site. Roles left open in the manifest
are taken from the frequency job's imaginary count. ``load_project`` = ``load_manifest`` +
``dossier.reading.read_many`` + ``bind``. Errors are one line naming the manifest line.
"""
from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path
from typing import Any

from dossier.errors import ManifestError, ReadError
from dossier.project.manifest import load_manifest
from dossier.project.model import (
    DEFAULT_RECIPE, LEVEL_PARAMETERS, IsomerFamily, Manifest, Pathway, PathwaySpec, Project, Recipe, State,
    StateSpec, _norm,
)
from dossier.project.transfers import bind_transfers
from dossier.records import Calculation


def _lookup(records: Mapping, path: Path) -> Calculation | None:
    rec = records.get(path)
    if rec is None:
        for k, r in records.items():
            if _norm(Path(k)) == path:
                rec = r
                break
    return rec


def _records_by_path(m: Manifest, records: Mapping[Path, Calculation]) -> dict[Path, Calculation]:
    """The record of every file the manifest names; a file without one is a manifest error."""
    by_path: dict[Path, Calculation] = {}
    for path in m.all_files():
        rec = _lookup(records, path)
        where = f"{m.display_name}:{m.file_lines.get(path, 1)}"
        if isinstance(rec, ReadError):
            raise ManifestError(f"'{m.file_labels[path]}' could not be read: {rec.reason}", where=where)
        if rec is None:
            raise ManifestError(f"no record for '{m.file_labels[path]}' (it was not read)", where=where)
        by_path[path] = rec
    return by_path


def _bind_state(m: Manifest, name: str, sp: StateSpec, by_path: dict[Path, Calculation]) -> State:
    geom = by_path[sp.geometry]
    if (not geom.elements or not geom.coordinates_angstrom) and geom.status.word == "ok":
        raise ManifestError(f"states.{name}.geometry: '{m.file_labels[sp.geometry]}' holds no geometry "
                            "(no atoms were read); name the job that gives the state's structure",
                            where=m.where("states", name, "geometry"))
    freq = by_path[sp.frequencies] if sp.frequencies is not None else None
    if freq is None and geom.vibrations is not None:
        freq = geom  # an optimisation + frequency job in one file
    if sp.role is not None:
        role, source = sp.role, "manifest"
    elif freq is not None and freq.vibrations is not None:
        n_big = sum(1 for w in freq.vibrations.wavenumbers_cm1 if w < -m.settings.imaginary_threshold_cm1)
        role, source = ("transition-state" if n_big == 1 else "minimum"), "imaginary count"
    else:
        role, source = "minimum", "default"
    files: dict[str, Any] = {"geometry": m.file_labels[sp.geometry]}
    if sp.frequencies is not None:
        files["frequencies"] = m.file_labels[sp.frequencies]
    elif freq is geom:
        files["frequencies"] = m.file_labels[sp.geometry]
    if sp.excited_states is not None:
        files["excited_states"] = m.file_labels[sp.excited_states]
    files["single_points"] = {k: m.file_labels[p] for k, p in sp.single_points.items()}
    return State(
        name=name, role=role, geometry=geom, frequencies=freq,
        excited_states=by_path[sp.excited_states] if sp.excited_states is not None else None,
        single_points={k: by_path[p] for k, p in sp.single_points.items()}, note=sp.note,
        symmetry_number=sp.symmetry_number, role_source=source, files=files,
    )


def _bound_recipes(m: Manifest, states: dict[str, State]) -> dict[str, Recipe]:
    """The recipes, checked against the states' frequency jobs.

    The implicit default recipe adds thermal corrections only when every state has frequencies;
    a recipe of the manifest that adds them needs a frequency job for every state it is used on.
    """
    recipes = {k: Recipe(**vars(r)) for k, r in m.recipes.items()}
    first_recipe = next(iter(recipes))
    if not m.raw.get("recipes"):
        if any(s.frequencies is None for s in states.values()):
            recipes[DEFAULT_RECIPE].thermal = "none"
        return recipes
    uses: list[tuple[str, list[str], tuple]] = []
    for i, pw in enumerate(m.pathways):
        names = [s for s in (pw.reactant, pw.transition_state, pw.product) if s]
        uses.append((pw.recipe or first_recipe, names, ("pathways", i, "recipe")))
        uses += [(r, names, ("pathways", i, "levels", k)) for k, r in pw.levels.items()]
        uses += [(r, names, ("pathways", i, "ladder", j)) for j, r in enumerate(pw.ladder)]
    for i, fam in enumerate(m.isomer_families):
        uses.append((fam.recipe or first_recipe, fam.states, ("isomer_families", i, "recipe")))
    for rname, names, key in uses:
        for s in names:
            if recipes[rname].thermal == "frequencies" and states[s].frequencies is None:
                raise ManifestError(
                    f"recipe '{rname}' adds thermal corrections from frequencies, but state '{s}' has no "
                    "frequency job; add frequencies = \"FILE\" to the state or use a recipe with "
                    "thermal = \"none\"", where=m.where(*key))
    return recipes


def _check_site_atoms(m: Manifest, states: dict[str, State]) -> None:
    """Atom numbers of a site lie within every state of each pathway that names the site."""
    for pw in m.pathways:
        for role_key in ("donor_site", "acceptor_site", "bridge_site"):
            site = getattr(pw, role_key)
            if site is None:
                continue
            for s in (pw.reactant, pw.transition_state, pw.product):
                if not s:
                    continue
                n = states[s].geometry.n_atoms
                bad = [a + 1 for a in m.sites[site] if a >= n]
                if bad:
                    raise ManifestError(
                        f"sites.{site} has atom number {bad[0]}, but state '{s}' (used by pathway '{pw.name}') "
                        f"has only {n} atoms; atom numbers are 1-based, 1..{n}",
                        where=m.where("sites", site))


def _bind_pathway(m: Manifest, pw: PathwaySpec, first_recipe: str, by_path: dict[Path, Calculation]) -> Pathway:
    rname = pw.recipe or first_recipe
    levels = {k: pw.levels.get(k) or rname for k in LEVEL_PARAMETERS}
    fp = {k: by_path[p] for k, p in pw.four_point.items()} if pw.four_point else None
    fp_files = {k: m.file_labels[p] for k, p in pw.four_point.items()} if pw.four_point else None
    return Pathway(
        name=pw.name, reactant=pw.reactant, transition_state=pw.transition_state, product=pw.product,
        donor_site=pw.donor_site, acceptor_site=pw.acceptor_site, bridge_site=pw.bridge_site, recipe=rname,
        levels=levels, ladder=list(pw.ladder), four_point=fp, four_point_note=pw.four_point_note,
        four_point_files=fp_files, symmetric=pw.symmetric,
    )


def bind(manifest: Manifest, records: Mapping[Path, Calculation]) -> Project:
    """Join a validated manifest to the records of its files.

    Raises ManifestError naming the manifest line when a file has no record (or a ReadError
    in its place), when a geometry job has no coordinates, when a recipe's thermal
    corrections lack a frequency job, or when a site's atom number is beyond the atom count
    of a state on a pathway that uses the site.
    """
    m = manifest
    by_path = _records_by_path(m, records)
    states = {name: _bind_state(m, name, sp, by_path) for name, sp in m.states.items()}
    recipes = _bound_recipes(m, states)
    _check_site_atoms(m, states)
    first_recipe = next(iter(recipes))
    pathways = [_bind_pathway(m, pw, first_recipe, by_path) for pw in m.pathways]
    families = [IsomerFamily(name=f.name, states=list(f.states), recipe=f.recipe or first_recipe)
                for f in m.isomer_families]
    return Project(
        manifest_path=m.path, root=m.root, title=m.title, authors=list(m.authors), settings=m.settings,
        states=states, sites={k: list(v) for k, v in m.sites.items()}, pathways=pathways,
        isomer_families=families, recipes=recipes, uncertainty=m.uncertainty, experiment=m.experiment,
        manifest=m, records=by_path, warnings=list(m.warnings), transfers=bind_transfers(m, by_path),
    )


def load_project(path: str | Path, *, jobs: int | None = None, use_cache: bool = True,
                 progress=None) -> Project:
    """load_manifest + read every file (dossier.reading.read_many) + bind."""
    from dossier.reading import read_many

    manifest = load_manifest(path)
    files = manifest.all_files()
    results = read_many(files, jobs=jobs, use_cache=use_cache, progress=progress)
    return bind(manifest, dict(zip(files, results)))
