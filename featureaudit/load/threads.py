"""One thread setting for the whole audit, and no nested pools.

Per-column work runs in one thread pool of ``n_jobs`` workers (numpy releases the GIL in
its sorting and searching loops) with BLAS/OpenMP pools capped at one thread inside it;
a LightGBM fit gets its own ``n_jobs`` threads only on samples large enough to gain from
them, with the BLAS pools capped while it runs. On a 2-core machine with the other core
busy, two LightGBM threads on a few hundred rows spin-wait and a fit takes seconds instead
of milliseconds (measured, issue 11), so small fits run on one thread.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import ThreadPoolExecutor
from contextlib import contextmanager
from typing import TypeVar

__all__ = [
    "available_cpus",
    "column_map",
    "column_imap",
    "model_threads",
    "limited_blas",
    "openmp_threads",
    "MODEL_MIN_ROWS",
]

T = TypeVar("T")
R = TypeVar("R")

# A LightGBM fit on fewer rows than this runs on one thread: its work per thread is too
# small to pay for the synchronisation (common practice, no source; see the module docstring).
MODEL_MIN_ROWS = 20_000


def available_cpus() -> int:
    """The CPUs this process may run on (its affinity mask), at least 1."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


@contextmanager
def limited_blas() -> Iterator[None]:
    """Cap BLAS and OpenMP pools at one thread for the duration (threads never nest)."""
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1):
        yield


@contextmanager
def openmp_threads(n_jobs: int) -> Iterator[None]:
    """Let OpenMP loops (scikit-learn's neighbour search) use ``n_jobs`` threads while BLAS
    stays capped at one inside them: one pool, never nested."""
    from threadpoolctl import threadpool_limits

    with (
        threadpool_limits(limits=1, user_api="blas"),
        threadpool_limits(limits=max(1, n_jobs), user_api="openmp"),
    ):
        yield


def model_threads(n_jobs: int, rows: int) -> int:
    """Threads for one LightGBM fit on ``rows`` rows: one on small samples, else ``n_jobs``."""
    return 1 if rows < MODEL_MIN_ROWS else max(1, n_jobs)


def column_map(fn: Callable[[T], R], items: Iterable[T], n_jobs: int) -> list[R]:
    """``[fn(x) for x in items]`` on ``n_jobs`` threads, in order, BLAS capped inside."""
    items = list(items)
    with limited_blas():
        if n_jobs <= 1 or len(items) <= 1:
            return [fn(x) for x in items]
        with ThreadPoolExecutor(max_workers=n_jobs) as pool:
            return list(pool.map(fn, items))


def column_imap(fn: Callable[[T], R], items: Iterable[T], n_jobs: int) -> Iterator[R]:
    """:func:`column_map` yielded as it goes, at most ``2 * n_jobs`` results held at once: a
    table's worth of per-column arrays at once costs its memory and the page faults of
    touching it (1,000,000 x 100 row-hash codes: 800 MB, 1.3 s of a 1.8 s hash)."""
    items = list(items)
    with limited_blas():
        if n_jobs <= 1 or len(items) <= 1:
            for x in items:
                yield fn(x)
            return
        step = 2 * n_jobs
        with ThreadPoolExecutor(max_workers=n_jobs) as pool:
            for start in range(0, len(items), step):
                yield from pool.map(fn, items[start : start + step])
