"""Generated sentences say what the numbers say: parse the numbers back out of each sentence."""
from __future__ import annotations

import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as s
from scipy import constants as c

from dossier.analysis import experiment as comparison
from dossier.science import statements as st
from dossier.science import uncertainty as unc

RATE_RE = re.compile(
    r"^k\((?P<t>\d+(?:\.\d{1,2})?) K\) = 10\^\((?P<m>-?\d+\.\d) (?:± (?P<pm>\d+\.\d)|\+(?P<up>\d+\.\d)/-(?P<down>\d+\.\d))\) s-1 \(68 %\)$")
SHIFT_RE = re.compile(r"^the barrier would have to be (?P<v>\d+\.\d) kJ/mol (?P<dir>higher|lower) to match the measurement$")
RATIO_RE = re.compile(r"^the computed rate is (?P<f>[\d.]+(?: x 10\^\d+)?) times \((?P<d>\d+\.\d) decades\) (?P<side>faster|slower) than the measured one$")


def parse_rate(text):
    m = RATE_RE.match(text)
    assert m, text
    med = float(m["m"])
    if m["pm"]:
        return float(m["t"]), med, float(m["pm"]), float(m["pm"])
    return float(m["t"]), med, float(m["up"]), float(m["down"])


def test_example_from_the_issue():
    assert st.rate_statement(298.15, 6.2, (5.3, 7.1)) == "k(298.15 K) = 10^(6.2 ± 0.9) s-1 (68 %)"  # T as given
    assert st.barrier_shift_statement(-4.1) == "the barrier would have to be 4.1 kJ/mol lower to match the measurement"
    assert st.interval_statement(False, True).startswith("the measured rate lies inside the 95 % interval")


@settings(max_examples=60, deadline=None)
@given(t=s.floats(150, 600), med=s.floats(-5, 14), up=s.floats(0.0, 4), down=s.floats(0.0, 4))
def test_rate_sentence_parses_back(t, med, up, down):
    text = st.rate_statement(t, med, (med - down, med + up))
    tt, m, u, d = parse_rate(text)
    assert tt == pytest.approx(t, abs=0.005 + 1e-9)  # the temperature as given, to two decimals
    assert m == pytest.approx(med, abs=0.05 + 1e-9)
    assert u == pytest.approx(up, abs=0.1 + 1e-9)
    assert d == pytest.approx(down, abs=0.1 + 1e-9)


@settings(max_examples=60, deadline=None)
@given(shift=s.floats(-80, 80).filter(lambda x: abs(x) >= 0.05))
def test_shift_sentence_parses_back(shift):
    m = SHIFT_RE.match(st.barrier_shift_statement(shift))
    assert m
    signed = float(m["v"]) * (1 if m["dir"] == "higher" else -1)
    assert signed == pytest.approx(shift, abs=0.05 + 1e-9)


@settings(max_examples=60, deadline=None)
@given(lr=s.floats(-9, 9).filter(lambda x: abs(x) >= 0.05))
def test_ratio_sentence_parses_back(lr):
    m = RATIO_RE.match(st.ratio_statement(lr))
    assert m
    decades = float(m["d"]) * (1 if m["side"] == "faster" else -1)
    assert decades == pytest.approx(lr, abs=0.05 + 1e-9)
    mant, _, exp = m["f"].partition(" x 10^")
    factor = float(mant) * 10 ** int(exp or 0)
    assert math.log10(factor) == pytest.approx(abs(round(lr, 1)), abs=0.03)


def test_statement_of_a_propagated_rate_quotes_its_own_interval():
    # a rate from one normal barrier (Eyring written from CODATA constants)
    def eyring(barrier_kj_mol, temperature_k):
        return c.k * temperature_k / c.h * 2.718281828459045 ** (-barrier_kj_mol * 1000 / (c.R * temperature_k))

    r = unc.propagate(eyring, {"barrier_kj_mol": unc.Normal(40.0, 6.0)}, fixed={"temperature_k": 320.0}, seed=4)
    d = r.to_dict()
    t, m, u, dn = parse_rate(d["statement"])
    assert t == 320
    assert m == pytest.approx(d["log10_rate_median"], abs=0.05 + 1e-9)
    lo, hi = d["log10_rate_interval_68"]
    assert u == pytest.approx(hi - d["log10_rate_median"], abs=0.1)
    assert dn == pytest.approx(d["log10_rate_median"] - lo, abs=0.1)
    # sigma = 6 kJ/mol at 320 K is 6 / (RT ln 10) = 0.98 decades each way
    assert u == pytest.approx(6000 / (c.R * 320 * math.log(10)), abs=0.1)


def test_comparison_sentence_agrees_with_its_entry():
    measured = {"temperature_k": 298.15, "rate_per_s": 2.0e7, "error_per_s": 5e6, "log10_rate": math.log10(2e7),
                "log10_error": 5e6 / (2e7 * math.log(10)), "method": "m", "source": "s"}
    computed = {"model": "eyring-tst", "rate_per_s": 1.0e9, "log10_rate_interval_68": [8.2, 9.8],
                "log10_rate_interval_95": [7.2, 10.8], "log10_rate_median": 9.0}
    r = comparison.compare_rate(measured, computed)
    text = r["statement"]
    shift = re.search(r"would have to be (\d+\.\d) kJ/mol (higher|lower)", text)
    assert float(shift[1]) == pytest.approx(abs(r["barrier_shift_to_match_kj_mol"]), abs=0.05)
    assert shift[2] == "higher"  # computed too fast
    decades = re.search(r"\((\d+\.\d) decades\) (faster|slower)", text)
    assert float(decades[1]) == pytest.approx(r["log10_ratio"], abs=0.05) and decades[2] == "faster"
    assert "inside the 95 % interval but outside the 68 %" in text
    assert "298.15 K" in text  # the temperature as the manifest gives it


def test_correlation_sentence_names_the_coefficient():
    text = st.correlation_statement({"dft": 0.5, "ccsd(t)//dft": 0.3})
    assert re.search(r"0\.30 at level ccsd\(t\)//dft, 0\.50 at level dft\.", text)
    assert "independently" in text
    assert "No rate used" in st.correlation_statement({})


def test_methods_agreement_sentence_quotes_both_sigmas():
    r = unc.propagate(lambda barrier_kj_mol, temperature_k: 1e12 * 10 ** (-barrier_kj_mol / 5.708),
                      {"barrier_kj_mol": unc.Normal(30.0, 5.708)}, fixed={"temperature_k": 298.15}, seed=1)
    text = st.methods_agreement_statement(r)
    sampled, linear = map(float, re.findall(r"(\d+\.\d\d) (?:sampled|linearized)", text))
    assert sampled == pytest.approx(r.half_width_68, abs=0.005)
    assert linear == pytest.approx(r.analytic_log10_sigma, abs=0.005)
    assert linear == pytest.approx(1.0, abs=0.01) and text.startswith("Monte Carlo and first-order propagation agree")


def test_disagreement_sentence_quotes_the_end_difference():
    # exponent quadratic in the input: sampled and linearized intervals differ, the sentence says by how much
    r = unc.propagate(lambda x, temperature_k: 10 ** (8 - 0.5 * x**2), {"x": unc.Normal(1.0, 1.0)},
                      fixed={"temperature_k": 298.15}, seed=2)
    text = st.methods_agreement_statement(r)
    assert not r.methods_agree and "disagree" in text
    diff = float(re.search(r"differ by up to (\d+\.\d\d) decade", text)[1])
    assert diff == pytest.approx(r.max_end_difference_log10, abs=0.005) and diff > 0.3
