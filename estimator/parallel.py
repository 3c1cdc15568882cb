"""Run independent jobs (refits of properties, figures to draw) in forked workers.

The refits of two properties share nothing, and a refit is almost all small,
single-threaded scikit-learn fits (BLAS is held to one thread, see
:func:`estimator.refit.candidates.single_threaded_blas`); the figures of a report
are drawn one by one by Agg. On a machine with two or more cores such jobs run side
by side. Workers are *forked*: they inherit the already imported libraries and the
job's inputs, so nothing is imported or pickled twice; only the results travel back.
A shared counter carries the workers' progress to the parent's progress bar.

Results do not depend on the number of workers: every fit is seeded by the job,
never by the process, and a figure's pixels do not depend on where it is drawn.
Where forking is unavailable (not POSIX), inside a daemonic process, with one
usable core, with one job, or when ``FAME_ESTIMATOR_WORKERS=1``, the jobs run one
after the other in this process.
"""

from __future__ import annotations

import multiprocessing
import os
from collections.abc import Callable, Sequence
from typing import Any

__all__ = ["ENV_WORKERS", "run_jobs", "worker_count"]

#: Environment variable that caps the number of worker processes (``1``: no workers).
ENV_WORKERS = "FAME_ESTIMATOR_WORKERS"

# set in the parent just before forking; the children read them (inherited memory)
_JOBS: tuple[Callable[..., Any], Sequence[Any]] | None = None
_COUNTER: Any = None


def worker_count(n_jobs: int) -> int:
    """Workers to use for ``n_jobs`` jobs: cores available to this process, capped.

    Examples
    --------
    >>> worker_count(1)
    1
    """
    if n_jobs <= 1 or "fork" not in multiprocessing.get_all_start_methods():
        return 1
    if multiprocessing.current_process().daemon:
        return 1
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        cores = os.cpu_count() or 1
    limit = os.environ.get(ENV_WORKERS, "").strip()
    if limit.isdigit() and int(limit) >= 1:
        cores = min(cores, int(limit))
    return max(1, min(n_jobs, cores))


def _tick(n: int) -> None:
    with _COUNTER.get_lock():
        _COUNTER.value += n


def _run_one(index: int) -> tuple[str, Any]:
    func, items = _JOBS
    try:
        return "ok", func(items[index], _tick)
    except Exception as exc:  # sent back and raised again in the parent
        return "error", (type(exc), exc.args)


def run_jobs(
    func: Callable[[Any, Callable[[int], None] | None], Any],
    items: Sequence[Any],
    *,
    progress: Callable[[int], None] | None = None,
) -> list[Any]:
    """``[func(item, tick) for item in items]``, in forked workers where that helps.

    ``func(item, tick)`` does one job and calls ``tick(n)`` after each ``n`` units of
    work (``tick`` is None when there is no progress bar and jobs run here). The
    first error of a job is raised again here, as its own type with its message.
    """
    global _JOBS, _COUNTER
    workers = worker_count(len(items))
    if workers <= 1:
        return [func(item, progress) for item in items]
    ctx = multiprocessing.get_context("fork")
    _JOBS, _COUNTER = (func, items), ctx.Value("q", 0)
    try:
        with ctx.Pool(workers) as pool:
            pending = pool.map_async(_run_one, range(len(items)), chunksize=1)
            shown = 0
            while not pending.ready():
                pending.wait(0.2)
                done = _COUNTER.value
                if progress is not None and done > shown:
                    progress(done - shown)
                    shown = done
            outcomes = pending.get()
            if progress is not None and _COUNTER.value > shown:
                progress(_COUNTER.value - shown)
    finally:
        _JOBS, _COUNTER = None, None
    for status, value in outcomes:
        if status == "error":
            kind, args = value
            try:
                error = kind(*args)
            except Exception:  # an error type built from other arguments
                error = RuntimeError(*args)
            raise error
    return [value for _, value in outcomes]

