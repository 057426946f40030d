"""ORCA supplement (ORCA 5 and 6), read from the log text.

What it corrects or adds, each measured on the shared fixture logs:
- ORCA 6: cclib 1.8.1 stops on the new symmetry block; the adapter's patched parser gets
  past it but then skips the SCF tables, the orbital-energy table and the absorption
  spectrum. Orbital energies, excited states (with oscillator strengths and transition
  dipoles), charges/spins and energies are read here from the text for every ORCA version.
- Energies: cclib keeps the SCF summary's "Total Energy" (8 decimals in ORCA 5); the
  "FINAL SINGLE POINT ENERGY" line prints 12 decimals and includes dispersion and
  solvation terms, so it is the record's energy (scf for SCF methods; the highest
  correlated level for MP2/CC jobs, with E(MP2), E(CCSD), E(CCSD(T)) lines kept per level).
- <S^2> ("Expectation value of <S**2>"), functional and job type from the input echo,
  dispersion, CPCM/SMD solvation with its solvent and dielectric, Hirshfeld populations.
- Frequencies, normal modes and IR intensities from the text (orca_blocks; cclib 1.8.1 fails
  on the ORCA 6.0.1 layout with point group and irrep column), ROCIS excited states.
- Excited-state jobs (TD-DFT, CIS, ROCIS) report the ground-state reference: the SCF energy.
"""
from __future__ import annotations

import re

from dossier.reading.supplements import orca_blocks
from dossier.reading.textutil import FLOAT, all_floats, last_float, last_match
from dossier.records import ExcitedState, Orbitals
from dossier.units import AU_DIPOLE_DEBYE, EV_CM1

FUNCTIONALS = (
    "b3lyp", "b3lyp/g", "pbe0", "pbe", "bp86", "blyp", "bhlyp", "tpss", "tpssh", "m06", "m06-2x", "m062x",
    "wb97x", "wb97x-d3", "wb97x-v", "wb97m-v", "cam-b3lyp", "b2plyp", "r2scan", "r2scan-3c", "b97-3c",
    "pbeh-3c", "revpbe", "b97m-v", "lc-blyp", "wb2plyp", "x3lyp", "o3lyp", "pw6b95", "b3pw91", "tpss0",
)
DISPERSION = {"d3bj": "D3(BJ)", "d3zero": "D3(0)", "d3": "D3(BJ)", "d4": "D4", "d2": "D2"}


def covers_skipped(skipped) -> bool:
    """cclib sections this supplement re-reads itself (ORCA 6 layouts)."""
    line, _err = skipped
    return any(key in line for key in ("SCF CONVERGED", "ORBITAL ENERGIES", "ABSORPTION SPECTRUM", "DIPOLE MOMENT",
                                       "VIBRATIONAL FREQUENCIES", "NORMAL MODES", "IR SPECTRUM"))


def input_keywords(text: str) -> list[str]:
    """Lower-case words of the '!' lines in the echoed input."""
    words: list[str] = []
    for m in re.finditer(r"\n\|\s*\d+>\s*!([^\n]*)", text):
        words.extend(m.group(1).lower().split())
    return words


