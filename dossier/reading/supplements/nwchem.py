"""NWChem supplement, read from the log text.

- Spin populations: cclib 1.8.1 returns none, although the property module prints
  "Atomic spin population" (and "Total gross population on atoms", from which the Mulliken
  charges are Z - population). Both are read here from the last such block.
- <S^2> ("<S2> =      0.7778 (Exact =     0.7500)"; SCF-module UHF: "S^2 =      1.9410").
- CCSD, CCSD[T] and CCSD(T) total energies at the printed 15 decimals, one per level; the
  level asked for from the TCE header ("Calculation type : Coupled-cluster singles & doubles
  w/ perturbation", "Perturbative correction : (T)"); TDDFT/CIS from the TDDFT module header.
- Frequencies: NWChem lists 3N rows including six (five) zero translation/rotation rows;
  they are removed by the common 3N-6 rule in dossier.reading.build (smallest |v| first).
- Job kinds from the module banners; COSMO solvation with its dielectric constant.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, last_float
from dossier.records import ELEMENT_SYMBOLS


def covers_skipped(skipped) -> bool:
    """NWChem 7.0.2 prints "no constraints, skipping ..." inside the optimisation header, where
    cclib 1.8.1 asserts the gradient-threshold line: only its geotargets are lost, and
    convergence is read from the text (dossier.reading.status)."""
    line, err = skipped
    return line.startswith("NWChem Geometry Optimization") and err == "AssertionError"


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
        out.append((float(m.group(1)), _num(m.group(2))))
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
    if calc.multiplicity is None:
        # the SCF module prints electron counts, not the multiplicity (cclib then has none)
        na = last_float(r"alpha electrons =\s*(\d+)", text)
        nb = last_float(r"beta  electrons =\s*(\d+)", text)
        if na is not None and nb is not None:
            calc.multiplicity = int(na - nb) + 1
    if calc.level.functional is None and calc.level.method in (None, "HF") and "Total SCF energy" in text:
        calc.level.method = "HF"
    if "-cosmo-" in text or "COSMO solvation" in text:
        eps = last_float(r"dielectric constant -eps-\s*=\s*(" + FLOAT + ")", text)
        calc.level.solvation = f"COSMO (eps={eps:g})" if eps is not None else "COSMO"

    # ground state only: "<S2> = 0.7778 (Exact = 0.7500)"; TDDFT roots print "<S2> = 0.7524" alone
    # "Dispersion Parameters ... DFT-D3BJ Model" printed by the DFT module (NWChem 7.0.2)
    disp = re.search(r"Dispersion Parameters\s*\n[\s-]*\n?\s*DFT-(D\w+?)(BJ)? Model", text)
    if disp:
        calc.level.dispersion = f"{disp.group(1)}(BJ)" if disp.group(2) else disp.group(1)

    s2 = last_float(r"<S2>\s*=\s*(" + FLOAT + r")\s*\(Exact", text)
    if s2 is None:
        # SCF-module UHF (e.g. the reference of an MP2 job): "Sz(Sz+1) = 0.7500" then "S^2 = 1.9410"
        s2 = last_float(r"Sz\(Sz\+1\)\s*=\s*" + FLOAT + r"\s*\n\s*S\^2\s*=\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2

    levels = {}
    for name, pat in (("ccsd", r"CCSD total energy / hartree\s*=\s*(" + FLOAT + ")"),
                      ("ccsd(t)", r"CCSD\(T\) total energy / hartree\s*=\s*(" + FLOAT + ")"),
                      ("ccsd[t]", r"CCSD\[T\] total energy / hartree\s*=\s*(" + FLOAT + ")"),
                      ("mp2", r"Total MP2 energy\s+(" + FLOAT + ")"),
                      ("scs-mp2", r"Total SCS-MP2 energy\s+(" + FLOAT + ")")):
        v = last_float(pat, text)
        if v is not None:
            levels[name] = v
    if levels:
        for k in [k for k in calc.energies_hartree if k != "scf"]:
            del calc.energies_hartree[k]
        calc.energies_hartree.update(levels)

    if "mp2" in levels and calc.level.method in (None, "HF"):
        calc.level.method = "MP2"  # the MP2 module ran (task mp2): its energy is the job's
    _requested(calc, text)
    _tddft_roots(calc, text)

    n = calc.n_atoms
    # DFT/SCF-module blocks (printed with `mulliken` in the dft block, 2 decimals, every
    # optimisation step; cclib 1.8.1 reads neither the total nor the spin density block)
    total_pos, total = _density_block(text, ("Total Density - Mulliken Population Analysis", "Mulliken analysis of the total density"), n)
    spin_pos, spin = _density_block(text, ("Spin Density - Mulliken Population Analysis", "Mulliken analysis of the spin density"), n)
    if total:
        calc.charges["mulliken"] = [_charge(z, p) for z, p in total]
    if spin:
        calc.spin_populations["mulliken"] = [float(v) for _z, v in spin]
    # property module (5 decimals): preferred when it comes after the DFT-module blocks
    if text.rfind("----- Atomic spin population -----") < spin_pos:
        return _check_z(calc, total)
    spins = _atom_block(text, "----- Atomic spin population -----", n)
    if spins:
        calc.spin_populations["mulliken"] = [float(v) for _z, v in spins]
    pops = _atom_block(text, "----- Total      gross population on atoms ----", n)
    if pops and text.rfind("----- Total      gross population on atoms ----") > total_pos:
        calc.charges["mulliken"] = [_charge(z, p) for z, p in pops]
        total = pops
    _check_z(calc, total)


#: TCE "Calculation type" -> method (with "Perturbative correction : (T)" -> "(T)" appended)
TCE_TYPES = {"Coupled-cluster singles & doubles": "CCSD", "Coupled-cluster doubles": "CCD",
             "Linearized coupled-cluster doubles": "LCCD", "MBPT(2)": "MP2", "MBPT(3)": "MP3", "MBPT(4)": "MP4"}


def _requested(calc, text: str) -> None:
    m = re.search(r"Calculation type : ([^\n]*?)\s*(?:w/ perturbation)?\s*\n", text)
    if m and "Correlation Information" in text[max(0, m.start() - 400) : m.start()]:
        method = TCE_TYPES.get(m.group(1).strip())
        pert = re.search(r"Perturbative correction : (\S+)", text[m.end() : m.end() + 300])
        if method:
            calc.level.method = method + (pert.group(1) if pert and method == "CCSD" else "")
            calc.level.functional = None
    td = re.search(r"TDDFT Information\s*\n\s*-+\s*\n\s*Calculation type : ([^\n]*?)\s*\n", text)
    if td:  # NWChem 7 prints e.g. "TDDFT" or "Tamm-Dancoff TDDFT" (keyword cis)
        kind = td.group(1)
        calc.level.excited_method = {"TDDFT": "TDDFT", "TDA": "TDDFT/TDA", "Tamm-Dancoff TDDFT": "TDDFT/TDA", "CIS": "CIS",
                                     "RPA": "TDHF"}.get(kind, kind)


class _Printed(float):
    """A float that remembers how many decimals the log printed (to round Z - population)."""

    decimals: int = 6


def _num(token: str) -> float:
    value = _Printed(token)
    value.decimals = len(token.split(".")[1]) if "." in token else 0
    return value


def _charge(z: float, pop: float) -> float:
    return round(z - pop, getattr(pop, "decimals", 6))


def _check_z(calc, rows) -> None:
    """The Z column must agree with the elements cclib read."""
    if rows and calc.elements and [int(round(z)) for z, _ in rows] != [ELEMENT_SYMBOLS.index(e) for e in calc.elements]:
        calc.problems.append("NWChem population block does not match the atom list (ECP or ghost atoms?)")


def _density_block(text: str, titles, n_atoms: int):
    """(position, [(Z, value)]) of the last Mulliken density block with one of `titles`.

    Rows look like '    1 C    6     5.58   2.00  0.72 ...' (index, tag, Z, value, shells).
    """
    pos = max(text.rfind(t) for t in titles)
    if pos < 0 or n_atoms == 0:
        return -1, None
    m = re.compile(r"\n -+\s+-+\s+-+\n").search(text, pos, pos + 2000)
    if not m:
        return pos, None
    rows = []
    for line in text[m.end() :].split("\n", n_atoms)[:n_atoms]:
        parts = line.split()
        if len(parts) < 4:
            return pos, None
        try:
            rows.append((float(parts[2]), _num(parts[3])))
        except ValueError:
            return pos, None
    return pos, rows


def _tddft_roots(calc, text: str) -> None:
    """Per root of the last TDDFT run: transition dipole (X, Y, Z in a.u.) and <S2>.

    Matched to cclib's states by order and energy ("Root   1   a   0.075629126 a.u.   2.0580 eV").
    """
    roots = list(re.finditer(r"Root\s+(\d+)\s+(.*?)\s+(" + FLOAT + r") a\.u\.\s+(" + FLOAT + r") eV", text))
    if not roots or not calc.excited_states:
        return
    last_start = max(i for i, m in enumerate(roots) if m.group(1) == "1")
    roots = roots[last_start:]
    if len(roots) != len(calc.excited_states):
        return
    for st, m in zip(calc.excited_states, roots):
        if abs(float(m.group(4)) - st.energy_ev) > 1e-3:
            return
        seg = text[m.end() : m.end() + 1500]
        d = re.search(r"Transition Moments\s+X\s+(" + FLOAT + r")\s+Y\s+(" + FLOAT + r")\s+Z\s+(" + FLOAT + ")", seg)
        if d:
            st.transition_dipole_au = [float(d.group(k)) for k in (1, 2, 3)]
        s2 = re.match(r"\s*<S2> =\s*(" + FLOAT + ")", seg)
        if s2:
            st.s2 = float(s2.group(1))
