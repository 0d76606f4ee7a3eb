"""Tests of the data-snooping tests (reality check, SPA, StepM).

Verified against an outside reference
- ``reality_check``: equals the "upper" p-value of ``arch.bootstrap.SPA`` (arch 8, Sheppard) on the
  same bootstrap indices with arch's counting, exactly (White 2000 is arch's "upper" SPA).
- ``superior_predictive_ability(scale="none")``: equals arch's lower / consistent / upper
  p-values (``SPA(..., nested=True)``, same indices, arch's counting) and arch's variances.
- ``superior_predictive_ability(scale="bootstrap")`` (which arch does not offer): equals a slow
  literal loop over resamples and configurations of Hansen (2005), eqs. 6 and 9.
- ``scale="long-run"`` (the default): its statistics equal the t-ratio against
  ``arch.covariance.kernel.Bartlett`` on the prewhitened series, recoloured, read against scipy's
  Student t and put on the normal scale by scipy's normal; its null draws are those of
  ``scale="bootstrap"``.
- ``stepwise_superior(scale="none", recentring="consistent", counting="strict-share")``: equals
  ``arch.bootstrap.StepM(..., nested=True)`` on the same indices; with ``recentring="upper"`` it
  equals arch's StepM on data where every configuration is relevant (the two rules coincide).
- ``stepwise_superior(scale="bootstrap")`` (default counting): equals a slow literal loop of Romano
  and Wolf (2005), Algorithm 3.1.
- All three: size under the null (no edge anywhere; iid and AR(1) windows, correlated
  configurations, fat tails) within a binomial tolerance of the 5% level, and power with one real
  edge (theory: a level-alpha test rejects a true null at most alpha of the time).

Equation and algorithm numbers of the papers are cited from memory.

Internal consistency only
- ``pvalue_lower <= pvalue <= pvalue_upper``; results do not depend on ``column_block``; moments
  given or computed from resamples give the same figures; the include-observed critical value
  rejects exactly when the (count + 1) / (B + 1) p-value is at most the level; error messages.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from arch.bootstrap import SPA, StationaryBootstrap, StepM
from scipy.signal import lfilter
from scipy.stats import binom

from sweepaudit.errors import DegenerateDataError, InputError
from sweepaudit.methods.longrun import long_run_variance
from sweepaudit.methods.snooping import (
    RealityCheck,
    StepwiseResult,
    SuperiorPredictiveAbility,
    _critical_value,
    reality_check,
    stepwise_superior,
    superior_predictive_ability,
)
from sweepaudit.resample import (
    ResampledMoments,
    Resamples,
    draw_resamples,
    indices_to_weights,
    resampled_moments,
)


def synthetic_sweep(seed, t=250, means=(0.08, 0.04, 0.0, -0.02, -0.3, -0.6), rho=0.3):
    """Synthetic excess returns: correlated normal columns with the given means (per sd)."""
    rng = np.random.default_rng(seed)
    n = len(means)
    common = rng.standard_normal((t, 1))
    x = math.sqrt(rho) * common + math.sqrt(1 - rho) * rng.standard_normal((t, n))
    return x + np.asarray(means)


def arch_indices(t, block, seed, count):
    """The indices arch's SPA draws with ``seed`` (replayed with a StationaryBootstrap)."""
    bs = StationaryBootstrap(block, np.arange(t), seed=seed)
    return np.array([data[0][0] for data in bs.bootstrap(count)])


def replayed_moments(x, idx, block):
    resamples = Resamples.from_indices(idx, kind="stationary", block_length=block)
    return resampled_moments(x, resamples)


# ---------------------------------------------------------------------------------- arch (external)


def test_stationary_bootstrap_replays_the_indices_of_arch_spa():
    # arch's SPA resamples the loss differentials with StationaryBootstrap(block, data, seed);
    # replaying indices is only valid if a fresh StationaryBootstrap(block, arange(T), seed)
    # draws the same ones. arch keeps each resample's recentred means in _simulated_vals.
    x = synthetic_sweep(1)
    t, block, seed, count = x.shape[0], 6, 11, 200
    spa = SPA(np.zeros(t), -x, block_size=block, reps=count, seed=seed)
    spa.compute()
    idx = arch_indices(t, block, seed, count)
    ours = x[idx].mean(axis=1) - x.mean(axis=0)
    np.testing.assert_allclose(spa._simulated_vals[:, :, 2].T, ours, rtol=0, atol=1e-14)


