"""Where the electron sits, and how we know: population, geometric and orbital indicators,
normal-mode evidence at a transition state, and proton-shift detection along a pathway.

Pure functions on Calculation records (dossier.records) and the project's atom groups
(``sites``: name -> 0-based atom indices). Nothing here reads a file.

Indicators (each reported with the site it points to; "delocalized" when it points nowhere):

- populations: spin and charge summed per site, for every scheme the record holds
  (Mulliken, Löwdin, ...). The spin density marks the unpaired (extra) electron of a radical
  ion; the localization index is |rho_A - rho_B| / (|rho_A| + |rho_B|) over the two redox
  sites (1 = fully on one site, 0 = shared equally; common practice, no source).
- geometry: bond lengths inside each site and from each site to the bridging atoms.
  The indicator used to decide is stated in the result (`indicator`):
  * "internal-bonds" for polyatomic sites: the extra electron enters an orbital that is
    antibonding inside the site, so the site with the longer internal bonds carries it.
    For a nitro group on an arene that is the N–O bonds (about 1.22 A in nitrobenzene,
    about 1.26-1.27 A in its radical anion; from memory), while the C–N bond to the ring
    *shortens* (quinoidal C=N character), so the common "longer bridging bonds" rule
    would point the wrong way for nitroarenes; the bridging bonds are still reported.
  * "bridging-bonds" for single-atom sites (a metal centre): the site with the longer bonds
    to the bridge carries the extra electron (common practice, no source).
- orbital: the singly occupied orbital's Mulliken share per site,
  share_A = sum_{mu in A} c_mu (S c)_mu (R. S. Mulliken, J. Chem. Phys. 1955, 23, 1833),
  when the record holds MO coefficients, the overlap matrix and basis-function atoms.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from dossier.science import geometry
from dossier.science.couplings import carrier_from_charge
from dossier.records import Calculation

#: Covalent radii (angstrom) for bond detection: B. Cordero et al., Dalton Trans. 2008, 2832, Table 2
#: (sp3 C value for C). Two atoms are bonded when d < BOND_TOLERANCE x (r_i + r_j) (common practice).
COVALENT_RADII_ANGSTROM = {
    "H": 0.31, "He": 0.28, "Li": 1.28, "Be": 0.96, "B": 0.84, "C": 0.76, "N": 0.71, "O": 0.66, "F": 0.57,
    "Ne": 0.58, "Na": 1.66, "Mg": 1.41, "Al": 1.21, "Si": 1.11, "P": 1.07, "S": 1.05, "Cl": 1.02, "Ar": 1.06,
    "K": 2.03, "Ca": 1.76, "Ti": 1.60, "V": 1.53, "Cr": 1.39, "Mn": 1.39, "Fe": 1.32, "Co": 1.26, "Ni": 1.24,
    "Cu": 1.32, "Zn": 1.22, "Ga": 1.22, "Ge": 1.20, "As": 1.19, "Se": 1.20, "Br": 1.20, "Kr": 1.16,
    "Ru": 1.46, "Rh": 1.42, "Pd": 1.39, "Ag": 1.45, "I": 1.39, "Os": 1.44, "Ir": 1.41, "Pt": 1.36, "Au": 1.36,
}
BOND_TOLERANCE = 1.2
#: Thresholds below which an indicator calls the electron shared ("delocalized"): localization index,
#: bond-length asymmetry, charge difference between the sites. Common practice, no source.
DELOCALIZED_INDEX = 0.2
DELOCALIZED_BOND_ASYMMETRY_ANGSTROM = 0.01
DELOCALIZED_CHARGE_DIFFERENCE = 0.1  # e

HYDROGENS = ("H", "D", "T")


# ---------------------------------------------------------------------------
# Small pieces
# ---------------------------------------------------------------------------
def sum_by_site(values: Sequence[float], sites: Mapping[str, Sequence[int]]) -> dict[str, float]:
    """Per-atom values (populations) summed over each site's atoms (0-based indices)."""
    return {name: float(sum(values[i] for i in atoms)) for name, atoms in sites.items()}


def localization_index(rho_a: float, rho_b: float) -> float | None:
    """|rho_A - rho_B| / (|rho_A| + |rho_B|): 1 localized on one site, 0 shared equally.
    Common practice, no source. None when both are zero."""
    den = abs(rho_a) + abs(rho_b)
    return None if den == 0 else float(abs(rho_a - rho_b) / den)


