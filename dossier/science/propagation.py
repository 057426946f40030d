"""Propagation of uncertain inputs through the rate functions the analysis uses: the input
distributions, the Monte Carlo and first-order propagation, and the settling of interval ends.
The model that decides the inputs' sizes (manifest [uncertainty] with defaults) is in
dossier.science.uncertainty, which re-exports the names defined here.

A rate depends exponentially on an energy, so errors are carried in log10 k. Two methods:

- Monte Carlo: every uncertain input is drawn (seeded numpy Generator, vectorized), the rate
  function is called once on the sample arrays, and the median and the central 68 % and 95 %
  intervals of log10 k are read off the samples.
- First order ("delta method"): log10 k is linearized around the central values; its standard
  deviation is sqrt(g^T C g) with g the derivatives of log10 k with respect to each input's
  standard score and C the inputs' correlation matrix (e.g. Arras, "An introduction to error
  propagation", EPFL-ASL-TR-98-01, 1998, eq. 2.10; any statistics text).

For a rate k = A exp(-dG/RT) with a normally distributed dG both are exact and equal:
sigma(log10 k) = sigma(dG) / (RT ln 10). Where they disagree the rate is nonlinear in its
inputs over the spread (e.g. near the top of the Marcus parabola) and the Monte Carlo interval
is the one to use; the result says so.

Correlated inputs are drawn from correlated standard scores (the correlation matrix's Cholesky
factor times independent scores); the shared-error model behind the coefficients is described in
dossier.science.uncertainty.
"""
from __future__ import annotations

import math
import zlib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import stats

from dossier.units import rt_kj_mol

LN10 = math.log(10.0)

#: Central 68.27 % (one sigma of a normal) and 95 % intervals, as quantile pairs.
QUANTILES_68 = (float(stats.norm.cdf(-1.0)), float(stats.norm.cdf(1.0)))
QUANTILES_95 = (0.025, 0.975)
Z_95 = float(stats.norm.ppf(0.975))  # 1.959964: half-width of the central 95 % in sigmas

DEFAULT_SAMPLES = 20000
DEFAULT_SEED = 20261201
MIN_SAMPLES = 1000
MAX_SAMPLES = 5_000_000


# ---------------------------------------------------------------------------------------------
# distributions
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Normal:
    """A normally distributed input: mean and 1-sigma in the input's own unit."""

    mean: float
    sigma: float

    @property
    def central(self) -> float:
        return self.mean

    def from_scores(self, z: np.ndarray) -> np.ndarray:
        return self.mean + self.sigma * z

    def describe(self) -> str:
        return f"normal, mean {self.mean:.4g}, sigma {self.sigma:.3g}"


@dataclass(frozen=True)
class LogNormal:
    """A positive input whose logarithm is normal: median and sigma of ln(value).

    ``from_relative(value, f)`` gives the log-normal with median ``value`` whose coefficient of
    variation is ``f`` (sigma_ln = sqrt(ln(1 + f^2))), so a relative 1-sigma never produces a
    negative reorganization energy or coupling.
    """

    median: float
    sigma_ln: float

    @classmethod
    def from_relative(cls, value: float, relative_sigma: float) -> "LogNormal":
        if not value > 0:
            raise ValueError(f"a relative uncertainty needs a positive value, got {value!r}")
        return cls(float(value), math.sqrt(math.log1p(relative_sigma**2)))

    @property
    def central(self) -> float:
        return self.median

    def from_scores(self, z: np.ndarray) -> np.ndarray:
        return self.median * np.exp(self.sigma_ln * z)

    def describe(self) -> str:
        return f"log-normal, median {self.median:.4g}, sigma of ln {self.sigma_ln:.3g}"


Distribution = Normal | LogNormal