@pytest.mark.parametrize("seed", [2, 3, 4])
def test_reality_check_equals_arch_upper_pvalue(seed):
    x = synthetic_sweep(seed)
    t, block, count = x.shape[0], 5, 499
    spa = SPA(np.zeros(t), -x, block_size=block, reps=count, seed=seed)
    spa.compute()
    m = replayed_moments(x, arch_indices(t, block, seed, count), block)
    rc = reality_check(x, moments=m, counting="strict-share")
    assert rc.pvalue == spa.pvalues["upper"]
    assert rc.statistic == pytest.approx(math.sqrt(t) * x.mean(axis=0).max(), rel=1e-12)
    assert 0 < rc.pvalue < 1  # a comparison at the boundary would prove little


@pytest.mark.parametrize("seed", [5, 6, 7, 8])
def test_unstudentized_spa_equals_arch_lower_consistent_upper(seed):
    # With nested=True arch estimates the variances from the same indices as ours (it clones the
    # bootstrap with the same seed), so the consistent thresholds agree.
    x = synthetic_sweep(seed)
    t, block, count = x.shape[0], 5, 499
    spa = SPA(np.zeros(t), -x, block_size=block, reps=count, seed=seed, nested=True)
    spa.compute()
    m = replayed_moments(x, arch_indices(t, block, seed, count), block)
    ours = superior_predictive_ability(x, moments=m, scale="none", counting="strict-share")
    assert x.mean(axis=0).max() > 0  # where arch's unfloored statistic equals ours
    assert ours.pvalue_lower == spa.pvalues["lower"]
    assert ours.pvalue == spa.pvalues["consistent"]
    assert ours.pvalue_upper == spa.pvalues["upper"]
    np.testing.assert_allclose(ours.omega**2, spa._loss_diff_var, rtol=1e-10)
    # the data make the recentrings differ: columns 4 and 5 fall below the threshold
    assert not ours.relevant.all()
    assert ours.pvalue_lower < ours.pvalue_upper


def stepm_data(seed):
    return synthetic_sweep(seed, t=250, means=(0.45, 0.3, 0.2, 0.15, 0.0, 0.0, -0.1, -0.5), rho=0.2)


@pytest.mark.parametrize("seed", [21, 22, 23, 24])
def test_stepm_equals_arch_stepm_with_consistent_recentring(seed):
    x = stepm_data(seed)
    t, block, count = x.shape[0], 4, 499
    arch_stepm = StepM(
        np.zeros(t), -x, size=0.05, block_size=block, reps=count, seed=seed, nested=True
    )
    arch_stepm.compute()
    m = replayed_moments(x, arch_indices(t, block, seed, count), block)
    ours = stepwise_superior(
        x,
        moments=m,
        level=0.05,
        scale="none",
        recentring="consistent",
        counting="strict-share",
    )
    assert list(ours.significant) == sorted(int(k) for k in arch_stepm.superior_models)
    assert len(ours.significant) >= 2 and ours.steps >= 2


def test_stepm_upper_equals_arch_when_every_configuration_is_relevant():
    # all means clearly positive or zero: the consistent rule keeps every column, so arch's
    # consistent recentring is Romano and Wolf's full recentring.
    x = synthetic_sweep(31, t=250, means=(0.4, 0.25, 0.15, 0.05, 0.02, 0.0), rho=0.2)
    t, block, count = x.shape[0], 4, 499
    arch_stepm = StepM(np.zeros(t), -x, size=0.1, block_size=block, reps=count, seed=31, nested=True)
    arch_stepm.compute()
    m = replayed_moments(x, arch_indices(t, block, 31, count), block)
    spa = superior_predictive_ability(x, moments=m, scale="none")
    assert spa.relevant.all()
    ours = stepwise_superior(
        x, moments=m, level=0.1, scale="none", recentring="upper", counting="strict-share"
    )
    assert list(ours.significant) == sorted(int(k) for k in arch_stepm.superior_models)
    assert ours.significant


# ------------------------------------------------------------------ literal loops (Hansen; RW)


