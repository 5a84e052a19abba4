"""Running one benchmark step on each integrator kernel in the same process (shared by the benchmarks)."""

from __future__ import annotations

import os
import time
from contextlib import contextmanager
from typing import Callable

from planner.engine import kernel_numba
from planner.engine.integrate import KERNEL_ENVIRONMENT


@contextmanager
def kernel(name: str):
    """Every simulation inside the block runs on kernel ``name`` ("numpy" or "compiled")."""
    before = os.environ.get(KERNEL_ENVIRONMENT)
    os.environ[KERNEL_ENVIRONMENT] = name
    try:
        yield
    finally:
        if before is None:
            os.environ.pop(KERNEL_ENVIRONMENT, None)
        else:
            os.environ[KERNEL_ENVIRONMENT] = before


def timed(name: str, run: Callable[[], object]) -> tuple[float, object]:
    """Wall time [s] of ``run()`` on kernel ``name``, and its result."""
    with kernel(name):
        began = time.perf_counter()
        result = run()
        return time.perf_counter() - began, result


def warm_up_worker() -> float:
    """Run in a worker process: load the compiled kernel there; its first call's time [s]."""
    return kernel_numba.warm_up().seconds if kernel_numba.AVAILABLE else 0.0


def machine_load() -> str:
    """The load average over the last minute beside the core count: times below are only comparable
    at a similar load (other processes share the cores)."""
    return f"load average {os.getloadavg()[0]:.2f} on {os.cpu_count()} cores"


def announce() -> str:
    """One line on the compiled kernel: threads and the first call's cost (compile or cache load), and the load."""
    if not kernel_numba.AVAILABLE:
        return f"compiled kernel unavailable (numba not installed): only the numpy path is timed; {machine_load()}"
    report = kernel_numba.warm_up()
    return (f"compiled kernel: {report.threads} threads; first call {report.seconds:.2f} s "
            f"({'loaded from the cache' if report.from_cache else 'compiled'}), not in the times below; "
            f"{machine_load()}")
