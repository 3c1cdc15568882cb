"""Run independent jobs (refits of properties, figures to draw, pieces of a large
``predict``) in forked workers.

The refits of two properties share nothing, and a refit is almost all small,
single-threaded scikit-learn fits (BLAS is held to one thread, see
:func:`single_threaded_blas`); the figures of a report
are drawn one by one by Agg. On a machine with two or more cores such jobs run side
by side. Workers are *forked*: they inherit the already imported libraries and the
job's inputs, so nothing is imported or pickled twice; only the results travel back.
A shared counter carries the workers' progress to the parent's progress bar.

:func:`map_in_order` streams: it takes items one by one from an iterator read here
(pieces of a large input file), hands each to an idle worker and gives the results
back in the items' order, with at most a few items in flight, so memory stays flat.

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
import signal
import time
from collections import deque
from collections.abc import Callable, Iterable, Iterator, Sequence
from typing import Any

__all__ = ["ENV_WORKERS", "STALL_SECONDS", "map_in_order", "run_jobs", "single_threaded_blas",
           "worker_count"]

#: Environment variable that caps the number of worker processes (``1``: no workers).
ENV_WORKERS = "FAME_ESTIMATOR_WORKERS"

#: Seconds without any progress (no unit of work, no job finished) after which the
#: workers are killed and the jobs run again here, one after the other: a forked
#: worker can block on a lock some other thread of the parent held at the fork.
STALL_SECONDS = 60.0

# set in the parent just before forking; the children read them (inherited memory)
_JOBS: tuple[Callable[..., Any], Sequence[Any]] | None = None
_COUNTER: Any = None
_STREAM_FUNC: Callable[[Any], Any] | None = None


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


def _child_setup(parent_pid: int, inherited: Sequence[Any]) -> None:  # pragma: no cover
    """First steps of a worker: close the parent's ends of every pipe inherited at the
    fork (a pipe must break when the parent is gone, not stay open in a sibling), and
    die with the parent (Linux), so that no worker outlives a killed command."""
    for conn in inherited:
        try:
            conn.close()
        except OSError:
            pass
    try:
        import ctypes

        ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass
    if os.getppid() != parent_pid:  # the parent died before the line above
        os._exit(0)


def _answer(conn, index: int, job: Callable[[], Any]) -> bool:  # pragma: no cover
    """Run ``job`` and send ``(index, status, value)``; False when the parent is gone.

    An error of the job is sent as its type and arguments, to be raised again in the
    parent (:func:`_rebuilt`).
    """
    try:
        message = (index, "ok", job())
    except Exception as exc:
        message = (index, "error", (type(exc), exc.args))
    try:
        conn.send(message)
    except OSError:
        return False
    return True


def _tick(n: int) -> None:
    with _COUNTER.get_lock():
        _COUNTER.value += n


def _worker(indices: list[int], conn, parent_pid: int,
            inherited: list) -> None:  # pragma: no cover - runs in a child
    """Run the jobs ``indices`` and send ``(index, status, value)`` for each."""
    _child_setup(parent_pid, inherited)
    func, items = _JOBS
    for index in indices:
        if not _answer(conn, index, lambda index=index: func(items[index], _tick)):
            return
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
            proc = ctx.Process(target=_worker, daemon=True,
                               args=(list(range(w, len(items), workers)), send, os.getpid(),
                                     [*conns, receive]))
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
            raise _rebuilt(value)
    return [results[index][1] for index in range(len(items))]


def _rebuilt(value) -> Exception:
    """The exception a worker sent back as ``(type, args)``."""
    kind, args = value
    try:
        return kind(*args)
    except Exception:  # an error type built from other arguments
        return RuntimeError(*args)


def single_threaded_blas():
    """A context in which BLAS runs on one thread (entered for good in a worker).

    Small matrices (a refit's tens of samples) spend more on waking and syncing BLAS
    threads than on the arithmetic, especially on a busy machine (measured by
    ``scripts/bench_fit.py``); and workers already fill the cores, so a BLAS thread
    per core in each of them only adds waiting. threadpoolctl comes with
    scikit-learn; without it this is a no-op.
    """
    import contextlib

    try:
        from threadpoolctl import threadpool_limits
    except ImportError:  # pragma: no cover
        return contextlib.nullcontext()
    return threadpool_limits(limits=1, user_api="blas")


def _stream_worker(conn, parent_pid: int, inherited: list) -> None:  # pragma: no cover
    """Answer ``(index, item)`` messages with ``(index, status, value)`` until None."""
    _child_setup(parent_pid, inherited)
    # the parent alone reacts to Ctrl-C and SIGTERM (its handler removes its temporary
    # files, which a worker must never do); it kills the workers when it stops
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    single_threaded_blas()  # held for the worker's life
    func = _STREAM_FUNC
    while True:
        try:
            message = conn.recv()
        except (EOFError, OSError):  # the parent is gone
            break
        if message is None:
            break
        index, item = message
        if not _answer(conn, index, lambda item=item: func(item)):
            return
    conn.close()


def map_in_order(
    func: Callable[[Any], Any],
    items: Iterable[Any],
    *,
    ahead: int = 2,
) -> Iterator[tuple[Any, Any]]:
    """``((item, func(item)) for item in items)``, computed in forked workers where that helps.

    ``items`` is read here, lazily; each item is pickled to an idle worker and its
    result pickled back. Pairs come out in the items' order. At most ``ahead`` items
    per worker are read and not yet given out, so memory stays flat however long
    ``items`` is. Workers start once a second item is read (one item runs here).

    An error raised by ``items`` comes out at once; an error of ``func`` comes out,
    as its own type with its message, when its item's turn comes. Should the workers
    stall (no result for :data:`STALL_SECONDS`) or die, they are killed and the rest
    runs here, with the same results.

    Examples
    --------
    >>> [result for _, result in map_in_order(abs, [-2, 3, -4])]
    [2, 3, 4]
    """
    it = iter(items)
    first = next(it, _END)
    if first is _END:
        return
    second = next(it, _END)
    if second is _END:
        yield first, func(first)
        return
    workers = worker_count(1 + max(int(ahead), 1))
    held: deque[tuple[Any, Any]] = deque([(0, first), (1, second)])  # read, not given out
    if workers > 1:
        try:
            yield from _stream(func, it, held, workers, max(int(ahead), 1))
            return
        except _Stalled:
            pass  # ``held`` has every item read and not yet given out
    for _, item in held:
        yield item, func(item)
    for item in it:
        yield item, func(item)


_END = object()


def _stream(func, it, held, workers, ahead):
    """The forked part of :func:`map_in_order`; raises _Stalled with ``held`` intact."""
    global _STREAM_FUNC
    ctx = multiprocessing.get_context("fork")
    _STREAM_FUNC = func
    procs, conns = [], []
    try:
        for _ in range(workers):
            mine, theirs = ctx.Pipe(duplex=True)
            proc = ctx.Process(target=_stream_worker, args=(theirs, os.getpid(), [*conns, mine]),
                               daemon=True)
            proc.start()
            theirs.close()
            procs.append(proc)
            conns.append(mine)
    finally:
        _STREAM_FUNC = None
    try:
        # an item is sent only to an idle worker (one blocked on receiving), so a
        # large item and a large result never wait on each other in full pipes
        idle = list(range(workers))
        running: dict[Any, int] = {}  # connection -> index of its item
        results: dict[int, tuple[str, Any]] = {}
        sent = 0  # items of ``held`` (in order) handed out so far, from ``held[0]``
        next_index = held[-1][0] + 1
        exhausted = False
        last_change = time.monotonic()
        while True:
            while idle and sent < len(held):
                index, item = held[sent]
                w = idle.pop()
                try:
                    conns[w].send((index, item))
                except OSError:  # the worker died
                    raise _Stalled from None
                running[conns[w]] = index
                sent += 1
            while held and held[0][0] in results:
                index, item = held.popleft()
                sent -= 1
                status, value = results.pop(index)
                if status == "error":
                    raise _rebuilt(value)
                yield item, value
            if not exhausted and len(held) < ahead * workers:
                item = next(it, _END)
                if item is _END:
                    exhausted = True
                else:
                    held.append((next_index, item))
                    next_index += 1
                continue
            if not held:
                return
            for conn in multiprocessing.connection.wait(list(running), timeout=0.2):
                try:
                    index, status, value = conn.recv()
                except (EOFError, OSError):  # the worker died
                    raise _Stalled from None
                results[index] = (status, value)
                del running[conn]
                idle.append(conns.index(conn))
                last_change = time.monotonic()
            if running and time.monotonic() - last_change > STALL_SECONDS:
                raise _Stalled
            if not running and sent < len(held) and not idle:  # pragma: no cover
                raise _Stalled
    finally:
        for conn in conns:
            try:
                conn.send(None)
            except OSError:
                pass
        for proc in procs:
            proc.join(timeout=0.5)
            if proc.is_alive():
                proc.kill()
                proc.join(timeout=5)
        for conn in conns:
            conn.close()
