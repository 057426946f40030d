#!/usr/bin/env python3
"""Write a Psi4 CCSD(T)/6-31G* single-point input at a given XYZ geometry (standard library only).

  psi4_input.py XYZFILE CHARGE "comment line" > ladder/NAME.in

The correlated rung of the stacked-dimer demo: frozen-core CCSD(T)/6-31G* (Psi4's CC module,
conventional integrals) at a BHLYP/6-31G* geometry. Charge 0: RHF reference, singlet. Charge
+1: ROHF reference, doublet (Psi4 then uses semicanonical orbitals for the (T) correction).
The output prints every rung below CCSD(T) too: SCF, MP2, CCSD. The molecule is kept in the
given frame (no reorientation, no recentring): C2v, the frame of tools/geom.py.
"""
import sys

lines = [ln.split() for ln in open(sys.argv[1]).read().splitlines()[2:] if ln.strip()]
atoms = "\n".join(f"  {p[0]:2s} {float(p[1]):14.8f} {float(p[2]):14.8f} {float(p[3]):14.8f}" for p in lines)
charge = int(sys.argv[2])
mult, reference = (1, "rhf") if charge % 2 == 0 else (2, "rohf")
comment = sys.argv[3] if len(sys.argv) > 3 else "single point"
print(f"""# {comment}
# CCSD(T)/6-31G* (frozen core), {reference.upper()} reference, Psi4 CC module; also prints SCF, MP2, CCSD
memory 1 gb

molecule {{
  {charge} {mult}
{atoms}
  no_reorient
  no_com
}}

set {{
  basis 6-31g*
  reference {reference}
  scf_type pk
  freeze_core true
  e_convergence 1e-8
  d_convergence 1e-8
  r_convergence 1e-7
  maxiter 200
}}

energy('ccsd(t)')
""")
