"""What `dossier init` recognizes beyond one molecule's double well (pure; no files are read):

- four-point sets: two optimised states of one molecule (same atoms in the same order) whose
  charges differ by one, and, at each level of theory, the four energies E(X@Y) (the optimisations
  themselves and single points of each charge state at the other's geometry, Kabsch RMSD <= 0.01 A);
- dimers of that molecule: structures that fall apart by bonds into two copies of it (same atoms in
  the same order); the fragments are drafted as the two sites;
- coupling sources among the dimers: the dimer ion (charge of the pair) with excited states ->
  charge-resonance route; the closed-shell dimer of the other charge state with orbital energies ->
  orbital-splitting route; several separations of one kind make a scan;
- the carrier from the charges (cation: hole; anion: electron).

Only complete runs (status "ok") are used; the others stay in the draft's list of unplaced files.
``transfer_drafts(usable, drafts, rel)`` returns the lines and the files it placed. Thresholds are
those of dossier.project.drafting (common practice, no source).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from dossier.records import Calculation
from dossier.science import fragments
from dossier.science.couplings import carrier_from_charge
from dossier.project.drafting import SAME_GEOMETRY_RMSD_ANGSTROM
from dossier.project.drafting import _key as toml_key
from dossier.project.drafting import _level_key as level_key
from dossier.project.drafting import _q as q
from dossier.project.drafting import _same_geometry as same_geometry


@dataclass
class TransferDraft:
    site_lines: list[str] = field(default_factory=list)
    lines: list[str] = field(default_factory=list)
    explained: set[Path] = field(default_factory=set)  # files the transfers place
    pairs: set[tuple[Path, Path]] = field(default_factory=set)  # (geometry A, geometry B) of each set


def _ok(r: Calculation) -> bool:
    return r.status.word == "ok" and bool(r.energies_hartree) and bool(r.coordinates_angstrom)


def _unique_structures(drafts) -> list:
    """Optimised states, one per structure and level (copies of one optimisation are skipped)."""
    out = []
    for d in drafts:
        r = d.geom_rec
        if not _ok(r) or "optimization" not in r.job_kinds:
            continue
        if any(level_key(o.geom_rec) == level_key(r) and (o.geom_rec.charge, o.geom_rec.multiplicity)
               == (r.charge, r.multiplicity) and (x := same_geometry(o.geom_rec, r)) is not None
               and x <= SAME_GEOMETRY_RMSD_ANGSTROM for o in out):
            continue
        out.append(d)
    return out


def _sets_of_pair(a, b, candidates: list[tuple[Path, Calculation]]) -> dict[str, dict[str, Path]]:
    """level label -> {four-point key: file} for the states a (reactant) and b (product)."""
    found: dict[str, dict[str, Path]] = {}
    label_of: dict[str, str] = {}
    for p, r in candidates:
        state = "reactant" if (r.charge, r.multiplicity) == (a.geom_rec.charge, a.geom_rec.multiplicity) else \
            "product" if (r.charge, r.multiplicity) == (b.geom_rec.charge, b.geom_rec.multiplicity) else None
        if state is None:
            continue
        for at, d in (("reactant", a), ("product", b)):
            x = same_geometry(r, d.geom_rec)
            if x is not None and x <= SAME_GEOMETRY_RMSD_ANGSTROM:
                key = f"{state}_at_{at}"
                label_of.setdefault(level_key(r), r.level.label())
                found.setdefault(level_key(r), {}).setdefault(key, p)
                break
    sets = {label_of[k]: v for k, v in found.items() if len(v) == 4}
    # the set of the optimisations themselves first, then the single-point levels
    return dict(sorted(sets.items(), key=lambda kv: kv[1]["reactant_at_reactant"] != a.geometry))


def _four_point_sets(usable, drafts) -> list[dict]:
    structures = _unique_structures(drafts)
    out = []
    for i, x in enumerate(structures):
        for y in structures[i + 1:]:
            gx, gy = x.geom_rec, y.geom_rec
            if gx.elements != gy.elements or gx.charge is None or gy.charge is None or abs(gx.charge - gy.charge) != 1:
                continue
            if level_key(gx) != level_key(gy):
                continue
            net = gx.charge + gy.charge
            carrier = carrier_from_charge(net)
            if carrier is None:
                continue
            # reactant: the molecule that carries the hole (higher charge) or the electron (lower charge)
            a, b = (x, y) if (gx.charge > gy.charge) == (carrier == "hole") else (y, x)
            cands = [(p, r) for p, r in usable if _ok(r) and r.elements == gx.elements]
            sets = _sets_of_pair(a, b, cands)
            if sets:
                out.append({"reactant": a, "product": b, "carrier": carrier, "sets": sets})
    return out


def _dimers(usable, fp: dict) -> list[dict]:
    """Coupling sources of one four-point molecule: (kind, path, record, fragments, separation)."""
    mono = fp["reactant"].geom_rec
    q_ion = fp["reactant"].geom_rec.charge + fp["product"].geom_rec.charge
    q_neutral = 2 * fp["product"].geom_rec.charge
    out = []
    for p, r in usable:
        if not _ok(r) or r.n_atoms != 2 * mono.n_atoms or "optimization" in r.job_kinds:
            continue
        try:
            frags = fragments.fragments(r.elements, r.coordinates_angstrom)
        except fragments.FragmentError:
            continue
        if len(frags) != 2 or any([r.elements[i] for i in f] != mono.elements for f in frags):
            continue
        if r.charge == q_ion and r.excited_states:
            kind = "charge-resonance"
        elif r.charge == q_neutral and r.multiplicity == 1 and r.orbitals is not None:
            kind = "orbital-splitting"
        else:
            continue
        sep = fragments.separation_angstrom(r.coordinates_angstrom, frags[0], frags[1])
        out.append({"kind": kind, "path": p, "record": r, "fragments": frags, "separation": sep})
    out.sort(key=lambda d: (d["kind"], level_key(d["record"]), d["separation"], str(d["path"])))
    kept: list[dict] = []
    for d in out:  # copies of one run (same kind, level, separation and energy) count once
        if not any(k["kind"] == d["kind"] and level_key(k["record"]) == level_key(d["record"])
                   and abs(k["separation"] - d["separation"]) < 1e-3
                   and abs((k["record"].energy_hartree or 0.0) - (d["record"].energy_hartree or 0.0)) < 1e-6
                   for k in kept):
            kept.append(d)
    return kept


def _transfer_lines(n: int, fp: dict, dimers: list[dict], rel, site_names) -> list[str]:
    mono = fp["reactant"].geom_rec
    who = fp["carrier"]
    lines = [f"[[transfers]]  # guess: {who} self-exchange between two {mono.formula} molecules (charges "
             f"{fp['reactant'].geom_rec.charge:+d} and {fp['product'].geom_rec.charge:+d}: a {who}) — confirm",
             f"name = {q(f'{mono.formula.lower()}_{who}_hopping' + (f'_{n + 1}' if n else ''))}",
             'driving_force = "symmetry"  # guess: the same molecule on both sides (self-exchange) — confirm']
    if site_names:
        lines += [f"donor_site = {q(site_names[0])}  # guess: the first molecule of the dimers (by bonds) — confirm",
                  f"acceptor_site = {q(site_names[1])}"]
    lines.append("")
    for label, files in fp["sets"].items():
        lines.append(f"[transfers.four_point.{toml_key(label.casefold())}]  # guess: four-point set at {label} "
                     f"(reactant: the {who}'s carrier, charge {fp['reactant'].geom_rec.charge:+d}) — confirm")
        for key in ("reactant_at_reactant", "reactant_at_product", "product_at_product", "product_at_reactant"):
            lines.append(f"{key} = {q(rel(files[key]))}")
        lines.append("")
    for d in dimers:
        what = ("dimer ion with excited states: half the charge-resonance excitation" if d["kind"] == "charge-resonance"
                else "closed-shell dimer: half the frontier-orbital splitting (Koopmans)")
        lines += ["[[transfers.couplings]]",
                  f"route = {q(d['kind'])}  # guess: {what}, R = {d['separation']:.2f} A — confirm",
                  f"file = {q(rel(d['path']))}", ""]
    return lines


def transfer_drafts(usable: list[tuple[Path, Calculation]], drafts, rel) -> TransferDraft:
    """The [[transfers]] a folder's records suggest (see the module docstring)."""
    out = TransferDraft()
    for n, fp in enumerate(_four_point_sets(usable, drafts)):
        dimers = _dimers(usable, fp)
        first = [d["fragments"] for d in dimers]
        site_names = None
        if first and all(f == first[0] for f in first):
            base = fp["reactant"].geom_rec.formula.lower() + (f"_{n + 1}" if n else "")
            site_names = (f"{base}_a", f"{base}_b")
            for name, atoms in zip(site_names, first[0]):
                out.site_lines.append(f"{name} = [{', '.join(str(i + 1) for i in atoms)}]  # guess: one molecule "
                                      "of the dimers, found by bonds — confirm")
        out.lines += _transfer_lines(n, fp, dimers, rel, site_names)
        out.explained |= {p for files in fp["sets"].values() for p in files.values()}
        out.explained |= {d["path"] for d in dimers}
        out.pairs.add((fp["reactant"].geometry, fp["product"].geometry))
    return out
