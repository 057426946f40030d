"""NWChem supplement, read from the log text.

- Spin populations: cclib 1.8.1 returns none, although the property module prints
  "Atomic spin population" (and "Total gross population on atoms", from which the Mulliken
  charges are Z - population). Both are read here from the last such block.
- <S^2> ("<S2> =      0.7778 (Exact =     0.7500)").
- CCSD and CCSD(T) total energies at the printed 15 decimals, one per level.
- Frequencies: NWChem lists 3N rows including six (five) zero translation/rotation rows;
  they are removed by the common 3N-6 rule in dossier.reading.build (smallest |v| first).
- Job kinds from the module banners; COSMO solvation with its dielectric constant.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, last_float
from dossier.records import ELEMENT_SYMBOLS


def covers_skipped(skipped) -> bool:
    return False


def _atom_block(text: str, title: str, n_atoms: int):
    """Rows '   1  C    6.0     5.94422' after the last `title`: (Z, value) per atom."""
    i = text.rfind(title)
    if i < 0 or n_atoms == 0:
        return None
    rows = re.compile(r"^\s+\d+\s+[A-Za-z]{1,2}\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s*$", re.M)
    out = []
    pos = i + len(title)
    for m in rows.finditer(text, pos):
        # the rows are consecutive: stop at the first gap larger than one line break run
        if text[pos : m.start()].strip():
            break
        out.append((float(m.group(1)), float(m.group(2))))
        pos = m.end()
        if len(out) == n_atoms:
            break
    return out if len(out) == n_atoms else None


def apply(calc, text: str, data) -> None:
    if "NWChem Geometry Optimization" in text or re.search(r"task\s+\w+\s+optimi[sz]e", text[:60000].lower()):
        calc.job_kinds.append("optimization")
    if "NWChem Nuclear Hessian and Frequency Analysis" in text or "Vibrational analysis via the FX method" in text:
        calc.job_kinds.append("frequencies")
    if "spin polarized" in text or "Wavefunction type:  spin polarized" in text or re.search(r"\n\s+UHF\b", text):
        calc.level.unrestricted = True
    elif calc.level.unrestricted is None:
        calc.level.unrestricted = False
    if calc.level.basis:
        calc.level.basis = calc.level.basis.upper()
    if calc.level.functional is None and calc.level.method in (None, "HF") and "Total SCF energy" in text:
        calc.level.method = "HF"
    if re.search(r"COSMO solvation", text, re.I) or "-cosmo-" in text.lower():
        eps = last_float(r"dielectric constant -eps-\s*=\s*(" + FLOAT + ")", text)
        calc.level.solvation = f"COSMO (eps={eps:g})" if eps is not None else "COSMO"

    s2 = last_float(r"<S2>\s*=\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2

    levels = {}
    for name, pat in (("ccsd", r"CCSD total energy / hartree\s*=\s*(" + FLOAT + ")"),
                      ("ccsd(t)", r"CCSD\(T\) total energy / hartree\s*=\s*(" + FLOAT + ")"),
                      ("mp2", r"Total MP2 energy\s+(" + FLOAT + ")")):
        v = last_float(pat, text)
        if v is not None:
            levels[name] = v
    if levels:
        for k in [k for k in calc.energies_hartree if k != "scf"]:
            del calc.energies_hartree[k]
        calc.energies_hartree.update(levels)

    n = calc.n_atoms
    spins = _atom_block(text, "----- Atomic spin population -----", n)
    if spins:
        calc.spin_populations["mulliken"] = [v for _z, v in spins]
    pops = _atom_block(text, "----- Total      gross population on atoms ----", n)
    if pops:
        calc.charges["mulliken"] = [z - p for z, p in pops]
    # The Z column must agree with the elements cclib read
    if pops and calc.elements and [int(round(z)) for z, _ in pops] != [ELEMENT_SYMBOLS.index(e) for e in calc.elements]:
        calc.problems.append("NWChem population block does not match the atom list (ECP or ghost atoms?)")
