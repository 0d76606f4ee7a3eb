"""Tests of the audit JSON document's per-configuration listing (sweepaudit.document).

Internal consistency only: beyond the policy's ``listed_configurations`` the document lists the
selected configuration and the best and the worst by Sharpe ratio, says so, summarises every
configuration, and the report still draws from it.
"""

import numpy as np

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.policy import DEFAULT_POLICY
from sweepaudit.render.report import write_report


def _audit(limit, selected=None):
    rng = np.random.default_rng(0)
    x = 0.01 * rng.standard_normal((200, 60))
    x[:, 5] += 0.003
    return audit(sweep_from_array(x, periods_per_year=52), settings=AuditSettings(seed=1, resamples=300, selected=selected),
                 policy=DEFAULT_POLICY.replace(listed_configurations=limit))


def test_every_configuration_is_listed_up_to_the_limit():
    boot = _audit(60).document["results"]["bootstrap"]
    assert [c["configuration"] for c in boot["configurations"]] == [f"config {k}" for k in range(1, 61)]
    assert boot["listing"]["listed"] == boot["listing"]["of"] == 60
    assert boot["listing"]["rule"] == "every configuration"


def test_beyond_the_limit_the_best_the_worst_and_the_selected_are_listed(tmp_path):
    for selected in (None, "config 30"):
        result = _audit(10, selected)
        boot = result.document["results"]["bootstrap"]
        names = [c["configuration"] for c in boot["configurations"]]
        sharpe = result.evidence.sharpe_ratios
        order = np.argsort(sharpe)
        assert len(names) == 10 and boot["listing"] == {**boot["listing"], "listed": 10, "of": 60}
        assert result.selected in names
        assert f"config {order[0] + 1}" in names and f"config {order[-1] + 1}" in names
        assert names == sorted(names, key=lambda n: int(n.split()[1]))  # sweep order
        assert boot["listing"]["sharpe_quantiles"]["1"] == float(sharpe.max())
        write_report(tmp_path / "report.md", result.document, result.figure_material)
        assert "config" in (tmp_path / "report.md").read_text()
