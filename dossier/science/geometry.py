"""Small pure geometry helpers: optimal superposition (Kabsch), RMSD, distances.

Coordinates are N x 3 sequences in angstrom; atom indices are 0-based.

The superposition is the Kabsch algorithm: W. Kabsch, "A solution for the best rotation
to relate two sets of vectors", Acta Cryst. A32, 922-923 (1976), with the correction
that excludes improper rotations (reflections), W. Kabsch, "A discussion of the solution
for the best rotation to relate two sets of vectors", Acta Cryst. A34, 827-828 (1978).
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from dossier.errors import DossierError


class GeometryError(DossierError):
    """Two geometries cannot be compared (different atom counts or atom order)."""


def _array(coords: Sequence[Sequence[float]]) -> np.ndarray:
    a = np.asarray(coords, dtype=float)
    if a.ndim != 2 or a.shape[1] != 3:
        raise GeometryError(f"coordinates must be N x 3; got shape {a.shape}")
    return a


def same_atom_order(elements_a: Sequence[str], elements_b: Sequence[str]) -> bool:
    """True when both structures list the same elements in the same order."""
    return [e.capitalize() for e in elements_a] == [e.capitalize() for e in elements_b]


def kabsch_rotation(mobile: np.ndarray, target: np.ndarray, weights: np.ndarray | None = None) -> np.ndarray:
    """Proper rotation matrix R (3 x 3) minimizing sum w_i |R p_i - q_i|^2 for centred P, Q.

    Kabsch (1976) eq. via the SVD of the covariance H = P^T W Q = U S V^T; R = V D U^T with
    D = diag(1, 1, sign(det(V U^T))) so that R is a rotation, not a reflection (Kabsch 1978).
    """
    w = np.ones(len(mobile)) if weights is None else np.asarray(weights, dtype=float)
    h = (mobile * w[:, None]).T @ target
    u, _s, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u.T))
    if d == 0:
        d = 1.0
    return vt.T @ np.diag([1.0, 1.0, d]) @ u.T


def align(mobile: Sequence[Sequence[float]], target: Sequence[Sequence[float]],
          weights: Sequence[float] | None = None) -> np.ndarray:
    """`mobile` rotated and translated onto `target` (same atom order), as an N x 3 array."""
    p, q = _array(mobile), _array(target)
    if p.shape != q.shape:
        raise GeometryError(f"cannot align {len(p)} atoms onto {len(q)} atoms")
    w = np.ones(len(p)) if weights is None else np.asarray(weights, dtype=float)
    pc = (p * w[:, None]).sum(0) / w.sum()
    qc = (q * w[:, None]).sum(0) / w.sum()
    r = kabsch_rotation(p - pc, q - qc, w)
    return (p - pc) @ r.T + qc


def rmsd(a: Sequence[Sequence[float]], b: Sequence[Sequence[float]]) -> float:
    """Root-mean-square deviation without any superposition, angstrom."""
    p, q = _array(a), _array(b)
    if p.shape != q.shape:
        raise GeometryError(f"cannot compare {len(p)} atoms with {len(q)} atoms")
    return float(np.sqrt(((p - q) ** 2).sum(1).mean()))


def kabsch_rmsd(a: Sequence[Sequence[float]], b: Sequence[Sequence[float]], *,
                elements_a: Sequence[str] | None = None, elements_b: Sequence[str] | None = None,
                weights: Sequence[float] | None = None) -> float:
    """RMSD (angstrom) after optimal superposition of `a` onto `b` (Kabsch 1976/1978).

    With both element lists given, raises GeometryError when the atom order differs: an
    RMSD of structures whose atoms are listed in different orders means nothing.
    """
    if elements_a is not None and elements_b is not None and not same_atom_order(elements_a, elements_b):
        raise GeometryError("the two structures list their atoms in a different order")
    aligned = align(a, b, weights)
    q = _array(b)
    if weights is None:
        return float(np.sqrt(((aligned - q) ** 2).sum(1).mean()))
    w = np.asarray(weights, dtype=float)
    return float(np.sqrt((w * ((aligned - q) ** 2).sum(1)).sum() / w.sum()))


def distance(coords: Sequence[Sequence[float]], i: int, j: int) -> float:
    """Distance between atoms i and j (0-based), angstrom."""
    a = _array(coords)
    return float(np.linalg.norm(a[i] - a[j]))


def distance_matrix(coords: Sequence[Sequence[float]]) -> np.ndarray:
    a = _array(coords)
    return np.linalg.norm(a[:, None, :] - a[None, :, :], axis=-1)


def nearest_heavy_atom(elements: Sequence[str], coords: Sequence[Sequence[float]], index: int) -> int | None:
    """0-based index of the non-hydrogen atom nearest to atom `index` (itself excluded); None if none."""
    a = _array(coords)
    best, best_d = None, np.inf
    for j, e in enumerate(elements):
        if j == index or e.capitalize() in ("H", "D", "T"):
            continue
        d = float(np.linalg.norm(a[j] - a[index]))
        if d < best_d:
            best, best_d = j, d
    return best


def displacement_cosine(delta: Sequence[Sequence[float]], mode: Sequence[Sequence[float]]) -> float:
    """Cosine of the angle between two 3N vectors (a geometry difference and a normal mode).

    Returns a signed value in [-1, 1]; 0.0 if either vector is zero.
    """
    d = _array(delta).ravel()
    m = _array(mode).ravel()
    if d.shape != m.shape:
        raise GeometryError(f"cannot project a {len(d) // 3}-atom difference on a {len(m) // 3}-atom mode")
    nd, nm = np.linalg.norm(d), np.linalg.norm(m)
    if nd == 0 or nm == 0:
        return 0.0
    return float(d @ m / (nd * nm))
