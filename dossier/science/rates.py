"""Electron-transfer rate formulas: transition-state theory, nonadiabatic Marcus, Marcus–Levich–Jortner,
the two-state adiabatic model with its Landau–Zener transmission coefficient, and Arrhenius fits.

Small pure functions, each with its published source in the docstring; they broadcast with numpy
(floats in, floats out; arrays in, arrays out) so the uncertainty Monte Carlo can call them on sample
arrays. Conventions as in dossier.science.marcus (which re-exports every name here): delta_g0_kj_mol =
G(product) - G(reactant), lambda positive, H_ab a positive magnitude in cm-1, rates in s-1. Every
constant comes from dossier.units.
"""
from __future__ import annotations

import math
from typing import Any

import numpy as np
from scipy import special

from dossier import units as u

ArrayLike = Any


def _out(value):
    """Return a Python float for 0-d results, the array otherwise."""
    arr = np.asarray(value, dtype=float)
    return float(arr) if arr.ndim == 0 else arr


def _kj_mol_to_j(value_kj_mol):
    return np.asarray(value_kj_mol, dtype=float) * u.KJ_MOL_J


def _cm1_to_j(value_cm1):
    return np.asarray(value_cm1, dtype=float) * u.CM1_J


def adiabatic_barrier_kj_mol(reorganization_energy_kj_mol, delta_g0_kj_mol, coupling_cm1):
    """Barrier on the lower adiabatic surface of the two-state model, kJ/mol.

    dG* = (lambda + dG0)^2 / (4 lambda) - H_ab + H_ab^2 / (lambda + dG0)
    Source: B. S. Brunschwig, C. Creutz, N. Sutin, Chem. Soc. Rev. 2002, 31, 168, eq. 9
    (valid for H_ab small against lambda + dG0). When 2 H_ab >= lambda + dG0 the lower surface
    has a single minimum (class III) and the barrier is 0.
    """
    lam = np.asarray(reorganization_energy_kj_mol, dtype=float)
    dg0 = np.asarray(delta_g0_kj_mol, dtype=float)
    h = np.asarray(coupling_cm1, dtype=float) * u.CM1_KJ_MOL
    a = lam + dg0
    with np.errstate(divide="ignore", invalid="ignore"):
        barrier = a**2 / (4.0 * lam) - h + h**2 / a
    barrier = np.where(2.0 * h >= a, 0.0, barrier)
    return _out(np.maximum(barrier, 0.0))



# ---------------------------------------------------------------------------
# Rates
# ---------------------------------------------------------------------------
def _shift_factor(barrier_shift_kj_mol, temperature_k):
    """exp(-shift / RT): a shift of the activation free energy (kJ/mol) as a rate factor."""
    t = np.asarray(temperature_k, dtype=float)
    return np.exp(-np.asarray(barrier_shift_kj_mol, dtype=float) / (u.GAS_CONSTANT_J_MOL_K * t / 1000.0))


def eyring_rate_per_s(barrier_kj_mol, temperature_k, transmission_coefficient=1.0, reaction_path_degeneracy=1.0):
    """Transition-state theory rate, s-1: k = L kappa (k_B T / h) exp(-dG_act / RT).

    L is the reaction-path (symmetry) factor (dossier.science.degenerate; 1 unless stated).
    Source: H. Eyring, J. Chem. Phys. 1935, 3, 107 (eq. for the absolute rate); M. G. Evans,
    M. Polanyi, Trans. Faraday Soc. 1935, 31, 875.
    """
    t = np.asarray(temperature_k, dtype=float)
    g = np.asarray(barrier_kj_mol, dtype=float)
    kappa = np.asarray(transmission_coefficient, dtype=float) * np.asarray(reaction_path_degeneracy, dtype=float)
    return _out(kappa * u.BOLTZMANN_J_K * t / u.PLANCK_J_S * np.exp(-g / (u.GAS_CONSTANT_J_MOL_K * t / 1000.0)))


