"""Molecules inside one structure: fragments by connectivity, their centres, their separation
and size. Pure geometry on element lists and coordinates (angstrom); no I/O.

Used by the transfer analysis (dossier.analysis.transfers): the two molecules of a dimer are
found by bonds, their centroid distance is the separation of a coupling point, and each
molecule's radius feeds the two-sphere solvent model (dossier.science.solvent).
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from dossier import units as u
from dossier.errors import DossierError

#: Covalent radii (angstrom). Source: B. Cordero et al., Dalton Trans. 2008, 2832, table 2
#: (sp3 carbon); from memory, checked against ASE's ase.data.covalent_radii in the tests.
COVALENT_RADII_ANGSTROM = {
    "H": 0.31, "He": 0.28, "Li": 1.28, "Be": 0.96, "B": 0.84, "C": 0.76, "N": 0.71, "O": 0.66, "F": 0.57,
    "Ne": 0.58, "Na": 1.66, "Mg": 1.41, "Al": 1.21, "Si": 1.11, "P": 1.07, "S": 1.05, "Cl": 1.02, "Ar": 1.06,
    "K": 2.03, "Ca": 1.76, "Fe": 1.32, "Co": 1.26, "Ni": 1.24, "Cu": 1.32, "Zn": 1.22, "Ge": 1.20, "As": 1.19,
    "Se": 1.20, "Br": 1.20, "Kr": 1.16, "Ru": 1.46, "Sn": 1.39, "I": 1.39, "Xe": 1.40, "Ir": 1.41, "Pt": 1.36,
}

#: Atoms closer than this factor times the sum of their covalent radii are bonded (common practice,
#: no source; 1.2 is the factor molecular viewers use).
BOND_FACTOR = 1.2

#: van der Waals radii (angstrom). Source: A. Bondi, J. Phys. Chem. 1964, 68, 441, table I;
#: from memory, checked against ASE's ase.data.vdw_radii (also Bondi's values) in the tests.
VDW_RADII_ANGSTROM = {
    "H": 1.20, "He": 1.40, "C": 1.70, "N": 1.55, "O": 1.52, "F": 1.47, "Ne": 1.54, "Si": 2.10, "P": 1.80,
    "S": 1.80, "Cl": 1.75, "Ar": 1.88, "As": 1.85, "Se": 1.90, "Br": 1.85, "Kr": 2.02, "Te": 2.06, "I": 1.98,
    "Xe": 2.16,
}

#: Grid spacing (angstrom) of the van der Waals volume; the volume then agrees with the exact
#: volume of a sphere to well under 1 % (common practice, no source; tested against geometry).
VOLUME_GRID_ANGSTROM = 0.1


class FragmentError(DossierError):
    """A structure cannot be cut into the molecules asked for."""


def _coords(coords: Sequence[Sequence[float]]) -> np.ndarray:
    arr = np.asarray(coords, dtype=float)
    if arr.ndim != 2 or arr.shape[1] != 3:
        raise FragmentError(f"coordinates must be N x 3; got shape {arr.shape}")
    return arr


def fragments(elements: Sequence[str], coords: Sequence[Sequence[float]]) -> list[list[int]]:
    """Connected components of the bond graph (bond: distance < BOND_FACTOR x (r_i + r_j), with
    covalent radii of Cordero et al. 2008), as sorted 0-based atom lists ordered by their
    first atom."""
    xyz = _coords(coords)
    missing = sorted({e for e in elements if e not in COVALENT_RADII_ANGSTROM})
    if missing:
        raise FragmentError(f"no covalent radius for element(s) {', '.join(missing)}")
    radii = np.array([COVALENT_RADII_ANGSTROM[e] for e in elements])
    dist = np.linalg.norm(xyz[:, None, :] - xyz[None, :, :], axis=-1)
    bonded = dist < BOND_FACTOR * (radii[:, None] + radii[None, :])
    seen = np.zeros(len(elements), dtype=bool)
    out: list[list[int]] = []
    for start in range(len(elements)):
        if seen[start]:
            continue
        stack, comp = [start], []
        seen[start] = True
        while stack:
            i = stack.pop()
            comp.append(i)
            for j in np.nonzero(bonded[i] & ~seen)[0]:
                seen[j] = True
                stack.append(int(j))
        out.append(sorted(comp))
    return out


def centroid(coords: Sequence[Sequence[float]], atoms: Sequence[int]) -> np.ndarray:
    """Unweighted mean position of the given (0-based) atoms, angstrom."""
    return _coords(coords)[list(atoms)].mean(axis=0)


def separation_angstrom(coords: Sequence[Sequence[float]], atoms_a: Sequence[int], atoms_b: Sequence[int]) -> float:
    """Distance between the centroids of two atom groups, angstrom (for a cofacial stack: the
    plane-to-plane distance)."""
    return float(np.linalg.norm(centroid(coords, atoms_b) - centroid(coords, atoms_a)))


def axis_between(coords: Sequence[Sequence[float]], atoms_a: Sequence[int], atoms_b: Sequence[int]) -> np.ndarray:
    """Unit vector from the centroid of group a to that of group b (the stacking axis)."""
    d = centroid(coords, atoms_b) - centroid(coords, atoms_a)
    norm = float(np.linalg.norm(d))
    if norm == 0.0:
        raise FragmentError("the two atom groups have the same centroid; no axis between them")
    return d / norm


def van_der_waals_volume_angstrom3(elements: Sequence[str], coords: Sequence[Sequence[float]],
                                   spacing_angstrom: float = VOLUME_GRID_ANGSTROM) -> float:
    """Volume of the union of the atoms' van der Waals spheres (Bondi 1964 radii), angstrom^3,
    counted on a cubic grid of the given spacing (cell centres inside any sphere)."""
    xyz = _coords(coords)
    missing = sorted({e for e in elements if e not in VDW_RADII_ANGSTROM})
    if missing:
        raise FragmentError(f"no van der Waals radius for element(s) {', '.join(missing)}")
    radii = np.array([VDW_RADII_ANGSTROM[e] for e in elements])
    lo = (xyz - radii[:, None]).min(axis=0)
    hi = (xyz + radii[:, None]).max(axis=0)
    axes = [np.arange(lo[k] + spacing_angstrom / 2, hi[k], spacing_angstrom) for k in range(3)]
    gx, gy = np.meshgrid(axes[0], axes[1], indexing="ij")
    plane = np.stack([gx.ravel(), gy.ravel()], axis=1)
    count = 0
    for z in axes[2]:  # one z-slab at a time keeps memory small for large molecules
        inside = np.zeros(len(plane), dtype=bool)
        for (x, y, zc), r in zip(xyz, radii):
            dz2 = (z - zc) ** 2
            if dz2 >= r * r:
                continue
            inside |= (plane[:, 0] - x) ** 2 + (plane[:, 1] - y) ** 2 < r * r - dz2
        count += int(inside.sum())
    return count * spacing_angstrom**3


def volume_sphere_radius_angstrom(elements: Sequence[str], coords: Sequence[Sequence[float]]) -> float:
    """Radius of the sphere whose volume is the molecule's van der Waals volume,
    a = (3 V / 4 pi)^(1/3), angstrom (the molecule as one sphere, as the two-sphere model of
    R. A. Marcus, J. Chem. Phys. 1956, 24, 966 treats each reactant)."""
    v = van_der_waals_volume_angstrom3(elements, coords)
    return float((3.0 * v / (4.0 * u.PI)) ** (1.0 / 3.0))
