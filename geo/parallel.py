"""Chunks of array work on the machine's cores, in threads.

numpy releases the interpreter lock inside its large array operations, so chunks of array work
run side by side in threads without copying their inputs to other processes. Results come back
in the order of the chunks, so a sum over them is the same on any number of threads.

``MASTPLAN_THREADS`` caps the number of threads (1 runs everything in the calling thread).
"""

from __future__ import annotations

import os
import threading
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor

__all__ = ["thread_count", "map_chunks"]

_POOL: list = []
_PREFIX = "mastplan-chunk"


def thread_count() -> int:
    """Threads to use: the cores this process may run on, at most ``MASTPLAN_THREADS``."""
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    cap = os.environ.get("MASTPLAN_THREADS", "").strip()
    if cap.isdigit() and int(cap) >= 1:
        cores = min(cores, int(cap))
    return max(1, cores)


def map_chunks(func: Callable[[slice], object], size: int, chunk: int) -> list:
    """``func(slice)`` over ``range(size)`` cut into slices of ``chunk``, the results in order.

    Parameters
    ----------
    func : callable
        Works on one slice; must not change state shared with other slices.
    size : int
        Number of items.
    chunk : int
        Items per slice (at least 1).

    Returns
    -------
    list
        One result per slice, in the order of the slices.
    """
    step = max(1, int(chunk))
    slices = [slice(start, min(start + step, size)) for start in range(0, size, step)]
    threads = min(thread_count(), len(slices))
    if threads <= 1 or threading.current_thread().name.startswith(_PREFIX):  # no pool inside the pool
        return [func(sl) for sl in slices]
    if not _POOL or _POOL[0][0] != threads:
        _POOL[:] = [(threads, ThreadPoolExecutor(max_workers=threads, thread_name_prefix=_PREFIX))]
    return list(_POOL[0][1].map(func, slices))