def bonds(elements: Sequence[str], coords: Sequence[Sequence[float]]) -> list[tuple[int, int, float]]:
    """Covalent bonds (i < j, 0-based, length in angstrom) by the covalent-radius criterion."""
    dm = geometry.distance_matrix(coords)
    radii = [COVALENT_RADII_ANGSTROM.get(e.capitalize(), 1.5) for e in elements]
    out = []
    n = len(elements)
    for i in range(n):
        for j in range(i + 1, n):
            if dm[i, j] < BOND_TOLERANCE * (radii[i] + radii[j]):
                out.append((i, j, float(dm[i, j])))
    return out


def _atom_label(elements: Sequence[str], i: int) -> str:
    return f"{elements[i]}{i + 1}"


def _pick_two(values: Mapping[str, float], names: Sequence[str]) -> list[str]:
    """The two redox sites compared: the named pair, or the two with the largest |value|."""
    names = [n for n in names if n in values]
    if len(names) <= 2:
        return names
    return sorted(names, key=lambda n: (-abs(values[n]), n))[:2]


# ---------------------------------------------------------------------------
# Indicators
# ---------------------------------------------------------------------------
def population_indicators(calc: Calculation, sites: Mapping[str, Sequence[int]], redox_sites: Sequence[str]) -> dict:
    """One entry per population scheme in the record: spin and charge per site, the index, the site."""
    schemes: dict[str, Any] = {}
    names = sorted(set(calc.spin_populations) | set(calc.charges))
    n = calc.n_atoms
    for scheme in names:
        spin = calc.spin_populations.get(scheme)
        charge = calc.charges.get(scheme)
        entry: dict[str, Any] = {}
        if spin is not None and len(spin) == n:
            entry["spin_by_site"] = sum_by_site(spin, sites)
        if charge is not None and len(charge) == n:
            entry["charge_by_site"] = sum_by_site(charge, sites)
        if not entry:
            continue
        site, index, basis = None, None, None
        if "spin_by_site" in entry:
            pair = _pick_two(entry["spin_by_site"], redox_sites)
            if len(pair) == 2:
                a, b = (entry["spin_by_site"][p] for p in pair)
                index = localization_index(a, b)
                basis = "spin"
                if index is not None:
                    site = "delocalized" if index < DELOCALIZED_INDEX else (pair[0] if abs(a) > abs(b) else pair[1])
        elif "charge_by_site" in entry and calc.charge:
            pair = _pick_two(entry["charge_by_site"], redox_sites)
            if len(pair) == 2:
                a, b = (entry["charge_by_site"][p] for p in pair)
                basis = "charge"
                # the site whose charge is closer to the excess charge's sign carries the electron (hole)
                sign = -1.0 if calc.charge < 0 else 1.0
                site = pair[0] if sign * a > sign * b else pair[1]
        if "charge_by_site" in entry:
            pair = _pick_two(entry["charge_by_site"], redox_sites)
            if len(pair) == 2:
                qa, qb = (entry["charge_by_site"][p] for p in pair)
                entry["charge_difference"] = float(qa - qb)
                if calc.charge:
                    sign = -1.0 if calc.charge < 0 else 1.0
                    entry["charge_site_of_electron"] = ("delocalized" if abs(qa - qb) < DELOCALIZED_CHARGE_DIFFERENCE
                                                        else pair[0] if sign * qa > sign * qb else pair[1])
        entry["localization_index"] = index
        entry["index_basis"] = basis
        entry["site_of_electron"] = site
        schemes[scheme] = entry
    return schemes


