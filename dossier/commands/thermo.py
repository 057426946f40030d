"""`dossier thermo FILE...`: the dossier's own RRHO / quasi-RRHO thermochemistry of frequency jobs.

The options are the manifest's words (docs/manifest.md): ``--temperatures-k``,
``--standard-state``, ``--qrrho``, ``--frequency-scale``, ``--energy-unit`` as under
[project], ``--symmetry-number`` and ``--geometry`` as under [states.NAME], with the
manifest's defaults, so that the command shows what a build would compute for the file.
The output is one card per file (dossier/commands/_thermo_card.py): what was assumed, the
result at each temperature, the program's own printed numbers beside ours at the program's
temperature and pressure, and on request the parts per kind of motion. ``--json`` gives the
same cards as data, energies in hartree per molecule.
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import math
import sys
from pathlib import Path

from dossier import units
from dossier.commands._json import json_safe
from dossier.errors import DossierError

HELP = "thermochemistry (RRHO or quasi-RRHO) of frequency jobs, the dossier's way for every program: one card per file"

def _positive_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}") from None
    if not (value > 0 and math.isfinite(value)):
        raise argparse.ArgumentTypeError(f"must be a finite positive number, got {text}")
    return value


def _within(low: float, high: float, unit: str, what: str):
    """An argparse type: a finite number from `low` to `high`, the manifest's range (dossier.units)."""
    def parse(text: str) -> float:
        value = _positive_float(text)
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{what} must be from {low:g} to {high:g}{unit}, got {text}")
        return value

    return parse


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a whole number: {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"must be 1 or more, got {text}")
    return value


def _temperatures(text: str) -> list[float]:
    """"273.15,298.15" -> [273.15, 298.15]: a list, as the manifest's temperatures_k."""
    in_range = _within(*units.TEMPERATURE_RANGE_K, " K", "a temperature")
    values = [in_range(t.strip()) for t in text.split(",") if t.strip()]
    if not values:
        raise argparse.ArgumentTypeError("give at least one temperature in kelvin, e.g. 298.15")
    return list(dict.fromkeys(values))


def add_arguments(parser) -> None:
    from dossier.project.model import ENERGY_UNITS, Settings
    from dossier.science.thermo import QRRHO_METHODS, STANDARD_STATES

    defaults = Settings()  # the manifest's [project] defaults
    parser.add_argument("files", nargs="+", metavar="FILE", help="output of a frequency job")
    group = parser.add_argument_group("settings, named as in the manifest (docs/manifest.md), same defaults")
    group.add_argument("--temperatures-k", type=_temperatures, default=list(defaults.temperatures_k), metavar="LIST",
                       help="comma-separated temperatures in K (default 298.15)")
    group.add_argument("--standard-state", choices=STANDARD_STATES, default=defaults.standard_state,
                       help="1M (1 mol/L, default), 1bar or 1atm")
    group.add_argument("--qrrho", choices=QRRHO_METHODS, default=defaults.qrrho,
                       help="low-mode treatment: grimme (default; Grimme 2012 entropy), truhlar (low modes "
                            "raised, Ribeiro et al. 2011) or none (harmonic)")
    group.add_argument("--frequency-scale", type=_within(*units.FREQUENCY_SCALE_RANGE, "", "the frequency scale"), default=defaults.frequency_scale, metavar="F",
                       help="factor applied to every wavenumber (default 1.0)")
    group.add_argument("--energy-unit", choices=ENERGY_UNITS, default=defaults.energy_unit,
                       help="unit of the card's energies (default kJ/mol; --json always gives hartree)")
    group.add_argument("--symmetry-number", type=_positive_int, default=None, metavar="N",
                       help="rotational symmetry number (default: found from the geometry)")
    group.add_argument("--geometry", default=None, metavar="FILE",
                       help="take the coordinates from this output (a Hessian job that prints none); one FILE only")
    more = parser.add_argument_group("further settings (not in the manifest)")
    more.add_argument("--pressure-pa", type=_within(*units.PRESSURE_RANGE_PA, " Pa", "the pressure"), default=None, metavar="PA",
                      help="pressure for the translational entropy, in Pa (replaces --standard-state)")
    more.add_argument("--qrrho-cutoff-cm1", type=_within(*units.QRRHO_CUTOFF_RANGE_CM1, " cm-1", "the cutoff"), default=None, metavar="CM1",
                      help="grimme: the rotor/oscillator switch wavenumber; truhlar: the wavenumber low modes "
                           "are raised to (both 100 cm-1 by default)")
    more.add_argument("--masses", choices=("isotopic", "average"), default="isotopic",
                      help="most abundant isotope (default) or standard atomic weights")
    more.add_argument("--multiplicity", type=_positive_int, default=None, metavar="M",
                      help="spin multiplicity, for files that do not state it")
    out = parser.add_argument_group("output")
    out.add_argument("--contributions", action="store_true",
                     help="add the parts of H, -TS, S and Cv from translation, rotation, vibration and spin")
    out.add_argument("--json", action="store_true", help="the cards as one JSON list (energies in hartree)")
    out.add_argument("--no-cache", action="store_true", help="parse every file again; neither use nor write the cache")


