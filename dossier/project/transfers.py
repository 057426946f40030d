"""The manifest's `[[transfers]]` table: a charge transfer between two molecules (or two sites of
one dimer) whose parameters come from routes, not from a transition state.

``transfers_table(raw, v, refs, files)`` validates the TOML alone (types, names, files present)
with the manifest loader's helpers; ``bind_transfers(manifest, by_path)`` joins each transfer to
its records and checks what needs them (four-point sets of one molecule in two charge states
differing by one, coupling files of the right kind, site atoms within the dimer). The carrier
(hole or electron) is named from the charges. Documented in docs/manifest.md.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from dossier.errors import ManifestError
from dossier.records import Calculation
from dossier.science.couplings import carrier_from_charge
from dossier.science.solvent import SOLVENTS

FOUR_POINT_KEYS = ("reactant_at_reactant", "reactant_at_product", "product_at_product", "product_at_reactant")
#: Where the driving force comes from.
DRIVING_FORCE_SOURCES = ("symmetry", "fragments", "states")
#: Coupling routes a transfer can list.
COUPLING_ROUTES = ("charge-resonance", "orbital-splitting", "gmh", "value")
_TRANSFER_KEYS = ("name", "donor_site", "acceptor_site", "driving_force", "initial_state", "final_state",
                  "four_point", "donor_four_point", "acceptor_four_point", "couplings", "solvent",
                  "nuclear_frequency_cm1", "nuclear_frequency_source", "note")
_COUPLING_KEYS = ("route", "file", "root", "dipole_difference_au", "dipole_difference_source", "coupling_cm1",
                  "separation_angstrom", "source", "note")
_SOLVENT_KEYS = ("name", "refractive_index", "static_dielectric", "source", "donor_radius_angstrom",
                 "acceptor_radius_angstrom")


@dataclass
class CouplingSpec:
    route: str
    file: Path | None = None
    root: int | None = None  # 1-based, as the programs print them
    dipole_difference_au: float | None = None
    dipole_difference_source: str | None = None
    coupling_cm1: float | None = None
    separation_angstrom: float | None = None
    source: str | None = None
    note: str | None = None
    key: tuple = ()
    record: Calculation | None = None  # set by bind_transfers
    file_label: str | None = None


@dataclass
class SolventSpec:
    name: str | None
    refractive_index: float
    static_dielectric: float
    source: str
    donor_radius_angstrom: float | None = None
    acceptor_radius_angstrom: float | None = None


@dataclass
class TransferSpec:
    name: str
    driving_force: str
    donor_site: str | None = None
    acceptor_site: str | None = None
    initial_state: str | None = None
    final_state: str | None = None
    #: set label -> four files; `four_point` for one molecule (self-exchange), donor/acceptor for a pair
    four_point: dict[str, dict[str, Path]] = field(default_factory=dict)
    donor_four_point: dict[str, dict[str, Path]] = field(default_factory=dict)
    acceptor_four_point: dict[str, dict[str, Path]] = field(default_factory=dict)
    couplings: list[CouplingSpec] = field(default_factory=list)
    solvent: SolventSpec | None = None
    nuclear_frequency_cm1: float | None = None
    nuclear_frequency_source: str | None = None
    note: str | None = None
    key: tuple = ()


@dataclass
class Transfer:
    """A bound transfer: four-point sets as records (label -> key -> record), couplings with their
    records, the carrier named from the charges."""

    name: str
    kind: str  # "self-exchange" | "cross"
    carrier: str | None
    carrier_reason: str
    driving_force: str
    donor_sets: dict[str, dict[str, Calculation]]
    acceptor_sets: dict[str, dict[str, Calculation]]
    set_files: dict[str, dict[str, dict[str, str]]]  # "donor"/"acceptor" -> label -> key -> path as written
    couplings: list[CouplingSpec]
    donor_site: str | None = None
    acceptor_site: str | None = None
    initial_state: str | None = None
    final_state: str | None = None
    solvent: SolventSpec | None = None
    nuclear_frequency_cm1: float | None = None
    nuclear_frequency_source: str | None = None
    note: str | None = None


# ---------------------------------------------------------------------------
# Validation of the TOML
# ---------------------------------------------------------------------------
def _sets(tr: dict, key: tuple, which: str, v, files) -> dict[str, dict[str, Path]]:
    if which not in tr:
        return {}
    sets = v.table(tr[which], key + (which,), "one table of four files per level, e.g. [transfers.four_point.dft]")
    if not sets:
        raise v.fail(key + (which,), f"{which} is empty; add one table of four files per level")
    out: dict[str, dict[str, Path]] = {}
    for label, fp in sets.items():
        k = key + (which, label)
        fp = v.table(fp, k, "reactant_at_reactant, reactant_at_product, product_at_product, product_at_reactant")
        v.known_keys(fp, k, FOUR_POINT_KEYS)
        missing = [x for x in FOUR_POINT_KEYS if x not in fp]
        if missing:
            raise v.fail(k, f"{which}.{label} needs all of {', '.join(FOUR_POINT_KEYS)}; missing {', '.join(missing)}")
        out[label] = {x: files.value(fp, k + (x,), required=True) for x in FOUR_POINT_KEYS}
    return out


def _coupling(c: Any, key: tuple, v, files) -> CouplingSpec:
    c = v.table(c, key, "route, file, ...")
    v.known_keys(c, key, _COUPLING_KEYS)
    route = v.string(c, key + ("route",), required=True, choices=COUPLING_ROUTES)
    spec = CouplingSpec(route=route, key=key, note=v.string(c, key + ("note",)))
    if route == "value":
        for bad in ("file", "root", "dipole_difference_au"):
            if bad in c:
                raise v.fail(key + (bad,), f"a coupling with route = \"value\" takes no {bad}; give coupling_cm1 "
                                           "and source")
        if "coupling_cm1" not in c:
            raise v.fail(key, "a coupling with route = \"value\" needs coupling_cm1 = NUMBER and source = \"...\"")
        spec.coupling_cm1 = v.number(c, key + ("coupling_cm1",), 0.0, positive=True)
        spec.source = v.string(c, key + ("source",), required=True)
        spec.separation_angstrom = (v.number(c, key + ("separation_angstrom",), 0.0, positive=True)
                                    if "separation_angstrom" in c else None)
        return spec
    for bad in ("coupling_cm1", "separation_angstrom"):
        if bad in c:
            raise v.fail(key + (bad,), f"{bad} is only for route = \"value\"; route '{route}' takes its number "
                                       "from the file")
    spec.file = files.value(c, key + ("file",), required=True)
    spec.source = v.string(c, key + ("source",))
    if "root" in c:
        if route == "orbital-splitting":
            raise v.fail(key + ("root",), "root is for excited-state routes (charge-resonance, gmh), not "
                                          "orbital-splitting")
        root = c["root"]
        if isinstance(root, bool) or not isinstance(root, int) or root < 1:
            raise v.fail(key + ("root",), f"root must be a whole number >= 1 (the excited state as the "
                                          f"program numbers it); got {root!r}")
        spec.root = root
    if "dipole_difference_au" in c:
        if route != "gmh":
            raise v.fail(key + ("dipole_difference_au",), "dipole_difference_au is for route = \"gmh\" only")
        spec.dipole_difference_au = v.number(c, key + ("dipole_difference_au",), 0.0, nonnegative=True)
        spec.dipole_difference_source = v.string(c, key + ("dipole_difference_source",), required=True)
    elif "dipole_difference_source" in c:
        raise v.fail(key + ("dipole_difference_source",), "dipole_difference_source goes with dipole_difference_au")
    return spec


def _solvent(tr: dict, key: tuple, v) -> SolventSpec | None:
    if "solvent" not in tr:
        return None
    k = key + ("solvent",)
    s = v.table(tr["solvent"], k, "name = \"SOLVENT\", or refractive_index, static_dielectric and source")
    v.known_keys(s, k, _SOLVENT_KEYS)
    radii = {r: (v.number(s, k + (r,), 0.0, positive=True) if r in s else None)
             for r in ("donor_radius_angstrom", "acceptor_radius_angstrom")}
    if "name" in s and not any(x in s for x in ("refractive_index", "static_dielectric")):
        name = v.string(s, k + ("name",))
        if name not in SOLVENTS:
            raise v.fail(k + ("name",), f"solvent '{name}' is not in the table (known: {', '.join(SOLVENTS)}); "
                                        "give refractive_index, static_dielectric and source instead")
        sv = SOLVENTS[name]
        return SolventSpec(name=name, refractive_index=sv.refractive_index, static_dielectric=sv.static_dielectric,
                           source=sv.source, **radii)
    for need in ("refractive_index", "static_dielectric", "source"):
        if need not in s:
            raise v.fail(k, f"[{'.'.join(str(x) for x in k[:1])}] solvent needs a known name or all of "
                            f"refractive_index, static_dielectric and source; missing {need}")
    n = v.number(s, k + ("refractive_index",), 1.0, positive=True)
    eps = v.number(s, k + ("static_dielectric",), 1.0, positive=True)
    if n < 1.0 or eps < n * n:
        raise v.fail(k, f"solvent constants must satisfy 1 <= refractive_index^2 <= static_dielectric; got n = {n:g}, "
                        f"epsilon_s = {eps:g}")
    return SolventSpec(name=v.string(s, k + ("name",)), refractive_index=n, static_dielectric=eps,
                       source=v.string(s, k + ("source",)), **radii)


def _transfer(tr: Any, i: int, v, refs, files) -> TransferSpec:
    key = ("transfers", i)
    tr = v.table(tr, key, "name, driving_force, four_point, couplings, ...")
    v.known_keys(tr, key, _TRANSFER_KEYS)
    name = refs.profile_name(tr, key)
    donor, acceptor = refs.site(tr, key + ("donor_site",)), refs.site(tr, key + ("acceptor_site",))
    if (donor is None) != (acceptor is None) or (donor is not None and donor == acceptor):
        raise v.fail(key + ("acceptor_site" if donor else "donor_site",),
                     f"transfer '{name}': give both donor_site and acceptor_site (two different sites) or neither")
    spec = TransferSpec(name=name, key=key, donor_site=donor, acceptor_site=acceptor, note=v.string(tr, key + ("note",)),
                        driving_force=v.string(tr, key + ("driving_force",), required=True,
                                               choices=DRIVING_FORCE_SOURCES))
    spec.four_point = _sets(tr, key, "four_point", v, files)
    spec.donor_four_point = _sets(tr, key, "donor_four_point", v, files)
    spec.acceptor_four_point = _sets(tr, key, "acceptor_four_point", v, files)
    if spec.four_point and (spec.donor_four_point or spec.acceptor_four_point):
        raise v.fail(key + ("four_point",), f"transfer '{name}': four_point (one molecule, self-exchange) and "
                                            "donor_four_point/acceptor_four_point (a pair) exclude each other")
    if bool(spec.donor_four_point) != bool(spec.acceptor_four_point):
        which = "acceptor_four_point" if spec.donor_four_point else "donor_four_point"
        raise v.fail(key, f"transfer '{name}': a cross transfer needs both donor_four_point and "
                          f"acceptor_four_point; add {which}")
    if spec.donor_four_point and set(spec.donor_four_point) != set(spec.acceptor_four_point):
        raise v.fail(key + ("acceptor_four_point",), f"transfer '{name}': donor and acceptor four-point sets "
                                                     "must have the same labels (one per level)")
    if spec.driving_force == "fragments" and not spec.donor_four_point:
        raise v.fail(key + ("driving_force",), f"transfer '{name}': driving_force = \"fragments\" takes the "
                                               "energies of donor_four_point and acceptor_four_point; add them")
    if spec.driving_force == "states":
        spec.initial_state = refs.state(tr, key + ("initial_state",), required=True)
        spec.final_state = refs.state(tr, key + ("final_state",), required=True)
    elif "initial_state" in tr or "final_state" in tr:
        raise v.fail(key + ("initial_state" if "initial_state" in tr else "final_state",),
                     "initial_state and final_state go with driving_force = \"states\"")
    raw_c = tr.get("couplings", [])
    if not isinstance(raw_c, list):
        raise v.fail(key + ("couplings",), "couplings must be an array of tables: write each as [[transfers.couplings]]")
    spec.couplings = [_coupling(c, key + ("couplings", j), v, files) for j, c in enumerate(raw_c)]
    spec.solvent = _solvent(tr, key, v)
    if "nuclear_frequency_cm1" in tr:
        spec.nuclear_frequency_cm1 = v.number(tr, key + ("nuclear_frequency_cm1",), 0.0, positive=True)
        spec.nuclear_frequency_source = v.string(tr, key + ("nuclear_frequency_source",), required=True)
    elif "nuclear_frequency_source" in tr:
        raise v.fail(key + ("nuclear_frequency_source",), "nuclear_frequency_source goes with nuclear_frequency_cm1")
    return spec


def transfers_table(raw: dict, v, refs, files) -> list[TransferSpec]:
    """[[transfers]]: validated with the manifest loader's validator, references and files."""
    tr_raw = raw.get("transfers", [])
    if not isinstance(tr_raw, list):
        raise v.fail(("transfers",), "transfers must be an array of tables: write each as [[transfers]]")
    return [_transfer(tr, i, v, refs, files) for i, tr in enumerate(tr_raw)]


