"""Rigid-molecule properties: atomic masses, principal moments of inertia, point group and
rotational symmetry number from the geometry, as the thermochemistry (dossier.science.thermo)
needs them. The symmetry operations are found by matching atoms of the same element and mass within a tolerance;
the symmetry number is the order of the rotational subgroup (McQuarrie 1976, chapter 8; Fernández-
Ramos, Ellingson, Meana-Pañeda, Marques, Truhlar, Theor. Chem. Acc. 2007, 118, 813).
"""
from __future__ import annotations

import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from dossier.errors import DossierError

#: Default geometric tolerance (angstrom) when testing symmetry operations on a geometry.
SYMMETRY_TOLERANCE_ANGSTROM = 0.02


class ThermoError(DossierError):
    """The thermochemistry cannot be computed from the given geometry and wavenumbers."""


# ========================================================================================
# Masses
# ========================================================================================
def atomic_masses_amu(elements: Sequence[str], masses: str = "isotopic") -> list[float]:
    """Atomic masses in u, from the `periodictable` package (IUPAC/NIST data).

    masses="isotopic": the most abundant isotope (12.000 for C, 1.00783 for H), as Gaussian,
    Q-Chem, NWChem and Psi4 use for thermochemistry; elements without a stable isotope get
    the standard atomic weight. masses="average": standard atomic weights (12.011 for C), as
    ORCA and ASE use.
    """
    if masses not in ("isotopic", "average"):
        raise ThermoError(f"unknown mass convention {masses!r}; use 'isotopic' or 'average'")
    return [_mass_amu(str(symbol).strip().capitalize(), masses) for symbol in elements]


@functools.lru_cache(maxsize=None)
def _mass_amu(symbol: str, masses: str) -> float:
    import periodictable

    try:
        el = periodictable.elements.symbol(symbol)
    except ValueError:
        raise ThermoError(f"unknown element symbol {symbol!r}") from None
    if masses == "average":
        return float(el.mass)
    best = max(((el[i].abundance or 0.0, el[i].mass) for i in el.isotopes), default=(0.0, el.mass))
    return float(best[1]) if best[0] > 0 else float(el.mass)


def principal_moments_amu_a2(masses_amu: Sequence[float], coordinates_angstrom) -> tuple[np.ndarray, np.ndarray]:
    """Principal moments (u A^2, ascending) and axes (columns) of the inertia tensor.

    I_ab = sum_i m_i (r_i^2 delta_ab - r_ia r_ib) about the centre of mass
    (McQuarrie 1976, chapter 8; Ochterski 2000, "contributions from rotational motion").
    """
    m = np.asarray(masses_amu, dtype=float)
    x = np.asarray(coordinates_angstrom, dtype=float)
    x = x - (m[:, None] * x).sum(axis=0) / m.sum()
    tensor = np.einsum("i,ij,ik->jk", m, x, x)  # sum_i m_i r_ia r_ib
    inertia = np.eye(3) * np.trace(tensor) - tensor
    moments, axes = np.linalg.eigh(inertia)
    return np.clip(moments, 0.0, None), axes


def _is_linear(moments: np.ndarray, n_atoms: int) -> bool:
    """Linear when the smallest moment vanishes (below 0.01 u A^2 and 1e-3 of the largest)."""
    return n_atoms == 2 or (n_atoms > 2 and moments[0] < 1e-3 * max(moments[2], 1e-12) and moments[0] < 1e-2)


def _rotation_matrix(axis: np.ndarray, angle: float) -> np.ndarray:
    """Rodrigues' rotation formula (right-handed rotation by `angle` about unit `axis`)."""
    a = axis / np.linalg.norm(axis)
    k = np.array([[0.0, -a[2], a[1]], [a[2], 0.0, -a[0]], [-a[1], a[0], 0.0]])
    return np.eye(3) + math.sin(angle) * k + (1.0 - math.cos(angle)) * (k @ k)


def _reflection_matrix(normal: np.ndarray) -> np.ndarray:
    n = normal / np.linalg.norm(normal)
    return np.eye(3) - 2.0 * np.outer(n, n)