def marcus_barrier_kj_mol(reorganization_energy_kj_mol, delta_g0_kj_mol):
    """Classical Marcus activation free energy dG* = (lambda + dG0)^2 / (4 lambda), kJ/mol.
    Source: R. A. Marcus, J. Chem. Phys. 1956, 24, 966; R. A. Marcus, N. Sutin,
    Biochim. Biophys. Acta 1985, 811, 265, eq. 4."""
    lam = np.asarray(reorganization_energy_kj_mol, dtype=float)
    dg0 = np.asarray(delta_g0_kj_mol, dtype=float)
    return _out((lam + dg0) ** 2 / (4.0 * lam))


def marcus_nonadiabatic_rate_per_s(coupling_cm1, reorganization_energy_kj_mol, delta_g0_kj_mol, temperature_k,
                                   barrier_shift_kj_mol=0.0):
    """Nonadiabatic (golden-rule) Marcus rate, s-1.

    k = (2 pi / hbar) |H_ab|^2 (4 pi lambda k_B T)^-1/2 exp[-(dG0 + lambda)^2 / (4 lambda k_B T)].
    Source: R. A. Marcus, N. Sutin, Biochim. Biophys. Acta 1985, 811, 265, eq. 26 (classical
    nuclear limit); J. Jortner, J. Chem. Phys. 1976, 64, 4860.
    ``barrier_shift_kj_mol`` (0 by default) adds a level-of-theory error to the activation energy,
    k -> k exp(-shift / RT), so the uncertainty propagation can give every model the same barrier error.
    """
    h = _cm1_to_j(coupling_cm1)
    lam = _kj_mol_to_j(reorganization_energy_kj_mol)
    dg0 = _kj_mol_to_j(delta_g0_kj_mol)
    kt = u.BOLTZMANN_J_K * np.asarray(temperature_k, dtype=float)
    pref = 2.0 * u.PI / u.HBAR_J_S * h**2 / np.sqrt(4.0 * u.PI * lam * kt)
    return _out(pref * np.exp(-((dg0 + lam) ** 2) / (4.0 * lam * kt)) * _shift_factor(barrier_shift_kj_mol, temperature_k))


def huang_rhys_factor(inner_reorganization_kj_mol, mode_cm1):
    """Huang–Rhys factor S = lambda_i / (h c nu~) of one effective mode (dimensionless).
    Source: K. Huang, A. Rhys, Proc. R. Soc. A 1950, 204, 406; J. Jortner, J. Chem. Phys. 1976,
    64, 4860 (S = lambda_v / hbar omega)."""
    return _out(np.asarray(inner_reorganization_kj_mol, dtype=float) / (np.asarray(mode_cm1, dtype=float) * u.CM1_KJ_MOL))


