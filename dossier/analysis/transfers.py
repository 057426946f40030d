"""Transfers without a transition state (the manifest's [[transfers]]): the reorganization energy
from four-point sets, the electronic driving force, the coupling routes side by side, distance
scans with their exponential fit, the solvent's share of lambda and the golden-rule rate at each
separation. Builds one plain dict per transfer (docs/dossier-json.md, `transfers`).

Choices made here, and stated in the result:

- Rungs: every energy level that all files of a four-point set (or both states) print is a rung
  (a CCSD(T) log gives SCF, MP2, CCSD and CCSD(T)); the quoted value is the highest rung
  (coupled cluster over MP2 over DFT over HF; common practice, no source).
- Quantities are named for what they are: electronic energies of fixed structures give dE0 and
  lambda, never a free energy or a barrier.
- Separation of a coupling point: the distance between the centroids of the donor and acceptor
  atoms (the manifest's sites, else the two molecules found by bonds).
"""
from __future__ import annotations

from dossier import units as u
from dossier.analysis.common import _kj, _prov
from dossier.errors import DossierError
from dossier.science import applicability, exchange, fragments, marcus, solvent
from dossier.science import couplings as cp

#: Rank of an energy level for choosing the quoted rung (common practice, no source).
_LEVEL_RANK = {"mp2": 2, "scs-mp2": 2, "mp3": 3, "mp4(dq)": 3, "mp4(sdq)": 4, "mp4": 4, "ccd": 5, "ccsd": 5,
               "qcisd": 5, "ccsd[t]": 6, "qcisd(t)": 6, "ccsd(t)": 7}
FORMULA_LAMBDA = ("lambda = lambda_D + lambda_A, lambda_M = [E(M_before@after) - E(M_before@before) + "
                  "E(M_after@before) - E(M_after@after)] / 2; for a self-exchange the four-point sum "
                  "(Nelsen, Blackstock, Kim, J. Am. Chem. Soc. 1987, 109, 677)")
FORMULA_FRAGMENTS = "dE0 = [E(D_after) - E(D_before)] + [E(A_after) - E(A_before)], each at its own optimised geometry"


def rung_label(rec, key: str) -> str:
    """Level of one energy of a record: 'BHLYP/6-31G*' for a DFT SCF energy, 'HF/6-31G*' for a
    wavefunction job's reference, 'CCSD(T)/6-31G*' for a correlated level."""
    head = (rec.level.functional or "HF") if key == "scf" else key.upper()
    return f"{head}/{rec.level.basis}" if rec.level.basis else head


def _rank(rec, key: str) -> int:
    if key == "scf":
        return 1 if rec.level.functional else 0
    return _LEVEL_RANK.get(key, 1)


def _common_levels(recs: list) -> list[tuple[str, str, int]]:
    """(key, label, rank) of every energy all records print at one common level label."""
    first = recs[0]
    out = []
    for key in first.energies_hartree:
        if key == "rocis" or not all(key in r.energies_hartree for r in recs):
            continue
        labels = {rung_label(r, key) for r in recs}
        if len(labels) == 1:
            out.append((key, labels.pop(), _rank(first, key)))
    return sorted(out, key=lambda x: x[2])  # lowest rung first


def _set_ok(recs: dict) -> str | None:
    bad = [r for r in recs.values() if r.status.word != "ok"]
    if bad:
        return f"'{bad[0].source.path}' did not finish normally ({bad[0].status.word})"
    return None


def _lambda_rungs(project, tr) -> tuple[list[dict], list[dict]]:
    rungs, missing = [], []
    for label, d in tr.donor_sets.items():
        a = tr.acceptor_sets[label]
        problem = _set_ok(d) or _set_ok(a)
        if problem:
            missing.append({"parameter": "reorganization_energy", "set": label, "reason": problem})
            continue
        order = ("reactant_at_reactant", "reactant_at_product", "product_at_product", "product_at_reactant")
        files = [project.label(d[k]) for k in order] + ([project.label(a[k]) for k in order] if a is not d else [])
        for key, level, rank in _common_levels(list(d.values()) + list(a.values())):
            e_d = [d[k].energies_hartree[key] for k in order]
            e_a = [a[k].energies_hartree[key] for k in order]
            lam_d = exchange.molecule_reorganization_kj_mol(*e_d)
            lam_a = exchange.molecule_reorganization_kj_mol(*e_a)
            rungs.append({
                "set": label, "energy": key, "level_of_theory": level, "rank": rank,
                "value_kj_mol": lam_d + lam_a, "donor_kj_mol": lam_d, "acceptor_kj_mol": lam_a,
                "relaxation_kj_mol": {"donor": list(exchange.relaxation_energies_kj_mol(*e_d)),
                                      "acceptor": list(exchange.relaxation_energies_kj_mol(*e_a))},
                "provenance": _prov(files, [], level, FORMULA_LAMBDA),
            })
    return rungs, missing