# ---------------------------------------------------------------------------------------------
# propagation
# ---------------------------------------------------------------------------------------------
@dataclass
class RateUncertainty:
    """What propagation found for one rate. Log10 values are of k in s-1."""

    temperature_k: float | None
    rate_per_s: float  # at the central values of every input
    log10_rate_central: float
    log10_rate_median: float
    log10_rate_interval_68: tuple[float, float]
    log10_rate_interval_95: tuple[float, float]
    analytic_log10_sigma: float
    analytic_interval_68: tuple[float, float]
    analytic_interval_95: tuple[float, float]
    sampling_error_log10: float  # standard error of the Monte Carlo interval ends
    methods_agree: bool
    max_end_difference_log10: float  # largest |MC - first order| over the four interval ends
    sensitivity_kj_mol_per_decade: float | None  # RT ln 10
    input_sensitivities: dict[str, dict[str, float]]  # per input: decades per unit, variance share
    samples: int
    seed: int
    n_invalid: int  # samples whose rate was not a positive finite number (dropped)
    inputs: dict[str, str] = field(default_factory=dict)  # name -> description of its distribution
    correlations: dict[str, float] = field(default_factory=dict)  # "a|b" -> rho

    @property
    def half_width_68(self) -> float:
        lo, hi = self.log10_rate_interval_68
        return 0.5 * (hi - lo)

    def to_dict(self) -> dict[str, Any]:
        """The keys a rate entry of dossier.json gains (docs/dossier-json.md), plus details."""
        from dossier.science.statements import rate_statement

        out: dict[str, Any] = {
            "log10_rate_interval_68": [_r(v) for v in self.log10_rate_interval_68],
            "log10_rate_interval_95": [_r(v) for v in self.log10_rate_interval_95],
            "log10_rate_median": _r(self.log10_rate_median),
            "sensitivity_kj_mol_per_decade": _r(self.sensitivity_kj_mol_per_decade),
            "statement": rate_statement(self.temperature_k, self.log10_rate_median, self.log10_rate_interval_68),
            "uncertainty": {
                "method": "Monte Carlo",
                "samples": self.samples,
                "seed": self.seed,
                "n_invalid": self.n_invalid,
                "sampling_error_log10": _r(self.sampling_error_log10),
                "log10_rate_central": _r(self.log10_rate_central),
                "analytic_log10_sigma": _r(self.analytic_log10_sigma),
                "analytic_interval_68": [_r(v) for v in self.analytic_interval_68],
                "analytic_interval_95": [_r(v) for v in self.analytic_interval_95],
                "methods_agree": self.methods_agree,
                "max_end_difference_log10": _r(self.max_end_difference_log10),
                "inputs": dict(self.inputs),
                "input_sensitivities": {k: {kk: _r(vv) for kk, vv in v.items()} for k, v in self.input_sensitivities.items()},
                "correlations": dict(self.correlations),
            },
        }
        from dossier.science.statements import methods_agreement_statement

        out["uncertainty"]["agreement_statement"] = methods_agreement_statement(self)
        if self.n_invalid:
            out["uncertainty"]["note"] = (f"{self.n_invalid} of {self.samples} samples gave no positive finite rate "
                                          "and were left out; the interval describes the others")
        return out


def _r(value: float | None, digits: int = 4) -> float | None:
    if value is None or not math.isfinite(float(value)):
        return None  # JSON has no NaN or infinity
    return round(float(value), digits)


def _stream_scores(seed: int, name: str, n: int) -> np.ndarray:
    """Standard normal scores for one input: depend only on (seed, input name, n).

    Keyed by name (crc32, stable across runs, unlike hash()), so adding an input to a rate
    function leaves the others' draws unchanged, and every temperature sees the same draws.
    """
    ss = np.random.SeedSequence([int(seed) & 0xFFFFFFFF, zlib.crc32(name.encode("utf-8"))])
    return np.random.Generator(np.random.PCG64(ss)).standard_normal(n)


def _correlation_matrix(names: list[str], correlations: Mapping[tuple[str, str], float] | None) -> np.ndarray:
    c = np.eye(len(names))
    index = {n: i for i, n in enumerate(names)}
    for (a, b), rho in (correlations or {}).items():
        if a not in index or b not in index:
            continue  # a pair whose inputs this rate does not use
        if a == b:
            raise ValueError(f"correlation of '{a}' with itself")
        if not -1.0 <= rho <= 1.0:
            raise ValueError(f"correlation of '{a}' and '{b}' is {rho}, outside [-1, 1]")
        c[index[a], index[b]] = c[index[b], index[a]] = float(rho)
    return c


def _cholesky(c: np.ndarray) -> np.ndarray:
    try:
        return np.linalg.cholesky(c)
    except np.linalg.LinAlgError:
        # positive semi-definite (e.g. rho = 1): eigen-decomposition with clipped eigenvalues
        w, v = np.linalg.eigh(c)
        if w.min() < -1e-9:
            raise ValueError("the correlation coefficients are not a valid correlation matrix") from None
        return v * np.sqrt(np.clip(w, 0.0, None))


