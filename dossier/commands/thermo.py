"""`dossier thermo FILE...`: the dossier's own RRHO / quasi-RRHO thermochemistry of frequency jobs."""
from __future__ import annotations

import dataclasses
import json
import math
import sys
from pathlib import Path

from dossier import units
from dossier.commands._json import json_safe
from dossier.errors import DossierError

HELP = "compute ideal-gas thermochemistry (RRHO or quasi-RRHO) from frequency jobs, the same way for every program"


def _positive_float(text: str) -> float:
    import argparse

    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}") from None
    if not (value > 0 and math.isfinite(value)):
        raise argparse.ArgumentTypeError(f"must be a positive number, got {text}")
    return value


def _positive_int(text: str) -> int:
    import argparse

    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a whole number: {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be 1 or more, got {text}")
    return value


def add_arguments(parser) -> None:
    from dossier.science.thermo import QRRHO_METHODS, STANDARD_STATES

    parser.add_argument("files", nargs="+", metavar="FILE", help="frequency-job output file")
    parser.add_argument("--temperature", type=_positive_float, action="append", metavar="K",
                        help="temperature in K (repeat for several; default 298.15)")
    parser.add_argument("--pressure", type=_positive_float, default=None, metavar="PA",
                        help="pressure in Pa for the translational entropy (overrides --standard-state)")
    parser.add_argument("--standard-state", choices=STANDARD_STATES, default="1atm",
                        help="1atm (default, as most programs print), 1bar, or 1M (1 mol/L, for solution)")
    parser.add_argument("--qrrho", choices=QRRHO_METHODS, default="none",
                        help="low-mode treatment: none (harmonic), grimme (2012 entropy interpolation), "
                             "truhlar (modes below 100 cm-1 raised to 100 cm-1)")
    parser.add_argument("--symmetry-number", type=_positive_int, default=None, metavar="N",
                        help="rotational symmetry number (default: found from the geometry)")
    parser.add_argument("--scale", type=_positive_float, default=1.0, metavar="F",
                        help="frequency scale factor applied to every wavenumber (default 1.0)")
    parser.add_argument("--qrrho-cutoff", type=_positive_float, default=None, metavar="CM1",
                        help="grimme: rotor/oscillator switch frequency (default 100 cm-1); "
                             "truhlar: the value low modes are raised to (default 100 cm-1)")
    parser.add_argument("--masses", choices=("isotopic", "average"), default="isotopic",
                        help="most abundant isotope (default, as Gaussian/Q-Chem/NWChem/Psi4) or standard atomic weights (as ORCA)")
    parser.add_argument("--multiplicity", type=_positive_int, default=None, metavar="M",
                        help="spin multiplicity for files that do not state it")
    parser.add_argument("--geometry", default=None, metavar="FILE",
                        help="take the geometry from this output (for a Hessian log without coordinates); one FILE only")
    parser.add_argument("--contributions", action="store_true",
                        help="also print translational/rotational/vibrational/electronic contributions")
    parser.add_argument("--json", action="store_true", help="print one JSON list (one entry per file and temperature)")
    parser.add_argument("--no-cache", action="store_true", help="parse every file again; neither use nor write the cache")


def _entry(calc, result) -> dict:
    e_el = calc.energy_hartree
    d = {
        "path": calc.source.path,
        "program": calc.program,
        "temperature_k": result.temperature_k,
        "pressure_pa": result.pressure_pa,
        "standard_state": result.standard_state,
        "qrrho": result.qrrho,
        "frequency_scale": result.frequency_scale,
        "masses": result.masses,
        "symmetry_number": result.symmetry_number,
        "symmetry_number_source": result.symmetry_number_source,
        "point_group": result.point_group,
        "multiplicity": result.multiplicity,
        "n_imaginary": result.n_imaginary,
        "imaginary_cm1": result.imaginary_cm1,
        "zpe_hartree": result.zpe_hartree,
        "thermal_energy_correction_hartree": result.thermal_energy_correction_hartree,
        "enthalpy_correction_hartree": result.enthalpy_correction_hartree,
        "gibbs_correction_hartree": result.gibbs_correction_hartree,
        "entropy_j_mol_k": result.entropy_j_mol_k,
        "heat_capacity_cv_j_mol_k": result.heat_capacity_cv_j_mol_k,
        "electronic_energy_hartree": e_el,
        "enthalpy_hartree": None if e_el is None else e_el + result.enthalpy_correction_hartree,
        "gibbs_hartree": None if e_el is None else e_el + result.gibbs_correction_hartree,
        "contributions": result.to_dict()["contributions"],
        "notes": list(result.notes),
        # what the program itself printed, as the reading layer normalized it (for comparison)
        "printed_thermo": dataclasses.asdict(calc.printed_thermo) if calc.printed_thermo else None,
        "printed": _printed(calc, result),
    }
    return d


def _printed(calc, result) -> dict | None:
    """The program's printed corrections in the same form as ours, and ours minus theirs in
    kJ/mol, when the program printed them at this temperature. Its settings (masses, pressure,
    symmetry number, low-mode treatment, constants) may differ: see docs/thermo.md."""
    pt = calc.printed_thermo
    if pt is None:
        return None
    same_t = pt.temperature_k is not None and abs(pt.temperature_k - result.temperature_k) < 0.01
    e = calc.energy_hartree
    out = {
        "temperature_k": pt.temperature_k,
        "pressure_pa": pt.pressure_pa,
        "zpe_hartree": pt.zpe_hartree,
        "enthalpy_correction_hartree": None if (pt.enthalpy_hartree is None or e is None) else pt.enthalpy_hartree - e,
        "gibbs_correction_hartree": None if (pt.gibbs_hartree is None or e is None) else pt.gibbs_hartree - e,
        "entropy_j_mol_k": None if pt.entropy_hartree_per_k is None
        else pt.entropy_hartree_per_k * units.HARTREE_KJ_MOL * 1000.0,
        "same_temperature": same_t,
    }
    kj = units.HARTREE_KJ_MOL
    diff = {}
    for key in ("zpe_hartree", "enthalpy_correction_hartree", "gibbs_correction_hartree"):
        theirs = out[key]
        ok = theirs is not None and (same_t or key == "zpe_hartree")
        diff[key.replace("_hartree", "_kj_mol")] = (getattr(result, key) - theirs) * kj if ok else None
    out["ours_minus_printed"] = diff
    return out


def _table(entries) -> str:
    head = ("file", "T/K", "state", "qRRHO", "sigma", "imag", "ZPE/Eh", "H-E/Eh", "G-E/Eh", "S/J mol-1 K-1",
            "printed G-E/Eh")
    rows = []
    for e in entries:
        printed = (e["printed"] or {}).get("gibbs_correction_hartree") if (e["printed"] or {}).get("same_temperature") else None
        rows.append((
            e["path"], f"{e['temperature_k']:.2f}", e["standard_state"], e["qrrho"],
            f"{e['symmetry_number']}" + (f" ({e['point_group']})" if e["point_group"] else ""),
            str(e["n_imaginary"]), f"{e['zpe_hartree']:.6f}", f"{e['enthalpy_correction_hartree']:.6f}",
            f"{e['gibbs_correction_hartree']:.6f}", f"{e['entropy_j_mol_k']:.3f}",
            "" if printed is None else f"{printed:.6f}",
        ))
    widths = [max(len(h), *(len(r[i]) for r in rows)) for i, h in enumerate(head)]
    lines = ["  ".join(h.ljust(w) for h, w in zip(head, widths)).rstrip()]
    lines += ["  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]
    return "\n".join(lines)


def run(args) -> int:
    from dossier.reading import read
    from dossier.science.thermo import thermo_from_record

    temperatures = args.temperature or [298.15]
    if args.geometry and len(args.files) != 1:
        raise DossierError("--geometry takes the coordinates for one FILE; give exactly one", where="dossier thermo")
    geometry = read(Path(args.geometry), use_cache=not args.no_cache) if args.geometry else None
    entries, results, failed = [], [], 0
    for name in args.files:
        try:
            calc = read(Path(name), use_cache=not args.no_cache)
            if geometry is not None:
                if geometry.elements != calc.elements and calc.elements:
                    raise DossierError(f"atoms differ from those of {args.geometry}", where=name)
                calc = dataclasses.replace(calc, coordinates_angstrom=geometry.coordinates_angstrom,
                                           elements=geometry.elements)
            for t in temperatures:
                kw = dict(pressure_pa=args.pressure, standard_state=args.standard_state, qrrho=args.qrrho,
                          symmetry_number=args.symmetry_number, frequency_scale=args.scale, masses=args.masses)
                if args.qrrho_cutoff is not None:
                    kw["grimme_w0_cm1" if args.qrrho == "grimme" else "truhlar_raise_cm1"] = args.qrrho_cutoff
                if args.multiplicity is not None:
                    kw["multiplicity"] = args.multiplicity
                result = thermo_from_record(calc, t, **kw)
                entries.append(_entry(calc, result))
                results.append(result)
        except DossierError as exc:
            if getattr(args, "debug", False):
                raise
            failed += 1
            print(f"dossier: {exc}", file=sys.stderr)
    if args.json:
        json.dump(json_safe(entries), sys.stdout, indent=1)
        sys.stdout.write("\n")
    elif entries:
        print(_table(entries))
        if args.contributions:
            for e, r in zip(entries, results):
                print(f"\n{e['path']}")
                print(r.contributions_table())
                for note in r.notes:
                    print(f"note: {note}")
        kj = units.HARTREE_KJ_MOL
        print(f"\nEnergies per molecule; 1 Eh = {kj:.4f} kJ/mol. H-E and G-E include the ZPE. "
              "Printed values are the program's own, for comparison (its settings may differ).")
    return 2 if failed else 0
