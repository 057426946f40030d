"""From log text to a finished record: cclib adapter, then the program's supplement, then
status and the normalization rules every record obeys (see dossier.records for units)."""
from __future__ import annotations

import re

import numpy as np

from dossier.reading.cclib_adapter import parse_with_cclib, to_calculation
from dossier.reading.jobs import ORCA_NORMAL_END
from dossier.reading.status import run_status
from dossier.reading.supplements import BY_PROGRAM
from dossier.records import Calculation, Source

#: Energy levels from lowest to highest. energy_hartree is the level the job asked for
#: (requested_level); the highest level present is used only when the request is unknown.
LEVEL_RANK = ("xtb", "scf", "mp2", "mp3", "mp4(dq)", "mp4(sdq)", "mp4", "ccd", "ccsd", "qcisd", "ccsd[t]",
              "qcisd(t)", "ccsd(t)")

#: Ground-state method (LevelOfTheory.method, upper case) -> its energies_hartree key.
#: Excited-state methods report their reference (TDDFT -> DFT, EOM-CCSD -> CCSD), see
#: LevelOfTheory.excited_method, so they need no entry here.
METHOD_LEVEL = {
    "HF": "scf", "DFT": "scf", "SCF": "scf", "GFN2-XTB": "scf", "GFN1-XTB": "scf", "GFN0-XTB": "scf", "GFN-FF": "scf",
    "MP2": "mp2", "MP3": "mp3", "MP4(DQ)": "mp4(dq)", "MP4(SDQ)": "mp4(sdq)", "MP4": "mp4", "MP4(SDTQ)": "mp4",
    "CCD": "ccd", "CCSD": "ccsd", "CCSD(T)": "ccsd(t)", "QCISD": "qcisd", "QCISD(T)": "qcisd(t)",
}


def requested_level(method: str | None) -> str | None:
    """energies_hartree key of the level a job asked for ("RI-MP2" -> "mp2", "DLPNO-CCSD(T)" ->
    "ccsd(t)"); None when the method is unknown."""
    if not method:
        return None
    m = method.upper()
    for prefix in ("RI-", "DLPNO-", "LPNO-", "R", "U"):
        if m not in METHOD_LEVEL and m.startswith(prefix) and m[len(prefix):] in METHOD_LEVEL:
            m = m[len(prefix):]
    return METHOD_LEVEL.get(m)


def build_record(text: str, program: str, source: Source, *, trim_for_cclib: bool = True,
                 finished_by_next: bool = False, program_head: str | None = None) -> Calculation:
    """The record of one job's text. `finished_by_next`: a later job of the same ORCA compound
    run started, so this one ended normally (dossier.reading.jobs); `program_head`: the start of
    the whole file, where the program prints its version."""
    # A cut-off log may end inside a line (a number cut in half): parse whole lines only.
    cut = text.rfind("\n")
    parse_text = text if text.endswith("\n") or cut < 0 else text[: cut + 1]
    head = program_head if program_head is not None else text[:20000]
    orca6 = program == "ORCA" and re.search(r"Program Version 6\.", head) is not None
    supplement = BY_PROGRAM[program]
    trim = getattr(supplement, "for_cclib", None) if trim_for_cclib else None
    data, notes, skipped = parse_with_cclib(trim(parse_text) if trim else parse_text, program, orca6=orca6)
    calc = to_calculation(data, source, program)
    calc.problems.extend(notes)
    supplement.apply(calc, parse_text, data)
    unexplained = [s for s in skipped if not supplement.covers_skipped(s)]
    if unexplained:
        calc.problems.append(
            "cclib skipped section(s) it could not parse: " + "; ".join(f"'{line}' ({err})" for line, err in unexplained[:3])
        )
    status_text = f"{text}\n{ORCA_NORMAL_END}\n" if finished_by_next else text
    calc.status = run_status(program, status_text, is_optimization="optimization" in calc.job_kinds)
    finalize(calc)
    return calc


def _is_linear(coords) -> bool:
    x = np.asarray(coords, dtype=float)
    if len(x) < 3:
        return True
    x = x - x.mean(axis=0)
    s = np.linalg.svd(x, compute_uv=False)
    return bool(s[1] < 1e-3 * max(s[0], 1e-12))


