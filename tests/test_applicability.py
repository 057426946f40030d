"""Where each rate model holds (dossier.science.applicability) and which rate a pathway quotes
(dossier.analysis.decisions.headline)."""
from __future__ import annotations

import math

import pytest
from scipy import constants as C

from dossier.analysis import decisions
from dossier.analysis.rates import _RateInputs, _rate_entry
from dossier.science import applicability as ap

KJ_MOL_PER_CM1 = C.h * C.c * 100 * C.N_A / 1000  # CODATA via scipy.constants


def _rt(t: float) -> float:
    return C.R * t / 1000


def _nu_el_independent(h_cm1: float, lam_kj_mol: float, t: float) -> float:
    """nu_el = (H_ab^2 / hbar) (pi / (lambda k_B T))^1/2 (Newton & Sutin, Annu. Rev. Phys. Chem. 1984, 35, 437,
    eq. 3.9, from memory), evaluated here from CODATA constants only."""
    h = h_cm1 * C.h * C.c * 100
    lam = lam_kj_mol * 1000 / C.N_A
    return h**2 / C.hbar * math.sqrt(math.pi / (lam * C.k * t))


def test_landau_zener_regimes_of_a_worked_example():
    """Newton & Sutin 1984 (from memory): for lambda ~ 1 eV and nu_n ~ 1e13 s-1 at room temperature, coupling of a
    few tens of cm-1 is nonadiabatic (kappa_el << 1) and a few hundred cm-1 is adiabatic (kappa_el -> 1), with
    2 pi gamma = nu_el / (2 nu_n), P = 1 - exp(-2 pi gamma) and kappa_el = 2P / (1 + P)."""
    lam = C.eV * C.N_A / 1000  # 1 eV in kJ/mol
    nu_n_cm1 = 1e13 / (C.c * 100)
    t = 298.15
    for h_cm1 in (20.0, 200.0, 600.0):
        gamma = _nu_el_independent(h_cm1, lam, t) / (2 * 1e13)
        p = 1 - math.exp(-gamma)
        kappa = 2 * p / (1 + p)
        v = ap.golden_rule_verdict(h_cm1, lam, t, nu_n_cm1, effective_kappa=kappa)
        got = next(c["value"] for c in v["criteria"] if c["criterion"] == "nonadiabatic_passage")
        assert got == pytest.approx(gamma, rel=1e-9)
        assert v["valid"] is (gamma < 1)
        tst = ap.tst_verdict(40.0, t, landau_zener_parameter=got)
        assert tst["valid"] is (gamma >= 1)
    # the regimes of the recalled statement
    assert _nu_el_independent(20.0, lam, t) / 2e13 < 0.01
    assert _nu_el_independent(600.0, lam, t) / 2e13 > 4


def test_class_three_parameters_give_no_valid_golden_rule_rate_even_without_frequencies():
    """2 H_ab >= lambda: a single minimum, class III (Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168):
    the golden-rule rate is never valid, whether or not a nuclear frequency is known."""
    lam, hab = 50.0, 3500.0  # 2 H_ab / lambda = 1.67
    assert 2 * hab * KJ_MOL_PER_CM1 / lam > 1
    driving = {"route": "gibbs", "by_temperature": [{"temperature_k": 298.15, "value_kj_mol": 0.0}]}
    inp = _RateInputs(driving=driving, barrier=None, lam={"route": "four-point", "value_kj_mol": lam},
                      hab={"route": "half-splitting-at-ts", "value_cm1": hab}, mlj=None, nu_n_cm1=None, levels={})
    e = _rate_entry("marcus", 298.15, inp)
    assert e["validity"]["valid"] is False and e["validity"]["judged"] is False
    assert "2H_ab/lambda = 1.67 >= 1" in e["validity"]["note"]
    # a weak coupling and no frequency: not invalid by any criterion, but not judged either
    inp.hab = {"route": "half-splitting-at-ts", "value_cm1": 30.0}
    e = _rate_entry("marcus", 298.15, inp)
    assert e["validity"]["valid"] is False and e["validity"]["note"].startswith("cannot be judged: ")