def geometric_indicator(elements: Sequence[str], coords: Sequence[Sequence[float]],
                        sites: Mapping[str, Sequence[int]], redox_sites: Sequence[str],
                        bridge_atoms: Sequence[int] | None = None) -> dict | None:
    """Bond lengths inside each redox site and from it to the bridging atoms; which site they mark.

    Bridging atoms are the given bridge atoms, or else every atom outside the redox sites.
    See the module docstring for which lengths decide and why.
    """
    redox = [s for s in redox_sites if s in sites]
    if len(redox) < 2 or not elements:
        return None
    in_redox = {i for s in redox for i in sites[s]}
    bridge = set(bridge_atoms) if bridge_atoms else set(range(len(elements))) - in_redox
    all_bonds = bonds(elements, coords)
    internal: dict[str, list[tuple[str, float]]] = {s: [] for s in redox}
    bridging: dict[str, list[tuple[str, float]]] = {s: [] for s in redox}
    for i, j, d in all_bonds:
        for s in redox:
            atoms = set(sites[s])
            label = f"{_atom_label(elements, i)}-{_atom_label(elements, j)}"
            if i in atoms and j in atoms:
                internal[s].append((label, d))
            elif (i in atoms and j in bridge) or (j in atoms and i in bridge):
                bridging[s].append((label, d))
    use_internal = all(internal[s] for s in redox)
    mean_int = {s: float(np.mean([d for _, d in internal[s]])) for s in redox if internal[s]}
    mean_br = {s: float(np.mean([d for _, d in bridging[s]])) for s in redox if bridging[s]}
    chosen = mean_int if use_internal else mean_br
    result: dict[str, Any] = {
        "indicator": "internal-bonds" if use_internal else "bridging-bonds",
        "bond_lengths_angstrom": dict(chosen),
        "internal_bond_lengths_angstrom": mean_int,
        "bridging_bond_lengths_angstrom": mean_br,
        "bonds": {s: {"internal": [{"bond": b, "length_angstrom": d} for b, d in internal[s]],
                      "bridging": [{"bond": b, "length_angstrom": d} for b, d in bridging[s]]} for s in redox},
        "site_of_electron": None,
        "asymmetry_angstrom": None,
        "bridging_asymmetry_angstrom": None,
    }
    pair = [s for s in redox if s in chosen][:2] if len(redox) == 2 else sorted(chosen, key=lambda s: -chosen[s])[:2]
    if len(pair) == 2:
        a, b = chosen[pair[0]], chosen[pair[1]]
        result["asymmetry_angstrom"] = float(abs(a - b))
        if abs(a - b) < DELOCALIZED_BOND_ASYMMETRY_ANGSTROM:
            result["site_of_electron"] = "delocalized"
        else:
            result["site_of_electron"] = pair[0] if a > b else pair[1]
    br_pair = [s for s in pair if s in mean_br]
    if len(br_pair) == 2:
        result["bridging_asymmetry_angstrom"] = float(abs(mean_br[br_pair[0]] - mean_br[br_pair[1]]))
    return result


def somo_index(calc: Calculation) -> int | None:
    """0-based index of the singly occupied orbital (the highest alpha orbital) of a doublet, else None."""
    orb = calc.orbitals
    if orb is None or not orb.homo_indices or calc.multiplicity != 2:
        return None
    return int(orb.homo_indices[0])


def orbital_shares(calc: Calculation, sites: Mapping[str, Sequence[int]]) -> dict | None:
    """Mulliken partition of the singly occupied orbital per site (Mulliken, J. Chem. Phys. 1955, 23, 1833).

    share_A = sum_{mu on A} c_mu (S c)_mu; the shares of all atoms sum to 1. None when the record
    lacks coefficients, overlap or basis-function atoms.
    """
    orb = calc.orbitals
    k = somo_index(calc)
    if orb is None or k is None or not orb.coefficients or orb.overlap is None or orb.basis_atoms is None:
        return None
    c = np.asarray(orb.coefficients[0][k], dtype=float)
    s = np.asarray(orb.overlap, dtype=float)
    if s.shape != (c.size, c.size) or len(orb.basis_atoms) != c.size:
        return None
    gross = c * (s @ c)
    norm = float(gross.sum())
    if norm == 0:
        return None
    atoms = np.asarray(orb.basis_atoms)
    per_atom = np.array([gross[atoms == i].sum() for i in range(calc.n_atoms)]) / norm
    shares = sum_by_site(per_atom.tolist(), sites)
    in_sites = {i for v in sites.values() for i in v}
    rest = float(sum(per_atom[i] for i in range(calc.n_atoms) if i not in in_sites))
    return {"somo_index": k, "somo_energy_hartree": float(orb.energies_hartree[0][k]),
            "somo_share_by_site": shares, "share_elsewhere": rest}


def _geometry_note(indicator: str, charge: int | None) -> str:
    """The geometric rule in words, naming the carrier from the charge (cation: hole; anion: electron)."""
    carrier = carrier_from_charge(charge or 0)
    if indicator != "internal-bonds":
        return f"the site with the longer bonds to the bridge carries the {carrier or 'unpaired electron'}"
    if carrier == "hole":
        return ("the hole empties an orbital bonding inside the site, so the site with the longer internal bonds "
                "is taken to carry it")
    if carrier == "electron":
        return "the extra electron lengthens the bonds inside the site; for nitro groups N-O"
    return "the unpaired electron is taken to sit on the site with the longer internal bonds"


