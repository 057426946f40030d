"""Drafting a manifest from records: what `dossier init` guesses (pure; no files are read or written).

``draft_manifest(title, base, records) -> Draft`` groups the records by formula, charge,
multiplicity and level of theory, and guesses:

- states: one per optimisation (or per frequency job that matches no optimisation);
- roles: by the imaginary count of the state's frequency job (modes beyond the noise
  threshold, 20 cm-1 by default): 0 -> minimum, 1 -> transition-state;
- frequencies / excited_states / single_points: a job of that kind whose geometry matches
  the state's optimised geometry (same atom order, Kabsch RMSD <= 0.01 A);
- isomer families: several minima of one formula, charge, multiplicity and level;
- a pathway: a transition state with the pair of minima of its group that its imaginary
  mode best connects (largest |cos| between the mode and the aligned geometry difference).

Every guess carries a `# guess: ... — confirm` comment; files that fit nowhere are
listed in comments at the end. The thresholds are common practice, no source.
"""
from __future__ import annotations

import json
import os
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from dossier.errors import ReadError
from dossier.records import Calculation
from dossier.science import geometry

SAME_GEOMETRY_RMSD_ANGSTROM = 0.01
IMAGINARY_THRESHOLD_CM1 = 20.0
_STEM_SUFFIXES = ("_opt", "_gopt", "_optimization", "_geom", "_freq", "_ir", "_frequencies", "_ts", "_min")


@dataclass(frozen=True)
class Draft:
    """A drafted manifest: its text and what it holds."""

    text: str

    @property
    def n_states(self) -> int:
        return self.text.count("\n[states.")

    @property
    def n_guesses(self) -> int:
        return self.text.count("# guess:")


@dataclass
class _StateDraft:
    name: str
    geometry: Path
    geom_rec: Calculation
    frequencies: Path | None = None
    freq_rec: Calculation | None = None
    excited_states: Path | None = None
    single_points: dict[str, Path] = field(default_factory=dict)
    role: str = "minimum"
    role_reason: str = ""


def _is_opt(r: Calculation) -> bool:
    return "optimization" in r.job_kinds or len(r.optimization_energies_hartree) > 1


def _level_key(r: Calculation) -> str:
    return r.level.label().casefold()


def _same_geometry(a: Calculation, b: Calculation) -> float | None:
    """Kabsch RMSD when both have coordinates and the same atom order, else None."""
    if not a.coordinates_angstrom or not b.coordinates_angstrom or not geometry.same_atom_order(a.elements, b.elements):
        return None
    return geometry.kabsch_rmsd(a.coordinates_angstrom, b.coordinates_angstrom)


def _n_imaginary(r: Calculation, threshold: float) -> int:
    return sum(1 for w in r.vibrations.wavenumbers_cm1 if w < -threshold)


def _base_name(path: Path) -> str:
    """A state name from a file name: run_opt.log.gz -> run; run.log#job2 -> run_job2."""
    from dossier.reading.jobs import split_name

    name, job = split_name(path.name.lower())
    for packed in (".gz", ".bz2", ".xz"):
        name = name.removesuffix(packed)
    stem = Path(name).stem + (f"_job{job}" if job else "")
    for suffix in _STEM_SUFFIXES:
        if stem.endswith(suffix) and len(stem) > len(suffix):
            stem = stem[: -len(suffix)]
            break
    stem = re.sub(r"[^a-z0-9_-]+", "_", stem).strip("_") or "state"
    return stem if stem[0].isalpha() else f"s_{stem}"


def _unique(name: str, taken: set[str]) -> str:
    out, i = name, 2
    while out in taken:
        out, i = f"{name}_{i}", i + 1
    taken.add(out)
    return out


def _sp_label(sp: Calculation, geom: Calculation) -> str:
    lv = sp.level
    label = (lv.method if lv.method and lv.method.upper() not in ("DFT",) else lv.functional or lv.method or "sp").lower()
    if lv.basis and (lv.basis or "").lower() != (geom.level.basis or "").lower():
        label += "/" + lv.basis.lower()
    return label


def _q(text: str) -> str:
    """A TOML basic string (JSON string escapes are valid TOML)."""
    return json.dumps(text)


def _key(text: str) -> str:
    return text if re.fullmatch(r"[A-Za-z0-9_-]+", text) else _q(text)