class _Matcher:
    """Tests whether an operation maps the geometry onto itself: every atom, moved by the
    operation, lands within `tol` of a distinct atom of the same element."""

    def __init__(self, x: np.ndarray, labels: np.ndarray, tol: float):
        self.x, self.tol2 = x, tol * tol
        self.sq = np.einsum("ij,ij->i", x, x)  # |x|^2; an orthogonal operation keeps it
        self.other = labels[:, None] != labels[None, :]
        values, counts = np.unique(labels, return_counts=True)
        self.rare = np.flatnonzero(labels == values[np.argmin(counts)])

    def _d2(self, y: np.ndarray, rows) -> np.ndarray:
        """Squared distances |y_i - x_j|^2 = |x_i|^2 + |x_j|^2 - 2 y_i . x_j."""
        return self.sq[rows][:, None] + self.sq[None, :] - 2.0 * (y @ self.x.T)

    def __call__(self, op: np.ndarray) -> bool:
        y_rare = self.x[self.rare] @ op.T
        # quick rejection on the atoms of the rarest element before the full distance matrix
        d_rare = self._d2(y_rare, self.rare)[:, self.rare]
        if not np.all(d_rare.min(axis=1) <= self.tol2):
            return False
        y = self.x @ op.T
        d = self._d2(y, slice(None))
        d[self.other] = np.inf
        if not np.all(d.min(axis=1) <= self.tol2):
            return False
        # a permutation, not a many-to-one map
        return len(set(np.argmin(d, axis=1).tolist())) == len(self.x)


def _unique_axes(vectors: list[np.ndarray], min_norm: float) -> list[np.ndarray]:
    """Distinct directions (up to sign) among `vectors`, to about 1e-4 rad, in first-seen order."""
    if len(vectors) == 0:
        return []
    v = np.asarray(vectors, dtype=float).reshape(-1, 3)
    norms = np.linalg.norm(v, axis=1)
    keep = norms >= max(min_norm, 1e-12)
    v = v[keep] / norms[keep][:, None]
    if len(v) == 0:
        return []
    # canonical sign: the first component that is clearly non-zero is positive
    lead = np.argmax(np.abs(v) > 1e-6, axis=1)
    v *= np.where(v[np.arange(len(v)), lead] < 0, -1.0, 1.0)[:, None]
    _, first = np.unique(np.round(v * 1e4).astype(np.int64), axis=0, return_index=True)
    v = v[np.sort(first)]
    found = np.empty_like(v)
    k = 0
    for u in v:  # merge directions that rounding put in neighbouring cells
        if k and np.max(np.abs(found[:k] @ u)) > 1.0 - 1e-8:
            continue
        found[k] = u
        k += 1
    return list(found[:k])


def _close_group(ops: list[np.ndarray], is_symmetry, limit: int = 120) -> list[np.ndarray]:
    """The group generated by `ops`: products are added while they are symmetry operations of
    the geometry (`is_symmetry`) and new; at most `limit` elements (I_h has 120)."""
    group: list[np.ndarray] = [np.eye(3)]

    def is_new(m) -> bool:
        stack = np.asarray(group)
        return bool(np.min(np.abs(stack - m).reshape(len(group), -1).max(axis=1)) >= 1e-2)

    for op in ops:
        if len(group) < limit and is_new(op):
            group.append(op)
    while len(group) < limit:
        g = np.asarray(group)
        products = np.einsum("aij,bjk->abik", g, g).reshape(-1, 3, 3)
        _, first = np.unique(np.round(products * 1e3).astype(np.int64).reshape(len(products), -1),
                             axis=0, return_index=True)
        added = False
        for c in products[np.sort(first)]:
            if len(group) < limit and is_new(c) and is_symmetry(c):
                group.append(c)
                added = True
        if not added:
            break
    return group


@dataclass
class SymmetryInfo:
    point_group: str  # Schoenflies symbol, e.g. "C2h", "Td", "D*h" for a linear centrosymmetric molecule
    symmetry_number: int  # order of the rotational subgroup
    linear: bool
    tolerance_angstrom: float
    n_operations: int  # order of the full point group found


