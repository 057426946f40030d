#!/usr/bin/env python3
"""Write a Psi4 ROHF-MP2/6-31G single-point input at a given XYZ geometry (standard library only).

  psi4_input.py XYZFILE "comment line" > ladder/NAME.in

The ladder rung of the demo study: conventional ROHF-MP2 (Psi4's OCC module, semicanonical
orbitals, singles included), 6-31G, frozen core, charge -1, doublet. The molecule is kept in
the given frame (no reorientation, no recentring); Psi4 uses whatever point group that frame
shows (C2v for the transition state, Cs for the planar minima).
"""
import sys

lines = [ln.split() for ln in open(sys.argv[1]).read().splitlines()[2:] if ln.strip()]
atoms = "\n".join(f"  {p[0]:2s} {float(p[1]):14.8f} {float(p[2]):14.8f} {float(p[3]):14.8f}" for p in lines)
comment = sys.argv[2] if len(sys.argv) > 2 else "single point"
print(f"""# {comment}
# ROHF-MP2/6-31G (frozen core), Psi4 conventional MP2 (OCC module)
memory 1 gb

molecule {{
  -1 2
{atoms}
  no_reorient
  no_com
}}

set {{
  basis 6-31g
  reference rohf
  scf_type pk
  mp2_type conv
  freeze_core true
  e_convergence 1e-8
  d_convergence 1e-7
  maxiter 200
}}

energy('mp2')
""")
