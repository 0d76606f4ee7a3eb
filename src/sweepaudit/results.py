"""Every frozen result type of sweepaudit, in one module with no logic, at the bottom of the layers.

Methods build these from arrays, the audit gathers them into :class:`Evidence`, the verdict adds
:class:`Verdict`, the baseline gate :class:`BaselineComparison`, calibration :class:`VerdictCalibration`.
Keeping them here (beside :class:`~sweepaudit.sweep.Sweep`, :class:`~sweepaudit.resample.Resamples` and
:class:`~sweepaudit.policy.Policy`, the types they refer to) means no layer imports another layer's
module for a type. A result holds fields and trivial accessors only: computations live in the methods.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
import pandas as pd

from . import validate
from .errors import InputError
from .policy import Policy
from .resample import BootstrapKind, Resamples
from .sweep import Sweep

IntervalMethod = Literal["studentized", "percentile", "basic"]
ExpectedMaximum = Literal["approximate", "exact"]
EffectiveTrialsMethod = Literal["average_correlation", "nyholt", "li_ji"]
VarianceMode = Literal["null", "empirical"]
TrialCount = Literal["declared", "effective"]
Annualization = Literal["square_root", "serial_correlation"]
SharpeVariance = Literal["long-run", "iid"]
SnoopingScale = Literal["long-run", "bootstrap", "none"]
AdjustmentMethod = Literal["bonferroni", "holm", "bhy"]
SplitStatistic = Literal["sharpe", "mean"]
OverfittingCase = Literal["robust", "shared_edge", "no_edge", "overfit"]
Counting = Literal["include-observed", "strict-share"]
StepRecentring = Literal["upper", "consistent"]
BlockSeries = Literal["average", "selected"]

@dataclass(frozen=True, slots=True)
class Interval:
    """A point estimate with a two-sided confidence interval (slots: an audit keeps two per
    configuration, a million for a sweep of half a million)."""

    estimate: float
    low: float
    high: float

    def scaled(self, factor: float) -> Interval:
        """The interval of ``factor * statistic`` (a positive, monotone rescaling)."""
        return Interval(self.estimate * factor, self.low * factor, self.high * factor)


@dataclass(frozen=True, eq=False)
class BootstrapIntervals:
    """Intervals for every configuration, with the bootstrap distributions they came from.

    Attributes
    ----------
    mean, sharpe : tuple of Interval
        Per configuration, per window (mean excess return as a fraction; Sharpe ratio per window).
    mean_distribution, sharpe_distribution : ndarray, shape (B, N)
        The resampled statistics (kept so a user can change the level without resampling, with
        :func:`sweepaudit.methods.bootstrap_ci.at_level`); after a streamed audit only the columns
        in ``distribution_columns``.
    confidence : float
    method : {"studentized", "percentile", "basic"}
    degenerate_resamples : int
        Resamples in which some configuration had zero variance (their Sharpe ratio is dropped).
    mean_standard_error, sharpe_standard_error, degrees_of_freedom : ndarray or None
        Long-run standard errors of each configuration's mean and Sharpe ratio and the long-run
        estimate's degrees of freedom, the scale of the studentized intervals.
    distribution_columns : tuple of int, optional
        The configurations whose distributions are kept, when not all are (a streamed audit keeps
        the selected one's: ``B x N`` would not fit its memory budget); None: all.
    """

    mean: tuple[Interval, ...]
    sharpe: tuple[Interval, ...]
    mean_distribution: np.ndarray
    sharpe_distribution: np.ndarray
    confidence: float
    method: IntervalMethod
    degenerate_resamples: int
    mean_standard_error: np.ndarray | None = None
    sharpe_standard_error: np.ndarray | None = None
    degrees_of_freedom: np.ndarray | None = None
    distribution_columns: tuple[int, ...] | None = None

    def mean_distribution_of(self, column: int) -> np.ndarray:
        """The resampled means of one configuration (shape (B,))."""
        return self.mean_distribution[:, self._position(column)]

    def sharpe_distribution_of(self, column: int) -> np.ndarray:
        """The resampled Sharpe ratios of one configuration (shape (B,))."""
        return self.sharpe_distribution[:, self._position(column)]

    def _position(self, column: int) -> int:
        if self.distribution_columns is None:
            return column
        return self.distribution_columns.index(column)

    @property
    def mean_estimates(self) -> np.ndarray:
        return np.array([i.estimate for i in self.mean])

    @property
    def sharpe_estimates(self) -> np.ndarray:
        return np.array([i.estimate for i in self.sharpe])


@dataclass(frozen=True)
class ReturnMoments:
    """Per-window moments of a return series (or of each column of a matrix).

    Attributes
    ----------
    observations : int
        Number of windows ``n``.
    mean, standard_deviation : float or ndarray
        Sample mean and sample standard deviation (``ddof=1``).
    sharpe : float or ndarray
        Per-window Sharpe ratio ``mean / standard_deviation``.
    skewness : float or ndarray
        Plain moment estimator ``m3 / m2**1.5`` (central moments with divisor ``n``; no small-sample
        bias correction), the estimator ``scipy.stats.skew`` returns by default.
    kurtosis : float or ndarray
        RAW kurtosis, plain moment estimator ``m4 / m2**2`` (3 for a normal distribution), i.e.
        ``scipy.stats.kurtosis(x, fisher=False)``.
    """

    observations: int
    mean: float | np.ndarray
    standard_deviation: float | np.ndarray
    sharpe: float | np.ndarray
    skewness: float | np.ndarray
    kurtosis: float | np.ndarray


@dataclass(frozen=True)
class ProbabilisticSharpe:
    """Probabilistic Sharpe ratio, Bailey and Lopez de Prado (2012).

    Attributes
    ----------
    sharpe : float
        Observed per-window Sharpe ratio.
    benchmark : float
        Benchmark per-window Sharpe ratio ``SR*``.
    observations : float
        Windows ``n``.
    skewness, kurtosis : float
        Moments used (kurtosis raw).
    standard_error : float
        ``sqrt([q - g3 SR + (g4 - 1)/4 SR^2] / (n - 1))`` at the observed SR.
    statistic : float
        ``z = (SR - SR*) / standard_error``.
    probability : float
        ``PSR = Phi(z)``: the probability that the true Sharpe ratio exceeds the benchmark.
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` used in the standard error (1: the published iid formula).
    """

    sharpe: float
    benchmark: float
    observations: float
    skewness: float
    kurtosis: float
    standard_error: float
    statistic: float
    probability: float
    long_run_ratio: float = 1.0


@dataclass(frozen=True)
class DeflatedSharpe:
    """Deflated Sharpe ratio, Bailey and Lopez de Prado (2014).

    Attributes
    ----------
    sharpe : float
        Observed per-window Sharpe ratio of the selected trial.
    observations : float
        Windows ``n``.
    trials : float
        Number of trials the benchmark assumes.
    trial_sharpe_variance : float
        Variance ``V`` of the trials' per-window Sharpe ratios.
    skewness, kurtosis : float
        Moments of the selected trial's returns (kurtosis raw).
    expected_maximum : {"approximate", "exact"}
        How ``E[max]`` of N standard normals was computed.
    benchmark_sharpe : float
        ``SR0 = sqrt(V) * E[max]``, per window.
    standard_error : float
        Standard error of the observed Sharpe ratio (PSR convention, ``n - 1``).
    statistic : float
        ``z = (SR - SR0) / standard_error``.
    probability : float
        ``DSR = PSR(SR0) = Phi(z)``.
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` used in the standard error (1: the published iid formula).
    """

    sharpe: float
    observations: float
    trials: float
    trial_sharpe_variance: float
    skewness: float
    kurtosis: float
    expected_maximum: ExpectedMaximum
    benchmark_sharpe: float
    standard_error: float
    statistic: float
    probability: float
    long_run_ratio: float = 1.0


@dataclass(frozen=True, eq=False)
class DeflatedCurve:
    """The deflated Sharpe probability against the number of trials assumed (the report's figure).

    Attributes
    ----------
    trials : ndarray
        Whole trial counts from 1 upwards, evenly spaced on a log scale.
    probability : ndarray
        The deflated Sharpe probability at each count (same length as ``trials``).
    trials_counted, at_trials_counted : float
        The trials the audit counted and the probability there (the headline figure).
    effective_trials, at_effective_trials : float or None
        The effective (independent) trials and the probability there; None when they equal the
        trials counted.
    """

    trials: np.ndarray
    probability: np.ndarray
    trials_counted: float
    at_trials_counted: float
    effective_trials: float | None
    at_effective_trials: float | None


@dataclass(frozen=True)
class EffectiveTrials:
    """Effective number of independent trials in a sweep, by three estimators.

    Attributes
    ----------
    configurations : int
        Columns N of the sweep.
    average_correlation : float
        Mean of the N (N - 1) off-diagonal entries of the correlation matrix.
    from_average_correlation : float
        ``rho + (1 - rho) N`` clipped to [1, N] (Bailey and Lopez de Prado; from memory).
    nyholt : float
        Nyholt (2004) eigenvalue-variance estimate.
    li_ji : float
        Li and Ji (2005) eigenvalue estimate.
    eigenvalues : ndarray
        Eigenvalues of the N x N correlation matrix, descending (zeros beyond the rank when N > T).
    """

    configurations: int
    average_correlation: float
    from_average_correlation: float
    nyholt: float
    li_ji: float
    eigenvalues: np.ndarray

    def value(self, method: EffectiveTrialsMethod) -> float:
        """The estimate of one method: "average_correlation", "nyholt" or "li_ji"."""
        chosen = validate.choice(method, "method", ("average_correlation", "nyholt", "li_ji"))
        return {
            "average_correlation": self.from_average_correlation,
            "nyholt": self.nyholt,
            "li_ji": self.li_ji,
        }[chosen]


@dataclass(frozen=True)
class DeflatedVariant:
    """One deflated Sharpe ratio under one combination of choices.

    Attributes
    ----------
    variance_mode : {"null", "empirical"}
    expected_maximum : {"approximate", "exact"}
    trial_count : {"declared", "effective"}
    result : DeflatedSharpe
    """

    variance_mode: VarianceMode
    expected_maximum: ExpectedMaximum
    trial_count: TrialCount
    result: DeflatedSharpe


@dataclass(frozen=True)
class SharpeInference:
    """Selection-adjusted Sharpe inference for the configuration an audit judges.

    Every Sharpe figure is per window unless its name says ``annualized``.

    Attributes
    ----------
    selected : int
        Column index of the judged configuration.
    observed : float
        Its per-window Sharpe ratio (``ddof=1``).
    observed_annualized : float or None
        ``observed * annualization_factor``; None when periods per year are unknown.
    annualization : {"square_root", "serial_correlation"}
        Which factor ``observed_annualized`` uses.
    annualization_factor : float or None
        The factor used.
    square_root_factor : float or None
        ``sqrt(periods_per_year)``.
    serial_correlation_factor : float or None
        Lo's (2002) ``eta(q)`` from the selected configuration's sample autocorrelations; None when
        periods per year are unknown or not a whole number, or the sweep has ``T <= q`` windows.
    observations : int
        Windows T.
    periods_per_year : float or None
    skewness : float
        Selected configuration's skewness (plain moment estimator).
    kurtosis : float
        Its RAW kurtosis (3 for normal), plain moment estimator.
    standard_error : float
        Standard error of ``observed`` the PSR and DSR use (Mertens 2002, PSR's ``n - 1``; with the
        long-run variance ratio when ``sharpe_variance`` is ``"long-run"``).
    standard_error_serial_correlation : float
        Serial-correlation-robust standard error (Lo 2002 with Newey-West, default lags), shown
        beside it so a reader sees when autocorrelation makes the iid figures optimistic.
    probabilistic : ProbabilisticSharpe
        PSR against ``benchmark``.
    deflated : DeflatedSharpe
        The headline DSR (choices below).
    trials : int
        Declared trials (at least the number of configurations).
    effective_trials : float
        Effective trials by ``effective_trials_method``, plus the ``trials - configurations``
        undeclared-in-file trials counted as independent.
    effective_trials_detail : EffectiveTrials
        All effective-trials estimates on the supplied configurations, with eigenvalues.
    trial_sharpe_variance : float
        V used by the headline DSR.
    trial_sharpe_variance_null, trial_sharpe_variance_empirical : float or None
        V under each mode (empirical is None for a single configuration).
    variance_mode, expected_maximum, trials_for_deflation, effective_trials_method
        The choices behind the headline ``deflated``.
    variants : tuple of DeflatedVariant
        The DSR under every combination of variance mode, expected-maximum method and trial
        count (the empirical ones are absent for a single configuration).
    min_track_record_observations : float or None
        Windows needed for PSR(benchmark) to reach ``confidence``; None when the observed Sharpe
        ratio does not exceed the benchmark (no length suffices).
    min_track_record_years : float or None
        The same in years; None when periods per year are unknown or the length is undefined.
    benchmark : float
        Per-window benchmark Sharpe ratio of the PSR and the minimum track record.
    confidence : float
        Level of the minimum track record.
    configuration_sharpes : ndarray
        Per-window Sharpe ratio of every configuration (raw material of the empirical V).
    warnings : tuple of str
        Why a value is None, in words the report can show.
    sharpe_variance : {"long-run", "iid"}
        Which standard error ``standard_error``, ``probabilistic``, ``deflated``, ``variants`` and
        the minimum track record use.
    long_run_ratio : float
        ``q = omega^2 / sigma^2`` of the selected configuration (1 under ``"iid"``).
    long_run_ratio_trial : float
        The family's median ``q``, the scale of the null trial Sharpe variance (1 under ``"iid"``).
    standard_error_iid, probabilistic_iid, deflated_iid, min_track_record_iid_observations, min_track_record_iid_years
        The same figures under the published iid formulas, reported beside the headline ones.
    deflated_level : float
        The calibrated deflated probability of :func:`sweepaudit.methods.deflation.calibrated_level`
        for the trials the headline counts, at ``significance``.
    significance : float
    """

    selected: int
    observed: float
    observed_annualized: float | None
    annualization: Annualization
    annualization_factor: float | None
    square_root_factor: float | None
    serial_correlation_factor: float | None
    observations: int
    periods_per_year: float | None
    skewness: float
    kurtosis: float
    standard_error: float
    standard_error_serial_correlation: float
    probabilistic: ProbabilisticSharpe
    deflated: DeflatedSharpe
    trials: int
    effective_trials: float
    effective_trials_detail: EffectiveTrials
    trial_sharpe_variance: float
    trial_sharpe_variance_null: float
    trial_sharpe_variance_empirical: float | None
    variance_mode: VarianceMode
    expected_maximum: ExpectedMaximum
    trials_for_deflation: TrialCount
    effective_trials_method: EffectiveTrialsMethod
    variants: tuple[DeflatedVariant, ...]
    min_track_record_observations: float | None
    min_track_record_years: float | None
    benchmark: float
    confidence: float
    configuration_sharpes: np.ndarray
    warnings: tuple[str, ...]
    sharpe_variance: SharpeVariance = "iid"
    long_run_ratio: float = 1.0
    long_run_ratio_trial: float = 1.0
    standard_error_iid: float | None = None
    probabilistic_iid: ProbabilisticSharpe | None = None
    deflated_iid: DeflatedSharpe | None = None
    min_track_record_iid_observations: float | None = None
    min_track_record_iid_years: float | None = None
    deflated_level: float | None = None
    significance: float = 0.05

    def variant(
        self, variance_mode: VarianceMode, expected_maximum: ExpectedMaximum, trial_count: TrialCount
    ) -> DeflatedSharpe:
        """The DSR under one combination of choices (raises InputError if it was not computed)."""
        for candidate in self.variants:
            if (candidate.variance_mode, candidate.expected_maximum, candidate.trial_count) == (
                variance_mode,
                expected_maximum,
                trial_count,
            ):
                return candidate.result
        raise InputError(
            "no deflated Sharpe ratio computed for "
            f"variance_mode={variance_mode!r}, expected_maximum={expected_maximum!r}, trial_count={trial_count!r}"
        )


@dataclass(frozen=True)
class HaircutAdjustment:
    """The selected configuration after one multiple-testing adjustment.

    Attributes
    ----------
    method : {"bonferroni", "holm", "bhy"}
    pvalue : float
        Adjusted p-value of the selected configuration, in [0, 1].
    t_statistic : float
        ``Phi^-1(1 - pvalue / 2)``, capped at the unadjusted ``|t|`` (an adjustment never makes a
        result more significant; the cap only binds when p-values underflow to 0).
    sharpe : float
        Haircut per-window Sharpe ratio ``sign(SR) * t_statistic / sqrt(T)``.
    sharpe_annualized : float or None
        ``sharpe * sqrt(periods_per_year)``; None when periods per year are unknown.
    haircut : float or None
        ``1 - sharpe / observed``: the share of the observed Sharpe ratio removed; None when the
        observed Sharpe ratio is 0.
    """

    method: AdjustmentMethod
    pvalue: float
    t_statistic: float
    sharpe: float
    sharpe_annualized: float | None
    haircut: float | None


@dataclass(frozen=True)
class HaircutSharpe:
    """Haircut Sharpe ratio of the selected configuration (Harvey and Liu 2015).

    Attributes
    ----------
    sharpe : float
        Observed per-window Sharpe ratio of the selected configuration.
    sharpe_annualized : float or None
        ``sharpe * sqrt(periods_per_year)``.
    observations : int
        Windows T.
    periods_per_year : float or None
    tests : int
        Number of tests the adjustment assumes (declared trials).
    configurations : int
        Tests whose Sharpe ratios were supplied; ``tests - configurations`` are unseen.
    t_statistic : float
        ``SR * sqrt(T)``.
    pvalue : float
        Unadjusted two-sided p-value ``2 (1 - Phi(|t|))``.
    bonferroni, holm, bhy : HaircutAdjustment
        The selected configuration under each adjustment.
    configuration_pvalues : ndarray
        Unadjusted p-values of the supplied configurations (raw material of Holm and BHY).
    """

    sharpe: float
    sharpe_annualized: float | None
    observations: int
    periods_per_year: float | None
    tests: int
    configurations: int
    t_statistic: float
    pvalue: float
    bonferroni: HaircutAdjustment
    holm: HaircutAdjustment
    bhy: HaircutAdjustment
    configuration_pvalues: np.ndarray

    def adjustment(self, method: AdjustmentMethod) -> HaircutAdjustment:
        """The adjustment by name: "bonferroni", "holm" or "bhy"."""
        return getattr(self, validate.choice(method, "method", ("bonferroni", "holm", "bhy")))


@dataclass(frozen=True)
class CscvResult:
    """Result of :func:`cscv`. Arrays have one entry per split unless stated otherwise.

    Attributes
    ----------
    probability_of_overfitting : float
        PBO: share of splits whose logit is ``<= 0`` (Bailey et al. 2017).
    probability_of_loss : float
        Share of splits whose selected configuration has an out-of-sample statistic ``< 0``.
    logits : numpy.ndarray
        ``ln(w / (1 - w))`` with ``w = rank / (N + 1)``, one per split.
    logit_quantiles : dict[float, float]
        Quantiles of ``logits`` at levels 0.05, 0.25, 0.5, 0.75 and 0.95 (linear interpolation).
    degradation_slope, degradation_intercept, degradation_r_squared : float or None
        Least-squares line of the selected configuration's out-of-sample statistic on its
        in-sample statistic over splits with finite values; ``None`` (with a warning) when the
        in-sample statistics do not vary or fewer than 3 finite pairs exist.
    in_sample, out_of_sample : numpy.ndarray
        The selected configuration's in-sample and out-of-sample statistic per split.
    selected : numpy.ndarray
        Column index (0-based) of the configuration selected in-sample, per split.
    out_of_sample_rank : numpy.ndarray
        Its out-of-sample mid-rank, 1 (worst) .. N (best).
    relative_rank : numpy.ndarray
        ``out_of_sample_rank / (N + 1)``.
    in_sample_blocks : numpy.ndarray
        ``(combinations, partitions // 2)`` block indices (0-based, ascending) of each split's
        in-sample half; the out-of-sample half is the complement.
    in_sample_t_statistic : numpy.ndarray
        t-statistic of the selected configuration's in-sample mean, mean / (sd / sqrt(n)) with
        ddof = 1 (for "sharpe" this is the in-sample Sharpe ratio times sqrt(n)); 0 for a
        half-sample of one window, ``sign(mean) * inf`` (0 for a zero mean) for a constant one.
    median_out_of_sample : float
        Median of ``out_of_sample``.
    null_probability_of_overfitting : float
        PBO's value when out-of-sample ranks are uniform: 1/2 for even N, (N + 1) / (2N) for odd N.
    first_order_dominance, second_order_dominance : bool
        Whether the selected configuration's out-of-sample statistic dominates that of a
        configuration picked at random (see module Notes for how it is measured). Every dominance
        field and the pooled mean are None when they were not asked for (``cscv(...,
        dominance=False)``, an audit that only decides a verdict).
    first_order_violation, second_order_violation : float
        Largest violation found (0 when dominance holds): ``max(F_selected - F_pooled)`` and
        ``max(E[(x - X_selected)^+] - E[(x - X_pooled)^+])``. The second-order fields are
        ``None`` (with a warning) when an infinite statistic occurs (zero-variance half-sample).
    pooled_out_of_sample_mean : float or None
        Mean out-of-sample statistic of all configurations pooled over splits (``None`` when an
        infinite statistic occurs).
    statistic : str
        ``"sharpe"`` or ``"mean"``.
    partitions, partitions_requested : int
        Number of blocks S used, and the number asked for.
    combinations : int
        Number of splits, C(S, S/2).
    windows, configurations : int
        T and N.
    block_bounds : numpy.ndarray
        ``(partitions, 2)`` start (inclusive) and stop (exclusive) window index of each block.
    block_rule : str
        How the blocks were cut.
    warnings : tuple[str, ...]
        Every warning emitted while computing the result.
    """

    probability_of_overfitting: float
    probability_of_loss: float
    logits: np.ndarray
    logit_quantiles: dict[float, float]
    degradation_slope: float | None
    degradation_intercept: float | None
    degradation_r_squared: float | None
    in_sample: np.ndarray
    out_of_sample: np.ndarray
    selected: np.ndarray
    out_of_sample_rank: np.ndarray
    relative_rank: np.ndarray
    in_sample_blocks: np.ndarray
    in_sample_t_statistic: np.ndarray
    median_out_of_sample: float
    null_probability_of_overfitting: float
    first_order_dominance: bool | None
    first_order_violation: float | None
    second_order_dominance: bool | None
    second_order_violation: float | None
    pooled_out_of_sample_mean: float | None
    statistic: str
    partitions: int
    partitions_requested: int
    combinations: int
    windows: int
    configurations: int
    block_bounds: np.ndarray
    block_rule: str
    warnings: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class CscvBlockWinners:
    """Each CSCV split's best configuration within a column block, or over the sweep once combined
    (:func:`sweepaudit.methods.cscv.cscv_block_winners`). Arrays have one entry per split.

    Attributes
    ----------
    in_sample, column, out_of_sample, t_statistic : ndarray
        The best in-sample statistic, its (sweep-wide) column, that column's out-of-sample
        statistic and its in-sample t-statistic.
    constant : int
        Configurations with zero-variance half-samples (for the warning).
    """

    in_sample: np.ndarray
    column: np.ndarray
    out_of_sample: np.ndarray
    t_statistic: np.ndarray
    constant: int


@dataclass(frozen=True, eq=False)
class CscvBlockRanks:
    """One column block's second CSCV pass (:func:`sweepaudit.methods.cscv.cscv_block_ranks`).

    Attributes
    ----------
    below, equal : ndarray, shape (C,)
        The block's out-of-sample values below and equal to each split winner's.
    pooled : dict
        Counts and sums of the block's out-of-sample values between the winners' values (the
        stochastic-dominance figures), their total and how many are not finite.
    """

    below: np.ndarray
    equal: np.ndarray
    pooled: dict


@dataclass(frozen=True)
class OverfittingDiagnosis:
    """Result of :func:`overfitting_diagnosis`.

    Attributes
    ----------
    case : {"robust", "shared_edge", "no_edge", "overfit"}
        ``robust``: the in-sample winner ranks well and earns out of sample. ``shared_edge``: it
        earns out of sample but ranks no better than a random pick, because several
        configurations share the edge. ``overfit``: its in-sample result stood out beyond what
        the best of N noise configurations reaches, yet it loses out of sample too often.
        ``no_edge``: nothing stands out even in sample and the winner loses too often.
    passed : bool
        True for ``robust`` and ``shared_edge``.
    probability_of_overfitting, probability_of_loss : float
        The CSCV figures the rule read.
    in_sample_strength_share : float
        Share of splits whose in-sample winner's t-statistic exceeds ``strength_threshold``.
    strength_threshold : float
        The 95% quantile of the maximum of N independent standard normals,
        ``Phi^-1(0.95 ** (1 / N))``.
    max_probability_of_overfitting, max_probability_of_loss, min_strength_share : float
        Thresholds used.
    reason : str
        One sentence quoting the figures and thresholds.
    """

    case: OverfittingCase
    passed: bool
    probability_of_overfitting: float
    probability_of_loss: float
    in_sample_strength_share: float
    strength_threshold: float
    max_probability_of_overfitting: float
    max_probability_of_loss: float
    min_strength_share: float
    reason: str


@dataclass(frozen=True)
class RealityCheck:
    """White's (2000) reality check for data snooping.

    Attributes
    ----------
    statistic : float
        ``V = max_k sqrt(n) * mean_k`` (White 2000, section 2.3).
    pvalue : float
        Bootstrap p-value of ``V`` under "no configuration beats the benchmark".
    null_distribution : ndarray, shape (B,)
        ``V*_b = max_k sqrt(n) * (mean*_{k,b} - mean_k)``, one value per resample.
    best : int
        Column index of the configuration with the largest sample mean.
    counting : {"include-observed", "strict-share"}
        How the p-value counts (see the module notes).
    """

    statistic: float
    pvalue: float
    null_distribution: np.ndarray
    best: int
    counting: Counting


@dataclass(frozen=True)
class MaxTTest:
    """The plain yardstick: the best iid t-ratio against a one-sided Bonferroni critical value.

    Attributes
    ----------
    statistic : float
        ``max_k sqrt(T) * mean_k / sd_k`` (sample standard deviation, ddof = 1).
    best : int
        The configuration attaining it (the highest Sharpe ratio).
    critical_value : float
        ``Phi^-1(1 - level / N)``.
    level : float
    rejected : bool
        ``statistic > critical_value``.
    """

    statistic: float
    best: int
    critical_value: float
    level: float
    rejected: bool


@dataclass(frozen=True)
class SuperiorPredictiveAbility:
    """Hansen's (2005) test for superior predictive ability.

    Attributes
    ----------
    statistic : float
        ``T = max(max_k sqrt(n) * mean_k / omega_k, 0)`` (Hansen 2005, eq. 6); without
        studentization ``max(max_k sqrt(n) * mean_k, 0)``.
    pvalue : float
        The consistent p-value (recentring ``g(x) = x * 1{x >= -sqrt(omega**2 / n * 2 ln ln n)}``).
    pvalue_lower : float
        Recentring ``g(x) = max(x, 0)``: a lower bound, ``pvalue_lower <= pvalue``.
    pvalue_upper : float
        Recentring ``g(x) = x`` (White's reality check, studentized): ``pvalue <= pvalue_upper``.
    omega : ndarray, shape (N,)
        Bootstrap standard deviation of ``sqrt(n) * mean*_k`` per configuration.
    relevant : ndarray of bool, shape (N,)
        Configurations whose sample mean is above the consistent threshold, so the consistent null
        recentres them at their sample mean (the others at zero).
    scale : {"long-run", "bootstrap", "none"}
        How the statistics and the null draws are scaled (see :mod:`sweepaudit.methods.snooping`).
    null_lower, null_consistent, null_upper : ndarray, shape (B,)
        Bootstrap null distributions, one value per resample:
        ``max(max_k sqrt(n) * (mean*_{k,b} - g(mean_k)) / omega_k, 0)``.
    counting : {"include-observed", "strict-share"}
        How the p-values count.
    statistics : ndarray, shape (N,)
        Each configuration's observed statistic on the test's scale (``statistic`` is their
        maximum floored at zero).
    """

    statistic: float
    pvalue: float
    pvalue_lower: float
    pvalue_upper: float
    omega: np.ndarray
    relevant: np.ndarray
    scale: SnoopingScale
    null_lower: np.ndarray
    null_consistent: np.ndarray
    null_upper: np.ndarray
    counting: Counting
    statistics: np.ndarray

    @property
    def studentized(self) -> bool:
        """Whether the configurations were put on one scale (``scale`` is not ``"none"``)."""
        return self.scale != "none"


@dataclass(frozen=True)
class StepwiseResult:
    """Romano and Wolf's (2005) StepM: the configurations that beat the benchmark.

    Attributes
    ----------
    significant : tuple of int
        Column indices (0-based, ascending) of the configurations rejected as "no better than the
        benchmark", with the familywise error rate controlled at ``level``.
    level : float
        The familywise error rate alpha.
    scale : {"long-run", "bootstrap", "none"}
        How the statistics and the null draws are scaled (see :mod:`sweepaudit.methods.snooping`).
    steps : int
        Number of steps run (= ``len(critical_values)``); the last step rejects nothing new unless
        every configuration was rejected.
    critical_values : tuple of float
        Critical value of each step: the ``1 - level`` quantile of the bootstrap maximum over the
        configurations not yet rejected. ``inf`` when B is too small to reject at ``level``.
    statistics : ndarray, shape (N,)
        Each configuration's observed statistic on the test's scale: ``sqrt(n) * mean_k``, divided
        by ``omega_k`` (``"bootstrap"``), or the long-run t-ratio on the normal scale (``"long-run"``).
    omega : ndarray, shape (N,)
        Bootstrap standard deviation of ``sqrt(n) * mean*_k``.
    rejected_at_step : ndarray of int, shape (N,)
        Step (1-based) at which each configuration was rejected; 0 if never.
    null_maxima : tuple of ndarray, each shape (B,)
        The bootstrap maximum over the remaining configurations, one array per step.
    recentring : {"upper", "consistent"}
        How the null recentres the resampled means.
    counting : {"include-observed", "strict-share"}
        How the critical values are read off the null maxima.
    """

    significant: tuple[int, ...]
    level: float
    scale: SnoopingScale
    steps: int
    critical_values: tuple[float, ...]
    statistics: np.ndarray
    omega: np.ndarray
    rejected_at_step: np.ndarray
    null_maxima: tuple[np.ndarray, ...]
    recentring: StepRecentring
    counting: Counting

    @property
    def studentized(self) -> bool:
        """Whether the configurations were put on one scale (``scale`` is not ``"none"``)."""
        return self.scale != "none"

    def critical_value_for(self, column: int) -> float:
        """The critical value a configuration was held to: that of the step that rejected it, or
        the last step's when it was never rejected."""
        step = int(self.rejected_at_step[column])
        return self.critical_values[step - 1] if step else self.critical_values[-1]


@dataclass(frozen=True, eq=False)
class NullDraws:
    """One column block's per-resample maxima of the recentred null draws under one draw scale.

    Attributes
    ----------
    lower, consistent, upper : ndarray, shape (B,)
        ``max_k (mean*_{k,b} - g(mean_k)) * scale_k`` over the block's columns for Hansen's (2005,
        eq. 9) three recentrings, not yet floored at zero.
    top_values, top_columns : ndarray, shape (B, K)
        The K largest consistent draws of each resample and their (0-based, sweep-wide) columns,
        for StepM's later steps; a column of -1 pads a block of fewer than K columns.
    """

    lower: np.ndarray
    consistent: np.ndarray
    upper: np.ndarray
    top_values: np.ndarray
    top_columns: np.ndarray


@dataclass(frozen=True, eq=False)
class SnoopingBlock:
    """What one column block contributes to the data-snooping tests (see
    :func:`sweepaudit.methods.snooping.snooping_block`).

    Attributes
    ----------
    start : int
        The block's first column.
    variance_of_mean : ndarray, shape (n,)
        Bootstrap variance (divisor B) of each column's resampled mean.
    relevant : ndarray of bool, shape (n,)
        Hansen's consistent rule: the columns kept at their mean in the consistent recentring.
    studentized, unscaled : NullDraws
        The null draws divided by ``omega_k / sqrt(n)`` (the "long-run" and "bootstrap" scales; None
        when not asked for) and multiplied by ``sqrt(n)`` only (the "none" scale).
    """

    start: int
    variance_of_mean: np.ndarray
    relevant: np.ndarray
    studentized: NullDraws | None
    unscaled: NullDraws


@dataclass(frozen=True, eq=False)
class SharpeGrid:
    """Per-window Sharpe ratios of a two-parameter sweep laid out on its parameter grid.

    Attributes
    ----------
    x_parameter, y_parameter : str
        The first and the second parameter (columns and rows of the grid).
    x_values, y_values : tuple
        Their values in ascending order.
    sharpe : ndarray, shape (len(y_values), len(x_values))
        The Sharpe ratio of each cell; NaN where the sweep has no such configuration.
    selected_cell : tuple of int
        (row, column) of the selected configuration.
    """

    x_parameter: str
    y_parameter: str
    x_values: tuple
    y_values: tuple
    sharpe: np.ndarray
    selected_cell: tuple[int, int]


@dataclass(frozen=True)
class PeakShape:
    """How the selected cell of a two-parameter grid compares with its grid neighbours.

    Attributes
    ----------
    sharpe : float
        Per-window Sharpe ratio of the selected configuration.
    neighbour_mean : float
        Mean per-window Sharpe ratio of its grid neighbours: the up to 4 cells one grid step away
        along one parameter with the other held fixed, among those the sweep holds.
    neighbours : int
    standard_error : float
        Bootstrap standard error of the selected Sharpe ratio (standard deviation of its
        resampled values).
    gap_in_standard_errors : float
        ``(sharpe - neighbour_mean) / standard_error``.
    isolated : bool
        ``sharpe > 0`` and ``neighbour_mean < 0.5 * sharpe`` (the neighbours reach less than half the
        peak) and ``neighbour_mean < 1 * standard_error`` (the neighbours are weak: within one standard
        error of no edge). Both parts are our own rule of thumb.
    neighbours_reach_half : bool
        ``neighbour_mean >= 0.5 * sharpe``: the first part of the rule fails (the report says which).
    threshold : float
        The rule's bar for ``neighbour_mean``: the lower of its two parts, ``min(0.5 * sharpe,
        1 * standard_error)``.
    """

    sharpe: float
    neighbour_mean: float
    neighbours: int
    standard_error: float
    gap_in_standard_errors: float
    isolated: bool
    neighbours_reach_half: bool
    threshold: float


@dataclass(frozen=True)
class LongRunVariance:
    """Long-run variance of each column's mean (``omega^2``, the variance of ``sqrt(T) * mean``).

    Attributes
    ----------
    variance : ndarray, shape (N,)
        ``omega^2`` per column, in squared return units.
    short_run_variance : ndarray, shape (N,)
        The plain variance (divisor T) of each column.
    ar_coefficient : ndarray, shape (N,)
        Bias-corrected AR(1) coefficient used to prewhiten (0 when prewhitening is off).
    bandwidth : ndarray, shape (N,)
        Bartlett bandwidth ``S`` used on the prewhitened residuals (weights ``1 - j / S``, j < S).
    degrees_of_freedom : ndarray, shape (N,)
        Equivalent degrees of freedom of each estimate.
    windows : int
        T.
    """

    variance: np.ndarray
    short_run_variance: np.ndarray
    ar_coefficient: np.ndarray
    bandwidth: np.ndarray
    degrees_of_freedom: np.ndarray
    windows: int

    @property
    def ratio(self) -> np.ndarray:
        """``omega^2 / sigma^2``: 1 for serially uncorrelated windows, (1 + phi) / (1 - phi) for AR(1)."""
        return self.variance / self.short_run_variance


@dataclass(frozen=True)
class BlockLengthChoice:
    """How the audit's block length was chosen for the whole family of configurations.

    Attributes
    ----------
    length : float
        The block length used (mean length for the stationary bootstrap).
    selected : float
        Politis-White automatic length of the selected configuration.
    family_quantile : float
        The 75th percentile of the automatic lengths over the configurations examined.
    average_series : float
        The automatic length of the cross-sectional average series (the shared dependence).
    configurations_examined : int
    ar_coefficient : float
        Median bias-corrected AR(1) coefficient over the configurations examined.
    predicted_share : float
        Share of the long-run variance an AR(1) with that coefficient keeps under the chosen length.
    lengthened : bool
        Whether the long-run-variance check lengthened the blocks beyond the automatic lengths.
    rule : str
        The rule in words.
    """

    length: float
    selected: float
    family_quantile: float
    average_series: float
    configurations_examined: int
    ar_coefficient: float
    predicted_share: float
    lengthened: bool
    rule: str


@dataclass(frozen=True)
class FamilyStress:
    """The selected configuration's record with the family's stress losses charged to it.

    Attributes
    ----------
    windows : ndarray of int
        0-based positions of the stress windows (empty when none).
    family_loss : ndarray
        The family's average standardised return in each stress window (robust standard deviations).
    selected_return : ndarray
        The selected configuration's return in each stress window, as observed.
    charged_return : ndarray
        What it is charged there: the smaller of its own return and the family's average loss in
        its own scale.
    escaped : int
        Stress windows in which the selected configuration lost less than the family's average.
    adjusted : ndarray, shape (T,)
        The selected configuration's record with the charges applied (equal to the observed record
        when no window is a stress window).
    mean_observed, mean_adjusted : float
        Mean return per window before and after.
    threshold, share : float
        The rule's two parameters.
    applicable : bool
        False for a family of fewer than :data:`MIN_FAMILY` configurations.
    """

    windows: np.ndarray
    family_loss: np.ndarray
    selected_return: np.ndarray
    charged_return: np.ndarray
    escaped: int
    adjusted: np.ndarray
    mean_observed: float
    mean_adjusted: float
    threshold: float
    share: float
    applicable: bool


@dataclass(frozen=True)
class TailTest:
    """Does the selected configuration's edge survive the losses its family took?

    Attributes
    ----------
    stress : FamilyStress
        The stress windows and the selected configuration's record charged with their losses.
    statistic : float or None
        The charged record's t-ratio of its mean against the long-run variance, on the standard
        normal scale (:func:`sweepaudit.methods.longrun.normal_scores`), the scale of the
        data-snooping test's statistics; None when no window is a stress window.
    critical_value : float
        The data-snooping test's selection-adjusted critical value the statistic must exceed.
    passed : bool
        True when no window is a stress window, the rule does not apply, or ``statistic`` exceeds
        ``critical_value``.
    """

    stress: FamilyStress
    statistic: float | None
    critical_value: float
    passed: bool


@dataclass(frozen=True, eq=False)
class WalkForward:
    """The walk-forward record of picking the winner: for each window after a warm-up, the
    configuration with the highest Sharpe ratio on the windows before it, and its excess return there.

    Attributes
    ----------
    warmup : int
        Windows before the first pick: the record starts at window ``warmup`` (0-based).
    lookback : int or None
        Trailing windows each pick looks at; None: all earlier windows.
    picks : ndarray of int, shape (n,)
        The configuration picked for each window of the record.
    record : ndarray, shape (n,)
        Its excess return in that window: the out-of-sample record of the selection procedure.
    selected_record : ndarray, shape (n,)
        The selected configuration's excess returns over the same windows (the pick of hindsight).
    mean, sharpe : float
        Mean excess return and Sharpe ratio (ddof = 1) of the record, per window.
    pick_changes : int
        Windows of the record whose pick differs from the previous window's.
    distinct_picks : int
        Configurations picked at least once.
    pick_change_rate : float
        ``pick_changes`` over the record's windows less one.
    selected_share : float
        Share of the record's windows whose pick was the selected configuration.
    most_picked : int
        The configuration picked most often (the lowest column among equals).
    most_picked_share : float
        Share of the record's windows it was picked in.
    selected_mean, selected_sharpe : float
        The selected configuration's mean and Sharpe ratio over the same windows.
    persistence : float
        The AR(1) coefficient whose prediction ``persistence * returns[t - 1, pick]`` is taken out of
        the record before the test.
    persistence_gain : float
        Mean of that prediction over the record: what the picks' own last returns foretold.
    stress_windows : int
        The family's stress windows inside the record.
    stress_windows_expected : float
        The stress windows the record would hold at the whole sample's rate.
    stress_charge : float
        Mean per window of the losses charged: in the record's stress windows, and for the ones it
        holds fewer than expected.
    tested : ndarray, shape (n,)
        The series the test reads: the charged record minus the persistence prediction.
    tested_mean : float
        Its mean per window.
    statistic, degrees_of_freedom, pvalue : float
        The tested series' mean over its long-run standard error, the long-run estimate's equivalent
        degrees of freedom, and the one-sided p-value (Student's t) against a mean at or below zero.
    intervals : BootstrapIntervals or None
        The record's mean and Sharpe ratio intervals from the audit's shared resamples.
    """

    warmup: int
    lookback: int | None
    picks: np.ndarray
    record: np.ndarray
    selected_record: np.ndarray
    mean: float
    sharpe: float
    pick_changes: int
    distinct_picks: int
    pick_change_rate: float
    selected_share: float
    most_picked: int
    most_picked_share: float
    selected_mean: float
    selected_sharpe: float
    persistence: float
    persistence_gain: float
    stress_windows: int
    stress_windows_expected: float
    stress_charge: float
    tested: np.ndarray
    tested_mean: float
    statistic: float
    degrees_of_freedom: float
    pvalue: float
    intervals: BootstrapIntervals | None = None

    @property
    def windows(self) -> int:
        """Windows in the record."""
        return int(self.record.size)


@dataclass(frozen=True)
class SubPeriod:
    """One stretch of a configuration's record: windows ``start`` to ``stop - 1`` (0-based).

    Attributes
    ----------
    start, stop : int
    mean, sharpe : float
        Mean excess return and Sharpe ratio (ddof = 1), per window.
    t_ratio : float
        The mean over its long-run standard error (:func:`~sweepaudit.methods.longrun.long_run_variance`).
    degrees_of_freedom : float
        The long-run estimate's equivalent degrees of freedom (read the t-ratio against Student's t).
    """

    start: int
    stop: int
    mean: float
    sharpe: float
    t_ratio: float
    degrees_of_freedom: float

    @property
    def windows(self) -> int:
        return self.stop - self.start


@dataclass(frozen=True, eq=False)
class EdgeStability:
    """Is the selected configuration's edge still alive? Its record over time.

    Attributes
    ----------
    thirds : tuple of SubPeriod
        The record cut into three contiguous thirds (the first ``T mod 3`` one window longer).
    early, recent : SubPeriod
        The windows before the recent period, and the last ``recent_share`` of the windows.
    recent_share : float
    difference : float
        Recent mean minus early mean, per window.
    standard_error : float
        Its long-run standard error: ``omega * sqrt(1 / n_early + 1 / n_recent)``, omega^2 the long-run
        variance of the record demeaned within each period.
    statistic, degrees_of_freedom, pvalue : float
        ``difference / standard_error``, the long-run estimate's degrees of freedom, and the one-sided
        p-value (Student's t) of a recent mean this far below the early one if the mean never changed.
    long_run_ratio : float
        ``omega^2 / sigma^2`` of the demeaned record (1 without serial correlation).
    rolling_windows : int
        Length of the trailing window of the rolling figures.
    rolling_mean, rolling_sharpe : ndarray, shape (T - rolling_windows + 1,)
        Mean and Sharpe ratio (ddof = 1) over the trailing windows; entry i covers windows i to
        i + rolling_windows - 1 (NaN where the record is flat).
    rolling_lowest, rolling_highest, rolling_share_positive : float
        The rolling Sharpe ratio's extremes and the share of its values above zero.
    early_intervals, recent_intervals : BootstrapIntervals or None
        The two periods' mean and Sharpe ratio intervals from the audit's shared resamples.
    """

    thirds: tuple[SubPeriod, ...]
    early: SubPeriod
    recent: SubPeriod
    recent_share: float
    difference: float
    standard_error: float
    statistic: float
    degrees_of_freedom: float
    pvalue: float
    long_run_ratio: float
    rolling_windows: int
    rolling_mean: np.ndarray
    rolling_sharpe: np.ndarray
    rolling_lowest: float
    rolling_highest: float
    rolling_share_positive: float
    early_intervals: BootstrapIntervals | None = None
    recent_intervals: BootstrapIntervals | None = None


@dataclass(frozen=True)
class AuditSettings:
    """Every knob that changes a figure.

    Attributes
    ----------
    seed : int
        Seed of the resamples; the same input and seed give the same audit.
    resamples : int or None
        Number of bootstrap resamples; None takes the policy's.
    confidence : float or None
        Interval level; None takes the policy's.
    bootstrap : {"stationary", "circular", "moving-block"}
    block_length : float or None
        None: automatic (Politis and White 2004 on the selected configuration's series).
    interval_method : {"studentized", "percentile", "basic"}
    selected : str or None
        Configuration to judge; None selects the highest full-sample Sharpe ratio.
    trials : int or None
        Trials the deflated Sharpe ratio counts; None counts the sweep's configurations. A trial
        ledger or ``--trials`` declares more (every sweep the researcher tried).
    """

    seed: int = 0
    resamples: int | None = None
    confidence: float | None = None
    bootstrap: BootstrapKind = "stationary"
    block_length: float | None = None
    interval_method: IntervalMethod = "studentized"
    selected: str | None = None
    trials: int | None = None


@dataclass(frozen=True, eq=False)
class Snooping:
    """The data-snooping tests of one audit, all on the audit's shared resamples.

    SPA and StepM are run under each of the three scales (see :mod:`sweepaudit.methods.snooping`);
    ``scale`` names the one the verdict gates on, ``gating`` whether it reads the SPA's consistent
    p-value or White's reality check. StepM recentres with Hansen's consistent rule (the stepwise
    SPA of Hsu, Hsu and Kuan 2010), matching the SPA it accompanies.
    """

    reality_check: RealityCheck
    spa_long_run: SuperiorPredictiveAbility
    spa_bootstrap: SuperiorPredictiveAbility
    spa_unstudentized: SuperiorPredictiveAbility
    stepm_long_run: StepwiseResult
    stepm_bootstrap: StepwiseResult
    stepm_unstudentized: StepwiseResult
    gating: str
    scale: SnoopingScale

    def spa(self, scale: SnoopingScale | None = None) -> SuperiorPredictiveAbility:
        """The SPA under one scale (default: the gating one)."""
        return {"long-run": self.spa_long_run, "bootstrap": self.spa_bootstrap,
                "none": self.spa_unstudentized}[scale or self.scale]

    def stepm(self, scale: SnoopingScale | None = None) -> StepwiseResult:
        """StepM under one scale (default: the gating one)."""
        return {"long-run": self.stepm_long_run, "bootstrap": self.stepm_bootstrap,
                "none": self.stepm_unstudentized}[scale or self.scale]

    @property
    def gating_spa(self) -> SuperiorPredictiveAbility:
        return self.spa()

    @property
    def gating_stepm(self) -> StepwiseResult:
        return self.stepm()

    @property
    def pvalue(self) -> float:
        """The p-value the policy gates on."""
        return self.reality_check.pvalue if self.gating == "reality_check" else self.gating_spa.pvalue


@dataclass(frozen=True, eq=False)
class Evidence:
    """Everything an audit found, before any verdict: what the verdict judges and the document shows.

    Attributes
    ----------
    sweep : Sweep
    settings : AuditSettings
        As given (``trials`` replaced by the trials counted when a ledger or a declaration was used).
    policy : Policy
        The policy the methods ran under (levels, partitions, the gating test).
    selected_index : int
    selection_rule : str
        Why this configuration is the one judged.
    resamples : Resamples
        The resamples every bootstrap-based method shares (replayable from their seed).
    block_length_source : str
    intervals : BootstrapIntervals
        Every configuration's mean and Sharpe intervals, with their bootstrap distributions.
    sharpe_ratios : ndarray
        Full-sample per-window Sharpe ratio of every configuration.
    warnings : tuple of str
        What the reader should weigh: loader notes, method warnings, absent figures.
    sharpe, haircut : SharpeInference, HaircutSharpe
    overfitting, overfitting_diagnosis, snooping : optional
        None for a single configuration (selection tests need at least two).
    surface : PeakShape or None
        None unless the sweep is a two-parameter grid whose selected cell has neighbours.
    deflation_curve : DeflatedCurve or None
        The deflated probability against the number of trials (the report's figure).
    long_run : LongRunVariance or None
        Every configuration's long-run variance (the scale of the studentized tests and the Sharpe
        inference).
    block_choice : BlockLengthChoice or None
        How the block length was chosen (None when it was given).
    bootstrap_share : float or None
        Median over the configurations of the bootstrap variance of the mean divided by the
        long-run variance (1: the resamples reproduce all the dependence the long-run estimate sees).
    bootstrap_share_low : float or None
        Its 10th percentile over the configurations.
    tails : TailTest or None
        The family-stress test of the selected configuration (None for a single configuration).
    walk_forward : WalkForward or None
        The walk-forward record of re-picking the winner (None for a single configuration or when
        the warm-up leaves too short a record).
    stability : EdgeStability or None
        The selected configuration's edge over time (None for a record too short to cut).
    """

    sweep: Sweep
    settings: AuditSettings
    policy: Policy
    selected_index: int
    selection_rule: str
    resamples: Resamples
    block_length_source: str
    intervals: BootstrapIntervals
    sharpe_ratios: np.ndarray
    warnings: tuple[str, ...]
    sharpe: SharpeInference | None = None
    haircut: HaircutSharpe | None = None
    overfitting: CscvResult | None = None
    overfitting_diagnosis: OverfittingDiagnosis | None = None
    snooping: Snooping | None = None
    surface: PeakShape | None = None
    deflation_curve: DeflatedCurve | None = None
    long_run: LongRunVariance | None = None
    block_choice: BlockLengthChoice | None = None
    bootstrap_share: float | None = None
    bootstrap_share_low: float | None = None
    tails: TailTest | None = None
    walk_forward: WalkForward | None = None
    stability: EdgeStability | None = None

    @property
    def selected(self) -> str:
        """The name of the configuration the audit judges."""
        return self.sweep.configurations[self.selected_index]

    @property
    def confidence(self) -> float:
        return self.intervals.confidence


@dataclass(frozen=True)
class Check:
    """One test of the evidence.

    Attributes
    ----------
    id : str
        Stable snake_case name, used by the policy, JSON and JUnit output.
    passed : bool
    value, threshold : float or None
        The numbers the reason quotes.
    reason : str
        One sentence a reader can act on: the figure, the threshold and what it means.
    required : bool
        Whether a failure makes the verdict no-go (otherwise the check is advisory).
    """

    id: str
    passed: bool
    value: float | None
    threshold: float | None
    reason: str
    required: bool = True


@dataclass(frozen=True)
class Verdict:
    """The go / no-go decision, its reasons (one per failed required check on no-go, one per
    required check on go, each prefixed with its check id) and every check that ran."""

    decision: Literal["go", "no-go"]
    reasons: tuple[str, ...]
    checks: tuple[Check, ...]


@dataclass(frozen=True)
class CheckShift:
    """One check of the verdict re-decided under an alternative choice, beside the audit's own.

    Attributes
    ----------
    id : str
    passed, value, threshold : as in :class:`Check`, under the alternative.
    passed_as_audited, value_as_audited, threshold_as_audited :
        The audit's own (None when the check did not run in the audit).
    """

    id: str
    passed: bool
    value: float | None
    threshold: float | None
    passed_as_audited: bool | None
    value_as_audited: float | None
    threshold_as_audited: float | None


@dataclass(frozen=True)
class Alternative:
    """The verdict re-decided under one alternative choice an analyst could have made.

    Attributes
    ----------
    choice : str
        Which choice (``"trial_variance"``, ``"block_length"``, ...).
    question : str
        The choice in words.
    as_audited, setting : str
        The audit's setting and the alternative (policy or option values).
    as_audited_words, setting_words : str
        The same in words.
    recomputed : str
        What ran again for it, in words ("nothing: the same evidence read another way", ...).
    resamples : int or None
        Resamples drawn for it (same seed); None when it reuses the audit's own.
    decision : {"go", "no-go"}
    flips : bool
        Whether ``decision`` differs from the audit's verdict.
    failed : tuple of str
        Required checks that fail under it.
    checks : tuple of CheckShift
        The checks the choice reaches, and any other whose outcome it changes.
    """

    choice: str
    question: str
    as_audited: str
    setting: str
    as_audited_words: str
    setting_words: str
    recomputed: str
    resamples: int | None
    decision: Literal["go", "no-go"]
    flips: bool
    failed: tuple[str, ...]
    checks: tuple[CheckShift, ...]

    @property
    def id(self) -> str:
        """``choice:setting``, e.g. ``trial_variance:empirical``."""
        return f"{self.choice}:{self.setting}"


@dataclass(frozen=True)
class Sensitivity:
    """What would change the verdict: the verdict re-decided under each reasonable alternative choice.

    Attributes
    ----------
    decision : {"go", "no-go"}
        The audit's verdict.
    alternatives : tuple of Alternative
    fragile : bool
        A go that at least one alternative turns into a no-go.
    flipped_by : tuple of str
        The ids of the alternatives that change the verdict.
    control : Alternative or None
        The audit's own choices re-run with the alternatives' resample count (None when that is the
        audit's own count): how much of a difference is Monte Carlo noise.
    resamples : int
        Resamples of the alternatives that draw new ones (same seed as the audit).
    summary : str
        The finding in one sentence (and, when some choices were not examined, a second naming them).
    not_examined : tuple of str
        The choices (in words) left out because each would be a whole new audit: after a streamed
        audit, those that read the resamples again.
    """

    decision: Literal["go", "no-go"]
    alternatives: tuple[Alternative, ...]
    fragile: bool
    flipped_by: tuple[str, ...]
    control: Alternative | None
    resamples: int
    summary: str
    not_examined: tuple[str, ...] = ()


@dataclass(frozen=True)
class GatedFigure:
    """A figure the baseline gate watches.

    Attributes
    ----------
    key : str
        Dotted JSON key of the figure.
    label : str
        Plain words for reasons.
    higher_is_better : bool
    margin_field : str
        The Policy field holding the allowed worsening.
    scale : {"absolute", "interval_width"}
        ``absolute``: the margin is in the figure's own units. ``interval_width``: the margin is a
        fraction of the baseline interval's width (``high - low`` of the block holding the key),
        which makes it free of the returns' units and frequency.
    """

    key: str
    label: str
    higher_is_better: bool
    margin_field: str
    scale: Literal["absolute", "interval_width"] = "absolute"


@dataclass(frozen=True)
class FigureMove:
    """A numeric figure that differs between the baseline and this audit (``change = after - before``)."""

    key: str
    before: float
    after: float
    change: float


@dataclass(frozen=True)
class GatedMove:
    """A gated figure present in both audits.

    Attributes
    ----------
    worsening : float
        How far it moved in the worse direction (negative when it improved).
    allowed : float or None
        The largest worsening the policy allows, in the figure's units; None when the allowance
        cannot be computed (no baseline interval width), in which case it does not gate.
    exceeded : bool
        ``worsening > allowed``: this figure fails the ``baseline_drift`` check.
    """

    figure: GatedFigure
    before: float
    after: float
    worsening: float
    allowed: float | None
    exceeded: bool

    @property
    def key(self) -> str:
        return self.figure.key


@dataclass(frozen=True)
class CheckChange:
    """A check whose state differs: each state is "passed", "failed" or "absent"."""

    id: str
    before: str
    after: str


@dataclass(frozen=True)
class BaselineComparison:
    """This audit against a baseline audit.

    Attributes
    ----------
    path : str
        The baseline file.
    verdict_before : str or None
    selected_before, selected_after : str or None
        The configuration each audit judged; when they differ the selected figures compare
        different configurations.
    moved : tuple of FigureMove
        Every compared figure that changed, in document order.
    checks_changed : tuple of CheckChange
    gated : tuple of GatedMove
        Every gated figure present in both audits.
    """

    path: str
    verdict_before: str | None
    selected_before: str | None
    selected_after: str | None
    moved: tuple[FigureMove, ...]
    checks_changed: tuple[CheckChange, ...]
    gated: tuple[GatedMove, ...]

    @property
    def worsened(self) -> tuple[GatedMove, ...]:
        """Gated figures that moved in the worse direction (by any amount)."""
        return tuple(g for g in self.gated if g.worsening > 0)

    @property
    def exceeded(self) -> tuple[GatedMove, ...]:
        """Gated figures that worsened by more than the policy allows."""
        return tuple(g for g in self.gated if g.exceeded)


@dataclass(frozen=True)
class LedgerEntry:
    """One record of the ledger (``line`` is 1-based)."""

    line: int
    fingerprint: str
    configurations: int
    record: dict[str, Any]


@dataclass(frozen=True)
class LedgerTally:
    """What the ledger says about the trials of this audit.

    A trial is a configuration (its key: name and parameter values, see :mod:`sweepaudit.names`)
    of a strategy (an optional label). Records that name no configurations (written before the
    ledger counted configurations, or of a sweep whose configuration names were generated) are
    counted by their data fingerprint instead: each distinct fingerprint its configurations once,
    unless a record that names configurations, or this audit, has the same fingerprint (then they
    are those configurations). See :func:`sweepaudit.ledger.tally_trials`.

    Attributes
    ----------
    path : str
    records : int
        Records in the ledger before this audit.
    sweeps_before : int
        Distinct data fingerprints in the ledger before this audit.
    fingerprint : str
        This sweep's data fingerprint.
    configurations : int
        This sweep's configurations.
    new_sweep : bool
        Whether this fingerprint was not yet recorded (the same data was never audited).
    trials : int
        The trials counted once this audit is recorded (never below ``configurations``).
    strategy : str or None
        This audit's strategy label.
    by_configuration : bool
        Whether this audit's trials are counted by configuration (False: its configuration names
        were generated, so its data fingerprint counts, as for old records).
    trials_before : int
        The ledger's count before this audit (its old records identified by this audit's data
        fingerprint when they match it).
    trials_added : int
        ``trials - trials_before``: the configurations of this sweep not tried before.
    fingerprint_records : int
        Records counted by their data fingerprint (they name no configurations).
    fingerprint_trials : int
        The trials those records add: the configurations of each distinct fingerprint no record
        naming configurations explains.
    strategies : tuple of (str or None, int)
        The trials of each strategy label once this audit is recorded, labels in order (None first).
    grid : str or None
        The digest of this sweep's configuration keys (None when counted by fingerprint).
    grid_recorded : bool
        Whether the ledger already lists that grid (this audit's record then names it by digest).
    """

    path: str
    records: int
    sweeps_before: int
    fingerprint: str
    configurations: int
    new_sweep: bool
    trials: int
    strategy: str | None = None
    by_configuration: bool = False
    trials_before: int = 0
    trials_added: int = 0
    fingerprint_records: int = 0
    fingerprint_trials: int = 0
    strategies: tuple[tuple[str | None, int], ...] = ()
    grid: str | None = None
    grid_recorded: bool = False

    @property
    def sweeps_recorded(self) -> int:
        """Distinct sweeps once this audit is recorded."""
        return self.sweeps_before + (1 if self.new_sweep else 0)


@dataclass(frozen=True)
class Rate:
    """A Monte Carlo estimate of a probability from ``events`` out of ``trials`` simulated sweeps.

    Attributes
    ----------
    events, trials : int
    rate : float
        ``events / trials`` (NaN when there were no trials).
    standard_error : float
        Binomial Monte Carlo standard error ``sqrt(rate * (1 - rate) / trials)``; zero when the
        rate is 0 or 1, which is why ``upper_95`` is reported as well.
    upper_95 : float
        One-sided 95% Clopper and Pearson (1934) upper confidence bound on the true rate.
    lower_95 : float
        One-sided 95% Clopper-Pearson lower bound.
    """

    events: int
    trials: int
    rate: float
    standard_error: float
    upper_95: float
    lower_95: float


@dataclass(frozen=True)
class CheckRate:
    """How often one check of the verdict failed across the simulated sweeps.

    Attributes
    ----------
    id : str
        The check's id (as in the audit JSON).
    required : bool
        Whether the policy requires the check (a failure then makes the verdict no-go).
    failures : Rate
        Failures among the sweeps where the check applied (``failures.trials`` of them).
    """

    id: str
    required: bool
    failures: Rate


@dataclass(frozen=True, eq=False)
class VerdictCalibration:
    """Go rate and per-check failure rates of the full audit over simulated sweeps.

    Attributes
    ----------
    sweeps : int
        Number of simulated sweeps audited.
    go : Rate
        Share of sweeps with a "go" verdict: the false-go rate when no configuration has an edge,
        the power when one has.
    checks : tuple of CheckRate
        Every check the verdict ran, in the verdict's order.
    decisions : ndarray of bool, shape (sweeps,)
        True where the verdict was go (raw material).
    check_ids : tuple of str
        Column labels of ``check_failed``.
    check_failed : ndarray of float, shape (sweeps, checks)
        1.0 failed, 0.0 passed, NaN where the check did not apply.
    selected : ndarray of int, shape (sweeps,)
        The configuration each audit judged.
    planted_selected : Rate or None
        Share of sweeps in which the audit judged a configuration that carries the planted edge
        (None when no edge was planted).
    audit_seeds : ndarray of int
        The seed of each audit (replay one with ``AuditSettings(seed=...)``).
    resamples : int
        Bootstrap resamples per audit.
    policy : Policy
    seed : int
    yardstick : Rate or None
        Go rate of the plain Bonferroni max-t test (:func:`sweepaudit.methods.snooping.bonferroni_max_t`)
        on the same sweeps: the floor the verdict should beat on power at no worse size.
    yardstick_decisions : ndarray of bool or None
        Its decision on each sweep.
    """

    sweeps: int
    go: Rate
    checks: tuple[CheckRate, ...]
    decisions: np.ndarray
    check_ids: tuple[str, ...]
    check_failed: np.ndarray
    selected: np.ndarray
    planted_selected: Rate | None
    audit_seeds: np.ndarray
    resamples: int
    policy: Policy
    seed: int
    yardstick: Rate | None = None
    yardstick_decisions: np.ndarray | None = None

    def check(self, check_id: str) -> CheckRate:
        """The failure rate of one check, by id."""
        for c in self.checks:
            if c.id == check_id:
                return c
        raise InputError(f"no check {check_id!r} in this calibration; checks are {', '.join(self.check_ids)}")


@dataclass(frozen=True, eq=False)
class SweepCalibration:
    """This sweep's false-go rate under the active policy, and power against a named edge.

    Attributes
    ----------
    sweep : Sweep
        The real sweep.
    observed : str
        The real sweep's own verdict ("go" or "no-go") with the same settings.
    selected_index : int
        The configuration the audit selected in the real sweep.
    configuration : str
        Its name.
    null : VerdictCalibration
        Audits of null sweeps shaped like the real one: its go rate is the false-go rate.
    power : VerdictCalibration or None
        Audits of the same null sweeps with the edge planted in ``configuration``; None when the
        edge is 0.
    edge_annual_sharpe : float
        The planted edge as an annualized Sharpe ratio.
    edge_per_window : float or None
        The per-window mean added: edge / sqrt(periods per year) * sd of the configuration.
    null_block_length : float
        Mean block length of the null-sweep bootstrap.
    block_series : {"average", "selected"}
    sweeps, resamples, seed : int
    """

    sweep: Sweep
    observed: str
    selected_index: int
    configuration: str
    null: VerdictCalibration
    power: VerdictCalibration | None
    edge_annual_sharpe: float
    edge_per_window: float | None
    null_block_length: float
    block_series: BlockSeries
    sweeps: int
    resamples: int
    seed: int




@dataclass(frozen=True, eq=False)
class FigureMaterial:
    """The raw material of the report beyond the document: what its figures draw (no statistic
    computed; picked from the evidence by :func:`sweepaudit.document.figure_material`).

    Attributes
    ----------
    selected_index : int
        The column of the configuration judged.
    mean_distribution : ndarray, shape (B,)
        Its resampled mean excess returns (the bootstrap histogram).
    returns : ndarray, shape (T, N)
        The sweep's excess returns (the cumulative curves of the selected and the average configuration).
    dates : DatetimeIndex or None
        The window dates, when the windows are dated.
    sharpe_grid : SharpeGrid or None
        The Sharpe ratios on the parameter grid (two-parameter sweeps only).
    logits, in_sample, out_of_sample : ndarray or None
        CSCV's per-split logits and the in-sample winner's statistic in and out of sample.
    split_statistic : str or None
        The statistic CSCV ranked by ("sharpe" or "mean").
    deflation_curve : DeflatedCurve or None
        The deflated Sharpe probability against the number of trials.
    surface : PeakShape or None
        The parameter-surface result, for the report's words on which part of the rule held.
    walk_forward : WalkForward or None
        The walk-forward record and the selected configuration's over the same windows.
    stability : EdgeStability or None
        The rolling figures and the sub-periods they are drawn against.
    """

    selected_index: int
    mean_distribution: np.ndarray
    returns: np.ndarray
    dates: pd.DatetimeIndex | None = None
    sharpe_grid: SharpeGrid | None = None
    logits: np.ndarray | None = None
    in_sample: np.ndarray | None = None
    out_of_sample: np.ndarray | None = None
    split_statistic: str | None = None
    deflation_curve: DeflatedCurve | None = None
    surface: PeakShape | None = None
    walk_forward: WalkForward | None = None
    stability: EdgeStability | None = None


def _evidence(name: str, doc: str) -> property:
    return property(lambda self: getattr(self.evidence, name), doc=doc)


@dataclass(frozen=True, eq=False, repr=False)
class AuditResult:
    """One audit, end to end: the evidence, the verdict on it and the JSON document of both.

    The data of an audit; :func:`sweepaudit.audit` returns :class:`sweepaudit.api.AuditResult`,
    which adds the ways to show and write it (a short ``repr``, the notebook view, the report, the
    figures, the terminal view). The evidence's fields are also readable here directly
    (``result.sharpe`` is ``result.evidence.sharpe``): each method's typed result.

    Attributes
    ----------
    evidence : Evidence
    verdict : Verdict
        Decided once, the baseline comparison included.
    document : dict
        The audit JSON (schema ``sweepaudit.audit/1``).
    figure_material : FigureMaterial
        The raw material of the report's figures.
    baseline : BaselineComparison or None
        The comparison with a baseline audit, when one was given.
    sensitivity : Sensitivity or None
        What would change the verdict (None when the audit was asked to skip it).
    """

    evidence: Evidence
    verdict: Verdict
    document: dict
    figure_material: FigureMaterial
    baseline: BaselineComparison | None = None
    sensitivity: Sensitivity | None = None

    sweep = _evidence("sweep", "The audited sweep.")
    settings = _evidence("settings", "The settings the audit ran with.")
    policy = _evidence("policy", "The policy the audit ran and was judged under.")
    selected = _evidence("selected", "The name of the configuration judged.")
    selected_index = _evidence("selected_index", "The column of the configuration judged.")
    selection_rule = _evidence("selection_rule", "Why that configuration was judged.")
    resamples = _evidence("resamples", "The shared bootstrap resamples.")
    intervals = _evidence("intervals", "Every configuration's bootstrap intervals (BootstrapIntervals).")
    sharpe_ratios = _evidence("sharpe_ratios", "Every configuration's per-window Sharpe ratio.")
    sharpe = _evidence("sharpe", "The selection-adjusted Sharpe inference (SharpeInference): PSR, DSR, track record.")
    haircut = _evidence("haircut", "The haircut Sharpe ratio (HaircutSharpe).")
    overfitting = _evidence("overfitting", "The CSCV result (CscvResult): PBO, degradation, dominance.")
    overfitting_diagnosis = _evidence("overfitting_diagnosis", "The CSCV diagnosis (OverfittingDiagnosis).")
    snooping = _evidence("snooping", "The data-snooping tests (Snooping): reality check, SPA, StepM.")
    surface = _evidence("surface", "The parameter surface around the selected cell (PeakShape).")
    tails = _evidence("tails", "The family-stress test of the selected configuration (TailTest).")
    long_run = _evidence("long_run", "Every configuration's long-run variance (LongRunVariance).")
    deflation_curve = _evidence("deflation_curve", "The deflated probability against the trials (DeflatedCurve).")
    block_choice = _evidence("block_choice", "How the block length was chosen (BlockLengthChoice).")
    walk_forward = _evidence("walk_forward", "The walk-forward record of re-picking the winner (WalkForward).")
    stability = _evidence("stability", "The selected configuration's edge over time (EdgeStability).")
    warnings = _evidence("warnings", "What the reader should weigh.")
    confidence = _evidence("confidence", "The interval level.")

    @property
    def decision(self) -> str:
        """``"go"`` or ``"no-go"``."""
        return self.verdict.decision

    @property
    def checks(self) -> tuple[Check, ...]:
        """Every check the verdict ran, in display order."""
        return self.verdict.checks

    def check(self, check_id: str) -> Check:
        """One check of the verdict, by id."""
        for c in self.verdict.checks:
            if c.id == check_id:
                return c
        raise InputError(f"no check {check_id!r} in this audit; checks are {', '.join(c.id for c in self.checks)}")

    def __repr__(self) -> str:
        return f"<{type(self).__name__}: {self.verdict.decision}, selected {self.evidence.selected!r}>"


@dataclass(frozen=True, eq=False, repr=False)
class CalibrationResult:
    """A calibration of the verdict on sweeps shaped like one, and its JSON document.

    The data; :func:`sweepaudit.calibrate` returns :class:`sweepaudit.api.CalibrationResult`,
    which adds the ways to show it.

    Attributes
    ----------
    calibration : SweepCalibration
        The false-go rate, the power and each check's failure rates, with their raw material.
    document : dict
        The calibration JSON (schema ``sweepaudit.calibration/1``).
    """

    calibration: SweepCalibration
    document: dict

    @property
    def false_go(self) -> Rate:
        """The go rate on null sweeps: the false-go rate."""
        return self.calibration.null.go

    @property
    def power(self) -> Rate | None:
        """The go rate with the edge planted (None when the edge was 0)."""
        return None if self.calibration.power is None else self.calibration.power.go

    @property
    def null(self) -> VerdictCalibration:
        return self.calibration.null

    @property
    def sweep(self) -> Sweep:
        return self.calibration.sweep

    @property
    def configuration(self) -> str:
        """The configuration the audit selected in the real sweep (the edge is planted there)."""
        return self.calibration.configuration

    def __repr__(self) -> str:
        return f"<{type(self).__name__}: false-go rate {self.false_go.rate:.3f} over {self.false_go.trials} sweeps>"


@dataclass(frozen=True, eq=False)
class Inspection:
    """How an input was read, without an audit: returned by :func:`sweepaudit.inspect`.

    Attributes
    ----------
    sweep : Sweep
        The sweep exactly as an audit would read it.
    document : dict
        The inspection JSON (schema ``sweepaudit.inspect/1``), the source of every figure shown.
    """

    sweep: Sweep
    document: dict

    @property
    def reading(self) -> dict:
        """Layout, window column and date form, units, value column, benchmark, aggregation and the
        periods per year with how they were found."""
        return self.document["reading"]

    @property
    def warnings(self) -> list[str]:
        return self.document["warnings"]

    @property
    def layout(self) -> str:
        return self.document["reading"]["layout"]

    @property
    def window_column(self) -> str | None:
        return self.document["reading"]["window_column"]

    @property
    def periods_per_year(self) -> float | None:
        return self.document["reading"]["periods_per_year"]

    @property
    def plausibility(self) -> dict:
        return self.document["plausibility"]