def literal_spa(x, idx, counting):
    """Hansen (2005), eqs. 6 and 9, one resample and one configuration at a time."""
    n, configs = x.shape
    resamples = len(idx)
    dbar = [float(np.mean(x[:, k])) for k in range(configs)]
    boot = [[float(np.mean(x[idx[b], k])) for k in range(configs)] for b in range(resamples)]
    omega = []
    for k in range(configs):
        column = [math.sqrt(n) * boot[b][k] for b in range(resamples)]
        centre = sum(column) / resamples
        omega.append(math.sqrt(sum((v - centre) ** 2 for v in column) / resamples))
    statistic = max(max(math.sqrt(n) * dbar[k] / omega[k] for k in range(configs)), 0.0)
    threshold_factor = 2 * math.log(math.log(n))
    rules = {
        "lower": lambda v, k: max(v, 0.0),
        "consistent": lambda v, k: v if v >= -math.sqrt(omega[k] ** 2 / n * threshold_factor) else 0.0,
        "upper": lambda v, k: v,
    }
    pvalues = {}
    for name, g in rules.items():
        hits = 0
        for b in range(resamples):
            t_star = 0.0
            for k in range(configs):
                t_star = max(t_star, math.sqrt(n) * (boot[b][k] - g(dbar[k], k)) / omega[k])
            hits += (t_star >= statistic) if counting == "include-observed" else (t_star > statistic)
        pvalues[name] = (hits + 1) / (resamples + 1) if counting == "include-observed" else hits / resamples
    return statistic, pvalues, omega


@pytest.mark.parametrize("counting", ["include-observed", "strict-share"])
@pytest.mark.parametrize("seed", [41, 42])
def test_studentized_spa_equals_literal_hansen_loop(seed, counting):
    x = synthetic_sweep(seed, t=120, means=(0.12, 0.04, 0.0, -0.05, -0.4))
    idx = draw_resamples(x.shape[0], count=199, block_length=4, seed=seed).indices()
    statistic, pvalues, omega = literal_spa(x, idx, counting)
    ours = superior_predictive_ability(x, moments=replayed_moments(x, idx, 4), counting=counting, scale="bootstrap")
    assert ours.statistic == pytest.approx(statistic, rel=1e-10)
    np.testing.assert_allclose(ours.omega, omega, rtol=1e-10)
    assert ours.pvalue_lower == pvalues["lower"]
    assert ours.pvalue == pvalues["consistent"]
    assert ours.pvalue_upper == pvalues["upper"]


def literal_stepm(x, idx, level):
    """Romano and Wolf (2005), Algorithm 3.1, studentized by fixed omega, counted p-values."""
    n, configs = x.shape
    resamples = len(idx)
    dbar = [float(np.mean(x[:, k])) for k in range(configs)]
    boot = [[float(np.mean(x[idx[b], k])) for k in range(configs)] for b in range(resamples)]
    omega = []
    for k in range(configs):
        column = [math.sqrt(n) * boot[b][k] for b in range(resamples)]
        centre = sum(column) / resamples
        omega.append(math.sqrt(sum((v - centre) ** 2 for v in column) / resamples))
    stat = [math.sqrt(n) * dbar[k] / omega[k] for k in range(configs)]
    rejected: set[int] = set()
    while True:
        remaining = [k for k in range(configs) if k not in rejected]
        if not remaining:
            break
        maxima = [
            max(math.sqrt(n) * (boot[b][k] - dbar[k]) / omega[k] for k in remaining)
            for b in range(resamples)
        ]
        new = set()
        for k in remaining:
            count = sum(1 for v in maxima if v >= stat[k])
            if (count + 1) / (resamples + 1) <= level:
                new.add(k)
        if not new:
            break
        rejected |= new
    return sorted(rejected)


@pytest.mark.parametrize("seed", [51, 52, 53])
def test_studentized_stepm_equals_literal_romano_wolf_loop(seed):
    x = synthetic_sweep(seed, t=150, means=(0.35, 0.25, 0.18, 0.1, 0.0, -0.1))
    idx = draw_resamples(x.shape[0], count=199, block_length=3, seed=seed).indices()
    ours = stepwise_superior(x, moments=replayed_moments(x, idx, 3), level=0.05, scale="bootstrap")
    assert list(ours.significant) == literal_stepm(x, idx, 0.05)
    assert ours.significant