def mlj_rate_per_s(coupling_cm1, solvent_reorganization_kj_mol, delta_g0_kj_mol, temperature_k, mode_cm1,
                   huang_rhys, n_max=40, barrier_shift_kj_mol=0.0):
    """Marcus–Levich–Jortner rate with one effective quantum mode, s-1.

    k = (2 pi / hbar) |H_ab|^2 (4 pi lambda_s k_B T)^-1/2
        sum_{n=0}^{n_max} e^-S S^n / n! exp[-(dG0 + lambda_s + n hbar omega)^2 / (4 lambda_s k_B T)]
    with lambda_s the classical (solvent and low-frequency) reorganization energy and S the
    Huang–Rhys factor of the quantum mode hbar omega (= h c nu~, nu~ = mode_cm1).
    Source: J. Jortner, J. Chem. Phys. 1976, 64, 4860, eq. 3.15 (low-temperature limit for the
    quantum mode, hbar omega >> k_B T). With S -> 0 it is the classical Marcus rate with lambda_s.
    ``barrier_shift_kj_mol`` (0 by default) adds a level-of-theory error to the activation energy,
    k -> k exp(-shift / RT), so the uncertainty propagation can give every model the same barrier error.
    """
    h = _cm1_to_j(coupling_cm1)
    lam_s = _kj_mol_to_j(solvent_reorganization_kj_mol)
    dg0 = _kj_mol_to_j(delta_g0_kj_mol)
    kt = u.BOLTZMANN_J_K * np.asarray(temperature_k, dtype=float)
    hw = _cm1_to_j(mode_cm1)
    s = np.asarray(huang_rhys, dtype=float)
    h, lam_s, dg0, kt, hw, s = np.broadcast_arrays(h, lam_s, dg0, kt, hw, s)
    n = np.arange(int(n_max) + 1, dtype=float)
    ex = (Ellipsis, None)
    log_fc = -s[ex] + np.where(n == 0, 0.0, n * np.log(np.where(s[ex] > 0, s[ex], 1.0))) - special.gammaln(n + 1.0)
    log_fc = np.where((s[ex] == 0) & (n > 0), -np.inf, log_fc)
    gauss = -((dg0[ex] + lam_s[ex] + n * hw[ex]) ** 2) / (4.0 * lam_s[ex] * kt[ex])
    total = np.exp(log_fc + gauss).sum(axis=-1)
    pref = 2.0 * u.PI / u.HBAR_J_S * h**2 / np.sqrt(4.0 * u.PI * lam_s * kt)
    return _out(pref * total * _shift_factor(barrier_shift_kj_mol, temperature_k))


def electronic_frequency_per_s(coupling_cm1, reorganization_energy_kj_mol, temperature_k):
    """Electronic frequency nu_el = (H_ab^2 / hbar) (pi / (lambda k_B T))^1/2, s-1.
    Source: M. D. Newton, N. Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437, eq. 3.9; B. S. Brunschwig,
    J. Logan, M. D. Newton, N. Sutin, J. Am. Chem. Soc. 1980, 102, 5798."""
    h = _cm1_to_j(coupling_cm1)
    lam = _kj_mol_to_j(reorganization_energy_kj_mol)
    kt = u.BOLTZMANN_J_K * np.asarray(temperature_k, dtype=float)
    return _out(h**2 / u.HBAR_J_S * np.sqrt(u.PI / (lam * kt)))


def landau_zener_parameter(coupling_cm1, reorganization_energy_kj_mol, temperature_k, nuclear_frequency_cm1):
    """Adiabaticity parameter 2 pi gamma = nu_el / (2 nu_n) of the Landau–Zener passage (dimensionless).

    >> 1: adiabatic (kappa -> 1); << 1: nonadiabatic (kappa -> nu_el / nu_n).
    nu_n = c nu~_n is the frequency of the nuclear motion along the transfer coordinate.
    Source: M. D. Newton, N. Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437, eqs. 3.7-3.9;
    B. S. Brunschwig, J. Logan, M. D. Newton, N. Sutin, J. Am. Chem. Soc. 1980, 102, 5798.
    """
    nu_el = np.asarray(electronic_frequency_per_s(coupling_cm1, reorganization_energy_kj_mol, temperature_k))
    nu_n = np.asarray(nuclear_frequency_cm1, dtype=float) * u.CM1_HZ
    return _out(nu_el / (2.0 * nu_n))


def landau_zener_probability(coupling_cm1, reorganization_energy_kj_mol, temperature_k, nuclear_frequency_cm1):
    """Single-passage probability of staying on the lower surface, P = 1 - exp(-nu_el / (2 nu_n)).
    Source: M. D. Newton, N. Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437, eq. 3.7."""
    g = np.asarray(landau_zener_parameter(coupling_cm1, reorganization_energy_kj_mol, temperature_k,
                                          nuclear_frequency_cm1))
    return _out(-np.expm1(-g))