def apply(calc, text: str, data) -> None:
    m = re.search(r"Program Version (\d+\.\d+\.\d+)", text)
    if m:
        calc.program_version = m.group(1)
    kw = input_keywords(text)
    blocks = "\n".join(re.findall(r"\n\|\s*\d+>\s*(%[^\n]*)", text)).lower()

    # Job kinds
    if any(k in kw for k in ("opt", "optts", "tightopt", "verytightopt", "looseopt", "copt", "zopt")) or "THE OPTIMIZATION HAS CONVERGED" in text or "GEOMETRY OPTIMIZATION CYCLE" in text:
        calc.job_kinds.append("optimization")
    if any(k in kw for k in ("freq", "numfreq", "anfreq")):
        calc.job_kinds.append("frequencies")

    rocis = _level(calc, text, kw, blocks)
    _energies(calc, text, rocis)

    # Populations (last block of each scheme)
    for scheme, title in (("mulliken", "MULLIKEN ATOMIC CHARGES"), ("lowdin", "LOEWDIN ATOMIC CHARGES")):
        q, s = _population_block(text, title, calc.n_atoms)
        if q:
            calc.charges[scheme] = q
        if s:
            calc.spin_populations[scheme] = s
    q, s = _hirshfeld(text, calc.n_atoms)
    if q:
        calc.charges["hirshfeld"] = q
    if s:
        calc.spin_populations["hirshfeld"] = s

    orbitals = _orbitals(text)
    if orbitals is not None:
        if calc.orbitals is not None:
            orbitals.coefficients = calc.orbitals.coefficients
            orbitals.basis_labels = calc.orbitals.basis_labels
            orbitals.basis_atoms = calc.orbitals.basis_atoms
            orbitals.overlap = calc.orbitals.overlap
        calc.orbitals = orbitals
        calc.level.unrestricted = len(orbitals.energies_hartree) == 2

    states = orca_blocks.rocis_states(text, calc.multiplicity) if rocis else excited_states(text)
    for st in states:  # ORCA 5 prints no irreps in the STATE lines; cclib found them elsewhere
        if st.symmetry and "-" not in st.symmetry:
            twin = next((x for x in calc.excited_states if abs(x.energy_cm1 - st.energy_cm1) < 0.05 and x.symmetry), None)
            if twin is not None and twin.symmetry.split("-")[0] == st.symmetry:
                st.symmetry = twin.symmetry
    if states:
        calc.excited_states = states

    vib = orca_blocks.vibrations(text)
    if vib is not None:  # the same numbers as cclib's on ORCA 5 (tests/test_reading_levels.py)
        calc.vibrations = vib
    _thermo(calc, text)

    dip = re.findall(r"\nTotal Dipole Moment\s+:\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")", text)
    if dip:
        calc.dipole_debye = [float(v) * AU_DIPOLE_DEBYE for v in dip[-1]]


