"""Worker processes for the order search, with one BLAS thread each.

A search hands its data to forked worker processes once (the fork inherits it; nothing is
pickled but the orders and the results), and maps screens and exact fits over them in chunks.
One BLAS thread per process and in the caller (threadpoolctl, restored afterwards): the matrices
are small (a few thousand rows, at most about 100 columns), and several multi-threaded BLAS pools
on two cores slowed the fits three- to five-fold in our measurements. With one worker, or where
``fork`` is not available, everything runs in the calling process.
"""

from __future__ import annotations

import contextlib
import functools
import logging
import multiprocessing as mp
import os
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from typing import Any

from ..checks import machine_cores

log = logging.getLogger(__name__)

#: The data of the search under way, as seen by the tasks (in the caller and in every worker).
SHARED: dict[str, Any] = {}


def default_workers() -> int:
    """Worker processes for a search: ``LOADCORE_WORKERS`` if set, else up to 2 cores; never
    more than the machine's cores (:func:`loadcore.checks.machine_cores`)."""
    cores = machine_cores()
    env = os.environ.get("LOADCORE_WORKERS", "").strip()
    if env.isdigit() and int(env) > 0:
        return min(int(env), cores)
    return min(2, cores)


def _limit_blas() -> None:
    try:
        from threadpoolctl import threadpool_limits

        threadpool_limits(1)
    except ImportError:  # pragma: no cover - threadpoolctl is a declared dependency
        pass


def _share(data: dict[str, Any], limit_blas: bool = True) -> None:
    SHARED.clear()
    SHARED.update(data)
    if limit_blas:
        _limit_blas()


@contextlib.contextmanager
def one_blas_thread() -> Iterator[None]:
    """One BLAS thread in this process for the duration (restored after)."""
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:  # pragma: no cover - threadpoolctl is a declared dependency
        yield
        return
    with threadpool_limits(1):
        yield


def single_blas(fn):
    """Decorator: run ``fn`` under :func:`one_blas_thread`."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        with one_blas_thread():
            return fn(*args, **kwargs)

    return wrapper


class Runner:
    """Maps tasks over forked workers (or in this process when ``workers`` is 1).

    Use as a context manager: on entry the data are shared (:data:`SHARED`) and the workers
    forked; on exit the workers stop. A task is a module-level function of one argument that
    reads :data:`SHARED`.
    """

    def __init__(self, data: dict[str, Any], workers: int) -> None:
        self.workers = max(1, min(int(workers), machine_cores()))
        self.data = data
        self.pool: ProcessPoolExecutor | None = None

    def __enter__(self) -> Runner:
        _share(self.data, limit_blas=False)
        if self.workers > 1 and "fork" in mp.get_all_start_methods():
            try:
                self.pool = ProcessPoolExecutor(
                    max_workers=self.workers,
                    mp_context=mp.get_context("fork"),
                    initializer=_limit_blas,
                )
            except (OSError, RuntimeError) as exc:  # no processes here: work in this one
                log.warning("worker processes unavailable (%s); working in this process", exc)
                self.pool = None
        return self

    def __exit__(self, *exc) -> None:
        if self.pool is not None:
            self.pool.shutdown(cancel_futures=True)
        SHARED.clear()

    def map(
        self, fn: Callable[[Any], Any], items: list, tick: Callable[[], None] | None = None
    ) -> Iterable:
        """``fn`` over ``items`` in order; ``tick()`` after each result."""
        done = 0
        if self.pool is not None:
            chunk = max(1, len(items) // (8 * self.workers))
            try:
                for out in self.pool.map(fn, items, chunksize=chunk):
                    done += 1
                    if tick:
                        tick()
                    yield out
                return
            except BrokenProcessPool as exc:  # a worker died: finish in this process
                log.warning("a worker process stopped (%s); working in this process", exc)
                self.pool = None
        for it in items[done:]:
            out = fn(it)
            if tick:
                tick()
            yield out