def test_long_run_statistics_match_arch_bartlett_and_scipy():
    # Reference: arch.covariance.kernel.Bartlett on the AR(1)-prewhitened series (arch's bandwidth b is
    # our S - 1, so the plain Bartlett weights agree), recoloured by 1 / (1 - rho)^2; the ratio read
    # against scipy's Student t and mapped by scipy's normal. The null draws are the bootstrap scale's.
    from arch.covariance.kernel import Bartlett
    from scipy import stats

    x = synthetic_sweep(61, t=200, means=(0.2, 0.05, 0.0, -0.1))
    m = resampled_moments(x, draw_resamples(200, count=299, block_length=3, seed=61))
    estimate = long_run_variance(x, bandwidth=4.0)
    ours = stepwise_superior(x, moments=m, long_run=estimate)
    boot = stepwise_superior(x, moments=m, scale="bootstrap")
    for k in range(x.shape[1]):
        e = x[:, k] - x[:, k].mean()
        rho = estimate.ar_coefficient[k]
        u = e[1:] - rho * e[:-1]
        omega2 = float(Bartlett(u, bandwidth=3, center=False).cov.long_run[0, 0]) / (1 - rho) ** 2
        ratio = math.sqrt(200) * x[:, k].mean() / math.sqrt(omega2)
        expected = stats.norm.ppf(stats.t.cdf(ratio, estimate.degrees_of_freedom[k]))
        assert ours.statistics[k] == pytest.approx(expected, rel=1e-9)
    assert [a == b for a, b in zip(ours.null_maxima[0], boot.null_maxima[0])] == [True] * 299
    spa = superior_predictive_ability(x, moments=m, long_run=estimate)
    assert spa.scale == "long-run" and spa.statistic == pytest.approx(max(ours.statistics.max(), 0.0))


# ------------------------------------------------------------------------ size and power (theory)


def iid_null(rng, t, n):
    common = rng.standard_normal((t, 1))
    return math.sqrt(0.5) * common + math.sqrt(0.5) * rng.standard_normal((t, n))


def ar1_null(rng, t, n, phi=0.3):
    shocks = iid_null(rng, t + 50, n)
    return lfilter([1.0], [1.0, -phi], shocks, axis=0)[50:]  # x_t = phi x_(t-1) + e_t, burn-in 50


def fat_tailed_null(rng, t, n):
    common = rng.standard_t(3, size=(t, 1))
    return math.sqrt(0.5) * common + math.sqrt(0.5) * rng.standard_t(3, size=(t, n))


def gathered_moments(x, idx):
    """Resampled moments from counted weights without BLAS: the same figures as
    ``resampled_moments`` for these indices, faster for many tiny sweeps on a loaded machine
    (there small threaded BLAS products are dominated by thread start-up)."""
    weights = indices_to_weights(idx, len(x)) / len(x)
    return ResampledMoments(
        mean=np.einsum("bt,tn->bn", weights, x, optimize=False),
        second=np.einsum("bt,tn->bn", weights, x * x, optimize=False),
        windows=len(x),
    )


def simulate(make, *, sweeps, count, t=100, n=10, block=1.0, edge=0.0, scale="long-run", seed=0):
    """Rejections at 5% over simulated sweeps; StepM also: finding column 0, or any other."""
    rng = np.random.default_rng(seed)
    hits = {"reality_check": 0, "spa": 0, "stepm_any": 0, "stepm_edge": 0, "stepm_false": 0}
    for s in range(sweeps):
        x = make(rng, t, n)
        x[:, 0] += edge
        idx = draw_resamples(t, count=count, block_length=block, seed=seed + s).indices()
        m = gathered_moments(x, idx)
        hits["reality_check"] += reality_check(x, moments=m).pvalue <= 0.05
        spa = superior_predictive_ability(x, moments=m, scale=scale)
        hits["spa"] += spa.pvalue <= 0.05
        step = stepwise_superior(x, moments=m, level=0.05, scale=scale)
        hits["stepm_any"] += bool(step.significant)
        hits["stepm_edge"] += 0 in step.significant
        hits["stepm_false"] += any(k != 0 for k in step.significant)
    return hits


