"""Marcus–Hush parameters and electron-transfer rate models.

Small pure functions. Each docstring names its published source. Every function that takes
numbers broadcasts with numpy: floats in give floats out, arrays in give arrays out, so the
uncertainty Monte Carlo can call them on sample arrays.

Sign and unit conventions used throughout:

- ``delta_g0_kj_mol`` is G(product) - G(reactant): negative for a downhill transfer.
- ``reorganization_energy_kj_mol`` (lambda) is positive.
- ``coupling_cm1`` is the electronic coupling H_ab (a positive magnitude) in cm-1.
- Temperatures in K, rates in s-1, barriers in kJ/mol.
- Every constant comes from dossier.units (scipy.constants, CODATA).
"""
from __future__ import annotations

import math
from typing import Any

import numpy as np
from scipy import optimize

from dossier import units as u
from dossier.science.rates import (  # noqa: F401 - the rate formulas live in rates.py; re-exported here
    _cm1_to_j, _kj_mol_to_j, _out, adiabatic_barrier_kj_mol, arrhenius_fit, electronic_frequency_per_s,
    eyring_rate_per_s, huang_rhys_factor, landau_zener_parameter, landau_zener_probability,
    landau_zener_transmission_coefficient, marcus_barrier_kj_mol, marcus_hush_adiabatic_rate_per_s,
    marcus_nonadiabatic_rate_per_s, mlj_rate_per_s)

ArrayLike = Any


# ---------------------------------------------------------------------------
# Reorganization energy
# ---------------------------------------------------------------------------
def four_point_reorganization_kj_mol(
    reactant_at_reactant_hartree: ArrayLike,
    reactant_at_product_hartree: ArrayLike,
    product_at_product_hartree: ArrayLike,
    product_at_reactant_hartree: ArrayLike,
):
    """Four-point (inner-sphere) reorganization energy, kJ/mol.

    lambda = [E(R@P) - E(R@R)] + [E(P@R) - E(P@P)], where E(X@Y) is the energy of electronic
    state X at the optimized geometry of state Y.
    Source: S. F. Nelsen, S. C. Blackstock, Y. Kim, J. Am. Chem. Soc. 1987, 109, 677
    (the "four-point" scheme for self-exchange; lambda_v = sum of the two relaxation energies).
    """
    e_rr = np.asarray(reactant_at_reactant_hartree, dtype=float)
    e_rp = np.asarray(reactant_at_product_hartree, dtype=float)
    e_pp = np.asarray(product_at_product_hartree, dtype=float)
    e_pr = np.asarray(product_at_reactant_hartree, dtype=float)
    return _out(((e_rp - e_rr) + (e_pr - e_pp)) * u.HARTREE_KJ_MOL)


def reorganization_from_vertical_kj_mol(vertical_excitation_kj_mol: ArrayLike, delta_g0_kj_mol: ArrayLike = 0.0):
    """lambda from the vertical (optical, intervalence) excitation at the reactant minimum.

    E_op = lambda + dG0, so lambda = E_op - dG0 (weak-coupling limit).
    Source: N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391; see also B. S. Brunschwig, C. Creutz,
    N. Sutin, Chem. Soc. Rev. 2002, 31, 168, eq. 6 (h nu_max = lambda + dG0).
    """
    return _out(np.asarray(vertical_excitation_kj_mol, dtype=float) - np.asarray(delta_g0_kj_mol, dtype=float))