def state_localization(calc: Calculation, sites: Mapping[str, Sequence[int]], redox_sites: Sequence[str],
                       bridge_atoms: Sequence[int] | None = None) -> dict:
    """All indicators for one state and their consensus (the `localization` entry of dossier.json).

    Sites with an atom number beyond the record's atoms are left out (and named in the notes);
    without a full set of coordinates there is no geometric indicator.
    """
    notes: list[str] = []
    n = calc.n_atoms
    bad = sorted(name for name, atoms in sites.items() if any(not 0 <= i < n for i in atoms))
    if bad:
        notes.append(f"site(s) {', '.join(bad)} name atoms beyond this structure's {n} atoms: left out")
        sites = {k: v for k, v in sites.items() if k not in bad}
        redox_sites = [r for r in redox_sites if r not in bad]
    if bridge_atoms is not None and any(not 0 <= i < n for i in bridge_atoms):
        bridge_atoms = None
    has_coords = n > 0 and len(calc.coordinates_angstrom) == n
    schemes = population_indicators(calc, sites, redox_sites)
    geom = geometric_indicator(calc.elements, calc.coordinates_angstrom, sites, redox_sites, bridge_atoms) \
        if has_coords else None
    if not has_coords:
        notes.append("no geometric indicator: the record holds no complete set of coordinates")
    orbital = orbital_shares(calc, sites)
    if orbital is not None:
        pair = _pick_two(orbital["somo_share_by_site"], redox_sites)
        if len(pair) == 2:
            a, b = (orbital["somo_share_by_site"][p] for p in pair)
            idx = localization_index(a, b)
            orbital["localization_index"] = idx
            orbital["site_of_electron"] = (None if idx is None else "delocalized" if idx < DELOCALIZED_INDEX
                                           else pair[0] if abs(a) > abs(b) else pair[1])
    else:
        notes.append("no orbital indicator: the record holds no MO coefficients with overlap matrix")
    if not schemes:
        notes.append("no population analysis in the record")
    if geom is not None:
        notes.append(f"geometric indicator: {geom['indicator']} ({_geometry_note(geom['indicator'], calc.charge)})")
    votes: list[tuple[str, str]] = []
    for name, entry in sorted(schemes.items()):
        if entry.get("site_of_electron"):
            votes.append((f"{name} {entry['index_basis']}", entry["site_of_electron"]))
        if entry.get("charge_site_of_electron") and entry.get("index_basis") != "charge":
            votes.append((f"{name} charge", entry["charge_site_of_electron"]))
    if geom and geom.get("site_of_electron"):
        votes.append(("geometry", geom["site_of_electron"]))
    if orbital and orbital.get("site_of_electron"):
        votes.append(("orbital", orbital["site_of_electron"]))
    consensus, agree = None, None
    if votes:
        counts: dict[str, int] = {}
        for _, v in votes:
            counts[v] = counts.get(v, 0) + 1
        top = max(counts.values())
        leaders = sorted(v for v, c in counts.items() if c == top)
        consensus = leaders[0] if len(leaders) == 1 else None
        agree = len(counts) == 1
        if not agree:
            notes.append("indicators disagree: " + ", ".join(f"{k} -> {v}" for k, v in votes))
    return {"schemes": schemes, "geometry": geom, "orbital": orbital, "site_of_electron": consensus,
            "indicators_agree": agree, "votes": [{"indicator": k, "site": v} for k, v in votes], "notes": notes}


# ---------------------------------------------------------------------------
# Transition-state normal mode and proton shifts
# ---------------------------------------------------------------------------
def _group_shares(per_atom: np.ndarray, elements, sites: Mapping[str, Sequence[int]],
                  bridge_atoms: Sequence[int] | None) -> dict:
    per_atom = per_atom / float(per_atom.sum())
    shares = {name: float(per_atom[list(atoms)].sum()) for name, atoms in sites.items()}
    if bridge_atoms is not None and "bridge" not in shares:
        shares["bridge"] = float(per_atom[list(bridge_atoms)].sum())
    hydrogens = [i for i, e in enumerate(elements) if e.capitalize() in HYDROGENS]
    in_sites = {i for v in sites.values() for i in v} | set(bridge_atoms or [])
    return {"share_by_site": shares, "hydrogen_share": float(per_atom[hydrogens].sum()) if hydrogens else 0.0,
            "share_elsewhere": float(sum(per_atom[i] for i in range(len(per_atom)) if i not in in_sites))}


