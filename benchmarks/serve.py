"""Load on the planning desk: concurrent ``POST /api/plan`` requests to ``phaseplan serve`` on loopback.

Starts the server as a process (a fresh data folder, its default two planning workers) and sends N plan
requests at once (default 20) from a bounded client (httpx, at most N connections, a timeout per request).
Every request carries its own invented short trip (Lisbon to Helsinki, one preparation day, two days' stay;
the traveller's label differs), so no answer can be another's. Each answer must be 200 and carry the same
plan as the service gives for that scenario in this process (strategy, days, comparison): none lost, none
wrong. Printed: the latency of every plan, its percentiles, and, measured side by side in this run, the time
of one plan made alone in this process, so the ratios say what queueing behind the workers costs.

Usage: python benchmarks/serve.py [--requests 20]
"""

from __future__ import annotations

import argparse
import asyncio
import socket
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

import httpx

from planner import service
from planner.plans.entries import SCHEMA_VERSION

SCENARIO = """\
kind = "trip"
name = "Load tester {k}: Lisbon to Helsinki"
model = "forger1999"
[traveller]
sleep = {{ bed = "23:00", wake = "07:00" }}
preparation_days = 1
[home]
name = "Lisbon"
time_zone = "Europe/Lisbon"
latitude = 38.72
longitude = -9.14
[destination]
name = "Helsinki"
time_zone = "Europe/Helsinki"
latitude = 60.17
longitude = 24.94
stay_days = 2
[[flights]]
from = "home"
to = "destination"
depart = "2027-05-10 08:00"
arrive = "2027-05-10 14:00"
"""

#: What must agree between an answer and the plan made here (the rest names the scenario or its file).
COMPARED = ("strategy", "success", "message", "reason", "reentrainment_days", "baseline", "alternatives", "days")


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def start_server(port: int, data: Path) -> subprocess.Popen:
    process = subprocess.Popen([sys.executable, "-m", "planner", "serve", "--port", str(port), "--data", str(data)],
                               stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    while True:
        if process.poll() is not None:
            raise SystemExit("the server stopped: " + process.stderr.read().decode())
        try:
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/healthz", timeout=2):
                return process
        except OSError:
            if time.monotonic() > deadline:
                raise SystemExit("the server did not answer /healthz within 60 s") from None
            time.sleep(0.3)


def reference(folder: Path) -> tuple[dict, float]:
    """The plan of the scenario made alone in this process, and how long it took [s]."""
    path = folder / "reference.toml"
    path.write_text(SCENARIO.format(k="reference"), encoding="utf-8")
    began = time.perf_counter()
    outcome = service.plan_trip(service.TripRequest(str(path)))
    seconds = time.perf_counter() - began
    return {"schema_version": SCHEMA_VERSION, **outcome.to_json()}, seconds


async def load(port: int, requests: int) -> list[tuple[int, float, dict | None]]:
    limits = httpx.Limits(max_connections=requests, max_keepalive_connections=requests)
    async with httpx.AsyncClient(base_url=f"http://127.0.0.1:{port}", limits=limits,
                                 timeout=httpx.Timeout(900.0)) as client:
        async def one(k: int) -> tuple[int, float, dict | None]:
            began = time.perf_counter()
            answer = await client.post("/api/plan", content=SCENARIO.format(k=k).encode(),
                                       headers={"Content-Type": "application/toml"})
            seconds = time.perf_counter() - began
            return answer.status_code, seconds, answer.json() if answer.status_code == 200 else None

        return await asyncio.gather(*(one(k) for k in range(requests)))


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--requests", type=int, default=20, help="plan requests sent at once (default 20)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="phaseplan-bench-") as folder:
        folder = Path(folder)
        expected, alone = reference(folder)
        port = free_port()
        server = start_server(port, folder / "desk")
        try:
            began = time.perf_counter()
            answers = asyncio.run(load(port, args.requests))
            wall = time.perf_counter() - began
        finally:
            server.terminate()
            server.wait(timeout=30)
    wrong = 0
    print(f"{'request':>7} {'status':>6} {'latency s':>10} {'x alone':>8}  plan")
    for k, (status, seconds, document) in enumerate(answers):
        correct = (status == 200 and document is not None
                   and document["scenario"]["name"] == f"Load tester {k}: Lisbon to Helsinki"
                   and all(document[key] == expected[key] for key in COMPARED))
        wrong += not correct
        print(f"{k:>7} {status:>6} {seconds:>10.2f} {seconds / alone:>8.1f}  {'same as alone' if correct else 'WRONG'}")
    latencies = sorted(seconds for _, seconds, _ in answers)
    print(f"\none plan alone in this process: {alone:.2f} s")
    print(f"{args.requests} plans at once: wall {wall:.1f} s, {wall / args.requests:.2f} s per plan "
          f"({wall / args.requests / alone:.2f} x alone); latency median {statistics.median(latencies):.1f} s, "
          f"90th percentile {latencies[int(0.9 * (len(latencies) - 1))]:.1f} s, max {latencies[-1]:.1f} s")
    print(f"answered {sum(status == 200 for status, _, _ in answers)} of {args.requests}, "
          f"correct {args.requests - wrong}, lost or wrong {wrong}")
    return 1 if wrong else 0


if __name__ == "__main__":
    raise SystemExit(main())
