"""Decide what a file is before any parser sees it: empty, binary, which program, or none.

Each known program prints a banner near the top of its output; the marker strings below
are taken from the real outputs in the shared fixtures (Gaussian 16, ORCA 5/6, Q-Chem 5.4,
NWChem 7.0, Psi4 1.7, xtb 6.6.1).
"""
from __future__ import annotations

import re

#: Programs this reader supports: name -> banner markers (any one identifies the program).
SUPPORTED = {
    "Gaussian": ("Entering Gaussian System", "Gaussian, Inc.  All Rights Reserved"),
    "ORCA": ("* O   R   C   A *",),
    "Q-Chem": ("Welcome to Q-Chem", "Q-Chem, Inc., Pleasanton"),
    "NWChem": ("Northwest Computational Chemistry Package",),
    "Psi4": ("Psi4: An Open-Source Ab Initio Electronic Structure Package",),
    "xtb": ("x T B", "* xtb version"),
}

#: Quantum-chemistry programs recognised by their banner but not supported by this reader.
KNOWN_UNSUPPORTED = {
    "GAMESS": ("GAMESS VERSION", "GAMESS(US)"),
    "Molpro": ("PROGRAM SYSTEM MOLPRO",),
    "Turbomole": ("TURBOMOLE",),
    "ADF": ("Amsterdam Density Functional", "AMS"),
    "Jaguar": ("Jaguar version",),
    "MOPAC": ("MOPAC2016", "MOPAC 2016", "MOPAC7"),
    "Dalton": ("Dalton - An Electronic Structure Program",),
    "Molcas": ("MOLCAS", "OpenMolcas"),
    "CFOUR": ("CFOUR Coupled-Cluster techniques",),
    "CP2K": ("CP2K| ",),
    "Firefly": ("Firefly version",),
}

HEAD_CHARS = 60_000  # banners sit in the first few hundred lines


def looks_binary(head: bytes) -> bool:
    """True for data no program writes as its text log: NUL bytes or mostly non-text."""
    if b"\x00" in head:
        return True
    if not head:
        return False
    try:
        head.decode("utf-8")
        return False
    except UnicodeDecodeError as exc:
        # a multi-byte character cut at the end of the sample is still text
        if exc.start >= len(head) - 4:
            return False
    text_bytes = sum(1 for b in head if b in b"\t\n\r" or 32 <= b < 127)
    return text_bytes < 0.9 * len(head)


def identify(text: str) -> tuple[str | None, str | None]:
    """(supported program name, None) or (None, unsupported program name) or (None, None)."""
    head = text[:HEAD_CHARS]
    for name, markers in SUPPORTED.items():
        if name == "xtb":
            if re.search(r"^\s*\|\s+x T B\s+\|", head, re.M) or "* xtb version" in head:
                return name, None
            continue
        if any(m in head for m in markers):
            return name, None
    for name, markers in KNOWN_UNSUPPORTED.items():
        if name == "ADF":
            if "Amsterdam Density Functional" in head:
                return None, name
            continue
        if any(m in head for m in markers):
            return None, name
    return None, None
