"""Figures: the physics drawn is checked against textbook results, the drawing against ASE, the SVG for determinism."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants, integrate

from conftest import fixture_path
from dossier.report import figures


@pytest.fixture(scope="module")
def data(tmp_path_factory):
    from render_fixtures import fixture_data

    return fixture_data(tmp_path_factory.mktemp("figures"))


def _cm1_to_kj_mol_independent(nu_cm1: float) -> float:
    # E = h c nu~ (nu~ in m-1), per mole; CODATA via scipy.constants
    return constants.h * constants.c * 100.0 * nu_cm1 * constants.N_A / 1000.0


@pytest.mark.parametrize("lam, dg0, hab_cm1", [(100.0, 0.0, 500.0), (80.0, -20.0, 1200.0), (120.0, 15.0, 300.0)])
def test_two_state_curves_cross_at_the_marcus_barrier_and_split_by_twice_the_coupling(lam, dg0, hab_cm1):
    # Marcus (J. Chem. Phys. 24, 966, 1956): diabatic parabolas cross at x* = (lambda + dG0) / (2 lambda)
    # with G* = (lambda + dG0)^2 / (4 lambda); the two-state model splits the surfaces there by 2 H_ab
    # (Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 31, 168, 2002).
    x_star = (lam + dg0) / (2.0 * lam)
    c = figures.two_state_curves(lam, dg0, hab_cm1, grid=np.array([0.0, x_star, 1.0]))
    assert c["diabatic_reactant"][1] == pytest.approx(c["diabatic_product"][1], rel=1e-12)
    assert c["diabatic_reactant"][1] == pytest.approx((lam + dg0) ** 2 / (4.0 * lam), rel=1e-12)
    gap = c["adiabatic_upper"][1] - c["adiabatic_lower"][1]
    assert gap == pytest.approx(2.0 * _cm1_to_kj_mol_independent(hab_cm1), rel=1e-9)
    # far from the crossing the lower surface follows the lower diabat (second-order shift only)
    assert c["adiabatic_lower"][0] <= c["diabatic_reactant"][0]
    assert c["adiabatic_lower"][0] == pytest.approx(c["diabatic_reactant"][0], abs=3 * _cm1_to_kj_mol_independent(hab_cm1) ** 2 / lam)


def test_broadened_spectrum_keeps_the_oscillator_strength_and_has_the_stated_width():
    grid = np.linspace(0.0, 80000.0, 40001)
    curve = figures.broadened_spectrum([30000.0, 45000.0], [0.2, 0.5], grid)
    # unit-area Gaussians scaled by f: the area is the total strength (definition of the convolution)
    assert integrate.trapezoid(curve, grid) == pytest.approx(0.7, rel=1e-6)
    single = figures.broadened_spectrum([40000.0], [1.0], grid)
    above = grid[single >= single.max() / 2.0]
    assert above[-1] - above[0] == pytest.approx(figures.SPECTRUM_FWHM_CM1, abs=2 * (grid[1] - grid[0]))


def test_wavelength_axis_is_the_reciprocal_wavenumber():
    # lambda / nm = 1e7 / (nu~ / cm-1): 1 cm = 1e7 nm (SI prefixes)
    assert figures._cm1_to_nm(np.array([20000.0]))[0] == pytest.approx(1e9 * 1e-2 / 20000.0)


def test_sticks_join_the_same_atoms_as_ase_neighbour_list():
    ase_nl = pytest.importorskip("ase.neighborlist")
    from ase import Atoms
    from ase.data import covalent_radii, atomic_numbers

    from dossier.reading import read

    rec = read(fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out"), use_cache=False)
    atoms = Atoms(rec.elements, positions=rec.coordinates_angstrom)
    # ASE's covalent radii are Cordero et al. 2008, the table the drawing uses
    for el, r in figures._DRAWING_RADII_ANGSTROM.items():
        assert r == pytest.approx(covalent_radii[atomic_numbers[el]], abs=0.011), el
    cutoffs = ase_nl.natural_cutoffs(atoms, mult=figures._BOND_TOLERANCE)
    i, j = ase_nl.neighbor_list("ij", atoms, cutoffs)
    expected = sorted({(min(a, b), max(a, b)) for a, b in zip(i.tolist(), j.tolist())})
    got = sorted(figures.bonds(rec.elements, np.asarray(rec.coordinates_angstrom)))
    assert got == expected
    assert len(got) == 20  # C10H10 divinylbenzene: 10 C-H + 10 C-C bonds (structure formula)


def test_projection_plane_is_the_plane_of_a_flat_molecule():
    from dossier.reading import read

    rec = read(fixture_path("NWChem/basicNWChem7.0/dvb_gopt_ks.out"), use_cache=False)
    xyz = np.asarray(rec.coordinates_angstrom)
    vt = figures.projection_axes(xyz)
    # dvb is planar (C2h): the third principal axis is the plane normal, nothing sticks out of it
    depth = (xyz - xyz.mean(axis=0)) @ vt[2]
    assert np.abs(depth).max() < 1e-3
    assert np.allclose(vt @ vt.T, np.eye(3), atol=1e-12)


def test_every_figure_is_made_and_the_svg_is_deterministic(data):
    first = figures.make_figures(data)
    second = figures.make_figures(data)
    keys = [f.key for f in first]
    assert len(keys) == len(set(keys))
    assert [f.svg for f in first] == [f.svg for f in second]
    sections = {f.section for f in first}
    assert {"energies", "marcus", "rates", "states", "excited", "populations"} <= sections
    n_states = sum(1 for s in data["states"] if s.get("coordinates_angstrom"))
    assert sum(1 for f in first if f.section == "states") == n_states
    for f in first:
        assert f.svg.startswith("<svg") and "<script" not in f.svg and "<metadata" not in f.svg
        ids = [m for m in figures._ID_RE.findall(f.svg)]
        assert all(i.startswith(f.key + "-") for i in ids), f.key
        # no date, no link out: the only URLs are the SVG/XLink namespace names
        assert set(__import__("re").findall(r"https?://[^\"' ]+", f.svg)) <= {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}


def test_energy_profile_labels_are_in_the_report_unit(data):
    prof = next(p for p in data["energy_profiles"] if p["kind"] == "pathway")
    t = figures.report_temperature(data)
    values, _ = figures.profile_values(prof, t)
    value_kj = dict(values)["min_b"]
    svg = figures.figure_to_svg(figures.energy_profile_figure([prof], "kcal/mol", t), "t")
    # kJ -> kcal: thermochemical calorie, 4.184 J (scipy.constants.calorie)
    assert f"{value_kj / constants.calorie:.1f}" in svg and "kcal mol⁻¹" in svg
    svg = figures.figure_to_svg(figures.energy_profile_figure([prof], "cm-1", t), "t")
    # E = h c nu~ per mole (CODATA via scipy.constants); the fixture's small differences are distinct in cm-1
    label = f"{value_kj * 1000.0 / (constants.h * constants.c * 100.0 * constants.N_A):.1f}"
    assert f">{label}<" in svg and "cm⁻¹" in svg


def test_user_text_in_figures_is_escaped_and_dollars_do_not_start_mathtext(data):
    st = dict(next(s for s in data["states"] if s.get("excited_states")), name="<script>x</script> $\\alpha$ 5$")
    svg = figures.figure_to_svg(figures.spectrum_figure([st]), "h")
    assert "<script>" not in svg and "&lt;script&gt;x&lt;/script&gt; $\\alpha$ 5$" in svg
    svg = figures.figure_to_svg(figures.structure_figure(st, {"a<b": [1, 2]}, numbered=True), "h")
    assert "a&lt;b" in svg and ">C1<" in svg


def test_png_on_request(data):
    small = {**data, "states": data["states"][:1], "pathways": []}
    out = figures.make_figures(small, png=True)
    assert out and all(f.png[:8] == b"\x89PNG\r\n\x1a\n" for f in out)
    assert all(f.png is None for f in figures.make_figures(small))


def test_rates_figure_draws_the_band_and_the_measurement(data):
    pw = data["pathways"][0]
    fig = figures.rates_figure(pw)
    ax = fig.axes[0]
    assert ax.get_yscale() == "log"
    exp = pw["experiment"]["rates"][0]["rate_per_s"]
    ys = np.concatenate([np.asarray(line.get_ydata(), dtype=float) for line in ax.get_lines() if len(line.get_ydata())])
    assert np.any(np.isclose(ys, exp, rtol=1e-12))
    assert any(c.__class__.__name__ in ("PolyCollection", "FillBetweenPolyCollection") for c in ax.collections)
    assert math.isfinite(ax.get_ylim()[0])
