"""Tests of the engine: block plans within the memory budget, the kept weights, the thread policy and
the Dask executor.

Internal consistency only: the kept weights against the resamples' own weights, the products on
several threads against one thread, and the audit on a local Dask cluster of two worker processes
against the same audit in process (the figures must agree; see tests/test_audit.py for the rounding
the comparison allows).
"""

import numpy as np
import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit.engine import WeightTable, budget_for_width, executor_for, free_cores, plan_blocks
from sweepaudit.engine.blocks import BLOCK_ARRAYS
from sweepaudit.engine.cluster import SCHEDULER_VARIABLE
from sweepaudit.engine.threads import THREADS_VARIABLE
from sweepaudit.resample import draw_resamples, resampled_moments

from .test_audit import assert_same_audit


def test_kept_weights_are_the_resamples_weights():
    resamples = draw_resamples(300, count=700, block_length=6.5, seed=2)
    table = WeightTable(resamples)
    assert table.table.dtype == np.uint16 and table.table.nbytes == 700 * 300 * 2
    np.testing.assert_array_equal(np.concatenate(list(table.chunks(256))),
                                  np.concatenate(list(resamples.weight_chunks(256))))
    assert WeightTable(draw_resamples(200, count=10, block_length=3, seed=1)).table.dtype == np.uint8


def test_the_plan_streams_beyond_the_budget_and_sizes_blocks_by_it():
    small = plan_blocks(1_000, 2_000, 10_000, 2**30)
    assert small.in_memory
    large = plan_blocks(100_000, 2_000, 10_000, 2**30)
    assert not large.in_memory and large.keep_weights
    # The block's temporaries fit what the budget leaves after the weights and one chunk.
    assert large.width * BLOCK_ARRAYS * 10_000 * 8 <= 2**30 - WeightTable.bytes_for(10_000, 2_000)
    assert large.blocks(100_000)[-1][1] == 100_000
    assert plan_blocks(100_000, 2_000, 10_000, budget_for_width(50, 2_000, 10_000)).width == 50
    assert plan_blocks(10, 300, 100, 0).width == 1  # never less than one configuration


def test_products_on_several_threads_are_the_same_bits():
    rng = np.random.default_rng(4)
    x = rng.standard_normal((400, 300))
    resamples = draw_resamples(400, count=3_000, block_length=4.0, seed=9)
    one = resampled_moments(x, resamples, chunk=256, threads=1)
    two = resampled_moments(x, resamples, chunk=256, threads=2)
    np.testing.assert_array_equal(one.mean, two.mean)
    np.testing.assert_array_equal(one.second, two.second)


def test_lazy_weights_are_drawn_as_read_and_kept():
    resamples = draw_resamples(300, count=700, block_length=6.5, seed=2)
    lazy = WeightTable(resamples, lazy=True)
    first = np.concatenate(list(lazy.chunks(256)))  # drawn while read
    np.testing.assert_array_equal(first, np.concatenate(list(resamples.weight_chunks(256))))
    np.testing.assert_array_equal(lazy.table, WeightTable(resamples).table)
    np.testing.assert_array_equal(np.concatenate(list(lazy.chunks(100))), first)  # read back from the table


def test_an_audit_is_the_same_bits_on_one_thread_or_two(monkeypatch):
    """CSCV on a second thread beside the resampling, the products in chunk threads: the JSON document
    is the same whether one core or two are free."""
    rng = np.random.default_rng(8)
    x = 0.01 * (0.5 * rng.standard_normal((260, 1)) + rng.standard_normal((260, 30)))
    x[:, 4] += 0.002
    x[:150, 9] = 0.0  # idle for more than half the blocks: CSCV warns, and its warnings keep their place
    sweep = sweep_from_array(x, periods_per_year=52)
    documents = []
    for threads in ("1", "2"):
        monkeypatch.setenv(THREADS_VARIABLE, threads)
        documents.append(audit(sweep, settings=AuditSettings(seed=2, resamples=500)).document)
    assert documents[0] == documents[1]
    assert documents[0]["warnings"]


def test_free_cores_subtract_the_load_and_obey_the_variable(monkeypatch):
    monkeypatch.delenv(THREADS_VARIABLE, raising=False)
    monkeypatch.setattr("sweepaudit.engine.threads._cores", lambda: 2)
    assert free_cores(load=0.2) == 2
    assert free_cores(load=1.0) == 2  # this process's own running thread
    assert free_cores(load=2.0) == 1
    assert free_cores(load=5.0) == 1  # never below one
    monkeypatch.setenv(THREADS_VARIABLE, "3")
    assert free_cores(load=5.0) == 3


def test_no_scheduler_means_in_process(monkeypatch):
    monkeypatch.delenv(SCHEDULER_VARIABLE, raising=False)
    assert executor_for().name == "in-process"


def test_a_local_dask_cluster_of_two_workers_gives_the_in_process_figures():
    rng = np.random.default_rng(3)
    x = 0.01 * (0.5 * rng.standard_normal((300, 1)) + rng.standard_normal((300, 45)))
    x[:, 7] += 0.0012
    x[:, 30:34] += 0.0009
    x[[50, 120], 10:] -= 0.08
    sweep = sweep_from_array(x, periods_per_year=52)
    settings = AuditSettings(seed=4, resamples=999)
    budget = budget_for_width(7, 300, 999)
    in_process = audit(sweep, settings=settings, memory_budget=budget)
    on_dask = audit(sweep, settings=settings, memory_budget=budget, workers=2)
    assert_same_audit(in_process, on_dask)
    # The same single-threaded products on the same blocks: here even the bits agree.
    assert on_dask.document["results"] == in_process.document["results"]


def test_local_workers_start_without_the_malloc_trim_threshold(monkeypatch):
    """Dask gives worker processes MALLOC_TRIM_THRESHOLD_ by default, which made every audit on a worker
    1.8x slower (docs/performance.md); the local cluster's workers must start without it."""
    import os

    from sweepaudit.engine.cluster import DaskCluster

    monkeypatch.delenv("MALLOC_TRIM_THRESHOLD_", raising=False)
    cluster = DaskCluster(workers=1)
    try:
        found = cluster.client.run(os.environ.get, "MALLOC_TRIM_THRESHOLD_")
    finally:
        cluster.close()
    assert list(found.values()) == [None]


def test_an_unreachable_scheduler_is_a_clear_error(monkeypatch):
    from sweepaudit.errors import InputError

    monkeypatch.setattr("sweepaudit.engine.cluster.CONNECT_TIMEOUT", "1s")
    sweep = sweep_from_array(np.random.default_rng(1).standard_normal((40, 6)) * 0.01)
    with pytest.raises(InputError, match="cannot reach the Dask scheduler at 'tcp://127.0.0.1:9'"):
        audit(sweep, settings=AuditSettings(seed=1, resamples=100), scheduler="tcp://127.0.0.1:9")


def test_calibration_on_a_local_dask_cluster_counts_the_same_verdicts():
    from sweepaudit.calibration import calibrate_sweep

    rng = np.random.default_rng(6)
    sweep = sweep_from_array(0.01 * rng.standard_normal((120, 12)), periods_per_year=52)
    here = calibrate_sweep(sweep, sweeps=4, resamples=200, seed=3)
    there = calibrate_sweep(sweep, sweeps=4, resamples=200, seed=3, workers=2)
    np.testing.assert_array_equal(here.null.decisions, there.null.decisions)
    np.testing.assert_array_equal(here.null.check_failed, there.null.check_failed)
    np.testing.assert_array_equal(here.power.selected, there.power.selected)
    assert here.null.check_ids == there.null.check_ids