def imaginary_mode_shares(calc: Calculation, sites: Mapping[str, Sequence[int]],
                          bridge_atoms: Sequence[int] | None = None,
                          masses_amu: Sequence[float] | None = None) -> dict | None:
    """Share of the imaginary mode's squared Cartesian displacement (as printed) per site,
    on the bridge, on all hydrogens, and elsewhere. None without an imaginary mode with displacements.
    With ``masses_amu`` also the mass-weighted shares m_i |d_i|^2 / sum_j m_j |d_j|^2 (key
    ``mass_weighted``): the share of the mode's kinetic energy each group carries, which does not
    depend on how a program normalizes its printed vectors (the mass-weighted normal coordinate
    l = M^1/2 d, E. B. Wilson, J. C. Decius, P. C. Cross, Molecular Vibrations, 1955; from memory).
    (Analysis of a normal-mode vector by atom groups; common practice, no source.)"""
    vib = calc.vibrations
    if vib is None or not vib.displacements or vib.n_imaginary == 0:
        return None
    k = int(np.argmin(vib.wavenumbers_cm1))
    if k >= len(vib.displacements):
        return None
    d = np.asarray(vib.displacements[k], dtype=float)
    if d.shape != (calc.n_atoms, 3):
        return None
    per_atom = (d**2).sum(axis=1)
    if float(per_atom.sum()) == 0:
        return None
    n = calc.n_atoms
    sites = {k: v for k, v in sites.items() if all(0 <= i < n for i in v)}
    if bridge_atoms is not None and any(not 0 <= i < n for i in bridge_atoms):
        bridge_atoms = None
    out = {"imaginary_cm1": float(vib.wavenumbers_cm1[k]),
           "share_basis": "squared Cartesian displacement as printed",
           **_group_shares(per_atom, calc.elements, sites, bridge_atoms)}
    if masses_amu is not None and len(masses_amu) == n:
        out["mass_weighted"] = {"share_basis": "mass-weighted: m_i |d_i|^2 / sum_j m_j |d_j|^2",
                                **_group_shares(per_atom * np.asarray(masses_amu, dtype=float), calc.elements, sites,
                                                bridge_atoms)}
    return out


def mode_overlap_with_path(ts: Calculation, reactant: Calculation, product: Calculation) -> float | None:
    """|cos| between the imaginary mode and the reactant->product geometry difference, both in the
    TS frame (reactant and product superposed on the TS by Kabsch; dossier.geometry). None if not comparable."""
    vib = ts.vibrations
    if vib is None or not vib.displacements or vib.n_imaginary == 0:
        return None
    if not (geometry.same_atom_order(ts.elements, reactant.elements)
            and geometry.same_atom_order(ts.elements, product.elements)):
        return None
    n = ts.n_atoms
    if n == 0 or any(len(c.coordinates_angstrom) != n for c in (ts, reactant, product)):
        return None
    k = int(np.argmin(vib.wavenumbers_cm1))
    if k >= len(vib.displacements) or np.shape(vib.displacements[k]) != (n, 3):
        return None
    r = geometry.align(reactant.coordinates_angstrom, ts.coordinates_angstrom)
    p = geometry.align(product.coordinates_angstrom, ts.coordinates_angstrom)
    return abs(geometry.displacement_cosine(p - r, vib.displacements[k]))


def proton_shifts(states: Sequence[tuple[str, Calculation]]) -> dict:
    """Each hydrogen's nearest heavy atom in each state of a pathway; a change marks a proton transfer.

    Returns {"proton_transfer": bool | None, "moves": [...], "statement": str}. None when the states
    do not list the same atoms in the same order (no comparison possible).
    """
    names = [n for n, _ in states]
    calcs = [c for _, c in states]
    if not calcs or any(not geometry.same_atom_order(calcs[0].elements, c.elements) for c in calcs[1:]) \
            or any(len(c.coordinates_angstrom) != c.n_atoms for c in calcs):
        return {"proton_transfer": None, "moves": [],
                "statement": "proton shifts not tested: the states do not list the same atoms in the same order"}
    elements = calcs[0].elements
    hydrogens = [i for i, e in enumerate(elements) if e.capitalize() in HYDROGENS]
    moves = []
    for h in hydrogens:
        partners = [geometry.nearest_heavy_atom(c.elements, c.coordinates_angstrom, h) for c in calcs]
        if len(set(partners)) > 1:
            moves.append({"hydrogen": _atom_label(elements, h),
                          "nearest_heavy_atom": {n: (_atom_label(elements, p) if p is not None else None)
                                                 for n, p in zip(names, partners)}})
    if moves:
        text = "; ".join(f"{m['hydrogen']} changes partner ("
                         + ", ".join(f"{k}: {v}" for k, v in m["nearest_heavy_atom"].items()) + ")" for m in moves)
        statement = f"A proton moves along this pathway ({text}): possible proton-coupled electron transfer."
    elif hydrogens:
        carrier = carrier_from_charge(calcs[0].charge or 0) or "electron"
        statement = (f"At this level the {carrier} moves without a proton: every hydrogen keeps its nearest "
                     f"heavy atom in {', '.join(names)}.")
    else:
        statement = "The structures hold no hydrogen: no proton can move."
    return {"proton_transfer": bool(moves), "moves": moves, "statement": statement}
