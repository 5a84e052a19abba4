"""The strategies of a trip searched in worker processes give the plans of the in-process search.

The in-process search is the reference here, as the numpy kernel is for the compiled one
(tests/test_kernel.py): running the advance and the delay search side by side must not change a plan.
"""

from __future__ import annotations

import os

import pytest

from planner import load_model
from planner.engine.integrate import KERNEL_ENVIRONMENT
from planner.engine.workers import WORKERS_ENVIRONMENT, run_side_by_side, worker_count
from planner.errors import InputError
from planner.trips.search import plan_trip


def _windows(result) -> dict:
    return {name: ([(w.start, w.end, w.source) for w in chosen.outcome.plan.bright],
                   [(w.start, w.end, w.source) for w in chosen.outcome.plan.avoid],
                   chosen.outcome.plan.sleep, chosen.outcome.reentrainment_days)
            for name, chosen in result.alternatives.items()}


def test_side_by_side_strategies_give_the_in_process_plans(planned_demos):
    trip, info, in_process = planned_demos("frankfurt-vancouver")
    side_by_side = plan_trip(trip, load_model(info.model), processes=2)
    # regression against the in-process search of the same trip (same seeds, same model): the reference path
    assert side_by_side.strategy == in_process.strategy
    assert _windows(side_by_side) == _windows(in_process)
    assert side_by_side.simulated == in_process.simulated


def _kernel_seen() -> str | None:
    return os.environ.get(KERNEL_ENVIRONMENT)


def test_a_worker_uses_the_callers_kernel(monkeypatch):
    # the numpy kernel asked for by the caller (PHASEPLAN_KERNEL, DEVELOPERS.md) holds in the workers too
    # (common practice for worker pools: a child computes what its caller would)
    monkeypatch.setenv(KERNEL_ENVIRONMENT, "numpy")
    assert run_side_by_side(_kernel_seen, [(), ()], processes=2) == ["numpy", "numpy"]


def test_worker_counts(monkeypatch):
    # one process per job at most; 1 keeps the work in the calling process (common practice of
    # concurrent.futures callers; this module's documented contract)
    assert worker_count(2, 1) == 1 and worker_count(2, 8) == 2 and worker_count(1, 0) == 1
    monkeypatch.setenv(WORKERS_ENVIRONMENT, "3")
    assert worker_count(5, 0) == 3
    monkeypatch.setenv(WORKERS_ENVIRONMENT, "many")
    with pytest.raises(InputError, match=WORKERS_ENVIRONMENT):
        worker_count(2, 0)
    with pytest.raises(InputError, match="processes"):
        worker_count(2, -1)



def test_workers_end_when_the_program_is_killed(tmp_path):
    # a program killed outright (SIGKILL, as a supervisor may do) runs no exit handler; its workers
    # must not linger (POSIX.1-2017 _exit(): an orphan's parent becomes another process, so getppid() changes)
    import signal
    import subprocess
    import sys
    import time

    script = ("import os, sys, time\n"
              "from planner.engine.workers import run_side_by_side\n"
              "print(*run_side_by_side(os.getpid, [(), ()], processes=2), flush=True)\n"
              "time.sleep(60)\n")
    program = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, stderr=subprocess.DEVNULL,
                               text=True)
    try:
        workers = sorted({int(pid) for pid in program.stdout.readline().split()})
        assert workers and program.pid not in workers and all(_running(pid) for pid in workers)
    finally:
        program.send_signal(signal.SIGKILL)
        program.wait()
    deadline = time.monotonic() + 20
    alive = workers
    while alive and time.monotonic() < deadline:
        time.sleep(0.2)
        alive = [pid for pid in workers if _running(pid)]
    assert not alive, f"workers {alive} outlived the killed program"


def _running(pid: int) -> bool:
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii") as stat:
            return stat.read().split(") ")[-1][0] != "Z"     # a zombie has ended
    except FileNotFoundError:
        return False
