"""Q-Chem supplement, read from the log text.

- Thermochemistry: Q-Chem prints "Total Enthalpy: 117.424 kcal/mol" and the entropy as
  thermal corrections, and cclib 1.8.1 passes them on as `enthalpy`/`freeenergy`
  (corrections in hartree), unlike its Gaussian/ORCA/NWChem parsers (totals). Here they are
  read from the text and made totals: H = E_scf + H_corr, G = H - T*S, ZPE kept as a correction.
- ChElPG: with `chelpg = true` Q-Chem 5.4 prints "Ground-State ChElPG Net Atomic Charges"
  twice; the second table (after "Do orbital-by-orbital Lowdin population analysis") holds
  values of +-22 e that are no atomic charges, and cclib 1.8.1 keeps that one. The record
  keeps the first table after the last Mulliken table.
- <S^2> ("<S^2> =  0.769528701"), job kinds from the echoed $rem, solvation and dispersion.
- The level the $rem asks for (method = ccd) and every level printed in the summary of a
  correlated run ("MP2 energy = -75.00228210", "CCD total energy = -75.01737790"); cclib
  1.8.1 gives the MP2 energy of a CCD job as if it were the final one.
- SMD/PCM dielectric: Q-Chem prints the C-PCM factor f(eps) = (eps-1)/(eps+0.5), not eps;
  eps = (1 + f/2)/(1 - f) is solved from it (the printed formula itself).
- TDDFT/CIS transition dipoles ("Trans. Mom.: 0.0000 X 0.0000 Y 0.0000 Z", a.u.).
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, last_float
from dossier.records import PrintedThermo
from dossier.units import HARTREE_KCAL_MOL, STANDARD_ATMOSPHERE_PA


def covers_skipped(skipped) -> bool:
    return False


def _rem(text: str) -> dict[str, str]:
    out: dict[str, str] = {}
    for block in re.findall(r"\n\$(?:rem|REM)\s*\n(.*?)\n\$(?:end|END)", text[:200000], re.S):
        for line in block.splitlines():
            parts = line.replace("=", " ").split()
            if len(parts) >= 2 and not parts[0].startswith("!"):
                out[parts[0].lower()] = parts[1].lower()
    return out


def apply(calc, text: str, data) -> None:
    m = re.search(r"\n Q-Chem (\d+\.\d+(?:\.\d+)?) for", text[:20000])
    if m:
        calc.program_version = m.group(1)
    rem = _rem(text)
    job = rem.get("jobtype", "sp")
    if job in ("opt", "ts"):
        calc.job_kinds.append("optimization")
    if job in ("freq",):
        calc.job_kinds.append("frequencies")
    if rem.get("unrestricted") in ("true", "1"):
        calc.level.unrestricted = True
    elif calc.level.unrestricted is None:
        calc.level.unrestricted = False
    disp = rem.get("dft_d")
    if disp and disp not in ("false", "0", "none"):
        calc.level.dispersion = {"d3_bj": "D3(BJ)", "d3_zero": "D3(0)", "d3": "D3(0)", "empirical_grimme": "D2"}.get(disp, disp.upper())
    solv = rem.get("solvent_method")
    if solv and solv not in ("false", "0"):
        calc.level.solvation = _solvation(text, solv)
    meth = rem.get("method") or rem.get("correlation")
    if meth == "hf" and calc.level.method in (None, "HF"):
        calc.level.method = "HF"
    elif meth in CORRELATED:
        calc.level.method, calc.level.functional = CORRELATED[meth], None
    kind = re.search(r"\n\s+(TDDFT/TDA|TDDFT|CIS|RPA) Excitation Energies", text)
    if kind:  # the header Q-Chem prints: "TDDFT/TDA Excitation Energies" (its default for DFT)
        calc.level.excited_method = kind.group(1)

    s2 = last_float(r"<S\^2> =\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2

    chelpg = _first_chelpg(text, calc.n_atoms)
    if chelpg:
        calc.charges["chelpg"] = chelpg

    e = last_float(r"Total energy in the final basis set =\s*(" + FLOAT + ")", text)
    if e is not None:
        calc.energies_hartree["scf"] = e
        calc.scf_energy_hartree = e
    levels = {name: v for name, pat in LEVEL_LINES if (v := last_float(pat, text)) is not None}
    if levels:
        for k in [k for k in calc.energies_hartree if k != "scf"]:
            del calc.energies_hartree[k]
        calc.energies_hartree.update(levels)
    _transition_dipoles(calc, text)

    m = re.search(r"STANDARD THERMODYNAMIC QUANTITIES AT\s+(" + FLOAT + r") K\s+AND\s+(" + FLOAT + r") ATM", text)
    if m and calc.scf_energy_hartree is not None:
        t, p_atm = float(m.group(1)), float(m.group(2))
        h_kcal = last_float(r"Total Enthalpy:\s+(" + FLOAT + ") kcal/mol", text)
        s_cal = last_float(r"Total Entropy:\s+(" + FLOAT + r")\s+cal/mol\.K", text)
        zpe_kcal = last_float(r"Zero point vibrational energy:\s+(" + FLOAT + ") kcal/mol", text)
        h = calc.scf_energy_hartree + h_kcal / HARTREE_KCAL_MOL if h_kcal is not None else None
        s = s_cal / 1000.0 / HARTREE_KCAL_MOL if s_cal is not None else None
        calc.printed_thermo = PrintedThermo(
            temperature_k=t,
            pressure_pa=p_atm * STANDARD_ATMOSPHERE_PA,
            zpe_hartree=zpe_kcal / HARTREE_KCAL_MOL if zpe_kcal is not None else None,
            enthalpy_hartree=h,
            gibbs_hartree=h - t * s if h is not None and s is not None else None,
            entropy_hartree_per_k=s,
        )


CORRELATED = {"mp2": "MP2", "rimp2": "MP2", "ccd": "CCD", "ccsd": "CCSD", "ccsd(t)": "CCSD(T)", "qcisd": "QCISD",
              "qcisd(t)": "QCISD(T)"}

#: the summary of a correlated run: "MP2 energy = -75.00228210", "CCD total energy = -75.01737790"
LEVEL_LINES = (
    ("mp2", r"\n\s*MP2 energy\s+=\s*(" + FLOAT + ")"),
    ("ccd", r"\n\s*CCD total energy\s+=\s*(" + FLOAT + ")"),
    ("ccsd", r"\n\s*CCSD total energy\s+=\s*(" + FLOAT + ")"),
    ("ccsd(t)", r"\n\s*CCSD\(T\) total energy\s+=\s*(" + FLOAT + ")"),
    ("qcisd", r"\n\s*QCISD total energy\s+=\s*(" + FLOAT + ")"),
    ("qcisd(t)", r"\n\s*QCISD\(T\) total energy\s+=\s*(" + FLOAT + ")"),
)


def _solvation(text: str, solv: str) -> str:
    """'SMD (toluene, eps=2.37)': the solvent Q-Chem names and eps solved from the printed
    C-PCM factor f = (eps-1)/(eps+0.5), i.e. eps = (1 + f/2)/(1 - f)."""
    name = {"pcm": "PCM", "smd": "SMD", "cosmo": "COSMO"}.get(solv, solv.upper())
    solvent = re.search(r"\n Solvent: (\S+)", text)
    f = last_float(r"dielectric factor f\(eps\) = \(eps-1\)/\(eps\+0\.5\) =\s*(" + FLOAT + ")", text)
    eps = last_float(r"(?:Dielectric|dielectric|Solvent dielectric)\s*[=:]\s*(" + FLOAT + ")", text)
    if eps is None and f is not None and f < 1:
        eps = round((1 + f / 2) / (1 - f), 4)
    inner = ", ".join(x for x in (solvent.group(1) if solvent else None, f"eps={eps:g}" if eps is not None else None) if x)
    return f"{name} ({inner})" if inner else name


def _transition_dipoles(calc, text: str) -> None:
    """'Trans. Mom.: 0.0000 X 0.0000 Y 0.0000 Z' of each 'Excited state N' of the last run,
    matched to the states by order and the printed excitation energy (eV)."""
    rows = list(re.finditer(r"Excited state\s+(\d+): excitation energy \(eV\) =\s*(" + FLOAT + r")(.*?)Trans\. Mom\.:\s*("
                            + FLOAT + r") X\s+(" + FLOAT + r") Y\s+(" + FLOAT + r") Z", text, re.S))
    starts = [i for i, m in enumerate(rows) if m.group(1) == "1"]
    if not starts or not calc.excited_states:
        return
    rows = rows[starts[-1]:]
    if len(rows) != len(calc.excited_states):
        return
    for st, m in zip(calc.excited_states, rows):
        if abs(float(m.group(2)) - st.energy_ev) > 1e-3 or len(m.group(3)) > 400:
            return
    for st, m in zip(calc.excited_states, rows):
        st.transition_dipole_au = [float(m.group(k)) for k in (4, 5, 6)]


def _first_chelpg(text: str, n_atoms: int) -> list[float] | None:
    start = text.rfind("Ground-State Mulliken Net Atomic Charges")
    i = text.find("Ground-State ChElPG Net Atomic Charges", max(start, 0))
    if i < 0 or n_atoms == 0:
        return None
    j = text.find("\n  ---", i)
    rows = text[text.find("\n", j + 1) + 1 :].split("\n", n_atoms)[:n_atoms]
    out = []
    for row in rows:
        parts = row.split()
        if len(parts) != 3:
            return None
        out.append(float(parts[2]))
    return out
