"""The one adapter over cclib: run its parser on the log text, turn ccData into a Calculation.

Units are normalized here and only here. cclib stores SCF/MP/CC energies and orbital
energies in eV, converted from the printed hartree with its own constants
(cclib.parser.utils.convertor, CODATA 2010 factors); converting back with the same factor
returns the printed hartree value exactly, while converting back with another CODATA edition
would leave an error of ~2e-5 hartree on a 380-hartree molecule. So every eV -> hartree
conversion of a cclib value goes through `_ev_to_hartree` below.

What cclib gets wrong or misses for a given program is corrected by the supplements
(dossier/reading/supplements/), which read the log text; this module does not know about them.
"""
from __future__ import annotations

import logging

import numpy as np
from cclib.parser import ORCA, XTB, Gaussian, NWChem, Psi4, QChem
from cclib.parser.utils import convertor

from dossier.reading.files import LineReader
from dossier.records import (
    ELEMENT_SYMBOLS,
    Calculation,
    ExcitedState,
    LevelOfTheory,
    Orbitals,
    PrintedThermo,
    Source,
    Vibrations,
)
from dossier.units import STANDARD_ATMOSPHERE_PA

_PARSERS = {"Gaussian": Gaussian, "ORCA": ORCA, "Q-Chem": QChem, "NWChem": NWChem, "Psi4": Psi4, "xtb": XTB}


def _ev_to_hartree(x):
    return convertor(x, "eV", "hartree")


def _cm1_to_ev(x):
    return convertor(x, "wavenumber", "eV")


def _guarded(base):
    """A subclass of a cclib parser in which a failure inside one section skips that section.

    cclib aborts the whole file on the first exception in any section (ORCA 6: an assertion
    on the changed symmetry block, then SCF-table and orbital-table layouts). Skipped
    sections are recorded in `skipped`; the quantities they carry are supplied by the
    program's supplement, which reads the text itself.
    """

    class Guarded(base):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self.skipped = []

        def parse(self, *args, **kwargs):
            skipped = self.skipped
            data = super().parse(*args, **kwargs)
            self.skipped = skipped  # cclib's parse() deletes attributes it did not start with
            return data

        def extract(self, inputfile, line):
            try:
                return super().extract(inputfile, line)
            except StopIteration:
                raise
            except Exception as exc:  # noqa: BLE001 - any failing section is skipped and recorded
                if type(exc).__name__ == "StopParsing":
                    raise
                self.skipped.append((line.strip()[:60], type(exc).__name__))

    Guarded.__name__ = f"Guarded{base.__name__}"
    return Guarded


class _ORCA6(ORCA):
    """cclib's ORCA parser taught the ORCA 6 symmetry block.

    ORCA 6 prints "Symmetry-adapted orbitals .... C2h" and a "Petite-list" line where ORCA 5
    printed "Used point group .... C2h"; cclib 1.8.1 asserts the ORCA 5 layout and stops.
    """

    def extract(self, inputfile, line):
        if line[1:18] == "Symmetry handling":
            self.uses_symmetry = True
            line = next(inputfile)
            full = line.split()[-1].lower()
            used = full
            line = next(inputfile)
            while "Number of irreps" not in line:
                if "Symmetry-adapted orbitals" in line or "Used point group" in line:
                    used = line.split()[-1].lower()
                line = next(inputfile)
            for _ in range(int(line.split()[-1])):
                line = next(inputfile)
                if not hasattr(self, "symlabels"):
                    self.symlabels = []
                self.symlabels.append(self.normalisesym(line[8:13]))
            self.metadata["symmetry_detected"] = full
            self.metadata["symmetry_used"] = used
            return None
        return super().extract(inputfile, line)


_GUARDED = {name: _guarded(cls) for name, cls in _PARSERS.items()}
_GUARDED["ORCA6"] = _guarded(_ORCA6)


def parse_with_cclib(text: str, program: str, *, orca6: bool = False):
    """Run the guarded cclib parser for `program` on `text`.

    Returns (ccData or None, notes); notes name skipped sections or a complete failure.
    """
    cls = _GUARDED["ORCA6" if (program == "ORCA" and orca6) else program]
    notes: list[str] = []
    parser = cls(LineReader(text), loglevel=logging.CRITICAL + 10)  # no second copy of a large log
    try:
        data = parser.parse()
    except Exception as exc:  # noqa: BLE001 - cclib can fail anywhere; the supplements still run
        notes.append(f"cclib's {program} parser failed ({type(exc).__name__}); values come from the log text only")
        return None, notes, []
    return data, notes, list(parser.skipped)


