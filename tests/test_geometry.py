"""dossier.science.geometry against outside references: scipy's Rotation.align_vectors and ASE's
minimize_rotation_and_translation (both implement the same least-squares superposition)."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from dossier.science import geometry

RNG = np.random.default_rng(7)


def _cloud(n=12):
    return RNG.normal(scale=2.0, size=(n, 3))


def test_kabsch_rmsd_matches_scipy_align_vectors():
    # Outside reference: scipy.spatial.transform.Rotation.align_vectors (Kabsch/Wahba solver);
    # its second return value is the root of the summed squared distances after rotation.
    a = _cloud()
    b = Rotation.random(random_state=3).apply(a) + RNG.normal(scale=0.05, size=a.shape) + [1.0, -2.0, 0.5]
    ac, bc = a - a.mean(0), b - b.mean(0)
    _rot, rssd = Rotation.align_vectors(bc, ac)
    expected = rssd / np.sqrt(len(a))
    assert geometry.kabsch_rmsd(a, b) == pytest.approx(expected, rel=1e-9)


def test_kabsch_rmsd_matches_ase_minimize_rotation_and_translation():
    # Outside reference: ase.build.minimize_rotation_and_translation (ASE 3.29), which rotates
    # and translates `atoms` onto `target` in place.
    from ase import Atoms
    from ase.build import minimize_rotation_and_translation

    a = _cloud(9)
    b = Rotation.random(random_state=11).apply(a) + RNG.normal(scale=0.1, size=a.shape) - [3.0, 0.0, 1.0]
    target = Atoms("C9", positions=b)
    mobile = Atoms("C9", positions=a)
    minimize_rotation_and_translation(target, mobile)
    expected = np.sqrt(((mobile.positions - b) ** 2).sum(1).mean())
    assert geometry.kabsch_rmsd(a, b) == pytest.approx(expected, rel=1e-9)
    np.testing.assert_allclose(geometry.align(a, b), mobile.positions, atol=1e-9)


def test_rigid_motion_gives_zero_and_mirror_image_does_not():
    # A pure rotation + translation superposes exactly; a reflection must not (Kabsch 1978's
    # determinant correction), so a chiral cloud and its mirror image keep a finite RMSD.
    a = _cloud(8)
    moved = Rotation.from_euler("zyx", [40, -25, 70], degrees=True).apply(a) + [5, 5, 5]
    assert geometry.kabsch_rmsd(a, moved) < 1e-10
    mirror = a * [1, 1, -1]
    assert geometry.kabsch_rmsd(a, mirror) > 0.1


def test_atom_order_check():
    a = _cloud(3)
    with pytest.raises(geometry.GeometryError, match="different order"):
        geometry.kabsch_rmsd(a, a, elements_a=["C", "H", "O"], elements_b=["C", "O", "H"])
    assert geometry.kabsch_rmsd(a, a, elements_a=["C", "H", "O"], elements_b=["C", "H", "O"]) < 1e-12


def test_distance_and_nearest_heavy_atom_on_water_like_geometry():
    # Hand geometry: O at origin, H at 0.96 A along x and along y (textbook O-H length, from memory);
    # the distances follow from Pythagoras, checked against numpy's own norm of the difference.
    elements = ["O", "H", "H", "C"]
    xyz = [[0, 0, 0], [0.96, 0, 0], [0, 0.96, 0], [3.0, 0, 0]]
    assert geometry.distance(xyz, 1, 2) == pytest.approx(np.hypot(0.96, 0.96))
    assert geometry.nearest_heavy_atom(elements, xyz, 1) == 0
    assert geometry.nearest_heavy_atom(elements, xyz, 0) == 3
    dm = geometry.distance_matrix(xyz)
    assert dm[0, 3] == pytest.approx(3.0) and dm[3, 0] == pytest.approx(3.0)


def test_displacement_cosine():
    d = np.zeros((2, 3)); d[0, 0] = 1.0
    m = np.zeros((2, 3)); m[0, 0] = -2.0; m[1, 1] = 2.0
    assert geometry.displacement_cosine(d, m) == pytest.approx(-1 / np.sqrt(2))