def _settings(args) -> dict:
    """Keyword arguments of dossier.thermo.rrho from the options."""
    kw = dict(pressure_pa=args.pressure_pa, standard_state=args.standard_state, qrrho=args.qrrho,
              symmetry_number=args.symmetry_number, frequency_scale=args.frequency_scale, masses=args.masses)
    if args.qrrho_cutoff_cm1 is not None and args.qrrho != "none":
        kw["grimme_w0_cm1" if args.qrrho == "grimme" else "truhlar_raise_cm1"] = args.qrrho_cutoff_cm1
    if args.multiplicity is not None:
        kw["multiplicity"] = args.multiplicity
    return kw


def _cutoff_cm1(args) -> float | None:
    from dossier.science.thermo import GRIMME_W0_CM1, TRUHLAR_RAISE_CM1

    if args.qrrho == "none":
        return None
    if args.qrrho_cutoff_cm1 is not None:
        return args.qrrho_cutoff_cm1
    return GRIMME_W0_CM1 if args.qrrho == "grimme" else TRUHLAR_RAISE_CM1


def _result_entry(result, e_el: float | None) -> dict:
    return {
        "temperature_k": result.temperature_k,
        "pressure_pa": result.pressure_pa,
        "zpe_hartree": result.zpe_hartree,
        "thermal_energy_correction_hartree": result.thermal_energy_correction_hartree,
        "enthalpy_correction_hartree": result.enthalpy_correction_hartree,
        "gibbs_correction_hartree": result.gibbs_correction_hartree,
        "entropy_j_mol_k": result.entropy_j_mol_k,
        "heat_capacity_cv_j_mol_k": result.heat_capacity_cv_j_mol_k,
        "enthalpy_hartree": None if e_el is None else e_el + result.enthalpy_correction_hartree,
        "gibbs_hartree": None if e_el is None else e_el + result.gibbs_correction_hartree,
        "contributions": result.to_dict()["contributions"],
    }