# ---------------------------------------------------------------------------
# Two-state (diabatic parabola) model
# ---------------------------------------------------------------------------
def two_state_surfaces_kj_mol(x: ArrayLike, reorganization_energy_kj_mol, delta_g0_kj_mol, coupling_cm1):
    """Diabatic parabolas and the adiabatic surfaces of the two-state model, kJ/mol.

    G_a(x) = lambda x^2, G_b(x) = lambda (x - 1)^2 + dG0,
    G_+/-(x) = (G_a + G_b)/2 +/- sqrt((G_b - G_a)^2 + 4 H_ab^2)/2.
    Source: B. S. Brunschwig, C. Creutz, N. Sutin, Chem. Soc. Rev. 2002, 31, 168, eqs. 1-3.
    Returns (lower, upper, diabatic_a, diabatic_b).
    """
    x = np.asarray(x, dtype=float)
    lam = np.asarray(reorganization_energy_kj_mol, dtype=float)
    dg0 = np.asarray(delta_g0_kj_mol, dtype=float)
    h = np.asarray(coupling_cm1, dtype=float) * u.CM1_KJ_MOL
    ga = lam * x**2
    gb = lam * (x - 1.0) ** 2 + dg0
    root = np.sqrt((gb - ga) ** 2 + 4.0 * h**2)
    mean = 0.5 * (ga + gb)
    return _out(mean - 0.5 * root), _out(mean + 0.5 * root), _out(ga), _out(gb)


def coupling_from_adiabatic_barrier_cm1(barrier_kj_mol, reorganization_energy_kj_mol, delta_g0_kj_mol=0.0):
    """H_ab (cm-1) from the adiabatic barrier and lambda: the two-state model solved for H_ab.

    Inverts dG* = a^2/(4 lambda) - H + H^2/a (a = lambda + dG0) on the class-II root:
    H_ab = (a/2) [1 - sqrt(1 - a/lambda + 4 dG*/a)]; for dG0 = 0, H_ab = lambda/2 - sqrt(lambda dG*).
    Source: B. S. Brunschwig, C. Creutz, N. Sutin, Chem. Soc. Rev. 2002, 31, 168, eq. 9.
    NaN where the barrier exceeds the zero-coupling Marcus barrier (no real root).
    """
    lam = np.asarray(reorganization_energy_kj_mol, dtype=float)
    dg0 = np.asarray(delta_g0_kj_mol, dtype=float)
    bar = np.asarray(barrier_kj_mol, dtype=float)
    a = lam + dg0
    with np.errstate(invalid="ignore", divide="ignore"):
        inner = 1.0 - a / lam + 4.0 * bar / a
        h = 0.5 * a * (1.0 - np.sqrt(inner))
    h = np.where(inner < 0.0, np.nan, h)
    return _out(h / u.CM1_KJ_MOL)


def two_state_observables_kj_mol(reorganization_energy_kj_mol: float, delta_g0_kj_mol: float, coupling_cm1: float) -> dict:
    """Stationary points of the two-state model's lower surface and the vertical gaps there.

    Numerical (scalar) evaluation of the surfaces of two_state_surfaces_kj_mol
    (Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168). Returns a dict with
    `double_well`, `barrier_kj_mol` (lower surface, from the reactant minimum), `delta_e0_kj_mol`
    (product minimum - reactant minimum), `gap_at_reactant_kj_mol`, `gap_at_ts_kj_mol`,
    `gap_at_product_kj_mol`, and the x positions.
    """
    lam, dg0, h = float(reorganization_energy_kj_mol), float(delta_g0_kj_mol), float(coupling_cm1)

    def lower(x):
        return two_state_surfaces_kj_mol(x, lam, dg0, h)[0]

    def gap(x):
        lo, up, _, _ = two_state_surfaces_kj_mol(x, lam, dg0, h)
        return up - lo

    grid = np.linspace(-0.5, 1.5, 2001)
    values = lower(grid)
    interior = np.where((values[1:-1] < values[:-2]) & (values[1:-1] <= values[2:]))[0] + 1
    maxima = np.where((values[1:-1] > values[:-2]) & (values[1:-1] >= values[2:]))[0] + 1

    def refine(i, sign):
        res = optimize.minimize_scalar(lambda x: sign * lower(x), bounds=(grid[i - 1], grid[i + 1]), method="bounded",
                                       options={"xatol": 1e-10})
        return float(res.x)

    if len(interior) >= 2 and len(maxima) >= 1:
        xa = refine(interior[0], 1.0)
        xb = refine(interior[-1], 1.0)
        xts = refine(maxima[0], -1.0)
        return {
            "double_well": True,
            "x_reactant": xa, "x_ts": xts, "x_product": xb,
            "barrier_kj_mol": float(lower(xts) - lower(xa)),
            "delta_e0_kj_mol": float(lower(xb) - lower(xa)),
            "gap_at_reactant_kj_mol": float(gap(xa)),
            "gap_at_ts_kj_mol": float(gap(xts)),
            "gap_at_product_kj_mol": float(gap(xb)),
        }
    xm = refine(interior[0], 1.0) if len(interior) else float(grid[np.argmin(values)])
    return {
        "double_well": False, "x_reactant": xm, "x_ts": None, "x_product": xm,
        "barrier_kj_mol": 0.0, "delta_e0_kj_mol": 0.0,
        "gap_at_reactant_kj_mol": float(gap(xm)), "gap_at_ts_kj_mol": None, "gap_at_product_kj_mol": float(gap(xm)),
    }