# ---------------------------------------------------------------------------
# Guessing: states, their jobs, roles, profiles, recipes
# ---------------------------------------------------------------------------
def _partition(records) -> tuple[list[tuple[Path, Calculation]], list[tuple[Path, str]]]:
    """(records with a final geometry, [(path, why not usable)])."""
    unused: list[tuple[Path, str]] = [(p, f"not read: {r.reason}") for p, r in records if isinstance(r, ReadError)]
    usable = []
    for p, r in records:
        if not isinstance(r, Calculation):
            continue
        if not r.elements or not r.coordinates_angstrom:
            unused.append((p, f"no final geometry (status {r.status.word})"))
        else:
            usable.append((p, r))
    return usable, unused


def _anchors(members: list[tuple[Path, Calculation]]) -> list[tuple[Path, Calculation]]:
    """The jobs that stand as states: optimisations, and frequency jobs that refine none of them."""
    opts = [(p, r) for p, r in members if _is_opt(r)]
    anchors = list(opts)
    for p, r in members:
        if r.vibrations is None or (p, r) in anchors:
            continue
        if not any((d := _same_geometry(r, o)) is not None and d <= SAME_GEOMETRY_RMSD_ANGSTROM
                   and _level_key(r) == _level_key(o) for _, o in opts):
            anchors.append((p, r))
    return anchors


def _best_match(rec: Calculation, group_drafts: list[_StateDraft], same_level: bool) -> _StateDraft | None:
    """The state of the group whose optimised geometry `rec` was computed at (closest within the RMSD limit)."""
    best, best_d = None, None
    for d in group_drafts:
        if same_level and _level_key(rec) != _level_key(d.geom_rec):
            continue
        dist = _same_geometry(rec, d.geom_rec)
        if dist is not None and dist <= SAME_GEOMETRY_RMSD_ANGSTROM and (best_d is None or dist < best_d):
            best, best_d = d, dist
    return best


def _assign_jobs(members, group_drafts: list[_StateDraft], used: set[Path], unused: list) -> None:
    """Frequency, excited-state and single-point jobs of one group, each to the state it was run at."""
    for p, r in members:
        if r.vibrations is None or p in used:
            continue
        d = _best_match(r, group_drafts, same_level=True)
        if d is not None and d.frequencies is None and d.freq_rec is None:
            d.frequencies, d.freq_rec = p, r
            used.add(p)
    for p, r in members:
        if not (r.excited_states and not _is_opt(r)) or p in used:
            continue
        d = _best_match(r, group_drafts, same_level=False)
        if d is not None and d.excited_states is None:
            d.excited_states = p
            used.add(p)
    for p, r in members:
        if p in used:
            continue
        d = _best_match(r, group_drafts, same_level=False)
        if d is not None and r.vibrations is None and not r.excited_states:
            label = _sp_label(r, d.geom_rec)
            i, lab = 2, label
            while lab in d.single_points or lab == "geometry":
                lab, i = f"{label}_{i}", i + 1
            d.single_points[lab] = p
            used.add(p)
        else:
            why = "matches no optimised geometry of its formula, charge and multiplicity"
            if d is not None:
                why = "at an optimised geometry, but a frequency or excited-state job of that state is already assigned"
            unused.append((p, why))


def _state_drafts(usable, unused: list) -> tuple[list[_StateDraft], dict[str, tuple]]:
    """(states, state name -> (formula, charge, multiplicity, level)); unplaced files go to `unused`."""
    groups: dict[tuple, list[tuple[Path, Calculation]]] = {}
    for p, r in usable:
        groups.setdefault((r.formula, r.charge, r.multiplicity), []).append((p, r))
    drafts: list[_StateDraft] = []
    taken: set[str] = set()
    group_of: dict[str, tuple] = {}
    for gkey, members in groups.items():
        anchors = _anchors(members)
        group_drafts = []
        for p, r in anchors:
            d = _StateDraft(name=_unique(_base_name(p), taken), geometry=p, geom_rec=r)
            if r.vibrations is not None:
                d.frequencies, d.freq_rec = None, r  # one file gives both
            group_drafts.append(d)
            group_of[d.name] = gkey + (_level_key(r),)
        drafts += group_drafts
        _assign_jobs(members, group_drafts, {p for p, _ in anchors}, unused)
    return drafts, group_of


