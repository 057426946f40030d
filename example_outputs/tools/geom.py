#!/usr/bin/env python3
"""Geometry chaining for the demo study's regenerate script (standard library only).

Later jobs take their coordinates from earlier outputs; this helper does that step:

  geom.py build                    idealised planar 1,3-dinitrobenzene (ring in the xz plane, C2 axis
                                   along z), the xtb survey's starting point
  geom.py localize XYZFILE         put the extra electron's geometric signature on nitro_a: C1-N7
                                   shortened by 0.03 A, both N-O bonds of nitro_a stretched by 0.04 A
  geom.py nitrobenzene XYZFILE     nitrobenzene cut from a dinitrobenzene structure: nitro_b replaced by H
                                   (1.08 A along C3-N10); order C1-C6, N7 O8 O9, H on C2, C3, C4, C5, C6
  geom.py last OUT                 print the final geometry of an NWChem or xtb output (XYZ body)
  geom.py mirror XYZFILE           mirror image through the molecule's C2 plane with the atom
                                   labels swapped, so that 'electron on nitro_a' becomes
                                   'electron on nitro_b' (1,3-dinitrobenzene atom order, below)
  geom.py symmetrize XYZFILE       C2v average of a structure and its mirror (transition-state start)
  geom.py twist XYZFILE DEG        rotate both nitro groups by DEG about their C-N bonds (same sense)
  geom.py perturb XYZFILE SCALE    deterministic displacement of every atom (wrong-geometry run)
  geom.py put INPUT XYZFILE        replace the body of the geometry block of an NWChem input

Atom order of 1,3-dinitrobenzene used throughout (1-based): C1-C6 ring (C1 and C3 carry the
nitro groups, C2 lies between them), N7 O8 O9 = nitro_a on C1, N10 O11 O12 = nitro_b on C3,
H13 on C2, H14 on C4, H15 on C5, H16 on C6; O8 and O11 point away from C2, O9 and O12
towards it (the mirror through the C2 plane maps 7-8-9 onto 10-11-12).
"""
from __future__ import annotations

import math
import re
import sys

# mirror x -> -x maps atom i onto atom MIRROR[i] (0-based)
MIRROR = [2, 1, 0, 5, 4, 3, 9, 10, 11, 6, 7, 8, 12, 15, 14, 13]


def read_xyz_body(path):
    atoms = []
    with open(path) as fh:
        lines = [ln for ln in fh.read().splitlines() if ln.strip()]
    if lines and lines[0].strip().isdigit():
        lines = lines[2:] if len(lines) > 1 and len(lines[1].split()) != 4 else lines[1:]
    for ln in lines:
        parts = ln.split()
        atoms.append((parts[0], [float(v) for v in parts[1:4]]))
    return atoms


def write_body(atoms, out=sys.stdout):
    for el, (x, y, z) in atoms:
        out.write(f"  {el:2s} {x:14.8f} {y:14.8f} {z:14.8f}\n")


def last_geometry(path):
    text = open(path, errors="replace").read()
    if "x T B" in text[:5000] or "xtb version" in text[:5000]:
        block = text.rsplit("final structure:", 1)[1].splitlines()
        n = int(block[2].split()[0])
        return [(p.split()[0], [float(v) for v in p.split()[1:4]]) for p in block[4:4 + n]]
    # NWChem: last "Output coordinates in angstroms" block (printed by every geometry step)
    blocks = text.split("Output coordinates in angstroms")
    if len(blocks) < 2:
        sys.exit(f"{path}: no NWChem output coordinates found")
    atoms = []
    for ln in blocks[-1].splitlines()[4:]:
        m = re.match(r"\s*\d+\s+([A-Za-z]+)\s+[-\d.]+\s+([-\d.]+)\s+([-\d.]+)\s+([-\d.]+)", ln)
        if not m:
            break
        atoms.append((m.group(1).capitalize()[:2] if len(m.group(1)) <= 2 else m.group(1),
                      [float(m.group(i)) for i in (2, 3, 4)]))
    return atoms


def build():
    ring, ch, cn, no, ono = 1.39, 1.08, 1.47, 1.23, 124.0
    angle = {1: 150, 2: 90, 3: 30, 4: -30, 5: -90, 6: -150}
    pos = {k: (ring * math.cos(math.radians(a)), ring * math.sin(math.radians(a))) for k, a in angle.items()}
    flat = [("C", pos[k]) for k in range(1, 7)]
    for k in (1, 3):
        t = math.radians(angle[k])
        nx, ny = pos[k][0] + cn * math.cos(t), pos[k][1] + cn * math.sin(t)
        flat.append(("N", (nx, ny)))
        # O8 / O12 point away from the C2 axis side, O9 / O11 towards it
        for s in ((+1, -1) if k == 1 else (-1, +1)):
            a = t + s * math.radians(ono / 2)
            flat.append(("O", (nx + no * math.cos(a), ny + no * math.sin(a))))
    for k in (2, 4, 5, 6):
        t = math.radians(angle[k])
        flat.append(("H", (pos[k][0] + ch * math.cos(t), pos[k][1] + ch * math.sin(t))))
    return [(el, [x, 0.0, y]) for el, (x, y) in flat]


