"""Outer-sphere (solvent) reorganization energy: Marcus's two-sphere continuum model, and a small
table of named solvents. Pure functions; constants from dossier.units only.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dossier import units as u
from dossier.errors import DossierError


class SolventError(DossierError):
    """Solvent data or geometry that the two-sphere model cannot use."""


@dataclass(frozen=True)
class Solvent:
    name: str
    refractive_index: float  # n_D
    static_dielectric: float  # epsilon_s
    source: str

    @property
    def optical_dielectric(self) -> float:
        """epsilon_op = n^2 (the optical dielectric constant)."""
        return self.refractive_index**2


_CRC = ("from memory: CRC Handbook of Chemistry and Physics (tables 'Physical constants of organic "
        "compounds', n_D at 20 C, and 'Permittivity (dielectric constant) of liquids', epsilon near 25 C)")

#: Named solvents: refractive index n_D and static dielectric constant epsilon_s. The values are
#: recalled, not looked up (see `source`); near room temperature (n_D at 20 C; the change to
#: 25 C is below 0.003, which moves 1/n^2 by under 0.5 %).
SOLVENTS: dict[str, Solvent] = {s.name: s for s in (
    Solvent("water", 1.3330, 78.36, _CRC),
    Solvent("acetonitrile", 1.3442, 35.94, _CRC),
    Solvent("dichloromethane", 1.4242, 8.93, _CRC),
    Solvent("chloroform", 1.4459, 4.81, _CRC),
    Solvent("tetrahydrofuran", 1.4050, 7.52, _CRC),
    Solvent("benzene", 1.5011, 2.27, _CRC),
    Solvent("toluene", 1.4961, 2.38, _CRC),
    Solvent("methanol", 1.3284, 32.66, _CRC),
    Solvent("dimethyl sulfoxide", 1.4793, 46.7, _CRC),
    Solvent("N,N-dimethylformamide", 1.4305, 36.7, _CRC),
)}


def pekar_factor(optical_dielectric: float, static_dielectric: float) -> float:
    """1/epsilon_op - 1/epsilon_s (the Pekar factor; R. A. Marcus, J. Chem. Phys. 1956, 24, 966)."""
    if not (optical_dielectric >= 1.0 and static_dielectric >= optical_dielectric):
        raise SolventError(f"dielectric constants must satisfy 1 <= n^2 <= epsilon_s; got n^2 = "
                           f"{optical_dielectric:g}, epsilon_s = {static_dielectric:g}")
    return 1.0 / optical_dielectric - 1.0 / static_dielectric


def two_sphere_reorganization_kj_mol(donor_radius_angstrom, acceptor_radius_angstrom, distance_angstrom,
                                     optical_dielectric: float, static_dielectric: float,
                                     charge_transferred_e: float = 1.0):
    """Outer-sphere reorganization energy of the two-sphere model, kJ/mol:

    lambda_out = (dq)^2 / (4 pi eps_0) (1/(2 a_D) + 1/(2 a_A) - 1/R) (1/n^2 - 1/eps_s),

    a_D, a_A the radii of the donor and acceptor spheres, R their centre-to-centre distance,
    dq the charge moved (e). Source: R. A. Marcus, J. Chem. Phys. 1956, 24, 966, eq. 97 (Gaussian
    units there; SI here with 4 pi eps_0); R. A. Marcus, N. Sutin, Biochim. Biophys. Acta 1985,
    811, 265, eq. 8. Valid for R >= a_D + a_A (the spheres do not overlap); for R < a_D + a_A
    the formula still gives a number but the model does not hold (callers say so).
    """
    a_d = np.asarray(donor_radius_angstrom, dtype=float)
    a_a = np.asarray(acceptor_radius_angstrom, dtype=float)
    r = np.asarray(distance_angstrom, dtype=float)
    if np.any(a_d <= 0) or np.any(a_a <= 0) or np.any(r <= 0):
        raise SolventError("radii and distance must be positive")
    geom_per_m = (1.0 / (2.0 * a_d) + 1.0 / (2.0 * a_a) - 1.0 / r) / u.ANGSTROM_M
    q = charge_transferred_e * u.ELEMENTARY_CHARGE_C
    joule = q * q / (4.0 * u.PI * u.VACUUM_PERMITTIVITY_F_M) * geom_per_m * pekar_factor(optical_dielectric,
                                                                                         static_dielectric)
    out = joule / u.KJ_MOL_J
    return float(out) if np.ndim(out) == 0 else out


def spheres_touch(donor_radius_angstrom: float, acceptor_radius_angstrom: float, distance_angstrom: float) -> bool:
    """True when the two spheres overlap (R < a_D + a_A): the two-sphere model is then outside
    the range where it was derived (Marcus 1956 assumes separate spheres)."""
    return distance_angstrom < donor_radius_angstrom + acceptor_radius_angstrom