# ---------------------------------------------------------------------------
# Binding to records
# ---------------------------------------------------------------------------
def _check_set(m, spec: TransferSpec, which: str, label: str, recs: dict[str, Calculation]) -> None:
    where = m.where(*spec.key, which, label)
    formulas = {r.formula for r in recs.values() if r.elements}
    if len(formulas) > 1:
        raise ManifestError(f"transfer '{spec.name}': the files of {which}.{label} hold different molecules "
                            f"({', '.join(sorted(formulas))}); a four-point set is one molecule", where=where)
    for side in ("reactant", "product"):
        q = {recs[f"{side}_at_{g}"].charge for g in ("reactant", "product")}
        if len(q) != 1:
            raise ManifestError(f"transfer '{spec.name}': {which}.{label}: {side}_at_reactant and "
                                f"{side}_at_product have different charges ({sorted(q)}); both are the {side} "
                                "charge state", where=where)
    qr, qp = recs["reactant_at_reactant"].charge, recs["product_at_product"].charge
    if qr is None or qp is None or abs(qr - qp) != 1:
        raise ManifestError(f"transfer '{spec.name}': {which}.{label}: reactant and product charges must differ by "
                            f"one (got {qr} and {qp})", where=where)


def _carrier(m, spec: TransferSpec, sets: dict, couplings: list[CouplingSpec],
             by_path: dict[Path, Calculation]) -> tuple[str | None, str]:
    """hole or electron from every charged file of the transfer; they must agree."""
    found: list[tuple[str, str]] = []
    for c in couplings:
        if c.route in ("charge-resonance", "gmh") and c.record is not None and c.record.charge:
            found.append((carrier_from_charge(c.record.charge),
                          f"the dimer in '{c.file_label}' has charge {c.record.charge:+d}"))
    for label, recs in sets.items():
        qr, qp = recs["reactant_at_reactant"].charge, recs["product_at_product"].charge
        if qr + qp:
            found.append((carrier_from_charge(qr + qp),
                          f"four-point set '{label}' pairs charges {qr:+d} and {qp:+d}"))
    for name in (spec.initial_state, spec.final_state):
        rec = by_path.get(m.states[name].geometry) if name is not None else None
        if rec is not None and rec.charge:
            found.append((carrier_from_charge(rec.charge), f"state '{name}' has charge {rec.charge:+d}"))
    if not found:
        return None, "no charged file names the carrier"
    carriers = sorted({c for c, _ in found})
    if len(carriers) > 1:
        a = next(w for c, w in found if c == carriers[0])
        b = next(w for c, w in found if c == carriers[1])
        raise ManifestError(f"transfer '{spec.name}': the files disagree on the carrier ({a}: {carriers[0]}; "
                            f"{b}: {carriers[1]}); one transfer moves either a hole or an electron",
                            where=m.where(*spec.key))
    return found[0]