def test_a_barrier_below_rt_gives_no_valid_tst_rate():
    """TST needs a barrier well above RT (the threshold 2 RT: common practice, no source). RT from CODATA R."""
    t = 298.15
    rt = _rt(t)
    barrier = {"route": "ts-gibbs", "by_temperature": [{"temperature_k": t, "value_kj_mol": 0.8 * rt}]}
    inp = _RateInputs(driving=None, barrier=barrier, lam=None, hab=None, mlj=None, nu_n_cm1=None, levels={})
    e = _rate_entry("eyring-tst", t, inp)
    assert e["rate_per_s"] == pytest.approx(C.k * t / C.h * math.exp(-0.8), rel=1e-9)  # Eyring, kappa = 1
    assert e["validity"]["valid"] is False and "0.80 RT" in e["validity"]["note"]
    assert ap.tst_verdict(-1.0, t)["valid"] is False and "negative" in ap.tst_verdict(-1.0, t)["note"]
    assert ap.tst_verdict(10 * rt, t)["valid"] is True
    # an electronic-only barrier cannot be judged (zero-point energy unknown)
    v = ap.tst_verdict(10 * rt, t, thermal=False)
    assert v["valid"] is False and v["note"].startswith("cannot be judged: ")


def test_adiabatic_model_needs_a_double_well_above_the_zero_point_level():
    """(1/2) h c nu of a harmonic mode (textbook zero-point energy, CODATA h and c)."""
    nu = 1000.0
    assert ap.zero_point_level_kj_mol(nu) == pytest.approx(0.5 * nu * KJ_MOL_PER_CM1, rel=1e-12)
    t = 298.15
    # lambda 60, dG0 0, H_ab 1500 cm-1: dG*_ad = 15 - 17.94 + 17.94^2 / 60 = 2.4 kJ/mol < 5.98 (zero-point level)
    low = ap.adiabatic_verdict(1500.0, 60.0, 0.0, t, nu)
    assert low["valid"] is False and "zero-point level" in low["note"]
    high = ap.adiabatic_verdict(100.0, 100.0, 0.0, t, nu)  # dG*_ad ~ 23.8 kJ/mol
    assert high["valid"] is True
    surface = ap.adiabatic_verdict(100.0, 100.0, 0.0, t, nu, surface_zpe_barrier_kj_mol=-3.7)
    assert surface["valid"] is False and "3.70 kJ/mol below the reactant" in surface["note"]


def test_vibrational_period():
    # 1000 cm-1 <-> 33.36 fs (period = 1 / (c nu~), CODATA c)
    assert ap.vibrational_period_fs(1000.0) == pytest.approx(1e15 / (C.c * 1e5), rel=1e-12)
    assert ap.vibrational_period_fs(1000.0) == pytest.approx(33.356, abs=1e-3)


def _entry(model, valid, t=298.15, k=1e6):
    return {"model": model, "temperature_k": t, "rate_per_s": k,
            "validity": {"valid": valid, "note": f"{model} {'holds' if valid else 'fails'}"}}


def test_headline_is_the_first_valid_model_of_the_stated_preference():
    pw = {"name": "p", "reactant": "a", "transition_state": "ts", "product": "b", "reference_temperature_k": 298.15,
          "rates": [_entry("eyring-tst", False), _entry("marcus", True, k=2e5), _entry("marcus", False, t=350.0),
                    _entry("marcus-hush-adiabatic", True)]}
    rate, reason, supported = decisions.headline(pw, [])
    assert rate["model"] == "marcus" and rate["rate_per_s"] == 2e5 and rate["rates_index"] == 1
    assert "marcus holds" in reason and supported is None
    pw["rates"][0]["validity"] = {"valid": True, "note": "ok"}
    assert decisions.headline(pw, [])[0]["model"] == "eyring-tst"
    # a check error on a state of the pathway: nothing is quoted
    rate, reason, _ = decisions.headline(pw, [{"severity": "error", "state": "ts", "code": "IMAG"}])
    assert rate is None and "ts" in reason
    # no valid model: null, the reason lists every verdict
    for r in pw["rates"]:
        r["validity"] = {"valid": False, "note": "fails"}
    rate, reason, supported = decisions.headline(pw, [])
    assert rate is None and reason.startswith("no rate model applies") and supported["statement"]


