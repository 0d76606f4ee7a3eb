"""Helpers several test modules share: SYNTHETIC sweeps (Gaussian noise plus edges), a random generator,
a pooled autocorrelation and the command-line runner."""

from __future__ import annotations

import numpy as np
import pandas as pd
from typer.testing import CliRunner

from sweepaudit.cli import app

runner = CliRunner()


def synthetic_returns(windows=60, edges=(0.012, 0.0, 0.0), seed=3):
    """SYNTHETIC excess returns: Gaussian noise (sd 1%) plus a fixed edge per configuration."""
    rng = np.random.default_rng(seed)
    return rng.normal(0.0, 0.01, size=(windows, len(edges))) + np.asarray(edges)

def write_wide(path, returns, names=None):
    names = names or [f"lookback={10 * (k + 1)}" for k in range(returns.shape[1])]
    frame = pd.DataFrame(returns, columns=names)
    frame.insert(0, "week_ending", pd.date_range("2020-01-03", periods=len(frame), freq="W-FRI").strftime("%Y-%m-%d"))
    frame.to_csv(path, index=False)
    return path

def run(args):
    result = runner.invoke(app, args)
    return result


def rng(seed: int = 0) -> np.random.Generator:
    return np.random.default_rng(seed)


def lag_correlation(x: np.ndarray, lag: int) -> float:
    """Pooled lag-k autocorrelation of the columns of x (each column demeaned)."""
    y = x - x.mean(axis=0)
    return float((y[lag:] * y[:-lag]).sum() / (y * y).sum())
