"""Gaussian supplement, read from the log text.

- Correlated energies at full printed precision, one per level the log completes:
  EUMP2, EUMP3, UMP4(DQ), UMP4(SDQ), UMP4(SDTQ) ("-0.75002282127453D+02"), the converged
  coupled-cluster / QCI amplitudes ("Wavefunction amplitudes converged. E(Corr)=", filed
  as CCD, CCSD or QCISD after the method the route asks for), "CCSD(T)=", "QCISD(T)=".
  cclib files MP4(SDQ) as plain MP4 and keeps only the highest CC level.
- The level the job asked for, from the route ("#P CCD/STO-3G"): method, basis (a general
  basis with pseudopotentials is "Gen/ECP", split by element as the log prints it), the
  excited-state method (TD, CIS, EOM-CCSD) whose ground-state reference is then reported.
- <S^2> of the final SCF ("<S**2>= 0.7778 S= 0.5138" after "SCF Done"; the value before
  annihilation, i.e. of the wavefunction whose energy is reported).
- Job kinds, dispersion and solvation (PCM/SMD/CPCM with the printed Eps) from the route
  section and the PCM printout.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, last_float, to_float

DISPERSION = {"gd3bj": "D3(BJ)", "gd3": "D3(0)", "gd2": "D2", "pfd": "PFD"}

#: route method word (without R/U/RO) -> (ground-state method, excited-state method)
METHODS = {
    "hf": ("HF", None), "mp2": ("MP2", None), "mp3": ("MP3", None), "mp4": ("MP4", None),
    "mp4(sdtq)": ("MP4", None), "mp4(sdq)": ("MP4(SDQ)", None), "mp4(dq)": ("MP4(DQ)", None),
    "ccd": ("CCD", None), "ccsd": ("CCSD", None), "ccsd(t)": ("CCSD(T)", None), "qcisd": ("QCISD", None),
    "qcisd(t)": ("QCISD(T)", None), "eom-ccsd": ("CCSD", "EOM-CCSD"), "eomccsd": ("CCSD", "EOM-CCSD"),
    "cis": ("HF", "CIS"),
}

#: energies_hartree key -> body line (full printed precision)
LEVEL_LINES = (
    ("mp2", r"EUMP2 =\s*(" + FLOAT + ")"),
    ("mp3", r"EUMP3=\s*(" + FLOAT + ")"),
    ("mp4(dq)", r"UMP4\(DQ\)=\s*(" + FLOAT + ")"),
    ("mp4(sdq)", r"UMP4\(SDQ\)=\s*(" + FLOAT + ")"),
    ("mp4", r"UMP4\(SDTQ\)=\s*(" + FLOAT + ")"),
    # body lines "CCSD(T)= -0.75017760422D+02"; the archive's "CCSD(T)=-75.0177604\" has 7 decimals
    ("ccsd(t)", r"\n CCSD\(T\)=\s*(-?\d*\.\d+D[-+]\d+)"),
    ("qcisd(t)", r"\n QCISD\(T\)=\s*(-?\d*\.\d+D[-+]\d+)"),
)


def covers_skipped(skipped) -> bool:
    return False


def route(text: str) -> str:
    """The last route section (lines after ' #' up to the dashes), lower case."""
    i = text.rfind("\n #")
    if i < 0:
        return ""
    j = text.find("\n -", i + 1)
    return " ".join(text[i + 1 : j if j > 0 else i + 2000].split()).lower()


def method_word(r: str) -> str | None:
    """'b3lyp/gen' from '#p gfinput iop(6/7=3) #b3lyp/gen pseudo=read': the word with a slash
    that is not an IOp or keyword option."""
    for w in r.split():
        w = w.lstrip("#")
        if w[:1] in ("p", "n", "t") and w[1:2] == "" or "/" not in w or w.startswith("iop") or "=" in w.split("/")[0]:
            continue
        return w
    return None


def _bare(meth: str) -> str:
    for prefix in ("ro", "r", "u"):
        if meth.startswith(prefix) and meth[len(prefix):] in METHODS:
            return meth[len(prefix):]
    return meth


def general_basis(text: str, calc, r: str) -> str | None:
    """'Gen/ECP (Mo, Cl: LanL2MB; O: 6-31G(d))' from the 'General basis read from cards'
    listing ("Centers: 1 3 4 5 6 / LanL2MB / ****") when the route reads one."""
    ecp = "pseudo=read" in r or "pseudo=cards" in r or "genecp" in r
    name = "Gen/ECP" if ecp else "Gen"
    i = text.find("General basis read from cards")
    if i < 0:
        return name
    j = text.find("\n Centers:", i, i + 20000)
    parts, seen = [], set()
    for m in re.finditer(r"^ Centers:((?:\s+\d+)+)\s*\n\s*(\S+)\s*\n \*\*\*\*", text[j : j + 20000] if j > 0 else "", re.M):
        els = []
        for c in m.group(1).split():
            k = int(c) - 1
            el = calc.elements[k] if 0 <= k < len(calc.elements) else f"atom {c}"
            if el not in els:
                els.append(el)
        seen.update(els)
        parts.append(f"{', '.join(els)}: {m.group(2)}")
    return f"{name} ({'; '.join(parts)})" if parts else name


def apply(calc, text: str, data) -> None:
    m = re.search(r"^ Gaussian (\d+):\s+\S+-G\d+Rev([A-Z]\.\d+)", text[:20000], re.M)
    if m:
        calc.program_version = f"{m.group(1)} Rev. {m.group(2)}"
    r = route(text)
    if re.search(r"\bopt\b|\bopt=|\bopt\(", r):
        calc.job_kinds.append("optimization")
    if re.search(r"\bfreq\b|\bfreq=|\bfreq\(", r):
        calc.job_kinds.append("frequencies")
    m = re.search(r"empiricaldispersion=\(?(\w+)", r)
    if m:
        calc.level.dispersion = DISPERSION.get(m.group(1), m.group(1).upper())
    if "scrf" in r:
        model = "SMD" if "smd" in r else ("CPCM" if "cpcm" in r else "PCM")
        eps = last_float(r"Eps=\s*(" + FLOAT + ")", text)
        calc.level.solvation = f"{model} (eps={eps:g})" if eps is not None else model
    _level(calc, text, r)
    _energies(calc, text)

    # <S^2> of the last SCF (only unrestricted runs print it)
    done = text.rfind("SCF Done:")
    if done >= 0:
        m = re.search(r"<S\*\*2>=\s*(" + FLOAT + ")", text[done : done + 600])
        if m:
            calc.s2 = to_float(m.group(1))


def _level(calc, text: str, r: str) -> None:
    lvl = calc.level
    word = method_word(r)
    if word:
        meth, _, basis = word.partition("/")
        lvl.unrestricted = meth.startswith("u") or lvl.unrestricted
        bare = _bare(meth)
        if bare in METHODS:
            lvl.method, lvl.excited_method = METHODS[bare]
            lvl.functional = None
        if basis in ("gen", "genecp"):
            lvl.basis = general_basis(text, calc, r)
        elif basis:
            lvl.basis = basis.upper()
    if re.search(r"(?:^|\s)#?td(?:\b|=|\()", r):
        lvl.excited_method = "TDDFT" if lvl.method == "DFT" or lvl.functional else "TDHF"
    elif re.search(r"(?:^|\s)#?tda(?:\b|=|\()", r):
        lvl.excited_method = "TDDFT/TDA"


def _energies(calc, text: str) -> None:
    levels = {}
    for name, pat in LEVEL_LINES:
        v = last_float(pat, text)
        if v is not None:
            levels[name] = v
    # the converged CC/QCI amplitudes: "Wavefunction amplitudes converged. E(Corr)= -75.017683639"
    cc = last_float(r"Wavefunction amplitudes converged\. E\(Corr\)=\s*(" + FLOAT + ")", text)
    method = (calc.level.method or "").upper()
    if cc is not None:
        if method == "CCD":
            levels["ccd"] = cc
        elif method.startswith("QCISD"):
            levels["qcisd"] = cc
        elif method.startswith("CCSD"):
            levels["ccsd"] = cc
    if levels:
        for k in [k for k in calc.energies_hartree if k.startswith(("mp", "cc", "qci"))]:
            del calc.energies_hartree[k]
        calc.energies_hartree.update(levels)
