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
import multiprocessing.connection
import os
import time
from collections.abc import Callable, Sequence
from typing import Any

__all__ = ["ENV_WORKERS", "STALL_SECONDS", "run_jobs", "worker_count"]

#: Environment variable that caps the number of worker processes (``1``: no workers).
ENV_WORKERS = "FAME_ESTIMATOR_WORKERS"

#: Seconds without any progress (no unit of work, no job finished) after which the
#: workers are killed and the jobs run again here, one after the other: a forked
#: worker can block on a lock some other thread of the parent held at the fork.
STALL_SECONDS = 60.0

# set in the parent just before forking; the children read them (inherited memory)
_JOBS: tuple[Callable[..., Any], Sequence[Any]] | None = None
_COUNTER: Any = None


class _Stalled(Exception):
    """The workers made no progress for :data:`STALL_SECONDS`, or one died."""


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


def _worker(indices: list[int], conn) -> None:  # pragma: no cover - runs in a child
    """Run the jobs ``indices`` and send ``(index, status, value)`` for each."""
    func, items = _JOBS
    for index in indices:
        try:
            message = (index, "ok", func(items[index], _tick))
        except Exception as exc:  # sent back and raised again in the parent
            message = (index, "error", (type(exc), exc.args))
        conn.send(message)
    conn.close()


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
    Should the workers stall (no progress for :data:`STALL_SECONDS`) or die, they
    are killed and every job runs here instead, with the same results.
    """
    workers = worker_count(len(items))
    if workers > 1:
        try:
            return _forked(func, items, workers, progress)
        except _Stalled:
            pass
    return [func(item, progress) for item in items]


def _forked(func, items, workers, progress) -> list[Any]:
    global _JOBS, _COUNTER
    ctx = multiprocessing.get_context("fork")
    _JOBS, _COUNTER = (func, items), ctx.Value("q", 0)
    procs, conns = [], {}
    try:
        for w in range(workers):
            receive, send = ctx.Pipe(duplex=False)
            proc = ctx.Process(target=_worker, args=(list(range(w, len(items), workers)), send),
                               daemon=True)
            proc.start()
            send.close()
            procs.append(proc)
            conns[receive] = proc
        results: dict[int, tuple[str, Any]] = {}
        shown, last_seen, last_change = 0, (0, 0), time.monotonic()
        while conns:
            for conn in multiprocessing.connection.wait(list(conns), timeout=0.2):
                try:
                    index, status, value = conn.recv()
                    results[index] = (status, value)
                except EOFError:  # this worker has sent all it will send
                    del conns[conn]
            done = _COUNTER.value
            if progress is not None and done > shown:
                progress(done - shown)
                shown = done
            now = time.monotonic()
            if (done, len(results)) != last_seen:
                last_seen, last_change = (done, len(results)), now
            elif now - last_change > STALL_SECONDS:
                raise _Stalled
        if len(results) != len(items):  # a worker died before sending all its jobs
            raise _Stalled
    finally:
        for proc in procs:
            if proc.is_alive():
                proc.kill()
            proc.join(timeout=5)
        for conn in list(conns):
            conn.close()
        _JOBS, _COUNTER = None, None
    for index in range(len(items)):
        status, value = results[index]
        if status == "error":
            kind, args = value
            try:
                error = kind(*args)
            except Exception:  # an error type built from other arguments
                error = RuntimeError(*args)
            raise error
    return [results[index][1] for index in range(len(items))]