def _check_coupling(m, spec: TransferSpec, c: CouplingSpec) -> None:
    rec, where = c.record, m.where(*c.key)
    if rec is None:
        return
    if c.route in ("charge-resonance", "gmh"):
        if not rec.excited_states:
            raise ManifestError(f"transfer '{spec.name}': '{c.file_label}' holds no excited states; route "
                                f"'{c.route}' needs an excited-state job of the dimer ion", where=where)
        if not rec.charge:
            raise ManifestError(f"transfer '{spec.name}': '{c.file_label}' is neutral; route '{c.route}' needs the "
                                "dimer ion (cation for a hole, anion for an electron)", where=where)
        if c.root is not None and c.root > len(rec.excited_states):
            raise ManifestError(f"transfer '{spec.name}': root {c.root} but '{c.file_label}' has only "
                                f"{len(rec.excited_states)} excited states", where=m.where(*c.key, "root"))
    if c.route == "orbital-splitting":
        if rec.orbitals is None or not rec.orbitals.energies_hartree:
            raise ManifestError(f"transfer '{spec.name}': '{c.file_label}' has no orbital energies; route "
                                "'orbital-splitting' needs the neutral dimer's orbitals", where=where)
        if rec.multiplicity not in (None, 1):
            raise ManifestError(f"transfer '{spec.name}': '{c.file_label}' is not closed-shell (multiplicity "
                                f"{rec.multiplicity}); Koopmans' splitting needs the neutral closed-shell dimer",
                                where=where)
    for site in (spec.donor_site, spec.acceptor_site):
        if site is not None and rec.n_atoms and max(m.sites[site]) >= rec.n_atoms:
            raise ManifestError(f"sites.{site} has atom number {max(m.sites[site]) + 1}, but '{c.file_label}' "
                                f"(a coupling of transfer '{spec.name}') has only {rec.n_atoms} atoms",
                                where=m.where("sites", site))