def _log10_rate(rate_fn: Callable[..., Any], kwargs: Mapping[str, Any]) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
        k = np.asarray(rate_fn(**kwargs), dtype=float)
        return np.where((k > 0) & np.isfinite(k), np.log10(np.where(k > 0, k, 1.0)), np.nan)


def _split_inputs(
    inputs: Mapping[str, Distribution | float], fixed: Mapping[str, Any] | None
) -> tuple[dict[str, Distribution], dict[str, Any]]:
    """The uncertain inputs (Normal / LogNormal) and every other keyword argument, apart."""
    fixed_kwargs: dict[str, Any] = dict(fixed or {})
    dists: dict[str, Distribution] = {}
    for name, value in inputs.items():
        if isinstance(value, (Normal, LogNormal)):
            dists[name] = value
        else:
            fixed_kwargs[name] = value
    return dists, fixed_kwargs


def _monte_carlo(
    rate_fn: Callable[..., Any],
    dists: Mapping[str, Distribution],
    names: list[str],
    c: np.ndarray,
    fixed_kwargs: Mapping[str, Any],
    log10_central: float,
    samples: int,
    seed: int,
) -> tuple[np.ndarray, int, float]:
    """Sampled log10 k: its 2.5, 15.9, 50, 84.1 and 97.5 % quantiles, the number of invalid samples,
    and the standard error of the interval ends (spread of the same quantiles over 20 batches)."""
    if names:
        raw = np.stack([_stream_scores(seed, n, samples) for n in names])  # (d, n) independent
        z = _cholesky(c) @ raw  # correlated standard scores
        drawn = {n: dists[n].from_scores(z[i]) for i, n in enumerate(names)}
        logk = _log10_rate(rate_fn, {**fixed_kwargs, **drawn})
        logk = np.broadcast_to(logk, (samples,)) if logk.ndim == 0 else logk
    else:
        logk = np.full(samples, log10_central)
    valid = np.isfinite(logk)
    n_invalid = int(samples - valid.sum())
    good = logk[valid]
    if good.size < MIN_SAMPLES // 2:
        raise ValueError(f"only {good.size} of {samples} samples gave a positive finite rate")
    q = np.quantile(good, [QUANTILES_95[0], QUANTILES_68[0], 0.5, QUANTILES_68[1], QUANTILES_95[1]])
    batches = np.array_split(good, 20)
    bq = np.array([np.quantile(b, [QUANTILES_68[0], QUANTILES_68[1], QUANTILES_95[0], QUANTILES_95[1]]) for b in batches])
    sampling_error = float(bq.std(axis=0, ddof=1).max() / math.sqrt(len(batches)))
    return q, n_invalid, sampling_error


def _score_gradients(
    rate_fn: Callable[..., Any], dists: Mapping[str, Distribution], names: list[str], central: Mapping[str, Any]
) -> np.ndarray:
    """Derivatives of log10 k with respect to each input's standard score (central differences)."""
    grads = np.zeros(len(names))
    step = 1e-3
    for i, n in enumerate(names):
        up = {**central, n: dists[n].from_scores(np.float64(step))}
        dn = {**central, n: dists[n].from_scores(np.float64(-step))}
        grads[i] = (float(_log10_rate(rate_fn, up)) - float(_log10_rate(rate_fn, dn))) / (2 * step)
    return grads


def _input_sensitivities(
    dists: Mapping[str, Distribution], names: list[str], grads: np.ndarray, c: np.ndarray, variance: float
) -> dict[str, dict[str, float]]:
    """Per input: decades of k per unit (Normal) or per factor e (LogNormal), and its share of the variance."""
    sens: dict[str, dict[str, float]] = {}
    share_total = variance if variance > 0 else float("nan")
    for i, n in enumerate(names):
        d = dists[n]
        if isinstance(d, Normal):
            per_unit = grads[i] / d.sigma if d.sigma > 0 else 0.0
            sens[n] = {"decades_per_unit": float(per_unit)}
        else:
            per_ln = grads[i] / d.sigma_ln if d.sigma_ln > 0 else 0.0
            sens[n] = {"decades_per_factor_e": float(per_ln)}
        sens[n]["variance_share"] = float(grads[i] * (c[i] @ grads) / share_total) if share_total == share_total else 0.0
    return sens