def _unit(a, b):
    d = [b[i] - a[i] for i in range(3)]
    n = math.sqrt(sum(v * v for v in d))
    return [v / n for v in d]


def localize(atoms):
    atoms = [(el, list(xyz)) for el, xyz in atoms]
    c1, n7 = atoms[0][1], atoms[6][1]
    u = _unit(c1, n7)
    atoms[6] = ("N", [n7[i] - 0.03 * u[i] for i in range(3)])
    for o in (7, 8):
        v = _unit(atoms[6][1], atoms[o][1])
        atoms[o] = ("O", [atoms[o][1][i] + 0.04 * v[i] for i in range(3)])
    return atoms


def nitrobenzene(atoms):
    c3, n10 = atoms[2][1], atoms[9][1]
    u = _unit(c3, n10)
    h3 = ("H", [c3[i] + 1.08 * u[i] for i in range(3)])
    return atoms[:9] + [atoms[12], h3] + atoms[13:16]


def mirror(atoms):
    return [(atoms[j][0], [-atoms[j][1][0], atoms[j][1][1], atoms[j][1][2]]) for j in MIRROR]


def symmetrize(atoms):
    m = mirror(atoms)
    return [(a[0], [(p + q) / 2 for p, q in zip(a[1], b[1])]) for a, b in zip(atoms, m)]


def _rotate(point, origin, axis, angle):
    ux, uy, uz = axis
    n = math.sqrt(ux * ux + uy * uy + uz * uz)
    ux, uy, uz = ux / n, uy / n, uz / n
    x, y, z = (point[i] - origin[i] for i in range(3))
    c, s = math.cos(angle), math.sin(angle)
    dot = ux * x + uy * y + uz * z
    cross = (uy * z - uz * y, uz * x - ux * z, ux * y - uy * x)
    r = [x * c + cross[0] * s + ux * dot * (1 - c),
         y * c + cross[1] * s + uy * dot * (1 - c),
         z * c + cross[2] * s + uz * dot * (1 - c)]
    return [r[i] + origin[i] for i in range(3)]


def twist(atoms, degrees, pairs=((0, 6, (7, 8)), (2, 9, (10, 11)))):
    atoms = [(el, list(xyz)) for el, xyz in atoms]
    for carbon, nitrogen, oxygens in pairs:
        c, n = atoms[carbon][1], atoms[nitrogen][1]
        axis = [n[i] - c[i] for i in range(3)]
        for o in oxygens:
            atoms[o] = (atoms[o][0], _rotate(atoms[o][1], n, axis, math.radians(degrees)))
    return atoms


def perturb(atoms, scale):
    # deterministic, reproducible displacement pattern (no random numbers)
    return [(el, [v + scale * math.sin(1.7 * k + 0.9 * i) for i, v in enumerate(xyz)])
            for k, (el, xyz) in enumerate(atoms)]


def put(inp, atoms):
    text = open(inp).read()
    body = "".join(f"  {el:2s} {x:14.8f} {y:14.8f} {z:14.8f}\n" for el, (x, y, z) in atoms)
    new, count = re.subn(r"(?ms)^(geometry[^\n]*\n)(.*?)(^\s*(?:symmetry[^\n]*\n\s*)?end\s*$)",
                         lambda m: m.group(1) + body + _keep_symmetry(m.group(2)) + m.group(3), text, count=1)
    if count != 1:
        sys.exit(f"{inp}: no geometry block")
    open(inp, "w").write(new)


def _keep_symmetry(old_body):
    return "".join(ln + "\n" for ln in old_body.splitlines() if ln.strip().lower().startswith("symmetry"))


def main(argv):
    cmd = argv[1]
    if cmd == "build":
        print(16)
        print("1,3-dinitrobenzene, idealised planar start (ring in the xz plane)")
        write_body(build())
    elif cmd == "localize":
        write_body(localize(read_xyz_body(argv[2])))
    elif cmd == "nitrobenzene":
        write_body(nitrobenzene(read_xyz_body(argv[2])))
    elif cmd == "last":
        write_body(last_geometry(argv[2]))
    elif cmd == "mirror":
        write_body(mirror(read_xyz_body(argv[2])))
    elif cmd == "symmetrize":
        write_body(symmetrize(read_xyz_body(argv[2])))
    elif cmd == "twist":
        write_body(twist(read_xyz_body(argv[2]), float(argv[3])))
    elif cmd == "perturb":
        write_body(perturb(read_xyz_body(argv[2]), float(argv[3])))
    elif cmd == "put":
        put(argv[2], read_xyz_body(argv[3]))
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main(sys.argv)
