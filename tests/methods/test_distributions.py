"""The normal and Student's t functions the methods read, held to scipy.stats (the reference library):
the same bits on a grid of arguments, tails and degrees of freedom included."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from sweepaudit.methods import distributions as d

RNG = np.random.default_rng(20240607)
X = np.concatenate([RNG.standard_normal(4_000) * 4.0, [0.0, 1e-300, -1e-300, 8.5, -8.5, 38.0, -38.0]])
Q = np.concatenate([RNG.random(4_000), [1e-300, 1e-12, 0.025, 0.5, 0.975, 1.0 - 1e-12]])
DF = np.concatenate([RNG.random(X.size - 3) * 200.0 + 0.5, [1.0, 2.0, np.inf]])


@pytest.mark.parametrize(
    ("ours", "reference", "points"),
    [
        (d.normal_cdf, stats.norm.cdf, X),
        (d.normal_sf, stats.norm.sf, X),
        (d.normal_ppf, stats.norm.ppf, Q),
        (d.normal_isf, stats.norm.isf, Q),
    ],
)
def test_normal_functions_are_scipy_stats_bits(ours, reference, points):
    assert np.array_equal(ours(points), reference(points))
    # Scalars as the methods pass them.
    assert all(float(ours(v)) == float(reference(v)) for v in points[:200])


def test_student_t_functions_are_scipy_stats_bits():
    df = DF[: X.size]
    q = np.resize(Q, X.size)
    assert np.array_equal(d.t_cdf(X, df), stats.t.cdf(X, df))
    assert np.array_equal(d.t_sf(X, df), stats.t.sf(X, df))
    assert np.array_equal(d.t_ppf(q, df), stats.t.ppf(q, df))
    # The upper log tail is read at |t| only (normal_scores).
    assert np.array_equal(d.t_upper_log_sf(np.abs(X), df), stats.t.logsf(np.abs(X), df))


def test_an_audit_does_not_import_scipy_stats():
    import subprocess
    import sys

    code = (
        "import sys, numpy as np\n"
        "from sweepaudit import AuditSettings, audit\n"
        "x = np.random.default_rng(1).standard_normal((120, 6)) * 0.01\n"
        "audit(x, settings=AuditSettings(seed=1, resamples=200))\n"
        "print('scipy.stats' in sys.modules)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip().splitlines()[-1] == "False"