def _get(data, name, default=None):
    return getattr(data, name, default) if data is not None else default


def _floats(x):
    return [float(v) for v in np.asarray(x, dtype=float).ravel()]


def to_calculation(data, source: Source, program: str) -> Calculation:
    """Everything cclib parsed, in the record's units (see dossier.records)."""
    calc = Calculation(source=source, program=program)
    if data is None:
        return calc
    meta = dict(_get(data, "metadata", {}) or {})
    methods = [m for m in meta.get("methods", []) if m]
    _set_identity(calc, data, meta)
    _set_level(calc, data, meta, methods)
    _set_energies(calc, data, methods)
    _set_vibrations(calc, data)
    _set_printed_thermo(calc, data)
    _set_populations(calc, data)
    _set_excited_states(calc, data)
    _set_orbitals(calc, data)
    _set_dipole(calc, data, program)
    return calc


def _set_identity(calc: Calculation, data, meta: dict) -> None:
    """Program version, charge, multiplicity, elements and the last geometry."""
    calc.program_version = meta.get("package_version") or meta.get("legacy_package_version")
    charge, mult = _get(data, "charge"), _get(data, "mult")
    calc.charge = int(charge) if charge is not None else None
    calc.multiplicity = int(mult) if mult is not None else None
    atomnos = _get(data, "atomnos")
    coords = _get(data, "atomcoords")
    if atomnos is not None and len(atomnos):
        calc.elements = [ELEMENT_SYMBOLS[int(z)] for z in atomnos]
    if coords is not None and len(coords):
        calc.coordinates_angstrom = [[float(v) for v in row] for row in coords[-1]]


def _set_level(calc: Calculation, data, meta: dict, methods: list) -> None:
    """Level of theory from cclib's metadata (supplements refine it from the text)."""
    functional = meta.get("functional")
    family = None
    if functional or "DFT" in methods:
        family = "DFT"
    elif methods:
        family = methods[0]
    calc.level = LevelOfTheory(method=family, functional=functional, basis=meta.get("basis_set"))
    moen = _get(data, "moenergies")
    if moen is not None:
        calc.level.unrestricted = len(moen) == 2


def _set_energies(calc: Calculation, data, methods: list) -> None:
    """SCF (every step), MPn and coupled-cluster energies, eV -> hartree."""
    scf = _get(data, "scfenergies")
    if scf is not None and len(scf):
        scf_h = [float(_ev_to_hartree(e)) for e in scf]
        calc.energies_hartree["scf"] = scf_h[-1]
        calc.scf_energy_hartree = scf_h[-1]
        calc.optimization_energies_hartree = scf_h
    mp = _get(data, "mpenergies")
    if mp is not None and len(mp):
        last = np.atleast_1d(mp[-1])
        for order, value in enumerate(last, start=2):
            if np.isfinite(value):
                calc.energies_hartree[f"mp{order}"] = float(_ev_to_hartree(value))
    cc = _get(data, "ccenergies")
    if cc is not None and len(cc):
        cc_methods = [m.lower().replace("-t", "(t)") for m in methods if m.upper().startswith("CC")]
        label = cc_methods[-1] if cc_methods else "cc"
        calc.energies_hartree[label] = float(_ev_to_hartree(cc[-1]))


def _set_vibrations(calc: Calculation, data) -> None:
    """Wavenumbers in cm-1 (cclib keeps the printed values), IR in km/mol."""
    freqs = _get(data, "vibfreqs")
    if freqs is None or not len(freqs):
        return
    disps = _get(data, "vibdisps")
    irs = _get(data, "vibirs")
    calc.vibrations = Vibrations(
        wavenumbers_cm1=_floats(freqs),
        displacements=np.asarray(disps, dtype=float).tolist() if disps is not None and len(disps) == len(freqs) else None,
        ir_intensities_km_mol=_floats(irs) if irs is not None and len(irs) == len(freqs) else None,
    )


def _set_printed_thermo(calc: Calculation, data) -> None:
    """Printed thermochemistry: cclib documents hartree/particle totals; the supplements fix
    the parsers that do not follow that (xtb: eV; Q-Chem: corrections, not totals)."""
    if not any(_get(data, n) is not None for n in ("zpve", "enthalpy", "freeenergy", "entropy")):
        return
    p_atm = _get(data, "pressure")
    calc.printed_thermo = PrintedThermo(
        temperature_k=_opt_float(_get(data, "temperature")),
        pressure_pa=float(p_atm) * STANDARD_ATMOSPHERE_PA if p_atm is not None else None,
        zpe_hartree=_opt_float(_get(data, "zpve")),
        enthalpy_hartree=_opt_float(_get(data, "enthalpy")),
        gibbs_hartree=_opt_float(_get(data, "freeenergy")),
        entropy_hartree_per_k=_opt_float(_get(data, "entropy")),
    )


