"""Gaussian supplement, read from the log text.

- Correlated energies at full printed precision, one per level: EUMP2/EUMP3/UMP4(SDQ)
  ("-0.75002282127453D+02"), CCSD (last "E(CORR)=" of the CCSD iterations), "CCSD(T)=".
  cclib files MP4(SDQ) as plain MP4 and keeps only the highest CC level.
- <S^2> of the final SCF ("<S**2>= 0.7778 S= 0.5138" after "SCF Done"; the value before
  annihilation, i.e. of the wavefunction whose energy is reported).
- Job kinds, dispersion and solvation (PCM/SMD/CPCM with the printed Eps) from the route
  section and the PCM printout.
"""
from __future__ import annotations

import re

from dossier.reading.textutil import FLOAT, last_float, to_float

DISPERSION = {"gd3bj": "D3(BJ)", "gd3": "D3(0)", "gd2": "D2", "pfd": "PFD"}


def covers_skipped(skipped) -> bool:
    return False


def route(text: str) -> str:
    """The last route section (lines after ' #' up to the dashes), lower case."""
    i = text.rfind("\n #")
    if i < 0:
        return ""
    j = text.find("\n -", i + 1)
    return " ".join(text[i + 1 : j if j > 0 else i + 2000].split()).lower()


def apply(calc, text: str, data) -> None:
    m = re.search(r"^ Gaussian (\d+):\s+\S+-G\d+Rev([A-Z]\.\d+)", text[:20000], re.M)
    if m:
        calc.program_version = f"{m.group(1)} Rev. {m.group(2)}"
    r = route(text)
    words = re.split(r"[\s]+", r)
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
    lvl = calc.level
    method_word = next((w for w in words if "/" in w and not w.startswith("#")), None)
    if method_word:
        meth = method_word.split("/")[0]
        lvl.unrestricted = meth.startswith("u") or lvl.unrestricted
        bare = meth[1:] if meth[:1] in ("r", "u") and meth[1:] in ("hf", "b3lyp", "mp2", "ccsd(t)", "ccsd", "pbe1pbe", "m062x", "wb97xd", "cam-b3lyp", "bhandhlyp") else meth
        if bare in ("hf",):
            lvl.method, lvl.functional = "HF", None
        elif bare.startswith(("mp2", "mp3", "mp4", "ccsd", "qcisd", "cisd")):
            lvl.method, lvl.functional = bare.upper(), None
        if not lvl.basis:
            lvl.basis = method_word.split("/")[1].upper()

    levels = {}
    for name, pat in (("mp2", r"EUMP2 =\s*(" + FLOAT + ")"), ("mp3", r"EUMP3=\s*(" + FLOAT + ")"),
                      ("mp4(sdq)", r"UMP4\(SDQ\)=\s*(" + FLOAT + ")"), ("ccsd(t)", r"\n CCSD\(T\)=\s*(-?\d*\.\d+D[-+]\d+)")):
        v = last_float(pat, text)
        if v is not None:
            levels[name] = v
    if "ccsd(t)" in levels or "\n CCSD\n" in text:
        i = text.rfind(" CCSD(T)=")
        head = text[:i] if i > 0 else text
        v = last_float(r"E\(CORR\)=\s*(" + FLOAT + ")", head)
        if v is not None:
            levels["ccsd"] = v
    if levels:
        for k in [k for k in calc.energies_hartree if k.startswith(("mp", "cc"))]:
            del calc.energies_hartree[k]
        calc.energies_hartree.update(levels)

    # <S^2> of the last SCF (only unrestricted runs print it)
    done = text.rfind("SCF Done:")
    if done >= 0:
        m = re.search(r"<S\*\*2>=\s*(" + FLOAT + ")", text[done : done + 600])
        if m:
            calc.s2 = to_float(m.group(1))