def detect_symmetry(
    elements: Sequence[str],
    coordinates_angstrom,
    *,
    masses_amu: Sequence[float] | None = None,
    tolerance_angstrom: float = SYMMETRY_TOLERANCE_ANGSTROM,
    max_order: int = 8,
) -> SymmetryInfo:
    """Point group and rotational symmetry number, by testing operations on the geometry.

    Candidate axes: the principal axes of inertia (every symmetry element of an asymmetric
    top lies along them), plus, for symmetric and spherical tops, the directions of atoms,
    of midpoints and of normals of pairs of like atoms. Each candidate C_n (n <= max_order),
    S_2n, mirror and the inversion is kept when every atom lands within `tolerance_angstrom`
    of a like atom; the kept operations are closed into a group. The rotational symmetry
    number is the order of the group's proper-rotation subgroup (McQuarrie 1976, chapter 8;
    Ochterski 2000, table of rotational symmetry numbers); point-group naming follows the
    usual Schoenflies flow chart (Cotton, *Chemical Applications of Group Theory*, 3rd ed.
    1990, section 3.14).
    """
    x = np.asarray(coordinates_angstrom, dtype=float).reshape(-1, 3)
    n = len(x)
    labels = np.array([e.capitalize() for e in elements])
    if len(labels) != n:
        raise ThermoError(f"{len(labels)} elements but {n} coordinates")
    masses = np.asarray(masses_amu if masses_amu is not None else atomic_masses_amu(elements), dtype=float)
    tol = float(tolerance_angstrom)
    if n == 1:
        return SymmetryInfo("K", 1, False, tol, 1)
    x = x - (masses[:, None] * x).sum(axis=0) / masses.sum()
    moments, axes = principal_moments_amu_a2(masses, x)
    if _is_linear(moments, n):
        centro = _Matcher(x, labels, tol)(-np.eye(3))
        return SymmetryInfo("D*h" if centro else "C*v", 2 if centro else 1, True, tol, 0)

    tests = _candidate_axes(x, labels, moments, axes, tol, max_order)
    maps = _Matcher(x, labels, tol)
    ops = _kept_operations(tests, maps)
    group = _close_group(ops, maps)
    proper = [g for g in group if np.linalg.det(g) > 0]
    sigma = len(proper)
    return SymmetryInfo(_schoenflies(group, proper), sigma, False, tol, len(group))


def _candidate_axes(
    x: np.ndarray, labels: np.ndarray, moments: np.ndarray, axes: np.ndarray, tol: float, max_order: int
) -> list[tuple[np.ndarray, Sequence[int]]]:
    """Candidate symmetry axes of a non-linear molecule (centred at its centre of mass), each with the
    rotation orders to test, chosen from its kind of top (see detect_symmetry)."""
    n = len(x)
    scale = max(moments[2], 1e-12)
    low_pair = (moments[1] - moments[0]) < 0.05 * scale
    high_pair = (moments[2] - moments[1]) < 0.05 * scale
    # (axis, orders to test): an asymmetric top has only C2 axes, all along principal axes; a
    # symmetric top's C_n (n >= 3) lies along its unique axis, its other C2 axes and mirror
    # normals in the plane perpendicular to it; for a spherical top, axes through atoms and
    # pair midpoints generate the rest of the group (closed below).
    tests: list[tuple[np.ndarray, Sequence[int]]] = [(axes[:, i], (2,)) for i in range(3)]
    pair_vectors: list[np.ndarray] = []
    if low_pair or high_pair:
        # a symmetry operation maps each shell (same element, same distance from the centre
        # of mass) onto itself: only pairs within a shell can be swapped
        radius = np.linalg.norm(x, axis=1)
        pair_vectors += [x[i] for i in range(n)]
        for i in range(n):
            for j in range(i + 1, n):
                if labels[i] == labels[j] and abs(radius[i] - radius[j]) <= 2.0 * tol:
                    pair_vectors += [x[i] + x[j], x[i] - x[j]]
    all_orders = tuple(range(2, max_order + 1))
    if low_pair and high_pair:  # spherical top: cubic and icosahedral groups have n <= 5
        tests += [(x[i], (2, 3, 4, 5)) for i in range(n)]
        tests += [(v, (2,)) for v in _unique_axes(pair_vectors, 1e-3)]
    elif low_pair or high_pair:  # symmetric top
        u = axes[:, 2] if low_pair else axes[:, 0]
        tests[2 if low_pair else 0] = (u, all_orders)
        in_plane = [v - (v @ u) * u for v in pair_vectors]
        in_plane += [np.cross(u, v) for v in in_plane]
        tests += [(v, (2,)) for v in _unique_axes(in_plane, 1e-3)]
    return tests


