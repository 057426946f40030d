#!/usr/bin/env python3
"""Geometry chaining for the stacked-dimer demo's regenerate script (standard library only).

Later jobs take their coordinates from earlier outputs; this helper does that step:

  geom.py build                  idealised planar furan start (regular pentagon, C-H 1.08 A),
                                 in the standard frame below
  geom.py last OUT               final geometry of an NWChem output (last "Output coordinates"
                                 block), in the standard frame below
  geom.py dimer XYZFILE R        eclipsed cofacial dimer of the monomer in XYZFILE: copies at
                                 x = -R/2 (fragment a, atoms 1-9) and x = +R/2 (fragment b,
                                 atoms 10-18), R in angstrom (the plane-to-plane distance)
  geom.py xyz XYZFILE COMMENT    the same body as an XYZ file (atom count and comment line)
  geom.py put INPUT XYZFILE      replace the body of the geometry block of an NWChem input

Standard frame of one furan (the frame every file uses): ring in the yz plane, the C2 axis
along z with O1 on the +z side, C2 on the +y side, origin at the centre of mass. Two eclipsed
copies displaced along x then have C2v symmetry (C2 along z; the plane x = 0 between the rings
swaps them).

Atom order of furan (1-based, the same in every monomer file): O1, C2, C3, C4, C5, H6 (on C2),
H7 (on C3), H8 (on C4), H9 (on C5); C2 and C5 are bonded to O1. In the dimers atoms 1-9 are
fragment a and atoms 10-18 fragment b, each in that order.
"""
from __future__ import annotations

import math
import re
import sys

MASS = {"H": 1.00783, "C": 12.0, "O": 15.99491}   # most abundant isotopes (from memory); only
                                                # used to pick the origin on the C2 axis


def read_xyz_body(path):
    with open(path) as fh:
        lines = [ln for ln in fh.read().splitlines() if ln.strip()]
    if lines and lines[0].strip().isdigit():
        lines = lines[2:]
    return [(p[0], [float(v) for v in p[1:4]]) for p in (ln.split() for ln in lines)]


def write_body(atoms, out=sys.stdout):
    for el, (x, y, z) in atoms:
        out.write(f"  {el:2s} {x:14.8f} {y:14.8f} {z:14.8f}\n")


def last_geometry(path):
    text = open(path, errors="replace").read()
    blocks = text.split("Output coordinates in angstroms")
    if len(blocks) < 2:
        sys.exit(f"{path}: no NWChem output coordinates found")
    atoms = []
    for ln in blocks[-1].splitlines()[4:]:
        m = re.match(r"\s*\d+\s+([A-Za-z]+)\s+[-\d.]+\s+([-\d.]+)\s+([-\d.]+)\s+([-\d.]+)", ln)
        if not m:
            break
        atoms.append((m.group(1).capitalize(), [float(m.group(i)) for i in (2, 3, 4)]))
    return atoms


def build():
    side, ch = 1.40, 1.08
    r = side / (2 * math.sin(math.radians(36)))
    angles = [90, 18, -54, -126, 162]           # O1, C2, C3, C4, C5 around the ring (yz plane)
    ring = [(r * math.cos(math.radians(a)), r * math.sin(math.radians(a))) for a in angles]
    atoms = [("O" if k == 0 else "C", [0.0, y, z]) for k, (y, z) in enumerate(ring)]
    for k in range(1, 5):
        a = math.radians(angles[k])
        atoms.append(("H", [0.0, (r + ch) * math.cos(a), (r + ch) * math.sin(a)]))
    return atoms


def _sub(a, b):
    return [a[i] - b[i] for i in range(3)]


def _dot(a, b):
    return sum(a[i] * b[i] for i in range(3))


def _unit(a):
    n = math.sqrt(_dot(a, a))
    return [v / n for v in a]


def standard_frame(atoms):
    """Rotate and translate one furan into the standard frame (see the module docstring)."""
    total = sum(MASS[el] for el, _ in atoms)
    com = [sum(MASS[el] * xyz[i] for el, xyz in atoms) / total for i in range(3)]
    o1, c2, c3, c4, c5 = (atoms[k][1] for k in range(5))
    ez = _unit(_sub(o1, [(c3[i] + c4[i]) / 2 for i in range(3)]))
    d = _sub(c2, c5)
    ey = _unit([d[i] - _dot(d, ez) * ez[i] for i in range(3)])
    ex = [ey[1] * ez[2] - ey[2] * ez[1], ey[2] * ez[0] - ey[0] * ez[2], ey[0] * ez[1] - ey[1] * ez[0]]
    out = []
    for el, xyz in atoms:
        v = _sub(xyz, com)
        out.append((el, [_dot(v, ex), _dot(v, ey), _dot(v, ez)]))
    return out


def dimer(atoms, separation):
    mono = standard_frame(atoms)
    a = [(el, [x - separation / 2, y, z]) for el, (x, y, z) in mono]
    b = [(el, [x + separation / 2, y, z]) for el, (x, y, z) in mono]
    return a + b


def put(inp, atoms):
    text = open(inp).read()
    body = "".join(f"  {el:2s} {x:14.8f} {y:14.8f} {z:14.8f}\n" for el, (x, y, z) in atoms)
    new, count = re.subn(r"(?ms)^(geometry[^\n]*\n)(.*?)(^\s*(?:symmetry[^\n]*\n\s*)?end\s*$)",
                         lambda m: m.group(1) + body + m.group(3), text, count=1)
    if count != 1:
        sys.exit(f"{inp}: no geometry block")
    open(inp, "w").write(new)


def main(argv):
    cmd = argv[1] if len(argv) > 1 else ""
    if cmd == "build":
        write_body(standard_frame(build()))
    elif cmd == "last":
        write_body(standard_frame(last_geometry(argv[2])))
    elif cmd == "dimer":
        write_body(dimer(read_xyz_body(argv[2]), float(argv[3])))
    elif cmd == "xyz":
        atoms = read_xyz_body(argv[2])
        print(len(atoms))
        print(argv[3])
        write_body(atoms)
    elif cmd == "put":
        put(argv[2], read_xyz_body(argv[3]))
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main(sys.argv)