def bind_transfer(m, spec: TransferSpec, by_path: dict[Path, Calculation]) -> Transfer:
    """One transfer joined to its records (see the module docstring for the checks)."""
    def records(sets: dict[str, dict[str, Path]]) -> dict[str, dict[str, Calculation]]:
        return {label: {k: by_path[p] for k, p in fp.items()} for label, fp in sets.items()}

    def labels(sets: dict[str, dict[str, Path]]) -> dict[str, dict[str, str]]:
        return {label: {k: m.file_labels[p] for k, p in fp.items()} for label, fp in sets.items()}

    cross = bool(spec.donor_four_point)
    donor_paths = spec.donor_four_point if cross else spec.four_point
    acceptor_paths = spec.acceptor_four_point if cross else spec.four_point
    donor = records(donor_paths)
    acceptor = records(acceptor_paths) if cross else donor
    for which, sets in (("donor_four_point", donor), ("acceptor_four_point", acceptor)) if cross else \
            (("four_point", donor),):
        for label, recs in sets.items():
            _check_set(m, spec, which, label, recs)
    couplings = []
    for c in spec.couplings:
        bound = CouplingSpec(**{**vars(c)})
        if c.file is not None:
            bound.record, bound.file_label = by_path[c.file], m.file_labels[c.file]
        _check_coupling(m, spec, bound)
        couplings.append(bound)
    sets = {**donor, **{f"acceptor {k}": v for k, v in acceptor.items()}} if cross else donor
    carrier, reason = _carrier(m, spec, sets, couplings, by_path)
    if carrier is None and any(c.route == "orbital-splitting" for c in couplings):
        raise ManifestError(f"transfer '{spec.name}': the orbital-splitting route needs to know whether a hole or an "
                            "electron moves, and no charged file says so; add a four-point set or the dimer ion",
                            where=m.where(*spec.key))
    return Transfer(name=spec.name, kind="cross" if cross else "self-exchange", carrier=carrier, carrier_reason=reason,
                    driving_force=spec.driving_force, donor_sets=donor, acceptor_sets=acceptor,
                    set_files={"donor": labels(donor_paths), "acceptor": labels(acceptor_paths)},
                    couplings=couplings, donor_site=spec.donor_site, acceptor_site=spec.acceptor_site,
                    initial_state=spec.initial_state, final_state=spec.final_state, solvent=spec.solvent,
                    nuclear_frequency_cm1=spec.nuclear_frequency_cm1,
                    nuclear_frequency_source=spec.nuclear_frequency_source, note=spec.note)


def bind_transfers(m, by_path: dict[Path, Calculation]) -> list[Transfer]:
    return [bind_transfer(m, spec, by_path) for spec in getattr(m, "transfers", [])]