def _kept_operations(tests: list[tuple[np.ndarray, Sequence[int]]], maps: _Matcher) -> list[np.ndarray]:
    """The inversion, mirrors, C_n and S_2n about the candidate axes that map the molecule onto itself."""
    ops: list[np.ndarray] = []
    inversion = -np.eye(3)
    if maps(inversion):
        ops.append(inversion)
    seen: set[tuple[int, int, int]] = set()
    for axis, orders in tests:
        norm = float(np.linalg.norm(axis))
        if norm < 1e-3:  # an atom at the centre of mass gives no direction
            continue
        axis = axis / norm
        lead = int(np.argmax(np.abs(axis) > 1e-6))
        axis = -axis if axis[lead] < 0 else axis
        key = tuple(np.round(axis * 1e4).astype(int).tolist())
        if key in seen:
            continue
        seen.add(key)
        mirror = _reflection_matrix(axis)
        if maps(mirror):
            ops.append(mirror)
        for k in orders:
            rot = _rotation_matrix(axis, 2.0 * math.pi / k)
            if maps(rot):
                ops.append(rot)
            improper = mirror @ _rotation_matrix(axis, math.pi / k)  # S_2k
            if maps(improper):
                ops.append(improper)
    return ops


def _rotation_order_and_axis(m: np.ndarray) -> tuple[int, np.ndarray | None]:
    cos_t = max(-1.0, min(1.0, (np.trace(m) - 1.0) / 2.0))
    theta = math.acos(cos_t)
    if theta < 1e-6:
        return 1, None
    order = round(2.0 * math.pi / theta)
    w, v = np.linalg.eig(m)
    axis = np.real(v[:, np.argmin(np.abs(w - 1.0))])
    return order, axis / np.linalg.norm(axis)


def _schoenflies(group: list[np.ndarray], proper: list[np.ndarray]) -> str:
    has_inversion = any(np.abs(g + np.eye(3)).max() < 1e-3 for g in group)
    mirrors = [g for g in group if np.linalg.det(g) < 0 and abs(np.trace(g) - 1.0) < 1e-3]
    mirror_normals = [np.real(np.linalg.eig(g)[1][:, np.argmin(np.abs(np.linalg.eig(g)[0] + 1.0))]) for g in mirrors]
    rotations = [_rotation_order_and_axis(g) for g in proper]
    n_max = max(o for o, _ in rotations)
    high_axes = _unique_axes([a for o, a in rotations if o >= 3 and a is not None], 1e-6)
    g_plus = len(proper)
    if len(high_axes) > 1:  # cubic and icosahedral groups
        base = {12: "T", 24: "O", 60: "I"}.get(g_plus, "?")
        if has_inversion:
            return base + "h"
        return base + "d" if (mirrors and base == "T") else base
    principal = [a for o, a in rotations if o == n_max and a is not None]
    sigma_h = any(abs(abs(float(nrm @ ax)) - 1.0) < 1e-3 for nrm in mirror_normals for ax in principal)
    if n_max == 1:
        if mirrors:
            return "Cs"
        return "Ci" if has_inversion else "C1"
    if g_plus == 2 * n_max:  # n C2 axes perpendicular to the principal axis
        if sigma_h:
            return f"D{n_max}h"
        return f"D{n_max}d" if mirrors else f"D{n_max}"
    if sigma_h:
        return f"C{n_max}h"
    if mirrors:
        return f"C{n_max}v"
    if len(group) == 2 * g_plus:
        return f"S{2 * n_max}"
    return f"C{n_max}"