def fit_two_state_model(
    *,
    delta_e0_kj_mol: float,
    barrier_kj_mol: float | None = None,
    gap_at_reactant_kj_mol: float | None = None,
    gap_at_ts_kj_mol: float | None = None,
    gap_at_product_kj_mol: float | None = None,
) -> dict:
    """Fit the diabatic parabolas (lambda, H_ab) of the two-state model to adiabatic data.

    Data are electronic energies at one level: the lower-surface barrier and driving force from the
    optimized minima and transition state, and the vertical gaps (lowest excitation) at the
    stationary points. dG0 of the diabatic parabolas is taken equal to the computed delta_e0.
    Least squares (scipy.optimize.least_squares) on the model of Brunschwig, Creutz, Sutin,
    Chem. Soc. Rev. 2002, 31, 168, eqs. 1-3. Needs at least two observations besides delta_e0.
    Returns {"reorganization_energy_kj_mol", "coupling_cm1", "rms_residual_kj_mol", "n_observations"}.
    """
    obs = {"barrier_kj_mol": barrier_kj_mol, "gap_at_reactant_kj_mol": gap_at_reactant_kj_mol,
           "gap_at_ts_kj_mol": gap_at_ts_kj_mol, "gap_at_product_kj_mol": gap_at_product_kj_mol}
    obs = {k: float(v) for k, v in obs.items() if v is not None}
    if len(obs) < 2:
        raise ValueError("the two-state fit needs at least two of: barrier, gap at reactant, at TS, at product")
    dg0 = float(delta_e0_kj_mol)
    # starting points: lambda from the gap at the reactant (Hush), and the class-II root of the symmetric
    # relations B = (lambda - G)^2 / (4 lambda), G = 2 H_ab (barrier B, gap G at the TS); the best fit wins
    b, g = obs.get("barrier_kj_mol"), obs.get("gap_at_ts_kj_mol")
    starts = []
    if "gap_at_reactant_kj_mol" in obs:
        starts.append(obs["gap_at_reactant_kj_mol"] - dg0)
    if b is not None and g is not None and b >= 0:
        starts.append(g + 2.0 * b + 2.0 * math.sqrt(b * b + b * g))
    if b is not None:
        starts.append(4.0 * max(b, 0.0) + (g or 0.0))
    if g is not None:
        starts.append(2.0 * g)
    starts = [max(x, 1.0) for x in starts] or [50.0]

    def residuals(p):
        lam, h = p
        model = two_state_observables_kj_mol(lam, dg0, h)
        out = []
        for key, value in obs.items():
            m = model[key]
            if m is None:  # single well: the TS gap is undefined; penalize by the barrier lost
                m = 0.0
            out.append(m - value)
        return out

    best = None
    for lam0 in starts:
        h0 = (g / 2.0 if g is not None else 0.1 * lam0) / u.CM1_KJ_MOL
        res = optimize.least_squares(residuals, x0=[lam0, h0], bounds=([1e-6, 0.0], [np.inf, np.inf]),
                                     x_scale=[lam0, max(h0, 1.0)], xtol=1e-12, ftol=1e-12)
        if best is None or res.cost < best.cost - 1e-12:
            best = res
    res = best
    lam, h = (float(v) for v in res.x)
    rms = float(np.sqrt(np.mean(np.square(res.fun))))
    return {"reorganization_energy_kj_mol": lam, "coupling_cm1": h, "rms_residual_kj_mol": rms,
            "n_observations": len(obs)}