def _assign_roles(drafts: list[_StateDraft], threshold_cm1: float) -> None:
    for d in drafts:
        f = d.freq_rec
        if f is None:
            d.role, d.role_reason = "minimum", "no frequency job found"
            continue
        n = _n_imaginary(f, threshold_cm1)
        fname = (d.frequencies or d.geometry).name
        d.role = "transition-state" if n == 1 else "minimum"
        d.role_reason = f"{n} imaginary mode(s) beyond {threshold_cm1:g} cm-1 in {fname}"
        if n > 1:
            d.role_reason += " (a higher-order saddle point: neither role fits)"


def _best_pair(ts: _StateDraft, minima: list[_StateDraft]):
    """The two minima the TS mode best connects: (a, b, |cos|), or None."""
    f = ts.freq_rec
    if f is None or f.vibrations is None or not f.vibrations.displacements or len(minima) < 2:
        return None
    wn = f.vibrations.wavenumbers_cm1
    idx = int(np.argmin(wn))
    mode = np.asarray(f.vibrations.displacements[idx], dtype=float)
    ref = f.coordinates_angstrom
    best = None
    for i, a in enumerate(minima):
        for b in minima[i + 1:]:
            if not (geometry.same_atom_order(a.geom_rec.elements, ts.geom_rec.elements)
                    and geometry.same_atom_order(b.geom_rec.elements, ts.geom_rec.elements)):
                continue
            delta = geometry.align(b.geom_rec.coordinates_angstrom, ref) - geometry.align(a.geom_rec.coordinates_angstrom, ref)
            if delta.shape != mode.shape:
                continue
            cos = abs(geometry.displacement_cosine(delta, mode))
            if best is None or cos > best[2]:
                best = (a, b, cos)
    return best


def _profiles(drafts: list[_StateDraft], group_of: dict[str, tuple]):
    """(isomer families [(group key, minima)], pathways [(ts, a, b, |cos|)]) per formula, charge,
    multiplicity and level."""
    by_level: dict[tuple, list[_StateDraft]] = {}
    for d in drafts:
        by_level.setdefault(group_of[d.name], []).append(d)
    families, pathways = [], []
    for key, ds in by_level.items():
        minima = [d for d in ds if d.role == "minimum"]
        for ts in (d for d in ds if d.role == "transition-state"):
            pair = _best_pair(ts, minima)
            if pair:
                pathways.append((ts, *pair))
        if len(minima) >= 2:
            families.append((key, minima))
    return families, pathways


def _recipes_by_level(families, pathways) -> dict[str, dict]:
    """One recipe per level of the profiles' geometry jobs, plus one per single-point label that
    every profile state of that level has: level key -> {name, states, thermal, sp_labels}."""
    in_profile: dict[str, _StateDraft] = {}
    for ts, a, b, _ in pathways:
        in_profile.update({d.name: d for d in (ts, a, b)})
    for _, minima in families:
        in_profile.update({d.name: d for d in minima})
    recipe_of_level: dict[str, dict] = {}
    taken_recipes: set[str] = set()
    for d in in_profile.values():
        lk = _level_key(d.geom_rec)
        if lk not in recipe_of_level:
            lv = d.geom_rec.level
            name = _unique(re.sub(r"[^a-z0-9()*+,.-]+", "_", (lv.functional or lv.method or "level").lower()),
                           taken_recipes)
            recipe_of_level[lk] = {"name": name, "states": []}
        recipe_of_level[lk]["states"].append(d)
    for info in recipe_of_level.values():
        ds = info["states"]
        info["thermal"] = "frequencies" if all(d.freq_rec is not None for d in ds) else "none"
        info["sp_labels"] = sorted(set.intersection(*(set(d.single_points) for d in ds)))
    return recipe_of_level


# ---------------------------------------------------------------------------
# Writing: the manifest text, table by table
# ---------------------------------------------------------------------------
def _project_lines(title: str, threshold_cm1: float) -> list[str]:
    return [
        "# Draft manifest written by `dossier init`. Every line marked `# guess:` is a guess:",
        "# confirm it (delete the comment) or correct it. Format: docs/manifest.md.",
        "",
        "[project]",
        f"title = {_q(title)}  # guess: the folder's name — confirm",
        "authors = []",
        "temperatures_k = [298.15]",
        'energy_unit = "kJ/mol"',
        'standard_state = "1M"',
        'qrrho = "grimme"',
        "frequency_scale = 1.0",
        f"imaginary_threshold_cm1 = {threshold_cm1:g}",
        "",
        "# Named atom groups (1-based atom numbers), e.g. the two redox sites:",
        "[sites]",
        "# site_a = [1, 2, 3]",
        "",
    ]


