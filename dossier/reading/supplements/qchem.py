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
        eps = last_float(r"(?:Dielectric|dielectric|Solvent dielectric)\s*[=:]?\s*(" + FLOAT + ")", text)
        name = {"pcm": "PCM", "smd": "SMD", "cosmo": "COSMO"}.get(solv, solv.upper())
        calc.level.solvation = f"{name} (eps={eps:g})" if eps is not None else name
    if calc.level.method is None and rem.get("method") == "hf":
        calc.level.method = "HF"

    s2 = last_float(r"<S\^2> =\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2

    chelpg = _first_chelpg(text, calc.n_atoms)
    if chelpg:
        calc.charges["chelpg"] = chelpg

    e = last_float(r"Total energy in the final basis set =\s*(" + FLOAT + ")", text)
    if e is not None and "mp2" not in calc.energies_hartree and not any(k.startswith("cc") for k in calc.energies_hartree):
        calc.energies_hartree["scf"] = e
        calc.scf_energy_hartree = e

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