def _compare_methods(
    q: np.ndarray, an68: tuple[float, float], an95: tuple[float, float], sigma_an: float, sampling_error: float
) -> tuple[bool, float]:
    """Whether the Monte Carlo and first-order interval ends agree, and their largest difference."""
    mc = np.array([q[1], q[3], q[0], q[4]])
    an = np.array([an68[0], an68[1], an95[0], an95[1]])
    tolerance = max(0.1, 0.2 * sigma_an) + 4.0 * sampling_error
    agree = bool(np.all(np.isfinite(an)) and np.all(np.abs(mc - an) <= tolerance))
    max_diff = float(np.max(np.abs(mc - an))) if np.all(np.isfinite(an)) else float("nan")
    return agree, max_diff


def propagate(
    rate_fn: Callable[..., Any],
    inputs: Mapping[str, Distribution | float],
    *,
    samples: int = DEFAULT_SAMPLES,
    seed: int = DEFAULT_SEED,
    correlations: Mapping[tuple[str, str], float] | None = None,
    fixed: Mapping[str, Any] | None = None,
) -> RateUncertainty:
    """Propagate uncertain inputs through ``rate_fn`` (numpy-broadcasting, keyword arguments).

    inputs: argument name -> Normal / LogNormal (uncertain) or a plain number (fixed).
    fixed: further keyword arguments passed unchanged (``temperature_k`` among them gives the
    sensitivity RT ln 10 at that temperature).
    correlations: {(name_a, name_b): rho} between the inputs' standard scores (see module doc).
    Returns a RateUncertainty; raises ValueError for a bad sample count or correlation set.
    """
    samples = int(samples)
    if not MIN_SAMPLES <= samples <= MAX_SAMPLES:
        raise ValueError(f"samples must be between {MIN_SAMPLES} and {MAX_SAMPLES}, got {samples}")
    dists, fixed_kwargs = _split_inputs(inputs, fixed)
    names = sorted(dists)
    temperature_k = fixed_kwargs.get("temperature_k")
    temperature_k = float(temperature_k) if np.ndim(temperature_k) == 0 and temperature_k is not None else None

    c = _correlation_matrix(names, correlations)
    central = {**fixed_kwargs, **{n: d.central for n, d in dists.items()}}
    log10_central = float(_log10_rate(rate_fn, central))
    q, n_invalid, sampling_error = _monte_carlo(rate_fn, dists, names, c, fixed_kwargs, log10_central, samples, seed)

    grads = _score_gradients(rate_fn, dists, names, central)
    variance = float(grads @ c @ grads)
    sigma_an = math.sqrt(max(variance, 0.0)) if math.isfinite(variance) else float("nan")
    an68 = (log10_central - sigma_an, log10_central + sigma_an)
    an95 = (log10_central - Z_95 * sigma_an, log10_central + Z_95 * sigma_an)
    agree, max_diff = _compare_methods(q, an68, an95, sigma_an, sampling_error)

    pairs = {f"{a}|{b}": float(c[names.index(a), names.index(b)]) for a in names for b in names if a < b and c[names.index(a), names.index(b)] != 0.0}
    return RateUncertainty(
        temperature_k=temperature_k,
        rate_per_s=10.0**log10_central if math.isfinite(log10_central) else float("nan"),
        log10_rate_central=log10_central,
        log10_rate_median=float(q[2]),
        log10_rate_interval_68=(float(q[1]), float(q[3])),
        log10_rate_interval_95=(float(q[0]), float(q[4])),
        analytic_log10_sigma=sigma_an,
        analytic_interval_68=an68,
        analytic_interval_95=an95,
        sampling_error_log10=sampling_error,
        methods_agree=agree,
        max_end_difference_log10=max_diff,
        sensitivity_kj_mol_per_decade=sensitivity_kj_mol_per_decade(temperature_k) if temperature_k else None,
        input_sensitivities=_input_sensitivities(dists, names, grads, c, variance),
        samples=samples,
        seed=int(seed),
        n_invalid=n_invalid,
        inputs={n: d.describe() for n, d in dists.items()},
        correlations=pairs,
    )


