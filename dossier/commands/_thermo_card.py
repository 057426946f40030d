"""The text card of `dossier thermo`: one labelled block per file; the settings in the manifest's words.

    pathway/min_a_freq.out
    ======================
      program   NWChem 7.0.2; C6H4N2O4, doublet; 42 modes, none imaginary
      assumed   standard_state 1M; qrrho grimme (rotor/oscillator switch 100 cm-1); frequency_scale 1;
                symmetry_number 1 (Cs, from the geometry); masses isotopic (168.017 u)
      units     kJ/mol, relative to the electronic energy E; S in J/(mol K)

             T/K         ZPE       H - E       G - E           S
          298.15     ...

      the program's own numbers (298.15 K, 101325 Pa) beside ours at the same T and p
                      program        ours   ours - program
          ZPE          ...

The card is made from the data of `dossier.commands.thermo.card`, nothing else.
"""
from __future__ import annotations

from dossier import units

_DECIMALS = {"kJ/mol": 3, "kcal/mol": 3, "eV": 5}
_MOTIONS = (("translational", "translation"), ("rotational", "rotation"), ("vibrational", "vibration"),
            ("electronic", "spin"))
_MULTIPLICITY = {1: "singlet", 2: "doublet", 3: "triplet", 4: "quartet", 5: "quintet"}


def _energy(value_hartree: float | None, unit: str, extra: int = 0, sign: bool = False) -> str:
    if value_hartree is None:
        return "-"
    value = units.kj_mol_to(value_hartree * units.HARTREE_KJ_MOL, unit) + 0.0  # no "-0.000"
    return f"{value:{'+' if sign else ''}.{_DECIMALS[unit] + extra}f}"


def _program_line(c: dict) -> str:
    prog = " ".join(x for x in (c["program"], c["program_version"]) if x) or "unknown program"
    spin = _MULTIPLICITY.get(c["multiplicity"], f"multiplicity {c['multiplicity']}")
    imag = "none imaginary" if not c["n_imaginary"] else (
        f"{c['n_imaginary']} imaginary ({', '.join(f'{abs(w):.1f}i' for w in c['imaginary_cm1'])} cm-1, "
        "left out)")
    geometry = f"; coordinates from {c['geometry_file']}" if c["geometry_file"] else ""
    return f"{prog}; {c['formula'] or '?'}, {spin}; {c['n_modes']} modes, {imag}{geometry}"


def _assumed_lines(c: dict) -> list[str]:
    a = c["assumed"]
    state = f"pressure_pa {a['pressure_pa']:.6g}" if a["pressure_pa"] else f"standard_state {a['standard_state']}"
    low = "qrrho none (harmonic)"
    if a["qrrho"] == "grimme":
        low = f"qrrho grimme (rotor/oscillator switch {a['qrrho_cutoff_cm1']:g} cm-1)"
    elif a["qrrho"] == "truhlar":
        low = f"qrrho truhlar (modes below {a['qrrho_cutoff_cm1']:g} cm-1 raised to it)"
    source = {"geometry": "from the geometry", "given": "given", "monatomic": "one atom"}.get(
        a["symmetry_number_source"], a["symmetry_number_source"])
    group = f"{a['point_group']}, " if a["point_group"] else ""
    first = f"{state}; {low}; frequency_scale {a['frequency_scale']:g};"
    second = f"symmetry_number {a['symmetry_number']} ({group}{source}); masses {a['masses']} ({a['mass_amu']:.3f} u)"
    return [first, second]


def _results_table(c: dict, unit: str) -> list[str]:
    lines = [f"{'T/K':>12}{'ZPE':>12}{'H - E':>12}{'G - E':>12}{'S':>12}"]
    for r in c["results"]:
        lines.append(f"{r['temperature_k']:>12.2f}{_energy(r['zpe_hartree'], unit):>12}"
                     f"{_energy(r['enthalpy_correction_hartree'], unit):>12}"
                     f"{_energy(r['gibbs_correction_hartree'], unit):>12}{r['entropy_j_mol_k']:>12.3f}")
    return lines


def _printed_lines(c: dict, unit: str) -> list[str]:
    p = c["printed"]
    if p is None:
        return ["the program printed no thermochemistry to compare with"]
    where = f"{p['temperature_k']:.2f} K, " + (f"{p['pressure_pa']:.6g} Pa" if p["pressure_pa"]
                                                 else f"pressure not printed; ours at {p['pressure_pa_used']:.6g} Pa")
    lines = [f"the program's own numbers ({where}) beside ours at the same T and p",
             f"{'':12}{'program':>12}{'ours':>12}{'ours - program':>17}"]
    for label, key in (("ZPE", "zpe_hartree"), ("H - E", "enthalpy_correction_hartree"),
                       ("G - E", "gibbs_correction_hartree")):
        theirs, ours = p["program"][key], p["ours"][key]
        diff = None if theirs is None else ours - theirs
        lines.append(f"{label:>12}{_energy(theirs, unit):>12}{_energy(ours, unit):>12}"
                     f"{_energy(diff, unit, extra=1, sign=True):>17}")
    s_theirs, s_ours = p["program"]["entropy_j_mol_k"], p["ours"]["entropy_j_mol_k"]
    lines.append(f"{'S':>12}{'-' if s_theirs is None else f'{s_theirs:.3f}':>12}{s_ours:>12.3f}"
                 f"{'-' if s_theirs is None else f'{s_ours - s_theirs:+.4f}':>17}")
    return lines


def _contribution_lines(c: dict, unit: str) -> list[str]:
    """Per temperature, a row per quantity and a column per kind of motion (ZPE within vibration)."""
    out = []
    for r in c["results"]:
        parts = r["contributions"]
        out.append(f"parts at {r['temperature_k']:.2f} K (vibration includes the ZPE; spin: R ln(2S+1))")
        out.append(f"{'':16}" + "".join(f"{label:>13}" for _, label in _MOTIONS) + f"{'total':>13}")
        rows = (("H - E", "enthalpy_hartree", True), ("-TS", "minus_ts_hartree", True),
                ("S J/(mol K)", "entropy_j_mol_k", False), ("Cv J/(mol K)", "heat_capacity_j_mol_k", False))
        for label, key, is_energy in rows:
            values = [parts[m][key] for m, _ in _MOTIONS]
            cells = [_energy(v, unit) if is_energy else f"{v + 0.0:.3f}" for v in values + [sum(values)]]
            name = f"{label} {unit}" if is_energy else label
            out.append(f"{name:>16}" + "".join(f"{cell:>13}" for cell in cells))
    return out


def format_card(c: dict, *, unit: str = "kJ/mol", contributions: bool = False) -> str:
    """The card of one file (see the module docstring)."""
    assumed = _assumed_lines(c)
    lines = [c["file"], "=" * len(c["file"]), f"  program   {_program_line(c)}", f"  assumed   {assumed[0]}",
             *(f"            {x}" for x in assumed[1:]),
             f"  units     {unit}, relative to the electronic energy E; S in J/(mol K)", ""]
    lines += [f"  {x}" for x in _results_table(c, unit)]
    lines += [""] + [f"  {x}" for x in _printed_lines(c, unit)]
    if contributions:
        lines += [""] + [f"  {x}" for x in _contribution_lines(c, unit)]
    for note in c["notes"]:
        lines.append(f"  note      {note}")
    return "\n".join(lines)