def _twin(d: _StateDraft, seen: list[_StateDraft]) -> _StateDraft | None:
    """An earlier state of the same level, structure and energy (two optimisations, one minimum)."""
    return next((o for o in seen if _level_key(o.geom_rec) == _level_key(d.geom_rec)
                 and (r := _same_geometry(o.geom_rec, d.geom_rec)) is not None
                 and r <= SAME_GEOMETRY_RMSD_ANGSTROM and o.geom_rec.energy_hartree is not None
                 and d.geom_rec.energy_hartree is not None
                 and abs(o.geom_rec.energy_hartree - d.geom_rec.energy_hartree) <= 1e-6), None)


def _state_lines(drafts: list[_StateDraft], rel) -> list[str]:
    lines: list[str] = []
    seen: list[_StateDraft] = []
    for d in drafts:
        twin = _twin(d, seen)
        seen.append(d)
        if twin is not None:
            lines.append(f"# note: same structure and energy as state '{twin.name}' (both optimisations "
                         "reached one minimum); keep one of them")
        lines.append(f"[states.{_key(d.name)}]")
        lines.append(f"role = {_q(d.role)}  # guess: {d.role_reason} — confirm")
        kind = "optimisation" if _is_opt(d.geom_rec) else "frequency job (no optimisation found)"
        lines.append(f"geometry = {_q(rel(d.geometry))}  # guess: {kind}, {d.geom_rec.formula} "
                     f"charge {d.geom_rec.charge} multiplicity {d.geom_rec.multiplicity}, "
                     f"{d.geom_rec.level.label()} — confirm")
        if d.frequencies is not None:
            lines.append(f"frequencies = {_q(rel(d.frequencies))}  # guess: frequency job at this geometry — confirm")
        elif d.freq_rec is not None:
            lines.append("# frequencies: the geometry job also computed them (no separate file needed)")
        if d.excited_states is not None:
            lines.append(f"excited_states = {_q(rel(d.excited_states))}  # guess: excited-state job at this geometry — confirm")
        for label, p in d.single_points.items():
            lines.append(f"single_points.{_key(label)} = {_q(rel(p))}  # guess: single point at this geometry — confirm")
        lines.append("")
    return lines


def _recipe_lines(recipe_of_level: dict[str, dict]) -> list[str]:
    lines: list[str] = []
    for info in recipe_of_level.values():
        lines.append(f"[recipes.{_key(info['name'])}]")
        lines.append('electronic = "geometry"')
        why = ("every state it is used for has a frequency job" if info["thermal"] == "frequencies"
               else "some state it is used for has no frequency job")
        lines.append(f"thermal = {_q(info['thermal'])}  # guess: {why} — confirm")
        lines.append("")
        for label in info["sp_labels"]:
            lines.append(f"[recipes.{_key(label + '//' + info['name'])}]  # guess: every state at this level has "
                         f"single point '{label}' — confirm")
            lines.append(f"electronic = {_q(label)}")
            lines.append(f"thermal = {_q(info['thermal'])}")
            lines.append("")
    return lines


def _pathway_lines(pathways, recipe_of_level: dict[str, dict]) -> list[str]:
    lines: list[str] = []
    for ts, a, b, cos in pathways:
        lines.append(f"[[pathways]]  # guess: {ts.name}'s imaginary mode connects {a.name} and {b.name} "
                     f"(|cos| = {cos:.2f}) — confirm")
        lines.append(f"name = {_q(f'{a.name}_to_{b.name}')}")
        lines.append(f"reactant = {_q(a.name)}")
        lines.append(f"transition_state = {_q(ts.name)}")
        lines.append(f"product = {_q(b.name)}")
        info = recipe_of_level[_level_key(ts.geom_rec)]
        lines.append(f"recipe = {_q(info['name'])}")
        lines.append('# donor_site = "site_a"      # name the sites under [sites] and add them here')
        lines.append('# acceptor_site = "site_b"')
        if info["sp_labels"]:
            ladder = [info["name"]] + [f"{lab}//{info['name']}" for lab in info["sp_labels"]]
            lines.append(f"ladder = [{', '.join(_q(x) for x in ladder)}]  # guess: every recipe is a rung — confirm")
        lines.append("")
    return lines


