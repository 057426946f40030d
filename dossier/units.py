"""The only home of physical constants and unit conversions.

Every value comes from scipy.constants (CODATA, the edition scipy ships; scipy >= 1.15
ships CODATA 2022). No other module types a constant by hand.
"""
from __future__ import annotations

import math

from scipy import constants as _c

# Fundamental constants, SI
BOLTZMANN_J_K = _c.k
PLANCK_J_S = _c.h
HBAR_J_S = _c.hbar
AVOGADRO_PER_MOL = _c.N_A
GAS_CONSTANT_J_MOL_K = _c.R
SPEED_OF_LIGHT_M_S = _c.c
ELEMENTARY_CHARGE_C = _c.e
ATOMIC_MASS_KG = _c.atomic_mass
STANDARD_ATMOSPHERE_PA = _c.atm
BAR_PA = _c.bar
PI = math.pi

# Energy conversions
HARTREE_J = _c.physical_constants["Hartree energy"][0]
HARTREE_EV = _c.physical_constants["Hartree energy in eV"][0]
HARTREE_KJ_MOL = HARTREE_J * _c.N_A / 1000.0
KCAL_KJ = _c.calorie  # thermochemical calorie, 4.184 J
HARTREE_KCAL_MOL = HARTREE_KJ_MOL / KCAL_KJ
EV_J = _c.eV
EV_KJ_MOL = _c.eV * _c.N_A / 1000.0
# wavenumber (cm-1) <-> energy: E = h c nu~, with nu~ in m-1 = 100 x cm-1
CM1_J = _c.h * _c.c * 100.0
CM1_KJ_MOL = CM1_J * _c.N_A / 1000.0
HARTREE_CM1 = HARTREE_J / CM1_J
EV_CM1 = _c.eV / CM1_J
# photon wavelength in nm from cm-1: lambda = 1e7 / nu~
NM_CM1 = 1.0e7

# Lengths and dipoles
BOHR_ANGSTROM = _c.physical_constants["Bohr radius"][0] * 1e10
DEBYE_C_M = 1e-21 / _c.c
AU_DIPOLE_C_M = _c.physical_constants["atomic unit of electric dipole mom."][0]
AU_DIPOLE_DEBYE = AU_DIPOLE_C_M / DEBYE_C_M

ENERGY_UNITS_FROM_KJ_MOL = {
    "kJ/mol": 1.0,
    "kcal/mol": 1.0 / KCAL_KJ,
    "eV": 1.0 / EV_KJ_MOL,
    "cm-1": 1.0 / CM1_KJ_MOL,
}


def hartree_to_kj_mol(e_hartree: float) -> float:
    return e_hartree * HARTREE_KJ_MOL


def kj_mol_to(value_kj_mol: float, unit: str) -> float:
    """Convert kJ/mol to one of ENERGY_UNITS_FROM_KJ_MOL's units."""
    return value_kj_mol * ENERGY_UNITS_FROM_KJ_MOL[unit]


def ev_to_cm1(e_ev: float) -> float:
    return e_ev * EV_CM1


def cm1_to_kj_mol(nu_cm1: float) -> float:
    return nu_cm1 * CM1_KJ_MOL


def kj_mol_to_cm1(e_kj_mol: float) -> float:
    return e_kj_mol / CM1_KJ_MOL


def rt_kj_mol(temperature_k: float) -> float:
    return GAS_CONSTANT_J_MOL_K * temperature_k / 1000.0

# Added for the electron-transfer analysis (dossier/marcus.py)
VACUUM_PERMITTIVITY_F_M = _c.epsilon_0
# molar absorptivity: 1 M-1 cm-1 = 1 L mol-1 cm-1 = 1e-3 m3 mol-1 / 1e-2 m = 0.1 m2 mol-1
M1_CM1_TO_M2_MOL = _c.liter / _c.centi
ANGSTROM_M = _c.angstrom
CM1_TO_M1 = 1.0 / _c.centi  # wavenumber cm-1 -> m-1
CM1_HZ = _c.c / _c.centi  # frequency (s-1) of a 1 cm-1 wavenumber: nu = c nu~
KJ_MOL_J = 1000.0 / _c.N_A  # one kJ/mol as energy per molecule, J

# Added for thermochemistry (dossier/thermo.py): 1 mol/L standard state, c = 1 / LITRE_M3 mol m-3
LITRE_M3 = _c.liter

# Temperatures the dossier accepts anywhere (manifest, measurements, command line), K: below 1 K and
# above 5000 K the rigid-rotor/harmonic models and every rate formula here are meaningless
# (common practice, no source).
TEMPERATURE_RANGE_K = (1.0, 5000.0)

# Frequency scale factors the dossier accepts (manifest frequency_scale, thermo --scale): published
# factors lie between about 0.85 and 1.05; outside 0.5-2 a factor is a typing error (common practice,
# no source).
FREQUENCY_SCALE_RANGE = (0.5, 2.0)
# Quasi-RRHO switch frequencies accepted (thermo --qrrho-cutoff), cm-1 (common practice, no source).
QRRHO_CUTOFF_RANGE_CM1 = (1.0, 1000.0)
# Pressures accepted for the translational entropy (thermo --pressure), Pa: 1 mPa to 1 GPa, where an
# ideal gas is at least a defined model (common practice, no source).
PRESSURE_RANGE_PA = (1e-3, 1e9)
