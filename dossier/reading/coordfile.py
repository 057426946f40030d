"""Geometry from the coordinate file a log names, when the log prints none.

xtb single points and Hessian runs print no coordinates, but name the file they read
("coordinate file            : dvb_ir.xyz"). When that file sits beside the log (same folder),
its geometry is the geometry of the run, and the record says so in `geometry_source`.
Optimisations are left alone: their input file holds the start geometry, not the result.
Applied on every read (also to cached records), since the file beside the log may change.
"""
from __future__ import annotations

from pathlib import Path

from dossier.records import Calculation

NO_COORDS = "the log prints no coordinates for this job"


def read_xyz(path: Path) -> tuple[list[str], list[list[float]]] | None:
    """(elements, coordinates in angstrom) of a plain XYZ file, or None if it is not one."""
    try:
        lines = path.read_text(errors="replace").splitlines()
        n = int(lines[0].split()[0])
        rows = [line.split() for line in lines[2 : 2 + n]]
        elements = [r[0].strip().capitalize() for r in rows]
        coords = [[float(v) for v in r[1:4]] for r in rows]
    except (OSError, ValueError, IndexError):
        return None
    if len(rows) != n or any(len(c) != 3 for c in coords):
        return None
    return elements, coords


def adopt_coordinate_file(calc: Calculation) -> Calculation:
    """Fill the geometry of a record whose log prints none from the coordinate file it names."""
    name = calc.coordinate_file
    if not name or calc.coordinates_angstrom or "optimization" in calc.job_kinds or calc.status.word != "ok":
        return calc
    path = Path(calc.source.path).parent / name
    if not path.is_file():
        return calc
    got = read_xyz(path) if path.suffix.lower() == ".xyz" else None
    if got is None:
        calc.problems.append(f"the coordinate file {name} beside the log is not an XYZ file: not read")
        return calc
    elements, coords = got
    if calc.elements and elements != calc.elements:
        calc.problems.append(f"the coordinate file {name} beside the log holds other atoms than the run: not used")
        return calc
    calc.elements = elements
    calc.coordinates_angstrom = coords
    calc.geometry_source = f"coordinate file {name} beside the log (the log prints no coordinates)"
    calc.problems = [p for p in calc.problems if p != NO_COORDS]
    return calc
