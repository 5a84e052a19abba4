"""Independent searches on separate cores: a pool of worker processes kept for the life of the program.

The searches spend most of their time in Python (placing windows, building light schedules, scoring),
which one process runs on one core whatever the compiled kernel does.  Searches that share nothing —
the advance and the delay plan of a trip — therefore run in worker processes side by side.

Workers are started with ``spawn`` (forking a process whose compiled kernel has started its OpenMP
threads can hang or abort), once, on first use, and reused: the first use pays for starting Python
and loading the kernel from its cache (about 2 s here), later uses do not.  Each job carries the
caller's integrator kernel choice (``PHASEPLAN_KERNEL``), so a worker computes what the caller would.
Workers ignore Ctrl-C: the calling process handles the interrupt and its exit code alone.  A worker
ends by itself when the program that started it is gone, also after a kill that runs no exit handler.

Callers ask for workers (``processes=0``: one per core, at most one per job, or ``PHASEPLAN_WORKERS``);
the default ``1`` keeps every search in the calling process.  A long-running program (``phaseplan
serve``) gains from workers; a one-shot command would pay their start-up on every run.  As with any
``spawn`` start, a script that asks for workers must guard its entry point with
``if __name__ == "__main__":`` (the ``phaseplan`` command does).
"""

from __future__ import annotations

import atexit
import multiprocessing
import os
import signal
import threading
import time
from concurrent.futures import Executor, ProcessPoolExecutor
from typing import Any, Callable, Sequence

from planner.engine.integrate import KERNEL_ENVIRONMENT
from planner.errors import InputError

WORKERS_ENVIRONMENT = "PHASEPLAN_WORKERS"

_pool: ProcessPoolExecutor | None = None
_pool_size = 0


def worker_count(jobs: int, processes: int = 1) -> int:
    """Processes to use for ``jobs`` independent searches (1 = none besides the caller).

    ``processes``: 1 = the calling process; N > 1 = up to N processes; 0 = ``PHASEPLAN_WORKERS`` if
    set, else one per core.
    """
    if processes < 0:
        raise InputError(f"processes must be 0 (one per core) or a number >= 1, got {processes}",
                         field="processes")
    if processes >= 1:
        return max(1, min(processes, jobs))
    text = os.environ.get(WORKERS_ENVIRONMENT, "").strip()
    if text:
        try:
            wanted = int(text)
        except ValueError:
            wanted = 0
        if wanted < 1:
            raise InputError(f"{WORKERS_ENVIRONMENT}={text!r} is not a whole number of processes >= 1",
                             field=WORKERS_ENVIRONMENT)
    else:
        wanted = os.cpu_count() or 1
    return max(1, min(wanted, jobs))


#: How often a worker checks that the program that started it still runs [s].
PARENT_CHECK_SECONDS = 1.0


def _watch_parent(parent: int) -> None:
    while True:
        time.sleep(PARENT_CHECK_SECONDS)
        if os.getppid() != parent:
            os._exit(0)


def _start_worker(parent: int) -> None:
    """In each worker: ignore Ctrl-C (the calling program handles it), and end when the calling
    program ends however it ends (a program killed outright runs no exit handler to stop its pool)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    threading.Thread(target=_watch_parent, args=(parent,), daemon=True).start()


def _executor(size: int) -> Executor:
    global _pool, _pool_size
    if _pool is None or _pool_size < size:
        if _pool is not None:
            _pool.shutdown(wait=True)
        _pool = ProcessPoolExecutor(max_workers=size, mp_context=multiprocessing.get_context("spawn"),
                                    initializer=_start_worker, initargs=(os.getpid(),))
        _pool_size = size
    return _pool


def _shutdown() -> None:
    if _pool is not None:
        _pool.shutdown(wait=False, cancel_futures=True)


atexit.register(_shutdown)


def _run_with_kernel(kernel: str | None, job: Callable[..., Any], args: tuple) -> Any:
    if kernel is None:
        os.environ.pop(KERNEL_ENVIRONMENT, None)
    else:
        os.environ[KERNEL_ENVIRONMENT] = kernel
    return job(*args)


def run_side_by_side(job: Callable[..., Any], arguments: Sequence[tuple], processes: int = 1) -> list[Any]:
    """``[job(*a) for a in arguments]``, on :func:`worker_count` processes, results in order.

    ``job`` must be a module-level function and its arguments and result picklable.  With one
    worker (``processes=1``, one core or one job) everything runs in this process.
    """
    size = worker_count(len(arguments), processes)
    if size <= 1:
        return [job(*a) for a in arguments]
    kernel = os.environ.get(KERNEL_ENVIRONMENT)
    pool = _executor(size)
    futures = [pool.submit(_run_with_kernel, kernel, job, tuple(a)) for a in arguments]
    return [future.result() for future in futures]
