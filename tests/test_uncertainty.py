"""Uncertainty propagation: Monte Carlo against the closed-form result, seeds, correlation,
the analytic check, and validation of the manifest's [uncertainty] table."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as c
from scipy import stats

from dossier.science import uncertainty as unc
from dossier.errors import ManifestError

T = 298.15


def eyring_textbook(barrier_kj_mol, temperature_k):
    """Eyring's equation written here from the textbook form with CODATA constants
    (scipy.constants), independent of dossier.marcus: k = (k_B T / h) exp(-dG / RT)."""
    g = np.asarray(barrier_kj_mol, dtype=float) * 1000.0
    return c.k * temperature_k / c.h * np.exp(-g / (c.R * temperature_k))


def analytic_sigma_log10(sigma_kj_mol, temperature_k):
    # sigma(log10 k) = sigma(dG) / (RT ln 10) for k = A exp(-dG/RT) with normal dG (exact)
    return sigma_kj_mol * 1000.0 / (c.R * temperature_k * math.log(10.0))


def test_sensitivity_is_rt_ln10_from_codata():
    # RT ln 10 at 298.15 K from scipy.constants: 5.708 kJ/mol per decade
    assert unc.sensitivity_kj_mol_per_decade(T) == pytest.approx(c.R * T * math.log(10) / 1000.0, rel=1e-12)
    assert unc.sensitivity_kj_mol_per_decade(T) == pytest.approx(5.708, abs=1e-3)


@pytest.mark.parametrize("sigma", [4.0, 8.0, 15.0])
def test_one_normal_barrier_mc_matches_closed_form(sigma):
    barrier = 45.0
    r = unc.propagate(eyring_textbook, {"barrier_kj_mol": unc.Normal(barrier, sigma)},
                      fixed={"temperature_k": T}, samples=20000, seed=11)
    s = analytic_sigma_log10(sigma, T)
    centre = math.log10(eyring_textbook(barrier, T))
    se = r.sampling_error_log10
    assert 0 < se < 0.05 * s
    # MC quantiles against the exact normal quantiles of log10 k, within 4 sampling errors
    z68 = stats.norm.ppf(stats.norm.cdf(1.0))
    assert r.log10_rate_interval_68[0] == pytest.approx(centre - z68 * s, abs=4 * se)
    assert r.log10_rate_interval_68[1] == pytest.approx(centre + z68 * s, abs=4 * se)
    assert r.log10_rate_interval_95[0] == pytest.approx(centre - 1.959964 * s, abs=4 * se)
    assert r.log10_rate_interval_95[1] == pytest.approx(centre + 1.959964 * s, abs=4 * se)
    assert r.log10_rate_median == pytest.approx(centre, abs=4 * se)
    # the first-order check is exact for this linear case
    assert r.analytic_log10_sigma == pytest.approx(s, rel=1e-6)
    assert r.methods_agree
    assert r.sensitivity_kj_mol_per_decade == pytest.approx(c.R * T * math.log(10) / 1000.0)
    assert r.input_sensitivities["barrier_kj_mol"]["decades_per_unit"] == pytest.approx(-s / sigma, rel=1e-6)


def test_sampling_error_estimate_is_honest():
    # spread of the 68 % lower end over independent seeds ~ the reported sampling error
    ends = []
    reported = []
    for seed in range(12):
        r = unc.propagate(eyring_textbook, {"barrier_kj_mol": unc.Normal(40.0, 8.0)},
                          fixed={"temperature_k": T}, samples=4000, seed=seed)
        ends.append(r.log10_rate_interval_68[0])
        reported.append(r.sampling_error_log10)
    spread = float(np.std(ends, ddof=1))
    assert 0.4 * np.mean(reported) < spread < 2.5 * np.mean(reported)


def test_same_seed_same_numbers_different_seed_within_sampling_error():
    args = dict(fixed={"temperature_k": T}, samples=20000)
    inputs = {"barrier_kj_mol": unc.Normal(30.0, 8.0)}
    a = unc.propagate(eyring_textbook, inputs, seed=5, **args)
    b = unc.propagate(eyring_textbook, inputs, seed=5, **args)
    d = unc.propagate(eyring_textbook, inputs, seed=6, **args)
    assert a.log10_rate_interval_68 == b.log10_rate_interval_68
    assert a.log10_rate_interval_95 == b.log10_rate_interval_95
    assert a.log10_rate_median == b.log10_rate_median
    assert a.log10_rate_interval_68 != d.log10_rate_interval_68
    tol = 4 * math.sqrt(a.sampling_error_log10**2 + d.sampling_error_log10**2)
    for x, y in zip(a.log10_rate_interval_68 + a.log10_rate_interval_95, d.log10_rate_interval_68 + d.log10_rate_interval_95):
        assert abs(x - y) < tol


def test_draws_do_not_depend_on_other_inputs():
    # the barrier's draws are keyed by its name: adding an unused fixed argument changes nothing
    a = unc.propagate(eyring_textbook, {"barrier_kj_mol": unc.Normal(30.0, 8.0)}, fixed={"temperature_k": T}, seed=1)

    def with_extra(barrier_kj_mol, temperature_k, coupling_cm1):
        return eyring_textbook(barrier_kj_mol, temperature_k) * np.ones_like(coupling_cm1)

    b = unc.propagate(with_extra, {"barrier_kj_mol": unc.Normal(30.0, 8.0), "coupling_cm1": unc.LogNormal(100.0, 0.0)},
                      fixed={"temperature_k": T}, seed=1)
    assert a.log10_rate_interval_68 == pytest.approx(b.log10_rate_interval_68, abs=1e-12)


def test_correlated_energies_partly_cancel():
    # k depends on the difference barrier - dG0: Var = s1^2 + s2^2 - 2 rho s1 s2 (standard result)
    def rate(barrier_kj_mol, delta_g0_kj_mol, temperature_k):
        return eyring_textbook(barrier_kj_mol - delta_g0_kj_mol, temperature_k)

    inputs = {"barrier_kj_mol": unc.Normal(40.0, 8.0), "delta_g0_kj_mol": unc.Normal(-5.0, 8.0)}
    for rho in (0.0, 0.5, 0.9):
        r = unc.propagate(rate, inputs, fixed={"temperature_k": T}, seed=3,
                          correlations={("barrier_kj_mol", "delta_g0_kj_mol"): rho})
        expected = analytic_sigma_log10(math.sqrt(2 * 64.0 * (1 - rho)), T)
        assert r.analytic_log10_sigma == pytest.approx(expected, rel=1e-5)
        assert r.half_width_68 == pytest.approx(expected, abs=4 * r.sampling_error_log10 + 1e-9)
        assert r.methods_agree


def test_nonlinear_rate_flagged_when_linearization_fails():
    # a Marcus-type exponent (lambda + dG0)^2 / (4 lambda RT) at the top of the parabola
    # (dG0 = -lambda): first derivative in dG0 vanishes, the linearized sigma is ~0, MC is not
    def marcus_exponent(delta_g0_kj_mol, reorganization_energy_kj_mol, temperature_k):
        rt = c.R * temperature_k / 1000.0
        return 1e9 * np.exp(-((reorganization_energy_kj_mol + delta_g0_kj_mol) ** 2) / (4 * reorganization_energy_kj_mol * rt))

    r = unc.propagate(marcus_exponent, {"delta_g0_kj_mol": unc.Normal(-80.0, 20.0)},
                      fixed={"reorganization_energy_kj_mol": 80.0, "temperature_k": T}, seed=2)
    assert r.analytic_log10_sigma < 1e-3
    assert r.half_width_68 > 0.1
    assert not r.methods_agree


def test_lognormal_from_relative_has_that_coefficient_of_variation():
    # log-normal moments (any statistics text): CV = sqrt(exp(s^2) - 1)
    d = unc.LogNormal.from_relative(100.0, 0.3)
    x = d.from_scores(np.random.default_rng(0).standard_normal(200000))
    assert np.median(x) == pytest.approx(100.0, rel=0.01)
    assert x.std() / x.mean() == pytest.approx(0.3, rel=0.02)
    assert x.min() > 0


def test_bad_sample_count_and_bad_correlation():
    with pytest.raises(ValueError, match="samples"):
        unc.propagate(eyring_textbook, {"barrier_kj_mol": unc.Normal(1, 1)}, fixed={"temperature_k": T}, samples=10)
    with pytest.raises(ValueError, match="outside"):
        unc.propagate(eyring_textbook, {"barrier_kj_mol": unc.Normal(1, 1), "x": unc.Normal(0, 1)},
                      fixed={"temperature_k": T}, correlations={("barrier_kj_mol", "x"): 1.5})


def test_model_defaults_and_manifest_values():
    m = unc.model_from_manifest({"levels": {"dft": {"relative_energy_kj_mol": 8.0}}}, recipes=["dft", "ccsd(t)//dft"])
    assert m.energy_assumption("dft").sigma == 8.0
    assert m.energy_assumption("dft").set_in == "manifest"
    cc = m.energy_assumption("ccsd(t)//dft")
    assert cc.set_in == "default" and cc.sigma == unc.ENERGY_DEFAULTS["coupled-cluster"][0]
    assert "from memory" in cc.source
    assert unc.classify_level("dft", "BHLYP/6-31G*") == "hybrid-dft"
    assert unc.classify_level("x", "PBE0/def2-TZVP") == "hybrid-dft"
    assert unc.classify_level("x", "PBE/def2-SVP") == "gga-dft"
    assert unc.classify_level("x", "GFN2-xTB") == "semiempirical"
    assert unc.classify_level("mp2//dft") == "mp2"
    assert unc.classify_level("x", "HF/STO-3G") == "hartree-fock"
    # every default names where it comes from
    for table in (unc.ENERGY_DEFAULTS, unc.PARAMETER_DEFAULTS, unc.EXPERIMENT_DEFAULTS):
        for sigma, source in table.values():
            assert sigma > 0 and ("from memory" in source or "no source" in source or "no benchmark" in source)


def test_rate_inputs_correlate_same_level_only():
    m = unc.model_from_manifest({"levels": {"dft": {"relative_energy_kj_mol": 8.0, "correlation": 0.4}}})
    inputs, corr = m.rate_inputs(
        {"barrier_kj_mol": 40.0, "delta_g0_kj_mol": -3.0, "coupling_cm1": 200.0, "temperature_k": T},
        levels={"barrier_kj_mol": "dft", "delta_g0_kj_mol": "dft"})
    assert corr == {("barrier_kj_mol", "delta_g0_kj_mol"): 0.4}
    assert isinstance(inputs["coupling_cm1"], unc.LogNormal)
    assert inputs["temperature_k"] == T
    _, corr2 = m.rate_inputs({"barrier_kj_mol": 40.0, "delta_g0_kj_mol": -3.0},
                             levels={"barrier_kj_mol": "dft", "delta_g0_kj_mol": "ccsd(t)//dft"})
    assert corr2 == {}
    text = m.to_dict()["correlation"]
    assert "0.40" in text and "dft" in text


def test_annotate_rate_gives_the_json_keys():
    m = unc.model_from_manifest({"samples": 5000, "seed": 7, "levels": {"dft": {"relative_energy_kj_mol": 5.708}}})
    d = m.annotate_rate(eyring_textbook, {"barrier_kj_mol": 40.0, "temperature_k": T}, levels={"barrier_kj_mol": "dft"})
    lo, hi = d["log10_rate_interval_68"]
    assert hi - lo == pytest.approx(2 * analytic_sigma_log10(5.708, T), abs=0.05)  # sigma = RT ln10 -> 1 decade
    assert len(d["log10_rate_interval_95"]) == 2
    assert d["sensitivity_kj_mol_per_decade"] == pytest.approx(5.708, abs=1e-3)
    assert d["statement"].startswith("k(298.15 K) = 10^(")
    summary = m.to_dict()
    assert summary["samples"] == 5000 and summary["seed"] == 7
    assert summary["assumptions"][0]["sigma"] == 5.708


@pytest.mark.parametrize("table, fragment", [
    ({"samples": 10}, "samples"),
    ({"samples": 2.5}, "samples"),
    ({"seed": -1}, "seed"),
    ({"levels": {"dft": {"relative_energy_kj_mol": -1}}}, "greater than 0"),
    ({"levels": {"dft": {"relative_energy_kj_mol": "8"}}}, "must be a number"),
    ({"levels": {"dft": {"sigma": 8}}}, "unknown key 'sigma'"),
    ({"levels": {"dtf": {"relative_energy_kj_mol": 8}}}, "names no recipe"),
    ({"levels": {"dft": {"relative_energy_kj_mol": 8, "correlation": 1.5}}}, "from 0 to 1"),
    ({"parameters": {"coupling_fraction": 0.3, "coupling_cm1": 50}}, "both as a fraction"),
    ({"parameters": {"lambda_fraction": 0.3}}, "unknown key"),
    ({"samlpes": 100}, "unknown key 'samlpes'"),
    ({"experiment": {"rate_fraction": 0}}, "greater than 0"),
])
def test_bad_uncertainty_table_is_one_line_manifest_error(table, fragment):
    with pytest.raises(ManifestError) as info:
        unc.model_from_manifest(table, recipes=["dft"], where_of=lambda *k: "dossier.toml:42")
    text = str(info.value)
    assert fragment in text and "\n" not in text and text.startswith("dossier.toml:42: ")


def test_through_the_analysis_rate_functions():
    # dossier.marcus's Eyring must give the same interval as the textbook form above
    marcus = pytest.importorskip("dossier.science.marcus")
    inputs = {"barrier_kj_mol": unc.Normal(35.0, 8.0)}
    a = unc.propagate(marcus.eyring_rate_per_s, inputs, fixed={"temperature_k": T}, seed=9)
    b = unc.propagate(eyring_textbook, inputs, fixed={"temperature_k": T}, seed=9)
    assert a.log10_rate_interval_95 == pytest.approx(b.log10_rate_interval_95, abs=1e-9)
    # nonadiabatic Marcus with three uncertain inputs runs vectorized and is finite
    m = unc.UncertaintyModel()
    d = m.annotate_rate(marcus.marcus_nonadiabatic_rate_per_s,
                        {"coupling_cm1": 300.0, "reorganization_energy_kj_mol": 90.0, "delta_g0_kj_mol": 0.0,
                         "temperature_k": T}, levels={"delta_g0_kj_mol": "dft"})
    lo, hi = d["log10_rate_interval_95"]
    assert lo < d["log10_rate_median"] < hi
    assert d["uncertainty"]["n_invalid"] == 0


def test_annotate_rate_reports_instead_of_failing_on_a_zero_rate():
    # a zero coupling gives a zero nonadiabatic rate at every sample (k proportional to H_ab^2)
    def golden_rule_like(coupling_cm1, temperature_k):
        return np.asarray(coupling_cm1, dtype=float) ** 2 * temperature_k

    d = unc.UncertaintyModel(samples=2000).annotate_rate(golden_rule_like, {"coupling_cm1": 0.0, "temperature_k": T})
    assert d["log10_rate_interval_68"] is None and d["statement"].startswith("no interval could be computed")
    assert d["sensitivity_kj_mol_per_decade"] == pytest.approx(5.708, abs=1e-3)


def test_route_defaults_and_manifest_route_override():
    m = unc.model_from_manifest({"routes": {"four-point": {"reorganization_energy_fraction": 0.05}}})
    d = m.reorganization_distribution(100.0, "four-point")
    assert d.sigma_ln == pytest.approx(math.sqrt(math.log1p(0.05**2)))
    v = m.reorganization_distribution(100.0, "vertical-excitation")  # absolute default: a normal
    assert isinstance(v, unc.Normal) and v.sigma == unc.ROUTE_DEFAULTS["vertical-excitation"]["reorganization_energy_kj_mol"][0]
    h = m.coupling_distribution(500.0, "two-state-from-barrier")
    assert h.sigma_ln == pytest.approx(math.sqrt(math.log1p(0.5**2)))
    listed = {(a["quantity"], a["applies_to"], a["set_in"]) for a in m.to_dict()["assumptions"]}
    assert ("reorganization energy", "route four-point", "manifest") in listed
    assert ("electronic coupling", "route two-state-from-barrier", "default") in listed


def test_mc_quantiles_through_marcus_equal_the_mapped_input_quantiles():
    # for a rate monotonic in its one uncertain input, quantiles map through exactly:
    # q_p(log10 k) = log10 k(dG0 at q_(1-p)) when k falls as dG0 rises (normal Marcus region)
    marcus = pytest.importorskip("dossier.science.marcus")
    lam, mu, sigma = 100.0, 0.0, 8.0  # dG0 + lambda stays positive over +-6 sigma
    fixed = {"coupling_cm1": 200.0, "reorganization_energy_kj_mol": lam, "temperature_k": T}
    r = unc.propagate(marcus.marcus_nonadiabatic_rate_per_s, {"delta_g0_kj_mol": unc.Normal(mu, sigma)},
                      fixed=fixed, seed=13)

    def log10k(dg0):
        return math.log10(marcus.marcus_nonadiabatic_rate_per_s(delta_g0_kj_mol=dg0, **fixed))

    lo68 = log10k(mu + sigma * stats.norm.ppf(1 - unc.QUANTILES_68[0]))
    hi95 = log10k(mu + sigma * stats.norm.ppf(1 - unc.QUANTILES_95[1]))
    # sampling error in log10 k units, plus a little for the curvature inside one SE
    assert r.log10_rate_interval_68[0] == pytest.approx(lo68, abs=4 * r.sampling_error_log10)
    assert r.log10_rate_interval_95[1] == pytest.approx(hi95, abs=4 * r.sampling_error_log10)
    # first order: d log10 k / d dG0 = -(lambda + dG0) / (2 lambda RT ln 10) at the centre
    rt = c.R * T / 1000.0
    assert r.analytic_log10_sigma == pytest.approx((lam + mu) * sigma / (2 * lam * rt * math.log(10)), rel=1e-4)


# --- issue 12: the barrier's level error in every model; intervals that do not depend on the sampling ----
def test_eyring_interval_is_the_exact_analytic_one():
    """log10 k_Eyring = const - dG / (RT ln 10) is linear in a normal barrier, so log10 k is normal with
    sigma / (RT ln 10) (Eyring 1935; R from CODATA via scipy.constants): the printed interval is that, exactly."""
    from scipy import constants as C

    from dossier.science import rates
    from dossier.science.uncertainty import UncertaintyModel, log_linear_in_scores

    model = UncertaintyModel()
    t = 298.15
    sigma = model.energy_assumption("dft", kind="barrier", level_label="BHLYP/6-31G*").sigma
    out = model.annotate_rate(rates.eyring_rate_per_s, {"barrier_kj_mol": 50.0, "temperature_k": t},
                              levels={"barrier_kj_mol": "dft"}, level_labels={"dft": "BHLYP/6-31G*"})
    central = math.log10(C.k * t / C.h) - 50.0e3 / (C.R * t * math.log(10))
    half = sigma * 1e3 / (C.R * t * math.log(10))
    assert out["log10_rate_median"] == pytest.approx(central, abs=1e-4)
    assert out["log10_rate_interval_68"] == pytest.approx([central - half, central + half], abs=1e-4)
    assert out["uncertainty"]["interval_method"].startswith("analytic")
    inputs = model.rate_inputs({"barrier_kj_mol": 50.0, "temperature_k": t}, levels={"barrier_kj_mol": "dft"})[0]
    assert log_linear_in_scores(rates.eyring_rate_per_s, inputs)


def test_every_model_carries_the_barrier_error_and_settled_ends():
    """The golden-rule rate gets the barrier's level sigma through barrier_shift_kj_mol; its Monte Carlo ends are
    settled: a run with another seed moves them by less than 0.02 decade."""
    from dossier.science import rates
    from dossier.science.uncertainty import UncertaintyModel, log_linear_in_scores

    values = {"coupling_cm1": 300.0, "reorganization_energy_kj_mol": 80.0, "delta_g0_kj_mol": -5.0,
              "temperature_k": 298.15, "barrier_shift_kj_mol": 0.0}
    levels = {"delta_g0_kj_mol": "dft", "barrier_shift_kj_mol": "dft"}
    routes = {"reorganization_energy_kj_mol": "four-point", "coupling_cm1": "half-splitting-at-ts"}
    a = UncertaintyModel(seed=1).annotate_rate(rates.marcus_nonadiabatic_rate_per_s, values, levels=levels, routes=routes)
    b = UncertaintyModel(seed=2).annotate_rate(rates.marcus_nonadiabatic_rate_per_s, values, levels=levels, routes=routes)
    assert "barrier_shift_kj_mol" in a["uncertainty"]["inputs"]
    ends_a = a["log10_rate_interval_68"] + a["log10_rate_interval_95"]
    ends_b = b["log10_rate_interval_68"] + b["log10_rate_interval_95"]
    assert max(abs(x - y) for x, y in zip(ends_a, ends_b)) < 0.02
    assert a["uncertainty"]["interval_method"].startswith("Monte Carlo")
    inputs = UncertaintyModel().rate_inputs(values, levels=levels, routes=routes)[0]
    assert not log_linear_in_scores(rates.marcus_nonadiabatic_rate_per_s, inputs)  # quadratic in lambda
    # the barrier shift alone widens log10 k by exactly sigma / (RT ln 10), as for Eyring
    only = UncertaintyModel().annotate_rate(rates.marcus_nonadiabatic_rate_per_s, values,
                                           levels={"barrier_shift_kj_mol": "dft"},
                                           exact={"delta_g0_kj_mol", "reorganization_energy_kj_mol", "coupling_cm1"})
    sigma = UncertaintyModel().energy_assumption("dft", kind="barrier").sigma
    lo, hi = only["log10_rate_interval_68"]
    from scipy import constants as C

    assert 0.5 * (hi - lo) == pytest.approx(sigma * 1e3 / (C.R * 298.15 * math.log(10)), abs=2e-4)  # CODATA R