# (generator, windows, mean block length). AR(1) needs more windows: at T = 150 with phi = 0.3
# the bootstrap understates the long-run variance and the tests over-reject (about 10%).
NULL_CASES = [
    pytest.param(iid_null, 150, 1.0, id="iid-correlated"),
    pytest.param(ar1_null, 500, 10.0, id="ar1"),
    pytest.param(fat_tailed_null, 150, 1.0, id="student-t3"),
]


def allowed_rejections(sweeps, level=0.05):
    # one-sided binomial tolerance: a level-alpha test exceeds this count with probability < 0.1%
    return binom.ppf(0.999, sweeps, level)


@pytest.mark.parametrize("scale", ["long-run", "bootstrap", "none"])
@pytest.mark.parametrize(("make", "windows", "block"), NULL_CASES)
def test_size_under_no_edge(make, windows, block, scale):
    sweeps = 200
    hits = simulate(make, sweeps=sweeps, count=499, t=windows, block=block, scale=scale, seed=100)
    limit = allowed_rejections(sweeps)
    assert hits["reality_check"] <= limit
    assert hits["spa"] <= limit
    assert hits["stepm_any"] <= limit  # StepM controls the familywise error rate


def test_power_with_one_real_edge():
    sweeps = 100
    hits = simulate(iid_null, sweeps=sweeps, count=499, t=150, edge=0.4, seed=200)
    assert hits["spa"] >= 0.9 * sweeps
    assert hits["reality_check"] >= 0.85 * sweeps
    assert hits["stepm_edge"] >= 0.85 * sweeps
    assert hits["stepm_false"] <= allowed_rejections(sweeps)


# Measured: with 30 configurations under AR(1) windows the bootstrap-scaled SPA and StepM reject 8
# to 10% of true nulls at 5% (T = 500, mean blocks 10): omega is estimated from the resamples and
# held fixed, so the maximum picks configurations whose omega came out small and the null does not
# reproduce that selection. strict xfail documents it; the long-run scale, the default, holds 5%.
SLOW_NULL_CASES = [
    pytest.param(iid_null, 150, 1.0, "long-run", id="iid-correlated-long-run"),
    pytest.param(iid_null, 150, 1.0, "bootstrap", id="iid-correlated-bootstrap"),
    pytest.param(iid_null, 150, 1.0, "none", id="iid-correlated"),
    pytest.param(ar1_null, 500, 10.0, "long-run", id="ar1-long-run"),
    pytest.param(
        ar1_null,
        500,
        10.0,
        "bootstrap",
        id="ar1-bootstrap",
        marks=pytest.mark.xfail(strict=True, reason="fixed-omega studentization over-rejects under AR(1)"),
    ),
    pytest.param(ar1_null, 500, 10.0, "none", id="ar1"),
    pytest.param(fat_tailed_null, 150, 1.0, "long-run", id="student-t3-long-run"),
    pytest.param(fat_tailed_null, 150, 1.0, "bootstrap", id="student-t3-bootstrap"),
    pytest.param(fat_tailed_null, 150, 1.0, "none", id="student-t3"),
]


@pytest.mark.slow
@pytest.mark.parametrize(("make", "windows", "block", "scale"), SLOW_NULL_CASES)
def test_size_under_no_edge_long(make, windows, block, scale):
    sweeps = 1000
    hits = simulate(make, sweeps=sweeps, count=999, t=windows, n=30, block=block, scale=scale, seed=300)
    limit = allowed_rejections(sweeps)
    keys = ("spa", "stepm_any") if scale != "none" else ("reality_check", "spa", "stepm_any")
    for key in keys:
        assert hits[key] <= limit, key


@pytest.mark.slow
def test_power_with_one_real_edge_long():
    sweeps = 1000
    hits = simulate(iid_null, sweeps=sweeps, count=999, t=200, n=30, edge=0.35, seed=400)
    assert hits["spa"] >= 0.9 * sweeps
    assert hits["spa"] >= hits["reality_check"]  # Hansen (2005): SPA is at least as powerful here
    assert hits["stepm_false"] <= allowed_rejections(sweeps)


# --------------------------------------------------------------------- internal consistency


