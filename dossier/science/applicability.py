"""Where each rate model holds: pure verdict functions on the parameters a rate was computed from.

Every verdict is a dict ``{"valid": bool, "judged": bool, "note": str, "criteria": [...]}``:
``valid`` is True only when every criterion was judged and holds; ``judged`` is False when a
criterion could not be evaluated (its input, usually a frequency, is missing) and the note then
starts with "cannot be judged: ". Each criterion names its threshold and the source of that
threshold (or says "common practice, no source").
"""
from __future__ import annotations

import math

from dossier import units as u
from dossier.science import marcus

#: A rate constant needs the barrier well above RT (the activated state must be rare, so that the
#: reactant is thermalized between crossings). The factor is common practice, no source; the
#: time-scale argument is that of Kramers (Physica 1940, 7, 284) as reviewed by Hänggi, Talkner and
#: Borkovec (Rev. Mod. Phys. 1990, 62, 251), from memory.
MIN_BARRIER_RT = 2.0
MIN_BARRIER_SOURCE = ("barrier >= 2 RT: common practice, no source (time-scale separation, Hänggi, Talkner, "
                      "Borkovec, Rev. Mod. Phys. 1990, 62, 251, from memory)")
#: Landau–Zener adiabaticity parameter 2 pi gamma = nu_el / (2 nu_n): << 1 nonadiabatic, >> 1 adiabatic
#: (Newton & Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437). The boundary at 1 is common practice, no source.
MAX_LANDAU_ZENER = 1.0
LANDAU_ZENER_SOURCE = ("2 pi gamma < 1: Newton & Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437 (the boundary at 1 "
                       "is common practice, no source)")
#: 2 H_ab / lambda >= 1: the lower adiabatic surface has a single minimum, class III
#: (Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168).
MAX_COUPLING_RATIO = 1.0
COUPLING_RATIO_SOURCE = "2 H_ab / lambda < 1: Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168"
#: A transmission coefficient is a probability: above 1 only where a formula is outside its range.
MAX_KAPPA = 1.0
KAPPA_SOURCE = "kappa <= 1: a transmission coefficient is a probability (definition)"
ZPE_SOURCE = ("barrier above the zero-point level (1/2) h c nu_n of the transfer mode: otherwise the double well "
              "does not survive zero-point motion (common practice, no source)")


def _criterion(name: str, value, threshold, holds: bool | None, source: str, text: str) -> dict:
    return {"criterion": name, "value": value, "threshold": threshold, "holds": holds, "source": source,
            "text": text}


def _verdict(criteria: list[dict], ok_note: str) -> dict:
    failed = [c["text"] for c in criteria if c["holds"] is False]
    unknown = [c["text"] for c in criteria if c["holds"] is None]
    judged = not unknown
    valid = judged and not failed
    if valid:
        note = ok_note
    elif failed:
        note = "; ".join(failed) + (f" (and cannot be judged: {'; '.join(unknown)})" if unknown else "")
    else:
        note = "cannot be judged: " + "; ".join(unknown)
    return {"valid": bool(valid), "judged": bool(judged), "note": note, "criteria": criteria}


def zero_point_level_kj_mol(wavenumber_cm1: float) -> float:
    """Zero-point energy (1/2) h c nu of a harmonic mode, kJ/mol (any textbook harmonic oscillator)."""
    return 0.5 * float(wavenumber_cm1) * u.CM1_KJ_MOL


def vibrational_period_fs(wavenumber_cm1: float) -> float:
    """Period 1 / (c nu~) of a vibration of wavenumber nu~ (cm-1), in femtoseconds."""
    return 1.0 / (u.SPEED_OF_LIGHT_M_S * abs(float(wavenumber_cm1)) * 100.0) * 1e15


def _barrier_criterion(barrier_kj_mol: float, temperature_k: float, what: str) -> dict:
    rt = u.rt_kj_mol(temperature_k)
    need = MIN_BARRIER_RT * rt
    holds = bool(barrier_kj_mol >= need)
    if barrier_kj_mol < 0:
        text = (f"{what} is negative ({barrier_kj_mol:.2f} kJ/mol): the saddle lies below the reactant at this level, "
                "so no rate constant follows from it")
    else:
        text = (f"{what} {barrier_kj_mol:.2f} kJ/mol = {barrier_kj_mol / rt:.2f} RT at {temperature_k:.2f} K is "
                f"below {MIN_BARRIER_RT:g} RT = {need:.2f} kJ/mol")
    return _criterion("barrier_above_rt", barrier_kj_mol, need, holds, MIN_BARRIER_SOURCE, text)


