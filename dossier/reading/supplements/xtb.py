"""xtb supplement, read from the log text.

- Thermochemistry: cclib 1.8.1 returns xtb's zpve, enthalpy and freeenergy in eV
  (e.g. enthalpy -714.7 for a -26.3 Eh molecule), unlike its other parsers (hartree).
  The printed Eh values ("TOTAL ENTHALPY", "TOTAL FREE ENERGY", ":: zero point energy")
  are read here, with the temperature of the thermo table.
- Energy: the last "TOTAL ENERGY ... Eh" (12 decimals) of the run.
- Multiplicity: xtb prints none; it is 1 + the --uhf count (default 0 for an even number
  of electrons, else 1), from the program call.
- Job kinds, GFN level and implicit solvation (ALPB/GBSA, solvent and dielectric).
- The coordinate file the run read ("coordinate file            : dvb_ir.xyz"): single points
  and Hessian runs print no coordinates, so dossier.reading.coordfile takes them from it.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, all_floats, last_float, last_match
from dossier.records import ELEMENT_SYMBOLS, PrintedThermo


def covers_skipped(skipped) -> bool:
    return False


def apply(calc, text: str, data) -> None:
    m = re.search(r"\* xtb version (\S+)", text)
    if m:
        calc.program_version = m.group(1)
    cf = re.search(r"^\s*coordinate file\s*:\s*(\S+)\s*$", text[:20000], re.M)
    if cf:
        calc.coordinate_file = cf.group(1)
    call = last_match(r"program call\s*:\s*(.*)$", text, re.M)
    args = call.group(1).split() if call else []
    if any(a in ("--opt", "--ohess", "-o") or a.startswith("--opt") for a in args):
        calc.job_kinds.append("optimization")
    if any(a in ("--hess", "--ohess", "--bhess") for a in args):
        calc.job_kinds.append("frequencies")
    gfn = "GFN2-xTB"
    if "--gfn" in args:
        i = args.index("--gfn")
        if i + 1 < len(args):
            gfn = {"0": "GFN0-xTB", "1": "GFN1-xTB", "2": "GFN2-xTB"}.get(args[i + 1], gfn)
    elif "--gfnff" in args:
        gfn = "GFN-FF"
    calc.level.method = gfn
    calc.level.functional = None
    calc.level.basis = None
    solv = None
    for flag, name in (("--alpb", "ALPB"), ("--gbsa", "GBSA"), ("-g", "GBSA")):
        if flag in args:
            i = args.index(flag)
            solvent = args[i + 1] if i + 1 < len(args) else "?"
            eps = last_float(r"Dielectric constant\s+(" + FLOAT + ")", text)
            solv = f"{name} ({solvent}" + (f", eps={eps:g})" if eps is not None else ")")
    calc.level.solvation = solv

    uhf = 0
    if "--uhf" in args:
        i = args.index("--uhf")
        uhf = int(args[i + 1]) if i + 1 < len(args) and args[i + 1].isdigit() else 0
    elif calc.elements:
        n_el = sum(ELEMENT_SYMBOLS.index(e) for e in calc.elements) - (calc.charge or 0)
        uhf = n_el % 2
    calc.multiplicity = uhf + 1
    calc.level.unrestricted = uhf > 0

    e = last_float(r"\|\s*TOTAL ENERGY\s+(" + FLOAT + r") Eh", text)
    if e is not None:
        calc.energies_hartree = {"scf": e}
        calc.scf_energy_hartree = e
        if "optimization" not in calc.job_kinds:
            calc.optimization_energies_hartree = [e]
    if "optimization" in calc.job_kinds:
        # one "* total energy  :   -26.4382425 Eh" line per optimisation cycle (7 decimals);
        # cclib overwrites the last with the final 12-decimal value, so a cut-off copy would
        # disagree in the 8th decimal with the complete log: use the cycle lines throughout
        steps = all_floats(r"\* total energy\s+:\s+(" + FLOAT + r") Eh", text)
        if steps:
            calc.optimization_energies_hartree = steps

    h = last_float(r"\|\s*TOTAL ENTHALPY\s+(" + FLOAT + r") Eh", text)
    g = last_float(r"\|\s*TOTAL FREE ENERGY\s+(" + FLOAT + r") Eh", text)
    if h is not None or g is not None:
        zpe = last_float(r":: zero point energy\s+(" + FLOAT + r") Eh", text)
        row = last_match(r"^\s+(" + FLOAT + r")\s+" + FLOAT + r"\s+" + FLOAT + r"\s+(" + FLOAT + r")\s+" + FLOAT + r"\s*$",
                         text[text.rfind("T/K    H(0)-H(T)+PV"):] if "T/K    H(0)-H(T)+PV" in text else "", re.M)
        t = float(row.group(1)) if row else None
        ts = float(row.group(2)) if row else None
        calc.printed_thermo = PrintedThermo(
            temperature_k=t, pressure_pa=None, zpe_hartree=zpe, enthalpy_hartree=h, gibbs_hartree=g,
            entropy_hartree_per_k=ts / t if ts is not None and t else None,
        )
    elif calc.printed_thermo is not None:
        calc.printed_thermo = None  # never pass cclib's eV values on
