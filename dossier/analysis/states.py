"""One dossier.json entry per state: coordinates, energies, thermochemistry, excited states and localization evidence."""
from __future__ import annotations

from dataclasses import asdict


from dossier import units as u
from dossier.records import Calculation
from dossier.science import localization as loc


def _redox_sites(project) -> list[str]:
    names: list[str] = []
    for pw in project.pathways:
        for s in (pw.donor_site, pw.acceptor_site):
            if s and s not in names:
                names.append(s)
    if not names:
        bridges = {pw.bridge_site for pw in project.pathways if pw.bridge_site}
        names = [s for s in project.sites if s not in bridges and s != "bridge"]
    return names



def _bridge_atoms(project) -> list[int] | None:
    atoms: list[int] = []
    for pw in project.pathways:
        if pw.bridge_site:
            atoms += [a for a in project.sites.get(pw.bridge_site, []) if a not in atoms]
    if not atoms and "bridge" in project.sites:
        atoms = list(project.sites["bridge"])
    return atoms or None



def _excited_list(rec: Calculation | None) -> list[dict]:
    if rec is None:
        return []
    out = []
    for x in rec.excited_states:
        out.append({"energy_ev": x.energy_ev, "energy_cm1": x.energy_cm1,
                    "wavelength_nm": (u.NM_CM1 / x.energy_cm1) if x.energy_cm1 else None,
                    "oscillator_strength": x.oscillator_strength, "symmetry": x.symmetry,
                    "transition_dipole_au": x.transition_dipole_au})
    return out



def _frequency_summary(rec: Calculation | None, threshold_cm1: float) -> dict | None:
    if rec is None or rec.vibrations is None:
        return None
    w = list(rec.vibrations.wavenumbers_cm1)
    imag = [x for x in w if x < 0]
    return {"n_modes": len(w), "n_imaginary": len(imag), "imaginary_cm1": imag,
            "n_imaginary_beyond_threshold": sum(1 for x in imag if x < -threshold_cm1),
            "lowest_real_cm1": [x for x in w if x > 0][:3], "file": None}



def _state_entry(ctx, st) -> dict:
    p = ctx.project
    g = st.geometry
    energies = {"geometry": g.energy_hartree}
    for k, rec in st.single_points.items():
        energies[k] = rec.energy_hartree
    thermo = []
    for t in ctx.temperatures:
        r = ctx.energies.thermo(st.name, t)
        if r is None:
            continue
        thermo.append({"temperature_k": t, "zpe_hartree": r.zpe_hartree,
                       "thermal_energy_correction_hartree": r.thermal_energy_correction_hartree,
                       "enthalpy_correction_hartree": r.enthalpy_correction_hartree,
                       "gibbs_correction_hartree": r.gibbs_correction_hartree, "entropy_j_mol_k": r.entropy_j_mol_k,
                       "heat_capacity_cv_j_mol_k": r.heat_capacity_cv_j_mol_k, "qrrho": r.qrrho,
                       "symmetry_number": r.symmetry_number, "symmetry_number_source": r.symmetry_number_source,
                       "point_group": r.point_group, "standard_state": r.standard_state,
                       "pressure_pa": r.pressure_pa, "frequency_scale": r.frequency_scale,
                       "n_imaginary_left_out": r.n_imaginary, "notes": list(r.notes),
                       "contributions": {k: asdict(v) for k, v in r.contributions.items()}})
    freq = _frequency_summary(st.frequencies, p.settings.imaginary_threshold_cm1)
    if freq is not None:
        freq["file"] = p.label(st.frequencies)
    printed = asdict(st.frequencies.printed_thermo) if st.frequencies is not None and \
        st.frequencies.printed_thermo is not None else None
    excited = _excited_list(st.excited_states)
    localization = loc.state_localization(g, p.sites, ctx.redox_sites, ctx.bridge_atoms)
    if st.excited_states is not None and not g.spin_populations and st.excited_states.spin_populations:
        localization["notes"].append("populations taken from the geometry job only")
    notes = []
    if ctx.energies.thermo_error(st.name):
        notes.append(f"thermochemistry not computed: {ctx.energies.thermo_error(st.name)}")
    return {
        "name": st.name, "role": st.role, "role_source": st.role_source, "note": st.note,
        "formula": g.formula if g.elements else None, "charge": g.charge, "multiplicity": g.multiplicity,
        "n_atoms": g.n_atoms, "elements": list(g.elements), "coordinates_angstrom": [list(map(float, c)) for c in
                                                                                      g.coordinates_angstrom],
        "files": st.files, "program": g.program, "program_version": g.program_version,
        "level_of_theory": g.level.label(), "status": {part: rec.status.word for part, rec in st.records()},
        "energies_hartree": energies, "s2": g.s2, "s2_ideal": g.s2_ideal,
        "atom_spin_populations": {k: [float(x) for x in v] for k, v in sorted(g.spin_populations.items())},
        "frequencies": freq, "thermo": thermo, "printed_thermo": printed,
        "excited_states": excited,
        "excited_states_file": p.label(st.excited_states) if st.excited_states is not None else None,
        "excited_states_level_of_theory": st.excited_states.level.label() if st.excited_states is not None else None,
        "dipole_debye": g.dipole_debye,
        "localization": localization, "notes": notes,
    }