def finalize(calc: Calculation) -> None:
    """Rules every record obeys, whatever program wrote it."""
    # Job kinds
    kinds = list(dict.fromkeys(calc.job_kinds))
    if calc.vibrations and "frequencies" not in kinds:
        kinds.append("frequencies")
    if calc.excited_states and "excited-states" not in kinds:
        kinds.append("excited-states")
    if not any(k in kinds for k in ("optimization", "frequencies")):
        kinds.insert(0, "single-point")
    calc.job_kinds = kinds

    for st in calc.excited_states:
        st.symmetry = normalize_state_label(st.symmetry)

    # Real normal modes only: 3N-6 (3N-5 linear); drop translation/rotation rows (smallest |v|)
    vib = calc.vibrations
    if vib and calc.elements:
        n = len(calc.elements)
        linear = _is_linear(calc.coordinates_angstrom) if calc.coordinates_angstrom else n <= 2
        expected = 3 * n - (5 if linear else 6)
        order = list(range(len(vib.wavenumbers_cm1)))
        if len(order) > expected >= 0:
            by_size = sorted(order, key=lambda i: abs(vib.wavenumbers_cm1[i]))
            drop = set(by_size[: len(order) - expected])
            order = [i for i in order if i not in drop]
        order.sort(key=lambda i: vib.wavenumbers_cm1[i])
        vib.wavenumbers_cm1 = [vib.wavenumbers_cm1[i] for i in order]
        if vib.displacements is not None:
            vib.displacements = [vib.displacements[i] for i in order]
        if vib.ir_intensities_km_mol is not None:
            vib.ir_intensities_km_mol = [vib.ir_intensities_km_mol[i] for i in order]
        if len(order) < expected:
            calc.problems.append(f"only {len(order)} of {expected} vibrational modes printed")

    if calc.elements and not calc.coordinates_angstrom and calc.status.word not in ("truncated", "failed"):
        calc.problems.append("the log prints no coordinates for this job")

    _choose_energy(calc)

    if calc.s2 is not None and calc.s2_deviation is not None and abs(calc.s2_deviation) > 0.1 and calc.multiplicity:
        calc.problems.append(
            f"spin contamination: <S^2> = {calc.s2:.4f}, ideal S(S+1) = {calc.s2_ideal:.4f}"
            " (tolerance 0.1, common practice, no source)"
        )

    _require_what_was_asked(calc)

    # A run that did not finish: keep only what cannot change later in the log.
    if calc.status.word in ("truncated", "failed") or (calc.status.scf_converged is False and not calc.status.normal_termination):
        withhold(calc)
    elif calc.status.word != "ok" and calc.status.reason:
        calc.problems.append(calc.status.reason)


def _choose_energy(calc: Calculation) -> None:
    """energy_hartree = the level the job asked for, never a lower level printed on the way
    (a CCSD job prints MP2, MP3 and MP4(SDQ) first); the highest level only when the request
    is unknown."""
    if calc.scf_energy_hartree is None and "scf" in calc.energies_hartree:
        calc.scf_energy_hartree = calc.energies_hartree["scf"]
    wanted = requested_level(calc.level.method)
    if wanted is not None:
        if wanted in calc.energies_hartree:
            calc.energy_level = wanted
            calc.energy_hartree = calc.energies_hartree[wanted]
        return
    present = [lvl for lvl in LEVEL_RANK if lvl in calc.energies_hartree]
    extra = [lvl for lvl in calc.energies_hartree if lvl not in LEVEL_RANK]
    top = present[-1] if present else (extra[-1] if extra else None)
    if top is None:
        return
    calc.energy_level = top
    calc.energy_hartree = calc.energies_hartree[top]
    if top not in ("scf", "xtb") and calc.level.method in (None, "HF", "SCF"):
        calc.level.method = top.upper()  # e.g. a UHF reference with an MP2 energy: an MP2 job


def _require_what_was_asked(calc: Calculation) -> None:
    """A normally ended run that lacks what its input asked for is never "ok"."""
    st = calc.status
    if st.word != "ok":
        return
    missing = []
    if calc.energy_hartree is None and not calc.energies_hartree and calc.vibrations is None and not calc.excited_states:
        st.word, st.reason = "failed", "no calculation was run (the log holds no energy, frequencies or excited states)"
        return
    wanted = requested_level(calc.level.method)
    if calc.energy_hartree is None:
        missing.append(f"the {calc.level.method or 'final'} energy" + (f" ({wanted})" if wanted else ""))
    if "frequencies" in calc.job_kinds and calc.vibrations is None:
        missing.append("the frequencies")
    if missing:
        st.word = "incomplete"
        st.reason = "the input asks for " + " and ".join(missing) + " but the log prints none"


def withhold(calc: Calculation) -> None:
    """Remove every final quantity from a record of a run that stopped early.

    A cut-off log must never yield a number the complete log would not: the last geometry,
    energy, populations or spectra printed before the cut are intermediate values.
    Kept: program, level, charge, multiplicity, elements, and the energies of finished
    optimisation steps (a prefix of the complete log's list).
    """
    calc.problems.append(f"{calc.status.word}: {calc.status.reason}; final quantities withheld")
    calc.coordinates_angstrom = []
    calc.energies_hartree = {}
    calc.energy_hartree = None
    calc.energy_level = None
    calc.scf_energy_hartree = None
    calc.vibrations = None
    calc.printed_thermo = None
    calc.charges = {}
    calc.spin_populations = {}
    calc.excited_states = []
    calc.orbitals = None
    calc.dipole_debye = None
    calc.s2 = None
    if "optimization" not in calc.job_kinds:
        calc.optimization_energies_hartree = []


_SPIN_WORDS = ("singlet", "doublet", "triplet", "quartet", "quintet")


def normalize_state_label(label: str | None) -> str | None:
    """'singlet bu', 'Singlet-BU', 'Singlet-Bu' -> 'Singlet-Bu' (spin word, then the irrep)."""
    if not label:
        return label
    parts = re.split(r"[\s-]+", label.strip(), maxsplit=1)
    if parts[0].lower() in _SPIN_WORDS:
        spin = parts[0].capitalize()
        if len(parts) == 1 or not parts[1]:
            return spin
        irrep = parts[1]
        irrep = irrep[0].upper() + irrep[1:].lower() if irrep[:1].isalpha() else irrep
        return f"{spin}-{irrep}"
    return label
