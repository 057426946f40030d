"""Typesetting of the plain-text math that the analysis writes into dossier.json.

The result dict keeps formulas and sentences in ASCII (``lambda = E_op - dE0``,
``10^(13.2 +2.2/-2.3) s-1``) so that it stays greppable and diff-friendly; the report shows
them typeset: Greek letters, sub- and superscripts, proper minus signs and multiplication
crosses, and literature citations replaced by numbered references.

``typeset(text, cite)`` escapes the text first (user text stays inert), then rewrites the
known tokens. Only whole tokens on the list below are touched, so state names (``min_a``),
recipes (``mp2//dft``) and basis sets (``6-31G``) come through unchanged.
"""
from __future__ import annotations

import math
import re
from typing import Any, Callable

from markupsafe import Markup

from dossier.analysis.citations import CITATION_RE, TEXT_CITATIONS

MINUS = "\u2212"
_SUPERSCRIPT = str.maketrans("0123456789-+", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺")

#: Whole-token replacements, applied in order to the escaped text (regex, HTML).
_TOKENS: list[tuple[str, str]] = [
    (r"&lt;S\^2&gt;", "⟨S²⟩"),
    (r"\bsigma_TS\b", "σ<sub>TS</sub>"), (r"\bsigma_R\b", "σ<sub>R</sub>"), (r"\bk_hop\b", "k<sub>hop</sub>"),
    (r"\bangstrom\b", "Å"), (r"(?<=\d) A\b", " Å"), (r"\bbeta\b", "β"), (r" -&gt; ", " → "),
    (r" &gt;= ", " ≥ "), (r" &lt;= ", " ≤ "),
    (r"\bdG\*_ad\b", "ΔG<sup>‡</sup><sub>ad</sub>"),
    (r"\bdG_act\b", "ΔG<sup>‡</sup>"), (r"\bdE_act\b", "ΔE<sup>‡</sup>"), (r"\bdH_act\b", "ΔH<sup>‡</sup>"),
    (r"\bdG0\b", "ΔG°"), (r"\bdH0\b", "ΔH°"), (r"\bdE0\b", "ΔE<sub>0</sub>"),
    (r"\bdE_12\b", "ΔE<sub>12</sub>"), (r"\bdE_1\b", "ΔE<sub>1</sub>"),
    (r"\bdmu_12\b", "Δμ<sub>12</sub>"), (r"\bmu_12\b", "μ<sub>12</sub>"),
    (r"\bkappa_LZ\b", "κ<sub>LZ</sub>"), (r"\bkappa\b", "κ"),
    (r"\bnu_max\b", "ν̃<sub>max</sub>"), (r"\bnu max\b", "ν̃<sub>max</sub>"), (r"\bnu_n\b", "ν<sub>n</sub>"), (r"\bnu\b", "ν̃"),
    (r"\beps_max\b", "ε<sub>max</sub>"), (r"\bepsilon max\b", "ε<sub>max</sub>"),
    (r"\bfwhm\b", "Δν̃<sub>1/2</sub>"), (r"\bdnu_1/2\b", "Δν̃<sub>1/2</sub>"),
    (r"\blambda_s\b", "λ<sub>s</sub>"), (r"\blambda_i\b", "λ<sub>i</sub>"), (r"\blambda\b", "λ"),
    (r"\bk_B T\b", "k<sub>B</sub>T"), (r"\bkT\b", "k<sub>B</sub>T"), (r"\bk_B\b", "k<sub>B</sub>"),
    (r"\bhbar\b", "ħ"), (r"\bpi x\b", "π ×"), (r"\bpi\b", "π"), (r"\bsigma\b", "σ"), (r"\b2 pi gamma\b", "2πγ"), (r"\bgamma\b", "γ"),
    (r"\bomega_j\b", "ω<sub>j</sub>"), (r"\bQ_j\b", "Q<sub>j</sub>"), (r"\bsum_j\b", "Σ<sub>j</sub>"), (r"\bsum_n\b", "Σ<sub>n</sub>"),
    (r"(?<![A-Za-z_])H_ab\b", "H<sub>ab</sub>"), (r"\b2hab over lambda\b", "2H<sub>ab</sub>/λ"), (r"\br_ab\b", "r<sub>ab</sub>"),
    (r"\bE_op\b", "E<sub>op</sub>"), (r"\bk_obs\b", "k<sub>obs</sub>"), (r"\bk_intra\b", "k<sub>intra</sub>"),
    (r"\bk_inter\b", "k<sub>inter</sub>"), (r"\bk_calc\b", "k<sub>calc</sub>"), (r"\bk_exp\b", "k<sub>exp</sub>"),
    (r"\be\^-S\b", "e<sup>−S</sup>"), (r"\bS\^n\b", "S<sup>n</sup>"),
    (r"\^-1/2\b", "<sup>−1/2</sup>"), (r"\^1/2\b", "<sup>1/2</sup>"), (r"\^2\b", "<sup>2</sup>"),
    (r"\bln2\b", "ln 2"), (r"\blog10\b", "log<sub>10</sub>"),
    (r"\(x-1\)", "(x − 1)"),
]
_TOKENS_RE = [(re.compile(p), h) for p, h in _TOKENS]

# 10^(13.2 +2.2/-2.3), 10^(13.1 ± 1.9), 1.6 x 10^9, 2.06e-2, s-1, cm-1, M-1
_POWER_GROUP = re.compile(r"10\^\(([^()]*)\)")
_POWER = re.compile(r"10\^(-?\d+(?:\.\d+)?)")
_TIMES = re.compile(r"(?<=\d) x (?=10)")
_ENOTATION = re.compile(r"\b(\d+(?:\.\d+)?)e([-+]?)0*(\d+)\b")
_UNIT_POWER = re.compile(r"\b(s|cm|M|K|mol|Hz)-1\b")
_MINUS_NUMBER = re.compile(r"(?<![\w.\-/])-(?=\d|\.\d)|(?<=[/(])-(?=\d)")
_MINUS_BINARY = re.compile(r"(?<= )-(?= )|(?<=[(\[])-(?=[(\[A-Za-zΔλ])")

def _power_group(m: re.Match) -> str:
    inner = m.group(1).replace("-", MINUS)
    return f"10<sup>{inner}</sup>"


def _math(html: str) -> str:
    html = _POWER_GROUP.sub(_power_group, html)
    html = _POWER.sub(lambda m: f"10<sup>{m.group(1).replace('-', MINUS)}</sup>", html)
    html = _TIMES.sub(" × ", html)
    html = _ENOTATION.sub(lambda m: f"{m.group(1)} × 10<sup>{MINUS if m.group(2) == '-' else ''}{m.group(3)}</sup>", html)
    html = _UNIT_POWER.sub(lambda m: f"{m.group(1)}⁻¹", html)
    for rx, rep in _TOKENS_RE:
        html = rx.sub(rep, html)
    html = _MINUS_NUMBER.sub(MINUS, html)
    return _MINUS_BINARY.sub(MINUS, html)


def typeset(text: Any, cite: Callable[[list[str]], str] | None = None) -> Markup:
    """ASCII math of the analysis as HTML; inline literature as ``cite(keys)`` (when given)."""
    if text is None:
        return Markup("–")
    raw = str(text)
    pieces: list[str] = []
    pos = 0
    for m in CITATION_RE.finditer(raw) if cite else ():
        start, end = m.start(), m.end()
        if raw[start - 1:start] == "(" and raw[end:end + 1] == ")":  # "(Author 1999)" -> "[n]"
            start, end = start - 1, end + 1
        pieces.append(_math(str(Markup.escape(raw[pos:start]))))
        pieces.append(cite([TEXT_CITATIONS[int(m.lastgroup[1:])][1]]))
        pos = end
    pieces.append(_math(str(Markup.escape(raw[pos:]))))
    return Markup("".join(pieces))


def fmt_power(x: Any, digits: int = 1) -> Markup:
    """A positive number as 'm.m × 10<sup>n</sup>' (HTML)."""
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x) or x <= 0:
        return Markup("–")
    exp = math.floor(math.log10(x))
    mant = x / 10**exp
    if round(mant, digits) >= 10.0:
        exp += 1
        mant = x / 10**exp
    return Markup(f"{mant:.{digits}f} × 10<sup>{str(exp).replace('-', MINUS)}</sup>")


