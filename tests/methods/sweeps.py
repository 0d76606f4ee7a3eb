"""Shared inputs of the Sharpe-ratio tests: the deflated Sharpe paper's example and SYNTHETIC sweeps."""

from __future__ import annotations

import math

import numpy as np

# Bailey and Lopez de Prado (2014) numerical example, values from memory (METHODS.md):
# 100 trials, V = 1/2 for annualized Sharpe ratios, 5 years of daily data at 250 days a year,
# skewness -3, raw kurtosis 10, annualized SR 2.5.
PAPER = dict(
    sharpe=2.5 / math.sqrt(250),
    observations=1250,
    trials=100,
    trial_sharpe_variance=0.5 / 250,
    skewness=-3.0,
    kurtosis=10.0,
)


def neighbour_sweep(rng, windows, configurations, neighbourhood, means=None):
    """Synthetic sweep: configuration j averages noise columns j .. j + L - 1 (correlation 1 - d/L)."""
    noise = rng.standard_normal((windows, configurations + neighbourhood - 1))
    columns = np.stack(
        [noise[:, j : j + neighbourhood].sum(axis=1) / math.sqrt(neighbourhood) for j in range(configurations)],
        axis=1,
    )
    return columns if means is None else columns + means
