"""Inner-sphere parameters of a transfer between two molecules from four-point sets (no transition
state): the reorganization energy of each molecule and the electronic driving force from the
molecules' own energies. Pure functions on hartree energies; results in kJ/mol.

A four-point set of one molecule M holds E(X@Y), the energy of M in charge state X at the
optimised geometry of charge state Y, for X, Y in {before, after} the transfer (the manifest
calls them reactant and product).
"""
from __future__ import annotations

import numpy as np

from dossier import units as u


def relaxation_energies_kj_mol(before_at_before_hartree, before_at_after_hartree,
                               after_at_after_hartree, after_at_before_hartree) -> tuple:
    """The two relaxation energies of one molecule, kJ/mol:
    lambda_1 = E(after@before) - E(after@after) and lambda_2 = E(before@after) - E(before@before).
    Source: S. F. Nelsen, S. C. Blackstock, Y. Kim, J. Am. Chem. Soc. 1987, 109, 677 (four-point
    scheme); J.-L. Bredas et al., Chem. Rev. 2004, 104, 4971, eq. 3."""
    l1 = (np.asarray(after_at_before_hartree, dtype=float) - np.asarray(after_at_after_hartree, dtype=float))
    l2 = (np.asarray(before_at_after_hartree, dtype=float) - np.asarray(before_at_before_hartree, dtype=float))
    return float(l1 * u.HARTREE_KJ_MOL), float(l2 * u.HARTREE_KJ_MOL)


def molecule_reorganization_kj_mol(before_at_before_hartree, before_at_after_hartree,
                                   after_at_after_hartree, after_at_before_hartree) -> float:
    """One molecule's share of lambda in a transfer between two molecules, kJ/mol: the mean of its
    two relaxation energies, lambda_M = (lambda_1 + lambda_2) / 2.

    In the two-molecule model the energy of the final diabatic state at the initial geometry less
    its own minimum is lambda_1(D) + lambda_2(A), and the reverse gives lambda_2(D) + lambda_1(A);
    their mean is lambda_D + lambda_A with lambda_M as here. For a self-exchange (D = A) the sum is
    the full four-point value lambda_1 + lambda_2 (Nelsen et al., J. Am. Chem. Soc. 1987, 109,
    677; Bredas et al., Chem. Rev. 2004, 104, 4971, eq. 3)."""
    l1, l2 = relaxation_energies_kj_mol(before_at_before_hartree, before_at_after_hartree,
                                        after_at_after_hartree, after_at_before_hartree)
    return 0.5 * (l1 + l2)


def fragment_driving_force_kj_mol(donor_before_hartree, donor_after_hartree,
                                  acceptor_before_hartree, acceptor_after_hartree) -> float:
    """Electronic driving force of D + A -> D' + A' from the separated molecules at their own
    optimised geometries (each in its charge state before and after), kJ/mol:
    dE0 = [E(D') - E(D)] + [E(A') - E(A)], an adiabatic ionization-energy / electron-affinity
    difference (negative: downhill). Electronic energies only: no zero-point or thermal terms,
    no solvation, no work terms. Energy bookkeeping; definition, no source needed."""
    d = float(donor_after_hartree) - float(donor_before_hartree)
    a = float(acceptor_after_hartree) - float(acceptor_before_hartree)
    return (d + a) * u.HARTREE_KJ_MOL