def _driving_rungs(project, tr) -> list[dict]:
    if tr.driving_force == "symmetry":
        return [{"source": "symmetry", "value_kj_mol": 0.0, "level_of_theory": None, "rank": 99,
                 "statement": "zero by symmetry: donor and acceptor are the same molecule (stated in the manifest, "
                              "not computed)", "provenance": _prov([], [], None, "dE0 = 0 by symmetry")}]
    rungs = []
    if tr.driving_force == "fragments":
        for label, d in tr.donor_sets.items():
            a = tr.acceptor_sets[label]
            pair = [d["reactant_at_reactant"], d["product_at_product"], a["reactant_at_reactant"], a["product_at_product"]]
            if any(r.status.word != "ok" for r in pair):
                continue
            for key, level, rank in _common_levels(pair):
                value = exchange.fragment_driving_force_kj_mol(*(r.energies_hartree[key] for r in pair))
                rungs.append({"source": "fragments", "set": label, "energy": key, "level_of_theory": level,
                              "rank": rank, "value_kj_mol": value,
                              "provenance": _prov([project.label(r) for r in pair], [], level, FORMULA_FRAGMENTS)})
        return rungs
    s0, s1 = project.states[tr.initial_state], project.states[tr.final_state]
    for key, level, rank in _common_levels([s0.geometry, s1.geometry]):
        value = _kj(s1.geometry.energies_hartree[key] - s0.geometry.energies_hartree[key])
        rungs.append({"source": "states", "energy": key, "level_of_theory": level, "rank": rank, "value_kj_mol": value,
                      "provenance": _prov([project.label(s0.geometry), project.label(s1.geometry)],
                                          [s0.name, s1.name], level,
                                          "dE0 = E(final) - E(initial), electronic energies of the geometry jobs")})
    return rungs


def _quoted(rungs: list[dict]) -> dict | None:
    if not rungs:
        return None
    best = max(rungs, key=lambda r: r["rank"])  # first of equal rank: manifest order
    return best


def _pair_atoms(project, tr, rec) -> tuple[list[int], list[int], str]:
    """Donor and acceptor atoms (0-based) of a dimer record, and how they were found."""
    if tr.donor_site is not None:
        return (list(project.sites[tr.donor_site]), list(project.sites[tr.acceptor_site]),
                f"sites {tr.donor_site} and {tr.acceptor_site}")
    frags = fragments.fragments(rec.elements, rec.coordinates_angstrom)
    if len(frags) != 2:
        raise cp.CouplingError(f"'{project.label(rec)}' holds {len(frags)} molecules by its bonds, not two; "
                               "name donor_site and acceptor_site in the transfer")
    return frags[0], frags[1], "the two molecules found by bonds (atoms " + \
        f"{frags[0][0] + 1}-{frags[0][-1] + 1} and {frags[1][0] + 1}-{frags[1][-1] + 1})"


def _excited_root(c, rec, axis) -> tuple[int, str, float | None]:
    xs = rec.excited_states
    if c.root is not None:
        return c.root - 1, f"root {c.root}, as the manifest names it", None
    pick = cp.charge_resonance_root([x.oscillator_strength for x in xs], [x.transition_dipole_au for x in xs], axis)
    return pick["index"], pick["reason"], pick["cosine"]


