"""dossier: from a finished electron-transfer study's outputs to a checked supporting-information dossier."""
from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__", "read"]


def read(path, **kwargs):
    """Read one quantum-chemistry output file into a Calculation record (see dossier.reading)."""
    from dossier.reading import read as _read

    return _read(path, **kwargs)
