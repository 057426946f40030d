"""Per-program supplements: what cclib misses or gets wrong, read from the log text itself.

Each module has `apply(calc, text, data)` which corrects or completes the Calculation built
by the cclib adapter (`data` is cclib's ccData, or None when cclib failed). They are kept
apart from the adapter so each can be tested against the real log text on its own.
"""
from __future__ import annotations

from dossier.reading.supplements import gaussian, nwchem, orca, psi4, qchem, xtb

BY_PROGRAM = {
    "Gaussian": gaussian,
    "ORCA": orca,
    "Q-Chem": qchem,
    "NWChem": nwchem,
    "Psi4": psi4,
    "xtb": xtb,
}