@pytest.fixture
def sweep():
    x = synthetic_sweep(7, t=160, means=(0.1, 0.05, 0.0, -0.03, -0.2, -0.5, 0.02))
    resamples = draw_resamples(x.shape[0], count=399, block_length=4, seed=9)
    return x, resamples, resampled_moments(x, resamples)


@pytest.mark.parametrize("seed", range(10))
def test_spa_pvalues_are_ordered(seed):
    x = synthetic_sweep(seed, t=80, means=(0.02, 0.0, -0.05, -0.1, -0.3))
    m = resampled_moments(x, draw_resamples(80, count=199, block_length=3, seed=seed))
    for scale in ("long-run", "bootstrap", "none"):
        for counting in ("include-observed", "strict-share"):
            res = superior_predictive_ability(x, moments=m, scale=scale, counting=counting)
            assert res.pvalue_lower <= res.pvalue <= res.pvalue_upper
            assert np.all(res.null_lower <= res.null_consistent)
            assert np.all(res.null_consistent <= res.null_upper)


def test_results_do_not_depend_on_column_block(sweep):
    x, _, m = sweep
    whole = (
        reality_check(x, moments=m),
        superior_predictive_ability(x, moments=m),
        stepwise_superior(x, moments=m),
    )
    for block in (1, 3):
        parts = (
            reality_check(x, moments=m, column_block=block),
            superior_predictive_ability(x, moments=m, column_block=block),
            stepwise_superior(x, moments=m, column_block=block),
        )
        np.testing.assert_array_equal(parts[0].null_distribution, whole[0].null_distribution)
        np.testing.assert_array_equal(parts[1].null_consistent, whole[1].null_consistent)
        np.testing.assert_array_equal(parts[1].omega, whole[1].omega)
        assert parts[1].pvalue == whole[1].pvalue
        assert parts[2].significant == whole[2].significant
        assert parts[2].critical_values == whole[2].critical_values


def test_moments_computed_from_resamples_match_given_moments(sweep):
    x, resamples, m = sweep
    assert reality_check(x, resamples=resamples).pvalue == reality_check(x, moments=m).pvalue
    a = superior_predictive_ability(x, resamples=resamples)
    b = superior_predictive_ability(x, moments=m)
    assert (a.pvalue_lower, a.pvalue, a.pvalue_upper) == (b.pvalue_lower, b.pvalue, b.pvalue_upper)
    assert stepwise_superior(x, resamples=resamples).significant == stepwise_superior(x, moments=m).significant


def test_result_fields_and_types(sweep):
    x, _, m = sweep
    rc = reality_check(x, moments=m)
    assert isinstance(rc, RealityCheck) and rc.null_distribution.shape == (399,)
    assert rc.best == int(np.argmax(x.mean(axis=0)))
    spa = superior_predictive_ability(x, moments=m)
    assert isinstance(spa, SuperiorPredictiveAbility) and spa.studentized
    assert spa.omega.shape == (7,) and spa.relevant.dtype == bool
    step = stepwise_superior(x, moments=m)
    assert isinstance(step, StepwiseResult)
    assert step.steps == len(step.critical_values) == len(step.null_maxima)
    assert set(np.flatnonzero(step.rejected_at_step)) == set(step.significant)
    with pytest.raises(AttributeError):
        rc.pvalue = 0.5  # frozen


def test_include_observed_pvalues_never_zero():
    x = synthetic_sweep(3, means=(2.0, 0.0))  # an overwhelming edge
    m = resampled_moments(x, draw_resamples(x.shape[0], count=99, block_length=2, seed=1))
    assert reality_check(x, moments=m).pvalue == pytest.approx(1 / 100)
    assert reality_check(x, moments=m, counting="strict-share").pvalue == 0.0
    assert superior_predictive_ability(x, moments=m).pvalue == pytest.approx(1 / 100)


@pytest.mark.parametrize("count", [19, 99, 199, 499, 999])
@pytest.mark.parametrize("level", [0.01, 0.05, 0.1, 0.2])
def test_critical_value_matches_counted_pvalue_rule(count, level):
    # Davison and Hinkley (1997), eq. 4.11: reject iff (#{null >= s} + 1) / (B + 1) <= level.
    rng = np.random.default_rng(count)
    null = np.round(rng.standard_normal(count), 1)  # ties on purpose
    critical = _critical_value(null, level, "include-observed")
    for s in np.concatenate([null, np.linspace(-4, 4, 81)]):
        by_pvalue = (np.count_nonzero(null >= s) + 1) / (count + 1) <= level
        assert (s > critical) == by_pvalue


