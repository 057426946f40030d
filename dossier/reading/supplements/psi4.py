"""Psi4 supplement, read from the log text.

- Frequency jobs: cclib 1.8.1 returns no scfenergies for a finite-difference frequency run
  (many displaced SCFs); the reference-geometry energy is the printed
  "Total E0, Electronic energy at well bottom" (8 decimals), taken at full precision from
  the SCF "Total Energy =" line that rounds to it.
- Spin populations: cclib returns none; the "Mulliken Charges: (a.u.)" and "Lowdin Charges"
  tables print Alpha, Beta, Spin, Total columns per atom.
- <S^2> ("@S^2 Observed:"), thermochemistry totals in Eh (Total ZPE / H / G at T),
  CCSD and CCSD(T) total energies at full printed precision, job kinds from the input echo.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, all_floats, last_float, last_match
from dossier.records import PrintedThermo

DISPERSION = {"d3bj": "D3(BJ)", "d3": "D3(0)", "d3zero": "D3(0)", "d3mbj": "D3M(BJ)", "d4": "D4", "d2": "D2", "nl": "VV10"}


def covers_skipped(skipped) -> bool:
    """Psi4 1.3.2 as packaged by Debian prints "Git: Rev {} zzzzzzz" under its banner and
    cclib 1.8.1 fails to parse that as a version; the version is read here from the banner."""
    line, err = skipped
    return line.startswith("Psi4: An Open-Source") and err == "InvalidVersion"


def for_cclib(text: str) -> str:
    """The text cclib needs from a finite-difference frequency job: the reference run and the
    results, without the other displaced-geometry runs (the first nested run is the reference,
    "including the reference geometry"; the displaced ones add nothing the record keeps and
    are most of the parsing time: 73 of 74 runs in the fixture's dvb_ir_rks.out).
    tests/test_reading_fixtures.py checks that the record is the same either way.
    """
    start = text.find("//    FiniteDifference Computations  //")
    end = text.find("//      FiniteDifference Results     //")
    if start < 0 or end < 0:
        return text
    first_stop = text.find("Psi4 stopped on:", start)
    if first_stop < 0 or first_stop > end:
        return text
    keep_to = text.find("\n", first_stop) + 1
    cut_from = text.rfind("\n", 0, text.rfind("//>>>>", 0, end)) + 1
    return text[:keep_to] + text[cut_from:]


def _input_echo(text: str) -> str:
    m = re.search(r"==> Input File <==\n\n-+\n(.*?)\n-+", text, re.S)
    return m.group(1) if m else text[:5000]


def apply(calc, text: str, data) -> None:
    m = re.search(r"^\s+Psi4 (\d+\.\d+(?:\.\d+)?)\S* (?:release|dev)", text[:3000], re.M)
    if m:
        calc.program_version = m.group(1)
    low = _input_echo(text).lower()
    is_freq = _set_job_kinds(calc, low)
    _set_level(calc, text, low)
    s2 = last_float(r"@S\^2 Observed:\s*(" + FLOAT + ")", text)
    if s2 is not None:
        calc.s2 = s2
    _set_energies(calc, text, is_freq)
    _set_populations(calc, text)
    _set_thermo(calc, text)


def _set_job_kinds(calc, low: str) -> bool:
    """Job kinds from the lower-cased input echo; True for a frequency job."""
    if re.search(r"\b(optimize|opt)\(", low):
        calc.job_kinds.append("optimization")
    is_freq = re.search(r"\b(frequencies|frequency|freq|hessian)\(", low) is not None
    if is_freq:
        calc.job_kinds.append("frequencies")
    return is_freq


def _set_level(calc, text: str, low: str) -> None:
    """Method, dispersion, reference and PCM solvation from the input echo (`low`) and the log."""
    m = re.search(r"\b(?:energy|optimize|opt|frequencies|frequency|freq|gradient|properties)\(\s*['\"]([^'\"]+)['\"]", low)
    if m:
        name = m.group(1)
        base, _, disp = name.partition("-")
        if disp in DISPERSION:
            calc.level.dispersion = DISPERSION[disp]
        if base in ("scf", "hf"):
            calc.level.method, calc.level.functional = "HF", None
        elif base.startswith(("mp2", "mp3", "ccsd", "cc2", "cc3", "cisd", "qcisd")):
            calc.level.method, calc.level.functional = base.upper(), None
    ref = re.search(r"reference\s+(\w+)", low)
    if ref:
        calc.level.unrestricted = ref.group(1) in ("uhf", "uks", "cuhf")
    elif "==> Beta-Spin Molecular Orbitals <==" in text:
        calc.level.unrestricted = True
    else:
        calc.level.unrestricted = False
    if "pcm" in low or "PCMSolver" in text:
        eps = last_float(r"Dielectric \(static\)\s*=?\s*(" + FLOAT + ")", text) or last_float(r"epsilon\s*=\s*(" + FLOAT + ")", low)
        calc.level.solvation = f"PCM (eps={eps:g})" if eps is not None else "PCM"


def _set_energies(calc, text: str, is_freq: bool) -> None:
    """SCF energy (a frequency job's reference geometry: see the module docstring), MP2 and CC."""
    totals = all_floats(r"    Total Energy =\s*(" + FLOAT + ")", text)
    e0 = last_float(r"Total E0, Electronic energy at well bottom at 0 \[K\]\s+(" + FLOAT + r") \[Eh\]", text)
    if is_freq and e0 is not None:
        exact = next((t for t in totals if abs(t - e0) < 0.6e-8), None)
        calc.energies_hartree["scf"] = exact if exact is not None else e0
        calc.scf_energy_hartree = calc.energies_hartree["scf"]
        calc.optimization_energies_hartree = [calc.scf_energy_hartree]
    elif totals:
        calc.energies_hartree["scf"] = totals[-1]
        calc.scf_energy_hartree = totals[-1]
    for name, pat in (("mp2", r"MP2 [Tt]otal [Ee]nergy(?: \(a\.u\.\))?\s*[=:]\s*(" + FLOAT + ")"),
                      ("scs-mp2", r"SCS-MP2 [Tt]otal [Ee]nergy(?: \(a\.u\.\))?\s*[=:]\s*(" + FLOAT + ")"),
                      ("ccsd", r"\* CCSD total energy\s*=\s*(" + FLOAT + ")"),
                      ("ccsd(t)", r"\* CCSD\(T\) total energy\s*=\s*(" + FLOAT + ")")):
        # literal-first patterns (fast); "MP2" must not be the tail of "SCS-MP2" or "SOS-MP2"
        hits = [m for m in re.finditer(pat, text) if name != "mp2" or text[m.start() - 1] in " \t*"]
        if hits:
            v = float(hits[-1].group(1))
            for k in [k for k in calc.energies_hartree if k.startswith("cc") and k not in ("ccsd", "ccsd(t)")]:
                del calc.energies_hartree[k]
            calc.energies_hartree[name] = v


def _set_populations(calc, text: str) -> None:
    """Mulliken and Lowdin charges; spin populations too for an unrestricted reference."""
    n = calc.n_atoms
    for scheme, title in (("mulliken", "Mulliken Charges: (a.u.)"), ("lowdin", "Lowdin Charges: (a.u.)")):
        i = text.rfind(title)
        if i < 0 or n == 0:
            continue
        rows = text[i:].split("\n")[2 : 2 + n]
        q, s = [], []
        for row in rows:
            parts = row.split()
            if len(parts) != 6:
                break
            s.append(float(parts[4]))
            q.append(float(parts[5]))
        if len(q) == n:
            calc.charges[scheme] = q
            if calc.level.unrestricted:
                calc.spin_populations[scheme] = s


def _set_thermo(calc, text: str) -> None:
    """Printed thermochemistry totals in Eh at the printed temperature and pressure."""
    t = last_match(r"Total H, Enthalpy at\s+(" + FLOAT + r") \[K\]\s+(" + FLOAT + r") \[Eh\]", text)
    if t:
        g = last_float(r"Total G, Free enthalpy at\s+" + FLOAT + r" \[K\]\s+(" + FLOAT + r") \[Eh\]", text)
        zpe = last_float(r"Correction ZPE\s+.*?(" + FLOAT + r") \[Eh\]", text)
        p = last_float(r"Pressure\s*[:=]?\s*(" + FLOAT + r") \[Pa\]", text)
        h = float(t.group(2))
        temp = float(t.group(1))
        entropy = (h - g) / temp if g is not None else None
        calc.printed_thermo = PrintedThermo(temperature_k=temp, pressure_pa=p, zpe_hartree=zpe, enthalpy_hartree=h,
                                            gibbs_hartree=g, entropy_hartree_per_k=entropy)