def _printed(calc, kw: dict, ours_at) -> dict | None:
    """The program's printed numbers in our form, ours at the program's temperature and pressure
    with the same assumptions otherwise, and ours minus the program's (kJ/mol; S in J/(mol K))."""
    pt = calc.printed_thermo
    if pt is None or pt.temperature_k is None or not pt.temperature_k > 0:
        return None
    e = calc.energy_hartree
    theirs = {
        "zpe_hartree": pt.zpe_hartree,
        "enthalpy_correction_hartree": None if pt.enthalpy_hartree is None or e is None else pt.enthalpy_hartree - e,
        "gibbs_correction_hartree": None if pt.gibbs_hartree is None or e is None else pt.gibbs_hartree - e,
        "entropy_j_mol_k": None if pt.entropy_hartree_per_k is None
        else pt.entropy_hartree_per_k * units.HARTREE_KJ_MOL * 1000.0,
    }
    same_p = dict(kw, pressure_pa=pt.pressure_pa) if pt.pressure_pa else dict(kw)
    ours = ours_at(pt.temperature_k, same_p)
    ours_d = {"zpe_hartree": ours.zpe_hartree, "enthalpy_correction_hartree": ours.enthalpy_correction_hartree,
              "gibbs_correction_hartree": ours.gibbs_correction_hartree, "entropy_j_mol_k": ours.entropy_j_mol_k}
    diff = {}
    for key, value in theirs.items():
        scale, name = (1.0, key) if key == "entropy_j_mol_k" else (units.HARTREE_KJ_MOL, key.replace("_hartree", "_kj_mol"))
        diff[name] = None if value is None else (ours_d[key] - value) * scale
    return {"temperature_k": pt.temperature_k, "pressure_pa": pt.pressure_pa,
            "pressure_pa_used": ours.pressure_pa, "program": theirs, "ours": ours_d, "ours_minus_program": diff}


def card(calc, args, geometry_file: str | None = None) -> dict:
    """One file's card as data (what `--json` prints and the text card shows)."""
    from dossier.science.thermo import thermo_from_record

    kw = _settings(args)

    def ours_at(t, settings=kw):
        return thermo_from_record(calc, t, **settings)

    results = [ours_at(t) for t in args.temperatures_k]
    first = results[0]
    e_el = calc.energy_hartree
    return {
        "file": calc.source.path,
        "program": calc.program,
        "program_version": calc.program_version,
        "formula": calc.formula if calc.elements else None,
        "multiplicity": first.multiplicity,
        "n_modes": len(first.wavenumbers_used_cm1) + first.n_imaginary,
        "n_imaginary": first.n_imaginary,
        "imaginary_cm1": first.imaginary_cm1,
        "geometry_file": geometry_file,
        "assumed": {
            "standard_state": None if args.pressure_pa else args.standard_state,
            "pressure_pa": args.pressure_pa,
            "qrrho": args.qrrho,
            "qrrho_cutoff_cm1": _cutoff_cm1(args),
            "frequency_scale": args.frequency_scale,
            "symmetry_number": first.symmetry_number,
            "symmetry_number_source": first.symmetry_number_source,
            "point_group": first.point_group,
            "masses": first.masses,
            "mass_amu": first.mass_amu,
            "linear": bool(first.linear),
        },
        "electronic_energy_hartree": e_el,
        "results": [_result_entry(r, e_el) for r in results],
        "printed": _printed(calc, kw, ours_at),
        "notes": list(first.notes),
    }


def _read_with_geometry(name: str, geometry, args):
    from dossier.reading import read

    calc = read(Path(name), use_cache=not args.no_cache)
    if geometry is None:
        return calc
    if calc.elements and geometry.elements != calc.elements:
        raise DossierError(f"atoms differ from those of {args.geometry}", where=name)
    return dataclasses.replace(calc, coordinates_angstrom=geometry.coordinates_angstrom, elements=geometry.elements)


def run(args) -> int:
    from dossier.commands._thermo_card import format_card
    from dossier.reading import read

    if args.geometry and len(args.files) != 1:
        raise DossierError("--geometry takes the coordinates for one FILE; give exactly one", where="dossier thermo")
    geometry = read(Path(args.geometry), use_cache=not args.no_cache) if args.geometry else None
    cards, failed = [], 0
    for name in args.files:
        try:
            cards.append(card(_read_with_geometry(name, geometry, args), args, args.geometry))
        except DossierError as exc:
            if getattr(args, "debug", False):
                raise
            failed += 1
            print(f"dossier: {exc}", file=sys.stderr)
    if args.json:
        json.dump(json_safe(cards), sys.stdout, indent=1)
        sys.stdout.write("\n")
    else:
        print("\n\n".join(format_card(c, unit=args.energy_unit, contributions=args.contributions) for c in cards))
    return 2 if failed else 0
