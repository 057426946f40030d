#!/usr/bin/env python3
"""Write the Psi4 input of the UMP2 cross-check at a given XYZ geometry (standard library only).

  psi4_input.py XYZFILE > ladder/min_a_mp2_psi4.in

Same level as NWChem's ladder/min_a_mp2.nw: UHF reference, conventional UMP2, 6-31G,
frozen core; the molecule is kept in the given frame (no reorientation, no recentring).
"""
import sys

lines = [ln.split() for ln in open(sys.argv[1]).read().splitlines()[2:] if ln.strip()]
atoms = "\n".join(f"  {p[0]:2s} {float(p[1]):14.8f} {float(p[2]):14.8f} {float(p[3]):14.8f}" for p in lines)
print(f"""# 1,3-dinitrobenzene radical anion, min_a (electron on nitro_a): UMP2/6-31G (frozen core)
# single point at the BHLYP/6-31G geometry of pathway/min_a_opt.out; cross-check of ladder/min_a_mp2.out
memory 1 gb

molecule min_a {{
  -1 2
{atoms}
  symmetry c1
  no_reorient
  no_com
}}

set {{
  basis 6-31g
  reference uhf
  scf_type pk
  mp2_type conv
  freeze_core true
  e_convergence 1e-8
  d_convergence 1e-7
}}

energy('mp2')
""")