def _coupling_entry(project, tr, c) -> dict:
    """One coupling route of a transfer: value, separation, and how it was obtained."""
    if c.route == "value":
        return {"route": "value", "value_cm1": c.coupling_cm1, "separation_angstrom": c.separation_angstrom,
                "provenance": _prov([], [], "entered in the manifest", "entered in the manifest", source=c.source,
                                    note=c.note)}
    rec = c.record
    if rec.status.word != "ok":
        raise cp.CouplingError(f"'{c.file_label}' did not finish normally ({rec.status.word})")
    donor, acceptor, how = _pair_atoms(project, tr, rec)
    xyz = rec.coordinates_angstrom
    entry = {"route": c.route, "separation_angstrom": fragments.separation_angstrom(xyz, donor, acceptor),
             "separation_from": how}
    level = rec.level.label()
    if c.route == "orbital-splitting":
        orb = rec.orbitals
        pair = cp.frontier_orbitals(orb.energies_hartree[0], orb.homo_indices[0], tr.carrier)
        entry.update(value_cm1=cp.koopmans_coupling_cm1(pair["splitting_hartree"]), orbitals=pair["names"],
                     orbital_energies_hartree=pair["energies_hartree"],
                     splitting_cm1=abs(pair["splitting_hartree"]) * u.HARTREE_CM1)
        formula = (f"H_ab = [e({pair['names'][1]}) - e({pair['names'][0]})] / 2 of the neutral dimer, Koopmans' "
                   f"theorem (Koopmans 1934) for a {tr.carrier} (Bredas et al., Chem. Rev. 2004, 104, 4971)")
    else:
        axis = fragments.axis_between(xyz, donor, acceptor)
        idx, why, cos = _excited_root(c, rec, axis)
        x = rec.excited_states[idx]
        entry.update(root=idx + 1, root_reason=why, excitation_cm1=x.energy_cm1, excitation_ev=x.energy_ev,
                     oscillator_strength=x.oscillator_strength, axis_cosine=cos)
        method = getattr(rec.level, "excited_method", None) or ("TDDFT" if rec.level.functional else "excited states")
        level = f"{method} {level}"
        if c.route == "charge-resonance":
            entry["value_cm1"] = cp.coupling_from_charge_resonance_cm1(x.energy_cm1)
            formula = (f"H_ab = E_CR / 2, {why} (Newton, Chem. Rev. 1991, 91, 767; Brunschwig, Creutz, Sutin, "
                       "Chem. Soc. Rev. 2002, 31, 168)")
        else:
            if x.transition_dipole_au is None:
                raise cp.CouplingError(f"root {idx + 1} of '{c.file_label}' has no printed transition dipole")
            if c.dipole_difference_au is None:
                raise cp.CouplingError(f"'{c.file_label}' prints no excited-state dipoles; give "
                                       "dipole_difference_au with its dipole_difference_source")
            mu12 = abs(sum(m * a for m, a in zip(x.transition_dipole_au, axis)))
            entry.update(value_cm1=cp.gmh_coupling_cm1(mu12, c.dipole_difference_au, x.energy_cm1),
                         transition_dipole_axis_au=mu12, dipole_difference_au=c.dipole_difference_au,
                         dipole_difference_source=c.dipole_difference_source)
            formula = ("H_ab = mu_12 dE_12 / sqrt(dmu_12^2 + 4 mu_12^2), mu_12 along the stacking axis, "
                       f"{why} (Cave & Newton, Chem. Phys. Lett. 1996, 249, 15)")
    entry["provenance"] = _prov([c.file_label], [], level, formula, source=c.source, note=c.note)
    return entry


def _scans(points: list[dict]) -> list[dict]:
    """Coupling points grouped by route and level; a fit where three or more separations exist."""
    groups: dict[tuple, list[dict]] = {}
    for p in points:
        if p.get("separation_angstrom") is not None:
            groups.setdefault((p["route"], p["provenance"]["level_of_theory"]), []).append(p)
    out = []
    for (route, level), pts in groups.items():
        pts = sorted(pts, key=lambda p: p["separation_angstrom"])
        rows = [{"separation_angstrom": p["separation_angstrom"], "value_cm1": p["value_cm1"],
                 "files": p["provenance"]["files"]} for p in pts]
        scan = {"route": route, "level_of_theory": level, "points": rows, "fit": None, "fit_note": None}
        try:
            scan["fit"] = cp.exponential_decay_fit([r["separation_angstrom"] for r in rows],
                                                   [r["value_cm1"] for r in rows])
            scan["fit"]["formula"] = ("H_ab(R) = H_0 exp(-beta (R - R_0) / 2), least squares on ln H_ab; "
                                      "errors are 1-sigma standard errors")
        except cp.CouplingError as exc:
            scan["fit_note"] = str(exc)
        if len(rows) > 1 or scan["fit"]:
            out.append(scan)
    return out


