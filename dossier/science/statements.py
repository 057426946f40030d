"""Plain sentences generated from numbers, so the dossier says what each number means.

Every sentence is built from the numbers it quotes and nothing else; tests parse the numbers
back out. Wording is plain ("s-1", "kJ/mol", "%", one non-ASCII sign: ±), so the same text serves
HTML, PDF, LaTeX and JSON.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

#: Log10 values are quoted to one decimal; energies to one decimal in kJ/mol.
LOG_DIGITS = 1
ENERGY_DIGITS = 1


def kelvin(temperature_k: float) -> str:
    """A temperature as the user gave it: 298.15 stays 298.15, 300.0 is 300 (at most two decimals)."""
    return f"{temperature_k:.2f}".rstrip("0").rstrip(".")


def _t(temperature_k: float | None) -> str:
    if temperature_k is None:
        return "k"
    return f"k({kelvin(temperature_k)} K)"


def rate_statement(
    temperature_k: float | None,
    log10_median: float,
    interval_68: Sequence[float],
) -> str:
    """'k(298.15 K) = 10^(6.2 ± 0.9) s-1 (68 %)'; asymmetric intervals as '10^(6.2 +0.8/-1.0)'."""
    lo, hi = float(interval_68[0]), float(interval_68[1])
    m = round(log10_median, LOG_DIGITS)
    up = round(hi - log10_median, LOG_DIGITS)
    down = round(log10_median - lo, LOG_DIGITS)
    if abs(up - down) < 0.05:
        spread = f"± {max(up, down):.{LOG_DIGITS}f}"
    else:
        spread = f"+{up:.{LOG_DIGITS}f}/-{down:.{LOG_DIGITS}f}"
    return f"{_t(temperature_k)} = 10^({m:.{LOG_DIGITS}f} {spread}) s-1 (68 %)"


def interval_statement(inside_68: bool, inside_95: bool, *, what: str = "the measured rate") -> str:
    """Where a measurement lies relative to the computed intervals."""
    if inside_68:
        return f"{what} lies inside the 68 % interval (and so inside the 95 % interval)"
    if inside_95:
        return f"{what} lies inside the 95 % interval but outside the 68 % interval"
    return f"{what} lies outside the 95 % interval"


def ratio_statement(log10_ratio: float) -> str:
    """How far the computed rate is from the measured one, in words and decades."""
    r = round(log10_ratio, LOG_DIGITS)
    if abs(r) < 0.05:
        return "the computed rate equals the measured one to within 0.1 decade"
    if abs(r) < 4:
        factor = 10.0 ** abs(r)
        shown = f"{factor:.2g}" if factor < 100 else f"{factor:.0f}"
    else:  # from the logarithm itself: 10 ** |r| may not fit a float
        exponent = math.floor(abs(r))
        mantissa = 10.0 ** (abs(r) - exponent)
        if round(mantissa, 1) >= 10.0:
            mantissa, exponent = mantissa / 10, exponent + 1
        shown = f"{mantissa:.1f} x 10^{exponent}"
    side = "faster" if r > 0 else "slower"
    return f"the computed rate is {shown} times ({abs(r):.{LOG_DIGITS}f} decades) {side} than the measured one"


def barrier_shift_statement(shift_kj_mol: float, *, what: str = "the barrier") -> str:
    """'the barrier would have to be 4.1 kJ/mol lower to match the measurement'.

    shift = RT ln(k_calc / k_exp): positive means the computed rate is too fast, so the
    barrier would have to be higher.
    """
    s = round(shift_kj_mol, ENERGY_DIGITS)
    if abs(s) < 0.05:
        return f"{what} needs no shift to match the measurement (less than 0.1 kJ/mol)"
    direction = "higher" if s > 0 else "lower"
    return f"{what} would have to be {abs(s):.{ENERGY_DIGITS}f} kJ/mol {direction} to match the measurement"


def methods_agreement_statement(result: Any) -> str:
    """Whether the Monte Carlo and first-order intervals agree (takes a RateUncertainty)."""
    sigmas = (f"1 sigma of log10 k {result.half_width_68:.2f} sampled and {result.analytic_log10_sigma:.2f} "
              f"linearized; interval ends differ by up to {result.max_end_difference_log10:.2f} decade")
    if result.methods_agree:
        return f"Monte Carlo and first-order propagation agree ({sigmas})"
    return (f"Monte Carlo and first-order propagation disagree ({sigmas}): the rate is not linear in its "
            f"inputs over their spread, so the sampled interval is the one to use")


def correlation_statement(levels: Mapping[str, float]) -> str:
    """The sentence the dossier prints about how correlated inputs were treated.

    levels: recipe name -> correlation coefficient used between two relative energies from it.
    """
    base = ("The sigma given for a level of theory is that of a relative energy, so the errors that cancel "
            "between two states computed with one method are already inside it. ")
    if levels:
        parts = ", ".join(f"{rho:.2f} at level {name}" for name, rho in sorted(levels.items()))
        base += ("Two relative energies from the same level (such as the barrier and the driving force of one "
                 "pathway) were drawn with a shared error component, giving them a correlation coefficient of "
                 f"{parts}. ")
    else:
        base += "No rate used two relative energies from the same level, so no energy correlation was needed. "
    base += ("Energies from different levels, reorganization energies and couplings were drawn independently. "
             "The same random draws serve every temperature, so intervals at different temperatures are "
             "fully correlated and must not be combined as independent.")
    return base


def model_statement() -> str:
    """The plain warning every dossier carries next to its rates."""
    return ("Rates are model estimates: they follow from the stated formula, the computed energies and the "
            "stated uncertainties, and are not measurements. An interval shows the spread that follows from "
            "those assumptions only.")


def band_statement(quantity: str, computed: float, measured: float, unit: str, *, digits: int = 0) -> str:
    """'computed lambda 95 kJ/mol against 114 kJ/mol from the band (ratio 0.84)'."""
    ratio = computed / measured if measured else math.nan
    return (f"computed {quantity} {computed:.{digits}f} {unit} against {measured:.{digits}f} {unit} from the band "
            f"(ratio {ratio:.2f})")


def rate_comparison_statement(entry: Mapping[str, Any]) -> str:
    """One sentence for one computed-vs-measured rate (an experiment.compare_rate result)."""
    t = entry["temperature_k"]
    head = f"At {kelvin(t)} K ({entry['computed_model']})"
    validity = entry.get("computed_validity") or {}
    if validity and not validity.get("valid"):
        head += f" [model not valid here: {validity.get('note')}]"
    parts = [ratio_statement(entry["log10_ratio"])]
    if entry.get("inside_68") is not None:
        parts.append(interval_statement(bool(entry["inside_68"]), bool(entry["inside_95"])))
    parts.append(barrier_shift_statement(entry["barrier_shift_to_match_kj_mol"]))
    return f"{head}: " + "; ".join(parts) + "."


def ladder_statement(recipe: str, model: str, temperature_k: float, log10_ratio: float, n_rungs: int) -> str:
    """Which rung of the method ladder comes closest to a measurement."""
    return (f"Of the {n_rungs} rungs of the method ladder, {recipe} comes closest to the measurement at "
            f"{kelvin(temperature_k)} K ({model}): {abs(log10_ratio):.{LOG_DIGITS}f} decades "
            f"{'above' if log10_ratio > 0 else 'below'} it")