def test_critical_value_is_infinite_when_resamples_are_too_few():
    assert _critical_value(np.arange(10.0), 0.05, "include-observed") == math.inf


def test_single_configuration_works():
    rng = np.random.default_rng(0)
    x = rng.standard_normal((60, 1)) + 0.5
    m = resampled_moments(x, draw_resamples(60, count=199, block_length=2, seed=0))
    rc = reality_check(x, moments=m)
    spa = superior_predictive_ability(x, moments=m, scale="none")
    # with one configuration and a positive mean the reality check is the upper SPA
    assert rc.pvalue == spa.pvalue_upper
    step = stepwise_superior(x, moments=m)
    assert step.significant == (0,) and step.steps == 1


def test_two_windows_work():
    x = np.array([[1.0, -1.0], [2.0, 0.5]])
    m = resampled_moments(x, draw_resamples(2, count=50, block_length=1, seed=0))
    for scale in ("bootstrap", "none"):
        res = superior_predictive_ability(x, moments=m, scale=scale)
        assert res.pvalue_lower <= res.pvalue <= res.pvalue_upper <= 1
    # a long-run variance needs a handful of windows: the error says so
    with pytest.raises(DegenerateDataError, match="at least 8 windows"):
        superior_predictive_ability(x, moments=m)


def test_constant_configuration_is_fine_unstudentized():
    x = synthetic_sweep(2, means=(0.1, 0.0))
    x[:, 1] = 0.0
    m = resampled_moments(x, draw_resamples(x.shape[0], count=99, block_length=2, seed=0))
    assert 0 < reality_check(x, moments=m).pvalue <= 1
    assert 0 < superior_predictive_ability(x, moments=m, scale="none").pvalue <= 1


# ------------------------------------------------------------------------------ error messages


def test_errors_fewer_than_two_windows():
    with pytest.raises(DegenerateDataError, match="at least 2 windows; got 1"):
        reality_check(np.ones((1, 3)), resamples=draw_resamples(2, count=5, block_length=1, seed=0))


def test_errors_one_dimensional_returns():
    with pytest.raises(InputError, match=r"2-D T x N matrix .* got shape \(5,\) \(reshape a single configuration"):
        superior_predictive_ability(np.ones(5))


def test_errors_three_dimensional_returns():
    with pytest.raises(InputError, match=r"2-D T x N matrix .* got shape \(2, 2, 2\)"):
        stepwise_superior(np.ones((2, 2, 2)))


def test_errors_no_configurations():
    with pytest.raises(InputError, match=r"at least 1 configuration\(s\); got 0"):
        reality_check(np.ones((5, 0)))


def test_errors_non_finite_returns(sweep):
    x, resamples, _ = sweep
    x = x.copy()
    x[3, 2] = np.nan
    with pytest.raises(InputError, match="returns must be finite"):
        reality_check(x, resamples=resamples)


def test_errors_neither_moments_nor_resamples(sweep):
    x, _, _ = sweep
    with pytest.raises(InputError, match="give either moments .* or resamples .*; got neither"):
        reality_check(x)


def test_errors_mismatched_moments(sweep):
    x, _, m = sweep
    with pytest.raises(InputError, match=r"moments.mean must be B x N with N = 6 .* got shape \(399, 7\)"):
        superior_predictive_ability(x[:, :6], moments=m)
    with pytest.raises(InputError, match="moments must come from the T = 100 windows .* 160 windows"):
        stepwise_superior(x[:100], moments=m)


def test_errors_moments_and_resamples_disagree(sweep):
    x, _, m = sweep
    other = draw_resamples(x.shape[0], count=10, block_length=2, seed=0)
    with pytest.raises(InputError, match="moments hold 399 resamples, resamples has 10"):
        reality_check(x, moments=m, resamples=other)


def test_errors_wrong_types(sweep):
    x, resamples, _ = sweep
    with pytest.raises(InputError, match="moments must be a ResampledMoments; got ndarray"):
        reality_check(x, moments=np.zeros((3, 7)))
    with pytest.raises(InputError, match="resamples must be a Resamples; got int"):
        reality_check(x, resamples=5)


