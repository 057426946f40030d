"""Symmetric (degenerate) transfers: images, dG0 = 0 exactly, the symmetric saddle's symmetry factor
(dossier.science.degenerate, dossier.analysis.symmetric)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as C
from scipy.spatial.transform import Rotation

from dinitro_geometry import dinitrobenzene
from dossier.science import degenerate as dg
from dossier.science import rates, thermo
from dossier.science.molecule import detect_symmetry

LOCAL = (1.40, 1.27)  # the nitro group carrying the electron (see dinitro_geometry)
NEUTRAL = (1.47, 1.22)


def _structures():
    ea, xa, _ = dinitrobenzene({"nitro_a": LOCAL, "nitro_b": NEUTRAL})
    eb, xb, _ = dinitrobenzene({"nitro_a": NEUTRAL, "nitro_b": LOCAL})
    mid = tuple(0.5 * (a + b) for a, b in zip(LOCAL, NEUTRAL))
    et, xt, _ = dinitrobenzene({"nitro_a": mid, "nitro_b": mid})
    return (ea, np.array(xa)), (eb, np.array(xb)), (et, np.array(xt))


def test_images_are_found_after_rotation_reflection_and_relabeling():
    (ea, xa), (eb, xb), _ = _structures()
    # move b: an arbitrary rotation (scipy), a reflection and a translation; the atom order is unchanged,
    # so the matching must relabel the two nitro groups' atoms itself
    moved = Rotation.from_euler("xyz", [31, -47, 112], degrees=True).apply(xb * np.array([-1, 1, 1])) + [3, -2, 5]
    v = dg.are_images(ea, xa, eb, moved, energy_difference_kj_mol=0.001)
    assert v["images"] is True and v["rmsd_angstrom"] < 1e-6
    # a real difference (one N-O bond 0.05 angstrom longer) is not an image
    bent = moved.copy()
    bent[7] += 0.05 * (bent[7] - bent[6]) / np.linalg.norm(bent[7] - bent[6])
    assert dg.are_images(ea, xa, eb, bent, 0.001)["images"] is False
    # equal geometries but different energies are not images either
    assert dg.are_images(ea, xa, eb, moved, 2.0)["images"] is False


def test_reaction_path_degeneracy_of_a_textbook_example():
    """H + CH4 -> H2 + CH3: reaction-path degeneracy 4, one per equivalent hydrogen (textbook statement, e.g.
    K. J. Laidler, Chemical Kinetics, 3rd ed., 1987; from memory). The symmetry numbers come from the project's
    own point-group detection: CH4 (Td) 12 and the C3v saddle H3C-H-H 3 (McQuarrie's table, from memory)."""
    ch = 1.09
    t = 1 / math.sqrt(3)
    methane = np.array([[0, 0, 0], [ch * t, ch * t, ch * t], [-ch * t, -ch * t, ch * t], [-ch * t, ch * t, -ch * t],
                        [ch * t, -ch * t, -ch * t]])
    sigma_r = detect_symmetry(["C", "H", "H", "H", "H"], methane).symmetry_number
    axis = methane[3] / ch  # the abstracted H stretched to 1.40 angstrom, the incoming H at 2.30, on one C3 axis
    saddle = np.vstack([methane[[0, 1, 2, 4]], [1.40 * axis], [2.30 * axis]])
    sigma_ts = detect_symmetry(["C", "H", "H", "H", "H", "H"], saddle).symmetry_number
    assert (sigma_r, sigma_ts) == (12, 3)
    assert dg.reaction_path_degeneracy(sigma_r, sigma_ts) == 4


def test_symmetric_saddle_hop_factor_undoes_the_symmetry_number_in_the_free_energy():
    """The rotational entropy carries -R ln sigma (McQuarrie 1976, ch. 8), so G(TS) with sigma_TS = 2 lies RT ln 2
    above G with sigma = 1; the site-to-site hop rate from labeled-saddle counting uses the symmetry-number-free
    partition functions, which the factor sigma_TS / sigma_R restores."""
    (_, xa), _, (et, xt) = _structures()
    assert detect_symmetry(et, xt).symmetry_number == 2  # C2v saddle
    masses = thermo.atomic_masses_amu(et)
    x = xt - np.average(xt, axis=0, weights=masses)
    inertia = sum(m * (np.dot(r, r) * np.eye(3) - np.outer(r, r)) for m, r in zip(masses, x))
    moments = sorted(np.linalg.eigvalsh(inertia))
    temp = 298.15
    s1 = thermo.rotational_entropy_j_mol_k(moments, temp, 1, False)
    s2 = thermo.rotational_entropy_j_mol_k(moments, temp, 2, False)
    dg_sigma = -temp * (s2 - s1) / 1000  # kJ/mol: G(sigma = 2) - G(sigma = 1)
    assert dg_sigma == pytest.approx(C.R * temp * math.log(2) / 1000, rel=1e-12)
    barrier_free = 20.0
    k_labeled = rates.eyring_rate_per_s(barrier_free, temp)
    k_hop = rates.eyring_rate_per_s(barrier_free + dg_sigma, temp,
                                    reaction_path_degeneracy=dg.degenerate_hop_factor(1, 2))
    assert k_hop == pytest.approx(k_labeled, rel=1e-12)
    # the saddle is symmetric under the relabeling that maps the reactant onto the product
    (ea, xa), (eb, xb), _ = _structures()
    _, perm = dg.best_image_match(ea, xa, xb)
    assert dg.symmetric_under(xt, perm) < 1e-9 and dg.symmetric_under(xa, perm) > 0.01


def test_the_manifest_can_state_or_deny_a_symmetric_transfer(tmp_path):
    """`symmetric = false` turns the detection off (dG0 then computed); a non-boolean is a one-line manifest error."""
    import shutil

    from conftest import DEMO
    from dossier.analysis.assemble import analyse
    from dossier.errors import ManifestError
    from dossier.project import load_project

    if not (DEMO / "pathway").is_dir():
        pytest.skip("demo outputs not present")
    shutil.copytree(DEMO / "pathway", tmp_path / "pathway")
    states = "".join(f'[states.{s}]\ngeometry = "pathway/{s}_opt.out"\n' for s in ("min_a", "ts", "min_b"))
    head = states + '[recipes.e]\nthermal = "none"\n[[pathways]]\nname = "p"\nreactant = "min_a"\n' \
                    'transition_state = "ts"\nproduct = "min_b"\n'
    for word, images in (("", True), ("symmetric = false\n", False)):
        (tmp_path / "dossier.toml").write_text(head + word)
        pw = analyse(load_project(tmp_path / "dossier.toml"))["pathways"][0]
        assert pw["symmetric_transfer"]["images"] is images
        assert (pw["delta_g0_route"] == "symmetry") is images
    (tmp_path / "dossier.toml").write_text(head + 'symmetric = "yes"\n')
    with pytest.raises(ManifestError) as err:
        load_project(tmp_path / "dossier.toml")
    assert "symmetric must be true or false" in str(err.value) and "\n" not in str(err.value)