def _set_populations(calc: Calculation, data) -> None:
    """Per-atom charges and spin populations by scheme."""
    for scheme, values in (_get(data, "atomcharges", {}) or {}).items():
        if scheme.endswith("_sum"):  # hydrogens summed into heavy atoms: not a per-atom scheme
            continue
        calc.charges[_scheme(scheme)] = _floats(values)
    for scheme, values in (_get(data, "atomspins", {}) or {}).items():
        if scheme.endswith("_sum"):
            continue
        calc.spin_populations[_scheme(scheme)] = _floats(values)


def _set_excited_states(calc: Calculation, data) -> None:
    """Excitation energies (cclib: cm-1), oscillator strengths, symmetries, dipoles, contributions."""
    ete = _get(data, "etenergies")
    if ete is None or not len(ete):
        return
    oscs = _get(data, "etoscs")
    syms = _get(data, "etsyms")
    secs = _get(data, "etsecs")
    dips = _get(data, "etdips")
    for i, e_cm1 in enumerate(ete):
        contribs = []
        if secs is not None and i < len(secs):
            for (fr, fs), (to, ts), coef in secs[i]:
                contribs.append((_mo_label(fr, fs), _mo_label(to, ts), float(coef)))
        calc.excited_states.append(
            ExcitedState(
                energy_ev=float(_cm1_to_ev(e_cm1)),
                energy_cm1=float(e_cm1),
                oscillator_strength=float(oscs[i]) if oscs is not None and i < len(oscs) else None,
                symmetry=str(syms[i]) if syms is not None and i < len(syms) else None,
                transition_dipole_au=_floats(dips[i]) if dips is not None and i < len(dips) else None,
                contributions=contribs,
            )
        )


def _basis_atoms(atombasis) -> list[int] | None:
    """The 0-based atom of each basis function, from cclib's per-atom function lists."""
    if atombasis is None:
        return None
    nbasis = sum(len(b) for b in atombasis)
    basis_atoms = [0] * nbasis
    for atom, funcs in enumerate(atombasis):
        for f in funcs:
            if f < nbasis:
                basis_atoms[f] = atom
    return basis_atoms


def _set_orbitals(calc: Calculation, data) -> None:
    """Orbital energies (eV -> hartree), HOMO indices, coefficients, basis labels, overlap."""
    moen = _get(data, "moenergies")
    if moen is None or not len(moen):
        return
    homos = _get(data, "homos")
    mocoeffs = _get(data, "mocoeffs")
    overlap = _get(data, "aooverlaps")
    calc.orbitals = Orbitals(
        # unprinted orbitals (xtb prints a window around the gap) are NaN in cclib: None here
        energies_hartree=[[float(_ev_to_hartree(e)) if np.isfinite(e) else None for e in channel] for channel in moen],
        homo_indices=[int(h) for h in homos] if homos is not None else [],
        coefficients=[np.asarray(c, dtype=float).tolist() for c in mocoeffs] if mocoeffs is not None else None,
        basis_labels=list(_get(data, "aonames")) if _get(data, "aonames") is not None else None,
        basis_atoms=_basis_atoms(_get(data, "atombasis")),
        overlap=np.asarray(overlap, dtype=float).tolist() if overlap is not None else None,
    )


def _set_dipole(calc: Calculation, data, program: str) -> None:
    """Dipole moment: cclib keeps the printed debye values for these parsers."""
    moments = _get(data, "moments")
    if moments is not None and len(moments) > 1 and program in ("Gaussian", "ORCA", "Q-Chem", "Psi4"):
        calc.dipole_debye = _floats(moments[1])


def _opt_float(x):
    return None if x is None else float(x)


def _scheme(name: str) -> str:
    return {"löwdin": "lowdin", "loewdin": "lowdin"}.get(name.lower(), name.lower())


def _mo_label(index, spin) -> str:
    """0-based MO index and spin (0 alpha, 1 beta) as '34a' style text (1-based number)."""
    return f"{int(index) + 1}{'a' if int(spin) == 0 else 'b'}"