def tst_verdict(barrier_kj_mol: float, temperature_k: float, *, thermal: bool = True,
                landau_zener_parameter: float | None = None) -> dict:
    """Transition-state theory (Eyring) holds when the free-energy barrier is positive and >= MIN_BARRIER_RT x RT,
    and (when the Landau–Zener parameter is known) the passage is adiabatic, since kappa = 1 is assumed.
    An electronic-only barrier (no frequency job) cannot be judged: zero-point energy may remove it."""
    crit = []
    if thermal:
        crit.append(_barrier_criterion(float(barrier_kj_mol), temperature_k, "the free-energy barrier"))
    else:
        crit.append(_criterion("barrier_above_rt", barrier_kj_mol, MIN_BARRIER_RT * u.rt_kj_mol(temperature_k), None,
                               MIN_BARRIER_SOURCE, "the barrier is electronic only (no frequency jobs at this "
                               "recipe), so whether it survives zero-point energy is unknown"))
    if landau_zener_parameter is not None and math.isfinite(landau_zener_parameter):
        g = float(landau_zener_parameter)
        crit.append(_criterion("adiabatic_passage", g, MAX_LANDAU_ZENER, bool(g >= MAX_LANDAU_ZENER),
                               LANDAU_ZENER_SOURCE, f"the passage is nonadiabatic (2 pi gamma = {g:.3g} < 1), while "
                               "TST assumes kappa = 1: it overestimates the rate; use a golden-rule model"))
    return _verdict(crit, "transition-state theory from the saddle point's free energy: the barrier is well above "
                          "RT" + (" and the passage adiabatic" if len(crit) > 1 else ""))


def _ratio_criterion(coupling_cm1: float, reorganization_energy_kj_mol: float) -> dict:
    ratio = 2.0 * float(coupling_cm1) * u.CM1_KJ_MOL / float(reorganization_energy_kj_mol)
    return _criterion("two_hab_over_lambda", ratio, MAX_COUPLING_RATIO, bool(ratio < MAX_COUPLING_RATIO),
                      COUPLING_RATIO_SOURCE, f"2H_ab/lambda = {ratio:.3g} >= 1: a single delocalized minimum "
                      "(class III), no transfer between two sites")


def golden_rule_verdict(coupling_cm1: float, reorganization_energy_kj_mol: float, temperature_k: float,
                        nuclear_frequency_cm1: float | None, effective_kappa: float | None) -> dict:
    """Nonadiabatic (golden-rule) Marcus and Marcus–Levich–Jortner rates hold when 2 H_ab / lambda < 1,
    the Landau–Zener parameter 2 pi gamma < 1 (needs the nuclear frequency nu_n) and the effective
    transmission coefficient k / [(k_B T / h) exp(-dG*/RT)] is at most 1."""
    crit = [_ratio_criterion(coupling_cm1, reorganization_energy_kj_mol)]
    if nuclear_frequency_cm1 is None:
        crit.append(_criterion("nonadiabatic_passage", None, MAX_LANDAU_ZENER, None, LANDAU_ZENER_SOURCE,
                               "no nuclear frequency (the reactant has no frequency job with normal modes that project "
                               "onto the product), so the Landau–Zener parameter is unknown"))
    else:
        g = float(marcus.landau_zener_parameter(coupling_cm1, reorganization_energy_kj_mol, temperature_k,
                                                nuclear_frequency_cm1))
        crit.append(_criterion("nonadiabatic_passage", g, MAX_LANDAU_ZENER, bool(g < MAX_LANDAU_ZENER),
                               LANDAU_ZENER_SOURCE, f"adiabatic passage (2 pi gamma = {g:.3g} > 1): the golden-rule "
                               "formula is outside its range and overestimates the rate"))
    if effective_kappa is not None and math.isfinite(effective_kappa):
        crit.append(_criterion("kappa_at_most_one", effective_kappa, MAX_KAPPA, bool(effective_kappa <= MAX_KAPPA),
                               KAPPA_SOURCE, f"effective transmission coefficient {effective_kappa:.3g} > 1"))
    return _verdict(crit, "nonadiabatic regime: 2H_ab/lambda < 1, 2 pi gamma < 1 and kappa <= 1, so the golden-rule "
                          "formula applies")


def adiabatic_verdict(coupling_cm1: float, reorganization_energy_kj_mol: float, delta_g0_kj_mol: float,
                      temperature_k: float, nuclear_frequency_cm1: float,
                      surface_zpe_barrier_kj_mol: float | None = None) -> dict:
    """The two-state adiabatic (Marcus–Hush) rate holds when the model has a double well (2 H_ab / lambda < 1),
    its barrier dG*_ad lies above the zero-point level (1/2) h c nu_n of the transfer mode and >= MIN_BARRIER_RT x RT,
    and, where the computed surface gives one, the zero-point-corrected saddle lies above the reactant."""
    crit = [_ratio_criterion(coupling_cm1, reorganization_energy_kj_mol)]
    g = float(marcus.adiabatic_barrier_kj_mol(reorganization_energy_kj_mol, delta_g0_kj_mol, coupling_cm1))
    zp = zero_point_level_kj_mol(nuclear_frequency_cm1)
    crit.append(_criterion("barrier_above_zero_point", g, zp, bool(g > zp), ZPE_SOURCE,
                           f"the model barrier {g:.2f} kJ/mol lies below the zero-point level {zp:.2f} kJ/mol of the "
                           f"{nuclear_frequency_cm1:.0f} cm-1 transfer mode: the double well does not survive "
                           "zero-point motion"))
    if surface_zpe_barrier_kj_mol is not None:
        b = float(surface_zpe_barrier_kj_mol)
        crit.append(_criterion("surface_barrier_with_zpe", b, 0.0, bool(b > 0.0), ZPE_SOURCE,
                               f"the computed saddle lies {-b:.2f} kJ/mol below the reactant once zero-point energy is "
                               "added: no double well survives"))
    crit.append(_barrier_criterion(g, temperature_k, "the model barrier"))
    return _verdict(crit, "two-state adiabatic model: a double well that survives zero-point energy and a barrier "
                          "well above RT")