def landau_zener_transmission_coefficient(coupling_cm1, reorganization_energy_kj_mol, temperature_k,
                                          nuclear_frequency_cm1):
    """Electronic transmission coefficient kappa_el = 2 P / (1 + P) (dimensionless, 0..1).
    Source: B. S. Brunschwig, J. Logan, M. D. Newton, N. Sutin, J. Am. Chem. Soc. 1980, 102, 5798;
    M. D. Newton, N. Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437, eq. 3.6."""
    p = np.asarray(landau_zener_probability(coupling_cm1, reorganization_energy_kj_mol, temperature_k,
                                            nuclear_frequency_cm1))
    return _out(2.0 * p / (1.0 + p))


def marcus_hush_adiabatic_rate_per_s(coupling_cm1, reorganization_energy_kj_mol, delta_g0_kj_mol, temperature_k,
                                     nuclear_frequency_cm1, barrier_shift_kj_mol=0.0):
    """Semiclassical two-state rate k = kappa_el nu_n exp(-dG*_ad / RT), s-1.

    dG*_ad from adiabatic_barrier_kj_mol (two-state model), kappa_el from the Landau–Zener
    transmission coefficient, nu_n = c nu~_n. In the nonadiabatic limit it tends to the
    golden-rule Marcus rate with the barrier lowered by the coupling terms.
    Source: N. Sutin, Prog. Inorg. Chem. 1983, 30, 441; M. D. Newton, N. Sutin,
    Annu. Rev. Phys. Chem. 1984, 35, 437, eq. 3.5; B. S. Brunschwig, C. Creutz, N. Sutin,
    Chem. Soc. Rev. 2002, 31, 168.
    ``barrier_shift_kj_mol`` (0 by default) adds a level-of-theory error to the activation energy,
    k -> k exp(-shift / RT), so the uncertainty propagation can give every model the same barrier error.
    """
    barrier = np.asarray(adiabatic_barrier_kj_mol(reorganization_energy_kj_mol, delta_g0_kj_mol, coupling_cm1))
    kappa = np.asarray(landau_zener_transmission_coefficient(coupling_cm1, reorganization_energy_kj_mol,
                                                             temperature_k, nuclear_frequency_cm1))
    t = np.asarray(temperature_k, dtype=float)
    nu_n = np.asarray(nuclear_frequency_cm1, dtype=float) * u.CM1_HZ
    return _out(kappa * nu_n * np.exp(-barrier / (u.GAS_CONSTANT_J_MOL_K * t / 1000.0))
                * _shift_factor(barrier_shift_kj_mol, temperature_k))


def arrhenius_fit(temperatures_k, rates_per_s) -> dict:
    """Arrhenius parameters from a rate–temperature series: ln k = ln A - Ea / (R T), least squares.

    Source: S. Arrhenius, Z. Phys. Chem. 1889, 4, 226; IUPAC Gold Book, "Arrhenius equation"
    (Ea = -R d ln k / d(1/T)). Needs at least two distinct temperatures and positive rates.
    Returns {"ea_kj_mol", "log10_a_per_s", "n_points", "t_min_k", "t_max_k"}.
    """
    t = np.asarray(temperatures_k, dtype=float).ravel()
    k = np.asarray(rates_per_s, dtype=float).ravel()
    if t.size != k.size:
        raise ValueError("temperatures and rates differ in length")
    ok = np.isfinite(k) & (k > 0) & np.isfinite(t) & (t > 0)
    t, k = t[ok], k[ok]
    if np.unique(t).size < 2:
        raise ValueError("an Arrhenius fit needs rates at two or more temperatures")
    slope, intercept = np.polyfit(1.0 / t, np.log(k), 1)
    return {"ea_kj_mol": float(-slope * u.GAS_CONSTANT_J_MOL_K / 1000.0),
            "log10_a_per_s": float(intercept / math.log(10.0)),
            "n_points": int(t.size), "t_min_k": float(t.min()), "t_max_k": float(t.max())}