def _radius(project, tr, side: str) -> tuple[float | None, str]:
    given = getattr(tr.solvent, f"{side}_radius_angstrom")
    if given is not None:
        return given, "given in the manifest"
    sets = tr.donor_sets if side == "donor" else tr.acceptor_sets
    rec = next((s["reactant_at_reactant"] for s in sets.values()), None)
    if rec is not None and rec.elements:
        return (fragments.volume_sphere_radius_angstrom(rec.elements, rec.coordinates_angstrom),
                f"sphere of the van der Waals volume (radii of Bondi 1964) of '{project.label(rec)}'")
    for c in tr.couplings:
        if c.record is not None and c.record.elements:
            d, a, how = _pair_atoms(project, tr, c.record)
            atoms = d if side == "donor" else a
            el = [c.record.elements[i] for i in atoms]
            xyz = [c.record.coordinates_angstrom[i] for i in atoms]
            return (fragments.volume_sphere_radius_angstrom(el, xyz),
                    f"sphere of the van der Waals volume (radii of Bondi 1964) of the {side} in '{c.file_label}' ({how})")
    return None, "no geometry of the molecule"


def _solvent_entry(project, tr, separations: list[float]) -> dict | None:
    sv = tr.solvent
    if sv is None:
        return None
    a_d, how_d = _radius(project, tr, "donor")
    a_a, how_a = _radius(project, tr, "acceptor")
    entry = {"name": sv.name, "refractive_index": sv.refractive_index, "optical_dielectric": sv.refractive_index ** 2,
             "static_dielectric": sv.static_dielectric, "source": sv.source, "donor_radius_angstrom": a_d,
             "acceptor_radius_angstrom": a_a, "radius_method": {"donor": how_d, "acceptor": how_a},
             "formula": "lambda_out = e^2 / (4 pi eps_0) (1/(2 a_D) + 1/(2 a_A) - 1/R) (1/n^2 - 1/eps_s) "
                        "(Marcus, J. Chem. Phys. 1956, 24, 966)", "points": []}
    if a_d is None or a_a is None:
        return entry
    for r in sorted(set(separations)):
        lam = solvent.two_sphere_reorganization_kj_mol(a_d, a_a, r, sv.refractive_index ** 2, sv.static_dielectric)
        entry["points"].append({"separation_angstrom": r, "value_kj_mol": lam,
                                "spheres_overlap": solvent.spheres_touch(a_d, a_a, r)})
    return entry


_NO_MODE_TEXT = "(the reactant has no frequency job with normal modes that project onto the product)"


def _rates(tr, points: list[dict], lam: dict | None, dg: dict | None, sol: dict | None, t: float) -> list[dict]:
    """Golden-rule (nonadiabatic Marcus) rate at each coupling point, with lambda_in + lambda_out."""
    if lam is None or dg is None:
        return []
    out_by_r = {p["separation_angstrom"]: p for p in (sol or {}).get("points", [])}
    rows = []
    for p in points:
        r = p.get("separation_angstrom")
        lam_out = out_by_r.get(r, {}).get("value_kj_mol") if r is not None else None
        lam_total = lam["value_kj_mol"] + (lam_out or 0.0)
        rate = marcus.marcus_nonadiabatic_rate_per_s(p["value_cm1"], lam_total, dg["value_kj_mol"], t)
        tst = marcus.eyring_rate_per_s(marcus.marcus_barrier_kj_mol(lam_total, dg["value_kj_mol"]), t)
        kappa = rate / tst if tst > 0 else None
        v = applicability.golden_rule_verdict(p["value_cm1"], lam_total, t, tr.nuclear_frequency_cm1, kappa)
        if tr.nuclear_frequency_cm1 is None:  # say what a transfer can add to be judged
            v["note"] = v["note"].replace(_NO_MODE_TEXT, "(give nuclear_frequency_cm1 and its source in the transfer)")
        ratio = next(c["value"] for c in v["criteria"] if c["criterion"] != "nonadiabatic_passage")
        where = (f"the {tr.carrier or 'charge'} is shared by both molecules (Robin-Day class III): no hopping rate "
                 "applies; " if ratio is not None and ratio >= applicability.MAX_COUPLING_RATIO else "")
        rows.append({
            "route": p["route"], "level_of_theory": p["provenance"]["level_of_theory"], "separation_angstrom": r,
            "coupling_cm1": p["value_cm1"], "reorganization_inner_kj_mol": lam["value_kj_mol"],
            "reorganization_outer_kj_mol": lam_out, "reorganization_total_kj_mol": lam_total,
            "delta_e0_kj_mol": dg["value_kj_mol"], "temperature_k": t, "rate_per_s": rate,
            "ratio_2hab_over_lambda": ratio, "effective_kappa": kappa, "holds": v["valid"], "validity": v,
            "verdict": where + v["note"],
        })
    return rows


