"""Forked refit jobs: same results as one after the other, errors and progress carried back."""

from __future__ import annotations

import os
import time

import numpy as np
import pytest

from estimator import parallel
from estimator.errors import InputFileError
from estimator.parallel import map_in_order, run_jobs, worker_count


def _square(item: int, tick) -> int:
    if tick is not None:
        tick(item)
    return item * item


def _refuse(item: int, tick) -> int:
    if item == 2:
        raise InputFileError(f"lab.csv: job {item} refused")
    return item


def test_jobs_in_workers_return_results_in_order(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    ticks: list[int] = []
    assert run_jobs(_square, [1, 2, 3], progress=ticks.append) == [1, 4, 9]
    assert sum(ticks) == 6  # every unit of work reaches the parent's progress bar


def test_one_worker_runs_the_jobs_here(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "1")
    assert worker_count(3) == 1
    assert run_jobs(_square, [1, 2, 3]) == [1, 4, 9]


def test_a_job_error_is_raised_again_with_its_type_and_message(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    with pytest.raises(InputFileError, match="lab.csv: job 2 refused"):
        run_jobs(_refuse, [1, 2, 3])


def test_refit_of_several_properties_does_not_depend_on_the_workers(monkeypatch):
    # regression test: the same choices and held-out predictions, forked or not
    import pandas as pd

    from estimator.profiles.profile import Profile
    from estimator.refit import fit_properties
    from estimator.tables import species_keys

    keys = species_keys()
    base = Profile.from_oils(("rapeseed", "soybean", "palm", "beef-tallow")).wt_pct
    rng = np.random.default_rng(3)
    w = base[rng.integers(0, len(base), 16)] * np.exp(rng.normal(0, 0.15, (16, len(keys))))
    w = 100.0 * w / w.sum(axis=1, keepdims=True)
    ids = [f"S{i:02d}" for i in range(len(w))]
    measured = pd.DataFrame({
        "cetane_number": 45 + 0.25 * w[:, keys.index("C16:0")] + rng.normal(0, 0.5, len(w)),
        "cfpp_C": -10 + 0.3 * w[:, keys.index("C16:0")] + rng.normal(0, 0.5, len(w)),
    }, index=ids)
    sample = Profile.from_frame(pd.DataFrame(w, index=ids, columns=keys), metadata=measured,
                                source="lab.csv")
    props = ["cetane_number", "cfpp_C"]
    monkeypatch.setenv(parallel.ENV_WORKERS, "1")
    here = fit_properties(sample, props, min_samples=10)
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    forked = fit_properties(sample, props, min_samples=10)
    for a, b in zip(here, forked, strict=True):
        assert a.chosen.candidate == b.chosen.candidate
        np.testing.assert_array_equal(a.chosen.predictions, b.chosen.predictions)


_PARENT = os.getpid()


def _hangs_in_a_worker(item: int, tick) -> int:
    if os.getpid() != _PARENT:
        time.sleep(3600)  # as a worker blocked on a lock inherited at the fork
    return item + 1


def _dies_in_a_worker(item: int, tick) -> int:
    if os.getpid() != _PARENT:
        os._exit(3)
    return item + 1


def test_stalled_workers_are_killed_and_the_jobs_run_here(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    monkeypatch.setattr(parallel, "STALL_SECONDS", 1.0)
    start = time.monotonic()
    assert run_jobs(_hangs_in_a_worker, [1, 2, 3]) == [2, 3, 4]
    assert time.monotonic() - start < 30


def test_a_worker_that_dies_leaves_the_jobs_to_this_process(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    assert run_jobs(_dies_in_a_worker, [1, 2, 3]) == [2, 3, 4]


# --- map_in_order: a stream of items (pieces of a large predict) ---------------------

def _negate(item: int) -> int:
    return -item


def _refuse_three(item: int) -> int:
    if item == 3:
        raise InputFileError(f"lots.csv: piece {item} refused")
    return item


def _hang_in_stream_worker(item: int) -> int:
    if os.getpid() != _PARENT:
        time.sleep(3600)
    return item * 10


def _die_in_stream_worker(item: int) -> int:
    if os.getpid() != _PARENT:
        os._exit(3)
    return item * 10


def _pid(item: int) -> int:
    return os.getpid()


def test_a_stream_comes_back_in_order_from_the_workers(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    pairs = list(map_in_order(_negate, iter(range(25))))
    assert pairs == [(i, -i) for i in range(25)]
    # and the work was done elsewhere
    assert os.getpid() not in {pid for _, pid in map_in_order(_pid, range(6))}


def test_a_stream_reads_only_a_few_items_ahead_of_what_is_taken(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    read: list[int] = []

    def items():
        for i in range(100):
            read.append(i)
            yield i

    stream = map_in_order(_negate, items(), ahead=2)
    assert next(stream) == (0, 0)
    time.sleep(0.2)
    assert len(read) <= 1 + 2 * 2 + 1  # the one given out, 2 per worker, the one being read
    stream.close()


def test_a_stream_of_one_item_runs_here_without_workers(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    assert list(map_in_order(_pid, [7])) == [(7, os.getpid())]
    assert list(map_in_order(_pid, [])) == []


def test_a_stream_error_comes_out_in_turn_with_its_type(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    got = []
    with pytest.raises(InputFileError, match="lots.csv: piece 3 refused"):
        for _, value in map_in_order(_refuse_three, range(8)):
            got.append(value)
    assert got == [0, 1, 2]


def test_an_error_of_the_items_themselves_stops_the_stream(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")

    def items():
        yield from range(5)
        raise InputFileError("lots.csv: row 9, column 'C16:0': not a number")

    with pytest.raises(InputFileError, match="row 9"):
        list(map_in_order(_negate, items()))


def test_a_stalled_stream_runs_the_rest_here(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    monkeypatch.setattr(parallel, "STALL_SECONDS", 1.0)
    start = time.monotonic()
    assert [v for _, v in map_in_order(_hang_in_stream_worker, range(9))] == [
        i * 10 for i in range(9)]
    assert time.monotonic() - start < 30


def test_a_stream_whose_worker_dies_runs_the_rest_here(monkeypatch):
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    assert [v for _, v in map_in_order(_die_in_stream_worker, range(9))] == [
        i * 10 for i in range(9)]