def _level(calc, text, kw, blocks) -> bool:
    """Level of theory, <S^2> and the excited-state method; True for a ROCIS job."""
    lvl = calc.level
    functional = next((k for k in kw if k in FUNCTIONALS), None)
    post = next((k for k in kw if re.fullmatch(r"(dlpno-)?(ccsd\(t\)|ccsd|qcisd\(t\)|mp2|ri-mp2|scs-mp2|cisd)", k)), None)
    if post:
        lvl.method, lvl.functional = post.upper(), None
    elif functional:
        lvl.method, lvl.functional = "DFT", functional.upper()
    elif "Hartree-Fock(GTOs)" in text and "Exchange Functional" not in text:
        lvl.method, lvl.functional = "HF", None
    hftyp = last_match(r"Hartree-Fock type\s+HFTyp\s+\.\.\.\.\s+(\w+)", text)
    if hftyp:
        lvl.unrestricted = hftyp.group(1).upper() == "UHF"
    elif any(k in kw for k in ("uhf", "uks")):
        lvl.unrestricted = True
    b = re.search(r"Your calculation utilizes the basis: (\S+)", text)
    if b:
        lvl.basis = b.group(1)
    disp = next((DISPERSION[k] for k in kw if k in DISPERSION), None)
    if disp is None and re.search(r"DFT DISPERSION CORRECTION", text):
        disp = "D3(BJ)" if "BJ" in text[text.find("DFT DISPERSION CORRECTION"):][:3000] else "D3"
    lvl.dispersion = disp
    solv = _solvation(text, kw, blocks)
    if solv:
        lvl.solvation = solv

    # <S^2>
    s2 = last_float(r"Expectation value of <S\*\*2>\s*:\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2

    # Excited-state method (its ground-state reference is the reported level)
    rocis = "ORCA ROCIS CALCULATION" in text
    td = re.search(r"\n(TD-DFT/TDA|TD-DFT|CIS) EXCITED STATES", text)
    if rocis:
        lvl.excited_method = "ROCIS"
    elif td:
        lvl.excited_method = {"TD-DFT/TDA": "TDDFT/TDA", "TD-DFT": "TDDFT"}.get(td.group(1), td.group(1))

    return rocis


def _energies(calc, text, rocis) -> None:
    finals = all_floats(r"\nFINAL SINGLE POINT ENERGY\s+(" + FLOAT + ")", text)
    scf_totals = all_floats(r"\nTotal Energy\s+:\s+(" + FLOAT + r") Eh", text)
    levels = {}
    td_total = False
    for name, pat in (("mp2", r"MP2 TOTAL ENERGY:\s+(" + FLOAT + ")"),
                      ("ccsd", r"\nE\(CCSD\)\s+\.\.\.\s+(" + FLOAT + ")"),
                      ("ccsd(t)", r"\nE\(CCSD\(T\)\)\s+\.\.\.\s+(" + FLOAT + ")")):
        v = last_float(pat, text)
        if v is not None:
            levels[name] = v
    if levels:
        calc.energies_hartree = dict(levels)
        if scf_totals:
            calc.energies_hartree = {"scf": scf_totals[-1], **levels}
            calc.scf_energy_hartree = scf_totals[-1]
        top = "ccsd(t)" if "ccsd(t)" in levels else ("ccsd" if "ccsd" in levels else "mp2")
        if finals:
            calc.energies_hartree[top] = finals[-1]
    elif finals and rocis and scf_totals:
        # ROCIS: "FINAL SINGLE POINT ENERGY -380.892798900059" is the ROCIS root 0 ("E[ 0] =
        # -380.8927989001"), kept as its own level; the reference is the SCF ("Total Energy :")
        calc.energies_hartree["scf"] = scf_totals[-1]
        calc.energies_hartree["rocis"] = finals[-1]
        calc.scf_energy_hartree = scf_totals[-1]
        td_total = True
    elif finals and "EXCITED STATES" in text and scf_totals:
        # TD-DFT/CIS: FINAL SINGLE POINT ENERGY is the total energy of the followed root
        # (E(SCF) + E(root 1) by default), not the ground state: take the SCF total.
        disp = last_float(r"\nDispersion correction\s+(" + FLOAT + ")", text) or 0.0
        calc.energies_hartree["scf"] = scf_totals[-1] + disp
        calc.scf_energy_hartree = calc.energies_hartree["scf"]
        td_total = True
    elif finals:
        calc.energies_hartree["scf"] = finals[-1]
        calc.scf_energy_hartree = finals[-1]
    if finals and not td_total:
        calc.optimization_energies_hartree = finals if "optimization" in calc.job_kinds else finals[-1:]



def _solvation(text, kw, blocks):
    """'SMD (toluene, eps=2.3741)', 'CPCM (eps=2.3741)': model from the input, solvent and
    dielectric as the log prints them ("Solvent: ... TOLUENE", "Epsilon ... 2.3741")."""
    model = None
    for k in kw:
        m = re.match(r"(cpcm|smd|cpcmc|ddcosmo|alpb)(?:\((.*)\))?$", k)
        if m:
            model = {"cpcm": "CPCM", "cpcmc": "CPCM (COSMO epsilon)", "smd": "SMD", "ddcosmo": "ddCOSMO", "alpb": "ALPB"}[m.group(1)]
    if "smd true" in blocks or re.search(r"\n\|\s*\d+>\s+smd\s+true", text, re.I) or "utilizes the SMD solvation module" in text:
        model = "SMD"
    if model is None and "CPCM SOLVATION MODEL" in text:
        model = "CPCM"
    if model is None:
        return None
    eps = last_float(r"Epsilon\s+\.\.\.\s+(" + FLOAT + ")", text)
    solvent = re.search(r"\nSolvent:\s+\.\.\.\s+(\S+)", text)
    solvent = solvent if solvent and solvent.group(1).upper() != "CUSTOM" else None  # eps/refrac set by hand
    inner = ", ".join(x for x in (solvent.group(1).lower() if solvent else None, f"eps={eps:g}" if eps is not None else None) if x)
    return f"{model} ({inner})" if inner else model


def _population_block(text, title, n_atoms):
    i = text.rfind(title)
    if i < 0 or n_atoms == 0:
        return None, None
    lines = text[i:].split("\n")[2 : 2 + n_atoms]
    charges, spins = [], []
    for line in lines:
        m = re.match(r"\s*\d+\s+\w+\s*:\s*(" + FLOAT + r")(?:\s+(" + FLOAT + r"))?\s*$", line)
        if not m:
            return None, None
        charges.append(float(m.group(1)))
        if m.group(2) is not None:
            spins.append(float(m.group(2)))
    return charges, (spins if len(spins) == n_atoms else None)


def _hirshfeld(text, n_atoms):
    i = text.rfind("HIRSHFELD ANALYSIS")
    if i < 0 or n_atoms == 0:
        return None, None
    m = re.compile(r"^\s*ATOM\s+CHARGE\s+SPIN\s*$", re.M).search(text, i)
    if not m:
        return None, None
    lines = text[m.end() :].lstrip("\n").split("\n")[:n_atoms]
    charges, spins = [], []
    for line in lines:
        parts = line.split()
        if len(parts) < 4:
            return None, None
        charges.append(float(parts[2]))
        spins.append(float(parts[3]))
    return charges, spins


def _orbitals(text):
    """The last ORBITAL ENERGIES block: one table (restricted) or SPIN UP / SPIN DOWN tables.

    Rows: "   0   1.0000     -11.307857      -307.7024    1-Bu" (NO, OCC, E(Eh), E(eV), irrep).
    """
    i = text.rfind("ORBITAL ENERGIES\n----------------")
    if i < 0:
        return None
    row = re.compile(r"\s*(\d+)\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")(?:\s+\S+)?\s*$")
    head = text[i : i + 300]
    n_tables = 2 if "SPIN UP ORBITALS" in head else 1
    pos = i
    channels, homos = [], []
    for _ in range(n_tables):
        h = text.find("  NO   OCC", pos)
        if h < 0:
            return None
        energies, occ = [], []
        lines = text[text.find("\n", h) + 1 :].split("\n", 2000)
        consumed = 0
        for line in lines:
            m = row.match(line)
            if not m:
                break
            occ.append(float(m.group(2)))
            energies.append(float(m.group(3)))
            consumed += len(line) + 1
        if not energies:
            return None
        channels.append(energies)
        occupied = [k for k, o in enumerate(occ) if o > 0.5]
        homos.append(occupied[-1] if occupied else -1)
        pos = text.find("\n", h) + 1 + consumed
    return Orbitals(energies_hartree=channels, homo_indices=homos)


_MULT_NAME = {"1": "Singlet", "2": "Doublet", "3": "Triplet", "4": "Quartet"}


def excited_states(text: str) -> list[ExcitedState]:
    """Excited states from the last absorption spectrum table plus the STATE blocks.

    ORCA 6 rows: "0-1Ag ->  1-3Bu   3.129277   25239.3   396.2   fosc ...";
    ORCA 5 rows: "   1   43166.7    231.7   0.005267213 ... " or "6 25241.0 396.2 spin forbidden".
    """
    i = text.rfind("ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS")
    if i < 0:
        return []
    table = text[i:].split("\n")[5:]
    blocks = _state_blocks(text)
    states = []
    for line in table:
        if not line.strip() or line.startswith("---"):
            break
        m6 = re.match(r"\s*\d+-\d*\w*\s+->\s+(\d+)-(\d)(\w+)\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+\S+\s+(" + FLOAT + r")\s+\S+\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")", line)
        if m6:
            mult, sym = m6.group(2), m6.group(3)
            e_ev, e_cm1 = float(m6.group(4)), float(m6.group(5))
            fosc = float(m6.group(6))
            dip = [float(m6.group(k)) for k in (7, 8, 9)]
            label = f"{_MULT_NAME.get(mult, 'Mult' + mult)}-{sym}"
            blk = _match_block(blocks, e_cm1, int(mult))
            states.append(ExcitedState(energy_ev=e_ev, energy_cm1=e_cm1, oscillator_strength=fosc, symmetry=label,
                                       transition_dipole_au=dip, contributions=blk["contribs"] if blk else []))
            continue
        m5 = re.match(r"\s*(\d+)\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+(" + FLOAT + r")", line)
        m5f = re.match(r"\s*(\d+)\s+(" + FLOAT + r")\s+(" + FLOAT + r")\s+spin forbidden \(mult=(\d)\)", line)
        if m5 or m5f:
            mm = m5 or m5f
            e_cm1 = float(mm.group(2))
            mult = int(m5f.group(4)) if m5f else None
            blk = _match_block(blocks, e_cm1, mult)
            e_ev = e_cm1 / EV_CM1  # the table prints cm-1 to 0.1 (1e-5 eV)
            mult = mult or (blk["mult"] if blk else None)
            sym = blk["sym"] if blk else None
            label = f"{_MULT_NAME.get(str(mult), 'Mult' + str(mult))}-{sym}" if sym else (_MULT_NAME.get(str(mult)) if mult else None)
            states.append(ExcitedState(
                energy_ev=e_ev, energy_cm1=e_cm1,
                oscillator_strength=float(m5.group(4)) if m5 else 0.0,
                symmetry=label,
                transition_dipole_au=[float(m5.group(k)) for k in (6, 7, 8)] if m5 else None,
                contributions=blk["contribs"] if blk else [],
            ))
            continue
        break
    states.sort(key=lambda s: s.energy_cm1)
    return states


def _state_blocks(text):
    """STATE blocks of the last TD-DFT/CIS run: energy, multiplicity, symmetry, contributions."""
    out = []
    starts = [m for m in re.finditer(r"\n(?:TD-DFT(?:/TDA)?|CIS) EXCITED STATES \((SINGLETS|TRIPLETS|[^\n]*)\)", text)]
    if not starts:
        starts = [m for m in re.finditer(r"\n(?:TD-DFT(?:/TDA)?|CIS) EXCITED STATES", text)]
    for st in starts:
        kind = st.group(1) if st.groups() else None
        block_mult = 3 if kind == "TRIPLETS" else (1 if kind == "SINGLETS" else None)
        end = text.find("\n\n\n", st.end())
        seg = text[st.end() : end if end > 0 else len(text)]
        for m in re.finditer(r"^STATE\s+(\d+):\s+E=\s+(" + FLOAT + r") au\s+(" + FLOAT + r") eV\s+(" + FLOAT + r") cm\*\*-1(.*)$", seg, re.M):
            tail = m.group(5)
            ms = re.search(r"Sym:\s*(\S+)", tail)
            mm = re.search(r"Mult\s+(\d)", tail)
            contribs = []
            for c in re.finditer(r"^\s+(\d+)([ab])\s+->\s+(\d+)([ab])\s+:\s+(" + FLOAT + r")(?:\s+\(c=\s*(" + FLOAT + r")\))?", seg[m.end():].split("\n\n")[0], re.M):
                coef = float(c.group(6)) if c.group(6) else float(c.group(5)) ** 0.5
                contribs.append((f"{int(c.group(1)) + 1}{c.group(2)}", f"{int(c.group(3)) + 1}{c.group(4)}", coef))
            out.append({"cm1": float(m.group(4)), "mult": int(mm.group(1)) if mm else block_mult,
                        "sym": ms.group(1) if ms else None, "contribs": contribs})
    return out


def _match_block(blocks, e_cm1, mult):
    best = None
    for b in blocks:
        if mult is not None and b["mult"] is not None and b["mult"] != mult:
            continue
        d = abs(b["cm1"] - e_cm1)
        if d < 1.0 and (best is None or d < abs(best["cm1"] - e_cm1)):
            best = b
    return best


def _thermo(calc, text):
    """ORCA prints totals in Eh: Total Enthalpy, Final Gibbs free energy; check cclib's."""
    pt = calc.printed_thermo
    if pt is None:
        return
    h = last_float(r"\nTotal Enthalpy\s+\.\.\.\s+(" + FLOAT + ")", text)
    g = last_float(r"\nFinal Gibbs free energy\s+\.\.\.\s+(" + FLOAT + ")", text)
    z = last_float(r"\nZero point energy\s+\.\.\.\s+(" + FLOAT + ")", text)
    t = last_float(r"\nTemperature\s+\.\.\.\s+(" + FLOAT + ") K", text)
    if h is not None:
        pt.enthalpy_hartree = h
    if g is not None:
        pt.gibbs_hartree = g
    if z is not None:
        pt.zpe_hartree = z
    if t is not None:
        pt.temperature_k = t
