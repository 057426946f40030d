"""The Calculation record: one normalized description of one output file.

Everything downstream of the reading layer works on these records only; nothing
re-reads a log. Units are fixed here, whatever program wrote the file:

- energies in hartree (``*_hartree``), excitation energies in eV and cm-1
- lengths in angstrom, wavenumbers in cm-1 (imaginary modes as negative numbers)
- IR intensities in km/mol, dipoles in debye, transition dipoles in atomic units (e bohr)
- atom indices are 0-based in code; the manifest and the report use 1-based numbers

Records round-trip through plain JSON (`to_dict` / `from_dict`) for the cache.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any

#: Bump when the reading layer changes what it stores: stale cache entries are re-read.
RECORD_SCHEMA_VERSION = 2

ELEMENT_SYMBOLS = (
    "X H He Li Be B C N O F Ne Na Mg Al Si P S Cl Ar K Ca Sc Ti V Cr Mn Fe Co Ni Cu Zn "
    "Ga Ge As Se Br Kr Rb Sr Y Zr Nb Mo Tc Ru Rh Pd Ag Cd In Sn Sb Te I Xe Cs Ba La Ce Pr "
    "Nd Pm Sm Eu Gd Tb Dy Ho Er Tm Yb Lu Hf Ta W Re Os Ir Pt Au Hg Tl Pb Bi Po At Rn"
).split()

#: Status words. Only "ok" means a complete, normally terminated, converged run.
#: "incomplete": the run ended normally but lacks what its input asked for (frequencies, the
#: energy of the requested level); the reason names what is missing.
STATUS_WORDS = ("ok", "not-converged", "truncated", "failed", "incomplete", "unsupported", "unreadable")


@dataclass(frozen=True)
class Source:
    path: str  # as given by the caller (relative paths stay relative); "FILE#jobN" names one job of a file
    sha256: str  # of the file's bytes on disk (compressed, if it is)
    size_bytes: int
    encoding: str | None = None  # how the text was got, when not plain UTF-8: "gzip", "UTF-16LE", "xz, UTF-16LE"
    job: int | None = None  # 1-based job within a file holding several (Gaussian Link1, ORCA $new_job)
    jobs_in_file: int = 1


@dataclass
class LevelOfTheory:
    method: str | None = None  # family: "HF", "DFT", "MP2", "CCSD", "CCSD(T)", "GFN2-xTB", ...
    functional: str | None = None  # e.g. "B3LYP", "BHLYP"; None for wavefunction methods
    basis: str | None = None  # e.g. "6-31G*", "STO-3G"
    dispersion: str | None = None  # e.g. "D3(BJ)"
    solvation: str | None = None  # e.g. "COSMO (eps=35.7)"
    unrestricted: bool | None = None
    # excited-state method of the job ("TDDFT", "CIS", "EOM-CCSD", "ROCIS", ...); `method` and
    # the energy are then those of the ground-state reference (TDDFT -> DFT, EOM-CCSD -> CCSD)
    excited_method: str | None = None

    def label(self) -> str:
        """Short human label, e.g. 'BHLYP/6-31G* COSMO (eps=35.7)'."""
        head = self.functional or self.method or "unknown method"
        text = f"{head}/{self.basis}" if self.basis else head
        if self.dispersion:
            text += f"-{self.dispersion}"
        if self.solvation:
            text += f" {self.solvation}"
        return text


@dataclass
class RunStatus:
    word: str = "ok"  # one of STATUS_WORDS
    normal_termination: bool | None = None
    scf_converged: bool | None = None
    optimization_converged: bool | None = None  # None when the job was no optimisation
    reason: str | None = None  # why the word is not "ok"


@dataclass
class Vibrations:
    """Real normal modes only: translations and rotations removed (3N-6, or 3N-5 if linear)."""

    wavenumbers_cm1: list[float]  # ascending; imaginary modes negative
    displacements: list[list[list[float]]] | None = None  # per mode, N x 3, as printed
    ir_intensities_km_mol: list[float] | None = None

    @property
    def n_imaginary(self) -> int:
        return sum(1 for w in self.wavenumbers_cm1 if w < 0)


@dataclass
class ExcitedState:
    """One excited state. `contributions` are (from MO, to MO, coefficient) with 1-based MO
    numbers and the spin letter ("35a" -> "36a"), coefficients normalized so that their squares
    sum to about 1 over all excitations (cclib's convention: Gaussian's printed restricted
    coefficients are multiplied by sqrt(2))."""

    energy_ev: float
    energy_cm1: float
    oscillator_strength: float | None = None
    symmetry: str | None = None  # e.g. "Doublet-A", "Singlet-Bu"
    transition_dipole_au: list[float] | None = None  # ground -> this state, e bohr
    s2: float | None = None  # <S^2> of the excited state, where printed (unrestricted TDDFT)
    contributions: list[tuple[str, str, float]] = field(default_factory=list)  # (from, to, coef)


@dataclass
class PrintedThermo:
    """Thermochemistry as the program printed it, normalized to totals in hartree.

    Kept for comparison only: the project computes its own (dossier.thermo).
    """

    temperature_k: float | None = None
    pressure_pa: float | None = None
    zpe_hartree: float | None = None  # zero-point energy (correction)
    enthalpy_hartree: float | None = None  # total H = E_el + thermal correction
    gibbs_hartree: float | None = None  # total G
    entropy_hartree_per_k: float | None = None


@dataclass
class Orbitals:
    energies_hartree: list[list[float | None]]  # one list per spin channel (alpha[, beta]); None = not printed
    homo_indices: list[int]  # 0-based, per spin channel
    coefficients: list[list[list[float]]] | None = None  # per spin: n_mo x n_basis
    basis_labels: list[str] | None = None
    basis_atoms: list[int] | None = None  # 0-based atom index of each basis function
    overlap: list[list[float]] | None = None  # n_basis x n_basis


@dataclass
class Calculation:
    source: Source
    program: str | None = None  # "Gaussian", "ORCA", "Q-Chem", "NWChem", "Psi4", "xtb", ...
    program_version: str | None = None
    job_kinds: list[str] = field(default_factory=list)  # "optimization", "frequencies", "single-point", "excited-states"
    level: LevelOfTheory = field(default_factory=LevelOfTheory)
    charge: int | None = None
    multiplicity: int | None = None
    s2: float | None = None  # <S^2> of the final wavefunction, where printed
    status: RunStatus = field(default_factory=RunStatus)
    problems: list[str] = field(default_factory=list)
    elements: list[str] = field(default_factory=list)
    coordinates_angstrom: list[list[float]] = field(default_factory=list)  # final geometry, N x 3
    optimization_energies_hartree: list[float] = field(default_factory=list)
    energies_hartree: dict[str, float] = field(default_factory=dict)  # {"scf": .., "mp2": .., "ccsd(t)": ..}
    energy_hartree: float | None = None  # final energy at the level the job asked for (see energy_level)
    energy_level: str | None = None  # the energies_hartree key energy_hartree was taken from
    scf_energy_hartree: float | None = None
    vibrations: Vibrations | None = None
    printed_thermo: PrintedThermo | None = None
    charges: dict[str, list[float]] = field(default_factory=dict)  # {"mulliken": [...], "lowdin": [...]}
    spin_populations: dict[str, list[float]] = field(default_factory=dict)
    excited_states: list[ExcitedState] = field(default_factory=list)
    orbitals: Orbitals | None = None
    dipole_debye: list[float] | None = None
    geometry_source: str | None = None  # where coordinates_angstrom came from when not the log itself
    coordinate_file: str | None = None  # input coordinate file the log names (xtb), as printed
    reader_version: int = RECORD_SCHEMA_VERSION

    # -- derived quantities -------------------------------------------------
    @property
    def n_atoms(self) -> int:
        return len(self.elements)

    @property
    def atomic_numbers(self) -> list[int]:
        return [ELEMENT_SYMBOLS.index(e) for e in self.elements]

    @property
    def n_imaginary(self) -> int | None:
        return self.vibrations.n_imaginary if self.vibrations else None

    @property
    def s2_ideal(self) -> float | None:
        """S(S+1) for the record's multiplicity."""
        if self.multiplicity is None:
            return None
        s = (self.multiplicity - 1) / 2.0
        return s * (s + 1.0)

    @property
    def s2_deviation(self) -> float | None:
        if self.s2 is None or self.s2_ideal is None:
            return None
        return self.s2 - self.s2_ideal

    @property
    def formula(self) -> str:
        """Hill formula (C first, H second, then alphabetical)."""
        counts: dict[str, int] = {}
        for e in self.elements:
            counts[e] = counts.get(e, 0) + 1
        order = [e for e in ("C", "H") if e in counts and "C" in counts]
        order += sorted(e for e in counts if e not in order)
        return "".join(f"{e}{counts[e] if counts[e] > 1 else ''}" for e in order)

    # -- serialization ------------------------------------------------------
    def to_dict(self) -> dict[str, Any]:
        return dataclasses.asdict(self)

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> "Calculation":
        d = dict(data)
        d["source"] = Source(**d["source"])
        d["level"] = LevelOfTheory(**d["level"])
        d["status"] = RunStatus(**d["status"])
        if d.get("vibrations") is not None:
            d["vibrations"] = Vibrations(**d["vibrations"])
        if d.get("printed_thermo") is not None:
            d["printed_thermo"] = PrintedThermo(**d["printed_thermo"])
        if d.get("orbitals") is not None:
            d["orbitals"] = Orbitals(**d["orbitals"])
        d["excited_states"] = [
            ExcitedState(**{**x, "contributions": [tuple(c) for c in x.get("contributions", [])]})
            for x in d.get("excited_states", [])
        ]
        return cls(**d)

    def summary_dict(self) -> dict[str, Any]:
        """The public JSON form printed by `dossier read --json` (keys documented in README)."""
        vib = self.vibrations
        return {
            "path": self.source.path,
            "sha256": self.source.sha256,
            "size_bytes": self.source.size_bytes,
            "program": self.program,
            "program_version": self.program_version,
            "job_kinds": list(self.job_kinds),
            "level_of_theory": dataclasses.asdict(self.level) | {"label": self.level.label()},
            "status": self.status.word,
            "status_reason": self.status.reason,
            "normal_termination": self.status.normal_termination,
            "scf_converged": self.status.scf_converged,
            "optimization_converged": self.status.optimization_converged,
            "problems": list(self.problems),
            "charge": self.charge,
            "multiplicity": self.multiplicity,
            "n_atoms": self.n_atoms,
            "formula": self.formula if self.elements else None,
            "elements": list(self.elements),
            "coordinates_angstrom": self.coordinates_angstrom,
            "energy_hartree": self.energy_hartree,
            "scf_energy_hartree": self.scf_energy_hartree,
            "energy_level": self.energy_level,
            "energies_hartree": dict(self.energies_hartree),
            "optimization_energies_hartree": list(self.optimization_energies_hartree),
            "frequencies_cm1": list(vib.wavenumbers_cm1) if vib else [],
            "ir_intensities_km_mol": list(vib.ir_intensities_km_mol) if vib and vib.ir_intensities_km_mol else [],
            "n_imaginary": self.n_imaginary,
            "spin_populations": dict(self.spin_populations),
            "charges": dict(self.charges),
            "excited_states": [dataclasses.asdict(x) for x in self.excited_states],
            "s2": self.s2,
            "s2_ideal": self.s2_ideal,
            "homo_indices": list(self.orbitals.homo_indices) if self.orbitals else None,
            "orbital_energies_hartree": self.orbital_energies_by_spin(),
            "printed_thermo": dataclasses.asdict(self.printed_thermo) if self.printed_thermo else None,
            "dipole_debye": self.dipole_debye,
            "geometry_source": self.geometry_source,
        }

    def orbital_energies_by_spin(self) -> dict[str, list[float | None]] | None:
        """{"alpha": [...], "beta": [...]} in hartree, ascending as printed; "beta" only for
        unrestricted runs. None where an orbital energy is not printed (xtb's window)."""
        if self.orbitals is None or not self.orbitals.energies_hartree:
            return None
        names = ("alpha", "beta")
        return {names[i]: list(ch) for i, ch in enumerate(self.orbitals.energies_hartree[:2])}