def sensitivity_kj_mol_per_decade(temperature_k: float) -> float:
    """Free-energy change that moves an Arrhenius/Eyring-type rate by a factor of ten: RT ln 10.

    From k = A exp(-dG/RT) (Eyring, J. Chem. Phys. 1935, 3, 107): d log10 k / d dG = -1/(RT ln 10).
    5.708 kJ/mol at 298.15 K.
    """
    return rt_kj_mol(temperature_k) * LN10


#: Interval ends printed from the Monte Carlo must be settled: their standard error (from 20 batches) at most
#: this, so that a rerun with another seed moves them by less than 0.02 decade (2 standard errors).
END_ERROR_TARGET_LOG10 = 0.01
#: The most samples one rate may get while settling its interval ends: SETTLING_FACTOR times the configured
#: sample count, and never more than MAX_SETTLING_SAMPLES (20 x the default 20,000 = 400,000).
SETTLING_FACTOR = 20
MAX_SETTLING_SAMPLES = 400_000


def log_linear_in_scores(rate_fn: Callable[..., Any], inputs: Mapping[str, Any], tol_log10: float = 1e-6) -> bool:
    """True when log10 k is linear in the standard scores of every uncertain input (e.g. the Eyring rate in a
    normal barrier, or a power of a log-normal coupling): then log10 k is exactly normal, and the first-order
    interval is exact. Tested at +-1 and +-2 scores per input and with all inputs at +1 together."""
    dists = {n: d for n, d in inputs.items() if isinstance(d, (Normal, LogNormal))}
    if not dists:
        return True
    fixed = {n: v for n, v in inputs.items() if n not in dists}

    def at(scores: Mapping[str, float]) -> float:
        vals = {n: d.from_scores(np.float64(scores.get(n, 0.0))) for n, d in dists.items()}
        return float(_log10_rate(rate_fn, {**fixed, **vals}))

    c0 = at({})
    slopes = {}
    for n in dists:
        up, dn, up2 = at({n: 1.0}), at({n: -1.0}), at({n: 2.0})
        slopes[n] = 0.5 * (up - dn)
        if not all(map(math.isfinite, (c0, up, dn, up2))) or abs(up + dn - 2 * c0) > tol_log10 \
                or abs(up2 - c0 - 2 * slopes[n]) > tol_log10:
            return False
    return abs(at({n: 1.0 for n in dists}) - c0 - sum(slopes.values())) <= tol_log10


def _settled(rate_fn: Callable[..., Any], inputs: Mapping[str, Any], corr, samples: int, seed: int) -> dict[str, Any]:
    """Rate-entry keys with intervals that do not depend on the sampling: the analytic interval where log10 k is
    linear in the inputs' scores (exact), else Monte Carlo with enough samples that the ends' standard error is
    at most END_ERROR_TARGET_LOG10 (up to SETTLING_FACTOR x samples, at most MAX_SETTLING_SAMPLES)."""
    from dataclasses import replace

    result = propagate(rate_fn, inputs, samples=samples, seed=seed, correlations=corr)
    if log_linear_in_scores(rate_fn, inputs) and all(map(math.isfinite, result.analytic_interval_95)):
        result = replace(result, log10_rate_median=result.log10_rate_central,
                         log10_rate_interval_68=result.analytic_interval_68,
                         log10_rate_interval_95=result.analytic_interval_95)
        out = result.to_dict()
        out["uncertainty"]["interval_method"] = ("analytic: log10 k is linear in the inputs' standard scores, so it is "
                                                 "normal and the first-order interval is exact (Monte Carlo kept as a check)")
        return out
    if result.sampling_error_log10 > END_ERROR_TARGET_LOG10:
        need = int(math.ceil(samples * 1.2 * (result.sampling_error_log10 / END_ERROR_TARGET_LOG10) ** 2))
        cap = min(SETTLING_FACTOR * samples, MAX_SETTLING_SAMPLES)
        result = propagate(rate_fn, inputs, samples=min(max(need, samples), cap), seed=seed, correlations=corr)
    out = result.to_dict()
    settled = result.sampling_error_log10 <= END_ERROR_TARGET_LOG10
    out["uncertainty"]["interval_method"] = (
        f"Monte Carlo, {result.samples} samples: interval ends settled to a standard error of "
        f"{result.sampling_error_log10:.3f} decade" + ("" if settled else
                                                       f" (above the {END_ERROR_TARGET_LOG10} target at the sample cap)"))
    return out