def fmt_temperature(x: Any) -> str:
    """A temperature as given (298.15 stays 298.15, 300.0 is 300): at most two decimals, no trailing zeros."""
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x):
        return "–"
    text = f"{x:.2f}".rstrip("0").rstrip(".")
    return text


def fmt_wavenumber(x: Any, digits: int = 0) -> str:
    """A harmonic wavenumber; imaginary ones (stored negative) as '778i'."""
    if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x):
        return "–"
    if x < 0:
        return f"{-x:.{digits}f}i"
    return f"{x:.{digits}f}"


def fmt_log10_interval(rate: Any, interval: Any) -> Markup:
    """'10<sup>13.2 +0.3/−1.1</sup>' from a rate and the interval of its log10."""
    if isinstance(rate, bool) or not isinstance(rate, (int, float)) or not rate > 0 or not interval or len(interval) != 2:
        return Markup("–")
    central = math.log10(rate)
    up, down = interval[1] - central, central - interval[0]
    if abs(up - down) < 0.05:
        spread = f" ± {abs(up):.1f}"
    else:
        spread = f" +{up:.1f}/{MINUS}{down:.1f}".replace("+-", MINUS)
    return Markup(f"10<sup>{central:.1f}{spread}</sup>".replace("10<sup>-", f"10<sup>{MINUS}"))