#: Routes at one separation that differ by more than this factor are pointed out (common practice, no source).
ROUTE_DISAGREEMENT_FACTOR = 2.0


def _disagreements(who: str, points: list[dict]) -> list[str]:
    """Sentences for separations where the coupling routes differ by more than the factor above."""
    by_r: dict[float, list[dict]] = {}
    for p in points:
        if p.get("separation_angstrom") is not None and p.get("value_cm1"):
            by_r.setdefault(round(p["separation_angstrom"], 2), []).append(p)
    out = []
    for r, ps in sorted(by_r.items()):
        lo, hi = min(ps, key=lambda p: p["value_cm1"]), max(ps, key=lambda p: p["value_cm1"])
        if hi["value_cm1"] > ROUTE_DISAGREEMENT_FACTOR * lo["value_cm1"]:
            out.append(f"At R = {r:.2f} A the {who} coupling routes disagree by a factor of "
                       f"{hi['value_cm1'] / lo['value_cm1']:.1f}: {hi['route']} ({hi['provenance']['level_of_theory']}) "
                       f"gives {hi['value_cm1']:.0f} cm-1, {lo['route']} ({lo['provenance']['level_of_theory']}) "
                       f"{lo['value_cm1']:.0f} cm-1.")
    return out


def _statements(tr, lam: dict | None, dg: dict | None, scans: list[dict], points: list[dict]) -> list[str]:
    who = tr.carrier or "charge"
    kind = "self-exchange" if tr.kind == "self-exchange" else "cross"
    article = "an" if who[0] in "aeiou" else "a"
    out = [f"{who.capitalize()} transfer ({kind}); the carrier is {article} {who} because {tr.carrier_reason}."
           if tr.carrier else f"The carrier could not be named: {tr.carrier_reason}."]
    if lam is not None:
        out.append(f"The {who}'s inner-sphere reorganization energy is {lam['value_kj_mol']:.1f} kJ/mol at "
                   f"{lam['level_of_theory']} (four-point set '{lam['set']}', the highest rung).")
    if dg is not None:
        out.append("The driving force is zero by symmetry (stated, not computed)." if dg["source"] == "symmetry" else
                   f"The electronic driving force of the {who} transfer is {dg['value_kj_mol']:.1f} kJ/mol at "
                   f"{dg['level_of_theory']} (electronic energies, no thermal terms).")
    for s in scans:
        if s["fit"]:
            f = s["fit"]
            out.append(f"The {who} coupling ({s['route']}, {s['level_of_theory']}) decays with "
                       f"beta = {f['beta_per_angstrom']:.2f} ± {f['beta_error_per_angstrom']:.2f} per angstrom "
                       f"over {f['n_points']} separations.")
    return out + _disagreements(who, points)


#: Coupling routes in the order a transfer's headline rate prefers them: routes from the dimer's
#: orbitals or state dipoles before the raw charge-resonance gap, which also holds the exchange and
#: polarization of the charged dimer (common practice, no source).
HEADLINE_ROUTE_PREFERENCE = ("gmh", "orbital-splitting", "charge-resonance", "value")

_FAILURE_WORDS = {
    "two_hab_over_lambda": "2H_ab/lambda >= 1 (a single shared minimum, class III: no hop between two sites)",
    "kappa_at_most_one": "the effective transmission coefficient exceeds 1 (the coupling is too large for the "
                         "golden-rule formula)",
    "nonadiabatic_passage": "the Landau-Zener parameter shows adiabatic passage",
}