# ---------------------------------------------------------------------------
# Robin–Day class from every indicator: 2 H_ab / lambda and the double well on E, E+ZPE and G
# ---------------------------------------------------------------------------
SURFACE_LABELS = {"electronic": "E", "electronic+zpe": "E+ZPE", "gibbs": "G"}


def double_well_on(forward_kj_mol: float | None, reverse_kj_mol: float | None) -> bool | None:
    """A double well on one surface: the saddle lies above both minima (forward and reverse barriers > 0)."""
    if forward_kj_mol is None or reverse_kj_mol is None:
        return None
    return bool(forward_kj_mol > 0.0 and reverse_kj_mol > 0.0)


def robin_day_assessment(coupling_cm1: float | None, reorganization_energy_kj_mol: float | None,
                         structural: bool | None, barriers: dict[str, tuple[float, float] | None]) -> dict:
    """Robin–Day class from 2 H_ab / lambda and from the double well on each computed surface.

    Class II: localized, a double well (2 H_ab < lambda); class III: one delocalized minimum (2 H_ab >= lambda);
    class I: negligible coupling (2 H_ab / lambda < marcus.CLASS_I_RATIO, common practice, no source).
    Sources: M. B. Robin, P. Day, Adv. Inorg. Chem. Radiochem. 1967, 10, 247; B. S. Brunschwig, C. Creutz,
    N. Sutin, Chem. Soc. Rev. 2002, 31, 168 (2H_ab/lambda criterion; zero-point energy can remove a shallow
    double well, class II/III borderline). ``structural``: two distinct minima and a saddle with one
    imaginary mode (None: not testable). ``barriers``: surface ("electronic", "electronic+zpe", "gibbs") ->
    (forward, reverse) barrier in kJ/mol, or None. Where the indicators disagree the class is "II/III"
    and the reason lists what each says.
    """
    ratio = None
    if coupling_cm1 is not None and reorganization_energy_kj_mol and reorganization_energy_kj_mol > 0:
        ratio = 2.0 * float(coupling_cm1) * u.CM1_KJ_MOL / float(reorganization_energy_kj_mol)
    wells: dict[str, bool | None] = {}
    for kind in SURFACE_LABELS:
        b = barriers.get(kind)
        wells[kind] = False if structural is False else (double_well_on(*b) if b else None)
    says: list[tuple[str, str]] = []  # (class, why)
    if ratio is not None and math.isfinite(ratio):
        cls = "III" if ratio >= MAX_COUPLING_RATIO else ("I" if ratio < marcus.CLASS_I_RATIO else "II")
        says.append((cls, f"2H_ab/lambda = {ratio:.3g} {'>=' if ratio >= MAX_COUPLING_RATIO else '<'} 1"))
    for kind, well in wells.items():
        if well is None:
            continue
        fwd, rev = barriers[kind] if barriers.get(kind) else (None, None)
        detail = f" (barrier {fwd:.1f} kJ/mol)" if fwd is not None else ""
        says.append(("II" if well else "III",
                     f"{'a' if well else 'no'} double well on {SURFACE_LABELS[kind]}{detail}"))
    if structural is False and not says:
        says.append(("III", "no distinct minima and transition state"))
    classes = {c if c != "I" else "II" for c, _ in says}
    if not says:
        cls, reason = None, "neither a coupling/reorganization pair nor a double-well test is available"
    elif len(classes) == 1:
        cls = "I" if any(c == "I" for c, _ in says) else classes.pop()  # class I: a double well, weak coupling
        reason = "; ".join(w for _, w in says)
    else:
        cls = "II/III"
        ii = [w for c, w in says if c in ("I", "II")]
        iii = [w for c, w in says if c == "III"]
        reason = ("the indicators disagree: class II from " + ", ".join(ii) + "; class III from " + ", ".join(iii)
                  + " (a shallow double well that zero-point or thermal energy removes is the class II/III borderline)")
    return {"class": cls, "ratio_2hab_over_lambda": ratio, "double_well": wells.get("electronic"),
            "double_well_by_surface": {SURFACE_LABELS[k]: v for k, v in wells.items()},
            "structural_double_well": structural, "indicators": [{"class": c, "why": w} for c, w in says],
            "reason": reason}