def _family_lines(families, pathways, recipe_of_level: dict[str, dict]) -> list[str]:
    lines: list[str] = []
    taken_names = {f"{a.name}_to_{b.name}" for _, a, b, _ in pathways}
    for key, minima in families:
        formula, charge, mult, _lv = key
        name = _unique(f"{formula} charge {charge} multiplicity {mult}, {minima[0].geom_rec.level.label()}",
                       taken_names)
        lines.append(f"[[isomer_families]]  # guess: {len(minima)} minima of {formula}, charge {charge}, "
                     f"multiplicity {mult} at one level — confirm")
        lines.append(f"name = {_q(name)}")
        lines.append(f"states = [{', '.join(_q(d.name) for d in minima)}]")
        lines.append(f"recipe = {_q(recipe_of_level[_level_key(minima[0].geom_rec)]['name'])}")
        lines.append("")
    return lines


def _four_point_candidates(drafts, unused, records, rel, drafted=frozenset()):
    """Commented [pathways.four_point] blocks for pairs of optimised states A, B (same atoms,
    other charge or multiplicity) with single points of A at B's geometry and of B at A's; pairs
    already drafted as a transfer's four-point set (`drafted`, geometry paths) are left out."""
    singles = [(p, records[p]) for p, _ in unused if p in records and records[p].vibrations is None]
    lines: list[str] = []
    explained: set = set()

    def vertical(state: _StateDraft, at: _StateDraft):
        for p, r in singles:
            if (r.charge, r.multiplicity) == (state.geom_rec.charge, state.geom_rec.multiplicity) \
                    and _level_key(r) == _level_key(state.geom_rec):
                dist = _same_geometry(r, at.geom_rec)
                if dist is not None and dist <= SAME_GEOMETRY_RMSD_ANGSTROM:
                    return p
        return None

    for i, a in enumerate(drafts):
        for b in drafts[i + 1:]:
            ga, gb = a.geom_rec, b.geom_rec
            if not geometry.same_atom_order(ga.elements, gb.elements) \
                    or (ga.charge, ga.multiplicity) == (gb.charge, gb.multiplicity):
                continue
            if (a.geometry, b.geometry) in drafted or (b.geometry, a.geometry) in drafted:
                continue
            a_at_b, b_at_a = vertical(a, b), vertical(b, a)
            if a_at_b is None or b_at_a is None:
                continue
            explained |= {a_at_b, b_at_a}
            lines += [
                f"# guess: four-point candidate for '{a.name}' (charge {ga.charge}) and '{b.name}' (charge {gb.charge}):",
                "# move these lines under the [[pathways]] entry they belong to and uncomment them — confirm",
                "# [pathways.four_point]",
                f"# reactant_at_reactant = {_q(rel(a.geometry))}",
                f"# reactant_at_product  = {_q(rel(a_at_b))}",
                f"# product_at_product   = {_q(rel(b.geometry))}",
                f"# product_at_reactant  = {_q(rel(b_at_a))}",
                "",
            ]
    return lines, explained


def draft_manifest(title: str, base: Path, records: list[tuple[Path, Calculation | ReadError]],
                   threshold_cm1: float = IMAGINARY_THRESHOLD_CM1) -> Draft:
    """A draft manifest for `records` (absolute paths): `title` for [project], paths written
    relative to the folder `base` the manifest will be written in."""

    def rel(p: Path) -> str:
        return Path(os.path.relpath(p, base)).as_posix()

    usable, unused = _partition(records)
    drafts, group_of = _state_drafts(usable, unused)
    _assign_roles(drafts, threshold_cm1)
    families, pathways = _profiles(drafts, group_of)
    recipe_of_level = _recipes_by_level(families, pathways)

    from dossier.project.drafting_transfers import transfer_drafts

    transfers = transfer_drafts(usable, drafts, rel)
    lines = _project_lines(title, threshold_cm1)
    at = lines.index("[sites]") + 1
    lines[at:at] = transfers.site_lines
    lines += _state_lines(drafts, rel)
    lines += _recipe_lines(recipe_of_level)
    lines += _pathway_lines(pathways, recipe_of_level)
    lines += _family_lines(families, pathways, recipe_of_level)
    lines += transfers.lines
    fp_lines, explained = _four_point_candidates(drafts, unused, dict(usable), rel, transfers.pairs)
    lines += fp_lines
    unused = [(p, why) for p, why in unused if p not in explained and p not in transfers.explained]
    if unused:
        lines.append("# Files not placed in any state (assign them by hand if they belong):")
        for p, why in unused:
            lines.append(f"#   {rel(p)}: {why}")
        lines.append("")
    return Draft("\n".join(lines).rstrip("\n") + "\n")
