"""Ideal-gas thermochemistry of one molecule from its geometry and harmonic wavenumbers.

Rigid-rotor harmonic-oscillator (RRHO) partition functions, the same way for every program:

- translation: Sackur–Tetrode (McQuarrie, *Statistical Mechanics*, 1976, chapter 5);
- rotation: rigid rotor in the high-temperature limit, with the rotational symmetry number
  found from the geometry (McQuarrie 1976, chapters 6 and 8); linear molecules;
- vibration: harmonic oscillators, zero-point energy counted from the well bottom
  (McQuarrie 1976, chapters 6 and 8; Ochterski, "Thermochemistry in Gaussian", Gaussian Inc.
  white paper, 2000, "contributions from vibrational motion");
- electronic: spin degeneracy 2S+1 only, no excited states (Ochterski 2000, "contributions
  from electronic motion");
- low modes, optionally: Grimme's quasi-RRHO entropy (Chem. Eur. J. 2012, 18, 9955, eqs 4-8)
  or Truhlar's raising of real modes below 100 cm-1 to 100 cm-1 (Ribeiro, Marenich, Cramer,
  Truhlar, J. Phys. Chem. B 2011, 115, 14556).

Everything takes plain numbers (elements, coordinates in angstrom, wavenumbers in cm-1,
multiplicity), so this module does not depend on the reading layer; `thermo_from_record`
is a thin convenience over a `dossier.records.Calculation`.
Energies of the result are in hartree per molecule (the programs' convention), entropies
and heat capacities in J/(mol K). Constants come from dossier.units only.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field
from typing import Any, Sequence

import numpy as np

from dossier import units
from dossier.science.molecule import (SYMMETRY_TOLERANCE_ANGSTROM, ThermoError, _is_linear, atomic_masses_amu,
                                      detect_symmetry, principal_moments_amu_a2)

# -- method parameters (published values, not physical constants) -----------------------
#: Grimme 2012 (Chem. Eur. J. 18, 9955): the rotor/oscillator switch frequency omega_0 of eq 8.
GRIMME_W0_CM1 = 100.0
#: Grimme 2012, eq 8: exponent alpha of the Head-Gordon damping function.
GRIMME_ALPHA = 4
#: Grimme 2012, with eq 5: the average molecular moment of inertia B_av, kg m^2.
GRIMME_BAV_KG_M2 = 1.0e-44
#: Ribeiro et al. 2011 (J. Phys. Chem. B 115, 14556): real modes below this are raised to it.
TRUHLAR_RAISE_CM1 = 100.0

STANDARD_STATES = ("1atm", "1bar", "1M")
QRRHO_METHODS = ("none", "grimme", "truhlar")

#: Default geometric tolerance (angstrom) when testing symmetry operations on a geometry.

_R = units.GAS_CONSTANT_J_MOL_K
_K = units.BOLTZMANN_J_K
_H = units.PLANCK_J_S
_J_MOL_PER_HARTREE = units.HARTREE_KJ_MOL * 1000.0
_AMU_A2_TO_KG_M2 = units.ATOMIC_MASS_KG * units.ANGSTROM_M**2


# ========================================================================================
# Moments of inertia and rotational symmetry
# ========================================================================================


# ========================================================================================
# Partition-function pieces (each one equation, with its source)
# ========================================================================================
def translational_entropy_j_mol_k(mass_amu: float, temperature_k: float, pressure_pa: float) -> float:
    """Sackur–Tetrode: S_t = R [ln((2 pi m k T / h^2)^(3/2) k T / p) + 5/2].

    McQuarrie, *Statistical Mechanics* (1976), chapter 5; Ochterski, "Thermochemistry in
    Gaussian" (2000), "contributions from translation".
    """
    m = mass_amu * units.ATOMIC_MASS_KG
    q_per_volume = (2.0 * math.pi * m * _K * temperature_k / _H**2) ** 1.5
    return _R * (math.log(q_per_volume * _K * temperature_k / pressure_pa) + 2.5)


def rotational_temperatures_k(moments_amu_a2: Sequence[float]) -> list[float]:
    """Theta_r = h^2 / (8 pi^2 I k) for each principal moment (McQuarrie 1976, chapter 6)."""
    return [_H**2 / (8.0 * math.pi**2 * i * _AMU_A2_TO_KG_M2 * _K) if i > 0 else math.inf for i in moments_amu_a2]


def rotational_entropy_j_mol_k(
    moments_amu_a2: Sequence[float], temperature_k: float, symmetry_number: int, linear: bool
) -> float:
    """High-temperature rigid rotor entropy.

    Nonlinear: q_r = (pi^1/2 / sigma) (T^3 / (Theta_A Theta_B Theta_C))^(1/2),
    S_r = R (ln q_r + 3/2) (McQuarrie 1976, chapter 8). Linear: q_r = T / (sigma Theta_r),
    S_r = R (ln q_r + 1) (McQuarrie 1976, chapter 6). Both as in Ochterski 2000,
    "contributions from rotational motion".
    """
    theta = rotational_temperatures_k(moments_amu_a2)
    if linear:
        q = temperature_k / (symmetry_number * theta[-1])
        return _R * (math.log(q) + 1.0)
    q = math.sqrt(math.pi) / symmetry_number * math.sqrt(temperature_k**3 / (theta[0] * theta[1] * theta[2]))
    return _R * (math.log(q) + 1.5)


def harmonic_zpe_j_mol(wavenumber_cm1: float) -> float:
    """Zero-point energy of one harmonic mode, N_A h c nu~ / 2 (McQuarrie 1976, chapter 6; Ochterski 2000)."""
    return 0.5 * wavenumber_cm1 * units.CM1_KJ_MOL * 1000.0


#: Above this reduced frequency a mode is frozen: e^-x underflows and its thermal terms are 0.
_X_MAX = 700.0


def _x(wavenumber_cm1: float, temperature_k: float) -> float:
    """Reduced frequency x = h c nu~ / (k T) = Theta_v / T (McQuarrie 1976, chapter 6)."""
    return wavenumber_cm1 * units.CM1_J / (_K * temperature_k)


def harmonic_thermal_energy_j_mol(wavenumber_cm1: float, temperature_k: float) -> float:
    """Thermal (above zero-point) energy of one mode, R Theta_v / (e^x - 1).

    McQuarrie 1976, chapter 6, without the zero-point term; Ochterski 2000, "contributions
    from vibrational motion" (energy measured from the bottom of the well).
    """
    x = _x(wavenumber_cm1, temperature_k)
    return 0.0 if x > _X_MAX else _R * temperature_k * x / math.expm1(x)


def harmonic_entropy_j_mol_k(wavenumber_cm1: float, temperature_k: float) -> float:
    """S_v = R [x / (e^x - 1) - ln(1 - e^-x)] for one mode (McQuarrie 1976, chapter 6;
    Ochterski 2000; Grimme 2012, the oscillator entropy S_V that his eq 7 interpolates)."""
    x = _x(wavenumber_cm1, temperature_k)
    return 0.0 if x > _X_MAX else _R * (x / math.expm1(x) - math.log(-math.expm1(-x)))


def harmonic_heat_capacity_j_mol_k(wavenumber_cm1: float, temperature_k: float) -> float:
    """C_v = R x^2 e^x / (e^x - 1)^2 for one mode (McQuarrie 1976, chapter 6; Ochterski 2000)."""
    x = _x(wavenumber_cm1, temperature_k)
    return 0.0 if x > _X_MAX else _R * x * x * math.exp(-x) / (-math.expm1(-x)) ** 2


def free_rotor_entropy_j_mol_k(
    wavenumber_cm1: float, temperature_k: float, bav_kg_m2: float = GRIMME_BAV_KG_M2
) -> float:
    """Entropy of the free rotor that replaces a low mode, Grimme, Chem. Eur. J. 2012, 18, 9955.

    eq 4: mu = h / (8 pi^2 nu), the moment of inertia of a rotor with the mode's frequency;
    eq 5: mu' = mu B_av / (mu + B_av), bounded by the average molecular moment B_av;
    eq 6: S_R = R [1/2 + ln((8 pi^3 mu' k T / h^2)^(1/2))].
    As nu -> 0, mu' -> B_av and S_R tends to the free-rotor limit with moment B_av.
    """
    nu_s = wavenumber_cm1 * units.CM1_HZ
    mu = _H / (8.0 * math.pi**2 * nu_s) if nu_s > 0 else math.inf
    mu_prime = bav_kg_m2 if math.isinf(mu) else mu * bav_kg_m2 / (mu + bav_kg_m2)
    return _R * (0.5 + 0.5 * math.log(8.0 * math.pi**3 * mu_prime * _K * temperature_k / _H**2))


def grimme_weight(wavenumber_cm1: float, w0_cm1: float = GRIMME_W0_CM1, alpha: int = GRIMME_ALPHA) -> float:
    """Head-Gordon damping w = 1 / (1 + (omega_0 / omega)^alpha) (Grimme 2012, eq 8)."""
    return 1.0 / (1.0 + (w0_cm1 / wavenumber_cm1) ** alpha)


def grimme_entropy_j_mol_k(
    wavenumber_cm1: float,
    temperature_k: float,
    *,
    w0_cm1: float = GRIMME_W0_CM1,
    alpha: int = GRIMME_ALPHA,
    bav_kg_m2: float = GRIMME_BAV_KG_M2,
) -> float:
    """Quasi-RRHO entropy of one mode, S = w S_V + (1 - w) S_R (Grimme 2012, eq 7)."""
    w = grimme_weight(wavenumber_cm1, w0_cm1, alpha)
    return w * harmonic_entropy_j_mol_k(wavenumber_cm1, temperature_k) + (1.0 - w) * free_rotor_entropy_j_mol_k(
        wavenumber_cm1, temperature_k, bav_kg_m2
    )


def standard_state_pressure_pa(standard_state: str, temperature_k: float) -> float:
    """Pressure that gives the standard state's translational entropy.

    1atm = 101325 Pa; 1bar = 1e5 Pa; 1M (1 mol/L) is the ideal-gas pressure of that
    concentration, p = c R T (24.46 atm at 298.15 K), so that G(1M) - G(1atm) =
    R T ln(c R T / 1 atm) (Ben-Naim, *Solvation Thermodynamics*, 1987; Cramer,
    *Essentials of Computational Chemistry*, 2nd ed. 2004, standard-state conventions of
    solvation free energies).
    """
    if standard_state == "1atm":
        return units.STANDARD_ATMOSPHERE_PA
    if standard_state == "1bar":
        return units.BAR_PA
    if standard_state == "1M":
        return 1.0 / units.LITRE_M3 * _R * temperature_k
    raise ThermoError(f"unknown standard state {standard_state!r}; use one of {', '.join(STANDARD_STATES)}")


# ========================================================================================
# Result and driver
# ========================================================================================
@dataclass
class Contribution:
    """One kind of motion: thermal energy (incl. ZPE for vibration), enthalpy, entropy, Cv."""

    energy_hartree: float
    enthalpy_hartree: float
    entropy_j_mol_k: float
    heat_capacity_j_mol_k: float
    minus_ts_hartree: float

    @property
    def gibbs_hartree(self) -> float:
        return self.enthalpy_hartree + self.minus_ts_hartree


@dataclass
class ThermoResult:
    temperature_k: float
    pressure_pa: float
    standard_state: str
    qrrho: str
    symmetry_number: int
    symmetry_number_source: str  # "geometry" or "given"
    point_group: str | None
    linear: bool
    multiplicity: int
    frequency_scale: float
    masses: str
    mass_amu: float
    moments_amu_a2: list[float]
    n_imaginary: int
    imaginary_cm1: list[float]
    wavenumbers_used_cm1: list[float]  # real, scaled (and raised for "truhlar") modes entering Q_vib
    zpe_hartree: float
    thermal_energy_correction_hartree: float  # U(T) - E_el, including the ZPE
    enthalpy_correction_hartree: float  # H(T) - E_el
    gibbs_correction_hartree: float  # G(T) - E_el
    entropy_j_mol_k: float
    heat_capacity_cv_j_mol_k: float
    contributions: dict[str, Contribution]
    modes: list[dict[str, float]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def entropy_hartree_per_k(self) -> float:
        return self.entropy_j_mol_k / _J_MOL_PER_HARTREE

    def to_dict(self, *, with_modes: bool = False) -> dict[str, Any]:
        d = asdict(self)
        d["contributions"] = {
            k: asdict(v) | {"gibbs_hartree": v.gibbs_hartree} for k, v in self.contributions.items()
        }
        if not with_modes:
            d.pop("modes")
        return d


def _check_settings(qrrho: str, temperature_k: float, frequency_scale: float, multiplicity) -> None:
    if qrrho not in QRRHO_METHODS:
        raise ThermoError(f"unknown qRRHO treatment {qrrho!r}; use one of {', '.join(QRRHO_METHODS)}")
    if not (temperature_k > 0 and math.isfinite(temperature_k)):
        raise ThermoError(f"temperature must be positive, got {temperature_k} K")
    if not (frequency_scale > 0):
        raise ThermoError(f"frequency scale factor must be positive, got {frequency_scale}")
    if multiplicity is None or int(multiplicity) < 1:
        raise ThermoError(f"spin multiplicity must be a positive integer, got {multiplicity}")


def _pressure(pressure_pa: float | None, standard_state: str, temperature_k: float) -> tuple[float, str]:
    """The pressure of the translational entropy (Pa) and how it was set."""
    if pressure_pa is None:
        return standard_state_pressure_pa(standard_state, temperature_k), standard_state
    if not pressure_pa > 0:
        raise ThermoError(f"pressure must be positive, got {pressure_pa} Pa")
    return float(pressure_pa), f"{float(pressure_pa):.6g} Pa"


def _symmetry_number(elements, x: np.ndarray, m_amu: list[float], given: int | None,
                     tolerance_angstrom: float) -> tuple[int, str, str | None]:
    """(rotational symmetry number, where it came from, point group if detected)."""
    if len(x) == 1:
        return 1, "monatomic", "K"
    if given is not None:
        if int(given) < 1:
            raise ThermoError(f"symmetry number must be a positive integer, got {given}")
        return int(given), "given", None
    info = detect_symmetry(elements, x, masses_amu=m_amu, tolerance_angstrom=tolerance_angstrom)
    return info.symmetry_number, "geometry", info.point_group


def _vibrational_contribution(real: list[float], used: list[float], t: float, qrrho: str, w0_cm1: float,
                              alpha: int, bav_kg_m2: float) -> tuple[Contribution, list[dict], float]:
    """Harmonic (or Grimme quasi-RRHO entropy) vibrational part: (contribution, per-mode rows, ZPE in Eh)."""
    modes = []
    zpe = e_v = s_v = c_v = 0.0
    for w0, w in zip(real, used):
        s_ho = harmonic_entropy_j_mol_k(w, t)
        if qrrho == "grimme":
            weight = grimme_weight(w, w0_cm1, alpha)
            s_fr = free_rotor_entropy_j_mol_k(w, t, bav_kg_m2)
            s = weight * s_ho + (1.0 - weight) * s_fr
            modes.append({"wavenumber_cm1": w0, "used_cm1": w, "entropy_harmonic_j_mol_k": s_ho,
                          "entropy_free_rotor_j_mol_k": s_fr, "weight": weight, "entropy_j_mol_k": s})
        else:
            s = s_ho
            modes.append({"wavenumber_cm1": w0, "used_cm1": w, "entropy_j_mol_k": s})
        zpe += harmonic_zpe_j_mol(w)
        e_v += harmonic_thermal_energy_j_mol(w, t)
        s_v += s
        c_v += harmonic_heat_capacity_j_mol_k(w, t)
    zpe_h = zpe / _J_MOL_PER_HARTREE
    vib_e = zpe_h + e_v / _J_MOL_PER_HARTREE
    return Contribution(vib_e, vib_e, s_v, c_v, -t * s_v / _J_MOL_PER_HARTREE), modes, zpe_h


def _modes_used(waves: list[float], frequency_scale: float, qrrho: str, truhlar_raise_cm1: float,
                notes: list[str]) -> tuple[list[float], list[float], list[float]]:
    """(imaginary, real scaled, real as used) wavenumbers; what was left out or raised goes to notes."""
    imaginary = [w for w in waves if w < 0]
    real = [w * frequency_scale for w in waves if w > 0]
    if any(w == 0 for w in waves):
        notes.append(f"{sum(1 for w in waves if w == 0)} zero wavenumber(s) left out")
    if imaginary:
        notes.append(f"{len(imaginary)} imaginary mode(s) left out of the vibrational partition function")
    used = [max(w, truhlar_raise_cm1) for w in real] if qrrho == "truhlar" else list(real)
    if qrrho == "truhlar":
        n_raised = sum(1 for w in real if w < truhlar_raise_cm1)
        notes.append(f"{n_raised} mode(s) below {truhlar_raise_cm1:g} cm-1 raised to {truhlar_raise_cm1:g} cm-1")
    return imaginary, real, used


def _translation_and_rotation(mass_amu: float, moments, t: float, p: float, sigma: int, linear: bool,
                              n_atoms: int) -> tuple[Contribution, Contribution]:
    rt_hartree = _R * t / _J_MOL_PER_HARTREE
    # translation (McQuarrie 1976, chapter 5): E = 3/2 RT, H = E + pV = 5/2 RT, Cv = 3/2 R
    s_t = translational_entropy_j_mol_k(mass_amu, t, p)
    trans = Contribution(1.5 * rt_hartree, 2.5 * rt_hartree, s_t, 1.5 * _R, -t * s_t / _J_MOL_PER_HARTREE)
    # rotation (McQuarrie 1976, chapters 6 and 8): E = RT (linear) or 3/2 RT
    if n_atoms == 1:
        return trans, Contribution(0.0, 0.0, 0.0, 0.0, 0.0)
    s_r = rotational_entropy_j_mol_k(moments, t, sigma, linear)
    e_r = (1.0 if linear else 1.5) * rt_hartree
    c_r = (1.0 if linear else 1.5) * _R
    return trans, Contribution(e_r, e_r, s_r, c_r, -t * s_r / _J_MOL_PER_HARTREE)


def _electronic_contribution(multiplicity: int, t: float) -> Contribution:
    """Spin degeneracy only (Ochterski 2000, electronic motion): S = R ln(2S+1)."""
    s_e = _R * math.log(int(multiplicity))
    return Contribution(0.0, 0.0, s_e, 0.0, -t * s_e / _J_MOL_PER_HARTREE)


def _geometry_and_masses(
    elements: Sequence[str], coordinates_angstrom, masses: str, masses_amu: Sequence[float] | None
) -> tuple[np.ndarray, list[float]]:
    """Coordinates as an (N, 3) array and the atomic masses (given, or from the element table)."""
    x = np.asarray(coordinates_angstrom, dtype=float).reshape(-1, 3)
    n_atoms = len(x)
    if n_atoms == 0 or len(elements) != n_atoms:
        raise ThermoError(f"{len(elements)} elements but {n_atoms} coordinates")
    return x, list(masses_amu) if masses_amu is not None else atomic_masses_amu(elements, masses)


def _checked_wavenumbers(wavenumbers_cm1: Sequence[float], n_atoms: int, linear: bool, check: bool) -> list[float]:
    """The wavenumbers as floats; with `check`, exactly 3N-6 (3N-5 if linear) of them or a ThermoError."""
    expected = 0 if n_atoms == 1 else (3 * n_atoms - 5 if linear else 3 * n_atoms - 6)
    waves = [float(w) for w in wavenumbers_cm1]
    if check and len(waves) != expected:
        raise ThermoError(
            f"expected {expected} vibrational wavenumbers (3N-{5 if linear else 6} for "
            f"{'a linear' if linear else 'a nonlinear'} molecule of {n_atoms} atoms), got {len(waves)}; "
            "translations and rotations must be removed"
        )
    return waves


def _summed_corrections(contributions: dict[str, Contribution], t: float) -> dict[str, float]:
    """ThermoResult's totals: U, H and G corrections (hartree), S and Cv (J/mol/K); G = H - T S."""
    u_corr = sum(c.energy_hartree for c in contributions.values())
    h_corr = sum(c.enthalpy_hartree for c in contributions.values())
    s_tot = sum(c.entropy_j_mol_k for c in contributions.values())
    cv_tot = sum(c.heat_capacity_j_mol_k for c in contributions.values())
    g_corr = h_corr - t * s_tot / _J_MOL_PER_HARTREE
    return {
        "thermal_energy_correction_hartree": u_corr,
        "enthalpy_correction_hartree": h_corr,
        "gibbs_correction_hartree": g_corr,
        "entropy_j_mol_k": s_tot,
        "heat_capacity_cv_j_mol_k": cv_tot,
    }


def rrho(
    elements: Sequence[str],
    coordinates_angstrom,
    wavenumbers_cm1: Sequence[float],
    multiplicity: int,
    temperature_k: float,
    *,
    pressure_pa: float | None = None,
    standard_state: str = "1atm",
    qrrho: str = "none",
    symmetry_number: int | None = None,
    frequency_scale: float = 1.0,
    masses: str = "isotopic",
    masses_amu: Sequence[float] | None = None,
    symmetry_tolerance_angstrom: float = SYMMETRY_TOLERANCE_ANGSTROM,
    grimme_w0_cm1: float = GRIMME_W0_CM1,
    grimme_alpha: int = GRIMME_ALPHA,
    grimme_bav_kg_m2: float = GRIMME_BAV_KG_M2,
    truhlar_raise_cm1: float = TRUHLAR_RAISE_CM1,
    check_mode_count: bool = True,
) -> ThermoResult:
    """Ideal-gas RRHO (or quasi-RRHO) thermal corrections of one molecule.

    wavenumbers_cm1: the 3N-6 (3N-5 if linear) normal modes, imaginary ones as negative
    numbers; those are left out of the partition function (a transition state's reaction
    coordinate) and counted in `n_imaginary`. All wavenumbers are multiplied by
    `frequency_scale` first (ZPE, enthalpy and entropy alike).
    pressure_pa, when given, sets the pressure of the translational entropy and overrides
    `standard_state`; otherwise the standard state's pressure is used (1M = c R T).
    qrrho: "none" (harmonic), "grimme" (entropy interpolated, Grimme 2012; energies harmonic),
    "truhlar" (real modes below 100 cm-1 raised to 100 cm-1 in the whole vibrational
    partition function, Ribeiro et al. 2011).
    The corrections are relative to the electronic energy at the well bottom:
    H = E_el + ZPE + E_t + E_r + E_v(T) + k T; G = H - T S (Ochterski 2000, "thermochemistry output" section).
    """
    _check_settings(qrrho, temperature_k, frequency_scale, multiplicity)
    x, m_amu = _geometry_and_masses(elements, coordinates_angstrom, masses, masses_amu)
    n_atoms = len(x)
    mass_total = float(sum(m_amu))

    p, state_label = _pressure(pressure_pa, standard_state, temperature_k)

    moments, _ = principal_moments_amu_a2(m_amu, x)
    linear = n_atoms > 1 and _is_linear(moments, n_atoms)
    notes: list[str] = []
    sigma, source, point_group = _symmetry_number(elements, x, m_amu, symmetry_number, symmetry_tolerance_angstrom)

    waves = _checked_wavenumbers(wavenumbers_cm1, n_atoms, linear, check_mode_count)
    imaginary, real, used = _modes_used(waves, frequency_scale, qrrho, truhlar_raise_cm1, notes)

    t = float(temperature_k)
    trans, rot = _translation_and_rotation(mass_total, moments, t, p, sigma, linear, n_atoms)
    vib, modes, zpe_h = _vibrational_contribution(real, used, t, qrrho, grimme_w0_cm1, grimme_alpha, grimme_bav_kg_m2)
    elec = _electronic_contribution(multiplicity, t)

    contributions = {"translational": trans, "rotational": rot, "vibrational": vib, "electronic": elec}
    return ThermoResult(
        temperature_k=t,
        pressure_pa=p,
        standard_state=state_label,
        qrrho=qrrho,
        symmetry_number=sigma,
        symmetry_number_source=source,
        point_group=point_group,
        linear=linear,
        multiplicity=int(multiplicity),
        frequency_scale=float(frequency_scale),
        masses="given" if masses_amu is not None else masses,
        mass_amu=mass_total,
        moments_amu_a2=[float(v) for v in moments],
        n_imaginary=len(imaginary),
        imaginary_cm1=imaginary,
        wavenumbers_used_cm1=used,
        zpe_hartree=zpe_h,
        **_summed_corrections(contributions, t),
        contributions=contributions,
        modes=modes,
        notes=notes,
    )


def standard_state_correction_kj_mol(temperature_k: float, to_state: str = "1M", from_state: str = "1atm") -> float:
    """G(to) - G(from) of an ideal gas: R T ln(p_to / p_from); 1 atm -> 1 M at 298.15 K is
    R T ln(24.46) = +7.92 kJ/mol (1.89 kcal/mol; Cramer 2004)."""
    p_to = standard_state_pressure_pa(to_state, temperature_k)
    p_from = standard_state_pressure_pa(from_state, temperature_k)
    return _R * temperature_k * math.log(p_to / p_from) / 1000.0


def thermo_from_record(calc, temperature_k: float, **kw) -> ThermoResult:
    """`rrho` on a `dossier.records.Calculation` (its final geometry, modes and multiplicity)."""
    where = getattr(getattr(calc, "source", None), "path", None)
    if calc.vibrations is None or not calc.vibrations.wavenumbers_cm1:
        if calc.n_atoms != 1:
            raise ThermoError("no vibrational frequencies in this file; thermochemistry needs a frequency job", where)
    if not calc.coordinates_angstrom:
        raise ThermoError("no geometry in this file", where)
    given = kw.pop("multiplicity", None)
    mult = calc.multiplicity if calc.multiplicity is not None else given
    if mult is None:
        raise ThermoError("the spin multiplicity is not in this file; give it explicitly", where)
    try:
        return rrho(
            calc.elements,
            calc.coordinates_angstrom,
            calc.vibrations.wavenumbers_cm1 if calc.vibrations else [],
            mult,
            temperature_k,
            **kw,
        )
    except ThermoError as exc:
        if exc.where is None and where is not None:
            raise ThermoError(exc.reason, where) from None
        raise