class Citer:
    """Numbers references in order of first citation while the document renders (the first key
    cited is [1]); the bibliography lists them in that order, then any work the analysis chose
    to cite that the text never named."""

    def __init__(self, works: list[dict]) -> None:
        self.works = {w["key"]: w for w in works}
        self.order: list[str] = []

    def number(self, key: str) -> int | None:
        if key not in self.works:
            return None
        if key not in self.order:
            self.order.append(key)
        return self.order.index(key) + 1

    def __call__(self, keys: list[str]) -> str:
        nums = sorted({(n, k) for k in keys for n in [self.number(k)] if n})
        if not nums:
            return ""
        links = ", ".join(f'<a class="cite" href="#ref-{k}">{n}</a>' for n, k in nums)
        return f"[{links}]"

    def bibliography(self) -> list[dict]:
        for key in self.works:
            self.number(key)
        return [{**self.works[k], "number": i + 1} for i, k in enumerate(self.order)]


UNIT_SUFFIXES = [("_kj_mol", "kJ mol⁻¹"), ("_kcal_mol", "kcal mol⁻¹"), ("_m1_cm1", "M⁻¹ cm⁻¹"), ("_cm1", "cm⁻¹"),
                 ("_ev", "eV"), ("_nm", "nm"), ("_angstrom", "Å"), ("_per_s", "s⁻¹"), ("_hz", "Hz"), ("_k", "K"),
                 ("_hartree", "Eh")]


#: Symbols of the quantities dossier.json names in words (HTML).
_SYMBOLS = {"nu_max": "ν̃<sub>max</sub>", "fwhm": "Δν̃<sub>1/2</sub> (full width at half height)",
            "epsilon_max": "ε<sub>max</sub>", "distance": "r<sub>ab</sub> (site distance)", "temperature": "T",
            "delta_g0": "ΔG°", "coupling": "H<sub>ab</sub>", "reorganization_energy": "λ",
            "reorganization_energy_from_width": "λ from the band width",
            "expected_class_ii_fwhm": "Δν̃<sub>1/2</sub> expected for class II", "width_ratio": "Δν̃<sub>1/2</sub> / class-II width",
            "ratio_2hab_over_lambda": "2H<sub>ab</sub>/λ"}


def quantity_label(key: Any) -> Markup:
    """'coupling_cm1' -> 'H_ab / cm⁻¹' (the unit suffix convention of dossier.json), as HTML."""
    key = str(key)
    stem, unit = key, None
    for suffix, u in UNIT_SUFFIXES:
        if key.endswith(suffix):
            stem, unit = key[: -len(suffix)], u
            break
    label = Markup(_SYMBOLS[stem]) if stem in _SYMBOLS else typeset(stem.replace("_", " "))
    return label + Markup(f" / {unit}") if unit else label
