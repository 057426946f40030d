"""Electronic coupling H_ab between two molecules: routes that need no transition state, and the
distance dependence of H_ab. Small pure functions on numbers and arrays; each docstring names its
published source. Energies in hartree or cm-1 as the names say, dipoles in e bohr, lengths in
angstrom; constants from dossier.units only.

Routes:

- charge resonance: half the lowest charge-resonance excitation of a symmetric dimer ion
  (the adiabatic gap at a symmetric geometry is 2 |H_ab|);
- orbital splitting: half the splitting of the two frontier orbitals of the neutral symmetric
  dimer (Koopmans' theorem; HOMO/HOMO-1 for a hole, LUMO/LUMO+1 for an electron);
- generalized Mulliken-Hush from the transition dipole, the dipole difference and the gap
  (re-exported from dossier.science.marcus, Cave & Newton 1996);
- a value entered in the manifest with its citation (no function: the number itself).
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from scipy import stats

from dossier import units as u
from dossier.errors import DossierError
from dossier.science.marcus import coupling_half_splitting_cm1, gmh_coupling_cm1, gmh_coupling_from_vectors_cm1

__all__ = [
    "CARRIERS", "AXIS_COSINE_MIN", "CouplingError", "carrier_from_charge", "charge_resonance_root",
    "coupling_from_charge_resonance_cm1", "frontier_orbitals", "koopmans_coupling_cm1", "gmh_coupling_cm1",
    "gmh_coupling_from_vectors_cm1", "exponential_decay_fit", "coupling_at_cm1",
]

CARRIERS = ("hole", "electron")

#: A transition dipole "lies along the stacking axis" when |cos(angle)| >= 0.9 (about 26 degrees;
#: common practice, no source).
AXIS_COSINE_MIN = 0.9


class CouplingError(DossierError):
    """A coupling route cannot be applied to the data given."""


def carrier_from_charge(net_charge: int) -> str | None:
    """The charge carrier of a transfer from the net charge of the pair (or of the dimer):
    positive -> "hole" (a cation: one electron missing), negative -> "electron" (an anion: one
    extra), zero -> None (no carrier to name). Definition, no source needed."""
    if net_charge > 0:
        return "hole"
    if net_charge < 0:
        return "electron"
    return None


def charge_resonance_root(oscillator_strengths: Sequence[float | None],
                          transition_dipoles_au: Sequence[Sequence[float] | None],
                          axis: Sequence[float]) -> dict:
    """The charge-resonance (CR) root of a symmetric dimer ion among its excited states.

    The CR transition takes the carrier from the in-phase to the out-of-phase combination of the
    two monomers' frontier orbitals: its transition dipole is about e R / 2 along the line joining
    the monomers, so it is intense and polarized along the stacking axis (B. Badger,
    B. Brocklehurst, Trans. Faraday Soc. 1969, 65, 2582; Mulliken-Hush picture: N. S. Hush,
    Prog. Inorg. Chem. 1967, 8, 391). Rule: among the roots whose transition dipole lies along
    `axis` (|cos| >= AXIS_COSINE_MIN), the one with the largest oscillator strength (the lowest
    such root on a tie). Returns {"index" (0-based), "cosine", "reason"}; raises CouplingError
    when no root qualifies.
    """
    ax = np.asarray(axis, dtype=float)
    ax = ax / np.linalg.norm(ax)
    best: tuple[float, int, float] | None = None
    for i, (f, mu) in enumerate(zip(oscillator_strengths, transition_dipoles_au)):
        if mu is None or f is None:
            continue
        vec = np.asarray(mu, dtype=float)
        norm = float(np.linalg.norm(vec))
        if norm == 0.0:
            continue
        cos = float(abs(vec @ ax) / norm)
        if cos >= AXIS_COSINE_MIN and (best is None or f > best[0]):
            best = (float(f), i, cos)
    if best is None:
        raise CouplingError("no excited state has a transition dipole along the stacking axis "
                            f"(|cos| >= {AXIS_COSINE_MIN}); the charge-resonance root cannot be named")
    f, i, cos = best
    reason = (f"root {i + 1}: the strongest root (f = {f:.4g}) whose transition dipole lies along the "
              f"stacking axis (|cos| = {cos:.3f} >= {AXIS_COSINE_MIN})")
    return {"index": i, "cosine": cos, "reason": reason}


def coupling_from_charge_resonance_cm1(excitation_cm1):
    """H_ab = E_CR / 2: in a symmetric dimer ion the charge-resonance excitation at the symmetric
    geometry is the adiabatic gap 2 |H_ab| (two-state model; M. D. Newton, Chem. Rev. 1991, 91,
    767; B. S. Brunschwig, C. Creutz, N. Sutin, Chem. Soc. Rev. 2002, 31, 168, E_op = 2 H_ab
    for a delocalized symmetric system)."""
    return coupling_half_splitting_cm1(excitation_cm1)


def frontier_orbitals(orbital_energies_hartree: Sequence[float | None], homo_index: int, carrier: str) -> dict:
    """The two frontier orbitals of a closed-shell neutral dimer that a carrier uses.

    hole: HOMO and HOMO-1; electron: LUMO and LUMO+1 (Koopmans' theorem: T. Koopmans, Physica
    1934, 1, 104; the dimer-splitting scheme: J.-L. Bredas, D. Beljonne, V. Coropceanu, J. Cornil,
    Chem. Rev. 2004, 104, 4971). Returns 0-based indices, names and energies (hartree) and the
    splitting (upper minus lower, hartree).
    """
    if carrier not in CARRIERS:
        raise CouplingError(f"carrier must be one of {', '.join(CARRIERS)}; got {carrier!r}")
    if carrier == "hole":
        pair, names = (homo_index - 1, homo_index), ("HOMO-1", "HOMO")
    else:
        pair, names = (homo_index + 1, homo_index + 2), ("LUMO", "LUMO+1")
    if pair[0] < 0 or pair[1] >= len(orbital_energies_hartree):
        raise CouplingError(f"orbitals {names[0]} and {names[1]} are not among the "
                            f"{len(orbital_energies_hartree)} orbital energies printed")
    lower, upper = (orbital_energies_hartree[k] for k in pair)
    if lower is None or upper is None:
        raise CouplingError(f"the energy of {names[0]} or {names[1]} is not printed")
    return {"indices": list(pair), "names": list(names), "energies_hartree": [float(lower), float(upper)],
            "splitting_hartree": float(upper) - float(lower)}


def koopmans_coupling_cm1(splitting_hartree):
    """H_ab = half the frontier-orbital splitting of the symmetric neutral dimer, cm-1
    (Koopmans' theorem; J.-L. Bredas et al., Chem. Rev. 2004, 104, 4971, eq. for t = dE/2 in a
    symmetric dimer). `splitting_hartree` as returned by frontier_orbitals."""
    return coupling_half_splitting_cm1(np.abs(np.asarray(splitting_hartree, dtype=float)) * u.HARTREE_CM1)


def exponential_decay_fit(separations_angstrom: Sequence[float], couplings_cm1: Sequence[float],
                          reference_angstrom: float | None = None) -> dict:
    """Fit H_ab(R) = H_0 exp(-beta (R - R_0) / 2) by linear least squares on ln H_ab.

    The decay of the coupling with distance, so that k ~ H_ab^2 falls as exp(-beta R)
    (R. A. Marcus, N. Sutin, Biochim. Biophys. Acta 1985, 811, 265, eq. 30; the fit is ordinary
    least squares, scipy.stats.linregress). R_0 defaults to the shortest separation. Returns beta
    (per angstrom) and H_0 (cm-1) with their 1-sigma standard errors, R_0, the point count and
    r^2. Needs at least three distinct separations and positive couplings; with exactly two
    points no uncertainty could be given.
    """
    r = np.asarray(separations_angstrom, dtype=float)
    h = np.abs(np.asarray(couplings_cm1, dtype=float))
    if r.shape != h.shape or r.ndim != 1:
        raise CouplingError("separations and couplings must be two lists of the same length")
    if len(set(r.tolist())) < 3:
        raise CouplingError(f"an exponential fit with an uncertainty needs at least three separations; "
                            f"got {len(set(r.tolist()))}")
    if not np.all(h > 0):
        raise CouplingError("a zero coupling cannot enter a fit of ln H_ab")
    r0 = float(r.min()) if reference_angstrom is None else float(reference_angstrom)
    fit = stats.linregress(r - r0, np.log(h))
    beta = -2.0 * float(fit.slope)
    h0 = float(np.exp(fit.intercept))
    return {"beta_per_angstrom": beta, "beta_error_per_angstrom": 2.0 * float(fit.stderr),
            "h0_cm1": h0, "h0_error_cm1": h0 * float(fit.intercept_stderr), "r0_angstrom": r0,
            "n_points": int(len(r)), "r_squared": float(fit.rvalue**2)}


def coupling_at_cm1(separation_angstrom, h0_cm1: float, beta_per_angstrom: float, r0_angstrom: float):
    """H_ab(R) = H_0 exp(-beta (R - R_0) / 2), cm-1 (the model of exponential_decay_fit)."""
    r = np.asarray(separation_angstrom, dtype=float)
    out = h0_cm1 * np.exp(-beta_per_angstrom * (r - r0_angstrom) / 2.0)
    return float(out) if out.ndim == 0 else out