def test_invalid_rungs_do_not_enter_the_closest_rung_statement():
    """The ladder's "closest rung" is chosen among rungs whose model is valid at that temperature; the log10
    ratios are plain differences of log10 k (no outside number needed)."""
    from dossier.analysis.experiment import compare_ladder

    measured = [{"temperature_k": 298.15, "rate_per_s": 1e6, "log10_rate": 6.0}]
    pw = {"ladder": [
        {"recipe": "close-but-invalid", "rates": [dict(_entry("marcus", False, k=1.1e6))]},
        {"recipe": "far-valid", "rates": [dict(_entry("marcus", True, k=1e8))]},
        {"recipe": "farther-valid", "rates": [dict(_entry("marcus", True, k=1e9))]},
    ]}
    rows = compare_ladder(pw, measured)
    best = [r for r in rows if r["closest_to_experiment"]]
    assert [r["recipe"] for r in best] == ["far-valid"]
    assert best[0]["log10_ratio"] == pytest.approx(2.0)
    assert "far-valid comes closest" in best[0]["statement"] and "Of the 2 rungs" in best[0]["statement"]
    invalid = next(r for r in rows if r["recipe"] == "close-but-invalid")
    assert invalid["validity"] == {"valid": False, "note": "marcus fails"}


def test_rates_csv_has_the_verdict_and_the_json_note():
    from dossier.report.exports import CSV_TABLES

    header, rows_of = CSV_TABLES["rates.csv"]
    pw = {"name": "p", "rates": [_entry("marcus", False), _entry("eyring-tst", True)]}
    rows = [dict(zip(header, r)) for r in rows_of({"pathways": [pw]})]
    assert [(r["validity"], r["validity_note"]) for r in rows] == [("not valid", "marcus fails"),
                                                                  ("valid", "eyring-tst holds")]


def test_robin_day_borderline_when_zero_point_energy_removes_the_double_well():
    """Brunschwig, Creutz, Sutin, Chem. Soc. Rev. 2002, 31, 168 (from memory): class II when 2 H_ab < lambda (two
    minima), class III when 2 H_ab >= lambda (one minimum); a shallow double well whose barrier zero-point energy
    removes sits on the class II/III borderline."""
    hk = 1 / KJ_MOL_PER_CM1  # 1 kJ/mol in cm-1
    both = {"electronic": (1.5, 1.5), "electronic+zpe": (-3.7, -3.7), "gibbs": (-1.7, -1.7)}
    rd = ap.robin_day_assessment(36 * hk, 100.0, True, both)  # 2H_ab/lambda = 0.72
    assert rd["class"] == "II/III"
    assert rd["double_well_by_surface"] == {"E": True, "E+ZPE": False, "G": False}
    assert "class II from 2H_ab/lambda = 0.72 < 1" in rd["reason"] and "no double well on E+ZPE" in rd["reason"]
    deep = {k: (20.0, 20.0) for k in both}
    assert ap.robin_day_assessment(10 * hk, 100.0, True, deep)["class"] == "II"
    assert ap.robin_day_assessment(0.1 * hk, 100.0, True, deep)["class"] == "I"
    none = {k: (-5.0, -5.0) for k in both}
    assert ap.robin_day_assessment(60 * hk, 100.0, True, none)["class"] == "III"
    assert ap.robin_day_assessment(60 * hk, 100.0, True, deep)["class"] == "II/III"  # ratio 1.2 vs a deep well
    # reverse barrier: the saddle must lie above both minima
    assert ap.double_well_on(5.0, -1.0) is False and ap.double_well_on(None, 1.0) is None


def test_summary_states_nothing_about_a_pathway_whose_states_have_check_errors():
    from test_analysis import synthetic_project

    from dossier.analysis.assemble import analyse
    from dossier.analysis.decisions import add_headlines, report_choices
    from dossier.report.render import render_html, summary_view

    data = analyse(synthetic_project())
    assert data["pathways"][0]["headline_rate"] is not None  # a valid TST rate without errors
    data["checks"].append({"severity": "error", "state": "ts", "code": "IMAG", "message": "two imaginary modes",
                           "file": None})
    add_headlines(data)
    data["report"] = report_choices(data)
    pw = data["pathways"][0]
    assert pw["headline_rate"] is None and "ts" in pw["headline_reason"]
    (s,) = [x for x in summary_view(data) if x["pathway"]["name"] == pw["name"]]
    assert s["flagged"] == ["ts"]
    html_text = render_html(data, [])
    summary = html_text[html_text.index('id="summary"'):html_text.index("</section>", html_text.index('id="summary"'))]
    assert "so this summary states nothing about it" in summary and "Predicted rate" not in summary
