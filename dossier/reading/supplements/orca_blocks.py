"""ORCA blocks read from the text for every version (5 and 6): frequencies, normal modes,
IR intensities, and ROCIS excited states.

cclib 1.8.1 reads the ORCA 5 frequency blocks but fails on ORCA 6.0.1, which prints the
point group and an irrep column ("Point group:  C2h", "   6:      43.87 cm**-1    2-Au") and an
irrep row under the mode numbers of the normal-mode table. The layouts read here (checked on
the shared fixture logs, ORCA 5.0.1 and 6.0.1 dvb_ir.out):

    VIBRATIONAL FREQUENCIES          "   6:        45.66 cm**-1"  [ "    2-Au" ]   (3N rows)
    NORMAL MODES                     column blocks: a row of mode numbers, [a row of irreps],
                                     then 3N rows "  index  v v v ..." (printed 1/sqrt(m)-weighted
                                     Cartesian displacements, kept as printed)
    IR SPECTRUM                      "  6:     43.87   0.000005    0.03  0.000037  ( ... )"
                                     (mode, cm-1, eps, Int in km/mol, T**2, TX TY TZ)
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT
from dossier.records import ExcitedState, Vibrations
from dossier.units import EV_CM1

_FREQ_ROW = re.compile(r"^\s*(\d+):\s+(" + FLOAT + r") cm\*\*-1(?:\s+(\S+))?\s*$")
_IR_ROW = re.compile(r"^\s*(\d+):\s+(" + FLOAT + r")\s+" + FLOAT + r"\s+(" + FLOAT + r")\s+")


def _section(text: str, title: str) -> str | None:
    """Text of the last `title` section (from its title line to the next blank-blank gap)."""
    i = text.rfind("\n" + title + "\n")
    if i < 0:
        return None
    end = text.find("\n\n\n", i + len(title) + 40)
    return text[i + 1 : end if end > 0 else len(text)]


def frequencies(text: str) -> list[float] | None:
    """All 3N printed wavenumbers (cm-1, imaginary ones negative as ORCA prints them)."""
    sec = _section(text, "VIBRATIONAL FREQUENCIES")
    if sec is None:
        return None
    rows = [_FREQ_ROW.match(line) for line in sec.split("\n")]
    values = [(int(m.group(1)), float(m.group(2))) for m in rows if m]
    if not values or [k for k, _ in values] != list(range(len(values))):
        return None
    return [v for _, v in values]


def normal_modes(text: str, n_modes: int) -> list[list[list[float]]] | None:
    """Per mode an N x 3 list (the printed columns), or None if the block is not whole."""
    sec = _section(text, "NORMAL MODES")
    if sec is None or n_modes % 3:
        return None
    columns: dict[int, list[float]] = {}
    current: list[int] = []
    for line in sec.split("\n"):
        parts = line.split()
        if not parts:
            continue
        if all(p.isdigit() for p in parts):  # a header of mode numbers (data rows hold decimals)
            current = [int(p) for p in parts]
            continue
        if current and parts[0].isdigit() and len(parts) == len(current) + 1:
            try:
                vals = [float(p) for p in parts[1:]]
            except ValueError:
                continue
            for mode, v in zip(current, vals):
                columns.setdefault(mode, []).append(v)
    if sorted(columns) != list(range(n_modes)) or any(len(c) != n_modes for c in columns.values()):
        return None
    return [[columns[m][3 * a : 3 * a + 3] for a in range(n_modes // 3)] for m in range(n_modes)]


def ir_intensities(text: str, n_modes: int) -> list[float] | None:
    """km/mol per printed mode (0 for the translation/rotation rows ORCA leaves out)."""
    sec = _section(text, "IR SPECTRUM")
    if sec is None:
        return None
    out = [0.0] * n_modes
    found = 0
    for line in sec.split("\n"):
        m = _IR_ROW.match(line)
        if m and int(m.group(1)) < n_modes:
            out[int(m.group(1))] = float(m.group(3))
            found += 1
    return out if found else None


def vibrations(text: str) -> Vibrations | None:
    freqs = frequencies(text)
    if not freqs:
        return None
    return Vibrations(wavenumbers_cm1=freqs, displacements=normal_modes(text, len(freqs)),
                      ir_intensities_km_mol=ir_intensities(text, len(freqs)))


_MULT_NAME = {1: "Singlet", 2: "Doublet", 3: "Triplet", 4: "Quartet", 5: "Quintet"}
_ROCIS_ROW = re.compile(r"^\s*0-(\d+)(\w+)\s+->\s+(\d+)-(\d+)(\w+)\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+\S+\s+("
                        + FLOAT + r")\s+" + FLOAT + r"\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s*$")
_ROCIS_STATE = re.compile(r"^STATE\s+(\d+)\s+Exc\. Energy:\s+" + FLOAT + r"mEh\s+(" + FLOAT + r")eV\s+(" + FLOAT
                          + r")cm\*\*-1", re.M)


def rocis_states(text: str, multiplicity: int | None) -> list[ExcitedState]:
    """ROCIS excited states (ORCA 6): the spin-allowed ones from the first (not SOC-corrected)
    "ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS" table after "ROCIS-EXCITATION
    SPECTRA" ("0-2A  ->  1-2A   291.659506 2352392.8  4.3  0.030923917  0.00433  DX DY DZ"), and
    the S' = S+1 states from their "STATE n Exc. Energy" lines (spin-forbidden, f = 0)."""
    i = text.find("ROCIS-EXCITATION SPECTRA")
    if i < 0:
        return []
    j = text.find("ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS", i)
    states = []
    if j > 0:
        for line in text[j:].split("\n")[5:]:
            m = _ROCIS_ROW.match(line)
            if not m:
                break
            mult = int(m.group(4))
            states.append(ExcitedState(
                energy_ev=float(m.group(6)), energy_cm1=float(m.group(7)), oscillator_strength=float(m.group(8)),
                symmetry=f"{_MULT_NAME.get(mult, f'Mult{mult}')}-{m.group(5)}",
                transition_dipole_au=[float(m.group(k)) for k in (9, 10, 11)]))
    k = text.find("Eigenvectors of ROCIS calculation with S'=S+1:")
    if k > 0 and multiplicity:
        mult = multiplicity + 2
        end = text.find("\n\n\n\n", k)
        for m in _ROCIS_STATE.finditer(text, k, end if end > 0 else len(text)):
            e_cm1 = float(m.group(3))
            states.append(ExcitedState(energy_ev=e_cm1 / EV_CM1, energy_cm1=e_cm1, oscillator_strength=0.0,
                                       symmetry=_MULT_NAME.get(mult, f"Mult{mult}")))
    states.sort(key=lambda s: s.energy_cm1)
    return states
