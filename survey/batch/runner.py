"""Where a batch's sites are assessed: in this process, on local worker
processes, or on a Dask distributed cluster (README, "Running a batch on a
cluster").  The shared sky goes to each worker once (a process pool's
initializer; on a cluster ``Client.scatter(..., broadcast=True)``), and each
task is a few rows that refer to it, so a task carries only its sites.

Every way gives the same results: a site's figures depend only on the site and
the shared sky, never on which worker ran it or in which order.
"""

from __future__ import annotations

import os
from collections.abc import Iterator

from ..errors import InputError
from .inputs import BatchRow
from .work import Context, SiteResult, assess_rows

_CONTEXT: Context | None = None  # a worker process's shared sky, set once by its initializer


def _init_worker(context: Context) -> None:
    global _CONTEXT
    _CONTEXT = context
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the coordinating process handles Ctrl-C and SIGTERM
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    _leave_with_parent()


def _leave_with_parent() -> None:
    """A worker whose coordinating process is gone (killed with SIGKILL, which
    runs no cleanup) ends within a second instead of waiting on its queue forever."""
    import threading
    import time

    parent = os.getppid()

    def watch() -> None:
        while True:
            time.sleep(1.0)
            if os.getppid() != parent:
                os._exit(1)

    threading.Thread(target=watch, name="leosite-parent-watch", daemon=True).start()


def _assess_in_worker(rows: list[BatchRow]) -> list[SiteResult]:
    return assess_rows(_CONTEXT, rows)


def default_workers() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


def chunks(rows: list[BatchRow], workers: int) -> list[list[BatchRow]]:
    """Tasks of a few rows: enough tasks for an even spread and a live progress
    line, few enough that the per-task overhead stays small."""
    size = max(1, min(16, len(rows) // max(1, workers * 8)))
    return [rows[i:i + size] for i in range(0, len(rows), size)]


def run_local(context: Context, rows: list[BatchRow], workers: int) -> Iterator[list[SiteResult]]:
    """Results task by task as they finish; ``workers`` 1 runs in this process."""
    if workers <= 1 or len(rows) <= 1:
        for task in chunks(rows, 1):
            yield assess_rows(context, task)
        return
    import multiprocessing
    from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

    method = "fork" if "fork" in multiprocessing.get_all_start_methods() else "spawn"
    pool = ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context(method),
                               initializer=_init_worker, initargs=(context,))
    try:
        pending = {pool.submit(_assess_in_worker, task) for task in chunks(rows, workers)}
        while pending:
            done, pending = wait(pending, return_when=FIRST_COMPLETED)
            for fut in done:
                yield fut.result()
    finally:
        pool.shutdown(wait=False, cancel_futures=True)
        for child in multiprocessing.active_children():  # our own workers only
            child.terminate()


def cluster_module():
    """Dask distributed, or one line saying how to install it."""
    try:
        import distributed
    except ImportError:
        raise InputError("--scheduler: needs Dask distributed, which is not installed: "
                         "pip install 'leosite[cluster]'") from None
    return distributed


def cluster_client(address: str):
    """A Dask distributed client for ``address``; one line when Dask is missing
    or the scheduler cannot be reached."""
    distributed = cluster_module()
    try:
        return distributed.Client(address, timeout=20, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise InputError(f"--scheduler: {address}: cannot reach the Dask scheduler: {exc}") from None


def run_cluster(context: Context, rows: list[BatchRow], address: str) -> Iterator[list[SiteResult]]:
    """Results task by task as they finish on the cluster at ``address``."""
    client = cluster_client(address)
    as_completed = cluster_module().as_completed
    try:
        workers = max(1, sum(w.get("nthreads", 1) for w in client.scheduler_info()["workers"].values()))
        shared = client.scatter(context, broadcast=True, hash=False)  # once to every worker
        futures = [client.submit(assess_rows, shared, task, pure=False) for task in chunks(rows, workers)]
        with client.as_current():  # as_completed finds its client here
            for fut in as_completed(futures):
                yield fut.result()
    finally:
        client.close()