# ---------------------------------------------------------------------------
# Electronic coupling
# ---------------------------------------------------------------------------
def coupling_half_splitting_cm1(splitting_cm1: ArrayLike):
    """H_ab = half the splitting of the two adiabatic states at the symmetric transition state.

    At the crossing point of the diabatic parabolas the adiabatic gap is 2 H_ab.
    Source: N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391; B. S. Brunschwig, C. Creutz, N. Sutin,
    Chem. Soc. Rev. 2002, 31, 168 (gap 2 H_ab at x = 1/2).
    """
    return _out(0.5 * np.asarray(splitting_cm1, dtype=float))


def gmh_coupling_cm1(transition_dipole: ArrayLike, dipole_difference: ArrayLike, vertical_gap_cm1: ArrayLike):
    """Generalized Mulliken–Hush coupling, cm-1.

    H_ab = mu_12 dE_12 / sqrt(dmu_12^2 + 4 mu_12^2), where mu_12 is the adiabatic transition dipole,
    dmu_12 the difference of the adiabatic state dipoles (both along the charge-transfer direction,
    in the same unit) and dE_12 the vertical gap.
    Source: R. J. Cave, M. D. Newton, Chem. Phys. Lett. 1996, 249, 15, eq. 7.
    """
    mu = np.abs(np.asarray(transition_dipole, dtype=float))
    dmu = np.asarray(dipole_difference, dtype=float)
    de = np.asarray(vertical_gap_cm1, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        h = mu * de / np.sqrt(dmu**2 + 4.0 * mu**2)
    return _out(h)


def gmh_coupling_from_vectors_cm1(transition_dipole_vec, dipole_difference_vec, vertical_gap_cm1: float) -> float:
    """GMH with vectors: dmu_12 is the difference vector's length, mu_12 the transition dipole's
    projection on it (Cave & Newton, Chem. Phys. Lett. 1996, 249, 15: the two-state quantities are
    taken along the direction of the dipole difference). With a vanishing dipole difference the
    full transition dipole is used (the result is then dE/2 whatever mu_12)."""
    mu = np.asarray(transition_dipole_vec, dtype=float)
    dmu = np.asarray(dipole_difference_vec, dtype=float)
    norm = float(np.linalg.norm(dmu))
    mu12 = float(np.dot(mu, dmu) / norm) if norm > 0 else float(np.linalg.norm(mu))
    return float(gmh_coupling_cm1(mu12, norm, vertical_gap_cm1))


def transition_dipole_from_oscillator_au(oscillator_strength, energy_cm1):
    """|mu_12| (e bohr) from an oscillator strength: f = (2/3) dE |mu_12|^2 in atomic units.
    Source: R. C. Hilborn, Am. J. Phys. 1982, 50, 982 (oscillator strength and dipole moment)."""
    f = np.asarray(oscillator_strength, dtype=float)
    de = np.asarray(energy_cm1, dtype=float) / u.HARTREE_CM1
    return _out(np.sqrt(1.5 * f / de))


def mulliken_hush_coupling_cm1(transition_dipole_au, vertical_gap_cm1, distance_angstrom):
    """Mulliken–Hush coupling H_ab = mu_12 dE_12 / (e r_ab), cm-1, with the diabatic dipole difference
    taken as one electron moved over the site distance r_ab (mu_12 in e bohr, r_ab in angstrom).
    Source: N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391; C. Creutz, M. D. Newton, N. Sutin,
    J. Photochem. Photobiol. A 1994, 82, 47. The geometric distance usually exceeds the effective
    charge-transfer distance, so this tends to underestimate H_ab."""
    mu = np.abs(np.asarray(transition_dipole_au, dtype=float))
    r_bohr = np.asarray(distance_angstrom, dtype=float) / u.BOHR_ANGSTROM
    return _out(mu * np.asarray(vertical_gap_cm1, dtype=float) / r_bohr)


def hush_transition_dipole_prefactor_debye() -> float:
    """mu_12 (D) = P x (eps_max dnu_1/2 / nu_max)^1/2 for a Gaussian band; returns P (about 0.0988).

    From the integrated absorption cross section int sigma dnu~ = 2 pi^2 nu~ |mu|^2 / (3 eps0 h c)
    (SI; sigma = ln10 eps / N_A) and the Gaussian-band integral int eps dnu~ =
    eps_max dnu_1/2 sqrt(pi / (4 ln 2)). Source: C. Creutz, M. D. Newton, N. Sutin,
    J. Photochem. Photobiol. A 1994, 82, 47 (their mu_12 = 0.0206 (eps dnu / nu)^1/2 e Angstrom).
    """
    # mu^2 = 3 eps0 h c ln10 / (2 pi^2 N_A) * [int eps dnu~ / nu~] with eps in m2/mol, nu~ in m-1
    factor_si = 3.0 * u.VACUUM_PERMITTIVITY_F_M * u.PLANCK_J_S * u.SPEED_OF_LIGHT_M_S * math.log(10.0)
    factor_si /= 2.0 * u.PI**2 * u.AVOGADRO_PER_MOL
    gaussian = math.sqrt(u.PI / (4.0 * math.log(2.0)))
    # eps in M-1 cm-1 -> m2/mol; the ratio dnu/nu is unit-free
    mu_c_m = math.sqrt(factor_si * u.M1_CM1_TO_M2_MOL * gaussian)
    return mu_c_m / u.DEBYE_C_M


def hush_band_prefactor() -> float:
    """The prefactor of Hush's band formula, H_ab = C (nu_max eps_max dnu_1/2)^1/2 / r_ab, with
    cm-1, M-1 cm-1 and angstrom: C = mu-prefactor / (e x 1 angstrom), about 2.06e-2 (Hush 1967;
    C. Creutz, M. D. Newton, N. Sutin, J. Photochem. Photobiol. A 1994, 82, 47)."""
    e_angstrom_debye = u.ELEMENTARY_CHARGE_C * u.ANGSTROM_M / u.DEBYE_C_M
    return hush_transition_dipole_prefactor_debye() / e_angstrom_debye


def hush_band_coupling_cm1(nu_max_cm1, epsilon_max_m1_cm1, fwhm_cm1, distance_angstrom):
    """H_ab (cm-1) from an intervalence band (Gaussian shape; Mulliken–Hush with dmu = e r_ab).

    H_ab = 2.06e-2 (nu_max eps_max dnu_1/2)^1/2 / r_ab (cm-1, M-1 cm-1, cm-1, angstrom);
    the prefactor is derived here from CODATA constants (hush_band_prefactor).
    Source: N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391; C. Creutz, M. D. Newton, N. Sutin,
    J. Photochem. Photobiol. A 1994, 82, 47.
    """
    nu = np.asarray(nu_max_cm1, dtype=float)
    eps = np.asarray(epsilon_max_m1_cm1, dtype=float)
    w = np.asarray(fwhm_cm1, dtype=float)
    r = np.asarray(distance_angstrom, dtype=float)
    return _out(hush_band_prefactor() * np.sqrt(nu * eps * w) / r)


def hush_band_width_cm1(reorganization_energy_cm1, temperature_k):
    """High-temperature width (FWHM, cm-1) of a class-II intervalence band.

    dnu_1/2 = [16 ln2 k_B T (nu_max - dG0)]^1/2 = [16 ln2 k_B T lambda]^1/2;
    at 298 K about (2310 cm-1 x nu_max)^1/2 for a symmetric system.
    Source: N. S. Hush, Prog. Inorg. Chem. 1967, 8, 391.
    """
    lam = np.asarray(reorganization_energy_cm1, dtype=float)
    kt_cm1 = u.BOLTZMANN_J_K * np.asarray(temperature_k, dtype=float) / u.CM1_J
    return _out(np.sqrt(16.0 * math.log(2.0) * kt_cm1 * lam))


def hush_reorganization_from_width_cm1(fwhm_cm1, temperature_k):
    """lambda (cm-1) from the band width, inverting hush_band_width_cm1 (Hush 1967)."""
    w = np.asarray(fwhm_cm1, dtype=float)
    kt_cm1 = u.BOLTZMANN_J_K * np.asarray(temperature_k, dtype=float) / u.CM1_J
    return _out(w**2 / (16.0 * math.log(2.0) * kt_cm1))


# ---------------------------------------------------------------------------
# Robin–Day class
# ---------------------------------------------------------------------------
#: 2 H_ab / lambda below this counts as negligible coupling (class I). Common practice, no source.
CLASS_I_RATIO = 0.01


def robin_day_class(coupling_cm1: float | None, reorganization_energy_kj_mol: float | None,
                    double_well: bool | None) -> dict:
    """Robin–Day class from 2 H_ab / lambda and from whether the computed surface has a double well.

    Class III when 2 H_ab >= lambda (the lower adiabatic surface has one minimum), class II when
    0 < 2 H_ab < lambda, class I when the coupling is negligible.
    Sources: M. B. Robin, P. Day, Adv. Inorg. Chem. Radiochem. 1967, 10, 247;
    B. S. Brunschwig, C. Creutz, N. Sutin, Chem. Soc. Rev. 2002, 31, 168 (2H_ab/lambda criterion).
    When both indicators exist and disagree, the computed surface (double well or not) decides
    and the reason says so.
    """
    ratio = None
    if coupling_cm1 is not None and reorganization_energy_kj_mol and reorganization_energy_kj_mol > 0:
        ratio = 2.0 * float(coupling_cm1) * u.CM1_KJ_MOL / float(reorganization_energy_kj_mol)
    by_ratio = None
    if ratio is not None and math.isfinite(ratio):
        by_ratio = "III" if ratio >= 1.0 else ("I" if ratio < CLASS_I_RATIO else "II")
    if double_well is None and by_ratio is None:
        return {"class": None, "ratio_2hab_over_lambda": ratio, "double_well": None,
                "reason": "neither a coupling/reorganization pair nor a double-well test is available"}
    if double_well is None:
        cls = by_ratio
        reason = f"2H_ab/lambda = {ratio:.3g} (no double-well test: no distinct minima and transition state)"
    elif double_well:
        if by_ratio in ("I", "II"):
            cls = by_ratio
            reason = f"double well found and 2H_ab/lambda = {ratio:.3g} < 1"
        elif by_ratio == "III":
            cls = "II"
            reason = (f"double well found on the computed surface although 2H_ab/lambda = {ratio:.3g} >= 1; "
                      "the surface decides (class II), the two-state estimate disagrees")
        else:
            cls = "II"
            reason = "double well found (distinct localized minima and a transition state); no 2H_ab/lambda"
    else:
        cls = "III"
        reason = ("no double well (one delocalized minimum)" +
                  (f"; 2H_ab/lambda = {ratio:.3g}" if ratio is not None else "") +
                  ("; the two-state estimate (< 1) disagrees, the surface decides" if by_ratio in ("I", "II") else ""))
    return {"class": cls, "ratio_2hab_over_lambda": ratio, "double_well": double_well, "reason": reason}


# ---------------------------------------------------------------------------
# Normal-mode analysis of the reorganization (harmonic, displaced oscillators)
# ---------------------------------------------------------------------------
def mode_reorganization_kj_mol(masses_amu, reactant_angstrom, product_angstrom, wavenumbers_cm1, displacements):
    """Per-mode reorganization energies lambda_j = (1/2) omega_j^2 Q_j^2, kJ/mol, of the reactant's
    harmonic surface displaced to the product geometry.

    Q_j = l_j . M^1/2 (R_P - R_R), with l_j the mass-weighted, normalized mode vector built from the
    printed Cartesian displacements d_j (l_j ~ M^1/2 d_j); R_P must already be superposed on R_R.
    Sum_j lambda_j is the harmonic estimate of E(R@P) - E(R@R); lambda_j / (h c nu_j) is the
    Huang–Rhys factor of mode j. Source: K. Huang, A. Rhys, Proc. R. Soc. A 1950, 204, 406;
    J. R. Reimers, J. Chem. Phys. 2001, 115, 9103 (displacement projection, Duschinsky rotation neglected).
    Imaginary and zero modes give 0. Returns an array (one value per mode).
    """
    m = np.asarray(masses_amu, dtype=float)
    dr = np.asarray(product_angstrom, dtype=float) - np.asarray(reactant_angstrom, dtype=float)
    sq = np.sqrt(m)[:, None]
    dq = (sq * dr).ravel()  # amu^1/2 angstrom
    out = []
    for w, d in zip(wavenumbers_cm1, displacements):
        vec = (sq * np.asarray(d, dtype=float)).ravel()
        norm = np.linalg.norm(vec)
        if w <= 0 or norm == 0:
            out.append(0.0)
            continue
        q = float(vec @ dq / norm) * math.sqrt(u.ATOMIC_MASS_KG) * u.ANGSTROM_M  # kg^1/2 m
        omega = 2.0 * u.PI * u.SPEED_OF_LIGHT_M_S * w * u.CM1_TO_M1  # rad s-1
        out.append(0.5 * omega**2 * q**2 / u.KJ_MOL_J)
    return np.asarray(out, dtype=float)


def effective_mode_cm1(mode_lambdas_kj_mol, wavenumbers_cm1) -> float | None:
    """Reorganization-weighted mean wavenumber of a set of modes, sum lambda_j nu_j / sum lambda_j,
    the usual single effective mode of the Marcus–Levich–Jortner rate (e.g. P. F. Barbara, T. J. Meyer,
    M. A. Ratner, J. Phys. Chem. 1996, 100, 13148; from memory). None when every lambda_j is 0."""
    lam = np.asarray(mode_lambdas_kj_mol, dtype=float)
    w = np.asarray(wavenumbers_cm1, dtype=float)
    total = float(lam.sum())
    return None if total <= 0 else float((lam * w).sum() / total)


def nuclear_frequency_cm1(mode_lambdas_kj_mol, wavenumbers_cm1) -> float | None:
    """Effective nuclear frequency (as a wavenumber) of the barrier crossing,
    nu_n = (sum lambda_j nu_j^2 / sum lambda_j)^1/2. Source: N. Sutin, Prog. Inorg. Chem. 1983, 30, 441
    (nu_n^2 = (nu_out^2 lambda_out + nu_in^2 lambda_in) / (lambda_out + lambda_in)). None when every lambda_j is 0."""
    lam = np.asarray(mode_lambdas_kj_mol, dtype=float)
    w = np.asarray(wavenumbers_cm1, dtype=float)
    total = float(lam.sum())
    return None if total <= 0 else float(math.sqrt((lam * w**2).sum() / total))
