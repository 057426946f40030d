"""Symmetric (degenerate) transfers: are reactant and product images of each other, and how the
symmetry numbers of a symmetric transition state enter the site-to-site hop rate.

Pure functions on element lists, coordinates (angstrom) and energies (kJ/mol).
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from scipy.optimize import linear_sum_assignment

#: Reactant and product count as images when, after the best atom matching and superposition (reflection
#: allowed), their RMSD is below this and their electronic energies differ by less than IMAGE_ENERGY_KJ_MOL.
#: Both are common practice, no source (geometry optimizations converge positions to ~1e-3 angstrom and SCF
#: energies to ~1e-6 hartree = 0.003 kJ/mol; a shallow saddle can lie within 0.02 angstrom of its minima).
IMAGE_RMSD_ANGSTROM = 0.005
IMAGE_ENERGY_KJ_MOL = 0.1


def _superpose(a: np.ndarray, b: np.ndarray, reflect: bool) -> tuple[np.ndarray, float]:
    """b superposed on a (Kabsch; W. Kabsch, Acta Cryst. A 1976, 32, 922), optionally mirrored first."""
    b = b * np.array([1.0, 1.0, -1.0]) if reflect else b
    ca, cb = a.mean(axis=0), b.mean(axis=0)
    h = (b - cb).T @ (a - ca)
    u_, _, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u_.T)) or 1.0
    r = vt.T @ np.diag([1.0, 1.0, d]) @ u_.T
    moved = (b - cb) @ r.T + ca
    return moved, float(np.sqrt(((moved - a) ** 2).sum(axis=1).mean()))


def _assign(elements: Sequence[str], cost: np.ndarray) -> np.ndarray:
    """Atom permutation (index into b for each atom of a) minimizing cost within each element."""
    perm = np.empty(len(elements), dtype=int)
    for el in sorted(set(elements)):
        idx = np.array([i for i, e in enumerate(elements) if e == el])
        rows, cols = linear_sum_assignment(cost[np.ix_(idx, idx)])
        perm[idx[rows]] = idx[cols]
    return perm


def best_image_match(elements: Sequence[str], xyz_a, xyz_b) -> tuple[float, np.ndarray]:
    """(RMSD in angstrom, permutation) of the best superposition of b on a over atom permutations within
    each element and proper or improper rotations: start from sorted-distance descriptors, then
    alternate nearest-position matching and Kabsch superposition."""
    a, b = np.asarray(xyz_a, dtype=float), np.asarray(xyz_b, dtype=float)
    da = np.sort(np.linalg.norm(a[:, None] - a[None], axis=-1), axis=1)
    db = np.sort(np.linalg.norm(b[:, None] - b[None], axis=-1), axis=1)
    perm = _assign(elements, np.linalg.norm(da[:, None] - db[None], axis=-1))
    best = (np.inf, perm)
    for reflect in (False, True):
        p = perm
        for _ in range(4):
            moved, rmsd = _superpose(a, b[p], reflect)
            if rmsd < best[0]:
                best = (rmsd, p)
            moved_all = np.empty_like(moved)
            moved_all[p] = moved  # every atom of b under the same superposition
            p_new = _assign(elements, np.linalg.norm(a[:, None] - moved_all[None], axis=-1))
            if np.array_equal(p_new, p):
                break
            p = p_new
    return best


def are_images(elements_a: Sequence[str], xyz_a, elements_b: Sequence[str], xyz_b,
               energy_difference_kj_mol: float | None) -> dict:
    """Whether two structures are images of each other (same atoms, superposable after relabeling atoms of
    one element and a proper or improper rotation, equal electronic energy). Returns {images, rmsd_angstrom,
    energy_difference_kj_mol, reason}."""
    out = {"images": False, "rmsd_angstrom": None, "energy_difference_kj_mol": energy_difference_kj_mol,
           "rmsd_threshold_angstrom": IMAGE_RMSD_ANGSTROM, "energy_threshold_kj_mol": IMAGE_ENERGY_KJ_MOL}
    if sorted(elements_a) != sorted(elements_b) or len(xyz_a) != len(elements_a) or len(xyz_b) != len(elements_b):
        return {**out, "reason": "the two structures have different atoms"}
    if list(elements_a) != list(elements_b):
        return {**out, "reason": "the two structures list their atoms in different orders"}
    rmsd, _ = best_image_match(list(elements_a), xyz_a, xyz_b)
    out["rmsd_angstrom"] = rmsd
    if rmsd > IMAGE_RMSD_ANGSTROM:
        return {**out, "reason": f"best superposition RMSD {rmsd:.3f} angstrom > {IMAGE_RMSD_ANGSTROM} angstrom"}
    if energy_difference_kj_mol is None or abs(energy_difference_kj_mol) > IMAGE_ENERGY_KJ_MOL:
        return {**out, "reason": "the geometries are images but the electronic energies differ by "
                                 f"{energy_difference_kj_mol} kJ/mol"}
    return {**out, "images": True,
            "reason": (f"images: RMSD {rmsd:.4f} angstrom after relabeling equivalent atoms and superposing, "
                       f"electronic energies equal to {abs(energy_difference_kj_mol):.3f} kJ/mol")}


def reaction_path_degeneracy(sigma_reactant: int, sigma_ts: int, chiral_reactant: int = 1, chiral_ts: int = 1) -> float:
    """Reaction-path degeneracy L = sigma_R m_TS / (sigma_TS m_R), the factor by which a rate from partition
    functions without symmetry numbers is multiplied (sigma: rotational symmetry numbers; m: number of
    optical isomers). Source: E. Pollak, P. Pechukas, J. Am. Chem. Soc. 1978, 100, 2984; A. Fernández-Ramos,
    B. A. Ellingson, R. Meana-Pañeda, J. M. C. Marques, D. G. Truhlar, Theor. Chem. Acc. 2007, 118, 813
    (both from memory). Example: H + CH4 -> H2 + CH3, L = 12 / 3 = 4, one per equivalent hydrogen."""
    return float(sigma_reactant) * chiral_ts / (float(sigma_ts) * chiral_reactant)


def degenerate_hop_factor(sigma_reactant: int, sigma_ts: int) -> float:
    """Factor that turns the Eyring rate from free energies with rotational symmetry numbers into the rate of
    one site-to-site hop of a degenerate transfer whose saddle is symmetric (its symmetry operation exchanges
    the reactant and product sides): sigma_TS / sigma_R, 2 for a C2-symmetric saddle between C1/Cs minima.

    Reason: with labeled atoms one saddle manifold joins a given reactant to its image, so
    k_hop = (k_B T / h) Q_TS' / Q_R' with symmetry-number-free partition functions Q'; the free energies
    contain Q = Q' / sigma, so k_hop = (sigma_TS / sigma_R) (k_B T / h) exp(-dG_act / RT). The symmetry-number
    rate of the identity reaction (Pollak & Pechukas 1978, L = sigma_R / sigma_TS applied to Q') counts
    each shared saddle once for both directions. Derivation by counting saddles, after Pollak & Pechukas
    1978 and Fernández-Ramos et al. 2007 (from memory)."""
    return float(sigma_ts) / float(sigma_reactant)


def symmetric_under(xyz, permutation: Sequence[int]) -> float:
    """RMSD (angstrom) of a structure superposed (proper or improper rotation) on itself with its atoms
    relabeled by ``permutation``: ~0 when the permutation is a symmetry operation of the structure."""
    x = np.asarray(xyz, dtype=float)
    p = np.asarray(permutation, dtype=int)
    return min(_superpose(x, x[p], reflect)[1] for reflect in (False, True))