def test_errors_mismatched_resamples(sweep):
    x, _, _ = sweep
    short = draw_resamples(50, count=10, block_length=2, seed=0)
    with pytest.raises(InputError, match="T = 160 windows of returns; got resamples of 50 windows"):
        superior_predictive_ability(x, resamples=short)


@pytest.mark.parametrize("level", [0.0, 1.0, -0.1, 1.5])
def test_errors_level_outside_unit_interval(sweep, level):
    x, _, m = sweep
    with pytest.raises(InputError, match=f"level must lie strictly between 0 and 1; got {level}"):
        stepwise_superior(x, moments=m, level=level)


def test_errors_level_not_a_number(sweep):
    x, _, m = sweep
    with pytest.raises(InputError, match="level must lie strictly between 0 and 1; got 'high'"):
        stepwise_superior(x, moments=m, level="high")


def test_errors_unknown_counting(sweep):
    x, _, m = sweep
    for function in (reality_check, superior_predictive_ability, stepwise_superior):
        with pytest.raises(InputError, match="counting must be one of include-observed, strict-share; got 'plus-one'"):
            function(x, moments=m, counting="plus-one")


def test_errors_unknown_recentring(sweep):
    x, _, m = sweep
    with pytest.raises(InputError, match="recentring must be one of upper, consistent; got 'lower'"):
        stepwise_superior(x, moments=m, recentring="lower")


def test_errors_bad_column_block(sweep):
    x, _, m = sweep
    with pytest.raises(InputError, match="column_block must be a whole number of at least 1; got 0"):
        reality_check(x, moments=m, column_block=0)


def test_errors_constant_configuration_when_studentized():
    x = synthetic_sweep(2, means=(0.1, 0.0, 0.0))
    x[:, 2] = 0.25
    m = resampled_moments(x, draw_resamples(x.shape[0], count=99, block_length=2, seed=0))
    for function in (superior_predictive_ability, stepwise_superior):
        with pytest.raises(DegenerateDataError, match=r"constant over all windows; got constant columns \[2\]"):
            function(x, moments=m)


def test_errors_zero_bootstrap_spread():
    x = synthetic_sweep(2, means=(0.1, 0.0))
    m = resampled_moments(x, draw_resamples(x.shape[0], count=1, block_length=2, seed=0))
    for scale in ("long-run", "bootstrap"):
        with pytest.raises(DegenerateDataError, match=r"got zero for columns \[0, 1\]"):
            superior_predictive_ability(x, moments=m, scale=scale)


def test_errors_unknown_scale_and_mismatched_long_run(sweep):
    x, _, m = sweep
    with pytest.raises(InputError, match="scale must be one of"):
        superior_predictive_ability(x, moments=m, scale="studentized")
    with pytest.raises(InputError, match="long_run must come from the same"):
        stepwise_superior(x, moments=m, long_run=long_run_variance(x[:, :3]))


def test_gathered_moments_match_the_shared_engine():
    # the simulations above build moments by gathering rows; they must equal the engine's
    x = synthetic_sweep(4, t=90)
    resamples = draw_resamples(90, count=300, block_length=3, seed=2)
    engine = resampled_moments(x, resamples)
    gathered = gathered_moments(x, resamples.indices())
    np.testing.assert_allclose(gathered.mean, engine.mean, rtol=0, atol=1e-13)
    np.testing.assert_allclose(gathered.second, engine.second, rtol=0, atol=1e-13)


def test_unstudentized_upper_spa_is_the_reality_check():
    # Hansen (2005): with g(x) = x and no studentization the SPA is White's reality check
    # (floored at zero, which changes nothing when the best sample mean is positive)
    x = synthetic_sweep(12, t=160, means=(0.15, 0.05, 0.0, -0.1, -0.4))
    m = resampled_moments(x, draw_resamples(160, count=399, block_length=4, seed=12))
    assert x.mean(axis=0).max() > 0
    for counting in ("include-observed", "strict-share"):
        rc = reality_check(x, moments=m, counting=counting)
        spa = superior_predictive_ability(x, moments=m, scale="none", counting=counting)
        assert spa.pvalue_upper == rc.pvalue
        assert spa.statistic == pytest.approx(rc.statistic, rel=1e-12)
