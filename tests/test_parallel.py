"""Forked refit jobs: same results as one after the other, errors and progress carried back."""

from __future__ import annotations

import numpy as np
import pytest

from estimator import parallel
from estimator.errors import InputFileError
from estimator.parallel import run_jobs, worker_count


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