def _headline(rates: list[dict], who: str) -> tuple[dict | None, str]:
    """(headline rate, reason): the golden-rule rate that holds, by HEADLINE_ROUTE_PREFERENCE and then the
    shortest separation; else null and why no coupling point gives a rate."""
    if not rates:
        return None, "no golden-rule rate was computed (a reorganization energy, driving force or coupling is missing)"
    valid = [r for r in rates if r["validity"]["valid"]]
    if valid:
        def rank(r):
            route = r["route"]
            order = HEADLINE_ROUTE_PREFERENCE.index(route) if route in HEADLINE_ROUTE_PREFERENCE else len(HEADLINE_ROUTE_PREFERENCE)
            return order, r.get("separation_angstrom") or 0.0
        best = min(valid, key=rank)
        where = f" at R = {best['separation_angstrom']:.2f} A" if best.get("separation_angstrom") is not None else ""
        return best, (f"the golden-rule rate holds for {len(valid)} of {len(rates)} coupling points; quoted: the "
                      f"{best['route']} coupling{where} (routes preferred in the order "
                      f"{', '.join(HEADLINE_ROUTE_PREFERENCE)}, then the shortest separation)")
    counts: dict[str, int] = {}
    unjudged = 0
    for r in rates:
        for c in r["validity"]["criteria"]:
            if c["holds"] is False:
                counts[c["criterion"]] = counts.get(c["criterion"], 0) + 1
            elif c["holds"] is None:
                unjudged += 1
    parts = [f"at {n} of {len(rates)} points {_FAILURE_WORDS.get(k, k)}" for k, n in counts.items()]
    if unjudged:
        parts.append("without a nuclear frequency the Landau-Zener regime cannot be judged")
    return None, (f"no golden-rule {who}-hopping rate holds at any of the {len(rates)} coupling points: "
                  + "; ".join(parts))


def transfer_entry(project, tr, temperature_k: float) -> dict:
    """The result dict of one bound transfer (docs/dossier-json.md, `transfers`)."""
    lam_rungs, missing = _lambda_rungs(project, tr)
    dg_rungs = _driving_rungs(project, tr)
    points = []
    for c in tr.couplings:
        try:
            points.append(_coupling_entry(project, tr, c))
        except DossierError as exc:
            missing.append({"parameter": "coupling", "route": c.route, "file": c.file_label, "reason": str(exc)})
    lam, dg = _quoted(lam_rungs), _quoted(dg_rungs)
    scans = _scans(points)
    sol = _solvent_entry(project, tr, [p["separation_angstrom"] for p in points
                                       if p.get("separation_angstrom") is not None])
    rates = _rates(tr, points, lam, dg, sol, temperature_k)
    head, head_reason = _headline(rates, tr.carrier or "charge")
    statements = _statements(tr, lam, dg, scans, points)
    statements.append((f"Headline: k = {head['rate_per_s']:.2g} s-1 at {temperature_k:g} K ({head_reason})."
                       if head else f"No rate constant is quoted: {head_reason}."))
    return {
        "name": tr.name, "kind": tr.kind, "carrier": tr.carrier, "carrier_reason": tr.carrier_reason,
        "donor_site": tr.donor_site, "acceptor_site": tr.acceptor_site, "note": tr.note,
        "reorganization_energy": {"rungs": lam_rungs, "quoted": lam,
                                  "choice": "the highest rung (coupled cluster over MP2 over DFT over HF)"},
        "driving_force": {"source": tr.driving_force, "quantity": "electronic energy difference" if
                          tr.driving_force != "symmetry" else "zero by symmetry", "rungs": dg_rungs, "quoted": dg},
        "couplings": points, "scans": scans, "solvent": sol,
        "rates": rates, "headline_rate": head, "headline_reason": head_reason, "missing": missing,
        "nuclear_frequency": ({"value_cm1": tr.nuclear_frequency_cm1, "source": tr.nuclear_frequency_source}
                              if tr.nuclear_frequency_cm1 is not None else None),
        "statements": statements,
    }


def transfer_entries(project, temperature_k: float) -> list[dict]:
    """Every transfer of a bound project (an empty list when the manifest has none)."""
    return [transfer_entry(project, tr, temperature_k) for tr in getattr(project, "transfers", [])]
